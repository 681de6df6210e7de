"""``fdwall rc --networks N --log-lengths ...``: networks and log-length fits on the command line.

The case is the invented one-layer slab of tests/test_lumped_rc_cli.py (k = 1 W/(m K),
rho cp = 1e6 J/(m3 K), L = 100 mm, 500 W/m2 in, back face held at 20 degC, 1 m2).
"""
import csv
import json
import math
import os
import subprocess
import sys

import h5py
import numpy as np
import pytest
from test_lumped_rc_cli import SLAB

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
L, ALPHA = 0.1, 1e-6
TAU1 = 4 * L * L / (math.pi ** 2 * ALPHA)


def _run(*a):
    env = dict(os.environ, PYTHONPATH=ROOT)
    return subprocess.run([sys.executable, "-m", "fdwall.cli", "rc", *a], cwd=ROOT, env=env,
                          capture_output=True, text=True, timeout=300)


def _series(t, m_max=400):
    # Source: Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., Sec. 3.3 (from memory):
    # rise of the heated face per watt on 1 m2, slab held at x=L: L/k [1 - sum_m
    # 8/((2m-1)^2 pi^2) exp(-(2m-1)^2 pi^2 alpha t/(4 L^2))]  [K/W]
    j = 2 * np.arange(1, m_max + 1) - 1
    w = 8 / (j ** 2 * math.pi ** 2)
    return L * (1 - (w[None, :] * np.exp(-np.outer(t, j ** 2 * math.pi ** 2 * ALPHA
                                                   / (4 * L * L)))).sum(1))


def test_networks_and_log_lengths(tmp_path):
    # Closed forms (same source): total resistance L/k = 0.1 K/W in either network; the
    # networks' step response against the series within their stated error plus the mesh
    # error (0.2 %); the Foster pairs' first moment sum R_i tau_i / sum R_i against
    # L^2/(3 alpha) within 1 %; the fitted C of the longest log (10 slowest time constants,
    # R fixed) near C_effective = rho c L/3 (0.978 of it, tests/test_lumped_compare.py).
    case = tmp_path / "slab.toml"
    case.write_text(SLAB)
    out = tmp_path / "out"
    lengths = "0.5 h,2 h,11.26 h"
    p = _run(str(case), "--out", str(out), "--json", "--networks", "4",
             "--log-lengths", lengths)
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    assert len(d["foster"]) == 4 and len(d["cauer"]) == 4
    for row in d["foster"]:
        assert set(row) == {"R_K_per_W", "C_J_per_K", "tau_s"}
    for row in d["cauer"]:
        assert set(row) == {"R_K_per_W", "C_J_per_K"}
    Rf = np.array([x["R_K_per_W"] for x in d["foster"]])
    tf = np.array([x["tau_s"] for x in d["foster"]])
    assert Rf.sum() == pytest.approx(0.1, rel=0.01)
    assert sum(x["R_K_per_W"] for x in d["cauer"]) == pytest.approx(0.1, rel=0.01)
    assert (Rf * tf).sum() / Rf.sum() == pytest.approx(L * L / (3 * ALPHA), rel=0.01)
    assert d["networks"]["max_error_fraction"] < 0.005
    tn = d["two_node"]   # the 2-stage Cauer ladder: its resistances add up to L/k as well
    assert tn["R_chamber_wall_K_per_W"] + tn["R_wall_ambient_K_per_W"] == pytest.approx(
        0.1, rel=0.01)
    assert tn["C_chamber_J_per_K"] > 0 and tn["C_wall_J_per_K"] > 0
    ll = d["log_length_fits"]
    assert [r["log_length_s"] for r in ll["rows"]] == pytest.approx([1800, 7200, 40536])
    assert ll["closest"] == "C_effective"
    assert ll["rows"][-1]["C_R_fixed_over_C_effective"] == pytest.approx(0.978, abs=0.01)
    assert ll["power_W"] == pytest.approx(500.0)
    files = [os.path.basename(f) for f in d["files"]]
    assert files == ["slab-rc.h5", "slab-rc.png", "slab-rc-networks.csv"]
    # the CSV table: both networks, numbers as in the JSON
    with open(out / "slab-rc-networks.csv") as fh:
        rows = list(csv.DictReader(line for line in fh if not line.startswith("#")))
    assert [r["network"] for r in rows] == ["foster"] * 4 + ["cauer"] * 4
    assert float(rows[4]["C_J_per_K"]) == pytest.approx(d["cauer"][0]["C_J_per_K"], rel=1e-9)
    # the HDF5 tables and the step response against the series solution
    with h5py.File(out / "slab-rc.h5") as h:
        t = h["tables/step_response/t_s"][:]
        m = t >= 1.0
        err = (d["networks"]["max_error_fraction"] + 2e-3) * L
        for k in ("full_K_per_W", "foster_K_per_W", "cauer_K_per_W"):
            y = h[f"tables/step_response/{k}"][:]
            assert np.max(np.abs(y[m] - _series(t[m]))) < err
        assert h["tables/networks/R_K_per_W"].attrs["units"] == "K/W"
        assert h["tables/log_lengths/C_fit_R_fixed_J_per_K"].shape == (3,)
        assert h["tables/modes/R_K_per_W"][:].sum() == pytest.approx(0.1, rel=1e-9)
    png = (out / "slab-rc.png").read_bytes()
    assert png[:8] == b"\x89PNG\r\n\x1a\n" and len(png) > 20000
    # text output names both networks and the log-length table
    t = _run(str(case), "--out", str(out), "--networks", "3", "--no-plots")
    assert t.returncode == 0, t.stderr
    assert "Foster" in t.stdout and "Cauer" in t.stdout


