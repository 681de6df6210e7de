"""Command-line interface: ``fdwall COMMAND ...``; argument parsing only, then the Python API.

Exit codes, shared by every command:

====  ========================================================================================
0     done (for ``touch``: whatever the verdict; a failed verdict is an answer)
1     results could not be written, or an internal failure of fdwall (a bug: the message says
      so and names the case; never reported as bad input)
2     bad input: a case, log or study file, or an option (one paragraph naming the file, key,
      row or option, what was wrong and what is allowed; nothing is written)
3     the run stopped early (the partial result is written and marked incomplete), no steady
      state was found, or a verdict could not be reached ("unknown")
130   interrupted by SIGINT (Ctrl-C); the partial result is written and marked incomplete
143   terminated by SIGTERM; as for 130
====  ========================================================================================

Every command lives in a module of this package that defines ``register(subparsers)``; the
modules are listed in :data:`COMMAND_MODULES` (a name whose module is not present is skipped).
"""
from __future__ import annotations

import argparse
import importlib
import os
import sys

from ..errors import InputError as LibInputError
from ..errors import InternalError as LibInternalError
from ..errors import Interrupted, OutputError, SolverError
from .common import (
    EXIT_INPUT,
    EXIT_INTERRUPTED,
    EXIT_NOT_CONVERGED,
    EXIT_OK,
    EXIT_TERMINATED,
    EXIT_WRITE,
    Failure,
    InputError,
    WriteError,
    _error,
    _version,
)

__all__ = ["main", "build_parser", "EXIT_OK", "EXIT_WRITE", "EXIT_INPUT", "EXIT_NOT_CONVERGED",
           "EXIT_INTERRUPTED", "EXIT_TERMINATED", "InputError", "Failure", "WriteError",
           "COMMAND_MODULES"]

#: Modules of this package that add sub-commands, in the order of ``fdwall --help``.
COMMAND_MODULES = ("core", "touch", "size", "fit", "rc", "study", "report")

_DESCRIPTION = """\
fdwall: transient and steady heat flow through the walls of heated equipment
(ovens, furnaces, kilns, heated tanks, insulated pipes) from a TOML case file."""

_EPILOG = """\
exit codes: 0 done; 1 results could not be written, or an internal failure; 2 bad input
(nothing written); 3 run stopped early (partial result written, marked incomplete), no steady
state, or no verdict; 130 interrupted (SIGINT); 143 terminated (SIGTERM).
Option values are written as in case files ("10 s", "60 degC", "25 mm").
Temperatures print in degC (JSON: kelvin); energies in kWh and MJ; powers in W or kW.
Skin/touch temperatures are engineering estimates: confirm by measurement and follow local
codes, the applicable product-safety standard and licensed professional practice."""


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``fdwall`` command."""
    p = argparse.ArgumentParser(prog="fdwall", description=_DESCRIPTION, epilog=_EPILOG,
                                formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--version", action="version", version=f"fdwall {_version()}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    for name in COMMAND_MODULES:
        try:
            mod = importlib.import_module(f"{__name__}.{name}")
        except ModuleNotFoundError as exc:
            if exc.name == f"{__name__}.{name}":
                continue  # command not part of this installation
            raise
        mod.register(sub)
    return p


def _internal(exc: BaseException, args) -> str:
    case = getattr(args, "case", None) or getattr(args, "study", None) or getattr(args, "log",
                                                                                    None)
    where = f" while working on '{case}'" if case else ""
    detail = " ".join(str(exc).split())[:300] or "no detail"
    return (f"internal failure of fdwall{where} ({type(exc).__name__}: {detail}). This is not a "
            "problem with your input but a bug in fdwall; please report it with the input files. "
            "Set FDWALL_DEBUG=1 to see the traceback.")


def main(argv=None) -> int:
    """Entry point of the ``fdwall`` command; returns the exit code."""
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # --help, --version, usage errors
        code = exc.code
        return code if isinstance(code, int) else (0 if code is None else EXIT_INPUT)
    try:
        return args.func(args)
    except LibInputError as exc:  # the commands' own InputError derives from it
        _error(str(exc))
        return EXIT_INPUT
    except LibInternalError as exc:  # a failure fdwall detected in itself: a bug
        _error(_internal(exc, args))
        return EXIT_WRITE
    except (Failure, OutputError) as exc:
        _error(str(exc))
        return EXIT_WRITE
    except SolverError as exc:
        _error(str(exc))
        return EXIT_NOT_CONVERGED
    except Interrupted as exc:
        _error(f"interrupted: {exc}")
        return EXIT_TERMINATED if exc.signal == 15 else EXIT_INTERRUPTED
    except KeyboardInterrupt:
        print("fdwall: interrupted", file=sys.stderr)
        return EXIT_INTERRUPTED
    except BrokenPipeError:  # e.g. `fdwall materials | head`
        try:
            sys.stdout = open(os.devnull, "w")
        except OSError:  # pragma: no cover
            pass
        return EXIT_OK
    except Exception as exc:  # a bug: say so, never as bad input
        if os.environ.get("FDWALL_DEBUG"):
            raise
        _error(_internal(exc, args))
        return EXIT_WRITE
