"""The case model: validated, immutable objects in SI units.

Data flows one way: a case file (or Python code) builds these objects; :mod:`fdwall.system`
turns them into plain arrays; the compiled kernels integrate the arrays; :class:`fdwall.result.Result`
holds what comes out.  Nothing here knows about numba, TOML or files.

Units: every length [m], area [m2], temperature [K], time [s], power [W], heat flux [W/m2],
film coefficient [W/m2/K], contact resistance [m2.K/W].
"""
from __future__ import annotations

import functools
import warnings
from dataclasses import dataclass, field, replace
from typing import Optional, Union

import numpy as np

from .errors import InputError
from .schedule import Schedule

__all__ = [
    "Layer", "Wall", "Face", "Chamber", "Heater", "Control", "EnclosureWall", "Bridge", "Event",
    "RunSettings", "Case", "ModelError", "TOUCH_MARKS", "SURFACE_CLASSES",
]

#: How reachable an outer face is, for touch-safety verdicts (fdwall.safety).
TOUCH_MARKS = ("touchable", "guarded", "out-of-reach")

#: Surface classes of the touch-safety threshold data (fdwall/analyses/touch_thresholds.toml).
SURFACE_CLASSES = ("bare-metal", "coated-metal", "ceramic-glass-stone", "plastic", "wood")

#: Where a heater's power goes (the case file's ``[heater] placement`` values).
HEATER_PLACEMENTS = ("chamber", "inner_face", "interface")


class ModelError(InputError):
    """An inconsistent or physically impossible model input."""


#: Old Python names of the model kept for one release as deprecated aliases of the names that
#: follow the case-file keys (docs/python-api.md): class -> {old name: new name}.
RENAMED: dict = {}


def _warn_renamed(cls_name: str, old: str, new: str, stacklevel: int) -> None:
    warnings.warn(f"{cls_name}.{old} is deprecated and will be removed in the next release; "
                  f"use {cls_name}.{new} (the case-file key)", DeprecationWarning,
                  stacklevel=stacklevel)


def _renamed(**old_to_new):
    """Class decorator: the old names ``old_to_new`` keep working, with a DeprecationWarning,
    as constructor keywords and as read-only properties returning the new fields.

    Given both (as :func:`dataclasses.replace` does when called with an old name), the old
    keyword wins: it is the change asked for.
    """
    def deco(cls):
        init = cls.__init__

        @functools.wraps(init)
        def __init__(self, *args, **kw):
            for old, new in old_to_new.items():
                if old in kw:
                    _warn_renamed(cls.__name__, old, new, 3)
                    kw[new] = kw.pop(old)
            init(self, *args, **kw)

        cls.__init__ = __init__
        for old, new in old_to_new.items():
            def get(self, old=old, new=new):
                _warn_renamed(type(self).__name__, old, new, 3)
                return getattr(self, new)
            setattr(cls, old, property(get, doc=f"Deprecated alias of :attr:`{new}`."))
        RENAMED[cls.__name__] = dict(old_to_new)
        return cls
    return deco


def _pos(name, x, allow_zero=False):
    if x is None or not np.isfinite(x) or (x < 0 if allow_zero else x <= 0):
        need = "zero or positive" if allow_zero else "positive"
        raise ModelError(f"{name} must be a finite {need} number, got {x!r}")


def _sched(name, x, kelvin=False):
    if x is None:
        return None
    s = Schedule.coerce(x)
    if kelvin and min(s.values) <= 0.0:
        raise ModelError(f"{name}: temperature {min(s.values):g} K is at or below absolute zero")
    return s


@_renamed(initial="start_temperature")
@dataclass(frozen=True)
class Layer:
    """One homogeneous layer of a wall.

    Parameters
    ----------
    material : fdwall.materials.Material
        Its material (conductivity k(T) [W/m/K], specific heat cp(T) [J/kg/K], density [kg/m3]).
    thickness : float
        Layer thickness [m] (radial thickness for cylinders and spheres).
    cells : int, optional
        Number of finite-volume cells across the layer; default chosen by :mod:`fdwall.mesh`.
    name : str
        Label used in reports (defaults to the material name).
    start_temperature : float, optional
        Start temperature of this layer [K], overriding a uniform run start temperature.
    """

    material: object
    thickness: float
    cells: Optional[int] = None
    name: str = ""
    start_temperature: Optional[float] = None

    def __post_init__(self):
        _pos(f"thickness of layer '{self.label}'", self.thickness)
        if self.cells is not None and (int(self.cells) != self.cells or self.cells < 1):
            raise ModelError(f"cells of layer '{self.label}' must be a whole number >= 1")
        if self.start_temperature is not None:
            _pos(f"start temperature of layer '{self.label}'", self.start_temperature)

    @property
    def label(self) -> str:
        """Layer label for reports."""
        return self.name or getattr(self.material, "name", "layer")


