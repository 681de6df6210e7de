"""Sizing a layer of one wall of an enclosure, candidate materials, design conditions, the
conductivity design factor and the economic thickness (sources named beside each check)."""
import math

import pytest

from fdwall import Case, Face, Layer, RunSettings, Wall
from fdwall.errors import InputError
from fdwall.materials import material_from_dict
from fdwall.model import Chamber, Control, EnclosureWall, Heater
from fdwall.sizing import (
    Conditions,
    Economics,
    Energy,
    LossTarget,
    SkinTarget,
    present_value_factor,
    size_candidates,
    size_layer,
)
from fdwall.solver import solve_steady

K = 0.04
MAT = material_from_dict("test-ins", {"k": K, "cp": 840.0, "rho": 100.0})
TA, TSP, HI, HO = 293.15, 473.15, 20.0, 10.0


def _enclosure(mat=MAT, L=0.05):
    big = EnclosureWall(wall=Wall(layers=(Layer(mat, L),), area=2.0, name="big"),
                        outer=Face(fluid_temperature=TA, convection=HO), inner_face_convection=HI)
    small = EnclosureWall(wall=Wall(layers=(Layer(MAT, 0.1),), area=0.3, name="small"),
                          outer=Face(fluid_temperature=TA, convection=HO), inner_face_convection=HI)
    return Case(run=RunSettings(duration=36000.0, start_temperature=TA), walls=(big, small),
                chamber=Chamber(heat_capacity=1e5, room_temperature=TA),
                heater=Heater(power=20000.0),
                control=Control(mode="thermostat", setpoint=TSP, band=1.0))


def _slab(mat=MAT, T_in=473.15, T_out=TA, h_out=HO):
    return Case(run=RunSettings(duration=3600.0, start_temperature=TA),
                wall=Wall(layers=(Layer(mat, 0.05),), area=1.0),
                inner=Face(fluid_temperature=T_in, convection=1e6), outer=Face(fluid_temperature=T_out, convection=h_out))


def test_enclosure_wall_skin_and_loss_against_resistance_network():
    # Hand resistance network (Incropera 7th ed., eq. 3.19, series resistances per m2):
    # chamber held at its setpoint by the thermostat in steady state, then through the wall
    # q = (T_sp - T_a) / (1/h_i + L/k + 1/h_o) and T_s = T_a + q / h_o, so for a skin limit
    # L = k ((T_sp - T_a) / (h_o (T_s - T_a)) - 1/h_i - 1/h_o).
    case = _enclosure()
    s = solve_steady(case)
    assert s.T[-1] == pytest.approx(TSP, abs=1e-6)          # chamber at the setpoint
    Ts = 273.15 + 45.0
    L_ref = K * ((TSP - TA) / (HO * (Ts - TA)) - 1 / HI - 1 / HO)
    r = size_layer(case, 0, [SkinTarget(Ts)], wall="big", step=0.01)
    assert r.wall == "big"
    assert r.thickness_exact_m == pytest.approx(L_ref, rel=2e-3)
    assert r.thickness_m == pytest.approx(math.ceil(L_ref / 0.01) * 0.01)
    i = [round(x, 9) for x in r.table["thickness_m"]].index(round(r.thickness_m, 9))
    assert r.table["all_pass"][i] and not r.table["all_pass"][i - 1]
    for L, q in zip(r.table["thickness_m"], r.table["loss"]):
        assert q == pytest.approx((TSP - TA) / (1 / HI + L / K + 1 / HO), rel=1e-3)
    # loss target: L = k ((T_sp - T_a) / q - 1/h_i - 1/h_o)
    q_lim = 100.0
    r = size_layer(case, 0, [LossTarget(q_lim)], wall="big", step=0.01)
    assert r.thickness_exact_m == pytest.approx(K * ((TSP - TA) / q_lim - 1 / HI - 1 / HO),
                                                rel=2e-3)


def test_enclosure_bad_wall_names_near_names():
    # common practice, no source: a missing wall is a clear error naming the walls
    with pytest.raises(InputError, match="'big'"):
        size_layer(_enclosure(), 0, [SkinTarget(320.0)], wall="bgi")
    with pytest.raises(InputError, match="name the wall"):
        size_layer(_enclosure(), 0, [SkinTarget(320.0)])
    with pytest.raises(InputError, match="single wall"):
        size_layer(_slab(), 0, [SkinTarget(320.0)], wall="big")


def test_candidates_each_against_closed_form():
    # Plane wall series resistances (Incropera 7th ed., eq. 3.19): with an isothermal hot face
    # L = k/h ((T_i - T_a)/(T_s - T_a) - 1): proportional to each candidate's k.
    mats = [material_from_dict(f"cand-{k}", {"k": k, "cp": 840.0, "rho": 100.0})
            for k in (0.03, 0.05)]
    bad = material_from_dict("cand-metal", {"k": 50.0, "cp": 500.0, "rho": 7800.0})
    Ts = 273.15 + 40.0
    rows = size_candidates(_slab(), 0, mats + [bad], [SkinTarget(Ts)], step=0.01, t_max=0.3)
    assert [r["material"] for r in rows] == ["cand-0.03", "cand-0.05", "cand-metal"]
    for k, row in zip((0.03, 0.05), rows):
        L = k / HO * ((473.15 - TA) / (Ts - TA) - 1.0)
        assert row["thickness_exact_m"] == pytest.approx(L, rel=2e-3)
        assert row["thickness_m"] == pytest.approx(math.ceil(L / 0.01) * 0.01)
        # loss at the answer by the same network
        assert row["loss"] == pytest.approx((473.15 - TA) / (row["thickness_m"] / k + 1 / HO
                                                             + 1e-6), rel=1e-3)
    assert rows[2]["thickness_m"] is None and "no thickness" in rows[2]["error"]


