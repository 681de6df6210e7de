"""End-to-end tests of the ``fdwall`` command line (``fdwall.cli.main`` and ``python -m``).

Two kinds of cases are used:
* cases built in Python and handed to the CLI in place of the case-file reader (always run);
* TOML case files read by :func:`fdwall.case.load_case` -- a demo one-layer slab written
  here, bad-input variants of it, and every bundled demo case in ``cases/`` (skipped while
  the reader or the cases are not there).
Physical checks compare the CLI's numbers with closed-form references named beside each.
"""
from __future__ import annotations

import json
import os
import re
import subprocess
import sys
from dataclasses import replace
from pathlib import Path

import pytest

import fdwall.cli as cli
import fdwall.cli.common as cli_common
from fdwall.materials import get_material, material_from_dict
from fdwall.model import (
    Case,
    Chamber,
    Control,
    EnclosureWall,
    Face,
    Heater,
    Layer,
    ModelError,
    RunSettings,
    Wall,
)

K0 = 273.15
REPO = Path(__file__).resolve().parents[1]

# demo one-layer slab (invented data): constant properties, convection only
L_SLAB, K_SLAB, RHO, CP = 0.05, 0.1, 500.0, 1000.0     # [m], [W/m/K], [kg/m3], [J/kg/K]
H_IN, H_OUT, T_IN, T_OUT, AREA = 10.0, 5.0, 200.0, 20.0, 2.0  # [W/m2/K], [degC], [m2]


def q_series():
    """Steady heat flow through the slab [W]: series resistances of a plane wall with
    convection on both sides, q = A dT / (1/h1 + L/k + 1/h2) (Incropera et al., Fundamentals
    of Heat and Mass Transfer, ch. 3)."""
    return AREA * (T_IN - T_OUT) / (1.0 / H_IN + L_SLAB / K_SLAB + 1.0 / H_OUT)


SLAB_TOML = f"""\
# demo data: a one-layer board slab between hot and room air
title = "demo one-layer slab"

[run]
duration = "6 h"
snapshots = ["30 min", "2 h"]

[materials.demo-board]
conductivity = "{K_SLAB} W/m/K"
specific_heat = "{CP} J/kg/K"
density = "{RHO} kg/m3"

[wall]
name = "slab"
area = "{AREA} m2"

[[wall.layers]]
material = "demo-board"
thickness = "{L_SLAB * 1000:g} mm"

[wall.inner_face]
fluid_temperature = "{T_IN} degC"
film_coefficient = "{H_IN} W/m2/K"

[wall.outer_face]
fluid_temperature = "{T_OUT} degC"
film_coefficient = "{H_OUT} W/m2/K"
"""


def _python_slab():
    board = material_from_dict("demo-board", {"k": K_SLAB, "cp": CP, "rho": RHO})
    return Case(run=RunSettings(duration=6 * 3600.0),
                wall=Wall(layers=(Layer(board, L_SLAB),), area=AREA, name="slab"),
                inner=Face.exchange(K0 + T_IN, H_IN), outer=Face.exchange(K0 + T_OUT, H_OUT),
                name="demo-slab")


def _python_oven():
    wall = EnclosureWall(
        Wall(layers=(Layer(get_material("stainless-steel-304"), 0.0015),
                     Layer(get_material("mineral-wool-128"), 0.075)), name="box", area=5.0),
        outer=Face.exchange(K0 + 20.0, 6.0, 0.9), inner_face_convection=15.0)
    return Case(run=RunSettings(duration=2 * 3600.0), walls=(wall,),
                chamber=Chamber(heat_capacity=40e3), heater=Heater(power=5000.0),
                control=Control(mode="thermostat", setpoint=K0 + 180.0),
                name="demo-oven")


@pytest.fixture
def fake_reader(monkeypatch, tmp_path):
    """Hand Python-built cases to the CLI in place of the case-file reader: the file stem
    picks the case ('slab' or 'oven')."""
    made = {"slab": _python_slab, "oven": _python_oven}

    def load(path):
        return made[Path(path).stem](), ["demo warning from the reader"]
    monkeypatch.setattr(cli_common, "_load_case", load)
    for stem in made:
        (tmp_path / f"{stem}.toml").write_text("# placeholder\n")
    return tmp_path


