"""Observed order of accuracy of fdwall in space and in time.

The scheme is meant to be second order in both: vertex-centred finite volumes on a smoothly
graded mesh (the map x(s) = s - beta sin(2 pi s)/(2 pi) keeps second order under refinement)
and TR-BDF2 in time (Bank et al., IEEE Trans. CAD 4, 1985; Hosea & Shampine, Appl. Numer.
Math. 20, 1996: second order, L-stable).

How the order is measured: the error e(h) at several resolutions is fitted by least squares
to log e = p log h + c.  The band accepted is 2 +- 0.3: the fit over a few meshes still holds
some pre-asymptotic higher-order terms (h^3, h^4), the place of the largest error moves
from mesh to mesh on a graded grid, and the error estimates of a handful of runs are
themselves noisy by a few percent; a scheme that lost an order (p ~ 1) falls well outside,
a super-convergent slip well inside 2.3 would still be flagged.  (The band is a common
practice in code verification, e.g. Roache, Verification and Validation in Computational
Science and Engineering, 1998, ch. 5; from memory.)

Space: runs at a tight time tolerance (1e-6 K on a 100 K difference: time error below 1 % of
the finest mesh error) against the analytical series of tests/reference.py.
Time: a fixed mesh with steps forced by ``RunSettings(max_step=...)`` and a tolerance so loose
that no step is rejected (the tests assert this, so the steps really are max_step), against
the exact solution of the same semi-discrete system: by matrix exponential (eigen-
decomposition) for the linear case, and by scipy's Radau at rtol 1e-12 for a nonlinear case.
Both semi-discrete systems are built in tests/reference.py from the node positions alone.
"""
from __future__ import annotations

import numpy as np
import pytest
import reference as ref
from scipy.integrate import solve_ivp

from fdwall.materials import Constant, Material, Table
from fdwall.model import Case, Face, Layer, RunSettings, Wall
from fdwall.schedule import Schedule
from fdwall.solver import run

K_REF, RHOC = 1.0, 1.0e6
ALPHA = K_REF / RHOC
SOLID = Material("verification-solid", k=Constant(K_REF), cp=Constant(1000.0), rho=1000.0)
L = 0.1
T_INIT, T_FLUID = 400.0, 300.0
ORDER, BAND = 2.0, 0.3


def _order(h, err):
    """Least-squares slope of log(err) against log(h)."""
    return float(np.polyfit(np.log(h), np.log(err), 1)[0])


def _space_errors(geometry, cells_list, Bi=1.0, Fo=0.2, hole=1e-4, refine_list=None):
    h = Bi * K_REF / L
    t = Fo * L * L / ALPHA
    series = {"slab": ref.slab_theta, "cylinder": ref.cylinder_theta,
              "sphere": ref.sphere_theta}[geometry]
    errs, nodes = [], []
    variants = refine_list if refine_list is not None else cells_list
    for v in variants:
        if refine_list is not None:
            wall = Wall((Layer(SOLID, L),), refine=v)
        elif geometry == "slab":
            wall = Wall((Layer(SOLID, L, cells=v),))
        else:
            wall = Wall((Layer(SOLID, L * (1 - hole), cells=v),), shape=geometry,
                        inner_radius=hole * L)
        case = Case(run=RunSettings(duration=t, start_temperature=T_INIT, tolerance=1e-6), wall=wall,
                    inner=Face.adiabatic(), outer=Face.exchange(T_FLUID, h))
        res = run(case)
        x, T, _ = res.profile(t)
        offset = 0.0 if geometry == "slab" else hole * L
        T_ref = T_FLUID + (T_INIT - T_FLUID) * series((x + offset) / L, Fo, Bi)
        errs.append(np.max(np.abs(T - T_ref)))
        nodes.append(x.size)
    return np.array(errs), np.array(nodes)


@pytest.mark.parametrize("geometry, hole", [
    ("slab", None),
    ("cylinder", 1e-4),
    # an adiabatic pinhole of 1e-4 r_o stands for the solid body: it changes the exact
    # solution by ~(1e-4)^2 (cylinder) and ~(1e-4)^3 (sphere), far below the errors measured
    ("sphere", 1e-4),
])
def test_space_order_against_series(geometry, hole):
    cells = np.array([8, 16, 32, 64])
    errs, nodes = _space_errors(geometry, cells, hole=hole)
    assert np.all(np.diff(errs) < 0), errs                     # refinement always helps
    p = _order(1.0 / cells, errs)
    assert abs(p - ORDER) < BAND, f"{geometry}: observed space order {p:.2f}, errors {errs}"


def test_space_order_with_wall_refine():
    """The same through ``Wall(refine=...)`` on the default mesh (Bi = 10, Fo = 0.05: a steep
    profile next to the cooled face)."""
    refine = np.array([1.0, 2.0, 4.0])
    errs, nodes = _space_errors("slab", None, Bi=10.0, Fo=0.05, refine_list=refine)
    cells = nodes - 1
    assert np.all(cells[1:] == 2 * cells[:-1]), cells             # refine doubles the cells
    p = _order(1.0 / cells, errs)
    assert abs(p - ORDER) < BAND, f"observed space order {p:.2f}, errors {errs}"


def _forced(res, max_step):
    """True when every step of the run was max_step long except the start-up and landing
    steps (no rejection, largest step = max_step)."""
    return res.stats["rejected_steps"] == 0 and res.stats["max_step_s"] == pytest.approx(max_step)


