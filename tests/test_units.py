"""Tests of fdwall.units: quantities with units -> SI floats, and the errors for bad ones.

Reference values are exact definitions or come from scipy.constants (CODATA / NIST values,
an independent library); the source is named beside each check:
- 1 in = 0.0254 m and 1 ft = 0.3048 m exactly (international yard and pound, 1959;
  NIST SP 811, Appendix B);
- 1 lb = 0.45359237 kg exactly (same agreement);
- T[K] = T[degC] + 273.15 (SI Brochure, definition of the degree Celsius);
  T[degF] = 1.8 T[degC] + 32, so T[K] = (T[degF] + 459.67) / 1.8 (NIST SP 811, B.9);
- 1 Btu(IT) = 1055.05585262 J (NIST SP 811; scipy.constants.Btu);
- 1 atm = 101325 Pa exactly (CGPM 1954; scipy.constants.atm);
- 1 kWh = 3.6e6 J, 1 h = 3600 s (definitions).
"""

from __future__ import annotations

import math

import pytest
import scipy.constants as sc

from fdwall.case.errors import CaseError
from fdwall.units import KINDS, kind_names, parse_leakage, parse_quantity, parse_unit

INCH = 0.0254          # m, exact by definition (NIST SP 811)
FOOT = 0.3048          # m, exact by definition (NIST SP 811)
POUND = 0.45359237     # kg, exact by definition (NIST SP 811)
BTU = sc.Btu           # J, International Table Btu (scipy.constants, NIST SP 811)


def approx(x):
    return pytest.approx(x, rel=1e-12, abs=1e-12)


# ------------------------------------------------------------------ every kind

@pytest.mark.parametrize("text, kind, expected", [
    # length [m]
    ("100 mm", "length", 0.1),
    ("3 in", "length", 3 * INCH),                       # exact definition
    ("2 ft", "length", 2 * FOOT),                       # exact definition
    ("0.5m", "length", 0.5),
    # area [m2]
    ("1.5 m2", "area", 1.5),
    ("1.5 m^2", "area", 1.5),
    ("1.5 m**2", "area", 1.5),
    ("1 m²", "area", 1.0),
    ("10 ft2", "area", 10 * FOOT ** 2),
    # volume [m3]
    ("125 L", "volume", 0.125),                         # 1 L = 1e-3 m3 (SI Brochure)
    ("2 ft3", "volume", 2 * FOOT ** 3),
    # mass [kg]
    ("55 lb", "mass", 55 * POUND),
    # absolute temperature [K]
    ("250 degC", "temperature", 250 + 273.15),          # SI Brochure
    ("480 degF", "temperature", (480 + 459.67) / 1.8),  # NIST SP 811 B.9
    ("300 K", "temperature", 300.0),
    ("-40 degF", "temperature", 233.15),                # -40 degF = -40 degC (defining formula)
    ("250 °C", "temperature", 523.15),
    ("671.67 degR", "temperature", 671.67 / 1.8),       # Rankine = 5/9 K (NIST SP 811)
    # temperature difference [K]
    ("5 K", "temperature_difference", 5.0),
    ("9 delta_degF", "temperature_difference", 5.0),    # 1 degF step = 5/9 K
    ("5 delta_degC", "temperature_difference", 5.0),
    ("5 degC", "temperature_difference", 5.0),          # read as a difference here
    ("9 degF", "temperature_difference", 5.0),
    # time [s]
    ("4 h", "time", 4 * 3600.0),
    ("30 min", "time", 1800.0),
    ("90 s", "time", 90.0),
    ("1 day", "time", 86400.0),
    # power [W], energy [J]
    ("2.5 kW", "power", 2500.0),
    ("3412.14 Btu/h", "power", 3412.14 * BTU / 3600),
    ("1 kWh", "energy", 3.6e6),
    # flux [W/m2], film coefficient [W/m2/K]
    ("2 kW/m2", "heat_flux", 2000.0),
    ("1 Btu/h/ft2", "heat_flux", BTU / 3600 / FOOT ** 2),
    ("10 W/m2/K", "film_coefficient", 10.0),
    ("10 W/(m2*K)", "film_coefficient", 10.0),
    ("10 W/m2/degC", "film_coefficient", 10.0),         # degC in a compound unit is a step
    ("1 Btu/h/ft2/degF", "film_coefficient", BTU / 3600 / FOOT ** 2 * 1.8),
    # conductivity, specific heat, density
    ("0.04 W/m/K", "conductivity", 0.04),
    ("1 Btu*in/h/ft2/degF", "conductivity", BTU / 3600 * INCH / FOOT ** 2 * 1.8),
    ("0.84 kJ/kg/K", "specific_heat", 840.0),
    ("1 Btu/lb/degF", "specific_heat", BTU / POUND * 1.8),   # = 4186.8 J/kg/K
    ("128 kg/m3", "density", 128.0),
    ("8 lb/ft3", "density", 8 * POUND / FOOT ** 3),
    # contact resistance, capacity, conductance
    ("0.002 m2*K/W", "contact_resistance", 0.002),
    ("0.002 m2K/W", "contact_resistance", 0.002),
    ("45 kJ/K", "heat_capacity", 45000.0),
    ("1.5 W/K", "conductance", 1.5),
    # flows, speed, pressure
    ("120 m3/h", "volume_flow", 120 / 3600),
    ("2 L/s", "volume_flow", 0.002),
    ("36 km/h", "speed", 10.0),
    ("3 m/s", "speed", 3.0),
    ("1 atm", "pressure", sc.atm),                      # 101325 Pa exactly
    ("85 kPa", "pressure", 85000.0),
    # dimensionless, per kelvin, rates, angles, gains
    ("85 %", "dimensionless", 0.85),
    (0.85, "dimensionless", 0.85),
    (1, "dimensionless", 1.0),
    ("0.0002 1/K", "inverse_temperature", 0.0002),
    ("0.0002 1/degC", "inverse_temperature", 0.0002),
    ("2 1/h", "rate", 2 / 3600),
    ("30 deg", "angle", math.radians(30)),
    ("5 %/K", "proportional_gain", 0.05),
    ("0.6 1/K/min", "integral_gain", 0.01),
    ("0.5 min/K", "derivative_gain", 30.0),
])
def test_parse_every_kind(text, kind, expected):
    assert parse_quantity(text, kind) == approx(expected)