def _have_reader():
    try:
        from fdwall.case import load_case  # noqa: F401
        return True
    except ImportError:
        return False


needs_reader = pytest.mark.skipif(not _have_reader(), reason="case-file reader not available yet")


def _main(capsys, *argv):
    """Run the CLI in-process: (exit code, stdout, stderr with line breaks made spaces)."""
    rc = cli.main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return rc, out, _flat(err)


def _flat(text):
    """Messages are wrapped paragraphs: compare their words, not their line breaks."""
    return " ".join(text.split())


# --------------------------------------------------------------------------- run (Python cases)

def test_run_writes_files_and_matches_series_resistance(fake_reader, capsys):
    out_dir = fake_reader / "res"
    rc, out, err = _main(capsys, "run", fake_reader / "slab.toml", "--out", out_dir)
    assert rc == 0, err
    assert "fdwall: warning: demo warning from the reader" in err
    for name in ("slab.h5", "slab-summary.json", "slab-temperatures.png", "slab-profiles.png",
                 "slab-energy.png"):
        f = out_dir / name
        assert f.is_file() and f.stat().st_size > 0, name
    assert not [f for f in out_dir.iterdir() if f.name.startswith(".fdwall-")]
    summ = json.loads((out_dir / "slab-summary.json").read_text())
    st = summ["steady"]["faces"]
    q = q_series()
    assert st["slab:inner"]["heat_in_W"] == pytest.approx(q, rel=1e-6)
    assert st["slab:outer"]["heat_in_W"] == pytest.approx(-q, rel=1e-6)
    # outer surface from Newton's law of cooling q = h A (Ts - T_air), in kelvin in JSON
    assert st["slab:outer"]["T_K"] == pytest.approx(K0 + T_OUT + q / (H_OUT * AREA), abs=1e-6)
    # first law over the run: residual small against the energy that moved
    assert summ["energy_residual_relative"] < 1e-4
    assert summ["complete"] is True
    # text summary on stdout with units; the skin line carries the caution
    assert "degC" in out and "kWh" in out and "MJ" in out and "[W]" in out
    assert "Skin (outer face) temperature" in out and "product-safety standard" in _flat(out)
    assert f"{T_OUT + q / (H_OUT * AREA):.1f} degC" in out
    # the HDF5 file reads back and says complete
    from fdwall.result import read_result
    h = read_result(out_dir / "slab.h5")
    assert bool(h["attrs"]["complete"]) is True


def test_run_json_quiet_no_plots(fake_reader, capsys):
    out_dir = fake_reader / "j"
    rc, out, err = _main(capsys, "run", fake_reader / "oven.toml", "--out", out_dir, "--json",
                         "--no-plots", "--quiet")
    assert rc == 0, err
    data = json.loads(out)
    assert data["case"] == "demo-oven" and "chamber_final_K" in data
    assert not list(out_dir.glob("*.png"))
    assert (out_dir / "oven.h5").is_file()
    # heater energy = integral of power: never more than full power for the whole run
    assert 0 < data["heater_energy_J"] <= 5000.0 * 2 * 3600.0 * (1 + 1e-9)
    rc, out, err = _main(capsys, "run", fake_reader / "oven.toml", "--out", out_dir,
                         "--no-plots", "--quiet")
    assert rc == 0 and out == ""


def test_run_default_output_folder(fake_reader, capsys, monkeypatch):
    monkeypatch.chdir(fake_reader)
    rc, out, err = _main(capsys, "run", "slab.toml", "--no-plots", "--no-progress")
    assert rc == 0, err
    assert (fake_reader / "results" / "slab" / "slab.h5").is_file()
    assert (fake_reader / "results" / "slab" / "slab-summary.json").is_file()


