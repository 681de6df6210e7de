"""Turn a :class:`fdwall.model.Case` into the plain arrays the kernels work on.

This is the only place where model objects meet kernel array layouts (documented in
:mod:`fdwall.solver.kernels`).  The assembled :class:`System` also answers questions that
analyses need without running anything: node positions, the conductance of every link, the
heat capacity of every node, and the wall's lumped resistance and capacity.
"""
from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from .compiled import entry
from .mesh import cell_counts, mesh_wall, problem_grading, shape_key
from .model import Case, Face, ModelError, interface_problem
from .physics.air import rho_cp
from .physics.convection import PAR_LEN
from .schedule import Schedule
from .solver.layout import (
    CF_ALPHA,
    CF_BAND,
    CF_EVENT_TOL,
    CF_KD,
    CF_KI,
    CF_KP,
    CF_PERIOD,
    CF_POWER_FACTOR,
    CF_SENSOR_W,
    CF_T_REF,
    CHAIN_FIRST,
    CHAIN_LAST,
    CHF_LEAK,
    CHF_UA,
    CHI_AMBIENT,
    CHI_CAPACITY,
    CHI_PRESENT,
    CI_DUTY,
    CI_ENABLE,
    CI_HEATER_NODE,
    CI_MODE,
    CI_POWER,
    CI_SENSOR_A,
    CI_SENSOR_B,
    CI_SENSOR_MAT,
    CI_SETPOINT,
    CTL_DUTY_AVERAGED,
    CTL_DUTY_SWITCHED,
    CTL_PID_AVERAGED,
    CTL_PID_SWITCHED,
    CTL_THERMOSTAT,
    EV_MAT,
    EV_NODE_A,
    EV_NODE_B,
    EV_THRESHOLD,
    EV_WEIGHT,
    FF_AREA,
    FF_H,
    FI_EMISSIVITY,
    FI_FIXED_T,
    FI_FLUID,
    FI_FLUX,
    FI_H_MODE,
    FI_NODE,
    FI_RADIANT,
    FI_TO_CHAMBER,
    H_CORRELATION,
    H_FIXED,
    LINK_CONTACT,
    LINK_NONE,
    MT_K,
    N_CF,
    N_CHF,
    N_CHI,
    N_CI,
    N_EVI,
    N_FF,
    N_FI,
    N_NF,
    N_NI,
    NF_LINK_G,
    NF_VOL_L,
    NF_VOL_R,
    NI_LINK,
    NI_MAT_L,
    NI_MAT_R,
)

__all__ = ["System", "build_system", "event_rows", "locate_depth", "readout_material"]


def _integrated(T, k, c):
    """Rows T [K], k [W/m/K], K = int k dT [W/m], c [J/m3/K], H = int c dT [J/m3]."""
    if T.size < 2:
        T, k, c = np.array([1.0, 6000.0]), np.repeat(k, 2), np.repeat(c, 2)
    dT = np.diff(T)
    K = np.zeros_like(T)
    H = np.zeros_like(T)
    np.cumsum(0.5 * (k[1:] + k[:-1]) * dT, out=K[1:])
    np.cumsum(0.5 * (c[1:] + c[:-1]) * dT, out=H[1:])
    return np.vstack([T, k, K, c, H])


