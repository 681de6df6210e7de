"""The compiled parts of the time loop (fdwall/solver/kernels.py: integrate's parts) against
their plain numpy twins (tests/kernel_twins.py) on random inputs, and against the method.

Sources
-------
* TR-BDF2: Bank et al. (1985), IEEE Trans. Electron Devices 32(10); Hosea & Shampine
  (1996), Appl. Numer. Math. 20: gamma = 2 - sqrt(2), both stages with the implicit
  coefficient gamma/2, stability function R(z) with e^z - R(z) = c z^3 + O(z^4),
  c = (-3 gamma^2 + 4 gamma - 2) / (12 (2 - gamma)), and R(-inf) = 0 (L-stable)
  (from memory; the R(z) below is derived from the two stage equations).
* Step-size controller: Hairer, Norsett & Wanner, Solving ODEs I, sec. II.4,
  h_new = h min(facmax, max(facmin, fac err^(-1/(q+1)))), q = 2 (from memory).
* Cubic Hermite interpolation is exact on cubics (elementary; e.g. Burden & Faires,
  Numerical Analysis, sec. 3.4).
"""
from __future__ import annotations

from types import SimpleNamespace

import kernel_twins as tw
import numpy as np
import pytest
from test_integrator_parts import NO_MAT
from test_jacobian_fd import CASES

import fdwall.solver.layout as L
from fdwall.solver import kernels as Kr
from fdwall.solver.layout import N_EX, system_args
from fdwall.system import build_system

RNG = np.random.default_rng(2026)


# ------------------------------------------------------------------ step target and size
def test_step_target_and_size_match_their_twins():
    for _ in range(300):
        t_out = np.sort(RNG.uniform(0, 1000, 6))
        bp = np.sort(RNG.uniform(0, 1000, 4))
        k, ibp = int(RNG.integers(0, 6)), int(RNG.integers(0, 5))
        land_outputs = bool(RNG.integers(0, 2))
        assert Kr.step_target(t_out, k, 6, land_outputs, bp, ibp) == tw.step_target(
            t_out, k, 6, land_outputs, bp, ibp)
        t, target = RNG.uniform(0, 500), RNG.uniform(500, 1000)
        h = float(np.exp(RNG.uniform(-3, 7)))
        max_step = float(np.exp(RNG.uniform(0, 7))) if RNG.random() < 0.5 else np.inf
        switched, restart = bool(RNG.integers(0, 2)), bool(RNG.integers(0, 2))
        cs = np.zeros(L.N_CS)
        cs[L.CS_HSW], cs[L.CS_HJ] = np.exp(RNG.uniform(-3, 7, 2))
        if RNG.random() < 0.2:
            h = (target - t) * (1 - 1e-10)          # within the landing tolerance
        got = Kr.step_size(h, t, target, max_step, switched, restart, cs)
        assert got == tw.step_size(h, t, target, max_step, switched, restart, cs[L.CS_HSW],
                                   cs[L.CS_HJ])
        mode, u, up = int(RNG.integers(0, 5)), float(RNG.integers(0, 2)), float(
            RNG.integers(0, 2))
        cs[L.CS_UPREV] = up
        assert Kr.heater_switched(u, cs, mode) == tw.heater_switched(u, up, mode)
        assert cs[L.CS_UPREV] == u


def test_step_size_lands_on_the_target_and_leaves_no_sliver():
    cs = np.full(L.N_CS, 1e9)
    assert Kr.step_size(50.0, 0.0, 40.0, np.inf, False, False, cs) == (40.0, True)
    # 30 of 40 would leave a 10-s sliver: take half of what remains
    assert Kr.step_size(30.0, 0.0, 40.0, np.inf, False, False, cs) == (20.0, False)
    assert Kr.step_size(30.0, 0.0, 400.0, 7.0, False, False, cs) == (7.0, False)


