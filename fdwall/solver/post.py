"""Compiled post-processing: enthalpy of every node half at stored output times."""
from __future__ import annotations

import numpy as np
from numba import njit

from .kernels import mat_eval
from .layout import CHI_CAPACITY, CHI_PRESENT, NF_VOL_L, NF_VOL_R, NI_MAT_L, NI_MAT_R


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
            m = node_i[i, NI_MAT_L]
            if m >= 0:
                Hh[r, i, 0] = node_f[i, NF_VOL_L] * mat_eval(m_off, mtab, m, T[r, i])[3]
            m = node_i[i, NI_MAT_R]
            if m >= 0:
                Hh[r, i, 1] = node_f[i, NF_VOL_R] * mat_eval(m_off, mtab, m, T[r, i])[3]
        if ch_i[CHI_PRESENT] == 1:
            Hc[r] = mat_eval(m_off, mtab, ch_i[CHI_CAPACITY], T[r, N])[3]
    return Hh, Hc
