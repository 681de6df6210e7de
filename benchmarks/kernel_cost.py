"""Cost of the compiled time loop per node and Newton iteration, beside a bare Thomas solve.

    python -m benchmarks.kernel_cost [--quick]

Problem (e) (demo data, :func:`benchmarks.problems.step_case`, dense hot face) at fdwall's
default settings on its graded mesh refined 1, 4 and 16 times, with 60-s and with hourly
samples.  The inputs of the kernel (:func:`fdwall.solver.kernels.integrate`) are captured
from one ``fdwall.run(case, estimate=False)`` (the reported run of a default call; the
estimate's extra runs are kernel calls of the same kind on other meshes) and the kernel
alone is timed on them, one call for the whole run (no
Python in the timing: what is left is the kernel's own cost); a bare Thomas solve of the same
size (:func:`benchmarks.peers.be_careful.time_thomas`) is timed in the same rounds, so that
the ratio is read from one run.  The marginal cost between the smallest and the largest
mesh takes the fixed cost of a run out.  Times are the median over rounds of the per-call
time (the solvers take turns, so load from other work falls on all alike).
"""
from __future__ import annotations

import sys
import time
from dataclasses import replace

import numpy as np

from . import problems as P
from .peers import be_careful


def _capture(case, system=None):
    """Arguments of the first kernel call of ``fdwall.run(case)`` (copies) and the result;
    ``system`` as in ``run`` (the hourly rows use the 60-s case's system: the same mesh)."""
    import fdwall
    from fdwall.solver import native, transient
    got = []
    orig = native.integrate

    def spy(*args):
        if not got:
            got.append([a.copy() if isinstance(a, np.ndarray) else a for a in args])
        return orig(*args)
    transient.K.integrate = spy
    try:
        # one run on the given mesh: the estimate's coarse and refined runs are other kernel
        # calls on other meshes (their cost is in benchmarks.run, section (e))
        res = fdwall.run(case, progress=False, estimate=False, system=system)
    finally:
        transient.K.integrate = orig
    return got[0], res


def _kernel_time(args, repeats):
    """Median wall time [s] of one whole-run kernel call on fresh copies of ``args``."""
    from fdwall.solver import native
    ts = []
    for _ in range(repeats):
        a = [x.copy() if isinstance(x, np.ndarray) else x for x in args]
        a[-1] = 1 << 40                       # no step budget: the whole run in one call
        t0 = time.perf_counter()
        native.integrate(*a)
        ts.append(time.perf_counter() - t0)
    return ts


def main(argv=None):
    argv = sys.argv[1:] if argv is None else argv
    quick = "--quick" in argv
    from fdwall.solver import native
    refines = (1.0, 16.0) if quick else (1.0, 4.0, 16.0)
    rounds = 5 if quick else 9
    items = []
    from fdwall.system import build_system
    for rf in refines:
        sysm = build_system(P.step_case(refine=rf))     # the 60-s case's mesh, for both
        for interval in (P.STEP_INTERVAL, 3600.0):
            case = P.step_case(refine=rf)
            case = replace(case, run=replace(case.run, output_interval=interval))
            args, res = _capture(case, sysm)
            n = args[0].shape[0]
            items.append({"rf": rf, "interval": interval, "args": args, "n": n,
                          "steps": res.stats["accepted_steps"],
                          "its": res.stats["newton_iterations"], "t": [], "th": []})
    for it in items:
        _kernel_time(it["args"], 1)          # warm: compiled, caches filled
    for _ in range(rounds):                  # round robin: every item once per round
        for it in items:
            it["t"] += _kernel_time(it["args"], 3 if it["n"] < 300 else 1)
            it["th"].append(be_careful.time_thomas(it["n"], rounds=1) / it["n"])
    print(f"kernel mode: {native.MODE} ({native.STATUS}); {time.strftime('%Y-%m-%d %H:%M')}")
    print()
    print("| refine | samples | nodes | steps | Newton its | kernel [ms] | ns per node-it "
          "| bare Thomas [ns per node] | x Thomas |")
    print("|---|---|---|---|---|---|---|---|---|")
    for it in items:
        t = float(np.median(it["t"]))
        th = float(np.median(it["th"]))
        ni = it["n"] * it["its"]
        it["tm"], it["thm"] = t, th
        print(f"| {it['rf']:g} | every {it['interval']:g} s | {it['n']} | {it['steps']} | "
              f"{it['its']} | {t * 1e3:.2f} | {t / ni * 1e9:.1f} | {th * 1e9:.1f} | "
              f"{t / ni / th:.1f} |")
    print()
    for interval in (P.STEP_INTERVAL, 3600.0):
        sel = [it for it in items if it["interval"] == interval]
        a, b = sel[0], sel[-1]
        marg = (b["tm"] - a["tm"]) / (b["n"] * b["its"] - a["n"] * a["its"])
        print(f"- marginal cost, samples every {interval:g} s, {a['n']} to {b['n']} nodes: "
              f"{marg * 1e9:.1f} ns per node-iteration = {marg / b['thm']:.1f} x the bare "
              f"Thomas solve at {b['n']} nodes")


if __name__ == "__main__":
    main()