def test_step_factors_follow_the_elementary_controller():
    for err in np.exp(RNG.uniform(-40, 40, 500)):
        if err <= 1.0:
            assert Kr.factor_accepted(err) == pytest.approx(tw.factor_accepted(err), rel=1e-15)
        else:
            assert Kr.factor_rejected(err) == pytest.approx(tw.factor_rejected(err), rel=1e-15)
    assert Kr.factor_rejected(np.inf) == 0.2 and Kr.factor_accepted(0.0) == 5.0
    # with a local error ~ h^3, the retried step has err * fac^3 = 0.9^3 < 1: accepted
    for err in np.exp(RNG.uniform(0.0, np.log(90.0), 200)):
        assert err * Kr.factor_rejected(err) ** 3 == pytest.approx(0.729, rel=1e-12)


# ------------------------------------------------------------------ the two stages
def test_stage_guesses_match_their_twins():
    n = 9
    for have_prev in (False, True):
        T = RNG.uniform(0.5, 900, n)
        Tprev = RNG.uniform(0.5, 900, n)
        H0, F0 = RNG.normal(0, 1e6, n), RNG.normal(0, 1e3, n)
        hs, hprev = 37.0, 12.5
        Hb, Tp = np.empty(n), np.empty(n)
        Kr.trapezoid_guess(T, Tprev, hprev, have_prev, hs, Kr.D_COEF * hs, H0, F0, Hb, Tp)
        Hb_t, Tp_t = tw.trapezoid_guess(T, Tprev, hprev, have_prev, hs, H0, F0)
        assert np.allclose(Hb, Hb_t, rtol=1e-14, atol=0) and np.array_equal(Tp, Tp_t)
        Tg, Hg = RNG.uniform(0.5, 900, n), RNG.normal(0, 1e6, n)
        Kr.bdf2_guess(T, Tg, H0, Hg, Hb, Tp)
        Hb_t, Tp_t = tw.bdf2_guess(T, Tg, H0, Hg)
        assert np.allclose(Hb, Hb_t, rtol=1e-13, atol=1e-6) and np.allclose(Tp, Tp_t,
                                                                            rtol=1e-14)


def _step_of_linear_decay(z):
    """One TR-BDF2 step of y' = lambda y (H = T, F = lambda T, hs = 1) from y = 1 through
    the compiled stage guesses, each stage equation solved exactly: R(z), z = lambda."""
    T = np.array([1.0])
    H0, F0 = T.copy(), z * T
    Hb, Tp = np.empty(1), np.empty(1)
    dh = Kr.D_COEF
    Kr.trapezoid_guess(T, T, 1.0, False, 1.0, dh, H0, F0, Hb, Tp)
    Tg = Hb / (1.0 - dh * z)                   # H(Tg) - dh F(Tg) = Hb
    Kr.bdf2_guess(T, Tg, H0, Tg.copy(), Hb, Tp)
    return float(Hb[0] / (1.0 - dh * z))


def test_stage_coefficients_are_those_of_tr_bdf2():
    assert Kr.GAMMA == pytest.approx(2.0 - np.sqrt(2.0), rel=1e-15)
    # the BDF2 stage's own implicit coefficient (1-g)/(2-g) equals g/2 for this gamma
    assert Kr.C2 == pytest.approx(Kr.D_COEF, rel=1e-14)
    # local error constant: e^z - R(z) = c z^3 + O(z^4) (Hosea & Shampine 1996)
    c = (-3.0 * Kr.GAMMA ** 2 + 4.0 * Kr.GAMMA - 2.0) / (12.0 * (2.0 - Kr.GAMMA))
    assert Kr.KERR == pytest.approx(c, rel=1e-14)
    for z in (1e-3, -1e-3, 2e-3):
        got = (np.exp(z) - _step_of_linear_decay(z)) / z ** 3
        assert got == pytest.approx(c, rel=5 * abs(z) + 1e-6)
    # second order: halving z divides the error by 8
    e1 = abs(np.exp(-0.02) - _step_of_linear_decay(-0.02))
    e2 = abs(np.exp(-0.01) - _step_of_linear_decay(-0.01))
    assert e1 / e2 == pytest.approx(8.0, rel=0.02)
    # L-stable: |R| <= 1 on the negative axis and R -> 0 at -infinity
    for z in -np.exp(np.linspace(-5, 12, 60)):
        assert abs(_step_of_linear_decay(z)) <= 1.0
    assert abs(_step_of_linear_decay(-1e12)) < 1e-10


