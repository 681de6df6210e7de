"""Error type of the case-file layer (defined in :mod:`fdwall.errors`, the base layer, so that
:mod:`fdwall.units` can raise it without importing the case package)."""

from __future__ import annotations

from ..errors import CaseError

__all__ = ["CaseError"]
