"""Insulation sizing: the smallest thickness of one layer (of a single wall, or of a named
wall of an enclosure) that meets a set of targets, rounded up to stock, with a trade-off table,
candidate materials, energy, cost and economic thickness.

Targets
-------
* steady (one steady solve per thickness and design condition): :class:`SkinTarget` (also the
  touch target of :func:`touch_target`), :class:`LossTarget`;
* transient (one run of the case's own operating profile per thickness):
  :class:`PeakSkinTarget` (skin never above a limit during the run), :class:`WarmUpTarget`
  (enclosure chamber reaches its setpoint within a time).

Each steady target may carry its own :class:`Conditions` (design ambient, wind) applied to the
outer face of the sized wall.  In an enclosure the steady state is the case's own (a controlled
heater holds the chamber at the setpoint, :func:`fdwall.solver.solve_steady`).

SI throughout: thickness [m], temperature [K], time [s], heat loss [W/m2 for a slab, W/m for a
cylinder, W for a sphere], energy [J per m2 / per m / per piece], money in the user's currency.
"""
from __future__ import annotations

import difflib
import math
from dataclasses import dataclass, field, replace

import numpy as np
from scipy.optimize import brentq

from ..cautions import SAFETY_CAUTION
from ..errors import ConvergenceError, InputError
from ..materials import check_service_temperature
from ..physics.convection import Convection
from ..solver import run as run_case
from ..solver.steady import solve_steady
from .enclosure import size_heater, warm_up_time
from .safety import touch_limit

__all__ = [
    "Conditions", "SkinTarget", "LossTarget", "PeakSkinTarget", "WarmUpTarget", "ServiceTarget",
    "Energy",
    "Economics", "SizingResult", "critical_radius_cylinder", "critical_radius_sphere",
    "touch_target", "service_warnings", "with_thickness", "with_material", "stock_round_up",
    "size_layer", "size_candidates", "wall_index", "present_value_factor", "size_heater_at",
]


# ============================================================================ closed forms
def critical_radius_cylinder(k: float, h: float) -> float:
    """Critical outer radius of insulation on a cylinder, r = k/h [m] (k [W/m/K], h [W/m2/K])."""
    if k <= 0 or h <= 0:
        raise InputError("critical radius needs k > 0 and h > 0")
    return k / h


def critical_radius_sphere(k: float, h: float) -> float:
    """Critical outer radius of insulation on a sphere, r = 2k/h [m] (k [W/m/K], h [W/m2/K])."""
    if k <= 0 or h <= 0:
        raise InputError("critical radius needs k > 0 and h > 0")
    return 2.0 * k / h


def present_value_factor(rate: float, years: float) -> float:
    """Present value of 1 per year for ``years`` years at discount ``rate`` (fraction per
    year): (1 - (1 + i)^-n) / i, and n for i = 0 [years]."""
    if not years > 0:
        raise InputError("the number of years must be positive")
    if rate <= -1:
        raise InputError("the discount rate must be above -100 %")
    if abs(rate) < 1e-12:
        return float(years)
    return float((1.0 - (1.0 + rate) ** -years) / rate)


# ============================================================================ conditions
@dataclass(frozen=True)
class Conditions:
    """Design conditions of a target, applied to the outer face of the sized wall.

    ambient : outer air and radiant surroundings temperature [K] (None: the case's);
    wind : wind speed [m/s] (None: the case's convection; 0: still air, natural convection of
        the same face; > 0: forced convection along a plate of the face's height, or across a
        cylinder of the face's diameter, combined with the natural part).  A flat wall needs
        a convection correlation on its outer face for a wind condition; a power-law film
        serves as the natural part of a cylinder only (it has no plate length).
    """
    ambient: float | None = None
    wind: float | None = None

    @property
    def is_default(self) -> bool:
        return self.ambient is None and self.wind is None

    def describe(self) -> str:
        parts = []
        if self.ambient is not None:
            parts.append(f"ambient {self.ambient - 273.15:.1f} degC")
        if self.wind is not None:
            parts.append(f"wind {self.wind:g} m/s")
        return ", ".join(parts) or "case conditions"


def _natural_of(conv, wall):
    """Natural-convection part of an outer face's convection (or one built for its shape)."""
    if isinstance(conv, Convection):
        if conv.kind in ("wind_plate", "wind_cylinder"):
            if conv.natural is not None:
                return conv.natural
        elif conv.kind != "fixed":
            return conv
    if wall.shape == "cylinder":
        return Convection.horizontal_cylinder(2.0 * float(wall.radii()[-1]))
    raise InputError("a wind design condition on a flat wall needs a convection correlation "
                     "on its outer face (the case gives a fixed film coefficient, so the "
                     "plate's height is unknown); give the face a natural-convection model")