@_renamed(geometry="shape", contact="interface_resistance")
@dataclass(frozen=True)
class Wall:
    """A multilayer wall, listed from the inner (hot) face to the outer face.

    Parameters
    ----------
    layers : tuple of Layer
        Layers from inner to outer face.
    shape : {'slab', 'cylinder', 'sphere'}
        Flat slab, hollow cylinder or hollow sphere.
    area : float
        Slab area [m2] (default 1 m2: results per unit area).
    inner_radius : float, optional
        Inner radius [m] for a cylinder or sphere.
    length : float
        Cylinder length [m] (default 1 m: results per metre of pipe).
    interface_resistance : tuple of float
        Contact (interface) resistance between consecutive layers [m2.K/W], one per interface;
        0 means perfect contact.
    refine : float
        Multiplies every layer's default cell count (mesh studies) [-].
    name : str
        Label of the wall.
    """

    layers: tuple
    shape: str = "slab"
    area: float = 1.0
    inner_radius: Optional[float] = None
    length: float = 1.0
    interface_resistance: tuple = ()
    refine: float = 1.0
    name: str = "wall"

    def __post_init__(self):
        object.__setattr__(self, "layers", tuple(self.layers))
        if not self.layers:
            raise ModelError(f"wall '{self.name}' has no layers")
        if self.shape not in ("slab", "cylinder", "sphere"):
            raise ModelError(f"wall '{self.name}': geometry must be slab, cylinder or sphere, "
                             f"got {self.shape!r}")
        if self.shape == "slab":
            _pos(f"area of wall '{self.name}'", self.area)
        else:
            if self.inner_radius is None:
                raise ModelError(f"wall '{self.name}': a {self.shape} needs an inner radius")
            _pos(f"inner radius of wall '{self.name}'", self.inner_radius)
            if self.shape == "cylinder":
                _pos(f"length of wall '{self.name}'", self.length)
        c = tuple(float(x) for x in self.interface_resistance) if self.interface_resistance else (0.0,) * (len(self.layers) - 1)
        if len(c) != len(self.layers) - 1:
            raise ModelError(f"wall '{self.name}': {len(self.layers) - 1} interface(s) need that many "
                             f"contact resistances, got {len(c)}")
        for x in c:
            _pos(f"contact resistance in wall '{self.name}'", x, allow_zero=True)
        object.__setattr__(self, "interface_resistance", c)
        _pos(f"refine of wall '{self.name}'", self.refine)

    @property
    def thickness(self) -> float:
        """Total thickness [m]."""
        return float(sum(l.thickness for l in self.layers))

    def radii(self):
        """Radius (or depth for a slab) of each face and interface, inner first [m]."""
        r = self.__dict__.get("_radii")
        if r is None:
            x0 = 0.0 if self.shape == "slab" else float(self.inner_radius)
            r = x0 + np.concatenate([[0.0], np.cumsum([l.thickness for l in self.layers])])
            r.setflags(write=False)
            object.__setattr__(self, "_radii", r)   # the wall is immutable
        return r

    def area_at(self, x) -> float:
        """Heat-flow area at radius/depth ``x`` [m2]."""
        if self.shape == "slab":
            return float(self.area)
        if self.shape == "cylinder":
            return float(2 * np.pi * x * self.length)
        return float(4 * np.pi * x * x)

    @property
    def inner_area(self) -> float:
        """Area of the inner face [m2]."""
        return self.area_at(self.radii()[0])

    @property
    def outer_area(self) -> float:
        """Area of the outer face [m2]."""
        return self.area_at(self.radii()[-1])

    def with_layer(self, index: int, **changes) -> "Wall":
        """A copy with layer ``index`` changed (e.g. ``thickness=0.1`` [m])."""
        layers = list(self.layers)
        layers[index] = replace(layers[index], **changes)
        return replace(self, layers=tuple(layers))


@_renamed(temperature="fixed_temperature", fluid="fluid_temperature",
          surroundings="surroundings_temperature", flux="heat_flux")
