"""Verification of fdwall's transient solver against analytical conduction solutions.

References (see tests/reference.py for the formulas and their sources):
* plane wall, long cylinder and sphere cooled by convection from a uniform start: the exact
  eigenfunction series (Carslaw & Jaeger §3.11, §7.7, §9.4; Incropera §5.6, eqs. 5.39-5.54);
* semi-infinite solid with a constant surface flux (Carslaw & Jaeger §2.9) and with a step in
  surface temperature (erf solution, Carslaw & Jaeger §2.4; Incropera eqs. 5.57-5.58).

Tolerances.  fdwall is second order in space (vertex-centred finite volumes on a smoothly
graded mesh) and in time (TR-BDF2 with error control).  With 40 cells across the layer the
mesh error of these problems, measured while writing the tests, is at most about 3e-4 of the
driving difference (Bi = 10, Fo = 0.05, the steepest profile); a local time tolerance of 1e-3 K
on a 100 K difference adds less than 1e-5.  The checks therefore ask for 0.1 % of the driving
difference (1e-3 relative), about three times the observed error, tight enough that a
first-order slip in the scheme, a wrong capacity or a wrong film term would fail them.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
import reference as ref

from fdwall.materials import Constant, Material
from fdwall.model import Case, Face, Layer, RunSettings, Wall
from fdwall.solver import run

# A made-up reference solid with round numbers: k = 1 W/m/K, rho cp = 1e6 J/m3/K, so that
# alpha = 1e-6 m2/s (of the order of a dense refractory).  Constant properties, exactly what
# the series solutions assume.
K_REF, RHO_REF, CP_REF = 1.0, 1000.0, 1000.0
ALPHA = K_REF / (RHO_REF * CP_REF)
SOLID = Material("verification-solid", k=Constant(K_REF), cp=Constant(CP_REF), rho=RHO_REF)

T_INIT, T_FLUID = 400.0, 300.0   # [K]: the driving difference is 100 K
L = 0.1                           # slab half-thickness / cylinder and sphere radius [m]
FOURIER = (0.05, 0.2, 1.0)
REL_TOL = 1e-3                    # 0.1 % of the driving difference (see module docstring)
HOLE = 1e-4                       # inner radius / outer radius of the "solid" cylinder/sphere

SERIES = {"slab": ref.slab_theta, "cylinder": ref.cylinder_theta, "sphere": ref.sphere_theta}
ENERGY = {"slab": ref.slab_energy_fraction, "cylinder": ref.cylinder_energy_fraction,
          "sphere": ref.sphere_energy_fraction}


def _cooling_case(geometry, Bi, cells, hole=HOLE, tolerance=1e-3):
    """A wall (slab half, or solid cylinder/sphere approximated by a tiny adiabatic hole)
    cooled at its outer face by convection with film coefficient h = Bi k / L."""
    h = Bi * K_REF / L
    if geometry == "slab":
        wall = Wall((Layer(SOLID, L, cells=cells),))
    else:
        ri = hole * L
        wall = Wall((Layer(SOLID, L - ri, cells=cells),), shape=geometry, inner_radius=ri)
    times = tuple(Fo * L * L / ALPHA for Fo in FOURIER)
    return Case(run=RunSettings(duration=times[-1], start_temperature=T_INIT, tolerance=tolerance,
                                snapshots=times),
                wall=wall, inner=Face.adiabatic(), outer=Face.exchange(T_FLUID, h),
                name=f"{geometry}-Bi{Bi}")


def _check_series(res, geometry, Bi, hole=HOLE):
    """Compare centre, surface and whole profile with the series at every Fourier number."""
    offset = 0.0 if geometry == "slab" else hole * L
    dT = T_INIT - T_FLUID
    for Fo in FOURIER:
        t = Fo * L * L / ALPHA
        x, T, t_found = res.profile(t)
        assert t_found == pytest.approx(t, rel=1e-12)
        xstar = (x + offset) / L
        T_ref = T_FLUID + dT * SERIES[geometry](xstar, Fo, Bi)
        err = np.abs(T - T_ref) / dT
        # centre (x* = 0) and surface (x* = 1): the values the Heisler charts tabulate
        assert err[0] < REL_TOL, f"{geometry} Bi={Bi} Fo={Fo}: centre off by {err[0]:.2e}"
        assert err[-1] < REL_TOL, f"{geometry} Bi={Bi} Fo={Fo}: surface off by {err[-1]:.2e}"
        assert err.max() < REL_TOL, f"{geometry} Bi={Bi} Fo={Fo}: profile off by {err.max():.2e}"
    # the energy lost, Q/Q0 of Incropera eq. 5.46/5.51/5.54 (all terms), against the stored
    # energy of the run (its change is negative: the body cools)
    vol = {"slab": L, "cylinder": math.pi * L * L, "sphere": 4.0 / 3.0 * math.pi * L ** 3}[geometry]
    Q0 = RHO_REF * CP_REF * vol * dT
    lost = -res.stored[-1]
    assert lost / Q0 == pytest.approx(ENERGY[geometry](FOURIER[-1], Bi), abs=REL_TOL)


def test_reference_eigenvalues_match_textbook_table():
    """The series themselves: first eigenvalue and coefficient against Incropera Table 5.1
    (6th ed., values quoted to 4 decimals; from memory)."""
    table = {  # Bi: (slab zeta1, C1), (cylinder zeta1, C1), (sphere zeta1, C1)
        0.1: ((0.3111, 1.0161), (0.4417, 1.0246), (0.5423, 1.0298)),
        1.0: ((0.8603, 1.1191), (1.2558, 1.2071), (1.5708, 1.2732)),
        10.0: ((1.4289, 1.2620), (2.1795, 1.5677), (2.8363, 1.9249)),
    }
    for Bi, rows in table.items():
        for (z_tab, c_tab), eig, coef in zip(
                rows,
                (ref.slab_eigenvalues, ref.cylinder_eigenvalues, ref.sphere_eigenvalues),
                (lambda z: 4 * np.sin(z) / (2 * z + np.sin(2 * z)), ref._cyl_coef, ref._sph_coef)):
            z = eig(Bi, 3)
            assert z[0] == pytest.approx(z_tab, abs=6e-5)
            assert coef(z[:1])[0] == pytest.approx(c_tab, abs=6e-5)
            assert np.all(np.diff(z) > 0)
    # at Fo -> 0 the series returns the uniform start (theta* = 1) away from the surface
    assert ref.slab_theta(0.5, 1e-3, 1.0) == pytest.approx(1.0, abs=1e-9)


@pytest.mark.parametrize("Bi", [0.1, 1.0, 10.0])
def test_plane_wall_convective_cooling(Bi, fp_strict):
    res = run(_cooling_case("slab", Bi, cells=40))
    _check_series(res, "slab", Bi)


@pytest.mark.parametrize("Bi", [0.5, 5.0])
def test_long_cylinder_convective_cooling(Bi):
    # A hollow cylinder with r_i = 1e-4 r_o and an adiabatic hole stands for the solid one:
    # the hole changes the exact solution by O((r_i/r_o)^2), far below the tolerance.
    res = run(_cooling_case("cylinder", Bi, cells=40))
    _check_series(res, "cylinder", Bi)


@pytest.mark.parametrize("Bi", [0.5, 5.0])
def test_sphere_convective_cooling(Bi):
    # 80 cells: at 40 the centre is within 0.12 % (Bi = 5, Fo = 0.2), just outside the 0.1 %
    # tolerance; the error falls with the square of the cell size (convergence tests)
    res = run(_cooling_case("sphere", Bi, cells=80))
    _check_series(res, "sphere", Bi)


@pytest.mark.parametrize("geometry", ["sphere", "cylinder"])
@pytest.mark.parametrize("hole", [1e-6, 1e-9])
def test_pinhole_centre_temperature(geometry, hole):
    """A solid body modelled with a pinhole: the inner-face node must give the centre value.

    Exact: a hollow sphere (cylinder) with an adiabatic hole of r_i differs from the solid
    body by ~ (r_i/r_o)^3 (^2); Incropera eqs. 5.53 / 5.50 (series, tests/reference.py).
    With the control volumes split at the arithmetic midpoint, the node on a pinhole of
    1e-6 r_o lagged by 27 % of the driving difference (sphere, 40 cells, Bi = 10, Fo = 0.2);
    tolerance here 0.5 %, with the whole profile checked as well.
    """
    case = _cooling_case(geometry, 10.0, cells=40, hole=hole)
    res = run(case)
    series = {"sphere": ref.sphere_theta, "cylinder": ref.cylinder_theta}[geometry]
    dT = T_INIT - T_FLUID
    for Fo in (0.05, 0.2):
        x, T, _ = res.profile(Fo * L * L / ALPHA)
        T_ref = T_FLUID + dT * series((x + hole * L) / L, Fo, 10.0)
        assert abs(T[0] - T_ref[0]) < 5e-3 * dT, f"{geometry} centre at Fo={Fo}"
        assert np.max(np.abs(T - T_ref)) < 5e-3 * dT, f"{geometry} profile at Fo={Fo}"


# ----------------------------------------------------------------------------- semi-infinite
def _thick_slab(cells_skin=120, cells_core=30):
    """A 0.1 m slab of the reference solid; the first 20 mm carry a fine mesh (same material in
    both layers, perfect contact, so the split only places nodes)."""
    return Wall((Layer(SOLID, 0.02, cells=cells_skin), Layer(SOLID, 0.08, cells=cells_core)))


def test_semi_infinite_constant_flux():
    """Constant flux into the inner face of a thick slab, early times (Carslaw & Jaeger §2.9).

    At t <= 100 s the penetration depth 2 sqrt(alpha t) = 20 mm is a fifth of the thickness, so
    the adiabatic back face at 0.1 m changes the exact solution by erfc(5) ~ 1e-12 (image
    source).  Tolerance: 0.2 % of the surface rise, the mesh error near the face with 0.17 mm
    first cells being below 0.1 % when measured while writing the test.
    """
    q = 2000.0
    times = (25.0, 50.0, 100.0)
    case = Case(run=RunSettings(duration=times[-1], start_temperature=T_FLUID, tolerance=1e-4,
                                snapshots=times),
                wall=_thick_slab(), inner=Face(heat_flux=q), outer=Face.adiabatic())
    res = run(case)
    for t in times:
        x, T, _ = res.profile(t)
        rise_ref = ref.semi_infinite_flux(x, t, q, K_REF, ALPHA)
        scale = rise_ref[0]
        assert abs(T[0] - T_FLUID - scale) < 2e-3 * scale, f"surface at t={t}"
        assert np.max(np.abs(T - T_FLUID - rise_ref)) < 2e-3 * scale, f"profile at t={t}"
    # all the heat put in stays in the slab: q t per unit area (first law)
    assert res.stored[-1] == pytest.approx(q * times[-1], rel=1e-6)
    assert res.face_energy[-1, 0] == pytest.approx(q * times[-1], rel=1e-9)


def _step_case(cells_skin, tolerance=1e-4, times=(50.0, 100.0), Ts=500.0, Ti=300.0,
               exact_outputs=False):
    return Case(run=RunSettings(duration=times[-1], start_temperature=Ti, tolerance=tolerance,
                                snapshots=times, exact_outputs=exact_outputs),
                wall=_thick_slab(cells_skin), inner=Face.fixed(Ts), outer=Face.adiabatic())


@pytest.mark.parametrize("exact_outputs", [False, True])
def test_semi_infinite_step_surface_temperature(exact_outputs):
    """Face held at T_s from t = 0 (erf solution, Carslaw & Jaeger §2.4; Incropera 5.57-5.58):
    the profile, the heat flow that holds the face and the heat taken in between two times.

    The step is discontinuous at t = 0, so the first few steps are inaccurate; by t = 50 s
    the profile spans some 40 of the fine cells.  Measured while writing the test: profile
    error 4e-4 of T_s - T_i (mostly from the coarser core mesh the tail reaches by 100 s),
    face flow 2e-4 (outputs landed on), heat between the two times 5e-5.  Tolerances:
    profile 0.2 %, face flow 0.5 %, heat 0.1 %.  The face flow at outputs between steps
    (the default) is checked separately in test_fixed_face_flow_between_steps.
    """
    Ts, Ti = 500.0, 300.0
    times = (50.0, 100.0)
    res = run(_step_case(120, times=times, Ts=Ts, Ti=Ti, exact_outputs=exact_outputs))
    rows = []
    for t in times:
        k = int(np.argmin(np.abs(res.times - t)))
        rows.append(k)
        x, T, _ = res.profile(t)
        T_ref = ref.semi_infinite_step(x, t, Ts, Ti, ALPHA)
        assert T[0] == Ts
        assert np.max(np.abs(T - T_ref)) < 2e-3 * (Ts - Ti), f"profile at t={t}"
        if exact_outputs:
            q_ref = ref.semi_infinite_step_flux(t, Ts, Ti, K_REF, ALPHA)
            assert res.face_flow[k, 0] == pytest.approx(q_ref, rel=5e-3), f"face flow at t={t}"
    # heat taken in between the two times: the difference of 2 k dT sqrt(t/(pi alpha))
    dE = res.face_energy[rows[1], 0] - res.face_energy[rows[0], 0]
    dE_ref = (ref.semi_infinite_step_energy(times[1], Ts, Ti, K_REF, ALPHA)
              - ref.semi_infinite_step_energy(times[0], Ts, Ti, K_REF, ALPHA))
    assert dE == pytest.approx(dE_ref, rel=1e-3)


def test_fixed_face_flow_between_steps():
    # Incropera eq. 5.58: q = k (T_s - T_i)/sqrt(pi alpha t)
    Ts, Ti, t = 500.0, 300.0, 50.0
    res = run(_step_case(120, tolerance=1e-2, Ts=Ts, Ti=Ti))
    k = int(np.argmin(np.abs(res.times - t)))
    q_ref = ref.semi_infinite_step_flux(t, Ts, Ti, K_REF, ALPHA)
    assert res.face_flow[k, 0] == pytest.approx(q_ref, rel=5e-3)


def test_semi_infinite_step_heat_taken_in_from_start():
    # Carslaw & Jaeger §2.4: heat in by time t is 2 k (T_s - T_i) sqrt(t/(pi alpha)).
    Ts, Ti, t = 500.0, 300.0, 50.0
    res = run(_step_case(30, times=(t, 100.0), Ts=Ts, Ti=Ti))
    k = int(np.argmin(np.abs(res.times - t)))
    E_ref = ref.semi_infinite_step_energy(t, Ts, Ti, K_REF, ALPHA)
    assert res.face_energy[k, 0] == pytest.approx(E_ref, rel=2e-3)