def test_run_not_converged_writes_incomplete_result_exit_3(fake_reader, capsys, monkeypatch):
    import fdwall.solver as solver
    real_run = solver.run

    def failing_run(case, **kw):
        res = real_run(case, **kw)
        k = len(res.times) // 3
        msg = (f"the solver could not converge at t = {res.times[k]:.6g} s: the time step fell "
               "below its floor.")
        res = replace(res, times=res.times[:k + 1], T=res.T[:k + 1],
                      face_flow=res.face_flow[:k + 1], face_energy=res.face_energy[:k + 1],
                      heater_energy=res.heater_energy[:k + 1], loss_energy=res.loss_energy[:k + 1],
                      heater_power=res.heater_power[:k + 1], h_conv=res.h_conv[:k + 1],
                      h_rad=res.h_rad[:k + 1], complete=False, message=msg,
                      stats=dict(res.stats, reached_s=float(res.times[k])))
        return res
    monkeypatch.setattr(solver, "run", failing_run)
    out_dir = fake_reader / "nc"
    rc, out, err = _main(capsys, "run", fake_reader / "slab.toml", "--out", out_dir, "--no-plots")
    assert rc == 3
    assert "fdwall: error:" in err and "did not converge" in err and "stopped at t =" in err
    from fdwall.result import read_result
    h = read_result(out_dir / "slab.h5")
    assert bool(h["attrs"]["complete"]) is False
    assert json.loads((out_dir / "slab-summary.json").read_text())["complete"] is False
    assert "INCOMPLETE" in out


def test_ctrl_c_leaves_no_file(fake_reader, capsys, monkeypatch):
    import fdwall.solver as solver

    def interrupted(case, **kw):
        raise KeyboardInterrupt
    monkeypatch.setattr(solver, "run", interrupted)
    out_dir = fake_reader / "ki"
    rc, out, err = _main(capsys, "run", fake_reader / "slab.toml", "--out", out_dir)
    assert rc == 130 and "interrupted" in err
    assert not out_dir.exists() or not any(out_dir.iterdir())


def test_model_error_from_reader_is_exit_2(monkeypatch, tmp_path, capsys):
    def bad(path):
        raise ModelError("emissivity must lie between 0 and 1, got (1.2,)")
    monkeypatch.setattr(cli_common, "_load_case", bad)
    f = tmp_path / "broken.toml"
    f.write_text("# placeholder\n")
    rc, out, err = _main(capsys, "run", f, "--out", tmp_path / "o")
    assert rc == 2
    assert err.startswith("fdwall: error:") and "broken.toml" in err and "emissivity" in err
    assert "Traceback" not in err and not (tmp_path / "o").exists()


def test_unwritable_output_is_exit_1(fake_reader, capsys):
    blocker = fake_reader / "afile"
    blocker.write_text("not a folder")
    rc, out, err = _main(capsys, "run", fake_reader / "slab.toml", "--out", blocker / "sub",
                         "--no-plots")
    assert rc == 1 and "fdwall: error: cannot write" in err and "--out" in err


# --------------------------------------------------------------------------- steady, check, materials

def test_steady_text_and_json(fake_reader, capsys):
    rc, out, err = _main(capsys, "steady", fake_reader / "slab.toml")
    assert rc == 0, err
    q = q_series()
    m = re.search(r"slab:inner\s+([\d.]+)\s+([\d.]+)", out)
    assert m and float(m.group(2)) == pytest.approx(q, abs=0.06)
    # inner surface from q = h A (T_air - Ts) (Newton's law of cooling)
    assert float(m.group(1)) == pytest.approx(T_IN - q / (H_IN * AREA), abs=0.06)
    assert "Caution" in out
    rc, out, err = _main(capsys, "steady", fake_reader / "slab.toml", "--json")
    d = json.loads(out)
    assert d["faces"]["slab:outer"]["heat_in_W"] == pytest.approx(-q, rel=1e-6)


def test_check_describes_case(fake_reader, capsys):
    rc, out, err = _main(capsys, "check", fake_reader / "slab.toml")
    assert rc == 0, err
    # R-value of the layer R'' = L/k [m2K/W] (Incropera ch. 3)
    assert f"{L_SLAB / K_SLAB:.4g}" in out and "[m2.K/W]" in out
    assert "50.0" in out and "nodes" in out and "is valid" in out
    assert "demo warning from the reader" in out