@dataclass(frozen=True)
class Face:
    """What happens at one face of a wall.

    Any combination of the terms below acts together, except ``fixed_temperature``, which fixes
    the face temperature and overrides the rest.  A face with nothing set is adiabatic.

    Parameters
    ----------
    fixed_temperature : Schedule or float, optional
        Imposed face temperature [K].
    heat_flux : Schedule or float, optional
        Imposed heat flux into the wall [W/m2] (negative: out).  The case loader puts the
        face's ``heat_flux`` here plus its ``heater_power`` / ``heater_area`` and the absorbed
        solar flux.
    fluid_temperature : Schedule or float, optional
        Temperature of the fluid (air) at the face [K]; needed with ``convection``.
    convection : float or fdwall.physics.convection.Convection, optional
        Film coefficient [W/m2/K], or a correlation evaluated as the run goes.
    emissivity : float or Schedule, optional
        Grey emissivity [-], constant or a table against surface temperature [K]; None: no
        radiation.
    surroundings_temperature : Schedule or float, optional
        Temperature of the radiant surroundings [K]; defaults to ``fluid_temperature``.
    touch : {'touchable', 'guarded', 'out-of-reach'}
        Whether people can touch this face (touch-safety verdicts skip guarded and
        out-of-reach faces); default touchable.
    surface_class : str, optional
        Surface class for touch thresholds (one of :data:`SURFACE_CLASSES`); None: taken
        from the outer layer's material and finish.
    """

    fixed_temperature: Optional[Schedule] = None
    heat_flux: Optional[Schedule] = None
    fluid_temperature: Optional[Schedule] = None
    convection: Union[None, float, object] = None
    emissivity: Union[None, float, Schedule] = None
    surroundings_temperature: Optional[Schedule] = None
    touch: str = "touchable"
    surface_class: Optional[str] = None

    def __post_init__(self):
        if self.touch not in TOUCH_MARKS:
            raise ModelError(f"touch must be one of {', '.join(TOUCH_MARKS)}, got {self.touch!r}")
        if self.surface_class is not None and self.surface_class not in SURFACE_CLASSES:
            raise ModelError(f"surface class must be one of {', '.join(SURFACE_CLASSES)}, "
                             f"got {self.surface_class!r}")
        object.__setattr__(self, "fixed_temperature",
                           _sched("face temperature", self.fixed_temperature, True))
        object.__setattr__(self, "heat_flux", _sched("face heat flux", self.heat_flux))
        object.__setattr__(self, "fluid_temperature",
                           _sched("fluid temperature", self.fluid_temperature, True))
        object.__setattr__(self, "surroundings_temperature",
                           _sched("surroundings temperature", self.surroundings_temperature,
                                  True))
        if isinstance(self.convection, (int, float)):
            _pos("film coefficient", float(self.convection), allow_zero=True)
        e = self.emissivity
        if e is not None:
            vals = e.values if isinstance(e, Schedule) else (float(e),)
            if min(vals) < 0 or max(vals) > 1:
                raise ModelError(f"emissivity must lie between 0 and 1, got {vals}")

    @classmethod
    def adiabatic(cls) -> "Face":
        """A perfectly insulated face (no heat flow)."""
        return cls()

    @classmethod
    def fixed(cls, temperature) -> "Face":
        """A face held at ``temperature`` [K] (a Schedule or a number)."""
        return cls(fixed_temperature=temperature)

    @classmethod
    def exchange(cls, fluid, h, emissivity=None, surroundings=None, flux=None) -> "Face":
        """Convection with film coefficient ``h`` [W/m2/K] to fluid at ``fluid`` [K], plus grey
        radiation (``emissivity`` [-]) to ``surroundings`` [K] and an imposed ``flux`` [W/m2]."""
        return cls(fluid_temperature=fluid, convection=h, emissivity=emissivity,
                   surroundings_temperature=surroundings,
                   heat_flux=flux)


@_renamed(initial="start_temperature", ambient="room_temperature", extra_ua="extra_loss",
          capacity="heat_capacity",
          box="inner_dimensions")
@dataclass(frozen=True)
class Chamber:
    """A lumped chamber node (air, load, racks) coupled to the inner faces of walls.

    Parameters
    ----------
    heat_capacity : float or Schedule
        Heat capacity of the chamber contents [J/K]; a Schedule is read as a table of
        capacity against temperature [K].  The case loader puts the chamber's
        ``heat_capacity`` here plus ``load_mass`` x ``load_specific_heat``.
    room_temperature : Schedule or float
        Temperature of the room air that leakage and extra losses go to [K].
    leakage : float
        Air flow through the chamber [m3/s], at room conditions (ventilation, leaks): room air
        enters at the ambient temperature and leaves at the chamber temperature, a loss of
        rho cp leakage (T - T_ambient) with rho and cp of dry air at the ambient temperature
        and 1 atm.
    extra_loss : float
        Further fixed losses as a conductance to ambient [W/K].
    start_temperature : float, optional
        Start temperature of the chamber contents [K], overriding the run start temperature.
    inner_dimensions : tuple of float, optional
        Inner width, depth and height of a box-shaped enclosure [m].  When given, the
        conduction through the 12 edges and 8 corners is added by the conduction shape
        factors S_edge = 0.54 D and S_corner = 0.15 L (Incropera, Fundamentals of Heat and
        Mass Transfer, Table 4.1, cases 8 and 9; valid for inner dimensions > L/5), spread
        over the slab walls as an area factor.
    """

    heat_capacity: Union[float, Schedule]
    room_temperature: Schedule = 293.15
    leakage: float = 0.0
    extra_loss: float = 0.0
    inner_dimensions: Optional[tuple] = None
    start_temperature: Optional[float] = None

    def __post_init__(self):
        cap = self.heat_capacity
        vals = cap.values if isinstance(cap, Schedule) else (float(cap),)
        if min(vals) <= 0:
            raise ModelError("chamber capacity must be positive [J/K]")
        object.__setattr__(self, "room_temperature",
                           _sched("chamber room temperature", self.room_temperature, True))
        _pos("chamber leakage flow", self.leakage, allow_zero=True)
        _pos("chamber extra UA", self.extra_loss, allow_zero=True)
        if self.start_temperature is not None:
            _pos("chamber start temperature", self.start_temperature)
        if self.inner_dimensions is not None:
            if len(self.inner_dimensions) != 3:
                raise ModelError("chamber box needs three inner dimensions (width, depth, height) [m]")
            for x in self.inner_dimensions:
                _pos("chamber box dimension", float(x))
            object.__setattr__(self, "inner_dimensions",
                               tuple(float(x) for x in self.inner_dimensions))


