"""Public insulation sizing API (see docs/sizing.md)."""
from .analyses.sizing import (
    Conditions,
    Economics,
    Energy,
    LossTarget,
    PeakSkinTarget,
    SizingResult,
    SkinTarget,
    WarmUpTarget,
    critical_radius_cylinder,
    critical_radius_sphere,
    present_value_factor,
    service_warnings,
    size_candidates,
    size_heater_at,
    size_layer,
    stock_round_up,
    touch_target,
    wall_index,
    with_material,
    with_thickness,
)

__all__ = ["Conditions", "Economics", "Energy", "LossTarget", "PeakSkinTarget", "SizingResult",
           "SkinTarget", "WarmUpTarget", "critical_radius_cylinder", "critical_radius_sphere",
           "present_value_factor", "service_warnings", "size_candidates", "size_heater_at",
           "size_layer", "stock_round_up", "touch_target", "wall_index", "with_material",
           "with_thickness"]
