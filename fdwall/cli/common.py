"""What every ``fdwall`` command shares: exit codes, messages, loading a case, option values
with units, the standard output options, JSON and atomic text writing.

A command module (``fdwall/cli/<name>.py``) defines ``register(subparsers)``, which adds its
sub-command with ``set_defaults(func=...)``; the function takes the parsed arguments and returns
an exit code.  Raise :class:`InputError` for bad input (exit 2, nothing written),
:class:`Failure` / :class:`WriteError` for anything else that is not the user's fault (exit 1).
"""
from __future__ import annotations

import argparse
import datetime as _dt
import json
import math
import os
import sys
import textwrap
from datetime import datetime, timezone
from importlib.metadata import version as _dist_version
from pathlib import Path

import numpy as np
from pint.errors import PintError

try:
    import tomllib
except ModuleNotFoundError:  # pragma: no cover - Python 3.10
    import tomli as tomllib

from .. import system as fsystem  # fsystem.build_system (patchable in tests)
from ..atomic import atomic_path
from ..case import CaseError, case_warnings, load_case
from ..errors import FdwallError, OutputError
from ..errors import InputError as _LibInputError
from ..h5tree import write_file
from ..materials import MaterialError
from ..model import ModelError
from ..provenance import provenance
from ..report import html as _html
from ..units import parse_quantity

# Exit codes, shared by all commands (documented once, in fdwall/cli/__init__.py and README).
EXIT_OK = 0
EXIT_WRITE = 1          # results could not be written, or an internal failure
EXIT_INPUT = 2          # bad input: case, log, study file or option; nothing written
EXIT_NOT_CONVERGED = 3  # the run stopped early (partial result written, marked incomplete)
EXIT_INTERRUPTED = 130  # SIGINT (Ctrl-C): partial result written, marked incomplete
EXIT_TERMINATED = 143   # SIGTERM: as SIGINT

_WRAP = 100


class InputError(_LibInputError):
    """Bad input, already phrased for the user (one paragraph); exit code 2."""


class Failure(FdwallError):
    """Something other than the input went wrong (exit code 1)."""


class WriteError(Failure, OutputError):
    """Results could not be written (disk, permissions); exit code 1."""


# --------------------------------------------------------------------------- messages

def _say(stream, prefix: str, text: str) -> None:
    text = " ".join(str(text).split())
    print(textwrap.fill(f"{prefix}{text}", _WRAP, break_long_words=False,
                        break_on_hyphens=False), file=stream)


def _error(text: str) -> None:
    _say(sys.stderr, "fdwall: error: ", text)


def _warn(text: str) -> None:
    _say(sys.stderr, "fdwall: warning: ", text)


def _info(text: str, quiet: bool = False) -> None:
    if not quiet:
        print(text, file=sys.stderr)


def _version() -> str:
    try:
        return _dist_version("fdwall")
    except Exception:  # pragma: no cover - source tree without metadata
        return "0+unknown"


def _names_file(msg: str, path) -> str:
    """Make sure a message about a case file names that file."""
    p = str(path)
    if p in msg or os.path.basename(p) in msg:
        return msg
    return f"In case file '{p}': {msg}"


# --------------------------------------------------------------------------- loading

def _input_errors():
    """Exception types that mean bad input (not a bug) while a case is read and built.

    fdwall's own :class:`fdwall.errors.InputError` (with CaseError, MaterialError and
    ModelError below it), broken TOML and unit-library errors; a bare ``ValueError`` is not
    among them: raised from inside fdwall it is a bug, reported as an internal failure."""
    types = [CaseError, _LibInputError, MaterialError, ModelError, tomllib.TOMLDecodeError]
    types.append(PintError)
    return tuple(types)


def _load_case(path):
    """Read a case file: (Case, list of warning strings).  Raises the loader's errors."""
    case = load_case(path)
    warns = list(case_warnings(case))
    return case, warns


def _load(path_arg):
    """Check the path, load the case, turn every input problem into an :class:`InputError`."""
    p = Path(path_arg)
    if not p.exists():
        raise InputError(
            f"case file '{path_arg}' does not exist (looked for {p.absolute()}). Give the path "
            "of a TOML case file, for example one of the demo cases in the cases/ folder.")
    if p.is_dir():
        raise InputError(f"'{path_arg}' is a folder, not a case file; give the path of a TOML "
                         "case file.")
    try:
        return _load_case(p)
    except ImportError as exc:
        raise Failure(f"this installation of fdwall cannot read case files ({exc}); "
                      "reinstall fdwall.") from None
    except FileNotFoundError as exc:
        missing = exc.filename or path_arg
        raise InputError(f"In case file '{path_arg}': file '{missing}' does not exist "
                         f"({exc.strerror or 'not found'}).") from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"case file '{path_arg}' is not valid TOML: {exc}. Check the quoting, "
                         "brackets and '=' signs on that line.") from None
    except OSError as exc:
        raise InputError(f"cannot read case file '{path_arg}': {exc.strerror or exc}.") from None
    except _input_errors() as exc:
        raise InputError(_names_file(str(exc), path_arg)) from None
    except (ArithmeticError, MemoryError) as exc:
        raise InputError(_out_of_range(exc, path_arg)) from None


