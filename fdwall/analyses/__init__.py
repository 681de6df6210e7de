"""Analyses built on transient runs and steady solves (heated enclosures: warm-up, hold duty,
energy ledger by wall, cool-down, repeated firing cycles, heater sizing).

All inputs and outputs are SI: time [s], temperature [K], power [W], energy [J].
"""
from .enclosure import (
    cooldown,
    energy_breakdown,
    full_power_energy,
    hold_duty,
    periodic_state,
    settle_time,
    size_heater,
    steady_duty,
    summarise_enclosure,
    switch_on_times,
    warm_up_time,
)

__all__ = [
    "warm_up_time", "settle_time", "hold_duty", "switch_on_times", "full_power_energy",
    "steady_duty", "energy_breakdown", "cooldown", "periodic_state", "size_heater",
    "summarise_enclosure",
]
