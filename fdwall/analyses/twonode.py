"""Lumped networks fitted to heating logs: one node or two (chamber + wall), sensor lag.

Analyses layer (beside :mod:`fdwall.analyses.logs`, which reads the logs).  SI inside: time
[s], temperature [K], power [W], resistance [K/W], capacity [J/K].

Models (state x, input u = (P, T_amb), held constant over each log step [t_i, t_i+1)):

* ``one-node``: ``C dT/dt = P - (T - T_amb)/R``;
* ``two-node``: the chamber (C_chamber) is coupled through R_chamber_wall to one wall node
  (C_wall), which loses heat through R_wall_ambient:
  ``C1 dT1/dt = P - (T1 - T2)/R12`` and ``C2 dT2/dt = (T1 - T2)/R12 - (T2 - T_amb)/R2``;
* a sensor reading the chamber through a first-order lag and a dead time:
  ``tau_s dTs/dt = T1 - Ts`` and the logged value at t is Ts(t - dead_time).

The linear system x' = A x + B u is propagated exactly between log rows through the
eigen-decomposition of A (real eigenvalues for these networks; an augmented matrix exponential
when it is defective); the tests check it against scipy.linalg.expm.

Fits are nonlinear least squares (scipy.optimize.least_squares) over the whole record.
Intervals: standard errors from the Jacobian with the residual variance inflated for lag-1
autocorrelation (effective sample size), and beside them a block bootstrap of the residuals
whitened by their AR(1) fit and re-coloured after resampling (linearised: one Gauss-Newton
step from the fit per resample).
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit
from scipy.optimize import least_squares

from fdwall.errors import InputError

__all__ = ["MODELS", "network_matrices", "propagate", "simulate", "fit_log",
           "block_length", "bootstrap_errors", "residual_acf", "time_to_level", "predict"]

MODELS = ("one-node", "two-node")

#: |correlation| above which two fitted parameters are reported as not separately identifiable.
CORRELATION_LIMIT = 0.95
#: Two-sided level of the intervals.
LEVEL = 0.95

#: Physical parameters of each model, in order, with their units (all positive, fitted in log).
PARAMS = {"one-node": (("R", "K_per_W"), ("C", "J_per_K")),
          "two-node": (("C_chamber", "J_per_K"), ("C_wall", "J_per_K"),
                       ("R_chamber_wall", "K_per_W"), ("R_wall_ambient", "K_per_W")),
          # a log with zero power throughout: the one-node model's time constant only
          "time-constant": (("tau", "s"),)}


def network_matrices(model, p, tau_sensor=None):
    """State matrix A [1/s] and input matrix B (columns P [K/J], T_amb [1/s]) of a model.

    ``p`` maps parameter names of :data:`PARAMS` to values (K/W, J/K); ``tau_sensor`` [s] adds
    the sensor state last.  The output (chamber or sensor) is the last state with a sensor,
    else the first.
    """
    if model == "time-constant":
        A = [[-1.0 / p["tau"]]]
        B = [[0.0, 1.0 / p["tau"]]]
    elif model == "one-node":
        R, C = p["R"], p["C"]
        A = [[-1.0 / (R * C)]]
        B = [[1.0 / C, 1.0 / (R * C)]]
    elif model == "two-node":
        C1, C2, R12, R2 = p["C_chamber"], p["C_wall"], p["R_chamber_wall"], p["R_wall_ambient"]
        A = [[-1.0 / (R12 * C1), 1.0 / (R12 * C1)],
             [1.0 / (R12 * C2), -1.0 / (R12 * C2) - 1.0 / (R2 * C2)]]
        B = [[1.0 / C1, 0.0], [0.0, 1.0 / (R2 * C2)]]
    else:
        raise InputError(f"model {model!r} is not known; allowed: " + ", ".join(MODELS))
    A, B = np.array(A, float), np.array(B, float)
    if tau_sensor:
        n = A.shape[0]
        A2 = np.zeros((n + 1, n + 1))
        A2[:n, :n] = A
        A2[n, 0], A2[n, n] = 1.0 / tau_sensor, -1.0 / tau_sensor
        A, B = A2, np.vstack([B, np.zeros((1, 2))])
    return A, B


@njit(cache=True)
def _modal_run(lam, z0, wu, dt):  # pragma: no cover - compiled
    """Exact modal recursion z_j <- exp(lam_j dt) z_j + (exp(lam_j dt)-1)/lam_j (W u)_j.

    lam (n,) [1/s], z0 (n,), wu (m, n) [K/s], dt (m,) [s] -> Z (m+1, n).
    """
    m, n = wu.shape
    Z = np.empty((m + 1, n))
    Z[0] = z0
    for k in range(m):
        for j in range(n):
            x = lam[j] * dt[k]
            e = math.exp(x)
            phi = dt[k] * (math.expm1(x) / x if x != 0.0 else 1.0)
            Z[k + 1, j] = e * Z[k, j] + phi * wu[k, j]
    return Z


def propagate(A, B, t, U, x0):
    """States [K] at the times ``t`` [s] of x' = A x + B u with u = U[k] held on [t_k, t_k+1).

    A (n, n) [1/s], B (n, 2), U (len(t), 2) (P [W], T_amb [K]), x0 (n,) [K] at t[0].
    Returns an array (len(t), n).
    """
    t = np.asarray(t, float)
    U = np.asarray(U, float)
    dt = np.diff(t)
    lam, V = np.linalg.eig(A)
    ok = np.all(np.abs(lam.imag) <= 1e-12 * np.abs(lam.real).max()) and \
        np.linalg.cond(V) < 1e8
    if ok:
        lam, V = lam.real, V.real
        Vi = np.linalg.inv(V)
        wu = U[:-1] @ (Vi @ B).T
        Z = _modal_run(lam, Vi @ np.asarray(x0, float), np.ascontiguousarray(wu), dt)
        return Z @ V.T
    # defective or oscillatory A (e.g. a sensor lag equal to the node's time constant):
    # Van Loan's augmented exponential per step, exp([[A, B u],[0, 0]] dt)
    from scipy.linalg import expm
    n = A.shape[0]
    X = np.empty((t.size, n))
    X[0] = x0
    M = np.zeros((n + 1, n + 1))
    M[:n, :n] = A
    for k in range(dt.size):
        M[:n, n] = B @ U[k]
        E = expm(M * dt[k])
        X[k + 1] = E[:n, :n] @ X[k] + E[:n, n]
    return X


def simulate(model, p, t, P, T_amb, x0, tau_sensor=None, dead_time=0.0):
    """Logged temperature [K] at ``t`` [s] of a model (see :func:`network_matrices`).

    ``x0`` [K]: the initial states (chamber, then wall for two-node); a sensor starts at the
    chamber's temperature.  With a ``dead_time`` [s] the value logged at t is the sensor at
    t - dead_time, the states being held at ``x0`` before t[0].
    """
    t = np.asarray(t, float)
    U = np.column_stack([np.asarray(P, float), np.asarray(T_amb, float)])
    A, B = network_matrices(model, p, tau_sensor)
    x0 = list(np.atleast_1d(np.asarray(x0, float)))
    if tau_sensor:
        x0.append(x0[0])
    out = A.shape[0] - 1 if tau_sensor else 0
    if not dead_time:
        return propagate(A, B, t, U, x0)[:, out]
    te = t - dead_time
    inside = te > t[0]
    grid = np.union1d(t, te[inside])
    k = np.clip(np.searchsorted(t, grid, side="right") - 1, 0, t.size - 1)
    X = propagate(A, B, grid, U[k], x0)[:, out]
    y = np.full(t.size, x0[-1] if tau_sensor else x0[0])
    y[inside] = X[np.searchsorted(grid, te[inside])]
    return y


def residual_acf(r, nlags=10):
    """Sample autocorrelation of residuals ``r`` at lags 1..nlags (Box & Jenkins estimator)."""
    r = np.asarray(r, float) - np.mean(r)
    d = float(np.sum(r * r))
    if d <= 0:
        return np.zeros(nlags)
    return np.array([np.sum(r[k:] * r[:-k]) / d if k < r.size else 0.0
                     for k in range(1, nlags + 1)])


def block_length(n, r1):
    """Block length [samples] of the moving-block bootstrap.

    The larger of n^(1/3) (the usual order for variance estimates, Kuensch 1989 / Hall,
    Horowitz and Jing 1995) and twice the integrated autocorrelation time (1 + r1)/(1 - r1)
    of an AR(1) process with lag-1 correlation r1, at most n/5 (common practice, no source).
    """
    r1 = min(max(r1, 0.0), 0.99)
    L = max(n ** (1.0 / 3.0), 3.0 * (1 + r1) / (1 - r1))
    return int(max(1, min(math.ceil(L), n // 5)))


def bootstrap_errors(e, n_boot, rng, r1, L, scale=1.0):
    """Resampled residual series [K] (n_boot, n) by the pre-whitened moving-block bootstrap.

    The residuals ``e`` are whitened by their AR(1) fit (coefficient ``r1``, clipped to
    0..0.99), the innovations resampled in moving blocks of ``L`` samples, and the series
    rebuilt through the same AR(1) filter from a stationary start ("pre-whitening and
    post-blackening": A. C. Davison and D. V. Hinkley, Bootstrap Methods and their
    Application, Cambridge 1997, sec. 8.2.3).  The filter restores the slow part of the noise
    that a fit takes out of its own residuals; the blocks keep what AR(1) misses.  ``scale``
    multiplies the result (the caller's allowance for the samples the fit used up).
    """
    from scipy.signal import lfilter
    e = np.asarray(e, float) - np.mean(e)
    n = e.size
    phi = min(max(float(r1), 0.0), 0.99)
    u = e[1:] - phi * e[:-1]
    u = u - u.mean()
    m = u.size
    L = int(max(1, min(L, m)))
    nb = int(math.ceil(n / L))
    st = rng.integers(0, m - L + 1, size=(n_boot, nb))
    idx = (st[:, :, None] + np.arange(L)[None, None, :]).reshape(n_boot, -1)[:, :n]
    U = u[idx]
    # stationary start: e0 with the variance of the AR(1) series, sigma_u^2/(1 - phi^2)
    U[:, 0] = rng.choice(e, size=n_boot)   # the first value is a residual itself
    return scale * lfilter([1.0], [1.0, -phi], U, axis=1)


def _exp(x):
    """exp(x) as a float, inf beyond the double range (an interval of a lost parameter)."""
    return math.exp(x) if x < 700.0 else math.inf


def _check(t, T, P, Ta):
    for nm, a in (("time", t), ("temperature", T), ("power", P), ("ambient", Ta)):
        if not np.all(np.isfinite(a)):
            raise InputError(f"fit: {nm} holds non-finite values; allowed: finite numbers")
    if not (t.shape == T.shape == P.shape == Ta.shape) or t.size < 5:
        raise InputError(f"fit: needs at least 5 rows of time, temperature, power and ambient "
                         f"of equal length; got {t.size}, {T.size}, {P.size}, {Ta.size}")
    if np.any(np.diff(t) <= 0):
        raise InputError("fit: times are not strictly increasing; allowed: sorted, unique times")
    if np.nanmax(T) < 150.0:
        raise InputError(f"fit: temperatures up to {np.max(T):.1f} K look like degC given as "
                         "kelvin; allowed: K (or a degC column header)")


def _lsq(res, x0, lb, ub):
    return least_squares(res, x0, bounds=(lb, ub), method="trf", x_scale="jac",
                         xtol=1e-10, ftol=1e-10, gtol=1e-10, max_nfev=2000)


def fit_log(t, T, P, T_amb, *, model="one-node", sensor_lag=None, dead_time=None,
            n_boot=400, seed=0, compare_without_lag=True) -> dict:
    """Fit a lumped network to a log by nonlinear least squares, with two kinds of interval.

    Parameters
    ----------
    t, T, P, T_amb : array_like
        Times [s] (strictly increasing), logged temperature [K], heater power [W] held on
        [t_i, t_i+1), ambient [K].
    model : {"one-node", "two-node"}
    sensor_lag : None, float or "fit"
        First-order sensor time constant [s]: None (no lag), a given value, or fitted.
    dead_time : None, float or "fit"
        Sensor dead time [s]: None (none), given, or fitted (between 0 and a fifth of the log).
    n_boot : int
        Resamples of the moving-block bootstrap (0: none).
    seed : int
        Seed of the bootstrap's random generator (results are reproducible).
    compare_without_lag : bool
        With a sensor lag or dead time, also fit without them and report the bias of C.

    Returns
    -------
    dict
        ``R_K_per_W`` (one-node R, two-node R_chamber_wall + R_wall_ambient),
        ``C_J_per_K`` (one-node C, two-node C_chamber + C_wall) with ``..._stderr_...``,
        ``tau_s`` (one-node R C; two-node the slow time constant), ``rms_K``,
        ``lag1_autocorrelation``, ``n_eff``, ``parameters`` (name -> value, stderr,
        ``ci95`` from the effective-n standard error, ``boot_ci95`` and ``boot_stderr`` from
        the bootstrap, ``unit``), ``correlation`` (matrix over ``parameter_names``),
        ``residual_acf`` (lags 1..10), ``block_length``, ``identifiable`` (bool), ``warnings``,
        ``model_K`` (the fitted curve at ``t``), ``residual_K`` (data - model).
    """
    t, T, P, Ta = (np.asarray(a, float) for a in (t, T, P, T_amb))
    _check(t, T, P, Ta)
    if model not in MODELS + ("time-constant",):
        raise InputError(f"fit: model {model!r} is not known; allowed: " + ", ".join(MODELS))
    zero_power = bool(np.all(P == 0))
    if zero_power and model == "two-node":
        raise InputError("fit: power is zero throughout, so the two-node model cannot be "
                         "fitted; allowed: a log with heating power, or the one-node model "
                         "(zero power gives its time constant only)")
    if zero_power:
        model = "time-constant"
    span = float(t[-1] - t[0])
    dt_med = float(np.median(np.diff(t)))
    names = [n for n, _ in PARAMS[model]]
    units = dict(PARAMS[model])
    # starting values: R from the largest rise over the mean power, C from a third of the log
    rise = max(float(np.max(T) - np.mean(Ta)), 1.0)
    R0 = rise / max(float(np.max(np.abs(P))), 1e-9)
    C0 = max(span / 3.0 / R0, 1e-6)
    if model == "time-constant":
        starts = [[math.log(span / 3.0)]]
    elif model == "one-node":
        starts = [[math.log(R0), math.log(C0)]]
    else:
        starts = [[math.log(fc * C0), math.log((1 - fc) * C0), math.log(fr * R0),
                   math.log((1 - fr) * R0)] for fc, fr in ((0.2, 0.2), (0.05, 0.5), (0.5, 0.1))]
    n_phys = len(names)
    n_init = 2 if model == "two-node" else 1
    names_x = names + ["T0"] + (["T0_wall"] if model == "two-node" else [])
    units.update(T0="K", T0_wall="K")
    fit_tau = sensor_lag == "fit"
    fit_dead = dead_time == "fit"
    if fit_tau:
        names_x.append("tau_sensor")
        units["tau_sensor"] = "s"
    if fit_dead:
        names_x.append("dead_time")
        units["dead_time"] = "s"
    tau_fixed = None if sensor_lag in (None, "fit") else float(sensor_lag)
    dead_fixed = 0.0 if dead_time in (None, "fit") else float(dead_time)
    for nm, v in (("sensor lag", tau_fixed), ("dead time", dead_fixed)):
        if v is not None and not (np.isfinite(v) and v >= 0 and v < span / 2):
            raise InputError(f"fit: {nm} {v!r} s is outside 0 .. half the log ({span / 2:g} s)")

    def unpack(x):
        p = {n: math.exp(x[i]) for i, n in enumerate(names)}
        x0 = x[n_phys:n_phys + n_init]
        j = n_phys + n_init
        tau = tau_fixed
        if fit_tau:
            tau = math.exp(x[j])
            j += 1
        dead = dead_fixed
        if fit_dead:
            dead = float(x[j])
        return p, x0, tau, dead

    def curve(x):
        p, x0, tau, dead = unpack(x)
        return simulate(model, p, t, P, Ta, x0, tau_sensor=tau, dead_time=dead)

    def res(x):
        return curve(x) - T

    lb = [-np.inf] * (n_phys + n_init)
    ub = [np.inf] * (n_phys + n_init)
    extra0 = []
    if fit_tau:
        lb.append(math.log(1e-3 * dt_med))
        ub.append(math.log(span / 2))
        extra0.append(math.log(max(2 * dt_med, 1e-3)))
    if fit_dead:
        lb.append(0.0)
        ub.append(span / 5)
        extra0.append(min(dt_med, span / 10))
    best = None
    for s in starts:
        x0 = s + [float(T[0])] + ([float(T[0])] if model == "two-node" else []) + extra0
        x0 = np.clip(x0, np.array(lb) + 1e-9, np.array(ub) - 1e-9)
        sol = _lsq(res, x0, lb, ub)
        if best is None or sol.cost < best.cost:
            best = sol
    sol = best
    x = sol.x
    r = sol.fun                      # model - data
    e = -r                           # data - model
    n, k = r.size, x.size
    rms = float(np.sqrt(np.mean(r ** 2)))
    acf = residual_acf(e)
    r1 = float(acf[0])
    r1c = min(max(r1, 0.0), 0.99)
    n_eff = n * (1 - r1c) / (1 + r1c)
    s2 = float(np.sum(r ** 2)) / max(n_eff - k, 1.0)
    J = sol.jac
    JtJ = J.T @ J
    try:
        JtJi = np.linalg.inv(JtJ)
        if not np.all(np.isfinite(JtJi)):
            raise np.linalg.LinAlgError
    except np.linalg.LinAlgError:
        JtJi = np.linalg.pinv(JtJ)
    cov = JtJi * s2
    sd_x = np.sqrt(np.clip(np.diag(cov), 0, None))
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(sd_x, sd_x)
    corr = np.where(np.isfinite(corr), corr, 1.0)

    # block bootstrap of the residuals, linearised at the fit: x* = x + (J'J)^-1 J' e*
    L = block_length(n, 0.0)
    boot = None
    if n_boot:
        # residuals of a fit are shrunk: k parameters use up about k n/n_eff samples
        E = bootstrap_errors(e, n_boot, np.random.default_rng(seed), r1, L,
                             scale=math.sqrt(n / max(n - k * n / n_eff, 1.0)))
        boot = x[None, :] + (E @ J) @ JtJi             # (n_boot, k); JtJi symmetric

    def phys_value(i, xs):
        if i < n_phys or names_x[i] == "tau_sensor":
            with np.errstate(over="ignore"):
                return np.exp(xs[..., i])
        return xs[..., i]

    # Student t quantile on n_eff - k degrees of freedom (the variance is estimated from about
    # n_eff independent samples)
    from scipy.special import stdtrit  # Student t quantile (lighter than scipy.stats)
    zq = float(stdtrit(max(n_eff - k, 1.0), (1 + LEVEL) / 2))
    parameters = {}
    q = [(1 - LEVEL) / 2 * 100, (1 + LEVEL) / 2 * 100]
    for i, nm in enumerate(names_x):
        logp = i < n_phys or nm == "tau_sensor"
        v = float(phys_value(i, x))
        sd = float(v * sd_x[i]) if logp else float(sd_x[i])
        ci = ([v * _exp(-zq * sd_x[i]), v * _exp(zq * sd_x[i])] if logp
              else [v - zq * sd, v + zq * sd])
        if nm == "dead_time":
            ci[0] = max(ci[0], 0.0)
        item = {"value": v, "stderr": sd, "ci95": ci, "unit": units[nm]}
        if boot is not None:
            b = phys_value(i, boot)
            b = np.clip(b, 0.0 if nm == "dead_time" else -1e300, 1e300)
            with np.errstate(all="ignore"):
                item["boot_ci95"] = [float(a) if a < 1e299 else math.inf
                                     for a in np.nanpercentile(b, q)]
                sdb = float(np.nanstd(b, ddof=1))
                item["boot_stderr"] = sdb if sdb < 1e299 else math.inf
        parameters[nm] = item

    def derived(fun_name, grad_fn):
        """Value, delta-method stderr and bootstrap interval of a function of the log-params."""
        val, g = grad_fn(x)
        sd = float(math.sqrt(max(g @ cov @ g, 0.0)))
        item = {"value": float(val), "stderr": sd,
                "ci95": [val * _exp(-zq * sd / val), val * _exp(zq * sd / val)]}
        if boot is not None:
            bv = np.array([grad_fn(b)[0] for b in boot])
            item["boot_ci95"] = [float(a) for a in np.percentile(bv, q)]
            item["boot_stderr"] = float(np.std(bv, ddof=1))
        return item

    def total(*which):
        def f(xx):
            g = np.zeros(k)
            val = 0.0
            for w in which:
                i = names_x.index(w)
                v = math.exp(xx[i])
                g[i] = v
                val += v
            return val, g
        return f

    none = {"value": None, "stderr": None}
    if model == "time-constant":
        Rt, Ct = none, none
    elif model == "one-node":
        Rt, Ct = parameters["R"], parameters["C"]
    else:
        Rt = derived("R", total("R_chamber_wall", "R_wall_ambient"))
        Ct = derived("C", total("C_chamber", "C_wall"))
        parameters["R_total"] = {**Rt, "unit": "K_per_W"}
        parameters["C_total"] = {**Ct, "unit": "J_per_K"}
    p_fit, x0_fit, tau_fit, dead_fit = unpack(x)
    A, _ = network_matrices(model, p_fit)
    taus = sorted((-1.0 / np.linalg.eigvals(A).real).tolist(), reverse=True)

    warnings = []
    ident = True
    for i, nm in enumerate(names_x):
        if np.isfinite(lb[i]) and x[i] - lb[i] < 1e-6 * max(1.0, abs(lb[i])) or \
                np.isfinite(ub[i]) and ub[i] - x[i] < 1e-6 * max(1.0, abs(ub[i])):
            ident = False
            warnings.append(f"{nm} = {parameters[nm]['value']:.4g} {units[nm]} sits at the "
                            "edge of its allowed range: the log does not show it (give it "
                            "instead of fitting it)")
        elif nm in ("tau_sensor", "dead_time") and parameters[nm]["value"] < 0.1 * dt_med:
            warnings.append(f"fitted {nm} = {parameters[nm]['value']:.3g} s is below a tenth "
                            f"of the log step ({dt_med:.4g} s): the log does not resolve it")
    phys_idx = list(range(n_phys)) + [i for i, nm in enumerate(names_x)
                                      if nm in ("tau_sensor", "dead_time")]
    for a in phys_idx:
        for b in phys_idx:
            if b > a and abs(corr[a, b]) > CORRELATION_LIMIT:
                ident = False
                warnings.append(f"{names_x[a]} and {names_x[b]} are strongly correlated "
                                f"({corr[a, b]:+.3f}): the log does not separate them, so "
                                "their values are not identifiable one by one (a longer log, "
                                "cooling, or a power history with more steps helps)")
    n_tau = span / taus[0]
    if n_tau < 3.0:
        warnings.append(f"the log lasts {n_tau:.1f} of the model's slowest time constants "
                        "(under about 3): too short to see equilibrium, so R rests on "
                        "extrapolation")
    if r1 > 0.5:
        warnings.append(f"residuals are strongly autocorrelated (lag-1 {r1:.2f}): the model "
                        "misses part of the dynamics (a second node, sensor lag, control "
                        "ripple); the intervals allow for it through an effective sample size "
                        f"{n_eff:.0f} of {n} and a block bootstrap")
    out = {"model": model,
           "R_K_per_W": Rt["value"], "R_stderr_K_per_W": Rt["stderr"],
           "C_J_per_K": Ct["value"], "C_stderr_J_per_K": Ct["stderr"],
           "tau_s": taus[0], "tau_stderr_s": (parameters["tau"]["stderr"]
                                              if model == "time-constant" else None),
           "time_constants_s": taus,
           "T0_K": float(x0_fit[0]), "rms_K": rms, "lag1_autocorrelation": r1,
           "n_eff": float(n_eff), "n": int(n), "parameters": parameters,
           "parameter_names": names_x, "correlation": corr, "residual_acf": acf,
           "block_length": L, "bootstrap_samples": int(n_boot), "identifiable": ident,
           "warnings": warnings, "sensor_lag_s": tau_fit or 0.0, "dead_time_s": dead_fit,
           "model_K": curve(x), "residual_K": e}
    out["correlation_RC"] = (float(corr[0, 1]) if model == "one-node" else None
                             if model == "time-constant" else float(
                                 corr[names_x.index("C_chamber"), names_x.index("C_wall")]))
    if model == "time-constant":
        warnings.append("the power is zero throughout: the log gives the time constant R C "
                        "only, not R and C apart")
    if compare_without_lag and (sensor_lag is not None or dead_time is not None):
        plain = fit_log(t, T, P, Ta, model=model, n_boot=0, compare_without_lag=False)
        if model == "time-constant":
            out["tau_ignoring_lag_s"] = plain["tau_s"]
        else:
            out["C_ignoring_lag_J_per_K"] = plain["C_J_per_K"]
            out["R_ignoring_lag_K_per_W"] = plain["R_K_per_W"]
            out["C_lag_bias_fraction"] = plain["C_J_per_K"] / out["C_J_per_K"] - 1.0
    return out


def time_to_level(model, p, T_level, power, T_amb, x0=None, tau_sensor=None):
    """Time [s] for a fitted network's chamber (or sensor) to reach ``T_level`` [K].

    Constant ``power`` [W] and ``T_amb`` [K] from the states ``x0`` [K] (default all at
    ambient).  The response is propagated exactly on log-spaced times out to 30 slowest time
    constants, the first crossing bracketed and refined by scipy.optimize.brentq on the exact
    solution.  Returns ``inf`` when the level is not reached (at or beyond the steady value).
    """
    from scipy.optimize import brentq
    A, _ = network_matrices(model, p, tau_sensor)
    n = A.shape[0] - (1 if tau_sensor else 0)
    x0 = [T_amb] * n if x0 is None else list(x0)
    taus = -1.0 / np.linalg.eigvals(A).real
    tt = np.concatenate([[0.0], np.geomspace(taus.min() * 1e-3, 30 * taus.max(), 600)])

    def f(tq):
        tq = np.atleast_1d(tq)
        grid = np.concatenate([[0.0], tq]) if tq[0] > 0 else tq
        y = simulate(model, p, grid, np.full(grid.size, power), np.full(grid.size, T_amb),
                     x0, tau_sensor=tau_sensor)
        return y[1:] if tq[0] > 0 else y

    y = f(tt) - T_level
    if y[0] == 0:
        return 0.0
    cross = np.flatnonzero(np.sign(y[1:]) != np.sign(y[0]))
    if not cross.size:
        return math.inf
    i = int(cross[0])
    return float(brentq(lambda s: f(np.array([s]))[0] - T_level, tt[i], tt[i + 1],
                        xtol=1e-9 * tt[i + 1], rtol=1e-12))


def predict(fit, T_amb, *, setpoint=None, power=None, rated_power=None):
    """Predictions of a fitted network (a :func:`fit_log` result) at constant power.

    ``T_amb``, ``setpoint`` [K], ``power``, ``rated_power`` [W].  Returns
    ``steady_temperature_K`` (T_amb + P R, exact for both models) with its standard error,
    ``power_at_setpoint_W``, ``duty_at_setpoint`` (+ stderr) over ``rated_power``, and
    ``time_to_setpoint_s`` from ambient (:func:`time_to_level` on the chamber node; ``inf``
    when never reached).  Empty for a zero-power (time-constant only) fit.
    """
    if fit["R_K_per_W"] is None:
        return {}
    R, sR = fit["R_K_per_W"], fit["R_stderr_K_per_W"]
    P = power if power is not None else rated_power
    out = {}
    if P is not None:
        out["steady_temperature_K"] = float(T_amb + P * R)
        out["steady_temperature_stderr_K"] = float(abs(P) * sR)
    if setpoint is not None:
        out["power_at_setpoint_W"] = float((setpoint - T_amb) / R)
        if rated_power:
            duty = (setpoint - T_amb) / (R * rated_power)
            out["duty_at_setpoint"] = float(duty)
            out["duty_at_setpoint_stderr"] = float(abs(duty) * sR / R)
        if P is not None:
            p = {k: fit["parameters"][k]["value"] for k, _ in PARAMS[fit["model"]]}
            out["time_to_setpoint_s"] = time_to_level(fit["model"], p, setpoint, P, T_amb)
    return out
