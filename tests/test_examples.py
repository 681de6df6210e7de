"""The example scripts in cases/ run as written and give the numbers their closed forms give.

Each script states its own reference; the checks here hold the script's computed value to it.
"""
from __future__ import annotations

import runpy
from pathlib import Path

import pytest

CASES = Path(__file__).resolve().parents[1] / "cases"


def _script(name):
    return runpy.run_path(str(CASES / name), run_name="example")


def test_example_implied_rc(capsys):
    # closed form: series resistances and the linear steady profile of a plane wall
    # (Incropera, Fundamentals of Heat and Mass Transfer, sec. 3.1), as the script derives
    ns = _script("example_implied_rc.py")
    rc = ns["main"]()
    ref = ns["closed_form"]()
    assert rc["R_K_per_W"] == pytest.approx(ref["R_K_per_W"], rel=1e-9)
    assert rc["C_stored_J_per_K"] == pytest.approx(ref["C_stored_J_per_K"], rel=1e-9)
    assert "closed form" in capsys.readouterr().out


def test_example_periodic_state(capsys):
    # closed form: periodic state of a first-order system under a square wave of power
    # (theta_max = P R (1 - a)/(1 - a b)); the panel's own capacity is 1e-5 of the contents'
    ns = _script("example_periodic_state.py")
    out = ns["main"]()
    assert out["converged"]
    assert out["cycles"][-1]["chamber_max_K"] == pytest.approx(ns["closed_form_peak"](), abs=0.05)
    # a cold first day peaks well below the settled one (the contents start at ambient)
    assert out["cycles"][0]["chamber_max_K"] < out["cycles"][-1]["chamber_max_K"] - 10.0
    assert "closed form" in capsys.readouterr().out


def test_example_sizing(capsys):
    # closed form: series resistances of a plane wall (Incropera, Fundamentals of Heat and Mass
    # Transfer, sec. 3.1) solved for the board thickness that puts the skin at the limit
    ns = _script("example_sizing.py")
    out = ns["main"]()
    assert out["thickness_exact_m"] == pytest.approx(out["closed_form_m"], rel=1e-6)
    # rounded up to the next 10 mm stock size, and that size is the smallest one above
    assert out["thickness_m"] == pytest.approx(0.02)
    assert out["thickness_m"] - 0.01 < out["closed_form_m"] <= out["thickness_m"]
    text = capsys.readouterr().out
    assert "closed form" in text and "engineering estimate" in text
