"""Error type of the materials package."""

from __future__ import annotations

from ..errors import InputError


class MaterialError(InputError):
    """Bad material or property data: unknown name, bad value, bad table or dict.

    The message is one paragraph naming what was wrong and what is allowed.
    """
