"""The lumped one-node model a wall or an enclosure implies, and fitting it to a curve.

The one-node model is ``C dT/dt = P - (T - T_amb)/R``: one temperature T (the chamber, or the
hot face of a wall), one heat capacity C [J/K] and one resistance R [K/W] to ambient.  Its
step response from T0 is ``T(t) = T_amb + P R + (T0 - T_amb - P R) exp(-t / (R C))``.

From the physics of a wall, fdwall derives:

* ``R`` from the steady state: the temperature difference between the heated node and
  ambient divided by the heat flow through the wall (exact for any k(T) and films);
* ``C_stored``: the energy the walls and the chamber hold at that steady state, above ambient,
  divided by the heated node's rise above ambient.  A one-node model with this C stores the
  right energy at equilibrium (what an energy count over a warm-up gives);
* ``C_effective`` (:func:`wall_time_constants`): the one-node C with the same first moment
  of the heated node's step response; a C fitted to the heated node's temperature over a
  long heating curve tends to this one, not to C_stored;
* ``C_total``: the plain sum of all heat capacities (an upper bound on C_stored, since the
  outer layers sit closer to ambient).

A distributed wall does not follow one exponential: early on it takes heat like a
semi-infinite solid, late it relaxes with its slowest mode.  :func:`fit_one_node` fits C
(and optionally R) to a curve by least squares so the difference can be seen.
"""
from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from fdwall.analyses.networks import cauer_from_foster, cauer_step_response, foster_step_response
from fdwall.analyses.twonode import residual_acf
from fdwall.errors import InputError
from fdwall.model import Control, Face, Heater, ModelError
from fdwall.physics.convection import EXPONENT_RANGE, Convection, h_power_law
from fdwall.schedule import Schedule
from fdwall.solver.layout import FI_FIXED_T, FI_FLUID, FI_NODE, system_args

from ..solver import native as K
from ..solver.steady import solve_steady
from ..solver.transient import run as run_transient
from ..system import build_system

__all__ = ["one_node_response", "implied_rc", "fit_one_node", "time_constant",
           "time_to_level", "cooldown_time", "lumped_cooling", "wall_time_constants",
           "rc_analysis", "step_response_from_modes", "foster_fit", "rc_networks",
           "two_node_from_modes", "simulated_fit", "fit_vs_log_length", "fit_power_law_loss"]

SIGMA_SB = 5.670374419e-8  # Stefan-Boltzmann constant [W/(m2 K4)], CODATA 2018


def _check_curve(t, T, P, T_amb, where="fit_one_node"):
    """Validate a (time [s], temperature [K]) curve; raise InputError with one paragraph."""
    t = np.asarray(t, dtype=float).ravel()
    T = np.asarray(T, dtype=float).ravel()
    if t.shape != T.shape or t.size < 3:
        raise InputError(f"{where}: needs at least 3 (time, temperature) points of equal count; "
                         f"got {t.size} times and {T.size} temperatures.")
    for name, arr, unit in (("time", t, "s"), ("temperature", T, "K")):
        bad = np.flatnonzero(~np.isfinite(arr))
        if bad.size:
            kind = "NaN" if np.isnan(arr[bad[0]]) else "infinite value"
            raise InputError(f"{where}: {name} point {int(bad[0])} is a {kind} ({bad.size} "
                             f"non-finite {name} value(s) in all); every {name} must be a "
                             f"finite number in {unit}. Drop or fill the missing rows first.")
    if not (np.isfinite(P) and np.isfinite(T_amb)):
        raise InputError(f"{where}: power P={P!r} W and ambient T_amb={T_amb!r} K must be finite.")
    dt = np.diff(t)
    if np.any(dt <= 0):
        i = int(np.flatnonzero(dt <= 0)[0]) + 1
        raise InputError(f"{where}: times must be sorted and strictly increasing [s]; time "
                         f"point {i} ({t[i]:g} s) does not come after point {i - 1} "
                         f"({t[i - 1]:g} s). Sort the curve and remove duplicate times.")
    if T_amb <= 0 or T_amb > 2000:
        raise InputError(f"{where}: ambient T_amb={T_amb:g} K is not a plausible absolute "
                         f"temperature; give kelvin (e.g. 293.15 K for 20 degC).")
    if np.any(T <= 0):
        raise InputError(f"{where}: temperatures must be absolute, in kelvin, and above 0 K; "
                         f"the lowest is {T.min():g}.")
    if T_amb >= 200 and np.all(T < 200):
        raise InputError(f"{where}: every temperature is below 200 K (highest {T.max():g}) "
                         f"while ambient is {T_amb:g} K: the curve looks like degC. "
                         f"Temperatures must be in kelvin (add 273.15 to degC values).")
    return t, T


def time_constant(R, C):
    """One-node time constant ``tau = R C`` [s] from R [K/W] and C [J/K]."""
    if not (R > 0 and C > 0):
        raise InputError(f"time_constant: R={R!r} K/W and C={C!r} J/K must both be positive.")
    return float(R) * float(C)


def time_to_level(T_level, P, R, C, T_amb, T0):
    """Time [s] for the one-node model to reach ``T_level`` [K] from ``T0`` [K].

    The node heads for ``T_inf = T_amb + P R`` (P [W], R [K/W], C [J/K], temperatures [K]), so
    ``t = R C ln((T0 - T_inf) / (T_level - T_inf))``.  Returns ``inf`` when the level lies at
    or beyond ``T_inf`` (never reached) and 0 when ``T0`` is already at the level.
    """
    tau = time_constant(R, C)
    T_inf = T_amb + P * R
    a = T0 - T_inf
    b = T_level - T_inf
    if b == 0 or a == 0:
        return 0.0 if a == b else math.inf
    ratio = a / b
    if ratio <= 0:
        return math.inf  # the level lies beyond T_inf: never reached
    return tau * math.log(ratio) if ratio >= 1 else 0.0  # ratio < 1: already past the level


def cooldown_time(T_level, R, C, T_amb, T0):
    """Time [s] for an unpowered node to cool from ``T0`` to ``T_level`` [K] (R [K/W], C [J/K])."""
    return time_to_level(T_level, 0.0, R, C, T_amb, T0)


def lumped_cooling(t, C, A, T0, T_amb, h=0.0, emissivity=0.0, a_n=0.0, n=0.25, P=0.0,
                   T_surr=None, *, coefficient=None, exponent=None):
    """Lumped node with linear film, power-law film and radiation, integrated by solve_ivp.

    ``C dT/dt = P - A [h (T - T_amb) + a |T - T_amb|^n (T - T_amb)
    + emissivity sigma (T^4 - T_surr^4)]``.

    t [s] (sorted output times from 0), C [J/K], A [m2], T0, T_amb, T_surr [K] (T_surr defaults
    to T_amb), h [W/(m2 K)], P [W].  The power-law film ``h = a |T - T_amb|^n`` is the one of
    the convection model ``power_law`` (:func:`fdwall.physics.convection.h_power_law`), with
    the same names: ``coefficient`` a [W/(m2 K^(1+n))] and ``exponent`` n [-]; ``a_n`` and
    ``n`` are older names of the same two (used when ``coefficient`` / ``exponent`` are not
    given).  Returns T [K] at ``t``.
    """
    from scipy.integrate import solve_ivp
    t = np.asarray(t, dtype=float)
    Ts = T_amb if T_surr is None else T_surr
    if not (C > 0 and A > 0):
        raise InputError(f"lumped_cooling: C={C!r} J/K and A={A!r} m2 must be positive.")
    a_pl = float(a_n if coefficient is None else coefficient)
    n_pl = float(n if exponent is None else exponent)

    def rhs(_t, y):
        d = y[0] - T_amb
        q = (h * d + (h_power_law(a_pl, n_pl, d) * d if a_pl else 0.0)
             + emissivity * SIGMA_SB * (y[0] ** 4 - Ts ** 4))
        return [(P - A * q) / C]

    sol = solve_ivp(rhs, (0.0, float(t[-1])), [float(T0)], t_eval=t, method="LSODA",
                    rtol=1e-10, atol=1e-10)
    if not sol.success:  # pragma: no cover - LSODA on a scalar smooth ODE
        raise InputError(f"lumped_cooling: integration failed: {sol.message}")
    return sol.y[0]


