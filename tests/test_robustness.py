"""Randomised robustness: many random walls and enclosures must run to the end and solve their
steady state, each conserving energy.

Source: the first law of thermodynamics (energy conservation). Every transient run's ledger
(heat in through the faces, heater, chamber losses) must equal the change of stored enthalpy
to 1e-8 relative, and every steady state must balance to 1e-6 of its largest heat flow.
Randomised testing itself: common practice, no source. The draws include thin conductive skins under huge film coefficients,
fixed-temperature ramps that start away from the initial temperature, flux steps, radiation,
correlations, contact resistances, cylinders and spheres, bridges, box corrections and every
control mode: the cases that once made the step size collapse at t = 0.
"""
import numpy as np
import pytest

from fdwall import (
    Bridge,
    Case,
    Chamber,
    Control,
    Convection,
    EnclosureWall,
    Face,
    Heater,
    Layer,
    RunSettings,
    Schedule,
    Wall,
    run,
    solve_steady,
)
from fdwall.materials import get_material

MATS = ["carbon-steel", "mineral-wool-128", "ceramic-fibre-blanket-96", "fireclay-brick-dense",
        "microporous-board", "aluminium-alloy", "air-gap-10mm", "glass-soda-lime"]


def _random_wall_case(rng):
    nl = int(rng.integers(1, 5))
    layers = tuple(Layer(get_material(MATS[rng.integers(len(MATS))]),
                         float(10 ** rng.uniform(-4, -0.7))) for _ in range(nl))
    geo = ["slab", "cylinder", "sphere"][rng.integers(3)]
    contact = tuple(float(rng.choice([0.0, 1e-4, 1e-2])) for _ in range(nl - 1))
    w = Wall(layers=layers, shape=geo, interface_resistance=contact,
             inner_radius=None if geo == "slab" else float(10 ** rng.uniform(-2, 0)))
    kind = rng.integers(4)
    T_in = float(rng.uniform(350, 1500))
    if kind == 0:
        inner = Face(fixed_temperature=Schedule([0, 600], [300, T_in]))
    elif kind == 1:
        q = float(rng.uniform(100, 2e4))
        inner = Face(heat_flux=Schedule([0, 3600, 3600], [q, q, 0.0]))
    elif kind == 2:
        inner = Face(fluid_temperature=T_in, convection=float(10 ** rng.uniform(0, 6)),
                     emissivity=float(rng.uniform(0, 1)))
    else:
        inner = Face(fluid_temperature=T_in, convection=Convection.natural_vertical(1.0), emissivity=0.9)
    conv = [8.0, Convection.natural_vertical(2.0),
            Convection.wind_plate(1.0, 5.0, with_natural=True)][rng.integers(3)]
    outer = Face(fluid_temperature=293.15, convection=conv, emissivity=float(rng.uniform(0, 1)),
                 surroundings_temperature=280.0)
    return Case(run=RunSettings(duration=float(rng.uniform(600, 48 * 3600)), start_temperature=293.15,
                                tolerance=float(10 ** rng.uniform(-3, 0))),
                wall=w, inner=inner, outer=outer)


def _random_enclosure(rng):
    mats = MATS[:6]
    walls = []
    for j in range(int(rng.integers(1, 5))):
        nl = int(rng.integers(1, 4))
        layers = tuple(Layer(get_material(mats[rng.integers(len(mats))]),
                             float(10 ** rng.uniform(-3, -0.8))) for _ in range(nl))
        br = Bridge(0.05, get_material("carbon-steel"), (nl - 1,)) if nl > 1 and rng.random() < 0.3 else None
        walls.append(EnclosureWall(
            wall=Wall(layers=layers, area=float(rng.uniform(0.1, 3)), name=f"w{j}"),
            outer=Face(fluid_temperature=293.15, convection=Convection.natural_vertical(1.0), emissivity=0.9),
            inner_face_convection=float(rng.uniform(2, 50)), inner_face_emissivity=float(rng.uniform(0, 1)), bridge=br))
    mode = ["fixed", "duty", "thermostat", "pid"][rng.integers(4)]
    sp = Schedule([0, 3600, 7200, 7200], [300, float(rng.uniform(400, 1200)),
                                          float(rng.uniform(400, 1200)), 300])
    ctl = Control(mode=mode, duty=float(rng.uniform(0.1, 1)), switched=bool(rng.random() < 0.5),
                  period=float(rng.uniform(10, 300)),
                  setpoint=sp if mode in ("thermostat", "pid") else None,
                  band=float(rng.uniform(0, 20)), proportional_gain=0.05, integral_gain=float(rng.uniform(0, 1e-3)))
    loc = ["chamber", "inner_face", "interface"][rng.integers(3)] if len(walls[0].wall.layers) > 1 else "chamber"
    return Case(run=RunSettings(duration=float(rng.uniform(3600, 20000)), start_temperature=293.15,
                                tolerance=float(10 ** rng.uniform(-2, 0.5))),
                walls=walls, chamber=Chamber(heat_capacity=float(10 ** rng.uniform(2, 5)),
                                             leakage=float(rng.uniform(0, 0.01)),
                                             inner_dimensions=(0.5, 0.5, 0.5) if rng.random() < 0.3 else None),
                heater=Heater(power=float(10 ** rng.uniform(2.5, 4.5)), placement=loc), control=ctl)


def _check(case):
    r = run(case)
    assert r.complete and np.all(np.isfinite(r.T))
    assert r.relative_residual < 1e-8
    st = solve_steady(case)
    scale = max(1.0, float(np.abs(st.face_flow).max()), abs(st.heater_power))
    assert abs(st.balance) < 1e-6 * scale


@pytest.mark.parametrize("seed", [3, 7, 11])
def test_random_walls(seed):
    rng = np.random.default_rng(seed)
    for _ in range(40):
        _check(_random_wall_case(rng))


@pytest.mark.parametrize("seed", [1, 2])
def test_random_enclosures(seed):
    rng = np.random.default_rng(seed)
    for _ in range(12):
        _check(_random_enclosure(rng))