@_renamed(alpha="resistance_coefficient", t_ref="rated_at", location="placement",
          interface="after_layer")
@dataclass(frozen=True)
class Heater:
    """An electric heater.

    Parameters
    ----------
    power : Schedule or float
        Rated power at rated voltage [W].
    placement : str
        'chamber' (heats the chamber node), 'inner_face' (a flux on the inner face of
        ``wall``), or 'interface' (embedded between layers ``after_layer`` and
        ``after_layer + 1`` of ``wall``).  The old value 'inner' is a deprecated alias of
        'inner_face'.
    wall : int
        Index of the wall for 'inner_face' and 'interface' [-].
    after_layer : int
        Index of the layer the element lies behind, for 'interface' [-] (0-based).
    voltage_ratio : float
        Supply voltage / rated voltage [-]; power scales with its square.
    resistance_coefficient : float
        Temperature coefficient of the element's resistance [1/K] (power falls as it heats).
    rated_at : float
        Temperature at which ``power`` is rated [K].
    """

    power: Schedule
    placement: str = "chamber"
    wall: int = 0
    after_layer: int = 0
    voltage_ratio: float = 1.0
    resistance_coefficient: float = 0.0
    rated_at: float = 293.15

    def __post_init__(self):
        object.__setattr__(self, "power", _sched("heater power", self.power))
        if min(self.power.values) < 0:
            raise ModelError("heater power must not be negative [W]")
        if self.placement == "inner":
            warnings.warn("Heater placement 'inner' is deprecated and will be removed in the next "
                          "release; use 'inner_face' (the case-file value)", DeprecationWarning,
                          stacklevel=4)
            object.__setattr__(self, "placement", "inner_face")
        if self.placement not in HEATER_PLACEMENTS:
            raise ModelError(f"heater placement must be one of {', '.join(HEATER_PLACEMENTS)}, "
                             f"got {self.placement!r}")
        _pos("heater voltage ratio", self.voltage_ratio)
        _pos("heater alpha", self.resistance_coefficient, allow_zero=True)


def _old_location(self):
    _warn_renamed("Heater", "location", "placement", 3)
    return {"inner_face": "inner"}.get(self.placement, self.placement)


# the old name reads in the old vocabulary ('inner' for 'inner_face'), as old code compares it
Heater.location = property(_old_location, doc="Deprecated alias of :attr:`placement`, "
                                              "with 'inner' for 'inner_face'.")


@_renamed(kp="proportional_gain", ki="integral_gain", kd="derivative_gain", enable="power_on")
@dataclass(frozen=True)
class Control:
    """How the heater is switched.

    Parameters
    ----------
    mode : {'fixed', 'duty', 'thermostat', 'pid'}
        'fixed': power times ``duty`` (a schedule 0..1, default 1); 'duty': time-proportioning
        at a fixed fraction ``duty``; 'thermostat': on/off with hysteresis ``band`` around
        ``setpoint``; 'pid': PI/PID time-proportioning to ``setpoint``.
    duty : Schedule or float
        Fraction of rated power for 'fixed' and 'duty' [-].
    switched : bool
        For 'duty' and 'pid': True switches the element fully on for duty x period and off
        for the rest of each period; False delivers the period-averaged power.
    period : float
        Cycle (time-proportioning) period, also the PID sampling interval [s].
    setpoint : Schedule or float
        Setpoint [K] for 'thermostat' and 'pid'.
    band : float
        Thermostat hysteresis, total width [K].
    sensor : str
        'chamber', or 'wall' with ``sensor_wall`` and ``sensor_depth``.
    sensor_wall : int
        Wall index of a wall sensor [-].
    sensor_depth : float
        Depth of a wall sensor below the inner face [m].
    proportional_gain, integral_gain, derivative_gain : float
        PID gains: proportional [1/K], integral [1/K/s], derivative [s/K].
    power_on : Schedule or float
        Master switch 0/1 (power off for the cool-down) [-].
    """

    mode: str = "fixed"
    duty: Schedule = 1.0
    switched: bool = False
    period: float = 60.0
    setpoint: Optional[Schedule] = None
    band: float = 2.0
    sensor: str = "chamber"
    sensor_wall: int = 0
    sensor_depth: float = 0.0
    proportional_gain: float = 0.05
    integral_gain: float = 0.0
    derivative_gain: float = 0.0
    power_on: Schedule = 1.0

    def __post_init__(self):
        if self.mode not in ("fixed", "duty", "thermostat", "pid"):
            raise ModelError(f"control mode must be fixed, duty, thermostat or pid, got {self.mode!r}")
        object.__setattr__(self, "duty", _sched("duty", self.duty))
        object.__setattr__(self, "power_on", _sched("enable", self.power_on))
        object.__setattr__(self, "setpoint", _sched("setpoint", self.setpoint, True))
        if min(self.duty.values) < 0 or max(self.duty.values) > 1:
            raise ModelError("duty must lie between 0 and 1")
        _pos("control period", self.period)
        _pos("thermostat band", self.band, allow_zero=True)
        if self.mode in ("thermostat", "pid") and self.setpoint is None:
            raise ModelError(f"control mode {self.mode!r} needs a setpoint")
        if self.sensor not in ("chamber", "wall"):
            raise ModelError("sensor must be 'chamber' or 'wall'")
        for label, n in (("kp", "proportional_gain"), ("ki", "integral_gain"),
                         ("kd", "derivative_gain")):
            _pos(label, getattr(self, n), allow_zero=True)


