"""Transient runs: TR-BDF2 with error control, driven from Python in chunks of bounded wall time.

The whole time loop (step control, Newton, controller, ledger, events) runs inside the
compiled kernel :func:`fdwall.solver.kernels.integrate`; this module prepares arrays, calls it
in chunks of at most a step budget (adapted so that a chunk takes about
:data:`fdwall.solver.observers.CHUNK_SECONDS` of wall time, whatever the output interval),
calls the run observers between chunks (progress bar, early stop, interrupt check), and wraps
the output in a :class:`fdwall.result.Result`.  The kernel resumes exactly where it stopped,
so the numbers do not depend on the chunks.
"""
from __future__ import annotations

import time as _time

import numpy as np

from ..errors import ConvergenceError, Interrupted
from ..model import Case, ModelError
from ..system import build_system, event_rows  # noqa: F401  (event_rows: re-exported)
from . import native as K
from .accuracy import checked_run
from .layout import (
    CI_HEATER_NODE,
    CI_MODE,
    CI_SETPOINT,
    CTL_DUTY_AVERAGED,
    CTL_THERMOSTAT,
    EX_HEATER,
    KS_ARRAYS,
    N_EX,
    resume_size,
    system_args,
)
from .observers import CHUNK_SECONDS, ProgressBar, RunProgress, Stop
from .readout import sensor_temperature

__all__ = ["run", "run_once", "output_times", "event_rows", "ConvergenceError", "Interrupted"]

FIRST_CHUNK_STEPS = 16
"""Time steps of the first chunk of a run [-]; later chunks adapt to ``chunk_seconds``."""
MAX_CHUNK_STEPS = 1 << 30
"""Upper bound of the steps of one chunk [-] (keeps the budget a C integer)."""


def output_times(case: Case) -> np.ndarray:
    """Output times of a run [s]: 0, every output interval, the profile times, the end."""
    r = case.run
    dt = r.output_every or r.duration / 200.0
    n = int(np.floor(r.duration / dt + 1e-9))
    t = np.concatenate([np.arange(n + 1) * dt, [r.duration], list(r.snapshots)])
    t = np.unique(np.round(t[(t >= 0) & (t <= r.duration)], 9))
    return t


def run(case, initial=None, progress=None, strict=True, system=None, control_state=None,
        observers=None, chunk_seconds=CHUNK_SECONDS, estimate=True):
    """Run a transient case, with its spatial error estimated and the mesh refined until the
    accuracy contract is met (:mod:`fdwall.solver.accuracy`).

    Parameters are those of :func:`run_once`, plus ``estimate`` (bool): True (default)
    estimates the spatial error of the run by a second run on half the cells and refines the
    mesh (doubling the cells) until the estimate meets the contract; the reported
    :class:`fdwall.result.Result` carries it as ``error_estimate``.  False runs the case once
    on its mesh (for runs inside analyses: sizing loops, studies, fits), and
    ``error_estimate`` is None.
    """
    kw = dict(initial=initial, progress=progress, strict=strict, control_state=control_state,
              observers=observers, chunk_seconds=chunk_seconds)
    if not estimate:
        return run_once(case, system=system, **kw)
    return checked_run(run_once, case, system, kw)


