"""Analyses of heated enclosures: warm-up, hold duty, energy ledger by wall, cool-down,
repeated firing cycles and heater sizing.

Everything works on the core objects: a :class:`fdwall.model.Case` with ``walls`` and a
``chamber`` (an enclosure), the :class:`fdwall.result.Result` of :func:`fdwall.solver.run`, and
:func:`fdwall.solver.solve_steady`.  Units are SI throughout: time [s], temperature [K],
power [W], energy [J].

Definitions used here
---------------------
* **Target** of a warm-up: ``setpoint - band`` [K].
* **Warm-up time**: the first time the chamber (or a given series) reaches the target, by
  linear interpolation between stored outputs [s].  It is not required to stay there; use
  :func:`settle_time` for "enters the band and stays".
* **Full power**: the heater's rated power schedule times ``voltage_ratio**2`` [W], i.e. the
  power when fully on with the element at its rating temperature ``t_ref``.  With a resistance
  temperature coefficient ``alpha > 0`` the element delivers less when hot, so a duty computed
  against full power is an *energy* fraction, slightly below the on-time fraction.
* **Duty**: delivered heater energy / full-power energy over a window [-].
* **Losses** are positive when heat leaves the enclosure: through each wall's outer face and
  by leakage/extra UA from the chamber to the room.

Bridged walls (:class:`fdwall.model.Bridge`) are solved as two parallel 1-D paths; all
per-wall figures here merge the two paths back into the case wall they came from.
"""
from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from ..model import Case, Control, ModelError
from ..solver import run, solve_steady
from ..solver.layout import CF_POWER_FACTOR
from ..system import build_system

__all__ = [
    "warm_up_time", "settle_time", "hold_duty", "switch_on_times", "full_power_energy",
    "steady_duty", "energy_breakdown", "cooldown", "periodic_state", "size_heater",
    "summarise_enclosure",
]


# ============================================================================ helpers
def _need_enclosure(case: Case, what: str) -> None:
    if not getattr(case, "is_enclosure", False) or case.chamber is None:
        raise ModelError(
            f"{what}: case '{case.name}' is a single wall, but this analysis needs an enclosure "
            "(enclosure walls plus a chamber node). Give the case 'walls' and a 'chamber', or "
            "use the single-wall results directly.")


def _need_heater(case: Case, what: str) -> None:
    if case.heater is None:
        raise ModelError(
            f"{what}: case '{case.name}' has no heater. Add a heater (rated power [W]) to the "
            "case; this analysis is about the heater's energy or power.")


def _default_setpoint(case: Case, what: str) -> float:
    sp = case.control.setpoint
    if sp is None:
        raise ModelError(
            f"{what}: no setpoint given and the control of case '{case.name}' has none "
            f"(mode '{case.control.mode}'). Pass setpoint=<temperature in K>.")
    return float(max(sp.values))


def _series(result, series, what: str) -> np.ndarray:
    """The temperature series to analyse [K]: the chamber by default."""
    if series is None:
        if result.chamber_T is None:
            raise ModelError(
                f"{what}: the run of case '{result.case.name}' has no chamber node; pass the "
                "temperature series to analyse (e.g. result.wall_T(0)[:, k]) as 'series'.")
        return np.asarray(result.chamber_T, float)
    y = np.asarray(series, float)
    if y.shape != result.times.shape:
        raise ModelError(
            f"{what}: 'series' must hold one temperature [K] per output time "
            f"({result.times.size} values), got shape {y.shape}.")
    return y


def _first_crossing(t, y, level, t_from=0.0, up=True) -> float:
    """First time >= ``t_from`` at which ``y`` reaches ``level`` from below (``up``) or from
    above, linearly interpolated between samples [s]; NaN if never."""
    t = np.asarray(t, float)
    y = np.asarray(y, float)
    if t_from > t[-1]:
        return math.nan
    s = 1.0 if up else -1.0
    y0 = float(np.interp(t_from, t, y))
    if s * (y0 - level) >= 0.0:
        return float(t_from)
    k = int(np.searchsorted(t, t_from, side="right"))
    tt = np.concatenate([[t_from], t[k:]])
    d = s * (np.concatenate([[y0], y[k:]]) - level)
    idx = np.nonzero(d >= 0.0)[0]
    if idx.size == 0:
        return math.nan
    i = int(idx[0])
    frac = -d[i - 1] / (d[i] - d[i - 1])
    return float(tt[i - 1] + frac * (tt[i] - tt[i - 1]))


def _interp_rows(times, arr, t) -> np.ndarray:
    """Row of ``arr`` (n_time, ...) at time ``t`` by linear interpolation [same unit]."""
    times = np.asarray(times, float)
    arr = np.asarray(arr, float)
    t = float(np.clip(t, times[0], times[-1]))
    k = int(np.searchsorted(times, t, side="right"))
    if k >= times.size:
        return arr[-1].copy() if arr.ndim > 1 else np.asarray(arr[-1])
    if k == 0:
        return arr[0].copy() if arr.ndim > 1 else np.asarray(arr[0])
    t0, t1 = times[k - 1], times[k]
    w = 0.0 if t1 == t0 else (t - t0) / (t1 - t0)
    return (1.0 - w) * arr[k - 1] + w * arr[k]


def _integrate_schedule(s, a: float, b: float) -> float:
    """Exact integral of a piecewise-linear :class:`Schedule` over [a, b] [value x s]."""
    return s.integral(float(a), float(b))


