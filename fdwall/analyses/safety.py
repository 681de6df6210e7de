"""Touch safety of the outer faces of a wall or enclosure: burn verdicts, contact temperature,
a short-contact simulation with a burn-damage indicator, and the time to safe after power-off.

Everything here is an engineering estimate (see :data:`fdwall.cautions.SAFETY_CAUTION`); the
burn-damage figures are an indicator, not a medical prediction
(:data:`fdwall.cautions.BURN_INDICATOR_NOTE`).

Units: temperature [K], time [s], length [m], effusivity [J/(m2 K s^0.5)], film coefficient
[W/m2/K].  Data with their sources (marked "from memory" where not checked) live beside this
module: ``touch_thresholds.toml`` (burn thresholds by surface class and contact time) and
``skin_layers.toml`` (skin layers, Henriques coefficient sets).

Layer: analyses (imports model, system, solver, result, materials; never case files).
"""
from __future__ import annotations

import difflib
import math
import textwrap
from dataclasses import dataclass, field, replace
from functools import lru_cache
from pathlib import Path
from typing import Optional

import numpy as np

try:
    import tomllib
except ModuleNotFoundError:  # pragma: no cover - Python 3.10
    import tomli as tomllib

from .. import solver  # drivers as solver.run / solver.solve_steady (patchable in tests)
from ..atomic import atomic_path
from ..cautions import BURN_INDICATOR_NOTE, SAFETY_CAUTION
from ..errors import InputError
from ..materials import Material
from ..model import SURFACE_CLASSES, Case, Face, Layer, RunSettings, Wall
from ..physics.convection import Convection
from ..solver.readout import read_profile
from ..system import build_system

__all__ = [
    "CRITERIA", "SURFACE_CLASSES", "DAMAGE_MODELS", "effusivity", "contact_temperature",
    "surface_for_contact", "threshold", "touch_limit", "surface_class_of", "spreading_length",
    "damage_integral", "simulate_contact", "ContactResult", "FaceTouch", "TouchAssessment",
    "evaluate_touch", "thresholds", "skin_data", "write_touch_plots", "damage_rate",
    "damage_indicator",
]

_HERE = Path(__file__).parent
CRITERIA = ("table", "industrial", "consumer", "rise", "limit")
DAMAGE_MODELS = ("henriques-1947", "weaver-stoll-1969")
#: Contact radius of a fingertip used for the spreading warning [m] (about 10 mm; common
#: practice, no source).
FINGERTIP_RADIUS = 0.010
#: Longest contact the simulation covers [s] ("up to about a minute").
MAX_SIMULATED_CONTACT = 60.0
#: Default contact time of the table criterion [s] (top of the short-contact band).
DEFAULT_CONTACT_TIME = 10.0


def _toml(name):
    with open(_HERE / name, "rb") as fh:
        return tomllib.load(fh)


@lru_cache(maxsize=None)
def thresholds() -> dict:
    """The bundled burn-threshold data (``touch_thresholds.toml``) as a dict [degC, s]."""
    return _toml("touch_thresholds.toml")


@lru_cache(maxsize=None)
def skin_data() -> dict:
    """The bundled skin layers and damage coefficient sets (``skin_layers.toml``)."""
    return _toml("skin_layers.toml")


def _near(word, choices):
    near = difflib.get_close_matches(str(word), list(choices), n=2, cutoff=0.4)
    return f" (did you mean {' or '.join(repr(n) for n in near)}?)" if near else ""


def _check_class(surface_class, option="--surface"):
    if surface_class not in SURFACE_CLASSES:
        raise InputError(f"{option}: unknown surface class {surface_class!r}"
                         f"{_near(surface_class, SURFACE_CLASSES)}. Allowed: "
                         f"{', '.join(SURFACE_CLASSES)}.")


def _check_criterion(criterion):
    if criterion not in CRITERIA:
        raise InputError(f"--criterion: unknown criterion {criterion!r}{_near(criterion, CRITERIA)}."
                         f" Allowed: {', '.join(CRITERIA)}.")


# --------------------------------------------------------------------------- contact temperature

def effusivity(k, rho, cp) -> float:
    """Thermal effusivity ``b = sqrt(k rho cp)`` [J/(m2 K s^0.5)] of conductivity ``k`` [W/m/K],
    density ``rho`` [kg/m3] and specific heat ``cp`` [J/kg/K]."""
    k, rho, cp = float(k), float(rho), float(cp)
    if not (k > 0 and rho > 0 and cp > 0) or not all(map(math.isfinite, (k, rho, cp))):
        raise InputError(f"effusivity needs positive finite k, rho and cp; got k={k!r} W/m/K, "
                         f"rho={rho!r} kg/m3, cp={cp!r} J/kg/K")
    return math.sqrt(k * rho * cp)


def _skin_b_T():
    d = skin_data()
    ep = d["layer"][0]
    return math.sqrt(ep["k_W_mK"] * ep["rho_c_J_m3K"]), d["surface_temperature_C"] + 273.15


#: Effusivity of the skin surface (epidermis of skin_layers.toml) [J/(m2 K s^0.5)].
B_SKIN = _skin_b_T()[0]
#: Resting skin-surface temperature [K].
T_SKIN = _skin_b_T()[1]


