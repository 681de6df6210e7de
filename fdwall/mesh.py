"""Vertex-centred finite-volume mesh of one wall, chosen from the problem.

Nodes sit on both faces and on every interface, so skin and interface temperatures are nodal
values.

**Mesh from the problem (default).**  Cells are graded geometrically (growth ratio
:data:`GROWTH` = 1.2 from cell to cell) towards both ends of every layer, so that the cell next
to a face or an interface is :data:`PENETRATION_FRACTION` times the penetration depth
``sqrt(alpha_min * t_min)`` of that layer, where ``alpha_min`` [m2/s] is the layer's smallest
diffusivity over its property tables and ``t_min`` [s] the shortest time that matters
(:func:`problem_grading`): the first output interval, and the time from each step of a
boundary schedule (face temperature, fluid or surroundings temperature, flux, heater power,
control) to the next output after it, floored at :data:`TIME_FLOOR` = 1 s.  On a face with a
fixed film coefficient h the first cell is also at most :data:`FILM_BIOT` k/h (a cell Biot
number below 0.5, for strong films on solid cylinders and spheres), but not below
:data:`FILM_FLOOR` of the penetration-based size.  Mid-layer cells are at
most the size of :func:`default_cells` (2 to 24 per layer, by the layer's share of the wall's
resistance and diffusion time).  The cell sizes so built (an even number per layer) define a
smooth monotone map ``x(s)`` (PCHIP through the cell ends against ``s`` uniform on [0, 1]);
a refined mesh evaluates the same map on more cells, so the meshes of a refinement (or the
coarse mesh of the error estimate, every other node) are nested and keep second order.

**A layer's own ``cells``** wins: its nodes follow the smooth map
``x(s) = s - beta*sin(2*pi*s)/(2*pi)``, whose cells next to the layer ends are
``(1-beta)/(1+beta)`` times the mid-layer cells, and the run does not refine it.

Each control volume is split at the interface so every half belongs to one material.  With a
contact resistance, the interface carries two nodes joined by the contact conductance.
"""
from __future__ import annotations

from collections import OrderedDict
from dataclasses import dataclass

import numpy as np
from scipy.interpolate import PchipInterpolator

from .model import _base_cells, default_cells  # noqa: F401  (the wall's own scale; re-exported)
from .schedule import Schedule

__all__ = ["WallMesh", "MeshGrading", "mesh_wall", "default_cells", "cell_counts", "shape_key",
           "problem_grading", "graded_fractions", "TIME_FLOOR"]

GRADING_BETA = 0.5
GROWTH = 1.1
"""Largest ratio of neighbouring cell sizes of a problem-graded layer [-] (common practice,
no source: 1.2 to 1.3 keeps a vertex-centred scheme close to its uniform-mesh accuracy)."""
PENETRATION_FRACTION = 0.15
"""First cell at a layer end as a fraction of the penetration depth sqrt(alpha t_min) [-];
chosen so that the default run meets the accuracy contract of :mod:`fdwall.solver.accuracy`
on its analytical references (tests/test_accuracy_contract.py)."""
FILM_BIOT = 0.5
"""Largest cell Biot number h dx / k of the first cell at a face with a fixed film
coefficient [-]."""
FILM_FLOOR = 0.25
"""The film Biot number refines the first cell to at most this fraction of the penetration-based
size [-]: beyond it the face is in effect at the fluid temperature, which the penetration depth
already resolves (an unbounded refinement for h -> infinity would only stiffen the problem)."""
TIME_FLOOR = 1.0
"""Floor on the shortest time that matters for the mesh [s]: outputs asked for closer than
this to the start or to a step in a boundary schedule are not resolved in space to the
contract (the run says so in its notes)."""
MID_CELLS_FACTOR = 2.0
"""Mid-layer cells of a problem-graded layer are at most its thickness over this factor times
:func:`default_cells` [-] (fronts crossing a layer reach the next interface resolved)."""
MIN_FIRST_CELL = 1e-5
"""Smallest first cell as a fraction of the layer thickness [-] (bounds the cell count)."""
CACHE_NODES = 200_000
"""Most nodes the meshes kept by :func:`mesh_wall` for reuse hold together [-] (each node costs
about 60 bytes in its seven arrays; 12 MB at most)."""

