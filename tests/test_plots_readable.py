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
                shape="cylinder", inner_radius=R1, length=LENGTH, name="line")
    case = Case(run=RunSettings(duration=30 * 3600.0, output_every=1800.0), wall=wall,
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


# ----------------------------------------------------------------- enclosure temperature plot
# An invented box: two identical side walls (by symmetry their temperatures are the same, so
# one must hide the other), a thinner roof, a thermostat on the chamber air.
def _enclosure():
    from fdwall.model import Chamber, Control, EnclosureWall, Heater
    from fdwall.schedule import Schedule
    wool = material_from_dict("demo-wool", {"k": 0.05, "cp": 900.0, "rho": 120.0})
    sheet = material_from_dict("demo-sheet", {"k": 45.0, "cp": 480.0, "rho": 7800.0})
    board = material_from_dict("demo-board", {"k": 0.2, "cp": 1000.0, "rho": 600.0})
    def side(name):
        return EnclosureWall(wall=Wall(layers=(Layer(board, 0.02), Layer(wool, 0.08),
                                               Layer(sheet, 0.0015)), area=0.5, name=name),
                             outer=Face.exchange(K0 + 20.0, 8.0), inner_face_convection=10.0)
    roof = EnclosureWall(wall=Wall(layers=(Layer(board, 0.02), Layer(wool, 0.04),
                                           Layer(sheet, 0.0015)), area=0.4, name="roof"),
                         outer=Face.exchange(K0 + 20.0, 8.0), inner_face_convection=10.0)
    sp = Schedule((0.0, 1800.0), (K0 + 20.0, K0 + 250.0))
    return Case(run=RunSettings(duration=3 * 3600.0, output_every=120.0, max_step=60.0),
                walls=(side("left"), side("right"), roof),
                chamber=Chamber(heat_capacity=8000.0, room_temperature=K0 + 20.0),
                heater=Heater(power=3000.0),
                control=Control(mode="thermostat", setpoint=sp, band=4.0), name="demo-box")


@pytest.fixture(scope="module")
def box():
    return fdwall.run(_enclosure(), progress=False)


def test_enclosure_outer_faces_in_their_own_panel(box, tmp_path, monkeypatch):
    figs = _figs(monkeypatch)
    plots.plot_temperatures(box, tmp_path / "t.png")
    top, bottom = figs[-1].axes[:2]
    gids = lambda ax: {ln.get_gid() for ln in ax.get_lines() if ln.get_gid()}  # noqa: E731
    assert gids(bottom) == {"outer-0", "outer-1", "outer-2"}
    assert not any(g.startswith("outer") for g in gids(top))
    # the skin panel is scaled to the skin curves: its span is at most ~1.3x theirs
    skin = box.face_T[:, 1::2] - K0
    lo, hi = bottom.get_ylim()
    assert hi - lo < 1.3 * (skin.max() - skin.min())
    assert hi < 0.5 * top.get_ylim()[1]


def test_interfaces_have_distinct_colour_and_dash(box, tmp_path, monkeypatch):
    from matplotlib.colors import to_hex
    figs = _figs(monkeypatch)
    plots.plot_temperatures(box, tmp_path / "t.png")
    top = figs[-1].axes[0]
    styles = {}
    for ln in top.get_lines():
        g = ln.get_gid() or ""
        if g.startswith("interface-"):
            styles[g] = (to_hex(ln.get_color()), tuple(ln._unscaled_dash_pattern[1] or ()))
    assert len(styles) == 3 * 2
    for j in range(3):   # within one wall: every interface its own colour and dash
        mine = [v for k, v in styles.items() if k.startswith(f"interface-{j}-")]
        assert len({c for c, _ in mine}) == len(mine) and len({d for _, d in mine}) == len(mine)
    # across walls: no two interfaces look the same
    assert len(set(styles.values())) == len(styles)


def test_legend_lists_only_visible_curves(box, tmp_path, monkeypatch):
    figs = _figs(monkeypatch)
    plots.plot_temperatures(box, tmp_path / "t.png")
    top, bottom = figs[-1].axes[:2]
    labels = [t.get_text().replace("\n", " ").replace("   ", " ").replace("  ", " ")
              for t in top.get_legend().get_texts()]
    # the two side walls are the same construction in the same conditions (symmetry): one
    # curve of each pair hides the other, and the legend merges their names
    assert "left: inner face = right: inner face" in labels
    assert not any(lab.startswith("right: inner face") for lab in labels)
    out_labels = [t.get_text() for t in bottom.get_legend().get_texts()]
    assert "left: outer face = right: outer face" in out_labels
    assert "roof: outer face" in out_labels


def test_merge_hidden_pixel_tolerance():
    """Two curves 0.5 px apart are one curve to the eye, 6 px apart are two (pixel distances
    measured with matplotlib's own data-to-display transform)."""
    fig, (ax,) = plots._figure(6.0, 4.0)
    x = np.linspace(0.0, 1.0, 50)
    ax.plot(x, x, label="a")
    ax.set_ylim(0.0, 1.0)
    fig.canvas.draw()
    px = ax.transData.transform([[0, 0], [0, 1]])
    per_px = 1.0 / abs(px[1, 1] - px[0, 1])         # data units per pixel
    ax.plot(x, x + 0.5 * per_px, label="b")
    ax.plot(x, x + 6.0 * per_px, label="c")
    ax.set_ylim(0.0, 1.0)
    groups = plots.merge_hidden(ax)
    assert [g[1] for g in groups] == [["a", "b"], ["c"]]
    assert groups[0][0].get_label() == "a = b"


def test_setpoint_drawn(box, tmp_path, monkeypatch):
    figs = _figs(monkeypatch)
    plots.plot_temperatures(box, tmp_path / "t.png")
    top = figs[-1].axes[0]
    sp = [ln for ln in top.get_lines() if ln.get_gid() == "setpoint"]
    assert len(sp) == 1 and "setpoint" in sp[0].get_label()
    want = np.interp(box.times, [0.0, 1800.0], [20.0, 250.0])   # the schedule above
    np.testing.assert_allclose(sp[0].get_ydata(), want, atol=1e-9)


def test_profile_legend_merges_coinciding_profiles(pipe, tmp_path, monkeypatch):
    """The pipe's lagging has a diffusion time L^2/alpha = (0.03 m)^2 / (0.05/(800*100)) m2/s
    = 24 min (Incropera sec. 5.5: the plane-wall response is steady after a few of these),
    so the profiles from 6 h on are all the steady one: one legend entry for all of them."""
    figs = _figs(monkeypatch)
    plots.plot_profiles(pipe, tmp_path / "p.png")
    fig = figs[-1]
    texts = [t.get_text() for t in fig.legends[0].get_texts()]
    assert texts == ["t = 6 h = t = 12 h = t = 18 h = t = 24 h = t = 30 h"]
    # and the merged curves really are within the tolerance on the drawn axes (pixels by
    # matplotlib's own transform)
    ax = fig.axes[0]
    fig.canvas.draw()
    ys = [ax.transData.transform(np.c_[ln.get_xdata(), ln.get_ydata()])[:, 1]
          for ln in ax.get_lines() if ln.get_label().startswith("t = ")]
    assert len(ys) == 5
    spread = max(np.max(np.abs(a - ys[-1])) for a in ys[:-1])
    assert spread <= plots.HIDDEN_TOLERANCE_PX * 1.5
