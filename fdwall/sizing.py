"""Public insulation sizing API (see docs/sizing.md)."""
from .analyses.sizing import (
                              LossTarget,
                              SizingResult,
                              SkinTarget,
                              critical_radius_cylinder,
                              critical_radius_sphere,
                              size_layer,
                              stock_round_up,
                              with_thickness,
)

__all__ = ["LossTarget", "SizingResult", "SkinTarget", "critical_radius_cylinder",
           "critical_radius_sphere", "size_layer", "stock_round_up", "with_thickness"]
