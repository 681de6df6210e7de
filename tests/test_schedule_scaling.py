"""Long schedules: correct values and linear growth of the checks.

References: numpy.interp (an independent piecewise-linear interpolator) for the values, and the
trapezoidal rule, exact for a piecewise-linear function (any numerical-analysis text), for the
integral.  The growth check compares the cost of 2,000 and 20,000 knots (a quadratic method
would cost 100 times more; a linear one about 10 times): a behavioural bound, not a timing
target; timings live in benchmarks/schedule_scaling.py.
"""
import time

import numpy as np
import pytest
from study_cases import ONE_LAYER_WALL

import fdwall
from fdwall.report.text import format_case
from fdwall.schedule import Schedule
from fdwall.system import build_system


def _flux_case(tmp_path, n):
    pairs = ", ".join(f'["{i * 10} s", "{(i % 2) * 500} W/m2"]' for i in range(n))
    text = ONE_LAYER_WALL.replace("[wall.inner_face]", f"[wall.inner_face]\nheat_flux = [{pairs}]")
    text = text.replace('duration = "1 h"', f'duration = "{n * 10} s"')
    p = tmp_path / f"flux{n}.toml"
    p.write_text(text)
    return p


def test_20000_knot_schedule_values_and_integral():
    rng = np.random.default_rng(7)
    n = 20_000
    t = np.cumsum(rng.uniform(1.0, 60.0, n))
    v = rng.uniform(0.0, 5000.0, n)
    s = Schedule(t, v)
    q = rng.uniform(t[0] - 100.0, t[-1] + 100.0, 5_000)
    np.testing.assert_allclose(s(q), np.interp(q, t, v), rtol=0, atol=1e-9)
    a, b = t[100] + 3.0, t[19_000] - 2.0
    inner = (t > a) & (t < b)
    x = np.concatenate(([a], t[inner], [b]))
    y = np.interp(x, t, v)
    assert s.integral(a, b) == pytest.approx(float(np.sum(0.5 * (y[1:] + y[:-1]) * np.diff(x))),
                                             rel=1e-12)


def test_steps_integrate_exactly():
    # a 2 kW/m2 step held 3 h: 21.6 MJ/m2 (hand calculation)
    s = Schedule([0.0, 10800.0, 10800.0], [2000.0, 2000.0, 0.0])
    assert s.integral(0.0, 20000.0) == pytest.approx(2000.0 * 10800.0, rel=1e-14)
    assert s.integral(5000.0, 10800.0) == pytest.approx(2000.0 * 5800.0, rel=1e-14)
    assert s.breakpoints() == [0.0, 10800.0]


def _check_cost(path):
    best = np.inf
    for _ in range(2):
        t0 = time.process_time()
        case = fdwall.load_case(path)
        format_case(case, build_system(case), [])
        best = min(best, time.process_time() - t0)
    return best


def test_check_grows_linearly_with_schedule_length(tmp_path):
    small, large = _flux_case(tmp_path, 2_000), _flux_case(tmp_path, 20_000)
    _check_cost(small)                                   # warm caches and imports
    ratio = _check_cost(large) / _check_cost(small)
    assert ratio < 30.0, f"10x the knots cost {ratio:.0f}x (quadratic would be ~100x)"
