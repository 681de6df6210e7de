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

Every kind has a range of magnitudes fdwall accepts (``KINDS[kind].largest`` and, for values
other than zero, ``KINDS[kind].smallest``, in SI), far outside any heated equipment: "1e300 m"
or "1e-300 m" is refused rather than left to overflow or to round to nothing in the solver.

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

from .errors import CaseError

__all__ = ["ureg", "KINDS", "Kind", "parse_quantity", "parse_unit", "parse_leakage",
           "check_magnitude", "kind_names", "parse_power_law_coefficient", "CaseError",
           "power_law_coefficient_us", "power_law_unit_power", "W_M2K_IN_BTU_HFT2F"]

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
    """One kind of quantity: SI unit, a readable name and examples for messages, and the range
    of magnitudes a case file may give.

    ``largest`` is the largest magnitude accepted and ``smallest`` the smallest non-zero
    magnitude accepted, both in the SI unit (None: no limit); ``why_large`` and ``why_small``
    say in a few words why (shown in messages).  The limits lie far outside any heated
    equipment and keep the arithmetic finite; zero is not affected by ``smallest``.
    """

    si: str
    label: str
    examples: str
    largest: float | None = None
    smallest: float | None = None
    why_large: str = ""
    why_small: str = ""


#: Kinds understood by :func:`parse_quantity`: name -> Kind(SI unit, label, examples, range).
#:
#: Where the limits come from (all far outside heated equipment):
#: - length >= 1 um: below about a micrometre a layer is no longer a continuum for heat
#:   conduction (Incropera et al., Fundamentals of Heat and Mass Transfer, 7th ed., sec. 2.2.1,
#:   micro- and nanoscale effects; from memory); a solid rod takes a 0.001 mm pinhole bore;
#: - temperature <= 10 000 K: no solid exists that hot -- the highest melting points, of
#:   refractory carbides, are near 4 200 K (from memory);
#: - film coefficient <= 1e7 W/m2/K: 100 x the top of the typical range, boiling and
#:   condensation up to 1e5 W/m2/K (Incropera Table 1.1);
#: - conductivity 1e-6 .. 1e5 W/m/K: evacuated multilayer insulation ~1e-5 W/m/K, diamond
#:   ~2 300 W/m/K (Incropera Fig. 2.4 / Table A.2; from memory);
#: - density 0.01 .. 1e5 kg/m3: the lightest aerogels ~0.2 kg/m3, osmium 22 590 kg/m3
#:   (CRC Handbook; from memory);
#: - specific heat 10 .. 1e5 J/kg/K: lead ~129 J/kg/K, hydrogen gas 14 300 J/kg/K
#:   (Incropera Tables A.1, A.4; from memory);
#: - heat flux <= 1e9 W/m2: 15 x what the surface of the sun radiates, sigma (5772 K)^4 =
#:   6.3e7 W/m2 (IAU 2015 nominal solar effective temperature);
#: - contact resistance 1e-8 .. 1e3 m2K/W: tabulated joints start near 1e-6 m2K/W (Incropera
#:   Tables 3.1-3.2; from memory) -- anything below acts as perfect contact (write 0), and
#:   1e3 m2K/W insulates like some 40 m of mineral wool;
#: - speed <= 1000 m/s: three times the speed of sound; the correlations are for low-speed air;
#: - the rest (sizes, times, powers, gains): common practice, no source -- orders of magnitude
#:   beyond any oven, furnace, kiln, tank or pipe, and still far inside double precision.
KINDS = {
    "length": Kind("m", "length [m]", '"50 mm", "2 in", "0.05 m"', 1e5, 1e-6,
                   "100 km is beyond any heated equipment",
                   "below 1 um a layer, bore or plate is no longer a continuum for heat "
                   "conduction; a solid rod takes a 0.001 mm pinhole bore"),
    "area": Kind("m**2", "area [m2]", '"1.5 m2", "16 ft2"', 1e10, 1e-12,
                 "(100 km)^2 is beyond any heated equipment", "(1 um)^2 is the smallest face"),
    "volume": Kind("m**3", "volume [m3]", '"0.125 m3", "125 L"', 1e15, 1e-18,
                   "(100 km)^3 is beyond any heated equipment", "(1 um)^3 is the smallest"),
    "temperature": Kind("K", "absolute temperature [K]", '"250 degC", "480 degF", "523.15 K"',
                        1e4, None, "no solid exists that hot: the highest melting points are "
                                   "near 4200 K"),
    "temperature_difference": Kind("K", "temperature difference [K]",
                                   '"5 K", "5 delta_degC", "9 delta_degF"', 1e4, 1e-9,
                                   "no temperature in fdwall exceeds 10000 K",
                                   "a billionth of a kelvin is below any thermometer and near "
                                   "round-off"),
    "mass": Kind("kg", "mass [kg]", '"25 kg", "55 lb"', 1e9, None,
                 "a million tonnes is beyond any furnace load"),
    "time": Kind("s", "time [s]", '"4 h", "30 min", "90 s"', 1e11, 1e-3,
                 "1e11 s (about 3000 years) outlasts any equipment",
                 "1 ms is the shortest step, period or schedule time"),
    "power": Kind("W", "power [W]", '"2.5 kW", "800 W"', 1e10, None,
                  "10 GW is beyond any heater or burner"),
    "energy": Kind("J", "energy [J]", '"3.6 MJ", "1 kWh"', 1e16, None,
                   "1e16 J is beyond any firing"),
    "heat_flux": Kind("W/m**2", "heat flux [W/m2]", '"2 kW/m2", "350 W/m2"', 1e9, None,
                      "1e9 W/m2 is 15 times what the surface of the sun radiates"),
    "film_coefficient": Kind("W/m**2/K", "film coefficient [W/m2/K]",
                             '"10 W/m2/K", "10 W/(m2*K)", "2 Btu/h/ft2/degF"', 1e7, None,
                             "1e7 W/m2/K is 100 times the highest film coefficients, of boiling "
                             "and condensation"),
    "conductivity": Kind("W/m/K", "thermal conductivity [W/m/K]",
                         '"0.04 W/m/K", "0.3 Btu*in/h/ft2/degF"', 1e5, 1e-6,
                         "the best conductor, diamond, has about 2300 W/m/K",
                         "the best insulation, evacuated multilayer foil, has about 1e-5 W/m/K"),
    "specific_heat": Kind("J/kg/K", "specific heat capacity [J/kg/K]",
                          '"840 J/kg/K", "0.84 kJ/kg/K"', 1e5, 10.0,
                          "the highest is that of hydrogen, about 14300 J/kg/K",
                          "the lowest are those of heavy metals such as lead, about 130 J/kg/K"),
    "density": Kind("kg/m**3", "density [kg/m3]", '"128 kg/m3", "8 lb/ft3"', 1e5, 1e-2,
                    "the densest material, osmium, has about 22600 kg/m3",
                    "the lightest aerogels have about 0.2 kg/m3"),
    "contact_resistance": Kind("m**2*K/W", "contact resistance [m2*K/W]",
                               '"0.002 m2*K/W", "0.002 m2K/W"', 1e3, 1e-8,
                               "1000 m2K/W insulates like 40 m of mineral wool",
                               "below 1e-8 m2K/W a joint is in perfect contact: write 0 m2K/W"),
    "heat_capacity": Kind("J/K", "heat capacity [J/K]", '"45 kJ/K", "800 J/K"', 1e13, 1e-3,
                          "1e13 J/K is twenty million tonnes of steel",
                          "a millilitre of air holds 1e-3 J/K"),
    "volume_flow": Kind("m**3/s", "volume flow [m3/s]", '"120 m3/h", "2 L/s"', 1e4, None,
                        "1e4 m3/s is beyond any ventilation or leakage"),
    "speed": Kind("m/s", "speed [m/s]", '"3 m/s", "10 km/h"', 1e3, None,
                  "1000 m/s is three times the speed of sound; the correlations are for "
                  "low-speed air"),
    "pressure": Kind("Pa", "pressure [Pa]", '"101.3 kPa", "1 atm"', 1e9, None,
                     "1e9 Pa is ten thousand atmospheres"),
    "conductance": Kind("W/K", "thermal conductance [W/K]", '"1.5 W/K"', 1e9, None,
                        "1e9 W/K is beyond any heat loss of heated equipment"),
    "dimensionless": Kind("dimensionless", "dimensionless number [-]", '0.85, "85 %"'),
    "inverse_temperature": Kind("1/K", "coefficient per kelvin [1/K]", '"0.0002 1/K"', 10.0,
                                None, "a coefficient of 10 per kelvin is beyond any material"),
    "rate": Kind("1/s", "rate [1/s]", '"2 1/h", "0.5 1/min"', 1e3, None,
                 "a thousand air changes a second is beyond any leakage"),
    "angle": Kind("rad", "angle [rad]", '"30 deg", "0.5 rad"'),
    "proportional_gain": Kind("1/K", "proportional gain [1/K]", '"0.05 1/K", "5 %/K"', 1e6,
                              None, "a gain of 1e6 per kelvin already switches full power for a "
                                    "micro-kelvin error"),
    "integral_gain": Kind("1/K/s", "integral gain [1/K/s]", '"2e-4 1/K/s", "0.01 1/K/min"', 1e6,
                          None, "a gain of 1e6 per kelvin second is beyond any controller"),
    "derivative_gain": Kind("s/K", "derivative gain [s/K]", '"10 s/K", "0.2 min/K"', 1e9, None,
                            "a gain of 1e9 s/K is beyond any controller"),
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


# ---------------------------------------------------------------------------------------------
# Strict unit grammar, checked by hand before pint sees the text (pint's own parser evaluates
# an expression tree and would accept or choke on much more).  Iterative: no recursion on user
# input, a bounded length and nesting depth.
#
#   unit    := factor { ( "*" | "/" | "·" | " " ) factor }
#   factor  := atom [ power ]
#   atom    := NAME | "1" | "(" unit ")"
#   NAME    := letter { letter | digit | "_" }        (digits at the end are a power: m2, m2K)
#   power   := ( "^" | "**" ) exponent | "²" | "³"
#   exponent:= [ "-" | "+" ] digits [ "." digits ] | "(" [ "-" ] digits "/" digits ")"
# "%" is a unit name on its own.
# ---------------------------------------------------------------------------------------------

#: Longest unit text accepted (characters) and deepest parenthesis nesting.
MAX_UNIT_TEXT = 120
MAX_UNIT_DEPTH = 4

_NAME_START = set("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ°µμΩ")
_NAME_PART = _NAME_START | set("0123456789_")
_DIGITS = set("0123456789")
# Names pint knows that are numbers rather than units: "100 pi mm" is a typo, not 314 mm.
_NUMBER_NAMES = {"pi", "π", "tau", "e", "eulers_number", "avogadro_number", "zeta", "ln10",
                 "wien_x", "wien_u", "fine_structure_constant", "alpha"}
_GRAMMAR_ALLOWED = ("a unit expression of unit names (mm, degC, kW, Btu), products with '*' or "
                    "a space, quotients with '/', powers as m2, m^2, m**2, m^-1, m^0.5 or "
                    "m^(1/2), and balanced parentheses as in W/(m2*K); nothing else")


def _grammar_error(text, where, file, what):
    return CaseError(f"cannot read the unit '{text}': {what}", file=file, key=where,
                     allowed=_GRAMMAR_ALLOWED)


def _read_exponent(s, i, n):
    """Index after an exponent starting at s[i], or -1 when none is there."""
    if i < n and s[i] == "(":
        j = i + 1
        if j < n and s[j] in "+-":
            j += 1
        k = j
        while j < n and s[j] in _DIGITS:
            j += 1
        if j == k or j >= n or s[j] != "/":
            return -1
        j += 1
        k = j
        while j < n and s[j] in _DIGITS:
            j += 1
        if j == k or j >= n or s[j] != ")":
            return -1
        return j + 1
    j = i
    if j < n and s[j] in "+-":
        j += 1
    k = j
    while j < n and s[j] in _DIGITS:
        j += 1
    if j == k:
        return -1
    if j < n and s[j] == ".":
        j += 1
        k = j
        while j < n and s[j] in _DIGITS:
            j += 1
        if j == k:
            return -1
    return j


def check_unit_text(text, where: str = "", *, file: str = "") -> str:
    """Check a unit text against fdwall's unit grammar (see module notes and docs/case-file.md).

    Parameters
    ----------
    text : str
        The unit part of a quantity, e.g. ``"W/(m2*K)"``, ``"degC"``, ``"m^0.5"``.
    where : str, optional
        Key path (or column, option) for the error message.
    file : str, optional
        File name for the error message.

    Returns
    -------
    str
        The text, stripped.

    Raises
    ------
    CaseError
        For any character or arrangement outside the grammar (a dangling operator, unbalanced
        or too deep parentheses, brackets, '=', '#', '!', ';', '~', a number name such as
        'pi'), naming ``where`` and the text.
    """
    if not isinstance(text, str):
        raise _grammar_error(text, where, file, "it is not text")
    s = text.strip()
    n = len(s)
    if not n:
        raise _grammar_error(text, where, file, "it is empty")
    if n > MAX_UNIT_TEXT:
        raise _grammar_error(s[:40] + "...", where, file,
                             f"it is {n} characters long (at most {MAX_UNIT_TEXT})")
    i = 0
    depth = 0
    expect_atom = True          # True: a name, "1" or "(" must come next
    while i < n:
        c = s[i]
        if c == " ":
            i += 1
            continue
        if expect_atom:
            if c in _NAME_START:
                j = i + 1
                while j < n and s[j] in _NAME_PART:
                    j += 1
                name = s[i:j]
                power = name[len(name.rstrip("0123456789")):]
                if power and int(power) == 0:
                    raise _grammar_error(s, where, file,
                                         f"'{name}' raises a unit to the power zero; leave "
                                         "the unit out or give a non-zero power (m2, m^-1)")
                if name.rstrip("0123456789") in _NUMBER_NAMES:
                    raise _grammar_error(s, where, file,
                                         f"'{name}' is a number, not a unit; write the value "
                                         "as a number")
                i = j
                expect_atom = False
            elif c == "%":
                i += 1
                expect_atom = False
            elif c == "1" and (i + 1 >= n or s[i + 1] not in _DIGITS and s[i + 1] != "."):
                i += 1
                expect_atom = False
            elif c == "(":
                depth += 1
                if depth > MAX_UNIT_DEPTH:
                    raise _grammar_error(s[:40] + ("..." if n > 40 else ""), where, file,
                                         f"parentheses nested deeper than {MAX_UNIT_DEPTH}")
                i += 1
            else:
                what = ("it ends with an operator" if c in "*/^" and i == n - 1 else
                        f"'{c}' at position {i + 1} where a unit name or '(' was expected")
                raise _grammar_error(s, where, file, what)
            continue
        # after an atom: a power, an operator, ")", a space-product or the end
        if c in "^" or s.startswith("**", i):
            start = i + (2 if c == "*" else 1)
            j = _read_exponent(s, start, n)
            if j < 0:
                raise _grammar_error(s, where, file,
                                     f"the power at position {i + 1} has no integer or "
                                     "fractional exponent (m^2, m^-1, m^0.5, m^(1/2))")
            if not any(ch in "123456789" for ch in s[start:j].split("/")[0]):
                raise _grammar_error(s, where, file,
                                     f"the power at position {i + 1} is zero; leave the unit "
                                     "out or give a non-zero power (m^2, m^-1, m^0.5)")
            i = j
            if i < n and s[i] in "^²³" or s.startswith("**", i):
                raise _grammar_error(s, where, file, "two powers in a row")
        elif c in "²³":
            i += 1
        elif c in "*/·":
            i += 1
            expect_atom = True
            if s[i:].strip() == "":
                raise _grammar_error(s, where, file, "it ends with an operator")
        elif c == ")":
            depth -= 1
            if depth < 0:
                raise _grammar_error(s, where, file,
                                     f"')' at position {i + 1} has no matching '('")
            i += 1
        elif s[i - 1] == " " and (c in _NAME_START or c in "(%"):
            expect_atom = True      # "kg m2": a product written with a space
        else:
            raise _grammar_error(s, where, file,
                                 f"'{c}' at position {i + 1} is not allowed here")
    if expect_atom:
        raise _grammar_error(s, where, file, "it ends where a unit name was expected")
    if depth:
        raise _grammar_error(s, where, file, f"{depth} '(' without a matching ')'")
    return s


def parse_header_unit(header, where: str = "", *, file: str = ""):
    """Split a column header ``"name [unit]"`` into ``(name, unit_text)``.

    Parameters
    ----------
    header : str
        E.g. ``"time [s]"``, ``"shell temperature [degC]"`` or ``"label"`` (no unit).
    where : str, optional
        Column or key for error messages (default: the header itself).
    file : str, optional
        File name for error messages.

    Returns
    -------
    tuple of (str, str or None)
        The name (stripped) and the unit text checked by :func:`check_unit_text`, or None
        when the header has no bracket.

    Raises
    ------
    CaseError
        For a header with a stray or unbalanced bracket, an empty name or a unit outside the
        grammar.
    """
    if not isinstance(header, str):
        raise CaseError(f"the column header {header!r} is not text", file=file,
                        key=where, allowed="a header such as 'time [s]'")
    h = header.strip()
    key = where or h
    if "[" not in h and "]" not in h:
        if not h:
            raise CaseError("a column header is empty", file=file, key=key,
                            allowed="a header such as 'time [s]'")
        return h, None
    a = h.find("[")
    if a <= 0 or not h.endswith("]") or h.count("[") != 1 or h.count("]") != 1 \
            or not h[:a].strip():
        raise CaseError(f"the column header '{h}' is not 'name [unit]'", file=file, key=key,
                        allowed="a header such as 'time [s]' or 'shell temperature [degC]'")
    return h[:a].strip(), check_unit_text(h[a + 1:-1], key, file=file)


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
    check_unit_text(text, where, file=file)
    try:
        return ureg.parse_units(_clean_unit_text(text))
    except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError, AttributeError,
            TypeError, ValueError, SyntaxError, KeyError, ArithmeticError,
            RecursionError) as exc:
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


