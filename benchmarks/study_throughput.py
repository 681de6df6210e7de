"""Throughput of design studies: a grid of N steady variants of the curing-oven panel,
serial loop of run_variant against run_study on local processes.

Run from the worktree root: ``PYTHONPATH=$PWD python3 benchmarks/study_throughput.py [N]``.
"""
import os
import sys
import tempfile
import time

import tomllib

from fdwall.analyses.study import run_study, run_variant


def main(n=200):
    base = tomllib.load(open("cases/curing-oven-panel.toml", "rb"))
    vals = [f"{50 + i * 100 / n:.3f} mm" for i in range(n)]
    t0 = time.perf_counter()
    for v in vals:
        run_variant(base, {"wall.layers[1].thickness": v})
    t1 = time.perf_counter()
    with tempfile.TemporaryDirectory() as d:
        study = os.path.join(d, "b-study.toml")
        with open(study, "w") as f:
            f.write(f'base = "{os.path.abspath("cases/curing-oven-panel.toml")}"\n[[vary]]\n'
                    f'path = "wall.layers[1].thickness"\nvalues = {vals!r}\n'.replace("'", '"'))
        t2 = time.perf_counter()
        run_study(study, d, workers=os.cpu_count())
        t3 = time.perf_counter()
    print(f"{n} steady variants: serial {t1 - t0:.2f} s, run_study on {os.cpu_count()} "
          f"processes {t3 - t2:.2f} s (pool start-up included); load {os.getloadavg()}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 200)
