"""Peer: scipy.integrate.solve_ivp(method="BDF") on the method-of-lines form
C(T) dT/dt = F(T, t) of the same vertex-centred finite-volume discretisation, with the
analytic tridiagonal Jacobian given as a sparse matrix.  The right-hand side is the compiled
assembly of :mod:`benchmarks.peers.fvkernel` (the best a careful user would write), and the run
is split at the heater switch-off so no step straddles the jump.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.integrate import BDF, solve_ivp

from .. import problems as P
from .fvkernel import assemble


class CountingBDF(BDF):
    """scipy's BDF unchanged, counting accepted steps (solve_ivp accepts a solver class)."""

    steps = 0

    def _step_impl(self):
        ok, msg = super()._step_impl()
        if ok:
            CountingBDF.steps += 1
        return ok, msg


class _MOL:
    def __init__(self, fv):
        self.fv = fv
        n = fv.n
        self.F, self.Cap, self.H = np.empty(n), np.empty(n), np.empty(n)
        self.Jd, self.Jl, self.Ju = np.empty(n), np.empty(n), np.empty(n)
        self.nfev = 0
        self.njev = 0
        # CSC pattern of a tridiagonal matrix: column j holds rows j-1, j, j+1
        rows, cols = [], []
        for j in range(n):
            for i in (j - 1, j, j + 1):
                if 0 <= i < n:
                    rows.append(i)
                    cols.append(j)
        self.rows, self.cols = np.array(rows), np.array(cols)
        self.q = fv.flux

    def _asm(self, T):
        fv = self.fv
        assemble(T, self.q, fv.vl, fv.vr, fv.ml, fv.mr, fv.g, fv.mlink, fv.mT, fv.mk, fv.mK,
                 fv.mc, fv.mH, fv.a_in, fv.a_out, P.H_OUT, P.EPS_OUT, P.T_AMB, self.F, self.Cap,
                 self.H, self.Jd, self.Jl, self.Ju)

    def rhs(self, t, T):
        self.nfev += 1
        self._asm(T)
        return self.F / self.Cap

    def jac(self, t, T):
        """d(F_i/C_i)/dT_j, with dC_i/dT_i from a finite difference of the capacity."""
        self.njev += 1
        self._asm(T)
        F, C = self.F.copy(), self.Cap.copy()
        Jd, Jl, Ju = self.Jd.copy(), self.Jl.copy(), self.Ju.copy()
        dT = 1e-4
        self._asm(T + dT)
        dC = (self.Cap - C) / dT
        n = T.size
        d = Jd / C - F * dC / C ** 2
        vals = np.empty(self.rows.size)
        # values in the order of (rows, cols)
        r, c = self.rows, self.cols
        vals[r == c] = d
        vals[r == c - 1] = (Ju / C)[:-1]
        vals[r == c + 1] = (Jl / C)[1:]
        return sp.csc_matrix((vals, (r, c)), shape=(n, n))


def solve(fv, rtol, atol, duration=P.DURATION, interval=P.OUTPUT_INTERVAL, first_step=None,
          mol_class=None):
    """Integrate with solve_ivp BDF; returns (times [s], T (n_out, n) [K], stats dict)."""
    t_out = P.output_times(duration, interval)
    mol = (mol_class or _MOL)(fv)
    T = np.full(fv.n, P.T0)
    outs = [T[None, :].copy()]
    stats = {"steps": 0, "nfev": 0, "njev": 0, "nlu": 0}
    pieces = [(0.0, min(fv.t_off, duration), fv.flux)]
    if fv.t_off < duration:
        pieces.append((fv.t_off, duration, 0.0))
    CountingBDF.steps = 0
    for a, b, q in pieces:
        mol.q = q
        te = t_out[(t_out > a) & (t_out <= b)]
        sol = solve_ivp(mol.rhs, (a, b), T, method=CountingBDF, t_eval=te, rtol=rtol, atol=atol,
                        jac=mol.jac, first_step=first_step)
        if sol.status != 0:
            raise RuntimeError(f"solve_ivp failed: {sol.message}")
        outs.append(sol.y.T)
        T = sol.y[:, -1].copy()
        stats["nfev"] += sol.nfev
        stats["njev"] += sol.njev
        stats["nlu"] += sol.nlu
    stats["steps"] = CountingBDF.steps
    return t_out, np.vstack(outs), stats


class _MOLNumpy(_MOL):
    """The same right-hand side written with numpy array operations (no compilation), as a
    typical scipy user would write it; the Jacobian is the compiled one of the parent."""

    def __init__(self, fv):
        super().__init__(fv)
        self.links = np.arange(fv.n - 1)

    @staticmethod
    def _KH(fv, m, T):
        """k, K, c, H of material array ``m`` at temperatures ``T`` (piecewise quadratic)."""
        k = np.empty_like(T)
        K = np.empty_like(T)
        c = np.empty_like(T)
        H = np.empty_like(T)
        for j in range(fv.mT.shape[0]):
            s = m == j
            if not s.any():
                continue
            Tt = fv.mT[j]
            Ts = np.clip(T[s], Tt[0], Tt[-1])
            i = np.clip(np.searchsorted(Tt, Ts) - 1, 0, Tt.size - 2)
            d = Ts - Tt[i]
            w = d / (Tt[i + 1] - Tt[i])
            kk = fv.mk[j, i] + w * (fv.mk[j, i + 1] - fv.mk[j, i])
            cc = fv.mc[j, i] + w * (fv.mc[j, i + 1] - fv.mc[j, i])
            ext = T[s] - Ts           # beyond the table: constant property, linear integral
            k[s] = kk
            c[s] = cc
            K[s] = fv.mK[j, i] + 0.5 * d * (fv.mk[j, i] + kk) + kk * ext
            H[s] = fv.mH[j, i] + 0.5 * d * (fv.mc[j, i] + cc) + cc * ext
        return k, K, c, H

    def rhs(self, t, T):
        self.nfev += 1
        fv = self.fv
        _, Ka, _, _ = self._KH(fv, fv.mlink, T[:-1])
        _, Kb, _, _ = self._KH(fv, fv.mlink, T[1:])
        q = fv.g * (Ka - Kb)
        F = np.zeros_like(T)
        F[:-1] -= q
        F[1:] += q
        cap = np.zeros_like(T)
        _, _, cl, _ = self._KH(fv, np.maximum(fv.ml[1:], 0), T[1:])
        _, _, cr, _ = self._KH(fv, np.maximum(fv.mr[:-1], 0), T[:-1])
        cap[1:] += fv.vl[1:] * cl
        cap[:-1] += fv.vr[:-1] * cr
        F[0] += fv.a_in * self.q
        Ts = T[-1]
        F[-1] -= fv.a_out * (P.H_OUT * (Ts - P.T_AMB) + P.EPS_OUT * P.SIGMA * (Ts ** 4 - P.T_AMB ** 4))
        return F / cap


def solve_numpy_rhs(fv, rtol, atol, duration=P.DURATION, interval=P.OUTPUT_INTERVAL):
    """As :func:`solve` with the numpy right-hand side."""
    return solve(fv, rtol, atol, duration, interval, mol_class=_MOLNumpy)
