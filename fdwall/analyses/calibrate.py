"""Calibration of a case's physics to a heating log, by least squares through the solver.

Analyses layer (uses the solver through :func:`fdwall.run`).  SI inside: time [s],
temperature [K], power [W]; calibrated quantities in their own SI units (see KEYS).

The log's power history drives the case: an enclosure's heater power becomes the logged
power (steps at the log rows, fixed control, rated voltage, no element drift); a single
wall's inner face gets the logged power over the wall's area as a flux.  The run starts
uniformly at the log's first temperature and lasts as long as the log.  The logged
temperature is compared with the chamber temperature (enclosure) or the inner-face
temperature (single wall) at the log's times.  Ambient conditions stay those of the case.

Calibration keys (names of fdwall's own):

* ``conductivity_factor:LAYER`` (single wall) or ``conductivity_factor:WALL:LAYER``
  (enclosure): a factor [-] on the layer's conductivity k(T) as the case gives it;
* ``emissivity:outer`` / ``emissivity:inner`` (single wall) or ``emissivity:WALL:outer``
  / ``emissivity:WALL:inner`` (enclosure): the face's grey emissivity [-];
* ``contact_resistance:INTERFACE`` or ``contact_resistance:WALL:INTERFACE``: the contact
  resistance [m2K/W] of an interface (1 = between layers 1 and 2);
* ``leakage``: the chamber's leakage air flow [m3/s] (enclosure).

WALL is a wall's 1-based position, its name, or ``*`` for every wall (the same layer or
interface position in each); LAYER and INTERFACE are 1-based.
Positive quantities are fitted in log space, emissivities in logit space.
"""
from __future__ import annotations

import dataclasses
import math

import numpy as np

from fdwall.analyses.lumped import implied_rc
from fdwall.analyses.twonode import block_length, bootstrap_errors, fit_log, residual_acf
from fdwall.errors import InputError
from fdwall.model import Control, Face, RunSettings
from fdwall.schedule import Schedule
from fdwall.solver import run

__all__ = ["KEYS", "parse_key", "apply_value", "current_value", "log_driven_case",
           "simulate_log", "sensor_filter", "calibrate", "like_for_like"]

KEYS = ("conductivity_factor", "emissivity", "contact_resistance", "leakage")
_UNITS = {"conductivity_factor": "1", "emissivity": "1", "contact_resistance": "m2*K/W",
          "leakage": "m3/s"}
_ALLOWED = ("conductivity_factor:LAYER, emissivity:outer|inner, contact_resistance:INTERFACE "
            "(single wall); conductivity_factor:WALL:LAYER, emissivity:WALL:outer|inner, "
            "contact_resistance:WALL:INTERFACE, leakage (enclosure); WALL a 1-based position, "
            "a wall name or * for every wall, LAYER and INTERFACE 1-based")


def _bad(key, what):
    return InputError(f"calibration key {key!r}: {what}; allowed: {_ALLOWED}")


def _wall_index(case, token, key):
    names = [ew.wall.name for ew in case.walls]
    if token == "*":
        return "*"
    if token in names:
        return names.index(token)
    try:
        i = int(token) - 1
    except ValueError:
        raise _bad(key, f"no wall named {token!r} (walls: {', '.join(names)})") from None
    if not 0 <= i < len(names):
        raise _bad(key, f"wall {token} does not exist (1..{len(names)})")
    return i


def parse_key(case, key):
    """``(kind, wall index or None, item)`` of a calibration key, checked against ``case``."""
    parts = [p.strip() for p in str(key).split(":")]
    kind = parts[0]
    if kind not in KEYS:
        raise _bad(key, f"{kind!r} is not a calibration quantity")
    if kind == "leakage":
        if len(parts) != 1 or not case.is_enclosure:
            raise _bad(key, "leakage is a chamber's (enclosure cases), written alone")
        return kind, None, None
    want = 3 if case.is_enclosure else 2
    if len(parts) != want:
        raise _bad(key, f"needs {want - 1} part(s) after the name for "
                   + ("an enclosure" if case.is_enclosure else "a single wall"))
    w = _wall_index(case, parts[1], key) if case.is_enclosure else None
    item = parts[-1]
    if kind == "emissivity":
        if item not in ("outer", "inner"):
            raise _bad(key, f"face {item!r} is neither outer nor inner")
        return kind, w, item
    try:
        i = int(item) - 1
    except ValueError:
        raise _bad(key, f"{item!r} is not a 1-based number") from None
    for wi in (range(len(case.walls)) if w == "*" else [w]):
        wall = _wall_of(case, wi)
        n = len(wall.layers) if kind == "conductivity_factor" else len(wall.layers) - 1
        if not 0 <= i < n:
            raise _bad(key, f"{'layer' if kind == 'conductivity_factor' else 'interface'} "
                       f"{item} does not exist in wall '{wall.name}' (1..{n})")
    return kind, w, i


