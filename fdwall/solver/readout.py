"""Temperatures read between two nodes (sensors, events, depth read-outs), on the Python side.

Layer 6 (solver); imports the system (layer 5) and the array layouts.  The twin of the compiled
:func:`fdwall.solver.kernels.read_between` for numpy arrays (a whole time history at once),
used by the drivers (the heater state at t = 0, the steady controller's sensor) and the result
(a temperature at a depth).

Physics: between two nodes a and b in one material the steady heat flow is the same through
every surface between them, so the Kirchhoff integral K(T) = int k dT [W/m] is linear in the
coordinate g in which steady conduction is uniform: g = x (slab), ln r (cylinder), -1/r
(sphere).  With the geometry weight w = (g_b - g) / (g_b - g_a) on node a
(:func:`fdwall.system.locate_depth`), K(T) = w K(T_a) + (1 - w) K(T_b), and T follows by
inverting K (Newton steps with k as the derivative).  That is exact at steady state for any
k(T) given as a table (k piecewise linear in T, so K is its exact piecewise-quadratic
integral), in all three geometries; with a constant k it is the linear read-out itself.
"""
from __future__ import annotations

import numpy as np

from ..system import locate_depth, readout_material
from .layout import CF_SENSOR_W, CI_SENSOR_A, CI_SENSOR_B, CI_SENSOR_MAT, MT_K, MT_KINT, MT_T

__all__ = ["kirchhoff", "read_between", "sensor_temperature", "temperature_at"]


def kirchhoff(m_off, mtab, mat, T):
    """Conductivity k [W/m/K] and Kirchhoff integral K = int k dT [W/m] of material ``mat``
    at temperatures ``T`` [K] (any shape), as :func:`fdwall.solver.kernels.mat_eval` gives
    them: k piecewise linear between the table knots, constant outside the table."""
    lo, hi = int(m_off[mat]), int(m_off[mat + 1])
    Tt, kt, Kt = mtab[MT_T, lo:hi], mtab[MT_K, lo:hi], mtab[MT_KINT, lo:hi]
    T = np.asarray(T, dtype=float)
    if Tt.size == 1:
        return np.full(T.shape, kt[0]), Kt[0] + kt[0] * (T - Tt[0])
    i = np.clip(np.searchsorted(Tt, T, side="right") - 1, 0, Tt.size - 2)
    Tc = np.clip(T, Tt[0], Tt[-1])
    d = Tc - Tt[i]
    k = kt[i] + (kt[i + 1] - kt[i]) * d / (Tt[i + 1] - Tt[i])
    K = Kt[i] + 0.5 * d * (kt[i] + k)
    # constant k outside the table: extend K along the end value
    K = K + k * (T - Tc)
    return k, K


def read_between(Ta, Tb, w, mat, m_off, mtab):
    """Temperature [K] at a point between nodes a and b (at ``Ta``, ``Tb`` [K], arrays of one
    shape or scalars) with geometry weight ``w`` on a [-] in material ``mat`` (-1: read
    linearly in T); see the module docstring.  Same result as the compiled read-out to
    round-off."""
    Ta = np.asarray(Ta, dtype=float)
    Tb = np.asarray(Tb, dtype=float)
    y = w * Ta + (1.0 - w) * Tb
    if mat < 0 or w == 1.0 or w == 0.0:
        return y
    _, Ka = kirchhoff(m_off, mtab, mat, Ta)
    _, Kb = kirchhoff(m_off, mtab, mat, Tb)
    Kx = w * Ka + (1.0 - w) * Kb
    lo, hi = np.minimum(Ta, Tb), np.maximum(Ta, Tb)
    for _ in range(30):
        k, K = kirchhoff(m_off, mtab, mat, y)
        if not np.all(k > 0.0):
            return w * Ta + (1.0 - w) * Tb
        yn = np.clip(y + (Kx - K) / k, lo, hi)
        dy = np.max(np.abs(yn - y)) if yn.size else 0.0
        y = yn
        if dy <= 1e-13 * max(1.0, float(np.max(np.abs(y))) if y.size else 1.0):
            break
    return y


def sensor_temperature(system, T):
    """The controller's sensor reading [K] in the unknowns ``T`` [K] of ``system`` (a
    :class:`fdwall.system.System`): the read-out between its nodes."""
    ci, cf = system.ctl_i, system.ctl_f
    return float(read_between(T[ci[CI_SENSOR_A]], T[ci[CI_SENSOR_B]], cf[CF_SENSOR_W],
                              int(ci[CI_SENSOR_MAT]), system.m_off, system.mtab))


def temperature_at(system, T, wall, depth):
    """Temperature [K] at ``depth`` [m] below the inner face of solved wall ``wall`` (index
    into ``system.meshes``) for unknowns ``T`` [K], shape (n,) or (n_time, n): the
    read-out between the two nodes around that depth (exact at steady state for any k(T)
    in slab, cylinder and sphere)."""
    m, o = system.meshes[wall], system.offsets[wall]
    a, b, w = locate_depth(system.walls[wall], m, depth)
    mat = readout_material(system.node_i, system.m_off, system.mtab, o + a, o + b,
                           system.n_nodes)
    T = np.asarray(T, dtype=float)
    return read_between(T[..., o + a], T[..., o + b], w, mat, system.m_off, system.mtab)
