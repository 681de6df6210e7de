"""Peer for problem (c): the fixed-step backward-Euler kernel extended to an enclosure, several
walls of one construction (different areas and outer films) coupled through their inner
faces to a lumped chamber node with a thermostat-controlled heater.  Written for the
benchmark.

Each Newton iteration solves the bordered system (one tridiagonal block per wall, the chamber
row and column) by a Schur complement: two Thomas solves per wall, then the scalar chamber
equation.  The thermostat is sampled at the start of every step (no event location): its
switching time is resolved to one step, which is what a fixed-step code gives.
"""
from __future__ import annotations

import numpy as np
from numba import njit

from .. import problems as P
from .fvkernel import assemble, thomas


@njit(cache=True)
def be_enclosure(Tw, Tc0, t_out, nsub, areas, h_out, h_in, cap_ch, ua, t_amb, eps_out,
                 power, setpoint, band, t_off, vl, vr, ml, mr, g, mlink, mT, mk, mK, mc, mH,
                 newton_tol, Tw_out, Tc_out, stats):
    """Integrate walls ``Tw`` (nw, n) [K] and chamber ``Tc0`` [K] with ``nsub`` steps per
    output interval.  vl, vr, g are per unit area (slab of 1 m2), scaled by each wall's area."""
    nw, n = Tw.shape
    F = np.empty(n)
    Cap = np.empty(n)
    H = np.empty(n)
    Jd = np.empty(n)
    Jl = np.empty(n)
    Ju = np.empty(n)
    R = np.empty((nw, n))
    Md = np.empty((nw, n))
    Ml = np.empty((nw, n))
    Mu = np.empty((nw, n))
    H0 = np.empty((nw, n))
    y = np.empty(n)
    z = np.empty(n)
    e0 = np.zeros(n)
    w1 = np.empty(n)
    w2 = np.empty(n)
    T1 = Tw.copy()
    Y = np.empty((nw, n))
    Z = np.empty((nw, n))
    vls = np.empty((nw, n))
    vrs = np.empty((nw, n))
    gs = np.empty((nw, n - 1))
    for j in range(nw):
        for i in range(n):
            vls[j, i] = vl[i] * areas[j]
            vrs[j, i] = vr[i] * areas[j]
        for i in range(n - 1):
            gs[j, i] = g[i] * areas[j]
    Tc = Tc0
    on = 1.0 if Tc < setpoint else 0.0
    for j in range(nw):
        for i in range(n):
            Tw_out[0, j, i] = Tw[j, i]
    Tc_out[0] = Tc
    for k in range(1, t_out.shape[0]):
        dt = (t_out[k] - t_out[k - 1]) / nsub
        for s in range(nsub):
            t0 = t_out[k - 1] + s * dt
            t1 = t0 + dt
            # thermostat sampled at the start of the step
            if on > 0.5 and Tc >= setpoint + 0.5 * band:
                on = 0.0
            elif on < 0.5 and Tc <= setpoint - 0.5 * band:
                on = 1.0
            P_h = power * on if t1 <= t_off * (1.0 + 1e-12) else 0.0
            for j in range(nw):
                assemble(Tw[j], 0.0, vls[j], vrs[j], ml, mr, gs[j], mlink, mT, mk, mK, mc, mH,
                         areas[j], areas[j], h_out[j], eps_out, t_amb, F, Cap, H, Jd, Jl, Ju)
                for i in range(n):
                    H0[j, i] = H[i]
                    T1[j, i] = Tw[j, i]
            Tc1 = Tc
            for it in range(30):
                # chamber balance: heater - walls - losses
                Fc = P_h - ua * (Tc1 - t_amb)
                Dc = cap_ch + dt * ua
                Rc = 0.0
                for j in range(nw):
                    assemble(T1[j], 0.0, vls[j], vrs[j], ml, mr, gs[j], mlink, mT, mk, mK, mc,
                             mH, areas[j], areas[j], h_out[j], eps_out, t_amb, F, Cap, H, Jd,
                             Jl, Ju)
                    gin = areas[j] * h_in
                    q = gin * (Tc1 - T1[j, 0])
                    F[0] += q
                    Jd[0] -= gin
                    Fc -= q
                    Dc += dt * gin
                    for i in range(n):
                        R[j, i] = -(H[i] - H0[j, i] - dt * F[i])
                        Md[j, i] = Cap[i] - dt * Jd[i]
                        Ml[j, i] = -dt * Jl[i]
                        Mu[j, i] = -dt * Ju[i]
                Rc = -(cap_ch * (Tc1 - Tc) - dt * Fc)
                # Schur complement on the chamber unknown
                S = Dc
                r = Rc
                for j in range(nw):
                    gin = areas[j] * h_in
                    thomas(Ml[j], Md[j], Mu[j], R[j], y, w1, w2)
                    e0[0] = -dt * gin            # d(wall residual row 0)/dTc, negated form
                    thomas(Ml[j], Md[j], Mu[j], e0, z, w1, w2)
                    e0[0] = 0.0
                    for i in range(n):
                        Y[j, i] = y[i]
                        Z[j, i] = z[i]
                    # chamber row: -dt * gin on the wall's inner node
                    S -= (-dt * gin) * z[0]
                    r -= (-dt * gin) * y[0]
                dTc = r / S
                mx = abs(dTc)
                Tc1 += dTc
                for j in range(nw):
                    for i in range(n):
                        d = Y[j, i] - Z[j, i] * dTc
                        T1[j, i] += d
                        if abs(d) > mx:
                            mx = abs(d)
                stats[1] += 1
                if mx < newton_tol:
                    break
            for j in range(nw):
                for i in range(n):
                    Tw[j, i] = T1[j, i]
            Tc = Tc1
            stats[0] += 1
        for j in range(nw):
            for i in range(n):
                Tw_out[k, j, i] = Tw[j, i]
        Tc_out[k] = Tc


def solve(x_nodes, nsub, newton_tol=1e-6):
    """Problem (c) on the slab nodes ``x_nodes`` [m] (one construction for every wall).

    Returns (times [s], face temperatures (n_out, 2 * n_walls) [K] ordered like fdwall's faces
    (wall j inner = 2j, outer = 2j + 1), chamber temperature (n_out,) [K], stats dict).
    """
    spec = P.enclosure_spec()
    fv = P.fv_problem(x_nodes)
    nw = len(spec["areas"])
    t_out = P.output_times()
    Tw = np.full((nw, fv.n), P.T0)
    Tw_out = np.empty((t_out.size, nw, fv.n))
    Tc_out = np.empty(t_out.size)
    st = np.zeros(2)
    be_enclosure(Tw, P.T0, t_out, int(nsub), np.asarray(spec["areas"], float),
                 np.asarray(spec["h_out"], float), spec["h_in"], spec["capacity"],
                 spec["extra_ua"], P.T_AMB, P.EPS_OUT, spec["power"], spec["setpoint"],
                 spec["band"], P.HEAT_OFF, fv.vl, fv.vr, fv.ml, fv.mr, fv.g, fv.mlink, fv.mT,
                 fv.mk, fv.mK, fv.mc, fv.mH, newton_tol, Tw_out, Tc_out, st)
    faces = np.empty((t_out.size, 2 * nw))
    faces[:, 0::2] = Tw_out[:, :, 0]
    faces[:, 1::2] = Tw_out[:, :, -1]
    return t_out, faces, Tc_out, {"steps": int(st[0]), "newton": int(st[1]),
                                  "nodes": nw * fv.n + 1}
