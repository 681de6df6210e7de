"""Peer: a hand-written fixed-step backward-Euler kernel (numba), the floor for a first-order
method.  Enthalpy form H(T1) - H(T0) = dt * F(T1, t1), solved by Newton with a Thomas solve
of the tridiagonal Jacobian at every iteration.  Written for the benchmark.
"""
from __future__ import annotations

import numpy as np
from numba import njit

from .. import problems as P
from .fvkernel import assemble, thomas


@njit(cache=True)
def be_integrate(T, t_out, nsub, t_off, flux, vl, vr, ml, mr, g, mlink, mT, mk, mK, mc, mH,
                 a_in, a_out, h_out, eps_out, t_amb, newton_tol, T_out, stats):
    """Backward Euler from t_out[0] with ``nsub`` equal steps per output interval.

    The heater flux is ``flux`` [W/m2] for t < t_off and 0 after (t_off must be an output
    time or a step boundary for a fair comparison).  stats: [steps, Newton iterations].
    """
    n = T.shape[0]
    F = np.empty(n)
    Cap = np.empty(n)
    H = np.empty(n)
    H0 = np.empty(n)
    Jd = np.empty(n)
    Jl = np.empty(n)
    Ju = np.empty(n)
    R = np.empty(n)
    dx = np.empty(n)
    w1 = np.empty(n)
    w2 = np.empty(n)
    T1 = np.empty(n)
    for i in range(n):
        T_out[0, i] = T[i]
    for k in range(1, t_out.shape[0]):
        dt = (t_out[k] - t_out[k - 1]) / nsub
        for s in range(nsub):
            t1 = t_out[k - 1] + (s + 1) * dt
            # the flux over the step (t1 - dt, t1]: on if the step ends at or before t_off
            q = flux if t1 <= t_off * (1.0 + 1e-12) else 0.0
            assemble(T, q, vl, vr, ml, mr, g, mlink, mT, mk, mK, mc, mH, a_in, a_out, h_out,
                     eps_out, t_amb, F, Cap, H0, Jd, Jl, Ju)
            for i in range(n):
                T1[i] = T[i] + dt * F[i] / Cap[i]      # explicit predictor
            for it in range(30):
                assemble(T1, q, vl, vr, ml, mr, g, mlink, mT, mk, mK, mc, mH, a_in, a_out,
                         h_out, eps_out, t_amb, F, Cap, H, Jd, Jl, Ju)
                for i in range(n):
                    R[i] = -(H[i] - H0[i] - dt * F[i])
                    Jd[i] = Cap[i] - dt * Jd[i]
                    Jl[i] = -dt * Jl[i]
                    Ju[i] = -dt * Ju[i]
                thomas(Jl, Jd, Ju, R, dx, w1, w2)
                mx = 0.0
                for i in range(n):
                    T1[i] += dx[i]
                    if abs(dx[i]) > mx:
                        mx = abs(dx[i])
                stats[1] += 1
                if mx < newton_tol:
                    break
            for i in range(n):
                T[i] = T1[i]
            stats[0] += 1
        for i in range(n):
            T_out[k, i] = T[i]


def solve(fv, nsub, duration=P.DURATION, interval=P.OUTPUT_INTERVAL, newton_tol=1e-6):
    """Run the BE kernel on an FVProblem with ``nsub`` steps per output interval.

    Returns (times [s], T (n_out, n) [K], stats dict).
    """
    t_out = P.output_times(duration, interval)
    T = np.full(fv.n, P.T0)
    T_out = np.empty((t_out.size, fv.n))
    st = np.zeros(2)
    be_integrate(T, t_out, int(nsub), fv.t_off, fv.flux, fv.vl, fv.vr, fv.ml, fv.mr, fv.g,
                 fv.mlink, fv.mT, fv.mk, fv.mK, fv.mc, fv.mH, fv.a_in, fv.a_out, P.H_OUT,
                 P.EPS_OUT, P.T_AMB, newton_tol, T_out, st)
    return t_out, T_out, {"steps": int(st[0]), "newton": int(st[1])}