# ------------------------------------------------------------------ error estimate
@pytest.mark.parametrize("name", list(CASES))
def test_error_norm_matches_a_dense_solve(name):
    sysm = build_system(CASES[name]())
    n, nf = sysm.n_unknowns, sysm.face_i.shape[0]
    T = np.linspace(560.0, 320.0, n) + RNG.uniform(-3, 3, n)
    F, Cap, H = np.empty(n), np.empty(n), np.empty(n)
    J = [np.empty(n) for _ in range(5)]
    Kr.assemble(T, 100.0, 0.0, -1.0, *system_args(sysm), F, Cap, H, *J, np.empty(nf),
                np.empty(nf), np.empty(nf), np.zeros(N_EX))
    from test_jacobian_fd import _dense
    Jdense = _dense(sysm, J)
    F0, Fg, F1 = (F + RNG.normal(0, 5, n) for _ in range(3))
    hs, tol = 45.0, 0.01
    work = [np.empty(n) for _ in range(5)]
    got = Kr.error_norm(F0, Fg, F1, hs, Kr.D_COEF * hs, Cap, *J, sysm.dirich_node,
                        sysm.chains, sysm.n_nodes, sysm.has_chamber, *work, tol, False)
    assert got == pytest.approx(tw.error_norm(sysm, F0, Fg, F1, hs, Cap, Jdense, tol),
                                rel=1e-9)


# ------------------------------------------------------------------ retry, stall, flows
def test_retry_stall_and_fixed_face_parts_match_their_twins():
    ctl_i = np.full(L.N_CI, -1, dtype=np.int64)
    ctl_f = np.zeros(L.N_CF)
    ctl_i[L.CI_SENSOR_A] = ctl_i[L.CI_SENSOR_B] = 0
    ctl_i[L.CI_SETPOINT] = 0
    ctl_f[L.CF_BAND], ctl_f[L.CF_SENSOR_W] = 4.0, 1.0
    s_off, stab = np.array([0, 1], dtype=np.int64), np.array([[0.0], [373.15]])
    for _ in range(200):
        T0, T1 = RNG.uniform(365, 382, 1), RNG.uniform(365, 382, 1)
        u, hs = float(RNG.integers(0, 2)), float(RNG.uniform(1e-3, 100))
        mode = int(RNG.integers(0, 5))
        frac = Kr.thermostat_cut(T0, T1, u, 10.0, ctl_i, ctl_f, s_off, stab, 0.01, *NO_MAT)
        got = Kr.thermostat_retry(mode, T0, T1, u, 10.0, hs, 1e-10, ctl_i, ctl_f, s_off,
                                  stab, 0.01, *NO_MAT)
        assert got == tw.thermostat_retry(frac, hs, 1e-10, mode == L.CTL_THERMOSTAT)
    stats = np.zeros(L.N_STATS)
    count = 0
    for hs in np.exp(RNG.uniform(-30, 0, 500)) * 3600:
        stalled = Kr.stall_guard(stats, hs, 3600.0)
        count, expect = tw.stall_guard(count, hs, 3600.0)
        assert stalled == expect and stats[L.ST_STALL] == count
    stats[L.ST_STALL] = 20000
    assert Kr.stall_guard(stats, 1e-7, 3600.0)
    n = 6
    dn = np.array([0, 5], dtype=np.int64)
    H0, H1, F1 = RNG.normal(0, 1e5, n), RNG.normal(0, 1e5, n), RNG.normal(0, 100, n)
    for start in (np.array([np.nan, 3.0]), np.array([1.0, 2.0])):
        qd_state, qd_b = start.copy(), np.empty(2)
        Kr.dirichlet_flows(qd_b, qd_state, H1, H0, F1, 7.0, dn)
        qb_t, qs_t = tw.dirichlet_flows(start, H1, H0, F1, 7.0, dn)
        assert np.allclose(qd_b, qb_t, rtol=1e-14) and np.allclose(qd_state, qs_t, rtol=1e-14)