class _Tables:
    """Collects material tables and schedules into flat arrays, de-duplicated."""

    def __init__(self):
        self.mats, self.mat_keys = [], {}
        self.scheds, self.sched_keys = [], {}

    def material(self, m) -> int:
        key = id(m)
        if key in self.mat_keys:
            return self.mat_keys[key]
        tab = m.__dict__.get("_kernel_table")
        if tab is None:
            T, k, cp = m.tables()
            tab = _integrated(np.asarray(T, float), np.asarray(k, float),
                              np.asarray(cp, float) * float(m.rho))
            # materials are immutable: the integrated table is computed once per material
            object.__setattr__(m, "_kernel_table", tab)
        self.mats.append(tab)
        self.mat_keys[key] = len(self.mats) - 1
        return self.mat_keys[key]

    def capacity(self, cap) -> int:
        """A chamber capacity [J/K] (number or table against T) as a unit-volume material."""
        if isinstance(cap, Schedule):
            T, c = np.asarray(cap.times), np.asarray(cap.values)
            if T.size == 1:
                T, c = np.array([1.0, 6000.0]), np.array([c[0], c[0]])
        else:
            T, c = np.array([1.0, 6000.0]), np.array([float(cap)] * 2)
        self._add_mat(("cap", id(cap), len(self.mats)), T, np.zeros_like(c), c)
        return len(self.mats) - 1

    def _add_mat(self, key, T, k, c):
        self.mats.append(_integrated(T, k, c))
        self.mat_keys[key] = len(self.mats) - 1

    def schedule(self, s) -> int:
        if s is None:
            return -1
        if isinstance(s, Schedule):
            key = (s.times, s.values)
        else:
            v = float(s)
            key = ((0.0,), (v,))
        if key not in self.sched_keys:
            self.scheds.append(np.array(key, dtype=float))
            self.sched_keys[key] = len(self.scheds) - 1
        return self.sched_keys[key]

    def pack(self):
        def flat(lst, rows):
            off = np.zeros(len(lst) + 1, dtype=np.int64)
            for i, a in enumerate(lst):
                off[i + 1] = off[i] + a.shape[1]
            tab = np.hstack(lst) if lst else np.zeros((rows, 1))
            return off, np.ascontiguousarray(tab)
        m_off, mtab = flat(self.mats, 5)
        s_off, stab = flat(self.scheds, 2)
        return m_off, mtab, s_off, stab


