"""Insulation sizing speed (``python3 -m benchmarks.sizing`` from the repository root).

1. Steady sizing after start-up (kernels compiled, caches warm): the curing-oven panel to a
   50 degC skin, and the side walls of the heat-treat furnace (an enclosure) to 50 degC; the
   trade-off table is included.
2. Transient search against one single run of the same case, measured side by side in this
   process: the furnace side walls sized to a 45 degC peak skin over the case's own 12 h run,
   and to a warm-up limit; the search runs are counted (the trade-off table is left out, as
   the issue counts it apart).  The ratio search time / single-run time is the claim.
"""
import time

from fdwall.case import load_case
from fdwall.sizing import PeakSkinTarget, SkinTarget, WarmUpTarget, size_layer
from fdwall.solver import run


def _best(f, n=3):
    best, out = float("inf"), None
    for _ in range(n):
        t = time.perf_counter()
        out = f()
        best = min(best, time.perf_counter() - t)
    return best, out


def main():
    panel = load_case("cases/curing-oven-panel.toml")
    furnace = load_case("cases/heat-treat-furnace.toml")
    size_layer(panel, 1, [SkinTarget(323.15)])          # start-up (kernels, caches)
    t, r = _best(lambda: size_layer(panel, 1, [SkinTarget(323.15)]))
    print(f"steady sizing, panel (table included): {t:.3f} s, answer "
          f"{r.thickness_m * 1000:.0f} mm")
    t, r = _best(lambda: size_layer(furnace, 1, [SkinTarget(323.15)], wall="side walls",
                                    t_max=0.2, step=0.01))
    print(f"steady sizing, furnace side walls (enclosure, table included): {t:.3f} s, answer "
          f"{r.thickness_m * 1000:.0f} mm")
    run(furnace, progress=False)                        # start-up of the transient kernel
    t_run, _ = _best(lambda: run(furnace, progress=False))
    print(f"one single run of the furnace case (12 h): {t_run:.3f} s")
    for label, tg in (("peak skin 45 degC", PeakSkinTarget(318.15)),
                      ("warm-up 3.66 h", WarmUpTarget(3.66 * 3600))):
        t, r = _best(lambda: size_layer(furnace, 1, [tg], wall="side walls", t_max=0.2,
                                        step=0.01, table=False), n=1)
        print(f"transient search, {label}: {t:.2f} s = {t / t_run:.1f} single runs "
              f"({r.runs} runs counted), answer {r.thickness_m * 1000:.0f} mm, feasible "
              + ", ".join(f"{a * 1000:.1f}-{b * 1000:.1f} mm" for a, b in r.feasible_m))


if __name__ == "__main__":
    main()
