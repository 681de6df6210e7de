"""Tests of fdwall.report: the plain-text summaries and the PNG plots.

The cases are built in Python (demo data, invented for the tests).  Physical checks compare
the printed numbers with closed-form references named beside each check.
"""
from __future__ import annotations

import re
from dataclasses import replace

import numpy as np
import pytest

from fdwall.materials import get_material, material_from_dict
from fdwall.model import (
    Case,
    Chamber,
    Control,
    EnclosureWall,
    Event,
    Face,
    Heater,
    Layer,
    RunSettings,
    Wall,
)
from fdwall.report import plots
from fdwall.report.text import (
    TOUCH_CAUTION,
    format_case,
    format_material,
    format_material_list,
    format_steady,
    format_summary,
)
from fdwall.solver import run, solve_steady
from fdwall.system import build_system

K0 = 273.15

# One-layer demo slab: constant properties so the steady state is closed-form.
L_SLAB, K_SLAB, RHO, CP = 0.05, 0.1, 500.0, 1000.0     # [m], [W/m/K], [kg/m3], [J/kg/K]
H_IN, H_OUT, T_IN, T_OUT, AREA = 10.0, 5.0, 200.0, 20.0, 2.0  # [W/m2/K], [degC], [m2]


def slab_case(duration=6 * 3600.0):
    board = material_from_dict("demo-board", {"k": K_SLAB, "cp": CP, "rho": RHO})
    w = Wall(layers=(Layer(board, L_SLAB),), area=AREA, name="slab")
    return Case(run=RunSettings(duration=duration, snapshots=(1800.0, 7200.0),
                                watch=(Event(K0 + 40.0, at="outer", name="skin 40C"),)),
                wall=w, inner=Face.exchange(K0 + T_IN, H_IN), outer=Face.exchange(K0 + T_OUT, H_OUT),
                name="demo-slab")


def oven_case():
    """Demo curing-oven box: two wall assemblies, chamber node, thermostat heater."""
    def wall(name, area):
        return EnclosureWall(
            Wall(layers=(Layer(get_material("stainless-steel-304"), 0.0015),
                         Layer(get_material("mineral-wool-128"), 0.075),
                         Layer(get_material("carbon-steel"), 0.001)), name=name, area=area),
            outer=Face.exchange(K0 + 20.0, 6.0, 0.9), inner_face_convection=15.0, inner_face_emissivity=0.5)
    return Case(run=RunSettings(duration=3 * 3600.0),
                walls=(wall("sides", 4.0), wall("roof", 1.0)),
                chamber=Chamber(heat_capacity=50e3, leakage=0.002),
                heater=Heater(power=6000.0),
                control=Control(mode="thermostat", setpoint=K0 + 180.0, band=4.0),
                name="demo-oven")


@pytest.fixture(scope="module")
def slab_result():
    case = slab_case()
    res = run(case, progress=False)
    res.steady = solve_steady(case)
    return res


@pytest.fixture(scope="module")
def oven_result():
    case = oven_case()
    res = run(case, progress=False)
    res.steady = solve_steady(case)
    return res


def _q_series():
    """Steady heat flow through the slab by the series resistances [W].

    Incropera et al., Fundamentals of Heat and Mass Transfer, ch. 3 (plane wall with
    convection on both sides): q = A (T_in - T_out) / (1/h_in + L/k + 1/h_out).
    """
    return AREA * (T_IN - T_OUT) / (1.0 / H_IN + L_SLAB / K_SLAB + 1.0 / H_OUT)


def _section(text, title):
    """Lines of the section whose heading starts with ``title`` (up to the next heading)."""
    lines = text.splitlines()
    for i, ln in enumerate(lines):
        if ln.startswith(title) and i + 1 < len(lines) and set(lines[i + 1]) == {"-"}:
            out = []
            for k in range(i + 2, len(lines)):
                if k + 1 < len(lines) and lines[k + 1] and set(lines[k + 1]) == {"-"} \
                        and not lines[k].startswith(" "):
                    break
                out.append(lines[k])
            return "\n".join(out)
    raise AssertionError(f"no section '{title}' in:\n{text}")