@dataclass
class System:
    """The assembled arrays of a case plus the bookkeeping to read results back.

    Attributes (arrays follow :mod:`fdwall.solver.kernels`)
    ----------
    meshes : list of WallMesh, one per wall
    offsets : first global node of each wall
    n_nodes : wall nodes N; the chamber, if any, is unknown N
    face_names : label of each face ('<wall>:inner', '<wall>:outer')
    external : bool per face: heat crossing it enters the system from outside
    """

    case: Case
    meshes: list
    offsets: list
    n_nodes: int
    node_i: np.ndarray
    node_f: np.ndarray
    chains: np.ndarray
    face_i: np.ndarray
    face_f: np.ndarray
    hpar: np.ndarray
    m_off: np.ndarray
    mtab: np.ndarray
    s_off: np.ndarray
    stab: np.ndarray
    ch_i: np.ndarray
    ch_f: np.ndarray
    ctl_i: np.ndarray
    ctl_f: np.ndarray
    dirich_node: np.ndarray
    dirich_sched: np.ndarray
    dirich_face: np.ndarray
    breakpoints: np.ndarray
    breakpoint_jumps: np.ndarray                      # 1.0 where some schedule jumps there
    face_names: list
    external: np.ndarray
    layer_of_half: np.ndarray = field(default=None)   # (N, 2) global layer id per half, -1 none
    layer_names: list = field(default_factory=list)   # "<wall>/<layer>" per global layer id
    layer_wall: list = field(default_factory=list)    # wall index per global layer id
    walls: list = field(default_factory=list)         # the 1-D walls solved (bridges split off)
    wall_origin: list = field(default_factory=list)   # case wall index of each solved wall
    is_bridge: list = field(default_factory=list)     # True for a bridge path
    area_factor: float = 1.0                          # box edge/corner factor applied [-]
    shape_keys: list = field(default_factory=list)    # mesh.shape_key of each solved wall
    mesh_reused: list = field(default_factory=list)   # True where the mesh came from like=
    grading: object = None                            # fdwall.mesh.MeshGrading of the meshes

    def chain_of(self, case_wall: int) -> int:
        """Index of the solved wall (clear path) for case wall ``case_wall``."""
        return self.path_of(case_wall, False)

    def path_of(self, case_wall: int, bridge: bool = False) -> int:
        """Index of the solved 1-D path of case wall ``case_wall``: its clear path, or with
        ``bridge=True`` its bridge path."""
        for j, (o, b) in enumerate(zip(self.wall_origin, self.is_bridge)):
            if o == case_wall and b == bridge:
                return j
        what = "a bridge path" if bridge else "a path"
        raise ModelError(f"case wall index {case_wall} has no {what} "
                         f"(walls 0..{max(self.wall_origin)})")

    def paths_of(self, case_wall: int) -> list:
        """All solved path indices of case wall ``case_wall`` (clear first)."""
        return [j for j, o in enumerate(self.wall_origin) if o == case_wall]

    @property
    def has_chamber(self) -> bool:
        """True when the system has a chamber node."""
        return bool(self.ch_i[CHI_PRESENT])

    @property
    def n_unknowns(self) -> int:
        """Number of unknown temperatures (wall nodes plus the chamber) [-]."""
        return self.n_nodes + int(self.ch_i[CHI_PRESENT])

    def wall_nodes(self, j: int) -> slice:
        """Global node range of wall ``j``."""
        return slice(self.offsets[j], self.offsets[j] + self.meshes[j].n)

    def initial_vector(self, initial) -> np.ndarray:
        """Initial temperatures of all unknowns [K] from a number or a full vector.

        With a number, layers and a chamber that carry their own start temperature
        (``Layer.start_temperature``, ``Chamber.start_temperature``) keep it; a node on an interface takes the
        mean of its two layers.
        """
        a = np.asarray(initial, dtype=float)
        if a.ndim == 0:
            T = np.full(self.n_unknowns, float(a))
            lay = [l.start_temperature if l.start_temperature is not None else float(a)
                   for w in self.walls for l in w.layers]
            if any(l.start_temperature is not None for w in self.walls for l in w.layers):
                for n in range(self.n_nodes):
                    ids = [g for g in self.layer_of_half[n] if g >= 0]
                    if ids:
                        T[n] = float(np.mean([lay[g] for g in ids]))
            ch = self.case.chamber
            if self.has_chamber and ch is not None and ch.start_temperature is not None:
                T[-1] = ch.start_temperature
            return T
        if a.shape != (self.n_unknowns,):
            raise ModelError(f"an initial profile must have one temperature per unknown "
                             f"({self.n_unknowns}), got shape {a.shape}")
        return a.copy()

    def conductances(self, T=None) -> np.ndarray:
        """Conductance of each link i -> i+1 [W/K] at temperatures ``T`` [K] (default 293.15 K).

        Links after the last node of a wall are 0.  Uses the Kirchhoff mean conductivity.
        """
        mat_eval = entry("mat_eval")
        T = np.full(self.n_nodes, 293.15) if T is None else np.asarray(T, float)
        G = np.zeros(self.n_nodes)
        for i in range(self.n_nodes):
            lm = self.node_i[i, NI_LINK]
            if lm == LINK_NONE:
                continue
            if lm == LINK_CONTACT:
                G[i] = self.node_f[i, NF_LINK_G]
                continue
            a, b = T[i], T[i + 1]
            if abs(a - b) < 1e-9:
                k = mat_eval(self.m_off, self.mtab, lm, a)[0]
            else:
                k = (mat_eval(self.m_off, self.mtab, lm, a)[1] - mat_eval(self.m_off, self.mtab, lm, b)[1]) / (a - b)
            G[i] = self.node_f[i, NF_LINK_G] * k
        return G

    def chamber_ua(self, t: float = 0.0) -> float:
        """Conductance from the chamber to the room at time ``t`` [s]: extra UA plus the
        leakage air flow times rho*cp of room air at that time's room temperature [W/K]
        (0 without a chamber)."""
        if not self.has_chamber:
            return 0.0
        T_room = entry("sched_eval")(self.s_off, self.stab, int(self.ch_i[CHI_AMBIENT]), float(t),
                                     0.0)
        rho_cp_room = entry("rho_cp", rho_cp)(T_room, 101325.0)
        return float(self.ch_f[CHF_UA] + self.ch_f[CHF_LEAK] * rho_cp_room)

    def capacities(self, T=None) -> np.ndarray:
        """Heat capacity of every unknown [J/K] at temperatures ``T`` [K] (default 293.15 K)."""
        mat_eval = entry("mat_eval")
        n = self.n_unknowns
        T = np.full(n, 293.15) if T is None else np.asarray(T, float)
        C = np.zeros(n)
        for i in range(self.n_nodes):
            for mcol, vcol in ((NI_MAT_L, NF_VOL_L), (NI_MAT_R, NF_VOL_R)):
                m = self.node_i[i, mcol]
                if m >= 0:
                    C[i] += self.node_f[i, vcol] * mat_eval(self.m_off, self.mtab, m, T[i])[2]
        if self.has_chamber:
            C[-1] = mat_eval(self.m_off, self.mtab, self.ch_i[CHI_CAPACITY], T[-1])[2]
        return C

    def enthalpy(self, T) -> np.ndarray:
        """Enthalpy of each node half [J] for temperatures ``T`` (n_out, n_unknowns) [K].

        Returns an array (n_out, N, 2) for wall node halves and (n_out,) for the chamber.
        """
        half_enthalpy = entry("half_enthalpy")
        T = np.atleast_2d(np.asarray(T, float))
        Hh, Hc = half_enthalpy(T, self.node_i, self.node_f, self.m_off, self.mtab, self.ch_i)
        return Hh, Hc


