"""The like-for-like comparison of `fdwall fit --case`: the one-node fit of fdwall's own curve
for the log's power history, and the fitted C against the length of the log."""
import numpy as np
import pytest
from scipy.optimize import curve_fit

from fdwall import Case, Face, Layer, RunSettings, Wall
from fdwall.analyses.calibrate import like_for_like
from fdwall.materials import Constant, Material

TA = 293.15
K, RHO, CP, L, A, Q = 0.5, 1000.0, 1000.0, 0.1, 1.0, 200.0


def _slab():
    m = Material(name="slab", k=Constant(K), cp=Constant(CP), rho=RHO)
    return Case(run=RunSettings(duration=3600.0, start_temperature=TA),
                wall=Wall(layers=(Layer(m, L, cells=60),), area=A),
                inner=Face(), outer=Face(fixed_temperature=TA))


def _front_face_rise(t):
    # Source: Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., sec. 3.3 (slab with a
    # constant flux at x = 0 and x = L held at zero; series by separation of variables):
    # theta(0, t) = q L/k [1 - sum_n 8/((2n-1)^2 pi^2) exp(-(2n-1)^2 pi^2 alpha t/(4 L^2))].
    alpha = K / (RHO * CP)
    n = np.arange(1, 400)[:, None]
    m = (2 * n - 1) ** 2 * np.pi ** 2
    return Q / A * L / K * (1 - np.sum(8 / m * np.exp(-m * alpha * t[None, :] / (4 * L ** 2)),
                                      axis=0))


def _reference_fit(t, rise):
    # one-node least squares of the analytic curve by scipy.optimize.curve_fit (start fixed
    # at ambient, as the network's T0 is fitted too)
    def f(tt, R, C, T0):
        return T0 + (Q * R - T0) * (1 - np.exp(-tt / (R * C)))
    p, _ = curve_fit(f, t, rise, p0=[L / (K * A), RHO * CP * A * L / 3, 0.0], maxfev=20000)
    return p[0], p[1]


def test_fitted_C_against_log_length_matches_the_analytic_slab():
    t = np.arange(0, 2 * 3600.0 + 1, 30.0)
    P = np.full(t.size, Q)
    out = like_for_like(_slab(), t, P, TA, T_amb=TA)
    # the fit of the log-driven run against the fit of the analytic curve, same samples
    R_ref, C_ref = _reference_fit(t, _front_face_rise(t))
    assert out["R_K_per_W"] == pytest.approx(R_ref, rel=0.02)
    assert out["C_J_per_K"] == pytest.approx(C_ref, rel=0.02)
    fl = out["fit_vs_length"]
    assert len(fl["length_s"]) >= 5
    dt = fl["step_s"]
    for Ln, C in zip(fl["length_s"], fl["C_J_per_K"]):
        tt = np.arange(0, Ln + dt / 2, dt)
        _, Cr = _reference_fit(tt, _front_face_rise(tt))
        assert C == pytest.approx(Cr, rel=0.03), Ln
    # a longer log gives a larger C, towards the first-moment C rho c A L/3 (Elmore-type
    # moment of an RC line with a held far end: tau = L^2/(3 alpha), R = L/(k A))
    assert all(b >= a * 0.999 for a, b in zip(fl["C_J_per_K"], fl["C_J_per_K"][1:]))
    assert fl["C_J_per_K"][0] < 0.7 * RHO * CP * A * L / 3
    assert fl["C_J_per_K"][-1] == pytest.approx(RHO * CP * A * L / 3, rel=0.25)


def test_logged_power_replaces_the_inner_face_conditions():
    # lumped capacitance (Incropera, Fundamentals of Heat and Mass Transfer, sec. 5.1): a thin
    # copper-like plate (Biot ~ 1e-4) heated by P through its inner face and cooled by a film h
    # outside is a one-node system with R = 1/(h A) and C = rho c V.  The inner face of the
    # case also has a hot fluid and a film; the logged power replaces them (the logged chamber
    # is the plate's own surroundings, not a reservoir at the case's fluid temperature)
    import numpy as np

    from fdwall import Case, Face, Layer, RunSettings, Wall
    from fdwall.analyses.calibrate import like_for_like
    from fdwall.materials import material_from_dict
    plate = material_from_dict("t-plate", {"k": 400.0, "cp": 400.0, "rho": 8900.0})
    h, A, L, P, Ta = 10.0, 1.0, 0.01, 200.0, 293.15
    case = Case(run=RunSettings(duration=3600.0, start_temperature=Ta),
                wall=Wall(layers=(Layer(plate, L),), area=A),
                inner=Face.exchange(450.0, 25.0), outer=Face.exchange(Ta, h))
    t = np.arange(0.0, 4 * 3600.0 + 1.0, 60.0)
    out = like_for_like(case, t, np.full(t.size, P), Ta, T_amb=Ta)
    assert out["R_K_per_W"] == pytest.approx(1.0 / (h * A), rel=0.01)
    assert out["C_J_per_K"] == pytest.approx(8900.0 * 400.0 * A * L, rel=0.01)
