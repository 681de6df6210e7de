"""``fdwall rc`` on the command line: a one-layer slab with closed-form R, C and time constants."""
import json
import math
import os
import subprocess
import sys

import h5py
import pytest

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))

# invented test case: one layer, k = 1 W/(m K), rho cp = 1e6 J/(m3 K) (alpha = 1e-6 m2/s),
# L = 100 mm, 500 W/m2 into the inner face, outer face held at 20 degC, area 1 m2
SLAB = """title = "rc test slab (invented)"
[run]
duration = "1 h"
start_temperature = "20 degC"
[materials.rc-test-solid]
conductivity = "1 W/m/K"
specific_heat = "1000 J/kg/K"
density = "1000 kg/m3"
source = "invented test solid"
[wall]
area = "1 m2"
[[wall.layers]]
material = "rc-test-solid"
thickness = "100 mm"
cells = 40
[wall.inner_face]
heat_flux = "500 W/m2"
[wall.outer_face]
fixed_temperature = "20 degC"
"""
L, ALPHA = 0.1, 1e-6


def _run(*a):
    env = dict(os.environ, PYTHONPATH=ROOT)
    return subprocess.run([sys.executable, "-m", "fdwall.cli", "rc", *a], cwd=ROOT, env=env,
                          capture_output=True, text=True, timeout=300)


def test_json_h5_and_text(tmp_path):
    # Source: Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., Sec. 3.3 (from memory):
    # slab heated by a flux at x=0, held at x=L: slowest mode tau_1 = 4 L^2/(pi^2 alpha),
    # R = L/(k A), steady rise linear so C_stored = rho c A L/2, first moment L^2/(3 alpha).
    case = tmp_path / "slab.toml"
    case.write_text(SLAB)
    out = tmp_path / "out"
    p = _run(str(case), "--out", str(out), "--json")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    for k in ("R_K_per_W", "C_stored_J_per_K", "C_total_J_per_K", "tau_s", "time_constants_s",
              "first_moment_tau_s", "C_effective_J_per_K", "notes"):
        assert k in d
    tau1 = 4 * L * L / (math.pi ** 2 * ALPHA)
    assert d["time_constants_s"][0] == pytest.approx(tau1, rel=1e-3)
    assert d["R_K_per_W"] == pytest.approx(0.1, rel=1e-6)
    assert d["C_stored_J_per_K"] == pytest.approx(5e4, rel=1e-6)
    assert d["first_moment_tau_s"] == pytest.approx(L * L / (3 * ALPHA), rel=1e-3)
    with h5py.File(out / "slab-rc.h5") as h:
        assert h.attrs["kind"] == "rc"
        for a in ("fdwall_version", "case_name", "created"):
            assert a in h.attrs
        assert h["tables/modes/tau_s"][0] == pytest.approx(tau1, rel=1e-3)
        assert list(h["tables/modes/mode"][:3]) == [1, 2, 3]
        assert h["summary"].attrs["R_K_per_W"] == pytest.approx(0.1, rel=1e-6)
        assert h["summary"].attrs["units:R_K_per_W"] == "K/W"
        assert h["inputs"].attrs["case"] == str(case)
        assert len(h["notes/items"]) == len(d["notes"])
    t = _run(str(case), "--out", str(out))
    assert t.returncode == 0, t.stderr
    assert "C_stored" in t.stdout and "time constants" in t.stdout


def test_report(tmp_path):
    # common practice, no source: --report writes the HTML report beside the result file
    case = tmp_path / "slab.toml"
    case.write_text(SLAB)
    p = _run(str(case), "--out", str(tmp_path / "o"), "--report", "--quiet")
    assert p.returncode == 0, p.stderr
    assert (tmp_path / "o" / "slab-rc-report.html").stat().st_size > 1000


def test_bad_case_exit_2(tmp_path):
    # common practice, no source: bad input exits 2 with one paragraph and writes nothing
    bad = tmp_path / "bad.toml"
    bad.write_text(SLAB.replace('thickness = "100 mm"', 'thicknes = "100 mm"'))
    p = _run(str(bad), "--out", str(tmp_path / "o1"))
    assert p.returncode == 2 and "thicknes" in p.stderr and "Traceback" not in p.stderr
    assert not (tmp_path / "o1").exists()
    noamb = tmp_path / "noamb.toml"
    noamb.write_text(SLAB.replace('fixed_temperature = "20 degC"', 'heat_flux = "-500 W/m2"'))
    p = _run(str(noamb), "--out", str(tmp_path / "o2"))
    assert p.returncode == 2 and "ambient" in p.stderr and "noamb.toml" in p.stderr
    assert not (tmp_path / "o2").exists()
    p = _run(str(tmp_path / "missing.toml"))
    assert p.returncode == 2
