"""Smoke version of the benchmark suite (benchmarks/): problem (a), the furnace slab wall, at
a coarse setting, solved by fdwall and by every available peer, each checked against a
converged reference within the suite's accuracy criterion (inner face 1 K, outer skin 0.1 K
at every output time).  Correctness only: no timing is asserted.

Source: the reference is external to fdwall: scipy's BDF integrator (rtol 1e-8) on a fine uniform
mesh assembled by the benchmark's own finite-volume code; it is itself checked against a
second, independent fine solution (fdwall on a fine graded mesh).
"""
from __future__ import annotations

import os
import sys

import numpy as np
import pytest

_ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
if _ROOT not in sys.path:
    sys.path.insert(0, _ROOT)

from benchmarks import methods as M  # noqa: E402
from benchmarks import problems as P  # noqa: E402


@pytest.fixture(scope="module")
def reference():
    ref, info = M.references("slab", quick=True)
    return ref, info


def test_reference_solutions_agree(reference):
    # two independent converged solutions (different meshes, assemblies and integrators)
    ref, info = reference
    assert info["agree_inner"] < 0.05 and info["agree_outer"] < 0.005
    # physical sanity, from the energy input: 6 kW/m2 for 5 h must heat the inner face far
    # above ambient, while the insulated skin stays within a few tens of kelvin of it
    assert ref[:, 0].max() > 700.0 and 300.0 < ref[:, 1].max() < 360.0


def test_peer_assemblies_match(reference):
    # the compiled and the numpy right-hand sides of the scipy peer are written separately:
    # on the same mesh and tolerance they must give the same answer
    x = M.bench_nodes()
    a, _ = M.solve_scipy("slab", 1e-4, x=x)
    b, _ = M.solve_scipy("slab", 1e-4, x=x, numpy_rhs=True)
    assert np.max(np.abs(a - b)) < 1e-6


@pytest.mark.parametrize("method, knob", [("fdwall", 1.0), ("scipy", 1e-4), ("be", 32)])
def test_method_meets_criterion(reference, method, knob):
    ref, _ = reference
    solve = {"fdwall": M.solve_fdwall, "scipy": M.solve_scipy, "be": M.solve_be}[method]
    T, st = solve("slab", knob)
    err = M.errors(T, ref)
    assert M.passes(err), f"{method} at {knob}: error inner {err[0]:.3f} K, outer {err[1]:.4f} K"
    # a coarser setting must be measurably worse (the check can fail)
    coarse = {"fdwall": 50.0, "scipy": 5e-2, "be": 1}[method]
    T2, _ = solve("slab", coarse)
    assert max(M.errors(T2, ref)) > max(err)


def test_fipy_meets_criterion():
    pytest.importorskip("fipy")
    from benchmarks.peers import fipy_peer, scipy_bdf
    # a shortened run (1 h, heater off after 30 min) keeps FiPy's many small steps cheap
    dur, off = 3600.0, 1800.0
    ref_fv = P.fv_problem(P.uniform_nodes((400, 400, 8)), t_off=off)
    _, Tr, _ = scipy_bdf.solve(ref_fv, 1e-8, 1e-6, duration=dur)
    fv = P.fv_problem(M.bench_nodes(), t_off=off)
    _, T, _ = fipy_peer.solve(fv, 16, duration=dur)
    err = M.errors(T, Tr[:, [0, -1]])
    assert M.passes(err), f"FiPy: error inner {err[0]:.3f} K, outer {err[1]:.4f} K"
