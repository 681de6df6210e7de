"""Repeated firing cycles: the periodic state from a cold and from a warm start.

Demo data: a small lined kiln-like box fired for 3 h of every 8 h under a thermostat, then
cooling (invented properties), SI units.

Sources
-------
* Uniqueness of the periodic state of a dissipative (strictly lossy) heat-conduction system:
  whatever the start, repeated cycles converge to the same periodic response (Carslaw &
  Jaeger, Conduction of Heat in Solids, 2nd ed., §2.6 and §3.6 on periodic surface
  temperature: the transient part decays exponentially; from memory).
* First law over the cycles: sum of (heater - losses) = rise of the stored enthalpy.
"""
from dataclasses import replace

import numpy as np
import pytest

from fdwall.analyses import periodic_state
from fdwall.materials import material_from_dict
from fdwall.model import (
    Case,
    Chamber,
    Control,
    EnclosureWall,
    Face,
    Heater,
    Layer,
    ModelError,
    RunSettings,
    Wall,
)
from fdwall.schedule import Schedule
from fdwall.solver import run

AMB = 293.15
PERIOD = 8 * 3600.0
SP = 473.15
STEEL = material_from_dict("demo-steel", {"k": 45.0, "cp": 480.0, "rho": 7850.0})
BRICK = material_from_dict("demo-insulating-brick", {"k": 0.3, "cp": 1000.0, "rho": 900.0})
WOOL = material_from_dict("demo-wool-board", {"k": 0.05, "cp": 840.0, "rho": 120.0})


def kiln():
    lining = Wall((Layer(BRICK, 0.05), Layer(WOOL, 0.06), Layer(STEEL, 0.0015)), area=3.0, name="lining")
    door = Wall((Layer(STEEL, 0.002), Layer(WOOL, 0.05), Layer(STEEL, 0.001)), area=0.5, name="door")
    walls = (EnclosureWall(lining, Face.exchange(AMB, 8.0, emissivity=0.3)),
             EnclosureWall(door, Face.exchange(AMB, 8.0)))
    enable = Schedule([0.0, 3 * 3600.0, 3 * 3600.0, PERIOD], [1.0, 1.0, 0.0, 0.0])
    return Case(run=RunSettings(duration=PERIOD, output_every=60.0), walls=walls,
                chamber=Chamber(heat_capacity=20e3, room_temperature=AMB, leakage=0.001), heater=Heater(3000.0),
                control=Control(mode="thermostat", setpoint=SP, band=4.0, power_on=enable),
                name="demo kiln firing")


def test_periodic_state_same_from_cold_and_warm_start():
    case = kiln()
    tol = 0.5
    cold = periodic_state(case, PERIOD, tol_K=tol)            # start at room temperature
    warm = periodic_state(case, PERIOD, tol_K=tol, start=450.0)
    for out in (cold, warm):
        assert out["converged"]
        assert out["cycles"][-1]["change_K"] < tol
        assert all(c["relative_residual"] < 1e-6 for c in out["cycles"])
        assert out["error_estimate_K"] < tol
    # Carslaw & Jaeger (from memory): one periodic state, whatever the start
    assert np.max(np.abs(cold["periodic_start"] - warm["periodic_start"])) < tol
    # cold start costs more energy and a longer warm-up than the periodic cycle; warm start less
    fc, fw = cold["first_vs_periodic"], warm["first_vs_periodic"]
    assert fc["extra_energy_first_cycle_J"] > 0 > fw["extra_energy_first_cycle_J"]
    assert fc["first_warm_up_s"] > fc["periodic_warm_up_s"] > fw["first_warm_up_s"]
    assert fc["periodic_heater_energy_J"] == pytest.approx(fw["periodic_heater_energy_J"], rel=0.01)
    # the periodic start is (nearly) a fixed point of one more cycle
    c1 = replace(case, run=replace(case.run, duration=PERIOD))
    again = run(c1, initial=cold["periodic_start"])
    assert np.max(np.abs(again.T[-1] - cold["periodic_start"])) < tol


def test_first_law_across_cycles():
    # sum over cycles of (heater - outer losses - leakage) = enthalpy(final) - enthalpy(start)
    case = kiln()
    out = periodic_state(case, PERIOD, tol_K=2.0)
    sysm = out["last_result"].system
    Hh0, Hc0 = sysm.enthalpy(sysm.initial_vector(AMB))
    Hh1, Hc1 = sysm.enthalpy(out["periodic_start"])
    dH = (Hh1.sum() + Hc1.sum()) - (Hh0.sum() + Hc0.sum())
    net = sum(c["heater_energy_J"] - c["outer_loss_J"] - c["leakage_loss_J"] for c in out["cycles"])
    assert net == pytest.approx(dH, rel=1e-6)
    assert out["n_cycles"] >= 2


def test_periodic_state_rejects_schedules_longer_than_the_period():
    case = kiln()
    long_enable = Schedule([0.0, 3 * 3600.0, 3 * 3600.0, 2 * PERIOD], [1.0, 1.0, 0.0, 0.0])
    bad = replace(case, control=replace(case.control, power_on=long_enable))
    with pytest.raises(ModelError, match="enable"):
        periodic_state(bad, PERIOD)