def _face_arrays(tb, face: Face, node: int, area: float, to_chamber: bool, conv_obj, label):
    """Kernel rows for one face."""
    fi = np.full(N_FI, -1, dtype=np.int64)
    ff = np.zeros(N_FF)
    par = np.zeros(PAR_LEN)
    fi[FI_NODE] = node
    ff[FF_AREA] = area
    fi[FI_TO_CHAMBER] = 1 if to_chamber else 0
    fi[FI_H_MODE] = H_FIXED
    if face.fixed_temperature is not None:
        fi[FI_FIXED_T] = tb.schedule(face.fixed_temperature)
        return fi, ff, par
    fi[FI_FLUX] = tb.schedule(face.heat_flux)
    conv = conv_obj if to_chamber else face.convection
    if conv is not None:
        if not to_chamber and face.fluid_temperature is None:
            raise ModelError(f"{label}: convection needs a fluid temperature")
        if isinstance(conv, (int, float)):
            ff[FF_H] = float(conv)
        else:
            fi[FI_H_MODE] = H_CORRELATION
            par[:] = conv.to_par()
    fi[FI_FLUID] = -1 if to_chamber else tb.schedule(face.fluid_temperature)
    eps = face.emissivity
    if eps is not None:
        fi[FI_EMISSIVITY] = tb.schedule(eps)
        if not to_chamber:
            if face.surroundings_temperature is None and face.fluid_temperature is None:
                raise ModelError(f"{label}: radiation needs a surroundings (or fluid) temperature")
            fi[FI_RADIANT] = (tb.schedule(face.surroundings_temperature)
                              if face.surroundings_temperature is not None else fi[FI_FLUID])
    return fi, ff, par


def box_area_factor(case: Case) -> float:
    """Area factor that adds edge and corner conduction of a box enclosure [-].

    S_edge = 0.54 D per edge of length D and S_corner = 0.15 L per corner, L the wall
    thickness (Incropera, Fundamentals of Heat and Mass Transfer, Table 4.1, cases 8 and 9),
    against S_walls = sum(A_i / L_i) of the slab walls; L is the area-weighted mean thickness.
    """
    ch = case.chamber
    if ch is None or ch.inner_dimensions is None or not case.walls:
        return 1.0
    slabs = [ew.wall for ew in case.walls if ew.wall.shape == "slab"]
    if not slabs:
        return 1.0
    s_walls = sum(w.area / w.thickness for w in slabs)
    L = sum(w.area * w.thickness for w in slabs) / sum(w.area for w in slabs)
    W, D, H = ch.inner_dimensions
    s_extra = 0.54 * 4.0 * (W + D + H) + 8 * 0.15 * L
    return 1.0 + s_extra / s_walls


def _chains_of(case: Case):
    """The 1-D walls actually solved: (Wall, case wall index, EnclosureWall or None, is_bridge)."""
    if not case.is_enclosure:
        return [(case.wall, 0, None, False)]
    m = box_area_factor(case)
    out = []
    for j, ew in enumerate(case.walls):
        w = ew.wall
        if m != 1.0 and w.shape == "slab":
            w = replace(w, area=w.area * m)
        if ew.bridge is None:
            out.append((w, j, ew, False))
            continue
        f = ew.bridge.area_fraction
        layers = list(w.layers)
        for i in ew.bridge.replaces_layers:
            layers[i] = replace(layers[i], material=ew.bridge.material,
                                name=f"{ew.bridge.material.name} (bridge)")
        out.append((replace(w, area=w.area * (1 - f)), j, ew, False))
        out.append((replace(w, area=w.area * f, layers=tuple(layers), name=f"{w.name}~bridge"),
                    j, ew, True))
    return out


