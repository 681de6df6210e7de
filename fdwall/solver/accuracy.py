"""Accuracy by default: the contract, the spatial error estimate and automatic refinement.

The accuracy contract
---------------------
At default settings (no layer ``cells``, no ``tolerance`` given), **every reported temperature
is within max(0.5 % of the largest change seen so far at that point, 0.05 K) of the converged
answer, at every output**, including the first outputs after a step in a boundary condition
(a heater flux, a face, fluid or surroundings temperature, a heater power), for slabs,
cylinders and spheres, hollow or solid.  "The largest change seen so far" at a point and an
output time t is max over the outputs up to t of |T(t') - T(0)| at that point.  Heat flows
are held to the matching accuracy: within max(0.5 % of the largest flow seen so far at that
face, the flow the face's film carries for 0.05 K); ``meets_contract`` and the refinement
take both margins (under on/off control the flows are reported and do not decide: even as
cycle means they follow the phase of the switching).  Under on/off control (a thermostat, or a switched duty or PID
controller) the contract is judged on cycle means (temperatures averaged over a few cycles)
and switching times, not output by output: a switching instant that moves by a fraction of
a cycle changes the temperature at an output near it by a finite amount however fine the
mesh.

How it is met
-------------
1. The mesh is chosen from the problem (:mod:`fdwall.mesh`): cells graded towards every face
   and interface to a fraction of the penetration depth over the shortest time that matters
   (the first output interval, the time from each step in a boundary schedule to the next
   output), floored at :data:`fdwall.mesh.TIME_FLOOR`; a cell Biot number below 0.5 at faces
   with a fixed strong film coefficient.
2. The default time tolerance follows the contract (:func:`fdwall.model.contract_tolerance`:
   1e-4 of the case's scale of temperature change, 0.001 K to 0.05 K).
3. Every run estimates its own spatial error (:func:`estimate`): the case is run a second
   time on the coarse mesh made of every other node (half the cells, same grading: the
   meshes are nested, so faces and interfaces are nodes of both), and Richardson
   extrapolation with order p = 2 (the scheme's order, checked in
   tests/test_verify_convergence.py) gives the error of the reported (fine) run,
   ``|T_fine - T_coarse| / (r^p - 1)``, r = 2, at every output time, at every face, every
   interface and the chamber node.  The estimate is compared with the contract's allowance
   output by output; its ratio is the *contract margin* (at most 1: met).
4. When the margin exceeds 1 the cells are doubled (the same grading map on twice the
   cells, so the previous run becomes the coarse one) and the run repeated, up to
   :data:`MAX_ROUNDS` doublings and the loader's caps on cells and stored values, and while
   each doubling at least halves the margin (:data:`STALL_RATIO`: otherwise the error left is
   not spatial); the estimate then says why it stopped.  A layer with its own ``cells`` is never refined (the
   estimate is still made and reported, with a note).

Under on/off control the estimate also covers the heater's first switch-off (the end of
the warm-up), read from the heater energy at the outputs on both meshes and allowed
max(0.5 % of its time, 1 s); it is reported as ``switching`` (``first_switch_off_s``,
``error_s``, ``margin``) and counts in the margin.  A streamed run's estimate reads both runs
from their files a block of rows at a time, and its extra runs stream too, so memory stays
bounded by the output window.

Runs done inside analyses (sizing loops, studies, fits) may skip all of this with
``run(case, estimate=False)``; the command-line ``run`` always reports it.  The estimate of a
run that stopped early, or that starts from a given per-node profile (whose coarse twin does
not exist), is skipped with a note.

The estimate is reported as ``Result.error_estimate`` (a dict, keys below), in the text
summary, in the JSON summary under ``"error_estimate"`` and in the HDF5 file as the attribute
group ``/error_estimate`` (one subgroup per point).

Keys of ``Result.error_estimate``: ``method``, ``order``, ``refinements`` (doublings made),
``cells`` (per solved wall, per layer), ``max_error_K``, ``margin`` (largest estimate over
allowance), ``meets_contract`` (bool or None when not estimated), ``flow_margin`` (the same
for the face heat flows), ``points`` (a list of dicts: ``point``, ``max_error_K``,
``at_s``, ``margin``), ``notes`` (list of text), ``extra_runs`` and ``extra_wall_time_s``.
"""
from __future__ import annotations

import os
import time as _time
from dataclasses import replace

import numpy as np

