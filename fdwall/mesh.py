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

__all__ = ["WallMesh", "mesh_wall", "default_cells"]

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


def _k_mid(material) -> float:
    T, k, cp = material.tables()
    return float(np.interp(400.0, T, k))


def default_cells(wall) -> list:
    """Default cell count per layer [-].

    Based on each layer's thermal resistance share and diffusion time: the layers that
    carry the temperature drop and store heat get 8 to 24 cells; a thin conductive skin gets 2.
    """
    res, tau = [], []
    for l in wall.layers:
        m = l.material
        T, k, cp = m.tables()
        k4 = float(np.interp(500.0, T, k))
        c4 = float(np.interp(500.0, T, cp)) * m.rho
        res.append(l.thickness / k4)
        tau.append(l.thickness ** 2 * c4 / k4)
    res, tau = np.array(res), np.array(tau)
    share = np.sqrt(np.maximum(res / res.max(), tau / tau.max()))
    cells = np.clip(np.round(4 + 16 * share), 2, 24).astype(int)
    cells[(res / res.max() < 1e-3) & (tau / tau.max() < 1e-3)] = 2
    return [int(np.ceil(c * wall.refine)) for c in cells]


def _geometry(geometry, r1, r2, area, length):
    """Geometry factor g [m] of a link r1 -> r2 such that conductance = g * k."""
    if geometry == "slab":
        return area / (r2 - r1)
    if geometry == "cylinder":
        return 2 * np.pi * length / np.log(r2 / r1)
    return 4 * np.pi / (1.0 / r1 - 1.0 / r2)


def _volume(geometry, r1, r2, area, length):
    """Volume between r1 and r2 [m3]."""
    if geometry == "slab":
        return area * (r2 - r1)
    if geometry == "cylinder":
        return np.pi * length * (r2 * r2 - r1 * r1)
    return 4.0 / 3.0 * np.pi * (r2 ** 3 - r1 ** 3)


def mesh_wall(wall) -> WallMesh:
    """Mesh a :class:`fdwall.model.Wall` into nodes, half volumes and link conductances."""
    cells = [l.cells if l.cells is not None else c for l, c in zip(wall.layers, default_cells(wall))]
    if wall.refine != 1.0:
        cells = [int(np.ceil(l.cells * wall.refine)) if l.cells is not None else c
                 for l, c in zip(wall.layers, cells)]
    edges = wall.radii()
    xs, lay_l, lay_r, vl, vr, link_layer, link_g = [], [], [], [], [], [], []
    interface_nodes, layer_nodes = [], []
    geo, A, L = wall.geometry, wall.area, wall.length
    for j, layer in enumerate(wall.layers):
        n = cells[j]
        s = np.linspace(0.0, 1.0, n + 1)
        beta = GRADING_BETA if n >= 3 else 0.0
        xi = edges[j] + (edges[j + 1] - edges[j]) * (s - beta * np.sin(2 * np.pi * s) / (2 * np.pi))
        xi[0], xi[-1] = edges[j], edges[j + 1]
        if j > 0 and wall.contact[j - 1] > 0.0:
            # contact pair: a new node at the same radius joined by the contact conductance
            link_layer[-1] = -1
            link_g[-1] = wall.area_at(edges[j]) / wall.contact[j - 1]
            interface_nodes.append(len(xs) - 1)
            start = 0
        elif j > 0:
            interface_nodes.append(len(xs) - 1)
            start = 1
        else:
            start = 0
        for i in range(start, n + 1):
            xs.append(xi[i])
            lay_l.append(-1)
            lay_r.append(-1)
            vl.append(0.0)
            vr.append(0.0)
            link_layer.append(-2)
            link_g.append(0.0)
        base = len(xs) - (n + 1)
        for c in range(n):
            a, b = base + c, base + c + 1
            r1, r2 = xs[a], xs[b]
            rm = 0.5 * (r1 + r2)
            lay_r[a], vr[a] = j, _volume(geo, r1, rm, A, L)
            lay_l[b], vl[b] = j, _volume(geo, rm, r2, A, L)
            link_layer[a] = j
            link_g[a] = _geometry(geo, r1, r2, A, L)
        layer_nodes.append((base, len(xs) - 1))
    return WallMesh(
        x=np.array(xs), layer_of_node_left=np.array(lay_l, dtype=np.int64),
        layer_of_node_right=np.array(lay_r, dtype=np.int64), vol_left=np.array(vl),
        vol_right=np.array(vr), link_layer=np.array(link_layer, dtype=np.int64),
        link_g=np.array(link_g), interface_nodes=interface_nodes, layer_nodes=layer_nodes)
