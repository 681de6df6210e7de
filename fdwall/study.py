"""Public API of design studies (see :mod:`fdwall.analyses.study`)."""
from .analyses.study import (
                             OUTPUTS,
                             quantile_interval,
                             read_study,
                             read_table,
                             run_study,
                             run_variant,
                             sample_inputs,
                             uncertainty_summary,
                             wilson_interval,
)

__all__ = ["OUTPUTS", "quantile_interval", "read_study", "read_table", "run_study",
           "run_variant", "sample_inputs", "uncertainty_summary", "wilson_interval"]
