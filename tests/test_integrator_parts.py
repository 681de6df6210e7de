"""The time loop's own compiled parts, each against a closed form.

Sources
-------
* TR-BDF2 (Bank et al. 1985, IEEE Trans. Electron Devices 32(10)): the step's quadrature
  weights W0, W0, W2 on the start, stage (t + gamma h) and end values sum to one and
  integrate a linear flow exactly, h (q0 + q1) / 2 (trapezoid rule).
* Cubic Hermite interpolation reproduces a straight line when both end slopes equal the
  line's slope, so a crossing falls where the line crosses (elementary).
* The PID law u = kp e + ki sum(e dt) + kd de/dt, clipped to 0..1 (standard control theory,
  from memory); the thermostat switches off at setpoint + band/2 (its definition).
"""
from __future__ import annotations

import numpy as np
import pytest

import fdwall.solver.layout as L
from fdwall.solver import kernels as Kr


def _empty(n):
    return np.zeros(n, dtype=np.int64)


# material tables m_off, mtab for the read-out between nodes; the rows here read linearly
# (material -1), so the tables are never looked at
NO_MAT = (np.zeros(2, dtype=np.int64), np.zeros((L.N_MT, 2)))


def test_ledger_weights_sum_to_one_and_integrate_linear_flows_exactly():
    assert 2 * Kr.W0 + Kr.W2 == pytest.approx(1.0, abs=1e-15)
    nf, hs = 3, 7.5
    q0, q1 = np.array([10.0, -4.0, 0.5]), np.array([30.0, 2.0, 0.5])
    qg = q0 + Kr.GAMMA * (q1 - q0)            # the stage sits at t + gamma h
    ex0, ex1 = np.array([100.0, 5.0]), np.array([300.0, 9.0])
    exg = ex0 + Kr.GAMMA * (ex1 - ex0)
    acc = np.zeros(nf + L.N_EX + 1)
    z = np.zeros(4)
    Kr.ledger(acc, hs, q0, qg, q1, z, z, z, z, z, ex0, exg, ex1, _empty(0), _empty(0))
    assert np.allclose(acc[:nf], hs * (q0 + q1) / 2, rtol=1e-14)
    assert acc[nf + L.EX_HEATER] == pytest.approx(hs * 200.0, rel=1e-14)
    assert acc[nf + L.EX_LOSS] == pytest.approx(hs * 7.0, rel=1e-14)
    assert acc[-1] == 0.0


def test_event_on_a_straight_line_crosses_where_the_line_does():
    T0, T1 = np.array([300.0, 310.0]), np.array([340.0, 350.0])
    hs, t = 20.0, 100.0
    C = np.ones(2)
    F = (T1 - T0) / hs                          # slopes of the straight line [K/s] with C = 1
    ev_i = np.array([[0, 1]], dtype=np.int64)
    ev_f = np.array([[0.25, 330.0]])            # 0.25 T_a + 0.75 T_b crosses 330 K
    ev_out = np.full((1, 2), np.nan)
    Kr.events(ev_i, ev_f, ev_out, t, hs, T0, T1, F, C, F, C, *NO_MAT)
    y0, y1 = 0.25 * 300 + 0.75 * 310, 0.25 * 340 + 0.75 * 350
    assert ev_out[0, L.EV_UP] == pytest.approx(t + hs * (330.0 - y0) / (y1 - y0), abs=1e-9)
    assert np.isnan(ev_out[0, L.EV_DOWN])


def _ctl(mode, kp=0.0, ki=0.0, kd=0.0, period=10.0, band=4.0, sp=373.15):
    ctl_i = np.full(L.N_CI, -1, dtype=np.int64)
    ctl_f = np.zeros(L.N_CF)
    ctl_i[L.CI_MODE] = mode
    ctl_i[L.CI_HEATER_NODE] = 0
    ctl_i[L.CI_SENSOR_A] = ctl_i[L.CI_SENSOR_B] = 0
    ctl_i[L.CI_DUTY], ctl_i[L.CI_SETPOINT], ctl_i[L.CI_ENABLE] = 0, 1, 2
    ctl_f[L.CF_PERIOD], ctl_f[L.CF_BAND] = period, band
    ctl_f[L.CF_KP], ctl_f[L.CF_KI], ctl_f[L.CF_KD] = kp, ki, kd
    ctl_f[L.CF_SENSOR_W] = 1.0
    s_off = np.array([0, 1, 2, 3], dtype=np.int64)
    stab = np.array([[0.0, 0.0, 0.0], [0.3, sp, 1.0]])     # duty 0.3, setpoint, enabled
    return ctl_i, ctl_f, s_off, stab


