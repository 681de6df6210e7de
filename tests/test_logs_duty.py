"""Heater input as duty x rated power or on/off state x rated power."""
import json
import subprocess
import sys

import numpy as np
import pytest

from fdwall.analyses.logs import fit_one_node_log, one_node_propagate, read_log
from fdwall.errors import InputError

HEAD = "time [s],oven [degC],duty [%],on [1]\n"


def test_duty_and_state_give_power():
    # Source: definition of duty (mean power / rated power) and of an on/off state; 1 % = 0.01
    # (NIST SP 811). Hand arithmetic: 50 % of 2000 W is 1000 W.
    text = HEAD + "0,20,0,0\n60,25,50,1\n120,30,100,1\n"
    d = read_log(text, time="time", temperature="oven", duty="duty", rated_power=2000.0,
                 ambient=293.15, file="x.csv")
    assert np.allclose(d["P_W"], [0.0, 1000.0, 2000.0])
    s = read_log(text, time="time", temperature="oven", state="on", rated_power=2000.0,
                 ambient=293.15, file="x.csv")
    assert np.allclose(s["P_W"], [0.0, 2000.0, 2000.0])


@pytest.mark.parametrize("row, kw, match", [
    ("60,25,150,1", {"duty": "duty"}, r"row 3, column 'duty': duty 1\.5 is outside 0\.\.1"),
    ("60,25,-5,1", {"duty": "duty"}, "outside 0..1"),
    ("60,25,50,0.5", {"state": "on"}, r"row 3, column 'on': state 0\.5 is not 0 or 1"),
    ("60,25,50,2", {"state": "on"}, "not 0 or 1"),
])
def test_bad_duty_or_state_rejected(row, kw, match):
    # Source: common practice, no source (a duty is a fraction 0..1, a state is 0 or 1).
    text = HEAD + "0,20,0,0\n" + row + "\n120,30,100,1\n"
    with pytest.raises(InputError, match=match):
        read_log(text, time="time", temperature="oven", rated_power=2000.0, ambient=293.15,
                 file="x.csv", **kw)


def test_rated_power_needed_and_one_input_only():
    # Source: common practice, no source.
    text = HEAD + "0,20,0,0\n60,25,50,1\n120,30,100,1\n"
    with pytest.raises(InputError, match="rated power"):
        read_log(text, time="time", temperature="oven", duty="duty", ambient=293.15)
    with pytest.raises(InputError, match="exactly one"):
        read_log(text, time="time", temperature="oven", duty="duty", state="on",
                 rated_power=1.0, ambient=293.15)


def _synthetic_state_log(tmp_path):
    # Thermostat-like on/off history through the exact one-node response (Incropera sec. 5.3,
    # lumped capacitance with constant heat input over each step).
    R, C, Ta, Prated = 0.05, 4e4, 293.15, 2000.0
    t = np.arange(0, 14400, 30.0)
    on = ((t // 600) % 3 != 2).astype(float) * (t < 9000)
    T = one_node_propagate(t, on * Prated, np.full(t.size, Ta), R, C, Ta)
    T += np.random.default_rng(3).normal(0, 0.2, t.size)
    lines = ["# invented data for a test", "time [s],oven [K],on [1],duty [1]"]
    lines += [f"{a},{b:.3f},{int(c)},{c:.2f}" for a, b, c in zip(t, T, on)]
    p = tmp_path / "log.csv"
    p.write_text("\n".join(lines) + "\n")
    return p, R, C


def test_state_fit_recovers_R_C(tmp_path):
    # Source: one-node closed form (Incropera sec. 5.3); the fit must recover the R and C
    # used to make the log within 4 reported standard errors.
    p, R, C = _synthetic_state_log(tmp_path)
    d = read_log(str(p), time="time", temperature="oven", state="on", rated_power=2000.0,
                 ambient=293.15)
    f = fit_one_node_log(d["t_s"], d["T_K"], d["P_W"], d["T_amb_K"])
    assert abs(f["R_K_per_W"] - R) < 4 * f["R_stderr_K_per_W"]
    assert abs(f["C_J_per_K"] - C) < 4 * f["C_stderr_J_per_K"]


def test_cli_duty_and_state(tmp_path):
    # Source: one-node closed form (Incropera sec. 5.3); exit codes as in fdwall.cli (common
    # practice, no source).
    p, R, _ = _synthetic_state_log(tmp_path)
    base = [sys.executable, "-m", "fdwall.cli", "fit", str(p), "--time", "time",
            "--temperature", "oven", "--ambient", "20 degC", "--json"]
    for opt in (["--state", "on"], ["--duty", "duty"]):
        r = subprocess.run(base + opt + ["--rated-power", "2 kW", "--out",
                                         str(tmp_path / opt[1])], capture_output=True, text=True)
        assert r.returncode == 0, r.stderr
        d = json.loads(r.stdout)
        assert abs(d["R_K_per_W"] - R) < 4 * d["R_stderr_K_per_W"]
    for opt, match in ((["--state", "on"], "--rated-power"),
                       (["--state", "on", "--power", "1 kW"], "exactly one"),
                       (["--duty", "duty", "--rated-power", "2000"], "--rated-power")):
        r = subprocess.run(base + opt + ["--out", str(tmp_path / "bad")], capture_output=True,
                           text=True)
        assert r.returncode == 2 and match in r.stderr and "Traceback" not in r.stderr, r.stderr
        assert not (tmp_path / "bad").exists()