def _off_instant(s, duration: float):
    """Start of the final all-zero stretch of schedule ``s`` within [0, duration] [s], or None
    if ``s`` is not zero at the end of the run (or is zero throughout)."""
    tiny = 1e-12 * max(1.0, max(abs(v) for v in s.values))
    if abs(float(s(duration, "right"))) > tiny or abs(float(s(duration, "left"))) > tiny:
        return None
    pts = sorted({0.0, float(duration)} | {t for t in s.times if 0.0 <= t <= duration})
    for i in range(len(pts) - 1, -1, -1):
        p = pts[i]
        if abs(float(s(p, "right"))) > tiny:
            return pts[i + 1] if i + 1 < len(pts) else None
        if abs(float(s(p, "left"))) > tiny and p > 0.0:
            return p
    return None


def _infer_t_off(case: Case):
    """When the heater goes off for the final cool-down [s], from the enable schedule or the
    power schedule; None if neither switches off."""
    D = float(case.run.duration)
    for s in (case.control.power_on, case.heater.power if case.heater is not None else None):
        if s is None or s.is_constant:
            continue
        t = _off_instant(s, D)
        if t is not None:
            return float(t)
    return None


def _hold_time(case: Case) -> float:
    """Last instant of the run with the heater enabled [s] (used to read schedules for a
    steady hold)."""
    D = float(case.run.duration)
    en = case.control.power_on
    if en.is_constant:
        return D
    pts = sorted({0.0, D} | {t for t in en.times if 0.0 <= t <= D})
    for p in reversed(pts):
        if float(en(p, "right")) > 0.5:
            return p
        if float(en(p, "left")) > 0.5:
            return max(0.0, p - 1e-6 * max(D, 1.0))
    return D


def _rated_max(heater) -> float:
    """Largest value of the rated-power schedule [W]."""
    return float(max(heater.power.values))


def _with_power(heater, P: float):
    """The heater with rated power ``P`` [W] (a power schedule is scaled so its peak is P)."""
    if heater.power.is_constant:
        return replace(heater, power=float(P))
    peak = _rated_max(heater)
    if peak <= 0.0:
        return replace(heater, power=float(P))
    return replace(heater, power=heater.power.scaled(float(P) / peak))


def _case_walls(system):
    """Case wall index -> (name, [solved wall indices]) (bridge paths merged)."""
    out = {}
    for j, (w, o, b) in enumerate(zip(system.walls, system.wall_origin, system.is_bridge)):
        if o not in out:
            out[o] = [None, []]
        if not b:
            out[o][0] = w.name
        out[o][1].append(j)
    return {o: (v[0], v[1]) for o, v in sorted(out.items())}


def _time_schedules(case: Case):
    """(label, Schedule) of every time schedule of an enclosure case."""
    out = []
    if case.chamber is not None:
        out.append(("chamber ambient", case.chamber.room_temperature))
    for ew in case.walls:
        f = ew.outer
        for key, attr in (("temperature", "fixed_temperature"), ("flux", "heat_flux"),
                          ("fluid", "fluid_temperature"),
                          ("surroundings", "surroundings_temperature")):
            s = getattr(f, attr)
            if s is not None:
                out.append((f"wall '{ew.wall.name}' outer {key}", s))
    if case.heater is not None:
        out.append(("heater power", case.heater.power))
    c = case.control
    for key, attr in (("duty", "duty"), ("enable", "power_on"), ("setpoint", "setpoint")):
        s = getattr(c, attr)
        if s is not None:
            out.append((f"control {key}", s))
    return out


# ============================================================================ warm-up
def warm_up_time(result, setpoint=None, band: float = 0.0, series=None, t_from: float = 0.0) -> float:
    """Warm-up time: time from ``t_from`` until the chamber first reaches ``setpoint - band`` [s].

    Definition: the first instant ``t >= t_from`` at which the temperature reaches the target
    ``setpoint - band`` (linear interpolation between stored outputs, so the resolution is the
    output interval), minus ``t_from``.  Reaching the target once is enough; whether it then
    stays in the band is :func:`settle_time`'s question.  0 if the series already starts at or
    above the target; NaN if it never gets there within the run.

    Parameters
    ----------
    result : fdwall.result.Result
        A transient run.
    setpoint : float, optional
        Setpoint [K]; default the largest value of the case's control setpoint (the hold).
    band : float
        Allowance below the setpoint [K] (>= 0).
    series : array, optional
        Temperatures at the output times [K] (e.g. a wall sensor); default the chamber.
    t_from : float
        Start of the count [s] (e.g. the start of a firing).

    Returns
    -------
    float
        Warm-up time [s], NaN if the target is never reached.
    """
    if band < 0:
        raise ModelError(f"warm_up_time: band must be zero or positive [K], got {band!r}")
    sp = _default_setpoint(result.case, "warm_up_time") if setpoint is None else float(setpoint)
    y = _series(result, series, "warm_up_time")
    t = _first_crossing(result.times, y, sp - band, t_from, up=True)
    return t - t_from if np.isfinite(t) else math.nan