def _apply_conditions(case, wi, cond: Conditions):
    if cond is None or cond.is_default:
        return case
    wall, face = _wall(case, wi), _outer(case, wi)
    ch = {}
    if cond.ambient is not None:
        ch["fluid_temperature"] = float(cond.ambient)
        ch["surroundings_temperature"] = float(cond.ambient)
    if cond.wind is not None:
        conv = face.convection
        if wall.shape == "sphere":
            raise InputError("wind design conditions are not available for a sphere")
        nat = _natural_of(conv, wall)
        if cond.wind == 0:
            ch["convection"] = nat
        elif wall.shape == "cylinder":
            ch["convection"] = Convection.wind_cylinder(2.0 * float(wall.radii()[-1]),
                                                        float(cond.wind), with_natural=nat)
        else:
            if nat.kind == "power_law":
                raise InputError("a wind design condition on a flat wall needs the plate's "
                                 "length along the wind, but the outer face has a power-law "
                                 "film coefficient (no height or length); give the face a "
                                 "natural-convection correlation with its height instead "
                                 "(a cylinder takes the power law as its natural part)")
            L = float(getattr(nat, "height", None) or getattr(nat, "char_length", None) or 1.0)
            ch["convection"] = Convection.wind_plate(L, float(cond.wind), with_natural=nat)
    return _replace_outer(case, wi, replace(face, **ch))


# ============================================================================ targets
@dataclass(frozen=True)
class SkinTarget:
    """Steady outer-face temperature at or below ``limit`` [K] (under ``conditions``)."""
    limit: float
    name: str = "skin"
    unit: str = "K"
    conditions: Conditions = field(default_factory=Conditions)
    kind = "steady"

    def value(self, m: dict) -> float:
        return m["skin_K"]


@dataclass(frozen=True)
class LossTarget:
    """Steady heat loss at or below ``limit`` [W/m2 slab, W/m cylinder, W sphere]."""
    limit: float
    name: str = "loss"
    unit: str = "W/m2"
    conditions: Conditions = field(default_factory=Conditions)
    kind = "steady"

    def value(self, m: dict) -> float:
        return m["loss"]


@dataclass(frozen=True)
class PeakSkinTarget:
    """Outer-face temperature never above ``limit`` [K] during the case's own run."""
    limit: float
    name: str = "skin_peak"
    unit: str = "K"
    kind = "transient"

    def value(self, m: dict) -> float:
        return m["skin_peak_K"]


@dataclass(frozen=True)
class WarmUpTarget:
    """Chamber warm-up (first reaching the control setpoint, :func:`warm_up_time`) within
    ``limit`` [s] during the case's own run (enclosures)."""
    limit: float
    name: str = "warm_up"
    unit: str = "s"
    kind = "transient"

    def value(self, m: dict) -> float:
        return m["warm_up_s"]

    def margin(self, m: dict) -> float:
        # not reached within the run: a continuous surrogate beyond the run's end [s]
        return self.limit - m["warm_up_margin_s"]


@dataclass(frozen=True)
class ServiceTarget:
    """Every layer's hottest face (its hot-side interface) at or below its material's maximum
    service temperature (steady).  ``value`` is that face's temperature [K] and ``limit`` its
    rating [K] for the layer nearest its rating at the thickness evaluated; ``limit`` as a
    field is unused (the ratings of the materials are the limits)."""
    limit: float = math.nan
    name: str = "service"
    unit: str = "K"
    conditions: Conditions = field(default_factory=Conditions)
    kind = "steady"

    def value(self, m: dict) -> float:
        return m["interface_T_K"]

    def margin(self, m: dict) -> float:
        lim = m["interface_limit_K"]
        return lim - m["interface_T_K"] if math.isfinite(lim) else math.inf


def touch_target(surface_class: str, contact_time: float, criterion: str = "table",
                 conditions: Conditions | None = None, **kw) -> SkinTarget:
    """Skin target at the touch threshold ``fdwall.safety.touch_limit(surface_class,
    contact_time, criterion, **kw)`` [K] (contact time [s]); its name is "touch"."""
    return SkinTarget(limit=touch_limit(surface_class, contact_time, criterion, **kw),
                      name="touch", conditions=conditions or Conditions())


def _margin(tg, m) -> float:
    if hasattr(tg, "margin"):
        return tg.margin(m)
    return tg.limit - tg.value(m)


# ============================================================================ energy, money
@dataclass(frozen=True)
class Energy:
    """Annual energy and cost of the heat loss.

    hours : operating hours per year [s] (SI: 8000 h = 2.88e7 s);
    efficiency : efficiency of the heat supply (0 < eta <= 1, dimensionless);
    price : energy price [money per J] of purchased (supplied) energy, or None for no cost.
    Annual supplied energy per unit = loss [W/m2, W/m or W] * hours / efficiency [J/m2, J/m, J].
    """
    hours: float
    efficiency: float = 1.0
    price: float | None = None

    def __post_init__(self):
        if not self.hours > 0:
            raise InputError("operating hours per year must be positive")
        if not 0 < self.efficiency <= 1:
            raise InputError(f"efficiency must lie in (0, 1], got {self.efficiency:g}")
        if self.price is not None and self.price < 0:
            raise InputError("energy price must not be negative")

    def annual(self, loss: float) -> float:
        """Supplied energy per year [J per m2 / m / piece] for a steady ``loss``."""
        return float(loss) * self.hours / self.efficiency


