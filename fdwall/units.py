"""Quantities with units at the edges of fdwall: "100 mm", "250 degC", "2.5 kW", "120 m3/h".

Everything inside fdwall is SI (m, K, s, W, J); text with units is turned into SI floats here,
once, with one shared :mod:`pint` registry (:data:`ureg`).

Quick use::

    from fdwall.units import parse_quantity
    parse_quantity("100 mm", "length")                 # 0.1    [m]
    parse_quantity("250 degC", "temperature")          # 523.15 [K]
    parse_quantity("9 delta_degF", "temperature_difference")   # 5.0 [K]
    parse_quantity("120 m3/h", "volume_flow")          # 0.0333 [m3/s]

Unit spelling: pint's names and symbols ("mm", "in", "ft", "h", "min", "kW", "Btu", "degC",
"degF", "K", "delta_degF", "%"), with exponents written ``m2`` / ``m^2`` / ``m**2`` / ``m²``.
Write a product after a division with parentheses or a second slash: ``W/(m2*K)`` or
``W/m2/K`` (``W/m2K`` would read as W*K/m2 and is refused as the wrong kind of unit).

"Btu" means the International Table Btu, 1055.05585262 J.

Absolute temperatures need an explicit unit (a bare 250 could be degC, degF or K) and must be
above absolute zero.  In a temperature *difference* "degC" and "degF" are read as differences
("5 degC" = 5 K; "9 degF" = 5 K).  Bare numbers are accepted only for dimensionless kinds
(emissivity, fractions); every other kind needs its unit.

Errors raise :class:`fdwall.case.errors.CaseError` with one paragraph naming the file and key
path (when given), what was wrong and what is allowed.
"""

from __future__ import annotations

import difflib
import math
import numbers
import re
from dataclasses import dataclass

import pint

from .case.errors import CaseError

__all__ = ["ureg", "KINDS", "Kind", "parse_quantity", "parse_unit", "parse_leakage",
           "kind_names", "CaseError"]

def _registry():
    # pint caches its parsed definitions on disk (user cache folder): a tenth of a second less
    # at every start of the command line.  Without a writable cache folder it parses afresh.
    try:
        return pint.UnitRegistry(cache_folder=":auto:")
    except Exception:  # pragma: no cover - read-only home, old pint
        return pint.UnitRegistry()


#: The one unit registry of fdwall (pint objects from different registries do not mix).
ureg = _registry()


@dataclass(frozen=True)
class Kind:
    """One kind of quantity: SI unit, a readable name and examples for messages."""

    si: str
    label: str
    examples: str


#: Kinds understood by :func:`parse_quantity`: name -> Kind(SI unit, label, examples).
KINDS = {
    "length": Kind("m", "length [m]", '"50 mm", "2 in", "0.05 m"'),
    "area": Kind("m**2", "area [m2]", '"1.5 m2", "16 ft2"'),
    "volume": Kind("m**3", "volume [m3]", '"0.125 m3", "125 L"'),
    "temperature": Kind("K", "absolute temperature [K]", '"250 degC", "480 degF", "523.15 K"'),
    "temperature_difference": Kind("K", "temperature difference [K]",
                                   '"5 K", "5 delta_degC", "9 delta_degF"'),
    "mass": Kind("kg", "mass [kg]", '"25 kg", "55 lb"'),
    "time": Kind("s", "time [s]", '"4 h", "30 min", "90 s"'),
    "power": Kind("W", "power [W]", '"2.5 kW", "800 W"'),
    "energy": Kind("J", "energy [J]", '"3.6 MJ", "1 kWh"'),
    "heat_flux": Kind("W/m**2", "heat flux [W/m2]", '"2 kW/m2", "350 W/m2"'),
    "film_coefficient": Kind("W/m**2/K", "film coefficient [W/m2/K]",
                             '"10 W/m2/K", "10 W/(m2*K)", "2 Btu/h/ft2/degF"'),
    "conductivity": Kind("W/m/K", "thermal conductivity [W/m/K]",
                         '"0.04 W/m/K", "0.3 Btu*in/h/ft2/degF"'),
    "specific_heat": Kind("J/kg/K", "specific heat capacity [J/kg/K]",
                          '"840 J/kg/K", "0.84 kJ/kg/K"'),
    "density": Kind("kg/m**3", "density [kg/m3]", '"128 kg/m3", "8 lb/ft3"'),
    "contact_resistance": Kind("m**2*K/W", "contact resistance [m2*K/W]",
                               '"0.002 m2*K/W", "0.002 m2K/W"'),
    "heat_capacity": Kind("J/K", "heat capacity [J/K]", '"45 kJ/K", "800 J/K"'),
    "volume_flow": Kind("m**3/s", "volume flow [m3/s]", '"120 m3/h", "2 L/s"'),
    "speed": Kind("m/s", "speed [m/s]", '"3 m/s", "10 km/h"'),
    "pressure": Kind("Pa", "pressure [Pa]", '"101.3 kPa", "1 atm"'),
    "conductance": Kind("W/K", "thermal conductance [W/K]", '"1.5 W/K"'),
    "dimensionless": Kind("dimensionless", "dimensionless number [-]", '0.85, "85 %"'),
    "inverse_temperature": Kind("1/K", "coefficient per kelvin [1/K]", '"0.0002 1/K"'),
    "rate": Kind("1/s", "rate [1/s]", '"2 1/h", "0.5 1/min"'),
    "angle": Kind("rad", "angle [rad]", '"30 deg", "0.5 rad"'),
    "proportional_gain": Kind("1/K", "proportional gain [1/K]", '"0.05 1/K", "5 %/K"'),
    "integral_gain": Kind("1/K/s", "integral gain [1/K/s]", '"2e-4 1/K/s", "0.01 1/K/min"'),
    "derivative_gain": Kind("s/K", "derivative gain [s/K]", '"10 s/K", "0.2 min/K"'),
}

