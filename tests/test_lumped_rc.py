"""rc_analysis of a one-layer slab against its closed-form R, C and time constants."""
import math

import pytest

from fdwall.analyses.lumped import rc_analysis
from fdwall.materials import Constant, Material
from fdwall.model import Case, Face, Layer, RunSettings, Wall

# invented reference solid: k = 1 W/(m K), rho cp = 1e6 J/(m3 K), alpha = 1e-6 m2/s
SOLID = Material("rc-test-solid", k=Constant(1.0), cp=Constant(1000.0), rho=1000.0)
ALPHA, L, Q = 1e-6, 0.1, 500.0


def test_rc_analysis_flux_in_fixed_back():
    # Source: Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., Sec. 3.3 (from memory),
    # unit area: a flux q into x=0 of a slab held at x=L has the steady rise theta = q (L-x)/k,
    # so R = L/k; the stored energy rho c int theta dx = rho c q L^2/(2k) gives
    # C_stored = rho c L/2; C_total = rho c L; slowest mode tau_1 = 4 L^2/(pi^2 alpha); first
    # moment L^2/(3 alpha) (derived in tests/test_lumped_modes.py).
    case = Case(run=RunSettings(duration=1000.0, start_temperature=300.0),
                wall=Wall((Layer(SOLID, L, cells=40),)),
                inner=Face(heat_flux=Q), outer=Face.fixed(300.0), name="rc-slab")
    r = rc_analysis(case)
    assert r["R_K_per_W"] == pytest.approx(L / 1.0, rel=1e-6)
    assert r["C_stored_J_per_K"] == pytest.approx(1e6 * L / 2, rel=1e-6)
    assert r["C_total_J_per_K"] == pytest.approx(1e6 * L, rel=1e-9)
    assert r["tau_s"] == pytest.approx(L * 1e6 * L / 2, rel=1e-6)
    assert r["time_constants_s"][0] == pytest.approx(4 * L * L / (math.pi ** 2 * ALPHA),
                                                     rel=1e-3)
    assert r["first_moment_tau_s"] == pytest.approx(L * L / (3 * ALPHA), rel=1e-3)
    assert r["C_effective_J_per_K"] == pytest.approx(1e6 * L / 3, rel=1e-3)
    text = " ".join(r["notes"])
    assert "C_stored" in text and "radiation" in text and "k(T)" in text


def _slab_surface_rise(t, q=Q, k=1.0, m_max=400):
    # Source: Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., Sec. 3.3 (from memory):
    # flux q into x=0, x=L held, from rest: theta(0,t) = q L/k [1 - sum_m 8/((2m-1)^2 pi^2)
    # exp(-(2m-1)^2 pi^2 alpha t/(4 L^2))].  Its first moment is 32 L^2/(pi^4 alpha) *
    # sum 1/(2m-1)^4 = L^2/(3 alpha) (sum = pi^4/96).
    import numpy as np
    j = 2 * np.arange(1, m_max + 1) - 1
    w = 8 / (j ** 2 * math.pi ** 2)
    return q * L / k * (1 - (w[None, :] * np.exp(-np.outer(t, j ** 2 * math.pi ** 2 * ALPHA
                                                           / (4 * L * L)))).sum(1))


def test_logged_fit_tends_to_C_effective_not_C_stored():
    # The note's claim checked on the analytic step response above (not on the solver): a
    # one-node fit with R fixed over a long log (10 slowest time constants) lands within 3 %
    # of C_effective = rho c L/3 and far from C_stored = rho c L/2 (measured 32 670 J/K).
    import numpy as np

    from fdwall.analyses.lumped import fit_one_node
    t = np.linspace(0.0, 40000.0, 2001)
    f = fit_one_node(t, 293.15 + _slab_surface_rise(t), Q, 293.15, R=L / 1.0)
    assert f["C_J_per_K"] == pytest.approx(1e6 * L / 3, rel=0.03)
    assert f["C_J_per_K"] < 0.75 * (1e6 * L / 2)


def test_rc_analysis_held_inner_face_with_outer_film():
    # The wall of cases/example_implied_rc.py: 60 mm board (k 0.05 W/(m K), rho c 1.08e5
    # J/(m3 K)), inner face held at 90 degC, film 8 W/(m2 K) to 20 degC air, 1 m2. Closed forms
    # of the linear steady profile (Incropera Sec. 3.1 series resistances; first moment as in
    # tests/test_lumped_modes.py): per watt theta runs from a = R to b = 1/h over the board,
    # so C_effective = rho c L (a^2 + a b + b^2)/(3 R^2); the input is the inner-face heat flow.
    from fdwall.materials import material_from_dict
    board = material_from_dict("rc-board", {"k": 0.05, "cp": 900.0, "rho": 120.0})
    Lb, h = 0.060, 8.0
    case = Case(run=RunSettings(duration=3600.0, start_temperature=293.15),
                wall=Wall((Layer(board, Lb, cells=40),), area=1.0),
                inner=Face.fixed(363.15), outer=Face.exchange(293.15, h))
    r = rc_analysis(case, networks=3)
    R = Lb / 0.05 + 1 / h
    a, b = R, 1 / h
    C_eff = 120 * 900 * Lb * (a * a + a * b + b * b) / (3 * R * R)
    assert r["R_K_per_W"] == pytest.approx(R, rel=1e-9)
    assert r["R_differential_K_per_W"] == pytest.approx(R, rel=1e-9)
    assert r["C_effective_J_per_K"] == pytest.approx(C_eff, rel=2e-3)
    assert sum(p["R_K_per_W"] for p in r["networks"]["foster"]) == pytest.approx(R, rel=0.01)
