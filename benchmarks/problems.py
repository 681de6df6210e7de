"""Benchmark problems (demo data) built as fdwall cases, plus a plain finite-volume description
that the peer solvers work from.

All materials here are DEMO DATA written for the benchmark (typical of the material classes,
not of any product): a dense refractory brick, a ceramic-fibre insulation whose conductivity
rises six-fold between 300 K and 1300 K, and a steel skin.

Problem (a): a furnace-type slab wall, inner face heated by a flux of 6 kW/m2 for 5 h then
adiabatic, outer steel skin losing heat by convection (h = 8 W/m2/K to 300 K) and grey
radiation (emissivity 0.8 to 300 K); 8 h simulated, outputs every 5 min.
Problem (b): the same layers around an inner radius of 0.1 m (an insulated pipe, per metre).
Problem (c): an enclosure of five such walls around a chamber with a thermostat-controlled
heater.
Problem (d): 1,000 variants of (a) with layer thicknesses and heater flux varied.
Problem (e): the flux-step wall: the layers of (a) (or a light insulating firebrick instead
of the dense refractory), 5 kW/m2 on the inner face switched on at 0
and off at 4 h, the same outer face, 8 h, both faces sampled every 60 s (so the error peaks
right after each flux step are seen); every solver is judged on it at the same both-face
accuracy (see :func:`step_case`).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from fdwall.materials import Material, Table
from fdwall.model import (
    Case,
    Chamber,
    Control,
    EnclosureWall,
    Face,
    Heater,
    Layer,
    RunSettings,
    Wall,
)
from fdwall.schedule import Schedule

SIGMA = 5.670374419e-8          # Stefan-Boltzmann constant [W/m2/K4] (CODATA 2018)

HOURS = 3600.0
DURATION = 8 * HOURS            # simulated time [s]
HEAT_OFF = 5 * HOURS            # heater flux switched off [s]
OUTPUT_INTERVAL = 300.0         # outputs every 5 min [s]
FLUX = 6000.0                   # heater flux on the inner face [W/m2]
T_AMB = 300.0                   # ambient air and radiant surroundings [K]
H_OUT = 8.0                     # outer film coefficient [W/m2/K]
EPS_OUT = 0.8                   # outer emissivity [-]
T0 = 300.0                      # initial temperature [K]
THICKNESS = (0.115, 0.100, 0.003)   # refractory, fibre, steel [m]
INNER_RADIUS = 0.1              # pipe variant (b) [m]

# ---- demo materials (DEMO DATA, typical of the class, invented for the benchmark) ----------
REFRACTORY = Material(
    "bench-dense-refractory",
    k=Table([300.0, 700.0, 1100.0, 1500.0], [1.00, 1.10, 1.20, 1.30]),
    cp=Table([300.0, 700.0, 1100.0, 1500.0], [850.0, 980.0, 1040.0, 1080.0]),
    rho=2200.0, source="demo data for the benchmark suite")
FIBRE = Material(
    "bench-ceramic-fibre",
    k=Table([300.0, 500.0, 700.0, 900.0, 1100.0, 1300.0],
            [0.05, 0.07, 0.10, 0.15, 0.22, 0.30]),
    cp=Table([300.0, 700.0, 1100.0, 1500.0], [850.0, 1050.0, 1130.0, 1160.0]),
    rho=128.0, source="demo data for the benchmark suite")
STEEL = Material("bench-steel-skin", k=50.0, cp=480.0, rho=7850.0,
                 source="demo data for the benchmark suite")
MATERIALS = (REFRACTORY, FIBRE, STEEL)


def flux_schedule(flux=FLUX, off=HEAT_OFF) -> Schedule:
    """Heater flux on the inner face: ``flux`` [W/m2] until ``off`` [s], then 0."""
    return Schedule([0.0, off, off], [flux, flux, 0.0])


def wall_case(geometry="slab", tolerance=0.01, refine=1.0, cells=None, thickness=THICKNESS,
              flux=FLUX, duration=DURATION, output_interval=OUTPUT_INTERVAL, max_step=None,
              t_off=HEAT_OFF):
    """Problem (a) (``geometry='slab'``) or (b) (``'cylinder'``) as an fdwall Case.

    ``cells`` (tuple, one per layer) overrides the default mesh; ``refine`` scales it.
    """
    cells = cells or (None, None, None)
    layers = [Layer(m, t, cells=c) for m, t, c in zip(MATERIALS, thickness, cells)]
    wall = Wall(layers, shape=geometry,
                inner_radius=INNER_RADIUS if geometry != "slab" else None, refine=refine,
                name="furnace-wall" if geometry == "slab" else "hot-pipe")
    inner = Face(heat_flux=flux_schedule(flux, t_off))
    outer = Face.exchange(T_AMB, H_OUT, emissivity=EPS_OUT, surroundings=T_AMB)
    run = RunSettings(duration=duration, start_temperature=T0, output_every=output_interval,
                      tolerance=tolerance, max_step=max_step)
    return Case(run, wall=wall, inner=inner, outer=outer, name=f"bench-{geometry}")


# ---- problem (e): the flux-step wall, 60-s sampling ----------------------------------------
STEP_FLUX = 5000.0              # heater flux while on [W/m2]
STEP_OFF = 4 * HOURS            # flux switched off [s]
STEP_INTERVAL = 60.0            # face samples every 60 s [s]
# (e) is run with two hot faces: the dense refractory of (a), and a light insulating firebrick
# (DEMO DATA, typical of the class), whose low effusivity makes the heated face respond
# fast to a flux step, so that a coarse mesh at the face shows
IFB = Material(
    "bench-insulating-firebrick",
    k=Table([300.0, 700.0, 1100.0, 1500.0], [0.25, 0.29, 0.34, 0.40]),
    cp=Table([300.0, 700.0, 1100.0, 1500.0], [850.0, 980.0, 1040.0, 1080.0]),
    rho=800.0, source="demo data for the benchmark suite")
STEP_WALLS = {"dense": (MATERIALS, THICKNESS), "light": ((IFB, FIBRE, STEEL), THICKNESS)}
STEP_LABELS = {"dense": "dense refractory hot face (the layers of (a))",
               "light": "insulating-firebrick hot face"}


def step_case(tolerance=None, refine=None, cells=None, duration=DURATION, t_off=STEP_OFF,
              hot_face="dense"):
    """Problem (e) as an fdwall Case.

    ``tolerance`` [K] and ``refine`` [-] left as None keep fdwall's own defaults (the headline
    comparison runs fdwall exactly as a user who sets neither would); give them to tune.
    """
    cells = cells or (None, None, None)
    mats, thick = STEP_WALLS[hot_face]
    layers = [Layer(m, t, cells=c) for m, t, c in zip(mats, thick, cells)]
    wkw = {} if refine is None else {"refine": refine}
    wall = Wall(layers, shape="slab", name="flux-step-wall", **wkw)
    inner = Face(heat_flux=flux_schedule(STEP_FLUX, t_off))
    outer = Face.exchange(T_AMB, H_OUT, emissivity=EPS_OUT, surroundings=T_AMB)
    rkw = {} if tolerance is None else {"tolerance": tolerance}
    run = RunSettings(duration=duration, start_temperature=T0, output_every=STEP_INTERVAL, **rkw)
    return Case(run, wall=wall, inner=inner, outer=outer, name="bench-flux-step")


def enclosure_spec():
    """Data of problem (c) (DEMO DATA): a small furnace of five walls of the (a) construction.

    Floor, roof, sides, back and door as separate assemblies with their own areas [m2] and
    outer film coefficients [W/m2/K]; inner film 15 W/m2/K to the chamber; chamber contents
    20 kJ/K; 0.5 W/K of further losses; a 12 kW heater on a thermostat at 800 K (band 10 K)
    for 5 h, then off (it reaches the setpoint after about 2.5 h and then cycles every minute
    or so).
    """
    return {"names": ("floor", "roof", "sides", "back", "door"),
            "areas": (0.36, 0.36, 0.72, 0.36, 0.36), "h_out": (6.0, 9.0, 8.0, 8.0, 8.0),
            "h_in": 15.0, "capacity": 20000.0, "extra_ua": 0.5, "power": 12000.0,
            "setpoint": 800.0, "band": 10.0}


def enclosure_case(tolerance=0.01, refine=1.0, duration=DURATION):
    """Problem (c) as an fdwall Case (see :func:`enclosure_spec`)."""
    sp = enclosure_spec()
    walls = []
    for a, h, n in zip(sp["areas"], sp["h_out"], sp["names"]):
        w = Wall([Layer(m, t) for m, t in zip(MATERIALS, THICKNESS)], area=a, refine=refine,
                 name=n)
        walls.append(EnclosureWall(w, Face.exchange(T_AMB, h, emissivity=EPS_OUT,
                                                    surroundings=T_AMB), inner_face_convection=sp["h_in"]))
    chamber = Chamber(heat_capacity=sp["capacity"], room_temperature=T_AMB, leakage=0.0,
                      extra_loss=sp["extra_ua"])
    heater = Heater(power=sp["power"], placement="chamber")
    control = Control(mode="thermostat", setpoint=sp["setpoint"], band=sp["band"],
                      power_on=Schedule([0.0, HEAT_OFF, HEAT_OFF], [1.0, 1.0, 0.0]))
    run = RunSettings(duration=duration, start_temperature=T0, output_every=OUTPUT_INTERVAL,
                      tolerance=tolerance)
    return Case(run, walls=tuple(walls), chamber=chamber, heater=heater, control=control,
                name="bench-enclosure")


def variants(n=1000, seed=12345):
    """Problem (d): ``n`` variants of (a): (refractory, fibre, steel thickness [m], flux [W/m2]).

    Thicknesses +-30 % (steel 2 to 5 mm), heater flux 3 to 9 kW/m2, from a fixed seed.
    """
    rng = np.random.default_rng(seed)
    t1 = THICKNESS[0] * rng.uniform(0.7, 1.3, n)
    t2 = THICKNESS[1] * rng.uniform(0.7, 1.3, n)
    t3 = rng.uniform(0.002, 0.005, n)
    q = rng.uniform(3000.0, 9000.0, n)
    return np.column_stack([t1, t2, t3, q])


# ---- a plain finite-volume description for the peers ----------------------------------------

@dataclass
class FVProblem:
    """Vertex-centred finite-volume arrays of problem (a)/(b), built here independently of
    fdwall's assembly from node positions only.

    Nodes sit on both faces and on both interfaces; each cell is split between its two nodes
    at its midpoint (slab) or geometric-mean radius (cylinder), each half belongs to one
    layer.  Conductance of the link i -> i+1 is
    ``g[i] * (K(T_i) - K(T_i+1)) / (T_i - T_i+1)`` (Kirchhoff mean), K = int k dT.
    """

    x: np.ndarray          # node radius/depth [m]
    vl: np.ndarray         # left half volume [m3]
    vr: np.ndarray         # right half volume [m3]
    ml: np.ndarray         # material of the left half (-1 none)
    mr: np.ndarray         # material of the right half (-1 none)
    g: np.ndarray          # link geometry factor [m], len n-1
    mlink: np.ndarray      # material of each link, len n-1
    mT: np.ndarray         # (nm, nk) table temperatures [K] (padded by repeating the last)
    mk: np.ndarray         # (nm, nk) conductivity [W/m/K]
    mK: np.ndarray         # (nm, nk) int k dT from the first knot [W/m]
    mc: np.ndarray         # (nm, nk) rho*cp [J/m3/K]
    mH: np.ndarray         # (nm, nk) int rho*cp dT [J/m3]
    a_in: float            # inner face area [m2]
    a_out: float           # outer face area [m2]
    flux: float            # inner heater flux while on [W/m2]
    t_off: float           # heater off time [s]
    geometry: str

    @property
    def n(self):
        return self.x.size


def material_arrays(materials):
    """Pad the materials' piecewise-linear k and rho*cp tables into rectangular arrays."""
    tabs = [m.tables() for m in materials]
    nk = max(t[0].size for t in tabs)
    nm = len(tabs)
    mT, mk, mc = (np.zeros((nm, nk)) for _ in range(3))
    for j, (m, (T, k, cp)) in enumerate(zip(materials, tabs)):
        c = cp * m.rho
        pad = nk - T.size
        # extend with points beyond the table spaced 1000 K apart, values held (constant ends)
        mT[j] = np.concatenate([T, T[-1] + 1000.0 * np.arange(1, pad + 1)])
        mk[j] = np.concatenate([k, np.full(pad, k[-1])])
        mc[j] = np.concatenate([c, np.full(pad, c[-1])])
    dT = np.diff(mT, axis=1)
    mK = np.concatenate([np.zeros((nm, 1)), np.cumsum(0.5 * (mk[:, 1:] + mk[:, :-1]) * dT, 1)], 1)
    mH = np.concatenate([np.zeros((nm, 1)), np.cumsum(0.5 * (mc[:, 1:] + mc[:, :-1]) * dT, 1)], 1)
    return mT, mk, mK, mc, mH