def test_time_order_linear_against_matrix_exponential():
    """Plane wall, Bi = 1, 10 cells, 2000 s (Fo = 0.2): exact semi-discrete solution by the
    generalised eigen-decomposition of the finite-volume matrices (scipy.linalg.eigh)."""
    Bi, t_end = 1.0, 2000.0
    h = Bi * K_REF / L
    wall = Wall((Layer(SOLID, L, cells=10),))
    steps = np.array([10, 20, 40, 80, 160])
    errs = []
    for M in steps:
        dt = t_end / M
        case = Case(run=RunSettings(duration=t_end, start_temperature=T_INIT, tolerance=1e3, max_step=dt,
                                    output_every=t_end),
                    wall=wall, inner=Face.adiabatic(), outer=Face.exchange(T_FLUID, h))
        res = run(case)
        assert _forced(res, dt), res.stats
        C, G = ref.fv_slab_operator(res.x(), K_REF, RHOC)
        # the semi-discrete operator rebuilt from node positions is the solver's own
        np.testing.assert_allclose(res.system.capacities(), C, rtol=1e-12)
        np.testing.assert_allclose(res.system.conductances()[:-1], G, rtol=1e-12)
        T_exact = ref.linear_ode_exact(C, G, h, T_FLUID, T_INIT, [t_end])[0]
        errs.append(np.max(np.abs(res.T[-1] - T_exact)))
    errs = np.array(errs)
    p = _order(t_end / steps, errs)
    assert abs(p - ORDER) < BAND, f"observed time order {p:.2f}, errors {errs}"


def test_time_order_nonlinear_against_radau():
    """k(T) and cp(T) tables, radiation and convection to surroundings ramped 300 -> 1000 K:
    every nonlinearity of the kernel at once.  The run starts in equilibrium and the forcing
    is smooth, so the solution has no initial layer (with a sudden start the controller's own
    start-up steps, 1e-4 of the duration growing x5, leave an error floor common to all
    max_step values and the fit would measure that floor instead).  Reference: scipy Radau
    at rtol 1e-12 on the semi-discrete system rebuilt in tests/reference.py."""
    t_end, eps, hconv = 3000.0, 0.9, 10.0
    k_tab = ([250.0, 1200.0], [0.5, 1.5])
    cp_tab = ([250.0, 1200.0], [800.0, 1200.0])
    rho = 1000.0
    mat = Material("demo-nonlinear", k=Table(*k_tab), cp=Table(*cp_tab), rho=rho)
    ramp = Schedule([0.0, t_end], [300.0, 1000.0])
    wall = Wall((Layer(mat, 0.05, cells=10),))
    outer = Face(fluid_temperature=ramp, convection=hconv, emissivity=eps, surroundings_temperature=ramp)

    def flux(t, Ts):
        Te = float(ramp(t))
        return hconv * (Te - Ts) + eps * ref.SIGMA * (Te ** 4 - Ts ** 4)

    # 40..320 steps: with 10-20 steps the error is still pre-asymptotic (measured: 7.8e-3 at
    # 10 steps, 9.9e-3 at 20, then 2.7e-3, 8.2e-4, 2.1e-4, 5.2e-5 K)
    steps = np.array([40, 80, 160, 320])
    errs, f = [], None
    for M in steps:
        dt = t_end / M
        case = Case(run=RunSettings(duration=t_end, start_temperature=300.0, tolerance=10.0, max_step=dt,
                                    output_every=t_end),
                    wall=wall, inner=Face.adiabatic(), outer=outer)
        res = run(case)
        assert _forced(res, dt), res.stats
        if f is None:
            c_tab = (cp_tab[0], [rho * c for c in cp_tab[1]])
            f = ref.fv_slab_nonlinear_rhs(res.x(), k_tab, c_tab, flux)
            sol = solve_ivp(f, (0.0, t_end), np.full(res.x().size, 300.0), method="Radau",
                            rtol=1e-12, atol=1e-9)
            T_exact = sol.y[:, -1]
        errs.append(np.max(np.abs(res.T[-1] - T_exact)))
    errs = np.array(errs)
    p = _order(t_end / steps, errs)
    assert abs(p - ORDER) < BAND, f"observed time order {p:.2f}, errors {errs}"


def test_error_falls_with_tolerance_as_two_thirds_power():
    """Tolerance proportionality: with the local error per step (~ h^3) held at ``tol``,
    h ~ tol^(1/3) and the global error ~ h^2 ~ tol^(2/3) (Hairer, Norsett & Wanner, Solving
    ODEs I, §II.4; from memory).  Band +-0.2 around 2/3: a controller ignoring the tolerance
    gives ~0, one that did not reach second order ~1/2 or less."""
    Bi, t_end = 1.0, 2000.0
    h = Bi * K_REF / L
    wall = Wall((Layer(SOLID, L, cells=10),))
    tols = np.array([1e-1, 1e-2, 1e-3, 1e-4])
    errs = []
    for tol in tols:
        case = Case(run=RunSettings(duration=t_end, start_temperature=T_INIT, tolerance=tol,
                                    output_every=t_end / 4),
                    wall=wall, inner=Face.adiabatic(), outer=Face.exchange(T_FLUID, h))
        res = run(case)
        C, G = ref.fv_slab_operator(res.x(), K_REF, RHOC)
        T_exact = ref.linear_ode_exact(C, G, h, T_FLUID, T_INIT, res.times)
        errs.append(np.max(np.abs(res.T - T_exact)))
    errs = np.array(errs)
    p = _order(tols, errs)
    assert abs(p - 2.0 / 3.0) < 0.2, f"error ~ tol^{p:.2f}, errors {errs}"
    # and the global error stays within a small multiple of the requested local tolerance
    assert np.all(errs < 1.0 * tols ** (2.0 / 3.0)), errs
