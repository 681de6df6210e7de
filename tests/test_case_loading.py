"""Tests of the case-file layer: the demo cases, the conversion of every section to the model,
the errors for bad input and the pre-run warnings.

References outside fdwall, named beside each check:
- unit definitions (1 in = 0.0254 m exactly, T[K] = T[degC] + 273.15, T[K] = (T[degF] +
  459.67)/1.8, 1 Btu_IT = 1055.05585262 J: NIST SP 811 / scipy.constants);
- steady conduction through layers in series, q = dT / sum(L_i/k_i + R_c) (Incropera,
  Fundamentals of Heat and Mass Transfer, sec. 3.1.2 and 3.1.4, the composite wall);
- steady radial conduction in a cylinder, R' = ln(r2/r1)/(2 pi k) (Incropera eq. 3.28);
- the US Standard Atmosphere 1976 pressure at 400 m (fluids.ATMOSPHERE_1976);
- the finish emissivities of fdwall.physics.radiation.get_finish (the library the case names
  refer to) and the bundled materials of fdwall.materials.get_material.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import scipy.constants as sc
import tomllib

from fdwall.case import CaseError, case_from_dict, case_warnings, load_case
from fdwall.materials import get_material
from fdwall.physics.radiation import get_finish
from fdwall.schedule import Schedule
from fdwall.system import build_system

CASES = Path(__file__).resolve().parents[1] / "cases"
DEMOS = sorted(CASES.glob("*.toml"))
C0 = sc.zero_Celsius  # 273.15 K (SI Brochure)
INCH = 0.0254         # m, exact (NIST SP 811)


def _read(name):
    return tomllib.loads((CASES / name).read_text(encoding="utf-8"))


# ====================================================================== demo cases

def test_there_are_at_least_four_demo_cases():
    assert len(DEMOS) >= 4


@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.stem)
def test_demo_case_loads_runs_and_is_labelled(path):
    from fdwall.solver import run
    text = path.read_text(encoding="utf-8")
    assert "demo" in text.lower() and "invented" in text.lower()   # labelled as demo data
    case = load_case(path)
    assert case.source == text                       # kept verbatim
    assert case.name == tomllib.loads(text)["title"]
    assert not [w for w in case_warnings(case) if "service temperature" in w]
    res = run(case)
    assert res.complete
    # energy bookkeeping closes (independent of the loader, but a broken case would show here)
    assert abs(res.relative_residual) < 1e-6


def test_curing_oven_panel_converts_to_si():
    c = load_case(CASES / "curing-oven-panel.toml")
    w = c.wall
    assert w.shape == "slab" and w.area == pytest.approx(2.4)
    assert [l.thickness for l in w.layers] == pytest.approx([0.001, 0.100, 0.0015])
    assert [l.material.name for l in w.layers] == ["stainless-steel-304", "mineral-wool-64",
                                                   "carbon-steel"]
    assert c.run.duration == 8 * 3600 and c.run.output_every == 300
    assert c.run.snapshots == pytest.approx((900, 3600, 3 * 3600, 8 * 3600))
    # inner air: 25 degC -> 200 degC over 20 min (T[K] = T[degC] + 273.15)
    assert c.inner.fluid_temperature.times == (0.0, 1200.0)
    assert c.inner.fluid_temperature.values == pytest.approx((25 + C0, 200 + C0))
    assert c.inner.convection == 25.0
    conv = c.outer.convection
    assert conv.kind == "vertical_plate" and conv.height == 2.0
    assert c.outer.emissivity == get_finish("painted_steel").emissivity
    assert c.run.watch[0].at == "outer" and c.run.watch[0].temperature == pytest.approx(32 + C0)


def test_lab_furnace_heater_flux_per_layer_start_and_user_material():
    c = load_case(CASES / "lab-furnace-wall.toml")
    # heater power over an area -> flux: 3.6 kW / 0.6 m2 = 6 kW/m2
    f = c.inner.heat_flux
    assert max(f.values) == pytest.approx(3600 / 0.6)
    assert f(3 * 3600) == pytest.approx(6000.0) and f(7 * 3600) == pytest.approx(300 / 0.6)
    assert f(10 * 3600) == 0.0
    assert c.wall.interface_resistance == pytest.approx((0.0, 0.005, 0.002))
    # the user material: a k table and a cp polynomial in degC
    m = c.wall.layers[2].material
    assert m.k(400 + C0) == pytest.approx(0.026)
    assert m.k(600 + C0) == pytest.approx(0.030)           # midway in the table, linear
    t = 100.0
    assert m.cp(t + C0) == pytest.approx(750.0 + 0.45 * t - 1.5e-4 * t * t)
    assert m.rho == 300.0 and m.t_max == pytest.approx(1000 + C0)
    # per-layer start temperatures: a vector over the nodes
    sysm = build_system(c)
    T0 = build_system(c).initial_vector(c.run.start_temperature)  # per-layer/chamber starts
    assert T0.shape == (sysm.n_unknowns,)
    starts = [150, 110, 60, 35]
    for i, (a, b) in enumerate(sysm.meshes[0].layer_nodes):
        inside = T0[a + 1:b]                     # nodes strictly inside layer i
        assert np.allclose(inside, starts[i] + C0)
    # the run then starts from that profile
    from fdwall.solver import run
    r = run(c)
    assert r.wall_T(0)[0][3] == pytest.approx(150 + C0)


def test_hot_oil_pipe_cylinder_sky_and_solar():
    c = load_case(CASES / "hot-oil-pipe.toml")
    w = c.wall
    assert w.shape == "cylinder" and w.length == 1.0
    assert w.inner_radius == pytest.approx(0.10226 / 2)
    r_out = w.inner_radius + 0.00602 + 0.080 + 0.0007
    conv = c.outer.convection
    assert conv.kind == "wind_cylinder" and conv.speed == 3.0
    assert conv.diameter == pytest.approx(2 * r_out)            # taken from the jacket
    assert conv.natural is not None                             # with_natural = true
    import fluids
    # US Standard Atmosphere 1976 at 400 m (fluids), fdwall may use its own formula
    assert conv.pressure == pytest.approx(fluids.ATMOSPHERE_1976(400.0).P, rel=1e-4)
    # effective radiant temperature: T^4 = F T_sky^4 + (1 - F) T_air^4 at each knot
    for t_h, sky, air in ((0, -12, 8), (6, -14, 5), (14, 2, 21)):
        expect = (0.5 * (sky + C0) ** 4 + 0.5 * (air + C0) ** 4) ** 0.25
        assert c.outer.surroundings_temperature(t_h * 3600) == pytest.approx(expect, rel=1e-12)
    # absorbed solar = absorptivity x irradiance
    assert c.outer.heat_flux(13 * 3600) == pytest.approx(0.3 * 220)
    assert c.outer.heat_flux(3 * 3600) == 0.0
    assert c.outer.emissivity == get_finish("aluminium_oxidised").emissivity


def test_heat_treat_furnace_enclosure():
    c = load_case(CASES / "heat-treat-furnace.toml")
    assert c.is_enclosure and len(c.walls) == 5
    ch = c.chamber
    assert ch.heat_capacity == pytest.approx(6000 + 20 * 560)
    assert ch.leakage == pytest.approx(3 / 3600 * 0.077)   # 3 air changes per hour x volume
    assert ch.inner_dimensions == pytest.approx((0.40, 0.55, 0.35))
    assert ch.extra_loss == 0.6
    assert c.heater.placement == "chamber" and c.heater.power.values == (6000.0,)
    assert c.heater.resistance_coefficient == pytest.approx(5e-5)
    ctl = c.control
    assert ctl.mode == "pid" and ctl.sensor == "chamber"
    assert (ctl.proportional_gain, ctl.integral_gain, ctl.period) == pytest.approx((0.04, 2e-5, 20.0))
    assert ctl.setpoint(1.5 * 3600) == pytest.approx(20 + C0 + 0.5 * 830)
    assert ctl.power_on(4.9 * 3600) == 1.0 and ctl.power_on(5.1 * 3600) == 0.0
    names = [ew.wall.name for ew in c.walls]
    assert names == ["side walls", "back wall", "roof", "hearth", "door"]
    roof = c.walls[2]
    assert roof.inner_face_convection.kind == "horizontal_plate" and roof.inner_face_convection.facing == "down"
    assert roof.inner_face_convection.where == "chamber"
    assert roof.outer.convection.facing == "up"
    hearth = c.walls[3]
    assert hearth.inner_face_convection == 4.0 and hearth.outer.convection.facing == "down"
    door = c.walls[4]
    assert door.bridge.area_fraction == 0.15 and door.bridge.replaces_layers == (0,)
    assert door.bridge.material.name == "castable-insulating"
    eps = c.walls[0].inner_face_emissivity
    fin = get_finish("ceramic_refractory")
    assert isinstance(eps, Schedule) and eps.times == fin.T_K and eps.values == fin.eps
    assert c.run.watch[0].wall == 4 and c.run.max_step == 120.0


# ====================================================================== end-to-end physics

COMPOSITE = """
title = "composite wall in US units"
[run]
duration = "1 h"
[materials.board]
conductivity = "0.5 Btu*in/h/ft2/degF"
specific_heat = "0.2 Btu/lb/degF"
density = "10 lb/ft3"
[wall]
area = "10 ft2"
interface_resistance = ["0.5 h*ft2*degF/Btu"]
[[wall.layers]]
material = "board"
thickness = "2 in"
[[wall.layers]]
material = "carbon-steel"
thickness = "0.25 in"
[wall.inner_face]
fixed_temperature = "600 degF"
[wall.outer_face]
fixed_temperature = "100 degF"
"""


def test_composite_wall_in_us_units_matches_series_resistance(tmp_path):
    p = tmp_path / "composite.toml"
    p.write_text(COMPOSITE)
    c = load_case(p)
    from fdwall.solver import solve_steady
    s = solve_steady(c)
    # by hand, SI (NIST SP 811 factors): k = 0.5 Btu in/(h ft2 F) -> W/m/K
    btu, ft, lb = sc.Btu, 0.3048, 0.45359237
    k_board = 0.5 * btu / 3600 * INCH / ft ** 2 * 1.8
    assert c.wall.layers[0].material.k(300.0) == pytest.approx(k_board, rel=1e-12)
    assert c.wall.layers[0].material.rho == pytest.approx(10 * lb / ft ** 3, rel=1e-12)
    assert c.wall.layers[0].material.cp(300.0) == pytest.approx(0.2 * btu / lb * 1.8, rel=1e-12)
    r_contact = 0.5 * ft ** 2 / 1.8 / (btu / 3600)          # h ft2 F/Btu -> m2 K/W
    assert c.wall.interface_resistance[0] == pytest.approx(r_contact, rel=1e-12)
    steel = get_material("carbon-steel")
    Ti, To = (600 + 459.67) / 1.8, (100 + 459.67) / 1.8      # NIST SP 811 B.9
    # steel k varies with T; its share of R is tiny, evaluate it at the steel's temperature
    r_steel = 0.25 * INCH / steel.k(To + 1.0)
    q = (Ti - To) / (2 * INCH / k_board + r_contact + r_steel)   # Incropera sec. 3.1 [W/m2]
    A = 10 * ft ** 2
    assert s.face_flow[0] == pytest.approx(q * A, rel=1e-3)


PIPE = """
title = "bare cylinder shell"
[run]
duration = "1 h"
[materials.shell]
conductivity = "0.05 W/m/K"
specific_heat = "1000 J/kg/K"
density = "100 kg/m3"
[wall]
shape = "cylinder"
inner_radius = "2 in"
length = "3 m"
[[wall.layers]]
material = "shell"
thickness = "50 mm"
[wall.inner_face]
fixed_temperature = "200 degC"
[wall.outer_face]
fixed_temperature = "20 degC"
"""


def test_cylinder_in_mixed_units_matches_log_resistance(tmp_path):
    p = tmp_path / "pipe.toml"
    p.write_text(PIPE)
    c = load_case(p)
    from fdwall.solver import solve_steady
    s = solve_steady(c)
    r1 = 2 * INCH
    r2 = r1 + 0.05
    Q = 2 * math.pi * 0.05 * 3.0 * 180.0 / math.log(r2 / r1)     # Incropera eq. 3.27
    assert s.face_flow[0] == pytest.approx(Q, rel=2e-3)


# ====================================================================== bad input

GOOD = """
title = "good"
[run]
duration = "2 h"
[wall]
area = "1 m2"
[[wall.layers]]
material = "mineral-wool-128"
thickness = "100 mm"
[[wall.layers]]
material = "carbon-steel"
thickness = "2 mm"
[wall.inner_face]
fluid_temperature = "200 degC"
film_coefficient = "20 W/m2/K"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "8 W/m2/K"
emissivity = 0.9
"""


def test_good_base_case_loads(tmp_path):
    p = tmp_path / "good.toml"
    p.write_text(GOOD)
    c = load_case(p)
    assert c.name == "good" and c.outer.surroundings_temperature is None and c.outer.fluid_temperature.values == (293.15,)


BAD = [
    # (label, old text, new text, key path expected in the message, a word expected)
    ("unknown key with suggestion", 'thickness = "100 mm"', 'thicknes = "100 mm"',
     "wall.layers[0].thicknes", "did you mean 'thickness'"),
    ("missing key", 'duration = "2 h"', "", "run.duration", "missing"),
    ("missing unit", 'thickness = "100 mm"', "thickness = 100", "wall.layers[0].thickness",
     "no unit"),
    ("wrong unit", 'thickness = "100 mm"', 'thickness = "100 kg"', "wall.layers[0].thickness",
     "mass"),
    ("unknown unit", 'thickness = "100 mm"', 'thickness = "100 mmm"',
     "wall.layers[0].thickness", "unknown unit"),
    ("negative thickness", 'thickness = "2 mm"', 'thickness = "-2 mm"',
     "wall.layers[1].thickness", "greater than zero"),
    ("zero thickness", 'thickness = "2 mm"', 'thickness = "0 mm"',
     "wall.layers[1].thickness", "greater than zero"),
    ("emissivity above 1", "emissivity = 0.9", "emissivity = 1.2",
     "wall.outer_face.emissivity", "between 0 and 1"),
    ("emissivity below 0", "emissivity = 0.9", "emissivity = -0.1",
     "wall.outer_face.emissivity", "between 0 and 1"),
    ("unknown finish", "emissivity = 0.9", 'emissivity = "painted_steal"',
     "wall.outer_face.emissivity", "painted_steel"),
    ("below absolute zero", 'fluid_temperature = "200 degC"',
     'fluid_temperature = "-500 degF"', "wall.inner_face.fluid_temperature", "absolute zero"),
    ("bare temperature", 'fluid_temperature = "200 degC"', "fluid_temperature = 200",
     "wall.inner_face.fluid_temperature", "unit"),
    ("unknown material", 'material = "mineral-wool-128"', 'material = "mineral-wool-182"',
     "wall.layers[0].material", "mineral-wool-128"),
    ("schedule backwards", 'fluid_temperature = "200 degC"',
     'fluid_temperature = [["0 h", "20 degC"], ["2 h", "200 degC"], ["1 h", "200 degC"]]',
     "wall.inner_face.fluid_temperature[2][0]", "backwards"),
    ("wall index out of range", 'duration = "2 h"',
     'duration = "2 h"\n[[run.watch]]\nwall = 2\nat = "outer"\ntemperature = "50 degC"',
     "run.watch[0].wall", "out of range"),
    ("convection without fluid", 'fluid_temperature = "20 degC"\nfilm', 'film',
     "wall.outer_face.film_coefficient", "fluid_temperature"),
    ("both film and convection", 'film_coefficient = "8 W/m2/K"',
     'film_coefficient = "8 W/m2/K"\nconvection = { model = "vertical_plate", height = "1 m" }',
     "wall.outer_face.convection", "exclude each other"),
    ("unknown convection model", 'film_coefficient = "8 W/m2/K"',
     'convection = { model = "vertical", height = "1 m" }', "wall.outer_face.convection.model",
     "vertical_plate"),
    ("sky without view", "emissivity = 0.9", 'emissivity = 0.9\nsky_temperature = "-10 degC"',
     "wall.outer_face.sky_temperature", "sky_view"),
    ("interface resistance count", 'area = "1 m2"',
     'area = "1 m2"\ninterface_resistance = ["0 m2K/W", "0 m2K/W"]',
     "wall.interface_resistance", "1 interface"),
    ("slab with radius", 'area = "1 m2"', 'area = "1 m2"\ninner_radius = "5 cm"',
     "wall.inner_radius", "slab"),
    ("snapshot after end", 'duration = "2 h"', 'duration = "2 h"\nsnapshots = ["3 h"]',
     "run.snapshots[0]", "after the end"),
    ("wrong type", 'title = "good"', "title = 5", "title", "text"),
    ("control without heater", 'duration = "2 h"',
     'duration = "2 h"\n[control]\nmode = "pid"\nsetpoint = "100 degC"', "control", "heater"),
    ("chamber without walls", 'duration = "2 h"',
     'duration = "2 h"\n[chamber]\nheat_capacity = "1 kJ/K"', "chamber", "enclosure"),
    ("heater interface out of range", 'duration = "2 h"',
     'duration = "2 h"\n[heater]\npower = "1 kW"\nplacement = "interface"\nafter_layer = 1',
     "heater.after_layer", "no interface"),
    ("user material missing density", 'duration = "2 h"',
     'duration = "2 h"\n[materials.my-board]\nconductivity = "0.1 W/m/K"\n'
     'specific_heat = "900 J/kg/K"', "materials.my-board.density", "missing"),
    ("user material bare conductivity", 'duration = "2 h"',
     'duration = "2 h"\n[materials.my-board]\nconductivity = 0.1\n'
     'specific_heat = "900 J/kg/K"\ndensity = "200 kg/m3"', "materials.my-board.conductivity",
     "no unit"),
]


@pytest.mark.parametrize("label, old, new, key, word", BAD, ids=[b[0] for b in BAD])
def test_bad_input_gives_one_paragraph_naming_file_and_key(tmp_path, label, old, new, key, word):
    assert old in GOOD, label
    p = tmp_path / "oven-case.toml"
    p.write_text(GOOD.replace(old, new, 1))
    with pytest.raises(CaseError) as ei:
        load_case(p)
    msg = str(ei.value)
    assert str(p) in msg, msg
    assert f"key {key}" in msg, msg
    assert word in msg, msg
    assert "\n" not in msg and "Traceback" not in msg


def test_toml_syntax_error_names_file_and_line(tmp_path):
    p = tmp_path / "broken.toml"
    p.write_text('title = "x"\n[run\nduration = "1 h"\n')
    with pytest.raises(CaseError) as ei:
        load_case(p)
    assert str(p) in str(ei.value) and "line 2" in str(ei.value)


def test_missing_file(tmp_path):
    with pytest.raises(CaseError, match="does not exist"):
        load_case(tmp_path / "nope.toml")


ENCLOSURE = _read("heat-treat-furnace.toml") if (CASES / "heat-treat-furnace.toml").exists() else {}


@pytest.mark.parametrize("edit, key, word", [
    (lambda d: d["run"]["watch"][0].__setitem__("wall", 7), "run.watch[0].wall", "out of range"),
    (lambda d: d["run"]["watch"][0].__setitem__("wall", "dor"), "run.watch[0].wall", "'door'"),
    (lambda d: d["walls"][1].__setitem__("name", "side walls"), "walls[1].name", "twice"),
    (lambda d: d["chamber"].pop("volume"), "chamber.leakage", "chamber.volume"),
    (lambda d: d["walls"][4]["bridge"].__setitem__("replaces_layers", [2]),
     "walls[4].bridge.replaces_layers", "does not exist"),
    (lambda d: d["walls"][0]["inner_face"].__setitem__("fluid_temperature", "20 degC"),
     "walls[0].inner_face.fluid_temperature", "unknown key"),
    (lambda d: d.pop("chamber"), "chamber", "needs a [chamber]"),
    (lambda d: d["heater"].__setitem__("power", "6 kW/m2"), "heater.power", "heat flux"),
    (lambda d: d["control"].__setitem__("setpoint", [["0 h", "20 degC"], ["3 h", "850 degC"],
                                                     ["2 h", "850 degC"]]),
     "control.setpoint[2][0]", "backwards"),
    (lambda d: d["control"].__setitem__("power_on", [["0 h", 1], ["5 h", 2]]),
     "control.power_on[1][1]", "between 0 and 1"),
    (lambda d: d["walls"][2]["inner_face"]["convection"].__setitem__("height", "1 m"),
     "walls[2].inner_face.convection.height", "does not apply"),
    (lambda d: d["materials"]["demo-fibre-door-board"].__setitem__(
        "conductivity", [["200 degC", "0.07 W/m/K"], ["100 degC", "0.12 W/m/K"]]),
     "materials.demo-fibre-door-board.conductivity[1][0]", "increase"),
])
def test_bad_enclosure_input(edit, key, word):
    import copy
    d = copy.deepcopy(ENCLOSURE)
    edit(d)
    with pytest.raises(CaseError) as ei:
        case_from_dict(d, "furnace.toml")
    msg = str(ei.value)
    assert "furnace.toml" in msg and f"key {key}" in msg and word in msg, msg


def test_case_from_dict_keeps_given_text():
    d = _read("curing-oven-panel.toml")
    c = case_from_dict(d, "panel", text="TEXT")
    assert c.source == "TEXT"


# ====================================================================== warnings

def _edit_panel(**inner):
    d = _read("curing-oven-panel.toml")
    d["wall"]["inner_face"].update(inner)
    return d


def test_service_temperature_warning_behind_a_thin_liner():
    # mineral-wool-64 is rated to 450 degC in the bundled library; the 1 mm stainless liner in
    # front of it passes the oven-air temperature on
    lim = get_material("mineral-wool-64").t_max
    c = case_from_dict(_edit_panel(fluid_temperature="500 degC"), "hot.toml")
    ws = case_warnings(c)
    assert len([w for w in ws if "mineral-wool-64" in w]) == 1
    w = [w for w in ws if "mineral-wool-64" in w][0]
    assert f"{lim - C0:.0f} degC" in w and "500 degC" in w and "fluid temperature" in w
    assert not [w for w in ws if "stainless" in w]          # rated to 870 degC
    # below the limit: no warning (the check can fail both ways)
    c = case_from_dict(_edit_panel(fluid_temperature="400 degC"), "ok.toml")
    assert not [w for w in case_warnings(c) if "service" in w]


def test_service_temperature_warning_from_setpoint_and_start():
    d = _read("heat-treat-furnace.toml")
    d["control"]["setpoint"] = [["0 h", "20 degC"], ["3 h", "1100 degC"]]
    d["walls"][2]["layers"][0]["material"] = "microporous-board"   # rated 1000 degC
    ws = case_warnings(case_from_dict(d, "f.toml"))
    hit = [w for w in ws if "roof" in w and "microporous-board" in w]
    assert hit and "setpoint" in hit[0] and "1100 degC" in hit[0]
    # a per-layer start temperature above the limit of that layer
    d = _read("lab-furnace-wall.toml")
    d["wall"]["layers"][3]["start_temperature"] = "500 degC"       # carbon steel, 425 degC
    ws = case_warnings(case_from_dict(d, "f.toml"))
    assert [w for w in ws if "carbon-steel" in w and "start temperature" in w]
    assert not [w for w in ws if "castable" in w]


def test_fixed_face_temperature_warning():
    d = _read("curing-oven-panel.toml")
    d["wall"]["outer_face"] = {"fixed_temperature": [["0 h", "20 degC"], ["1 h", "480 degC"]]}
    ws = case_warnings(case_from_dict(d, "f.toml"))
    assert [w for w in ws if "carbon-steel" in w and "fixed surface temperature" in w]


def test_correlation_range_warning():
    # a 20 m vertical plate at ~30 K excess: Ra ~ g beta dT L^3/(nu alpha) ~ 1e13 > 1e12,
    # the upper end of the Churchill-Chu data (Incropera eq. 9.26)
    d = _read("curing-oven-panel.toml")
    d["wall"]["outer_face"]["convection"]["height"] = "20 m"
    ws = case_warnings(case_from_dict(d, "f.toml"))
    assert [w for w in ws if "vertical_plate" in w and "1e12" in w]
    d["wall"]["outer_face"]["convection"]["height"] = "2 m"
    assert not [w for w in case_warnings(case_from_dict(d, "f.toml")) if "vertical_plate" in w]
