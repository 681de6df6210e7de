"""Energy-balance closure of fdwall runs on every kind of case.

First law for the whole system: heat in through external faces + heater energy - chamber
losses = change in stored enthalpy.  TR-BDF2 in enthalpy form conserves energy exactly up to
the Newton stopping test (1e-4 of the step tolerance), so the closure is asked to 1e-6 of
the energy turned over: a lost flux term, a capacity counted twice or a ledger weight off by
a little would show up at the 1e-3..1 level.

``Result.relative_residual`` is the kernel's own check at every accepted step.  To keep the
test from comparing fdwall only with itself, each case also checks at least one energy
against an independent number: the stored enthalpy rebuilt from the temperature profile
with half-cell volumes from geometry formulas and the integral of rho cp(T) by scipy quad;
the heat put in by a flux schedule (its integral by hand); heater energy = power x time;
face flows from Newton's law of cooling and the Stefan-Boltzmann law; chamber leakage
loss by trapezoidal integration of UA (T_c - T_amb).
"""
from __future__ import annotations

import math

import numpy as np
import pytest
import reference as ref
from scipy.integrate import quad, trapezoid

from fdwall.materials import Constant, Material, Table
from fdwall.model import (
    Case,
    Chamber,
    Control,
    EnclosureWall,
    Face,
    Heater,
    Layer,
    RunSettings,
    Wall,
)
from fdwall.schedule import Schedule
from fdwall.solver import run

CLOSURE = 1e-6

# Invented demo materials (round numbers, not product data).
BRICK = Material("demo-brick", k=Constant(1.2), cp=Constant(900.0), rho=2000.0)
WOOL = Material("demo-wool", k=Table([300.0, 600.0, 900.0], [0.04, 0.07, 0.12]),
                cp=Table([300.0, 900.0], [800.0, 1100.0]), rho=100.0)
STEEL = Material("demo-steel", k=Constant(45.0), cp=Table([300.0, 900.0], [470.0, 650.0]),
                 rho=7850.0)


def _half_volumes(geometry, r, area=1.0, length=1.0):
    """Node control volumes of a vertex-centred mesh: each cell split between its two nodes at
    the midpoint in the coordinate of uniform steady conduction (slab: x; cylinder: ln r, the
    geometric mean; sphere: -1/r, the harmonic mean) as DEVELOPERS.md states; volumes
    slab A dx, cylinder pi L (r2^2 - r1^2), sphere 4/3 pi (r2^3 - r1^3)."""
    def vol(a, b):
        if geometry == "slab":
            return area * (b - a)
        if geometry == "cylinder":
            return math.pi * length * (b * b - a * a)
        return 4.0 / 3.0 * math.pi * (b ** 3 - a ** 3)
    left = np.zeros(r.size)
    right = np.zeros(r.size)
    for i in range(r.size - 1):
        a, b = r[i], r[i + 1]
        m = {"slab": 0.5 * (a + b), "cylinder": math.sqrt(a * b)}.get(geometry,
                                                                       2 * a * b / (a + b))
        right[i] = vol(r[i], m)
        left[i + 1] = vol(m, r[i + 1])
    return left, right


def _enthalpy_rise(material, T0, T1):
    """rho int_T0^T1 cp dT [J/m3] by adaptive quadrature of the material's cp(T)."""
    pts = [p for p in material.cp.knots()[0] if min(T0, T1) < p < max(T0, T1)]
    val, _ = quad(lambda T: float(material.cp(T)), T0, T1, points=pts or None,
                  epsabs=1e-12, epsrel=1e-12, limit=200)
    return material.rho * val


def _stored_independent(res, wall, wall_index=0, T_start=None):
    """Enthalpy stored in one wall since the start, from the node temperatures alone [J]."""
    m = res.system.meshes[wall_index]
    r = m.x
    geo = wall.shape
    left, right = _half_volumes(geo, r, wall.area, wall.length)
    T = res.wall_T(wall_index)
    T0 = T[0] if T_start is None else T_start
    out = np.zeros(T.shape[0])
    for j, (a, b) in enumerate(m.layer_nodes):
        mat = wall.layers[j].material
        for i in range(a, b + 1):
            v = (right[i] if i < b else 0.0) + (left[i] if i > a else 0.0)
            for n in range(T.shape[0]):
                out[n] += v * _enthalpy_rise(mat, T0[i], T[n, i])
    return out


def _closes(res):
    assert res.complete, res.message
    assert res.relative_residual < CLOSURE, res.relative_residual
    # the ledger at the last output (a step end) from the Result's own series as well
    scale = max(np.max(np.abs(res.stored)), np.max(np.abs(res.face_energy)),
                np.max(np.abs(res.heater_energy)))
    assert abs(res.residual[-1]) < CLOSURE * scale, (res.residual[-1], scale)