def contact_temperature(T_surface, b_surface, T_skin=T_SKIN, b_skin=B_SKIN) -> float:
    """Instant contact temperature [K] of skin (``T_skin`` [K], effusivity ``b_skin``) pressed
    on a surface at ``T_surface`` [K] of effusivity ``b_surface`` [J/(m2 K s^0.5)]: the
    interface temperature of two semi-infinite bodies, (b1 T1 + b2 T2)/(b1 + b2) (Carslaw and
    Jaeger, Conduction of Heat in Solids, 2nd ed., sec. 2.15)."""
    b1, b2 = float(b_surface), float(b_skin)
    if not (b1 > 0 and b2 > 0):
        raise InputError("contact temperature needs positive effusivities [J/(m2 K s^0.5)]")
    return (b1 * float(T_surface) + b2 * float(T_skin)) / (b1 + b2)


def surface_for_contact(T_contact, b_surface, T_skin=T_SKIN, b_skin=B_SKIN) -> float:
    """The surface temperature [K] at which skin (``T_skin`` [K], ``b_skin``) touching a body of
    effusivity ``b_surface`` [J/(m2 K s^0.5)] reaches the contact temperature ``T_contact``
    [K]: the inverse of :func:`contact_temperature`."""
    b1, b2 = float(b_surface), float(b_skin)
    if not (b1 > 0 and b2 > 0):
        raise InputError("surface_for_contact needs positive effusivities [J/(m2 K s^0.5)]")
    return float(T_contact) + (float(T_contact) - float(T_skin)) * b2 / b1


# --------------------------------------------------------------------------- thresholds, limits

def threshold(surface_class, contact_time):
    """Burn threshold of the bundled table for ``surface_class`` and ``contact_time`` [s].

    Returns ``(lower [K], upper [K], banded)``: where the table gives a band (short contacts)
    ``lower < upper`` and ``banded`` is True.  Between tabulated contact times both edges are
    interpolated linearly in log10(contact time).

    Raises
    ------
    InputError
        Unknown class, or a contact time at or below zero or outside the tabulated range.
    """
    _check_class(surface_class)
    row = thresholds()[surface_class]
    t = np.asarray(row["times_s"], float)
    t_c = float(contact_time)
    if not math.isfinite(t_c) or t_c <= 0:
        raise InputError(f"--contact-time must be positive, got {t_c:g} s. Allowed: "
                         f"{t[0]:g} s to {t[-1]:g} s ({t[-1] / 3600:g} h), the range of the "
                         "threshold table.")
    if t_c < t[0] * (1 - 1e-9) or t_c > t[-1] * (1 + 1e-9):
        raise InputError(f"--contact-time {t_c:g} s is outside the range of the threshold table "
                         f"for {surface_class}: {t[0]:g} s to {t[-1]:g} s ({t[-1] / 3600:g} h).")
    lt = np.log10(t)
    x = min(max(math.log10(t_c), lt[0]), lt[-1])
    lo = float(np.interp(x, lt, row["lower_C"])) + 273.15
    hi = float(np.interp(x, lt, row["upper_C"])) + 273.15
    return lo, hi, bool(hi - lo > 1e-9)


def _criterion_time(criterion, contact_time):
    """Contact time [s] a criterion uses."""
    if criterion in ("industrial", "consumer"):
        return float(thresholds()["criteria"][criterion]["contact_time_s"])
    return DEFAULT_CONTACT_TIME if contact_time is None else float(contact_time)


def touch_limit(surface_class, contact_time, criterion="table", ambient=None, rise=None,
                limit=None) -> float:
    """Highest safe surface temperature [K] for a surface class and contact time.

    Parameters
    ----------
    surface_class : str
        One of :data:`SURFACE_CLASSES` (used by 'table', 'industrial', 'consumer').
    contact_time : float or None
        Contact time [s] ('table'; 'industrial' and 'consumer' use their own, 5 s and 60 s).
    criterion : {'table', 'industrial', 'consumer', 'rise', 'limit'}
        'table': lower edge of the burn threshold (ISO 13732-1 data, from memory);
        'industrial' / 'consumer': the table at 5 s / 60 s (ASTM C1055 design cases);
        'rise': ``ambient + rise``; 'limit': ``limit``.
    ambient : float, optional
        Ambient temperature [K] (needed by 'rise'; 'limit' must not lie below it).
    rise : float, optional
        Allowed rise over ambient [K] ('rise').
    limit : float, optional
        The user's own limit [K] ('limit').
    """
    _check_criterion(criterion)
    if criterion == "rise":
        if rise is None or not rise > 0:
            raise InputError("--criterion rise needs --rise DIFFERENCE, a positive temperature "
                             "difference such as \"35 K\".")
        if ambient is None:
            raise InputError("--criterion rise needs an ambient temperature (--ambient).")
        return float(ambient) + float(rise)
    if criterion == "limit":
        if limit is None:
            raise InputError("--criterion limit needs --limit TEMPERATURE, e.g. \"60 degC\".")
        if ambient is not None and float(limit) <= float(ambient):
            raise InputError(f"--limit {float(limit) - 273.15:.4g} degC is not above the ambient "
                             f"{float(ambient) - 273.15:.4g} degC; no surface can cool below its "
                             "surroundings. Give a limit above ambient.")
        return float(limit)
    return threshold(surface_class, _criterion_time(criterion, contact_time))[0]


# --------------------------------------------------------------------------- surface class

