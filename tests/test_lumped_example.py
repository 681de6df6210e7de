"""cases/example_rc_networks.py runs as written and gives the numbers its closed forms give."""
import runpy
from pathlib import Path

import pytest

SCRIPT = Path(__file__).resolve().parents[1] / "cases" / "example_rc_networks.py"


def test_example_rc_networks(capsys):
    # closed forms: series resistances and the piecewise-linear steady profile of a plane wall
    # (Incropera, Fundamentals of Heat and Mass Transfer, sec. 3.1), as the script derives
    # them; a fitted C over the longest log (5 slowest time constants) reaches C_effective
    # within 1 % and not C_stored (docs/lumped-rc.md)
    ns = runpy.run_path(str(SCRIPT), run_name="example")
    out = ns["main"]()
    rc, ref, ll = out["rc"], out["closed_form"], out["log_lengths"]
    assert rc["R_K_per_W"] == pytest.approx(ref["R_K_per_W"], rel=1e-9)
    assert rc["C_stored_J_per_K"] == pytest.approx(ref["C_stored_J_per_K"], rel=1e-3)
    assert rc["C_effective_J_per_K"] == pytest.approx(ref["C_effective_J_per_K"], rel=2e-3)
    assert sum(p["R_K_per_W"] for p in rc["networks"]["cauer"]) == pytest.approx(
        ref["R_K_per_W"], rel=0.01)
    assert rc["networks"]["max_error_fraction"] < 0.005
    last = ll["rows"][-1]["C_fit_R_fixed_J_per_K"]
    assert last == pytest.approx(ref["C_effective_J_per_K"], rel=0.01)
    assert last < 0.95 * ref["C_stored_J_per_K"]
    text = capsys.readouterr().out
    assert "closed form" in text and "Cauer" in text and "closest to C_effective" in text