@dataclass(frozen=True)
class Economics:
    """Economic thickness: total cost = installed cost + present value of the energy cost.

    per_volume : installed cost per volume of the sized layer [money/m3], or None;
    per_thickness : ((thickness [m], installed cost [money per m2 / per m / per piece]), ...)
        sorted, linearly interpolated (thicknesses outside its range get no cost);
    years : evaluation period [years]; rate : discount rate per year [fraction].
    """
    years: float
    rate: float = 0.0
    per_volume: float | None = None
    per_thickness: tuple | None = None

    def __post_init__(self):
        if (self.per_volume is None) == (self.per_thickness is None):
            raise InputError("give the installed cost either per volume or per thickness")
        if self.per_volume is not None and not self.per_volume >= 0:
            raise InputError("installed cost per volume must not be negative")
        if self.per_thickness is not None:
            xs = [float(a) for a, _ in self.per_thickness]
            if not xs or any(b <= a for a, b in zip(xs, xs[1:])):
                raise InputError("installed costs per thickness need strictly increasing "
                                 "thicknesses")
            if any(float(c) < 0 for _, c in self.per_thickness):
                raise InputError("installed costs must not be negative")
        present_value_factor(self.rate, self.years)

    @property
    def pv_factor(self) -> float:
        return present_value_factor(self.rate, self.years)

    def installed(self, wall, layer: int, thickness: float) -> float:
        """Installed cost [money per m2 (slab) / per m (cylinder) / per piece (sphere)]."""
        if self.per_thickness is not None:
            xs = [float(a) for a, _ in self.per_thickness]
            cs = [float(c) for _, c in self.per_thickness]
            if thickness < xs[0] - 1e-9 or thickness > xs[-1] + 1e-9:
                return math.nan
            return float(np.interp(thickness, xs, cs))
        r1 = float(wall.radii()[layer])
        r2 = r1 + float(thickness)
        if wall.shape == "slab":
            vol = thickness
        elif wall.shape == "cylinder":
            vol = math.pi * (r2 ** 2 - r1 ** 2)
        else:
            vol = 4.0 / 3.0 * math.pi * (r2 ** 3 - r1 ** 3)
        return float(self.per_volume * vol)


# ============================================================================ case surgery
def wall_index(case, wall=None):
    """Index of the sized wall: None for a single-wall case, else the enclosure wall named
    ``wall`` (or given by index)."""
    if not case.is_enclosure:
        if wall is not None:
            raise InputError(f"the case is a single wall; --wall {wall!r} applies to "
                             "enclosures only")
        return None
    names = [ew.wall.name for ew in case.walls]
    if wall is None:
        raise InputError(f"the case is an enclosure; name the wall to size (walls: "
                         f"{', '.join(names)})")
    if isinstance(wall, int):
        if not 0 <= wall < len(names):
            raise InputError(f"wall {wall} does not exist; walls are 0..{len(names) - 1}")
        return wall
    if wall in names:
        return names.index(wall)
    near = difflib.get_close_matches(wall, names, n=3, cutoff=0.4)
    raise InputError(f"no wall named {wall!r}; walls are {', '.join(repr(n) for n in names)}"
                     + (f" (did you mean {near[0]!r}?)" if near else ""))


def _wall(case, wi):
    return case.wall if wi is None else case.walls[wi].wall


def _outer(case, wi):
    return case.outer if wi is None else case.walls[wi].outer


def _replace_wall(case, wi, wall):
    if wi is None:
        return replace(case, wall=wall)
    ws = list(case.walls)
    ws[wi] = replace(ws[wi], wall=wall)
    return replace(case, walls=tuple(ws))


def _replace_outer(case, wi, face):
    if wi is None:
        return replace(case, outer=face)
    ws = list(case.walls)
    ws[wi] = replace(ws[wi], outer=face)
    return replace(case, walls=tuple(ws))


def _regrow_diameter(conv, d_old, d_new):
    """A cylinder correlation whose diameter was the old outer diameter follows the new one."""
    if not isinstance(conv, Convection) or conv.diameter is None:
        return conv
    ch = {}
    if abs(conv.diameter - d_old) <= 1e-9 * max(d_old, 1e-12):
        ch["diameter"] = d_new
    if conv.natural is not None:
        nat = _regrow_diameter(conv.natural, d_old, d_new)
        if nat is not conv.natural:
            ch["natural"] = nat
    return replace(conv, **ch) if ch else conv


def with_thickness(case, layer: int, thickness: float, cells: int | None = None, wall=None):
    """Copy of ``case`` with layer ``layer`` of the sized wall (``wall``: None for a single
    wall, else an enclosure wall index) at ``thickness`` [m], with ``cells`` cells.  On a
    cylinder, an outer convection correlation whose diameter was the old outer diameter
    (taken from the wall) follows the new outer diameter."""
    w = _wall(case, wall)
    lays = list(w.layers)
    lays[layer] = replace(lays[layer], thickness=float(thickness),
                          cells=cells if cells is not None else lays[layer].cells)
    nw = replace(w, layers=tuple(lays))
    out = _replace_wall(case, wall, nw)
    if w.shape == "cylinder":
        f = _outer(case, wall)
        conv = _regrow_diameter(f.convection, 2.0 * float(w.radii()[-1]),
                                2.0 * float(nw.radii()[-1]))
        if conv is not f.convection:
            out = _replace_outer(out, wall, replace(f, convection=conv))
    return out


def with_material(case, layer: int, material, wall=None):
    """Copy of ``case`` with layer ``layer`` of the sized wall made of ``material``."""
    w = _wall(case, wall)
    lays = list(w.layers)
    lays[layer] = replace(lays[layer], material=material)
    return _replace_wall(case, wall, replace(w, layers=tuple(lays)))


