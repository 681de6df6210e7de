"""Lumped networks fitted to logs (fdwall.analyses.twonode): two-node propagation against
scipy's matrix exponential, parameter recovery, identifiability, sensor lag and dead time,
interval coverage under autocorrelated noise."""
import numpy as np
import pytest
from scipy.linalg import expm

from fdwall.analyses.twonode import fit_log, network_matrices, propagate, simulate
from fdwall.errors import InputError

TA = 293.15
TWO = dict(C_chamber=2.0e4, C_wall=1.2e5, R_chamber_wall=0.02, R_wall_ambient=0.12)


def _zoh_reference(A, B, t, U, x0):
    # Source: scipy.linalg.expm; exact zero-order-hold discretisation of x' = A x + B u,
    # x(t+dt) = e^{A dt} x(t) + A^-1 (e^{A dt} - I) B u (any linear-systems text, e.g.
    # Franklin, Powell & Workman, Digital Control of Dynamic Systems, sec. 4.3.3).
    x = np.array(x0, float)
    out = [x]
    for k in range(t.size - 1):
        E = expm(A * (t[k + 1] - t[k]))
        x = E @ x + np.linalg.solve(A, (E - np.eye(A.shape[0])) @ (B @ U[k]))
        out.append(x)
    return np.array(out)


def _history(seed=0):
    rng = np.random.default_rng(seed)
    t = np.cumsum(rng.uniform(10.0, 50.0, 400))
    t -= t[0]
    P = np.where(rng.random(t.size) < 0.6, 1500.0, 0.0) * (t < 0.7 * t[-1])
    Ta = TA + 2.0 * np.sin(t / 3000.0)
    return t, P, Ta


def test_two_node_propagation_matches_matrix_exponential():
    t, P, Ta = _history()
    A, B = network_matrices("two-node", TWO)
    U = np.column_stack([P, Ta])
    X = propagate(A, B, t, U, [300.0, 295.0])
    ref = _zoh_reference(A, B, t, U, [300.0, 295.0])
    assert np.max(np.abs(X - ref)) < 1e-8
    # with a sensor state added (a third, one-way coupled node)
    A3, B3 = network_matrices("two-node", TWO, tau_sensor=120.0)
    X3 = propagate(A3, B3, t, U, [300.0, 295.0, 300.0])
    assert np.max(np.abs(X3 - _zoh_reference(A3, B3, t, U, [300.0, 295.0, 300.0]))) < 1e-8
    # a sensor lag equal to the node's time constant makes A defective: still exact
    A1, B1 = network_matrices("one-node", {"R": 0.05, "C": 4e4}, tau_sensor=2000.0)
    X1 = propagate(A1, B1, t, U, [TA, TA])
    assert np.max(np.abs(X1 - _zoh_reference(A1, B1, t, U, [TA, TA]))) < 1e-7


def test_two_node_fit_recovers_parameters_within_uncertainty():
    # Source: the generating parameters (synthetic log through the matrix-exponential
    # reference above, white noise 0.2 K); each within 4 reported standard errors.
    t, P, Ta = _history(1)
    A, B = network_matrices("two-node", TWO)
    T = _zoh_reference(A, B, t, np.column_stack([P, Ta]), [TA, TA])[:, 0]
    T = T + np.random.default_rng(5).normal(0, 0.2, t.size)
    f = fit_log(t, T, P, Ta, model="two-node")
    for k, v in TWO.items():
        p = f["parameters"][k]
        assert abs(p["value"] - v) < 4 * p["stderr"], (k, p, v)
        assert p["boot_ci95"][0] < p["value"] < p["boot_ci95"][1]
    assert f["R_K_per_W"] == pytest.approx(0.14, abs=4 * f["R_stderr_K_per_W"])
    assert f["C_J_per_K"] == pytest.approx(1.4e5, abs=4 * f["C_stderr_J_per_K"])
    assert f["rms_K"] == pytest.approx(0.2, rel=0.15)
    # both time constants of the 2x2 system: the eigenvalues of A (numpy.linalg.eigvals)
    tau_true = sorted(-1 / np.linalg.eigvals(A).real, reverse=True)
    assert f["time_constants_s"] == pytest.approx(tau_true, rel=0.05)


