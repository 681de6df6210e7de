"""Convergence check of a run: the main outputs recomputed on a refined mesh with a tighter
tolerance, and their differences, for the calculation report.

Layer: analyses (calls the solver through its public API, takes model objects, never case
files).  The report shows what :func:`convergence_check` stored; it computes nothing itself.

The check reruns the case with every wall's ``refine`` multiplied by ``factor`` (default 2,
so each cell is halved) and the local error tolerance multiplied by ``tol_factor`` (default
1/4), and compares:

- the highest outer-face (skin) temperature over the run [K],
- the highest interface temperature over the run [K] (walls with more than one layer),
- the highest chamber temperature [K] (enclosures),
- the final heat flow into the wall at every face [W],
- the stored energy at the end [J],
- the largest relative energy-balance residual [-].

For a second-order method the difference between a run and its refined rerun is about 3/4 of
the run's own discretisation error (Richardson: e(h) - e(h/2) = e(h) (1 - 1/4)), so the
difference shown is a fair estimate of the error of the reported numbers.
"""
from __future__ import annotations

import time
from dataclasses import replace

import numpy as np

from ..h5tree import add_group
from ..solver import run as _run
from .calc_notes import calc_notes

__all__ = ["refined_case", "main_outputs", "convergence_check", "store_report_data",
           "DEFAULT_FACTOR", "DEFAULT_TOL_FACTOR"]

#: Mesh refinement factor of the check (each wall's ``refine`` times this) [-].
DEFAULT_FACTOR = 2.0
#: Factor on the local error tolerance of the check [-].
DEFAULT_TOL_FACTOR = 0.25


def refined_case(case, factor: float = DEFAULT_FACTOR, tol_factor: float = DEFAULT_TOL_FACTOR):
    """A copy of ``case`` with every wall's mesh ``refine`` times ``factor`` [-] and the run's
    local error tolerance [K] times ``tol_factor`` [-] (dataclasses.replace; nothing else
    changes)."""
    run = replace(case.run, tolerance=case.run.tolerance * tol_factor)
    if case.wall is not None:
        return replace(case, run=run, wall=replace(case.wall, refine=case.wall.refine * factor))
    walls = tuple(replace(ew, wall=replace(ew.wall, refine=ew.wall.refine * factor))
                  for ew in case.walls)
    return replace(case, run=run, walls=walls)


def main_outputs(result) -> list:
    """The outputs the check compares, as ``(key, label, unit, value)`` rows.

    ``unit`` is the SI unit text ("K", "W", "J" or "" for ratios); temperatures are levels
    [K], heat flows [W], energies [J].
    """
    rows = []
    names = result.face_names
    outer = [f for f, n in enumerate(names) if n.endswith(":outer")]
    if outer:
        rows.append(("skin_T_max", "highest outer-face (skin) temperature over the run", "K",
                     float(np.max(result.face_T[:, outer]))))
    itf = [result.interface_T(j).reshape(len(result.times), -1)
           for j in range(len(result.system.walls))]
    itf = [a for a in itf if a.size]
    if itf:
        rows.append(("interface_T_max", "highest interface temperature over the run", "K",
                     float(max(np.max(a) for a in itf))))
    if result.system.has_chamber:
        rows.append(("chamber_T_max", "highest chamber temperature over the run", "K",
                     float(np.max(result.chamber_T))))
    for f, n in enumerate(names):
        rows.append((f"heat_flow_final[{n}]", f"final heat flow into the wall at {n}", "W",
                     float(result.face_flow[-1, f])))
    rows.append(("stored_final", "energy stored at the end", "J", float(result.stored[-1])))
    rows.append(("energy_residual_relative", "largest relative energy-balance residual", "",
                 float(result.relative_residual)))
    return rows


def _scales(rows) -> dict:
    """Per-unit magnitude a difference is measured against (relative column)."""
    out = {}
    for _, _, u, v in rows:
        out[u] = max(out.get(u, 0.0), abs(v))
    return out