from ..case.loader import MAX_LAYER_CELLS, MAX_STORED, MAX_WALL_CELLS
from ..errors import InternalError
from ..mesh import TIME_FLOOR, cell_counts
from ..result import _ARRAY_DATASETS, FileResult
from ..system import build_system
from .layout import (
    CI_HEATER_NODE,
    CI_MODE,
    CTL_DUTY_SWITCHED,
    CTL_PID_SWITCHED,
    CTL_THERMOSTAT,
    FF_AREA,
)
from .observers import InterruptCheck, StorageObserver

__all__ = ["checked_run", "estimate", "allowance", "refined_case", "CONTRACT_FRACTION",
           "CONTRACT_FLOOR_K", "ORDER", "MAX_ROUNDS", "STALL_RATIO"]

CONTRACT_FRACTION = 0.005
"""Relative part of the contract: 0.5 % of the largest change seen so far [-]."""
CONTRACT_FLOOR_K = 0.05
"""Absolute floor of the contract [K]."""
ORDER = 2
"""Order of convergence in space used for Richardson extrapolation [-] (vertex-centred finite
volumes, second order; measured in tests/test_verify_convergence.py)."""
MAX_ROUNDS = 3
"""Largest number of cell doublings of the automatic refinement [-] (8 times the cells)."""
STALL_RATIO = 0.5
"""Refinement stops when a doubling leaves the margin above this fraction of the previous one
[-] (a spatial error of order 2 falls to a quarter; common practice, no source)."""


def allowance(T: np.ndarray) -> np.ndarray:
    """The contract's allowance [K] for a series ``T`` (n_time, n_points) [K]: at every output,
    max(0.5 % of the largest |T - T[0]| so far, 0.05 K)."""
    T = np.asarray(T, dtype=float)
    change = np.maximum.accumulate(np.abs(T - T[:1]), axis=0)
    return np.maximum(CONTRACT_FRACTION * change, CONTRACT_FLOOR_K)


def _points(res):
    """(labels, unknown indices) of the points the estimate is made at: every face and
    interface of every solved wall, and the chamber."""
    sysm = res.system
    labels, idx = [], []
    for j, (w, m) in enumerate(zip(sysm.walls, sysm.meshes)):
        o = sysm.offsets[j]
        labels.append(f"{w.name}:inner")
        idx.append(o)
        for k, i in enumerate(m.interface_nodes):
            labels.append(f"{w.name}:interface {k + 1}")
            idx.append(o + i)
        labels.append(f"{w.name}:outer")
        idx.append(o + m.n - 1)
    if sysm.has_chamber:
        labels.append("chamber")
        idx.append(sysm.n_nodes)
    return labels, np.array(idx, dtype=int)


def _switched(res) -> bool:
    """True when the heater is switched on and off (thermostat, switched duty or PID)."""
    ci = res.system.ctl_i
    return bool(ci[CI_HEATER_NODE] >= 0 and ci[CI_MODE] in (CTL_THERMOSTAT, CTL_DUTY_SWITCHED,
                                                             CTL_PID_SWITCHED))


class _Series:
    """Rows of a run's series, read a block at a time: from memory for a :class:`Result`,
    from its file for a :class:`FileResult` (so the estimate of a streamed run holds a block
    of rows, not the history).  ``block`` rows [-] depend on the node count only, so an
    in-memory and a streamed run give the same estimate to the last digit."""

    def __init__(self, res, block_rows):
        self.res = res
        self.block = int(block_rows)
        self._h = None
        self._own = False
        if isinstance(res, FileResult):
            st = res._storage
            if st.pending:
                self._h = st.h
            else:
                import h5py
                self._h = h5py.File(st.path, "r")
                self._own = True
        self.n = int(res.n_outputs if isinstance(res, FileResult) else res.times.size)

    def close(self):
        if self._own and self._h is not None:
            self._h.close()
        self._h = None

    def rows(self, attr, a, b, cols=None):
        """Rows ``a:b`` of the series ``attr`` (``T``, ``face_flow``, ``heater_power``,
        ``heater_energy``), columns ``cols`` (all when None)."""
        if self._h is None or attr in self.res._cache:
            x = getattr(self.res, attr)[a:b]
        else:
            x = self._h[_ARRAY_DATASETS[attr]][a:b]
        x = np.asarray(x, dtype=float)
        return x if cols is None else x[:, cols]

    def blocks(self, halo=0):
        """(a, b, lo, hi): the block ``a:b`` and the rows ``lo:hi`` read for it (``halo``
        rows more on each side, clipped to the run)."""
        for a in range(0, self.n, self.block):
            b = min(a + self.block, self.n)
            yield a, b, max(0, a - halo), min(self.n, b + halo)