def stock_round_up(x: float, step: float | None = None, stock=None) -> float:
    """Round thickness ``x`` [m] up to a stock step [m] or to the next of sorted ``stock`` [m]."""
    if stock is not None:
        stock = list(stock)
        if not stock or any(b <= a for a, b in zip(stock, stock[1:])):
            raise InputError("stock thicknesses must be a non-empty strictly increasing list")
        for s in stock:
            if s >= x - 1e-12:
                return float(s)
        raise InputError(f"no stock thickness reaches {x * 1000:.1f} mm")
    if step is None or step <= 0:
        raise InputError("stock step must be positive")
    return float(math.ceil(x / step - 1e-9) * step)


# ============================================================================ measurements
def _per_unit(wall, q: float) -> float:
    if wall.shape == "slab":
        return q / wall.area
    if wall.shape == "cylinder":
        return q / wall.length
    return q


def loss_per_unit(s, wall, wi=None) -> float:
    """Steady heat loss through the sized wall (all its paths, inner face) per area (slab)
    [W/m2], per metre (cylinder) [W/m] or total (sphere) [W]."""
    sysm = s.system
    paths = sysm.paths_of(0 if wi is None else wi)
    return _per_unit(wall, float(sum(s.face_flow[2 * j] for j in paths)))


def _interface(T, mesh, wall):
    """(hot-face T [K], limit [K], layer) of the layer nearest its service limit."""
    best = (math.nan, math.nan, -1, math.inf)
    hottest = (-math.inf, math.nan, -1)
    for j, (a, b) in enumerate(mesh.layer_nodes):
        Tj = float(np.max(T[a:b + 1]))
        if Tj > hottest[0]:
            hottest = (Tj, math.nan, j)
        lim = wall.layers[j].material.t_max
        if lim is not None and lim - Tj < best[3]:
            best = (Tj, float(lim), j, lim - Tj)
    return best[:3] if best[2] >= 0 else hottest


def _measure_steady(s, case, wi) -> dict:
    """Numbers of the sized wall in a steady result ``s`` (SI)."""
    sysm = s.system
    wall = _wall(case, wi)
    paths = sysm.paths_of(0 if wi is None else wi)
    j0 = paths[0]
    skin = max(float(s.face_T[2 * j + 1]) for j in paths)
    T0 = sysm.initial_vector(case.run.start_temperature)
    Hs, _ = sysm.enthalpy(s.T)
    H0, _ = sysm.enthalpy(T0)
    stored = 0.0
    for j in paths:
        sl = sysm.wall_nodes(j)
        stored += float((Hs[0, sl] - H0[0, sl]).sum())
    Ti, lim, lay = _interface(np.asarray(s.wall_T(j0)), sysm.meshes[j0], wall)
    return {"skin_K": skin, "loss": loss_per_unit(s, wall, wi),
            "stored": _per_unit(wall, stored),
            "h_conv": float(s.h_conv[2 * j0 + 1]), "h_rad": float(s.h_rad[2 * j0 + 1]),
            "interface_T_K": Ti, "interface_limit_K": lim, "interface_layer": lay,
            "chamber_K": float(s.T[-1]) if sysm.has_chamber else math.nan}


def _measure_run(r, case, wi) -> dict:
    """Numbers of the sized wall in a transient run ``r`` (SI)."""
    sysm = r.system
    paths = sysm.paths_of(0 if wi is None else wi)
    fT = r.face_T
    out = {"skin_peak_K": max(float(np.max(fT[:, 2 * j + 1])) for j in paths),
           "warm_up_s": math.nan, "warm_up_margin_s": math.nan}
    if case.is_enclosure and case.control.setpoint is not None:
        w = warm_up_time(r)
        out["warm_up_s"] = w
        if math.isfinite(w):
            out["warm_up_margin_s"] = w
        else:   # never reached: beyond the run's end, by the shortfall of the peak
            sp = float(max(case.control.setpoint.values))
            T0, pk = float(r.chamber_T[0]), float(np.max(r.chamber_T))
            D = float(r.times[-1])
            out["warm_up_margin_s"] = D * (1.0 + max(sp - pk, 0.0) / max(sp - T0, 1e-9))
    return out


def service_warnings(s, wall, wi=None) -> list:
    """Warnings for layers whose hottest node of the steady solve ``s`` exceeds the material's
    maximum service temperature [K]; each names the interface temperature and the limit."""
    out = []
    j0 = s.system.paths_of(0 if wi is None else wi)[0]
    T = np.asarray(s.wall_T(j0))
    for j, (a, b) in enumerate(s.system.meshes[j0].layer_nodes):
        mat = wall.layers[j].material
        Tj = float(np.max(T[a:b + 1]))
        msg = check_service_temperature(mat, Tj)
        if msg:
            out.append(f"layer {j} ({mat.name}): hot-side interface temperature "
                       f"{Tj - 273.15:.1f} degC is above its maximum service temperature "
                       f"{mat.t_max - 273.15:.1f} degC. " + msg)
    return out