def _wall_of(case, w):
    return case.walls[w].wall if w is not None else case.wall


def _with_wall(case, w, wall):
    if w is None:
        return dataclasses.replace(case, wall=wall)
    walls = list(case.walls)
    walls[w] = dataclasses.replace(walls[w], wall=wall)
    return dataclasses.replace(case, walls=tuple(walls))


def current_value(case, parsed):
    """The case's own value of a parsed key (conductivity factor 1 = as the case gives it)."""
    kind, w, item = parsed
    if w == "*":
        return current_value(case, (kind, 0, item))
    if kind == "conductivity_factor":
        return 1.0
    if kind == "leakage":
        return float(case.chamber.leakage)
    if kind == "contact_resistance":
        c = _wall_of(case, w).interface_resistance
        return float(c[item]) if item < len(c) else 0.0
    if w is None:
        e = (case.outer if item == "outer" else case.inner).emissivity
    else:
        ew = case.walls[w]
        e = ew.outer.emissivity if item == "outer" else ew.inner_face_emissivity
    if e is not None and not isinstance(e, (int, float)):
        raise InputError(f"calibration of emissivity:{item}: the case gives it as a table "
                         "against temperature; allowed: a face with one emissivity number")
    return None if e is None else float(e)


def apply_value(case, parsed, value, base=None):
    """A copy of ``case`` with the parsed key set to ``value`` (SI).  ``base`` is the case
    whose layer materials a conductivity factor scales (default ``case``)."""
    kind, w, item = parsed
    base = case if base is None else base
    if w == "*":
        for wi in range(len(case.walls)):
            case = apply_value(case, (kind, wi, item), value, base=base)
        return case
    if kind == "leakage":
        return dataclasses.replace(case, chamber=dataclasses.replace(case.chamber,
                                                                     leakage=float(value)))
    if kind == "conductivity_factor":
        wall = _wall_of(case, w)
        layers = list(wall.layers)
        m0 = _wall_of(base, w).layers[item].material
        layers[item] = dataclasses.replace(layers[item],
                                           material=m0.with_conductivity_factor(float(value)))
        return _with_wall(case, w, dataclasses.replace(wall, layers=tuple(layers)))
    if kind == "contact_resistance":
        wall = _wall_of(case, w)
        c = list(wall.interface_resistance) + [0.0] * (len(wall.layers) - 1 - len(wall.interface_resistance))
        c[item] = float(value)
        return _with_wall(case, w, dataclasses.replace(wall, interface_resistance=tuple(c)))
    if w is None:
        face = case.outer if item == "outer" else case.inner
        face = dataclasses.replace(face, emissivity=float(value))
        return dataclasses.replace(case, **{item: face})
    walls = list(case.walls)
    ew = walls[w]
    if item == "outer":
        walls[w] = dataclasses.replace(ew, outer=dataclasses.replace(ew.outer,
                                                                     emissivity=float(value)))
    else:
        walls[w] = dataclasses.replace(ew, inner_face_emissivity=float(value))
    return dataclasses.replace(case, walls=tuple(walls))


def _steps(t, v):
    """Schedule knots holding v[i] on [t[i], t[i+1]) (a step at every change)."""
    tt, vv = [float(t[0])], [float(v[0])]
    for i in range(1, len(t)):
        if v[i] != v[i - 1]:
            tt += [float(t[i]), float(t[i])]
            vv += [float(v[i - 1]), float(v[i])]
    tt.append(float(t[-1]))
    vv.append(float(v[-1]))
    return Schedule(tt, vv)


