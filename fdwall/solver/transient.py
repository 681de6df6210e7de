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

import os
import time as _time

import numpy as np

from ..errors import ConvergenceError, Interrupted
from ..model import Case, ModelError
from ..result import FileResult, Result, series_view, stream_series
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
    EX_LOSS,
    KS_ARRAYS,
    N_EX,
    resume_size,
    system_args,
)
from .observers import (
    CHUNK_SECONDS,
    WINDOW_BYTES,
    OutputBlock,
    ProgressBar,
    RunProgress,
    Stop,
    StorageObserver,
)
from .readout import sensor_temperature

__all__ = ["run", "run_once", "output_times", "event_rows", "ConvergenceError", "Interrupted"]

FIRST_CHUNK_STEPS = 16
"""Time steps of the first chunk of a run [-]; later chunks adapt to ``chunk_seconds``."""
MIN_WINDOW_ROWS = 8
"""Smallest window of output rows of a streamed run [-]."""
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
        observers=None, chunk_seconds=CHUNK_SECONDS, store=None, window_bytes=WINDOW_BYTES,
        estimate=True):
    """Run a transient case, with its spatial error estimated and the mesh refined until the
    accuracy contract is met (:mod:`fdwall.solver.accuracy`).

    Parameters are those of :func:`run_once`, plus ``estimate`` (bool): True (default)
    estimates the spatial error of the run by a second run on half the cells and refines the
    mesh (doubling the cells) until the estimate meets the contract; the reported
    :class:`fdwall.result.Result` carries it as ``error_estimate``.  False runs the case once
    on its mesh (for runs inside analyses: sizing loops, studies, fits), and
    ``error_estimate`` is None.  With a ``store``, the first run streams to it and so do the
    estimate's extra runs (the coarse one to a temporary file in the same folder, removed
    after it is compared), so memory stays bounded by the output window; a refined run
    replaces the stored one (a path store is rewritten with it; when the caller passed an
    open :class:`StorageObserver`, the returned result's own store replaces it on
    ``write_hdf5`` and the caller's is left for it to discard).
    """
    kw = dict(initial=initial, progress=progress, strict=strict, control_state=control_state,
              observers=observers, chunk_seconds=chunk_seconds, store=store,
              window_bytes=window_bytes)
    if not estimate:
        return run_once(case, system=system, **kw)
    res = checked_run(run_once, case, system, kw)
    if isinstance(store, (str, os.PathLike)):
        res.write_hdf5(store)   # the file carries the estimate (and a refined run, if any)
    return res


