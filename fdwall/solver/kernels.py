"""Compiled kernels: property and schedule evaluation, assembly, bordered tridiagonal solves,
the TR-BDF2 time loop and the steady Newton solve.

Everything here takes and returns plain arrays; nothing knows about cases, units or files.
The system is a set of *chains* (one per wall, nodes inner face -> outer face) optionally
coupled to one lumped *chamber* node, the last unknown.  Its Jacobian is tridiagonal per
chain plus a border (the chamber row and column): an arrow matrix, solved by eliminating each
chain and then the chamber equation, at a cost linear in the node count.

Array layouts
-------------
Every row and column of the arrays (node_i, node_f, chains, face_i, face_f, mtab, stab, ch_i,
ch_f, ctl_i, ctl_f, the events, the ledger, the state and statistics vectors) has a name in
:mod:`fdwall.solver.layout`, which documents them with their units; nothing indexes them by
number.  :mod:`fdwall.system` builds them; :func:`fdwall.solver.layout.system_args` puts the
system arrays in the kernels' argument order.

Reference counting
------------------
The functions the time loop calls are compiled with ``_nrt=False`` (numba's runtime off):
they allocate nothing and return no arrays, only fill the arrays they are given, so they need
no reference counts, and without them a call does not pay an atomic increment and decrement
per array argument (on small meshes that was over half of the loop's time).  A function that
allocates or returns an array (``integrate``, which allocates the work arrays and hands them
to the loop :func:`_step_loop`, ``steady``, ``resume_views``) keeps the runtime;
``tests/test_kernel_layout.py`` checks the rule on the source.
"""
from __future__ import annotations

import numpy as np
from numba import njit

from ..physics.air import P_ATM, rho_cp
from ..physics.convection import h_conv

# stats, control-state and resume-state layouts (named indices: see fdwall.solver.layout)
from .layout import (  # noqa: F401  re-exported for fdwall.solver.native
    CF_ALPHA,
    CF_BAND,
    CF_EVENT_TOL,
    CF_KD,
    CF_KI,
    CF_KP,
    CF_PERIOD,
    CF_POWER_FACTOR,
    CF_SENSOR_W,
    CF_T_REF,
    CHAIN_FIRST,
    CHAIN_LAST,
    CHF_LEAK,
    CHF_UA,
    CHI_AMBIENT,
    CHI_CAPACITY,
    CHI_PRESENT,
    CI_DUTY,
    CI_ENABLE,
    CI_HEATER_NODE,
    CI_MODE,
    CI_POWER,
    CI_SENSOR_A,
    CI_SENSOR_B,
    CI_SENSOR_MAT,
    CI_SETPOINT,
    CS_H,
    CS_HJ,
    CS_HSW,
    CS_INT,
    CS_NEXT,
    CS_OFF,
    CS_ON,
    CS_PREV,
    CS_U,
    CS_UPREV,
    CTL_DUTY_SWITCHED,
    CTL_PID_AVERAGED,
    CTL_PID_SWITCHED,
    CTL_THERMOSTAT,
    EV_DOWN,
    EV_MAT,
    EV_NODE_A,
    EV_NODE_B,
    EV_THRESHOLD,
    EV_UP,
    EV_WEIGHT,
    EX_HEATER,
    EX_LOSS,
    FF_AREA,
    FF_H,
    FI_EMISSIVITY,
    FI_FIXED_T,
    FI_FLUID,
    FI_FLUX,
    FI_H_MODE,
    FI_NODE,
    FI_RADIANT,
    FI_TO_CHAMBER,
    H_FIXED,
    KS_AFTER_JUMP,
    KS_ARRAYS,
    KS_HAVE_PREV,
    KS_HPREV,
    KS_IBP,
    KS_INIT,
    KS_REUSE,
    KS_ULAST,
    LINK_CONTACT,
    LINK_NONE,
    MT_C,
    MT_H,
    MT_K,
    MT_KINT,
    MT_T,
    N_CS,
    N_STATS,
    NF_LINK_G,
    NF_VOL_L,
    NF_VOL_R,
    NI_LINK,
    NI_MAT_L,
    NI_MAT_R,
    SC_VALUE,
    SC_X,
    ST_ACC,
    ST_ASSEMBLE,
    ST_COLD,
    ST_EVRETRY,
    ST_H0,
    ST_HMAX,
    ST_HMIN,
    ST_NEWTON,
    ST_NFAIL,
    ST_REJ,
    ST_RESMAX,
    ST_SCALE,
    ST_STALL,
    ST_STATUS,
    ST_T,
    STATUS_STALLED,
    STATUS_STEP_FLOOR,
)

SIGMA = 5.670374419e-8          # Stefan-Boltzmann constant [W/m2/K4] (CODATA 2018)
GAMMA = 2.0 - np.sqrt(2.0)      # TR-BDF2 stage fraction (Bank et al. 1985)
D_COEF = GAMMA / 2.0            # implicit coefficient of both stages (times h)
A2 = 1.0 / (GAMMA * (2.0 - GAMMA))
B2 = (1.0 - GAMMA) ** 2 / (GAMMA * (2.0 - GAMMA))
C2 = (1.0 - GAMMA) / (2.0 - GAMMA)
W0 = 1.0 / (2.0 * (2.0 - GAMMA))  # quadrature weights of one step: W0*F_n + W0*F_g + W2*F_n+1
W2 = C2
KERR = (-3.0 * GAMMA ** 2 + 4.0 * GAMMA - 2.0) / (12.0 * (2.0 - GAMMA))



@njit(cache=True, inline="always")
def sched_eval(s_off, stab, idx, t, left):
    """Value of schedule ``idx`` at ``t``; ``left`` gives the value just before a step."""
    a = s_off[idx]
    b = s_off[idx + 1]
    if b - a == 1:
        return stab[SC_VALUE, a]
    # last knot i with time <= t (right) or < t (left)
    lo = a
    hi = b
    while lo < hi:
        mid = (lo + hi) // 2
        if (stab[SC_X, mid] < t) if left else (stab[SC_X, mid] <= t):
            lo = mid + 1
        else:
            hi = mid
    i = lo - 1
    if i < a:
        return stab[SC_VALUE, a]
    if i >= b - 1:
        return stab[SC_VALUE, b - 1]
    t0 = stab[SC_X, i]
    t1 = stab[SC_X, i + 1]
    if t1 <= t0:
        return stab[SC_VALUE, i + 1]
    w = (t - t0) / (t1 - t0)
    return stab[SC_VALUE, i] + w * (stab[SC_VALUE, i + 1] - stab[SC_VALUE, i])


@njit(cache=True, inline="always")
def sched_eval_slope(s_off, stab, idx, x):
    """Value and slope d(value)/dx of a table (e.g. emissivity against T) at ``x``."""
    a = s_off[idx]
    b = s_off[idx + 1]
    if b - a == 1 or x <= stab[SC_X, a]:
        return stab[SC_VALUE, a], 0.0
    if x >= stab[SC_X, b - 1]:
        return stab[SC_VALUE, b - 1], 0.0
    lo = a
    hi = b
    while lo < hi:
        mid = (lo + hi) // 2
        if stab[SC_X, mid] <= x:
            lo = mid + 1
        else:
            hi = mid
    i = lo - 1
    dt = stab[SC_X, i + 1] - stab[SC_X, i]
    s = (stab[SC_VALUE, i + 1] - stab[SC_VALUE, i]) / dt
    return stab[SC_VALUE, i] + s * (x - stab[SC_X, i]), s


@njit(cache=True, inline="always")
def mat_eval(m_off, mtab, m, T):
    """Material ``m`` at ``T`` [K]: k [W/m/K], K=int k dT [W/m], c=rho*cp [J/m3/K], H [J/m3].

    Piecewise-linear k and c between table knots (so K and H are exact piecewise quadratics),
    held constant outside the table (:func:`mat_eval_near` with no guess of the segment).
    """
    k, K, c, H, _ = mat_eval_near(m_off, mtab, m, T, -1)
    return k, K, c, H


@njit(cache=True, inline="always")
def mat_eval_near(m_off, mtab, m, T, lo):
    """:func:`mat_eval` started from a guess of the table segment: ``lo`` (the segment of the
    last look-up, e.g. of the neighbouring node; any value) is taken when T lies in it and the
    table is searched otherwise.  A segment is accepted by the rule the search finds it by
    (T_lo <= T < T_lo+1), so the values are those of :func:`mat_eval`, bit for bit.  Returns
    k, K, c, H as :func:`mat_eval` and the segment used (the guess for the next look-up)."""
    a = m_off[m]
    b = m_off[m + 1]
    if T <= mtab[MT_T, a]:
        k = mtab[MT_K, a]
        c = mtab[MT_C, a]
        d = T - mtab[MT_T, a]
        return k, mtab[MT_KINT, a] + k * d, c, mtab[MT_H, a] + c * d, lo
    if T >= mtab[MT_T, b - 1]:
        k = mtab[MT_K, b - 1]
        c = mtab[MT_C, b - 1]
        d = T - mtab[MT_T, b - 1]
        return k, mtab[MT_KINT, b - 1] + k * d, c, mtab[MT_H, b - 1] + c * d, lo
    if lo < a or lo >= b - 1 or mtab[MT_T, lo] > T or T >= mtab[MT_T, lo + 1]:
        lo = a
        hi = b - 1
        while hi - lo > 1:
            mid = (lo + hi) // 2
            if mtab[MT_T, mid] <= T:
                lo = mid
            else:
                hi = mid
    d = T - mtab[MT_T, lo]
    w = d / (mtab[MT_T, lo + 1] - mtab[MT_T, lo])
    k0 = mtab[MT_K, lo]
    c0 = mtab[MT_C, lo]
    k = k0 + w * (mtab[MT_K, lo + 1] - k0)
    c = c0 + w * (mtab[MT_C, lo + 1] - c0)
    return (k, mtab[MT_KINT, lo] + 0.5 * d * (k0 + k), c, mtab[MT_H, lo] + 0.5 * d * (c0 + c),
            lo)


@njit(cache=True, inline="always")
def face_h(face_i, face_f, hpar, f, Ts, Tf, need_f):
    """Convective film coefficient [W/m2/K] of face ``f`` and its derivatives d/dTs, d/dTf;
    d/dTf only when ``need_f`` (the fluid is an unknown: the chamber), else 0 (a correlation
    costs as much as the rest of a small assembly, so it is not evaluated for nothing)."""
    if face_i[f, FI_H_MODE] == H_FIXED:
        return face_f[f, FF_H], 0.0, 0.0
    p = hpar[f]
    h = h_conv(p, Ts, Tf)
    dT = 1e-3
    dhs = (h_conv(p, Ts + dT, Tf) - h) / dT
    dhf = 0.0
    if need_f:
        dhf = (h_conv(p, Ts, Tf + dT) - h) / dT
    return h, dhs, dhf


