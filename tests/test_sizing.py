"""Insulation sizing against closed forms (sources named beside each check)."""
import math

import pytest
from scipy.optimize import brentq

from fdwall import Case, Face, Layer, RunSettings, Wall
from fdwall.errors import InputError
from fdwall.materials import material_from_dict
from fdwall.sizing import (
    LossTarget,
    SkinTarget,
    critical_radius_cylinder,
    critical_radius_sphere,
    size_layer,
    stock_round_up,
)

K_INS = 0.04
MAT = material_from_dict("test-ins", {"k": K_INS, "cp": 840.0, "rho": 100.0})


def _slab(h_in=1e6, h_out=10.0, T_in=473.15, T_out=293.15):
    wall = Wall(layers=(Layer(MAT, 0.05),), area=1.0)
    return Case(run=RunSettings(duration=3600.0, start_temperature=293.15), wall=wall,
                inner=Face(fluid_temperature=T_in, convection=h_in), outer=Face(fluid_temperature=T_out, convection=h_out))


def test_critical_radius_textbook():
    # Incropera, Fundamentals of Heat and Mass Transfer 7th ed., sec. 3.3.1 (cylinder r = k/h)
    # and the sphere analogue r = 2k/h (same text, problem set of sec. 3.4; from memory).
    assert critical_radius_cylinder(0.055, 5.0) == pytest.approx(0.011)
    assert critical_radius_sphere(0.055, 5.0) == pytest.approx(0.022)


def test_flat_wall_skin_closed_form():
    # Series resistances of a plane wall (Incropera 7th ed., eq. 3.19): with a fixed outer film
    # h and an isothermal hot face, T_s - T_a = (T_i - T_a) / (1 + h L / k), so
    # L = k/h * ((T_i - T_a)/(T_s - T_a) - 1).
    case = _slab()
    Ts = 273.15 + 40.0
    L_exact = K_INS / 10.0 * ((473.15 - 293.15) / (Ts - 293.15) - 1.0)
    r = size_layer(case, 0, [SkinTarget(Ts)], step=0.025)
    assert r.thickness_exact_m == pytest.approx(L_exact, rel=2e-3)
    assert r.thickness_m == pytest.approx(math.ceil(L_exact / 0.025) * 0.025)
    assert all(t["verdict"] == "pass" for t in r.targets)
    # the next smaller stock fails (common practice: the answer is the smallest passing stock)
    i = r.table["thickness_m"].index(r.thickness_m)
    assert r.table["all_pass"][i] and not r.table["all_pass"][i - 1]


def test_pipe_loss_against_log_network():
    # Hollow-cylinder conduction resistance ln(r2/r1)/(2 pi k L) plus film 1/(h 2 pi r2 L)
    # (Incropera 7th ed., eq. 3.33 and Table 3.3); root solved here with scipy brentq.
    r1, h, Ti, Ta, q_lim = 0.03, 8.0, 523.15, 293.15, 60.0
    wall = Wall(layers=(Layer(MAT, 0.02),), shape="cylinder", inner_radius=r1)
    case = Case(run=RunSettings(duration=3600.0, start_temperature=293.15), wall=wall,
                inner=Face(fluid_temperature=Ti, convection=1e6), outer=Face(fluid_temperature=Ta, convection=h))

    def q(L):
        r2 = r1 + L
        return (Ti - Ta) / (math.log(r2 / r1) / (2 * math.pi * K_INS)
                            + 1 / (h * 2 * math.pi * r2) + 1 / (1e6 * 2 * math.pi * r1)) - q_lim
    L_ref = brentq(q, 1e-4, 1.0)
    r = size_layer(case, 0, [LossTarget(q_lim, unit="W/m")], step=0.01)
    assert r.thickness_exact_m == pytest.approx(L_ref, rel=3e-3)


def test_bad_input():
    # common practice, no source: clear errors for impossible requests
    case = _slab()
    with pytest.raises(InputError, match="ambient"):
        size_layer(case, 0, [SkinTarget(280.0)])
    with pytest.raises(InputError, match="does not exist"):
        size_layer(case, 3, [SkinTarget(320.0)])
    with pytest.raises(InputError, match="increasing"):
        stock_round_up(0.03, stock=[0.05, 0.025])
    with pytest.raises(InputError, match="no thickness"):
        size_layer(case, 0, [SkinTarget(293.16)], t_max=0.1)