def _out_of_range(exc, path_arg) -> str:
    """Message for arithmetic that failed while a case was read or set up (nothing has run)."""
    detail = " ".join(str(exc).split())[:200] or "no detail"
    return (f"In case file '{path_arg}': the case could not be set up ({type(exc).__name__}: "
            f"{detail}); a value in it is probably far outside what fdwall can compute with. "
            "Check the sizes, properties, cell counts and times against docs/case-file.md; if "
            "they are all sensible, please report this as a bug in fdwall.")


def _build(case, path_arg):
    """Build the kernel system; model errors found only here become InputErrors."""
    try:
        system = fsystem.build_system(case)
        system.initial_vector(case.run.start_temperature)
        return system
    except _input_errors() as exc:
        raise InputError(_names_file(str(exc), path_arg)) from None
    except (ArithmeticError, MemoryError) as exc:
        raise InputError(_out_of_range(exc, path_arg)) from None


# --------------------------------------------------------------------------- writing

def _clean(o):
    """JSON-safe copy: NaN/inf -> None, numpy scalars/arrays -> Python."""
    if isinstance(o, dict):
        return {str(k): _clean(v) for k, v in o.items()}
    if isinstance(o, (list, tuple)):
        return [_clean(v) for v in o]
    if isinstance(o, np.ndarray):
        return _clean(o.tolist())
    if isinstance(o, (np.bool_,)):
        return bool(o)
    if isinstance(o, (np.integer,)):
        return int(o)
    if isinstance(o, (float, np.floating)):
        v = float(o)
        return v if math.isfinite(v) else None
    return o


def _dumps(obj) -> str:
    return json.dumps(_clean(obj), indent=2, allow_nan=False)


def _write_text_atomic(path: Path, text: str) -> None:
    with atomic_path(path) as tmp:
        with open(tmp, "w", encoding="utf-8") as fh:
            fh.write(text)




# --------------------------------------------------------------------------- for command modules

error = _error
warn = _warn
info = _info
version = _version
load = _load
build = _build
dumps = _dumps
write_text_atomic = _write_text_atomic


def quantity(text, kind: str, option: str, *, positive: bool = False,
             nonnegative: bool = False) -> float:
    """An option value written as in case files (``"10 s"``, ``"60 degC"``) -> SI float.

    Parameters
    ----------
    text : str
        The option's text.
    kind : str
        A kind of :func:`fdwall.units.kind_names` (``"time"``, ``"temperature"`` ...).
    option : str
        The option's name for messages, e.g. ``"--contact-time"``.

    Raises
    ------
    InputError
        A bare number where a unit is needed, a wrong unit, an impossible value: one paragraph
        naming the option.
    """
    try:
        return parse_quantity(text, kind, where=option, positive=positive,
                              nonnegative=nonnegative)
    except CaseError as exc:
        msg = f"option {option}: {exc.problem[:1].lower()}{exc.problem[1:]}"
        if msg[-1] not in ".?!":
            msg += "."
        if exc.allowed:
            msg += f" Allowed: {exc.allowed}"
        raise InputError(msg) from None


def quantity_list(text, kind: str, option: str, **kw) -> list:
    """A comma-separated list of quantities (``"25 mm, 50 mm, 75 mm"``) -> list of SI floats."""
    items = [t.strip() for t in str(text).split(",")]
    if not items or any(not t for t in items):
        raise InputError(f"option {option}: {text!r} is not a comma-separated list of values "
                         "with units (an entry is empty). Allowed: e.g. \"25 mm,50 mm,75 mm\".")
    return [quantity(t, kind, option, **kw) for t in items]