@njit(cache=True, _nrt=False)
def assemble(T, t, left, u_ctl, node_i, node_f, chains, face_i, face_f, hpar, m_off, mtab,
             s_off, stab, ch_i, ch_f, ctl_i, ctl_f,
             F, Cap, H, Jd, Jl, Ju, Jcol, Jrow, qf, hc, hr, extra):
    """Net heat flow into every unknown and its Jacobian.

    Parameters
    ----------
    T : temperatures of the unknowns [K]; t : time [s]; left : evaluate schedules just before t;
    u_ctl : heater on-fraction from the controller, < 0 to take the duty schedule [-].

    Outputs (filled in place): F net heat flow into each unknown [W] (Dirichlet nodes: all but
    the face term), Cap dH/dT [J/K], H enthalpy [J], Jacobian dF/dT as diagonal Jd, sub Jl,
    super Ju, chamber column Jcol and row Jrow [W/K], qf heat into the wall at each face [W],
    hc/hr convective and linearised radiative film coefficients [W/m2/K],
    extra[EX_HEATER] heater power [W], extra[EX_LOSS] loss to ambient from the chamber [W].

    One function per physical term, called in this order (each adds its flows and their
    derivatives): :func:`conduction` (capacities, enthalpies and the links between nodes),
    :func:`faces` (imposed flux, films :func:`film` and radiation :func:`radiation`),
    :func:`chamber` (its capacity and the losses to the room), :func:`heater`.
    """
    clear(node_i.shape[0], F, Cap, H, Jd, Jl, Ju, Jcol, Jrow)
    conduction(T, node_i, node_f, m_off, mtab, F, Cap, H, Jd, Jl, Ju)
    has_ch = ch_i[CHI_PRESENT] == 1
    nc_idx = node_i.shape[0]      # the chamber is the unknown after the wall nodes
    faces(T, t, left, face_i, face_f, hpar, s_off, stab, has_ch, nc_idx, F, Jd, Jcol, Jrow,
          qf, hc, hr)
    chamber(T, t, left, ch_i, ch_f, m_off, mtab, s_off, stab, nc_idx, F, Cap, H, Jd, extra)
    heater(T, t, left, u_ctl, ctl_i, ctl_f, s_off, stab, F, Jd, extra)


@njit(cache=True, inline="always")
def clear(N, F, Cap, H, Jd, Jl, Ju, Jcol, Jrow):
    """Zero what :func:`conduction` does not set: the border of the Jacobian (Jcol, Jrow)
    [W/K] and the entries after the N wall nodes (the chamber) of the flows [W], capacities
    [J/K], enthalpies [J] and the Jacobian [W/K]."""
    for i in range(F.shape[0]):
        Jcol[i] = 0.0
        Jrow[i] = 0.0
    for i in range(N, F.shape[0]):
        F[i] = 0.0
        Jd[i] = 0.0
        Jl[i] = 0.0
        Ju[i] = 0.0
        Cap[i] = 0.0
        H[i] = 0.0


@njit(cache=True, inline="always")
def conduction(T, node_i, node_f, m_off, mtab, F, Cap, H, Jd, Jl, Ju):
    """Capacities Cap [J/K] and enthalpies H [J] of the wall nodes, and the conduction between
    them: Kirchhoff links G (K(T_i) - K(T_j)) [W] (G the geometry factor [m], K = int k dT) or
    contact conductances [W/K]; sets F [W] and the tridiagonal Jd, Jl, Ju [W/K] of the N wall
    nodes (the first term of the assembly: the others add to what it sets).

    Each node's materials are evaluated once at its own temperature (starting from the
    table segment of the node before: :func:`mat_eval_near`); the link i-1 -> i uses
    the right-half value of node i-1 (same material as the left half of node i), so every
    link costs no extra table look-up.  One pass over the nodes: each entry is written once
    when its node is reached and corrected once by the link to the next node, in the same
    order of operations as accumulating into zeroed arrays (0 + a - b).
    """
    N = node_i.shape[0]
    kr_prev = 0.0
    Kr_prev = 0.0
    # table segment of the last look-up: neighbouring nodes of a layer mostly share one, so
    # the next node tries it before searching (same values: mat_eval_near)
    lo = -1
    for i in range(N):
        Ti = T[i]
        ml = node_i[i, NI_MAT_L]
        mr = node_i[i, NI_MAT_R]
        kl = 0.0
        Kl = 0.0
        c = 0.0
        h = 0.0
        cap = 0.0
        hh = 0.0
        if ml >= 0:
            kl, Kl, c, h, lo = mat_eval_near(m_off, mtab, ml, Ti, lo)
            v = node_f[i, NF_VOL_L]
            cap = 0.0 + v * c
            hh = 0.0 + v * h
        kr = 0.0
        Kr = 0.0
        if mr >= 0:
            if mr == ml:
                kr = kl
                Kr = Kl
            else:
                kr, Kr, c, h, lo = mat_eval_near(m_off, mtab, mr, Ti, lo)
            v = node_f[i, NF_VOL_R]
            cap += v * c
            hh += v * h
        Cap[i] = cap
        H[i] = hh
        fi = 0.0
        jd = 0.0
        jl = 0.0
        if i > 0:
            lm = node_i[i - 1, NI_LINK]
            if lm != LINK_NONE:
                g = node_f[i - 1, NF_LINK_G]
                if lm == LINK_CONTACT:
                    q = g * (T[i - 1] - Ti)
                    di = g
                    dj = -g
                else:
                    q = g * (Kr_prev - Kl)
                    di = g * kr_prev
                    dj = -g * kl
                F[i - 1] -= q
                Jd[i - 1] -= di
                Ju[i - 1] -= dj
                fi = 0.0 + q
                jl = 0.0 + di
                jd = 0.0 + dj
        F[i] = fi
        Jd[i] = jd
        Jl[i] = jl
        Ju[i] = 0.0
        kr_prev = kr
        Kr_prev = Kr


@njit(cache=True, inline="always")
def film(face_i, face_f, hpar, f, A, Ts, Tf, need_f):
    """Convective film of face ``f`` (area A [m2], surface Ts and fluid Tf [K]): film
    coefficient [W/m2/K], heat into the wall [W] and its derivatives d/dTs, d/dTf [W/K]
    (d/dTf exact only when ``need_f``: see :func:`face_h`)."""
    hcv, dhs, dhf = face_h(face_i, face_f, hpar, f, Ts, Tf, need_f)
    qc = A * hcv * (Tf - Ts)
    dqc_s = A * (dhs * (Tf - Ts) - hcv)
    dqc_f = A * (dhf * (Tf - Ts) + hcv)
    return hcv, qc, dqc_s, dqc_f


@njit(cache=True, inline="always")
def radiation(s_off, stab, face_i, f, A, Ts, Tr):
    """Grey radiation of face ``f`` (area A [m2], emissivity table against Ts) with
    surroundings at Tr [K]: heat into the wall [W], its derivatives d/dTs, d/dTr [W/K] and
    the linearised radiative film coefficient [W/m2/K] (Stefan-Boltzmann)."""
    eps, deps = sched_eval_slope(s_off, stab, face_i[f, FI_EMISSIVITY], Ts)
    Ts2 = Ts * Ts
    Tr2 = Tr * Tr
    diff4 = Tr2 * Tr2 - Ts2 * Ts2
    qr = A * eps * SIGMA * diff4
    dqr_s = A * SIGMA * (deps * diff4 - 4.0 * eps * Ts2 * Ts)
    dqr_o = A * eps * SIGMA * 4.0 * Tr2 * Tr
    hr = eps * SIGMA * (Ts2 + Tr2) * (Ts + Tr)
    return qr, dqr_s, dqr_o, hr


@njit(cache=True, inline="always")
def faces(T, t, left, face_i, face_f, hpar, s_off, stab, has_ch, nc_idx, F, Jd, Jcol, Jrow,
          qf, hc, hr):
    """Heat into the wall at every face not held at a fixed temperature: imposed flux,
    film and radiation; a face open to the chamber takes them from the chamber node
    ``nc_idx`` (border of the arrow matrix).  Fills qf [W], hc, hr [W/m2/K]; adds to F [W],
    Jd, Jcol, Jrow [W/K]."""
    nf = face_i.shape[0]
    for f in range(nf):
        i = face_i[f, FI_NODE]
        A = face_f[f, FF_AREA]
        qf[f] = 0.0
        hc[f] = 0.0
        hr[f] = 0.0
        if face_i[f, FI_FIXED_T] >= 0:
            continue  # Dirichlet: the face flow is whatever holds the temperature
        Ts = T[i]
        q = 0.0
        if face_i[f, FI_FLUX] >= 0:
            q += A * sched_eval(s_off, stab, face_i[f, FI_FLUX], t, left)
        to_ch = face_i[f, FI_TO_CHAMBER] == 1 and has_ch
        if to_ch:
            Tf = T[nc_idx]
        elif face_i[f, FI_FLUID] >= 0:
            Tf = sched_eval(s_off, stab, face_i[f, FI_FLUID], t, left)
        else:
            Tf = Ts
        hcv, qc, dqc_s, dqc_f = film(face_i, face_f, hpar, f, A, Ts, Tf, to_ch)
        hc[f] = hcv
        qr = 0.0
        dqr_s = 0.0
        dqr_o = 0.0
        if face_i[f, FI_EMISSIVITY] >= 0:
            if to_ch:
                Tr = Tf
            elif face_i[f, FI_RADIANT] >= 0:
                Tr = sched_eval(s_off, stab, face_i[f, FI_RADIANT], t, left)
            else:
                Tr = Tf
            qr, dqr_s, dqr_o, hrf = radiation(s_off, stab, face_i, f, A, Ts, Tr)
            hr[f] = hrf
        q += qc + qr
        dq_s = dqc_s + dqr_s
        F[i] += q
        Jd[i] += dq_s
        qf[f] = q
        if to_ch:
            dq_o = dqc_f + dqr_o    # derivative with respect to the chamber temperature
            Jcol[i] += dq_o
            # the chamber loses what the wall gains (the imposed flux part is not from the chamber)
            qx = qc + qr
            F[nc_idx] -= qx
            Jrow[i] -= dqc_s + dqr_s
            Jd[nc_idx] -= dq_o