def test_materials_list_and_one(capsys):
    rc, out, err = _main(capsys, "materials")
    assert rc == 0
    from fdwall.materials import list_materials
    for n in list_materials():
        assert n in out
    # mineral wool at 20 degC: about 0.035 W/m/K for a 128 kg/m3 board (ASHRAE Handbook
    # Fundamentals ch. 26 range 0.033-0.040 W/m/K; from memory)
    row = next(ln for ln in out.splitlines() if ln.strip().startswith("mineral-wool-128"))
    assert 0.030 < float(row.split()[3]) < 0.042
    rc, out, err = _main(capsys, "materials", "carbon-steel", "--json")
    d = json.loads(out)
    # carbon steel k near 300 K: 63.9 W/m/K (Incropera Table A.1, AISI 1010; from memory)
    i = min(range(len(d["table"]["T_K"])), key=lambda i: abs(d["table"]["T_K"][i] - 300.0))
    assert d["table"]["k_W_mK"][i] == pytest.approx(63.9, rel=0.02)
    rc, out, err = _main(capsys, "materials", "--json")
    assert len(json.loads(out)) == len(list_materials())


def test_materials_unknown_name_suggests(capsys):
    rc, out, err = _main(capsys, "materials", "mineral-wol-128")
    assert rc == 2 and err.startswith("fdwall: error:") and "mineral-wool-128" in err
    assert "Traceback" not in err


def test_usage_errors(capsys):
    rc, out, err = _main(capsys, "frobnicate")
    assert rc == 2 and "usage:" in err
    rc, out, err = _main(capsys, "--help")
    assert rc == 0 and "run" in out and "steady" in out and "materials" in out


def test_missing_file(tmp_path, capsys):
    rc, out, err = _main(capsys, "run", tmp_path / "nothere.toml", "--out", tmp_path / "o")
    assert rc == 2 and err.startswith("fdwall: error:") and "nothere.toml" in err
    assert "does not exist" in err and not (tmp_path / "o").exists()


# --------------------------------------------------------------------------- TOML cases

@needs_reader
def test_toml_slab_run(tmp_path, capsys):
    f = tmp_path / "slab.toml"
    f.write_text(SLAB_TOML)
    rc, out, err = _main(capsys, "run", f, "--out", tmp_path / "r", "--json")
    assert rc == 0, err
    d = json.loads(out)
    assert d["steady"]["faces"]["slab:inner"]["heat_in_W"] == pytest.approx(q_series(), rel=1e-6)
    assert d["energy_residual_relative"] < 1e-4
    assert (tmp_path / "r" / "slab.h5").is_file()


# (description, sed-like replacement (old, new), key expected in the message)
BAD_INPUTS = [
    ("unknown key", ('area = "2.0 m2"', 'area = "2.0 m2"\ncolour = "red"'), "colour"),
    ("missing unit", ('thickness = "50 mm"', "thickness = 50"), "thickness"),
    ("negative thickness", ('thickness = "50 mm"', 'thickness = "-50 mm"'), "thickness"),
    ("emissivity 1.2", ('film_coefficient = "5.0 W/m2/K"',
                        'film_coefficient = "5.0 W/m2/K"\nemissivity = 1.2'), "emissivity"),
    ("unknown material", ('material = "demo-board"', 'material = "mineral-wol-128"'), "material"),
    ("schedule backwards", ('fluid_temperature = "20.0 degC"',
                            'fluid_temperature = [["0 h", "20 degC"], ["2 h", "90 degC"], '
                            '["1 h", "50 degC"]]'), "fluid_temperature"),
    ("TOML syntax error", ("[run]", "[run"), "TOML"),
]


@needs_reader
@pytest.mark.parametrize("what,change,key", BAD_INPUTS, ids=[b[0] for b in BAD_INPUTS])
def test_bad_input_exit_2(tmp_path, capsys, what, change, key):
    old, new = change
    assert old in SLAB_TOML, old
    f = tmp_path / "bad-case.toml"
    f.write_text(SLAB_TOML.replace(old, new, 1))
    out_dir = tmp_path / "out"
    for cmd in (["run", f, "--out", out_dir], ["check", f], ["steady", f]):
        rc = cli.main([str(a) for a in cmd])
        out, raw = capsys.readouterr()
        err = _flat(raw)
        assert rc == 2, (what, cmd, err)
        # one paragraph: no blank line inside the message, one "fdwall: error:" only
        assert "\n\n" not in raw.strip() and raw.count("fdwall: error:") == 1
        assert err.startswith("fdwall: error:"), err
        assert "bad-case.toml" in err and key in err, err
        assert "Traceback" not in err
    assert not out_dir.exists()
    if what == "unknown material":
        assert "mineral-wool-128" in err  # the near name is suggested


