"""`fdwall fit` with the two-node model, sensor lag, timestamps, repairs and the fit plot."""
import json
import subprocess
import sys

import numpy as np
import pytest

from fdwall.analyses.twonode import network_matrices, propagate

TA = 293.15


def _write_two_node_log(path, stamps=False):
    # Source: exact two-node response by the eigen-propagation, itself checked against
    # scipy.linalg.expm in test_logs_twonode.py; invented data for a test.
    p = dict(C_chamber=2.0e4, C_wall=1.2e5, R_chamber_wall=0.02, R_wall_ambient=0.12)
    t = np.arange(0, 6 * 3600.0 + 1, 60.0)
    P = np.where(t < 4 * 3600, 1500.0, 0.0)
    A, B = network_matrices("two-node", p)
    T = propagate(A, B, t, np.column_stack([P, np.full(t.size, TA)]), [TA, TA])[:, 0]
    T += np.random.default_rng(3).normal(0, 0.2, t.size)
    if stamps:
        import datetime as dt
        from zoneinfo import ZoneInfo
        t0 = dt.datetime(2026, 3, 28, 23, 30, tzinfo=dt.timezone.utc)
        tcol = [(t0 + dt.timedelta(seconds=float(s))).astimezone(ZoneInfo("Europe/Berlin"))
                .replace(tzinfo=None).isoformat() for s in t]  # local wall-clock times
        head = "stamp,oven [degC],heater [W]"
    else:
        tcol = [f"{s:.0f}" for s in t]
        head = "time [s],oven [degC],heater [W]"
    lines = ["# invented data for a test", head]
    lines += [f"{a},{b - 273.15:.3f},{c:.0f}" for a, b, c in zip(tcol, T, P)]
    path.write_text("\n".join(lines) + "\n")
    return p


def _fit(log, out, *extra):
    return subprocess.run([sys.executable, "-m", "fdwall.cli", "fit", str(log), "--temperature",
                           "oven", "--power", "heater", "--ambient", "20 degC", "--out",
                           str(out), *extra], capture_output=True, text=True)


def test_cli_two_node_with_timestamps_and_plot(tmp_path):
    # Source: generating parameters of the synthetic log (within 4 standard errors); the
    # timestamps cross the 2026-03-29 change to CEST in Europe/Berlin (IANA tz database), so
    # elapsed times are right only if the zone is applied.
    log = tmp_path / "log.csv"
    p = _write_two_node_log(log, stamps=True)
    r = _fit(log, tmp_path / "o", "--time", "stamp", "--time-zone", "Europe/Berlin",
             "--model", "two-node", "--json")
    assert r.returncode == 0, r.stderr
    d = json.loads(r.stdout)
    for k, v in p.items():
        assert abs(d["parameters"][k]["value"] - v) < 4 * d["parameters"][k]["stderr"], k
    assert d["R_K_per_W"] == pytest.approx(0.14, abs=4 * d["R_stderr_K_per_W"])
    assert d["model"] == "two-node" and d["log_start_utc"] == "2026-03-28T23:30:00+00:00"
    png = tmp_path / "o" / "log-fit.png"
    assert str(png) in d["files"] and png.stat().st_size > 10000
    import h5py
    with h5py.File(tmp_path / "o" / "log-fit.h5") as h:
        assert h["parameters/C_wall"].attrs["value"] == pytest.approx(
            d["parameters"]["C_wall"]["value"])
        assert h["tables/log/model_K"].shape == h["tables/log/T_K"].shape
    # no zone: refused naming the row; --no-plots writes no PNG
    r = _fit(log, tmp_path / "b", "--time", "stamp", "--json")
    assert r.returncode == 2 and "row 2" in r.stderr and "Traceback" not in r.stderr
    r = _fit(log, tmp_path / "n", "--time", "stamp", "--time-zone", "Europe/Berlin",
             "--no-plots", "--quiet")
    assert r.returncode == 0, r.stderr
    assert not (tmp_path / "n" / "log-fit.png").exists()


def test_cli_sensor_lag_reports_bias_and_options_checked(tmp_path):
    # Source: the first-moment argument of test_logs_twonode.py (Elmore 1948): a given sensor
    # lag makes the lag-free fit's C larger; option conventions of fdwall.cli (a bare number
    # where a time is needed is exit 2 naming the option; common practice, no source).
    log = tmp_path / "log.csv"
    _write_two_node_log(log)
    r = _fit(log, tmp_path / "o", "--time", "time", "--sensor-lag", "2 min", "--json",
             "--no-plots")
    assert r.returncode == 0, r.stderr
    d = json.loads(r.stdout)
    assert d["sensor_lag_s"] == 120.0 and d["C_lag_bias_fraction"] > 0
    for extra, match in ((["--sensor-lag", "30"], "--sensor-lag"),
                         (["--dead-time", "soon"], "--dead-time"),
                         (["--repair", "guess"], "--repair"),
                         (["--model", "three-node"], "--model")):
        r = _fit(log, tmp_path / "bad", "--time", "time", *extra)
        assert r.returncode == 2 and match in r.stderr and "Traceback" not in r.stderr, r.stderr
        assert not (tmp_path / "bad").exists()


def test_cli_repairs_reported(tmp_path):
    # Source: common practice, no source: a repair is reported (warning, JSON, HDF5), never
    # silent; without --repair the same log is refused naming the row.
    log = tmp_path / "log.csv"
    _write_two_node_log(log)
    lines = log.read_text().splitlines()
    lines.insert(50, lines[49])           # a duplicated row
    log.write_text("\n".join(lines) + "\n")
    r = _fit(log, tmp_path / "bad", "--time", "time")
    assert r.returncode == 2 and "duplicate" in r.stderr
    r = _fit(log, tmp_path / "o", "--time", "time", "--repair", "duplicates", "--json",
             "--no-plots")
    assert r.returncode == 0, r.stderr
    d = json.loads(r.stdout)
    assert d["repairs"] and "averaged" in d["repairs"][0]
    assert "log repaired" in r.stderr


def test_cli_zero_power_log_gives_the_time_constant_only(tmp_path):
    # Source: exact cooling curve T = T_amb + (T0 - T_amb) exp(-t/tau) (Incropera sec. 5.3):
    # with no power the log fixes tau = R C only, so R and C are null in JSON.
    t = np.arange(0, 4 * 3600.0, 60.0)
    T = TA + 120 * np.exp(-t / 5000.0) + np.random.default_rng(0).normal(0, 0.1, t.size)
    lines = ["# invented data for a test", "time [s],oven [K],heater [W]"]
    lines += [f"{a},{b:.3f},0" for a, b in zip(t, T)]
    log = tmp_path / "cool.csv"
    log.write_text("\n".join(lines) + "\n")
    r = _fit(log, tmp_path / "o", "--time", "time", "--json", "--setpoint", "50 degC")
    assert r.returncode == 0, r.stderr
    d = json.loads(r.stdout)
    assert d["R_K_per_W"] is None and d["C_J_per_K"] is None and d["model"] == "time-constant"
    assert abs(d["tau_s"] - 5000.0) < 4 * d["tau_stderr_s"]
    assert d["predictions"] == {}
    assert "time constant R C only" in r.stderr