def test_identifiability_warned():
    # Source: common practice, no source: a log of a tenth of a time constant shows only the
    # initial slope P/C, so R and C trade off (their estimates are strongly correlated).
    t = np.arange(0, 200.0, 2.0)
    R, C = 0.05, 4e4
    P = np.full(t.size, 2000.0)
    T = TA + P * R * (1 - np.exp(-t / (R * C)))
    T += np.random.default_rng(2).normal(0, 0.05, t.size)
    f = fit_log(t, T, P, np.full(t.size, TA))
    assert not f["identifiable"]
    assert any("strongly correlated" in w and "R and C" in w for w in f["warnings"])


def _lagged_one_node(t, R, C, P, t_off, tau_s, dead):
    # Source: exact first-order filter of the exact one-node step response (Laplace
    # transform of PR/(s (1 + s tau))/(1 + s tau_s), any control text), switched off at t_off
    # by superposition, delayed by the dead time (Ts = start value before it).
    tau = R * C

    def step(x):
        x = np.maximum(x, 0.0)
        return P * R * (1 - (tau * np.exp(-x / tau) - tau_s * np.exp(-x / tau_s))
                        / (tau - tau_s))
    x = t - dead
    return TA + np.where(x > 0, step(x) - np.where(x > t_off, step(x - t_off), 0.0), 0.0)


def test_sensor_lag_and_dead_time_recovered_and_bias_of_C_shown():
    R, C, tau_s, dead = 0.05, 4e4, 240.0, 90.0
    t = np.arange(0, 16000.0, 30.0)
    P = np.where(t < 8000, 2000.0, 0.0)
    T = _lagged_one_node(t, R, C, 2000.0, 8010.0, tau_s, dead)  # power held to the next row
    # the model's own propagation agrees with the closed form to round-off
    sim = simulate("one-node", {"R": R, "C": C}, t, P, np.full(t.size, TA), [TA],
                   tau_sensor=tau_s, dead_time=dead)
    assert np.max(np.abs(sim - T)) < 1e-8
    T = T + np.random.default_rng(7).normal(0, 0.1, t.size)
    f = fit_log(t, T, P, np.full(t.size, TA), sensor_lag="fit", dead_time="fit")
    pr = f["parameters"]
    for k, v in (("R", R), ("C", C), ("tau_sensor", tau_s), ("dead_time", dead)):
        assert abs(pr[k]["value"] - v) < 4 * pr[k]["stderr"], (k, pr[k])
    # ignoring the lag: the fitted time constant grows by about tau_s + dead time, since the
    # first moments (mean delays) of convolved responses add (W. C. Elmore, J. Appl. Phys. 19
    # (1948) 55); R moves little (the steady state does not see the sensor), so C is biased up
    tau_plain = f["R_ignoring_lag_K_per_W"] * f["C_ignoring_lag_J_per_K"]
    assert tau_plain / (R * C) - 1 == pytest.approx((tau_s + dead) / (R * C), rel=0.15)
    assert f["R_ignoring_lag_K_per_W"] == pytest.approx(R, rel=0.05)
    assert f["C_lag_bias_fraction"] > 0.05
    assert f["C_ignoring_lag_J_per_K"] == pytest.approx(f["C_J_per_K"]
                                                       * (1 + f["C_lag_bias_fraction"]))
    # a given lag is used as given
    g = fit_log(t, T, P, np.full(t.size, TA), sensor_lag=tau_s, dead_time=dead)
    assert g["sensor_lag_s"] == tau_s and g["dead_time_s"] == dead
    assert abs(g["C_J_per_K"] - C) < 4 * g["C_stderr_J_per_K"]


def _ar1(rng, n, phi, sigma):
    e = np.empty(n)
    e[0] = rng.normal(0, sigma)
    w = rng.normal(0, sigma * np.sqrt(1 - phi ** 2), n)
    for i in range(1, n):
        e[i] = phi * e[i - 1] + w[i]
    return e