@_renamed(fraction="area_fraction", layers="replaces_layers")
@dataclass(frozen=True)
class Bridge:
    """A thermal bridge through a wall, by the parallel-path method.

    A fraction of the wall area is taken by framing, studs or anchors of ``material`` that
    replace the listed ``layers`` (usually the insulation).  fdwall then solves two 1-D
    walls side by side (the clear wall on ``1 - fraction`` of the area, the bridged path on
    ``fraction``) sharing the same face conditions, and reports the bridge's share of the heat
    flow.  Limits: the two paths exchange no heat sideways, so lateral spreading in the skins
    is not resolved: conductive skins feed heat into a bridge from the clear wall around it,
    which this estimate misses.  Use it for bridges that are wide against the wall
    thickness, and treat small metal pins with care (ISO 6946 combines this
    upper bound with an isothermal-planes lower bound; from memory).

    Parameters
    ----------
    area_fraction : float
        Area fraction of the bridged path [-], 0 < area_fraction < 1.
    material : fdwall.materials.Material
        Bridging material.
    replaces_layers : tuple of int
        0-based indices of the layers the bridge replaces.
    """

    area_fraction: float
    material: object
    replaces_layers: tuple = (1,)

    def __post_init__(self):
        if not 0.0 < self.area_fraction < 1.0:
            raise ModelError("bridge area fraction must lie strictly between 0 and 1, got "
                             f"{self.area_fraction}")
        object.__setattr__(self, "replaces_layers", tuple(int(i) for i in self.replaces_layers))


@_renamed(inner_h="inner_face_convection", inner_emissivity="inner_face_emissivity")
@dataclass(frozen=True)
class EnclosureWall:
    """One wall assembly of an enclosure: its construction, its outer face and how many alike.

    Parameters
    ----------
    wall : Wall
        Construction, inner layer first; a slab's ``area`` is the wall's area [m2].
    outer : Face
        Conditions at the outer face.
    inner_face_convection : float or Convection
        Film coefficient to the chamber air [W/m2/K] or a correlation (case file:
        ``inner_face.film_coefficient`` or ``inner_face.convection``).
    inner_face_emissivity : float or Schedule, optional
        Emissivity of the inner face for radiation exchange with the chamber contents [-];
        a Schedule is read as a table of emissivity against surface temperature [K].
    bridge : Bridge, optional
        A thermal bridge through the wall (parallel-path method).
    """

    wall: Wall
    outer: Face
    inner_face_convection: Union[float, object] = 10.0
    inner_face_emissivity: Union[None, float, Schedule] = None
    bridge: Optional[Bridge] = None

    def __post_init__(self):
        if self.wall.shape != "slab" and self.bridge is not None:
            raise ModelError(f"wall '{self.wall.name}': bridges are supported on slab walls only")
        if self.bridge is not None:
            for i in self.bridge.replaces_layers:
                if not 0 <= i < len(self.wall.layers):
                    raise ModelError(f"wall '{self.wall.name}': bridge layer index {i} does not "
                                     f"exist (0..{len(self.wall.layers) - 1})")


# ------------------------------------------------- rules between the parts of a case
# These rules are owned here: Case.__post_init__ applies them to every case, and the case
# loader calls the same functions to refuse a file with the key named, so one bad input gives
# one message whichever way the case was made (tests/test_validation_owner.py).

def interface_problem(wall: "Wall", after_layer: int):
    """(problem, allowed) when wall ``wall`` has no interface after layer ``after_layer``
    (0-based layer index) [-]; None when it has one."""
    n = len(wall.layers)
    if 0 <= after_layer < n - 1:
        return None
    return (f"there is no interface after layer {after_layer} in wall '{wall.name}', which has "
            f"{n} layer(s)",
            f"a layer index 0..{n - 2}" if n > 1 else "a wall with two or more layers")


