"""Enclosure analyses against hand calculations: the one-node (lumped) model, the steady
resistance network, heater sizing and cool-down.

All cases are demo data (invented materials and dimensions), SI units.

Sources
-------
* Lumped capacitance: Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass
  Transfer, 6th ed., §5.2-5.3 (a body with heat input P, capacity C and resistance R to
  ambient: T = T_amb + P R + (T0 - T_amb - P R) exp(-t / (R C))).
* Series/parallel resistance network: Incropera §3.1 (plane wall, composite wall, films).
* Air rho*cp for the leakage conductance: CoolProp (air at 293.15 K, 101325 Pa).
"""
import math
from dataclasses import replace

import numpy as np
import pytest

from fdwall.analyses import (
    cooldown,
    energy_breakdown,
    hold_duty,
    size_heater,
    steady_duty,
    summarise_enclosure,
    warm_up_time,
)
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
from fdwall.solver import run, solve_steady

AMB = 293.15

# demo materials (invented, constant properties)
SKIN = material_from_dict("demo-thin-conductive-skin", {"k": 400.0, "cp": 900.0, "rho": 2700.0})
BOARD = material_from_dict("demo-board", {"k": 0.06, "cp": 1000.0, "rho": 250.0})
BRICK = material_from_dict("demo-light-brick", {"k": 0.25, "cp": 1000.0, "rho": 800.0})


def air_rho_cp():
    """Volumetric heat capacity of room air [J/m3/K] (CoolProp, 293.15 K, 1 atm)."""
    from CoolProp.CoolProp import PropsSI
    return PropsSI("D", "T", 293.15, "P", 101325.0, "Air") * PropsSI("C", "T", 293.15, "P", 101325.0, "Air")


def check_ledger(res):
    """Energy residual of an enclosure run is ~0 (first law; heater = stored + losses)."""
    eb = energy_breakdown(res)
    assert eb["relative_residual"] < 1e-6, eb
    assert res.relative_residual < 1e-6


# ----------------------------------------------------------------------------- one-node model
# Thin (1 mm), highly conductive walls (Bi = h L / k ~ 1e-5) with a large inner film: wall and
# chamber sit at one temperature, so the enclosure is one node with
#   C = C_chamber + sum rho c L A,   1/R = sum A / (1/h_in + L/k + 1/h_out) + leakage UA + extra UA
C_CH = 50e3          # [J/K]
H_IN, H_OUT = 2000.0, 6.0
AREAS = (1.5, 0.9)   # [m2]
L_SKIN = 0.001       # [m]
LEAK, EXTRA = 0.002, 1.5   # [m3/s], [W/K]


def lumped_case(P=400.0, duration=6 * 3600.0, **ctl):
    walls = tuple(
        EnclosureWall(Wall((Layer(SKIN, L_SKIN, cells=2),), area=A, name=f"panel{i}"),
                      Face.exchange(AMB, H_OUT), inner_face_convection=H_IN)
        for i, A in enumerate(AREAS))
    return Case(run=RunSettings(duration=duration, output_every=duration / 120, start_temperature=AMB),
                walls=walls, chamber=Chamber(heat_capacity=C_CH, room_temperature=AMB, leakage=LEAK, extra_loss=EXTRA),
                heater=Heater(P), control=Control(**ctl), name="demo lumped box")


def lumped_RC():
    """R [K/W] and C [J/K] of the one-node model by hand."""
    G = sum(A / (1 / H_IN + L_SKIN / 400.0 + 1 / H_OUT) for A in AREAS) + LEAK * air_rho_cp() + EXTRA
    C = C_CH + sum(2700.0 * 900.0 * L_SKIN * A for A in AREAS)
    return 1.0 / G, C


def test_lumped_warm_up_matches_exponential():
    # Incropera §5.2-5.3: T = T_amb + P R + (T0 - T_amb - P R) exp(-t/(R C)), T0 = T_amb
    P = 400.0
    res = run(lumped_case(P))
    R, C = lumped_RC()
    t = res.times
    exact = AMB + P * R * (1 - np.exp(-t / (R * C)))
    err = np.max(np.abs(res.chamber_T - exact))
    assert err < 2e-3 * P * R, (err, P * R)
    # the run spans more than one time constant, so the shape is really tested
    assert t[-1] > 1.5 * R * C
    check_ledger(res)
    # warm-up time to a level: t = -R C ln(1 - (T - T_amb)/(P R)), same source
    level = AMB + 0.6 * P * R
    t_exact = -R * C * math.log(1 - 0.6)
    assert warm_up_time(res, level) == pytest.approx(t_exact, rel=5e-3)
    assert math.isnan(warm_up_time(res, AMB + 1.01 * P * R))   # never reached: above P R