def _block_rows(res) -> int:
    """Rows per block of the estimate [-]: about 1 MB of a temperature row block."""
    return max(64, (1 << 17) // max(int(res.system.n_unknowns), 1))


def _cycle_window(res, series) -> int:
    """Moving-average window [outputs] over which switched control is judged: at least three
    outputs, three control periods and three mean switching intervals seen at the outputs."""
    t = res.times
    dt = float(np.median(np.diff(t))) if t.size > 1 else 1.0
    span = 3.0 * float(res.case.control.period or 0.0)
    n_flips, first, last, prev = 0, None, None, None
    for a, b, _, _ in series.blocks():
        on = series.rows("heater_power", a, b) > 0.0
        on = on.reshape(on.shape[0], -1)[:, 0]
        if prev is not None:
            on = np.concatenate([[prev], on])
            base = a - 1
        else:
            base = a
        f = np.flatnonzero(on[1:] != on[:-1]) + base
        if f.size:
            first = int(f[0]) if first is None else first
            last = int(f[-1])
            n_flips += f.size
        prev = on[-1]
    if n_flips >= 2:
        span = max(span, 3.0 * float(t[last] - t[first]) / (n_flips - 1) * 2.0)
    return int(max(3, np.ceil(span / max(dt, 1e-12))))


def _smooth(a, n):
    """Centred moving average of the rows of ``a`` over ``n`` outputs (edges: shorter)."""
    if n <= 1:
        return a
    c = np.cumsum(np.vstack([np.zeros((1,) + a.shape[1:]), a]), axis=0)
    m = a.shape[0]
    i = np.arange(m)
    lo = np.clip(i - n // 2, 0, m)
    hi = np.clip(i + n // 2 + 1, 0, m)
    return (c[hi] - c[lo]) / (hi - lo)[:, None]


def _first_switch_off(res, series):
    """Time [s] of the heater's first switch-off under on/off control, from the heater energy
    at the outputs (the heater is at full power until then: the switch-off lies where the
    energy first falls behind the full-power line), or None when it never switches off.
    Accurate when at most one switching falls in the output interval holding it."""
    t = res.times
    p_on, prev = 0.0, None
    for a, b, _, _ in series.blocks():
        P = series.rows("heater_power", a, b).reshape(b - a, -1)[:, 0]
        p_on = max(p_on, float(P.max(initial=0.0)))
    if p_on <= 0.0:
        return None
    for a, b, _, _ in series.blocks():
        E = series.rows("heater_energy", a, b).reshape(b - a, -1)[:, 0]
        P = series.rows("heater_power", a, b).reshape(b - a, -1)[:, 0]
        if prev is not None:
            E, P, base = np.concatenate([[prev[0]], E]), np.concatenate([[prev[1]], P]), a - 1
        else:
            base = a
        off = np.flatnonzero(P[1:] < p_on * (1.0 - 1e-9))
        if off.size:
            k = int(off[0])
            dE = float(E[k + 1] - E[k])
            t0, t1 = float(t[base + k]), float(t[base + k + 1])
            return min(t1, t0 + max(dE, 0.0) / p_on)
        prev = (E[-1], P[-1])
    return None


def _total_cells(res):
    return float(sum(m.n - 1 for m in res.system.meshes))


def estimate(fine, coarse) -> dict:
    """Spatial error estimate [K] of the run ``fine`` from the run ``coarse`` on a mesh with
    half the cells (nested), by Richardson extrapolation of order :data:`ORDER`.

    Either run may be held in memory or streamed to a file; the estimate reads them a block
    of rows at a time.  Under on/off control the temperatures and flows are judged on their
    moving averages over a few cycles, and the heater's first switch-off (the end of the
    warm-up) is estimated too, allowed max(0.5 % of its time, 1 s).  Returns the dict stored
    as ``Result.error_estimate`` (see the module docstring), without the refinement
    bookkeeping (``refinements``, ``notes``, ``extra_runs`` ...).
    """
    labels, i_f = _points(fine)
    labels_c, i_c = _points(coarse)
    if labels != labels_c or fine.times.shape != coarse.times.shape:
        raise InternalError("the coarse run of the error estimate does not match the "
                            "reported run point for point")
    r = _total_cells(fine) / max(_total_cells(coarse), 1.0)
    factor = 1.0 / (r ** ORDER - 1.0)
    rows = _block_rows(fine)
    sf, sc = _Series(fine, rows), _Series(coarse, rows)
    try:
        return _estimate(fine, labels, i_f, i_c, factor, sf, sc)
    finally:
        sf.close()
        sc.close()


def _estimate(fine, labels, i_f, i_c, factor, sf, sc) -> dict:
    switched = _switched(fine)
    n = _cycle_window(fine, sf) if switched else 1
    halo = n // 2 + 1 if switched else 0
    npt = len(labels)
    # pass 1: the largest face flow of the run (the floor of the flows' allowance)
    qmax = 0.0
    for a, b, _, _ in sf.blocks():
        qmax = max(qmax, float(np.abs(sf.rows("face_flow", a, b)).max(initial=0.0)))
    qfloor = 1e-6 * max(qmax, 1e-30)
    area = np.asarray(fine.system.face_f[:, FF_AREA], dtype=float)
    # pass 2: the estimate block by block, the running largest changes carried along
    T0 = sf.rows("T", 0, 1, i_f)[0]
    chg = np.zeros(npt)
    qchg = None
    err_max = np.zeros(npt)
    best = np.full(npt, -1.0)
    best_t = np.zeros(npt)
    flow_margin = 0.0
    times = fine.times
    for a, b, lo, hi in sf.blocks(halo):
        Tf_raw = sf.rows("T", lo, hi, i_f)
        Tf, Tc = Tf_raw, sc.rows("T", lo, hi, i_c)
        qf, qc = sf.rows("face_flow", lo, hi), sc.rows("face_flow", lo, hi)
        if switched:
            Tf, Tc, qf, qc = (_smooth(x, n) for x in (Tf, Tc, qf, qc))
        s = slice(a - lo, b - lo)
        err = np.abs(Tf[s] - Tc[s]) * factor
        c = np.maximum(np.maximum.accumulate(np.abs(Tf_raw[s] - T0), axis=0), chg)
        chg = c[-1]
        ratio = err / np.maximum(CONTRACT_FRACTION * c, CONTRACT_FLOOR_K)
        err_max = np.maximum(err_max, err.max(axis=0))
        k = np.argmax(ratio, axis=0)
        rk = ratio[k, np.arange(npt)]
        better = rk > best
        best = np.where(better, rk, best)
        best_t = np.where(better, times[a + k], best_t)
        qerr = np.abs(qf[s] - qc[s]) * factor
        qa = np.abs(sf.rows("face_flow", a, b))
        qs = np.maximum.accumulate(qa, axis=0)
        if qchg is not None:
            qs = np.maximum(qs, qchg)
        qchg = qs[-1]
        if qerr.size:
            # the flows' floor matches the temperatures': the flow a face film (convection
            # plus radiation) carries for CONTRACT_FLOOR_K, and never below 1e-6 of the
            # run's largest flow
            g = (sf.rows("h_conv", a, b) + sf.rows("h_rad", a, b)) * area
            floor = np.maximum(np.nan_to_num(g) * CONTRACT_FLOOR_K, qfloor)
            flow_margin = max(flow_margin, float(
                (qerr / np.maximum(CONTRACT_FRACTION * qs, floor)).max()))
    points = [{"point": lab, "max_error_K": float(err_max[p]), "at_s": float(best_t[p]),
               "margin": float(best[p])} for p, lab in enumerate(labels)]
    margin = float(best.max()) if npt else 0.0
    # temperatures and flows are both held to the contract; under on/off control the face
    # flows follow the phase of the switching even as cycle means, so there they are
    # reported and do not decide
    both = margin if switched else max(margin, flow_margin)
    out = {
        "method": ("Richardson extrapolation against a run on every other node (half the "
                   "cells), order 2" + ("; on/off control judged on cycle means and the "
                                        "first switch-off" if switched else "")),
        "order": ORDER,
        "max_error_K": float(err_max.max()) if npt else 0.0,
        "margin": margin,
        "meets_contract": bool(both <= 1.0),
        "flow_margin": flow_margin,
        "flows_decide": not switched,
        "points": points,
    }
    if switched:
        tf, tc = _first_switch_off(fine, sf), _first_switch_off(sc.res, sc)
        if tf is not None and tc is not None:
            terr = abs(tf - tc) * factor
            tm = terr / max(CONTRACT_FRACTION * tf, TIME_FLOOR)
            out["switching"] = {"first_switch_off_s": tf, "error_s": terr, "margin": tm}
            if tm > margin:
                out["margin"] = tm
                out["meets_contract"] = bool(tm <= 1.0)
    return out


def _walls_of(case):
    return [case.wall] if not case.is_enclosure else [ew.wall for ew in case.walls]


def refined_case(case, factor: float):
    """A copy of ``case`` with every wall's ``refine`` times ``factor`` [-]."""
    if not case.is_enclosure:
        return replace(case, wall=replace(case.wall, refine=case.wall.refine * factor))
    walls = tuple(replace(ew, wall=replace(ew.wall, refine=ew.wall.refine * factor))
                  for ew in case.walls)
    return replace(case, walls=walls)


def _own_cells(case) -> list:
    return [f"{w.name}/{l.label}" for w in _walls_of(case) for l in w.layers
            if l.cells is not None]


def _within_caps(system, n_out):
    """None when the mesh of ``case`` is within the loader's caps, else the reason (text)."""
    g = system.grading
    nodes = 0
    for w in system.walls:
        cells = cell_counts(w, g)
        if max(cells) > MAX_LAYER_CELLS:
            return (f"a layer of wall '{w.name}' would need {max(cells)} cells, more than "
                    f"fdwall meshes in one layer ({MAX_LAYER_CELLS})")
        if sum(cells) > MAX_WALL_CELLS:
            return (f"wall '{w.name}' would need {sum(cells)} cells, more than fdwall meshes "
                    f"in one wall ({MAX_WALL_CELLS})")
        nodes += sum(cells) + len(cells) + 1
    if n_out * nodes > MAX_STORED:
        return (f"{n_out} outputs x {nodes} temperatures would exceed the stored values "
                f"fdwall keeps ({MAX_STORED:g})")
    return None


def _cells_of(res):
    return [[b - a for a, b in m.layer_nodes] for m in res.system.meshes]


def _deciding(est) -> float:
    """The margin that decides the contract [-]: temperatures (and the first switch-off),
    and the face flows unless the heater is switched on and off."""
    if est.get("flows_decide", True):
        return max(est["margin"], est["flow_margin"])
    return est["margin"]


def _store_path(store):
    """Final path of the caller's store [str], or None for a run held in memory."""
    if store is None:
        return None
    return store.path if isinstance(store, StorageObserver) else os.fspath(store)


def checked_run(run_once, case, system, kw):
    """Run ``case`` with ``run_once`` (the single-mesh driver), estimate its spatial error and
    refine until the contract is met (see the module docstring); returns the reported
    :class:`fdwall.result.Result` with ``error_estimate`` set.

    ``kw`` are the remaining keyword arguments of the driver (``initial``, ``progress``,
    ``strict``, ``control_state``, ``observers``, ``chunk_seconds``, ``store``,
    ``window_bytes``).  When the run streams to a file (``store``), the extra runs stream
    too (the coarse one to a temporary file in the same folder, removed after; a refined one
    to a temporary file that becomes the store when the caller finishes it), so memory stays
    bounded by the output window whatever the run's length.
    """
    path = _store_path(kw.get("store"))
    own = []        # temporary stores of the extra runs (all removed unless reported)
    keep = None
    try:
        fine = _checked(run_once, case, system, kw, path, own)
        keep = fine._storage if isinstance(fine, FileResult) else None
        return fine
    finally:
        for st in own:
            if st is not keep and st.pending:
                st.abort()


def _checked(run_once, case, system, kw, path, own):
    fine = run_once(case, system=system, **kw)
    t0 = _time.perf_counter()
    notes = []
    g = fine.system.grading
    if g is not None and g.floored:
        notes.append(f"outputs are asked for closer than {TIME_FLOOR:g} s to the start or to a "
                     f"step in a boundary schedule: the mesh resolves {TIME_FLOOR:g} s, and "
                     "the contract is not promised at those outputs")
    info = {"method": "not estimated", "order": ORDER, "refinements": 0,
            "cells": _cells_of(fine), "max_error_K": float("nan"), "margin": float("nan"),
            "meets_contract": None, "flow_margin": float("nan"), "points": [],
            "notes": notes, "extra_runs": 0, "extra_wall_time_s": 0.0}
    initial = kw.get("initial")
    if not fine.complete:
        notes.append(f"the run did not reach its end ({fine.status}): no error estimate")
        fine.error_estimate = info
        return fine
    if ((initial is not None and np.ndim(initial) > 0)
            or (initial is None and np.ndim(case.run.start_temperature) > 0)):
        notes.append("the run starts from a profile given node by node, which has no twin "
                     "on the coarse mesh: no error estimate")
        fine.error_estimate = info
        return fine
    extra = dict(kw)
    extra["progress"] = False
    extra["strict"] = False
    # the extra runs are not runs of their own for the caller's observers (no progress, no
    # start / close calls); an interrupt check among them still stops them
    extra["observers"] = [w for w in (kw.get("observers") or ()) if isinstance(w, InterruptCheck)]

    def store(final):
        """A store for an extra run: None in memory, else an open temporary file that is
        renamed to ``final`` only when finished (a coarse run's never is)."""
        if path is None:
            return None
        st = StorageObserver(final, keep_open=True)
        own.append(st)
        return st

    def drop(res):
        if isinstance(res, FileResult) and res._storage in own:
            res.discard()

    n_runs = 0
    coarse_path = (None if path is None else
                   os.path.join(os.path.dirname(os.path.abspath(path)), ".coarse-estimate.h5"))
    coarse = run_once(refined_case(case, 0.5), system=None, **dict(extra, store=store(coarse_path)))
    n_runs += 1
    if not coarse.complete:
        drop(coarse)
        notes.append(f"the coarse run of the estimate did not reach its end ({coarse.status}): "
                     "no error estimate")
        info.update(extra_runs=n_runs, extra_wall_time_s=_time.perf_counter() - t0)
        fine.error_estimate = info
        return fine
    est = estimate(fine, coarse)
    drop(coarse)
    own_cells = _own_cells(case)
    rounds = 0
    while not est["meets_contract"]:
        if own_cells:
            notes.append("not refined: layer(s) " + ", ".join(own_cells) + " set their own cells "
                         "(leave cells out to let fdwall choose and refine the mesh)")
            break
        if rounds >= MAX_ROUNDS:
            notes.append(f"not refined further: {MAX_ROUNDS} doublings of the cells made "
                         "(set a layer's cells, or mesh_refine, to go further)")
            break
        f = 2.0 ** (rounds + 1)
        cand = refined_case(case, f)
        sysm = build_system(cand)
        why = _within_caps(sysm, fine.times.size)
        if why is not None:
            notes.append(f"not refined further: {why}")
            break
        finer = run_once(cand, system=sysm, **dict(extra, store=store(path)))
        n_runs += 1
        if not finer.complete:
            drop(finer)
            notes.append(f"the refined run did not reach its end ({finer.status}): the result "
                         "on the previous mesh is reported")
            break
        prev = _deciding(est)
        est = estimate(finer, fine)
        drop(fine)
        fine = finer
        rounds += 1
        now = _deciding(est)
        if not est["meets_contract"] and now > STALL_RATIO * prev:
            notes.append(f"not refined further: doubling the cells took the margin only from "
                         f"{prev:.3g} to {now:.3g}, so the error left is not spatial "
                         "(a loose time tolerance, or on/off control) and more cells cannot "
                         "remove it")
            break
    if rounds:
        notes.append(f"the mesh was refined automatically: cells doubled {rounds} time(s) to "
                     "meet the accuracy contract")
    if not est["meets_contract"]:
        worst = max(est["points"], key=lambda p: p["margin"])
        sw = est.get("switching")
        if _deciding(est) > max(worst["margin"], sw["margin"] if sw else 0.0):
            notes.append(f"the accuracy contract is not met: the estimated error of a face heat "
                         f"flow is {est['flow_margin']:.3g} times its allowance (0.5 % of the "
                         "largest flow so far at that face, or the flow of the face film "
                         f"for {CONTRACT_FLOOR_K:g} K)")
        elif sw is not None and sw["margin"] >= worst["margin"]:
            notes.append(f"the accuracy contract is not met: estimated error of the first "
                         f"switch-off {sw['error_s']:.3g} s at {sw['first_switch_off_s']:.6g} s "
                         f"({sw['margin']:.3g} times the allowance)")
        else:
            notes.append(f"the accuracy contract is not met: estimated spatial error "
                         f"{worst['max_error_K']:.3g} K at {worst['point']} "
                         f"({worst['margin']:.3g} times the allowance at t = "
                         f"{worst['at_s']:.6g} s)")
    info.update({k: v for k, v in est.items() if k != "flows_decide"})
    info.update(refinements=rounds, cells=_cells_of(fine), notes=notes, extra_runs=n_runs,
                extra_wall_time_s=_time.perf_counter() - t0)
    fine.error_estimate = info
    return fine