@njit(cache=True, inline="always")
def chamber(T, t, left, ch_i, ch_f, m_off, mtab, s_off, stab, nc_idx, F, Cap, H, Jd, extra):
    """The chamber node ``nc_idx``: capacity [J/K] and enthalpy [J] from its table, and the
    loss to the room, extra UA plus leakage air (rho*cp of room air at 1 atm) times
    (Tc - T_room) [W]; sets extra[EX_LOSS] (and zeroes extra[EX_HEATER])."""
    extra[EX_HEATER] = 0.0
    extra[EX_LOSS] = 0.0
    if ch_i[CHI_PRESENT] == 1:
        Tc = T[nc_idx]
        k, K, c, h = mat_eval(m_off, mtab, ch_i[CHI_CAPACITY], Tc)
        Cap[nc_idx] = c
        H[nc_idx] = h
        Tamb = sched_eval(s_off, stab, ch_i[CHI_AMBIENT], t, left)
        # extra UA plus the air that leaks out at Tc and is replaced by room air: a mass flow
        # rho(T_room) * V (the flow is given at room conditions) times cp(T_room), 1 atm
        ua = ch_f[CHF_UA]
        if ch_f[CHF_LEAK] > 0.0:
            ua += ch_f[CHF_LEAK] * rho_cp(Tamb, P_ATM)
        loss = ua * (Tc - Tamb)
        F[nc_idx] -= loss
        Jd[nc_idx] -= ua
        extra[EX_LOSS] = loss


@njit(cache=True, inline="always")
def heater(T, t, left, u_ctl, ctl_i, ctl_f, s_off, stab, F, Jd, extra):
    """Heater power into its node [W]: rated power x power factor x on-fraction x enable,
    divided by 1 + alpha (T - t_ref) for an element whose resistance rises with temperature;
    adds to F [W] and Jd [W/K], sets extra[EX_HEATER]."""
    hn = ctl_i[CI_HEATER_NODE]
    if hn >= 0:
        if u_ctl >= 0.0:
            u = u_ctl
        else:
            u = sched_eval(s_off, stab, ctl_i[CI_DUTY], t, left)
        en = sched_eval(s_off, stab, ctl_i[CI_ENABLE], t, left)
        P0 = sched_eval(s_off, stab, ctl_i[CI_POWER], t, left) * ctl_f[CF_POWER_FACTOR] * u * en
        alpha = ctl_f[CF_ALPHA]
        if alpha > 0.0:
            den = 1.0 + alpha * (T[hn] - ctl_f[CF_T_REF])
            if den < 0.05:
                den = 0.05
            P = P0 / den
            dP = -P * alpha / den
        else:
            P = P0
            dP = 0.0
        F[hn] += P
        Jd[hn] += dP
        extra[EX_HEATER] = P


@njit(cache=True, inline="always")
def _chain_solve(Md, Ml, Mu, Mcol, a, b, has_ch, rhs, wc, wy, wz):
    """Solve the tridiagonal chain of rows a..b of ``M x = rhs`` into wy (and, with the
    chamber, ``M z = Mcol`` into wz) by a two-sided ("twisted") elimination: rows a..m-1 are
    eliminated from the top and rows b..m+1 from the bottom in the same loop, the two
    recurrences meet at row m, and back-substitution runs outwards from it.  Same operation
    count as one-sided Thomas elimination, but two independent recurrences, which the
    processor overlaps (one division per row on each side).  After the sweeps row i reads
    x_i + wc_i x_(i+1) = wy_i above m and wc_i x_(i-1) + x_i = wy_i below it.  (Twisted
    factorisation: e.g. Meurant, SIAM J. Matrix Anal. Appl. 13 (1992), from memory; the
    tests check it against a dense solve.)"""
    if a == b:
        ib = 1.0 / Md[a]
        wy[a] = rhs[a] * ib
        if has_ch:
            wz[a] = Mcol[a] * ib
        return
    m = (a + b + 1) // 2
    ib = 1.0 / Md[a]
    wc[a] = Mu[a] * ib
    wy[a] = rhs[a] * ib
    jb = 1.0 / Md[b]
    wc[b] = Ml[b] * jb
    wy[b] = rhs[b] * jb
    if has_ch:
        wz[a] = Mcol[a] * ib
        wz[b] = Mcol[b] * jb
    nt = m - a          # rows a .. m-1 from the top
    nb = b - m          # rows b .. m+1 from the bottom (m rounds up: nb = nt or nt - 1)
    for s in range(1, nb):
        i = a + s
        l = Ml[i]
        ib = 1.0 / (Md[i] - l * wc[i - 1])
        wc[i] = Mu[i] * ib
        wy[i] = (rhs[i] - l * wy[i - 1]) * ib
        j = b - s
        u = Mu[j]
        jb = 1.0 / (Md[j] - u * wc[j + 1])
        wc[j] = Ml[j] * jb
        wy[j] = (rhs[j] - u * wy[j + 1]) * jb
        if has_ch:
            wz[i] = (Mcol[i] - l * wz[i - 1]) * ib
            wz[j] = (Mcol[j] - u * wz[j + 1]) * jb
    if nt > nb and nb >= 1:
        # the top side's one row more (row a + nb = m - 1; with nb = 0 it is row a, done)
        i = m - 1
        l = Ml[i]
        ib = 1.0 / (Md[i] - l * wc[i - 1])
        wc[i] = Mu[i] * ib
        wy[i] = (rhs[i] - l * wy[i - 1]) * ib
        if has_ch:
            wz[i] = (Mcol[i] - l * wz[i - 1]) * ib
    # the meeting row m, with x_(m-1) and x_(m+1) expressed through x_m
    l = Ml[m]
    piv = Md[m] - l * wc[m - 1]
    r = rhs[m] - l * wy[m - 1]
    if has_ch:
        rz = Mcol[m] - l * wz[m - 1]
    if m < b:
        u = Mu[m]
        piv -= u * wc[m + 1]
        r -= u * wy[m + 1]
        if has_ch:
            rz -= u * wz[m + 1]
    ip = 1.0 / piv
    wy[m] = r * ip
    if has_ch:
        wz[m] = rz * ip
    for s in range(1, nt + 1):
        i = m - s
        wy[i] -= wc[i] * wy[i + 1]
        if has_ch:
            wz[i] -= wc[i] * wz[i + 1]
        if s <= nb:
            j = m + s
            wy[j] -= wc[j] * wy[j - 1]
            if has_ch:
                wz[j] -= wc[j] * wz[j - 1]


@njit(cache=True, _nrt=False)
def solve_arrow(Md, Ml, Mu, Mcol, Mrow, chains, N, has_ch, rhs, x, wc, wy, wz):
    """Solve the arrow system (tridiagonal chains + chamber border) ``M x = rhs``.

    Each chain for two right-hand sides (``rhs`` and the chamber column) by
    :func:`_chain_solve`, then the scalar chamber equation, then the chains' solutions
    corrected by it.  Work arrays wc, wy, wz of size N.
    """
    nch = chains.shape[0]
    for j in range(nch):
        _chain_solve(Md, Ml, Mu, Mcol, chains[j, CHAIN_FIRST], chains[j, CHAIN_LAST], has_ch,
                     rhs, wc, wy, wz)
    if has_ch:
        s = Md[N]
        r = rhs[N]
        for i in range(N):
            s -= Mrow[i] * wz[i]
            r -= Mrow[i] * wy[i]
        xc = r / s
        x[N] = xc
        for i in range(N):
            x[i] = wy[i] - wz[i] * xc
    else:
        for i in range(N):
            x[i] = wy[i]


@njit(cache=True, inline="always")
def _newton_matrix(Cap, cw, dh, Jd, Jl, Ju, Jcol, Jrow, dirich_node, R):
    """Turn the Jacobian dF/dT held in Jd, Jl, Ju, Jcol, Jrow into the Newton matrix
    ``cw*diag(Cap) - dh*J`` in place (cw = 1 for a time stage, 0 with dh = 1 for the steady
    state); fixed-temperature rows become identity rows with a zero right-hand side in R."""
    for i in range(Jd.shape[0]):
        Jd[i] = cw * Cap[i] - dh * Jd[i]
        Jl[i] = -dh * Jl[i]
        Ju[i] = -dh * Ju[i]
        Jcol[i] = -dh * Jcol[i]
        Jrow[i] = -dh * Jrow[i]
    for k in range(dirich_node.shape[0]):
        i = dirich_node[k]
        R[i] = 0.0
        Jd[i] = 1.0
        Jl[i] = 0.0
        Ju[i] = 0.0
        Jcol[i] = 0.0


@njit(cache=True, inline="always")
def _stage_system(H, Hbase, F, Cap, dh, Jd, Jl, Ju, Jcol, Jrow, dirich_node, R):
    """The Newton system of a time stage in one pass: right-hand side
    R = -(H - Hbase - dh F) [J] and, in place of the Jacobian dF/dT, the matrix
    diag(Cap) - dh J [J/K] (as :func:`_newton_matrix` with cw = 1); fixed-temperature rows
    become identity rows with a zero right-hand side."""
    for i in range(Jd.shape[0]):
        R[i] = -(H[i] - Hbase[i] - dh * F[i])
        Jd[i] = 1.0 * Cap[i] - dh * Jd[i]
        Jl[i] = -dh * Jl[i]
        Ju[i] = -dh * Ju[i]
        Jcol[i] = -dh * Jcol[i]
        Jrow[i] = -dh * Jrow[i]
    for k in range(dirich_node.shape[0]):
        i = dirich_node[k]
        R[i] = 0.0
        Jd[i] = 1.0
        Jl[i] = 0.0
        Ju[i] = 0.0
        Jcol[i] = 0.0


@njit(cache=True, inline="always")
def _apply_correction(T, dx, cap):
    """Add the Newton correction ``dx`` [K] to ``T``, scaled down so no node moves more than
    ``cap`` [K] and no temperature falls below 1 K.  Returns the largest |dx| [K], or -1 when
    the correction is not finite."""
    n = T.shape[0]
    mx = 0.0
    for i in range(n):
        a = abs(dx[i])
        if not (a < 1e200):
            return -1.0
        if a > mx:
            mx = a
    lim = 1.0
    if mx > cap:
        lim = cap / mx
    for i in range(n):
        T[i] += lim * dx[i]
        if T[i] < 1.0:
            T[i] = 1.0
    return mx


@njit(cache=True, _nrt=False)
def _newton_stage(T, Tguess, t, dh, Hbase, u_ctl, dirich_node, dirich_sched,
                  node_i, node_f, chains, face_i, face_f, hpar, m_off, mtab, s_off, stab,
                  ch_i, ch_f, ctl_i, ctl_f, F, Cap, H, Jd, Jl, Ju, Jcol, Jrow, qf, hc, hr, extra,
                  R, dx, wc, wy, wz, tol, stats):
    """Solve H(T) - Hbase - dh*F(T) = 0 (Dirichlet rows: T = T_set(t)) by Newton.

    Returns True on convergence; T holds the solution and F/Cap/H/J the values there (one
    assembly at the solution: see :func:`_newton_iterate`, here without its linear end).
    """
    return _newton_iterate(T, Tguess, t, dh, Hbase, u_ctl, dirich_node, dirich_sched,
                           node_i, node_f, chains, face_i, face_f, hpar, m_off, mtab, s_off,
                           stab, ch_i, ch_f, ctl_i, ctl_f, F, Cap, H, Jd, Jl, Ju, Jcol, Jrow,
                           qf, hc, hr, extra, R, dx, wc, wy, wz, tol, stats, False) > 0


