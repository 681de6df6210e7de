"""Plain numpy twins of the compiled assembly terms (fdwall/solver/kernels.py), for tests.

Written from the documented layouts (fdwall/solver/layout.py) and the physics, vectorised
where the kernels loop, sharing no code with them: material tables by np.interp and exact
integrals of the piecewise-linear k and rho*cp, Kirchhoff links, Newton's law of cooling,
Stefan-Boltzmann radiation, the chamber's loss UA (Tc - T_room), the heater law
P0 / (1 + alpha (T - t_ref)).  Each returns the flows [W] it adds and their derivatives [W/K].
"""
from __future__ import annotations

import numpy as np

import fdwall.solver.layout as L
from fdwall.physics.convection import h_conv

SIGMA = 5.670374419e-8      # Stefan-Boltzmann constant [W/m2/K4] (CODATA 2018)


def table(sysm, m):
    """Rows T, k, K, c, H of material ``m``."""
    a, b = sysm.m_off[m], sysm.m_off[m + 1]
    return sysm.mtab[:, a:b]


def material(sysm, m, T):
    """k [W/m/K], K = int k dT [W/m], c [J/m3/K], H = int c dT [J/m3] at T [K] (arrays):
    piecewise linear k and c, held constant outside the table."""
    tab = table(sysm, m)
    Tt = tab[L.MT_T]
    T = np.asarray(T, float)
    out = []
    for val, integ in ((L.MT_K, L.MT_KINT), (L.MT_C, L.MT_H)):
        v = np.interp(T, Tt, tab[val])
        i = np.clip(np.searchsorted(Tt, T, side="right") - 1, 0, len(Tt) - 1)
        inside = (T > Tt[0]) & (T < Tt[-1])
        # exact integral from the knot below: trapezoid of a linear function
        I = np.where(inside, tab[integ][i] + 0.5 * (T - Tt[i]) * (tab[val][i] + v),
                     np.where(T <= Tt[0], tab[integ][0] + tab[val][0] * (T - Tt[0]),
                              tab[integ][-1] + tab[val][-1] * (T - Tt[-1])))
        out += [v, I]
    k, K, c, H = out
    return k, K, c, H


def schedule(sysm, idx, t):
    """Schedule ``idx`` at time t (right limit) by linear interpolation."""
    a, b = sysm.s_off[idx], sysm.s_off[idx + 1]
    x, v = sysm.stab[L.SC_X, a:b], sysm.stab[L.SC_VALUE, a:b]
    return float(v[0]) if b - a == 1 else float(np.interp(t, x, v))


def conduction(sysm, T):
    """(F [W], dense Jacobian [W/K], Cap [J/K], H [J]) of the wall nodes' conduction."""
    N = sysm.n_nodes
    T = np.asarray(T, float)
    F, J = np.zeros(N), np.zeros((N, N))
    Cap, H = np.zeros(N), np.zeros(N)
    for mcol, vcol in ((L.NI_MAT_L, L.NF_VOL_L), (L.NI_MAT_R, L.NF_VOL_R)):
        for m in set(sysm.node_i[:, mcol]) - {-1}:
            sel = sysm.node_i[:, mcol] == m
            _, _, c, h = material(sysm, m, T[:N][sel])
            Cap[sel] += sysm.node_f[sel, vcol] * c
            H[sel] += sysm.node_f[sel, vcol] * h
    for i in range(N - 1):
        lm, g = sysm.node_i[i, L.NI_LINK], sysm.node_f[i, L.NF_LINK_G]
        if lm == L.LINK_NONE:
            continue
        if lm == L.LINK_CONTACT:
            q, da, db = g * (T[i] - T[i + 1]), g, -g
        else:
            ka, Ka, _, _ = material(sysm, lm, T[i])
            kb, Kb, _, _ = material(sysm, lm, T[i + 1])
            q, da, db = g * (Ka - Kb), g * ka, -g * kb
        F[i] -= q
        F[i + 1] += q
        J[i, i] -= da
        J[i, i + 1] -= db
        J[i + 1, i] += da
        J[i + 1, i + 1] += db
    return F, J, Cap, H