# Derived values kept across calls, keyed by value (never by object identity), so a copy of a
# wall (the coarse and refined twins of the error estimate, a study variant) finds them too.
# The cached arrays are read-only; the values are what a fresh computation gives, bit for bit.
_SIZES = OrderedDict()     # (L, d_left, d_right, d_max) -> graded cell sizes [m]
_MAPS = OrderedDict()      # node fractions (bytes) -> PCHIP map s -> fraction
_MESHES = OrderedDict()    # shape_key -> WallMesh
_MESH_NODES = [0]          # nodes held in _MESHES
_SMALL_CACHE = 256         # entries kept in _SIZES and _MAPS


def _remember(cache, key, value, size=_SMALL_CACHE):
    """Store ``value`` under ``key`` in the LRU dict ``cache``, dropping the oldest beyond
    ``size`` entries; returns ``value``."""
    cache[key] = value
    while len(cache) > size:
        cache.popitem(last=False)
    return value


@dataclass(frozen=True)
class MeshGrading:
    """What the problem asks of a mesh (see :func:`problem_grading`).

    Attributes
    ----------
    t_min : float
        Shortest time that matters [s] (already floored at :data:`TIME_FLOOR`).
    h_inner, h_outer : float
        Fixed film coefficient on the inner / outer face [W/m2/K] (0: none or not fixed).
    floored : bool
        True when an output lies closer than :data:`TIME_FLOOR` to the start or to a step.
    """

    t_min: float
    h_inner: float = 0.0
    h_outer: float = 0.0
    floored: bool = False

    def key(self) -> tuple:
        """The grading as a tuple of floats (part of :func:`shape_key`)."""
        return (float(self.t_min), float(self.h_inner), float(self.h_outer))


def _time_schedules(case):
    """Every schedule of ``case`` whose argument is time (faces, heater, control, room)."""
    faces = [ew.outer for ew in case.walls] if case.is_enclosure else [case.inner, case.outer]
    out = []
    if case.is_enclosure and case.chamber is not None:
        out.append(case.chamber.room_temperature)
    for f in faces:
        out += [f.fixed_temperature, f.heat_flux, f.fluid_temperature, f.surroundings_temperature]
    if case.heater is not None:
        out.append(case.heater.power)
    c = case.control
    out += [c.duty, c.power_on, c.setpoint]
    return [s for s in out if isinstance(s, Schedule)]


def step_times(case) -> list:
    """Times [s] inside the run at which some time schedule of ``case`` jumps (a knot given
    twice with two values), sorted."""
    dur = float(case.run.duration)
    out = set()
    for s in _time_schedules(case):
        tk, v = s.times, s.values
        out.update(float(a) for a, b, va, vb in zip(tk[:-1], tk[1:], v[:-1], v[1:])
                   if a == b and va != vb and 0.0 < a < dur)
    return sorted(out)


def _output_grid(run) -> np.ndarray:
    """Output times [s] of ``run`` (as :func:`fdwall.solver.transient.output_times`)."""
    dt = run.output_every or run.duration / 200.0
    n = int(np.floor(run.duration / dt + 1e-9))
    t = np.concatenate([np.arange(n + 1) * dt, [run.duration], list(run.snapshots)])
    return np.unique(np.round(t[(t >= 0) & (t <= run.duration)], 9))


def _fixed_h(conv) -> float:
    """A fixed film coefficient [W/m2/K] (a number), else 0 (correlations are not graded on)."""
    return float(conv) if isinstance(conv, (int, float)) and not isinstance(conv, bool) else 0.0


def problem_grading(case) -> MeshGrading:
    """The :class:`MeshGrading` of ``case``: the shortest time that matters [s] and the fixed
    film coefficients of the faces [W/m2/K].

    The shortest time that matters is the smaller of the first output interval and, for every
    step of a time schedule, the time from the step to the next output after it; it is floored
    at :data:`TIME_FLOOR` (``floored`` then says so).
    """
    t = _output_grid(case.run)
    cands = [float(t[1] - t[0])] if t.size > 1 else [float(case.run.duration)]
    for ts in step_times(case):
        j = int(np.searchsorted(t, ts, side="right"))
        if j < t.size:
            cands.append(float(t[j] - ts))
    tm = min(cands)
    floored = tm < TIME_FLOOR * (1 - 1e-9)
    tm = max(tm, TIME_FLOOR)
    if case.is_enclosure:
        hi = max([_fixed_h(ew.inner_face_convection) for ew in case.walls] + [0.0])
        ho = max([_fixed_h(ew.outer.convection) for ew in case.walls] + [0.0])
    else:
        hi, ho = _fixed_h(case.inner.convection), _fixed_h(case.outer.convection)
    return MeshGrading(t_min=tm, h_inner=hi, h_outer=ho, floored=floored)


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


