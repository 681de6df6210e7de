"""Compiled assembly of the vertex-centred finite-volume equations of problems (a)/(b),
shared by the peers (scipy BDF right-hand side, the fixed-step backward-Euler kernel).

Written for the benchmark independently of fdwall's kernels: property tables are evaluated
here, the Kirchhoff transform gives the link conductance, and the radiation term uses the
Stefan-Boltzmann law.  Arrays only (see :class:`benchmarks.problems.FVProblem`).
"""
from __future__ import annotations

from numba import njit

SIGMA = 5.670374419e-8   # Stefan-Boltzmann constant [W/m2/K4] (CODATA 2018)


@njit(cache=True)
def prop(mT, mk, mK, mc, mH, m, T):
    """k [W/m/K], K = int k dT [W/m], c = rho cp [J/m3/K], H = int c dT [J/m3] of material m."""
    Tt = mT[m]
    n = Tt.shape[0]
    if T <= Tt[0]:
        d = T - Tt[0]
        return mk[m, 0], mK[m, 0] + mk[m, 0] * d, mc[m, 0], mH[m, 0] + mc[m, 0] * d
    if T >= Tt[n - 1]:
        d = T - Tt[n - 1]
        return (mk[m, n - 1], mK[m, n - 1] + mk[m, n - 1] * d, mc[m, n - 1],
                mH[m, n - 1] + mc[m, n - 1] * d)
    i = 0
    while Tt[i + 1] < T:      # tables are short (< 10 knots): a linear scan is fastest
        i += 1
    d = T - Tt[i]
    w = d / (Tt[i + 1] - Tt[i])
    k = mk[m, i] + w * (mk[m, i + 1] - mk[m, i])
    c = mc[m, i] + w * (mc[m, i + 1] - mc[m, i])
    return k, mK[m, i] + 0.5 * d * (mk[m, i] + k), c, mH[m, i] + 0.5 * d * (mc[m, i] + c)


@njit(cache=True)
def assemble(T, q_in, vl, vr, ml, mr, g, mlink, mT, mk, mK, mc, mH, a_in, a_out, h_out,
             eps_out, t_amb, F, Cap, H, Jd, Jl, Ju):
    """Net heat flow F [W] into each node, capacity Cap = dH/dT [J/K], enthalpy H [J] and the
    tridiagonal Jacobian dF/dT (Jd diagonal, Jl sub, Ju super) [W/K].

    q_in: heater flux on the inner face [W/m2]; the outer face loses h_out*(T - t_amb) plus
    eps_out*sigma*(T^4 - t_amb^4) [W/m2].
    """
    n = T.shape[0]
    for i in range(n):
        F[i] = 0.0
        Jd[i] = 0.0
        Jl[i] = 0.0
        Ju[i] = 0.0
        Cap[i] = 0.0
        H[i] = 0.0
    for i in range(n):
        Ti = T[i]
        if ml[i] >= 0:
            k, K, c, h = prop(mT, mk, mK, mc, mH, ml[i], Ti)
            Cap[i] += vl[i] * c
            H[i] += vl[i] * h
        if mr[i] >= 0:
            k, K, c, h = prop(mT, mk, mK, mc, mH, mr[i], Ti)
            Cap[i] += vr[i] * c
            H[i] += vr[i] * h
    for i in range(n - 1):
        m = mlink[i]
        ki, Ki, ci, hi = prop(mT, mk, mK, mc, mH, m, T[i])
        kj, Kj, cj, hj = prop(mT, mk, mK, mc, mH, m, T[i + 1])
        q = g[i] * (Ki - Kj)
        F[i] -= q
        F[i + 1] += q
        Jd[i] -= g[i] * ki
        Ju[i] += g[i] * kj
        Jl[i + 1] += g[i] * ki
        Jd[i + 1] -= g[i] * kj
    F[0] += a_in * q_in
    Ts = T[n - 1]
    F[n - 1] -= a_out * (h_out * (Ts - t_amb) + eps_out * SIGMA * (Ts ** 4 - t_amb ** 4))
    Jd[n - 1] -= a_out * (h_out + 4.0 * eps_out * SIGMA * Ts ** 3)


@njit(cache=True)
def thomas(a, b, c, d, x, cp, dp):
    """Solve the tridiagonal system a[i] x[i-1] + b[i] x[i] + c[i] x[i+1] = d[i]."""
    n = b.shape[0]
    cp[0] = c[0] / b[0]
    dp[0] = d[0] / b[0]
    for i in range(1, n):
        m = b[i] - a[i] * cp[i - 1]
        cp[i] = c[i] / m
        dp[i] = (d[i] - a[i] * dp[i - 1]) / m
    x[n - 1] = dp[n - 1]
    for i in range(n - 2, -1, -1):
        x[i] = dp[i] - cp[i] * x[i + 1]
