"""Report sections stored by ``fdwall run --report``: inputs as resolved, materials, Biot
numbers, correlations with references, model limits; values in the report equal the file.

External references:
- plane-wall conduction resistance R = L / (k A) and Biot number Bi = h L / k (Incropera et
  al., Fundamentals of Heat and Mass Transfer, sec. 3.1 and 5.2);
- fin theory for the lateral spreading length of a thin skin on an insulated backing,
  1/m = sqrt(k t / (h + U)) (Incropera et al. sec. 3.6; the backing conductance U = k_b/L_b
  adds to h as a second loss path: common practice, no source);
- hollow-cylinder resistance ln(r2/r1) / (2 pi k L) (Incropera et al. sec. 3.3);
- unit conversions by pint.
"""
from __future__ import annotations

import math
import xml.etree.ElementTree as ET

import h5py
import html5lib
import pint
import pytest

from fdwall.cli import main

NS = "{http://www.w3.org/1999/xhtml}"

CASE = """
title = "invented skin-on-board panel"
[report]
project = "invented"
[run]
duration = "30 min"
start_temperature = "20 degC"
[materials.demo-board]
conductivity = "0.05 W/m/K"
specific_heat = "1000 J/kg/K"
density = "100 kg/m3"
source = "invented board data"
[materials.demo-skin]
conductivity = "50 W/m/K"
specific_heat = "500 J/kg/K"
density = "7800 kg/m3"
source = "invented sheet data"
[wall]
name = "panel"
area = "2 m2"
[[wall.layers]]
material = "demo-board"
thickness = "50 mm"
[[wall.layers]]
material = "demo-skin"
thickness = "2 mm"
[wall.inner_face]
fixed_temperature = "200 degC"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "8 W/m2/K"
"""


def _tables(text, sec_id):
    doc = html5lib.HTMLParser(strict=True).parse(text)
    sec = [s for s in doc.iter(f"{NS}section") if s.get("id") == sec_id]
    assert sec, sec_id
    out = []
    for t in sec[0].iter(f"{NS}table"):
        out.append([[ET.tostring(c, method="text", encoding="unicode").strip() for c in tr]
                    for tr in t.iter(f"{NS}tr")])
    return out


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    d = tmp_path_factory.mktemp("notes")
    p = d / "panel.toml"
    p.write_text(CASE)
    assert main(["run", str(p), "--out", str(d / "out"), "--report", "--no-plots",
                 "--quiet"]) == 0
    return d / "out"


def test_biot_and_spreading_length_closed_form(run):
    with h5py.File(run / "panel.h5") as h:
        b = dict(h["report_data/biot/0"].attrs)
        h_out = float(h["faces/h_convective"][-1, 1] + h["faces/h_radiative"][-1, 1])
    assert h_out == pytest.approx(8.0)      # no radiation given: the film alone
    A = 2.0
    R = 0.05 / (0.05 * A) + 0.002 / (50 * A)          # series plane-wall resistances [K/W]
    assert b["R_wall_K_per_W"] == pytest.approx(R, rel=1e-12)
    assert b["biot"] == pytest.approx(R * 8.0 * A, rel=1e-12)
    U = 1 / (0.05 / 0.05)                              # board behind the skin [W/m2/K]
    assert b["spread_m"] == pytest.approx(math.sqrt(50 * 0.002 / (8.0 + U)), rel=1e-12)
    rows = _tables((run / "panel-report.html").read_text(), "assumptions")[0]
    assert rows[0][3].startswith("Biot number")
    assert float(rows[1][3]) == pytest.approx(b["biot"], rel=1e-5)
    assert "[m]" in rows[0][5] and float(rows[1][5]) == pytest.approx(b["spread_m"], rel=1e-5)


