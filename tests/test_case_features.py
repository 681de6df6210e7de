"""Case-file features beyond the demo cases: sphere, tilted and wind convection, emissivity
tables, interface heater with a wall thermostat, chamber tables and start temperatures,
combined flux schedules.

References outside fdwall, named beside each check:
- steady conduction through a spherical shell, q = 4 pi k (T1 - T2) / (1/r1 - 1/r2)
  (Incropera, Fundamentals of Heat and Mass Transfer, eq. 3.36);
- the cylinder inner surface area 2 pi r L (geometry);
- unit definitions (T[K] = T[degC] + 273.15, SI Brochure; 1 kPa = 1000 Pa).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from fdwall.case import CaseError, load_case
from fdwall.schedule import Schedule
from fdwall.system import build_system

C0 = 273.15  # K, SI Brochure


def _load(tmp_path, text, name="case.toml"):
    p = tmp_path / name
    p.write_text(text)
    return load_case(p)


SPHERE = """
title = "spherical shell"
[run]
duration = "1 h"
[materials.shell]
conductivity = "0.2 W/m/K"
specific_heat = "900 J/kg/K"
density = "500 kg/m3"
[wall]
shape = "sphere"
inner_radius = "0.5 m"
[[wall.layers]]
material = "shell"
thickness = "0.1 m"
[wall.inner_face]
fixed_temperature = "300 degC"
[wall.outer_face]
fixed_temperature = "50 degC"
"""


def test_sphere_steady_matches_shell_conduction(tmp_path):
    c = _load(tmp_path, SPHERE)
    from fdwall.solver import solve_steady
    s = solve_steady(c)
    q = 4 * math.pi * 0.2 * 250.0 / (1 / 0.5 - 1 / 0.6)       # Incropera eq. 3.36
    assert s.face_flow[0] == pytest.approx(q, rel=2e-3)


def test_sphere_rejects_length_and_natural(tmp_path):
    with pytest.raises(CaseError, match="key wall.length"):
        _load(tmp_path, SPHERE.replace('inner_radius = "0.5 m"', 'inner_radius = "0.5 m"\nlength = "1 m"'))
    bad = SPHERE.replace('fixed_temperature = "50 degC"',
                         'fluid_temperature = "20 degC"\nconvection = { model = "natural" }')
    with pytest.raises(CaseError, match="no natural-convection model for a sphere"):
        _load(tmp_path, bad)


PANEL = """
title = "heated panel"
[run]
duration = "6 h"
start_temperature = "15 degC"
max_step = "5 min"
[wall]
area = "1.5 m2"
[[wall.layers]]
material = "carbon-steel"
thickness = "3 mm"
[[wall.layers]]
material = "mineral-wool-128"
thickness = "50 mm"
[[wall.layers]]
material = "aluminium-alloy"
thickness = "1 mm"
[wall.inner_face]
fluid_temperature = "20 degC"
emissivity = [["20 degC", 0.3], ["300 degC", 0.5]]
surroundings_temperature = "20 degC"
[wall.inner_face.convection]
model = "tilted_plate"
height = "1 m"
tilt = "135 deg"
[wall.outer_face]
fluid_temperature = "10 degC"
emissivity = 0.9
[wall.outer_face.convection]
model = "wind_plate"
length = "2 m"
wind_speed = "5 m/s"
with_natural = true
pressure = "90 kPa"
[heater]
power = "600 W"
placement = "interface"
after_layer = 0
[control]
mode = "thermostat"
setpoint = "60 degC"
band = "4 K"
sensor_depth = "3 mm"
"""


def test_interface_heater_with_wall_thermostat_and_correlations(tmp_path):
    c = _load(tmp_path, PANEL)
    conv = c.inner.convection
    assert conv.kind == "tilted_plate" and conv.tilt_deg == pytest.approx(135.0)
    assert conv.height == 1.0 and conv.char_length == pytest.approx(0.5)
    eps = c.inner.emissivity
    assert isinstance(eps, Schedule)
    assert eps.times == pytest.approx((20 + C0, 300 + C0)) and eps.values == (0.3, 0.5)
    out = c.outer.convection
    assert out.kind == "wind_plate" and out.speed == 5.0 and out.length == 2.0
    assert out.pressure == pytest.approx(90000.0) and out.natural.kind == "vertical_plate"
    assert c.heater.placement == "interface" and c.heater.after_layer == 0 and c.heater.wall == 0
    ctl = c.control
    assert ctl.mode == "thermostat" and ctl.sensor == "wall" and ctl.sensor_depth == 0.003
    assert ctl.band == 4.0 and ctl.setpoint.values == pytest.approx((60 + C0,))
    from fdwall.solver import run
    r = run(c)
    assert r.complete
    # the thermostat holds the steel/wool interface (the sensor, 3 mm deep) near 60 degC:
    # 600 W on 1.5 m2 through 50 mm of wool can lift it well above (on/off control physics)
    T_if = r.interface_T(0)[:, 0]
    late = r.times > 4 * 3600
    assert np.all(np.abs(T_if[late] - (60 + C0)) < 4.0)


ENCLOSURE = """
title = "box"
[run]
duration = "2 h"
start_temperature = "20 degC"
[chamber]
heat_capacity = [["20 degC", "5 kJ/K"], ["500 degC", "7 kJ/K"]]
room_temperature = "18 degC"
leakage = "10 m3/h"
start_temperature = "120 degC"
[heater]
power = "2 kW"
[control]
mode = "duty"
duty = "40 %"
[[walls]]
name = "shell"
area = "1.2 m2"
[walls.inner_face]
film_coefficient = "12 W/m2/K"
emissivity = 0.8
[[walls.layers]]
material = "calcium-silicate-board"
thickness = "60 mm"
start_temperature = "70 degC"
[[walls.layers]]
material = "carbon-steel"
thickness = "2 mm"
start_temperature = "30 degC"
[walls.outer_face]
fixed_temperature = "25 degC"
"""


def test_enclosure_tables_duty_and_start_temperatures(tmp_path):
    c = _load(tmp_path, ENCLOSURE)
    ch = c.chamber
    assert isinstance(ch.heat_capacity, Schedule)
    assert ch.heat_capacity.times == pytest.approx((20 + C0, 500 + C0))
    assert ch.heat_capacity.values == (5000.0, 7000.0)
    assert ch.leakage == pytest.approx(10 / 3600)
    assert ch.room_temperature.values == pytest.approx((18 + C0,))
    assert c.control.mode == "duty" and c.control.duty.values == pytest.approx((0.4,))
    assert c.walls[0].inner_face_convection == 12.0 and c.walls[0].inner_face_emissivity == 0.8
    T0 = build_system(c).initial_vector(c.run.start_temperature)  # per-layer/chamber starts
    assert T0[-1] == pytest.approx(120 + C0)                  # chamber is the last unknown
    sysm = build_system(c)
    a, b = sysm.meshes[0].layer_nodes[0]
    assert np.allclose(T0[a:b], 70 + C0)
    assert T0[b] == pytest.approx(50 + C0)                    # interface: mean of 70 and 30
    from fdwall.solver import run
    r = run(c)
    assert r.complete and r.chamber_T[0] == pytest.approx(120 + C0)


def test_chamber_start_without_layer_starts(tmp_path):
    text = ENCLOSURE.replace('start_temperature = "70 degC"\n', "").replace(
        'start_temperature = "30 degC"\n', "")
    c = _load(tmp_path, text)
    T0 = build_system(c).initial_vector(c.run.start_temperature)  # per-layer/chamber starts
    assert T0[-1] == pytest.approx(120 + C0) and np.allclose(T0[:-1], 20 + C0)


FLUXES = """
title = "fluxes"
[run]
duration = "3 h"
[wall]
shape = "cylinder"
inner_radius = "0.1 m"
length = "2 m"
[[wall.layers]]
material = "mineral-wool-128"
thickness = "50 mm"
[wall.inner_face]
heat_flux = "100 W/m2"
heater_power = [["1 h", "0 W"], ["1 h", "500 W"], ["2 h", "500 W"], ["2.5 h", "0 W"]]
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "10 W/m2/K"
"""


def test_fluxes_add_and_heater_area_defaults_to_the_face(tmp_path):
    c = _load(tmp_path, FLUXES)
    A = 2 * math.pi * 0.1 * 2.0                                # inner surface of the bore
    f = c.inner.heat_flux
    assert f(0.5 * 3600) == pytest.approx(100.0)               # before the step at 1 h
    assert f(1.5 * 3600) == pytest.approx(100.0 + 500.0 / A)
    assert f(2.25 * 3600) == pytest.approx(100.0 + 250.0 / A)  # half-way down the ramp
    assert f(2.9 * 3600) == pytest.approx(100.0)
    assert f(3600.0, side="left") == pytest.approx(100.0)
    assert f(3600.0) == pytest.approx(100.0 + 500.0 / A)


def test_heater_area_override_and_missing_power(tmp_path):
    c = _load(tmp_path, FLUXES.replace('heat_flux = "100 W/m2"', 'heater_area = "0.5 m2"'))
    assert c.inner.heat_flux(1.5 * 3600) == pytest.approx(1000.0)
    no_power = "\n".join(l for l in FLUXES.splitlines() if not l.startswith("heater_power"))
    with pytest.raises(CaseError, match="key wall.inner_face.heater_area"):
        _load(tmp_path, no_power.replace('heat_flux = "100 W/m2"',
                                         'heat_flux = "100 W/m2"\nheater_area = "1 m2"'))


def test_solar_needs_both_keys(tmp_path):
    bad = FLUXES.replace('film_coefficient = "10 W/m2/K"',
                         'film_coefficient = "10 W/m2/K"\nsolar_absorptivity = 0.5')
    with pytest.raises(CaseError, match="solar_irradiance"):
        _load(tmp_path, bad)