def add_output_options(p: argparse.ArgumentParser, *, out: bool = True, plots: bool = True,
                       report: bool = True, progress: bool = True) -> None:
    """Add the options every command that writes files shares (one spelling for all)."""
    if out:
        p.add_argument("--out", metavar="DIR", default=None,
                       help="folder for the results (default: ./results/<case-stem>/)")
    p.add_argument("--json", action="store_true",
                   help="print the answer as one JSON object (SI units, kelvin) instead of text")
    p.add_argument("--quiet", action="store_true",
                   help="print nothing but warnings and errors (and JSON with --json)")
    if plots:
        p.add_argument("--no-plots", action="store_true", help="do not draw the PNG plots")
    if progress:
        p.add_argument("--progress", action=argparse.BooleanOptionalAction, default=None,
                       help="show a progress bar (default: only for long runs on a terminal)")
    if report:
        p.add_argument("--report", action="store_true",
                       help="also write a self-contained HTML calculation report "
                            "(<stem>-report.html) beside the results")
        p.add_argument("--units", choices=("si", "us"), default="si",
                       help="display units of the report: si (degC, mm, W) or us (degF, in, "
                            "Btu/h); the files keep SI")


def output_dir(args, stem: str) -> Path:
    """The results folder: ``--out DIR`` or ``./results/<stem>/``."""
    return Path(args.out) if getattr(args, "out", None) else Path("results") / stem


def warn_replacing(paths) -> list:
    """Warn (on stderr) for each of ``paths`` that already exists and will be replaced.

    fdwall replaces an earlier result of the same name rather than refusing (friendlier for
    scripts that rerun a case); the warning says which file and when it was last written.

    Parameters
    ----------
    paths : iterable of str or Path
        The files a command is about to write.

    Returns
    -------
    list of str
        The paths that exist (and are about to be replaced).
    """
    replaced = []
    for p in paths:
        p = Path(p)
        try:
            st = p.stat()
        except OSError:
            continue
        if not p.is_file():
            continue
        when = _dt.datetime.fromtimestamp(st.st_mtime, _dt.timezone.utc)
        _warn(f"replacing the existing result file '{p}' (last written "
              f"{when.strftime('%Y-%m-%d %H:%M:%S')} UTC); use --out DIR to keep both.")
        replaced.append(str(p))
    return replaced


def write_report(args, h5_path, out=None):
    """Write the HTML report of an HDF5 result when ``--report`` was given; returns its path.

    The report only presents what the result file holds (see fdwall.report.html).
    """
    if not getattr(args, "report", False):
        return None
    h5_path = Path(h5_path)
    if out is None:
        stem = h5_path.stem
        out = h5_path.with_name(f"{stem}-report.html")
    try:
        return _html.write_report(h5_path, out, units=getattr(args, "units", "si"))
    except OSError as exc:
        raise WriteError(f"cannot write the report '{out}': {exc.strerror or exc}.") from None


# options that change where or how results are shown, not what they are: left out of the hash
_PRESENTATION = frozenset({"out", "json", "quiet", "no_plots", "progress", "report", "units",
                           "func", "command", "workers", "overwrite"})


def _analysis_inputs(args) -> tuple:
    """(case, extra files, options) of an analysis command, for its provenance record: the
    case file (``args.case``, or the study file), a log (``args.log``) as an extra file, and
    every option that can change the answer."""
    case = getattr(args, "case", None) or getattr(args, "study", None)
    extra = [p for p in (getattr(args, "log", None),) if p]
    if case is None and extra:
        case, extra = extra[0], extra[1:]
    options = {k: v for k, v in sorted(vars(args).items())
               if k not in _PRESENTATION and k not in ("case", "study", "log") and v is not None
               and not callable(v)}
    return case, extra, options


def write_analysis(args, h5_path, groups: dict, *, kind: str, case_name: str,
                   caution: str | None = None) -> list:
    """Write an analysis result file (``kind`` "size", "fit", "rc", "study" ...) and, with
    ``--report``, its HTML report; returns the paths written (as strings).

    One place for the layout the report reads: root attributes ``kind``, ``fdwall_version``,
    ``case_name``, ``created`` (ISO UTC) and ``caution`` when the answer speaks of safety; the
    groups as given (``inputs``, ``summary``, ``tables``, ``warnings``, ``references``,
    ``notes``); the provenance record (versions, ``input_sha256`` of the case or log file, the
    material library and the options that change the answer; see :mod:`fdwall.provenance`).
    A failed write is a :class:`WriteError` (exit 1) and leaves no file.
    """

    h5_path = Path(h5_path)
    attrs = {"kind": kind, "fdwall_version": _version(), "case_name": case_name,
             "created": datetime.now(timezone.utc).isoformat()}
    if caution:
        attrs["caution"] = caution
    prov = provenance(*_analysis_inputs(args))
    try:
        h5_path.parent.mkdir(parents=True, exist_ok=True)
        write_file(h5_path, groups, attrs=attrs, provenance=prov)
    except OSError as exc:
        raise WriteError(f"cannot write the results to '{h5_path.parent}': "
                         f"{exc.strerror or exc}. Choose another folder with --out DIR.") from None
    files = [str(h5_path)]
    report = write_report(args, h5_path)
    if report:
        files.append(str(report))
    return files