# ----------------------------------------------------------------------------- single walls
def test_constant_properties_convective_cooling():
    wall = Wall((Layer(BRICK, 0.2, cells=20),), area=2.0)
    # exact_outputs: outputs at step ends, so flows and temperatures belong to the same state
    case = Case(run=RunSettings(duration=6 * 3600.0, start_temperature=800.0, exact_outputs=True),
                wall=wall, inner=Face.exchange(900.0, 30.0), outer=Face.exchange(300.0, 10.0))
    res = run(case)
    _closes(res)
    np.testing.assert_allclose(res.stored, _stored_independent(res, wall), rtol=1e-9,
                               atol=1e-9 * np.max(np.abs(res.stored)))
    # face flows obey Newton's law of cooling at the face temperatures (Incropera eq. 1.3a)
    np.testing.assert_allclose(res.face_flow[:, 1], 2.0 * 10.0 * (300.0 - res.face_T[:, 1]),
                               rtol=1e-9, atol=1e-9)


def test_temperature_dependent_tables_with_radiation_and_contact():
    """k(T) and cp(T) tables, two layers with a contact resistance, radiation outside."""
    wall = Wall((Layer(STEEL, 0.004), Layer(WOOL, 0.1)), interface_resistance=(5e-3,))
    outer = Face(fluid_temperature=295.0, convection=8.0, emissivity=0.85, surroundings_temperature=290.0)
    case = Case(run=RunSettings(duration=8 * 3600.0, start_temperature=295.0, exact_outputs=True),
                wall=wall, inner=Face.exchange(Schedule([0.0, 1800.0], [295.0, 873.15]), 40.0),
                outer=outer)
    res = run(case)
    _closes(res)
    np.testing.assert_allclose(res.stored, _stored_independent(res, wall),
                               atol=1e-7 * np.max(np.abs(res.stored)))
    # outer face: convection plus grey radiation, Incropera eqs. 1.3a and 1.7
    Ts = res.face_T[:, 1]
    q = 8.0 * (295.0 - Ts) + 0.85 * ref.SIGMA * (290.0 ** 4 - Ts ** 4)
    np.testing.assert_allclose(res.face_flow[:, 1], q, rtol=1e-6, atol=1e-6)


def test_fixed_temperature_face():
    wall = Wall((Layer(BRICK, 0.1), Layer(WOOL, 0.05)))
    hot = Schedule([0.0, 600.0, 7200.0, 7200.0], [300.0, 900.0, 900.0, 500.0])  # ramp, hold, drop
    case = Case(run=RunSettings(duration=4 * 3600.0, start_temperature=300.0),
                wall=wall, inner=Face.fixed(hot), outer=Face.exchange(300.0, 10.0))
    res = run(case)
    _closes(res)
    # the held face follows the schedule; at the instant of the drop the output is the state
    # reached at the end of the step that lands there (the value just before the step)
    np.testing.assert_allclose(res.face_T[:, 0], hot(res.times, side="left"), atol=1e-9)
    np.testing.assert_allclose(res.stored, _stored_independent(res, wall),
                               atol=1e-7 * np.max(np.abs(res.stored)))


@pytest.mark.parametrize("geometry", ["cylinder", "sphere"])
def test_curved_walls(geometry):
    wall = Wall((Layer(STEEL, 0.005), Layer(WOOL, 0.06)), shape=geometry, inner_radius=0.08,
                length=3.0, interface_resistance=(2e-3,))
    case = Case(run=RunSettings(duration=4 * 3600.0, start_temperature=300.0),
                wall=wall, inner=Face.exchange(700.0, 200.0),
                outer=Face(fluid_temperature=293.15, convection=6.0, emissivity=0.3))
    res = run(case)
    _closes(res)
    np.testing.assert_allclose(res.stored, _stored_independent(res, wall),
                               atol=1e-7 * np.max(np.abs(res.stored)))


def test_flux_schedule_with_steps(fp_strict):
    """A heater foil flux that steps on, ramps, steps off: with the far face adiabatic all of
    it is stored, and the heat in equals the schedule's integral (by hand, trapezoids of the
    piecewise-linear schedule; a step contributes no area)."""
    times = [0.0, 600.0, 600.0, 3000.0, 4800.0, 4800.0, 9000.0]
    values = [0.0, 0.0, 1500.0, 3000.0, 3000.0, 0.0, 0.0]
    wall = Wall((Layer(BRICK, 0.05), Layer(WOOL, 0.05)), area=1.5)
    case = Case(run=RunSettings(duration=9000.0, start_temperature=300.0),
                wall=wall, inner=Face(heat_flux=Schedule(times, values)), outer=Face.adiabatic())
    res = run(case)
    _closes(res)
    E = 1.5 * sum(0.5 * (values[i] + values[i + 1]) * (times[i + 1] - times[i])
                  for i in range(len(times) - 1))
    assert res.face_energy[-1, 0] == pytest.approx(E, rel=1e-9)
    assert res.stored[-1] == pytest.approx(E, rel=1e-6)
    assert res.face_energy[-1, 1] == 0.0