def test_design_conditions_per_target():
    # Same closed form under each target's own ambient: skin at a hot 35 degC still-air room,
    # loss at an annual mean of 10 degC (conditions of our own naming, docs/sizing.md).
    Ts, q_lim = 273.15 + 50.0, 150.0
    hot, mean = 308.15, 283.15
    tg = [SkinTarget(Ts, conditions=Conditions(ambient=hot)),
          LossTarget(q_lim, conditions=Conditions(ambient=mean))]
    r = size_layer(_slab(), 0, tg, step=0.01, t_max=0.3)
    L_skin = K / HO * ((473.15 - hot) / (Ts - hot) - 1.0)
    L_loss = K * ((473.15 - mean) / q_lim - 1 / HO)
    assert r.thickness_exact_m == pytest.approx(max(L_skin, L_loss), rel=2e-3)
    for L, T, q in zip(r.table["thickness_m"], r.table["skin_K"], r.table["loss"]):
        R = L / K + 1 / HO + 1e-6
        assert T == pytest.approx(hot + (473.15 - hot) / R / HO, abs=0.01)
        assert q == pytest.approx((473.15 - mean) / R, rel=1e-3)
    assert r.targets[0]["conditions"] == "ambient 35.0 degC"
    # without a loss target, the loss/energy columns still take the loss design conditions
    r = size_layer(_slab(), 0, [SkinTarget(Ts)], step=0.05, t_max=0.3,
                   loss_conditions=Conditions(ambient=mean))
    for L, q in zip(r.table["thickness_m"], r.table["loss"]):
        assert q == pytest.approx((473.15 - mean) / (L / K + 1 / HO + 1e-6), rel=1e-3)


def test_conductivity_design_factor():
    # L = k/h ((T_i - T_a)/(T_s - T_a) - 1) (Incropera 7th ed., eq. 3.19) with k x 1.2
    Ts = 273.15 + 40.0
    r = size_layer(_slab(), 0, [SkinTarget(Ts)], step=0.01, conductivity_factor=1.2)
    L = 1.2 * K / HO * ((473.15 - TA) / (Ts - TA) - 1.0)
    assert r.thickness_exact_m == pytest.approx(L, rel=2e-3)
    assert "k x1.2" in r.material


def test_present_value_factor_table():
    # Uniform-series present worth factor (P/A, i, n) = (1 - (1+i)^-n)/i; interest tables of
    # any engineering-economics text: (P/A, 5 %, 10) = 7.7217, (P/A, 10 %, 20) = 8.5136.
    assert present_value_factor(0.05, 10) == pytest.approx(7.7217, abs=1e-4)
    assert present_value_factor(0.10, 20) == pytest.approx(8.5136, abs=1e-4)
    assert present_value_factor(0.0, 7) == 7.0


def test_economic_thickness_hand_annuity():
    # Hand computation: q(L) = (T_i - T_a)/(L/k + 1/h) (Incropera eq. 3.19); cost per year
    # C = q * hours / eta * price; total = c_v L + C (1 - (1+i)^-n)/i; the economic thickness
    # is the stock thickness of least total.
    hours, eta, price = 8000.0 * 3600, 0.9, 0.1 / 3.6e6
    cv, n, i = 800.0, 10, 0.06
    stock = [0.02, 0.04, 0.06, 0.08, 0.1, 0.12, 0.16, 0.2]
    r = size_layer(_slab(), 0, [LossTarget(400.0)], stock=stock,
                   energy=Energy(hours=hours, efficiency=eta, price=price),
                   economics=Economics(years=n, rate=i, per_volume=cv))
    pv = (1 - (1 + i) ** -n) / i
    hand = []
    for L in stock:
        q = (473.15 - TA) / (L / K + 1 / HO + 1e-6)
        hand.append(cv * L + pv * q * hours / eta * price)
    for L, tot, ref in zip(r.table["thickness_m"], r.table["total_cost"], hand):
        assert tot == pytest.approx(ref, rel=1e-3), L
    assert r.economic["thickness_m"] == stock[hand.index(min(hand))]
    assert r.economic["pv_factor"] == pytest.approx(pv)
    # per-thickness installed costs, linearly interpolated (common practice, no source)
    e2 = Economics(years=n, rate=i, per_thickness=((0.02, 10.0), (0.2, 100.0)))
    r2 = size_layer(_slab(), 0, [LossTarget(400.0)], stock=stock,
                    energy=Energy(hours=hours, efficiency=eta, price=price), economics=e2)
    assert r2.table["installed_cost"][1] == pytest.approx(20.0)
    with pytest.raises(InputError, match="price"):
        size_layer(_slab(), 0, [LossTarget(400.0)], economics=e2)