@pytest.mark.parametrize("phi", [0.0, 0.6])
def test_interval_coverage_with_white_and_ar1_noise(phi):
    # Source: coverage of a nominal 95 % interval over independent seeds is binomial (any
    # statistics text): with 200 seeds its standard deviation is sqrt(0.95 0.05/200) = 0.015,
    # so the effective-n intervals must cover the true R and C in 0.95 +/- 0.05 (3.2 sd).
    # The pre-whitened block bootstrap runs somewhat narrow on short, correlated records
    # (block resampling underestimates the long-run variance by a term of order 1/block
    # length: S. N. Lahiri, Resampling Methods for Dependent Data, Springer 2003, ch. 3; from
    # memory): it must reach 0.89 at least (measured 0.915 to 0.935 with these seeds).
    R, C = 0.05, 4e4
    t = np.arange(0, 14400, 60.0)
    P = np.where(t < 7200, 2000.0, 0.0)
    T0 = TA + np.where(t < 7200, P * R * (1 - np.exp(-t / (R * C))), 0.0)
    T0[t >= 7200] = TA + 2000 * R * (1 - np.exp(-7200 / (R * C))) * np.exp(
        -(t[t >= 7200] - 7200) / (R * C))
    n = 200
    hits = np.zeros(4)
    for seed in range(n):
        rng = np.random.default_rng(seed)
        f = fit_log(t, T0 + _ar1(rng, t.size, phi, 0.3), P, np.full(t.size, TA), seed=seed)
        for j, (k, v) in enumerate((("R", R), ("C", C))):
            lo, hi = f["parameters"][k]["ci95"]
            hits[2 * j] += lo <= v <= hi
            lo, hi = f["parameters"][k]["boot_ci95"]
            hits[2 * j + 1] += lo <= v <= hi
    cov = hits / n
    assert abs(cov[0] - 0.95) <= 0.05 and abs(cov[2] - 0.95) <= 0.05, cov
    assert cov[1] >= 0.89 and cov[3] >= 0.89, cov


def test_zero_power_gives_time_constant_only_and_bad_input():
    # Source: exact cooling curve T = T_amb + (T0 - T_amb) exp(-t/tau) (Incropera sec. 5.3).
    t = np.arange(0, 9000.0, 60.0)
    T = TA + 100 * np.exp(-t / 3000.0) + np.random.default_rng(0).normal(0, 0.1, t.size)
    f = fit_log(t, T, np.zeros(t.size), np.full(t.size, TA))
    assert f["R_K_per_W"] is None and f["C_J_per_K"] is None
    assert abs(f["tau_s"] - 3000.0) < 4 * f["tau_stderr_s"]
    assert any("time constant R C only" in w for w in f["warnings"])
    with pytest.raises(InputError, match="two-node"):
        fit_log(t, T, np.zeros(t.size), np.full(t.size, TA), model="two-node")
    with pytest.raises(InputError, match="strictly increasing"):
        fit_log(t[::-1], T, np.ones(t.size), np.full(t.size, TA))
    with pytest.raises(InputError, match="non-finite"):
        fit_log(t, np.where(t == 60.0, np.nan, T), np.ones(t.size), np.full(t.size, TA))


def test_stamped_demo_log_gives_back_its_generator():
    # Source: the inputs of cases/make-lab-oven-log.py (invented demo): two-node oven
    # C_chamber 20 kJ/K, C_wall 120 kJ/K, R 0.02 + 0.12 K/W, probe lag 90 s, dead time 30 s,
    # thermostat on/off at 1500 W, local timestamps in Europe/Berlin; each within 4 standard
    # errors.
    from fdwall.analyses.logs import read_log
    d = read_log("cases/lab-oven-log-stamped.csv", time="timestamp", temperature="probe",
                 state="heater on", rated_power=1500.0, ambient="room",
                 time_zone="Europe/Berlin")
    assert d["t_s"][-1] == 5 * 3600.0
    f = fit_log(d["t_s"], d["T_K"], d["P_W"], d["T_amb_K"], model="two-node",
                sensor_lag="fit", dead_time="fit", n_boot=0)
    for k, v in (TWO | {"tau_sensor": 90.0, "dead_time": 30.0}).items():
        p = f["parameters"][k]
        assert abs(p["value"] - v) < 4 * p["stderr"], (k, p)
    assert f["C_lag_bias_fraction"] > 0