def log_driven_case(case, t, P, T_start, tolerance=None):
    """``case`` driven by the logged power ``P`` [W] at times ``t`` [s], started uniformly
    at ``T_start`` [K], run for the log's length with outputs at its median step."""
    span = float(t[-1] - t[0])
    dt = float(np.median(np.diff(t)))
    sched = _steps(np.asarray(t) - t[0], np.asarray(P, float))
    if case.is_enclosure:
        if case.heater is None:
            raise InputError("calibration: the case has no [heater]; allowed: an enclosure "
                             "with a heater (its power is replaced by the logged power)")
        heater = dataclasses.replace(case.heater, power=sched, voltage_ratio=1.0, resistance_coefficient=0.0)
        new = dataclasses.replace(case, heater=heater, control=Control(mode="fixed"),
                                  chamber=dataclasses.replace(case.chamber, start_temperature=None))
    else:
        w = case.wall
        if w.shape == "slab":
            area = w.area
        elif w.shape == "cylinder":
            area = 2 * math.pi * w.inner_radius * w.length
        else:
            area = 4 * math.pi * w.inner_radius ** 2
        flux = Schedule(sched.times, [v / area for v in sched.values])
        # the logged power enters through the inner face, which replaces that face's own
        # conditions (a fluid held at the case's temperature would be a second, fixed heat
        # source or sink that the logged chamber does not have), as lumped.simulated_fit
        new = dataclasses.replace(case, inner=Face(heat_flux=flux),
                                  heater=None, control=Control(mode="fixed"))
    walls = []
    for ew in (new.walls or ()):
        walls.append(dataclasses.replace(ew, wall=dataclasses.replace(
            ew.wall, layers=tuple(dataclasses.replace(ly, start_temperature=None)
                                  for ly in ew.wall.layers))))
    if walls:
        new = dataclasses.replace(new, walls=tuple(walls))
    if new.wall is not None:
        new = dataclasses.replace(new, wall=dataclasses.replace(new.wall, layers=tuple(
            dataclasses.replace(ly, start_temperature=None) for ly in new.wall.layers)))
    run = RunSettings(duration=span, start_temperature=float(T_start), output_every=dt,
                      tolerance=tolerance or new.run.tolerance, max_step=new.run.max_step)
    return dataclasses.replace(new, run=run)


def simulate_log(case, t):
    """Run a log-driven case; the heated node's temperature [K] at the log times ``t`` [s]."""
    res = run(case, estimate=False)
    y = res.chamber_T if case.is_enclosure else res.face_T[:, 0]
    return np.interp(np.asarray(t) - t[0], res.times, y)


def sensor_filter(t, y, tau=0.0, dead_time=0.0):
    """What a probe with a first-order lag ``tau`` [s] and a ``dead_time`` [s] logs at ``t``
    [s] when the true temperature is ``y`` [K] at ``t``, taken as linear between the times.

    The dead time shifts the curve (``numpy.interp`` at t - dead_time, the start value held
    before the first time); the lag is the exact response of tau dy_s/dt = y - y_s to a
    piecewise-linear input, from y_s = y at the start.
    """
    t = np.asarray(t, float)
    u = np.asarray(y, float)
    if dead_time:
        u = np.interp(t - float(dead_time), t, u)
    if not tau:
        return u
    out = np.empty_like(u)
    out[0] = u[0]
    for k in range(t.size - 1):
        h = t[k + 1] - t[k]
        m = (u[k + 1] - u[k]) / h
        e = math.exp(-h / tau)
        out[k + 1] = u[k + 1] - m * tau + (out[k] - u[k] + m * tau) * e
    return out