def run_once(case, initial=None, progress=None, strict=True, system=None, control_state=None,
             observers=None, chunk_seconds=CHUNK_SECONDS, store=None, window_bytes=WINDOW_BYTES):
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
        current step (the outputs so far plus the state at the stop time are kept).  One
        with a ``rows(block)`` method receives every output row once, in order.
    chunk_seconds : float
        Target wall time of one chunk [s]; 0 makes every chunk one time step.  The results
        do not depend on it (the time loop resumes exactly where it stopped).
    store : str, os.PathLike or StorageObserver, optional
        Stream the output to this HDF5 result file as the run goes (a
        :class:`~fdwall.solver.observers.StorageObserver` is made for a path; one in
        ``observers`` counts too).  The run then holds at most ``window_bytes`` of output
        rows in memory, and returns a :class:`fdwall.result.FileResult` backed by the file
        (same numbers as an in-memory run, to the last digit; its series are read from the
        file when first used).  The file is complete, and marked incomplete when the run
        stopped early, before this function returns or raises.
    window_bytes : int
        Size of the window of output rows a streamed run holds [bytes] (at least 8 rows;
        a single time step that spans more rows widens it).

    Returns
    -------
    fdwall.result.Result
        In memory, or a :class:`fdwall.result.FileResult` with ``store``.
    """
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
    t_grid = t_out
    watchers = list(observers or ())
    storage = None
    if store is not None:
        storage = store if isinstance(store, StorageObserver) else StorageObserver(store)
        if storage not in watchers:
            watchers.append(storage)
    else:
        storage = next((w for w in watchers if isinstance(w, StorageObserver)), None)
    sinks = [w for w in watchers if hasattr(w, "rows")]
    stream = storage is not None
    # output rows held in memory: all of them, or a window of ``cap`` rows (+1 slot whose time
    # is the end of the run, so that the kernel sees the same last output time and target)
    row_bytes = 8 * (nun + 4 * nf + N_EX + 2)
    cap = n_out if not stream else int(min(n_out, max(MIN_WINDOW_ROWS, window_bytes // row_bytes)))
    land = bool(r.exact_outputs)

    def _alloc(rows):
        return (np.full((rows, nun), np.nan), np.full((rows, nf), np.nan),
                np.full((rows, nf + N_EX), np.nan), np.full(rows, np.nan),
                np.full((rows, nf), np.nan), np.full((rows, nf), np.nan))

    T_out, qf_out, E_out, P_out, hc_out, hr_out = _alloc(cap if cap >= n_out else cap + 1)
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
    win = {"a": 0}           # global index of row 0 of the buffers

    def _window_args():
        a = win["a"]
        if a + cap >= n_out:
            tw = t_out[a:] if a else t_out
        else:
            tw = np.concatenate([t_out[a:a + cap], t_out[-1:]])
        win["t"] = tw
        return [tw, 1, tw.size, land, sysm.breakpoints, sysm.breakpoint_jumps,
                r.tolerance, max_step, *sa, sysm.dirich_node, sysm.dirich_sched,
                sysm.dirich_face, qd_state, ev_i, ev_f, ev_out, T_out, qf_out, E_out, P_out,
                hc_out, hr_out, ks]

    args = _window_args()
    if progress is not False:
        watchers.insert(0, ProgressBar(show=True if progress else None))
    # rows handed to the sinks, and what a streamed result keeps of them: the first and the
    # last row, and the running maximum of every temperature
    kept = {"done": 0, "first": None, "prev": None, "Tmax": None}

    def _rows(lo, hi, times=None):
        """Rows [lo, hi) (global) of the buffers as raw arrays (views)."""
        a = win["a"]
        sl = slice(lo - a, hi - a)
        t = times if times is not None else t_out[lo:hi]
        return (t, T_out[sl], qf_out[sl], E_out[sl], P_out[sl], hc_out[sl], hr_out[sl])

    def _deliver(hi, times=None):
        """Hand rows [done, hi) to the sinks and update the streamed reductions."""
        lo = kept["done"]
        if hi <= lo or not sinks:
            return
        raw = _rows(lo, hi, times)
        ctx = [x for x in (kept["first"], kept["prev"] if lo > 1 else None) if x is not None]
        nctx = len(ctx)

        def series():
            full = raw if not nctx else tuple(
                np.concatenate([np.asarray(c[i]).reshape((1,) + np.shape(raw[i])[1:])
                                for c in ctx] + [raw[i]]) for i in range(7))
            return stream_series(series_view(case, sysm, *full), nctx)

        t, Tb, qfb, Eb, Pb, hcb, hrb = raw
        block = OutputBlock(lo, t, Tb, qfb, Eb[:, :nf], Eb[:, nf + EX_HEATER],
                            Eb[:, nf + EX_LOSS], Pb, hcb, hrb, series)
        for w in sinks:
            w.rows(block)
        if kept["first"] is None:
            kept["first"] = tuple(np.array(x[0]) for x in raw)
        kept["prev"] = tuple(np.array(x[-1]) for x in raw)
        m = np.max(Tb, axis=0)
        kept["Tmax"] = m if kept["Tmax"] is None else np.maximum(kept["Tmax"], m)
        kept["done"] = hi

    k = 1
    t0 = _time.perf_counter()
    failed = False
    implausible = None
    stop = None
    budget = FIRST_CHUNK_STEPS if chunk_seconds > 0 else 1
    started = []
    rows_total, steps_total = 0, 0
    limit = None             # steps a call may take after calls that stepped past the window
    gap = None               # outputs not kept when a stop came between the passes of a call
    polled = [_time.perf_counter()]

    def _ask():
        """Call the observers' update; return the first Stop asked for, or None."""
        polled[0] = _time.perf_counter()
        pr = _progress()
        for w in watchers:
            ask = w.update(pr)
            if ask:
                return ask if isinstance(ask, Stop) else Stop("stopped by an observer")
        return None

    def _progress():
        return RunProgress(case.name, float(acc[-1]), float(r.duration), int(k), int(n_out),
                           int(stats[K.ST_ACC]), _time.perf_counter() - t0, T.copy())

    try:
        try:
            p0 = _progress()
            for w in watchers:
                started.append(w)
                if hasattr(w, "start"):
                    w.start(p0)
            while k < n_out:
                a = win["a"]
                call = budget
                if a + cap < n_out:
                    # keep a call inside the window where that is cheap to know: one row per
                    # step when outputs are landed on, else the measured rows per step
                    room = cap - (k - a)
                    if land:
                        call = min(call, room)
                    elif steps_total:
                        call = min(call, max(1, int(0.5 * room * steps_total
                                                    / max(rows_total, 1))))
                    if limit is not None:
                        call = min(call, limit)
                    snap = tuple(x.copy() for x in (T, cs, acc, stats, ks, qd_state, ev_out))
                steps0 = stats[K.ST_ACC]
                k0 = k
                bad = None
                passes = 0
                c0 = _time.perf_counter()
                while True:
                    a = win["a"]
                    args[1] = k - a
                    done = K.integrate(T, cs, acc, stats, *args, call)
                    t_s = acc[-1]
                    over = a + cap < n_out and t_out[a + cap] <= t_s + 1e-12 * (1.0 + abs(t_s))
                    if over:    # (a row in the end-of-run slot is none of the window's)
                        done = min(done, cap - (k - a))
                    if stats[K.ST_STATUS] == 0:
                        bad = _implausible(T_out, k - a, k - a + done)
                    if bad is not None or not over:
                        break
                    # the call stepped past the window's last row (never when outputs are
                    # landed on: at most one row a step, and the call is capped to the room
                    # left).  Hand the window on and run the same call again from its start
                    # for the rows after it: without landing, the steps do not depend on the
                    # output rows, so the state and every row come out exactly as in one go.
                    k += done
                    _deliver(k)
                    win["a"] = k
                    args = _window_args()
                    took = int(stats[K.ST_ACC] - snap[3][K.ST_ACC])
                    limit = max(1, took // 2)
                    if _time.perf_counter() - polled[0] > chunk_seconds:
                        # observers are served between the passes too; a stop here keeps
                        # the state at the end of the call, and the rows after the window
                        # up to it are not kept (said in the message)
                        stop = _ask()
                        if stop is not None:
                            gap = (float(t_out[k - 1]), float(acc[-1]))
                            done = 0
                            break
                    for x, v in zip((T, cs, acc, stats, ks, qd_state, ev_out), snap):
                        x[...] = v
                    passes += 1
                if limit is not None and not passes:
                    limit = None if 2 * limit >= budget else 2 * limit
                spent = _time.perf_counter() - c0
                a = win["a"]
                k += done
                rows_total += k - k0
                steps_total += int(stats[K.ST_ACC] - steps0)
                if stats[K.ST_STATUS] != 0 or stop is not None:
                    failed = True
                    break
                if bad is not None:
                    failed = True
                    implausible = (bad[0] + a, bad[1])
                    # keep only the plausible outputs before it: the rest are marked missing
                    for arr in (T_out, qf_out, E_out, P_out, hc_out, hr_out):
                        arr[bad[0]:] = np.nan
                    k = bad[0] + a
                    stats[K.ST_T] = t_out[k - 1]
                    break
                if stream:
                    if k - a >= cap // 2 and k < n_out:
                        _deliver(k)
                        win["a"] = k
                        args = _window_args()
                else:
                    _deliver(k)
                if k >= n_out:
                    break
                # next budget: about chunk_seconds of wall time at the measured cost of a
                # step, growing at most fourfold per chunk (the first may include compiling)
                per = spent / max(stats[K.ST_ACC] - steps0, 1.0)
                budget = int(max(1, min(4 * budget, MAX_CHUNK_STEPS,
                                        chunk_seconds / max(per, 1e-9))))
                stop = _ask()
                if stop is not None:
                    failed = True
                    break
        finally:
            for w in started:
                if hasattr(w, "close"):
                    w.close()
        t_last = t_out[k - 1]
        if gap is not None:
            # stopped between the passes of a call: the rows end at the window handed on;
            # no stop row (the state is further on, past rows that were not written)
            stats[K.ST_T] = t_last
        if stop is not None and stream and gap is None:
            t_stop = float(acc[-1])
            if t_stop > t_last:
                # the state at the stop time as a last output row, in the window's free slot
                j = k - win["a"]
                vals = _stop_row(sysm, T, ks, acc, qd_state)
                for arr, v in zip((T_out, qf_out, E_out, P_out, hc_out, hr_out), vals):
                    arr[j] = v
                _deliver(k + 1, np.concatenate([t_out[kept["done"]:k], [t_stop]]))
        elif stop is not None and not stream:
            # keep the state at the stop time as a last output row (what an output there
            # would be)
            t_stop = float(acc[-1])
            if t_stop > t_last:
                _deliver(k)
                t_out, T_out, qf_out, E_out, P_out, hc_out, hr_out = _append_stop_row(
                    sysm, k, t_stop, T, ks, acc, qd_state, t_out, T_out, qf_out, E_out,
                    P_out, hc_out, hr_out)
                _deliver(k + 1, t_out[kept["done"]:k + 1])
        _deliver(k)
        if stream:
            # the run's result from the first row, the last row and the running maxima of
            # the temperatures: every number of the summary is one of those (or of the
            # statistics), exactly as from the whole history
            first, last = kept["first"], kept["prev"]
            mid = (last[0], kept["Tmax"]) + last[2:]
            t_out, T_out, qf_out, E_out, P_out, hc_out, hr_out = (
                np.stack([f, m, la]) for f, m, la in zip(first, mid, last))
        res = Result.from_run(case, sysm, t_out, T_out, qf_out, E_out, P_out, hc_out, hr_out,
                              stats, ev_out, complete=not failed,
                              wall_time=_time.perf_counter() - t0)
        end = cs.copy()
        end[K.CS_NEXT] -= stats[K.ST_T]
        end[K.CS_OFF] -= stats[K.ST_T]
        res.control_state = end
        raise_ = None
        if stop is not None:
            res.status = "interrupted"
            res.message = (f"the run was stopped at t = {stats[K.ST_T]:.6g} s "
                           f"({stats[K.ST_T] / 3600:.4g} h) of {r.duration:.6g} s: "
                           f"{stop.reason}. Results up to that time are kept and marked "
                           "incomplete.")
            if gap is not None:
                res.message += (" (The stop came while one long stretch of time steps, "
                                f"computed up to t = {gap[1]:.6g} s, was being written out "
                                "window by window: the outputs end at the last row written.)")
            raise_ = (Interrupted, stop.signal)
        elif failed and implausible is not None:
            i_out, peak = implausible
            what = "not finite" if not np.isfinite(peak) else f"{peak:.6g} K"
            res.message = (
                f"the run was stopped at output {i_out} (t = {t_grid[i_out]:.6g} s): "
                f"a wall temperature reached {what}, beyond the plausibility ceiling of "
                f"{PLAUSIBLE_CEILING_K:.0f} K (far above every property table and fluid "
                "temperature fdwall knows). The heat put in is unphysical for this wall: check "
                "the heater powers, imposed fluxes and radiation/fluid temperatures of the "
                "case. Results before that time are kept and marked incomplete.")
            res.status = "implausible"
            raise_ = (ConvergenceError, None)
        elif failed:
            why = ("the time step fell below its floor" if stats[K.ST_STATUS] == 1 else
                   "the time steps stalled (tens of thousands of steps without real progress)")
            if stats[K.ST_COLD] > 0:
                why += ("; temperatures were driven towards absolute zero: the case takes more "
                        "heat out than the wall holds (check the signs of fluxes and heater "
                        "powers)")
            res.message = (f"the solver could not converge at t = {stats[K.ST_T]:.6g} s "
                           f"({stats[K.ST_T] / 3600:.4g} h): {why}. Results up to that time are "
                           "kept and marked incomplete. Check for unphysical inputs (huge film "
                           "coefficients or fluxes, a heater with no path for its heat).")
            res.status = "not converged"
            raise_ = (ConvergenceError, None)
        if stream:
            res = FileResult(res, storage)
            if not storage.keep_open:
                res.write_hdf5(storage.path)
    except BaseException:
        for w in started:
            if hasattr(w, "abort"):
                w.abort()
        raise
    if raise_ is not None and strict:
        exc, sig = raise_
        if exc is Interrupted:
            raise Interrupted(res.message, res, sig)
        raise exc(res.message, res)
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
    # the common case in two plain reductions (a NaN anywhere makes the maximum NaN, and a
    # -inf makes the minimum -inf): only a block that fails them is searched row by row
    if block.max() <= PLAUSIBLE_CEILING_K and block.min() > -np.inf:
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



def _stop_row(sysm, T, ks, acc, qd_state):
    """The state at the end of the last step as an output row: temperatures [K], face flows
    [W], cumulative energies [J], heater power [W], film coefficients [W/m2/K]."""
    nun, nf = T.size, sysm.face_i.shape[0]
    o = KS_ARRAYS + 4 * nun
    q1, hcw, hrw = ks[o:o + nf], ks[o + nf:o + 2 * nf], ks[o + 2 * nf:o + 3 * nf]
    ex1 = ks[o + 3 * nf:o + 3 * nf + N_EX]
    qf = q1.copy()
    for kk, f in enumerate(sysm.dirich_face):
        qf[f] = qd_state[kk]
    return (T, qf, acc[:nf + N_EX], ex1[EX_HEATER], hcw, hrw)


def _append_stop_row(sysm, k, t_stop, T, ks, acc, qd_state, t_out, T_out, qf_out, E_out, P_out,
                     hc_out, hr_out):
    """Output arrays cut to the ``k`` rows written plus one row at the stop time ``t_stop``
    [s]: the state at the end of the last step, exactly as an output there would read
    (temperatures [K], face flows [W], cumulative energies [J], heater power [W], film
    coefficients [W/m2/K])."""
    vals = (t_stop,) + _stop_row(sysm, T, ks, acc, qd_state)
    arrs = (t_out, T_out, qf_out, E_out, P_out, hc_out, hr_out)
    return tuple(np.concatenate([a[:k], np.asarray(v, dtype=float).reshape((1,) + a.shape[1:])])
                 for a, v in zip(arrs, vals))
