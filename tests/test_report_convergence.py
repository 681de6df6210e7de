"""Convergence check stored by the run and shown in the report.

External reference: transient conduction in a slab 0 <= x <= L, uniformly at T0, whose face
x = 0 is held at T1 from t = 0 and whose face x = L is insulated (Carslaw & Jaeger, Conduction
of Heat in Solids, 2nd ed., sec. 3.3, eq. (3); equivalently Incropera et al., Fundamentals of
Heat and Mass Transfer, sec. 5.5, with the plane-wall half-thickness L):

    (T - T1) / (T0 - T1) = sum_n 4/((2n+1) pi) sin(l_n x) exp(-l_n^2 alpha t),
    l_n = (2n+1) pi / (2 L),

and, integrated over the thickness, the stored energy
    E = rho c L (T1 - T0) (1 - sum_n 8/((2n+1)^2 pi^2) exp(-l_n^2 alpha t)).
The method is second order in space (DESIGN.md), so both the error against this series and
the run-time check's difference (run vs. twice-refined rerun) must fall about 4x per halving.
"""
from __future__ import annotations

import math

import h5py
import numpy as np
import pytest

import fdwall
from fdwall.analyses.convergence import convergence_check, refined_case
from fdwall.materials import material_from_dict
from fdwall.model import Case, Face, Layer, RunSettings, Wall

K0 = 273.15
L, K, RHO, CP = 0.05, 0.5, 1000.0, 1000.0     # invented demo board
ALPHA = K / (RHO * CP)
T0, T1 = 20.0, 120.0
T_END = 0.3 * L * L / ALPHA                     # Fourier number 0.3


def _series(x, t, n=400):
    """(T - T1)/(T0 - T1) by the Carslaw & Jaeger series (module docstring)."""
    i = np.arange(n)
    lam = (2 * i + 1) * math.pi / (2 * L)
    return float(np.sum(4 / ((2 * i + 1) * math.pi) * np.sin(lam * x)
                        * np.exp(-lam ** 2 * ALPHA * t)))


def _stored(t, n=400):
    i = np.arange(n)
    lam = (2 * i + 1) * math.pi / (2 * L)
    return RHO * CP * L * (T1 - T0) * (1 - float(np.sum(8 / ((2 * i + 1) ** 2 * math.pi ** 2)
                                                       * np.exp(-lam ** 2 * ALPHA * t))))


def _case(cells):
    m = material_from_dict("demo-board", {"k": K, "cp": CP, "rho": RHO})
    wall = Wall(layers=(Layer(m, L / 2, cells=cells, name="front"),
                        Layer(m, L / 2, cells=cells, name="back")), name="slab")
    return Case(run=RunSettings(duration=T_END, start_temperature=K0 + T0, tolerance=1e-4,
                                output_every=T_END / 20),
                wall=wall, inner=Face.fixed(K0 + T1), outer=Face.adiabatic(), name="demo-slab")


@pytest.fixture(scope="module")
def checks():
    out = {}
    for cells in (4, 8, 16):
        case = _case(cells)
        res = fdwall.run(case, progress=False)
        out[cells] = (res, convergence_check(case, res))
    return out


def test_refined_case_changes_only_mesh_and_tolerance():
    case = _case(4)
    fine = refined_case(case, 2.0, 0.25)
    assert fine.wall.refine == 2.0 and fine.run.tolerance == pytest.approx(2.5e-5)
    assert fine.run.duration == case.run.duration and fine.wall.layers == case.wall.layers
    assert fdwall.build_system(fine).n_unknowns == 2 * 8 + 1   # 2 layers x (4 cells x 2) + 1


def test_difference_shrinks_fourfold_and_tracks_analytic_error(checks):
    t_skin = K0 + T1 + (T0 - T1) * _series(L, T_END)
    t_itf = K0 + T1 + (T0 - T1) * _series(L / 2, T_END)
    q_in = K * (T1 - T0) * 2 / L * sum(math.exp(-((2 * i + 1) * math.pi / (2 * L)) ** 2
                                                * ALPHA * T_END) for i in range(400))
    exact = {"skin_T_max": t_skin, "interface_T_max": t_itf, "stored_final": _stored(T_END),
             "heat_flow_final[slab:inner]": q_in}
    diffs, errs = {}, {}
    for cells, (res, conv) in checks.items():
        assert conv["status"] == "computed"
        row = {r["key"]: (r["base"], r["difference"]) for r in conv["rows"]}
        for key, ref in exact.items():
            base, d = row[key]
            diffs.setdefault(key, []).append(abs(d))
            errs.setdefault(key, []).append(abs(base - ref))
    for key in exact:
        d, e = diffs[key], errs[key]
        for a, b in zip(d[:-1], d[1:]):
            assert 3.2 < a / b < 5.0, (key, d)            # second order: ~4x per halving
        for a, b in zip(e[:-1], e[1:]):
            assert 3.2 < a / b < 5.0, (key, e)
        # Richardson: the difference is ~ (1 - 1/4) of the run's error against the series
        assert d[-1] == pytest.approx(0.75 * e[-1], rel=0.15), key
    # an insulated face has no heat flow, in the run and in the rerun
    res, conv = checks[16]
    row = {r["key"]: r["difference"] for r in conv["rows"]}
    assert abs(row["heat_flow_final[slab:outer]"]) < 1e-9


def test_not_computed_for_a_profile_start(checks):
    res, _ = checks[4]
    case = _case(4)
    from dataclasses import replace
    prof = replace(case, run=replace(case.run, start_temperature=res.T[-1]))
    assert convergence_check(prof, res)["status"].startswith("not computed")