def _note(case) -> str:
    """A caveat on reading the differences, '' when none applies."""
    ctl = getattr(case, "control", None)
    if case.heater is not None and ctl is not None and (
            ctl.mode == "thermostat" or (ctl.mode in ("duty", "pid") and ctl.switched)):
        return ("on/off switching: the switching instants move a little with the mesh and "
                "the tolerance, so differences in the final heat flows and temperatures also "
                "reflect where each run is in its last switching cycle, not only the "
                "discretisation error; compare the highest temperatures and the stored energy")
    return ""


def convergence_check(case, result, *, factor: float = DEFAULT_FACTOR,
                      tol_factor: float = DEFAULT_TOL_FACTOR, progress=False) -> dict:
    """Rerun ``case`` refined (see :func:`refined_case`) and compare with ``result``.

    Parameters
    ----------
    case : fdwall.model.Case
        The case ``result`` was computed from.
    result : fdwall.result.Result
        The run to check.
    factor : float
        Mesh refinement factor [-].
    tol_factor : float
        Factor on the local error tolerance [-].
    progress : bool or None
        Progress bar of the rerun, as :func:`fdwall.run` (None: only when it takes long).

    Returns
    -------
    dict
        ``status`` ("computed" or "not computed: <reason>"), ``note`` (a caveat on reading
        the differences, e.g. for on/off control; '' when none), ``refine_factor`` [-],
        ``tolerance_K`` and ``refined_tolerance_K`` [K], ``nodes`` and ``refined_nodes`` [-],
        ``wall_time_s`` [s] of the rerun, and ``rows``: one dict per output with ``key``,
        ``quantity``, ``unit`` (SI unit text, "-" for ratios), ``base``, ``refined``,
        ``difference`` (refined - base, in ``unit``) and ``relative`` (|difference| over the
        largest magnitude of the same unit) [-].
    """
    out = {"refine_factor": float(factor), "tolerance_K": float(case.run.tolerance),
           "refined_tolerance_K": float(case.run.tolerance * tol_factor),
           "nodes": int(result.system.n_unknowns), "note": _note(case)}
    if not result.complete:
        return {**out, "status": "not computed: the run itself did not complete"}
    if np.ndim(case.run.start_temperature) > 0:
        return {**out, "status": "not computed: the start temperature is a node profile, "
                                 "which a refined mesh cannot take over"}
    t0 = time.perf_counter()
    try:
        # the run may have refined its mesh itself (fdwall.solver.accuracy): refine its case
        fine = _run(refined_case(result.case or case, factor, tol_factor), progress=progress,
                    strict=False,
                    estimate=False)
    except Exception as exc:  # a failed check must never lose the run itself
        return {**out, "status": f"not computed: the refined rerun failed ({exc})"}
    out["wall_time_s"] = time.perf_counter() - t0
    out["refined_nodes"] = int(fine.system.n_unknowns)
    if not fine.complete:
        return {**out, "status": f"not computed: the refined rerun stopped early "
                                 f"({fine.message})"}
    base, ref = main_outputs(result), main_outputs(fine)
    if [r[0] for r in base] != [r[0] for r in ref]:
        return {**out, "status": "not computed: the refined rerun has other outputs"}
    scale = _scales(ref)
    diff = [r[3] - b[3] for b, r in zip(base, ref)]
    rel = [abs(d) / scale[b[2]] if scale[b[2]] > 0 else 0.0 for d, b in zip(diff, base)]
    out["status"] = "computed"
    out["rows"] = [{"key": b[0], "quantity": b[1], "unit": b[2] or "-", "base": b[3],
                    "refined": r[3], "difference": d, "relative": e}
                   for b, r, d, e in zip(base, ref, diff, rel)]
    return out


def store_report_data(result, h5_path, case=None, progress=False) -> None:
    """Compute the report data of a run and add it to the run's HDF5 file ``h5_path`` as
    the group ``/report_data`` (atomic rewrite): the convergence check
    (``/report_data/convergence``) and the notes of :mod:`fdwall.analyses.calc_notes`
    (resolved inputs, materials, correlations, Biot numbers, assumptions, references).

    Called by ``fdwall run CASE --report``; a file without the group reads "not computed"
    in the report.
    """
    case = case if case is not None else result.case
    data = calc_notes(result, case)
    data["convergence"] = convergence_check(case, result, progress=progress)
    add_group(h5_path, "report_data", data)
