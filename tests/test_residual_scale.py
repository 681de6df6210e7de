"""The energy residual is measured against heat capacity x 1 K + energy throughput.

Sources: the first law (energy conservation) for the residual itself; the heat capacity of a
slab of constant-property layers is sum(rho * cp * thickness * area) (definition of specific
heat capacity, any heat-transfer text, e.g. Incropera & DeWitt, Fundamentals of Heat and Mass
Transfer, ch. 1, from memory).  A case at rest moves no energy, so a scale of the throughput
alone would be zero and the ratio meaningless; with the heat capacity term the round-off of a
case at rest must read as small.  The demo cases must still meet the 1e-6 closure bound of
tests/test_verify_energy.py (common practice, no source, for the bound).
"""
from __future__ import annotations

from pathlib import Path

import pytest

from fdwall.case import load_case
from fdwall.materials import Constant, Material
from fdwall.model import Case, Face, Layer, RunSettings, Wall
from fdwall.solver import run

ROOT = Path(__file__).resolve().parents[1]
# invented constant-property layers (values typical of steel and wool, for the check only)
SKIN = Material("demo-skin", k=Constant(45.0), cp=Constant(470.0), rho=7800.0)
WOOL = Material("demo-wool", k=Constant(0.05), cp=Constant(840.0), rho=128.0)
THICK = (0.005, 0.05)  # m
AREA = 2.0  # m2


def _rest_case(T0: float) -> Case:
    w = Wall(layers=(Layer(SKIN, THICK[0]), Layer(WOOL, THICK[1])), area=AREA)
    face = Face(fluid_temperature=T0, convection=10.0, emissivity=0.9, surroundings_temperature=T0)
    return Case(run=RunSettings(duration=3600.0, start_temperature=T0), wall=w, inner=face, outer=face)


@pytest.mark.parametrize("T0", [1.0, 293.15])
def test_case_at_rest_reports_a_small_relative_residual(T0):
    res = run(_rest_case(T0))
    assert res.complete, res.message
    # heat capacity from the definition: sum rho cp L A [J/K]
    C = AREA * (7800.0 * 470.0 * THICK[0] + 128.0 * 840.0 * THICK[1])
    assert res.stats["heat_capacity_J_per_K"] == pytest.approx(C, rel=1e-9)
    # nothing moves: the throughput is round-off, the scale is the heat capacity x 1 K
    assert res.residual_scale == pytest.approx(C * 1.0, rel=1e-6)
    assert res.relative_residual < 1e-9
    assert res.summary()["energy_residual_relative"] == res.relative_residual


@pytest.mark.parametrize("name", ["curing-oven-panel", "heat-treat-furnace", "hot-oil-pipe",
                                  "lab-furnace-wall"])
def test_demo_case_still_meets_its_closure_bound(name):
    res = run(load_case(ROOT / "cases" / f"{name}.toml"))
    assert res.complete
    st = res.stats
    assert res.residual_scale == st["heat_capacity_J_per_K"] + st["energy_scale_J"]
    # the energy moved dominates the scale of a demo run; the closure bound of
    # tests/test_verify_energy.py holds on both the old and the new scale
    assert st["energy_residual_max_J"] < 1e-6 * st["energy_scale_J"]
    assert res.relative_residual < 1e-6
