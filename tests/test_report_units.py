"""US display units of every quantity the report can show, checked against pint.

External reference: pint (open library) with its own unit definitions (international foot
and inch, international-table Btu, avoirdupois pound), from which the expected factors are
computed independently of fdwall's tables.
"""
from __future__ import annotations

import pint
import pytest

from fdwall.h5tree import SUFFIX_UNITS
from fdwall.report.units import SAME_IN_US, display

U = pint.UnitRegistry()

# SI unit text -> (pint expression of the SI unit, pint expression of the US unit): written
# here on purpose, not imported, so a wrong entry in fdwall's table cannot pass
EXPECTED = {
    "m": ("m", "inch"), "m2": ("m**2", "foot**2"), "m3": ("m**3", "foot**3"),
    "W": ("watt", "Btu/hour"), "W/m2": ("W/m**2", "Btu/hour/foot**2"),
    "W/m": ("W/m", "Btu/hour/foot"), "W/m2/K": ("W/m**2/delta_degC",
                                                 "Btu/hour/foot**2/delta_degF"),
    "m2*K/W": ("m**2*delta_degC/W", "hour*foot**2*delta_degF/Btu"),
    "W/m/K": ("W/m/delta_degC", "Btu/hour/foot/delta_degF"), "J": ("joule", "Btu"),
    "kg": ("kg", "pound"), "kg/m3": ("kg/m**3", "pound/foot**3"),
    "W/K": ("W/delta_degC", "Btu/hour/delta_degF"), "K/W": ("delta_degC/W",
                                                            "delta_degF*hour/Btu"),
    "J/K": ("J/delta_degC", "Btu/delta_degF"), "J/kg/K": ("J/kg/delta_degC",
                                                         "Btu/pound/delta_degF"),
    "m3/s": ("m**3/s", "foot**3/minute"), "m/s": ("m/s", "foot/minute"),
    "J/m2": ("J/m**2", "Btu/foot**2"), "J/m": ("J/m", "Btu/foot"), "Pa": ("Pa", "psi"),
}


def _all_units():
    return sorted(set(SUFFIX_UNITS.values()) | set(EXPECTED) | {"K"})


def test_every_report_unit_has_a_checked_us_display():
    for u in _all_units():
        assert u in EXPECTED or u in SAME_IN_US or u == "K", f"no US display checked for {u}"


@pytest.mark.parametrize("unit", sorted(EXPECTED))
def test_us_factor_matches_pint(unit):
    si, us = EXPECTED[unit]
    want = U.Quantity(2.5, si).to(us).magnitude
    got, label = display(2.5, unit, "us")
    assert float(got) == pytest.approx(want, rel=1e-9), unit
    assert label and label != unit


def test_unchanged_units_and_temperatures():
    for u in SAME_IN_US:
        if u:
            v, label = display(7.0, u, "us")
            assert float(v) == 7.0 and label == u
    # a level: 373.15 K = 212 degF; a difference: 10 K = 18 degF difference (pint offsets)
    v, label = display(373.15, "K", "us", key="T_max_K")
    assert float(v) == pytest.approx(U.Quantity(373.15, "kelvin").to("degF").magnitude)
    v, label = display(10.0, "K", "us", key="margin_K")
    assert float(v) == pytest.approx(U.Quantity(10.0, "delta_degC").to("delta_degF")
                                     .magnitude)
    assert "difference" in label


def test_standard_error_takes_its_numbers_unit_as_a_difference():
    # a standard error of a temperature is a temperature difference: 0.5 K = 0.9 delta_degF
    # (pint); the number itself is an absolute temperature, 300 K = 80.33 degF
    from fdwall.report import html as rhtml
    rows = {r[0]: r[1:] for r in rhtml._scalar_rows({"T0_K": 300.0, "T0_K_stderr": 0.5}, "us")}
    ureg = pint.UnitRegistry()
    assert float(rows["T0_K_stderr"][0]) == pytest.approx(
        ureg.Quantity(0.5, "delta_degC").to("delta_degF").magnitude)
    assert "difference" in rows["T0_K_stderr"][1]
    assert float(rows["T0"][0]) == pytest.approx(
        ureg.Quantity(300.0, "kelvin").to("degF").magnitude, abs=0.01)
