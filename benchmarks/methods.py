"""The solvers under test behind one interface, the reference solutions, error measures and
the loosest-setting search used for the matched-accuracy comparison.

Every ``solve_*`` returns ``(face_T, stats)``: face temperatures at the output times
(n_out, 2) [K], inner face first, and a dict with at least ``steps`` and ``nodes``.
"""
from __future__ import annotations

import numpy as np

from . import problems as P

# Accuracy criterion of the comparison [K]: every output time, against the converged reference.
TOL_INNER = 1.0
TOL_OUTER = 0.1

# the benchmark mesh: fdwall's default cell counts doubled (85 nodes for problem (a))
BENCH_REFINE = 2.0


def bench_nodes(geometry="slab", refine=BENCH_REFINE):
    """Node positions of the benchmark mesh [m] (fdwall's graded mesh, shared by everyone)."""
    from fdwall.system import build_system
    return build_system(P.wall_case(geometry, refine=refine)).meshes[0].x.copy()


def errors(face_T, ref):
    """Max over output times of |T - T_ref| at the inner and the outer face [K]."""
    e = np.abs(np.asarray(face_T) - np.asarray(ref))
    return float(np.max(e[:, 0])), float(np.max(e[:, 1]))


def passes(err):
    """True when both faces meet the accuracy criterion."""
    return err[0] <= TOL_INNER and err[1] <= TOL_OUTER


# ---- fdwall ---------------------------------------------------------------------------------

def solve_fdwall(geometry, tolerance, refine=BENCH_REFINE, cells=None, estimate=False):
    """fdwall on problem (a)/(b) at a tuned tolerance and mesh: no spatial error estimate by
    default (the setting is chosen against the reference)."""
    from fdwall.solver import run
    r = run(P.wall_case(geometry, tolerance=tolerance, refine=refine, cells=cells),
            estimate=estimate)
    st = dict(r.stats)
    st["steps"] = st["accepted_steps"]
    return r.face_T.copy(), st


# ---- scipy BDF ------------------------------------------------------------------------------

def scipy_tols(rtol):
    """atol tied to rtol on the temperature scale (300 K)."""
    return rtol, rtol * 300.0


def solve_scipy(geometry, rtol, x=None, numpy_rhs=False):
    from .peers import scipy_bdf
    x = bench_nodes(geometry) if x is None else x
    fv = P.fv_problem(x, geometry)
    f = scipy_bdf.solve_numpy_rhs if numpy_rhs else scipy_bdf.solve
    _, T, st = f(fv, *scipy_tols(rtol))
    st["nodes"] = fv.n
    return T[:, [0, -1]].copy(), st


# ---- fixed-step backward Euler ----------------------------------------------------------------

def solve_be(geometry, nsub, x=None):
    from .peers import be_kernel
    x = bench_nodes(geometry) if x is None else x
    fv = P.fv_problem(x, geometry)
    _, T, st = be_kernel.solve(fv, nsub)
    st["nodes"] = fv.n
    return T[:, [0, -1]].copy(), st


# ---- FiPy -------------------------------------------------------------------------------------

def have_fipy():
    try:
        import fipy  # noqa: F401
        return True
    except Exception:
        return False


def solve_fipy(geometry, nsub, x=None):
    from .peers import fipy_peer
    x = bench_nodes(geometry) if x is None else x
    fv = P.fv_problem(x, geometry)
    _, T, st = fipy_peer.solve(fv, nsub)
    st["nodes"] = fv.n
    return T, st


# ---- reference --------------------------------------------------------------------------------

