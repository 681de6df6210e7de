"""fdwall's error classes: one base, bad input apart from internal failures.

Layer 1 (base): imports nothing of fdwall.

::

    FdwallError                      every error fdwall raises on purpose
    +-- InputError  (ValueError)     the user's input is wrong: case file, log, study file,
    |   |                            option, model object; the message is one paragraph that
    |   |                            names the file / key / row, what was wrong, what is allowed
    |   +-- CaseError                 (fdwall.case)      a case file or a quantity text
    |   +-- MaterialError             (fdwall.materials) material or property data
    |   +-- ModelError                (fdwall.model)     an impossible model object
    +-- SolverError (RuntimeError)   the input was accepted but the numerics could not finish
    |   +-- ConvergenceError          ``.result`` holds the partial result (incomplete)
    +-- Interrupted                  a run was stopped on request; ``.result`` holds the
    |                                partial result (incomplete)
    +-- OutputError (OSError)        results could not be written (disk, permissions)
    +-- InternalError (RuntimeError) a bug in fdwall: never reported as bad input

The command line maps these to exit codes (see :mod:`fdwall.cli`): InputError -> 2,
OutputError and InternalError -> 1, SolverError -> 3, Interrupted -> 130 / 143. Any other
exception escaping a command is reported as an internal failure (exit 1) that names the case,
never as bad input.  ``InputError`` keeps ``ValueError`` (and ``SolverError`` keeps
``RuntimeError``) as a second base so that code written against earlier releases, which caught
those, still works.
"""
from __future__ import annotations

__all__ = ["FdwallError", "InputError", "CaseError", "SolverError", "ConvergenceError", "Interrupted",
           "OutputError", "InternalError"]


class FdwallError(Exception):
    """Base class of every error fdwall raises on purpose."""


class InputError(FdwallError, ValueError):
    """Bad input, phrased for the user: one paragraph naming where, what, and what is allowed."""


class CaseError(InputError):
    """Bad input in a case file (or a quantity given to :func:`fdwall.units.parse_quantity`).

    The message is one paragraph naming the file, the key path (e.g.
    ``walls[0].layers[1].thickness``), what was wrong and what is allowed.

    Attributes
    ----------
    file : str
        Name of the case file ('' when not known).
    key : str
        Key path inside the file ('' for the file as a whole).
    problem : str
        What was wrong.
    allowed : str
        What is allowed instead ('' when nothing useful can be said).
    """

    def __init__(self, problem: str, *, file: str = "", key: str = "", allowed: str = ""):
        self.file = str(file or "")
        self.key = str(key or "")
        self.problem = " ".join(str(problem).split())
        self.allowed = " ".join(str(allowed).split())
        super().__init__(self._paragraph())

    def _paragraph(self) -> str:
        where = []
        if self.file:
            where.append(f"case file '{self.file}'")
        if self.key:
            where.append(f"key {self.key}")
        head = ("In " + ", ".join(where) + ": ") if where else ""
        text = head + _sentence(self.problem)
        if self.allowed:
            text += " Allowed: " + _sentence(self.allowed)
        return text

    def relocated(self, *, file: str | None = None, key: str | None = None) -> "CaseError":
        """A copy with the file and/or key filled in (where they were still empty)."""
        return CaseError(self.problem, file=self.file or (file or ""),
                         key=self.key or (key or ""), allowed=self.allowed)


def _sentence(s: str) -> str:
    s = s.strip()
    if s and s[-1] not in ".?!":
        s += "."
    return s


class SolverError(FdwallError, RuntimeError):
    """The input was accepted but the numerical method could not finish."""


class ConvergenceError(SolverError):
    """The solver could not continue; ``result`` holds what was computed (marked incomplete)."""

    def __init__(self, message, result=None):
        super().__init__(message)
        self.result = result


class Interrupted(FdwallError):
    """A run stopped on request (Ctrl-C, SIGTERM, an observer); ``result`` is the partial result.

    Attributes
    ----------
    result : object or None
        What was computed up to the stop, marked incomplete (``result.complete`` is False).
    signal : int or None
        The signal number that asked for the stop (2 SIGINT, 15 SIGTERM), None otherwise.
    """

    def __init__(self, message, result=None, signal=None):
        super().__init__(message)
        self.result = result
        self.signal = signal


class OutputError(FdwallError, OSError):
    """Results could not be written (disk full, permissions, a file-size limit)."""


class InternalError(FdwallError, RuntimeError):
    """A failure inside fdwall (a bug), not the user's mistake."""