def depth_problem(wall: "Wall", depth: float):
    """(problem, allowed) when ``depth`` [m] below the inner face lies outside wall ``wall``;
    None when it lies inside (faces included)."""
    th = wall.thickness
    if 0.0 <= depth <= th * (1 + 1e-12):
        return None
    where = "in front of the inner face" if depth < 0 else "beyond the outer face"
    return (f"a depth of {depth * 1000:g} mm lies {where} of wall '{wall.name}' "
            f"({th * 1000:g} mm thick)", f"a depth from 0 to {th * 1000:g} mm below the inner face")


def wall_index_problem(case_walls: list, index: int, what: str):
    """(problem, allowed) when ``index`` is not a wall of the case (``case_walls`` its walls,
    in order); None otherwise.  ``what`` names the part that refers to it."""
    n = len(case_walls)
    if isinstance(index, (int, np.integer)) and 0 <= index < n:
        return None
    return (f"{what} refers to wall index {index!r}, which does not exist",
            f"a wall index 0..{n - 1}" if n > 1 else "wall index 0 (the case has one wall)")


def chamber_watch_problem(has_chamber: bool, name: str):
    """(problem, allowed) for a watch entry on the chamber of a case without one, else None."""
    if has_chamber:
        return None
    return (f"the watch entry '{name}' watches the chamber, but the case has none",
            "at = \"inner\" or \"outer\", after_layer or depth for a single wall")


def _refuse(problem):
    if problem is not None:
        text, allowed = problem
        raise ModelError(f"{text} (allowed: {allowed})")


def check_references(case: "Case") -> None:
    """Apply the rules between the parts of ``case`` (heater, sensor and watch entries
    against its walls, layers and chamber); ModelError on the first one broken."""
    walls = case.wall_list
    hz = case.heater
    if hz is not None and hz.placement != "chamber":
        _refuse(wall_index_problem(walls, hz.wall, "the heater"))
        if hz.placement == "interface":
            _refuse(interface_problem(walls[hz.wall], hz.after_layer))
    ctl = case.control
    if ctl.sensor == "wall" and hz is not None and ctl.mode in ("thermostat", "pid"):
        _refuse(wall_index_problem(walls, ctl.sensor_wall, "the control's sensor"))
        _refuse(depth_problem(walls[ctl.sensor_wall], ctl.sensor_depth))
    for ev in case.run.watch:
        label = f"the watch entry '{ev.name}'"
        if ev.at == "chamber":
            _refuse(chamber_watch_problem(case.chamber is not None, ev.name))
            continue
        _refuse(wall_index_problem(walls, ev.wall, label))
        w = walls[ev.wall]
        if ev.at.startswith("interface:"):
            try:
                k = int(ev.at.split(":", 1)[1]) - 1
            except ValueError:
                raise ModelError(f"{label}: at {ev.at!r} is not 'interface:N' with N a "
                                 "whole number (1-based)") from None
            _refuse(interface_problem(w, k))
        elif ev.at == "":
            _refuse(depth_problem(w, ev.depth))
        elif ev.at not in ("inner", "outer"):
            raise ModelError(f"{label}: at must be 'inner', 'outer', 'interface:N', "
                             f"'chamber' or '' (a depth), got {ev.at!r}")


@_renamed(threshold="temperature", where="at")
@dataclass(frozen=True)
class Event:
    """Watch a face, interface or depth for crossing a temperature.

    Parameters
    ----------
    temperature : float
        Temperature [K].
    wall : int
        Wall index [-].
    depth : float
        Depth below the inner face [m], used when ``at`` is ''.
    at : str
        'inner', 'outer', 'chamber' (the chamber node of an enclosure), as the case file's
        ``at``; also 'interface:N' for the interface after layer N (1-based; the case file's
        ``after_layer = N - 1``), or '' to use ``depth`` (the case file's ``depth``).
    name : str
        Label.
    """

    temperature: float
    wall: int = 0
    depth: float = 0.0
    at: str = "outer"
    name: str = ""


@_renamed(initial="start_temperature", output_interval="output_every",
          profile_times="snapshots", events="watch")