@njit(cache=True, inline="always")
def _linear_end_allowed(dirich_node):
    """True when the values at a converged Newton iterate may be carried to the corrected
    temperatures to first order (:func:`_newton_iterate`): no fixed-temperature rows (the
    flow of such a row needs the Jacobian row that the Newton matrix replaces)."""
    return dirich_node.shape[0] == 0


@njit(cache=True, _nrt=False)
def _newton_iterate(T, Tguess, t, dh, Hbase, u_ctl, dirich_node, dirich_sched,
                    node_i, node_f, chains, face_i, face_f, hpar, m_off, mtab, s_off, stab,
                    ch_i, ch_f, ctl_i, ctl_f, F, Cap, H, Jd, Jl, Ju, Jcol, Jrow, qf, hc, hr,
                    extra, R, dx, wc, wy, wz, tol, stats, linear_end):
    """Newton iterations of a time stage H(T) - Hbase - dh*F(T) = 0 (Dirichlet rows:
    T = T_set(t)).

    Returns 0 when Newton fails; else T holds the solution and

    - 1: F, Cap, H, qf, hc, hr, extra and the Jacobian dF/dT (Jd .. Jrow) are assembled at
      it (one more assembly after the last correction);
    - 2 (``linear_end`` and :func:`_linear_end_allowed`): no assembly after the last
      correction dx [K] (below ``tol``).  H and F are carried to it to first order,
      H + Cap dx and F + J dx, where J dx = (Cap dx - R) / dh from the Newton system
      M dx = R (M = diag(Cap) - dh J, R = -(H - Hbase - dh F)), so the carried values
      satisfy the stage equation exactly and the energy ledger closes as with an assembly;
      the face flows qf, film coefficients hc, hr, heater power and chamber loss (extra)
      are evaluated at the solution (cheap: no material look-up through the walls); Cap and
      the Newton matrix M (left in Jd .. Jrow, for the error filter) are those of the last
      iterate, O(dx) away.
    """
    N = node_i.shape[0]
    nun = T.shape[0]
    has_ch = ch_i[CHI_PRESENT] == 1
    carry = linear_end and _linear_end_allowed(dirich_node)
    for i in range(nun):
        T[i] = Tguess[i]
    nd = dirich_node.shape[0]
    for k in range(nd):
        T[dirich_node[k]] = sched_eval(s_off, stab, dirich_sched[k], t, 1.0)
    prev = 1e300
    for it in range(24):
        assemble(T, t, 1.0, u_ctl, node_i, node_f, chains, face_i, face_f, hpar, m_off, mtab,
                 s_off, stab, ch_i, ch_f, ctl_i, ctl_f, F, Cap, H, Jd, Jl, Ju, Jcol, Jrow, qf, hc,
                 hr, extra)
        stats[ST_ASSEMBLE] += 1
        _stage_system(H, Hbase, F, Cap, dh, Jd, Jl, Ju, Jcol, Jrow, dirich_node, R)
        solve_arrow(Jd, Jl, Ju, Jcol, Jrow, chains, N, has_ch, R, dx, wc, wy, wz)
        stats[ST_NEWTON] += 1
        mx = _apply_correction(T, dx, 200.0)
        if mx < 0.0:
            return 0
        done = mx < tol
        if not done and carry and it > 0 and mx < prev and mx < 10.0 * tol:
            # the error left after this correction, from the contraction of the last two
            # (theta = |dx_k| / |dx_k-1|, error <= theta / (1 - theta) |dx_k|: Hairer & Wanner,
            # Solving ODEs II, sec. IV.8).  Only where the values are carried to the solution
            # (that keeps the stage equation, and so the energy ledger, exact to second order
            # in the last correction, which is why it must be small: below 10 tol, where the
            # ledger of random enclosures stays within 1e-8; at 1000 tol it reached 4e-8; with
            # an assembly at the end the error left would stay in the ledger as a residual).
            # A stage's first correction has no rate and is never taken this way (a learnt
            # rate was tried: its large first corrections put their second-order terms in the
            # ledger, 1e-5 relative)
            theta = mx / prev
            done = theta < 0.9 and theta / (1.0 - theta) * mx < tol
        if done:
            # a solution pinned at the 1 K floor is no solution: more heat was taken than the
            # wall holds; the caller shortens the step (and reports it if that fails)
            # (a node that starts the step at the floor and stays there is a case at rest)
            floored = False
            for i in range(nun):
                if T[i] <= 1.0:
                    floored = True
                    if Tguess[i] > 1.0 + tol:
                        stats[ST_COLD] += 1
                        return 0
            if carry and not floored:
                inv = 1.0 / dh
                for i in range(nun):
                    cdx = Cap[i] * dx[i]
                    H[i] += cdx
                    F[i] += (cdx - R[i]) * inv
                # the faces, the chamber's loss and the heater power at the solution, in the
                # order of an assembly (R, dx, wy, wz as scratch for the flows, capacities and
                # derivatives they write: F, H, Cap and the Newton matrix are kept)
                faces(T, t, 1.0, face_i, face_f, hpar, s_off, stab, has_ch, N, R, dx, wy, wz,
                      qf, hc, hr)
                chamber(T, t, 1.0, ch_i, ch_f, m_off, mtab, s_off, stab, N, R, wy, wz, dx,
                        extra)
                heater(T, t, 1.0, u_ctl, ctl_i, ctl_f, s_off, stab, R, dx, extra)
                return 2
            # values at the converged point for the caller
            assemble(T, t, 1.0, u_ctl, node_i, node_f, chains, face_i, face_f, hpar, m_off,
                     mtab, s_off, stab, ch_i, ch_f, ctl_i, ctl_f, F, Cap, H, Jd, Jl, Ju, Jcol,
                     Jrow, qf, hc, hr, extra)
            stats[ST_ASSEMBLE] += 1
            return 1
        # diverging: corrections stop shrinking (a correction cut to the 200 K cap still
        # makes steady progress and does not count)
        if it >= 3 and mx <= 200.0 and mx > 0.7 * prev:
            return 0
        prev = mx
    return 0


@njit(cache=True, _nrt=False)
def read_between(Ta, Tb, w, mat, m_off, mtab):
    """Temperature [K] at a point between nodes a and b (at Ta, Tb [K]) of one material, and
    its sensitivities dT/dTa, dT/dTb [-].

    ``w`` is the geometry weight on node a [-]: w = (g_b - g) / (g_b - g_a) in the coordinate
    g in which steady conduction is uniform (x for a slab, ln r for a cylinder, -1/r for a
    sphere).  At steady state the heat flow between the nodes is constant, so the Kirchhoff
    integral K = int k dT (the table row MT_KINT) is linear in g: the read-out solves
    K(T) = w K(Ta) + (1 - w) K(Tb) by Newton steps with k as the derivative, started from
    the linear value and kept between Ta and Tb (K rises with T).  With ``mat`` < 0 (a
    constant k, a node read alone, the chamber) the read-out is w Ta + (1 - w) Tb.
    """
    y = w * Ta + (1.0 - w) * Tb
    if mat < 0 or w == 1.0 or w == 0.0 or Ta == Tb:
        return y, w, 1.0 - w
    ka, Ka, ca, ha = mat_eval(m_off, mtab, mat, Ta)
    kb, Kb, cb, hb = mat_eval(m_off, mtab, mat, Tb)
    Kx = w * Ka + (1.0 - w) * Kb
    lo = Ta if Ta < Tb else Tb
    hi = Tb if Ta < Tb else Ta
    k = ka
    for _ in range(30):
        k, K, c, hh = mat_eval(m_off, mtab, mat, y)
        if not k > 0.0:
            return w * Ta + (1.0 - w) * Tb, w, 1.0 - w
        yn = y + (Kx - K) / k
        if yn < lo:
            yn = lo
        if yn > hi:
            yn = hi
        dy = yn - y
        y = yn
        if abs(dy) <= 1e-13 * abs(y):
            break
    k, K, c, hh = mat_eval(m_off, mtab, mat, y)
    return y, w * ka / k, (1.0 - w) * kb / k


@njit(cache=True, _nrt=False)
def _sensor(T, ctl_i, ctl_f, m_off, mtab):
    """The controller's sensor reading [K]: the read-out between its nodes (read_between)."""
    y, ga, gb = read_between(T[ctl_i[CI_SENSOR_A]], T[ctl_i[CI_SENSOR_B]], ctl_f[CF_SENSOR_W],
                             ctl_i[CI_SENSOR_MAT], m_off, mtab)
    return y


@njit(cache=True, _nrt=False)
def _hermite_cross(ya0, ya1, da0, da1, yb0, yb1, db0, db1, w, mat, m_off, mtab, h, thr):
    """Fraction of the step where the read-out between nodes a and b crosses ``thr`` [K]
    (bisection, 2^-40 of the step).

    Each node follows the cubic Hermite interpolant of the dense output (values y [K] and
    slopes d [K/s] at both ends of the step of length h [s]); the read-out is taken from the
    two interpolated node temperatures (:func:`read_between`), as an output row there reads.
    Read linearly (``mat`` < 0), that is the Hermite interpolant of the weighted sum.
    """
    # linear read-out: the interpolant of w y_a + (1 - w) y_b, with the weighted slopes
    y0 = w * ya0 + (1 - w) * yb0
    y1 = w * ya1 + (1 - w) * yb1
    d0 = w * da0 + (1 - w) * db0
    d1 = w * da1 + (1 - w) * db1
    a = 0.0
    b = 1.0
    fa = read_between(ya0, yb0, w, mat, m_off, mtab)[0] - thr
    for _ in range(40):
        m = 0.5 * (a + b)
        s = m
        h00 = 2 * s ** 3 - 3 * s ** 2 + 1
        h10 = s ** 3 - 2 * s ** 2 + s
        h01 = -2 * s ** 3 + 3 * s ** 2
        h11 = s ** 3 - s ** 2
        if mat < 0:
            y = h00 * y0 + h10 * h * d0 + h01 * y1 + h11 * h * d1 - thr
        else:
            Ta = h00 * ya0 + h10 * h * da0 + h01 * ya1 + h11 * h * da1
            Tb = h00 * yb0 + h10 * h * db0 + h01 * yb1 + h11 * h * db1
            y = read_between(Ta, Tb, w, mat, m_off, mtab)[0] - thr
        if (y > 0) == (fa > 0):
            a = m
            fa = y
        else:
            b = m
    return 0.5 * (a + b)


