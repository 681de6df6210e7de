"""Start-up and compile time of one solver, run in a fresh process by :mod:`benchmarks.run`
(with NUMBA_CACHE_DIR pointing at an empty folder for a cold compile).

    python -m benchmarks.coldstart fdwall|be|scipy

Prints one JSON line: seconds for the imports, the first solve (numba compilation or cache
load included) and a second, warm solve of problem (a) on the benchmark mesh.
"""
from __future__ import annotations

import json
import sys
import time

T_START = time.perf_counter()


def main(which):
    t0 = time.perf_counter()
    from . import methods as M
    if which == "fdwall":
        import fdwall.solver  # noqa: F401
        fn = lambda: M.solve_fdwall("slab", 0.1)
    elif which == "be":
        from .peers import be_kernel  # noqa: F401
        x = M.bench_nodes()
        fn = lambda: M.solve_be("slab", 8, x=x)
    elif which == "scipy":
        from .peers import scipy_bdf  # noqa: F401
        x = M.bench_nodes()
        fn = lambda: M.solve_scipy("slab", 1e-3, x=x)
    else:
        raise SystemExit(f"unknown solver {which!r}: use fdwall, be or scipy")
    t1 = time.perf_counter()
    fn()
    t2 = time.perf_counter()
    fn()
    t3 = time.perf_counter()
    from fdwall.solver import native
    print(json.dumps({"mode": native.MODE, "import_s": t1 - t0, "first_s": t2 - t1, "second_s": t3 - t2,
                      "process_s": t3 - T_START}))


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else "fdwall")