def test_cooldown_matches_exponential_decay():
    # Heater on for 3 h, then off (enable schedule): after t_off
    # T = T_amb + (T_off - T_amb) exp(-(t - t_off)/(R C)) (Incropera §5.2), so the time to fall
    # to a level is R C ln((T_off - T_amb)/(T - T_amb)) and the e-folding time is R C.
    t_off = 3 * 3600.0
    en = Schedule([0.0, t_off, t_off], [1.0, 1.0, 0.0])
    case = lumped_case(600.0, duration=12 * 3600.0, power_on=en)
    res = run(replace(case, run=replace(case.run, output_every=60.0)))
    R, C = lumped_RC()
    cd = cooldown(res, temperatures=(320.0, 400.0))
    assert cd["t_off_s"] == pytest.approx(t_off)
    T_off = cd["T_off_K"]
    assert T_off == pytest.approx(AMB + 600.0 * R * (1 - math.exp(-t_off / (R * C))), rel=1e-3)
    assert cd["e_folding_s"] == pytest.approx(R * C, rel=5e-3)
    assert cd["time_to_K"][320.0] == pytest.approx(R * C * math.log((T_off - AMB) / (320.0 - AMB)), rel=5e-3)
    assert math.isnan(cd["time_to_K"][400.0]) or T_off < 400.0 or cd["time_to_K"][400.0] >= 0
    assert cd["heater_energy_after_off_J"] == pytest.approx(0.0, abs=1e-6 * res.heater_energy[-1])
    check_ledger(res)


# ----------------------------------------------------------------------------- steady network
def network_case(P=900.0, **ctl):
    # two composite walls with different films, a contact resistance, leakage and extra UA
    w1 = Wall((Layer(BRICK, 0.06), Layer(BOARD, 0.05)), area=2.2, interface_resistance=(0.01,), name="sides")
    w2 = Wall((Layer(SKIN, 0.002), Layer(BOARD, 0.08), Layer(SKIN, 0.001)), area=0.7, name="door")
    walls = (EnclosureWall(w1, Face.exchange(AMB, 7.0), inner_face_convection=12.0),
             EnclosureWall(w2, Face.exchange(AMB, 15.0), inner_face_convection=25.0))
    return Case(run=RunSettings(duration=3600.0), walls=walls,
                chamber=Chamber(heat_capacity=2e4, room_temperature=AMB, leakage=0.0015, extra_loss=0.8),
                heater=Heater(P), control=Control(**ctl), name="demo network box")


def network_G():
    """Wall conductances [W/K] and leakage+extra UA [W/K] by hand (Incropera §3.1)."""
    R1 = (1 / 12.0 + 0.06 / 0.25 + 0.01 + 0.05 / 0.06 + 1 / 7.0) / 2.2
    R2 = (1 / 25.0 + 0.002 / 400.0 + 0.08 / 0.06 + 0.001 / 400.0 + 1 / 15.0) / 0.7
    ua = 0.0015 * air_rho_cp() + 0.8
    return {"sides": 1 / R1, "door": 1 / R2}, ua


def test_steady_constant_power_equals_network():
    P = 900.0
    st = solve_steady(network_case(P))
    g, ua = network_G()
    G = sum(g.values()) + ua
    # chamber rise = P / G (walls in parallel with leakage/extra UA); 3e-3: fdwall's air is an
    # ideal gas, its rho*cp 0.3 % below CoolProp's real-gas value at room temperature
    # (test_physics_air), on a leakage share of about a third of G
    assert st.T[-1] - AMB == pytest.approx(P / G, rel=3e-3)