def calibrate(case, t, T, P, keys, *, tolerance=1e-3, n_boot=400, seed=0, sensor_lag=0.0,
              dead_time=0.0):
    """Fit the chosen physics of ``case`` to a log by least squares through the solver.

    Parameters
    ----------
    case : Case
        The case (its ambient, films, materials and geometry).
    t, T, P : array_like
        Log times [s], logged temperature [K], heater power [W] held on [t_i, t_i+1).
    keys : list of str
        Calibration keys (see the module notes).
    tolerance : float
        Solver tolerance per step [K] for these runs (tight, so the finite-difference
        Jacobian is not noise).
    n_boot, seed
        Block-bootstrap resamples (linearised at the fit) and its seed.
    sensor_lag, dead_time : float
        A probe's first-order lag and dead time [s] between the simulated temperature and
        the log (:func:`sensor_filter`); 0: none.

    Returns
    -------
    dict
        ``parameters`` (key -> ``value``, ``stderr``, ``ci95`` (effective-n, Student t),
        ``boot_ci95``, ``start``, ``unit``), ``start_temperature_K`` (the uniform start of
        the runs, fitted) with its stderr, ``rms_K``, ``lag1_autocorrelation``, ``n_eff``,
        ``correlation`` (matrix over ``keys``), ``runs`` (solver runs made), ``model_K``
        (the calibrated run at ``t``), ``warnings``.
    """
    from scipy.optimize import least_squares
    from scipy.special import stdtrit

    t, T, P = (np.asarray(a, float) for a in (t, T, P))
    keys = [k.strip() for k in keys if k.strip()]
    if not keys or len(set(keys)) != len(keys):
        raise InputError(f"calibration keys {keys!r}: give one or more, each once; allowed: "
                         + _ALLOWED)
    parsed = [parse_key(case, k) for k in keys]
    base = log_driven_case(case, t, P, T[0], tolerance=tolerance)
    starts = []
    for pk in parsed:
        v = current_value(base, pk)
        if pk[0] == "emissivity":
            v = 0.5 if v is None else min(max(v, 0.02), 0.98)
        elif pk[0] == "contact_resistance":
            v = v if v and v > 0 else 1e-3
        elif pk[0] == "leakage":
            v = v if v > 0 else 1e-3
        starts.append(v)

    def to_x(v, pk):
        return math.log(v / (1 - v)) if pk[0] == "emissivity" else math.log(v)

    def from_x(x, pk):
        x = min(max(float(x), -700.0), 700.0)  # an interval of a lost parameter stays finite
        return 1 / (1 + math.exp(-x)) if pk[0] == "emissivity" else math.exp(x)

    runs = [0]

    def model(x):
        # the last entry is the uniform start temperature [K], fitted too (one noisy first
        # reading would otherwise bias everything after it)
        c = dataclasses.replace(base, run=dataclasses.replace(base.run, start_temperature=float(x[-1])))
        for xi, pk in zip(x[:-1], parsed):
            c = apply_value(c, pk, from_x(xi, pk), base=base)
        runs[0] += 1
        return sensor_filter(t, simulate_log(c, t), sensor_lag, dead_time)

    def res(x):
        return model(x) - T

    x0 = np.array([to_x(v, pk) for v, pk in zip(starts, parsed)] + [float(T[0])])
    # relative finite-difference steps: 1e-2 of a log/logit parameter, about 3 K of the start
    sol = least_squares(res, x0, method="trf", diff_step=1e-2, x_scale=[1.0] * len(keys)
                        + [1.0], xtol=1e-5, ftol=1e-7, max_nfev=60)
    x = sol.x
    r = sol.fun
    e = -r
    n, k = r.size, x.size
    acf = residual_acf(e)
    r1c = min(max(float(acf[0]), 0.0), 0.99)
    n_eff = n * (1 - r1c) / (1 + r1c)
    s2 = float(np.sum(r ** 2)) / max(n_eff - k, 1.0)
    J = sol.jac
    JtJi = np.linalg.pinv(J.T @ J)
    cov = JtJi * s2
    sd = np.sqrt(np.clip(np.diag(cov), 0, None))
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(sd, sd)
    zq = float(stdtrit(max(n_eff - k, 1.0), 0.975))
    L = block_length(n, 0.0)
    boot = None
    if n_boot:
        E = bootstrap_errors(e, n_boot, np.random.default_rng(seed), float(acf[0]), L,
                             scale=math.sqrt(n / max(n - k * n / n_eff, 1.0)))
        boot = x[None, :] + (E @ J) @ JtJi
    params, warnings = {}, []
    for i, (key, pk) in enumerate(zip(keys, parsed)):
        v = from_x(x[i], pk)
        # delta method: dv/dx = v (log) or v (1 - v) (logit)
        g = v * (1 - v) if pk[0] == "emissivity" else v
        item = {"value": v, "stderr": float(g * sd[i]),
                "ci95": [from_x(x[i] - zq * sd[i], pk), from_x(x[i] + zq * sd[i], pk)],
                "start": starts[i], "unit": _UNITS[pk[0]]}
        if boot is not None:
            b = np.array([from_x(bx, pk) for bx in boot[:, i]])
            item["boot_ci95"] = [float(a) for a in np.percentile(b, [2.5, 97.5])]
        params[key] = item
        if pk[0] == "emissivity" and not 0.01 < v < 0.99:
            warnings.append(f"{key} = {v:.3g} sits at the edge of 0..1: the log does not "
                            "fix it (or something else is wrong in the case)")
    for a in range(k - 1):
        for b in range(a + 1, k - 1):
            if np.isfinite(corr[a, b]) and abs(corr[a, b]) > 0.95:
                warnings.append(f"{keys[a]} and {keys[b]} are strongly correlated "
                                f"({corr[a, b]:+.3f}): the log does not separate them")
    if not sol.success:
        warnings.append(f"the calibration stopped before converging ({sol.message})")
    rms = float(np.sqrt(np.mean(r ** 2)))
    return {"parameters": params, "rms_K": rms, "start_temperature_K": float(x[-1]),
            "start_temperature_stderr_K": float(sd[-1]), "lag1_autocorrelation": float(acf[0]),
            "n_eff": float(n_eff), "correlation": corr, "keys": keys, "runs": runs[0],
            "model_K": model(x), "warnings": warnings}