def fv_problem(x_nodes, geometry="slab", thickness=THICKNESS, flux=FLUX, t_off=HEAT_OFF,
               area=1.0, length=1.0, materials=MATERIALS):
    """Build an :class:`FVProblem` from node positions ``x_nodes`` [m] (depth from the inner
    face for a slab, or radius for a cylinder); the interfaces must be nodes."""
    x = np.asarray(x_nodes, float)
    r0 = 0.0 if geometry == "slab" else INNER_RADIUS
    edges = r0 + np.concatenate([[0.0], np.cumsum(thickness)])
    n = x.size
    # layer of each link from its midpoint
    mid = 0.5 * (x[1:] + x[:-1])
    mlink = np.searchsorted(edges, mid) - 1
    for e in edges:
        if np.min(np.abs(x - e)) > 1e-12 * max(1.0, e):
            raise ValueError(f"no node on the interface at {e} m")

    def vol(a, b):
        if geometry == "slab":
            return area * (b - a)
        if geometry == "cylinder":
            return np.pi * length * (b * b - a * a)
        return 4.0 / 3.0 * np.pi * (b ** 3 - a ** 3)

    def gfac(a, b):
        if geometry == "slab":
            return area / (b - a)
        if geometry == "cylinder":
            return 2 * np.pi * length / np.log(b / a)
        return 4 * np.pi / (1.0 / a - 1.0 / b)

    vl, vr = np.zeros(n), np.zeros(n)
    ml, mr = np.full(n, -1), np.full(n, -1)
    # each cell split between its nodes at the midpoint in the coordinate of uniform steady
    # conduction (x; ln r: geometric mean; -1/r: harmonic mean), as fdwall's mesh does, so
    # that every solver works on the same spatial discretisation
    a_, b_ = x[:-1], x[1:]
    split = {"slab": mid, "cylinder": np.sqrt(a_ * b_)}.get(geometry, 2 * a_ * b_ / (a_ + b_))
    vr[:-1] = vol(x[:-1], split)
    vl[1:] = vol(split, x[1:])
    mr[:-1] = mlink
    ml[1:] = mlink
    g = gfac(x[:-1], x[1:])

    def face_area(r):
        if geometry == "slab":
            return area
        if geometry == "cylinder":
            return 2 * np.pi * r * length
        return 4 * np.pi * r * r

    mT, mk, mK, mc, mH = material_arrays(materials)
    return FVProblem(x=x, vl=vl, vr=vr, ml=ml.astype(np.int64), mr=mr.astype(np.int64), g=g,
                     mlink=mlink.astype(np.int64), mT=mT, mk=mk, mK=mK, mc=mc, mH=mH,
                     a_in=face_area(x[0]), a_out=face_area(x[-1]), flux=flux, t_off=t_off,
                     geometry=geometry)


def uniform_nodes(cells_per_layer, geometry="slab", thickness=THICKNESS):
    """Uniformly spaced nodes in each layer (an independent mesh for the reference check)."""
    r0 = 0.0 if geometry == "slab" else INNER_RADIUS
    edges = r0 + np.concatenate([[0.0], np.cumsum(thickness)])
    xs = [np.array([edges[0]])]
    for j, c in enumerate(cells_per_layer):
        xs.append(np.linspace(edges[j], edges[j + 1], c + 1)[1:])
    return np.concatenate(xs)


def output_times(duration=DURATION, interval=OUTPUT_INTERVAL):
    """Output times 0, interval, ..., duration [s]."""
    n = int(round(duration / interval))
    return np.arange(n + 1) * interval