def _meshes(walls, like, grading=None):
    """(meshes, shape keys, reused flags) of the solved walls, graded by ``grading`` (a
    :class:`fdwall.mesh.MeshGrading`); a wall whose shape key equals that of the same solved
    wall of ``like`` takes its mesh."""
    meshes, keys, reused = [], [], []
    old = like.shape_keys if like is not None else []
    for j, w in enumerate(walls):
        cells = cell_counts(w, grading)
        key = shape_key(w, cells, grading)
        same = j < len(old) and old[j] == key and len(like.meshes) == len(old)
        meshes.append(like.meshes[j] if same else mesh_wall(w, cells, grading))
        keys.append(key)
        reused.append(same)
    return meshes, keys, reused


def build_system(case: Case, like: System | None = None) -> System:
    """Assemble the kernel arrays for ``case``.

    Parameters
    ----------
    case : Case
        The problem.
    like : System, optional
        A system built before for a case of the same wall shape, e.g. the previous variant of
        a study.  Each solved wall whose shape is unchanged -- geometry, area [m2], length
        [m], layer thicknesses [m], contact resistances [m2K/W] and cells per layer
        (:func:`fdwall.mesh.shape_key`) -- takes its mesh (node positions, half volumes,
        link geometry factors) from ``like`` instead of meshing again; every other array
        (materials, faces, schedules, heater, control, chamber) is assembled from ``case``.
        A wall whose shape differs (a thickness changed, or a conductivity factor that
        changes the default cell count) is meshed afresh, so the result is always the system
        ``build_system(case)`` would give, array for array (``System.mesh_reused`` tells
        which walls were reused).  Meshes are never modified, so sharing them is safe.

    The case loader builds no system (it checks the case through the rules of
    :mod:`fdwall.model`); each call builds one, so no two callers share its arrays.
    """
    tb = _Tables()
    specs = _chains_of(case)
    walls = [s[0] for s in specs]
    grading = problem_grading(case)     # the mesh is chosen from the problem (fdwall.mesh)
    meshes, keys, reused = _meshes(walls, like, grading)
    offsets = list(np.cumsum([0] + [m.n for m in meshes])[:-1])
    N = int(sum(m.n for m in meshes))
    node_i = np.zeros((N, N_NI), dtype=np.int64)
    node_f = np.zeros((N, N_NF))
    layer_of_half = np.full((N, 2), -1, dtype=np.int64)
    layer_names, layer_wall = [], []
    chains = np.zeros((len(walls), 2), dtype=np.int64)
    for j, (w, m) in enumerate(zip(walls, meshes)):
        o = offsets[j]
        mids = [tb.material(l.material) for l in w.layers]
        lid0 = len(layer_names)
        for l in w.layers:
            layer_names.append(f"{w.name}/{l.label}")
            layer_wall.append(j)
        mids_a = np.array(mids, dtype=np.int64)
        sl = slice(o, o + m.n)
        lo, ro, ll = m.layer_of_node_left, m.layer_of_node_right, m.link_layer
        node_i[sl, NI_MAT_L] = np.where(lo >= 0, mids_a[np.maximum(lo, 0)], -1)
        node_i[sl, NI_MAT_R] = np.where(ro >= 0, mids_a[np.maximum(ro, 0)], -1)
        # mesh link codes: a layer index, -1 a contact link, -2 none (after the last node)
        node_i[sl, NI_LINK] = np.where(ll >= 0, mids_a[np.maximum(ll, 0)],
                                       np.where(ll == -1, LINK_CONTACT, LINK_NONE))
        node_f[sl, NF_VOL_L] = m.vol_left
        node_f[sl, NF_VOL_R] = m.vol_right
        node_f[sl, NF_LINK_G] = m.link_g
        layer_of_half[sl, 0] = np.where(lo >= 0, lid0 + lo, -1)
        layer_of_half[sl, 1] = np.where(ro >= 0, lid0 + ro, -1)
        chains[j, CHAIN_FIRST], chains[j, CHAIN_LAST] = o, o + m.n - 1
    # faces
    rows_i, rows_f, rows_p, names, external = [], [], [], [], []
    if case.is_enclosure:
        for j, (w, jc, ew, is_bridge) in enumerate(specs):
            m, o = meshes[j], offsets[j]
            inner = Face(emissivity=ew.inner_face_emissivity)
            for side, face, node, area, to_ch in (
                    ("inner", inner, o, w.inner_area, True),
                    ("outer", ew.outer, o + m.n - 1, w.outer_area, False)):
                label = f"wall '{w.name}' {side} face"
                fi, ff, par = _face_arrays(tb, face, node, area, to_ch, ew.inner_face_convection, label)
                rows_i.append(fi), rows_f.append(ff), rows_p.append(par)
                names.append(f"{w.name}:{side}")
                external.append(not to_ch)
    else:
        w, m = walls[0], meshes[0]
        for side, face, node, area in (("inner", case.inner, 0, w.inner_area),
                                       ("outer", case.outer, m.n - 1, w.outer_area)):
            fi, ff, par = _face_arrays(tb, face, node, area, False, None, f"{side} face")
            rows_i.append(fi), rows_f.append(ff), rows_p.append(par)
            names.append(f"{w.name}:{side}")
            external.append(True)
    face_i = np.array(rows_i, dtype=np.int64)
    face_f = np.array(rows_f)
    hpar = np.array(rows_p)
    dn = [(face_i[f, FI_NODE], face_i[f, FI_FIXED_T], f) for f in range(len(face_i))
          if face_i[f, FI_FIXED_T] >= 0]
    dirich_node = np.array([d[0] for d in dn], dtype=np.int64)
    dirich_sched = np.array([d[1] for d in dn], dtype=np.int64)
    dirich_face = np.array([d[2] for d in dn], dtype=np.int64)
    # chamber
    ch_i = np.zeros(N_CHI, dtype=np.int64)
    ch_f = np.zeros(N_CHF)
    if case.chamber is not None:
        ch = case.chamber
        ch_i[CHI_PRESENT] = 1
        ch_i[CHI_CAPACITY] = tb.capacity(ch.heat_capacity)
        ch_i[CHI_AMBIENT] = tb.schedule(ch.room_temperature)
        ch_f[CHF_UA] = ch.extra_loss
        ch_f[CHF_LEAK] = ch.leakage
    # heater and control
    ctl_i = np.full(N_CI, -1, dtype=np.int64)
    ctl_f = np.zeros(N_CF)
    ctl = case.control
    ctl_i[CI_MODE] = _mode_code(ctl)
    ctl_i[CI_HEATER_NODE] = -1
    hz = case.heater
    if hz is not None:
        if hz.placement == "chamber":
            ctl_i[CI_HEATER_NODE] = N
        else:
            hw = _chain_index(specs, hz.wall, "heater")
            m = meshes[hw]
            if hz.placement == "inner_face":
                ctl_i[CI_HEATER_NODE] = offsets[hw]
            else:
                problem = interface_problem(walls[hw], hz.after_layer)   # the model's rule
                if problem is not None:
                    raise ModelError(f"the heater: {problem[0]} (allowed: {problem[1]})")
                ctl_i[CI_HEATER_NODE] = offsets[hw] + m.interface_nodes[hz.after_layer]
        ctl_i[CI_POWER] = tb.schedule(hz.power)
        ctl_f[CF_ALPHA] = hz.resistance_coefficient
        ctl_f[CF_T_REF] = hz.rated_at
        ctl_f[CF_POWER_FACTOR] = hz.voltage_ratio ** 2
    ctl_i[CI_DUTY] = tb.schedule(ctl.duty)
    ctl_i[CI_SETPOINT] = tb.schedule(ctl.setpoint) if ctl.setpoint is not None else tb.schedule(0.0)
    ctl_i[CI_ENABLE] = tb.schedule(ctl.power_on)
    if ctl.sensor == "chamber" and case.chamber is not None:
        ctl_i[CI_SENSOR_A] = ctl_i[CI_SENSOR_B] = N
        ctl_f[CF_SENSOR_W] = 1.0
    elif hz is None or ctl.mode not in ("thermostat", "pid"):
        ctl_i[CI_SENSOR_A] = ctl_i[CI_SENSOR_B] = 0          # no sensor is read
        ctl_f[CF_SENSOR_W] = 1.0
    else:
        j = _chain_index(specs, ctl.sensor_wall, "sensor")
        a, b, wgt = locate_depth(walls[j], meshes[j], ctl.sensor_depth)
        ctl_i[CI_SENSOR_A], ctl_i[CI_SENSOR_B], ctl_f[CF_SENSOR_W] = offsets[j] + a, offsets[j] + b, wgt
    sensor_a, sensor_b = ctl_i[CI_SENSOR_A], ctl_i[CI_SENSOR_B]     # material set once packed
    ctl_f[CF_PERIOD] = ctl.period
    ctl_f[CF_BAND] = ctl.band
    ctl_f[CF_KP], ctl_f[CF_KI], ctl_f[CF_KD] = ctl.proportional_gain, ctl.integral_gain, ctl.derivative_gain
    ctl_f[CF_EVENT_TOL] = min(0.02, max(1e-3, 0.02 * ctl.band))
    # breakpoints: every knot of every time schedule
    bps, jumps = set(), set()
    for s in _time_schedules(case):
        bps.update(s.breakpoints())
        tk = s.times
        jumps.update(a for a, b, va, vb in zip(tk[:-1], tk[1:], s.values[:-1], s.values[1:])
                     if a == b and va != vb)
    dur = case.run.duration
    bp = np.array(sorted(t for t in bps if 0.0 < t < dur))
    bpj = np.array([1.0 if t in jumps else 0.0 for t in bp])
    m_off, mtab, s_off, stab = tb.pack()
    ctl_i[CI_SENSOR_MAT] = readout_material(node_i, m_off, mtab, sensor_a, sensor_b, N)
    return System(case=case, meshes=meshes, offsets=[int(o) for o in offsets], n_nodes=N,
                  node_i=node_i, node_f=node_f, chains=chains, face_i=face_i, face_f=face_f,
                  hpar=hpar, m_off=m_off, mtab=mtab, s_off=s_off, stab=stab, ch_i=ch_i,
                  ch_f=ch_f, ctl_i=ctl_i, ctl_f=ctl_f, dirich_node=dirich_node,
                  dirich_sched=dirich_sched, dirich_face=dirich_face, breakpoints=bp, breakpoint_jumps=bpj,
                  face_names=names, external=np.array(external), layer_of_half=layer_of_half,
                  layer_names=layer_names, layer_wall=layer_wall, walls=walls,
                  wall_origin=[sp[1] for sp in specs], is_bridge=[sp[3] for sp in specs],
                  area_factor=box_area_factor(case), shape_keys=keys, mesh_reused=reused,
                  grading=grading)


