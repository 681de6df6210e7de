"""Time integration and steady-state solution of an assembled system.

The drivers are loaded on first use (``fdwall.solver.run`` or ``from fdwall.solver import
run``), so that the system builder can import the array layouts of
:mod:`fdwall.solver.layout` without loading the drivers, which import the system builder.
"""
from __future__ import annotations

import importlib

__all__ = ["run", "solve_steady", "ConvergenceError", "Interrupted"]

_LAZY = {"run": "transient", "solve_steady": "steady", "ConvergenceError": "transient",
         "Interrupted": "transient"}


def __getattr__(name):
    mod = _LAZY.get(name)
    if mod is None:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    value = getattr(importlib.import_module(f"{__name__}.{mod}"), name)
    globals()[name] = value
    return value


def __dir__():
    return sorted(set(globals()) | set(__all__))
