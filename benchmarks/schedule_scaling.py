"""Cost of long schedules against their length (``python3 benchmarks/schedule_scaling.py``).

Loads and checks (``fdwall check`` without start-up) a one-layer wall whose inner face carries
a heat-flux schedule of n knots, for n = 1,000 ... 64,000, and evaluates the schedule at n
times.  Prints the seconds and the growth exponent fitted between the shortest and the longest
(1 = linear, 2 = quadratic).  Start-up is paid once before timing.
"""
import math
import os
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

_ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, _ROOT)
sys.path.insert(0, os.path.join(_ROOT, "tests"))

from study_cases import ONE_LAYER_WALL  # noqa: E402

import fdwall  # noqa: E402
from fdwall.report.text import format_case  # noqa: E402
from fdwall.system import build_system  # noqa: E402


def _case(folder: Path, n: int) -> Path:
    pairs = ", ".join(f'["{i * 10} s", "{(i % 2) * 500} W/m2"]' for i in range(n))
    text = ONE_LAYER_WALL.replace("[wall.inner_face]", f"[wall.inner_face]\nheat_flux = [{pairs}]")
    p = folder / f"flux{n}.toml"
    p.write_text(text.replace('duration = "1 h"', f'duration = "{n * 10} s"'))
    return p


def main():
    sizes = (1_000, 4_000, 16_000, 64_000)
    rows = []
    with tempfile.TemporaryDirectory() as d:
        folder = Path(d)
        case = fdwall.load_case(_case(folder, 100))
        format_case(case, build_system(case), [])          # start-up
        for n in sizes:
            p = _case(folder, n)
            t0 = time.perf_counter()
            case = fdwall.load_case(p)
            format_case(case, build_system(case), [])
            t_check = time.perf_counter() - t0
            sched = case.inner.flux
            q = np.linspace(0.0, n * 10.0, n)
            t0 = time.perf_counter()
            for x in q[: min(n, 5000)]:
                sched(float(x))
            t_eval = (time.perf_counter() - t0) / min(n, 5000)
            rows.append((n, t_check, t_eval))
    print(f"{'knots':>8} {'load+check [s]':>15} {'one evaluation [us]':>20}")
    for n, tc, te in rows:
        print(f"{n:>8} {tc:>15.3f} {te * 1e6:>20.2f}")
    (n0, t0, e0), (n1, t1, e1) = rows[0], rows[-1]
    print(f"growth exponent of load+check: {math.log(t1 / t0) / math.log(n1 / n0):.2f} "
          "(1 = linear, 2 = quadratic)")
    print(f"growth exponent of one evaluation: {math.log(e1 / e0) / math.log(n1 / n0):.2f} "
          "(0 = independent of length)")


if __name__ == "__main__":
    main()