def _mode_code(ctl) -> int:
    """Kernel controller code (a ``CTL_*`` of :mod:`fdwall.solver.layout`) of a Control."""
    if ctl.mode == "fixed":
        return CTL_DUTY_AVERAGED
    if ctl.mode == "duty":
        return CTL_DUTY_SWITCHED if ctl.switched else CTL_DUTY_AVERAGED
    if ctl.mode == "thermostat":
        return CTL_THERMOSTAT
    if ctl.mode == "pid":
        return CTL_PID_SWITCHED if ctl.switched else CTL_PID_AVERAGED
    raise ModelError(f"unknown control mode {ctl.mode!r} (fixed, duty, thermostat, pid)")


def _chain_index(specs, case_wall, what):
    for j, sp in enumerate(specs):
        if sp[1] == case_wall and not sp[3]:
            return j
    raise ModelError(f"{what} wall index {case_wall} does not exist (0..{specs[-1][1]})")


def locate_depth(wall, mesh, depth):
    """Nodes a, b and the geometry weight on a [-] for a point ``depth`` [m] below the inner
    face.

    The weight is linear in the coordinate in which steady conduction through one material is
    uniform: w = (g_b - g) / (g_b - g_a) with g = x (slab), ln r (cylinder), -1/r (sphere), so
    that w K(T_a) + (1 - w) K(T_b) is the Kirchhoff integral K = int k dT at the point at
    steady state (read back by :func:`fdwall.solver.kernels.read_between`).  Nodes sit on
    every interface, so a and b lie in one layer; a point on an interface reads that node
    (with a contact resistance, the node on the inner side).
    """
    if not 0.0 <= depth <= wall.thickness * (1 + 1e-12):
        raise ModelError(f"depth {depth:g} m lies outside wall '{wall.name}' "
                         f"(0 to {wall.thickness:g} m)")
    x = mesh.x - mesh.x[0]
    # a point on a node (to round-off of the node positions) reads that node alone; on an
    # interface with a contact resistance, the first of its two nodes (the inner side)
    on = np.flatnonzero(np.abs(x - depth) <= 1e-12 * max(wall.thickness, abs(float(mesh.x[-1]))))
    if on.size:
        i = int(on[0])
        return i, i, 1.0
    b = int(np.searchsorted(x, depth, side="left"))
    b = min(max(b, 1), len(x) - 1)
    a = b - 1
    w = (x[b] - depth) / (x[b] - x[a])
    ra = float(mesh.x[a])
    if wall.shape != "slab" and ra > 0.0:
        rd = ra + (depth - x[a])               # radius of the point [m]
        if wall.shape == "cylinder":
            # ln(r_b / r) / ln(r_b / r_a), in log1p form (accurate for thin cells)
            w = np.log1p((x[b] - depth) / rd) / np.log1p((x[b] - x[a]) / ra)
        else:
            # (1/r - 1/r_b) / (1/r_a - 1/r_b) = (r_b - r) r_a / ((r_b - r_a) r)
            w = (x[b] - depth) * ra / ((x[b] - x[a]) * rd)
    return a, b, float(np.clip(w, 0.0, 1.0))


