"""fdwall size on the command line: enclosure walls, candidates, inch stock, economics,
transient and warm-up targets with the heater, plots and HDF5 (sources named beside each
check)."""
import json
import math
import os
import subprocess
import sys

import h5py
import pytest

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
FURNACE = "cases/heat-treat-furnace.toml"
PANEL = "cases/curing-oven-panel.toml"


def _main(capsys, *a, out=None):
    """In-process run (bad-input checks: no start-up cost); (exit code, stderr); the stdout
    is appended to the list ``out`` when given."""
    from fdwall.cli import main
    cwd = os.getcwd()
    os.chdir(ROOT)
    try:
        code = main(["size", *a])
    finally:
        os.chdir(cwd)
    cap = capsys.readouterr()
    if out is not None:
        out.append(cap.out)
    return code, cap.err


def _run(*a):
    env = dict(os.environ, PYTHONPATH=ROOT)
    return subprocess.run([sys.executable, "-m", "fdwall.cli", "size", *a], cwd=ROOT, env=env,
                          capture_output=True, text=True, timeout=600)


def test_enclosure_wall_inch_stock_economics_plot(tmp_path):
    # Inch stock: 1 in = 25.4 mm exactly (NIST SP 811, appendix B); the answer is one of the
    # stock sizes and the next smaller one fails.  Total cost = installed + present value of
    # the yearly energy cost with (P/A, 6 %, 10) = 7.3601 (interest tables of any
    # engineering-economics text).
    p = _run(FURNACE, "--wall", "side walls", "--layer", "microporous-board",
             "--skin-limit", "50 degC", "--stock", "1 in,1.5 in,2 in,3 in,4 in",
             "--hours-per-year", "2000 h", "--energy-price", "0.2 /kWh",
             "--installed-cost", "3000 /m3", "--years", "10", "--discount-rate", "6 %",
             "--out", str(tmp_path), "--json")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    inch = [x * 0.0254 for x in (1, 1.5, 2, 3, 4)]
    assert d["wall"] == "side walls" and d["layer"] == 1
    assert any(abs(d["thickness_m"] - x) < 1e-12 for x in inch)
    t = d["table"]
    assert t["thickness_m"] == pytest.approx(inch)
    i = t["thickness_m"].index(d["thickness_m"])
    assert t["all_pass"][i] and (i == 0 or not t["all_pass"][i - 1])
    for L, e, ic, tot in zip(t["thickness_m"], t["cost_per_year"], t["installed_cost"],
                             t["total_cost"]):
        assert ic == pytest.approx(3000 * L)
        assert tot == pytest.approx(ic + 7.3601 * e, rel=1e-4)
    assert d["economic"]["total_cost"] == pytest.approx(min(t["total_cost"]))
    assert (tmp_path / "heat-treat-furnace-size.png").exists()
    with h5py.File(tmp_path / "heat-treat-furnace-size.h5") as h:
        assert "caution" in h.attrs
        assert "tradeoff" in h["tables"] and "targets" in h["tables"]
        assert h["summary"].attrs["economic_thickness_m"] == d["economic"]["thickness_m"]
        assert h["inputs"].attrs["loss_unit"] == "W/m2"


def test_candidates_and_bad_names(tmp_path, capsys):
    # Candidates: the one with the lower conductivity needs the thinner layer at the same skin
    # limit (plane wall series resistances, Incropera 7th ed., eq. 3.19); unknown names get
    # near names (common practice, no source)
    p = _run(PANEL, "--layer", "1", "--skin-limit", "45 degC", "--candidates",
             "mineral-wool-64,microporous-board", "--stock-step", "5 mm",
             "--max-thickness", "200 mm", "--out", str(tmp_path), "--json", "--no-plots")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    rows = {c["material"]: c for c in d["candidates"]}
    assert rows["microporous-board"]["thickness_m"] < rows["mineral-wool-64"]["thickness_m"]
    assert d["thickness_m"] == rows["microporous-board"]["thickness_m"]
    assert not (tmp_path / "curing-oven-panel-size.png").exists()
    code, err = _main(capsys, PANEL, "--layer", "1", "--skin-limit", "45 degC",
                      "--candidates", "mineral-wool-6", "--out", str(tmp_path))
    assert code == 2 and "mineral-wool-64" in err
    code, err = _main(capsys, FURNACE, "--wall", "sidewalls", "--layer", "1", "--skin-limit",
                      "45 degC", "--out", str(tmp_path))
    assert code == 2 and "side walls" in err
    code, err = _main(capsys, FURNACE, "--layer", "1", "--skin-limit", "45 degC", "--out",
                      str(tmp_path))
    assert code == 2 and "--wall" in err
    # the "inch" preset: half inches to 4 in, then whole inches (1 in = 25.4 mm, NIST SP 811)
    got = []
    code, err = _main(capsys, PANEL, "--layer", "1", "--skin-limit", "45 degC", "--stock",
                      "inch", "--out", str(tmp_path), "--json", "--no-plots", out=got)
    assert code == 0, err
    d = json.loads(got[0])
    inch = [x * 0.0254 for x in (0.5, 1, 1.5, 2, 2.5, 3, 3.5, 4, 5, 6, 7, 8, 9, 10, 12)]
    assert d["table"]["thickness_m"] == pytest.approx([x for x in inch if x >= 0.005])
    assert any(abs(d["thickness_m"] - x) < 1e-12 for x in inch)
    for bad in (["--stock", "50 mm,25 mm"], ["--loss-limit", "-5 W/m2"], ["--min-thickness", "90 mm", "--max-thickness",
                                              "50 mm"], ["--conductivity-factor", "-1"],
                ["--years", "10"], ["--skin-wind", "3"]):
        code, err = _main(capsys, PANEL, "--layer", "1", "--skin-limit", "45 degC", "--out",
                          str(tmp_path), *bad)
        assert code == 2 and "--" in err, (bad, err)


def test_transient_warm_up_and_heater(tmp_path, capsys):
    # Consistency with the run itself (common practice, no source): the peak skin of the
    # answer over the case's own run stays below the limit and the thinner stock sizes in the
    # table break it; the heater sized for the warm-up limit reaches the setpoint in time.
    p = _run(FURNACE, "--wall", "side walls", "--layer", "1", "--skin-limit", "45 degC",
             "--transient", "--warm-up-limit", "3.7 h", "--heater", "--stock-step", "25 mm",
             "--max-thickness", "100 mm", "--progress", "--out", str(tmp_path), "--json",
             "--no-plots")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    t = d["table"]
    i = t["thickness_m"].index(d["thickness_m"])
    assert t["skin_peak_K"][i] <= 273.15 + 45.0
    assert all(not ok for ok in t["all_pass"][:i])
    assert d["targets"][0]["name"] == "skin_peak" and d["caution"]
    assert 1 <= d["transient_runs"] <= 15
    h = d["heater"]
    assert h["warm_up_s"] <= 3.7 * 3600 + 1e-6 and h["power_W"] >= h["p_min_W"]
    assert "transient sizing" in p.stderr          # the progress bar
    code, err = _main(capsys, PANEL, "--layer", "1", "--warm-up-limit", "1 h", "--out",
                      str(tmp_path))
    assert code == 2 and "enclosure" in err
    code, err = _main(capsys, FURNACE, "--wall", "roof", "--layer", "0", "--skin-limit",
                      "45 degC", "--heater", "--out", str(tmp_path))
    assert code == 2 and "--warm-up-limit" in err
    assert math.isfinite(d["thickness_exact_m"])
