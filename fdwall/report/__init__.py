"""Human-facing output of a run: plain-text summaries (:mod:`.text`) and PNG plots (:mod:`.plots`).

Everything here only reads results; numbers inside stay SI ([K], [W], [J], [s], [m]) and are
converted to degC, kW, kWh/MJ, hours and mm only when printed or drawn.
"""
from .text import format_case, format_material, format_material_list, format_steady, format_summary

__all__ = ["format_summary", "format_steady", "format_case", "format_material_list",
           "format_material"]