# --------------------------------------------------------------------------- text summary

def test_summary_labels_every_kind_of_number_with_its_unit(slab_result):
    text = format_summary(slab_result)
    for unit in ("degC", "[W]", "kWh", "MJ", "[W/m2/K]", " h", " J"):
        assert unit in text, unit
    # temperatures are printed in degC, not kelvin: the inner face ends near 177 degC
    faces = _section(text, "Faces")
    row = next(ln for ln in faces.splitlines() if ln.strip().startswith("slab:inner"))
    assert "[degC]" in faces and 170.0 < float(row.split()[1]) < 180.0, faces


def test_summary_speaks_of_skin_only_with_the_caution(slab_result, oven_result):
    for res in (slab_result, oven_result):
        text = format_summary(res)
        caution_start = TOUCH_CAUTION.split(";")[0]
        flat = " ".join(text.split())
        assert " ".join(TOUCH_CAUTION.split()) in flat
        # every section that mentions skin or touch carries the caution itself
        blocks = re.split(r"\n(?=[A-Z][^\n]*\n-+\n)", text)
        for b in blocks:
            if re.search(r"skin|touch", b, re.I):
                assert caution_start.split(":")[0] in b, b
                assert "product-safety standard" in " ".join(b.split()), b
                assert "confirm" in b and "measurement" in " ".join(b.split()), b


def test_steady_section_matches_series_resistance(slab_result):
    text = format_summary(slab_result)
    st = _section(text, "Steady state")
    q = _q_series()
    # surface temperatures from q = h A (T_fluid - T_s) (Newton's law of cooling)
    Ts_in = T_IN - q / (H_IN * AREA)
    Ts_out = T_OUT + q / (H_OUT * AREA)
    m_in = re.search(r"slab:inner\s+(-?[\d.]+)\s+(-?[\d.]+)", st)
    m_out = re.search(r"slab:outer\s+(-?[\d.]+)\s+(-?[\d.]+)", st)
    assert m_in and m_out, st
    assert float(m_in.group(1)) == pytest.approx(Ts_in, abs=0.06)
    assert float(m_in.group(2)) == pytest.approx(q, abs=0.06)
    assert float(m_out.group(1)) == pytest.approx(Ts_out, abs=0.06)
    assert float(m_out.group(2)) == pytest.approx(-q, abs=0.06)
    # combined film coefficient printed is h_conv + h_rad (no radiation here: h_rad = 0)
    assert re.search(r"slab:inner.*\b10\.00\s+0\.00\s+10\.00", st), st
    assert f"skin temperature slab:outer: {Ts_out:.1f} degC" in st


def test_energy_section_stored_energy_against_profile_integral(slab_result):
    """Stored energy printed vs rho cp A integral of (T - T0) over the final profile.

    Sensible heat of a solid with constant cp (any text, e.g. Incropera ch. 1 energy balance),
    integrated here with the trapezoid rule on the nodes, independently of fdwall's ledger.
    """
    text = format_summary(slab_result)
    en = _section(text, "Energy")
    m = re.search(r"stored, total\s+(-?[\d.]+) kWh\s+(-?[\d.]+) MJ", en)
    assert m, en
    x = slab_result.x(0)
    T = slab_result.wall_T(0)[-1]
    from scipy.integrate import trapezoid
    E = RHO * CP * AREA * trapezoid(T - slab_result.T[0, 0], x)
    assert float(m.group(2)) == pytest.approx(E / 1e6, rel=0.01)
    assert float(m.group(1)) == pytest.approx(E / 3.6e6, rel=0.01)
    # energy residual printed small: heat in - stored ~ 0 (first law)
    r = re.search(r"relative\s+([\d.e+-]+)", en)
    assert r and float(r.group(1)) < 1e-3