CASE_TEXT = """
title = "invented two-layer panel"
[run]
duration = "1 h"
start_temperature = "20 degC"
output_every = "5 min"
[materials.demo-board]
conductivity = "0.5 W/m/K"
specific_heat = "1000 J/kg/K"
density = "1000 kg/m3"
source = "invented test data"
[wall]
name = "panel"
[[wall.layers]]
material = "demo-board"
thickness = "25 mm"
[[wall.layers]]
material = "demo-board"
thickness = "25 mm"
[wall.inner_face]
fixed_temperature = "120 degC"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "10 W/m2/K"
"""


def _section_rows(text, hid):
    """Rows of the first table after the element with id ``hid`` (html5lib tree)."""
    import xml.etree.ElementTree as ET

    import html5lib
    doc = html5lib.HTMLParser(strict=True).parse(text)
    ns = "{http://www.w3.org/1999/xhtml}"
    els = list(doc.iter())
    start = [i for i, e in enumerate(els) if e.get("id") == hid][0]
    table = next(e for e in els[start:] if e.tag == f"{ns}table")
    return [[ET.tostring(c, method="text", encoding="unicode").strip() for c in tr]
            for tr in table.iter(f"{ns}tr")]


def test_run_report_stores_check_and_report_equals_file(tmp_path, capsys):
    from fdwall.cli import main
    from fdwall.report import html as rhtml
    p = tmp_path / "panel.toml"
    p.write_text(CASE_TEXT)
    out = tmp_path / "out"
    assert main(["run", str(p), "--out", str(out), "--report", "--no-plots", "--quiet"]) == 0
    with h5py.File(out / "panel.h5") as h:
        g = h["report_data/convergence"]
        assert g.attrs["status"] == "computed"
        n = int(g["rows"].attrs["list_length"])
        rows_h5 = [dict(g[f"rows/{i}"].attrs) for i in range(n)]
        keys = [r["key"] for r in rows_h5]
        base, fine, diff = (np.array([r[k] for r in rows_h5]) for k in ("base", "refined",
                                                                         "difference"))
        assert g.attrs["refine_factor"] == 2.0
        assert g.attrs["refined_nodes"] > g.attrs["nodes"]
    np.testing.assert_allclose(diff, fine - base, rtol=1e-12, atol=0)
    text = (out / "panel-report.html").read_text()
    rows = _section_rows(text, "convergence")
    assert rows[0][0] == "quantity" and len(rows) == len(keys) + 1
    skin = rows[1 + keys.index("skin_T_max")]
    # degC = K - 273.15 (definition of the Celsius scale, NIST SP 811); a difference in K
    assert float(skin[1]) == pytest.approx(base[keys.index("skin_T_max")] - K0, abs=1e-4)
    assert skin[3] == "degC" and skin[5] == "K"
    assert float(skin[4]) == pytest.approx(diff[keys.index("skin_T_max")], rel=1e-5)
    stored = rows[1 + keys.index("stored_final")]
    assert float(stored[1]) == pytest.approx(base[keys.index("stored_final")], rel=1e-5)
    # US display: a temperature difference of 1 K is 1.8 degF (pint delta units)
    import pint
    us = _section_rows(rhtml.render_report(out / "panel.h5", units="us"), "convergence")
    d_f = pint.UnitRegistry().Quantity(diff[keys.index("skin_T_max")], "delta_degC") \
        .to("delta_degF").magnitude
    assert float(us[1 + keys.index("skin_T_max")][4]) == pytest.approx(d_f, rel=1e-5)
    # a file written without --report: the check reads "not computed"
    out2 = tmp_path / "out2"
    assert main(["run", str(p), "--out", str(out2), "--no-plots", "--quiet"]) == 0
    with h5py.File(out2 / "panel.h5") as h:
        assert "report_data" not in h
    assert main(["report", str(out2 / "panel.h5")]) == 0
    old = (out2 / "panel-report.html").read_text()
    assert "Convergence check: not computed" in old


def test_on_off_control_gets_a_note():
    """A thermostat's switching instants move with the mesh: the check says so (the
    difference of a final value then mixes in the cycle phase; common practice, no source)."""
    from fdwall.analyses.convergence import _note
    from fdwall.model import Chamber, Control, EnclosureWall, Heater
    m = material_from_dict("demo-board", {"k": K, "cp": CP, "rho": RHO})
    ew = EnclosureWall(wall=Wall(layers=(Layer(m, 0.05),), name="w"),
                       outer=Face.exchange(K0 + 20, 8.0))
    base = dict(run=RunSettings(duration=600.0), walls=(ew,), chamber=Chamber(heat_capacity=1e4),
                heater=Heater(power=500.0))
    thermo = Case(control=Control(mode="thermostat", setpoint=K0 + 100), **base)
    assert "switching" in _note(thermo)
    assert _note(Case(**base)) == "" and _note(_case(4)) == ""


def test_touch_report_stores_the_check(tmp_path):
    # common practice, no source: `fdwall touch --report` stores the same report data as
    # `fdwall run --report`, so its report shows the convergence check, not "not computed"
    from pathlib import Path

    from fdwall.cli import main
    case = Path(__file__).resolve().parents[1] / "cases" / "curing-oven-panel.toml"
    assert main(["touch", str(case), "--out", str(tmp_path), "--report", "--quiet",
                 "--no-plots"]) == 0
    (h5,) = tmp_path.glob("*.h5")
    with h5py.File(h5, "r") as f:
        assert "convergence" in f["report_data"]
    html = next(tmp_path.glob("*-report.html")).read_text(encoding="utf-8")
    assert "refined" in html.lower()