_SI_UNITS = {name: ureg.parse_units(k.si) for name, k in KINDS.items()}
_DIMS = {name: u.dimensionality for name, u in _SI_UNITS.items()}
# for naming what a wrong unit *is*: first kind listed wins for shared dimensions
_DIM_LABEL = {}
for _n, _d in _DIMS.items():
    _DIM_LABEL.setdefault(_d, KINDS[_n].label)

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")
_OFFSET_TO_DELTA = {"degree_Celsius": "delta_degree_Celsius",
                    "degree_Fahrenheit": "delta_degree_Fahrenheit",
                    "degree_Reaumur": "delta_degree_Reaumur"}
_COMMON_UNITS = ("mm", "cm", "m", "in", "ft", "m2", "ft2", "m3", "L", "K", "degC", "degF",
                 "delta_degC", "delta_degF", "s", "min", "h", "day", "W", "kW", "MW", "J",
                 "kJ", "MJ", "kWh", "Btu", "W/m2", "kW/m2", "W/m/K", "W/m2/K", "J/kg/K",
                 "kg/m3", "m2*K/W", "J/K", "kJ/K", "W/K", "m3/h", "m3/s", "m/s", "km/h", "Pa",
                 "kPa", "bar", "atm", "1/K", "1/h", "%", "deg", "rad")


def kind_names() -> list:
    """Names of the kinds accepted by :func:`parse_quantity`.

    Returns
    -------
    list of str
    """
    return list(KINDS)


def _clean_unit_text(text: str) -> str:
    """Normalise unit spellings pint does not read: ``m2`` -> ``m**2``, ``m2K`` -> ``m**2*K``."""
    s = text.strip().replace("·", "*").replace("−", "-")
    # "Btu" is read as the International Table Btu (1055.05585262 J) of the engineering
    # tables; pint's plain "Btu" is the rounded 1055.056 J.
    s = re.sub(r"\b(?:Btu|BTU|btu)\b", "Btu_it", s)
    s = re.sub(r"([A-Za-z])(\d+)", r"\1**\2", s)
    s = re.sub(r"\*\*(\d+)(?=[A-Za-z(])", r"**\1*", s)
    return s


def parse_unit(text: str, where: str = "", *, file: str = ""):
    """Parse a unit expression such as ``"W/m2/K"`` into a pint Unit.

    Parameters
    ----------
    text : str
        Unit expression.
    where : str, optional
        Key path for error messages.
    file : str, optional
        File name for error messages.

    Returns
    -------
    pint.Unit

    Raises
    ------
    CaseError
        For an unknown or malformed unit.
    """
    if not isinstance(text, str) or not text.strip():
        raise CaseError(f"the unit {text!r} is empty or not text", file=file, key=where,
                        allowed="a unit such as " + ", ".join(_COMMON_UNITS[:12]))
    try:
        return ureg.parse_units(_clean_unit_text(text))
    except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError, AttributeError,
            TypeError, ValueError, SyntaxError) as exc:
        bad = getattr(exc, "unit_names", None)
        bad = bad[0] if isinstance(bad, (tuple, list)) and bad else bad
        near = difflib.get_close_matches(text.strip(), _COMMON_UNITS, n=3, cutoff=0.5)
        hint = f" (did you mean {', '.join(repr(n) for n in near)}?)" if near else ""
        what = f"'{bad}' in " if bad and bad != text.strip() else ""
        raise CaseError(f"unknown unit {what}'{text.strip()}'{hint}", file=file, key=where,
                        allowed="units known to pint, e.g. " + ", ".join(_COMMON_UNITS)
                        + "; exponents as m2 or m^2; a product after a slash in parentheses, "
                          "W/(m2*K), or with a second slash, W/m2/K") from None