def settle_time(result, setpoint=None, band: float = 1.0, series=None, t_from: float = 0.0,
                t_to=None) -> float:
    """Time from ``t_from`` after which the chamber stays within ``setpoint +- band`` up to
    ``t_to`` (default the end of the run) [s].

    Definition: the last entry into the band [setpoint - band, setpoint + band] (linear
    interpolation between outputs; between outputs the band is assumed kept), minus ``t_from``.
    NaN if the series is outside the band at ``t_to``.  With a thermostat, pick
    ``band`` at least half the switching hysteresis plus the overshoot.

    Parameters
    ----------
    result : fdwall.result.Result
    setpoint : float, optional
        Setpoint [K]; default the largest value of the control setpoint.
    band : float
        Half-width of the band [K].
    series : array, optional
        Temperatures at the output times [K]; default the chamber.
    t_from : float
        Start of the count [s].
    t_to : float, optional
        End of the window [s] (e.g. when the heater goes off); default the end of the run.
    """
    sp = _default_setpoint(result.case, "settle_time") if setpoint is None else float(setpoint)
    y = _series(result, series, "settle_time")
    t = np.asarray(result.times, float)
    t_to = float(t[-1]) if t_to is None else float(t_to)
    m = (t >= t_from) & (t <= t_to)
    t, y = t[m], y[m]
    inside = np.abs(y - sp) <= band
    if t.size == 0 or not inside[-1]:
        return math.nan
    out = np.nonzero(~inside)[0]
    if out.size == 0:
        return 0.0
    i = int(out[-1])           # last sample outside; enters between i and i+1
    lev = sp + band if y[i] > sp else sp - band
    d0, d1 = y[i] - lev, y[i + 1] - lev
    frac = 0.0 if d1 == d0 else d0 / (d0 - d1)
    return float(t[i] + frac * (t[i + 1] - t[i]) - t_from)


# ============================================================================ duty
def full_power_energy(case: Case, t_from: float, t_to: float) -> float:
    """Energy the heater would deliver fully on over [t_from, t_to] [J]: the integral of the
    rated-power schedule [W] times ``voltage_ratio**2`` (element at ``t_ref``)."""
    _need_heater(case, "full_power_energy")
    h = case.heater
    return _integrate_schedule(h.power, float(t_from), float(t_to)) * h.voltage_ratio ** 2


def switch_on_times(result):
    """Instants at which a switching heater comes on, and the heater energy then.

    A switch-on is an output with zero power followed by one with power; its instant is
    reconstructed from the energy ledger, ``t_on = t_k - (E_k - E_k-1) / P_k``, exact when the
    power is steady while on (slightly approximate with ``alpha > 0``).  Needs an output
    interval shorter than the off-time (cycles shorter than two outputs are missed).

    Returns
    -------
    (ndarray, ndarray)
        Switch-on times [s] and the cumulative heater energy at those times [J].
    """
    P = np.asarray(result.heater_power, float)
    E = np.asarray(result.heater_energy, float)
    t = np.asarray(result.times, float)
    if P.size < 2 or not np.any(P > 0):
        return np.zeros(0), np.zeros(0)
    on = P > 1e-9 * float(np.max(P))
    k = np.nonzero(~on[:-1] & on[1:])[0] + 1
    t_on = t[k] - (E[k] - E[k - 1]) / P[k]
    t_on = np.clip(t_on, t[k - 1], t[k])
    return t_on, E[k - 1].copy()


def hold_duty(result, t_from: float, t_to=None, whole_cycles: bool = False) -> float:
    """Mean heater power over a window divided by the full power [-].

    ``duty = (E(t_to) - E(t_from)) / full_power_energy(t_from, t_to)`` from the cumulative
    heater energy ``result.heater_energy`` [J] (interpolated linearly between outputs, exact at
    output times) and :func:`full_power_energy`.

    Parameters
    ----------
    result : fdwall.result.Result
    t_from, t_to : float
        Window [s]; ``t_to`` defaults to the end of the run.
    whole_cycles : bool
        For a switching heater (thermostat, switched duty or PID): shrink the window to run from
        the first to the last switch-on inside it (:func:`switch_on_times`), so it spans whole
        on/off cycles; a partial cycle would bias the mean.

    Returns
    -------
    float
        Duty [-] (energy fraction of full power).
    """
    case = result.case
    _need_heater(case, "hold_duty")
    t_to = float(result.times[-1]) if t_to is None else float(t_to)
    t_from = float(t_from)
    if not t_to > t_from:
        raise ModelError(f"hold_duty: the window must have t_to > t_from, got {t_from:g} s to "
                         f"{t_to:g} s")
    if whole_cycles:
        ons, Eon = switch_on_times(result)
        sel = (ons >= t_from) & (ons <= t_to)
        if np.count_nonzero(sel) < 2:
            raise ModelError(
                f"hold_duty: fewer than two heater switch-ons between {t_from:g} s and {t_to:g} s "
                f"in the run of case '{case.name}', so no whole cycle to average over. Widen the "
                "window, shorten the output interval, or use whole_cycles=False.")
        a, b = float(ons[sel][0]), float(ons[sel][-1])
        Ea, Eb = float(Eon[sel][0]), float(Eon[sel][-1])
    else:
        a, b = t_from, t_to
        Ea = float(_interp_rows(result.times, result.heater_energy, a))
        Eb = float(_interp_rows(result.times, result.heater_energy, b))
    full = full_power_energy(case, a, b)
    if full <= 0.0:
        raise ModelError(f"hold_duty: the heater of case '{case.name}' has zero rated power "
                         f"between {a:g} s and {b:g} s")
    return (Eb - Ea) / full