def run_once(case, initial=None, progress=None, strict=True, system=None, control_state=None,
             observers=None, chunk_seconds=CHUNK_SECONDS):
    """Run a transient case once, on the mesh of ``system`` (or of ``case``).

    Parameters
    ----------
    case : Case
        The problem.
    initial : float or ndarray, optional
        Initial temperature(s) [K]: overrides ``case.run.start_temperature``; a vector gives one value
        per unknown (e.g. ``result.T[-1]`` of an earlier run).
    progress : bool, optional
        Show a progress bar; default: only on a terminal when the run takes longer than
        about 1.5 s.
    strict : bool
        Raise :class:`ConvergenceError` (with the partial result attached) if the solver
        fails, and :class:`fdwall.errors.Interrupted` (idem) if an observer stops the run;
        otherwise return the partial result with ``complete = False`` and ``status`` saying
        why ("not converged", "implausible", "interrupted").
    system : System, optional
        A system already built from ``case`` (saves rebuilding when running variants).
    control_state : ndarray, optional
        ``Result.control_state`` of an earlier run to continue its controller (thermostat
        state, PID integral and last error, time-proportioning cycle), e.g. for repeated
        cycles; times in it count from the end of that run (mixed units: [-], [K], [s]).
    observers : iterable, optional
        Run observers (:mod:`fdwall.solver.observers`), called between chunks of about
        ``chunk_seconds`` of wall time with a :class:`~fdwall.solver.observers.RunProgress`;
        one that returns a :class:`~fdwall.solver.observers.Stop` ends the run after the
        current step (the outputs so far plus the state at the stop time are kept).
    chunk_seconds : float
        Target wall time of one chunk [s]; 0 makes every chunk one time step.  The results
        do not depend on it (the time loop resumes exactly where it stopped).

    Returns
    -------
    fdwall.result.Result
    """
    from ..result import Result
    sysm = system if system is not None else build_system(case)
    r = case.run
    t_out = output_times(case)
    nun = sysm.n_unknowns
    nf = sysm.face_i.shape[0]
    T = sysm.initial_vector(r.start_temperature if initial is None else initial)
    T_start = T.copy()
    for k, i in enumerate(sysm.dirich_node):
        T[i] = K.sched_eval(sysm.s_off, sysm.stab, sysm.dirich_sched[k], 0.0, 0.0)
    n_out = t_out.size
    T_out = np.full((n_out, nun), np.nan)
    qf_out = np.full((n_out, nf), np.nan)
    E_out = np.full((n_out, nf + N_EX), np.nan)
    P_out = np.full(n_out, np.nan)
    hc_out = np.full((n_out, nf), np.nan)
    hr_out = np.full((n_out, nf), np.nan)
    # row 0: the initial state.  A fixed-temperature face that starts away from the initial
    # temperature takes the heat of that jump at t = 0: it is booked on the face's ledger.
    F = np.empty(nun)
    extra = np.zeros(N_EX)
    qf, hc, hr = np.empty(nf), np.empty(nf), np.empty(nf)
    u0 = _initial_u(sysm, T)
    cs = np.zeros(K.N_CS)
    if control_state is not None:
        prev = np.asarray(control_state, dtype=float)
        if prev.shape != cs.shape:
            raise ModelError(f"control_state must be Result.control_state (length {cs.size})")
        for i in (K.CS_U, K.CS_ON, K.CS_INT, K.CS_PREV, K.CS_NEXT, K.CS_OFF):
            cs[i] = prev[i]
        if sysm.ctl_i[CI_MODE] == CTL_THERMOSTAT and sysm.ctl_i[CI_HEATER_NODE] >= 0:
            u0 = float(cs[K.CS_ON])
    sa = system_args(sysm)
    Cap, H_after = np.empty(nun), np.empty(nun)
    jac = [np.empty(nun) for _ in range(5)]      # Jd, Jl, Ju, Jcol, Jrow (not used here)
    K.assemble(T, 0.0, 0.0, u0, *sa, F, Cap, H_after, *jac, qf, hc, hr, extra)
    if len(sysm.dirich_node):
        Hh, Hc = sysm.enthalpy(T_start)
        H_initial = float(Hh.sum() + Hc.sum())
        jump = {int(f): float(H_after[i] - Hh[0, i].sum())
                for i, f in zip(sysm.dirich_node, sysm.dirich_face)}
    else:
        H_initial = float(H_after.sum())
        jump = {}
    T_out[0] = T_start
    qf_out[0] = qf
    hc_out[0], hr_out[0] = hc, hr
    E_out[0] = 0.0
    P_out[0] = extra[EX_HEATER]
    cs[K.CS_H] = min(1.0, r.duration * 1e-4, t_out[1] if n_out > 1 else r.duration)
    cs[K.CS_NEXT] = 0.0
    cs[K.CS_PREV] = -1e300
    cs[K.CS_ON] = 1.0 if u0 > 0.5 else 0.0
    cs[K.CS_UPREV] = -2.0
    cs[K.CS_HSW] = cs[K.CS_H]
    cs[K.CS_HJ] = cs[K.CS_H]
    acc = np.zeros(nf + N_EX + 1)     # face energies, heater, loss, state time
    for f, dh in jump.items():
        acc[f] += dh
    qd_state = np.full(len(sysm.dirich_node), np.nan)
    stats = np.zeros(K.N_STATS)
    stats[K.ST_HMIN] = np.inf
    stats[K.ST_H0] = H_initial
    ev_i, ev_f = event_rows(sysm, case)
    ev_out = np.full((len(ev_i), 2), np.nan)
    max_step = r.max_step if r.max_step is not None else np.inf
    ks = np.zeros(resume_size(nun, nf))
    args = (t_out, 1, n_out, bool(r.exact_outputs), sysm.breakpoints, sysm.breakpoint_jumps,
            r.tolerance, max_step, *sa, sysm.dirich_node, sysm.dirich_sched,
            sysm.dirich_face, qd_state, ev_i, ev_f, ev_out, T_out, qf_out, E_out, P_out, hc_out,
            hr_out, ks)
    watchers = list(observers or ())
    if progress is not False:
        watchers.insert(0, ProgressBar(show=True if progress else None))
    k = 1
    t0 = _time.perf_counter()
    failed = False
    implausible = None
    stop = None
    budget = FIRST_CHUNK_STEPS if chunk_seconds > 0 else 1
    started = []

    def _progress():
        return RunProgress(case.name, float(acc[-1]), float(r.duration), int(k), int(n_out),
                           int(stats[K.ST_ACC]), _time.perf_counter() - t0, T.copy())

    try:
        p0 = _progress()
        for w in watchers:
            started.append(w)
            if hasattr(w, "start"):
                w.start(p0)
        while k < n_out:
            a = list(args)
            a[1] = k
            steps0 = stats[K.ST_ACC]
            c0 = _time.perf_counter()
            done = K.integrate(T, cs, acc, stats, *a, budget)
            spent = _time.perf_counter() - c0
            k0 = k
            k += done
            if stats[K.ST_STATUS] != 0:
                failed = True
                break
            bad = _implausible(T_out, k0, k)
            if bad is not None:
                failed = True
                implausible = bad
                # keep only the plausible outputs before it: the rest are marked missing
                for arr in (T_out, qf_out, E_out, P_out, hc_out, hr_out):
                    arr[bad[0]:] = np.nan
                stats[K.ST_T] = t_out[bad[0] - 1]
                break
            if k >= n_out:
                break
            # next budget: about chunk_seconds of wall time at the measured cost of a step,
            # growing at most fourfold per chunk (the first chunk may include compilation)
            per = spent / max(stats[K.ST_ACC] - steps0, 1.0)
            budget = int(max(1, min(4 * budget, MAX_CHUNK_STEPS,
                                    chunk_seconds / max(per, 1e-9))))
            pr = _progress()
            for w in watchers:
                ask = w.update(pr)
                if ask:
                    stop = ask if isinstance(ask, Stop) else Stop("stopped by an observer")
                    break
            if stop is not None:
                failed = True
                break
    finally:
        for w in started:
            if hasattr(w, "close"):
                w.close()
    if stop is not None:
        # keep the state at the stop time as a last output row (what an output there would be)
        t_stop = float(acc[-1])
        if t_stop > t_out[k - 1]:
            t_out, T_out, qf_out, E_out, P_out, hc_out, hr_out = _append_stop_row(
                sysm, k, t_stop, T, ks, acc, qd_state, t_out, T_out, qf_out, E_out, P_out,
                hc_out, hr_out)
    res = Result.from_run(case, sysm, t_out, T_out, qf_out, E_out, P_out, hc_out, hr_out,
                          stats, ev_out, complete=not failed,
                          wall_time=_time.perf_counter() - t0)
    end = cs.copy()
    end[K.CS_NEXT] -= stats[K.ST_T]
    end[K.CS_OFF] -= stats[K.ST_T]
    res.control_state = end
    if stop is not None:
        res.status = "interrupted"
        res.message = (f"the run was stopped at t = {stats[K.ST_T]:.6g} s "
                       f"({stats[K.ST_T] / 3600:.4g} h) of {r.duration:.6g} s: {stop.reason}. "
                       "Results up to that time are kept and marked incomplete.")
        if strict:
            raise Interrupted(res.message, res, stop.signal)
        return res
    if failed and implausible is not None:
        i_out, peak = implausible
        what = "not finite" if not np.isfinite(peak) else f"{peak:.6g} K"
        msg = (f"the run was stopped at output {i_out} (t = {t_out[i_out]:.6g} s): a wall "
               f"temperature reached {what}, beyond the plausibility ceiling of "
               f"{PLAUSIBLE_CEILING_K:.0f} K (far above every property table and fluid "
               "temperature fdwall knows). The heat put in is unphysical for this wall: check "
               "the heater powers, imposed fluxes and radiation/fluid temperatures of the case. "
               "Results before that time are kept and marked incomplete.")
        res.message = msg
        res.status = "implausible"
        if strict:
            raise ConvergenceError(msg, res)
        return res
    if failed:
        why = ("the time step fell below its floor" if stats[K.ST_STATUS] == 1 else
               "the time steps stalled (tens of thousands of steps without real progress)")
        if stats[K.ST_COLD] > 0:
            why += ("; temperatures were driven towards absolute zero: the case takes more heat "
                    "out than the wall holds (check the signs of fluxes and heater powers)")
        msg = (f"the solver could not converge at t = {stats[K.ST_T]:.6g} s "
               f"({stats[K.ST_T] / 3600:.4g} h): {why}. Results up to that time are kept and "
               "marked incomplete. Check for unphysical inputs (huge film coefficients or "
               "fluxes, a heater with no path for its heat).")
        res.message = msg
        res.status = "not converged"
        if strict:
            raise ConvergenceError(msg, res)
    return res