def references(geometry, quick=False):
    """Two independent converged solutions: fdwall on a fine graded mesh with a tight
    tolerance, and scipy BDF (rtol 1e-9) on a fine uniform mesh built by the benchmark.

    Returns (reference face_T, info dict).  The reference is the scipy solution (independent
    of fdwall); the info gives their disagreement.
    """
    if quick:
        fd_refine, fd_tol, cells, rtol = 8.0, 1e-4, (400, 400, 8), 1e-8
    else:
        fd_refine, fd_tol, cells, rtol = 16.0, 1e-5, (800, 800, 16), 1e-9
    fd, fst = solve_fdwall(geometry, fd_tol, refine=fd_refine)
    x = P.uniform_nodes(cells, geometry)
    fv = P.fv_problem(x, geometry)
    from .peers import scipy_bdf
    _, T, sst = scipy_bdf.solve(fv, rtol, rtol * 100.0)
    sp = T[:, [0, -1]].copy()
    e = errors(fd, sp)
    info = {"fdwall_fine": f"fdwall graded mesh x{fd_refine:g} ({fst['nodes']} nodes), "
                           f"tolerance {fd_tol:g} K",
            "scipy_fine": f"scipy BDF uniform mesh ({fv.n} nodes), rtol {rtol:g}",
            "agree_inner": e[0], "agree_outer": e[1]}
    return sp, info


# ---- loosest setting that meets the criterion ---------------------------------------------

def loosest(solve, knobs, ref, stop_when_stalled=False, budget_s=None):
    """Try ``knobs`` from loosest to tightest; return (knob, face_T, stats, err, trials).

    ``trials`` lists (knob, err, face_T) of every attempt.  With ``stop_when_stalled`` the search gives
    up when tightening no longer reduces the error (the rest is spatial error); ``budget_s``
    caps the time spent.  knob is None when nothing passed.
    """
    import time
    trials = []
    t0 = time.perf_counter()
    prev = None
    for kn in knobs:
        t1 = time.perf_counter()
        T, st = solve(kn)
        st = dict(st, wall_s=time.perf_counter() - t1)
        err = errors(T, ref)
        trials.append((kn, err, T))
        if passes(err):
            return kn, T, st, err, trials
        if stop_when_stalled and prev is not None and max(err[0] / TOL_INNER, err[1] / TOL_OUTER) \
                > 0.8 * max(prev[0] / TOL_INNER, prev[1] / TOL_OUTER):
            break
        prev = err
        if budget_s is not None and time.perf_counter() - t0 > budget_s:
            break
    return None, None, None, None, trials


def loosest_integer(solve, ref, start=1, limit=4096):
    """Smallest integer knob n (steps per output interval) meeting the criterion: doubling,
    then bisection (error falls monotonically with the step for a first-order method)."""
    trials = []
    lo, hi = 0, start
    hit = None
    while hi <= limit:
        T, st = solve(hi)
        err = errors(T, ref)
        trials.append((hi, err, T))
        if passes(err):
            hit = (hi, T, st, err)
            break
        lo, hi = hi, hi * 2
    if hit is None:
        return None, None, None, None, trials
    while hi - lo > 1:
        mid = (lo + hi) // 2
        T, st = solve(mid)
        err = errors(T, ref)
        trials.append((mid, err, T))
        if passes(err):
            hi, hit = mid, (mid, T, st, err)
        else:
            lo = mid
    return hit[0], hit[1], hit[2], hit[3], trials


# ---- problem (e): the flux-step wall, 60-s samples ----------------------------------------------
# Every solver is judged on the same both-face criterion (TOL_INNER, TOL_OUTER) at every 60-s
# sample against the same reference.  The peers get fdwall's graded mesh at a refinement factor
# of their choice (the search below picks the cheapest that meets the criterion), so the peers
# and fdwall always solve on meshes of the same quality.

STEP_REFINES = (1.0, 1.5, 2.0, 3.0, 4.0)


def step_nodes(refine=1.0, hot_face="dense"):
    """Node positions [m] of fdwall's graded mesh for problem (e) at ``refine`` x its default
    cell counts (refine 1 = the mesh fdwall itself chooses at default settings)."""
    from fdwall.system import build_system
    return build_system(P.step_case(refine=refine, hot_face=hot_face)).meshes[0].x.copy()


def step_fv(x, duration=P.DURATION, t_off=P.STEP_OFF, hot_face="dense"):
    """The benchmark's own finite-volume arrays of problem (e) on nodes ``x`` [m]."""
    mats, thick = P.STEP_WALLS[hot_face]
    return P.fv_problem(x, "slab", thickness=thick, flux=P.STEP_FLUX, t_off=t_off,
                        materials=mats)


