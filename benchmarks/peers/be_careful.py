"""Peer: a fixed-step backward-Euler kernel (numba) written as a careful engineer would write
it for a 1-D wall with k(T) and cp(T) tables.  Written for the benchmark, independently of
fdwall's kernels and of the suite's first fixed-step peer (:mod:`benchmarks.peers.be_kernel`).

Equations (vertex-centred finite volumes, :class:`benchmarks.problems.FVProblem`):
enthalpy form ``H(T1) - H(T0) = dt * F(T1, t1)`` per node, link flow
``g * (K(T_i) - K(T_i+1))`` with the Kirchhoff integral ``K = int k dT``, outer face
convection plus grey radiation (Stefan-Boltzmann).

What makes it careful, against the first peer:

- one assembly per Newton iteration: no separate predictor assembly; Newton starts from the
  linear extrapolation ``2 T_n - T_n-1`` of the last two steps (from ``T_n`` on the first step
  and on the step right after a jump in the heater flux, where an extrapolation across the
  jump would only hurt);
- properties from precomputed per-segment coefficients (k, K, rho*cp and H are linear or
  quadratic in ``T - T_j`` on each table segment, constant-property extensions beyond the
  table), looked up from a remembered segment index per node (one comparison when the
  temperature stays in its segment, no search from scratch);
- a node evaluates each of its materials once (twice only on an interface);
- assembly, forward elimination of the Thomas solve, and the back substitution with the
  Newton update and its convergence test are three tight loops over the nodes;
- a Newton tolerance on the largest temperature update matched to the accuracy sought
  (default 0.01 K: 1 % of the 1-K heated-face criterion; the accepted iterate is the
  updated one, whose error is of the order of the square of that update).
"""
from __future__ import annotations

import numpy as np
from numba import njit

from .. import problems as P

SIGMA = 5.670374419e-8   # Stefan-Boltzmann constant [W/m2/K4] (CODATA 2018)
BIG = 1.0e30


def segment_tables(fv):
    """Per-segment coefficients of every material of an FVProblem.

    Returns ``edges`` (nm, ns+1) [K] and ``coef`` (nm, ns, 8): for segment s of material m,
    with ``d = T - T_s``: ``k = k_s + bk d``, ``K = K_s + d (k_s + bk d / 2)``,
    ``c = c_s + bc d``, ``H = H_s + d (c_s + bc d / 2)``; coef holds
    ``(T_s, k_s, bk, K_s, c_s, bc, H_s, bk / 2)`` (bk/2 last, unused by the kernel's
    derivative).  Segment 0 extends the first knot downwards and the last segment the last
    knot upwards, with constant properties (as the tables are read elsewhere in the suite).
    """
    mT, mk, mK, mc, mH = fv.mT, fv.mk, fv.mK, fv.mc, fv.mH
    nm, nk = mT.shape
    ns = nk + 1
    edges = np.empty((nm, ns + 1))
    coef = np.zeros((nm, ns, 8))
    for m in range(nm):
        edges[m, 0] = -BIG
        edges[m, 1:nk + 1] = mT[m]
        edges[m, ns] = BIG
        # below the first knot: constant k and c from the first knot
        coef[m, 0] = (mT[m, 0], mk[m, 0], 0.0, mK[m, 0], mc[m, 0], 0.0, mH[m, 0], 0.0)
        for j in range(nk - 1):
            dT = mT[m, j + 1] - mT[m, j]
            bk = (mk[m, j + 1] - mk[m, j]) / dT
            bc = (mc[m, j + 1] - mc[m, j]) / dT
            coef[m, j + 1] = (mT[m, j], mk[m, j], bk, mK[m, j], mc[m, j], bc, mH[m, j],
                              0.5 * bk)
        coef[m, nk] = (mT[m, nk - 1], mk[m, nk - 1], 0.0, mK[m, nk - 1], mc[m, nk - 1], 0.0,
                       mH[m, nk - 1], 0.0)
    return edges, coef