def _alpha_k_min(m):
    """Smallest diffusivity [m2/s] and conductivity [W/m/K] over a material's tables."""
    v = m.__dict__.get("_alpha_k_min")
    if v is None:
        T, k, cp = m.tables()
        k, cp = np.asarray(k, float), np.asarray(cp, float)
        v = (float(np.min(k / (cp * m.rho))), float(np.min(k)))
        object.__setattr__(m, "_alpha_k_min", v)   # materials are immutable
    return v


def _graded_sizes(L, d_left, d_right, d_max):
    """Cell sizes [m] across a layer of thickness L [m]: growing by :data:`GROWTH` from
    ``d_left`` and ``d_right`` [m] at the ends, at most ``d_max`` [m]; an even number of cells,
    scaled to sum to L (a read-only array, cached by value)."""
    key = (float(L), float(d_left), float(d_right), float(d_max))
    got = _SIZES.get(key)
    if got is not None:
        _SIZES.move_to_end(key)
        return got
    sz = _graded_sizes_new(L, d_left, d_right, d_max)
    sz.setflags(write=False)
    return _remember(_SIZES, key, sz)


def _graded_sizes_new(L, d_left, d_right, d_max):
    """:func:`_graded_sizes` computed afresh [m]: the fewest (even) cells whose sizes, growing
    by GROWTH from both ends and capped at d_max, reach L; then scaled to sum to L."""
    n = 2
    while True:
        i = np.arange(n)
        sz = np.minimum(np.minimum(d_left * GROWTH ** i, d_right * GROWTH ** (n - 1 - i)), d_max)
        if sz.sum() >= L * (1 - 1e-12):
            return sz * (L / sz.sum())
        n += 2


def graded_fractions(wall, grading) -> list:
    """Node positions of each layer of the problem-graded mesh, as fractions of the layer
    thickness from its inner end [-] (an even number of cells each); None for a layer with its
    own ``cells``.

    ``grading`` is a :class:`MeshGrading`.  The first cell at each end of a layer is
    :data:`PENETRATION_FRACTION` sqrt(alpha_min t_min) (at most a third of the largest cell,
    at least :data:`MIN_FIRST_CELL` of the layer), and at a face with a fixed film coefficient
    h at most :data:`FILM_BIOT` k_min / h (not below :data:`FILM_FLOOR` of the penetration-based
    size).
    """
    cache = wall.__dict__.get("_graded")
    if cache is None:
        cache = {}
        object.__setattr__(wall, "_graded", cache)   # walls are immutable: a derived cache
    key = grading.key()
    if key in cache:
        return cache[key]
    base = _base_cells(wall)
    nl = len(wall.layers)
    out = []
    for j, (l, nb) in enumerate(zip(wall.layers, base)):
        if l.cells is not None:
            out.append(None)
            continue
        L = float(l.thickness)
        alpha, kmin = _alpha_k_min(l.material)
        d_max = L / (nb * MID_CELLS_FACTOR)
        d_pen = PENETRATION_FRACTION * np.sqrt(alpha * grading.t_min)
        ends = []
        for h in (grading.h_inner if j == 0 else 0.0, grading.h_outer if j == nl - 1 else 0.0):
            d = min(d_pen, d_max * (1 - GRADING_BETA) / (1 + GRADING_BETA))
            if h > 0.0:     # a strong film: finer, but at most FILM_FLOOR finer than d_pen
                d = min(d, max(FILM_BIOT * kmin / h, FILM_FLOOR * d_pen))
            ends.append(max(d, MIN_FIRST_CELL * L))
        sz = _graded_sizes(L, ends[0], ends[1], d_max)
        f = np.concatenate([[0.0], np.cumsum(sz) / L])
        f[-1] = 1.0
        f.setflags(write=False)
        out.append(f)
    cache[key] = out
    return out