def surface_class_of(layer, face: Face):
    """Surface class of an outer face and where it came from: ``(class, source text)``.

    From the face's own ``surface_class`` (case file) if given, else from the outer layer's
    material category and name and the face's emissivity (a metal with emissivity >= 0.6 is
    taken as coated/painted; common practice, no source)."""
    if face.surface_class:
        return face.surface_class, "case file (surface_class of the face)"
    m = layer.material
    cat = (getattr(m, "category", "") or "").lower()
    name = (getattr(m, "name", "") or "").lower()
    eps = face.emissivity
    e = None
    if eps is not None:
        e = float(eps) if not hasattr(eps, "values") else float(max(eps.values))
    if cat == "metal" or any(w in name for w in ("steel", "alumin", "copper", "iron")):
        if e is not None and e >= 0.6:
            return "coated-metal", (f"outer layer '{layer.label}' is metal with a face emissivity "
                                    f"{e:.2g} >= 0.6: taken as painted/coated")
        shown = f"{e:.2g}" if e is not None else "none given"
        return "bare-metal", (f"outer layer '{layer.label}' is metal with face emissivity {shown}:"
                              " taken as bare metal")
    if "wood" in name or cat == "wood":
        return "wood", f"outer layer '{layer.label}' is wood"
    if "plastic" in name or cat in ("plastic", "polymer"):
        return "plastic", f"outer layer '{layer.label}' is a plastic"
    if cat in ("glass", "dense refractory", "insulating refractory", "building") or \
            any(w in name for w in ("glass", "brick", "concrete", "ceramic", "stone")):
        return "ceramic-glass-stone", (f"outer layer '{layer.label}' is of category '{cat}'")
    return "bare-metal", (f"outer layer '{layer.label}' (category '{cat or 'none'}') matches no "
                          "class: bare metal taken, the most conservative class")


# --------------------------------------------------------------------------- damage integral

def _damage_set(model):
    sets = skin_data()["damage"]
    if model not in sets:
        raise InputError(f"unknown burn-damage coefficient set {model!r}{_near(model, sets)}. "
                         f"Allowed: {', '.join(sets)}.")
    return sets[model]


def damage_rate(T, model="henriques-1947"):
    """Henriques damage rate dOmega/dt [1/s] at basal-layer temperature ``T`` [K] (array)."""
    s = _damage_set(model)
    T = np.asarray(T, float)
    out = np.zeros_like(T)
    Tc = T - 273.15
    for i, (t_from, P, ER) in enumerate(s["ranges"]):
        t_to = s["ranges"][i + 1][0] if i + 1 < len(s["ranges"]) else np.inf
        sel = (Tc > t_from) & (Tc <= t_to)
        out[sel] = P * np.exp(-ER / T[sel])
    return out


def damage_integral(times, T, model="henriques-1947") -> float:
    """Henriques damage integral Omega [-] of a basal-layer history ``T`` [K] at ``times`` [s]
    (trapezoidal rule on the rate)."""
    r = damage_rate(T, model)
    t = np.asarray(times, float)
    return float(np.sum(0.5 * (r[1:] + r[:-1]) * np.diff(t))) if t.size > 1 else 0.0


def damage_indicator(omega, model="henriques-1947") -> str:
    """'none', 'first-degree' or 'second-degree' for a damage integral ``omega`` [-]."""
    s = _damage_set(model)
    if omega >= s["second_degree"]:
        return "second-degree"
    if omega >= s["first_degree"]:
        return "first-degree"
    return "none"


# --------------------------------------------------------------------------- contact simulation

def spreading_length(k, thickness, contact_time, b_skin=B_SKIN) -> float:
    """Spreading length [m] of a thin jacket (conductivity ``k`` [W/m/K], ``thickness`` [m])
    pressed on skin for ``contact_time`` [s]: sqrt(k d / G) with the skin's contact conductance
    G = b_skin / sqrt(pi t) of a semi-infinite body (Carslaw and Jaeger sec. 2.4 flux form)."""
    G = b_skin / math.sqrt(math.pi * max(float(contact_time), 1e-6))
    return math.sqrt(float(k) * float(thickness) / G)


@dataclass
class ContactResult:
    """History of a simulated contact.

    Attributes: times [s], T_surface [K] (skin surface), T_basal [K] (epidermis/dermis), the
    damage integral [-] and indicator, the coefficient set used, and notes."""

    times: np.ndarray
    T_surface: np.ndarray
    T_basal: np.ndarray
    damage: float
    indicator: str
    model: str
    complete: bool = True
    notes: list = field(default_factory=list)

    def to_dict(self) -> dict:
        """JSON-ready summary (SI)."""
        s = _damage_set(self.model)
        k = int(np.argmax(self.T_basal))
        return {"basal_peak_K": float(self.T_basal[k]), "basal_peak_s": float(self.times[k]),
                "skin_surface_peak_K": float(np.max(self.T_surface)),
                "simulated_s": float(self.times[-1]),
                "damage_integral": float(self.damage), "indicator": self.indicator,
                "damage_model": self.model, "damage_model_title": s["title"],
                "damage_coefficients": [{"from_K": r[0] + 273.15, "P_1_s": r[1], "dE_R_K": r[2]}
                                        for r in s["ranges"]],
                "damage_source": s["source"], "first_degree_at": s["first_degree"],
                "second_degree_at": s["second_degree"], "complete": bool(self.complete),
                "notes": list(self.notes), "note": BURN_INDICATOR_NOTE}


def _skin_layers():
    out = []
    for ly in skin_data()["layer"]:
        m = Material(name=ly["name"], k=ly["k_W_mK"], cp=ly["rho_c_J_m3K"] / 1000.0, rho=1000.0,
                     category="tissue", source=ly["source"])
        out.append(Layer(material=m, thickness=ly["thickness_m"], name=ly["name"]))
    return tuple(out)