@dataclass(frozen=True)
class RunSettings:
    """Settings of a transient run.

    Parameters
    ----------
    duration : float
        Simulated time [s].
    start_temperature : float or array
        Initial temperature [K]: a number for a uniform start, or an array over the nodes of
        the system (e.g. a profile from an earlier result).
    output_every : float, optional
        Spacing of stored outputs [s] (default duration/200).
    snapshots : tuple of float
        Times at which temperature profiles are plotted [s].
    tolerance : float, optional
        Local error tolerance per step [K].  Left out (None), the case derives it from the
        accuracy contract (:func:`contract_tolerance`, :mod:`fdwall.solver.accuracy`):
        1e-4 of the scale of temperature change of the case, between 0.001 K and 0.05 K.
    max_step : float, optional
        Upper limit on the time step [s].
    watch : tuple of Event
        Crossings to locate.
    exact_outputs : bool
        Land a time step on every output time (outputs exact to the solver, at the cost of
        more steps when outputs are dense).  By default outputs between steps are cubic
        Hermite interpolants of the step-end states (error well below ``tolerance``); the
        energy balance is checked at every step either way.
    steady_at : float, optional
        Time whose boundary conditions define the steady state reported with a run [s];
        default the end of the run (give the hold time of a ramp-hold-cool schedule).
    """

    duration: float
    start_temperature: object = 293.15
    output_every: Optional[float] = None
    snapshots: tuple = ()
    tolerance: Optional[float] = None
    max_step: Optional[float] = None
    watch: tuple = ()
    exact_outputs: bool = False
    steady_at: Optional[float] = None
    #: True when ``tolerance`` was derived by the case from the contract (not given).
    tolerance_derived: bool = False

    def __post_init__(self):
        _pos("duration", self.duration)
        if self.output_every is not None:
            _pos("output interval", self.output_every)
        if self.tolerance is not None:
            _pos("tolerance", self.tolerance)
        if self.max_step is not None:
            _pos("max step", self.max_step)
        init = np.asarray(self.start_temperature, dtype=float)
        if np.any(~np.isfinite(init)) or np.any(init <= 0):
            raise ModelError("initial temperature must be above absolute zero [K]")


@dataclass(frozen=True)
class Case:
    """A complete problem: a single wall with two faces, or an enclosure.

    For a single wall give ``wall``, ``inner`` and ``outer``.  For an enclosure give
    ``walls`` (EnclosureWall), ``chamber``, and optionally ``heater`` and ``control``; each
    wall's inner face then exchanges heat with the chamber node.
    """

    run: RunSettings
    wall: Optional[Wall] = None
    inner: Face = field(default_factory=Face)
    outer: Face = field(default_factory=Face)
    walls: tuple = ()
    chamber: Optional[Chamber] = None
    heater: Optional[Heater] = None
    control: Control = field(default_factory=Control)
    name: str = "case"
    source: str = ""   # case file text, kept verbatim in results
    #: Identification for the calculation report, ((key, text), ...) with keys among
    #: project, equipment, author, checker, revision, date (case-file table [report]).
    report: tuple = ()

    def __post_init__(self):
        object.__setattr__(self, "walls", tuple(self.walls))
        if self.wall is None and not self.walls:
            raise ModelError("a case needs a wall (single wall) or walls (enclosure)")
        if self.wall is not None and self.walls:
            raise ModelError("give either a single wall or enclosure walls, not both")
        if self.walls and self.chamber is None:
            raise ModelError("enclosure walls need a chamber")
        names = [ew.wall.name for ew in self.walls]
        dup = sorted({n for n in names if names.count(n) > 1})
        if dup:
            raise ModelError(f"enclosure wall names must be unique; repeated: {', '.join(dup)}")
        if self.heater is not None and self.heater.placement == "chamber" and self.chamber is None:
            raise ModelError("a heater in the chamber needs a chamber")
        if self.control.mode in ("thermostat", "pid") and self.heater is None:
            raise ModelError("thermostat or PID control needs a heater")
        if self.control.sensor == "chamber" and self.control.mode in ("thermostat", "pid") \
                and self.chamber is None:
            raise ModelError("a chamber sensor needs a chamber; use sensor = 'wall' for a single wall")
        check_references(self)
        if self.run.tolerance is None or self.run.tolerance_derived:
            # no tolerance given: derive it from the accuracy contract (frozen: set once here)
            object.__setattr__(self, "run", replace(self.run, tolerance=contract_tolerance(self),
                                                    tolerance_derived=True))

    @property
    def is_enclosure(self) -> bool:
        """True for an enclosure case (chamber node with several walls)."""
        return bool(self.walls)

    @property
    def wall_list(self):
        """All walls of the case, in order [Wall]."""
        return [self.wall] if self.wall is not None else [w.wall for w in self.walls]


# ---- default time tolerance from the accuracy contract (fdwall.solver.accuracy) -----------
TOLERANCE_FRACTION = 1e-4
"""Default local error tolerance per step as a fraction of the case's scale of temperature
change [-] (:func:`contract_tolerance`)."""
TOLERANCE_RANGE = (1e-3, 0.05)
"""Bounds of the derived default tolerance [K]: the upper one is the contract's absolute floor
(0.05 K), which the first outputs of a run are held to."""


def _values(s):
    """The values of a schedule or a number, as floats (none for None)."""
    if s is None:
        return []
    if isinstance(s, Schedule):
        return [float(v) for v in s.values]
    return [float(s)]