PLAUSIBLE_CEILING_K = 1.0e4
"""Absolute temperature ceiling [K]: a wall temperature above it (or a non-finite one) stops
the run as unphysical.  Every property table and fluid temperature fdwall handles lies far
below it (common practice, no source: refractories are tabulated to about 2000 K)."""


def _implausible(T_out, k0, k1):
    """First output row in [k0, k1) whose temperatures [K] are non-finite or above the
    ceiling, as (row, peak temperature [K]); None when all are plausible."""
    block = T_out[k0:k1]
    if block.size == 0:
        return None
    ok = np.isfinite(block).all(axis=1) & (np.nanmax(np.where(np.isfinite(block), block, np.inf),
                                                    axis=1) <= PLAUSIBLE_CEILING_K)
    if ok.all():
        return None
    j = int(np.argmin(ok))
    row = block[j]
    peak = float(np.max(row)) if np.isfinite(row).all() else float("nan")
    return k0 + j, peak


def _initial_u(sysm, T):
    """Heater fraction at t = 0 for the initial assembly [-]."""
    mode = sysm.ctl_i[CI_MODE]
    if sysm.ctl_i[CI_HEATER_NODE] < 0:
        return 0.0
    if mode == CTL_DUTY_AVERAGED:
        return -1.0
    if mode == CTL_THERMOSTAT:
        y = sensor_temperature(sysm, T)
        sp = K.sched_eval(sysm.s_off, sysm.stab, sysm.ctl_i[CI_SETPOINT], 0.0, 0.0)
        return 1.0 if y < sp else 0.0
    return 0.0