# --------------------------------------------------------------------------- via subprocess

def _env():
    env = dict(os.environ)
    env["PYTHONPATH"] = str(REPO) + os.pathsep + env.get("PYTHONPATH", "")
    env["MPLBACKEND"] = "Agg"
    return env


def _cli(*args, cwd):
    return subprocess.run([sys.executable, "-m", "fdwall.cli", *map(str, args)], cwd=cwd,
                          capture_output=True, text=True, env=_env(), timeout=600)


def test_subprocess_help(tmp_path):
    p = _cli("--help", cwd=tmp_path)
    assert p.returncode == 0 and "usage: fdwall" in p.stdout


@needs_reader
def test_subprocess_run_and_bad_input(tmp_path):
    f = tmp_path / "slab.toml"
    f.write_text(SLAB_TOML)
    p = _cli("run", f, "--out", tmp_path / "r", cwd=tmp_path)
    assert p.returncode == 0, p.stderr
    assert "Traceback" not in p.stderr
    assert "Steady state" in p.stdout and "degC" in p.stdout
    for n in ("slab.h5", "slab-summary.json", "slab-profiles.png"):
        assert (tmp_path / "r" / n).is_file()
    bad = tmp_path / "bad.toml"
    bad.write_text(SLAB_TOML.replace('thickness = "50 mm"', 'thickness = "-50 mm"'))
    p = _cli("run", bad, "--out", tmp_path / "b", cwd=tmp_path)
    assert p.returncode == 2
    assert p.stderr.startswith("fdwall: error:") and "Traceback" not in p.stderr
    assert "bad.toml" in _flat(p.stderr) and "thickness" in _flat(p.stderr)
    assert not (tmp_path / "b").exists()


# --------------------------------------------------------------------------- bundled cases

BUNDLED = sorted((REPO / "cases").glob("*.toml")) if (REPO / "cases").is_dir() else []


@needs_reader
@pytest.mark.skipif(not BUNDLED, reason="no bundled cases yet")
@pytest.mark.parametrize("path", BUNDLED, ids=[p.stem for p in BUNDLED])
def test_bundled_case_runs(path, tmp_path, capsys):
    rc, out, err = _main(capsys, "check", path)
    assert rc == 0, err
    out_dir = tmp_path / path.stem
    rc, out, err = _main(capsys, "run", path, "--out", out_dir, "--json", "--no-progress")
    assert rc == 0, err
    d = json.loads(out)
    assert d["complete"] is True
    for n in (f"{path.stem}.h5", f"{path.stem}-summary.json", f"{path.stem}-temperatures.png",
              f"{path.stem}-profiles.png", f"{path.stem}-energy.png"):
        assert (out_dir / n).is_file() and (out_dir / n).stat().st_size > 0, n
    assert json.loads((out_dir / f"{path.stem}-summary.json").read_text())["case"] == d["case"]
    # first law: heat in - stored energy small against the energy moved
    assert d["energy_residual_relative"] < 1e-3
    # steady state balances (sum of heat into the system ~ 0 against the flows)
    assert d.get("steady"), "run must attach the steady state"
    flows = [abs(f["heat_in_W"]) for f in d["steady"]["faces"].values()]
    assert abs(d["steady"]["balance_W"]) <= 1e-6 * max(max(flows), 1.0) + 1e-6
    _check_steady_layers_by_fourier(path, d["steady"])


