"""Skin temperature of bare and insulated walls with correlation-based film coefficients.

fdwall's steady skin temperature is checked against independent root solves (scipy brentq)
of the surface energy balance  (T_in - T_s)/R_wall = h(T_s)(T_s - T_air) + eps*sigma*(T_s^4 - T_sur^4):
(1) with fdwall's own correlation (tests the coupling of correlation and solver), and
(2) with the correlation and air properties from independent libraries: ht's
    Nu_vertical_plate_Churchill / Nu_horizontal_cylinder_Churchill_Chu with CoolProp air
    properties at the film temperature.
"""
import numpy as np
import pytest
from scipy.optimize import brentq

from fdwall import Case, Convection, Face, Layer, RunSettings, Wall, run, solve_steady
from fdwall.materials import Constant, Material

SIGMA = 5.670374419e-8  # CODATA 2018 Stefan-Boltzmann constant


def _mat(k, name="m"):
    return Material(name=name, k=Constant(k), cp=Constant(500.0), rho=1000.0)


def _air(T):
    CP = pytest.importorskip("CoolProp.CoolProp")
    k = CP.PropsSI("L", "T", T, "P", 101325.0, "Air")
    mu = CP.PropsSI("V", "T", T, "P", 101325.0, "Air")
    rho = CP.PropsSI("D", "T", T, "P", 101325.0, "Air")
    pr = CP.PropsSI("Prandtl", "T", T, "P", 101325.0, "Air")
    return k, mu / rho, pr


def _h_ht_vertical(Ts, Ta, L):
    ht = pytest.importorskip("ht")
    Tf = 0.5 * (Ts + Ta)
    k, nu, pr = _air(Tf)
    gr = 9.80665 * (1.0 / Tf) * abs(Ts - Ta) * L ** 3 / nu ** 2
    return ht.Nu_vertical_plate_Churchill(pr, gr) * k / L


def _h_ht_hcyl(Ts, Ta, D):
    ht = pytest.importorskip("ht")
    Tf = 0.5 * (Ts + Ta)
    k, nu, pr = _air(Tf)
    gr = 9.80665 * (1.0 / Tf) * abs(Ts - Ta) * D ** 3 / nu ** 2
    return ht.Nu_horizontal_cylinder_Churchill_Chu(pr, gr) * k / D


def _slab_case(T_in, layers, conv, eps, Ta=293.15):
    wall = Wall(layers=tuple(Layer(m, t) for m, t in layers))
    return Case(run=RunSettings(duration=3600.0, start_temperature=Ta), wall=wall,
                inner=Face(fixed_temperature=T_in),
                outer=Face(fluid_temperature=Ta, convection=conv, emissivity=eps))


@pytest.mark.parametrize("T_in_C,eps", [(80.0, 0.9), (200.0, 0.9), (200.0, 0.1), (450.0, 0.8)])
def test_insulated_vertical_wall_skin_temperature(T_in_C, eps):
    """Insulated vertical wall 2 m high: 60 mm of k = 0.045 W/m/K behind a 1 mm steel sheet."""
    Ta = 293.15
    T_in = T_in_C + 273.15
    layers = [(_mat(0.045, "wool"), 0.06), (_mat(50.0, "steel"), 0.001)]
    R = 0.06 / 0.045 + 0.001 / 50.0
    conv = Convection.natural_vertical(2.0)
    res = solve_steady(_slab_case(T_in, layers, conv, eps, Ta))
    Ts = res.face_T[1]

    # (1) same correlation (fdwall's), independent root solve of the surface balance
    def bal1(T):
        return (T_in - T) / R - conv.h(T, Ta) * (T - Ta) - eps * SIGMA * (T ** 4 - Ta ** 4)
    Ts1 = brentq(bal1, Ta + 1e-6, T_in)
    assert Ts == pytest.approx(Ts1, abs=1e-6)
    # heat flow through the wall equals what leaves the skin
    assert res.face_flow[0] == pytest.approx(-res.face_flow[1], rel=1e-9)

    # (2) independent correlation implementation (ht) and air properties (CoolProp)
    def bal2(T):
        return (T_in - T) / R - _h_ht_vertical(T, Ta, 2.0) * (T - Ta) - eps * SIGMA * (T ** 4 - Ta ** 4)
    Ts2 = brentq(bal2, Ta + 1e-3, T_in)
    # air-property fits differ from CoolProp by ~1 %, which moves the skin by far less than 0.2 K
    assert Ts == pytest.approx(Ts2, abs=0.2)


@pytest.mark.parametrize("q", [300.0, 1500.0])
def test_bare_vertical_plate_with_heater_flux(q):
    """A bare 3 mm steel plate heated by a flux behind it (adiabatic back): all of q leaves
    the front face by natural convection and radiation."""
    Ta = 293.15
    conv = Convection.natural_vertical(0.5)
    eps = 0.85
    wall = Wall(layers=(Layer(_mat(45.0), 0.003),))
    case = Case(run=RunSettings(duration=3600.0, start_temperature=Ta), wall=wall, inner=Face(heat_flux=q),
                outer=Face(fluid_temperature=Ta, convection=conv, emissivity=eps))
    res = solve_steady(case)
    Ts = res.face_T[1]
    Ts_ref = brentq(lambda T: q - _h_ht_vertical(T, Ta, 0.5) * (T - Ta)
                    - eps * SIGMA * (T ** 4 - Ta ** 4), Ta + 1e-3, 2000.0)
    assert Ts == pytest.approx(Ts_ref, abs=0.3)
    # the transient run tends to the same steady state (8 h is many time constants here)
    tr = run(Case(run=RunSettings(duration=8 * 3600.0, start_temperature=Ta), wall=wall,
                  inner=Face(heat_flux=q), outer=Face(fluid_temperature=Ta, convection=conv, emissivity=eps)))
    assert tr.face_T[-1, 1] == pytest.approx(Ts, abs=0.01)
    assert abs(tr.relative_residual) < 1e-8


def test_insulated_pipe_horizontal_cylinder():
    """Insulated pipe: steel pipe at 250 degC inside, 50 mm of k = 0.05 W/m/K, outer surface
    by Churchill-Chu horizontal cylinder natural convection plus radiation."""
    Ta = 288.15
    T_in = 523.15
    ri, t_ins = 0.0545, 0.05
    ro = ri + t_ins
    eps = 0.3
    conv = Convection.horizontal_cylinder(2 * ro)
    wall = Wall(layers=(Layer(_mat(0.05), t_ins),), shape="cylinder", inner_radius=ri,
                length=1.0)
    case = Case(run=RunSettings(duration=3600.0, start_temperature=Ta), wall=wall,
                inner=Face(fixed_temperature=T_in),
                outer=Face(fluid_temperature=Ta, convection=conv, emissivity=eps))
    res = solve_steady(case)
    Ts = res.face_T[1]
    # series resistance per metre of a cylindrical shell: ln(ro/ri)/(2 pi k) (Incropera eq. 3.33)
    Rp = np.log(ro / ri) / (2 * np.pi * 0.05)
    A = 2 * np.pi * ro
    Ts_ref = brentq(lambda T: (T_in - T) / Rp - A * (_h_ht_hcyl(T, Ta, 2 * ro) * (T - Ta)
                                                      + eps * SIGMA * (T ** 4 - Ta ** 4)),
                    Ta + 1e-3, T_in)
    assert Ts == pytest.approx(Ts_ref, abs=0.2)
    q_ref = (T_in - Ts_ref) / Rp
    assert res.face_flow[0] == pytest.approx(q_ref, rel=0.01)