@njit(cache=True)
def be_careful(T, t_out, nsub, t_off, flux, vl, vr, ml, mr, g, edges, coef, a_in, a_out,
               h_out, eps_out, t_amb, newton_tol, max_newton, T_out, stats):
    """Backward Euler from t_out[0], ``nsub`` equal steps per output interval.

    Heater flux ``flux`` [W/m2] on the inner face for steps ending at or before ``t_off`` [s],
    0 after (t_off must fall on a step boundary).  ``T`` [K] (n,) is advanced in place;
    ``T_out`` (n_out, n) [K] receives the outputs; ``stats`` [steps, Newton iterations,
    Newton non-convergences].
    """
    n = T.shape[0]
    H0 = np.empty(n)      # enthalpy at the start of the step [J]
    Tp = np.empty(n)      # previous step's temperatures [K]
    T1 = np.empty(n)      # Newton iterate [K]
    KL = np.empty(n)      # K at the node in its left material [W/m]
    KR = np.empty(n)      # K at the node in its right material [W/m]
    kL = np.empty(n)      # k at the node in its left material [W/m/K]
    kR = np.empty(n)      # k at the node in its right material [W/m/K]
    Hn = np.empty(n)      # node enthalpy [J]
    Cn = np.empty(n)      # node capacity dH/dT [J/K]
    cw = np.empty(n)      # Thomas work: modified super-diagonal
    dw = np.empty(n)      # Thomas work: modified right-hand side
    sl = np.empty(n, np.int64)   # remembered segment, left material
    sr = np.empty(n, np.int64)   # remembered segment, right material
    for i in range(n):
        sl[i] = 1
        sr[i] = 1
        Tp[i] = T[i]
        T_out[0, i] = T[i]
    q_prev = flux if t_out[0] < t_off else 0.0
    first = True
    for k in range(1, t_out.shape[0]):
        dt = (t_out[k] - t_out[k - 1]) / nsub
        for s in range(nsub):
            t1 = t_out[k - 1] + (s + 1) * dt
            q = flux if t1 <= t_off * (1.0 + 1e-12) else 0.0
            jump = q != q_prev
            q_prev = q
            # Newton start: linear extrapolation of the last two steps (not across a jump)
            for i in range(n):
                if first or jump:
                    T1[i] = T[i]
                else:
                    T1[i] = 2.0 * T[i] - Tp[i]
            converged = False
            start = first
            for it in range(max_newton):
                # --- pass 1: properties at the iterate (remembered segment index) ---
                for i in range(n):
                    x = T1[i]
                    h = 0.0
                    c = 0.0
                    hh = 0.0
                    cc = 0.0
                    m = ml[i]
                    if m >= 0:
                        j = sl[i]
                        while x < edges[m, j]:
                            j -= 1
                        while x > edges[m, j + 1]:
                            j += 1
                        sl[i] = j
                        d = x - coef[m, j, 0]
                        kL[i] = coef[m, j, 1] + coef[m, j, 2] * d
                        KL[i] = coef[m, j, 3] + d * (coef[m, j, 1] + coef[m, j, 7] * d)
                        cc = coef[m, j, 4] + coef[m, j, 5] * d
                        hh = coef[m, j, 6] + d * (coef[m, j, 4] + 0.5 * coef[m, j, 5] * d)
                        h += vl[i] * hh
                        c += vl[i] * cc
                    m2 = mr[i]
                    if m2 >= 0:
                        if m2 == m:
                            kR[i] = kL[i]
                            KR[i] = KL[i]
                            h += vr[i] * hh
                            c += vr[i] * cc
                        else:
                            j = sr[i]
                            while x < edges[m2, j]:
                                j -= 1
                            while x > edges[m2, j + 1]:
                                j += 1
                            sr[i] = j
                            d = x - coef[m2, j, 0]
                            kR[i] = coef[m2, j, 1] + coef[m2, j, 2] * d
                            KR[i] = coef[m2, j, 3] + d * (coef[m2, j, 1] + coef[m2, j, 7] * d)
                            h += vr[i] * (coef[m2, j, 6]
                                          + d * (coef[m2, j, 4] + 0.5 * coef[m2, j, 5] * d))
                            c += vr[i] * (coef[m2, j, 4] + coef[m2, j, 5] * d)
                    if start:
                        H0[i] = h          # the iterate is the initial state here
                    Hn[i] = h
                    Cn[i] = c
                start = False
                # --- pass 2: residual rows and forward elimination (Thomas) ---
                # row i: lo dx[i-1] + di dx[i] + up dx[i+1] = -(H - H0 - dt F)
                cprev = 0.0
                dprev = 0.0
                for i in range(n):
                    F = 0.0
                    di = Cn[i]
                    lo = 0.0
                    up = 0.0
                    if i > 0:
                        gq = g[i - 1]
                        F += gq * (KR[i - 1] - KL[i])
                        di += dt * gq * kL[i]
                        lo = -dt * gq * kR[i - 1]
                    if i < n - 1:
                        gq = g[i]
                        F -= gq * (KR[i] - KL[i + 1])
                        di += dt * gq * kR[i]
                        up = -dt * gq * kL[i + 1]
                    if i == 0:
                        F += a_in * q
                    if i == n - 1:
                        Ts = T1[i]
                        T3 = Ts * Ts * Ts
                        F -= a_out * (h_out * (Ts - t_amb)
                                      + eps_out * SIGMA * (T3 * Ts - t_amb ** 4))
                        di += dt * a_out * (h_out + 4.0 * eps_out * SIGMA * T3)
                    r = -(Hn[i] - H0[i] - dt * F)
                    inv = 1.0 / (di - lo * cprev)     # one division per row
                    cprev = up * inv
                    dprev = (r - lo * dprev) * inv
                    cw[i] = cprev
                    dw[i] = dprev
                # --- back substitution, update, convergence ---
                dx = dw[n - 1]
                T1[n - 1] += dx
                mx = abs(dx)
                for i in range(n - 2, -1, -1):
                    dx = dw[i] - cw[i] * dx
                    dw[i] = dx             # kept for the step-end enthalpy below
                    T1[i] += dx
                    if abs(dx) > mx:
                        mx = abs(dx)
                stats[1] += 1
                if mx < newton_tol:
                    converged = True
                    break
            if not converged:
                stats[2] += 1
            # accept: the step-end enthalpy is the next step's start.  Rather than a further
            # property pass at the final update (which moved T by < newton_tol), the capacity
            # times that update is added: the neglected term is (dc/dT) dx^2 / 2 per node
            for i in range(n):
                H0[i] = Hn[i] + Cn[i] * dw[i]
            for i in range(n):
                Tp[i] = T[i]
                T[i] = T1[i]
            first = False
            stats[0] += 1
        for i in range(n):
            T_out[k, i] = T[i]


