"""Readable plots: a pipe's heat flow per metre [W/m], layers named by their material.

Checked on the matplotlib figure objects (axis labels, plotted data, layer texts).
External reference: steady conduction through a hollow cylinder held at fixed temperatures,
q' = 2 pi k (T1 - T2) / ln(r2/r1) per metre (Incropera et al., Fundamentals of Heat and Mass
Transfer, sec. 3.3), which the plotted per-metre curve must reach at the end of a long run.
"""
from __future__ import annotations

import math

import numpy as np
import pytest

import fdwall
from fdwall.materials import material_from_dict
from fdwall.model import Case, Face, Layer, RunSettings, Wall
from fdwall.report import plots

K0 = 273.15
# invented demo pipe: thin steel-like tube, 30 mm of insulation, 2 m long
R1, T_STEEL, T_INS, K_INS, LENGTH = 0.05, 0.003, 0.03, 0.05, 2.0
T_IN, T_OUT = 150.0, 20.0


def _figs(monkeypatch):
    got = []
    real = plots._save

    def keep(fig, path):
        got.append(fig)
        return real(fig, path)
    monkeypatch.setattr(plots, "_save", keep)
    return got


@pytest.fixture(scope="module")
def pipe():
    steel = material_from_dict("demo-tube", {"k": 45.0, "cp": 480.0, "rho": 7800.0})
    wool = material_from_dict("demo-wool", {"k": K_INS, "cp": 800.0, "rho": 100.0})
    wall = Wall(layers=(Layer(steel, T_STEEL), Layer(wool, T_INS, name="lagging")),
                geometry="cylinder", inner_radius=R1, length=LENGTH, name="line")
    case = Case(run=RunSettings(duration=30 * 3600.0, output_interval=1800.0), wall=wall,
                inner=Face.fixed(K0 + T_IN), outer=Face.fixed(K0 + T_OUT), name="demo-pipe")
    return fdwall.run(case)


def test_pipe_heat_flow_in_watts_per_metre(pipe, tmp_path, monkeypatch):
    figs = _figs(monkeypatch)
    plots.plot_energy(pipe, tmp_path / "e.png")
    ax = figs[-1].axes[0]
    assert ax.get_ylabel().endswith("[W/m]") and "per metre" in ax.get_ylabel()
    assert "[MJ/m]" in figs[-1].axes[1].get_ylabel()
    inner = [ln for ln in ax.get_lines() if ln.get_label().startswith("line:inner")][0]
    y = np.asarray(inner.get_ydata(), dtype=float)
    np.testing.assert_allclose(y, pipe.face_flow[:, 0] / LENGTH, rtol=1e-12)
    # steady per-metre flow of the two-layer cylinder (Incropera sec. 3.3)
    r2, r3 = R1 + T_STEEL, R1 + T_STEEL + T_INS
    q = 2 * math.pi * (T_IN - T_OUT) / (math.log(r2 / R1) / 45.0 + math.log(r3 / r2) / K_INS)
    assert y[-1] == pytest.approx(q, rel=5e-3)


def test_slab_heat_flow_stays_in_watts(tmp_path, monkeypatch):
    board = material_from_dict("demo-board", {"k": 0.1, "cp": 1000.0, "rho": 500.0})
    case = Case(run=RunSettings(duration=3600.0), wall=Wall(layers=(Layer(board, 0.05),)),
                inner=Face.fixed(K0 + 100.0), outer=Face.fixed(K0 + 20.0), name="demo-slab")
    figs = _figs(monkeypatch)
    plots.plot_energy(fdwall.run(case), tmp_path / "e.png")
    assert figs[-1].axes[0].get_ylabel() == "heat flow [W]"


def test_layers_labelled_by_material(pipe, tmp_path, monkeypatch):
    figs = _figs(monkeypatch)
    plots.plot_profiles(pipe, tmp_path / "p.png")
    ax = figs[-1].axes[0]
    texts = {t.get_gid(): t.get_text() for t in ax.texts if (t.get_gid() or "").startswith("layer-")}
    # the 3 mm tube is thin on this axis: still named by its material, upright
    assert texts == {"layer-0": "demo-tube", "layer-1": "lagging (demo-wool)"}
    thin = [t for t in ax.texts if t.get_gid() == "layer-0"][0]
    assert thin.get_rotation() == 90
    assert "thin layers" not in ax.get_title()
    # the stored-energy legend names the layers the same way
    plots.plot_energy(pipe, tmp_path / "e.png")
    labels = [ln.get_label() for ln in figs[-1].axes[1].get_lines()]
    assert "stored: demo-tube" in labels and "stored: lagging (demo-wool)" in labels
