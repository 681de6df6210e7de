"""Predictions of the fitted one-node model against independent integration of its ODE."""
import json
import math
import subprocess
import sys

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from fdwall.analyses.logs import one_node_propagate, predict_one_node

R, C, TA = 0.08, 6.0e4, 293.15


def _ode_time_to(T_set, P, T0):
    # Source: scipy.integrate.solve_ivp (independent numerical integration of
    # C dT/dt = P - (T - T_amb)/R, Incropera sec. 5.3) with a terminal event at the setpoint.
    ev = lambda t, y: y[0] - T_set  # noqa: E731
    ev.terminal = True
    s = solve_ivp(lambda t, y: [(P - (y[0] - TA) / R) / C], (0, 50 * R * C), [T0],
                  events=ev, rtol=1e-10, atol=1e-10)
    return s.t_events[0][0] if s.t_events[0].size else math.inf


def test_time_to_setpoint_heating_and_cooling_match_ode():
    p = predict_one_node(R, C, TA, setpoint=TA + 100.0, power=2000.0, rated_power=2000.0)
    assert p["time_to_setpoint_s"] == pytest.approx(_ode_time_to(TA + 100.0, 2000.0, TA),
                                                    rel=1e-6)
    # closed form t = RC ln(P R / (P R - dT)) = 4800 ln(160/60) s (hand arithmetic)
    assert p["time_to_setpoint_s"] == pytest.approx(4800.0 * math.log(160 / 60), rel=1e-12)
    q = predict_one_node(R, C, TA, setpoint=TA + 50.0, power=0.0, T0=TA + 150.0)
    assert q["time_to_setpoint_s"] == pytest.approx(_ode_time_to(TA + 50.0, 0.0, TA + 150.0),
                                                    rel=1e-6)


def test_unreachable_and_already_reached_setpoints():
    # Source: one-node closed form (Incropera sec. 5.3): T never passes T_amb + P R.
    p = predict_one_node(R, C, TA, setpoint=TA + 200.0, power=2000.0, rated_power=2000.0)
    assert p["time_to_setpoint_s"] == math.inf and p["duty_at_setpoint"] > 1
    assert _ode_time_to(TA + 200.0, 2000.0, TA) == math.inf
    p = predict_one_node(R, C, TA, setpoint=TA + 10.0, power=2000.0, T0=TA + 50.0)
    assert p["time_to_setpoint_s"] == 0.0


def test_steady_temperature_and_duty_match_long_integration():
    # Source: steady energy balance P = (T - T_amb)/R (Incropera eq. 3.19 with one resistance);
    # checked by integrating the ODE for 30 time constants with scipy.integrate.solve_ivp, and
    # the duty by the time-average of an on/off heater (period << RC) through the exact
    # piecewise-constant response.
    p = predict_one_node(R, C, TA, setpoint=TA + 120.0, power=1000.0, rated_power=2500.0,
                         R_stderr=0.004)
    s = solve_ivp(lambda t, y: [(1000.0 - (y[0] - TA) / R) / C], (0, 30 * R * C), [TA],
                  rtol=1e-10, atol=1e-8)
    assert p["steady_temperature_K"] == pytest.approx(s.y[0, -1], abs=1e-4)
    assert p["steady_temperature_stderr_K"] == pytest.approx(1000.0 * 0.004)
    duty = p["duty_at_setpoint"]
    assert duty == pytest.approx(120.0 / (R * 2500.0))
    assert p["duty_at_setpoint_stderr"] == pytest.approx(duty * 0.004 / R)
    t = np.arange(0, 30 * R * C, 6.0)
    on = ((t % 60.0) < 60.0 * duty - 1e-9).astype(float)
    # quantise the on-time to the 6 s step: the delivered mean power is what matters
    T = one_node_propagate(t, on * 2500.0, np.full(t.size, TA), R, C, TA)
    mean_duty = on[:-1].mean()
    assert T[-2000:].mean() == pytest.approx(TA + mean_duty * 2500.0 * R, abs=0.2)
    assert abs(mean_duty - duty) < 0.1


def test_cli_predictions(tmp_path):
    # Source: closed forms above (Incropera sec. 5.3) applied to the fitted R and C.
    t = np.arange(0, 8 * 3600.0, 60.0)
    P = np.where(t < 5 * 3600, 2000.0, 0.0)
    T = one_node_propagate(t, P, np.full(t.size, TA), R, C, TA)
    T += np.random.default_rng(4).normal(0, 0.1, t.size)
    lines = ["# invented data for a test", "time [s],oven [K],heater [W]"]
    lines += [f"{a},{b:.3f},{c}" for a, b, c in zip(t, T, P)]
    log = tmp_path / "log.csv"
    log.write_text("\n".join(lines) + "\n")
    r = subprocess.run([sys.executable, "-m", "fdwall.cli", "fit", str(log), "--time", "time",
                        "--temperature", "oven", "--power", "heater", "--ambient", "20 degC",
                        "--setpoint", "120 degC", "--at-power", "1.5 kW", "--json",
                        "--out", str(tmp_path / "o")], capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    d = json.loads(r.stdout)
    p = d["predictions"]
    Rf, Cf = d["R_K_per_W"], d["C_J_per_K"]
    assert p["steady_temperature_K"] == pytest.approx(TA + 1500.0 * Rf)
    assert p["duty_at_setpoint"] == pytest.approx(100.0 / (Rf * 2000.0))
    assert p["time_to_setpoint_s"] == pytest.approx(
        Rf * Cf * math.log(1500.0 * Rf / (1500.0 * Rf - 100.0)))
    assert p["steady_temperature_K"] == pytest.approx(TA + 1500.0 * R, abs=5 * 1500.0
                                                      * d["R_stderr_K_per_W"])