def test_steady_duty_equals_network_loss_over_rating():
    sp = 473.15
    P = 2500.0
    sd = steady_duty(network_case(P, mode="thermostat", setpoint=sp, band=2.0))
    g, ua = network_G()
    dT = sp - AMB
    assert sd["reachable"]
    assert sd["chamber_K"] == pytest.approx(sp, abs=1e-6)
    for name in g:      # per-wall loss = dT / R_wall (Incropera §3.1)
        assert sd["wall_loss_W"][name] == pytest.approx(g[name] * dT, rel=1e-4)
    # ideal-gas rho*cp of room air: 0.3 % below CoolProp's real gas (test_physics_air)
    assert sd["leakage_loss_W"] == pytest.approx(ua * dT, rel=4e-3)
    assert sd["duty"] == pytest.approx((sum(g.values()) + ua) * dT / P, rel=3e-3)
    assert abs(sd["balance_W"]) < 1e-6 * P
    # a heater smaller than the steady loss cannot hold the setpoint
    small = steady_duty(network_case(0.5 * sd["loss_W"], mode="thermostat", setpoint=sp))
    assert not small["reachable"] and small["duty"] == 1.0


# ----------------------------------------------------------------------------- heater sizing
def test_size_heater_matches_lumped_formula_and_2pct_less_fails():
    # One-node model (Incropera §5.2-5.3): the chamber reaches T* at t_lim when
    #   P = (T* - T_amb) / (R (1 - exp(-t_lim / (R C)))),
    # and never below P_min = (T* - T_amb) / R (steady loss at T*).
    R, C = lumped_RC()
    sp, band = 453.15, 2.0
    t_lim = 5400.0
    case = lumped_case(300.0, duration=3600.0, mode="thermostat", setpoint=sp, band=4.0)
    out = size_heater(case, t_lim, setpoint=sp, band=band)
    target = sp - band
    P_hand = (target - AMB) / (R * (1 - math.exp(-t_lim / (R * C))))
    assert out["power_W"] == pytest.approx(P_hand, rel=4e-3)
    assert out["p_min_W"] == pytest.approx((target - AMB) / R, rel=1e-3)
    assert out["steady_loss_at_setpoint_W"] == pytest.approx((sp - AMB) / R, rel=1e-3)
    assert out["n_trials"] <= 12
    # independent check runs (longer than the limit, the case's own thermostat)
    long = replace(case, run=replace(case.run, duration=2 * t_lim, output_every=t_lim / 600))
    ok = run(replace(long, heater=Heater(out["power_W"])))
    assert warm_up_time(ok, sp, band) <= t_lim
    short = run(replace(long, heater=Heater(0.98 * out["power_W"])))
    assert warm_up_time(short, sp, band) > t_lim
    check_ledger(ok)
    check_ledger(short)


def test_size_heater_full_power_mode_and_bracket_hints():
    sp = 453.15
    case = lumped_case(300.0, duration=3600.0, mode="pid", setpoint=sp, proportional_gain=0.05, integral_gain=1e-4)
    a = size_heater(case, 5400.0, setpoint=sp, control="full")
    # full power on from the start is the one-node formula again (Incropera §5.2-5.3)
    R, C = lumped_RC()
    P_hand = (sp - AMB) / (R * (1 - math.exp(-5400.0 / (R * C))))
    assert a["power_W"] == pytest.approx(P_hand, rel=4e-3)
    # a starting bracket that already succeeds at p_lo is moved down, not trusted
    b = size_heater(case, 5400.0, setpoint=sp, control="full", p_lo=3 * P_hand, p_hi=4 * P_hand)
    assert b["power_W"] == pytest.approx(a["power_W"], rel=4e-3)
    # with the case's PID the approach is throttled near the setpoint: needs more power
    c = size_heater(case, 5400.0, setpoint=sp, band=1.0)
    assert c["power_W"] > 0.99 * (sp - 1.0 - AMB) / (R * (1 - math.exp(-5400.0 / (R * C))))
    # a setpoint ramp slower than the limit cannot be sized with the case's own control
    slow = replace(case, control=replace(case.control, setpoint=Schedule([0.0, 7200.0], [AMB, sp])))
    with pytest.raises(ModelError, match="control='full'"):
        size_heater(slow, 5400.0)


