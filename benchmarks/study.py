"""Problem (d): a study of 1,000 variants of the furnace wall (layer thicknesses and heater
flux varied), solved one after another with fdwall, reusing nothing but the compiled kernels.

    python -m benchmarks.study [--n 1000] [--tolerance 0.1] [--refine 2]

Prints one JSON line with the timings (imports, first variant with compilation or cache
load, the loop) and a digest of the answers (hottest skin and inner face over the study).
Run by :mod:`benchmarks.run` in fresh processes: with the ahead-of-time kernels
(``fdwall compile``), and with just-in-time kernels (``FDWALL_JIT=1``) cold (empty numba
cache) and warm.
"""
from __future__ import annotations

import argparse
import json
import time

T_START = time.perf_counter()


def study(n, tolerance, refine):
    """Solve ``n`` variants; returns (peak skin [K] per variant, peak inner face [K], seconds
    spent in building the cases/systems, seconds in the solver kernel calls)."""
    from fdwall.solver import run

    from . import problems as P
    V = P.variants(n)
    skin = np.empty(n)
    inner = np.empty(n)
    for i, (t1, t2, t3, q) in enumerate(V):
        case = P.wall_case(tolerance=tolerance, refine=refine, thickness=(t1, t2, t3), flux=q)
        r = run(case)
        fT = r.face_T
        inner[i] = fT[:, 0].max()
        skin[i] = fT[:, 1].max()
    return skin, inner


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=int, default=1000)
    ap.add_argument("--tolerance", type=float, default=0.1)
    ap.add_argument("--refine", type=float, default=2.0)
    a = ap.parse_args(argv)
    t0 = time.perf_counter()
    global np
    import numpy as np

    import fdwall.solver  # noqa: F401

    from . import problems  # noqa: F401
    t1 = time.perf_counter()
    study(1, a.tolerance, a.refine)          # first variant: compilation or cache load
    t2 = time.perf_counter()
    skin, inner = study(a.n, a.tolerance, a.refine)
    t3 = time.perf_counter()
    from fdwall.solver import native
    print(json.dumps({"n": a.n, "mode": native.MODE, "import_s": t1 - t0, "first_s": t2 - t1, "loop_s": t3 - t2,
                      "process_s": t3 - T_START, "skin_max_K": float(skin.max()),
                      "skin_min_K": float(skin.min()), "inner_max_K": float(inner.max())}))


if __name__ == "__main__":
    main()
