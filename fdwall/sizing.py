"""Public insulation sizing API (see docs/sizing.md)."""
from .analyses.sizing import (
                              Energy,
                              LossTarget,
                              SizingResult,
                              SkinTarget,
                              critical_radius_cylinder,
                              critical_radius_sphere,
                              service_warnings,
                              size_layer,
                              stock_round_up,
                              touch_target,
                              with_thickness,
)

__all__ = ["Energy", "LossTarget", "service_warnings", "touch_target", "SizingResult", "SkinTarget", "critical_radius_cylinder",
           "critical_radius_sphere", "size_layer", "stock_round_up", "with_thickness"]
