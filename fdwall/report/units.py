"""Display units for the HTML report: SI with degC (default) or US customary, via pint.

Layer: report (presents only). Files keep SI; only displayed numbers are converted.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from ..units import power_law_coefficient_us, power_law_unit_power

__all__ = ["display", "UNIT_SYSTEMS", "SAME_IN_US"]

UNIT_SYSTEMS = ("si", "us")

# SI unit text (fdwall.h5tree.SUFFIX_UNITS) -> (pint SI unit, displayed label) per system.
_SI = {"K": "degC"}
_US = {
    "K": ("degF", "degF"), "m": ("inch", "in"), "m2": ("ft**2", "ft2"), "m3": ("ft**3", "ft3"),
    "W": ("Btu/hour", "Btu/h"), "W/m2": ("Btu/hour/ft**2", "Btu/(h ft2)"),
    "W/m": ("Btu/hour/ft", "Btu/h/ft"), "W/m2/K": ("Btu/hour/ft**2/delta_degF", "Btu/(h ft2 F)"),
    "m2*K/W": ("hour*ft**2*delta_degF/Btu", "h ft2 F/Btu"), "W/m/K": ("Btu/hour/ft/delta_degF",
                                                                       "Btu/(h ft F)"),
    "J": ("Btu", "Btu"), "kg": ("lb", "lb"), "kg/m3": ("lb/ft**3", "lb/ft3"),
    "W/K": ("Btu/hour/delta_degF", "Btu/(h F)"), "K/W": ("delta_degF*hour/Btu", "h F/Btu"),
    "J/K": ("Btu/delta_degF", "Btu/F"), "J/kg/K": ("Btu/lb/delta_degF", "Btu/(lb F)"),
    "m3/s": ("ft**3/minute", "ft3/min"), "m/s": ("ft/minute", "ft/min"),
    "J/m2": ("Btu/ft**2", "Btu/ft2"), "J/m": ("Btu/ft", "Btu/ft"), "Pa": ("psi", "psi"),
}
_PINT_SI = {"m2*K/W": "m**2*delta_degC/W", "W/m2/K": "W/m**2/delta_degC",
            "W/m/K": "W/m/delta_degC", "W/K": "W/delta_degC", "K/W": "delta_degC/W",
            "J/K": "J/delta_degC", "J/kg/K": "J/kg/delta_degC", "m3/s": "m**3/s",
            "J/m2": "J/m**2"}
#: SI units shown unchanged in US display (time, energy in kWh, rates): the same in both.
SAME_IN_US = ("s", "h", "kWh", "1/s", "1", "-", "")

_ureg = None


def _reg():
    global _ureg
    if _ureg is None:
        import pint
        _ureg = pint.UnitRegistry()
    return _ureg


#: Words in a key that mark a temperature *difference* (kelvin shown as K / degF difference,
#: never shifted by 273.15): residuals, standard errors, margins, rises ...
_DIFFERENCE_WORDS = ("rms", "residual", "stderr", "margin", "rise", "diff", "delta", "error",
                     "band", "ripple", "std", "sigma", "dT", "span", "gap",
                     "tolerance")


def is_difference(key: str) -> bool:
    """True when the result key ``key`` names a temperature difference rather than a level."""
    low = key.lower()
    return any(w.lower() in low for w in _DIFFERENCE_WORDS)


def display(values, unit: str, system: str = "si", key: str = "", exponent=None):
    """Convert SI ``values`` in ``unit`` (SUFFIX_UNITS text) to the display system.

    Returns (converted values, label). Temperatures in K show as degC (si) or degF (us);
    temperature differences (``key`` names one, see :func:`is_difference`) as K or degF
    difference.  A power-law film coefficient (unit ``W/(m2 K^p)``, p = 1 + n) shows in
    Btu/(h ft2 F^p) (us); ``exponent`` is its exact n [-] when known (else p - 1 from the
    unit text, which may be rounded).
    """
    p = power_law_unit_power(unit) if unit else None
    if p is not None:
        if system not in UNIT_SYSTEMS:
            raise InputError(f"display units must be one of {UNIT_SYSTEMS}, not {system!r}")
        arr = np.asarray(values, dtype=float)
        if system == "si":
            return arr, unit
        n = float(exponent) if exponent is not None else p - 1.0
        return np.asarray(power_law_coefficient_us(arr, n), dtype=float), \
            f"Btu/(h ft2 F^{1.0 + n:.4g})"
    if unit == "K" and key and is_difference(key):
        arr = np.asarray(values, dtype=float)
        if system == "us":
            return arr * 1.8, "degF (difference)"
        return arr, "K"
    if system not in UNIT_SYSTEMS:
        raise InputError(f"display units must be one of {UNIT_SYSTEMS}, not {system!r}")
    arr = np.asarray(values, dtype=float)
    if not unit:
        return arr, ""
    if system == "si":
        if unit == "K":
            return arr - 273.15, "degC"
        return arr, unit
    if unit not in _US:
        return arr, unit
    target, label = _US[unit]
    ureg = _reg()
    src = _PINT_SI.get(unit, unit.replace("2", "**2").replace("3", "**3")
                       if unit in ("m2", "m3", "W/m2", "kg/m3") else unit)
    q = ureg.Quantity(arr, ureg.kelvin if unit == "K" else ureg(src).units)
    return np.asarray(q.to(target).magnitude, dtype=float), label