# ------------------------------------------------------------------ dense output
def _dense_call(t_out, k, t, hs, land, t_target, Ta, Tb, Fa, Ca, Fb, Cb, qa, qb, acc_a, acc_b):
    nun, nf, n = Ta.shape[0], qa.shape[0], t_out.shape[0]
    outs = [np.full((n, nun), np.nan), np.full((n, nf), np.nan), np.full((n, nf + N_EX), np.nan),
            np.full(n, np.nan), np.full((n, nf), np.nan), np.full((n, nf), np.nan)]
    hc = np.ones(nf)
    ex = np.array([10.0, 1.0])
    e = np.zeros(0, dtype=np.int64)
    k_new = Kr.dense_output(k, n, t, hs, land, t_target, t_out, Ta, Tb, Fa, Ca, Fb, Cb, qa, qb,
                            hc, hc, hc, hc, ex, ex, acc_a, acc_b, np.zeros(0), np.zeros(0), e, e,
                            e, np.zeros(1, dtype=np.int64), np.zeros((2, 1)), nf, *outs,
                            np.empty(nun), np.empty(nun))
    return k_new, outs


def test_dense_output_matches_its_twin():
    for _ in range(50):
        nun, nf = 4, 2
        t, hs = 500.0, float(RNG.uniform(1, 80))
        t_out = np.sort(np.concatenate([RNG.uniform(t - hs - 20, t + 20, 5), [t]]))
        Ta, Tb = RNG.uniform(300, 900, nun), RNG.uniform(300, 900, nun)
        Fa, Fb = RNG.normal(0, 50, nun), RNG.normal(0, 50, nun)
        Ca, Cb = RNG.uniform(10, 1e3, nun), RNG.uniform(10, 1e3, nun)
        qa, qb = RNG.normal(0, 50, nf), RNG.normal(0, 50, nf)
        acc = np.zeros(nf + N_EX + 1)
        k = int(np.searchsorted(t_out, t - hs, side="right"))
        land = bool(RNG.integers(0, 2))
        k_new, outs = _dense_call(t_out, k, t, hs, land, t, Ta, Tb, Fa, Ca, Fb, Cb, qa, qb,
                                  acc, acc)
        rows, Ts, qs = tw.dense_rows(t_out, k, len(t_out), t, hs, land, t, Ta, Tb, Fa, Ca, Fb,
                                     Cb, qa, qb)
        assert k_new == (rows[-1] + 1 if rows else k)
        for r, Tt, qt in zip(rows, Ts, qs):
            assert np.allclose(outs[0][r], Tt, rtol=1e-13) and np.allclose(outs[1][r], qt,
                                                                           rtol=1e-12,
                                                                           atol=1e-12)


