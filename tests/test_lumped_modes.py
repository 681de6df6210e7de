"""Time constants of the linearised finite-volume wall against the analytic slab eigenvalues."""
import math

import numpy as np
import pytest
import reference as ref

from fdwall.analyses.lumped import wall_time_constants
from fdwall.materials import Constant, Material
from fdwall.model import Case, Face, Layer, RunSettings, Wall

# invented reference solid: k = 1 W/(m K), rho cp = 1e6 J/(m3 K), alpha = 1e-6 m2/s
SOLID = Material("rc-test-solid", k=Constant(1.0), cp=Constant(1000.0), rho=1000.0)
ALPHA, L = 1e-6, 0.1


def _case(inner, outer, cells):
    return Case(run=RunSettings(duration=1000.0, start_temperature=300.0),
                wall=Wall((Layer(SOLID, L, cells=cells),)), inner=inner, outer=outer,
                name="rc-modes")


def test_fixed_back_face_slowest_mode_second_order():
    # Source: Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., Sec. 3.3 (from memory):
    # a slab 0<x<L insulated at x=0 (the heated face under a flux) and held at x=L has modes
    # cos((2m-1) pi x / 2L), decay rates alpha ((2m-1) pi / 2L)^2, so tau_1 = 4 L^2/(pi^2 alpha)
    # and tau_2 = tau_1 / 9.
    exact = 4 * L * L / (math.pi ** 2 * ALPHA)
    errs = []
    for n in (8, 16, 32):
        tau = wall_time_constants(_case(Face.adiabatic(), Face.fixed(300.0), n))["time_constants_s"]
        errs.append(abs(tau[0] / exact - 1))
    assert errs[-1] < 5e-4
    assert tau[1] == pytest.approx(exact / 9, rel=5e-3)
    orders = [math.log2(errs[i] / errs[i + 1]) for i in range(2)]
    assert min(orders) > 1.8   # second order in the mesh (measured 2.0)


def test_both_faces_fixed():
    # Source: Carslaw & Jaeger Sec. 3.3 (from memory): both faces held, modes sin(m pi x/L),
    # tau_1 = L^2/(pi^2 alpha).
    tau = wall_time_constants(_case(Face.fixed(300.0), Face.fixed(300.0), 32))["time_constants_s"]
    assert tau[0] == pytest.approx(L * L / (math.pi ** 2 * ALPHA), rel=1e-3)


def test_film_face_eigenvalue():
    # Source: Incropera, Fundamentals of Heat and Mass Transfer, eq. 5.39c; Carslaw & Jaeger
    # Sec. 3.11: insulated at x=0, film h at x=L, zeta tan zeta = Bi, tau_1 = L^2/(zeta_1^2 alpha).
    Bi = 2.0
    h = Bi * 1.0 / L
    case = _case(Face.adiabatic(), Face.exchange(300.0, h), 32)
    tau = wall_time_constants(case)["time_constants_s"]
    z = ref.slab_eigenvalues(Bi, 2)
    assert tau[0] == pytest.approx(L * L / (z[0] ** 2 * ALPHA), rel=1e-3)
    assert tau[1] == pytest.approx(L * L / (z[1] ** 2 * ALPHA), rel=5e-3)
    assert np.all(np.diff(tau) < 0)


def test_first_moment_flux_step_fixed_back():
    # Source: derived from the steady profile (Carslaw & Jaeger Sec. 3.3, from memory): a flux q
    # into x=0 of a slab held at x=L gives the steady rise theta(x) = q (L - x)/k.  The first moment
    # of the step response is tau_1 = -Z'(0)/Z(0) = int rho c theta^2 dx / (q theta(0))
    # = rho c L^3/(3 k^2) * k/L = L^2/(3 alpha); R = L/(k A) and C_eff = tau_1/R = rho c A L / 3.
    r = wall_time_constants(_case(Face.adiabatic(), Face.fixed(300.0), 32))
    assert r["first_moment_tau_s"] == pytest.approx(L * L / (3 * ALPHA), rel=1e-3)
    assert r["R_heated_K_per_W"] == pytest.approx(L / 1.0, rel=1e-9)
    assert r["C_effective_J_per_K"] == pytest.approx(1e6 * L / 3, rel=1e-3)


def test_first_moment_converges_at_second_order():
    # Same source and derivation as test_first_moment_flux_step_fixed_back: tau_1 = L^2/(3 alpha).
    # The discrete first moment is a quadrature of rho c theta^2 over the nodes (theta linear),
    # so its error falls as dx^2 (measured 4.1 %, 1.06 %, 0.27 %, 0.067 % at 4, 8, 16, 32 cells).
    exact = L * L / (3 * ALPHA)
    errs = [abs(wall_time_constants(_case(Face.adiabatic(), Face.fixed(300.0), n))
                ["first_moment_tau_s"] / exact - 1) for n in (8, 16, 32)]
    assert errs[-1] < 1e-3
    orders = [math.log2(errs[i] / errs[i + 1]) for i in range(2)]
    assert min(orders) > 1.9