# ============================================================================ result
@dataclass
class SizingResult:
    """Answer of :func:`size_layer` (SI; see docs/sizing.md for every key)."""
    thickness_m: float
    thickness_exact_m: float
    feasible_m: list
    targets: list
    table: dict
    caution: str
    warnings: list
    wall: str | None = None
    layer: int = 0
    material: str = ""
    runs: int = 0
    economic: dict | None = None
    critical_radius_m: float | None = None
    notes: list = field(default_factory=list)

    def to_dict(self) -> dict:
        d = {"thickness_m": self.thickness_m, "thickness_exact_m": self.thickness_exact_m,
             "feasible_m": self.feasible_m, "targets": self.targets, "table": self.table,
             "caution": self.caution, "warnings": self.warnings, "wall": self.wall,
             "layer": self.layer, "material": self.material, "transient_runs": self.runs,
             "notes": self.notes}
        if self.economic is not None:
            d["economic"] = self.economic
        if self.critical_radius_m is not None:
            d["critical_radius_m"] = self.critical_radius_m
        return d


class _Evaluator:
    """Steady and transient evaluations of the sized case at a thickness (cached)."""

    def __init__(self, case, wi, layer, cells, targets, progress=None):
        self.case, self.wi, self.layer, self.cells = case, wi, layer, cells
        self.targets = targets
        self.conds = []
        for tg in targets:
            if tg.kind == "steady" and tg.conditions not in self.conds:
                self.conds.append(tg.conditions)
        self.steady_cache, self.run_cache = {}, {}
        self.failed = {}          # thickness [m] -> why its transient run stopped early
        self.runs = 0
        self.bar = progress

    def case_at(self, x):
        return with_thickness(self.case, self.layer, x, self.cells, self.wi)

    def steady(self, x, cond=None):
        key = (round(float(x), 12), cond)
        if key not in self.steady_cache:
            c = _apply_conditions(self.case_at(x), self.wi, cond)
            s = solve_steady(c)
            self.steady_cache[key] = (s, _measure_steady(s, c, self.wi))
        return self.steady_cache[key]

    def transient(self, x):
        key = round(float(x), 12)
        if key not in self.run_cache:
            c = self.case_at(x)
            # a run that stops early (not converged, or driven to implausible temperatures)
            # is a failed variant, not a fatal error: that thickness fails every transient
            # target, and the answer's warnings name it
            try:
                r, why = run_case(c, progress=False, estimate=False), None
            except ConvergenceError as exc:      # an interrupt (Interrupted) still stops
                r, why = None, str(exc)
            self.runs += 1
            if self.bar is not None:
                self.bar.update(1)
            if why is None:
                self.run_cache[key] = _measure_run(r, c, self.wi)
            else:
                self.failed[key] = why
                self.run_cache[key] = {"skin_peak_K": math.inf, "warm_up_s": math.inf,
                                       "warm_up_margin_s": math.inf}
        return self.run_cache[key]

    def margins(self, x, kinds=("steady", "transient")):
        out = []
        for tg in self.targets:
            if tg.kind not in kinds:
                continue
            m = self.steady(x, tg.conditions)[1] if tg.kind == "steady" else self.transient(x)
            out.append(_margin(tg, m))
        return out

    def values(self, x):
        return [(tg, (self.steady(x, tg.conditions)[1] if tg.kind == "steady"
                      else self.transient(x))) for tg in self.targets]


def _intervals(g, xs, gs, t_max, xtol):
    """Feasible intervals ([lo, hi] with g >= 0) from grid values, sign changes refined by
    brentq in log-thickness."""
    feasible, lo = [], (xs[0] if gs[0] >= 0 else None)
    for i in range(1, len(xs)):
        a, b = gs[i - 1], gs[i]
        if (a < 0) != (b < 0):
            u = brentq(lambda v: g(math.exp(v)), math.log(xs[i - 1]), math.log(xs[i]),
                       xtol=xtol, rtol=1e-6)
            r = math.exp(u)
            if b >= 0:
                lo = r
            else:
                feasible.append([float(lo), float(r)])
                lo = None
    if lo is not None:
        feasible.append([float(lo), float(t_max)])
    return feasible


def _intersect(a, b):
    out = []
    for lo1, hi1 in a:
        for lo2, hi2 in b:
            lo, hi = max(lo1, lo2), min(hi1, hi2)
            if hi >= lo:
                out.append([lo, hi])
    return out


def _check_limits(case, wi, targets):
    for tg in targets:
        if tg.unit != "K" or isinstance(tg, ServiceTarget):
            continue
        cond = getattr(tg, "conditions", None)
        amb = cond.ambient if cond is not None and cond.ambient is not None else None
        if amb is None:
            try:
                amb = float(_outer(case, wi).fluid_temperature(0.0))
            except (TypeError, ValueError, AttributeError):
                amb = None
        if amb is not None and tg.limit <= amb:
            raise InputError(f"{tg.name} limit {tg.limit - 273.15:.1f} degC is not above the "
                             f"ambient {amb - 273.15:.1f} degC")
    for tg in targets:
        if isinstance(tg, WarmUpTarget):
            if not case.is_enclosure or case.control.setpoint is None:
                raise InputError("a warm-up target needs an enclosure whose control has a "
                                 "setpoint (the chamber warm-up is timed to it)")
            if tg.limit > case.run.duration:
                raise InputError(f"warm-up limit {tg.limit / 3600:.4g} h is longer than the "
                                 f"case's run ({case.run.duration / 3600:.4g} h); the run must "
                                 "cover the warm-up to judge it")