def _a(label: str) -> str:
    """``label`` with its indefinite article ("an absolute temperature [K]")."""
    return ("an " if label[:1].lower() in "aeiou" else "a ") + label


def _describe(value) -> str:
    return f"'{value}'" if isinstance(value, str) else repr(value)


def _split(value, kind, where, file):
    """(number, unit text or None) from a TOML value."""
    k = KINDS[kind]
    if isinstance(value, bool):
        raise CaseError(f"got the boolean {str(value).lower()} where {_a(k.label)} was expected",
                        file=file, key=where, allowed=f"a value with its unit, e.g. {k.examples}")
    if isinstance(value, numbers.Real):
        x = float(value)
        if not math.isfinite(x):
            raise CaseError(f"got {value!r}, which is not a finite number", file=file, key=where,
                            allowed=f"a finite {k.label.split(' [')[0]}, e.g. {k.examples}")
        return x, None
    if not isinstance(value, str):
        raise CaseError(f"got {type(value).__name__} {value!r} where {_a(k.label)} was expected",
                        file=file, key=where,
                        allowed=f"a text value with its unit, e.g. {k.examples}")
    m = _NUMBER.match(value.replace("\u2212", "-"))
    if not m:
        raise CaseError(f"cannot read {_describe(value)} as {_a(k.label)}: it should start with a "
                        "number followed by a unit", file=file, key=where,
                        allowed=f"e.g. {k.examples}")
    x = float(m.group(1))
    unit = m.group(2)
    if not math.isfinite(x):
        raise CaseError(f"got {_describe(value)}, which is not a finite number", file=file,
                        key=where, allowed=f"e.g. {k.examples}")
    return x, (unit if unit else None)


def parse_quantity(value, kind: str, where: str = "", *, file: str = "", positive: bool = False,
                   nonnegative: bool = False, bare_si: bool = False) -> float:
    """Convert a number or a text with unit to a float in the SI unit of ``kind``.

    Parameters
    ----------
    value : str or float
        E.g. ``"100 mm"``, ``"250 degC"``, ``"2.5 kW"``; a bare number only for the
        dimensionless kinds (or any kind with ``bare_si=True``, read as SI).
    kind : str
        One of :func:`kind_names`: length [m], area [m2], volume [m3], mass [kg], temperature [K]
        (absolute), temperature_difference [K], time [s], power [W], energy [J], heat_flux
        [W/m2], film_coefficient [W/m2/K], conductivity [W/m/K], specific_heat [J/kg/K],
        density [kg/m3], contact_resistance [m2*K/W], heat_capacity [J/K], volume_flow
        [m3/s], speed [m/s], pressure [Pa], conductance [W/K], dimensionless [-],
        inverse_temperature [1/K], rate [1/s], angle [rad], proportional_gain [1/K],
        integral_gain [1/K/s], derivative_gain [s/K].
    where : str, optional
        Key path for error messages, e.g. ``walls[0].layers[1].thickness``.
    file : str, optional
        File name for error messages.
    positive : bool, optional
        Require a value > 0.
    nonnegative : bool, optional
        Require a value >= 0.
    bare_si : bool, optional
        Accept a bare number as already in SI (for programmatic use; never for case files).

    Returns
    -------
    float
        The value in the SI unit of ``kind`` (see :data:`KINDS`).

    Raises
    ------
    CaseError
        Unknown kind or unit, a unit of the wrong kind, a missing unit, a temperature at or
        below absolute zero, or a sign that is not allowed.
    """
    if kind not in KINDS:
        raise CaseError(f"unknown quantity kind {kind!r}", file=file, key=where,
                        allowed=", ".join(KINDS))
    k = KINDS[kind]
    x, unit_text = _split(value, kind, where, file)
    if unit_text is None:
        if kind == "dimensionless" or bare_si:
            si = x
        else:
            raise CaseError(
                f"the bare number {x:g} has no unit, so it is not clear what {k.label} it means",
                file=file, key=where,
                allowed=f"write the value with its unit as text, e.g. {k.examples}")
    else:
        unit = parse_unit(unit_text, where, file=file)
        si = _convert(x, unit, unit_text, kind, where, file)
    if kind == "temperature" and not si > 0.0:
        raise CaseError(
            f"{_describe(value)} is {si:.6g} K, {'at' if si == 0 else 'below'} absolute zero",
            file=file, key=where, allowed="an absolute temperature above 0 K (-273.15 degC, "
                                          "-459.67 degF), e.g. " + k.examples)
    if positive and not si > 0.0:
        raise CaseError(f"{_describe(value)} must be greater than zero", file=file, key=where,
                        allowed=f"a positive {k.label.split(' [')[0]}, e.g. {k.examples}")
    if nonnegative and si < 0.0:
        raise CaseError(f"{_describe(value)} must not be negative", file=file, key=where,
                        allowed=f"zero or a positive {k.label.split(' [')[0]}, e.g. {k.examples}")
    return si