def steady_duty(case: Case, t=None) -> dict:
    """Steady hold: the heater duty that keeps the sensor at the setpoint, and the losses.

    Uses :func:`fdwall.solver.solve_steady` (for thermostat/PID control it finds the on-fraction
    holding the setpoint; for fixed/duty control it gives the steady state at that power).

    Parameters
    ----------
    case : Case
        An enclosure case with a heater.
    t : float, optional
        Time at which schedules are read [s]; default the last instant of the run at which
        the heater is enabled.

    Returns
    -------
    dict
        ``duty`` [-], ``reachable`` (False: full power cannot hold the setpoint),
        ``heater_power_W``, ``full_power_W`` (at the steady element temperature),
        ``chamber_K``, ``wall_loss_W`` {wall name: W through its outer face, bridges merged},
        ``bridge_loss_W`` {bridged wall name: W through the bridge path's outer face},
        ``leakage_loss_W`` (leakage + extra UA), ``loss_W`` (total), ``balance_W`` (should be
        ~0), ``time_s`` and ``steady`` (the SteadyResult).
    """
    _need_enclosure(case, "steady_duty")
    _need_heater(case, "steady_duty")
    t = _hold_time(case) if t is None else float(t)
    st = solve_steady(case, t=t)
    sysm = st.system
    walls, bridges = {}, {}
    for o, (name, js) in _case_walls(sysm).items():
        walls[name] = float(-sum(st.face_flow[2 * j + 1] for j in js))
        bj = [j for j in js if sysm.is_bridge[j]]
        if bj:
            bridges[name] = float(-sum(st.face_flow[2 * j + 1] for j in bj))
    leak = float(st.chamber_loss)
    duty = float(st.duty)
    full = float(st.heater_power / duty) if duty > 0 else math.nan
    return {
        "duty": duty,
        "reachable": bool(st.reachable),
        "heater_power_W": float(st.heater_power),
        "full_power_W": full,
        "chamber_K": float(st.T[-1]),
        "wall_loss_W": walls,
        "bridge_loss_W": bridges,
        "leakage_loss_W": leak,
        "loss_W": float(sum(walls.values()) + leak),
        "balance_W": float(st.balance),
        "time_s": float(t),
        "steady": st,
    }


# ============================================================================ energy
def energy_breakdown(result, t_from=None, t_to=None) -> dict:
    """Where the heater's energy went over a window [J].

    Parameters
    ----------
    result : fdwall.result.Result
        A transient enclosure run.
    t_from, t_to : float, optional
        Window [s] (default the whole run); values between outputs are interpolated linearly,
        exact at output times.

    Returns
    -------
    dict
        ``heater_J``; ``walls`` {case wall name: {``stored_J`` (rise in stored heat, bridge path
        included), ``outer_loss_J`` (out through the outer face), ``from_chamber_J`` (in through
        the inner face), and for a bridged wall ``bridge_outer_loss_J``}}; ``walls_stored_J``;
        ``chamber_stored_J`` (chamber air and load); ``outer_loss_J`` (all walls);
        ``leakage_loss_J`` (leakage and extra UA); ``residual_J`` = heater + heat entering
        through outer faces - stored - losses, which should be ~0; ``relative_residual``
        (|residual| over the total heat capacity times 1 K plus the largest term, as
        :attr:`fdwall.result.Result.relative_residual`); ``window_s``.
    """
    case = result.case
    _need_enclosure(case, "energy_breakdown")
    t = result.times
    a = float(t[0]) if t_from is None else float(t_from)
    b = float(t[-1]) if t_to is None else float(t_to)

    def d(arr):
        return _interp_rows(t, arr, b) - _interp_rows(t, arr, a)

    sysm = result.system
    fe = d(result.face_energy)
    walls = {}
    stored_walls = 0.0
    outer = 0.0
    for o, (name, js) in _case_walls(sysm).items():
        stored = float(sum(d(result.stored_wall(j)) for j in js))
        out_loss = float(-sum(fe[2 * j + 1] for j in js))
        row = {"stored_J": stored, "outer_loss_J": out_loss,
               "from_chamber_J": float(sum(fe[2 * j] for j in js))}
        bj = [j for j in js if sysm.is_bridge[j]]
        if bj:
            row["bridge_outer_loss_J"] = float(-sum(fe[2 * j + 1] for j in bj))
        walls[name] = row
        stored_walls += stored
        outer += out_loss
    heater = float(d(result.heater_energy))
    ch = float(d(result.stored_chamber))
    leak = float(d(result.loss_energy))
    resid = heater - outer - leak - stored_walls - ch
    # the same scale as the run's own ledger (Result.residual_scale): the heat capacity of
    # walls and chamber times 1 K plus the largest term, so a window in which nothing moves
    # does not turn round-off into a relative residual of order one
    cap = float(result.stats.get("heat_capacity_J_per_K", 0.0))
    scale = max(cap * 1.0 + max(abs(heater), abs(outer), abs(leak), abs(stored_walls), abs(ch)),
                1e-300)
    return {
        "heater_J": heater,
        "walls": walls,
        "walls_stored_J": float(stored_walls),
        "chamber_stored_J": ch,
        "outer_loss_J": float(outer),
        "leakage_loss_J": leak,
        "residual_J": float(resid),
        "relative_residual": float(abs(resid) / scale),
        "window_s": (a, b),
    }