def _resolved(wall_layers, skin, t_c, T_w, T_s):
    """Wall and skin layers with cell counts that resolve the heated depth of a contact
    lasting ``t_c`` [s] near the contact plane (cells of 0.07 sqrt(alpha t_c) within five
    such depths of the plane; 4 to 600 cells per layer; other layers as meshed by default)."""
    out = []
    for side, lays, T in (("wall", wall_layers[::-1], T_w), ("skin", skin, T_s)):
        depth = 0.0
        res = []
        for ly in lays:
            k, rho, cp = _props(ly.material, T)
            pen = math.sqrt(k / (rho * cp) * t_c)
            if depth < 5 * pen:
                n = int(min(600, max(4, math.ceil(ly.thickness / (0.07 * pen)))))
                ly = replace(ly, cells=max(n, ly.cells or 0))
            depth += ly.thickness
            res.append(ly)
        out.append(res[::-1] if side == "wall" else res)
    return tuple(out[0]) + tuple(out[1])


def _props(m, T):
    return float(m.k(T)), float(m.rho), float(m.cp(T))


def simulate_contact(wall: Wall, x, T_wall, contact_time, *, skin=None, T_skin_surface=None,
                     T_core=None, contact_resistance=0.0, model="henriques-1947",
                     hold_inner=True) -> ContactResult:
    """Press skin onto the outer face of ``wall`` and solve the contact with fdwall's solver.

    Parameters
    ----------
    wall : Wall
        The wall (slab assumed at fingertip scale), inner layer first.
    x, T_wall : array
        Depth from the inner face [m] and temperature [K] of the wall at the start of contact
        (its node profile).  The contact mesh takes its start temperatures between these
        samples from the Kirchhoff read-out in the wall's own geometry
        (:func:`fdwall.solver.readout.read_profile`).
    contact_time : float
        Contact time [s] (capped at :data:`MAX_SIMULATED_CONTACT`).
    skin : tuple of Layer, optional
        Skin layers from the surface inward (default: ``skin_layers.toml``).  The first
        interface inside the skin is the basal layer.
    T_skin_surface, T_core : float, optional
        Resting skin-surface and core temperatures [K] (linear in thermal resistance between
        them); the core is held at ``T_core`` during contact.
    contact_resistance : float
        Skin-surface contact resistance [m2.K/W] (0, the conservative choice).
    model : str
        Damage coefficient set, one of :data:`DAMAGE_MODELS`.
    hold_inner : bool
        Hold the wall's inner face at its start temperature (else adiabatic).
    """
    sd = skin_data()
    skin = _skin_layers() if skin is None else tuple(skin)
    Ts = sd["surface_temperature_C"] + 273.15 if T_skin_surface is None else float(T_skin_surface)
    Tc = sd["core_temperature_C"] + 273.15 if T_core is None else float(T_core)
    notes = []
    t_c = float(contact_time)
    if t_c > MAX_SIMULATED_CONTACT:
        notes.append(f"contact simulated for {MAX_SIMULATED_CONTACT:g} s of the {t_c:g} s "
                     "contact time (the simulation covers short contacts)")
        t_c = MAX_SIMULATED_CONTACT
    nw = len(wall.layers)
    layers = _resolved(tuple(wall.layers), skin, t_c, T_wall[-1], Ts)
    contact = tuple(wall.interface_resistance) + (float(contact_resistance),) + (0.0,) * (len(skin) - 1)
    slab = Wall(layers=layers, shape="slab", area=1.0, interface_resistance=contact,
                name=f"{wall.name} + skin")
    x = np.asarray(x, float)
    T_wall = np.asarray(T_wall, float)
    inner = Face(fixed_temperature=float(T_wall[0])) if hold_inner else Face()
    probe = Case(run=RunSettings(duration=t_c), wall=slab, inner=inner, outer=Face(fixed_temperature=Tc),
                 name="contact")
    sysm = build_system(probe)
    m = sysm.meshes[0]
    xs = m.x - m.x[0]
    L = wall.thickness
    # resting skin profile: linear in thermal resistance from the surface to the core
    R = np.concatenate([[0.0], np.cumsum([ly.thickness / float(ly.material.k(Ts)) for ly in skin])])
    d = np.concatenate([[0.0], np.cumsum([ly.thickness for ly in skin])])
    ll, lr = m.layer_of_node_left, m.layer_of_node_right
    T0 = np.empty(xs.size)
    b_w = effusivity(*_props(wall.layers[-1].material, T_wall[-1]))
    b_s = effusivity(*_props(skin[0].material, Ts))
    sides = [{int(v) for v in (ll[i], lr[i]) if v >= 0} for i in range(xs.size)]
    in_wall = np.array([bool(sd_) and max(sd_) < nw for sd_ in sides])
    in_skin = np.array([bool(sd_) and min(sd_) >= nw for sd_ in sides])
    # the wall's profile between its nodes: the Kirchhoff read-out in the wall's own geometry
    # (exact at steady state for any k(T), slab, cylinder or sphere)
    if np.any(in_wall):
        T0[in_wall] = read_profile(wall, x, T_wall, xs[in_wall])
    T0[in_skin] = Ts + (Tc - Ts) * np.interp(xs[in_skin] - L, d, R) / R[-1]
    # the shared node of the contact plane: the instant contact temperature
    T0[~(in_wall | in_skin)] = contact_temperature(T_wall[-1], b_w, Ts, b_s)
    n_out = 400
    case = replace(probe, run=RunSettings(duration=t_c, output_every=t_c / n_out,
                                          tolerance=0.002, start_temperature=T0))
    res = solver.run(case, initial=T0, system=sysm, strict=False, progress=False, estimate=False)
    iface = m.interface_nodes
    j_surf = iface[nw - 1]
    if contact_resistance > 0:
        j_surf += 1   # the skin-side node of the contact pair
    Tsurf = res.T[:, j_surf]
    Tb = res.T[:, iface[nw]]
    om = damage_integral(res.times, Tb, model)
    if not res.complete:
        notes.append("the contact simulation stopped early: " + res.message)
    return ContactResult(times=res.times, T_surface=Tsurf, T_basal=Tb, damage=om,
                         indicator=damage_indicator(om, model), model=model,
                         complete=res.complete, notes=notes)