def size_layer(case, layer: int, targets, t_min: float = 0.005, t_max: float = 0.5,
               step: float | None = 0.025, stock=None, n_grid: int = 24,
               energy: Energy | None = None, wall=None, conductivity_factor: float = 1.0,
               economics: Economics | None = None, progress: bool | None = None,
               n_grid_transient: int = 5, table: bool = True,
               transient_xtol: float = 1e-4, skin_conditions: Conditions | None = None,
               loss_conditions: Conditions | None = None) -> SizingResult:
    """Smallest thickness [m] of layer ``layer`` in [t_min, t_max] meeting all ``targets``.

    ``wall``: for an enclosure, the name (or index) of the wall whose layer is sized.
    Steady targets are bracketed on a geometric grid of ``n_grid`` thicknesses, then each sign
    change is refined with scipy brentq (in log-thickness); the sized layer's cell count is
    held fixed during the search so the root finder sees no steps.  Transient targets (one run
    of the case per thickness) are bracketed on ``n_grid_transient`` thicknesses inside the
    steady-feasible range and refined the same way to about ``transient_xtol`` [m] (default
    0.1 mm, well below stock steps), so a transient search costs
    about ``n_grid_transient + 2 x 5`` runs at most for one crossing pair (counted in
    ``runs``); the trade-off table's runs are counted apart.  Feasible intervals (all targets
    met) are reported, so non-monotone targets are handled on the grid's resolution.

    ``conductivity_factor`` multiplies the sized layer's k(T) (design factor for ageing,
    workmanship).  With ``energy`` the trade-off table gains annual supplied energy
    ``energy_J_per_m2`` (slab), ``energy_J_per_m`` (cylinder) or ``energy_J`` (sphere) and,
    with a price, ``cost_per_year`` [money per year, per m2 / per m / per piece]; with
    ``economics`` also ``installed_cost`` and ``total_cost`` (installed + present value of
    the energy cost), and ``economic`` names the stock thickness of least total cost.
    ``skin_conditions`` / ``loss_conditions``: design conditions of the table's skin and loss
    (energy, cost) columns when no skin / loss target carries its own.
    Layers driven above their maximum service temperature at the answer are warned about.
    """
    wi = wall_index(case, wall)
    w = _wall(case, wi)
    nl = len(w.layers)
    if not 0 <= layer < nl:
        raise InputError(f"layer {layer} does not exist; the wall has layers 0..{nl - 1}")
    if not 0 < t_min < t_max:
        raise InputError("minimum thickness must be positive and below the maximum")
    if not targets:
        raise InputError("give at least one target")
    if economics is not None and (energy is None or energy.price is None):
        raise InputError("the economic thickness needs the operating hours and the energy price")
    if stock is not None:
        stock = list(stock)
        if not stock or any(b <= a for a, b in zip(stock, stock[1:])):
            raise InputError("stock thicknesses must be a non-empty strictly increasing list")
    _check_limits(case, wi, targets)
    if conductivity_factor != 1.0:
        mat = w.layers[layer].material.with_conductivity_factor(conductivity_factor)
        case = with_material(case, layer, mat, wi)
        w = _wall(case, wi)
    cells = w.layers[layer].cells or 12
    steady_t = [t for t in targets if t.kind == "steady"]
    trans_t = [t for t in targets if t.kind == "transient"]
    bar = None
    if trans_t and progress:
        from tqdm import tqdm
        bar = tqdm(total=n_grid_transient + 10, unit="run", desc="transient sizing",
                   leave=False)
    ev = _Evaluator(case, wi, layer, cells, targets, bar)
    try:
        feasible = [[float(t_min), float(t_max)]]
        best = None
        if steady_t:
            def gs_(x):
                return min(ev.margins(x, ("steady",)))
            xs = np.geomspace(t_min, t_max, n_grid)
            gs = [gs_(x) for x in xs]
            feasible = _intervals(gs_, xs, gs, t_max, 1e-7)
            i = int(np.argmax(gs))
            best = (gs[i], xs[i])
        if trans_t and feasible:
            def gt_(x):
                return min(ev.margins(x, ("transient",)))
            lo = feasible[0][0]
            hi = max(b for _, b in feasible)
            xs = np.geomspace(lo, hi, n_grid_transient) if hi > lo * 1.001 else np.array([lo])
            gt = [gt_(x) for x in xs]
            ft = (_intervals(gt_, xs, gt, hi, transient_xtol / max(lo, 1e-3)) if len(xs) > 1 else
                  ([[lo, hi]] if gt[0] >= 0 else []))
            i = int(np.argmax(gt))
            if best is None or gt[i] < 0:
                best = (gt[i], xs[i])
            feasible = _intersect(feasible, ft)
    finally:
        if bar is not None:
            bar.close()
    if not feasible:
        bits = []
        if best is not None:
            bits.append(f"best worst-margin {best[0]:.3g} at {best[1] * 1000:.1f} mm")
        x_end = t_max
        for tg, m in ev.values(x_end) if not trans_t else []:
            bits.append(f"{tg.name} {_show(tg, tg.value(m))} at {x_end * 1000:.0f} mm")
        raise InputError(f"no thickness up to {t_max * 1000:.0f} mm meets the targets; "
                         + "; ".join(bits))
    exact = feasible[0][0]
    ans = _stock_answer(feasible, step, stock, t_max)
    runs = ev.runs
    tlist = []
    for tg, m in ev.values(ans):
        v = tg.value(m)
        lim = m["interface_limit_K"] if isinstance(tg, ServiceTarget) else tg.limit
        tl = {"name": tg.name, "value": v, "limit": lim, "unit": tg.unit,
              "verdict": "pass" if _margin(tg, m) >= -1e-9 else "fail"}
        cond = getattr(tg, "conditions", None)
        if cond is not None and not cond.is_default:
            tl["conditions"] = cond.describe()
        tlist.append(tl)
    if stock is not None:
        rows = [x for x in stock if t_min <= x <= t_max]
    else:
        rows = list(np.arange(step, t_max + 1e-12, step))
    if not any(abs(x - ans) < 1e-9 for x in rows):
        rows = sorted(rows + [ans])
    rows = [float(x) for x in rows]
    rows = [x if abs(x - ans) >= 1e-9 else ans for x in rows]
    conds = (_table_cond(targets, "skin", skin_conditions),
             _table_cond(targets, "loss", loss_conditions))
    ev.bar = None
    if trans_t and progress and table:
        from tqdm import tqdm
        ev.bar = tqdm(total=sum(1 for x in rows if round(float(x), 12) not in ev.run_cache),
                      unit="run", desc="trade-off table", leave=False)
    try:
        tab = (_table(ev, case, wi, layer, rows, targets, energy, economics, conds) if table
               else {})
    finally:
        if ev.bar is not None:
            ev.bar.close()
    s_ans, _ = ev.steady(ans, conds[0])
    warns = service_warnings(s_ans, w, wi)
    for x, why in sorted(ev.failed.items()):
        warns.append(f"the run at {x * 1000:.4g} mm stopped early and counts as failing every "
                     f"transient target: {why}")
    econ = None
    if economics is not None and tab:
        tc = tab["total_cost"]
        ok = [i for i, c in enumerate(tc) if math.isfinite(c)]
        if ok:
            i = min(ok, key=lambda k: tc[k])
            econ = {"thickness_m": tab["thickness_m"][i], "total_cost": tc[i],
                    "installed_cost": tab["installed_cost"][i],
                    "energy_cost_present_value": tc[i] - tab["installed_cost"][i],
                    "pv_factor": economics.pv_factor, "years": economics.years,
                    "discount_rate": economics.rate, "meets_targets": tab["all_pass"][i]}
    notes = []
    crit = None
    if w.shape in ("cylinder", "sphere"):
        mat = w.layers[layer].material
        r_in = float(w.radii()[layer])
        j0 = s_ans.system.paths_of(0 if wi is None else wi)[0]
        hs = float(s_ans.h_conv[2 * j0 + 1] + s_ans.h_rad[2 * j0 + 1])
        a, b = s_ans.system.meshes[j0].layer_nodes[layer]
        Tm = float(np.mean(np.asarray(s_ans.wall_T(j0))[a:b + 1]))
        k = float(mat.k(Tm))
        if hs > 0:
            crit = (critical_radius_cylinder(k, hs) if w.shape == "cylinder"
                    else critical_radius_sphere(k, hs))
            if crit > r_in:
                notes.append(f"critical radius {crit * 1000:.1f} mm (k {k:.3g} W/m/K, outer "
                             f"film {hs:.3g} W/m2/K) lies outside the layer's inner radius "
                             f"{r_in * 1000:.1f} mm: a thin layer raises the heat loss up to "
                             "that radius")
    if trans_t:
        notes.append(f"transient search: {runs} runs of the case (trade-off table apart)")
    return SizingResult(ans, float(exact), feasible, tlist, tab, SAFETY_CAUTION, warns,
                        wall=None if wi is None else case.walls[wi].wall.name, layer=layer,
                        material=w.layers[layer].material.name, runs=runs, economic=econ,
                        critical_radius_m=crit, notes=notes)