def _convert(x, unit, unit_text, kind, where, file):
    k = KINDS[kind]
    names = dict(unit._units)
    is_offset = len(names) == 1 and list(names.values())[0] == 1 and list(names)[0] in _OFFSET_TO_DELTA
    is_delta = any(n.startswith("delta_") for n in names)
    if kind == "temperature_difference" and is_offset:
        unit = ureg.parse_units(_OFFSET_TO_DELTA[list(names)[0]])
    if kind == "temperature" and is_delta:
        raise CaseError(
            f"'{x:g} {unit_text}' is a temperature difference, but an absolute temperature is "
            "needed here", file=file, key=where, allowed=f"e.g. {k.examples}")
    try:
        q = ureg.Quantity(x, unit).to(_SI_UNITS[kind])
    except pint.errors.DimensionalityError:
        got = _DIM_LABEL.get(unit.dimensionality)
        got = _a(got.split(' [')[0]) if got else f"dimension {unit.dimensionality}"
        hint = ""
        if re.search(r"/[^/()*]*\d[A-Za-z]", unit_text):
            hint = (" (a product after a slash needs parentheses or a second slash: "
                    "W/(m2*K) or W/m2/K, not W/m2K)")
        if kind in ("temperature", "temperature_difference") and unit_text.strip() in ("C", "F"):
            hint = f" ('{unit_text.strip()}' is a unit of charge or capacitance; write deg{unit_text.strip()})"
        raise CaseError(
            f"'{x:g} {unit_text}' has the unit of {got}, not of {_a(k.label)}{hint}",
            file=file, key=where, allowed=f"{_a(k.label)}, e.g. {k.examples}") from None
    except pint.errors.OffsetUnitCalculusError:
        raise CaseError(
            f"'{x:g} {unit_text}' mixes an offset temperature unit (degC, degF) into a "
            "compound unit in a way that cannot be converted", file=file, key=where,
            allowed=f"e.g. {k.examples}") from None
    return float(q.magnitude)


def parse_leakage(value, volume=None, where: str = "", *, file: str = "",
                  volume_key: str = "volume") -> float:
    """Leakage air flow [m3/s] from a volume flow or an air-change rate.

    Parameters
    ----------
    value : str
        A volume flow (``"120 m3/h"``, ``"2 L/s"``) or an air-change rate per time
        (``"2 1/h"``: two chamber volumes per hour).
    volume : float, optional
        Chamber volume [m3], needed for an air-change rate.
    where, file : str, optional
        Key path and file name for error messages.
    volume_key : str, optional
        Key path of the volume, named in the message when it is missing.

    Returns
    -------
    float
        Air flow [m3/s], >= 0.

    Raises
    ------
    CaseError
        Wrong unit, negative value, or an air-change rate without a volume.
    """
    allowed = ('a volume flow such as "120 m3/h" or "2 L/s", or air changes per time such as '
               f'"2 1/h" together with the chamber volume ({volume_key}, e.g. "0.2 m3")')
    x, unit_text = _split(value, "volume_flow", where, file)
    if unit_text is None:
        raise CaseError(f"the bare number {x:g} has no unit", file=file, key=where,
                        allowed=allowed)
    unit = parse_unit(unit_text, where, file=file)
    if unit.dimensionality == _DIMS["rate"]:
        if volume is None:
            raise CaseError(
                f"'{value}' is an air-change rate, which needs the chamber volume, but "
                f"{volume_key} is not given", file=file, key=where, allowed=allowed)
        flow = float(ureg.Quantity(x, unit).to("1/s").magnitude) * float(volume)
    elif unit.dimensionality == _DIMS["volume_flow"]:
        flow = float(ureg.Quantity(x, unit).to("m**3/s").magnitude)
    else:
        got = _DIM_LABEL.get(unit.dimensionality, str(unit.dimensionality))
        raise CaseError(f"'{value}' has the unit of {_a(got.split(' [')[0])}, not of an air flow",
                        file=file, key=where, allowed=allowed)
    if flow < 0:
        raise CaseError(f"'{value}' must not be negative", file=file, key=where, allowed=allowed)
    return flow
