"""Every PNG plot that speaks of skin temperature, touch or burns carries the caution in full
(the mission's rule for safety outputs: engineering estimate; confirm by measurement; follow
the applicable product-safety standard, local codes and licensed practice; burn-damage
figures are an engineering indicator, not a medical prediction).

The text of each figure is read at the moment it is saved (matplotlib's own text objects),
so the check does not depend on reading pixels.
"""
from __future__ import annotations

from pathlib import Path

import matplotlib
import pytest
from matplotlib.figure import Figure
from matplotlib.text import Text

from fdwall.cautions import BURN_INDICATOR_NOTE, SAFETY_CAUTION
from fdwall.cli import main

matplotlib.use("Agg")

CASE = Path(__file__).resolve().parents[1] / "cases" / "curing-oven-panel.toml"


@pytest.fixture
def saved_texts(monkeypatch):
    """All text on each figure when it was saved, one string per figure (joined, with the
    wrapping newlines turned back into spaces; files are saved under temporary names, so a
    figure is found by its title)."""
    seen = []
    orig = Figure.savefig

    def spy(self, fname, *a, **kw):
        words = " ".join(t.get_text() for t in self.findobj(Text))
        seen.append(" ".join(words.split()))
        return orig(self, fname, *a, **kw)

    monkeypatch.setattr(Figure, "savefig", spy)
    return seen


def _figure(texts, title):
    """The one figure whose text holds ``title``."""
    found = [t for t in texts if title in t]
    assert len(found) == 1, (title, len(found))
    return found[0]


def _has(text, caution):
    """``caution`` is in ``text`` word for word (whitespace ignored: wrapping may break a line
    at a hyphen)."""
    return "".join(caution.split()) in "".join(text.split())


def test_touch_plots_carry_the_full_caution(tmp_path, saved_texts, capsys):
    assert main(["touch", str(CASE), "--out", str(tmp_path), "--quiet"]) == 0
    touch = _figure(saved_texts, "Touch safety:")
    contact = _figure(saved_texts, "Contact simulation")
    assert _has(touch, SAFETY_CAUTION)
    # the contact plot shows a burn-damage figure: it also says what that figure is
    assert _has(contact, SAFETY_CAUTION) and _has(contact, BURN_INDICATOR_NOTE)


def test_run_plot_with_a_skin_panel_carries_the_caution(tmp_path, saved_texts, capsys):
    assert main(["run", str(CASE), "--out", str(tmp_path), "--quiet"]) == 0
    temps = _figure(saved_texts, "face and interface temperatures")
    assert "skin" in temps and _has(temps, SAFETY_CAUTION)


def test_touch_help_carries_the_caution(capsys):
    assert main(["touch", "--help"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert _has(out, SAFETY_CAUTION) and _has(out, BURN_INDICATOR_NOTE)