def test_dense_output_is_exact_on_a_cubic():
    # T(t) = 400 + 3 s - 0.02 s^2 + 1e-4 s^3 (s = t - 100) with C = 1 (slope = F), and a
    # cumulative energy E(t) cubic with its flow q = E' at both ends: the rows inside the
    # step must be the cubic itself (Hermite interpolation is exact on cubics)
    def p(t):
        s = t - 100.0
        return 400.0 + 3 * s - 0.02 * s ** 2 + 1e-4 * s ** 3

    def dp(t):
        s = t - 100.0
        return 3 - 0.04 * s + 3e-4 * s ** 2

    def E(t):
        return 50.0 * t + 0.3 * t ** 2 - 1e-3 * t ** 3

    def q(t):
        return 50.0 + 0.6 * t - 3e-3 * t ** 2

    t0, t1 = 100.0, 160.0
    t_out = np.array([110.0, 125.0, 140.0, 155.0, 160.0])
    Ta, Tb = np.array([p(t0)]), np.array([p(t1)])
    acc_a = np.array([E(t0), 0.0, 0.0, 0.0])
    acc_b = np.array([E(t1), 0.0, 0.0, t1])
    k_new, outs = _dense_call(t_out, 0, t1, t1 - t0, True, t1, Ta, Tb, np.array([dp(t0)]),
                              np.ones(1), np.array([dp(t1)]), np.ones(1), np.array([q(t0)]),
                              np.array([q(t1)]), acc_a, acc_b)
    assert k_new == 5
    assert np.allclose(outs[0][:, 0], p(t_out), rtol=0, atol=1e-10)
    assert np.allclose(outs[2][:, 0], E(t_out), rtol=1e-13)
    # flows are interpolated linearly: exact for a linear flow only
    th = (140.0 - t0) / (t1 - t0)
    assert outs[1][2, 0] == pytest.approx((1 - th) * q(t0) + th * q(t1), rel=1e-13)


# ------------------------------------------------------------------ resume state
def test_resume_state_round_trips():
    nun, nf = 5, 2
    ks = np.zeros(L.resume_size(nun, nf))
    bp = np.array([10.0, 20.0, 30.0])
    got = Kr.resume_load(ks, bp, 15.0)
    assert got == (1, 1.0, False, False, False, -9.0)      # first call: breakpoint after 15 s
    Kr.resume_save(ks, 2, 3.5, True, True, False, 0.25)
    assert Kr.resume_load(ks, bp, 99.0) == (2, 3.5, True, True, False, 0.25)
    views = Kr.resume_views(ks, nun, nf)
    assert [v.shape[0] for v in views] == [nun] * 4 + [nf] * 3 + [2]
    views[0][:] = 7.0                                       # views, not copies
    assert np.all(ks[L.KS_ARRAYS:L.KS_ARRAYS + nun] == 7.0)


# ------------------------------------------------------------------ Newton system of a stage
@pytest.mark.parametrize("name", ["fixed temperature and flux",
                                  "chamber, leakage, films and radiation to it"])
def test_stage_system_is_capacity_minus_dh_jacobian(name):
    sysm = build_system(CASES[name]())
    n, nf = sysm.n_unknowns, sysm.face_i.shape[0]
    T = np.linspace(560.0, 320.0, n) + RNG.uniform(-3, 3, n)
    F, Cap, H = np.empty(n), np.empty(n), np.empty(n)
    J = [np.empty(n) for _ in range(5)]
    Kr.assemble(T, 100.0, 0.0, -1.0, *system_args(sysm), F, Cap, H, *J, np.empty(nf),
                np.empty(nf), np.empty(nf), np.zeros(N_EX))
    from test_jacobian_fd import _dense
    Jdense = _dense(sysm, J)
    Hbase, dh = H + RNG.normal(0, 1e3, n), 12.5
    R = np.empty(n)
    Kr._stage_system(H, Hbase, F, Cap, dh, *J, sysm.dirich_node, R)
    M = np.diag(Cap) - dh * Jdense          # the stage matrix H'(T) - dh F'(T)
    r = -(H - Hbase - dh * F)
    for i in sysm.dirich_node:              # fixed-temperature rows: dT = 0
        M[i, :], M[i, i], r[i] = 0.0, 1.0, 0.0
    got = _dense(sysm, J)
    assert np.allclose(got, M, rtol=1e-13, atol=0) and np.allclose(R, r, rtol=1e-13)