def test_events_and_interfaces_in_summary(oven_result, slab_result):
    text = format_summary(oven_result)
    inter = _section(text, "Interfaces")
    assert "stainless-steel-304 | mineral-wool-128" in inter
    assert inter.count("sides") == 2 and inter.count("roof") == 2
    assert "Chamber" in text and "heater power" in text
    ev = _section(format_summary(slab_result), "Events")
    up = slab_result.events["skin 40C"][0]
    assert np.isfinite(up)
    m = re.search(r"skin 40C.*?40\.0\s+([\d.]+) (h|min|s)\s+not reached", ev)
    assert m, ev
    printed = float(m.group(1)) * {"h": 3600.0, "min": 60.0, "s": 1.0}[m.group(2)]
    assert printed == pytest.approx(up, abs=1.0)


def test_incomplete_result_is_flagged(slab_result):
    bad = replace(slab_result, complete=False, message="the solver could not converge at t = 5 s")
    text = format_summary(bad)
    assert "INCOMPLETE" in text and "could not converge" in text


def test_format_steady_and_case(slab_result):
    case = slab_result.case
    st = format_steady(slab_result.steady, case)
    assert "degC" in st and "[W]" in st and "Caution" in st
    desc = format_case(case, build_system(case), ["a demo warning"])
    # R-value of the layer: R'' = L/k (Incropera ch. 3, plane wall), R = R''/A
    assert f"{L_SLAB / K_SLAB:.4g}" in desc
    assert f"{L_SLAB / K_SLAB / AREA:.4g}" in desc
    assert "50.0" in desc and "[mm]" in desc and "a demo warning" in desc
    assert "convection h = 10.00 W/m2/K to air at 200.0 degC" in desc


def test_material_texts():
    mats = [get_material(n) for n in ("carbon-steel", "plasterboard-gypsum", "mineral-wool-128")]
    text = format_material_list(mats)
    row = next(ln for ln in text.splitlines() if ln.strip().startswith("carbon-steel"))
    # 500 degC lies above carbon steel's service limit (425 degC in the library): no value
    assert row.split()[-2] == "-" and row.split()[-1] == "425"
    row = next(ln for ln in text.splitlines() if ln.strip().startswith("plasterboard"))
    assert row.split().count("-") >= 2
    one = format_material(get_material("mineral-wool-128"))
    assert "[W/m/K]" in one and "[J/kg/K]" in one and "kg/m3" in one and "degC" in one


# --------------------------------------------------------------------------- plots

def _png_ok(path, min_bytes=8000):
    with open(path, "rb") as fh:
        head = fh.read(8)
    assert head == b"\x89PNG\r\n\x1a\n", path
    import os
    assert os.path.getsize(path) > min_bytes, path
    import matplotlib.image as mpimg
    img = mpimg.imread(path)
    assert img.shape[0] > 300 and img.shape[1] > 500
    # not a blank canvas: a good share of pixels differ from white
    rgb = img[..., :3]
    assert np.mean(np.any(rgb < 0.9, axis=-1)) > 0.01


def test_write_plots_single_wall(slab_result, tmp_path):
    paths = plots.write_plots(slab_result, tmp_path / "out", "demo")
    assert [p.rsplit("/", 1)[-1] for p in paths] == [
        "demo-temperatures.png", "demo-profiles.png", "demo-energy.png"]
    for p in paths:
        _png_ok(p)
    # no temporary files left behind
    assert not [f for f in (tmp_path / "out").iterdir() if f.name.endswith(".part")]


def test_write_plots_enclosure(oven_result, tmp_path):
    for p in plots.write_plots(oven_result, tmp_path, "oven"):
        _png_ok(p)


def test_profile_times_default_and_custom(slab_result, tmp_path):
    # the case's profile times are used when given
    assert plots._profile_times(slab_result, None) == [1800.0, 7200.0]
    # without them: 5 evenly spaced times up to the end
    no_pt = replace(slab_result, case=replace(slab_result.case,
                                              run=replace(slab_result.case.run, snapshots=())))
    t = plots._profile_times(no_pt, None)
    assert len(t) == 5 and t[-1] == pytest.approx(slab_result.times[-1])
    assert np.allclose(np.diff(t), t[0])
    p = plots.plot_profiles(slab_result, tmp_path / "p.png", times=[600.0, 3600.0])
    _png_ok(p)
