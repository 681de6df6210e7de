"""fdwall touch on the command line: interface kept for scripts, bad input exits 2 and writes
nothing.  Verdict numbers are checked against closed forms in test_safety.py; here the steady
skin temperature of a one-layer wall with a fixed film coefficient is held to the
composite-wall formula (Incropera, Fundamentals of Heat and Mass Transfer, sec. 3.1)."""
from __future__ import annotations

import json

import h5py
import pytest

from fdwall.cautions import SAFETY_CAUTION
from fdwall.cli import main

CASE = """
title = "invented test panel"
[run]
duration = "2 h"
start_temperature = "20 degC"
output_every = "5 min"
[materials.test-board]
conductivity = "0.05 W/m/K"
specific_heat = "1000 J/kg/K"
density = "100 kg/m3"
source = "invented test data"
[wall]
name = "panel"
[[wall.layers]]
material = "test-board"
thickness = "50 mm"
[wall.inner_face]
fixed_temperature = "200 degC"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "10 W/m2/K"
{extra}
"""


def _case(tmp_path, extra=""):
    p = tmp_path / "panel.toml"
    p.write_text(CASE.replace("{extra}", extra))
    return p


def test_touch_json_interface(tmp_path, capsys):
    p = _case(tmp_path)
    out = tmp_path / "out"
    rc = main(["touch", str(p), "--criterion", "limit", "--limit", "35 degC", "--out", str(out),
               "--json", "--no-plots", "--contact-time", "4 s"])
    assert rc == 0          # a failed verdict is an answer
    d = json.loads(capsys.readouterr().out)
    assert d["criterion"] == "limit" and d["contact_time_s"] == 4.0
    assert d["ambient_K"] == pytest.approx(293.15) and d["caution"] == SAFETY_CAUTION
    f = d["faces"][0]
    Ts = 293.15 + 180 * 0.1 / (1 + 0.1)       # Ta + (Ti - Ta)(1/h)/(L/k + 1/h)
    assert f["T_steady_K"] == pytest.approx(Ts, abs=1e-5)
    assert f["verdict"] == "fail" and f["margin_K"] == pytest.approx(308.15 - Ts, abs=1e-5)
    assert {"face", "surface_class", "verdict", "T_max_K", "t_max_s", "T_steady_K", "limit_K",
            "margin_K", "contact_temperature_K", "first_over_s", "time_over_s",
            "contact"} <= set(f)
    with h5py.File(out / "panel.h5") as h:
        assert h.attrs["kind"] == "transient"
        assert h["touch"].attrs["criterion"] == "limit"
        assert "faces" in h["touch"]
    assert (out / "panel-touch.json").exists()


def test_touch_text_and_plots(tmp_path, capsys):
    p = _case(tmp_path, 'surface_class = "plastic"')
    out = tmp_path / "out"
    assert main(["touch", str(p), "--out", str(out)]) == 0
    text = capsys.readouterr().out
    assert "plastic" in text and "case file" in text and "Caution" in text
    assert (out / "panel-touch.png").exists() and (out / "panel-contact.png").exists()


def test_guarded_face_from_case_file(tmp_path, capsys):
    p = _case(tmp_path, 'touch = "guarded"')
    assert main(["touch", str(p), "--out", str(tmp_path / "o"), "--json", "--no-plots"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["faces"] == [] and d["skipped_faces"][0]["touch"] == "guarded"


@pytest.mark.parametrize("opts, words", [
    (["--contact-time", "10"], "--contact-time"),            # bare number
    (["--contact-time", "0 s"], "positive"),
    (["--contact-time", "20 h"], "1 s to 28800 s"),
    (["--surface", "metal"], "bare-metal"),
    (["--criterion", "tabel"], "did you mean 'table'"),
    (["--criterion", "limit", "--limit", "10 degC"], "not above the ambient"),
    (["--criterion", "limit"], "--limit"),
    (["--criterion", "rise"], "--rise"),
    (["--face", "panel:outr"], "did you mean"),
    (["--criterion", "industrial", "--contact-time", "4 s"], "own contact time"),
])
def test_bad_input_exit_2_nothing_written(tmp_path, capsys, opts, words):
    p = _case(tmp_path)
    out = tmp_path / "out"
    rc = main(["touch", str(p), "--out", str(out), "--no-plots"] + opts)
    err = capsys.readouterr().err
    assert rc == 2, err
    assert words in " ".join(err.split())
    assert "Traceback" not in err
    assert not out.exists()


def test_bad_case_key(tmp_path, capsys):
    p = _case(tmp_path, 'surface_class = "glas"')
    rc = main(["touch", str(p), "--out", str(tmp_path / "o")])
    assert rc == 2 and "surface_class" in capsys.readouterr().err


def test_run_stopped_early_gives_unknown_and_exit_3(tmp_path, capsys, monkeypatch):
    # a run that stops early (simulated here by marking the real result incomplete) gives
    # verdict "unknown" for every face and exit code 3, as the interface promises
    import dataclasses

    import fdwall.solver as solver
    real = solver.run

    def stopped(*a, **kw):
        r = real(*a, **kw)
        return dataclasses.replace(r, complete=False, message="(test: stopped early)")
    monkeypatch.setattr(solver, "run", stopped)
    p = _case(tmp_path)
    rc = main(["touch", str(p), "--out", str(tmp_path / "o"), "--json", "--no-plots"])
    assert rc == 3
    d = json.loads(capsys.readouterr().out)
    assert d["complete"] is False
    assert [f["verdict"] for f in d["faces"]] == ["unknown"]
    assert d["faces"][0]["margin_K"] is None


def test_weaver_stoll_set_selectable(tmp_path, capsys):
    p = _case(tmp_path)
    rc = main(["touch", str(p), "--out", str(tmp_path / "o"), "--json", "--no-plots",
               "--damage-model", "weaver-stoll-1969", "--contact-resistance", "0.001 m2K/W"])
    assert rc == 0
    c = json.loads(capsys.readouterr().out)["faces"][0]["contact"]
    assert c["damage_model"] == "weaver-stoll-1969" and len(c["damage_coefficients"]) == 2
    assert c["contact_resistance_m2K_W"] == pytest.approx(0.001)


@pytest.mark.parametrize("opts, words", [
    (["--damage-model", "henriques"], "henriques-1947"),
    (["--contact-resistance", "0.001"], "--contact-resistance"),
    (["--ambient", "30"], "--ambient"),
    (["--rise", "35 K"], "--criterion rise"),
])
def test_more_bad_options(tmp_path, capsys, opts, words):
    p = _case(tmp_path)
    out = tmp_path / "out"
    assert main(["touch", str(p), "--out", str(out)] + opts) == 2
    assert words in " ".join(capsys.readouterr().err.split())
    assert not out.exists()