@njit(cache=True, _nrt=False)
def _write_row(k, th, hs, tk, Ta, Tb, sa, sb, qa, qb, hca, hra, hcb, hrb, exa, exb,
               acc_a, acc_b, qd_a, qd_b, dirich_node, dirich_sched, dirich_face, s_off, stab, nf,
               T_out, qf_out, E_out, P_out, hc_out, hr_out):
    """Write output row ``k`` at fraction ``th`` of the step: cubic Hermite in the states
    (slopes sa, sb = F/C [K/s] at the step start ``a`` and end ``b``; not read when th = 1)
    and in the cumulative energies (slopes = the flows), linear in the flows and the film
    coefficients."""
    nun = Ta.shape[0]
    s2 = th * th
    s3 = s2 * th
    h00 = 2 * s3 - 3 * s2 + 1
    h10 = s3 - 2 * s2 + th
    h01 = -2 * s3 + 3 * s2
    h11 = s3 - s2
    row = T_out[k]
    if th == 1.0:
        for i in range(nun):
            row[i] = Tb[i]
    else:
        a = h10 * hs
        b = h11 * hs
        for i in range(nun):
            row[i] = h00 * Ta[i] + a * sa[i] + h01 * Tb[i] + b * sb[i]
    nd = dirich_node.shape[0]
    for kk in range(nd):
        T_out[k, dirich_node[kk]] = sched_eval(s_off, stab, dirich_sched[kk], tk, 1.0)
    for f in range(nf):
        qf_out[k, f] = (1 - th) * qa[f] + th * qb[f]
        hc_out[k, f] = (1 - th) * hca[f] + th * hcb[f]
        hr_out[k, f] = (1 - th) * hra[f] + th * hrb[f]
        E_out[k, f] = h00 * acc_a[f] + h10 * hs * qa[f] + h01 * acc_b[f] + h11 * hs * qb[f]
    for kk in range(nd):
        f = dirich_face[kk]
        # heat flow that holds the face temperature, between the step-end estimates
        qf_out[k, f] = (1 - th) * qd_a[kk] + th * qd_b[kk]
        E_out[k, f] = h00 * acc_a[f] + h10 * hs * qd_a[kk] + h01 * acc_b[f] + h11 * hs * qd_b[kk]
    jh = nf + EX_HEATER
    jl = nf + EX_LOSS
    E_out[k, jh] = h00 * acc_a[jh] + h10 * hs * exa[EX_HEATER] + h01 * acc_b[jh] + h11 * hs * exb[EX_HEATER]
    E_out[k, jl] = (h00 * acc_a[jl] + h10 * hs * exa[EX_LOSS] + h01 * acc_b[jl]
                        + h11 * hs * exb[EX_LOSS])
    P_out[k] = exb[EX_HEATER] if th == 1.0 else (1 - th) * exa[EX_HEATER] + th * exb[EX_HEATER]


@njit(cache=True, _nrt=False)
def controller(T, t, t_target, jump_target, cs, mode, period, ev_tol, ctl_i, ctl_f, s_off,
               stab, m_off, mtab):
    """The heater controller at the start of a step at time t [s]: samples the duty schedule
    or the PID law once per period (anti-windup), or switches the thermostat at its band;
    updates the control state ``cs``.  Returns the on-fraction for the step (-1: the duty
    schedule itself) and the step target [s], shortened to the next sampling or switch-off
    time (jump_target True then).  The sensor is read between its nodes through the material
    tables m_off, mtab (:func:`read_between`)."""
    u = -1.0
    if mode == CTL_DUTY_SWITCHED or mode == CTL_PID_AVERAGED or mode == CTL_PID_SWITCHED:
        if t >= cs[CS_NEXT] - 1e-9 * period:
            sp = 0.0
            if mode == CTL_DUTY_SWITCHED:
                ufrac = sched_eval(s_off, stab, ctl_i[CI_DUTY], t, 0.0)
            else:
                y = _sensor(T, ctl_i, ctl_f, m_off, mtab)
                sp = sched_eval(s_off, stab, ctl_i[CI_SETPOINT], t, 0.0)
                e = sp - y
                de = 0.0
                if cs[CS_PREV] > -1e299:
                    de = (e - cs[CS_PREV]) / period
                ui = cs[CS_INT] + ctl_f[CF_KI] * e * period
                ufrac = ctl_f[CF_KP] * e + ui + ctl_f[CF_KD] * de
                enabled = sched_eval(s_off, stab, ctl_i[CI_ENABLE], t, 0.0) > 0.0
                # anti-windup: integrate only while enabled and unsaturated, or when it
                # unwinds; the integral is frozen while the heater is switched off
                if enabled and ((ufrac < 1.0 and ufrac > 0.0) or (ufrac >= 1.0 and e < 0)
                                or (ufrac <= 0.0 and e > 0)):
                    cs[CS_INT] = ui
                if ufrac > 1.0:
                    ufrac = 1.0
                if ufrac < 0.0:
                    ufrac = 0.0
                cs[CS_PREV] = e
            cs[CS_U] = ufrac
            cs[CS_OFF] = t + ufrac * period
            cs[CS_NEXT] = t + period
        if cs[CS_NEXT] < t_target:
            t_target = cs[CS_NEXT]
            jump_target = True
        if mode == CTL_PID_AVERAGED:
            u = cs[CS_U]
        else:
            if cs[CS_OFF] > t + 1e-9 * period:
                u = 1.0
                if cs[CS_OFF] < t_target:
                    t_target = cs[CS_OFF]
                    jump_target = True
            else:
                u = 0.0
    elif mode == CTL_THERMOSTAT:
        y = _sensor(T, ctl_i, ctl_f, m_off, mtab)
        sp = sched_eval(s_off, stab, ctl_i[CI_SETPOINT], t, 0.0)
        half = 0.5 * ctl_f[CF_BAND]
        if cs[CS_ON] > 0.5 and y >= sp + half - ev_tol:
            cs[CS_ON] = 0.0
        elif cs[CS_ON] < 0.5 and y <= sp - half + ev_tol:
            cs[CS_ON] = 1.0
        u = cs[CS_ON]
    return u, t_target, jump_target


@njit(cache=True, _nrt=False)
def ledger(acc, hs, q0, qg, q1, F0, Fg, F1, H0, H1, ex0, exg, ex1, dirich_node, dirich_face):
    """Add one accepted step of length hs [s] to the cumulative energies ``acc`` [J] with the
    TR-BDF2 quadrature weights: face flows q [W] (a fixed-temperature face: the change of its
    node's enthalpy H [J] minus the conduction F [W] into it), heater power and chamber loss
    (ex [W]); states at the step start (0), the stage (g) and the end (1)."""
    nf = q0.shape[0]
    for f in range(nf):
        acc[f] += hs * (W0 * (q0[f] + qg[f]) + W2 * q1[f])
    for kk in range(dirich_node.shape[0]):
        i = dirich_node[kk]
        f = dirich_face[kk]
        acc[f] += (H1[i] - H0[i]) - hs * (W0 * (F0[i] + Fg[i]) + W2 * F1[i])
    acc[nf + EX_HEATER] += hs * (W0 * (ex0[EX_HEATER] + exg[EX_HEATER]) + W2 * ex1[EX_HEATER])
    acc[nf + EX_LOSS] += hs * (W0 * (ex0[EX_LOSS] + exg[EX_LOSS]) + W2 * ex1[EX_LOSS])


@njit(cache=True, _nrt=False)
def events(ev_i, ev_f, ev_out, t, hs, T0, T1, F0, C0, F1, C1, m_off, mtab):
    """Record the first upward / downward crossing time [s] of each watched event within the
    step (t, t + hs]: the read-out between the event's nodes (:func:`read_between`, material
    tables m_off, mtab) located on the cubic Hermite interpolant of the states T [K] with
    slopes F/C [K/s] at both ends (:func:`_hermite_cross`)."""
    for e in range(ev_i.shape[0]):
        a = ev_i[e, EV_NODE_A]
        b = ev_i[e, EV_NODE_B]
        mat = ev_i[e, EV_MAT] if ev_i.shape[1] > EV_MAT else -1
        w = ev_f[e, EV_WEIGHT]
        thr = ev_f[e, EV_THRESHOLD]
        y0 = read_between(T0[a], T0[b], w, mat, m_off, mtab)[0]
        y1 = read_between(T1[a], T1[b], w, mat, m_off, mtab)[0]
        if (y0 - thr) * (y1 - thr) <= 0.0 and y0 != y1:
            fr = _hermite_cross(T0[a], T1[a], F0[a] / C0[a], F1[a] / C1[a], T0[b], T1[b],
                                F0[b] / C0[b], F1[b] / C1[b], w, mat, m_off, mtab, hs, thr)
            col = EV_UP if y1 > y0 else EV_DOWN
            if ev_out[e, col] != ev_out[e, col]:
                ev_out[e, col] = t + fr * hs


@njit(cache=True, _nrt=False)
def balance(acc, stats, H1, has_ext):
    """Energy ledger check after a step: heat in from outside (faces with ``has_ext``, the
    heater) minus the chamber loss, against the change of stored enthalpy H [J] since the
    start; keeps the largest residual and the energy scale [J] in ``stats``."""
    nf = has_ext.shape[0]
    nun = H1.shape[0]
    ext = acc[nf + EX_HEATER] - acc[nf + EX_LOSS]
    sc = abs(acc[nf + EX_HEATER])
    for f in range(nf):
        if has_ext[f]:
            ext += acc[f]
        if abs(acc[f]) > sc:
            sc = abs(acc[f])
    hsum = 0.0
    for i in range(nun):
        hsum += H1[i]
    dH = hsum - stats[ST_H0]
    res = abs(ext - dH)
    if res > stats[ST_RESMAX]:
        stats[ST_RESMAX] = res
    if abs(dH) > sc:
        sc = abs(dH)
    if sc > stats[ST_SCALE]:
        stats[ST_SCALE] = sc


@njit(cache=True, _nrt=False)
def error_norm(F0, Fg, F1, hs, dh, Cap, Jd, Jl, Ju, Jcol, Jrow, dirich_node, chains, N, has_ch,
               R, dx, wc, wy, wz, tol, held):
    """Local error of a TR-BDF2 step of hs [s] relative to ``tol`` [K] (accept when <= 1):
    the embedded estimate of Bank et al. (1985) from the flows F [W] at the start, stage and
    end, filtered by the stage matrix Cap - dh J (Hosea & Shampine 1996), max norm.  Jd ..
    Jrow hold dF/dT at the step end on entry (``held`` False) or already the stage matrix
    (``held`` True: the second stage's Newton matrix at its last iterate), and the matrix on
    return."""
    nun = F0.shape[0]
    for i in range(nun):
        R[i] = 2.0 * KERR * hs * (F0[i] / GAMMA - Fg[i] / (GAMMA * (1.0 - GAMMA))
                                  + F1[i] / (1.0 - GAMMA))
    if held:
        for k in range(dirich_node.shape[0]):
            R[dirich_node[k]] = 0.0
    else:
        _newton_matrix(Cap, 1.0, dh, Jd, Jl, Ju, Jcol, Jrow, dirich_node, R)
    solve_arrow(Jd, Jl, Ju, Jcol, Jrow, chains, N, has_ch, R, dx, wc, wy, wz)
    err = 0.0
    for i in range(nun):
        a = abs(dx[i])
        if a > err:
            err = a
    err /= tol
    return err