# --------------------------------------------------------------------------- assessment

@dataclass
class FaceTouch:
    """Touch assessment of one outer face (all SI).  ``to_dict`` gives the JSON entry."""

    face: str
    surface_class: str
    class_source: str
    verdict: str
    T_max_K: float
    t_max_s: float
    T_steady_K: Optional[float]
    limit_K: float
    margin_K: Optional[float]
    contact_temperature_K: float
    first_over_s: Optional[float]
    time_over_s: float
    contact: Optional[dict]
    band: Optional[dict] = None
    times: Optional[np.ndarray] = None
    T: Optional[np.ndarray] = None
    contact_history: Optional[ContactResult] = None
    safe_after_off_s: Optional[float] = None
    warnings: list = field(default_factory=list)

    def to_dict(self) -> dict:
        """The face's JSON object (keys fixed by the command-line interface)."""
        d = {"face": self.face, "surface_class": self.surface_class,
             "surface_class_source": self.class_source, "verdict": self.verdict,
             "T_max_K": self.T_max_K, "t_max_s": self.t_max_s, "T_steady_K": self.T_steady_K,
             "limit_K": self.limit_K, "margin_K": self.margin_K,
             "contact_temperature_K": self.contact_temperature_K,
             "first_over_s": self.first_over_s, "time_over_s": self.time_over_s,
             "contact": self.contact}
        if self.band is not None:
            d["threshold_band"] = self.band
        d["safe_after_power_off_s"] = self.safe_after_off_s
        d["warnings"] = list(self.warnings)
        return d


@dataclass
class TouchAssessment:
    """Result of :func:`evaluate_touch`; ``to_dict`` gives the JSON object of ``fdwall touch``."""

    criterion: str
    contact_time_s: float
    ambient_K: float
    faces: list
    complete: bool = True
    conditions: dict = field(default_factory=dict)
    criterion_info: dict = field(default_factory=dict)
    skipped: list = field(default_factory=list)
    after_power_off: Optional[dict] = None
    sensitivity: list = field(default_factory=list)
    warnings: list = field(default_factory=list)
    result: object = None
    steady: object = None

    @property
    def caution(self) -> str:
        """The safety caution every output carries."""
        return SAFETY_CAUTION

    def h5_dict(self, d=None) -> dict:
        """What the HDF5 group ``touch`` holds: :meth:`to_dict` (or ``d``) plus the skin
        temperature and contact-simulation histories (times [s], temperatures [K])."""
        d = dict(self.to_dict() if d is None else d)
        d["histories"] = [{"face": f.face, "times_s": f.times, "T_skin_K": f.T,
                           "limit_K": f.limit_K} for f in self.faces]
        d["contact_histories"] = [
            {"face": f.face, "times_s": f.contact_history.times,
             "T_surface_K": f.contact_history.T_surface,
             "T_basal_K": f.contact_history.T_basal}
            for f in self.faces if f.contact_history is not None]
        return d

    def to_dict(self) -> dict:
        """The JSON object of ``fdwall touch --json`` (SI units, kelvin, seconds)."""
        return {"criterion": self.criterion, "contact_time_s": self.contact_time_s,
                "ambient_K": self.ambient_K, "caution": SAFETY_CAUTION,
                "burn_indicator_note": BURN_INDICATOR_NOTE, "complete": bool(self.complete),
                "criterion_info": self.criterion_info, "conditions": self.conditions,
                "faces": [f.to_dict() for f in self.faces], "skipped_faces": self.skipped,
                "after_power_off": self.after_power_off, "sensitivity": self.sensitivity,
                "warnings": list(self.warnings)}


def _outer_face(case: Case, case_wall: int) -> Face:
    return case.outer if case.wall is not None else case.walls[case_wall].outer


def _with_outer(case: Case, fn) -> Case:
    """A copy of ``case`` with every outer face replaced by ``fn(face)``."""
    if case.wall is not None:
        return replace(case, outer=fn(case.outer))
    return replace(case, walls=tuple(replace(ew, outer=fn(ew.outer)) for ew in case.walls))


def _crossings(t, y, lim):
    """First upward crossing [s] and total time above ``lim`` [s] of a sampled curve."""
    over = y > lim
    if not over.any():
        return None, 0.0
    first = None
    total = 0.0
    for k in range(1, t.size):
        a, b = y[k - 1] - lim, y[k] - lim
        dt = t[k] - t[k - 1]
        if a > 0 and b > 0:
            total += dt
        elif a > 0 or b > 0:
            s = a / (a - b)   # crossing fraction
            total += dt * (s if a > 0 else 1 - s)
            if first is None and b > 0:
                first = t[k - 1] + s * dt
    if first is None:
        first = float(t[0])
    return float(first), float(total)


def _last_switch_off(case: Case):
    """Time [s] of the heater's last switch-off, and what it was read from (or None)."""
    cands = []
    scheds = []
    if case.heater is not None:
        scheds.append(("heater power", case.heater.power))
        scheds.append(("control enable", case.control.power_on))
    if case.wall is not None and case.inner.heat_flux is not None:
        scheds.append(("inner-face heat flux", case.inner.heat_flux))
    for what, s in scheds:
        if s is None:
            continue
        t, v = np.asarray(s.times, float), np.asarray(s.values, float)
        if v.size and v[-1] <= 0 and np.any(v > 0):
            k = int(np.max(np.where(v > 0)[0]))   # last knot with power; off at the next one
            if k + 1 < t.size:
                cands.append((float(t[k + 1]), what))
    if not cands:
        return None, None
    return min(cands)


