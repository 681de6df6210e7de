"""The physics cross-check of a fit (`--case`): implied R/C, ratios, reading, warnings."""
import json
import subprocess
import sys

import numpy as np
import pytest

from fdwall import Case, Chamber, Control, EnclosureWall, Face, Heater, Layer, RunSettings, Wall
from fdwall.analyses.logs import fit_one_node_log, one_node_propagate, physics_check
from fdwall.analyses.lumped import implied_rc
from fdwall.materials import Constant, Material

T_AMB = 293.15


def _box(k=500.0, thick=0.002, P=800.0, cap=2.0e4):
    m = Material(name="w", k=Constant(k), cp=Constant(900.0), rho=1500.0)
    walls = [EnclosureWall(wall=Wall(layers=(Layer(m, thick),), area=1.0, name=f"w{i}"),
                           outer=Face(fluid_temperature=T_AMB, convection=8.0), inner_face_convection=50.0)
             for i in range(6)]
    return Case(run=RunSettings(duration=20 * 3600.0, start_temperature=T_AMB),
                walls=walls, chamber=Chamber(heat_capacity=cap, room_temperature=T_AMB),
                heater=Heater(power=P), control=Control())


def _closed_form():
    # Six thin conductive walls in parallel, each 1/h_in + L/k + 1/h_out per m2 (Incropera
    # eq. 3.19); the wall's stored energy is its heat capacity times the fraction of the rise
    # its mid-plane carries (linear steady profile, Incropera ch. 3); chamber capacity added.
    R = (1 / 50.0 + 0.002 / 500.0 + 1 / 8.0) / 6
    frac = (1 / 8.0 + 0.5 * 0.002 / 500.0) / (1 / 50.0 + 0.002 / 500.0 + 1 / 8.0)
    C = 2.0e4 + 6 * 1500 * 900 * 0.002 * frac
    return R, C


def _fit_for(R, C, hours, seed=0):
    # Synthetic log from the exact one-node response (Incropera sec. 5.3) with white noise.
    t = np.arange(0, hours * 3600.0, 60.0)
    P = np.full(t.size, 800.0)
    T = one_node_propagate(t, P, np.full(t.size, T_AMB), R, C, T_AMB)
    T += np.random.default_rng(seed).normal(0, 0.1, t.size)
    return fit_one_node_log(t, T, P, np.full(t.size, T_AMB)), t[-1]


def test_physics_object_matches_closed_form_and_ratios():
    R, C = _closed_form()
    implied = implied_rc(_box())
    # a log made from R and C 20 % below / 30 % above the physics, long enough to equilibrate
    fit, dur = _fit_for(0.8 * R, 1.3 * C, hours=12)
    chk = physics_check(fit, implied, dur)
    ph = chk["physics"]
    assert set(ph) == {"R_K_per_W", "C_stored_J_per_K", "C_total_J_per_K", "tau_s"}
    assert ph["R_K_per_W"] == pytest.approx(R, rel=1e-6)
    assert ph["C_stored_J_per_K"] == pytest.approx(C, rel=1e-3)
    # total capacity: chamber plus all wall material (rho cp V), Incropera eq. 5.5 style sum
    assert ph["C_total_J_per_K"] == pytest.approx(2.0e4 + 6 * 1500 * 900 * 0.002, rel=1e-3)
    assert ph["tau_s"] == pytest.approx(R * C, rel=1e-3)
    assert chk["ratios"]["R"] == pytest.approx(0.8, rel=0.02)
    assert chk["ratios"]["C_stored"] == pytest.approx(1.3, rel=0.03)
    assert chk["ratios"]["tau"] == pytest.approx(0.8 * 1.3, rel=0.03)
    text = " ".join(chk["reading"])
    assert "below the physics" in text and "Leakage" in text and "edges" in text
    assert "contents" in text and "moisture" in text and "sensor lag" in text
    assert chk["warnings"] == []


def test_short_log_warned_and_agreement_read_as_such():
    # Source: one-node closed form (Incropera sec. 5.3): after 3 tau the response is within
    # e^-3 = 5 % of equilibrium; a log of about 1.5 tau has not seen it.
    R, C = _closed_form()
    implied = implied_rc(_box())
    fit, dur = _fit_for(R, C, hours=1.5 * R * C / 3600.0)
    chk = physics_check(fit, implied, dur)
    assert chk["log_time_constants"] == pytest.approx(dur / fit["tau_s"])
    assert chk["log_time_constants"] < 3
    assert any("too short to see equilibrium" in w for w in chk["warnings"])
    fit, dur = _fit_for(R, C, hours=8 * R * C / 3600.0, seed=2)
    chk = physics_check(fit, implied, dur)
    assert chk["warnings"] == []
    assert "R agrees" in chk["reading"][0] and "C agrees" in chk["reading"][1]


def test_cli_case_gives_physics_object(tmp_path):
    # Source: the physics keys must equal fdwall.analyses.lumped.implied_rc of the same case
    # file, whose own tests check it against Incropera ch. 3 closed forms; the ratios are
    # fitted / implied by definition (common practice, no source).
    from fdwall.case import load_case
    case_path = "cases/lab-furnace-wall.toml"
    implied = implied_rc(load_case(case_path)[0] if isinstance(load_case(case_path), tuple)
                         else load_case(case_path))
    t = np.arange(0, 6 * 3600.0, 60.0)
    P = np.full(t.size, implied["Q_W"])
    T = one_node_propagate(t, P, np.full(t.size, implied["T_amb_K"]), implied["R_K_per_W"],
                           implied["C_stored_J_per_K"], implied["T_amb_K"])
    lines = ["# invented data for a test", "time [s],hot [K],heater [W]"]
    lines += [f"{a},{b:.4f},{c:.4f}" for a, b, c in zip(t, T, P)]
    log = tmp_path / "log.csv"
    log.write_text("\n".join(lines) + "\n")
    r = subprocess.run([sys.executable, "-m", "fdwall.cli", "fit", str(log), "--time", "time",
                        "--temperature", "hot", "--power", "heater", "--ambient",
                        f"{implied['T_amb_K']} K", "--case", case_path, "--json",
                        "--out", str(tmp_path / "o")], capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    d = json.loads(r.stdout)
    for k in ("R_K_per_W", "C_stored_J_per_K", "C_total_J_per_K", "tau_s"):
        assert d["physics"][k] == pytest.approx(implied[k], rel=1e-9)
    assert d["ratios"]["R"] == pytest.approx(d["R_K_per_W"] / implied["R_K_per_W"])
    assert d["reading"]
    assert (tmp_path / "o" / "log-fit.h5").exists()


@pytest.mark.parametrize("extra, match", [
    (["--case", "no-such-case.toml"], "does not exist"),
    (["--setpoint", "150"], "--setpoint"),
    (["--at-power", "2 m"], "--at-power"),
])
def test_cli_bad_case_or_prediction_option_exit_2(tmp_path, extra, match):
    # Source: exit codes and error style as in fdwall.cli (common practice, no source).
    r = subprocess.run([sys.executable, "-m", "fdwall.cli", "fit", "cases/lab-oven-log.csv",
                        "--time", "time", "--temperature", "chamber top", "--power", "heater",
                        "--ambient", "20 degC", "--out", str(tmp_path / "o")] + extra,
                       capture_output=True, text=True)
    assert r.returncode == 2 and match in r.stderr and "Traceback" not in r.stderr, r.stderr
    assert not (tmp_path / "o").exists()
