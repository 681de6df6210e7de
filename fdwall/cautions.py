"""The cautions that every output speaking of safety carries (one wording for all outputs).

Layer 1 (base): imports nothing.
"""
from __future__ import annotations

__all__ = ["SAFETY_CAUTION", "BURN_INDICATOR_NOTE"]

#: On every output that speaks of skin temperature, touch, burns or fire.
SAFETY_CAUTION = (
    "Caution: engineering estimate. Confirm by measurement on the real equipment (with the "
    "emissivity set right for infrared readings), and follow the applicable product-safety "
    "standard, local codes and licensed professional practice.")

#: Beside every burn-damage figure (damage integral, first/second-degree indicator).
BURN_INDICATOR_NOTE = (
    "Burn-damage figures are an engineering indicator from a rate-process model, not a medical "
    "prediction.")