@njit(cache=True, _nrt=False)
def thermostat_cut(T0, T1, u, t1, ctl_i, ctl_f, s_off, stab, ev_tol, m_off, mtab):
    """Fraction (0.05 .. 0.95) to shorten a step by when the thermostat's sensor passes its
    switching threshold (setpoint +- band/2 [K]) by more than ``ev_tol`` [K] between the
    states T0 and T1 [K] (heater fraction u); 0 when the step may stand.  The fraction puts
    the end near the crossing of the straight line between the two sensor readings."""
    y0 = _sensor(T0, ctl_i, ctl_f, m_off, mtab)
    y1 = _sensor(T1, ctl_i, ctl_f, m_off, mtab)
    sp1 = sched_eval(s_off, stab, ctl_i[CI_SETPOINT], t1, 1.0)
    half = 0.5 * ctl_f[CF_BAND]
    thr = sp1 + half if u > 0.5 else sp1 - half
    over = (y1 - thr) if u > 0.5 else (thr - y1)
    if not over > ev_tol:
        return 0.0
    d0 = (y0 - thr)
    d1 = (y1 - thr)
    frac = 0.5
    if d1 != d0:
        frac = d0 / (d0 - d1)
    if frac < 0.05:
        frac = 0.05
    if frac > 0.95:
        frac = 0.95
    return frac


# ------------------------------------------------------------------ the time loop, in parts
# Each part below is one concern of a TR-BDF2 step; :func:`integrate` only calls them.  The
# arithmetic and its order are those of the loop before it was split (the results are pinned
# to the last digit by tests/test_integrator_pinned.py); each part has a plain numpy twin in
# tests/kernel_twins.py.


@njit(cache=True)
def resume_views(ks, nun, nf):
    """Views into the resume state ``ks`` (layout in :mod:`fdwall.solver.layout`): Tprev [K],
    F1 [W], Cap [J/K], H1 [J] (nun each), q1 [W], hcw, hrw [W/m2/K] (nf each), ex1 [W] (2)."""
    Tprev = ks[KS_ARRAYS:KS_ARRAYS + nun]
    F1 = ks[KS_ARRAYS + nun:KS_ARRAYS + 2 * nun]
    Cap = ks[KS_ARRAYS + 2 * nun:KS_ARRAYS + 3 * nun]
    H1 = ks[KS_ARRAYS + 3 * nun:KS_ARRAYS + 4 * nun]
    o = KS_ARRAYS + 4 * nun
    q1 = ks[o:o + nf]
    hcw = ks[o + nf:o + 2 * nf]
    hrw = ks[o + 2 * nf:o + 3 * nf]
    ex1 = ks[o + 3 * nf:o + 3 * nf + 2]
    return Tprev, F1, Cap, H1, q1, hcw, hrw, ex1


@njit(cache=True, _nrt=False)
def resume_load(ks, bp, t):
    """The scalars of the resume state ``ks`` at the start of a call at time t [s]; the first
    call of a run sets them (first breakpoint after t).  Returns (breakpoint index, previous
    step [s], have a previous step, reuse the end values of the last step, the last step
    landed on a jump, last heater fraction [-])."""
    nbp = bp.shape[0]
    if ks[KS_INIT] == 0.0:      # first call of a run
        ks[KS_INIT] = 1.0
        ks[KS_HPREV] = 1.0
        ks[KS_HAVE_PREV] = 0.0
        ks[KS_REUSE] = 0.0
        ks[KS_AFTER_JUMP] = 0.0
        ks[KS_ULAST] = -9.0
        ibp = 0
        while ibp < nbp and bp[ibp] <= t:
            ibp += 1
        ks[KS_IBP] = ibp
    return (int(ks[KS_IBP]), ks[KS_HPREV], ks[KS_HAVE_PREV] > 0.5, ks[KS_REUSE] > 0.5,
            ks[KS_AFTER_JUMP] > 0.5, ks[KS_ULAST])


@njit(cache=True, _nrt=False)
def resume_save(ks, ibp, hprev, have_prev, reuse, after_jump, u_last):
    """Store the scalars of the resume state after an accepted step (see :func:`resume_load`)."""
    ks[KS_IBP] = ibp
    ks[KS_HPREV] = hprev
    ks[KS_HAVE_PREV] = 1.0 if have_prev else 0.0
    ks[KS_REUSE] = 1.0 if reuse else 0.0
    ks[KS_AFTER_JUMP] = 1.0 if after_jump else 0.0
    ks[KS_ULAST] = u_last


@njit(cache=True, _nrt=False)
def step_target(t_out, k, k1, land_outputs, bp, ibp):
    """Where the next step must end at the latest [s]: the next output (or the last one when
    outputs are interpolated), or the next breakpoint before it.  Returns (target [s],
    target is a breakpoint, its index or -1)."""
    t_target = t_out[k] if land_outputs else t_out[k1 - 1]
    jump_target = False
    target_bp = -1
    if ibp < bp.shape[0] and bp[ibp] < t_target:
        t_target = bp[ibp]
        jump_target = True
        target_bp = ibp
    return t_target, jump_target, target_bp


@njit(cache=True, _nrt=False)
def heater_switched(u, cs, mode):
    """True when a switching controller changed the heater fraction u [-] since the last
    step (the step then restarts from the one that worked after the last switch)."""
    switched = u != cs[CS_UPREV] and (mode == CTL_DUTY_SWITCHED or mode == CTL_THERMOSTAT
                                      or mode == CTL_PID_SWITCHED)
    cs[CS_UPREV] = u
    return switched


@njit(cache=True, _nrt=False)
def step_size(h, t, t_target, max_step, switched, restart, cs):
    """Size of the next step attempt [s] from the proposed step h [s] at time t [s]: no longer
    than the step that worked after the last heater switch (``switched``) or schedule jump
    (``restart``), nor ``max_step``; it lands on ``t_target`` [s] when it would reach it,
    and otherwise takes at most half of what remains (so no sliver step is left).  Returns
    (step [s], lands on the target)."""
    if switched and h > cs[CS_HSW]:
        h = cs[CS_HSW]
    if restart and h > cs[CS_HJ]:
        h = cs[CS_HJ]
    hs = h
    if hs > max_step:
        hs = max_step
    rem = t_target - t
    if hs >= rem * (1.0 - 1e-9):
        hs = rem
        land = True
    else:
        land = False
        if hs > 0.5 * rem:
            hs = 0.5 * rem
    return hs, land


@njit(cache=True, _nrt=False)
def factor_rejected(err):
    """Step-size factor [-] after a step rejected with scaled error err [-] (> 1): the
    elementary controller 0.9 err^(-1/3) of a method with a third-order local error, at
    least 0.2 (0.1 for a non-finite error)."""
    fac = 0.9 * err ** (-1.0 / 3.0) if err < 1e200 else 0.1
    if fac < 0.2:
        fac = 0.2
    return fac


@njit(cache=True, _nrt=False)
def factor_accepted(err):
    """Step-size factor [-] for the step after one accepted with scaled error err [-]
    (<= 1): 0.9 err^(-1/3), clipped to 0.2 .. 5."""
    fac = 0.9 * err ** (-1.0 / 3.0) if err > 1e-12 else 5.0
    if fac > 5.0:
        fac = 5.0
    if fac < 0.2:
        fac = 0.2
    return fac


@njit(cache=True, _nrt=False)
def start_values(reuse, T, t, u, u_last, node_i, node_f, chains, face_i, face_f, hpar, m_off,
                 mtab, s_off, stab, ch_i, ch_f, ctl_i, ctl_f, F0, C0, H0, q0, ex0, F1, Cap, H1,
                 q1, ex1, Jd, Jl, Ju, Jcol, Jrow, hcw, hrw, hc0, hr0, stats):
    """Values at the start of a step at time t [s] (right limit): net flows F0 [W], capacities
    C0 [J/K], enthalpies H0 [J], face flows q0 [W], heater power and loss ex0 [W].  They are
    the end values of the last step (F1 .. ex1) when ``reuse`` and the heater fraction is
    unchanged, else assembled at T [K] (forcing may jump at a breakpoint or a switch).  The
    film coefficients [W/m2/K] at the start go to hc0, hr0 (for the outputs in the step)."""
    nun = T.shape[0]
    nf = q0.shape[0]
    if reuse and u == u_last:
        for i in range(nun):
            F0[i] = F1[i]
            C0[i] = Cap[i]
            H0[i] = H1[i]
        for f in range(nf):
            q0[f] = q1[f]
        ex0[EX_HEATER] = ex1[EX_HEATER]
        ex0[EX_LOSS] = ex1[EX_LOSS]
    else:
        assemble(T, t, 0.0, u, node_i, node_f, chains, face_i, face_f, hpar, m_off, mtab,
                 s_off, stab, ch_i, ch_f, ctl_i, ctl_f, F0, C0, H0, Jd, Jl, Ju, Jcol, Jrow,
                 q0, hcw, hrw, ex0)
        stats[ST_ASSEMBLE] += 1
    for f in range(nf):
        hc0[f] = hcw[f]
        hr0[f] = hrw[f]


@njit(cache=True, _nrt=False)
def trapezoid_guess(T, Tprev, hprev, have_prev, hs, dh, H0, F0, Hb, Tp):
    """First TR-BDF2 stage, the trapezoid rule over gamma*hs [s]: its known part
    Hb = H0 + dh F0 [J] (dh = gamma hs / 2 [s]) and the Newton start Tp [K], extrapolated
    from the previous step hprev [s] (not below 1 K)."""
    for i in range(T.shape[0]):
        Hb[i] = H0[i] + dh * F0[i]
        if have_prev:
            Tp[i] = T[i] + GAMMA * hs * (T[i] - Tprev[i]) / hprev
            if Tp[i] < 1.0:
                Tp[i] = T[i]
        else:
            Tp[i] = T[i]


@njit(cache=True, _nrt=False)
def bdf2_guess(T, Tg, H0, Hg, Hb, Tp):
    """Second TR-BDF2 stage, BDF2 through t, t + gamma h and t + h: its known part
    Hb = A2 Hg - B2 H0 [J] and the Newton start Tp [K], extrapolated through the stage."""
    for i in range(T.shape[0]):
        Tp[i] = T[i] + (Tg[i] - T[i]) / GAMMA
        if Tp[i] < 1.0:
            Tp[i] = T[i]
        Hb[i] = A2 * Hg[i] - B2 * H0[i]