def one_node_response(t, P, R, C, T_amb, T0):
    """Step response of the one-node model.

    Parameters
    ----------
    t : array_like
        Times since the power step [s].
    P : float
        Heater power [W].
    R : float
        Resistance to ambient [K/W].
    C : float
        Heat capacity [J/K].
    T_amb : float
        Ambient temperature [K].
    T0 : float
        Temperature at t = 0 [K].

    Returns
    -------
    ndarray
        Temperature [K].
    """
    t = np.asarray(t, dtype=float)
    Tinf = T_amb + P * R
    return Tinf + (T0 - Tinf) * np.exp(-t / (R * C))


def _ambient(case, sysm, t) -> float:
    """Ambient [K] of the lumped model at time ``t`` [s]: the chamber's room air for an
    enclosure, else the outer face's fixed or fluid temperature (InputError if it has none)."""
    if case.is_enclosure:
        return float(case.chamber.room_temperature(t))
    outer = sysm.face_i[1]     # face 1: the outer face of the single wall
    s = outer[FI_FIXED_T] if outer[FI_FIXED_T] >= 0 else outer[FI_FLUID]
    if s < 0:
        raise InputError("the lumped R/C needs an ambient: a fixed_temperature or a "
                         "fluid_temperature at the outer face, and this case has neither. "
                         "Give the outer face one of them.")
    return float(K.sched_eval(sysm.s_off, sysm.stab, s, float(t), 0.0))


def implied_rc(case, t=None) -> dict:
    """Lumped R and C that the walls (and chamber) of ``case`` imply at steady state.

    For an enclosure the heated node is the chamber and the heat flow is what the heater
    delivers (all losses: walls, leakage, extra UA).  For a single wall the heated node is the
    inner face and the heat flow is what enters it; ambient is the outer fluid (or fixed)
    temperature.

    Parameters
    ----------
    case : Case
        The problem; its heater (enclosure) or inner-face conditions (single wall) at time
        ``t`` set the steady state.
    t : float, optional
        Time whose conditions are used [s] (default ``case.run.steady_at`` or the end).

    Returns
    -------
    dict
        ``R_K_per_W`` [K/W], ``C_stored_J_per_K`` [J/K], ``C_total_J_per_K`` [J/K] (at the
        mean steady temperature), ``tau_s`` = R C_stored [s], ``T_hot_K`` and ``T_amb_K`` [K],
        ``Q_W`` the heat flow [W], ``stored_J`` the energy held above ambient [J].
    """
    sysm = build_system(case)
    st = solve_steady(case, t=t, system=sysm)
    tt = st.time
    if case.is_enclosure:
        T_hot = float(st.T[-1])
        T_amb = float(case.chamber.room_temperature(tt))
        Q = float(st.heater_power)
    else:
        T_hot = float(st.face_T[0])
        Q = float(st.face_flow[0])
        T_amb = _ambient(case, sysm, tt)
    if abs(Q) <= 0.0 or abs(T_hot - T_amb) < 1e-9:
        raise InputError("the lumped R/C needs a steady state with heat flowing: the heater "
                         "or the inner face must drive the wall above ambient at the time "
                         "the steady state is taken (run.steady_at or the end of the run).")
    R = (T_hot - T_amb) / Q
    # energy held above ambient: enthalpy at the steady state minus enthalpy at ambient
    T_amb_vec = np.full(sysm.n_unknowns, T_amb)
    Hs = sysm.enthalpy(st.T)
    Ha = sysm.enthalpy(T_amb_vec)
    stored = float(Hs[0].sum() + Hs[1].sum() - Ha[0].sum() - Ha[1].sum())
    C_stored = stored / (T_hot - T_amb)
    C_total = float(sysm.capacities(0.5 * (st.T + T_amb)).sum())
    return {"R_K_per_W": float(R), "C_stored_J_per_K": float(C_stored),
            "C_total_J_per_K": C_total, "tau_s": float(R * C_stored), "T_hot_K": T_hot,
            "T_amb_K": T_amb, "Q_W": Q, "stored_J": stored}


def fit_one_node(t, T, P, T_amb, R=None, C0=None) -> dict:
    """Fit the one-node model to a heating curve by least squares.

    Parameters
    ----------
    t : array_like
        Times since the power step [s].
    T : array_like
        Measured or computed temperatures [K]; ``T[0]`` is the start.
    P : float
        Constant heater power during the curve [W].
    T_amb : float
        Ambient temperature [K].
    R : float, optional
        Resistance to ambient [K/W], e.g. read off the equilibrium; fitted when None.
    C0 : float, optional
        Starting guess for C [J/K].

    Returns
    -------
    dict
        ``R_K_per_W`` [K/W], ``C_J_per_K`` [J/K], ``tau_s`` [s], ``rms_K`` residual [K].
    """
    from scipy.optimize import least_squares
    t, T = _check_curve(t, T, P, T_amb)
    T0 = float(T[0])
    if P == 0:
        # no power: the curve carries only tau (cooling towards T_amb); R from the caller if given
        def res0(x):
            return T_amb + (T0 - T_amb) * np.exp(-(t - t[0]) / np.exp(x[0])) - T
        sol = least_squares(res0, [np.log(max(t[-1] - t[0], 1e-9) / 3.0)], method="lm")
        tau = float(np.exp(sol.x[0]))
        rms = float(np.sqrt(np.mean(sol.fun ** 2)))
        return {"R_K_per_W": None if R is None else float(R),
                "C_J_per_K": None if R is None else tau / float(R), "tau_s": tau, "rms_K": rms,
                "note": "zero power: only the time constant follows from the curve"}
    rise = max(float(T.max() - T_amb), 1e-9)
    R_guess = R if R is not None else rise / P * 1.2
    C_guess = C0 if C0 is not None else (t[-1] - t[0]) / 3.0 / R_guess

    if R is None:
        def res(x):
            return one_node_response(t, P, np.exp(x[0]), np.exp(x[1]), T_amb, T0) - T
        sol = least_squares(res, [np.log(R_guess), np.log(C_guess)], method="lm")
        Rf, Cf = np.exp(sol.x)
    else:
        def res(x):
            return one_node_response(t, P, R, np.exp(x[0]), T_amb, T0) - T
        sol = least_squares(res, [np.log(C_guess)], method="lm")
        Rf, Cf = R, float(np.exp(sol.x[0]))
    rms = float(np.sqrt(np.mean(sol.fun ** 2)))
    return {"R_K_per_W": float(Rf), "C_J_per_K": float(Cf), "tau_s": float(Rf * Cf),
            "rms_K": rms}