def _scale_h(face: Face, factor):
    c = face.convection
    if isinstance(c, (int, float)):
        return replace(face, convection=float(c) * factor)
    if isinstance(c, Convection):
        return replace(face, convection=replace(c, multiplier=c.multiplier * factor))
    return face


def evaluate_touch(case: Case, *, criterion="table", contact_time=None, surface=None, limit=None,
                   rise=None, ambient=None, off_at=None, door_open=None, result=None, steady=None,
                   simulate_contact=True, progress=False, damage_model="henriques-1947",
                   contact_resistance=0.0, faces=None, sensitivity=True) -> TouchAssessment:
    """Touch-safety verdicts for every touchable outer face of ``case`` (bridges included).

    Parameters
    ----------
    case : Case
        The problem (single wall or enclosure).
    criterion : {'table', 'industrial', 'consumer', 'rise', 'limit'}
        How the limit is set (see :func:`touch_limit`).
    contact_time : float, optional
        Contact time [s] for 'table' (default 10 s); 'industrial'/'consumer' fix their own.
    surface : str, optional
        Surface class for every face (overrides the case file and the outer layer).
    limit, rise : float, optional
        Limit [K] ('limit') or rise over ambient [K] ('rise').
    ambient : float, optional
        Worst-case ambient [K]: every outer face's air and radiant surroundings are set to it
        and the case is re-run.  Default: the case's own conditions.
    off_at : float, optional
        Power-off time [s] for the time to safe; default the heater's last switch-off.
    door_open : float, optional
        Chamber (single wall: inner face) temperature [K] below which the door may open.
    result, steady : Result, SteadyResult, optional
        A run and steady state of ``case`` already computed (ignored with ``ambient``).
    simulate_contact : bool
        Run the short-contact simulation of each face.
    progress : bool
        Progress bar for the run.
    damage_model : str
        Burn-damage coefficient set (:data:`DAMAGE_MODELS`).
    contact_resistance : float
        Skin contact resistance [m2.K/W] for the simulation.
    faces : list of str, optional
        Only these faces (names as in the results, e.g. "side panel:outer").
    sensitivity : bool
        Re-solve the steady state with film coefficients +-25 % and bright/painted emissivity.
    """
    _check_criterion(criterion)
    if surface is not None:
        _check_class(surface)
    if criterion in ("industrial", "consumer") and contact_time is not None:
        raise InputError(f"--contact-time goes with --criterion table (or rise/limit, where it "
                         f"sets the simulated contact); the {criterion} criterion has its own "
                         f"contact time of {_criterion_time(criterion, None):g} s.")
    if contact_time is not None and not contact_time > 0:
        raise InputError(f"--contact-time must be positive, got {contact_time:g} s.")
    if damage_model not in DAMAGE_MODELS:
        _damage_set(damage_model)
    t_contact = _criterion_time(criterion, contact_time)
    if criterion in ("table", "industrial", "consumer"):
        # validate the contact time against the table range once, with a clean message
        threshold(surface or SURFACE_CLASSES[0], t_contact)
    if criterion == "rise" and (rise is None or not rise > 0):
        touch_limit("bare-metal", t_contact, "rise", ambient=ambient or 293.15, rise=rise)
    if criterion == "limit" and limit is None:
        touch_limit("bare-metal", t_contact, "limit")
    warnings = []
    conditions = {}
    run_case = case
    if ambient is not None:
        amb = float(ambient)

        def worst(f: Face):
            if f.fixed_temperature is not None:
                return f
            return replace(f, fluid_temperature=(amb if f.fluid_temperature is not None
                                                 else None),
                           surroundings_temperature=(amb if (f.surroundings_temperature
                                                             is not None or
                                                             f.emissivity is not None)
                                                     else None))
        run_case = _with_outer(case, worst)
        result = steady = None
        conditions["ambient"] = (f"outer air and radiant surroundings set to "
                                 f"{amb - 273.15:.4g} degC (--ambient)")
    else:
        conditions["ambient"] = "the case's own outer-face conditions"
    conditions["air"] = "the case's own outer film coefficients (still air where the case has "\
                        "natural convection)"
    has_sun = False
    sysm = build_system(run_case)
    if result is None:
        result = solver.run(run_case, progress=progress, strict=False, system=sysm)
    else:
        sysm = result.system
    if steady is None:
        try:
            steady = solver.solve_steady(run_case, system=sysm)
        except Exception as exc:  # a missing steady state must not lose the run's verdicts
            steady = None
            warnings.append(f"no steady state found: {exc}")
    complete = bool(result.complete)
    times = result.times
    # ambient shown: the given one, else the highest outer air temperature of the case
    if ambient is None:
        vals = []
        for j in range(len(run_case.wall_list)):
            f = _outer_face(run_case, j)
            if f.heat_flux is not None:
                has_sun = True
            s = f.fluid_temperature if f.fluid_temperature is not None else f.surroundings_temperature
            if s is not None:
                vals.append(max(s.values))
        amb = float(max(vals)) if vals else 293.15
        if not vals:
            warnings.append("no outer air temperature in the case: ambient taken as 20 degC")
    conditions["sun"] = ("imposed outer-face fluxes (sun) of the case included" if has_sun
                         else "no sun or other imposed flux on the outer faces")
    if criterion == "limit":
        touch_limit("bare-metal", t_contact, "limit", ambient=amb, limit=limit)
    names = list(result.face_names)
    outer_paths = list(range(len(sysm.walls)))
    wanted = None
    if faces:
        all_outer = [names[2 * j + 1] for j in outer_paths]
        for f in faces:
            if f not in all_outer:
                raise InputError(f"--face: no outer face named {f!r}{_near(f, all_outer)}. "
                                 f"Outer faces of this case: {', '.join(all_outer)}.")
        wanted = set(faces)
    rows = []
    skipped = []
    info = {"name": criterion, "contact_time_s": t_contact}
    if criterion in ("table", "industrial", "consumer"):
        info["source"] = thresholds()["source"]
        info["checked_against_standard"] = bool(thresholds().get("checked", False))
        info["data_note"] = thresholds().get("note", "")
        info["interpolation"] = "linear in log10(contact time) between tabulated contact times"
        if criterion != "table":
            info["design_case"] = thresholds()["criteria"][criterion]["source"]
    elif criterion == "rise":
        info["rise_K"] = float(rise)
        info["source"] = "user's rise over ambient (appliance-style)"
    else:
        info["source"] = "user's own limit"
    for j in outer_paths:
        fi = 2 * j + 1
        name = names[fi]
        origin = int(sysm.wall_origin[j])
        fdef = _outer_face(run_case, origin)
        if wanted is not None and name not in wanted:
            continue
        if fdef.touch != "touchable":
            skipped.append({"face": name, "touch": fdef.touch})
            continue
        wall = sysm.walls[j]
        outer_layer = wall.layers[-1]
        if surface is not None:
            cls, src = surface, "--surface option (overrides every face)"
        else:
            cls, src = surface_class_of(outer_layer, fdef)
        lim = touch_limit(cls, t_contact, criterion, ambient=amb, rise=rise, limit=limit)
        band = None
        if criterion in ("table", "industrial", "consumer"):
            lo, hi, banded = threshold(cls, t_contact)
            band = {"lower_K": lo, "upper_K": hi, "banded": banded,
                    "uses": "lower edge" if banded else "single curve",
                    "source": thresholds()[cls]["source"]}
        y = result.face_T[:, fi]
        k = int(np.argmax(y))
        Tmax, tmax = float(y[k]), float(times[k])
        Tst = float(steady.face_T[fi]) if steady is not None else None
        Tv = max(Tmax, Tst) if Tst is not None else Tmax
        first, over = _crossings(times, y, lim)
        if first is None and Tst is not None and Tst > lim:
            first = None  # only the steady state is over the limit
        verdict = ("pass" if Tv <= lim else "fail") if complete else "unknown"
        b = effusivity(*_props(outer_layer.material, Tmax))
        Tcont = contact_temperature(Tmax, b)
        warn = []
        contact = None
        hist = None
        if simulate_contact and complete:
            prof = result.wall_T(j)[k]
            hist = simulate_contact_fn(wall, result.x(j), prof, t_contact,
                                       contact_resistance=contact_resistance, model=damage_model)
            contact = hist.to_dict()
            contact["contact_resistance_m2K_W"] = float(contact_resistance)
            kk, rho, cp = _props(outer_layer.material, Tmax)
            alpha = kk / (rho * cp)
            ls = spreading_length(kk, outer_layer.thickness, hist.times[-1])
            thin = outer_layer.thickness < math.sqrt(alpha * hist.times[-1]) and len(wall.layers) > 1
            contact["spreading_length_m"] = ls
            hot = Tcont > skin_data()["basal_threshold_C"] + 273.15
            if thin and hot and ls >= 0.3 * FINGERTIP_RADIUS:
                msg = (f"{name}: the outer layer '{outer_layer.label}' is a thin conductive "
                       f"jacket (spreading length {ls * 1000:.3g} mm against a fingertip contact "
                       f"radius of about {FINGERTIP_RADIUS * 1000:.0f} mm): heat flows sideways "
                       "into the contact, which the 1-D contact simulation leaves out, so it "
                       "understates the skin heating")
                warn.append(msg)
                contact["spreading_warning"] = msg
        if not complete:
            warn.append(f"{name}: the run stopped early; no verdict")
        rows.append(FaceTouch(face=name, surface_class=cls, class_source=src, verdict=verdict,
                              T_max_K=Tmax, t_max_s=tmax, T_steady_K=Tst, limit_K=lim,
                              margin_K=(lim - Tv) if complete else None,
                              contact_temperature_K=Tcont, first_over_s=first, time_over_s=over,
                              contact=contact, band=band, times=times, T=y,
                              contact_history=hist, warnings=warn))
        warnings.extend(warn)
    a = TouchAssessment(criterion=criterion, contact_time_s=t_contact, ambient_K=amb, faces=rows,
                        complete=complete, conditions=conditions, criterion_info=info,
                        skipped=skipped, warnings=warnings, result=result, steady=steady)
    a.after_power_off = _after_off(run_case, result, rows, off_at, door_open)
    if sensitivity and rows and complete:
        a.sensitivity = _sensitivity(run_case, rows, warnings)
    return a


