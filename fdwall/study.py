"""Public API of design studies (see :mod:`fdwall.analyses.study`)."""
from .analyses.study import OUTPUTS, read_study, read_table, run_study, run_variant

__all__ = ["OUTPUTS", "read_study", "read_table", "run_study", "run_variant"]