def test_conduction_sets_its_entries_whatever_the_arrays_held():
    # conduction is the first term of the assembly: it writes F, Cap, H, Jd, Jl, Ju of the
    # wall nodes instead of adding to them, so stale values must not leak in
    sysm = build_system(CASES["conduction, k(T), contact, fixed films"]())
    N = sysm.n_nodes
    T = np.linspace(560.0, 320.0, N) + RNG.uniform(-3, 3, N)
    arrs = [np.full(N, np.nan) for _ in range(6)]
    Kr.conduction(T, sysm.node_i, sysm.node_f, sysm.m_off, sysm.mtab, *arrs)
    F, J, Cap, H = tw.conduction(sysm, T)
    assert np.allclose(arrs[0], F, rtol=1e-10, atol=1e-9) and np.allclose(arrs[1], Cap)
    assert np.allclose(arrs[2], H, rtol=1e-12)
    assert np.allclose(arrs[3], np.diag(J), rtol=1e-10)


# ------------------------------------------------------------------ end of a Newton stage
def _stage(sysm, linear_end, T0, dh, tol):
    """One time stage H(T) - Hbase - dh F(T) = 0 from T0 (Hbase = H(T0) + dh F(T0) + a
    perturbation, so Newton has work to do) through ``_newton_iterate``; returns its code,
    the solution, the F, Cap, H, qf, hc, hr and matrix arrays it leaves, Hbase and the
    heater power and chamber loss."""
    n, nf = sysm.n_unknowns, sysm.face_i.shape[0]
    sa = system_args(sysm)
    F, Cap, H = np.empty(n), np.empty(n), np.empty(n)
    J = [np.empty(n) for _ in range(5)]
    qf, hc, hr, ex = np.empty(nf), np.empty(nf), np.empty(nf), np.zeros(N_EX)
    Kr.assemble(T0, 100.0, 0.0, -1.0, *sa, F, Cap, H, *J, qf, hc, hr, ex)
    Hbase = H + dh * F + np.linspace(-0.02, 0.03, n) * Cap     # about 0.03 K of change
    T = np.empty(n)
    work = [np.empty(n) for _ in range(5)]
    stats = np.zeros(L.N_STATS)
    code = Kr._newton_iterate(T, T0.copy(), 100.0, dh, Hbase, -1.0, sysm.dirich_node,
                              sysm.dirich_sched, *sa, F, Cap, H, *J, qf, hc, hr, ex, *work,
                              tol, stats, linear_end)
    return code, T, F, Cap, H, qf, hc, hr, J, Hbase, ex