# ----------------------------------------------------------------------------- enclosures
def _oven(control, heater, duration=6 * 3600.0, leakage=0.002):
    """Demo data: a small curing oven, 1 m3 chamber, four insulated panels, a floor and a
    steel door, 3 kW heater in the chamber."""
    panel = Wall((Layer(STEEL, 0.001), Layer(WOOL, 0.08), Layer(STEEL, 0.001)), area=5.0,
                 name="panels")
    floor = Wall((Layer(BRICK, 0.1),), area=1.0, name="floor")
    door = Wall((Layer(STEEL, 0.003),), area=0.8, name="door")
    walls = (
        EnclosureWall(panel, Face(fluid_temperature=295.0, convection=5.0, emissivity=0.9), inner_face_convection=12.0,
                      inner_face_emissivity=0.8),
        EnclosureWall(floor, Face.exchange(295.0, 3.0), inner_face_convection=8.0),
        EnclosureWall(door, Face.exchange(295.0, 7.0), inner_face_convection=12.0),
    )
    chamber = Chamber(heat_capacity=Schedule([300.0, 500.0], [3.0e4, 3.6e4]), room_temperature=295.0,
                      leakage=leakage, extra_loss=0.5)
    return Case(run=RunSettings(duration=duration, start_temperature=295.0, output_every=30.0),
                walls=walls, chamber=chamber, heater=heater, control=control, name="demo-oven")


def test_enclosure_thermostat_heater_and_leakage():
    sp, band = 453.15, 4.0
    case = _oven(Control(mode="thermostat", setpoint=sp, band=band),
                 Heater(power=3000.0, placement="chamber"))
    res = run(case)
    _closes(res)
    Tc = res.chamber_T
    # the thermostat holds the chamber within its band once warm (switching is located to
    # within 0.02 band; a little extra for the overshoot of one step)
    warm = res.times > res.times[np.argmax(Tc >= sp - band / 2)]
    assert Tc.max() < sp + band / 2 + 0.5
    assert Tc[warm].min() > sp - band / 2 - 0.5
    # heater: full power or nothing, so energy = 3 kW x on-time <= 3 kW x duration
    assert 0.0 < res.heater_energy[-1] < 3000.0 * case.run.duration
    assert set(np.unique(np.round(res.heater_power[1:], 6))) <= {0.0, 3000.0}
    # leakage + extra UA loss against a trapezoid over the 30 s outputs of the chamber
    # temperature (UA = V rho cp + extra, room air at 295 K and 1 atm from CoolProp; fdwall's
    # ideal-gas air is within 0.25 % of it at room temperature, test_physics_air)
    from CoolProp.CoolProp import PropsSI
    rho_cp = PropsSI("D", "T", 295.0, "P", 101325.0, "Air") * PropsSI("C", "T", 295.0, "P",
                                                                       101325.0, "Air")
    ua = 0.002 * rho_cp + 0.5
    loss = trapezoid(ua * (Tc - 295.0), res.times)
    assert res.loss_energy[-1] == pytest.approx(loss, rel=4e-3)
    # walls + chamber store what the heater put in less what left (first law)
    ext = [f for f, e in enumerate(res.system.external) if e]
    left = res.face_energy[-1, ext].sum()
    assert res.stored[-1] == pytest.approx(res.heater_energy[-1] + left - res.loss_energy[-1],
                                           rel=1e-6)


@pytest.mark.parametrize("control, heater", [
    (Control(mode="fixed"), Heater(power=Schedule([0, 3600, 3600], [2500.0, 2500.0, 0.0]))),
    (Control(mode="duty", duty=0.6, switched=True, period=120.0), Heater(power=3000.0)),
    (Control(mode="pid", setpoint=433.15, proportional_gain=0.05, integral_gain=2e-5, period=30.0), Heater(power=3000.0)),
    (Control(mode="fixed"), Heater(power=800.0, placement="inner_face", wall=1, resistance_coefficient=4e-3)),
    (Control(mode="thermostat", setpoint=360.0, sensor="wall", sensor_wall=0,
             sensor_depth=0.0), Heater(power=1500.0, placement="interface", wall=0,
                                       after_layer=0)),
], ids=["fixed-step", "duty-switched", "pid", "inner-face-alpha", "interface-thermostat"])
def test_enclosure_heater_variants(control, heater):
    case = _oven(control, heater, duration=3 * 3600.0)
    res = run(case)
    _closes(res)
    if control.mode == "fixed" and heater.resistance_coefficient == 0.0:
        # 2.5 kW for one hour, then off (heater energy = power x time)
        assert res.heater_energy[-1] == pytest.approx(2500.0 * 3600.0, rel=1e-9)
    if control.mode == "thermostat":
        # the wall sensor does switch the embedded element (both states occur)
        assert set(np.unique(np.round(res.heater_power[1:], 6))) == {0.0, 1500.0}
        sensor = res.wall_T(0)[:, 0]
        warm = res.times > res.times[np.argmax(sensor >= 359.0)]
        assert sensor.max() < 361.5 and sensor[warm].min() > 358.5
    if control.mode == "duty":
        # 60 % of 3 kW on average, whole periods (3 h = 90 periods of 120 s)
        assert res.heater_energy[-1] == pytest.approx(0.6 * 3000.0 * case.run.duration, rel=1e-6)
