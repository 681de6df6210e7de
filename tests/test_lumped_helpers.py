"""One-node helpers and the validation of fit_one_node, against closed forms."""
import math

import numpy as np
import pytest

from fdwall.analyses.lumped import (
    SIGMA_SB,
    cooldown_time,
    fit_one_node,
    lumped_cooling,
    one_node_response,
    time_constant,
    time_to_level,
)
from fdwall.errors import InputError

TA = 293.15


def _curve(P=500.0, R=0.2, C=4e4):
    t = np.linspace(0.0, 3 * R * C, 60)
    return t, one_node_response(t, P, R, C, TA, TA)


def test_fit_recovers_exact_rc():
    # Source: closed-form step response of C dT/dt = P - (T-Ta)/R (Incropera, Fundamentals of
    # Heat and Mass Transfer, 6th ed., Sec. 5.3 lumped capacitance, eq. 5.6, from memory).
    t, T = _curve()
    f = fit_one_node(t, T, 500.0, TA)
    assert f["R_K_per_W"] == pytest.approx(0.2, rel=1e-6)
    assert f["C_J_per_K"] == pytest.approx(4e4, rel=1e-6)


def test_zero_power_gives_time_constant_only():
    # Source: Newton cooling, T = Ta + (T0-Ta) exp(-t/tau) (Incropera Sec. 5.3, from memory).
    t = np.linspace(0, 3000, 40)
    T = TA + 200 * np.exp(-t / 800.0)
    f = fit_one_node(t, T, 0.0, TA)
    assert f["tau_s"] == pytest.approx(800.0, rel=1e-6)
    assert f["C_J_per_K"] is None
    f = fit_one_node(t, T, 0.0, TA, R=0.1)
    assert f["C_J_per_K"] == pytest.approx(8000.0, rel=1e-6)


@pytest.mark.parametrize("mutate, word", [
    (lambda t, T: (t[::-1].copy(), T), "strictly increasing"),
    (lambda t, T: (t, np.where(np.arange(T.size) == 5, np.nan, T)), "NaN"),
    (lambda t, T: (t, T - 273.15), "degC"),
    (lambda t, T: (t[:2], T[:2]), "at least 3"),
])
def test_fit_rejects_bad_curves(mutate, word):
    # common practice, no source: bad input raises InputError naming what is allowed
    t, T = _curve()
    t, T = mutate(t, T)
    with pytest.raises(InputError, match=word):
        fit_one_node(t, T, 500.0, TA)


def test_time_to_level_and_cooldown():
    # Source: inverse of the exponential step response (Incropera Sec. 5.3, eq. 5.5, from memory):
    # t = tau ln((T0 - Tinf)/(T - Tinf)).
    R, C, P = 0.2, 4e4, 500.0
    t = time_to_level(TA + 50, P, R, C, TA, TA)
    assert t == pytest.approx(R * C * math.log(100 / 50))
    assert one_node_response(np.array([t]), P, R, C, TA, TA)[0] == pytest.approx(TA + 50)
    assert time_to_level(TA + 150, P, R, C, TA, TA) == math.inf
    assert cooldown_time(TA + 10, R, C, TA, TA + 100) == pytest.approx(R * C * math.log(10))
    assert time_constant(R, C) == pytest.approx(8000.0)
    with pytest.raises(InputError):
        time_constant(-1, C)


def test_pure_radiation_cooling_closed_form():
    # Source: Incropera, Sec. 5.3 eq. 5.18 (from memory): with T_surr = 0,
    # C dT/dt = -eps sigma A T^4 integrates to T = T0 (1 + 3 eps sigma A T0^3 t / C)^(-1/3).
    C, A, eps, T0 = 5e3, 1.5, 0.8, 900.0
    t = np.linspace(0, 20000, 50)
    T = lumped_cooling(t, C, A, T0, 0.0, emissivity=eps, T_surr=0.0)
    exact = T0 * (1 + 3 * eps * SIGMA_SB * A * T0 ** 3 * t / C) ** (-1 / 3)
    assert np.max(np.abs(T - exact)) < 1e-5


def test_radiation_to_surroundings_implicit_closed_form():
    # Source: Incropera eq. 5.18 (from memory), T_surr > 0:
    # t = C/(4 eps sigma A Ts^3) [ln|(Ts+T)/(Ts-T)| - ln|(Ts+T0)/(Ts-T0)|
    #     + 2 (atan(T/Ts) - atan(T0/Ts))]
    C, A, eps, T0, Ts = 5e3, 1.5, 0.8, 900.0, 300.0
    t = np.linspace(0, 5000, 11)
    T = lumped_cooling(t, C, A, T0, Ts, emissivity=eps)

    def g(x):
        return math.log(abs((Ts + x) / (Ts - x))) + 2 * math.atan(x / Ts)
    k = C / (4 * eps * SIGMA_SB * A * Ts ** 3)
    for ti, Ti in zip(t, T):
        assert k * (g(Ti) - g(T0)) == pytest.approx(ti, abs=1e-3)


def test_power_law_film_closed_form():
    # Source: separable ODE (any calculus text): C dθ/dt = -a A θ^(1+n) gives
    # θ = θ0 (1 + n a A θ0^n t / C)^(-1/n); n = 1/4 is the laminar natural-convection exponent.
    C, A, a, n, th0 = 2e3, 0.5, 1.4, 0.25, 300.0
    t = np.linspace(0, 30000, 40)
    T = lumped_cooling(t, C, A, TA + th0, TA, a_n=a, n=n)
    exact = th0 * (1 + n * a * A * th0 ** n * t / C) ** (-1 / n)
    assert np.max(np.abs((T - TA) - exact)) < 1e-5