simulate_contact_fn = simulate_contact


def _safe_after(t, y, lim, t_off):
    """Time after ``t_off`` [s] from which ``y`` stays at or below ``lim`` for the rest of the
    run (None: still above at the end)."""
    sel = t >= t_off
    tt, yy = t[sel], y[sel]
    if tt.size == 0:
        return None
    if yy[-1] > lim:
        return None
    over = np.where(yy > lim)[0]
    if over.size == 0:
        return 0.0
    k = int(over[-1])
    a, b = yy[k] - lim, yy[k + 1] - lim
    return float(tt[k] + (tt[k + 1] - tt[k]) * a / (a - b) - t_off)


def _after_off(case, result, rows, off_at, door_open):
    if off_at is None:
        t_off, src = _last_switch_off(case)
    else:
        t_off, src = float(off_at), "--off-at"
    if t_off is None:
        return {"off_at_s": None, "source": "no switch-off found in the case (give --off-at)"}
    t = result.times
    out = {"off_at_s": t_off, "source": src}
    if t_off >= t[-1]:
        out["note"] = "the power-off time lies at or after the end of the run"
        return out
    per = []
    for f in rows:
        f.safe_after_off_s = _safe_after(t, f.T, f.limit_K, t_off)
        per.append(f.safe_after_off_s)
    out["safe_to_touch_after_s"] = (None if any(p is None for p in per)
                                    else (max(per) if per else 0.0))
    if any(p is None for p in per):
        out["note"] = "some face is still above its limit at the end of the run"
    if door_open is not None:
        if result.chamber_T is not None:
            y, ref = result.chamber_T, "chamber"
        else:
            y, ref = result.face_T[:, 0], f"inner face {result.face_names[0]}"
        out["door_open_K"] = float(door_open)
        out["door_reference"] = ref
        out["door_open_after_s"] = _safe_after(t, y, float(door_open), t_off)
    return out