def _stock_answer(feasible, step, stock, t_max):
    """Smallest stock thickness [m] lying in a feasible interval (a stock size rounded up
    from the first root may fall in a gap between intervals, e.g. past a critical radius)."""
    exact = feasible[0][0]
    first = stock_round_up(exact, step, stock)
    if stock is not None:
        sizes = [x for x in stock if x >= first - 1e-12]
    else:
        n = int(math.floor(t_max / step + 1e-9))
        sizes = [k * step for k in range(int(round(first / step)), n + 1)] or [first]
    open_end = feasible[-1][1] >= t_max - 1e-12
    for x in sizes:
        if any(lo - 1e-9 <= x <= hi + 1e-9 for lo, hi in feasible):
            return float(x)
        if open_end and x > t_max:   # past the range, beyond a feasible end: its verdicts
            return float(x)          # are evaluated at the answer and reported
    raise InputError("no stock thickness lies where all targets are met ("
                     + ", ".join(f"{a * 1000:.1f}-{b * 1000:.1f} mm" for a, b in feasible)
                     + "); give other stock sizes")


def _show(tg, v):
    if tg.unit == "K":
        return f"{v - 273.15:.1f} degC"
    if tg.unit == "s":
        return f"{v / 3600:.3g} h" if math.isfinite(v) else "not reached"
    return f"{v:.4g} {tg.unit}"