def test_pid_sample_follows_the_law():
    kp, ki, kd, per = 0.02, 1e-4, 0.5, 10.0
    ctl_i, ctl_f, s_off, stab = _ctl(L.CTL_PID_AVERAGED, kp, ki, kd, per)
    cs = np.zeros(L.N_CS)
    cs[L.CS_INT], cs[L.CS_PREV], cs[L.CS_NEXT] = 0.05, 4.0, 50.0
    T = np.array([363.15])                     # 10 K below the setpoint
    u, t_target, jump = Kr.controller(T, 50.0, 1e9, False, cs, L.CTL_PID_AVERAGED, per,
                                      0.01, ctl_i, ctl_f, s_off, stab, *NO_MAT)
    e = 10.0
    expect = kp * e + (0.05 + ki * e * per) + kd * (e - 4.0) / per
    assert u == pytest.approx(min(max(expect, 0.0), 1.0), rel=1e-14)
    assert cs[L.CS_NEXT] == 60.0 and t_target == 60.0 and jump
    assert cs[L.CS_INT] == pytest.approx(0.05 + ki * e * per, rel=1e-14)   # unsaturated


def test_thermostat_switches_at_the_top_of_its_band():
    ctl_i, ctl_f, s_off, stab = _ctl(L.CTL_THERMOSTAT, band=4.0)
    cs = np.zeros(L.N_CS)
    cs[L.CS_ON] = 1.0
    for T_s, on in ((374.0, 1.0), (375.2, 0.0), (372.0, 0.0), (371.0, 1.0)):
        u, _, _ = Kr.controller(np.array([T_s]), 0.0, 1e9, False, cs, L.CTL_THERMOSTAT, 10.0,
                                0.01, ctl_i, ctl_f, s_off, stab, *NO_MAT)
        assert u == on, T_s


def test_balance_of_a_closed_ledger_is_zero():
    # heat in through an external face 500 J, heater 200 J, loss 50 J: stored must be 650 J
    acc = np.array([500.0, 0.0, 200.0, 50.0, 0.0])
    stats = np.zeros(L.N_STATS)
    stats[L.ST_H0] = 1000.0
    has_ext = np.array([True, False])
    Kr.balance(acc, stats, np.array([1200.0, 450.0]), has_ext)
    assert stats[L.ST_RESMAX] == pytest.approx(0.0, abs=1e-12)
    assert stats[L.ST_SCALE] == 650.0
    Kr.balance(acc, stats, np.array([1200.0, 460.0]), has_ext)    # 10 J unaccounted
    assert stats[L.ST_RESMAX] == pytest.approx(10.0, rel=1e-12)


def test_thermostat_cut_puts_the_step_end_near_the_crossing():
    # heater on, threshold 375.15 K (setpoint + band/2); the sensor runs 373 -> 377 K: the
    # straight line crosses at (375.15 - 373) / 4 of the step
    ctl_i, ctl_f, s_off, stab = _ctl(L.CTL_THERMOSTAT, band=4.0)
    frac = Kr.thermostat_cut(np.array([373.0]), np.array([377.0]), 1.0, 10.0, ctl_i, ctl_f,
                             s_off, stab, 0.01, *NO_MAT)
    assert frac == pytest.approx((375.15 - 373.0) / 4.0, rel=1e-12)
    # within the tolerance: the step stands
    assert Kr.thermostat_cut(np.array([373.0]), np.array([375.155]), 1.0, 10.0, ctl_i, ctl_f,
                             s_off, stab, 0.01, *NO_MAT) == 0.0
