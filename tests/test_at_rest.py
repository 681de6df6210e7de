"""Cases at rest: everything at the 1 K floor, or everything at ambient, run to their end.

Source (closed form): with no heat sources and every boundary held at the initial temperature
T0 (fluid, surroundings and start all equal), T(x, t) = T0 solves the heat equation with its
boundary and initial conditions, and by the uniqueness theorem for the heat equation it is the
only solution (Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed. 1959, ch. 1, from
memory): nothing changes, no heat flows, nothing is stored.  A run at the 1 K floor must not be
mistaken for heat drawn out of the wall below absolute zero (the solver rejects a solution
pinned at the floor only when a node fell to it during the step).
"""
from __future__ import annotations

import numpy as np
import pytest

from fdwall.materials import get_material
from fdwall.model import Case, Face, Layer, RunSettings, Wall
from fdwall.solver import run

DURATION = 3600.0  # s


def _case(T0: float, geometry: str = "slab", adiabatic: bool = False) -> Case:
    """A steel skin on mineral wool, start, fluids and surroundings all at ``T0`` [K]."""
    w = Wall(layers=(Layer(get_material("carbon-steel"), 0.005),
                     Layer(get_material("mineral-wool-128"), 0.05)),
             shape=geometry, inner_radius=None if geometry == "slab" else 0.2)
    if adiabatic:
        inner = Face(heat_flux=0.0)
        outer = Face(heat_flux=0.0)
    else:
        inner = Face(fluid_temperature=T0, convection=10.0, emissivity=0.9, surroundings_temperature=T0)
        outer = Face(fluid_temperature=T0, convection=8.0, emissivity=0.9, surroundings_temperature=T0)
    return Case(run=RunSettings(duration=DURATION, start_temperature=T0), wall=w, inner=inner, outer=outer)


@pytest.mark.parametrize("geometry,adiabatic", [("slab", False), ("cylinder", False),
                                                ("slab", True)])
def test_everything_at_the_floor_runs_to_its_end(geometry, adiabatic):
    res = run(_case(1.0, geometry, adiabatic))
    assert res.complete, res.message
    assert res.times[-1] == pytest.approx(DURATION, rel=1e-12)
    # closed form T = 1 K; the solver may move a node by round-off only (1e-6 K is far below
    # any tolerance of the run)
    assert np.all(np.isfinite(res.T))
    # (outputs between step ends are cubic interpolants and may dip below 1 K by round-off)
    assert np.max(np.abs(res.T - 1.0)) < 1e-6


@pytest.mark.parametrize("geometry", ["slab", "cylinder", "sphere"])
def test_everything_at_ambient_stays_at_ambient(geometry):
    T0 = 293.15
    res = run(_case(T0, geometry))
    assert res.complete, res.message
    assert res.times[-1] == pytest.approx(DURATION, rel=1e-12)
    # closed form: nothing changes.  Allow a few units in the last place of 293.15 K
    # (one ulp = 5.7e-14 K) for the arithmetic of the Newton update
    assert np.max(np.abs(res.T - T0)) < 1e-12
    # no heat flows and nothing is stored (closed form: zero; round-off of W and J only)
    assert np.max(np.abs(res.face_flow)) < 1e-9
    assert np.max(np.abs(res.stored)) < 1e-6