@njit(cache=True, _nrt=False)
def stage_trapezoid(Tg, T, Tprev, hprev, have_prev, t, hs, dh, H0, F0, u, dirich_node,
                    dirich_sched, node_i, node_f, chains, face_i, face_f, hpar, m_off, mtab,
                    s_off, stab, ch_i, ch_f, ctl_i, ctl_f, Fg, Cap, Hg, Jd, Jl, Ju, Jcol,
                    Jrow, qg, hcw, hrw, exg, R, dx, wc, wy, wz, Hb, Tp, newton_tol, stats):
    """Solve the first stage for the state Tg [K] at t + gamma hs: H(Tg) - dh F(Tg) =
    H0 + dh F0.  Nonzero on convergence (Fg, Cap, Hg, qg, exg then hold the stage values;
    1 or 2 as :func:`_newton_iterate`)."""
    trapezoid_guess(T, Tprev, hprev, have_prev, hs, dh, H0, F0, Hb, Tp)
    return _newton_iterate(Tg, Tp, t + GAMMA * hs, dh, Hb, u, dirich_node, dirich_sched,
                           node_i, node_f, chains, face_i, face_f, hpar, m_off, mtab, s_off,
                           stab, ch_i, ch_f, ctl_i, ctl_f, Fg, Cap, Hg, Jd, Jl, Ju, Jcol, Jrow,
                           qg, hcw, hrw, exg, R, dx, wc, wy, wz, newton_tol, stats, True)


@njit(cache=True, _nrt=False)
def stage_bdf2(T1, T, Tg, t, hs, dh, H0, Hg, u, dirich_node, dirich_sched, node_i, node_f,
               chains, face_i, face_f, hpar, m_off, mtab, s_off, stab, ch_i, ch_f, ctl_i,
               ctl_f, F1, Cap, H1, Jd, Jl, Ju, Jcol, Jrow, q1, hcw, hrw, ex1, R, dx, wc, wy,
               wz, Hb, Tp, newton_tol, stats):
    """Solve the second stage for the step-end state T1 [K] at t + hs: H(T1) - dh F(T1) =
    A2 Hg - B2 H0.  Nonzero on convergence: F1, Cap, H1, q1, ex1 then hold the values at the
    step end, and Jd .. Jrow the Jacobian there (1) or the stage's Newton matrix at its last
    iterate (2), see :func:`_newton_iterate`."""
    bdf2_guess(T, Tg, H0, Hg, Hb, Tp)
    return _newton_iterate(T1, Tp, t + hs, dh, Hb, u, dirich_node, dirich_sched, node_i,
                           node_f, chains, face_i, face_f, hpar, m_off, mtab, s_off, stab,
                           ch_i, ch_f, ctl_i, ctl_f, F1, Cap, H1, Jd, Jl, Ju, Jcol, Jrow, q1,
                           hcw, hrw, ex1, R, dx, wc, wy, wz, newton_tol, stats, True)


@njit(cache=True, _nrt=False)
def thermostat_retry(mode, T, T1, u, t1, hs, hmin, ctl_i, ctl_f, s_off, stab, ev_tol, m_off,
                     mtab):
    """Shortened step [s] when a thermostat's sensor passed its threshold within the step by
    more than ev_tol [K] (see :func:`thermostat_cut`); 0 when the step stands."""
    if mode == CTL_THERMOSTAT:
        frac = thermostat_cut(T, T1, u, t1, ctl_i, ctl_f, s_off, stab, ev_tol, m_off, mtab)
        if frac > 0.0 and hs > hmin * 10:
            return hs * frac
    return 0.0


@njit(cache=True, _nrt=False)
def stop_run(stats, acc, t, status):
    """End a call early with ``status`` (a STATUS_* code) at time t [s]."""
    stats[ST_STATUS] = status
    stats[ST_T] = t
    acc[acc.shape[0] - 1] = t


@njit(cache=True, _nrt=False)
def stall_guard(stats, hs, t_end):
    """Count steps in a row far below the run's time scale (hs < 1e-9 t_end [s]); True when
    more than 20,000 such steps make no real progress (the run is stalled)."""
    if hs < 1e-9 * t_end:
        stats[ST_STALL] += 1
        if stats[ST_STALL] > 20000:
            return True
    else:
        stats[ST_STALL] = 0
    return False


@njit(cache=True, _nrt=False)
def step_range(stats, hs):
    """Keep the smallest and largest accepted step [s] in ``stats``."""
    if hs < stats[ST_HMIN]:
        stats[ST_HMIN] = hs
    if hs > stats[ST_HMAX]:
        stats[ST_HMAX] = hs


@njit(cache=True, _nrt=False)
def accept_state(T, T1, Tprev):
    """The step is taken: Tprev gets the start state, T the end state T1 [K]."""
    for i in range(T.shape[0]):
        Tprev[i] = T[i]
        T[i] = T1[i]


@njit(cache=True, _nrt=False)
def dirichlet_flows(qd_b, qd_state, H1, H0, F1, hs, dirich_node):
    """Heat flow [W] that holds each fixed-temperature face at the end of a step of hs [s]:
    the storage rate of its node (H1 - H0)/hs [W] minus the conduction F1 into it; the state
    at the step start takes it too when unknown (NaN, the first step)."""
    for kk in range(dirich_node.shape[0]):
        i = dirich_node[kk]
        qd_b[kk] = (H1[i] - H0[i]) / hs - F1[i]
        if qd_state[kk] != qd_state[kk]:
            qd_state[kk] = qd_b[kk]


@njit(cache=True, _nrt=False)
def dense_output(k, k1, t, hs, land, t_target, t_out, Tprev, T, F0, C0, F1, Cap, q0, q1, hc0,
                 hr0, hcw, hrw, ex0, ex1, acc_prev, acc, qd_state, qd_b, dirich_node,
                 dirich_sched, dirich_face, s_off, stab, nf, T_out, qf_out, E_out, P_out, hc_out,
                 hr_out, sa, sb):
    """Write the output rows k.. that fall in the step (t - hs, t] [s] (exact at the step
    end, cubic Hermite inside: :func:`_write_row`); returns the next row to write.  sa, sb
    [nun] are work arrays for the slopes F/C [K/s] at the step ends, computed once per step
    when a row falls inside it."""
    t0s = t - hs
    slopes = False
    while k < k1 and t_out[k] <= t + 1e-12 * (1.0 + abs(t)):
        th = (t_out[k] - t0s) / hs
        if th >= 1.0 - 1e-12 or land and t_out[k] >= t_target:
            th = 1.0
        if th != 1.0 and not slopes:
            for i in range(T.shape[0]):
                sa[i] = F0[i] / C0[i]
                sb[i] = F1[i] / Cap[i]
            slopes = True
        _write_row(k, th, hs, t_out[k], Tprev, T, sa, sb, q0, q1, hc0, hr0,
                   hcw, hrw, ex0, ex1, acc_prev, acc, qd_state, qd_b, dirich_node, dirich_sched,
                   dirich_face, s_off, stab, nf, T_out, qf_out, E_out, P_out, hc_out, hr_out)
        k += 1
    return k


@njit(cache=True, _nrt=False)
def carry_step_end(qd_state, qd_b, acc_prev, acc):
    """After the outputs of a step: its end values (fixed-face flows [W], cumulative
    energies [J]) become the start values of the next."""
    for kk in range(qd_state.shape[0]):
        qd_state[kk] = qd_b[kk]
    for j in range(acc.shape[0]):
        acc_prev[j] = acc[j]


@njit(cache=True)
def integrate(T, cs, acc, stats, t_out, k0, k1, land_outputs, bp, bpj, tol, max_step, node_i, node_f, chains,
              face_i, face_f, hpar, m_off, mtab, s_off, stab, ch_i, ch_f, ctl_i, ctl_f,
              dirich_node, dirich_sched, dirich_face, qd_state, ev_i, ev_f, ev_out,
              T_out, qf_out, E_out, P_out, hc_out, hr_out, ks, max_steps):
    """Integrate from the state time towards ``t_out[k1-1]`` by TR-BDF2, at most
    ``max_steps`` accepted steps per call.

    State carried between calls: T [K], cs (control state, cs[CS_H] the next step [s]),
    acc (cumulative energies [J]: per face into the wall, then heater, then loss from the
    chamber), stats, and ``ks``, the resume state (layout in :mod:`fdwall.solver.layout`:
    predictor history and the values at the end of the last step, zeros before the first
    call, ``resume_size(nun, nf)`` long).  A call stops after ``max_steps`` accepted steps,
    anywhere inside an output interval; the next call (with ``k0`` = the next output row)
    continues exactly as if there had been no stop, so the results do not depend on how a run
    is cut into calls.  Outputs are written at rows k0..k1-1 as the steps pass them.
    Breakpoints ``bp`` (sorted times where forcing jumps or kinks) are landed on exactly;
    after one where ``bpj`` > 0.5 (a jump in a schedule) the step restarts from the one that
    followed the previous jump.  Returns the number of outputs written.
    ``ev_out[e, 0:2]`` gets the first upward / downward crossing time of event e.

    The loop only calls the parts of a step: :func:`step_target`, :func:`controller`,
    :func:`heater_switched` and :func:`step_size` (where the step may end and how long it
    is), :func:`start_values`, the two stages :func:`stage_trapezoid` and
    :func:`stage_bdf2`, :func:`error_norm` with :func:`factor_rejected` /
    :func:`factor_accepted` (the step-size controller), :func:`thermostat_retry`,
    :func:`ledger`, :func:`events`, :func:`accept_state`, :func:`stall_guard`,
    :func:`balance`, :func:`dirichlet_flows`, :func:`dense_output` and the resume state.
    This function allocates the work arrays; the loop itself is :func:`_step_loop`.
    """
    nun = T.shape[0]
    nf = face_i.shape[0]
    N = node_i.shape[0]
    has_ch = ch_i[CHI_PRESENT] == 1
    F0 = np.empty(nun)
    Fg = np.empty(nun)
    # values at the end of the last step and the predictor history live in ks (resumable)
    Tprev, F1, Cap, H1, q1, hcw, hrw, ex1 = resume_views(ks, nun, nf)
    H0 = np.empty(nun)
    Hg = np.empty(nun)
    Jd = np.empty(nun)
    Jl = np.empty(nun)
    Ju = np.empty(nun)
    Jcol = np.empty(nun)
    Jrow = np.empty(nun)
    R = np.empty(nun)
    dx = np.empty(nun)
    wc = np.empty(nun)
    wy = np.empty(nun)
    wz = np.empty(nun)
    Tg = np.empty(nun)
    T1 = np.empty(nun)
    Tp = np.empty(nun)
    Hb = np.empty(nun)
    C0 = np.empty(nun)
    q0 = np.empty(nf)
    qg = np.empty(nf)
    hc0 = np.empty(nf)
    hr0 = np.empty(nf)
    ex0 = np.zeros(2)
    exg = np.zeros(2)
    nd = dirich_node.shape[0]
    acc_prev = acc.copy()
    qd_b = np.zeros(nd)
    has_ext = np.empty(nf, dtype=np.bool_)
    return _step_loop(T, cs, acc, stats, t_out, k0, k1, land_outputs, bp, bpj, tol, max_step,
                      node_i, node_f, chains, face_i, face_f, hpar, m_off, mtab, s_off, stab,
                      ch_i, ch_f, ctl_i, ctl_f, dirich_node, dirich_sched, dirich_face,
                      qd_state, ev_i, ev_f, ev_out, T_out, qf_out, E_out, P_out, hc_out, hr_out,
                      ks, max_steps, nun, nf, N, has_ch, F0, Fg, Tprev, F1, Cap, H1, q1, hcw,
                      hrw, ex1, H0, Hg, Jd, Jl, Ju, Jcol, Jrow, R, dx, wc, wy, wz, Tg, T1, Tp,
                      Hb, C0, q0, qg, hc0, hr0, ex0, exg, nd, acc_prev, qd_b, has_ext)