def temperature_scale(case) -> float:
    """Scale of temperature change of ``case`` [K], estimated before any run.

    The largest of: the distance of every imposed temperature (fixed face, fluid,
    surroundings, room, setpoint) from the start temperature, and for every flux and heater
    the rise it drives: q min(R, 2 sqrt(t_end / pi) / e), with q the largest flux [W/m2]
    (a heater's power over the face it heats), R the wall's resistance [m2K/W] and e the
    effusivity sqrt(k rho cp) of the face layer at 500 K [W s^0.5/m2/K] (the semi-infinite
    solid under a constant flux, Carslaw & Jaeger 1959, 2.9, capped by the steady rise).
    At least 1 K.
    """
    T0 = np.asarray(case.run.start_temperature, dtype=float).ravel()
    t0lo, t0hi = float(T0.min()), float(T0.max())
    if case.is_enclosure:
        faces = [ew.outer for ew in case.walls]
        walls = [ew.wall for ew in case.walls]
    else:
        faces = [case.inner, case.outer]
        walls = [case.wall]
    temps = []
    for f in faces:
        for s in (f.fixed_temperature, f.fluid_temperature, f.surroundings_temperature):
            temps += _values(s)
    if case.chamber is not None:
        temps += _values(case.chamber.room_temperature)
    if case.heater is not None and case.control.setpoint is not None:
        temps += _values(case.control.setpoint)
    scale = max([1.0] + [max(abs(v - t0lo), abs(v - t0hi)) for v in temps])
    dur = float(case.run.duration)

    def rise(q, wall, layer):
        if q <= 0.0:
            return 0.0
        R = sum(l.thickness / max(float(np.interp(500.0, *l.material.tables()[:2])), 1e-12)
                for l in wall.layers)
        m = wall.layers[layer].material
        T, k, cp = m.tables()
        e = np.sqrt(float(np.interp(500.0, T, k)) * float(np.interp(500.0, T, cp)) * m.rho)
        return q * min(R, 2.0 * np.sqrt(dur / np.pi) / max(e, 1e-12))

    for j, w in enumerate(walls):
        if not case.is_enclosure:
            scale = max(scale, rise(max([0.0] + [abs(v) for v in _values(case.inner.heat_flux)]), w, 0),
                        rise(max([0.0] + [abs(v) for v in _values(case.outer.heat_flux)]), w, -1))
        else:
            scale = max(scale, rise(max([0.0] + [abs(v) for v in _values(faces[j].heat_flux)]), w, -1))
    hz = case.heater
    if hz is not None:
        P = max([0.0] + [abs(v) for v in _values(hz.power)]) * hz.voltage_ratio ** 2
        if hz.placement == "chamber":
            area = sum(w.inner_area for w in walls)
            scale = max(scale, max(rise(P / area, w, 0) for w in walls))
        else:
            w = walls[hz.wall] if 0 <= hz.wall < len(walls) else walls[0]
            scale = max(scale, rise(P / w.inner_area, w, 0))
    return float(scale)


def contract_tolerance(case) -> float:
    """Default local error tolerance per step [K] of ``case``, derived from the accuracy
    contract of :mod:`fdwall.solver.accuracy` (every output within 0.5 % of the largest change
    so far, or 0.05 K): :data:`TOLERANCE_FRACTION` times :func:`temperature_scale`, within
    :data:`TOLERANCE_RANGE`.  On the references of tests/test_accuracy_contract.py the global
    time error of TR-BDF2 stays below this local tolerance, so it spends at most 0.02 % of the
    scale (and 0.05 K) of the contract's budget."""
    lo, hi = TOLERANCE_RANGE
    return float(min(hi, max(lo, TOLERANCE_FRACTION * temperature_scale(case))))


# --- the wall's own scale of cells (the mesh starts from it; the loader caps it) ---------

def _props_500(m):
    """Conductivity [W/m/K] and volumetric heat capacity [J/m3/K] at 500 K, cached per material."""
    v = m.__dict__.get("_props_500")
    if v is None:
        T, k, cp = m.tables()
        v = (float(np.interp(500.0, T, k)), float(np.interp(500.0, T, cp)) * m.rho)
        object.__setattr__(m, "_props_500", v)   # materials are immutable
    return v


def _base_cells(wall) -> list:
    """Cell count per layer before the wall's ``refine`` [-] (see :func:`default_cells`)."""
    got = wall.__dict__.get("_base_cells")
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
    out = tuple(int(c) for c in cells)
    object.__setattr__(wall, "_base_cells", out)   # walls and materials are immutable
    return list(out)


def default_cells(wall) -> list:
    """Cell count per layer of the wall's own scale [-], times its ``refine``.

    Based on each layer's thermal resistance share and diffusion time: the layers that
    carry the temperature drop and store heat get 8 to 24 cells; a thin conductive skin gets 2.
    These set the largest mid-layer cell of a problem-graded mesh (:func:`graded_fractions`),
    which adds cells towards the layer ends.
    """
    got = wall.__dict__.get("_default_cells")
    if got is not None:
        return list(got)
    out = [int(np.ceil(c * wall.refine)) for c in _base_cells(wall)]
    object.__setattr__(wall, "_default_cells", tuple(out))   # walls and materials are immutable
    return out