def readout_material(node_i, m_off, mtab, a, b, n_nodes):
    """Material index whose Kirchhoff integral a read-out between nodes a and b inverts [-],
    or -1 to read linearly in T: one node read alone, the chamber (index ``n_nodes``), a
    contact link, or a material of constant k (K linear in T, so the linear read-out is the
    same, digit for digit)."""
    if a == b or a >= n_nodes or b >= n_nodes:
        return -1
    m = int(node_i[a, NI_LINK])
    if m < 0:
        return -1
    k = mtab[MT_K, m_off[m]:m_off[m + 1]]
    return -1 if np.all(k == k[0]) else m


def event_rows(system: System, case: Case):
    """Kernel rows (node a, node b, read-out material; weight on a, threshold [K]) of the
    case's events (layout: EV_* of :mod:`fdwall.solver.layout`).

    Raises ModelError for an event at a wall, interface or depth that does not exist, so it
    also serves to validate a case's events before a run.
    """
    evs = case.run.watch
    ev_i = np.full((len(evs), N_EVI), -1, dtype=np.int64)
    ev_f = np.zeros((len(evs), 2))
    for e, ev in enumerate(evs):
        if ev.at == "chamber":
            if not system.has_chamber:
                raise ModelError(f"event '{ev.name}' watches the chamber, but the case has none")
            ev_i[e, EV_NODE_A] = ev_i[e, EV_NODE_B] = system.n_nodes
            ev_f[e, EV_WEIGHT], ev_f[e, EV_THRESHOLD] = 1.0, ev.temperature
            continue
        j = system.chain_of(ev.wall)
        m, o = system.meshes[j], system.offsets[j]
        wall = system.walls[j]
        if ev.at == "inner":
            a = b = o
            w = 1.0
        elif ev.at == "outer":
            a = b = o + m.n - 1
            w = 1.0
        elif ev.at.startswith("interface:"):
            n = int(ev.at.split(":")[1])
            if not 1 <= n <= len(m.interface_nodes):
                raise ModelError(f"event '{ev.name}': interface {n} does not exist "
                                 f"(1..{len(m.interface_nodes)})")
            a = b = o + m.interface_nodes[n - 1]
            w = 1.0
        else:
            a, b, w = locate_depth(wall, m, ev.depth)
            a, b = a + o, b + o
        ev_i[e, EV_NODE_A], ev_i[e, EV_NODE_B] = a, b
        ev_i[e, EV_MAT] = readout_material(system.node_i, system.m_off, system.mtab, a, b,
                                           system.n_nodes)
        ev_f[e, EV_WEIGHT], ev_f[e, EV_THRESHOLD] = w, ev.temperature
    return ev_i, ev_f


def _time_schedules(case):
    faces = []
    if case.is_enclosure:
        faces = [ew.outer for ew in case.walls]
        if case.chamber is not None:
            yield case.chamber.room_temperature
    else:
        faces = [case.inner, case.outer]
    for f in faces:
        for s in (f.fixed_temperature, f.heat_flux, f.fluid_temperature, f.surroundings_temperature):
            if s is not None:
                yield s
    if case.heater is not None:
        yield case.heater.power
    c = case.control
    for s in (c.duty, c.power_on, c.setpoint):
        if s is not None:
            yield s