def _append_stop_row(sysm, k, t_stop, T, ks, acc, qd_state, t_out, T_out, qf_out, E_out, P_out,
                     hc_out, hr_out):
    """Output arrays cut to the ``k`` rows written plus one row at the stop time ``t_stop``
    [s]: the state at the end of the last step, exactly as an output there would read
    (temperatures [K], face flows [W], cumulative energies [J], heater power [W], film
    coefficients [W/m2/K])."""
    nun, nf = T.size, sysm.face_i.shape[0]
    o = KS_ARRAYS + 4 * nun
    q1, hcw, hrw = ks[o:o + nf], ks[o + nf:o + 2 * nf], ks[o + 2 * nf:o + 3 * nf]
    ex1 = ks[o + 3 * nf:o + 3 * nf + N_EX]
    qf = q1.copy()
    for kk, f in enumerate(sysm.dirich_face):
        qf[f] = qd_state[kk]
    rows = (
        (t_out, t_stop),
        (T_out, T),
        (qf_out, qf),
        (E_out, acc[:nf + N_EX]),
        (P_out, ex1[EX_HEATER]),
        (hc_out, hcw),
        (hr_out, hrw),
    )
    return tuple(np.concatenate([a[:k], np.asarray(v, dtype=float).reshape((1,) + a.shape[1:])])
                 for a, v in rows)
