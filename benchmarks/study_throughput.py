"""Throughput of design studies: 1,000 variants of the curing-oven panel (demo case, single
wall, 8 h warm-up, default outputs: steady skin temperature and loss, peak skin temperature
over the run, stored energy), side by side in one run:

1. peer: a serial Python loop as a careful engineer would write it -- the case loaded once,
   each variant made with ``dataclasses.replace`` (no TOML, no unit parsing), its system
   built once and reused by ``fdwall.run(case, system=...)`` and
   ``fdwall.solve_steady(case, system=...)``;
2. ``run_study(..., workers=1)`` in this process (the study path: every variant edits the
   parsed TOML and goes through the case loader, so it is validated like any case; the
   loader's check builds the system once and hands it to the run; here the thickness varies,
   so ``build_system(like=...)`` cannot reuse the mesh, as it cannot for the peer);
3. ``run_study`` on all local cores (default), pool start-up included;
4. the command ``fdwall study STUDY.toml --no-plots --quiet`` in a fresh process: start-up
   (imports, kernels) included -- the figure the issue's 5 s target is about.

The variants: insulation thickness (Latin hypercube, 80..120 mm) and inner film coefficient
(15..35 W/m2/K), fixed seed; the peer uses the same sampled values, and its answers are
compared with the study table (they must agree to 1e-9 relative).

Run from the repository root:
``PYTHONPATH=$PWD python3 -m benchmarks.study_throughput [--n 1000] [--repeat 3]``.  Prints one
JSON line (with --repeat, the best of the rounds for each time).
"""
from __future__ import annotations

import argparse
import dataclasses
import json
import os
import subprocess
import sys
import tempfile
import time

import numpy as np

CASE = os.path.join("cases", "curing-oven-panel.toml")

STUDY = """
base = "{base}"
method = "latin-hypercube"
samples = {n}
[[uncertain]]
path = "wall.layers[1].thickness"
distribution = "uniform"
low = "80 mm"
high = "120 mm"
[[uncertain]]
path = "wall.inner_face.film_coefficient"
distribution = "uniform"
low = "15 W/m2/K"
high = "35 W/m2/K"
"""


def peer(case, samples):
    """Serial loop over variants built by dataclasses.replace; the system built once per
    variant and shared by the transient run and the steady state."""
    import fdwall
    out = np.empty((len(samples), 4))
    for i, (t_mm, h) in enumerate(samples):
        layers = list(case.wall.layers)
        layers[1] = dataclasses.replace(layers[1], thickness=t_mm / 1000.0)
        wall = dataclasses.replace(case.wall, layers=tuple(layers))
        inner = dataclasses.replace(case.inner, convection=float(h))
        var = dataclasses.replace(case, wall=wall, inner=inner)
        sysm = fdwall.build_system(var)
        ss = fdwall.solve_steady(var, system=sysm)
        res = fdwall.run(var, system=sysm, progress=False)
        out[i] = (ss.face_T[-1], -ss.face_flow[-1], res.face_T[:, -1].max(), res.stored[-1])
    return out


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=int, default=1000)
    ap.add_argument("--repeat", type=int, default=1,
                    help="rounds of all measurements, side by side; each time is the best "
                         "round (the machine is shared: the best round is the least disturbed)")
    a = ap.parse_args(argv)
    import fdwall
    from fdwall.study import read_study
    base = os.path.abspath(CASE)
    case = fdwall.load_case(base)
    fdwall.run(case)                                   # kernels loaded / compiled once
    res = {"n": a.n, "cores": os.cpu_count(), "kernels": __import__(
        "fdwall.solver.native", fromlist=["MODE"]).MODE}
    with tempfile.TemporaryDirectory() as d:
        sp = os.path.join(d, "bench-study.toml")
        with open(sp, "w") as f:
            f.write(STUDY.format(base=base, n=a.n))
        st = read_study(sp, seed=1)
        samples = [(float(v["wall.layers[1].thickness"].split()[0]),
                    float(v["wall.inner_face.film_coefficient"].split()[0]))
                   for v in st["variants"]]
        best = {}
        for rnd in range(max(1, a.repeat)):
            one = _round(case, sp, samples, os.path.join(d, f"r{rnd}"))
            res["cli_exit"] = max(res.get("cli_exit", 0), one.pop("cli_exit"))
            res["max_rel_diff_vs_peer"] = max(res.get("max_rel_diff_vs_peer", 0.0),
                                              one.pop("max_rel_diff_vs_peer"))
            for k, v in one.items():
                best[k] = min(best.get(k, np.inf), v)
        res.update(best)
        res["rounds"] = max(1, a.repeat)
    res["ratio_peer_over_cli"] = res["peer_serial_s"] / res["cli_all_cores_s"]
    res["ratio_peer_over_study_all_cores"] = res["peer_serial_s"] / res["study_all_cores_s"]
    res["ratio_study_1_worker_over_peer"] = res["study_1_worker_s"] / res["peer_serial_s"]
    res["load_average"] = os.getloadavg()
    print(json.dumps({k: (round(v, 4) if isinstance(v, float) else v)
                      for k, v in res.items()}))


def _round(case, sp, samples, d):
    """One round of every measurement [s], in the same order each round."""
    from fdwall.study import read_study, run_study
    res = {}
    t0 = time.perf_counter()
    ref = peer(case, samples)
    res["peer_serial_s"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    _, rows = run_study(read_study(sp, seed=1), os.path.join(d, "one"), workers=1)
    res["study_1_worker_s"] = time.perf_counter() - t0
    got = np.array([[r["outer_T_K"], r["loss_W"], r["peak_skin_T_K"], r["stored_energy_J"]]
                    for r in rows])
    res["max_rel_diff_vs_peer"] = float(np.max(np.abs(got - ref) / np.abs(ref)))

    t0 = time.perf_counter()
    run_study(read_study(sp, seed=1), os.path.join(d, "all"))
    res["study_all_cores_s"] = time.perf_counter() - t0

    env = dict(os.environ, PYTHONPATH=os.getcwd())
    t0 = time.perf_counter()
    p = subprocess.run([sys.executable, "-m", "fdwall.cli", "study", sp, "--out",
                        os.path.join(d, "cli"), "--seed", "1", "--no-plots", "--quiet"],
                       env=env, capture_output=True, text=True)
    res["cli_all_cores_s"] = time.perf_counter() - t0
    res["cli_exit"] = p.returncode
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-c", "import fdwall.cli, fdwall.study, "
                    "fdwall.solver.native"], env=env, capture_output=True)
    res["cli_import_s"] = time.perf_counter() - t0
    return res


if __name__ == "__main__":
    main()
