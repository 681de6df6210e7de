"""Steady sizing time after start-up (``python3 benchmarks/sizing.py``)."""
import time

from fdwall.case import load_case
from fdwall.sizing import SkinTarget, size_layer


def main():
    case = load_case("cases/curing-oven-panel.toml")
    size_layer(case, 1, [SkinTarget(323.15)])          # start-up (kernels, caches)
    t = time.perf_counter()
    r = size_layer(case, 1, [SkinTarget(323.15)])
    print(f"steady sizing: {time.perf_counter() - t:.3f} s, answer {r.thickness_m * 1000:.0f} mm")


if __name__ == "__main__":
    main()