def _sensitivity(case, rows, warnings):
    variants = [("film coefficient -25 %", lambda f: _scale_h(f, 0.75)),
                ("film coefficient +25 %", lambda f: _scale_h(f, 1.25)),
                ("bright metal jacket, emissivity 0.1",
                 lambda f: replace(f, emissivity=0.1) if f.emissivity is not None else f),
                ("painted, emissivity 0.9",
                 lambda f: replace(f, emissivity=0.9) if f.emissivity is not None else f)]
    out = []
    for label, fn in variants:
        c = _with_outer(case, lambda f, fn=fn: f if f.fixed_temperature is not None else fn(f))
        try:
            st = solver.solve_steady(c)
        except Exception as exc:
            warnings.append(f"sensitivity '{label}': no steady state ({exc})")
            continue
        names = list(st.system.face_names)
        fr = []
        for r in rows:
            T = float(st.face_T[names.index(r.face)])
            fr.append({"face": r.face, "T_steady_K": T,
                       "verdict": "pass" if T <= r.limit_K else "fail",
                       "margin_K": r.limit_K - T})
        out.append({"variant": label, "faces": fr})
    return out


def _caution_footer(fig, text):
    """Write the caution ``text`` in full, wrapped, along the foot of ``fig`` and lay the
    axes out above it (every plot that speaks of touch or burns carries it)."""
    lines = textwrap.wrap(text, 150, break_on_hyphens=False)
    fig.text(0.01, 0.01, "\n".join(lines), fontsize=7, va="bottom", color="#444444")
    fig.tight_layout(rect=(0, 0.012 + 0.032 * len(lines), 1, 1))


def write_touch_plots(a: TouchAssessment, outdir, stem) -> list:
    """PNG plots of an assessment (matplotlib imported here, lazily): skin temperature of each
    face against time with its limit (``<stem>-touch.png``) and the contact-simulation
    histories (``<stem>-contact.png``).  Returns the paths written."""
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    outdir = Path(outdir)
    outdir.mkdir(parents=True, exist_ok=True)
    paths = []
    if not a.faces:
        return paths
    fig, ax = plt.subplots(figsize=(10, 4.8))
    scale, unit = (3600.0, "h") if a.faces[0].times[-1] > 7200 else (60.0, "min")
    seen = set()
    for f in a.faces:
        ln, = ax.plot(f.times / scale, f.T - 273.15, label=f"{f.face} ({f.verdict})")
        key = round(f.limit_K, 3)
        ax.axhline(f.limit_K - 273.15, color="k" if key not in seen else ln.get_color(),
                   ls="--", lw=1, label=None if key in seen else
                   f"limit {f.limit_K - 273.15:.1f} degC ({f.surface_class})")
        seen.add(key)
    ax.set_xlabel(f"time [{unit}]")
    ax.set_ylabel("outer-face (skin) temperature [degC]")
    ax.set_title(f"Touch safety: {a.criterion} criterion, contact {a.contact_time_s:g} s")
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0))
    _caution_footer(fig, SAFETY_CAUTION)
    p = outdir / f"{stem}-touch.png"
    with atomic_path(p, ".png.part") as tmp:
        fig.savefig(tmp, dpi=110, format="png")
    plt.close(fig)
    paths.append(p)
    sims = [f for f in a.faces if f.contact_history is not None]
    if sims:
        fig, ax = plt.subplots(figsize=(10, 4.8))
        for f in sims:
            h = f.contact_history
            ln, = ax.plot(h.times, h.T_surface - 273.15, label=f"{f.face}: skin surface")
            ax.plot(h.times, h.T_basal - 273.15, color=ln.get_color(), ls="--",
                    label=f"{f.face}: basal layer (damage {h.damage:.3g}, {h.indicator})")
        ax.axhline(skin_data()["basal_threshold_C"], color="k", lw=0.8, ls=":",
                   label="44 degC: damage accrues above")
        ax.set_xlabel("contact time [s]")
        ax.set_ylabel("temperature [degC]")
        ax.set_title(f"Contact simulation ({_damage_set(sims[0].contact_history.model)['title']})")
        ax.grid(alpha=0.3)
        ax.legend(fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0))
        _caution_footer(fig, SAFETY_CAUTION + " " + BURN_INDICATOR_NOTE)
        p = outdir / f"{stem}-contact.png"
        with atomic_path(p, ".png.part") as tmp:
            fig.savefig(tmp, dpi=110, format="png")
        plt.close(fig)
        paths.append(p)
    return paths