# ----------------------------------------------------------------------------- summary, errors
def test_summary_and_clear_errors():
    t_off = 3 * 3600.0
    en = Schedule([0.0, t_off, t_off], [1.0, 1.0, 0.0])
    case = lumped_case(4000.0, duration=8 * 3600.0, mode="thermostat", setpoint=423.15, band=3.0,
                       power_on=en)
    case = replace(case, run=replace(case.run, output_every=30.0))
    res = run(case)
    s = summarise_enclosure(res)
    R, C = lumped_RC()
    # warm-up to 422.15 K at full power (Incropera §5.2-5.3)
    assert s["warm_up_s"] == pytest.approx(-R * C * math.log(1 - (422.15 - AMB) / (4000.0 * R)), rel=5e-3)
    # hold duty over whole thermostat cycles ~ steady loss / rating (energy conservation);
    # the one-node chamber has no slow wall storage, so the hold is steady
    assert s["hold_duty"] == pytest.approx((423.15 - AMB) / R / 4000.0, rel=3e-3)
    assert s["steady_duty"] == pytest.approx((423.15 - AMB) / R / 4000.0, rel=1e-3)
    assert s["cooldown"]["t_off_s"] == pytest.approx(t_off)
    assert s["energy"]["relative_residual"] < 1e-6
    # bad input: a single-wall case, and a warm-up without any setpoint
    single = Case(run=RunSettings(duration=10.0), wall=Wall((Layer(BOARD, 0.05),)),
                  inner=Face.fixed(400.0), outer=Face.exchange(AMB, 10.0))
    with pytest.raises(ModelError, match="enclosure"):
        steady_duty(single)
    plain = run(lumped_case(100.0, duration=600.0))
    with pytest.raises(ModelError, match="setpoint"):
        warm_up_time(plain)
    with pytest.raises(ModelError, match="t_off"):
        cooldown(plain)


def test_hold_duty_is_energy_over_full_power_with_supply_voltage():
    # Joule heating: element power scales with the square of the supply voltage, so at 90 %
    # voltage the full power is 0.81 x rated; an averaged 40 % duty then delivers
    # 0.4 x 0.81 x P x t and hold_duty reads back 0.4 (definition check).
    case = lumped_case(1000.0, duration=7200.0, mode="duty", duty=0.4)
    case = replace(case, heater=Heater(1000.0, voltage_ratio=0.9))
    res = run(case)
    assert res.heater_energy[-1] == pytest.approx(0.4 * 0.81 * 1000.0 * 7200.0, rel=1e-9)
    assert hold_duty(res, 600.0, 7000.0) == pytest.approx(0.4, rel=1e-9)
    # a rated-power schedule is integrated exactly: 1000 W for 1 h, then 500 W
    sched = Schedule([0.0, 3600.0, 3600.0], [1000.0, 1000.0, 500.0])
    res2 = run(replace(case, heater=Heater(sched)))
    assert hold_duty(res2, 0.0) == pytest.approx(0.4, rel=1e-9)
    check_ledger(res2)


def test_chamber_ua_follows_the_room_temperature():
    """System.chamber_ua(t) = extra UA + leakage x rho cp of room air at the room temperature
    of that instant (CoolProp real gas; fdwall's ideal gas within 0.4 %); a room warming from
    20 to 40 degC cuts the leakage conductance by the density ratio 293.15/313.15 (ideal gas,
    from memory: rho = p / (R T))."""
    from CoolProp.CoolProp import PropsSI

    from fdwall.system import build_system
    room = Schedule([0.0, 3600.0], [293.15, 313.15])
    case = replace(network_case(900.0), chamber=Chamber(heat_capacity=2e4, room_temperature=room,
                                                        leakage=0.0015, extra_loss=0.8))
    sysm = build_system(case)
    for t, T in ((0.0, 293.15), (1800.0, 303.15), (3600.0, 313.15)):
        rc = PropsSI("D", "T", T, "P", 101325.0, "Air") * PropsSI("C", "T", T, "P", 101325.0,
                                                                 "Air")
        assert sysm.chamber_ua(t) == pytest.approx(0.8 + 0.0015 * rc, rel=4e-3)
    leak0, leak1 = sysm.chamber_ua(0.0) - 0.8, sysm.chamber_ua(3600.0) - 0.8
    assert leak1 / leak0 == pytest.approx(293.15 / 313.15, rel=2e-3)
