"""Peer: FiPy (cell-centred finite volumes) with nonlinear sweeps per time step.

The cell faces are the same points as the vertex-centred nodes of the other solvers (so the
same node set: n nodes -> n - 1 cells, each inside one layer).  Conductivity k(T) per cell,
harmonic face average; TransientTerm with coefficient rho*cp(T) (FiPy's implicit first-order
step); the heater flux and the outer-face convection + radiation enter as sources in the
first and last cell, the outer loss linearised about the current sweep.  The face
temperatures are reconstructed from the boundary-cell value and the face flux.
"""
from __future__ import annotations

import numpy as np

from .. import problems as P


def _prop_arrays(fv, T, mats):
    """k [W/m/K] and rho*cp [J/m3/K] per cell for the cell temperatures T [K]."""
    k = np.empty_like(T)
    c = np.empty_like(T)
    for m in range(fv.mT.shape[0]):
        sel = mats == m
        k[sel] = np.interp(T[sel], fv.mT[m], fv.mk[m])
        c[sel] = np.interp(T[sel], fv.mT[m], fv.mc[m])
    return k, c


def solve(fv, nsub, sweeps_tol=1e-3, max_sweeps=20, duration=P.DURATION,
          interval=P.OUTPUT_INTERVAL):
    """Run FiPy with ``nsub`` equal steps per output interval; sweeps until the largest change
    is below ``sweeps_tol`` [K].  Returns (times [s], face temperatures (n_out, 2) [K], stats)."""
    import fipy as fp
    x = fv.x
    d = np.diff(x)
    if fv.geometry == "slab":
        mesh = fp.Grid1D(dx=d)
        vol = d.copy()
        a_in, a_out = 1.0, 1.0
        mesh = mesh + ((x[0],),)
    else:
        mesh = fp.CylindricalGrid1D(dr=d, origin=(x[0],))
        vol = 0.5 * (x[1:] ** 2 - x[:-1] ** 2)      # per radian per metre, FiPy's convention
        a_in, a_out = x[0], x[-1]
    mats = fv.mlink.copy()
    T = fp.CellVariable(mesh=mesh, value=P.T0, hasOld=True)
    kc = fp.CellVariable(mesh=mesh, value=1.0)
    cc = fp.CellVariable(mesh=mesh, value=1.0)
    n = d.size
    first = np.zeros(n)
    first[0] = 1.0
    last = np.zeros(n)
    last[-1] = 1.0
    q_src = fp.CellVariable(mesh=mesh, value=0.0)      # explicit source [W/m3]
    q_imp = fp.CellVariable(mesh=mesh, value=0.0)      # implicit coefficient [W/m3/K]
    eq = (fp.TransientTerm(coeff=cc) == fp.DiffusionTerm(coeff=kc.harmonicFaceValue)
          + q_src + fp.ImplicitSourceTerm(coeff=q_imp))
    t_out = P.output_times(duration, interval)
    out = np.empty((t_out.size, 2))
    sig, h, eps, ta = P.SIGMA, P.H_OUT, P.EPS_OUT, P.T_AMB

    def faces(Tv, q_in):
        k, _ = _prop_arrays(fv, Tv, mats)
        Ti = Tv[0] + q_in * 0.5 * d[0] / k[0]
        # outer face: solve k (T_c - T_s)/(d/2) = h (T_s - ta) + eps sig (T_s^4 - ta^4)
        Ts = Tv[-1]
        g = k[-1] / (0.5 * d[-1])
        for _ in range(20):
            f = g * (Tv[-1] - Ts) - h * (Ts - ta) - eps * sig * (Ts ** 4 - ta ** 4)
            df = -g - h - 4 * eps * sig * Ts ** 3
            Ts -= f / df
        return Ti, Ts

    out[0] = P.T0        # the initial state: uniform, no gradient yet
    steps = sweeps = 0
    for kk in range(1, t_out.size):
        dt = (t_out[kk] - t_out[kk - 1]) / nsub
        for s in range(nsub):
            t1 = t_out[kk - 1] + (s + 1) * dt
            q_in = fv.flux if t1 <= fv.t_off * (1 + 1e-12) else 0.0
            T.updateOld()
            for it in range(max_sweeps):
                Tv = np.asarray(T.value).copy()
                k, c = _prop_arrays(fv, Tv, mats)
                kc.setValue(k)
                cc.setValue(c)
                # outer face through a series resistance: half cell + film (linearised rad.)
                Ts = faces(Tv, q_in)[1]
                hr = eps * sig * (Ts ** 2 + ta ** 2) * (Ts + ta)
                u = 1.0 / (0.5 * d[-1] / k[-1] + 1.0 / (h + hr))   # cell -> ambient [W/m2/K]
                q_src.setValue((first * q_in * a_in + last * u * ta * a_out) / vol)
                q_imp.setValue(-last * u * a_out / vol)
                eq.solve(var=T, dt=dt)
                sweeps += 1
                if np.max(np.abs(np.asarray(T.value) - Tv)) < sweeps_tol:
                    break
            steps += 1
        # the face temperature is continuous in time: at the switch-off instant use the flux
        # that acted up to it
        out[kk] = faces(np.asarray(T.value), fv.flux if t_out[kk] <= fv.t_off * (1 + 1e-12) else 0.0)
    return t_out, out, {"steps": steps, "sweeps": sweeps}
