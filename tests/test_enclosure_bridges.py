"""Thermal bridges, the box edge/corner correction and the energy breakdown by wall.

Demo data (invented materials and dimensions), SI units.

Sources
-------
* Parallel-path (upper limit of resistance) and isothermal-planes (lower limit) estimates of
  a bridged wall, ISO 6946 (from memory); films and layers in series, Incropera, DeWitt,
  Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 6th ed., §3.1.
* Conduction shape factors of a box: edge S = 0.54 D, corner S = 0.15 L, plane wall A/L
  (Incropera, Table 4.1, cases 8 and 9).
* First law per control volume (chamber node, each wall) for the energy breakdown.
"""
from dataclasses import replace

import numpy as np
import pytest

from fdwall.analyses import energy_breakdown, steady_duty, summarise_enclosure
from fdwall.materials import material_from_dict
from fdwall.model import (
    Bridge,
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
from fdwall.solver import run

AMB = 293.15
SP = 453.15
STEEL = material_from_dict("demo-steel", {"k": 45.0, "cp": 480.0, "rho": 7850.0})
WOOL = material_from_dict("demo-wool", {"k": 0.04, "cp": 840.0, "rho": 100.0})
STUD = material_from_dict("demo-stud", {"k": 0.13, "cp": 1600.0, "rho": 500.0})
H_IN, H_OUT = 12.0, 8.0
F = 0.08            # bridge area fraction [-]
A = 2.5             # bridged wall area [m2]


def bridged_case(P=3000.0, **ctl):
    wall = Wall((Layer(STEEL, 0.001), Layer(WOOL, 0.08), Layer(STEEL, 0.001)), area=A, name="panel")
    door = Wall((Layer(STEEL, 0.002), Layer(WOOL, 0.06)), area=0.5, name="door")
    walls = (EnclosureWall(wall, Face.exchange(AMB, H_OUT), inner_face_convection=H_IN,
                           bridge=Bridge(F, STUD, (1,))),
             EnclosureWall(door, Face.exchange(AMB, H_OUT), inner_face_convection=H_IN))
    ctl = ctl or dict(mode="thermostat", setpoint=SP, band=2.0)
    return Case(run=RunSettings(duration=3600.0), walls=walls,
                chamber=Chamber(heat_capacity=2e4, room_temperature=AMB), heater=Heater(P),
                control=Control(**ctl), name="demo bridged box")


def test_bridged_wall_loss_equals_parallel_path_network():
    sd = steady_duty(bridged_case())
    dT = SP - AMB
    skins = 0.001 / 45.0 * 2
    R_clear = 1 / H_IN + skins + 0.08 / 0.04 + 1 / H_OUT        # [m2K/W], Incropera §3.1
    R_bridge = 1 / H_IN + skins + 0.08 / 0.13 + 1 / H_OUT
    U_pp = (1 - F) / R_clear + F / R_bridge                       # ISO 6946 parallel paths
    assert sd["wall_loss_W"]["panel"] == pytest.approx(U_pp * A * dT, rel=1e-4)
    assert sd["bridge_loss_W"]["panel"] == pytest.approx(F / R_bridge * A * dT, rel=1e-4)
    # the isothermal-planes estimate (conductivities of the bridged layer averaged by area)
    # loses more: parallel paths are the upper limit of resistance (ISO 6946, from memory)
    k_mix = (1 - F) * 0.04 + F * 0.13
    U_ip = 1 / (1 / H_IN + skins + 0.08 / k_mix + 1 / H_OUT)
    assert sd["wall_loss_W"]["panel"] < U_ip * A * dT
    # the unbridged door is the plain series network
    R_door = 1 / H_IN + 0.002 / 45.0 + 0.06 / 0.04 + 1 / H_OUT
    assert sd["wall_loss_W"]["door"] == pytest.approx(0.5 / R_door * dT, rel=1e-4)
    # and the run held at that steady state books the bridge share the same way
    st = sd["steady"]
    case = bridged_case(P=st.heater_power, mode="fixed")
    res = run(case, initial=st.T)
    eb = energy_breakdown(res)
    share = eb["walls"]["panel"]["bridge_outer_loss_J"] / eb["walls"]["panel"]["outer_loss_J"]
    assert share == pytest.approx((F / R_bridge) / U_pp, rel=1e-4)
    assert summarise_enclosure(res)["bridges"]["panel"]["bridge_share_of_outer_heat_loss"] == \
        pytest.approx(share, rel=1e-6)
    assert abs(eb["walls_stored_J"]) < 1e-4 * eb["heater_J"]      # it stays steady
    assert eb["relative_residual"] < 1e-6


def test_box_edge_and_corner_correction_equals_shape_factors():
    # Six single-layer walls of a box, inner face held at the chamber temperature by a huge
    # film and outer face at room temperature: the loss is k S dT with
    # S = sum A/L + 4 x 0.54 (W + D + H) + 8 x 0.15 L (Incropera Table 4.1, cases 8 and 9).
    W, D, H, L, k = 0.6, 0.5, 0.4, 0.05, 0.04
    areas = {"top": W * D, "bottom": W * D, "front": W * H, "back": W * H, "left": D * H, "right": D * H}
    walls = tuple(EnclosureWall(Wall((Layer(WOOL, L, cells=6),), area=a, name=n), Face.fixed(AMB),
                                inner_face_convection=1e5)
                  for n, a in areas.items())
    case = Case(run=RunSettings(duration=3600.0), walls=walls,
                chamber=Chamber(heat_capacity=1e4, room_temperature=AMB, inner_dimensions=(W, D, H)),
                heater=Heater(1000.0), control=Control(mode="thermostat", setpoint=SP))
    S_walls = sum(a / L for a in areas.values())
    S_extra = 4 * 0.54 * (W + D + H) + 8 * 0.15 * L
    sd = steady_duty(case)
    assert sd["loss_W"] == pytest.approx(k * (S_walls + S_extra) * (SP - AMB), rel=1e-3)
    assert sd["steady"].system.area_factor == pytest.approx(1 + S_extra / S_walls, rel=1e-12)
    # each wall carries its share of the edges in proportion to A/L
    for n, a in areas.items():
        assert sd["wall_loss_W"][n] == pytest.approx(k * a / L * (1 + S_extra / S_walls) * (SP - AMB), rel=1e-3)
    res = run(replace(case, run=replace(case.run, duration=600.0)), initial=sd["steady"].T)
    s = summarise_enclosure(res, steady=False)
    assert s["box_edge_corner_area_factor"] == pytest.approx(1 + S_extra / S_walls, rel=1e-12)
    assert s["energy"]["relative_residual"] < 1e-6


def test_energy_breakdown_closes_per_control_volume():
    # Heater on the panel's inner face, bridge, box correction, leakage, inner and outer
    # radiation: first law for the chamber node and for each wall (bridge path merged).
    wall = Wall((Layer(STEEL, 0.001), Layer(WOOL, 0.08), Layer(STEEL, 0.001)), area=1.2, name="panel")
    side = Wall((Layer(STEEL, 0.0015), Layer(WOOL, 0.06), Layer(STEEL, 0.001)), area=2.0, name="sides")
    walls = (EnclosureWall(wall, Face.exchange(AMB, 8.0, emissivity=0.8), inner_face_convection=10.0,
                           inner_face_emissivity=0.6, bridge=Bridge(0.05, STEEL, (1,))),
             EnclosureWall(side, Face.exchange(AMB, 6.0), inner_face_convection=10.0, inner_face_emissivity=0.6))
    case = Case(run=RunSettings(duration=4 * 3600.0, output_every=60.0), walls=walls,
                chamber=Chamber(heat_capacity=8e3, room_temperature=AMB, leakage=0.0008, extra_loss=0.5,
                                inner_dimensions=(0.8, 0.6, 0.7)),
                heater=Heater(2500.0, placement="inner_face", wall=0),
                control=Control(mode="thermostat", setpoint=SP, band=3.0))
    res = run(case)
    eb = energy_breakdown(res)
    p, s = eb["walls"]["panel"], eb["walls"]["sides"]
    E = eb["heater_J"]
    assert E > 0 and eb["relative_residual"] < 1e-6
    # chamber: in from the walls' inner faces, out by leakage, rise in stored heat
    assert -(p["from_chamber_J"] + s["from_chamber_J"]) - eb["leakage_loss_J"] == \
        pytest.approx(eb["chamber_stored_J"], abs=1e-6 * E)
    # panel carries the heater: heater + from chamber - outer loss = stored (bridge path included)
    assert E + p["from_chamber_J"] - p["outer_loss_J"] == pytest.approx(p["stored_J"], abs=1e-6 * E)
    assert s["from_chamber_J"] - s["outer_loss_J"] == pytest.approx(s["stored_J"], abs=1e-6 * E)
    assert 0 < p["bridge_outer_loss_J"] < p["outer_loss_J"]
    # a window: the parts add up there too
    w = energy_breakdown(res, 3600.0, 3 * 3600.0)
    assert w["relative_residual"] < 1e-6
    assert w["heater_J"] == pytest.approx(np.interp(3 * 3600.0, res.times, res.heater_energy)
                                          - np.interp(3600.0, res.times, res.heater_energy))
