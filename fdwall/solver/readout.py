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

from types import SimpleNamespace

import numpy as np

from ..system import locate_depth, readout_material
from .layout import CF_SENSOR_W, CI_SENSOR_A, CI_SENSOR_B, CI_SENSOR_MAT, MT_K, MT_KINT, MT_T

__all__ = ["kirchhoff", "read_between", "sensor_temperature", "temperature_at", "temperatures_at",
           "profile_points", "read_profile"]


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
    shape or scalars) with geometry weight ``w`` on a [-] (a scalar, or an array that
    broadcasts against ``Ta``) in material ``mat`` (-1: read linearly in T); see the module
    docstring.  Same result as the compiled read-out to round-off."""
    Ta = np.asarray(Ta, dtype=float)
    Tb = np.asarray(Tb, dtype=float)
    w = np.asarray(w, dtype=float) if np.ndim(w) else float(w)
    y = w * Ta + (1.0 - w) * Tb
    if mat < 0 or np.all(w == 1.0) or np.all(w == 0.0):
        return y
    if np.ndim(w):
        # a weight of exactly 1 or 0 reads its node alone, digit for digit
        ends = (w == 1.0) | (w == 0.0)
        Ta, Tb = np.broadcast_arrays(Ta, Tb, w)[:2]
        if np.any(ends):
            return np.where(ends, y, read_between(Ta, Tb, np.where(ends, 0.5, w), mat, m_off,
                                                  mtab))
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


def temperatures_at(system, T, wall, depths):
    """Temperatures [K] at many ``depths`` [m] below the inner face of solved wall ``wall``
    for unknowns ``T`` [K] of shape (n,) or (n_time, n): shape (len(depths),) or (n_time,
    len(depths)).  Each depth is read as :func:`temperature_at` reads it (the Kirchhoff
    read-out between its two nodes), in one pass per material."""
    m, o = system.meshes[wall], system.offsets[wall]
    depths = np.atleast_1d(np.asarray(depths, dtype=float))
    T = np.asarray(T, dtype=float)
    out = np.empty(T.shape[:-1] + depths.shape)
    rows = {}
    for i, d in enumerate(depths):
        a, b, w = locate_depth(system.walls[wall], m, float(d))
        mat = readout_material(system.node_i, system.m_off, system.mtab, o + a, o + b,
                               system.n_nodes)
        rows.setdefault(mat, []).append((i, o + a, o + b, w))
    for mat, rw in rows.items():
        i, a, b, w = (np.array(c) for c in zip(*rw))
        out[..., i] = read_between(T[..., a], T[..., b], w.astype(float), mat, system.m_off,
                                   system.mtab)
    return out


def profile_points(system, T, wall, per_cell=4):
    """A temperature profile through solved wall ``wall`` drawn finer than its mesh.

    Returns depths [m] below the inner face and temperatures [K] (shape of ``T`` [K], (n,)
    or (n_time, n), with the node axis replaced by the points): every node, and
    ``per_cell - 1`` evenly spaced points inside each cell read out with the Kirchhoff
    read-out, so the curve follows the ln r (cylinder) or 1/r (sphere) profile and the k(T)
    shape of each layer, exactly at steady state.  An interface with a contact resistance
    keeps its two nodes at one depth (a step in the curve).
    """
    m = system.meshes[wall]
    x = np.asarray(m.x - m.x[0], dtype=float)
    T = np.asarray(T, dtype=float)
    per_cell = max(int(per_cell), 1)
    s = np.arange(1, per_cell) / per_cell
    depth, src = [], []          # src: node index, or -1 for a read-out point
    for i in range(x.size):
        depth.append(x[i])
        src.append(i)
        if i + 1 < x.size and x[i + 1] > x[i]:
            depth.extend(x[i] + (x[i + 1] - x[i]) * s)
            src.extend([-1] * s.size)
    depth, src = np.array(depth), np.array(src)
    sl = system.wall_nodes(wall)
    out = np.empty(T.shape[:-1] + depth.shape)
    node = src >= 0
    out[..., node] = T[..., sl][..., src[node]]
    if np.any(~node):
        out[..., ~node] = temperatures_at(system, T, wall, depth[~node])
    return depth, out


def _material_table(material):
    """(m_off, mtab) of one material as the system packs it: rows T [K], k [W/m/K] and
    K = int k dT [W/m] (trapezoids of the piecewise-linear k, so exact)."""
    Tt, kt, _ = material.tables()
    Tt, kt = np.asarray(Tt, dtype=float), np.asarray(kt, dtype=float)
    if Tt.size < 2:
        Tt, kt = np.array([1.0, 6000.0]), np.repeat(kt, 2)
    K = np.concatenate([[0.0], np.cumsum(0.5 * (kt[1:] + kt[:-1]) * np.diff(Tt))])
    mtab = np.zeros((5, Tt.size))
    mtab[MT_T], mtab[MT_K], mtab[MT_KINT] = Tt, kt, K
    return np.array([0, Tt.size], dtype=np.int64), mtab


def read_profile(wall, x, T, depths):
    """Temperatures [K] at ``depths`` [m] below the inner face of ``wall`` (a
    :class:`fdwall.model.Wall`) from a profile given at sample depths ``x`` [m] (increasing;
    the nodes of a solved wall, with an interface of a contact resistance given twice) with
    temperatures ``T`` [K] (same length as ``x``).

    Where two neighbouring samples lie in one layer, the point between them is read with the
    Kirchhoff read-out in the wall's geometry (exact at steady state for any k(T) in slab,
    cylinder and sphere, as :func:`temperature_at`); a depth on a sample reads it (the
    first of a pair); samples that straddle an interface are read linearly in T and x (the
    profile given does not resolve that interface).
    """
    x = np.asarray(x, dtype=float)
    T = np.asarray(T, dtype=float)
    depths = np.atleast_1d(np.asarray(depths, dtype=float))
    if x.size == 1:
        return np.full(depths.shape, float(T[0]))
    edges = np.concatenate([[0.0], np.cumsum([ly.thickness for ly in wall.layers])])
    tol = 1e-12 * max(float(edges[-1]), float(np.max(np.abs(x))))
    r0 = 0.0 if wall.shape == "slab" else float(wall.inner_radius or 0.0)
    grid = SimpleNamespace(x=r0 + x)   # positions as a mesh holds them (radii off the slab)
    tables = {}
    out = np.empty(depths.shape)
    for i, d in enumerate(depths):
        d = float(min(max(d, x[0]), x[-1]))
        a, b, w = locate_depth(wall, grid, d)
        ta, tb = float(T[a]), float(T[b])
        inside = (edges > x[a] + tol) & (edges < x[b] - tol)
        if a == b or np.any(inside):
            if a != b:
                w = (x[b] - d) / (x[b] - x[a])
            out[i] = w * ta + (1.0 - w) * tb
            continue
        lay = int(np.clip(np.searchsorted(edges, 0.5 * (x[a] + x[b])) - 1, 0,
                          len(wall.layers) - 1))
        mat = wall.layers[lay].material
        if id(mat) not in tables:
            tables[id(mat)] = _material_table(mat)
        m_off, mtab = tables[id(mat)]
        out[i] = float(read_between(ta, tb, w, 0, m_off, mtab))
    return out