# ============================================================================ cool-down
def cooldown(result, t_off=None, temperatures=(), series=None) -> dict:
    """The chamber's cool-down after the heater goes off.

    Parameters
    ----------
    result : fdwall.result.Result
    t_off : float, optional
        Instant the heater goes off [s]; default the start of the final off stretch of the
        control's enable schedule (or of the heater power schedule).
    temperatures : sequence of float
        Levels [K] for which to report the time to fall to them.
    series : array, optional
        Temperatures at the output times [K]; default the chamber.

    Returns
    -------
    dict
        ``t_off_s``; ``T_off_K`` and ``T_end_K``; ``ambient_K`` (room at ``t_off``);
        ``times_s`` (time since ``t_off``) and ``T_K`` (the curve from ``t_off`` on);
        ``time_to_K`` {level: time after ``t_off`` to fall to it [s], NaN if not within the
        run}; ``e_folding_s``: time for the excess over ambient to fall to 1/e of its value
        at ``t_off`` [s] (NaN if not within the run); ``heater_energy_after_off_J`` (should
        be 0).
    """
    case = result.case
    _need_enclosure(case, "cooldown")
    y = _series(result, series, "cooldown")
    t = np.asarray(result.times, float)
    if t_off is None:
        t_off = _infer_t_off(case)
        if t_off is None:
            raise ModelError(
                f"cooldown: cannot tell when the heater of case '{case.name}' goes off (neither "
                "the control's enable schedule nor the heater power drops to 0 for good within "
                "the run). Pass t_off=<time in s>.")
    t_off = float(t_off)
    if not t[0] <= t_off < t[-1]:
        raise ModelError(f"cooldown: t_off = {t_off:g} s lies outside the run (0 to {t[-1]:g} s)")
    T_off = float(np.interp(t_off, t, y))
    m = t > t_off
    tt = np.concatenate([[t_off], t[m]])
    yy = np.concatenate([[T_off], y[m]])
    amb = float(case.chamber.room_temperature(t_off))
    times_to = {}
    for lev in temperatures:
        x = _first_crossing(t, y, float(lev), t_off, up=False)
        times_to[float(lev)] = x - t_off if np.isfinite(x) else math.nan
    efold = math.nan
    if T_off > amb:
        x = _first_crossing(t, y, amb + (T_off - amb) / math.e, t_off, up=False)
        efold = x - t_off if np.isfinite(x) else math.nan
    E_after = float(result.heater_energy[-1] - np.interp(t_off, t, result.heater_energy))
    return {
        "t_off_s": t_off,
        "T_off_K": T_off,
        "T_end_K": float(y[-1]),
        "ambient_K": amb,
        "times_s": tt - t_off,
        "T_K": yy,
        "time_to_K": times_to,
        "e_folding_s": float(efold),
        "heater_energy_after_off_J": E_after,
    }


# ============================================================================ repeated cycles
def periodic_state(case: Case, period: float, tol_K: float = 0.5, max_cycles: int = 20,
                   start=None, setpoint=None, band: float = 0.0) -> dict:
    """Repeat a firing schedule of period ``period`` until the enclosure settles into a
    periodic state.

    Every schedule of the case (ambient, outer faces, heater power, duty, enable, setpoint)
    must be defined over one period [0, period]; each cycle is a run of length ``period``
    started from the previous cycle's final temperatures (a full vector over all unknowns).
    Cycles stop when the largest change of any (non-imposed) node temperature between the
    starts of consecutive cycles falls below ``tol_K``.

    The controller restarts each cycle (thermostat state from the sensor, PID integral at
    zero); this is exact when the heater is disabled across the cycle boundary, as in a firing
    with a cool-down, and an approximation otherwise.

    Parameters
    ----------
    case : Case
        An enclosure case; its ``run.duration`` is replaced by ``period``.
    period : float
        Cycle length [s].
    tol_K : float
        Convergence tolerance on the cycle-to-cycle change [K].
    max_cycles : int
        Most cycles to run [-].
    start : float or ndarray, optional
        Start temperatures [K] (a number or a vector over all unknowns); default the case's
        initial temperature (a cold start).
    setpoint, band : float, optional
        For the per-cycle warm-up time (:func:`warm_up_time`) [K]; default the control
        setpoint and 0.

    Returns
    -------
    dict
        ``converged``; ``n_cycles``; ``cycles``: per cycle {``cycle``, ``heater_energy_J``,
        ``outer_loss_J``, ``leakage_loss_J``, ``warm_up_s``, ``change_K``, ``chamber_start_K``,
        ``chamber_max_K``, ``relative_residual``}; ``error_estimate_K`` (distance of the last
        start profile from the periodic state, from the cycle-to-cycle contraction;
        NaN when it cannot be estimated); ``periodic_start`` (temperatures of all unknowns at
        the start of the periodic cycle [K]); ``periodic_start_chamber_K``;
        ``first_vs_periodic``: {``first_heater_energy_J``, ``periodic_heater_energy_J``,
        ``extra_energy_first_cycle_J``, ``first_warm_up_s``, ``periodic_warm_up_s``};
        ``first_result`` and ``last_result`` (Result of the first and last cycle).
    """
    _need_enclosure(case, "periodic_state")
    period = float(period)
    if not (np.isfinite(period) and period > 0):
        raise ModelError(f"periodic_state: period must be a positive time [s], got {period!r}")
    if not tol_K > 0:
        raise ModelError(f"periodic_state: tol_K must be positive [K], got {tol_K!r}")
    if int(max_cycles) < 1:
        raise ModelError(f"periodic_state: max_cycles must be at least 1, got {max_cycles!r}")
    for label, s in _time_schedules(case):
        if max(s.times) > period * (1 + 1e-9):
            raise ModelError(
                f"periodic_state: the {label} schedule of case '{case.name}' has knots up to "
                f"{max(s.times):g} s, beyond the period {period:g} s. Every schedule must be "
                "given over one cycle [0, period]; it then repeats each cycle.")
    oi = case.run.output_every
    if oi is None or oi > period:
        oi = period / 200.0
    cyc_case = replace(case, run=replace(case.run, duration=period, output_every=oi,
                                         snapshots=(), watch=()))
    sysm = build_system(cyc_case)
    free = np.ones(sysm.n_unknowns, bool)
    free[np.asarray(sysm.dirich_node, dtype=int)] = False
    T0 = sysm.initial_vector(case.run.start_temperature if start is None else start)
    if setpoint is None and case.control.setpoint is not None:
        setpoint = float(max(case.control.setpoint.values))
    cycles, changes = [], []
    first = last = None
    converged = False
    for n in range(1, int(max_cycles) + 1):
        res = run(cyc_case, initial=T0, system=sysm, estimate=False)
        T1 = res.T[-1].copy()
        change = float(np.max(np.abs(T1[free] - T0[free]))) if np.any(free) else 0.0
        eb = energy_breakdown(res)
        wu = warm_up_time(res, setpoint, band) if setpoint is not None else math.nan
        cycles.append({
            "cycle": n,
            "heater_energy_J": float(res.heater_energy[-1]),
            "outer_loss_J": eb["outer_loss_J"],
            "leakage_loss_J": eb["leakage_loss_J"],
            "warm_up_s": float(wu),
            "change_K": change,
            "chamber_start_K": float(res.chamber_T[0]),
            "chamber_max_K": float(np.max(res.chamber_T)),
            "relative_residual": float(res.relative_residual),
        })
        changes.append(change)
        if first is None:
            first = res
        last = res
        T0 = T1
        if change < tol_K:
            converged = True
            break
    est = math.nan
    if len(changes) >= 2 and changes[-2] > 0:
        rho = changes[-1] / changes[-2]
        if rho < 1:
            est = changes[-1] * rho / (1 - rho)
    c0, cl = cycles[0], cycles[-1]
    return {
        "converged": converged,
        "n_cycles": len(cycles),
        "cycles": cycles,
        "error_estimate_K": float(est),
        "periodic_start": T0,
        "periodic_start_chamber_K": float(T0[-1]),
        "first_vs_periodic": {
            "first_heater_energy_J": c0["heater_energy_J"],
            "periodic_heater_energy_J": cl["heater_energy_J"],
            "extra_energy_first_cycle_J": c0["heater_energy_J"] - cl["heater_energy_J"],
            "first_warm_up_s": c0["warm_up_s"],
            "periodic_warm_up_s": cl["warm_up_s"],
        },
        "first_result": first,
        "last_result": last,
    }


