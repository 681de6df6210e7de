"""fdwall size on the command line (JSON keys of the issue's interface; bad input exit 2)."""
import json
import os
import subprocess
import sys

import h5py

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def _main(capsys, *a):
    """In-process run for bad-input checks (no interpreter start-up): (exit code, stderr)."""
    from fdwall.cli import main
    cwd = os.getcwd()
    os.chdir(ROOT)
    try:
        code = main(["size", *a])
    finally:
        os.chdir(cwd)
    return code, capsys.readouterr().err


def _run(*a):
    env = dict(os.environ, PYTHONPATH=ROOT)
    return subprocess.run([sys.executable, "-m", "fdwall.cli", "size", *a], cwd=ROOT, env=env,
                          capture_output=True, text=True, timeout=300)


def test_json_and_h5(tmp_path):
    # common practice, no source: the JSON keys and HDF5 kind are those of the interface;
    # the answer must be a stock multiple at or above the exact root
    p = _run("cases/curing-oven-panel.toml", "--layer", "1", "--skin-limit", "50 degC",
             "--out", str(tmp_path), "--json", "--no-plots")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    for k in ("thickness_m", "thickness_exact_m", "feasible_m", "targets", "table", "caution"):
        assert k in d
    assert d["thickness_m"] >= d["thickness_exact_m"]
    assert abs(d["thickness_m"] / 0.025 - round(d["thickness_m"] / 0.025)) < 1e-9
    assert d["targets"][0]["verdict"] == "pass"
    with h5py.File(tmp_path / "curing-oven-panel-size.h5") as h:
        assert h.attrs["kind"] == "size" and "caution" in h.attrs


def test_bad_input_exit_2(tmp_path, capsys):
    # common practice, no source: wrong unit for the geometry, unknown layer material
    code, err = _main(capsys, "cases/hot-oil-pipe.toml", "--layer", "1", "--loss-limit",
                      "50 W/m2", "--out", str(tmp_path))
    assert code == 2 and "W/m" in err
    code, err = _main(capsys, "cases/hot-oil-pipe.toml", "--layer", "mineral-wool-12",
                      "--loss-limit", "50 W/m", "--out", str(tmp_path))
    assert code == 2 and "mineral-wool-128" in err
    code, err = _main(capsys, "cases/curing-oven-panel.toml", "--layer", "1", "--skin-limit",
                      "50", "--out", str(tmp_path))
    assert code == 2


def test_touch_target_cli(tmp_path):
    # ISO 13732-1 bare metal, 10 s: lower edge 55 degC in the bundled table (from memory, not
    # checked against the standard), read back through fdwall.safety.threshold
    from fdwall.safety import threshold
    p = _run("cases/curing-oven-panel.toml", "--layer", "1", "--contact-time", "10 s",
             "--surface", "bare-metal", "--out", str(tmp_path), "--json", "--no-plots")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    t = d["targets"][0]
    assert t["name"] == "touch" and abs(t["limit"] - threshold("bare-metal", 10.0)[0]) < 1e-9
    assert t["value"] <= t["limit"] and d["caution"]
    p = _run("cases/curing-oven-panel.toml", "--layer", "1", "--contact-time", "10 s",
             "--out", str(tmp_path))
    assert p.returncode == 2 and "--surface" in p.stderr


def test_service_limit_warning_cli(tmp_path):
    # Gypsum board rated 52 degC (bundled library) behind a 200 degC oven liner: in steady series
    # conduction (Incropera 7th ed., sec. 3.1) its hot-side interface lies between the skin
    # and the oven air, far above 52 degC, so a warning naming both must appear (JSON and HDF5).
    import re
    src = open(os.path.join(ROOT, "cases", "curing-oven-panel.toml")).read()
    case = tmp_path / "gypsum-panel.toml"
    case.write_text(src.replace('"mineral-wool-64"', '"plasterboard-gypsum"'))
    p = _run(str(case), "--layer", "1", "--skin-limit", "50 degC", "--out", str(tmp_path),
             "--json", "--no-plots")
    assert p.returncode == 0, p.stderr
    w = [x for x in json.loads(p.stdout)["warnings"] if "plasterboard-gypsum" in x]
    assert len(w) == 1 and "52.0 degC" in w[0]
    T_int = float(re.search(r"interface temperature ([0-9.]+) degC", w[0]).group(1))
    assert 50.0 < T_int < 200.0
    with h5py.File(tmp_path / "gypsum-panel-size.h5") as h:
        assert any(b"plasterboard-gypsum" in x for x in h["warnings/items"][()])


def test_energy_and_cost_cli(tmp_path, capsys):
    # Hand computation (definitions, common practice, no source): annual supplied energy
    # = loss [W/m2] * 6000 h * 3600 s/h / 0.8, cost = energy [GJ] * 9 per GJ.
    p = _run("cases/curing-oven-panel.toml", "--layer", "1", "--skin-limit", "50 degC",
             "--hours-per-year", "6000 h", "--supply-efficiency", "80 %", "--energy-price",
             "9 per GJ", "--max-thickness", "100 mm", "--out", str(tmp_path), "--json",
             "--no-plots")
    assert p.returncode == 0, p.stderr
    t = json.loads(p.stdout)["table"]
    for q, e, c in zip(t["loss"], t["energy_J_per_m2"], t["cost_per_year"]):
        assert abs(e - q * 6000 * 3600 / 0.8) < 1e-6 * e
        assert abs(c - e / 1e9 * 9) < 1e-6 * c
    for bad in (["--energy-price", "0.1 kWh", "--hours-per-year", "8000 h"],
                ["--supply-efficiency", "1.2", "--hours-per-year", "8000 h"],
                ["--hours-per-year", "9000 h"], ["--energy-price", "0.1 /kWh"]):
        code, err = _main(capsys, "cases/curing-oven-panel.toml", "--layer", "1",
                          "--skin-limit", "50 degC", "--out", str(tmp_path), *bad)
        assert code == 2 and "--" in err, (bad, err)
