"""Vertex-centred finite-volume mesh of one wall.

Nodes sit on both faces and on every interface, so skin and interface temperatures are nodal
values.  Inside a layer the nodes follow the smooth map ``x(s) = s - beta*sin(2*pi*s)/(2*pi)``
(``s`` uniform on [0, 1]), which makes cells next to faces and interfaces ``(1-beta)/(1+beta)``
times the size of mid-layer cells; because the map is smooth, refining keeps second order.

Each control volume is split at the interface so every half belongs to one material.  With a
contact resistance, the interface carries two nodes joined by the contact conductance.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["WallMesh", "mesh_wall", "default_cells", "cell_counts", "shape_key"]

GRADING_BETA = 0.5


@dataclass(frozen=True)
class WallMesh:
    """Arrays describing one meshed wall (all SI).

    Attributes
    ----------
    x : ndarray
        Node radius (cylinder/sphere) or depth from the inner face (slab) [m].
    layer_of_node_left, layer_of_node_right : ndarray of int
        Layer owning the left/right half volume of each node (-1: none).
    vol_left, vol_right : ndarray
        Left/right half volumes of each node [m3].
    link_layer : ndarray of int
        For the link from node i to i+1: the layer index, -1 for a contact link, -2 after the
        last node.
    link_g : ndarray
        Geometry factor of a material link [m] (conductance = g * mean k), or the conductance of
        a contact link [W/K].
    interface_nodes : list of int
        Node index of each interface (the inner node of a contact pair).
    layer_nodes : list of (int, int)
        First and last node of each layer.
    """

    x: np.ndarray
    layer_of_node_left: np.ndarray
    layer_of_node_right: np.ndarray
    vol_left: np.ndarray
    vol_right: np.ndarray
    link_layer: np.ndarray
    link_g: np.ndarray
    interface_nodes: list
    layer_nodes: list

    @property
    def n(self) -> int:
        """Number of nodes."""
        return int(self.x.size)


def _props_500(m):
    """Conductivity [W/m/K] and volumetric heat capacity [J/m3/K] at 500 K, cached per material."""
    v = m.__dict__.get("_props_500")
    if v is None:
        T, k, cp = m.tables()
        v = (float(np.interp(500.0, T, k)), float(np.interp(500.0, T, cp)) * m.rho)
        object.__setattr__(m, "_props_500", v)   # materials are immutable
    return v


def default_cells(wall) -> list:
    """Default cell count per layer [-].

    Based on each layer's thermal resistance share and diffusion time: the layers that
    carry the temperature drop and store heat get 8 to 24 cells; a thin conductive skin gets 2.
    """
    got = wall.__dict__.get("_default_cells")
    if got is not None:
        return list(got)
    res, tau = [], []
    for l in wall.layers:
        k5, c5 = _props_500(l.material)
        res.append(l.thickness / k5)
        tau.append(l.thickness ** 2 * c5 / k5)
    res, tau = np.array(res), np.array(tau)
    share = np.sqrt(np.maximum(res / res.max(), tau / tau.max()))
    cells = np.clip(np.round(4 + 16 * share), 2, 24).astype(int)
    cells[(res / res.max() < 1e-3) & (tau / tau.max() < 1e-3)] = 2
    out = [int(np.ceil(c * wall.refine)) for c in cells]
    object.__setattr__(wall, "_default_cells", tuple(out))   # walls and materials are immutable
    return out


def _geometry(geometry, r1, r2, area, length):
    """Geometry factor g [m] of a link r1 -> r2 such that conductance = g * k."""
    if geometry == "slab":
        return area / (r2 - r1)
    if geometry == "cylinder":
        return 2 * np.pi * length / np.log(r2 / r1)
    return 4 * np.pi / (1.0 / r1 - 1.0 / r2)


def _split_radius(geometry, r1, r2):
    """Where a cell between nodes at r1 < r2 is split between their control volumes [m].

    The midpoint in the coordinate in which steady conduction is uniform: x itself for a slab,
    ln r for a cylinder (the geometric mean) and -1/r for a sphere (the harmonic mean).  For
    ordinary cells (r2/r1 near 1) this is the arithmetic midpoint to second order, so the
    scheme's order is unchanged; next to a bore that is tiny against the cell, it gives the
    inner-face node a control volume in proportion to the tiny conductance that links it
    (the arithmetic midpoint gave it a finite capacity behind a conductance ~ r1 -> 0, so it
    lagged: 27 % of the driving difference at r1/r_out = 1e-6 for a sphere).
    """
    if geometry == "slab":
        return 0.5 * (r1 + r2)
    if geometry == "cylinder":
        return np.sqrt(r1 * r2)
    return 2.0 * r1 * r2 / (r1 + r2)


def _volume(geometry, r1, r2, area, length):
    """Volume between r1 and r2 [m3]."""
    if geometry == "slab":
        return area * (r2 - r1)
    if geometry == "cylinder":
        return np.pi * length * (r2 * r2 - r1 * r1)
    return 4.0 / 3.0 * np.pi * (r2 ** 3 - r1 ** 3)


def cell_counts(wall) -> list:
    """Cells per layer of the mesh of ``wall`` [-]: a layer's own ``cells`` (times the wall's
    ``refine``), else :func:`default_cells`."""
    cells = [l.cells if l.cells is not None else c for l, c in zip(wall.layers, default_cells(wall))]
    if wall.refine != 1.0:
        cells = [int(np.ceil(l.cells * wall.refine)) if l.cells is not None else c
                 for l, c in zip(wall.layers, cells)]
    return cells


def shape_key(wall, cells=None) -> tuple:
    """Everything :func:`mesh_wall` reads from ``wall``, as a tuple: two walls with equal keys
    get identical meshes.

    The key holds the geometry, area [m2], length [m], layer edges (radii or depths) [m],
    contact resistances [m2K/W] and the cells per layer (:func:`cell_counts`, which depend
    on the layers' materials through :func:`default_cells`).
    """
    cells = cell_counts(wall) if cells is None else cells
    return (wall.shape, float(wall.area), float(wall.length),
            tuple(float(r) for r in wall.radii()), tuple(float(c) for c in wall.interface_resistance),
            tuple(int(c) for c in cells))


def mesh_wall(wall, cells=None) -> WallMesh:
    """Mesh a :class:`fdwall.model.Wall` into nodes, half volumes and link conductances.

    ``cells`` (per layer) defaults to :func:`cell_counts`; pass it when already known.
    """
    cells = cell_counts(wall) if cells is None else cells
    edges = wall.radii()
    geo, A, L = wall.shape, wall.area, wall.length
    nl = len(cells)
    n_c = np.asarray(cells, dtype=np.int64)
    contact = np.asarray((0.0,) + tuple(wall.interface_resistance))          # contact before layer j
    doubled = (contact > 0.0).astype(np.int64)
    # first node of each layer: layers share their interface node unless a contact resistance
    # doubles it (two nodes at the same radius joined by the contact conductance)
    base = np.zeros(nl, dtype=np.int64)
    if nl > 1:
        base[1:] = np.cumsum(n_c[:-1] + doubled[1:])
    n_tot = int(base[-1] + n_c[-1] + 1)
    # every cell at once: its layer, its index in the layer, its two end nodes
    lay = np.repeat(np.arange(nl), n_c)
    first_cell = np.concatenate([[0], np.cumsum(n_c)[:-1]])
    loc = np.arange(lay.size) - first_cell[lay]
    nn = n_c[lay].astype(float)
    beta = np.where(n_c >= 3, GRADING_BETA, 0.0)[lay]
    e0, e1 = edges[:-1][lay], edges[1:][lay]

    def place(s):
        x = e0 + (e1 - e0) * (s - beta * np.sin(2 * np.pi * s) / (2 * np.pi))
        x = np.where(s <= 0.0, e0, x)
        return np.where(s >= 1.0, e1, x)

    r1 = place(loc / nn)
    r2 = place((loc + 1) / nn)
    rm = _split_radius(geo, r1, r2)
    left = base[lay] + loc
    right = left + 1
    x = np.empty(n_tot)
    x[left] = r1
    x[right] = r2
    lay_l = np.full(n_tot, -1, dtype=np.int64)
    lay_r = np.full(n_tot, -1, dtype=np.int64)
    vl = np.zeros(n_tot)
    vr = np.zeros(n_tot)
    link_layer = np.full(n_tot, -2, dtype=np.int64)
    link_g = np.zeros(n_tot)
    lay_r[left] = lay
    vr[left] = _volume(geo, r1, rm, A, L)
    lay_l[right] = lay
    vl[right] = _volume(geo, rm, r2, A, L)
    link_layer[left] = lay
    link_g[left] = _geometry(geo, r1, r2, A, L)
    interface_nodes = []
    for j in range(1, nl):
        if doubled[j]:
            i = int(base[j] - 1)
            link_layer[i] = -1
            link_g[i] = wall.area_at(edges[j]) / contact[j]
            interface_nodes.append(i)
        else:
            interface_nodes.append(int(base[j]))
    layer_nodes = [(int(base[j]), int(base[j] + n_c[j])) for j in range(nl)]
    for a in (x, lay_l, lay_r, vl, vr, link_layer, link_g):
        a.setflags(write=False)     # a mesh may be shared by systems (build_system like=)
    return WallMesh(
        x=x, layer_of_node_left=lay_l, layer_of_node_right=lay_r, vol_left=vl, vol_right=vr,
        link_layer=link_layer, link_g=link_g, interface_nodes=interface_nodes,
        layer_nodes=layer_nodes)
