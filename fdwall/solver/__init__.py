"""Time integration and steady-state solution of an assembled system."""
from .transient import run, ConvergenceError
from .steady import solve_steady

__all__ = ["run", "solve_steady", "ConvergenceError"]
