"""Peak memory of long runs, in memory against streamed to HDF5 (``python3 benchmarks/streaming.py``).

A small three-layer wall (invented demo case, 36 unknowns) under a daily heating cycle, run
for 1 day, 30 days and 1 year with an output every minute (1,441 / 43,201 / 525,601 rows).
Each configuration runs in a fresh process so that its peak resident set size (``ru_maxrss``
of getrusage(2)) is its own; the start-up (imports, a warm-up run that loads the compiled
kernels) is measured in the same way and reported as the baseline.

- ``in memory``: ``run(case)`` then ``Result.write_hdf5`` (how ``fdwall run`` wrote its file
  before streaming): the whole history is held, and the file image is built in memory.
- ``streamed``: ``run(case, store=path)``, how ``fdwall run --out`` writes now: at most a
  window of rows (default 4 MB) is held; the rows go to the file as they come.

Both write the same file (the streamed one is checked equal to the in-memory one dataset by
dataset in tests/test_streaming.py).  Prints a table: rows, peak RSS [MB] of each, the part
above the baseline, wall time [s] and file size [MB].  ``--quick`` runs 1 and 30 days only.
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile

_ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))

CASE = """
# Invented demo case: a small furnace wall under a daily heating cycle.
title = "small wall, daily cycle (invented)"
[run]
duration = "DURATION"
start_temperature = "20 degC"
output_every = "1 min"
[wall]
name = "wall"
shape = "slab"
area = "1 m2"
[[wall.layers]]
name = "brick"
material = "insulating-firebrick-26"
thickness = "60 mm"
cells = 15
[[wall.layers]]
name = "wool"
material = "mineral-wool-64"
thickness = "80 mm"
cells = 15
[[wall.layers]]
name = "skin"
material = "carbon-steel"
thickness = "2 mm"
cells = 4
[wall.inner_face]
fluid_temperature = CYCLE
film_coefficient = "20 W/m2/K"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "8 W/m2/K"
"""

_CHILD = r"""
import json, os, resource, sys, time
sys.path.insert(0, {root!r})
import fdwall
from fdwall.solver import run
mode, case_path, out = sys.argv[1:4]
warm = fdwall.load_case(case_path.replace(".toml", "-warm.toml"))
run(warm, progress=False)                      # load the kernels before measuring
import h5py  # noqa: E401  (both modes write HDF5: its import belongs to the baseline)
base = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
case = fdwall.load_case(case_path)
t0 = time.perf_counter()
if mode == "memory":
    res = run(case, progress=False)
    res.write_hdf5(out)
    n = res.times.size
elif mode == "streamed":
    res = run(case, progress=False, store=out)
    n = res.n_outputs
else:
    n = 0
wall = time.perf_counter() - t0
peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
print(json.dumps(dict(rows=n, base_MB=base, peak_MB=peak, wall_s=wall,
                      file_MB=os.path.getsize(out) / 1e6 if n else 0.0)))
"""


def _cycle(days):
    """Daily heating cycle as schedule knots: 20 degC, up to 600 degC over 2 h, held 12 h,
    down over 2 h (invented)."""
    knots = []
    for d in range(days):
        h = 24 * d
        knots += [(h, 20), (h + 2, 600), (h + 14, 600), (h + 16, 20)]
    return "[" + ", ".join(f'["{h} h", "{T} degC"]' for h, T in knots) + "]"


def _write_case(folder, days):
    p = os.path.join(folder, f"wall-{days}d.toml")
    with open(p, "w") as f:
        f.write(CASE.replace("DURATION", f"{days} d").replace("CYCLE", _cycle(days)))
    with open(p.replace(".toml", "-warm.toml"), "w") as f:
        f.write(CASE.replace("DURATION", "1 h").replace("CYCLE", _cycle(1)))
    return p


def _measure(mode, case_path, out):
    env = dict(os.environ, PYTHONPATH=_ROOT)
    p = subprocess.run([sys.executable, "-c", _CHILD.format(root=_ROOT), mode, case_path, out],
                       capture_output=True, text=True, env=env, timeout=3600)
    if p.returncode != 0:
        raise RuntimeError(p.stderr[-3000:])
    return json.loads(p.stdout.strip().splitlines()[-1])


def main(quick=False):
    durations = [1, 30] + ([] if quick else [365])
    rows = []
    with tempfile.TemporaryDirectory() as d:
        for dur in durations:
            case = _write_case(d, dur)
            mem = _measure("memory", case, os.path.join(d, "mem.h5"))
            st = _measure("streamed", case, os.path.join(d, "st.h5"))
            rows.append((dur, mem, st))
            os.remove(os.path.join(d, "mem.h5"))
            os.remove(os.path.join(d, "st.h5"))
    print("Peak resident memory of a run with 1-min outputs, small wall (36 unknowns); "
          "each configuration in its own process")
    print(f"{'run':>6} {'rows':>8} | {'in memory':>24} | {'streamed':>24} | {'ratio':>6}")
    print(f"{'':>6} {'':>8} | {'peak MB':>8} {'+MB':>7} {'s':>7} | {'peak MB':>8} {'+MB':>7} "
          f"{'s':>7} | {'(+MB)':>6}")
    for dur, m, s in rows:
        dm, ds = m["peak_MB"] - m["base_MB"], s["peak_MB"] - s["base_MB"]
        print(f"{dur:>4} d {m['rows']:>8d} | {m['peak_MB']:8.1f} {dm:7.1f} {m['wall_s']:7.2f} | "
              f"{s['peak_MB']:8.1f} {ds:7.1f} {s['wall_s']:7.2f} | {dm / max(ds, 0.1):6.1f}")
    print("+MB: peak above the process after start-up and a warm-up run "
          f"(about {rows[0][1]['base_MB']:.0f} MB). File sizes [MB]: "
          + ", ".join(f"{dur} d: {m['file_MB']:.1f} / {s['file_MB']:.1f}" for dur, m, s in rows))
    return rows


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
