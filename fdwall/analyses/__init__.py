"""Analyses built on transient runs and steady solves (heated enclosures: warm-up, hold duty,
energy ledger by wall, cool-down, repeated firing cycles, heater sizing).

All inputs and outputs are SI: time [s], temperature [K], power [W], energy [J].
"""
from .enclosure import (
    warm_up_time, settle_time, hold_duty, switch_on_times, full_power_energy, steady_duty,
    energy_breakdown, cooldown, periodic_state, size_heater, summarise_enclosure,
)

__all__ = [
    "warm_up_time", "settle_time", "hold_duty", "switch_on_times", "full_power_energy",
    "steady_duty", "energy_breakdown", "cooldown", "periodic_state", "size_heater",
    "summarise_enclosure",
]