def _check_steady_layers_by_fourier(path, st):
    """Every layer of every wall carries the face heat flow at steady state.

    Independent reference: Fourier's law with k(T) through the Kirchhoff transform,
    q = G * integral of k dT between the layer's face temperatures, with the shape factor
    G = A/L (slab), 2 pi L / ln(r2/r1) (cylinder), 4 pi / (1/r1 - 1/r2) (sphere)
    (Incropera et al., Fundamentals of Heat and Mass Transfer, ch. 3; Carslaw & Jaeger,
    Conduction of Heat in Solids, ch. 1).  The integral is taken with scipy.integrate.quad on
    the material's k(T); the temperatures are the ones the CLI reported.
    """
    import math

    from scipy.integrate import quad

    from fdwall.case import load_case
    from fdwall.system import build_system
    case = load_case(path)
    if case.heater is not None and case.heater.placement == "interface":
        return  # a heater between layers breaks the equal-flow property
    sysm = build_system(case)
    checked = 0
    for j, w in enumerate(sysm.walls):
        faces = st["faces"]
        T = [faces[f"{w.name}:inner"]["T_K"]] + list(st["interfaces_K"][j]) + \
            [faces[f"{w.name}:outer"]["T_K"]]
        q_face = faces[f"{w.name}:inner"]["heat_in_W"]
        r = w.radii()
        for i, layer in enumerate(w.layers):
            if i > 0 and w.interface_resistance[i - 1] > 0:
                continue  # the reported interface temperature is the far side of a contact
            kint, _ = quad(lambda t: float(layer.material.k(t)), T[i + 1], T[i], limit=200)
            r1, r2 = float(r[i]), float(r[i + 1])
            if w.shape == "slab":
                G = w.area / (r2 - r1)
            elif w.shape == "cylinder":
                G = 2 * math.pi * w.length / math.log(r2 / r1)
            else:
                G = 4 * math.pi / (1 / r1 - 1 / r2)
            assert G * kint == pytest.approx(q_face, rel=1e-5, abs=1e-6 + 1e-6 * abs(q_face)), \
                (w.name, layer.label)
            checked += 1
    assert checked > 0


@needs_reader
@pytest.mark.parametrize("signame, code", [("SIGINT", 130), ("SIGTERM", 143)])
def test_subprocess_signal_stops_run_and_writes_partial_result(tmp_path, signame, code):
    """A real SIGINT / SIGTERM during a run that would take about a minute or more: the run
    stops within a few seconds, writes its partial result marked incomplete (status
    'interrupted') and exits 130 / 143.  The signal is sent once the progress bar shows the
    time loop running, then a couple of seconds later."""
    import signal
    import threading
    import time

    import h5py
    f = tmp_path / "long.toml"
    # tiny steps make a run of a minute or more (demo data)
    f.write_text(SLAB_TOML.replace('duration = "6 h"', 'duration = "100 h"\nmax_step = "0.05 s"'))
    out_dir = tmp_path / "o"
    p = subprocess.Popen([sys.executable, "-m", "fdwall.cli", "run", str(f), "--out", str(out_dir),
                          "--progress", "--no-plots"], cwd=tmp_path, env=_env(),
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    err_chunks, running = [], threading.Event()

    def read_err():
        for chunk in iter(lambda: p.stderr.read1(4096), b""):
            err_chunks.append(chunk)
            if b"%|" in b"".join(err_chunks[-2:]):
                running.set()
    reader = threading.Thread(target=read_err, daemon=True)
    reader.start()
    try:
        assert running.wait(180), b"".join(err_chunks).decode(errors="replace")
        time.sleep(2.0)
        assert p.poll() is None, "the run finished before it could be interrupted"
        t_sig = time.perf_counter()
        p.send_signal(getattr(signal, signame))
        out = p.stdout.read().decode()
        p.wait(timeout=120)
        stopped_after = time.perf_counter() - t_sig
    finally:
        if p.poll() is None:
            p.kill()
    reader.join(10)
    err = b"".join(err_chunks).decode(errors="replace")
    assert p.returncode == code, err
    assert f"interrupted ({signame})" in err and "Traceback" not in err
    # a behavioural bound, not a speed target: far sooner than the rest of the run
    assert stopped_after < 10.0
    h5 = out_dir / "long.h5"
    with h5py.File(h5, "r") as h:
        assert not h.attrs["complete"] and h.attrs["status"] == "interrupted"
        t = h["time"][()]
        assert 0.0 < t[-1] < 100 * 3600.0
    summary = json.loads((out_dir / "long-summary.json").read_text())
    assert summary["status"] == "interrupted" and summary["complete"] is False
    assert "partial result" in err and "status" in out


def test_result_files_get_usual_permissions(fake_reader, capsys):
    out_dir = fake_reader / "perm"
    rc, out, err = _main(capsys, "run", fake_reader / "slab.toml", "--out", out_dir)
    assert rc == 0, err
    mask = os.umask(0)
    os.umask(mask)
    for f in out_dir.iterdir():
        assert (f.stat().st_mode & 0o777) == (0o666 & ~mask), f
