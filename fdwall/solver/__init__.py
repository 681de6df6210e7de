"""Time integration and steady-state solution of an assembled system."""
from .steady import solve_steady
from .transient import ConvergenceError, run

__all__ = ["run", "solve_steady", "ConvergenceError"]