def _table_cond(targets, which, fallback=None):
    for tg in targets:
        if isinstance(tg, ServiceTarget):
            continue
        if tg.kind == "steady" and (which == "skin") == (tg.unit == "K"):
            return tg.conditions
    return fallback if fallback is not None else Conditions()


def _table(ev, case, wi, layer, rows, targets, energy, economics, conds) -> dict:
    w = _wall(case, wi)
    tab = {"thickness_m": [], "skin_K": [], "loss": [], "stored": [], "h_conv_W_m2K": [],
           "h_rad_W_m2K": [], "interface_T_K": [], "interface_limit_K": [],
           "interface_layer": []}
    trans = any(t.kind == "transient" for t in targets)
    timed = case.is_enclosure and case.control.setpoint is not None
    if trans:
        tab["skin_peak_K"] = []
        if timed:
            tab["warm_up_s"] = []
    ekey = {"slab": "energy_J_per_m2", "cylinder": "energy_J_per_m"}.get(w.shape, "energy_J")
    if energy is not None:
        tab[ekey] = []
        if energy.price is not None:
            tab["cost_per_year"] = []
    if economics is not None:
        tab["installed_cost"], tab["total_cost"] = [], []
    for tg in targets:
        tab[f"pass_{tg.name}"] = []
    tab["all_pass"] = []
    c_skin, c_loss = conds
    for x in rows:
        ms = ev.steady(x, c_skin)[1]
        ml = ev.steady(x, c_loss)[1]
        tab["thickness_m"].append(float(x))
        tab["skin_K"].append(ms["skin_K"])
        tab["loss"].append(ml["loss"])
        for k_, src in (("stored", "stored"), ("h_conv_W_m2K", "h_conv"),
                        ("h_rad_W_m2K", "h_rad"), ("interface_T_K", "interface_T_K"),
                        ("interface_limit_K", "interface_limit_K"),
                        ("interface_layer", "interface_layer")):
            tab[k_].append(ms[src])
        if trans:
            mt = ev.transient(x)
            tab["skin_peak_K"].append(mt["skin_peak_K"])
            if timed:
                tab["warm_up_s"].append(mt["warm_up_s"])
        ok_all = True
        for tg, m in ev.values(x):
            ok = bool(_margin(tg, m) >= -1e-9)
            tab[f"pass_{tg.name}"].append(ok)
            ok_all &= ok
        tab["all_pass"].append(ok_all)
        if energy is not None:
            e = energy.annual(ml["loss"])
            tab[ekey].append(e)
            if energy.price is not None:
                tab["cost_per_year"].append(e * energy.price)
        if economics is not None:
            ic = economics.installed(w, layer, x)
            tab["installed_cost"].append(ic)
            tab["total_cost"].append(ic + economics.pv_factor * tab["cost_per_year"][-1])
    return tab


def size_candidates(case, layer: int, materials, targets, **kw) -> list:
    """Size layer ``layer`` in each of ``materials`` (Material objects) in turn.

    Returns one row per candidate: ``material``, ``thickness_m``, ``thickness_exact_m``,
    ``loss`` at the answer (W/m2, W/m or W), ``skin_K``, ``cost_per_year`` and
    ``total_cost`` where energy price / economics are given, or ``error`` when no thickness
    meets the targets; plus ``result`` (the :class:`SizingResult`, or None).
    """
    wi = wall_index(case, kw.get("wall"))
    rows = []
    for mat in materials:
        c = with_material(case, layer, mat, wi)
        try:
            r = size_layer(c, layer, targets, **kw)
        except InputError as exc:
            rows.append({"material": mat.name, "thickness_m": None, "thickness_exact_m": None,
                         "error": str(exc), "result": None})
            continue
        i = [round(x, 9) for x in r.table["thickness_m"]].index(round(r.thickness_m, 9))
        row = {"material": mat.name, "thickness_m": r.thickness_m,
               "thickness_exact_m": r.thickness_exact_m, "loss": r.table["loss"][i],
               "skin_K": r.table["skin_K"][i], "result": r}
        for k in ("cost_per_year", "installed_cost", "total_cost"):
            if k in r.table:
                row[k] = r.table[k][i]
        rows.append(row)
    return rows


def size_heater_at(case, layer: int, thickness: float, warm_up_limit: float, wall=None,
                   conductivity_factor: float = 1.0, **kw) -> dict:
    """:func:`fdwall.analyses.enclosure.size_heater` (smallest rated power [W] reaching the
    setpoint within ``warm_up_limit`` [s]) for the enclosure with the sized layer at
    ``thickness`` [m]; the run result is dropped from the returned dict."""
    wi = wall_index(case, wall)
    if wi is None:
        raise InputError("heater sizing needs an enclosure case with a heater")
    if case.heater is None:
        raise InputError("heater sizing needs a heater in the case")
    if conductivity_factor != 1.0:
        mat = _wall(case, wi).layers[layer].material.with_conductivity_factor(
            conductivity_factor)
        case = with_material(case, layer, mat, wi)
    c = with_thickness(case, layer, thickness, None, wi)
    out = size_heater(c, warm_up_limit, **kw)
    out = {k: v for k, v in out.items() if k not in ("result", "trials")}
    out["thickness_m"] = float(thickness)
    return out