# ============================================================================ heater sizing
def _steady_power_to_hold(case: Case, target: float, t: float) -> float:
    """Rated power [W] at which the heater, fully on, holds the chamber at ``target`` [K] in
    steady state (the steady loss at ``target``, referred to the rating)."""
    h = case.heater
    P = max(_rated_max(h), 1.0)
    ctl = Control(mode="thermostat", setpoint=float(target), band=0.0, sensor="chamber")
    for _ in range(30):
        c = replace(case, heater=_with_power(h, P), control=ctl)
        st = solve_steady(c, t=t)
        if st.reachable:
            # power is proportional to rating x on-fraction at fixed temperatures
            return float(P * st.duty)
        P *= 4.0
    raise ModelError(f"size_heater: no heater rating up to {P:.3g} W holds case '{case.name}' "
                     f"at {target:g} K in steady state")


def size_heater(case: Case, warm_up_limit: float, setpoint=None, band: float = 0.0,
                p_lo=None, p_hi=None, rel_tol: float = 0.002, control: str = "case",
                max_trials: int = 40) -> dict:
    """Smallest rated heater power that brings the chamber to ``setpoint - band`` within
    ``warm_up_limit``.

    Each trial is a full run of length ``warm_up_limit`` (so no run goes past the deadline)
    with the heater's rated power replaced (a power schedule is scaled so its peak equals the
    trial rating); a trial succeeds if the chamber reaches the target within the run.  The
    bracket [failing, succeeding] is narrowed by regula falsi (Illinois variant, with a bisection
    step whenever the bracket stops halving) on a continuous margin (failing: peak chamber
    temperature minus target; succeeding: the further rise by the deadline had the heating gone
    on, extrapolated from the curve before the crossing) until its width is below
    ``rel_tol`` times the succeeding rating, which is returned.  The system is assembled once;
    trials only rescale the heater's power factor.

    Below ``p_min_W`` the target is never reached however long the warm-up: that is the
    steady loss at the target with the heater fully on (:func:`fdwall.solver.solve_steady` with
    the chamber held at the target), referred to the rating.

    Parameters
    ----------
    case : Case
        An enclosure case with a heater.
    warm_up_limit : float
        Allowed warm-up time [s].
    setpoint : float, optional
        Setpoint [K]; default the largest value of the control setpoint.
    band : float
        Allowance below the setpoint [K]; the target is ``setpoint - band``.
    p_lo, p_hi : float, optional
        Starting bracket [W]; default ``p_min_W`` and twice that (widened as needed; a ``p_lo``
        that already succeeds is lowered towards ``p_min_W``).
    rel_tol : float
        Relative width of the final bracket [-].
    control : {'case', 'full'}
        'case' runs the trials with the case's own control (a thermostat is full on until it
        first reaches its upper threshold; a PID throttles as it nears the setpoint); 'full'
        runs the heater fully on (enable schedule kept).
    max_trials : int
        Most trial runs [-].

    Returns
    -------
    dict
        ``power_W`` (sized rating), ``p_min_W``, ``steady_loss_at_setpoint_W``, ``target_K``,
        ``warm_up_s`` (warm-up time at ``power_W``), ``bracket_W`` (failing, succeeding),
        ``trials`` [(rating W, peak chamber K, reached)], ``n_trials``, ``result`` (the run at
        ``power_W``).
    """
    _need_enclosure(case, "size_heater")
    _need_heater(case, "size_heater")
    if control not in ("case", "full"):
        raise ModelError(f"size_heater: control must be 'case' or 'full', got {control!r}")
    lim = float(warm_up_limit)
    if not (np.isfinite(lim) and lim > 0):
        raise ModelError(f"size_heater: warm_up_limit must be a positive time [s], got "
                         f"{warm_up_limit!r}")
    if not 0 < rel_tol < 0.5:
        raise ModelError(f"size_heater: rel_tol must lie between 0 and 0.5, got {rel_tol!r}")
    sp = _default_setpoint(case, "size_heater") if setpoint is None else float(setpoint)
    target = sp - float(band)
    spc = case.control.setpoint
    if control == "case" and case.control.mode in ("thermostat", "pid") and spc is not None:
        kt = np.asarray(spc.times, float)
        t_sp = _first_crossing(np.concatenate([kt, [kt[-1] + 1.0]]),
                               np.concatenate([spc.values, [spc.values[-1]]]), target, 0.0)
        if not t_sp <= lim:
            raise ModelError(
                f"size_heater: the control setpoint of case '{case.name}' reaches the target "
                f"{target:g} K only at {t_sp:g} s (or never), after the warm-up limit {lim:g} s, so "
                "the controller itself holds the chamber back and no heater rating can meet the "
                "limit. Use control='full' (heater fully on) or a longer warm_up_limit.")
    # a trial run ends at the deadline; outputs fine enough to time the crossing
    ctl = case.control if control == "case" else Control(mode="fixed", duty=1.0,
                                                           power_on=case.control.power_on)
    base = replace(case, control=ctl,
                   run=replace(case.run, duration=lim, output_every=lim / 400.0,
                               snapshots=(), watch=()))
    sysm = build_system(base)
    T_init = sysm.initial_vector(case.run.start_temperature)
    p_min = _steady_power_to_hold(base, target, lim)
    loss_sp = _steady_power_to_hold(base, sp, lim) if band > 0 else p_min
    if T_init[-1] >= target:
        return {"power_W": 0.0, "p_min_W": p_min, "steady_loss_at_setpoint_W": loss_sp,
                "target_K": target, "warm_up_s": 0.0, "bracket_W": (0.0, 0.0), "trials": [],
                "n_trials": 0, "result": None}
    P_ref = _rated_max(case.heater)
    f_ref = float(sysm.ctl_f[CF_POWER_FACTOR])
    trials, runs = [], {}

    def trial(P):
        if len(trials) >= max_trials:
            raise ModelError(f"size_heater: no answer within {max_trials} trial runs for case "
                             f"'{case.name}' (bracket so far {lo:.6g} to {hi:.6g} W)")
        c = replace(base, heater=_with_power(case.heater, P))
        # same arrays, heater power factor rescaled (kernel layout: ctl_f[CF_POWER_FACTOR]
        # multiplies the rated-power schedule)
        f = sysm.ctl_f.copy()
        f[CF_POWER_FACTOR] = f_ref * (P / P_ref if P_ref > 0 else P)
        s = replace(sysm, case=c, ctl_f=f)
        if P_ref <= 0:
            s = build_system(c)
        r = run(c, system=s, estimate=False)
        Tc, tt = r.chamber_T, r.times
        peak = float(np.max(Tc))
        ok = peak >= target
        trials.append((float(P), peak, bool(ok)))
        runs[float(P)] = r
        if not ok:
            return peak - target
        # reached: the rise still to come by the deadline had the heating gone on, from the
        # curve before the crossing taken as exponential (exact for one node at full power):
        # rate x tau x (1 - exp(-(limit - crossing) / tau)); continuous with the failing branch
        tc = _first_crossing(tt, Tc, target, 0.0, up=True)
        if not tc > 0:
            return peak - target
        d = tc / 8.0
        T0, T1, T2 = np.interp([tc - 2 * d, tc - d, tc], tt, Tc)
        r1, r2 = (T1 - T0) / d, (T2 - T1) / d
        spare = lim - tc
        if r2 <= 0:
            return 1e-12
        if 0 < r2 < r1:
            tau = d / math.log(r1 / r2)
            return max(r2 * tau * -math.expm1(-spare / tau), 1e-12)
        return max(r2 * spare, 1e-12)

    lo = float(p_lo) if p_lo is not None else p_min
    if p_hi is not None:
        hi = float(p_hi)
    else:
        hi = 2.0 * lo if lo > 0 else max(_rated_max(case.heater), 1.0)
    if lo < p_min:
        lo = p_min
    g_lo = trial(lo) if lo > 0 else -(target - T_init[-1])
    while g_lo >= 0 and lo > p_min * (1 + 1e-9):       # p_lo already succeeds: move down
        hi, g_hi = lo, g_lo
        lo = max(p_min, 0.5 * lo)
        g_lo = trial(lo)
    if g_lo >= 0:                                      # only possible at p_min ~ 0
        hi, g_hi = lo, g_lo
    else:
        if hi <= lo:
            hi = 2.0 * lo
        g_hi = trial(hi)
        while g_hi < 0:
            lo, g_lo = hi, g_hi
            hi *= 2.0
            g_hi = trial(hi)
    # Illinois regula falsi inside the bracket; a bisection when three steps have not halved it
    last, ref_width, since = 0, hi - lo, 0
    while hi - lo > rel_tol * hi:
        if since >= 3 and hi - lo > 0.5 * ref_width:
            P = 0.5 * (lo + hi)
            ref_width, since = hi - lo, 0
        else:
            P = (lo * g_hi - hi * g_lo) / (g_hi - g_lo) if g_hi != g_lo else 0.5 * (lo + hi)
        # stay a little inside the ends, so that a root next to an end closes the bracket
        delta = 0.45 * rel_tol * hi
        P = min(max(P, lo + delta), hi - delta)
        g = trial(P)
        if g >= 0:
            hi, g_hi = P, g
            if last == 1:
                g_lo *= 0.5
            last = 1
        else:
            lo, g_lo = P, g
            if last == -1:
                g_hi *= 0.5
            last = -1
        since += 1
        if hi - lo <= 0.5 * ref_width:
            ref_width, since = hi - lo, 0
    r = runs.get(float(hi))
    return {
        "power_W": float(hi),
        "p_min_W": float(p_min),
        "steady_loss_at_setpoint_W": float(loss_sp),
        "target_K": float(target),
        "warm_up_s": warm_up_time(r, target, 0.0) if r is not None else math.nan,
        "bracket_W": (float(lo), float(hi)),
        "trials": trials,
        "n_trials": len(trials),
        "result": r,
    }


