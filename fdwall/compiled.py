"""Which build of a compiled entry point Python code of the lower layers calls.

Python helpers below the solver layer (``Convection.h`` in :mod:`fdwall.physics.convection`,
the property evaluations of :class:`fdwall.system.System`) call compiled functions.  The
best build of those functions (the ahead-of-time extension when it matches the sources, else
the numba dispatcher) is chosen by :mod:`fdwall.solver.native`, which sits above them and so
cannot be imported by them.  Instead, native *provides* itself here when it is loaded,
and the helpers look its callers up by entry-point name at call time (an attribute look-up, no
import): the dependency points down, from the solver to this base module.

``fdwall`` loads :mod:`fdwall.solver.native` whenever the package is imported (the facade
imports the drivers), so in practice every look-up finds native's caller; a helper that has
a compiled function of its own layer passes it as the default, which is what native would
call just in time anyway.
"""
from __future__ import annotations

from .errors import InternalError

_SOURCE = None


def provide(source) -> None:
    """Register the object whose attributes are the entry points (called by
    :mod:`fdwall.solver.native` with itself; looked up at each call, so a test that patches
    an attribute of native patches what the helpers call too)."""
    global _SOURCE
    _SOURCE = source


def entry(name: str, default=None):
    """The callable in use for entry point ``name`` (native's), else ``default``.

    Raises
    ------
    fdwall.errors.InternalError
        Nothing registered and no default (the solver layer was never loaded).
    """
    fn = getattr(_SOURCE, name, None) if _SOURCE is not None else None
    if fn is None:
        fn = default
    if fn is None:
        raise InternalError(f"compiled entry point {name!r} requested before "
                            "fdwall.solver.native was loaded")
    return fn