def solve_step_fdwall(tolerance=None, refine=None, duration=P.DURATION, t_off=P.STEP_OFF,
                      hot_face="dense", estimate=True):
    """fdwall on problem (e); None keeps fdwall's default tolerance / mesh.  ``estimate``
    is passed to ``run`` (True, the default, is what a user gets: the spatial error estimate
    and the refinement it may call for).  Stats carry steps, nodes and newton (Newton
    iterations, all stages) of the reported run, and ``estimate`` (None when off, else a dict:
    extra_runs, refinements, margin, meets_contract)."""
    from fdwall.solver import run
    r = run(P.step_case(tolerance=tolerance, refine=refine, duration=duration, t_off=t_off,
                        hot_face=hot_face), estimate=estimate)
    st = dict(r.stats)
    st["steps"] = st["accepted_steps"]
    st["newton"] = st["newton_iterations"]
    ee = r.error_estimate
    st["estimate"] = None if ee is None else {
        k: ee[k] for k in ("extra_runs", "refinements", "margin", "meets_contract")}
    return r.face_T.copy(), st


def solve_step_scipy(rtol, fv, duration=P.DURATION):
    """scipy BDF on the FV arrays ``fv`` of problem (e) (atol = 300 K x rtol).  ``newton`` is
    the number of right-hand-side evaluations (one per Newton iteration of BDF, plus the
    Jacobian's)."""
    from .peers import scipy_bdf
    _, T, st = scipy_bdf.solve(fv, *scipy_tols(rtol), duration=duration,
                               interval=P.STEP_INTERVAL)
    st["nodes"] = fv.n
    st["newton"] = st["nfev"]
    return T[:, [0, -1]].copy(), st


def solve_step_be(nsub, fv, careful=True, duration=P.DURATION, newton_tol=None, tables=None):
    """Fixed-step backward Euler on problem (e), ``nsub`` steps per 60-s sample: the careful
    peer (default) or the suite's first peer (``careful=False``, its own Newton tolerance)."""
    from .peers import be_careful, be_kernel
    if careful:
        kw = {} if newton_tol is None else {"newton_tol": newton_tol}
        _, T, st = be_careful.solve(fv, nsub, duration=duration, interval=P.STEP_INTERVAL,
                                    tables=tables, **kw)
    else:
        kw = {} if newton_tol is None else {"newton_tol": newton_tol}
        _, T, st = be_kernel.solve(fv, nsub, duration=duration, interval=P.STEP_INTERVAL,
                                   **kw)
    st["nodes"] = fv.n
    return T[:, [0, -1]].copy(), st


def step_references(quick=False, duration=P.DURATION, t_off=P.STEP_OFF, hot_face="dense"):
    """Two independent converged solutions of problem (e): scipy BDF on a fine uniform mesh with
    the benchmark's own FV arrays (the reference), and fdwall on a much refined graded mesh at a
    tight tolerance (the cross-check).  Returns (reference face_T (n, 2) [K], info dict)."""
    if quick:
        fd_refine, fd_tol, cells, rtol = 8.0, 1e-4, (400, 400, 8), 1e-8
    else:
        fd_refine, fd_tol, cells, rtol = 16.0, 1e-5, (800, 800, 16), 1e-9
    fd, fst = solve_step_fdwall(fd_tol, fd_refine, duration=duration, t_off=t_off,
                                hot_face=hot_face, estimate=False)
    fv = step_fv(P.uniform_nodes(cells, thickness=P.STEP_WALLS[hot_face][1]), duration, t_off,
                 hot_face)
    from .peers import scipy_bdf
    _, T, _ = scipy_bdf.solve(fv, rtol, rtol * 100.0, duration=duration,
                              interval=P.STEP_INTERVAL)
    sp = T[:, [0, -1]].copy()
    e = errors(fd, sp)
    info = {"fdwall_fine": f"fdwall graded mesh x{fd_refine:g} ({fst['nodes']} nodes), "
                           f"tolerance {fd_tol:g} K",
            "scipy_fine": f"scipy BDF on a uniform mesh ({fv.n} nodes, the benchmark's own "
                          f"finite-volume code), rtol {rtol:g}, atol {rtol * 100:g} K",
            "agree_inner": e[0], "agree_outer": e[1]}
    return sp, info