# ============================================================================ summary
def summarise_enclosure(result, setpoint=None, band: float = 1.0, steady: bool = True) -> dict:
    """Headline numbers of an enclosure run, as a plain dict of floats (SI, keys name units).

    Parameters
    ----------
    result : fdwall.result.Result
        A transient enclosure run.
    setpoint : float, optional
        Setpoint [K] for warm-up and hold; default the largest control setpoint (no warm-up
        figures without one).
    band : float
        Allowance below the setpoint for the warm-up time [K].
    steady : bool
        Also solve the steady hold (:func:`steady_duty`) when there is a heater.

    Returns
    -------
    dict
        ``chamber_final_K``, ``chamber_max_K``; with a setpoint ``setpoint_K``,
        ``warm_up_s`` (reaching setpoint - band) and ``settle_s`` (staying within +- band);
        ``hold_duty`` over the hold (from warm-up to heater off or run end; whole cycles for a
        switching heater) with ``hold_window_s``; ``steady_duty``, ``steady_reachable``,
        ``steady_loss_W``; ``energy`` (:func:`energy_breakdown`); ``cooldown`` (t_off,
        T at off, e-folding time, final T) when the heater goes off during the run;
        ``bridges`` and ``box_edge_corner_area_factor`` when present;
        ``energy_residual_relative``.
    """
    case = result.case
    _need_enclosure(case, "summarise_enclosure")
    Tc = result.chamber_T
    out = {
        "chamber_final_K": float(Tc[-1]),
        "chamber_max_K": float(np.max(Tc)),
        "chamber_min_K": float(np.min(Tc)),
    }
    if setpoint is None and case.control.setpoint is not None:
        setpoint = float(max(case.control.setpoint.values))
    t_off = _infer_t_off(case) if case.heater is not None else None
    t_end_hold = t_off if t_off is not None else float(result.times[-1])
    if setpoint is not None:
        out["setpoint_K"] = float(setpoint)
        wu = warm_up_time(result, setpoint, band)
        out["warm_up_s"] = float(wu)
        sband = max(band, 0.5 * case.control.band) if case.control.mode == "thermostat" else band
        out["settle_s"] = settle_time(result, setpoint, sband, t_to=t_end_hold)
        if case.heater is not None and np.isfinite(wu) and wu < t_end_hold:
            switching = (case.control.mode == "thermostat"
                         or (case.control.mode in ("duty", "pid") and case.control.switched))
            try:
                out["hold_duty"] = hold_duty(result, wu, t_end_hold, whole_cycles=switching)
                if switching:
                    ons, _ = switch_on_times(result)
                    sel = (ons >= wu) & (ons <= t_end_hold)
                    out["hold_window_s"] = (float(ons[sel][0]), float(ons[sel][-1]))
                else:
                    out["hold_window_s"] = (float(wu), float(t_end_hold))
            except ModelError:
                pass
    if steady and case.heater is not None:
        try:
            sd = steady_duty(case)
            out["steady_duty"] = sd["duty"]
            out["steady_reachable"] = sd["reachable"]
            out["steady_loss_W"] = sd["loss_W"]
        except Exception as exc:   # a steady state may not exist (e.g. no loss path)
            out["steady_error"] = str(exc)
    eb = energy_breakdown(result)
    eb["window_s"] = list(eb["window_s"])
    out["energy"] = eb
    if t_off is not None and t_off < float(result.times[-1]):
        cd = cooldown(result, t_off)
        out["cooldown"] = {k: cd[k] for k in ("t_off_s", "T_off_K", "T_end_K", "ambient_K",
                                              "e_folding_s")}
    s = result.summary()
    if "bridges" in s:
        out["bridges"] = s["bridges"]
    if "box_edge_corner_area_factor" in s:
        out["box_edge_corner_area_factor"] = s["box_edge_corner_area_factor"]
    out["energy_residual_relative"] = float(result.relative_residual)
    return out
