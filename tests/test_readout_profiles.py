"""Read-outs between nodes through the public entries outside the solver (profiles through a
wall, the start profile of a touch-contact simulation) against closed forms at steady state.

Sources
-------
* Plane wall with k = k0 (1 + beta T): the Kirchhoff transform K(T) = int k dT is linear in x
  at steady state, K = k0 (T + beta T^2 / 2), so T(x) = (-1 + sqrt(1 + 2 beta K(x) / k0)) /
  beta (Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, 6th ed., sec. 3.2 and its
  variable-conductivity problems, from memory; Carslaw & Jaeger, Conduction of Heat in Solids,
  2nd ed., sec. 1.7 on the Kirchhoff transformation, from memory).
* Cylindrical shell: T(r) = T1 + (T2 - T1) ln(r / r1) / ln(r2 / r1) (Incropera 6th ed.,
  eq. 3.26); with k(T) the same form holds for K(T) (the heat flow through every coaxial
  surface is the same).  Spherical shell: T(r) = T1 - (T1 - T2) (1 - r1 / r) / (1 - r1 / r2)
  (Incropera 6th ed., eq. 3.35).
* Composite plane wall without contact resistance (Incropera 6th ed., sec. 3.1.2, thermal
  resistances in series): the interface temperature from scipy.optimize.brentq on the
  balance of the two layers' closed-form heat flows.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

import fdwall.analyses.safety as S
from fdwall.materials import Constant, Material, Table
from fdwall.model import Case, Face, Layer, RunSettings, Wall
from fdwall.solver import solve_steady
from fdwall.solver.readout import profile_points, read_profile, temperatures_at

# Invented demo materials (round numbers).  A fibre board whose k doubles between 300 and
# 900 K, k = K0 (1 + BETA T) with T in kelvin, tabulated at two knots (k exactly linear).
K0, BETA = 0.05, 4.0e-3            # [W/m/K], [1/K]
FIBRE = Material("demo-fibre-kT", k=Table([250.0, 1100.0], [K0 * (1 + BETA * 250.0),
                                                             K0 * (1 + BETA * 1100.0)]),
                 cp=Constant(1000.0), rho=200.0)
BRICK = Material("demo-brick", k=Constant(0.3), cp=Constant(1000.0), rho=800.0)
STEEL = Material("demo-steel", k=Constant(45.0), cp=Constant(500.0), rho=7800.0)


def K_of(T):
    """Kirchhoff integral of k = K0 (1 + BETA T) from 0 K [W/m]."""
    return K0 * (T + 0.5 * BETA * T * T)


def T_of(K):
    """Inverse of :func:`K_of` [K]."""
    return (-1.0 + np.sqrt(1.0 + 2.0 * BETA * K / K0)) / BETA


def _fixed(wall, T1, T2):
    return Case(run=RunSettings(duration=3600.0), wall=wall, inner=Face(fixed_temperature=T1),
                outer=Face(fixed_temperature=T2), name="read-out check")


def _linear(x, T, d):
    """The read-out these entries used before: linear in T and in the depth x."""
    return np.interp(d, x, T)


def test_kT_slab_profile_points_and_read_profile_are_exact():
    # closed form: K linear in x between the faces (Incropera sec. 3.2, Carslaw & Jaeger 1.7)
    Lw, T1, T2 = 0.08, 900.0, 320.0
    wall = Wall((Layer(FIBRE, Lw, cells=6),), area=1.0, name="fibre")
    ss = solve_steady(_fixed(wall, T1, T2), tol=1e-11)
    d, T = profile_points(ss.system, ss.T, 0, per_cell=5)
    assert d.size == 7 + 6 * 4 and np.all(np.diff(d) > 0)
    exact = T_of(K_of(T1) + (K_of(T2) - K_of(T1)) * d / Lw)
    assert np.max(np.abs(T - exact)) < 1e-9
    # the same from the node samples alone (the entry of the touch-contact start profile)
    dd = np.linspace(0.0, Lw, 401)
    exact = T_of(K_of(T1) + (K_of(T2) - K_of(T1)) * dd / Lw)
    got = read_profile(wall, ss.x(), ss.wall_T(), dd)
    assert np.max(np.abs(got - exact)) < 1e-9
    # and many depths at once through the system (a whole history: two equal rows)
    got2 = temperatures_at(ss.system, np.vstack([ss.T, ss.T]), 0, dd)
    assert got2.shape == (2, dd.size) and np.max(np.abs(got2 - exact)) < 1e-9
    # the check can tell: the linear read-out is off by kelvins on this mesh
    assert np.max(np.abs(_linear(ss.x(), ss.wall_T(), dd) - exact)) > 1.0


@pytest.mark.parametrize("material", [BRICK, FIBRE], ids=["constant-k", "k(T)"])
def test_cylinder_profile_follows_ln_r(material):
    # Incropera eq. 3.26 (constant k) and the same form for K(T) (Kirchhoff)
    r1, t, T1, T2 = 0.03, 0.09, 850.0, 330.0
    r2 = r1 + t
    wall = Wall((Layer(material, t, cells=5),), shape="cylinder", inner_radius=r1,
                length=1.0, name="pipe")
    ss = solve_steady(_fixed(wall, T1, T2), tol=1e-11)
    Kf = K_of if material is FIBRE else (lambda T: 0.3 * T)
    Ti = T_of if material is FIBRE else (lambda K: K / 0.3)

    def exact(d):
        r = r1 + d
        return Ti(Kf(T1) + (Kf(T2) - Kf(T1)) * np.log(r / r1) / math.log(r2 / r1))

    d, T = profile_points(ss.system, ss.T, 0, per_cell=4)
    assert np.max(np.abs(T - exact(d))) < 2e-9
    dd = np.linspace(0.0, t, 301)
    assert np.max(np.abs(read_profile(wall, ss.x(), ss.wall_T(), dd) - exact(dd))) < 2e-9
    assert np.max(np.abs(_linear(ss.x(), ss.wall_T(), dd) - exact(dd))) > 1.0


def test_sphere_read_profile_follows_inverse_r():
    # Incropera eq. 3.35
    r1, t, T1, T2 = 0.02, 0.10, 800.0, 310.0
    r2 = r1 + t
    wall = Wall((Layer(BRICK, t, cells=5),), shape="sphere", inner_radius=r1, name="ball")
    ss = solve_steady(_fixed(wall, T1, T2), tol=1e-11)
    dd = np.linspace(0.0, t, 301)
    r = r1 + dd
    exact = T1 - (T1 - T2) * (1 - r1 / r) / (1 - r1 / r2)
    assert np.max(np.abs(read_profile(wall, ss.x(), ss.wall_T(), dd) - exact)) < 2e-9
    d, T = profile_points(ss.system, ss.T, 0)
    assert np.max(np.abs(T - (T1 - (T1 - T2) * (1 - r1 / (r1 + d)) / (1 - r1 / r2)))) < 2e-9


def test_two_layer_slab_read_profile_per_layer():
    # composite plane wall (Incropera 3.1.2): fibre then brick, the interface from brentq on
    # q = (K(T1) - K(Ti)) / L1 = kb (Ti - T2) / L2
    L1, L2, T1, T2, kb = 0.05, 0.03, 900.0, 320.0, 0.3
    Ti = brentq(lambda Ti: (K_of(T1) - K_of(Ti)) / L1 - kb * (Ti - T2) / L2, T2, T1,
                xtol=1e-13)
    wall = Wall((Layer(FIBRE, L1, cells=4), Layer(BRICK, L2, cells=3)), area=1.0, name="two")
    ss = solve_steady(_fixed(wall, T1, T2), tol=1e-11)
    dd = np.linspace(0.0, L1 + L2, 321)
    exact = np.where(dd <= L1, T_of(K_of(T1) + (K_of(Ti) - K_of(T1)) * dd / L1),
                     Ti + (T2 - Ti) * (dd - L1) / L2)
    assert np.max(np.abs(read_profile(wall, ss.x(), ss.wall_T(), dd) - exact)) < 1e-8
    d, T = profile_points(ss.system, ss.T, 0, per_cell=3)
    exact_p = np.where(d <= L1, T_of(K_of(T1) + (K_of(Ti) - K_of(T1)) * d / L1),
                       Ti + (T2 - Ti) * (d - L1) / L2)
    assert np.max(np.abs(T - exact_p)) < 1e-8


def test_read_profile_across_samples_that_straddle_an_interface_reads_linearly():
    # two samples only, on the faces of a two-layer wall: nothing to say about the interface,
    # so the read-out is linear (hand calculation: midway between 400 and 300 K is 350 K)
    wall = Wall((Layer(FIBRE, 0.05), Layer(BRICK, 0.05)), area=1.0, name="two")
    got = read_profile(wall, [0.0, 0.1], [400.0, 300.0], [0.0, 0.05, 0.1])
    assert got == pytest.approx([400.0, 350.0, 300.0], abs=1e-12)


def test_touch_contact_start_profile_uses_the_kirchhoff_read_out(monkeypatch):
    # the start profile of the contact simulation between the wall's nodes, against the closed
    # form of the steady k(T) cylinder (Incropera eq. 3.26 applied to K(T)), captured at the
    # call into the solver
    r1, t, T1, T2 = 0.03, 0.04, 700.0, 340.0
    r2 = r1 + t
    wall = Wall((Layer(FIBRE, t, cells=4),), shape="cylinder", inner_radius=r1, length=1.0,
                name="pipe")
    ss = solve_steady(_fixed(wall, T1, T2), tol=1e-11)
    seen = {}
    real_run = S.solver.run

    def spy(case, *args, **kw):
        seen["T0"] = np.asarray(kw["initial"], float).copy()
        seen["x"] = kw["system"].meshes[0].x - kw["system"].meshes[0].x[0]
        return real_run(case, *args, **kw)

    monkeypatch.setattr(S.solver, "run", spy)
    S.simulate_contact(wall, ss.x(), ss.wall_T(), 1.0)
    x, T0 = seen["x"], seen["T0"]
    inside = x <= t * (1 - 1e-12)
    between = inside & ~np.isin(np.round(x, 12), np.round(ss.x(), 12))
    assert np.count_nonzero(between) > 10       # the contact mesh is finer than the wall's
    r = r1 + x[inside]
    exact = T_of(K_of(T1) + (K_of(T2) - K_of(T1)) * np.log(r / r1) / math.log(r2 / r1))
    assert np.max(np.abs(T0[inside] - exact)) < 2e-9
    # the linear read-out it replaces is visibly off here
    assert np.max(np.abs(_linear(ss.x(), ss.wall_T(), x[inside]) - exact)) > 0.5


def _steady_run(wall, T1, T2, hours=2.0):
    """A run that starts at the steady state of ``wall`` between fixed faces, so every output
    is that steady state (to the solver's round-off)."""
    from fdwall.solver import run
    ss = solve_steady(_fixed(wall, T1, T2), tol=1e-11)
    case = Case(run=RunSettings(duration=hours * 3600.0, output_every=1800.0,
                                start_temperature=ss.T.copy(), snapshots=(3600.0,)),
                wall=wall, inner=Face(fixed_temperature=T1), outer=Face(fixed_temperature=T2),
                name="invented steady pipe")
    return ss, run(case, progress=False, estimate=False)


def test_profile_plot_draws_the_ln_r_and_kT_shape_between_nodes(tmp_path, monkeypatch):
    # the drawn curve of a steady k(T) cylinder (4 cells) against the closed form (Incropera
    # eq. 3.26 applied to K(T), Kirchhoff), at every point drawn, nodes and between
    from fdwall.report import plots
    r1, t, T1, T2 = 0.03, 0.09, 850.0, 330.0
    r2 = r1 + t
    wall = Wall((Layer(FIBRE, t, cells=4),), shape="cylinder", inner_radius=r1, length=1.0,
                name="pipe")
    ss, res = _steady_run(wall, T1, T2)
    figs = []
    real = plots._save
    monkeypatch.setattr(plots, "_save", lambda fig, path: (figs.append(fig), real(fig, path))[1])
    out = plots.plot_profiles(res, tmp_path / "p.png")
    assert (tmp_path / "p.png").stat().st_size > 0 and out.endswith("p.png")
    ax = figs[-1].axes[0]
    curves = [ln for ln in ax.get_lines() if ln.get_label().startswith("t = ")]
    assert len(curves) == 1
    d = np.asarray(curves[0].get_xdata()) / 1e3
    T = np.asarray(curves[0].get_ydata()) + 273.15
    assert d.size >= 100            # many points between the 5 nodes
    exact = T_of(K_of(T1) + (K_of(T2) - K_of(T1)) * np.log((r1 + d) / r1) / math.log(r2 / r1))
    assert np.max(np.abs(T - exact)) < 1e-6
    # what straight segments between the nodes would have drawn is kelvins off
    assert np.max(np.abs(_linear(ss.x(), ss.wall_T(), d) - exact)) > 1.0
    # the nodes are drawn too, on the curve, and stay out of the legend
    dots = [ln for ln in ax.get_lines() if ln.get_label() == "_nodes"]
    assert len(dots) == 1 and np.asarray(dots[0].get_xdata()).size == 5


def test_profile_points_keep_the_step_of_a_contact_resistance():
    # composite plane wall with a contact resistance R''_tc between the layers (Incropera
    # 6th ed., sec. 3.1.4): q = (K(T1) - K(Ta)) / L1 = (Ta - Tb) / Rc = kb (Tb - T2) / L2,
    # solved for q with brentq
    L1, L2, Rc, T1, T2, kb = 0.05, 0.03, 0.05, 900.0, 320.0, 0.3

    def sides(q):
        Ta = T_of(K_of(T1) - q * L1)
        return Ta, Ta - q * Rc

    q = brentq(lambda q: kb * (sides(q)[1] - T2) / L2 - q, 1e-9, (K_of(T1) - K_of(T2)) / L1,
               xtol=1e-13, rtol=1e-15)
    Ta, Tb = sides(q)
    wall = Wall((Layer(FIBRE, L1, cells=4), Layer(BRICK, L2, cells=3)), area=1.0,
                interface_resistance=(Rc,), name="two with contact")
    ss = solve_steady(_fixed(wall, T1, T2), tol=1e-11)
    d, T = profile_points(ss.system, ss.T, 0, per_cell=4)
    at = np.flatnonzero(np.abs(d - L1) < 1e-12)
    assert at.size == 2                                   # both sides of the contact
    assert T[at[0]] == pytest.approx(Ta, abs=1e-8) and T[at[1]] == pytest.approx(Tb, abs=1e-8)
    assert Ta - Tb > 10.0                                 # a step one can see
    inner = np.arange(d.size) < at[0]
    outer = np.arange(d.size) > at[1]
    assert np.max(np.abs(T[inner] - T_of(K_of(T1) + (K_of(Ta) - K_of(T1)) * d[inner] / L1))) \
        < 1e-8
    assert np.max(np.abs(T[outer] - (Tb + (T2 - Tb) * (d[outer] - L1) / L2))) < 1e-8
    # and from the node samples alone (the interface given twice): the inner side on it
    dd = np.linspace(0.0, L1 + L2, 161)
    exact = np.where(dd <= L1, T_of(K_of(T1) + (K_of(Ta) - K_of(T1)) * dd / L1),
                     Tb + (T2 - Tb) * (dd - L1) / L2)
    assert np.max(np.abs(read_profile(wall, ss.x(), ss.wall_T(), dd) - exact)) < 1e-8


def test_histories_and_array_weights_match_single_reads():
    # the vectorised forms give what one read at a time gives (the closed-form checks above
    # tie those to Incropera sec. 3.2); weights of exactly 1 and 0 read their node alone
    from fdwall.solver.readout import read_between, temperature_at
    wall = Wall((Layer(FIBRE, 0.08, cells=6),), area=1.0, name="fibre")
    ss = solve_steady(_fixed(wall, 900.0, 320.0), tol=1e-11)
    d1, T1 = profile_points(ss.system, ss.T, 0)
    d3, T3 = profile_points(ss.system, np.vstack([ss.T] * 3), 0)
    assert np.array_equal(d1, d3) and T3.shape == (3, d1.size)
    assert np.all(T3 == T1)
    one = [float(temperature_at(ss.system, ss.T, 0, d)) for d in d1]
    assert np.max(np.abs(np.array(one) - T1)) < 1e-12
    sysm = ss.system
    w = np.array([1.0, 0.0, 0.3, 0.7])
    got = read_between(np.full(4, 900.0), np.full(4, 320.0), w, 0, sysm.m_off, sysm.mtab)
    assert got[0] == 900.0 and got[1] == 320.0
    for i in (2, 3):
        assert got[i] == pytest.approx(float(read_between(900.0, 320.0, w[i], 0, sysm.m_off,
                                                          sysm.mtab)), abs=1e-12)
        assert got[i] == pytest.approx(T_of(w[i] * K_of(900.0) + (1 - w[i]) * K_of(320.0)),
                                       abs=1e-9)