def faces(sysm, T, t):
    """(F [W], dense Jacobian [W/K], qf [W]) of flux, films and radiation at the faces."""
    n, N = sysm.n_unknowns, sysm.n_nodes
    T = np.asarray(T, float)
    F, J, qf = np.zeros(n), np.zeros((n, n)), np.zeros(len(sysm.face_i))
    for f, row in enumerate(sysm.face_i):
        if row[L.FI_FIXED_T] >= 0:
            continue
        i, A = row[L.FI_NODE], sysm.face_f[f, L.FF_AREA]
        Ts = T[i]
        to_ch = row[L.FI_TO_CHAMBER] == 1 and sysm.has_chamber
        Tf = T[N] if to_ch else (schedule(sysm, row[L.FI_FLUID], t) if row[L.FI_FLUID] >= 0
                                 else Ts)
        q = A * schedule(sysm, row[L.FI_FLUX], t) if row[L.FI_FLUX] >= 0 else 0.0

        def hfun(a, b):
            if row[L.FI_H_MODE] == L.H_FIXED:
                return sysm.face_f[f, L.FF_H]
            return h_conv.py_func(sysm.hpar[f], a, b)
        h = hfun(Ts, Tf)
        d = 1e-4   # central difference of the correlation (the kernel uses a forward one)
        dhs = (hfun(Ts + d, Tf) - hfun(Ts - d, Tf)) / (2 * d)
        dhf = (hfun(Ts, Tf + d) - hfun(Ts, Tf - d)) / (2 * d)
        qc = A * h * (Tf - Ts)                          # Newton's law of cooling
        dqc_s, dqc_f = A * (dhs * (Tf - Ts) - h), A * (dhf * (Tf - Ts) + h)
        qr = dqr_s = dqr_r = 0.0
        if row[L.FI_EMISSIVITY] >= 0:
            Tr = Tf if to_ch else (schedule(sysm, row[L.FI_RADIANT], t)
                                   if row[L.FI_RADIANT] >= 0 else Tf)
            a, b = sysm.s_off[row[L.FI_EMISSIVITY]], sysm.s_off[row[L.FI_EMISSIVITY] + 1]
            x, v = sysm.stab[L.SC_X, a:b], sysm.stab[L.SC_VALUE, a:b]
            eps = float(np.interp(Ts, x, v))
            j = np.clip(np.searchsorted(x, Ts, side="right") - 1, 0, max(len(x) - 2, 0))
            deps = 0.0 if len(x) < 2 or Ts <= x[0] or Ts >= x[-1] else \
                (v[j + 1] - v[j]) / (x[j + 1] - x[j])
            qr = A * eps * SIGMA * (Tr ** 4 - Ts ** 4)  # Stefan-Boltzmann, grey face
            dqr_s = A * SIGMA * (deps * (Tr ** 4 - Ts ** 4) - 4 * eps * Ts ** 3)
            dqr_r = A * eps * SIGMA * 4 * Tr ** 3
        F[i] += q + qc + qr
        J[i, i] += dqc_s + dqr_s
        qf[f] = q + qc + qr
        if to_ch:
            J[i, N] += dqc_f + dqr_r
            F[N] -= qc + qr
            J[N, i] -= dqc_s + dqr_s
            J[N, N] -= dqc_f + dqr_r
    return F, J, qf


def chamber(sysm, T, t, rho_cp_room):
    """(F [W], dense Jacobian [W/K], loss [W]) of the chamber's loss to the room;
    ``rho_cp_room`` is rho*cp of room air [J/m3/K] (from an outside property source)."""
    n, N = sysm.n_unknowns, sysm.n_nodes
    F, J = np.zeros(n), np.zeros((n, n))
    if not sysm.has_chamber:
        return F, J, 0.0
    T_room = schedule(sysm, sysm.ch_i[L.CHI_AMBIENT], t)
    ua = sysm.ch_f[L.CHF_UA] + sysm.ch_f[L.CHF_LEAK] * rho_cp_room
    loss = ua * (T[N] - T_room)
    F[N] -= loss
    J[N, N] -= ua
    return F, J, loss


def heater(sysm, T, t, u):
    """(F [W], dense Jacobian [W/K], P [W]) of the heater at on-fraction u (< 0: the duty
    schedule)."""
    n = sysm.n_unknowns
    F, J = np.zeros(n), np.zeros((n, n))
    hn = sysm.ctl_i[L.CI_HEATER_NODE]
    if hn < 0:
        return F, J, 0.0
    u = u if u >= 0 else schedule(sysm, sysm.ctl_i[L.CI_DUTY], t)
    P0 = (schedule(sysm, sysm.ctl_i[L.CI_POWER], t) * sysm.ctl_f[L.CF_POWER_FACTOR] * u
          * schedule(sysm, sysm.ctl_i[L.CI_ENABLE], t))
    alpha, t_ref = sysm.ctl_f[L.CF_ALPHA], sysm.ctl_f[L.CF_T_REF]
    den = max(1.0 + alpha * (T[hn] - t_ref), 0.05) if alpha > 0 else 1.0
    P = P0 / den
    F[hn] += P
    J[hn, hn] += -P * alpha / den if alpha > 0 else 0.0
    return F, J, P


# ---------------------------------------------------------------- parts of the time loop
# Twins of the compiled parts of ``integrate``, written from their docstrings and the method
# (TR-BDF2 of Bank et al. 1985 in the form of Hosea & Shampine 1996, gamma = 2 - sqrt(2);
# the elementary step-size controller of Hairer, Norsett & Wanner, Solving ODEs I, sec. II.4,
# with exponent 1/(q+1), q = 2; cubic Hermite interpolation).  Plain numpy, no kernel code.
GAMMA = 2.0 - np.sqrt(2.0)
D = GAMMA / 2.0
A2 = 1.0 / (GAMMA * (2.0 - GAMMA))
B2 = (1.0 - GAMMA) ** 2 / (GAMMA * (2.0 - GAMMA))
KERR = (-3.0 * GAMMA ** 2 + 4.0 * GAMMA - 2.0) / (12.0 * (2.0 - GAMMA))