def _resolved(f) -> bool:
    """True when a network fit gave usable R and C: identifiable (see
    :func:`fdwall.analyses.twonode.fit_log`) and finite and positive."""
    R, C = f.get("R_K_per_W"), f.get("C_J_per_K")
    if not (bool(f.get("identifiable", True)) and R is not None and C is not None
            and np.isfinite(R) and np.isfinite(C) and R > 0 and C > 0):
        return False
    # a standard error as large as the value (or none at all) is no determination
    for v, e in ((R, f.get("R_stderr_K_per_W")), (C, f.get("C_stderr_J_per_K"))):
        if e is None or not np.isfinite(e) or e >= v:
            return False
    return True


def like_for_like(case, t, P, T_start, fit=None, *, model="one-node", T_amb=None,
                  tau_hint=None, rc=None):
    """The fit fdwall's own simulated curve gives, for the log's power history and length.

    Parameters
    ----------
    case : Case
        The case, run driven by the logged power (see :func:`log_driven_case`).
    t, P : array_like
        Log times [s] and power [W].
    T_start : float
        Uniform start temperature of the runs [K] (the log's start).
    fit : dict, optional
        The log's own fit (:func:`fdwall.analyses.twonode.fit_log`), for the ratios.
    model : str
        Network fitted to the simulated curve, as for the log.
    T_amb : float, optional
        Ambient for the network [K] (default: the case's implied ambient).
    tau_hint : float, optional
        The wall's first-moment time constant [s]: the warm-up at the log's largest power,
        to which the same network is fitted over lengths from a quarter of the log to
        max(16 logs, 5 tau_hint) (how C depends on the length), runs that long.
    rc : dict, optional
        :func:`fdwall.analyses.lumped.rc_analysis` of the case, for the reading of which
        implied C the fits tend to.

    Returns
    -------
    dict
        ``R_K_per_W``, ``C_J_per_K``, ``tau_s``, ``rms_K`` of the simulated curve's fit,
        ``ratios`` (log fit / simulated fit: ``R``, ``C``; with ``fit``), ``fit_vs_length``
        (``length_s``, ``R_K_per_W``, ``C_J_per_K`` lists) and ``reading`` (sentences).
    """
    t, P = np.asarray(t, float), np.asarray(P, float)
    if T_amb is None:
        T_amb = implied_rc(case)["T_amb_K"]
    Ta = np.full(t.size, float(T_amb))
    sim = simulate_log(log_driven_case(case, t, P, T_start), t)
    f = fit_log(t, sim, P, Ta, model=model, n_boot=0)
    ok = _resolved(f)
    out = {"R_K_per_W": f["R_K_per_W"], "C_J_per_K": f["C_J_per_K"], "tau_s": f["tau_s"],
           "rms_K": f["rms_K"], "model_K": sim, "identifiable": ok}
    reading = []
    if not ok:
        reading.append(
            f"Fitted to fdwall's own curve for this power history and log length, the {model} "
            "model's parameters are not separately identifiable (strongly correlated, or at "
            "the edge of their range), so no like-for-like ratio is given"
            + ("; the one-node model is the one to compare here." if model != "one-node"
               else "."))
    elif fit is not None and fit.get("R_K_per_W") is not None and f["R_K_per_W"] is not None:
        rR = fit["R_K_per_W"] / f["R_K_per_W"]
        rC = fit["C_J_per_K"] / f["C_J_per_K"]
        out["ratios"] = {"R": rR, "C": rC}
        reading.append(
            f"Fitted the same way to fdwall's own curve for this power history and log length, "
            f"the {model} model gives R {f['R_K_per_W']:.4g} K/W and C {f['C_J_per_K']:.4g} "
            f"J/K; the log's fit is {rR:.2f} x that R and {rC:.2f} x that C. This comparison "
            "takes the log length and the wall's distributed capacity out of the difference: "
            "what is left is the equipment's (contents, leakage, edges, k data, sensor).")
    Pmax = float(np.max(P))
    # how C depends on the log length: one-node only (a two-node network fitted to a single
    # wall's own curve is rarely identifiable, and each fit costs seconds)
    if Pmax > 0 and model == "one-node":
        span = float(t[-1] - t[0])
        long = max(16.0 * span, 5.0 * float(tau_hint or 0.0))
        dt = max(float(np.median(np.diff(t))), long / 4000.0)
        tl = np.arange(int(round(long / dt)) + 1) * dt
        Pl = np.full(tl.size, Pmax)
        Tl = simulate_log(log_driven_case(case, tl, Pl, T_start), tl)
        L, Rs, Cs = [], [], []
        for m in np.geomspace(0.25 * span, long, 9):
            k = int(round(m / dt)) + 1
            if k < 10:
                continue
            g = fit_log(tl[:k], Tl[:k], Pl[:k], np.full(k, float(T_amb)), model=model,
                        n_boot=0)
            L.append(float(tl[k - 1]))
            good = _resolved(g)       # an unresolved fit is reported as such, not as a number
            Rs.append(g["R_K_per_W"] if good else None)
            Cs.append(g["C_J_per_K"] if good else None)
        out["fit_vs_length"] = {"length_s": L, "R_K_per_W": Rs, "C_J_per_K": Cs, "step_s": dt,
                                "power_W": Pmax}
        valid = [(a, c) for a, c in zip(L, Cs) if c is not None]
        if len(valid) < len(Cs):
            reading.append(
                f"{len(Cs) - len(valid)} of the {len(Cs)} log lengths give no resolved fit "
                "(R and C not separately identifiable, typically a log that has long reached "
                "equilibrium or one far too short for it): they are left blank.")
        if len(valid) >= 2:
            (l0, c0), (l1, c1) = valid[0], valid[-1]
            trend = ("grows with the log length: a short log sees only the inner part of the "
                     "wall, so its fitted C is smaller" if c1 > c0 * 1.02 else
                     "falls with the log length: the early response is that of the heated "
                     "node's surroundings, and the long-time fit weights the equilibrium"
                     if c1 < c0 / 1.02 else "hardly depends on the log length")
            reading.append(
                f"A constant-power warm-up of this case at {Pmax:.4g} W fitted over "
                f"{l0 / 3600:.3g} h to {l1 / 3600:.3g} h gives C from {c0:.4g} to "
                f"{c1:.4g} J/K: it {trend}.")
            Cs_valid = [c for _, c in valid]
            if rc and rc.get("C_effective_J_per_K"):
                ce, cs = rc["C_effective_J_per_K"], rc["C_stored_J_per_K"]
                if abs(ce / cs - 1) < 0.05:
                    tail = ("C_effective and C_stored lie within 5 % of each other here, so "
                            "the fits cannot tell which one they tend to")
                else:
                    cl = Cs_valid[-1]
                    near = ("C_effective" if abs(cl / ce - 1) <= abs(cl / cs - 1)
                            else "C_stored")
                    tail = f"it lies nearer {near}"
                reading.append(
                    f"The longest resolved fit's C is {Cs_valid[-1] / ce:.2f} x C_effective "
                    f"({ce:.4g} J/K, the first-moment C) and {Cs_valid[-1] / cs:.2f} x "
                    f"C_stored ({cs:.4g} J/K); " + tail + ".")
        out["C_effective_J_per_K"] = (rc or {}).get("C_effective_J_per_K")
        out["first_moment_tau_s"] = (rc or {}).get("first_moment_tau_s")
    out["reading"] = reading
    return out