def test_btu_film_coefficient_matches_published_factor():
    # NIST SP 811 Appendix B.8 lists 1 Btu_IT/(h ft2 degF) = 5.678 263 W/(m2 K) (from memory)
    assert parse_quantity("1 Btu/h/ft2/degF", "film_coefficient") == pytest.approx(5.678263, rel=1e-6)


def test_fahrenheit_conversion_against_scipy():
    # scipy.constants.convert_temperature is an independent implementation of the formula
    for f in (-40.0, 32.0, 212.0, 480.0, 1500.0):
        assert parse_quantity(f"{f} degF", "temperature") == approx(
            float(sc.convert_temperature(f, "F", "K")))


def test_every_kind_has_examples_that_parse():
    # the examples shown in error messages must themselves be valid input
    for name in kind_names():
        for ex in KINDS[name].examples.split(", "):
            v = ex.strip().strip('"')
            value = float(v) if v.replace(".", "").isdigit() else v
            x = parse_quantity(value, name)
            assert math.isfinite(x)


def test_bare_si_for_programmatic_use():
    assert parse_quantity(0.1, "length", bare_si=True) == 0.1
    assert parse_quantity(523.15, "temperature", bare_si=True) == 523.15


def test_parse_unit_spellings():
    assert parse_unit("W/m2/K") == parse_unit("W/(m**2*K)")
    assert parse_unit("m2K/W") == parse_unit("m**2*K/W")


# ------------------------------------------------------------------ errors

def _err(value, kind, **kw):
    with pytest.raises(CaseError) as ei:
        parse_quantity(value, kind, "walls[0].layers[1].thickness", file="oven.toml", **kw)
    msg = str(ei.value)
    # one paragraph naming file and key path, with what is allowed
    assert "\n" not in msg
    assert "oven.toml" in msg and "walls[0].layers[1].thickness" in msg
    assert "Allowed:" in msg
    assert ei.value.file == "oven.toml" and ei.value.key == "walls[0].layers[1].thickness"
    return msg