@pytest.mark.parametrize("name", list(CASES))
def test_newton_stage_linear_end_satisfies_the_stage_equation(name):
    # Newton's method: after the last correction dx the values at the new point are, to first
    # order, H + Cap dx and F + J dx (Taylor); carried that way they satisfy the stage equation
    # exactly (energy bookkeeping unchanged) and differ from an assembly there by O(dx^2)
    sysm = build_system(CASES[name]())
    n = sysm.n_unknowns
    T0 = np.linspace(560.0, 320.0, n) + RNG.uniform(-3, 3, n)
    for i, d in enumerate(sysm.dirich_node):
        T0[d] = Kr.sched_eval(sysm.s_off, sysm.stab, sysm.dirich_sched[i], 100.0, 1.0)
    dh, tol = 40.0, 1e-4
    full = _stage(sysm, False, T0, dh, tol)
    lin = _stage(sysm, True, T0, dh, tol)
    assert full[0] == 1
    if len(sysm.dirich_node):
        # fixed-temperature rows: the same iterations, assembled at the end
        assert lin[0] == 1
        for a, b in zip(full[1:8], lin[1:8]):
            assert np.array_equal(a, b)
        return
    assert lin[0] == 2
    # the same solution within the Newton tolerance (the carried end may stop one iteration
    # earlier, when the contraction of the corrections says the error left is below it)
    assert np.max(np.abs(full[1] - lin[1])) < 2 * tol
    # the reference values: an assembly at the carried end's own solution
    n, nf = sysm.n_unknowns, sysm.face_i.shape[0]
    Fa, Ca, Ha = np.empty(n), np.empty(n), np.empty(n)
    Ja = [np.empty(n) for _ in range(5)]
    qa, hca, hra, exa = np.empty(nf), np.empty(nf), np.empty(nf), np.zeros(N_EX)
    Kr.assemble(lin[1], 100.0, 1.0, -1.0, *system_args(sysm), Fa, Ca, Ha, *Ja, qa, hca, hra,
                exa)
    full = (full[0], lin[1], Fa, Ca, Ha, qa, hca, hra, Ja, full[9], exa)
    F, Cap, H, qf, hc, hr, M, Hbase = lin[2], lin[3], lin[4], lin[5], lin[6], lin[7], lin[8], \
        lin[9]
    scale = np.max(np.abs(H))
    # the stage equation holds for the carried values to rounding
    assert np.max(np.abs(H - Hbase - dh * F)) < 1e-13 * scale
    # and they are the assembled values at the solution to second order in the correction
    Fa, Ha = full[2], full[4]
    assert np.max(np.abs(H - Ha)) < 1e-9 * scale
    assert np.max(np.abs(F - Fa)) < 1e-6 * max(1.0, np.max(np.abs(Fa)))
    # face flows, film coefficients, heater power and chamber loss: evaluated at the
    # solution, as an assembly does
    for a, b in zip(full[5:8] + (full[10],), (qf, hc, hr, lin[10])):
        assert np.allclose(a, b, rtol=0, atol=1e-12 * max(1.0, np.max(np.abs(a))))
    # the Newton matrix is left for the error filter: diag(Cap) - dh J at the last iterate
    Jd_full = full[8][0]
    assert np.allclose(M[0], Cap - dh * Jd_full, rtol=1e-5)
    assert np.allclose(Cap, Ca, rtol=1e-6)


# ------------------------------------------------------------------ the arrow solve
@pytest.mark.parametrize("has_ch", [False, True])
def test_arrow_solve_matches_a_dense_solve(has_ch):
    # chains of 1 to 9 rows and a long one (the two-sided elimination meets in the middle of
    # each: odd and even lengths, a chain of one row), diagonally dominant like a stage matrix
    # diag(Cap) - dh J, with and without the chamber border; against numpy's dense LU solve
    # (LAPACK gesv)
    lengths = [1, 2, 3, 4, 5, 6, 7, 8, 9, 40]
    N = sum(lengths)
    first = np.cumsum([0] + lengths[:-1])
    chains = np.zeros((len(lengths), 2), dtype=np.int64)
    chains[:, L.CHAIN_FIRST] = first
    chains[:, L.CHAIN_LAST] = first + np.array(lengths) - 1
    n = N + int(has_ch)
    for _ in range(20):
        Ml, Mu = -RNG.uniform(0.1, 1.0, n), -RNG.uniform(0.1, 1.0, n)
        Md = 2.2 + RNG.uniform(0.0, 3.0, n)
        Mcol = -RNG.uniform(0.0, 0.3, n) if has_ch else np.zeros(n)
        Mrow = -RNG.uniform(0.0, 0.3, n) if has_ch else np.zeros(n)
        if has_ch:
            Md[N] = 2.0 + np.sum(np.abs(Mrow[:N]))
        from test_jacobian_fd import _dense
        arrow = SimpleNamespace(chains=chains, n_unknowns=n, n_nodes=N, has_chamber=has_ch)
        A = _dense(arrow, (Md, Ml, Mu, Mcol, Mrow))
        rhs = RNG.normal(0.0, 10.0, n)
        x, wc, wy, wz = (np.empty(n) for _ in range(4))
        Kr.solve_arrow(Md, Ml, Mu, Mcol, Mrow, chains, N, has_ch, rhs, x, wc, wy, wz)
        assert np.allclose(x, np.linalg.solve(A, rhs), rtol=0, atol=1e-13 * np.max(np.abs(x)))