def test_no_plots(tmp_path):
    # common practice, no source: --no-plots writes no PNG
    case = tmp_path / "slab.toml"
    case.write_text(SLAB)
    p = _run(str(case), "--out", str(tmp_path / "o"), "--no-plots", "--quiet")
    assert p.returncode == 0, p.stderr
    assert not list((tmp_path / "o").glob("*.png"))


@pytest.mark.parametrize("opts, word", [
    (["--networks", "0"], "--networks"),
    (["--networks", "13"], "--networks"),
    (["--log-lengths", "2"], "--log-lengths"),
    (["--log-lengths", "1 h,,2 h"], "--log-lengths"),
    (["--log-power", "300 W"], "--log-lengths"),
    (["--log-lengths", "1 h", "--log-power", "300"], "--log-power"),
])
def test_bad_options_exit_2(tmp_path, opts, word):
    # common practice, no source: a bad option value exits 2 naming the option, writes nothing
    case = tmp_path / "slab.toml"
    case.write_text(SLAB)
    p = _run(str(case), "--out", str(tmp_path / "o"), *opts)
    assert p.returncode == 2 and word in p.stderr and "Traceback" not in p.stderr
    assert not (tmp_path / "o").exists()


def test_fixed_inner_face_is_driven_by_its_heat_flow(tmp_path):
    # Closed forms (Carslaw & Jaeger Sec. 3.3, derivation in tests/test_lumped_modes.py): a
    # single wall's input is the heat flow into its inner face, so a face held at 90 degC is
    # linearised as driven by that flow: R = L/k = 0.1 K/W, C_effective = rho c L/3, the slowest
    # time constant 4 L^2/(pi^2 alpha) (insulated-heated face, held back face).
    case = tmp_path / "held.toml"
    case.write_text(SLAB.replace('heat_flux = "500 W/m2"', 'fixed_temperature = "90 degC"'))
    p = _run(str(case), "--out", str(tmp_path / "o"), "--networks", "3", "--json",
             "--no-plots")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    assert d["R_K_per_W"] == pytest.approx(0.1, rel=1e-6)
    assert d["R_differential_K_per_W"] == pytest.approx(0.1, rel=1e-6)
    assert d["C_effective_J_per_K"] == pytest.approx(1e6 * L / 3, rel=2e-3)
    assert d["time_constants_s"][0] == pytest.approx(TAU1, rel=2e-3)
    assert sum(x["R_K_per_W"] for x in d["cauer"]) == pytest.approx(0.1, rel=0.01)