def _per_row(x, n, name):
    """A scalar or one value per log row, as an array of ``n`` floats."""
    a = np.asarray(x, dtype=float)
    if a.ndim == 0:
        return np.full(n, float(a))
    a = a.ravel()
    if a.size != n:
        raise InputError(f"fit_power_law_loss: {name} has {a.size} values for {n} log rows; "
                         f"give one {name} or one per row.")
    if not np.all(np.isfinite(a)):
        i = int(np.flatnonzero(~np.isfinite(a))[0])
        raise InputError(f"fit_power_law_loss: {name} at row {i} is not a finite number; fill "
                         "or drop that row first.")
    return a


def _power_law_history(t, P, Ta, C, A, a, n, T0):
    """Temperatures [K] at ``t`` of ``C dT/dt = P - A h_power_law(a, n, T - Ta) (T - Ta)``,
    P [W] and Ta [K] held from each row to the next (scipy solve_ivp, LSODA, per run of equal
    inputs)."""
    from scipy.integrate import solve_ivp
    out = np.empty(t.size)
    out[0] = T0
    y = float(T0)
    i = 0
    while i < t.size - 1:
        j = i + 1   # rows i .. j-1 share the inputs of row i
        while j < t.size - 1 and P[j] == P[i] and Ta[j] == Ta[i]:
            j += 1
        p, ta = float(P[i]), float(Ta[i])

        def rhs(_t, yy, p=p, ta=ta):
            d = yy[0] - ta
            return [(p - A * h_power_law(a, n, d) * d) / C]

        sol = solve_ivp(rhs, (t[i], t[j]), [y], t_eval=t[i:j + 1], method="LSODA",
                        rtol=1e-9, atol=1e-9)
        if not sol.success or sol.y.shape[1] != j - i + 1:  # pragma: no cover - smooth scalar ODE
            raise InputError(f"fit_power_law_loss: integration failed: {sol.message}")
        out[i + 1:j + 1] = sol.y[0][1:]
        y = float(sol.y[0][-1])
        i = j
    return out