def solve(fv, nsub, duration=P.DURATION, interval=P.OUTPUT_INTERVAL, newton_tol=0.01,
          max_newton=20, tables=None):
    """Run the careful kernel on an FVProblem with ``nsub`` steps per output interval [s].

    Returns (times [s], T (n_out, n) [K], stats dict with steps, newton, newton_failures).
    """
    t_out = P.output_times(duration, interval)
    T = np.full(fv.n, P.T0)
    T_out = np.empty((t_out.size, fv.n))
    st = np.zeros(3)
    edges, coef = segment_tables(fv) if tables is None else tables
    be_careful(T, t_out, int(nsub), fv.t_off, fv.flux, fv.vl, fv.vr, fv.ml, fv.mr, fv.g,
               edges, coef, fv.a_in, fv.a_out, P.H_OUT, P.EPS_OUT, P.T_AMB, float(newton_tol),
               int(max_newton), T_out, st)
    return t_out, T_out, {"steps": int(st[0]), "newton": int(st[1]),
                          "newton_failures": int(st[2])}


@njit(cache=True)
def thomas_bare(a, b, c, d, x, cw):
    """A bare tridiagonal solve a[i] x[i-1] + b[i] x[i] + c[i] x[i+1] = d[i] (Thomas, one
    division per row; ``cw`` work array), the floor the kernels are measured against."""
    n = b.shape[0]
    inv = 1.0 / b[0]
    cp = c[0] * inv
    dp = d[0] * inv
    cw[0] = cp
    x[0] = dp
    for i in range(1, n):
        inv = 1.0 / (b[i] - a[i] * cp)
        cp = c[i] * inv
        dp = (d[i] - a[i] * dp) * inv
        cw[i] = cp
        x[i] = dp
    for i in range(n - 2, -1, -1):
        x[i] -= cw[i] * x[i + 1]


@njit(cache=True)
def thomas_repeat(a, b, c, d, x, cw, repeats):
    """``repeats`` bare solves in a compiled loop (no call overhead in the timing); returns
    a checksum so the work cannot be dropped."""
    s = 0.0
    for r in range(repeats):
        d[0] += 1e-12
        thomas_bare(a, b, c, d, x, cw)
        s += x[0]
    return s


def time_thomas(n, repeats=None, rounds=5):
    """Median wall time of one bare Thomas solve of ``n`` unknowns [s] (a diagonally dominant
    system like a conduction Jacobian), from ``rounds`` compiled loops of ``repeats`` solves."""
    import time
    a = np.full(n, -1.0)
    c = np.full(n, -1.0)
    b = np.full(n, 2.05)
    d = np.ones(n)
    x = np.empty(n)
    cw = np.empty(n)
    thomas_repeat(a, b, c, d, x, cw, 2)
    repeats = repeats or max(10, int(2e6 // n))
    ts = []
    for _ in range(rounds):
        t0 = time.perf_counter()
        thomas_repeat(a, b, c, d, x, cw, repeats)
        ts.append((time.perf_counter() - t0) / repeats)
    return float(np.median(ts))