def test_bare_number_temperature_asks_for_unit():
    msg = _err(250, "temperature")
    assert "no unit" in msg and "degC" in msg


@pytest.mark.parametrize("kind", ["length", "time", "power", "heat_flux", "film_coefficient"])
def test_bare_number_rejected_for_dimensional_kinds(kind):
    assert "no unit" in _err(5, kind)
    assert "no unit" in _err("5", kind)


def test_wrong_dimension_names_both():
    msg = _err("250 W", "temperature")
    assert "power" in msg and "temperature" in msg
    msg = _err("5 m", "time")
    assert "length" in msg


def test_charge_for_celsius_gets_hint():
    assert "degC" in _err("250 C", "temperature")


def test_slash_product_gets_hint():
    assert "W/(m2*K)" in _err("10 W/m2K", "film_coefficient")


def test_unknown_unit_suggests():
    msg = _err("5 mmm", "length")
    assert "unknown unit" in msg and "'mm'" in msg


@pytest.mark.parametrize("text", ["-300 degC", "-500 degF", "-1 K", "0 K"])
def test_below_absolute_zero(text):
    assert "absolute zero" in _err(text, "temperature")


def test_delta_unit_not_an_absolute_temperature():
    assert "difference" in _err("5 delta_degC", "temperature")


@pytest.mark.parametrize("value", [True, None, [1, 2], "abc", "mm 5", "nan m", float("inf")])
def test_malformed_values(value):
    _err(value, "length")


def test_sign_checks():
    assert "greater than zero" in _err("-5 mm", "length", positive=True)
    assert "greater than zero" in _err("0 mm", "length", positive=True)
    assert "negative" in _err("-1 W/K", "conductance", nonnegative=True)
    assert parse_quantity("0 W/K", "conductance", nonnegative=True) == 0.0


def test_unknown_kind():
    with pytest.raises(CaseError, match="unknown quantity kind"):
        parse_quantity("1 m", "lenght")


def test_caseerror_is_valueerror():
    assert issubclass(CaseError, ValueError)


# ------------------------------------------------------------------ leakage

def test_leakage_volume_flow_and_air_changes():
    assert parse_leakage("120 m3/h") == approx(120 / 3600)
    # 2 air changes per hour of 0.5 m3 = 1 m3/h (definition of air changes per hour)
    assert parse_leakage("2 1/h", 0.5) == approx(1.0 / 3600)


def test_leakage_errors():
    with pytest.raises(CaseError) as ei:
        parse_leakage("2 1/h", None, "chamber.leakage", file="f.toml", volume_key="chamber.volume")
    assert "chamber.volume" in str(ei.value) and "f.toml" in str(ei.value)
    with pytest.raises(CaseError, match="not of an air flow"):
        parse_leakage("2 m", 1.0)
    with pytest.raises(CaseError, match="no unit"):
        parse_leakage(3, 1.0)
    with pytest.raises(CaseError, match="negative"):
        parse_leakage("-3 m3/h")


def test_conversion_cache_gives_the_same_numbers_and_checks():
    # common practice, no source: a repeated text converts to the identical number (checked
    # against pint directly, the unit library itself), and the sign and range checks and the
    # error messages (with the key) still apply on every call
    import pint

    from fdwall import units as U
    from fdwall.errors import InputError
    ureg = pint.UnitRegistry()
    U._SI_CACHE.clear()
    for text, kind, unit, si in [("123.4 mm", "length", "mm", "m"),
                                 ("7.5 kW/m2", "heat_flux", "kW/m**2", "W/m**2")]:
        first = U.parse_quantity(text, kind, "a.b")
        again = U.parse_quantity(text, kind, "a.b")
        assert first == again == ureg.Quantity(float(text.split()[0]), unit).to(si).magnitude
    assert ("123.4 mm", "length") in U._SI_CACHE
    U.parse_quantity("-5 mm", "length", "x")                     # cached without a sign check
    with pytest.raises(InputError, match="layers.thickness"):
        U.parse_quantity("-5 mm", "length", "layers.thickness", positive=True)
    for _ in range(2):                                           # failures are never cached
        with pytest.raises(InputError, match="k.one"):
            U.parse_quantity("5 mm*", "length", "k.one")