def test_materials_sources_and_resolved_inputs(run):
    text = (run / "panel-report.html").read_text()
    mats = _tables(text, "materials")[0]
    byname = {r[0]: r for r in mats[1:]}
    assert byname["demo-board"][-1] == "invented board data"
    assert float(byname["demo-skin"][3]) == pytest.approx(50.0)
    assert "[kg/m3]" in mats[0][2]
    resolved = {(r[0], r[1]): r[2:] for r in _tables(text, "inputs")[-1][1:]}
    assert float(resolved[("wall panel", "layer 1 (demo-board) thickness")][0]) == \
        pytest.approx(0.05)
    assert resolved[("face panel:inner", "fixed surface temperature")] == ["200", "degC"]
    # US display: 50 mm = 1.9685 in, 200 degC = 392 degF, 8 W/m2/K in Btu/(h ft2 F) (pint)
    from fdwall.report import html as rhtml
    us = rhtml.render_report(run / "panel.h5", units="us")
    res_us = {(r[0], r[1]): r[2:] for r in _tables(us, "inputs")[-1][1:]}
    ureg = pint.UnitRegistry()
    t_in = float(res_us[("wall panel", "layer 1 (demo-board) thickness")][0])
    assert t_in == pytest.approx(ureg.Quantity(50, "mm").to("inch").magnitude, rel=1e-5)
    assert float(res_us[("face panel:inner", "fixed surface temperature")][0]) == \
        pytest.approx(392.0)
    h_us = float(res_us[("face panel:outer", "film coefficient")][0])
    assert h_us == pytest.approx(ureg.Quantity(8, "W/m**2/delta_degC")
                                 .to("Btu/hour/ft**2/delta_degF").magnitude, rel=1e-5)


def test_correlations_assumptions_and_old_file(run, tmp_path):
    text = (run / "panel-report.html").read_text()
    corr = _tables(text, "correlations")[0]
    assert [r[0] for r in corr[1:]] == ["panel:inner", "panel:outer"]
    assert "as given" in corr[2][2]
    for word in ("one-dimensional", "edges, corners", "thermal bridges", "Biot number"):
        assert word in text
    assert 'id="criteria"' in text
    # a result written without --report: the sections say "not computed"
    p = tmp_path / "panel.toml"
    p.write_text(CASE)
    assert main(["run", str(p), "--out", str(tmp_path / "o"), "--no-plots", "--quiet"]) == 0
    assert main(["report", str(tmp_path / "o" / "panel.h5")]) == 0
    old = (tmp_path / "o" / "panel-report.html").read_text()
    assert old.count("not computed: this result file does not hold it") >= 4
    html5lib.HTMLParser(strict=True).parse(old)


def test_natural_convection_face_cites_churchill_chu(tmp_path):
    case = CASE.replace('film_coefficient = "8 W/m2/K"',
                        '[wall.outer_face.convection]\nmodel = "vertical_plate"\n'
                        'height = "1 m"')
    p = tmp_path / "panel.toml"
    p.write_text(case)
    assert main(["run", str(p), "--out", str(tmp_path / "o"), "--report", "--no-plots",
                 "--quiet"]) == 0
    text = (tmp_path / "o" / "panel-report.html").read_text()
    corr = _tables(text, "correlations")[0]
    assert "Churchill & Chu (1975)" in corr[2][2] and "Lemmon & Jacobsen" in corr[2][2]


def test_run_report_has_every_section_and_no_external_resource(run):
    import re
    text = (run / "panel-report.html").read_text()
    doc = html5lib.HTMLParser(strict=True).parse(text)   # a real parser, strict
    ids = {e.get("id") for e in doc.iter() if e.get("id")}
    for sec in ("identification", "summary", "energy-balance", "mesh-steps", "convergence",
                "inputs", "inputs-given", "inputs-resolved", "materials", "criteria",
                "correlations", "assumptions", "tables", "warnings", "provenance"):
        assert sec in ids, sec
    assert not re.search(r'(src|href)\s*=\s*"(https?:|//)', text)
    assert "@import" not in text and "url(" not in text
    assert "counter(page)" in text and "counter(pages)" in text


def test_run_summary_tables_equal_file(run):
    """Summary rows are the stored datasets' last and highest values (degC = K - 273.15,
    NIST SP 811); event times shown in s and h (1 h = 3600 s)."""
    import numpy as np
    text = (run / "panel-report.html").read_text()
    faces = _tables(text, "summary")[0]
    with h5py.File(run / "panel.h5") as h:
        T = h["faces/temperature"][()]
        q = h["faces/heat_flow"][()]
    out = faces[2]
    assert out[0] == "panel:outer"
    assert float(out[1]) == pytest.approx(T[-1, 1] - 273.15, abs=1e-4)
    assert float(out[2]) == pytest.approx(np.max(T[:, 1]) - 273.15, abs=1e-4)
    assert float(out[3]) == pytest.approx(q[-1, 1], rel=1e-5)