def fit_power_law_loss(t, T, T_amb, *, area, power=0.0, heat_capacity=None, exponent=None,
                       coefficient=None) -> dict:
    """Fit a lumped body with a power-law film loss to a log (a cooling curve, or heating).

    Model (the loss of the convection model ``power_law``, the same function
    :func:`fdwall.physics.convection.h_power_law` and the same names)::

        C dT/dt = P - A a |T - T_amb|^n (T - T_amb)

    with the power-law ``coefficient`` a [W/(m2 K^(1+n))] and ``exponent`` n [-]
    (0 <= n <= 1).  Least squares (scipy.optimize.least_squares) over the whole log of the
    temperatures integrated by scipy solve_ivp; fitted are a, n (unless ``exponent`` is
    given), C (unless ``heat_capacity`` is given) and the start temperature T0.  A log
    without power carries a A / C and n only, so it needs ``heat_capacity``.

    Parameters
    ----------
    t : array_like
        Times of the log rows [s], strictly increasing.
    T : array_like
        Measured temperatures [K].
    T_amb : float or array_like
        Ambient (fluid) temperature [K], one value or one per row (held to the next row).
    area : float
        Area of the film [m2], > 0.
    power : float or array_like, optional
        Heater power [W], one value or one per row (held to the next row); default 0.
    heat_capacity : float, optional
        Heat capacity C [J/K] when known (needed for a log without power).
    exponent : float, optional
        The exponent n [-] when known (e.g. 0.25); fitted when None.
    coefficient : float, optional
        Starting guess for a [W/(m2 K^(1+n))].

    Returns
    -------
    dict
        ``coefficient`` [W/(m2 K^(1+n))], ``coefficient_unit`` (text), ``exponent`` [-],
        ``C_J_per_K`` [J/K], ``T0_K`` [K], ``stderr`` (same keys; from the Jacobian with the
        residual variance on the effective sample size ``n_eff`` = n (1 - r1) / (1 + r1) of
        residuals with lag-1 autocorrelation ``lag1_autocorrelation`` r1), ``rms_K`` residual
        [K], ``n_points``, ``fitted`` (names of the fitted parameters), ``convection``, the
        :class:`fdwall.physics.convection.Convection` of kind ``power_law`` to put on a face,
        ``model_K`` the fitted curve at ``t`` [K] and ``residual_K`` = log - model [K].
    """
    from scipy.optimize import least_squares

    t = np.asarray(t, dtype=float).ravel()
    T = np.asarray(T, dtype=float).ravel()
    Ta = _per_row(T_amb, t.size, "T_amb")
    P = _per_row(power, t.size, "power")
    t, T = _check_curve(t, T, float(P[0]), float(Ta[0]), where="fit_power_law_loss")
    if not (np.isfinite(area) and area > 0):
        raise InputError(f"fit_power_law_loss: area = {area!r} m2 must be a finite number > 0.")
    lo, hi = EXPONENT_RANGE
    if exponent is not None and not (lo <= float(exponent) <= hi):
        raise InputError(f"fit_power_law_loss: exponent = {exponent!r} is outside {lo:g} .. "
                         f"{hi:g} [-].")
    if heat_capacity is not None and not (np.isfinite(heat_capacity) and heat_capacity > 0):
        raise InputError(f"fit_power_law_loss: heat_capacity = {heat_capacity!r} J/K must be "
                         "a finite number > 0.")
    if heat_capacity is None and not np.any(P > 0):
        raise InputError("fit_power_law_loss: the log has no heater power, so it carries only "
                         "a A / C and the exponent; give heat_capacity [J/K] (e.g. from the "
                         "masses and specific heats) to separate the coefficient a.")
    A = float(area)
    d = T - Ta
    dTdt = np.gradient(T, t)
    n0 = 0.25 if exponent is None else float(exponent)
    if heat_capacity is not None:
        C0 = float(heat_capacity)
    else:  # early slope, when the loss is still small: C ~ P / (dT/dt)
        k = max(2, t.size // 20)
        C0 = float(np.median(P[:k]) / max(np.median(np.abs(dTdt[:k])), 1e-12))
    if coefficient is not None:
        a0 = float(coefficient)
    else:
        loss = P - C0 * dTdt
        ok = np.abs(d) > 0.05 * np.max(np.abs(d))
        est = loss[ok] / (A * np.abs(d[ok]) ** n0 * d[ok])
        est = est[np.isfinite(est) & (est > 0)]
        a0 = float(np.median(est)) if est.size else 1.0
    names = ["coefficient"] + (["exponent"] if exponent is None else []) \
        + (["C_J_per_K"] if heat_capacity is None else []) + ["T0_K"]

    def unpack(x):
        i = 0
        a = math.exp(x[i])
        i += 1
        n = float(exponent) if exponent is not None else float(x[i])
        i += exponent is None
        C = float(heat_capacity) if heat_capacity is not None else math.exp(x[i])
        i += heat_capacity is None
        return a, n, C, float(x[i])

    x0 = [math.log(a0)] + ([n0] if exponent is None else []) \
        + ([math.log(C0)] if heat_capacity is None else []) + [float(T[0])]
    lb = [-np.inf] + ([lo] if exponent is None else []) \
        + ([-np.inf] if heat_capacity is None else []) + [-np.inf]
    ub = [np.inf] + ([hi] if exponent is None else []) \
        + ([np.inf] if heat_capacity is None else []) + [np.inf]

    def res(x):
        a, n, C, T0 = unpack(x)
        return _power_law_history(t, P, Ta, C, A, a, n, T0) - T

    sol = least_squares(res, x0, bounds=(lb, ub), x_scale="jac")
    a, n, C, T0 = unpack(sol.x)
    # residual variance on the effective sample size n (1 - r1) / (1 + r1) of residuals with
    # lag-1 autocorrelation r1, as the R/C fits of fdwall.analyses.twonode do
    r1 = float(residual_acf(-sol.fun, 1)[0])
    r1c = min(max(r1, 0.0), 0.99)
    n_eff = t.size * (1 - r1c) / (1 + r1c)
    s2 = float(sol.fun @ sol.fun) / max(n_eff - len(x0), 1.0)
    try:
        cov = np.linalg.inv(sol.jac.T @ sol.jac) * s2
        se_x = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    except np.linalg.LinAlgError:
        se_x = np.full(len(x0), np.nan)
    se = {}
    for name, sx in zip(names, se_x):
        se[name] = float(a * sx) if name == "coefficient" else \
            float(C * sx) if name == "C_J_per_K" else float(sx)
    return {"coefficient": float(a), "coefficient_unit": f"W/(m2 K^{1.0 + n:.4g})",
            "exponent": float(n), "C_J_per_K": float(C), "T0_K": float(T0), "stderr": se,
            "rms_K": float(np.sqrt(np.mean(sol.fun ** 2))), "n_points": int(t.size),
            "lag1_autocorrelation": r1, "n_eff": float(n_eff),
            "fitted": names, "convection": Convection.power_law(a, n),
            "model_K": T + sol.fun, "residual_K": -sol.fun}


def wall_time_constants(case, T_op=None, t=None, n_modes=None) -> dict:
    """Thermal time constants [s] of the linearised finite-volume system of ``case``.

    The system is linearised at the operating point ``T_op`` [K] (one temperature per unknown;
    default the steady state at time ``t`` [s]): the solver's own Jacobian dF/dT there holds
    the conduction links with k(T) at that profile and the films and radiation linearised at
    it.  With G = -(J + J^T)/2 (the symmetric part; exact for constant k) [W/K] and the
    capacities C = dH/dT [J/K], the generalised eigenproblem ``G v = lambda C v``
    (scipy.linalg.eigh) gives decay rates lambda [1/s]; nodes held by a fixed temperature are
    removed.  Returns ``time_constants_s`` (1/lambda, slowest first), ``T_op_K`` and
    ``n_unknowns``.  Heater power is taken as independent of temperature.
    """
    from scipy.linalg import eigh


    sys_ = build_system(case)
    nun = sys_.n_unknowns
    if T_op is None:
        T_op = solve_steady(case, t=t, system=sys_).T
    T = np.array(T_op, dtype=float)
    if T.shape != (nun,):
        raise InputError(f"wall_time_constants: T_op needs one temperature per unknown ({nun}) "
                         f"in K, got shape {T.shape}.")
    tt = 0.0 if t is None else float(t)
    F, Cap, H, Jd, Jl, Ju, Jcol, Jrow = (np.zeros(nun) for _ in range(8))
    nf = sys_.face_i.shape[0]
    qf, hc, hr = np.zeros(nf), np.zeros(nf), np.zeros(nf)
    extra = np.zeros(4)
    K.assemble(T, tt, 0.0, 0.0, *system_args(sys_), F, Cap, H, Jd, Jl, Ju, Jcol, Jrow, qf,
                     hc, hr, extra)
    N = sys_.n_nodes
    J = np.diag(Jd.copy())
    for i in range(1, N):
        J[i, i - 1] = Jl[i]
    for i in range(N - 1):
        J[i, i + 1] = Ju[i]
    if sys_.has_chamber:
        J[:N, N] = Jcol[:N]
        J[N, :N] = Jrow[:N]
    keep = np.setdiff1d(np.arange(nun), np.asarray(sys_.dirich_node, dtype=int))
    G = -0.5 * (J + J.T)[np.ix_(keep, keep)]
    lam, V = eigh(G, np.diag(Cap[keep]))  # V^T C V = I
    pos = lam > 0
    lam, V = lam[pos], V[:, pos]
    order = np.argsort(lam)
    lam, V = lam[order], V[:, order]
    tau = 1.0 / lam
    if n_modes is not None:
        tau = tau[:n_modes]
    out = {"time_constants_s": tau, "T_op_K": T, "n_unknowns": int(nun)}
    # first moment of the heated node's step response.  The heated node is the chamber when
    # there is one, otherwise the inner-face node of the first wall.  With Z(s) = e^T (G + s C)^-1 e,
    # R = Z(0) = e^T G^-1 e and the first moment tau_1 = int (1 - T(t)/T(inf)) dt = -Z'(0)/Z(0)
    # = (G^-1 e)^T C (G^-1 e) / R; C_eff = tau_1 / R is the one-node C with that first moment.
    heated = nun - 1 if sys_.has_chamber else int(sys_.face_i[0, FI_NODE])
    if heated in keep:
        e = (keep == heated).astype(float)
        x = np.linalg.solve(G, e)
        R = float(e @ x)
        tau1 = float(x @ (Cap[keep] * x)) / R
        # modal expansion Z(s) = sum_i v_i[e]^2/(lambda_i + s): the step response to 1 W is
        # sum_i r_i (1 - exp(-t/tau_i)) with r_i = v_i[e]^2 tau_i [K/W] (the exact Foster form)
        r_modes = V[keep == heated, :][0] ** 2 / lam
        out.update({"heated_node": heated, "R_heated_K_per_W": R, "first_moment_tau_s": tau1,
                    "C_effective_J_per_K": tau1 / R,
                    "mode_R_K_per_W": r_modes[:len(tau)]})
    return out


def _rc_notes(rc, modes, case) -> list:
    """Plain-language readings of the R and C numbers (which C a logged fit should match)."""
    tau1 = modes.get("first_moment_tau_s")
    slow = float(modes["time_constants_s"][0]) if len(modes["time_constants_s"]) else None
    notes = [
        "A one-node C fitted to the heated node's temperature over a long heating log (run "
        "to near equilibrium, R fitted or fixed) tends to C_effective: the one-node model "
        "with that C has the same first moment (mean delay) of its step response as the "
        "wall. Compare a logged fit with C_effective; a short log gives a smaller C still.",
        "C_stored is the energy the wall holds above ambient at the steady state per kelvin "
        "of the heated node's rise; it is what an energy count gives (heater energy in minus "
        "losses, over a warm-up), not what a temperature-curve fit gives, and it is larger "
        "than C_effective because the heat sits away from the heated node.",
        "C_total is every heat capacity summed; it is an upper bound, because the outer layers "
        "sit closer to ambient and hold less of the rise.",
    ]
    if slow is not None and tau1 is not None:
        notes.append(f"The wall is not one exponential: its slowest time constant is "
                     f"{slow:.4g} s, the first-moment time constant {tau1:.4g} s and R C_stored "
                     f"{rc['tau_s']:.4g} s; a one-node fit can only match one of them.")
    Rd = modes.get("R_heated_K_per_W")
    if Rd is not None and abs(Rd / rc["R_K_per_W"] - 1) > 0.005:
        notes.append(f"The time constants, C_effective and the networks come from the wall "
                     f"linearised at the operating point: their resistance is the differential "
                     f"dT/dQ there, {Rd:.4g} K/W, not the secant R = (T_hot - T_amb)/Q = "
                     f"{rc['R_K_per_W']:.4g} K/W; the two differ because radiation, k(T) or "
                     f"a film that strengthens with the temperature difference (natural "
                     f"convection, a power-law film) make the loss grow faster than the "
                     f"temperature rise.")
    notes.append("R and C hold at this operating point only: radiation loss grows roughly as "
                 "T^3, a natural-convection film as dT^(1+n) (n about 1/4 to 1/3) and k(T) of "
                 "insulation rises with temperature, so R falls as the wall runs hotter, and "
                 "cp(T) moves C. Compare a fit with the numbers at the temperatures the log "
                 "ran at, or fit the loss law itself (fdwall fit --model power-law).")
    return notes


def _pure_flux(face) -> bool:
    """True when a face has nothing but (at most) an imposed flux."""
    return (face.fixed_temperature is None and face.fluid_temperature is None and face.convection is None
            and face.emissivity is None)


def _flux_inner(case, flux):
    """``case`` with its inner face replaced by the imposed flux ``flux`` [W/m2] (a number or
    a Schedule), touch marks kept."""
    f = case.inner
    return replace(case, inner=Face(heat_flux=flux, touch=f.touch, surface_class=f.surface_class))


def rc_analysis(case, t=None, networks=None) -> dict:
    """Lumped R/C of ``case`` from the physics of its walls, with its time constants.

    Gathers :func:`implied_rc` (at the steady state at time ``t`` [s], default as there) and
    :func:`wall_time_constants` (linearised at that same steady state); with ``networks`` = N
    also the N-pair Foster and Cauer networks of the heated node (:func:`rc_networks`).  For a
    single wall the input is the heat flow into the inner face, as in :func:`implied_rc`: the
    inner face's own conditions (a fixed temperature, a film or radiation to a hot fluid) are
    the source side and are replaced by that flow for the linearisation, so the time
    constants are those of the wall heated by a flux at its inner face.

    Returns
    -------
    dict
        ``R_K_per_W`` [K/W], ``C_stored_J_per_K``, ``C_total_J_per_K`` [J/K], ``tau_s``
        = R C_stored [s], ``T_hot_K``, ``T_amb_K`` [K], ``Q_W`` [W], ``stored_J`` [J],
        ``time_constants_s`` (list, slowest first) [s], ``first_moment_tau_s`` [s] and
        ``C_effective_J_per_K`` [J/K] of the heated node (None when it is held at a fixed
        temperature), ``R_differential_K_per_W`` (dT/dQ of the linearised wall) [K/W],
        ``mode_R_K_per_W`` (list, the heated node's resistance in each mode)
        [K/W], ``two_node`` (:func:`two_node_from_modes`), ``n_unknowns``, ``notes`` (list of
        plain-language strings) and, with ``networks``, ``networks`` (the dict of
        :func:`rc_networks`).
    """

    out = implied_rc(case, t=t)
    st = solve_steady(case, t=t, system=build_system(case))
    lin = case
    if not case.is_enclosure and case.heater is None and not _pure_flux(case.inner):
        # the single wall's input is the heat flow into its inner face: linearise the wall
        # driven by that flow (the inner face's own fixed temperature, film or radiation is
        # the source side, as in implied_rc), at the same steady profile
        lin = _flux_inner(case, out["Q_W"] / case.wall.inner_area)
    modes = wall_time_constants(lin, T_op=st.T, t=st.time)
    out.update({"time_constants_s": [float(x) for x in modes["time_constants_s"]],
                "first_moment_tau_s": modes.get("first_moment_tau_s"),
                "C_effective_J_per_K": modes.get("C_effective_J_per_K"),
                "n_unknowns": modes["n_unknowns"]})
    out["R_differential_K_per_W"] = modes.get("R_heated_K_per_W")
    if "mode_R_K_per_W" in modes:
        out["mode_R_K_per_W"] = [float(x) for x in modes["mode_R_K_per_W"]]
    out["notes"] = _rc_notes(out, modes, case)
    if lin is not case:
        out["notes"].insert(0, "This single wall's inner face is not driven by a plain heat "
                            "flux; the wall's input is taken as the heat flow into that face "
                            f"({out['Q_W']:.4g} W at the steady state), so its time constants, "
                            "C_effective and networks are those of the wall heated by a flux at "
                            "its inner face, the face's own held temperature, film or radiation "
                            "being the source side.")
    if "mode_R_K_per_W" in modes:
        out["two_node"] = two_node_from_modes(modes)
    if networks is not None:
        if "mode_R_K_per_W" not in modes:
            raise InputError("rc networks: the heated node is held at a fixed temperature, so "
                             "there is no impedance from heat flow to its temperature; give "
                             "the inner face a heat flux or a film instead.")
        out["networks"] = rc_networks(modes, int(networks))
    return out


def step_response_from_modes(t, time_constants_s, mode_R_K_per_W):
    """Rise [K] of the heated node at times ``t`` [s] after a 1 W step, from its modes.

    ``sum_i r_i (1 - exp(-t/tau_i))`` with ``time_constants_s`` tau_i [s] and
    ``mode_R_K_per_W`` r_i [K/W] (as :func:`wall_time_constants` returns them).
    """
    t = np.asarray(t, dtype=float)
    tau = np.asarray(time_constants_s, dtype=float)
    r = np.asarray(mode_R_K_per_W, dtype=float)
    return (r[None, :] * -np.expm1(-np.outer(t, 1.0 / tau))).sum(axis=1)


def foster_fit(time_constants_s, mode_R_K_per_W, n_terms=4, per_decade=4, t=None):
    """N-term Foster network (positive R_i, C_i) fitted to the heated node's step response.

    The target is :func:`step_response_from_modes` at ``t`` [s] (default 200 log-spaced times
    from a tenth of the fastest mode to ten times the slowest).  Positive resistances on a
    grid of log-spaced time constants (``per_decade`` per decade over the span of ``t``) are
    found by scipy.optimize.nnls; adjacent terms are then merged (R added, tau the R-weighted
    mean, which keeps the first moment sum R tau), each time the pair whose merge refits
    best, until ``n_terms`` remain, and the R are refitted by nnls on the merged time
    constants.  Finally the time constants are polished by scipy.optimize.least_squares on
    their logarithms (with the R from nnls at each step), kept when that fits better.

    Returns
    -------
    dict
        ``R_K_per_W`` and ``C_J_per_K`` (arrays, C_i = tau_i/R_i), ``tau_s`` [s] (slowest
        first), ``max_error_K_per_W`` the largest deviation from the target over ``t`` [K/W]
        and ``max_error_fraction`` that divided by the total resistance [-].
    """
    from scipy.optimize import nnls
    tau_m = np.asarray(time_constants_s, dtype=float)
    r_m = np.asarray(mode_R_K_per_W, dtype=float)
    if tau_m.size == 0 or tau_m.shape != r_m.shape or int(n_terms) < 1:
        raise InputError("foster_fit: needs one resistance [K/W] per time constant [s] and "
                         f"n_terms >= 1; got {tau_m.size} and {r_m.size}, n_terms={n_terms!r}.")
    if t is None:
        t = np.geomspace(tau_m.min() / 10.0, tau_m.max() * 10.0, 200)
    t = np.asarray(t, dtype=float)
    y = step_response_from_modes(t, tau_m, r_m)
    n_grid = max(int(np.ceil(np.log10(t[-1] / t[0]) * per_decade)) + 1, 2)
    grid = np.geomspace(t[0], t[-1], n_grid)

    def basis(taus):
        return -np.expm1(-np.outer(t, 1.0 / np.asarray(taus)))

    R, _ = nnls(basis(grid), y)
    keep = R > 0
    taus, Rs = list(grid[keep]), list(R[keep])
    while len(taus) > int(n_terms):
        best = None
        for i in range(len(taus) - 1):  # greedy: the merge whose refit fits best
            Rn = Rs[i] + Rs[i + 1]
            tn = ((Rs[i] * taus[i] + Rs[i + 1] * taus[i + 1]) / Rn if Rn > 0
                  else math.sqrt(taus[i] * taus[i + 1]))
            tt = taus[:i] + [tn] + taus[i + 2:]
            Rt, res = nnls(basis(tt), y)
            if best is None or res < best[0]:
                best = (res, tt, list(Rt))
        _, taus, Rs = best
        # a refit may zero a term: drop it (its time constant carries nothing)
        pos = [j for j, r in enumerate(Rs) if r > 0]
        if pos:
            taus, Rs = [taus[j] for j in pos], [Rs[j] for j in pos]
    taus = np.asarray(taus)
    Rs, res0 = nnls(basis(taus), y)
    # polish: move the time constants too (variable projection: R by nnls for given taus,
    # log taus by scipy.optimize.least_squares); kept only when it fits better
    from scipy.optimize import least_squares

    def vp(x):
        A = basis(np.exp(x))
        return A @ nnls(A, y)[0] - y

    try:
        sol = least_squares(vp, np.log(taus), method="trf", x_scale=1.0, max_nfev=200)
        tp = np.exp(sol.x)
        Rp, resp = nnls(basis(tp), y)
        if resp < res0 and np.all(np.isfinite(tp)):
            taus, Rs = tp, Rp
    except (ValueError, RuntimeError, np.linalg.LinAlgError):  # pragma: no cover - keep merge
        pass
    order = np.argsort(taus)
    taus, Rs = taus[order], Rs[order]
    ok = Rs > 0
    taus, Rs = taus[ok][::-1], Rs[ok][::-1]
    err = float(np.max(np.abs(basis(taus) @ Rs - y))) if taus.size else float(np.max(y))
    return {"R_K_per_W": Rs, "C_J_per_K": taus / Rs, "tau_s": taus,
            "max_error_K_per_W": err, "max_error_fraction": err / float(r_m.sum())}


def rc_networks(modes, n_terms, t=None) -> dict:
    """N-pair Foster and Cauer networks of the heated node, with their step responses.

    Parameters
    ----------
    modes : dict
        :func:`wall_time_constants` output (``time_constants_s`` [s], ``mode_R_K_per_W``
        [K/W]): the full (linearised finite-volume) model of the heated node.
    n_terms : int
        Number of resistor-capacitor pairs, 1 to 12 [-].
    t : array_like, optional
        Times [s] over which the networks are fitted and checked (default 200 log-spaced
        times from a tenth of the fastest mode to ten times the slowest).

    Returns
    -------
    dict
        ``foster``: list of ``{"R_K_per_W", "C_J_per_K", "tau_s"}`` (slowest first, from
        :func:`foster_fit`); ``cauer``: list of ``{"R_K_per_W", "C_J_per_K"}`` (stage 1 at
        the heated node, from :func:`fdwall.analyses.networks.cauer_from_foster` in exact
        arithmetic); ``t_s`` [s] and the rise after a 1 W step from rest of the full model
        (``full_K_per_W``), the Foster network (``foster_K_per_W``) and the Cauer ladder
        (``cauer_K_per_W``) [K/W]; ``foster_max_error_K_per_W`` and
        ``cauer_max_error_K_per_W`` (largest deviation from the full model over ``t``),
        ``max_error_fraction`` (the larger of the two over the full model's resistance) [-],
        ``cauer_foster_max_K_per_W`` (largest Cauer-Foster difference, round-off only),
        ``R_total_K_per_W`` (the full model's resistance) and ``n_terms``.
    """
    n = int(n_terms)
    if not 1 <= n <= 12:
        raise InputError(f"rc networks: the number of resistor-capacitor pairs must be 1 to "
                         f"12, got {n_terms!r}.")
    tau_m = np.asarray(modes["time_constants_s"], dtype=float)
    r_m = np.asarray(modes["mode_R_K_per_W"], dtype=float)
    if t is None:
        t = np.geomspace(tau_m.min() / 10.0, tau_m.max() * 10.0, 200)
    t = np.asarray(t, dtype=float)
    f = foster_fit(tau_m, r_m, n_terms=n, t=t)
    c = cauer_from_foster(f["R_K_per_W"], f["C_J_per_K"])
    full = step_response_from_modes(t, tau_m, r_m)
    yf = foster_step_response(t, f["R_K_per_W"], f["C_J_per_K"])
    yc = cauer_step_response(t, c["R_K_per_W"], c["C_J_per_K"])
    ef = float(np.max(np.abs(yf - full)))
    ec = float(np.max(np.abs(yc - full)))
    Rt = float(r_m.sum())
    return {
        "n_terms": n,
        "foster": [{"R_K_per_W": float(r), "C_J_per_K": float(cc), "tau_s": float(tt)}
                   for r, cc, tt in zip(f["R_K_per_W"], f["C_J_per_K"], f["tau_s"])],
        "cauer": [{"R_K_per_W": float(r), "C_J_per_K": float(cc)}
                  for r, cc in zip(c["R_K_per_W"], c["C_J_per_K"])],
        "t_s": t, "full_K_per_W": full, "foster_K_per_W": yf, "cauer_K_per_W": yc,
        "foster_max_error_K_per_W": ef, "cauer_max_error_K_per_W": ec,
        "max_error_fraction": max(ef, ec) / Rt,
        "cauer_foster_max_K_per_W": float(np.max(np.abs(yc - yf))),
        "R_total_K_per_W": Rt,
    }


def two_node_from_modes(modes, t=None) -> dict:
    """The two-node model (chamber plus wall) the physics implies: the 2-stage Cauer ladder.

    The two-node model ``C1 dT1/dt = P - (T1 - T2)/R12``, ``C2 dT2/dt = (T1 - T2)/R12 -
    (T2 - T_amb)/R2`` is a Cauer ladder of two stages, so the 2-pair Foster network fitted to
    the heated node's step response (:func:`rc_networks`) turned into its ladder gives the
    physics' values of the parameters a two-node fit of a log estimates.  For a single wall
    the "chamber" node is the heated inner face and what the wall holds near it.

    Parameters
    ----------
    modes : dict
        :func:`wall_time_constants` output (``time_constants_s`` [s], ``mode_R_K_per_W``
        [K/W]).
    t : array_like, optional
        Times of the fit [s] (as :func:`rc_networks`).

    Returns
    -------
    dict
        ``C_chamber_J_per_K``, ``C_wall_J_per_K`` [J/K], ``R_chamber_wall_K_per_W``,
        ``R_wall_ambient_K_per_W`` [K/W] (None when one pair already fits: then only
        ``C_chamber_J_per_K`` and ``R_wall_ambient_K_per_W`` of the one node are given),
        ``max_error_fraction`` [-] of its step response against the full model.
    """
    net = rc_networks(modes, 2, t=t)
    c = net["cauer"]
    if len(c) < 2:
        return {"C_chamber_J_per_K": c[0]["C_J_per_K"], "C_wall_J_per_K": None,
                "R_chamber_wall_K_per_W": None, "R_wall_ambient_K_per_W": c[0]["R_K_per_W"],
                "max_error_fraction": net["max_error_fraction"]}
    return {"C_chamber_J_per_K": c[0]["C_J_per_K"], "R_chamber_wall_K_per_W": c[0]["R_K_per_W"],
            "C_wall_J_per_K": c[1]["C_J_per_K"], "R_wall_ambient_K_per_W": c[1]["R_K_per_W"],
            "max_error_fraction": net["max_error_fraction"]}


# ---------------------------------------------------------------- like-for-like comparison

def _power_steps(power, duration):
    """A power history -> (step times [s], powers [W]): power[i] holds from times[i] on."""
    if np.ndim(power) == 0:
        tp, pp = np.array([0.0]), np.array([float(power)])
    else:
        try:
            tp, pp = (np.asarray(x, dtype=float).ravel() for x in power)
        except (TypeError, ValueError):
            raise InputError("simulated_fit: the power history must be a power [W] or a pair "
                             "(times [s], powers [W]) of equal length.") from None
    if tp.size == 0 or tp.shape != pp.shape or not (np.all(np.isfinite(tp))
                                                     and np.all(np.isfinite(pp))):
        raise InputError("simulated_fit: the power history needs equally many finite times "
                         f"[s] and powers [W]; got {tp.size} times and {pp.size} powers.")
    if tp[0] != 0.0 or np.any(np.diff(tp) <= 0):
        raise InputError("simulated_fit: the power history's times must start at 0 s and "
                         "increase strictly (power[i] holds from times[i] to times[i+1]).")
    if np.any(pp < 0):
        raise InputError("simulated_fit: heater power must not be negative [W].")
    if not (duration > 0 and math.isfinite(duration)):
        raise InputError(f"simulated_fit: the log length must be a positive time [s], got "
                         f"{duration!r}.")
    keep = tp < duration
    return tp[keep], pp[keep]


def _one_node_history(t, tp, pp, R, C, T_amb, T0):
    """One-node temperature [K] at sorted times ``t`` [s] from ``T0`` [K] at ``t[0]`` under the
    piecewise-constant power ``pp[i]`` [W] from ``tp[i]`` [s] on (exact propagation)."""
    tau = R * C
    grid = np.union1d(t, tp[(tp > t[0]) & (tp < t[-1])])
    idx = np.searchsorted(tp, grid[:-1], side="right") - 1
    P = pp[np.clip(idx, 0, None)]
    a = np.exp(-np.diff(grid) / tau)
    Tinf = T_amb + P * R
    T = np.empty(grid.size)
    T[0] = T0
    for k in range(grid.size - 1):
        T[k + 1] = Tinf[k] + (T[k] - Tinf[k]) * a[k]
    return T[np.searchsorted(grid, t)]


def _fit_history(t, T, tp, pp, T_amb, R=None):
    """Least-squares one-node fit (scipy least_squares, log parameters) under a power history.

    Returns R [K/W], C [J/K], tau [s], rms [K] and, with R free, the correlation of the log
    parameters from the Jacobian [-] (near +-1: R and C are not separately identifiable).
    """
    from scipy.optimize import least_squares
    T0 = float(T[0])
    Pmax = float(np.max(pp)) if pp.size else 0.0
    rise = max(float(T.max() - T_amb), 1e-6)
    R0 = R if R is not None else rise / max(Pmax, 1e-12) * 1.2
    C0 = max(t[-1] - t[0], 1.0) / 3.0 / R0
    if R is None:
        def res(x):
            return _one_node_history(t, tp, pp, math.exp(x[0]), math.exp(x[1]), T_amb, T0) - T
        sol = least_squares(res, [math.log(R0), math.log(C0)], method="lm", x_scale="jac")
        Rf, Cf = (float(v) for v in np.exp(sol.x))
        corr = None
        try:
            cov = np.linalg.inv(sol.jac.T @ sol.jac)
            corr = float(cov[0, 1] / math.sqrt(cov[0, 0] * cov[1, 1]))
        except np.linalg.LinAlgError:  # pragma: no cover - singular Jacobian
            corr = 1.0
    else:
        def res(x):
            return _one_node_history(t, tp, pp, R, math.exp(x[0]), T_amb, T0) - T
        sol = least_squares(res, [math.log(C0)], method="lm", x_scale="jac")
        Rf, Cf, corr = float(R), float(math.exp(sol.x[0])), None
    return {"R_K_per_W": Rf, "C_J_per_K": Cf, "tau_s": Rf * Cf,
            "rms_K": float(np.sqrt(np.mean(sol.fun ** 2))), "corr_logR_logC": corr}


def _driven_case(case, tp, pp, duration, initial, n_points):
    """``case`` with its heat input replaced by the power history (no control) and a run of
    ``duration`` [s] from a uniform ``initial`` [K] with ``n_points`` outputs."""
    kt, kv = [], []
    for i in range(tp.size):
        kt += [tp[i], tp[i + 1] if i + 1 < tp.size else max(duration, tp[i])]
        kv += [pp[i], pp[i]]
    run = replace(case.run, duration=float(duration), start_temperature=float(initial),
                  output_every=float(duration) / n_points, snapshots=(), watch=(),
                  steady_at=None)
    try:
        if case.is_enclosure or case.heater is not None:
            sched = Schedule(kt, kv)
            if case.heater is None:
                heater = Heater(power=sched, placement="chamber")
            else:
                heater = replace(case.heater, power=sched, voltage_ratio=1.0, resistance_coefficient=0.0)
            return replace(case, run=run, heater=heater, control=Control())
        A = case.wall.inner_area
        return replace(_flux_inner(case, Schedule(kt, [v / A for v in kv])), run=run)
    except ModelError as exc:  # pragma: no cover - the power history was validated above
        raise InputError(f"simulated_fit: {exc}") from None


def _simulate(case, power, duration, n_points, initial=None, progress=False):
    tp, pp = _power_steps(power, duration)
    sysm0 = build_system(case)
    T_amb = _ambient(case, sysm0, 0.0)
    T_start = T_amb if initial is None else float(initial)
    c2 = _driven_case(case, tp, pp, duration, T_start, int(n_points))
    res = run_transient(c2, progress=progress, estimate=False)
    T = res.chamber_T if res.system.has_chamber else res.face_T[:, 0]
    return c2, res, np.asarray(res.times, dtype=float), np.asarray(T, dtype=float), tp, pp, T_amb


def _implied_for_compare(case, power, duration):
    """rc_analysis numbers that a fit is compared with: at the steady state of ``case`` when
    it has heat flowing there, else under the largest power of the history [W] held."""
    try:
        r = rc_analysis(case)
    except ValueError:
        tp, pp = _power_steps(power, duration)
        if not np.any(pp > 0):
            raise InputError("simulated_fit: the power history is zero throughout and the "
                             "case has no heat flowing at its steady state, so there is no R "
                             "or C to compare with; give a power.") from None
        r = rc_analysis(_driven_case(case, np.array([0.0]), np.array([pp.max()]), duration,
                                     case.run.start_temperature if np.ndim(case.run.start_temperature) == 0
                                     else 293.15, 10))
    return {k: r.get(k) for k in ("R_K_per_W", "C_stored_J_per_K", "C_total_J_per_K",
                                  "C_effective_J_per_K", "tau_s", "first_moment_tau_s",
                                  "T_hot_K", "T_amb_K", "Q_W")} | {
        "slowest_time_constant_s": r["time_constants_s"][0] if r["time_constants_s"] else None}


def simulated_fit(case, power, duration, *, R=None, initial=None, n_points=400,
                  progress=False) -> dict:
    """The one-node fit that fdwall's own simulated curve gives, like for like with a log.

    ``case`` is run from a uniform start (default its ambient) with its heat input replaced by
    the power history (no control: the heater of an enclosure, else a flux into the inner face
    of a single wall, which replaces that face's own conditions), for the log length ``duration``; the heated node's curve (chamber, or
    inner face) is fitted by the one-node model under the same power history, with R and C
    free and with R fixed (``R`` [K/W], default the implied R of ``case``: the field practice
    of reading R off the equilibrium).

    Parameters
    ----------
    case : Case
        The problem (its steady state, at ``run.steady_at`` or the end, gives the implied
        values compared with).
    power : float or (array_like, array_like)
        Heater power [W], constant, or a pair (times [s], powers [W]): ``powers[i]`` holds from
        ``times[i]`` to ``times[i+1]`` (times from 0, strictly increasing).
    duration : float
        Log length [s].
    R : float, optional
        Resistance held fixed in the second fit [K/W].
    initial : float, optional
        Uniform start temperature [K] (default the ambient).
    n_points : int
        Number of curve points [-].
    progress : bool or None
        Progress bar of the run (None: only for long runs), as ``fdwall.run``.

    Returns
    -------
    dict
        ``R_K_per_W`` [K/W], ``C_J_per_K`` [J/K], ``tau_s`` [s], ``rms_K`` [K] and
        ``corr_logR_logC`` [-] of the free fit; ``C_R_fixed_J_per_K`` [J/K] and
        ``rms_R_fixed_K`` [K] of the fit with R fixed at ``R_fixed_K_per_W``; ``implied``
        (R_K_per_W, C_stored_J_per_K, C_total_J_per_K, C_effective_J_per_K, tau_s,
        first_moment_tau_s, slowest_time_constant_s, T_hot_K, T_amb_K, Q_W of ``case``);
        ``t_s`` [s], ``T_K`` [K] the simulated curve, ``T_amb_K`` [K], ``duration_s`` [s],
        ``energy_residual_relative`` [-] of the run.
    """
    implied = _implied_for_compare(case, power, float(duration))
    c2, res, t, T, tp, pp, T_amb = _simulate(case, power, float(duration), n_points, initial,
                                             progress)
    free = _fit_history(t, T, tp, pp, T_amb)
    Rfix = float(implied["R_K_per_W"] if R is None else R)
    fixed = _fit_history(t, T, tp, pp, T_amb, R=Rfix)
    return {"R_K_per_W": free["R_K_per_W"], "C_J_per_K": free["C_J_per_K"],
            "tau_s": free["tau_s"], "rms_K": free["rms_K"],
            "corr_logR_logC": free["corr_logR_logC"], "R_fixed_K_per_W": Rfix,
            "C_R_fixed_J_per_K": fixed["C_J_per_K"], "rms_R_fixed_K": fixed["rms_K"],
            "implied": implied, "t_s": t, "T_K": T, "T_amb_K": T_amb,
            "duration_s": float(duration),
            "energy_residual_relative": float(res.relative_residual)}


def fit_vs_log_length(case, power, lengths, *, R=None, points_per_log=200,
                      progress=False) -> dict:
    """How the one-node C fitted to fdwall's own simulated curve depends on the log length.

    One run of ``case`` under the power history (as :func:`simulated_fit`) to the longest of
    ``lengths`` [s]; each shorter log is the start of that curve (the same as a shorter run,
    the model being causal) and is fitted with R and C free and with R fixed.

    Parameters
    ----------
    case : Case
        The problem.
    power : float or (array_like, array_like)
        Power history as in :func:`simulated_fit` [W], [s].
    lengths : sequence of float
        Log lengths [s], positive.
    R : float, optional
        Resistance for the fixed-R fits [K/W] (default the implied R).
    points_per_log : int
        Curve points in the shortest log (at least) [-].
    progress : bool or None
        Progress bar of the run (None: only for long runs), as ``fdwall.run``.

    Returns
    -------
    dict
        ``rows``: one dict per length with ``log_length_s`` [s], ``C_fit_J_per_K``,
        ``R_fit_K_per_W``, ``corr_logR_logC``, ``C_fit_R_fixed_J_per_K`` [J/K], ``rms_K``,
        ``rms_R_fixed_K`` [K] and the ratios ``C_R_fixed_over_C_effective``,
        ``C_R_fixed_over_C_stored``, ``C_R_fixed_over_C_total`` [-], ``below_slowest_tau``
        (True when the log is shorter than the slowest time constant: equilibrium not in
        sight, R and C of the free fit not separately determined); ``implied`` (as in
        :func:`simulated_fit`); ``closest`` the implied C nearest the fixed-R fit of the
        longest log (``"C_effective"``, ``"C_stored"`` or ``"C_total"``);
        ``R_fixed_K_per_W`` [K/W]; ``energy_residual_relative`` [-] of the run.
    """
    L = sorted(float(x) for x in lengths)
    if not L or L[0] <= 0 or not all(math.isfinite(x) for x in L):
        raise InputError("fit_vs_log_length: the log lengths must be positive times [s].")
    n_points = int(min(max(points_per_log * L[-1] / L[0], 400), 20000))
    implied = _implied_for_compare(case, power, L[-1])
    c2, res, t, T, tp, pp, T_amb = _simulate(case, power, L[-1], n_points, progress=progress)
    Rfix = float(implied["R_K_per_W"] if R is None else R)
    rows = []
    for Ln in L:
        m = t <= Ln * (1 + 1e-9)
        if m.sum() < 5:
            raise InputError(f"fit_vs_log_length: the log length {Ln:g} s is too short for "
                             f"the curve spacing ({t[1] - t[0]:g} s); give fewer decades.")
        free = _fit_history(t[m], T[m], tp, pp, T_amb)
        fixed = _fit_history(t[m], T[m], tp, pp, T_amb, R=Rfix)
        Cf = fixed["C_J_per_K"]
        rows.append({"log_length_s": Ln, "C_fit_J_per_K": free["C_J_per_K"],
                     "R_fit_K_per_W": free["R_K_per_W"],
                     "corr_logR_logC": free["corr_logR_logC"], "rms_K": free["rms_K"],
                     "C_fit_R_fixed_J_per_K": Cf, "rms_R_fixed_K": fixed["rms_K"],
                     "C_R_fixed_over_C_effective": Cf / implied["C_effective_J_per_K"]
                     if implied["C_effective_J_per_K"] else None,
                     "C_R_fixed_over_C_stored": Cf / implied["C_stored_J_per_K"],
                     "C_R_fixed_over_C_total": Cf / implied["C_total_J_per_K"],
                     "below_slowest_tau": bool(implied["slowest_time_constant_s"] is not None
                                               and Ln < implied["slowest_time_constant_s"])})
    last = rows[-1]["C_fit_R_fixed_J_per_K"]
    cands = {k: implied[f"{k}_J_per_K"] for k in ("C_effective", "C_stored", "C_total")
             if implied.get(f"{k}_J_per_K")}
    closest = min(cands, key=lambda k: abs(math.log(last / cands[k])))
    return {"rows": rows, "implied": implied, "closest": closest, "R_fixed_K_per_W": Rfix,
            "energy_residual_relative": float(res.relative_residual)}