@njit(cache=True, _nrt=False)
def _step_loop(T, cs, acc, stats, t_out, k0, k1, land_outputs, bp, bpj, tol, max_step, node_i,
               node_f, chains, face_i, face_f, hpar, m_off, mtab, s_off, stab, ch_i, ch_f,
               ctl_i, ctl_f, dirich_node, dirich_sched, dirich_face, qd_state, ev_i, ev_f,
               ev_out, T_out, qf_out, E_out, P_out, hc_out, hr_out, ks, max_steps, nun, nf, N,
               has_ch, F0, Fg, Tprev, F1, Cap, H1, q1, hcw, hrw, ex1, H0, Hg, Jd, Jl, Ju, Jcol,
               Jrow, R, dx, wc, wy, wz, Tg, T1, Tp, Hb, C0, q0, qg, hc0, hr0, ex0, exg, nd,
               acc_prev, qd_b, has_ext):
    """The step loop of :func:`integrate` (same arguments, then its work arrays), compiled
    without numba's runtime: it allocates nothing (see "Reference counting")."""
    mode = ctl_i[CI_MODE]
    period = ctl_f[CF_PERIOD]
    ev_tol = ctl_f[CF_EVENT_TOL]
    newton_tol = 1e-3 * tol
    t = acc[acc.shape[0] - 1]     # current time is kept in the last accumulator slot
    h = cs[CS_H]
    t_end = t_out[t_out.shape[0] - 1]
    # [s]: fast start-up layers (a huge film coefficient on a low-capacity face) need tiny steps
    hmin = 1e-14 * max(1.0, t_end)
    nbp = bp.shape[0]
    ibp, hprev, have_prev, reuse, after_jump, u_last = resume_load(ks, bp, t)
    k = k0
    nsteps = 0
    for f in range(nf):
        has_ext[f] = not (face_i[f, FI_TO_CHAMBER] == 1 and has_ch)
    while k < k1:
        t_target, jump_target, target_bp = step_target(t_out, k, k1, land_outputs, bp, ibp)
        # controller: sampling and switching times
        u, t_target, jump_target = controller(T, t, t_target, jump_target, cs, mode, period,
                                              ev_tol, ctl_i, ctl_f, s_off, stab, m_off, mtab)
        # step size; after the heater switches, restart from the step that worked last time
        switched = heater_switched(u, cs, mode)
        restart = after_jump
        hs, land = step_size(h, t, t_target, max_step, switched, restart, cs)
        # values at the start of the step (right limit); reuse the end of the last step
        # unless forcing may have jumped there (breakpoint, controller switch)
        start_values(reuse, T, t, u, u_last, node_i, node_f, chains, face_i, face_f, hpar,
                     m_off, mtab, s_off, stab, ch_i, ch_f, ctl_i, ctl_f, F0, C0, H0, q0, ex0,
                     F1, Cap, H1, q1, ex1, Jd, Jl, Ju, Jcol, Jrow, hcw, hrw, hc0, hr0, stats)
        accepted = False
        err = 0.0
        while not accepted:
            dh = D_COEF * hs
            t1 = t + hs
            ok = stage_trapezoid(Tg, T, Tprev, hprev, have_prev, t, hs, dh, H0, F0, u,
                                 dirich_node, dirich_sched, node_i, node_f, chains, face_i,
                                 face_f, hpar, m_off, mtab, s_off, stab, ch_i, ch_f, ctl_i,
                                 ctl_f, Fg, Cap, Hg, Jd, Jl, Ju, Jcol, Jrow, qg, hcw, hrw, exg,
                                 R, dx, wc, wy, wz, Hb, Tp, newton_tol, stats)
            if ok > 0:
                ok = stage_bdf2(T1, T, Tg, t, hs, dh, H0, Hg, u, dirich_node, dirich_sched,
                                node_i, node_f, chains, face_i, face_f, hpar, m_off, mtab,
                                s_off, stab, ch_i, ch_f, ctl_i, ctl_f, F1, Cap, H1, Jd, Jl, Ju,
                                Jcol, Jrow, q1, hcw, hrw, ex1, R, dx, wc, wy, wz, Hb, Tp,
                                newton_tol, stats)
            if ok == 0:
                stats[ST_NFAIL] += 1
                hs *= 0.25
                land = False
                if hs < hmin:
                    stop_run(stats, acc, t, STATUS_STEP_FLOOR)
                    return k - k0
                continue
            # error estimate (Bank et al. 1985), filtered by the stage matrix (Hosea & Shampine 1996)
            err = error_norm(F0, Fg, F1, hs, dh, Cap, Jd, Jl, Ju, Jcol, Jrow, dirich_node, chains,
                             N, has_ch, R, dx, wc, wy, wz, tol, ok == 2)
            if not (err <= 1.0):
                stats[ST_REJ] += 1
                hs *= factor_rejected(err)
                land = False
                if hs < hmin:
                    stop_run(stats, acc, t, STATUS_STEP_FLOOR)
                    return k - k0
                continue
            # thermostat: do not step across a switching threshold by more than ev_tol
            hcut = thermostat_retry(mode, T, T1, u, t1, hs, hmin, ctl_i, ctl_f, s_off, stab,
                                    ev_tol, m_off, mtab)
            if hcut > 0.0:
                hs = hcut
                land = False
                stats[ST_EVRETRY] += 1
                continue
            accepted = True
        if switched:
            cs[CS_HSW] = hs
        if restart:
            cs[CS_HJ] = hs
        after_jump = land and target_bp >= 0 and bpj[target_bp] > 0.5
        # accept the step: ledger with the step's quadrature weights
        ledger(acc, hs, q0, qg, q1, F0, Fg, F1, H0, H1, ex0, exg, ex1, dirich_node, dirich_face)
        # events (cubic Hermite location within the step)
        events(ev_i, ev_f, ev_out, t, hs, T, T1, F0, C0, F1, Cap, m_off, mtab)
        accept_state(T, T1, Tprev)
        hprev = hs
        have_prev = True
        u_last = u
        reuse = not (land and jump_target)
        t = t + hs if not land else t_target
        stats[ST_ACC] += 1
        # stalled: many steps in a row far below the run's time scale make no real progress
        if stall_guard(stats, hs, t_end):
            stop_run(stats, acc, t, STATUS_STALLED)
            return k - k0
        step_range(stats, hs)
        # next step size from the error estimate
        h = hs * factor_accepted(err)
        cs[CS_H] = h
        while ibp < nbp and bp[ibp] <= t * (1 + 1e-14):
            ibp += 1
        # energy balance at every accepted step: heat in - out - change in stored enthalpy
        balance(acc, stats, H1, has_ext)
        # heat flow at fixed-temperature faces at the step end: storage rate minus conduction
        dirichlet_flows(qd_b, qd_state, H1, H0, F1, hs, dirich_node)
        # output rows inside (t - hs, t]: exact at the step end, cubic Hermite inside
        k = dense_output(k, k1, t, hs, land, t_target, t_out, Tprev, T, F0, C0, F1, Cap, q0,
                         q1, hc0, hr0, hcw, hrw, ex0, ex1, acc_prev, acc, qd_state, qd_b,
                         dirich_node, dirich_sched, dirich_face, s_off, stab, nf, T_out,
                         qf_out, E_out, P_out, hc_out, hr_out, R, dx)
        carry_step_end(qd_state, qd_b, acc_prev, acc)
        # resume state after every accepted step, so that a stop anywhere can be continued
        resume_save(ks, ibp, hprev, have_prev, reuse, after_jump, u_last)
        nsteps += 1
        if nsteps >= max_steps:
            break
    acc[acc.shape[0] - 1] = t
    stats[ST_T] = t
    return k - k0


@njit(cache=True)
def steady(T, t, u_ctl, node_i, node_f, chains, face_i, face_f, hpar, m_off, mtab, s_off, stab,
           ch_i, ch_f, ctl_i, ctl_f, dirich_node, dirich_sched, qf, hc, hr, extra, tol, max_iter):
    """Newton solve of the steady equations F(T) = 0 (Dirichlet rows T = T_set(t)).

    ``T`` holds the initial guess and returns the solution [K].  Returns (iterations, last
    correction [K]); iterations < 0 means no convergence.
    """
    N = node_i.shape[0]
    nun = T.shape[0]
    has_ch = ch_i[CHI_PRESENT] == 1
    F = np.empty(nun)
    Cap = np.empty(nun)
    H = np.empty(nun)
    Jd = np.empty(nun)
    Jl = np.empty(nun)
    Ju = np.empty(nun)
    Jcol = np.empty(nun)
    Jrow = np.empty(nun)
    R = np.empty(nun)
    dx = np.empty(nun)
    wc = np.empty(nun)
    wy = np.empty(nun)
    wz = np.empty(nun)
    nd = dirich_node.shape[0]
    for k in range(nd):
        T[dirich_node[k]] = sched_eval(s_off, stab, dirich_sched[k], t, 0.0)
    mx = 0.0
    for it in range(max_iter):
        assemble(T, t, 0.0, u_ctl, node_i, node_f, chains, face_i, face_f, hpar, m_off, mtab,
                 s_off, stab, ch_i, ch_f, ctl_i, ctl_f, F, Cap, H, Jd, Jl, Ju, Jcol, Jrow, qf, hc,
                 hr, extra)
        for i in range(nun):
            R[i] = F[i]
        _newton_matrix(Cap, 0.0, 1.0, Jd, Jl, Ju, Jcol, Jrow, dirich_node, R)
        solve_arrow(Jd, Jl, Ju, Jcol, Jrow, chains, N, has_ch, R, dx, wc, wy, wz)
        mx = _apply_correction(T, dx, 100.0)
        if mx < 0.0:
            return -1, 1e300
        if mx < tol:
            assemble(T, t, 0.0, u_ctl, node_i, node_f, chains, face_i, face_f, hpar, m_off,
                     mtab, s_off, stab, ch_i, ch_f, ctl_i, ctl_f, F, Cap, H, Jd, Jl, Ju, Jcol,
                     Jrow, qf, hc, hr, extra)
            return it + 1, mx
    return -1, mx