# Texts already converted, (text, kind) -> SI value: a text converts to the same number every
# time, and the unit library costs about 50 us per conversion, half the time of loading a
# case (a design study loads a case per variant).  Only conversions that succeeded are kept;
# the sign and range checks below still run on every call.  Bounded: cleared when full.
_SI_CACHE: dict = {}
_SI_CACHE_SIZE = 8192


def parse_quantity(value, kind: str, where: str = "", *, file: str = "", positive: bool = False,
                   nonnegative: bool = False, bare_si: bool = False,
                   check_range: bool = True) -> float:
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
    check_range : bool, optional
        Refuse magnitudes outside the kind's range (``KINDS[kind].largest`` and, for non-zero
        values, ``KINDS[kind].smallest``).  Default True; False for a bare unit factor.

    Returns
    -------
    float
        The value in the SI unit of ``kind`` (see :data:`KINDS`).

    Raises
    ------
    CaseError
        Unknown kind or unit, a unit of the wrong kind, a missing unit, a temperature at or
        below absolute zero, a sign that is not allowed, or a magnitude outside the kind's
        range.
    """
    if kind not in KINDS:
        raise CaseError(f"unknown quantity kind {kind!r}", file=file, key=where,
                        allowed=", ".join(KINDS))
    k = KINDS[kind]
    key = (value, kind) if isinstance(value, str) else None
    si = _SI_CACHE.get(key) if key is not None else None
    if si is None:
        x, unit_text = _split(value, kind, where, file)
        if unit_text is None:
            if kind == "dimensionless" or bare_si:
                si = x
            else:
                raise CaseError(
                    f"the bare number {x:g} has no unit, so it is not clear what {k.label} it "
                    "means", file=file, key=where,
                    allowed=f"write the value with its unit as text, e.g. {k.examples}")
        else:
            unit = parse_unit(unit_text, where, file=file)
            si = _convert(x, unit, unit_text, kind, where, file)
            if key is not None:
                if len(_SI_CACHE) >= _SI_CACHE_SIZE:
                    _SI_CACHE.clear()
                _SI_CACHE[key] = si
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
    if check_range:
        check_magnitude(si, kind, where, file=file, shown=_describe(value), positive=positive)
    return si


def _si_symbol(k: Kind) -> str:
    lab = k.label
    return lab[lab.index("[") + 1:lab.index("]")] if "[" in lab else k.si


def check_magnitude(si: float, kind: str, where: str = "", *, file: str = "", shown: str = "",
                    positive: bool = False) -> None:
    """Refuse an SI value whose magnitude lies outside the range of ``kind``.

    Parameters
    ----------
    si : float
        The value in the SI unit of ``kind``.
    kind : str
        One of :func:`kind_names`; its ``largest``/``smallest`` give the range (SI).
    where, file : str, optional
        Key path and file name for error messages.
    shown : str, optional
        The value as written in the file (default: the SI value).
    positive : bool, optional
        The value must be > 0 (so zero is not offered as an alternative in the message).

    Raises
    ------
    CaseError
        If ``|si|`` is above ``largest``, or not zero and below ``smallest``.
    """
    k = KINDS[kind]
    noun = k.label.split(" [")[0]
    sym = _si_symbol(k)
    shown = shown or f"{si:g} {sym}"
    a = abs(si)
    size = " in magnitude" if si < 0 else ""
    if k.largest is not None and not a <= k.largest:
        why = f" ({k.why_large})" if k.why_large else ""
        raise CaseError(
            f"{shown} is {si:.3g} {sym}, more{size} than the largest {noun} fdwall accepts, "
            f"{k.largest:g} {sym}{why}", file=file, key=where,
            allowed=f"{_a(noun)} of at most {k.largest:g} {sym}{size}, e.g. {k.examples}")
    if k.smallest is not None and a != 0.0 and a < k.smallest:
        why = f" ({k.why_small})" if k.why_small else ""
        raise CaseError(
            f"{shown} is {si:.3g} {sym}, less{size} than the smallest {noun} fdwall accepts "
            f"other than zero, {k.smallest:g} {sym}{why}", file=file, key=where,
            allowed=("" if positive else "zero, or ")
            + f"{_a(noun)} of at least {k.smallest:g} {sym}{size}, e.g. {k.examples}")


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


#: Largest power-law coefficient accepted [W/(m2 K^(1+n))] (common practice, no source: at
#: dT = 1 K it is the largest film coefficient of KINDS["film_coefficient"]).
POWER_LAW_COEFFICIENT_MAX = 1e7
#: How far the temperature power of the coefficient's unit may stray from 1 + n [-]: enough for
#: a rounded exponent (0.333 next to K^(4/3)), far less than 1/4 and 1/3 differ.
POWER_LAW_UNIT_TOLERANCE = 0.005


def parse_power_law_coefficient(value, exponent: float, where: str = "", *, file: str = "",
                                exponent_key: str = "exponent") -> float:
    """Coefficient a of the power-law film ``h = a |dT|^n`` in SI, W/(m2 K^(1+n)).

    The unit depends on the exponent n, so it is not one of :data:`KINDS`: the text must carry
    a unit of power per area per temperature to the power 1 + n, e.g. ``"1.32 W/(m2 K^1.25)"``
    for n = 0.25, ``"1.31 W/(m2*K^(4/3))"`` for n = 1/3, or ``"0.23 Btu/h/ft2/degF^1.25"``
    (degC and degF are read as differences).  The temperature power may differ from 1 + n by
    :data:`POWER_LAW_UNIT_TOLERANCE` (a rounded exponent); the value is then taken as written.

    Parameters
    ----------
    value : str
        The coefficient with its unit.
    exponent : float
        The exponent n [-] the coefficient goes with.
    where : str, optional
        Key path for error messages.
    file : str, optional
        File name for error messages.
    exponent_key : str, optional
        Name of the exponent key (for messages).

    Returns
    -------
    float
        a [W/(m2 K^(1+n))], > 0.

    Raises
    ------
    CaseError
        A bare number, a unit of another kind or with another temperature power, a value that
        is not positive or above :data:`POWER_LAW_COEFFICIENT_MAX`.
    """
    p = 1.0 + float(exponent)
    si_text = f"W/(m2 K^{p:g})"
    label = f"power-law coefficient [{si_text}]"
    examples = f'"1.31 {si_text}", "1.31 W/m2/K^{p:g}"'
    allowed = (f"a positive value with a unit of power per area per temperature^{p:g} (the "
               f"power 1 + {exponent_key}), e.g. {examples}")
    if isinstance(value, bool) or not isinstance(value, (str, numbers.Real)):
        raise CaseError(f"got {_describe(value)} where {_a(label)} was expected", file=file,
                        key=where, allowed=allowed)
    if isinstance(value, numbers.Real):
        raise CaseError(f"the bare number {float(value):g} has no unit, so it is not clear "
                        f"what {label} it means", file=file, key=where,
                        allowed="write the value with its unit as text, " + allowed)
    m = _NUMBER.match(value.replace("\u2212", "-"))
    if not m:
        raise CaseError(f"cannot read {_describe(value)} as {_a(label)}: it should start with a "
                        "number followed by a unit", file=file, key=where, allowed=allowed)
    x = float(m.group(1))
    unit_text = m.group(2)
    if not unit_text:
        raise CaseError(f"the bare number {x:g} has no unit, so it is not clear what {label} it "
                        "means", file=file, key=where,
                        allowed="write the value with its unit as text, " + allowed)
    if not math.isfinite(x):
        raise CaseError(f"got {_describe(value)}, which is not a finite number", file=file,
                        key=where, allowed=allowed)
    unit = parse_unit(unit_text, where, file=file)
    dims = dict(unit.dimensionality)
    tpow = -float(dims.get("[temperature]", 0.0))
    rest = {d: v for d, v in dims.items() if d != "[temperature]"}
    if rest != {"[mass]": 1, "[time]": -3} or abs(tpow - p) > POWER_LAW_UNIT_TOLERANCE:
        if rest == {"[mass]": 1, "[time]": -3}:
            what = (f"its unit '{unit_text}' has temperature to the power {tpow:g}, but with "
                    f"{exponent_key} = {float(exponent):g} the power must be 1 + "
                    f"{float(exponent):g} = {p:g}")
        else:
            what = f"its unit '{unit_text}' is not a power per area per temperature^{p:g}"
        raise CaseError(f"{_describe(value)} cannot be {_a(label)}: {what}", file=file,
                        key=where, allowed=allowed)
    try:
        si = float(ureg.Quantity(x, unit).to_base_units().magnitude)
    except (pint.errors.DimensionalityError, pint.errors.OffsetUnitCalculusError):
        raise CaseError(f"{_describe(value)} cannot be converted to {si_text}", file=file,
                        key=where, allowed=allowed) from None
    if not si > 0.0:
        raise CaseError(f"{_describe(value)} must be greater than zero", file=file, key=where,
                        allowed=allowed)
    if si > POWER_LAW_COEFFICIENT_MAX:
        raise CaseError(f"{_describe(value)} is {si:.3g} {si_text}, more than the largest "
                        f"power-law coefficient fdwall accepts, {POWER_LAW_COEFFICIENT_MAX:g} "
                        f"{si_text}", file=file, key=where, allowed=allowed)
    return si


#: 1 W/(m2 K) in Btu/(h ft2 F) [-]: 3600 s/h / 1055.05585262 J/Btu (International Table) x
#: (0.3048 m/ft)^2 / (1.8 F/K), = 0.176110 (all factors exact by definition).
W_M2K_IN_BTU_HFT2F = 3600.0 / 1055.05585262 * 0.3048 ** 2 / 1.8


def power_law_coefficient_us(a, exponent):
    """Coefficient a of the power-law film ``h = a |dT|^n`` from W/(m2 K^(1+n)) to
    Btu/(h ft2 F^(1+n)) (US display; SI stays the unit of files and of the model).

    The heat flux is q'' = a dT^(1+n).  With q''[Btu/(h ft2)] = 1.8 W_M2K_IN_BTU_HFT2F
    q''[W/m2] and dT[K] = dT[F] / 1.8, a_US dT_F^(1+n) = 1.8 c a_SI (dT_F / 1.8)^(1+n), so
    a_US = a_SI c (5/9)^n with c = :data:`W_M2K_IN_BTU_HFT2F` = 0.17611 (for n = 0 the film
    coefficient's own factor).

    Parameters
    ----------
    a : float or array
        Coefficient [W/(m2 K^(1+n))].
    exponent : float
        Exponent n [-].

    Returns
    -------
    float or ndarray
        Coefficient [Btu/(h ft2 F^(1+n))].
    """
    return a * W_M2K_IN_BTU_HFT2F * (5.0 / 9.0) ** float(exponent)


#: Unit text of a power-law coefficient as fdwall writes it: ``W/(m2 K^1.25)``.
_POWER_LAW_UNIT = re.compile(r"^W/\(m2 K\^([0-9.eE+-]+)\)$")


def power_law_unit_power(unit: str):
    """The temperature power 1 + n [-] of a power-law coefficient unit as fdwall writes it
    (``"W/(m2 K^1.25)"`` gives 1.25), or None for any other unit text."""
    m = _POWER_LAW_UNIT.match(str(unit).strip())
    if not m:
        return None
    try:
        p = float(m.group(1))
    except ValueError:
        return None
    return p if math.isfinite(p) else None


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
    if unit.dimensionality == _DIMS["rate"]:
        check_magnitude(float(ureg.Quantity(x, unit).to("1/s").magnitude), "rate", where,
                        file=file, shown=_describe(value))
    check_magnitude(flow, "volume_flow", where, file=file, shown=_describe(value))
    return flow
