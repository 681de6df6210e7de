"""Tests of the log reader and the one-node log fit (fdwall.analyses.logs)."""
import numpy as np
import pytest

from fdwall.analyses.logs import fit_one_node_log, one_node_propagate, read_log
from fdwall.errors import InputError


def test_one_node_step_matches_closed_form():
    # Source: first-order lumped system step response T = Ta + P R (1 - exp(-t/RC)),
    # Incropera, Fundamentals of Heat and Mass Transfer, lumped capacitance (sec. 5.3).
    t = np.linspace(0, 5000, 51)
    R, C, Ta, P = 0.05, 4e4, 293.15, 2000.0
    T = one_node_propagate(t, np.full(51, P), np.full(51, Ta), R, C, Ta)
    exact = Ta + P * R * (1 - np.exp(-t / (R * C)))
    assert np.allclose(T, exact, rtol=0, atol=1e-9)


def test_fit_coverage_white_noise():
    # Source: least-squares standard errors (Bates & Watts, Nonlinear Regression Analysis,
    # 1988, ch. 2): a 95 % interval R +/- 1.96 s should hold the true R in about 95 % of seeds.
    R, C, Ta = 0.05, 4e4, 293.15
    t = np.arange(0, 14400, 60.0)
    P = np.where(t < 7200, 2000.0, 0.0)
    hits = 0
    n = 40
    for seed in range(n):
        rng = np.random.default_rng(seed)
        T = one_node_propagate(t, P, np.full(t.size, Ta), R, C, Ta) + rng.normal(0, 0.5, t.size)
        f = fit_one_node_log(t, T, P, np.full(t.size, Ta))
        hits += abs(f["R_K_per_W"] - R) < 1.96 * f["R_stderr_K_per_W"]
        assert f["rms_K"] == pytest.approx(0.5, rel=0.2)
    assert 0.8 <= hits / n <= 1.0


def test_zero_power_rejected_and_degC_as_kelvin_rejected():
    # Source: common practice, no source (R and C are not separable without power).
    t = np.arange(10.0)
    with pytest.raises(InputError, match="zero"):
        fit_one_node_log(t, np.full(10, 400.0), np.zeros(10), np.full(10, 293.0))
    with pytest.raises(InputError, match="degC"):
        fit_one_node_log(t, np.full(10, 40.0), np.ones(10), np.full(10, 20.0))


GOOD = "time [min],oven [degC],heater [W]\n0,20,1000\n1,25,1000\n2,30,1000\n"


@pytest.mark.parametrize("text,match", [
    ("time [min],oven [degC],heater [W]\n0,20,1000\n1,,1000\n2,30,1000\n", "row 3.*gap"),
    ("time [min],oven [degC],heater [W]\n0,20,1000\n0,25,1000\n2,30,1000\n", "row 3.*duplicate"),
    ("time [min],oven [degC],heater [W]\n0,20,1000\n2,25,1000\n1,30,1000\n", "row 4.*unsorted"),
    ("time [min],oven [degC],heater [W]\n0,20,1000\n1,hot,1000\n2,30,1000\n", "not a number"),
    ("time [min],oven [degC],heater [W]\n", "rows"),
])
def test_bad_logs_give_clear_errors(tmp_path, text, match):
    # Source: common practice, no source (each error names file, row and column).
    p = tmp_path / "log.csv"
    p.write_text(text)
    with pytest.raises(InputError, match=match):
        read_log(str(p), time="time", temperature="oven", power="heater", ambient=293.15)


def test_reader_units():
    # Source: unit definitions (NIST SP 811): 1 min = 60 s, T[K] = T[degC] + 273.15.
    d = read_log(GOOD, time="time", temperature=["oven"], power="heater", ambient=293.15,
                 file="x.csv")
    assert np.allclose(d["t_s"], [0, 60, 120])
    assert np.allclose(d["T_K"], [293.15, 298.15, 303.15])


def test_cli_fit_recovers_R_and_bad_log_exit_2(tmp_path):
    # Source: synthetic log from the closed-form one-node step response (Incropera sec. 5.3);
    # exit codes as in fdwall.cli (common practice, no source).
    import json
    import subprocess
    import sys
    R, C, Ta = 0.05, 4e4, 293.15
    t = np.arange(0, 14400, 60.0)
    P = np.where(t < 7200, 2000.0, 0.0)
    T = one_node_propagate(t, P, np.full(t.size, Ta), R, C, Ta)
    T += np.random.default_rng(1).normal(0, 0.3, t.size)
    lines = ["# invented data for a test", "time [s],oven [K],heater [W]"]
    lines += [f"{a},{b:.3f},{c}" for a, b, c in zip(t, T, P)]
    log = tmp_path / "log.csv"
    log.write_text("\n".join(lines) + "\n")
    cmd = [sys.executable, "-m", "fdwall.cli", "fit", str(log), "--time", "time",
           "--temperature", "oven", "--power", "heater", "--ambient", "20 degC",
           "--out", str(tmp_path / "o"), "--json"]
    r = subprocess.run(cmd, capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    d = json.loads(r.stdout)
    assert abs(d["R_K_per_W"] - R) < 4 * d["R_stderr_K_per_W"]
    assert (tmp_path / "o" / "log-fit.h5").exists()
    log.write_text("time [s],oven [K],heater [W]\n0,300,1\n0,301,1\n2,302,1\n")
    cmd[-2] = str(tmp_path / "bad")
    r = subprocess.run(cmd, capture_output=True, text=True)
    assert r.returncode == 2 and "duplicate" in r.stderr and "Traceback" not in r.stderr
    assert not (tmp_path / "bad").exists()


def test_reader_never_tracebacks_on_mutated_csv():
    # Source: property-based testing (hypothesis); common practice, no source: any bytes or a
    # mutated CSV gives a result or an InputError, never another exception.
    from hypothesis import HealthCheck, given, settings
    from hypothesis import strategies as st

    @settings(max_examples=300, derandomize=True, deadline=None,
              suppress_health_check=list(HealthCheck))
    @given(st.one_of(st.binary(max_size=200),
                     st.tuples(st.integers(0, len(GOOD) - 1), st.binary(max_size=4))))
    def check(x):
        import tempfile
        if isinstance(x, tuple):
            i, b = x
            data = GOOD.encode()[:i] + b + GOOD.encode()[i + 1:]
        else:
            data = x
        with tempfile.NamedTemporaryFile(suffix=".csv", delete=False) as f:
            f.write(data)
        try:
            read_log(f.name, time="time", temperature="oven", power="heater", ambient=293.15)
        except InputError:
            pass

    check()
