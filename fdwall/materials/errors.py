"""Error type of the materials package."""

from __future__ import annotations


class MaterialError(ValueError):
    """Bad material or property data: unknown name, bad value, bad table or dict.

    The message is one paragraph naming what was wrong and what is allowed.
    """