def step_target(t_out, k, k1, land_outputs, bp, ibp):
    """(target [s], is a breakpoint, its index or -1)."""
    t = t_out[k] if land_outputs else t_out[k1 - 1]
    if ibp < len(bp) and bp[ibp] < t:
        return bp[ibp], True, ibp
    return t, False, -1


def heater_switched(u, u_prev, mode):
    """A switching controller (duty switched, thermostat, PID switched) changed u."""
    return u != u_prev and mode in (L.CTL_DUTY_SWITCHED, L.CTL_THERMOSTAT, L.CTL_PID_SWITCHED)


def step_size(h, t, t_target, max_step, switched, restart, h_switch, h_jump):
    """(step [s], lands): capped by the restart steps and max_step; lands on the target
    when within 1e-9 of reaching it, else at most half of what remains."""
    h = min(h, h_switch) if switched else h
    h = min(h, h_jump) if restart else h
    hs = min(h, max_step)
    rem = t_target - t
    if hs >= rem * (1.0 - 1e-9):
        return rem, True
    return min(hs, 0.5 * rem), False


def factor_rejected(err):
    return max(0.2, 0.9 * err ** (-1.0 / 3.0)) if err < 1e200 else 0.2


def factor_accepted(err):
    return float(np.clip(0.9 * err ** (-1.0 / 3.0), 0.2, 5.0)) if err > 1e-12 else 5.0


def trapezoid_guess(T, Tprev, hprev, have_prev, hs, H0, F0):
    """(Hb, Tp) of the first stage."""
    Hb = H0 + D * hs * F0
    if not have_prev:
        return Hb, T.copy()
    Tp = T + GAMMA * hs * (T - Tprev) / hprev
    return Hb, np.where(Tp < 1.0, T, Tp)


def bdf2_guess(T, Tg, H0, Hg):
    """(Hb, Tp) of the second stage."""
    Tp = T + (Tg - T) / GAMMA
    return A2 * Hg - B2 * H0, np.where(Tp < 1.0, T, Tp)


def thermostat_retry(frac, hs, hmin, is_thermostat):
    """Shortened step when the cut fraction is positive, else 0."""
    return hs * frac if is_thermostat and frac > 0.0 and hs > 10 * hmin else 0.0


def stall_guard(count, hs, t_end):
    """(new count, stalled)."""
    if hs < 1e-9 * t_end:
        return count + 1, count + 1 > 20000
    return 0, False


def dirichlet_flows(qd_state, H1, H0, F1, hs, dirich_node):
    """(flows at the step end, start state with NaNs filled)."""
    qd_b = (H1[dirich_node] - H0[dirich_node]) / hs - F1[dirich_node]
    return qd_b, np.where(np.isnan(qd_state), qd_b, qd_state)


def hermite(th, ya, yb, da, db, hs):
    """Cubic Hermite interpolant at fraction th of a step hs with end values and slopes."""
    return ((2 * th ** 3 - 3 * th ** 2 + 1) * ya + (th ** 3 - 2 * th ** 2 + th) * hs * da
            + (-2 * th ** 3 + 3 * th ** 2) * yb + (th ** 3 - th ** 2) * hs * db)


def dense_rows(t_out, k, k1, t, hs, land, t_target, Ta, Tb, Fa, Ca, Fb, Cb, qa, qb):
    """Rows written in the step (t - hs, t]: (row indices, temperatures, face flows), the
    end exact, Hermite in T inside (slopes F/C), linear in the flows."""
    rows, Ts, qs = [], [], []
    while k < k1 and t_out[k] <= t + 1e-12 * (1.0 + abs(t)):
        th = (t_out[k] - (t - hs)) / hs
        if th >= 1.0 - 1e-12 or (land and t_out[k] >= t_target):
            th = 1.0
        Ts.append(Tb.copy() if th == 1.0 else hermite(th, Ta, Tb, Fa / Ca, Fb / Cb, hs))
        qs.append((1 - th) * qa + th * qb)
        rows.append(k)
        k += 1
    return rows, Ts, qs


def error_norm(sysm, F0, Fg, F1, hs, Cap, J, tol):
    """Scaled local error: solve (diag(Cap) - dh J) e = 2 KERR hs (F0/g - Fg/(g(1-g)) +
    F1/(1-g)) densely (fixed-temperature rows e = 0); max |e| / tol."""
    r = 2.0 * KERR * hs * (F0 / GAMMA - Fg / (GAMMA * (1.0 - GAMMA)) + F1 / (1.0 - GAMMA))
    M = np.diag(Cap) - D * hs * J
    for i in sysm.dirich_node:
        M[i, :] = 0.0
        M[i, i] = 1.0
        r[i] = 0.0
    return np.max(np.abs(np.linalg.solve(M, r))) / tol
