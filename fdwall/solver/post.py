"""Compiled post-processing: enthalpy of every node half at stored output times."""
from __future__ import annotations

import numpy as np
from numba import njit

from .kernels import mat_eval


@njit(cache=True)
def half_enthalpy(T, node_i, node_f, m_off, mtab, ch_i):
    """Enthalpy [J] of each wall-node half (n_out, N, 2) and of the chamber (n_out,).

    ``T`` is (n_out, n_unknowns) [K].  The reference (zero) is each material table's first knot.
    """
    n_out = T.shape[0]
    N = node_i.shape[0]
    Hh = np.zeros((n_out, N, 2))
    Hc = np.zeros(n_out)
    for r in range(n_out):
        for i in range(N):
            for s in range(2):
                m = node_i[i, s]
                if m >= 0:
                    Hh[r, i, s] = node_f[i, s] * mat_eval(m_off, mtab, m, T[r, i])[3]
        if ch_i[0] == 1:
            Hc[r] = mat_eval(m_off, mtab, ch_i[1], T[r, N])[3]
    return Hh, Hc
