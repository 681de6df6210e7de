"""Insulation sizing of a single-wall case: the smallest thickness of one layer that meets
steady targets (skin temperature, heat loss), rounded up to stock, with a trade-off table.

SI throughout: thickness [m], temperature [K], heat loss [W/m2 for a slab, W/m for a
cylinder, W for a sphere]. Enclosures, transient, touch, warm-up and money targets are not
built yet (see docs/sizing.md).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
from scipy.optimize import brentq

from ..cautions import SAFETY_CAUTION
from ..errors import InputError
from ..materials import check_service_temperature
from ..solver.steady import solve_steady
from .safety import touch_limit


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


@dataclass(frozen=True)
class SkinTarget:
    """Steady outer-face temperature at or below ``limit`` [K]."""
    limit: float
    name: str = "skin"
    unit: str = "K"

    def value(self, s, wall) -> float:
        return float(s.face_T[1])


@dataclass(frozen=True)
class LossTarget:
    """Steady heat loss through the outer face at or below ``limit`` [W/m2 slab, W/m cylinder,
    W sphere]."""
    limit: float
    name: str = "loss"
    unit: str = "W/m2"

    def value(self, s, wall) -> float:
        return loss_per_unit(s, wall)


def touch_target(surface_class: str, contact_time: float, criterion: str = "table",
                 **kw) -> SkinTarget:
    """Skin target at the touch threshold ``fdwall.safety.touch_limit(surface_class,
    contact_time, criterion, **kw)`` [K] (contact time [s]); its name is "touch"."""
    return SkinTarget(limit=touch_limit(surface_class, contact_time, criterion, **kw),
                      name="touch")


def service_warnings(s, wall) -> list:
    """Warnings for layers whose hottest node of the steady solve ``s`` exceeds the material's
    maximum service temperature [K]; each names the interface temperature and the limit."""
    out = []
    T = np.asarray(s.wall_T(0))
    for j, (a, b) in enumerate(s.system.meshes[0].layer_nodes):
        mat = wall.layers[j].material
        Tj = float(np.max(T[a:b + 1]))
        msg = check_service_temperature(mat, Tj)
        if msg:
            out.append(f"layer {j} ({mat.name}): hot-side interface temperature "
                       f"{Tj - 273.15:.1f} degC is above its maximum service temperature "
                       f"{mat.t_max - 273.15:.1f} degC. " + msg)
    return out


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


def loss_per_unit(s, wall) -> float:
    """Heat loss per area (slab) [W/m2], per metre (cylinder) [W/m] or total (sphere) [W]."""
    q = float(s.face_flow[0])
    if wall.geometry == "slab":
        return q / wall.area
    if wall.geometry == "cylinder":
        return q / wall.length
    return q


def with_thickness(case, layer: int, thickness: float, cells: int | None = None):
    """Copy of ``case`` with layer ``layer`` of its wall at ``thickness`` [m] (cells fixed)."""
    w = case.wall
    lays = list(w.layers)
    lays[layer] = replace(lays[layer], thickness=float(thickness),
                          cells=cells if cells is not None else lays[layer].cells)
    return replace(case, wall=replace(w, layers=tuple(lays)))


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


@dataclass
class SizingResult:
    thickness_m: float
    thickness_exact_m: float
    feasible_m: list
    targets: list
    table: dict
    caution: str
    warnings: list

    def to_dict(self) -> dict:
        return {"thickness_m": self.thickness_m, "thickness_exact_m": self.thickness_exact_m,
                "feasible_m": self.feasible_m, "targets": self.targets, "table": self.table,
                "caution": self.caution, "warnings": self.warnings}


def size_layer(case, layer: int, targets, t_min: float = 0.005, t_max: float = 0.5,
               step: float | None = 0.025, stock=None, n_grid: int = 24,
               energy: Energy | None = None) -> SizingResult:
    """Smallest thickness [m] of layer ``layer`` in [t_min, t_max] meeting all ``targets``.

    Targets are bracketed on a grid, then each sign change is refined with scipy brentq; the
    sized layer's cell count is held fixed during the search so the root finder sees no steps.
    Feasible intervals (all targets met) are reported, so non-monotone targets are handled.
    With ``energy`` the trade-off table gains annual supplied energy ``energy_J_per_m2`` (slab),
    ``energy_J_per_m`` (cylinder) or ``energy_J`` (sphere) and, with a price, ``cost_per_year``
    [money per year, per m2 / per m / per piece].
    Layers driven above their maximum service temperature at the answer are warned about.
    """
    if case.wall is None:
        raise InputError("sizing of enclosure walls is not built yet; give a single-wall case")
    nl = len(case.wall.layers)
    if not 0 <= layer < nl:
        raise InputError(f"layer {layer} does not exist; the wall has layers 0..{nl - 1}")
    if not 0 < t_min < t_max:
        raise InputError("minimum thickness must be positive and below the maximum")
    for tg in targets:
        if isinstance(tg, SkinTarget):
            try:
                amb = float(case.outer.fluid(0.0))
            except (TypeError, ValueError):
                amb = None
            if amb is not None and tg.limit <= amb:
                raise InputError(f"skin limit {tg.limit - 273.15:.1f} degC is not above the "
                                 f"ambient {amb - 273.15:.1f} degC")
    cells = case.wall.layers[layer].cells or 12

    def margins(x):
        s = solve_steady(with_thickness(case, layer, x, cells))
        return s, [tg.limit - tg.value(s, case.wall) for tg in targets]

    def g(x):  # worst margin (>= 0 means all targets met)
        return min(margins(x)[1])

    xs = np.geomspace(t_min, t_max, n_grid)
    gs = [g(x) for x in xs]
    feasible, lo = [], (xs[0] if gs[0] >= 0 else None)
    for i in range(1, len(xs)):
        a, b = gs[i - 1], gs[i]
        if (a < 0) != (b < 0):
            r = brentq(g, xs[i - 1], xs[i], xtol=1e-7)
            if b >= 0:
                lo = r
            else:
                feasible.append([float(lo), float(r)])
                lo = None
    if lo is not None:
        feasible.append([float(lo), float(t_max)])
    if not feasible:
        i = int(np.argmax(gs))
        raise InputError(f"no thickness up to {t_max * 1000:.0f} mm meets the targets; best "
                         f"worst-margin {gs[i]:.3g} at {xs[i] * 1000:.1f} mm")
    exact = feasible[0][0]
    ans = stock_round_up(exact, step, stock)
    s, _ = margins(ans)
    tlist = [{"name": tg.name, "value": tg.value(s, case.wall), "limit": tg.limit,
              "unit": tg.unit, "verdict": "pass" if tg.value(s, case.wall) <= tg.limit + 1e-9
              else "fail"} for tg in targets]
    if stock is not None:
        rows = [x for x in stock if t_min <= x <= t_max]
    else:
        rows = list(np.arange(step, t_max + 1e-12, step))
    tab = {"thickness_m": [], "skin_K": [], "loss": [], "all_pass": []}
    ekey = {"slab": "energy_J_per_m2", "cylinder": "energy_J_per_m"}.get(case.wall.geometry,
                                                                          "energy_J")
    if energy is not None:
        tab[ekey] = []
        if energy.price is not None:
            tab["cost_per_year"] = []
    for x in rows:
        sx, m = margins(x)
        tab["thickness_m"].append(float(x))
        tab["skin_K"].append(float(sx.face_T[1]))
        q = loss_per_unit(sx, case.wall)
        tab["loss"].append(q)
        tab["all_pass"].append(bool(min(m) >= 0))
        if energy is not None:
            e = energy.annual(q)
            tab[ekey].append(e)
            if energy.price is not None:
                tab["cost_per_year"].append(e * energy.price)
    warns = service_warnings(s, case.wall)
    return SizingResult(ans, float(exact), feasible, tlist, tab, SAFETY_CAUTION, warns)