def _layer_map(f):
    """The smooth monotone map s -> fraction through the node fractions ``f`` (s = i/n),
    cached by the bytes of ``f``."""
    key = f.tobytes()
    got = _MAPS.get(key)
    if got is not None:
        _MAPS.move_to_end(key)
        return got
    return _remember(_MAPS, key, PchipInterpolator(np.linspace(0.0, 1.0, f.size), f))


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


def cell_counts(wall, grading=None) -> list:
    """Cells per layer of the mesh of ``wall`` [-]: a layer's own ``cells`` (times the wall's
    ``refine``), else the problem-graded count of :func:`graded_fractions` for ``grading``
    (a :class:`MeshGrading`) times ``refine``, or without a grading :func:`default_cells`."""
    if grading is not None:
        fr = graded_fractions(wall, grading)
        return [int(np.ceil(l.cells * wall.refine)) if l.cells is not None
                else int(np.ceil((f.size - 1) * wall.refine - 1e-9))
                for l, f in zip(wall.layers, fr)]
    cells = [l.cells if l.cells is not None else c for l, c in zip(wall.layers, default_cells(wall))]
    if wall.refine != 1.0:
        cells = [int(np.ceil(l.cells * wall.refine)) if l.cells is not None else c
                 for l, c in zip(wall.layers, cells)]
    return cells


def shape_key(wall, cells=None, grading=None) -> tuple:
    """Everything :func:`mesh_wall` reads from ``wall``, as a tuple: two walls with equal keys
    get identical meshes.

    The key holds the geometry, area [m2], length [m], layer edges (radii or depths) [m],
    contact resistances [m2K/W], the cells per layer (:func:`cell_counts`, which depend
    on the layers' materials through :func:`default_cells`) and, for a problem-graded mesh,
    the graded node fractions of its layers (:func:`graded_fractions`; so a change of the
    problem that leaves the grading as it was keeps the key).
    """
    cells = cell_counts(wall, grading) if cells is None else cells
    key = (wall.shape, float(wall.area), float(wall.length),
           tuple(float(r) for r in wall.radii()), tuple(float(c) for c in wall.interface_resistance),
           tuple(int(c) for c in cells))
    if grading is not None:
        key += (tuple(None if f is None else f.tobytes() for f in graded_fractions(wall, grading)),)
    return key


def mesh_wall(wall, cells=None, grading=None) -> WallMesh:
    """Mesh a :class:`fdwall.model.Wall` into nodes, half volumes and link conductances.

    ``grading`` (a :class:`MeshGrading`, from :func:`problem_grading`) grades the layers
    without their own ``cells`` from the problem; without it they follow the smooth sine map.
    ``cells`` (per layer) defaults to :func:`cell_counts`; pass it when already known.

    Meshes are read-only and depend on nothing but :func:`shape_key`, so a mesh made before
    for an equal key (the same wall, a copy of it, a study variant of the same shape) is
    returned again, up to :data:`CACHE_NODES` nodes kept.
    """
    cells = cell_counts(wall, grading) if cells is None else cells
    key = shape_key(wall, cells, grading)
    got = _MESHES.get(key)
    if got is not None:
        _MESHES.move_to_end(key)
        return got
    mesh = _mesh_wall_new(wall, cells, grading)
    _MESHES[key] = mesh
    _MESH_NODES[0] += mesh.n
    while _MESH_NODES[0] > CACHE_NODES and len(_MESHES) > 1:
        _MESH_NODES[0] -= _MESHES.popitem(last=False)[1].n
    return mesh


def _mesh_wall_new(wall, cells, grading) -> WallMesh:
    """:func:`mesh_wall` computed afresh (``cells`` per layer given)."""
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

    maps = ([None] * nl if grading is None else
            [None if f is None else _layer_map(f) for f in graded_fractions(wall, grading)])

    def place(s):
        u = s - beta * np.sin(2 * np.pi * s) / (2 * np.pi)
        for j, mp in enumerate(maps):
            if mp is not None:
                sel = lay == j
                u[sel] = mp(s[sel])
        x = e0 + (e1 - e0) * u
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
