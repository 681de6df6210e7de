"""Command-line interface: ``fdwall run | steady | check | materials``.

Exit codes: 0 success; 1 results could not be written (or fdwall itself is broken); 2 bad input (case file, material, model;
nothing is written); 3 the transient run stopped early (the partial result is still written and
marked incomplete) or no steady state was found; 130 interrupted (Ctrl-C).

Every message about bad input is one paragraph on stderr starting ``fdwall: error:`` that names
the file and key; no traceback is shown for bad input.
"""
from __future__ import annotations

import argparse
import json
import math
import os
import sys
import textwrap
from pathlib import Path

__all__ = ["main", "build_parser", "EXIT_OK", "EXIT_WRITE", "EXIT_INPUT", "EXIT_NOT_CONVERGED",
           "EXIT_INTERRUPTED"]

EXIT_OK = 0
EXIT_WRITE = 1
EXIT_INPUT = 2
EXIT_NOT_CONVERGED = 3
EXIT_INTERRUPTED = 130

_WRAP = 100


class InputError(Exception):
    """Bad input, already phrased for the user (one paragraph)."""


class Failure(Exception):
    """Something other than the input went wrong (exit code 1)."""


class WriteError(Failure):
    """Results could not be written (disk, permissions)."""


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
        from importlib.metadata import version
        return version("fdwall")
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
    """Exception types that mean bad input (not a bug) while a case is read and built."""
    from .materials import MaterialError
    from .model import ModelError
    try:
        import tomllib
    except ModuleNotFoundError:  # pragma: no cover - Python 3.10
        import tomli as tomllib
    types = [MaterialError, ModelError, tomllib.TOMLDecodeError, ValueError]
    try:
        from .case import CaseError
        types.insert(0, CaseError)
    except ImportError:  # pragma: no cover - loader not installed
        pass
    try:
        from pint.errors import PintError
        types.append(PintError)
    except ImportError:  # pragma: no cover
        pass
    return tuple(types)


def _load_case(path):
    """Read a case file: (Case, list of warning strings).  Raises the loader's errors."""
    from .case import load_case
    try:
        from .case import case_warnings
    except ImportError:  # pragma: no cover - older loader without warnings
        case_warnings = None
    case = load_case(path)
    warns = list(case_warnings(case)) if case_warnings is not None else []
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
        import tomllib
    except ModuleNotFoundError:  # pragma: no cover
        import tomli as tomllib
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
    from .system import build_system
    try:
        system = build_system(case)
        system.initial_vector(case.run.initial)
        try:  # validate the watched events (wall/interface indices) before running
            from .solver.transient import event_rows
            event_rows(system, case)
        except ImportError:  # pragma: no cover
            pass
        return system
    except _input_errors() as exc:
        raise InputError(_names_file(str(exc), path_arg)) from None
    except (ArithmeticError, MemoryError) as exc:
        raise InputError(_out_of_range(exc, path_arg)) from None


# --------------------------------------------------------------------------- writing

def _clean(o):
    """JSON-safe copy: NaN/inf -> None, numpy scalars/arrays -> Python."""
    import numpy as np
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
    from .atomic import atomic_path
    with atomic_path(path) as tmp:
        with open(tmp, "w", encoding="utf-8") as fh:
            fh.write(text)


# --------------------------------------------------------------------------- commands

def cmd_run(args) -> int:
    from .solver import run, solve_steady
    from .report.text import TOUCH_CAUTION, format_summary, fmt_time
    quiet = args.quiet
    case, warns = _load(args.case)
    for w in warns:
        _warn(w)
    system = _build(case, args.case)
    stem = Path(args.case).stem
    outdir = Path(args.out) if args.out else Path("results") / stem
    progress = False if quiet else args.progress
    try:
        result = run(case, progress=progress, strict=False, system=system)
    except _input_errors() as exc:
        raise InputError(_names_file(str(exc), args.case)) from None
    if not result.complete:
        reached = float(result.stats.get("reached_s", result.times[-1]))
        _error(f"the run of '{args.case}' did not converge; it stopped at t = {reached:.6g} s "
               f"({fmt_time(reached)}) of {case.run.duration:.6g} s. {result.message} The partial "
               f"result is written to {outdir} and marked incomplete.")
    # steady state at the end-of-run boundary conditions
    try:
        result.steady = solve_steady(case, system=system)
    except Exception as exc:  # a failed steady solve must not lose the transient result
        result.steady = None
        _warn(f"no steady state found for '{args.case}': {exc}")
    # write
    h5 = outdir / f"{stem}.h5"
    js = outdir / f"{stem}-summary.json"
    files = [str(h5), str(js)]
    summary = result.summary()
    summary.update({"case_file": str(args.case), "fdwall_version": _version(),
                    "input_warnings": warns, "caution": TOUCH_CAUTION})
    if case.is_enclosure:
        try:
            from .analyses.enclosure import summarise_enclosure
            summary["enclosure"] = summarise_enclosure(result, steady=False)
        except Exception as exc:  # analyses must never lose the run's own results
            _warn(f"enclosure analysis not available: {exc}")
    try:
        result.write_hdf5(h5)
        plots = []
        if not args.no_plots:
            from .report.plots import write_plots
            plots = write_plots(result, outdir, stem)
        files += [str(p) for p in plots]
        summary["files"] = files
        _write_text_atomic(js, _dumps(summary) + "\n")
    except OSError as exc:
        raise WriteError(f"cannot write the results to '{outdir}': {exc.strerror or exc}. "
                         "Choose another folder with --out DIR.") from None
    if args.json:
        print(_dumps(summary))
    elif not quiet:
        print(format_summary(result), end="")
        print("\nFiles written:")
        for f in files:
            print(f"  {f}")
    else:
        for w in summary.get("warnings") or []:
            _warn(w)
    return EXIT_OK if result.complete else EXIT_NOT_CONVERGED


def cmd_steady(args) -> int:
    from .solver import solve_steady
    from .report.text import TOUCH_CAUTION, format_steady
    case, warns = _load(args.case)
    for w in warns:
        _warn(w)
    system = _build(case, args.case)
    try:
        st = solve_steady(case, system=system)
    except _input_errors() as exc:
        raise InputError(_names_file(str(exc), args.case)) from None
    except (RuntimeError, ArithmeticError) as exc:
        _error(f"no steady state found for '{args.case}': {exc}")
        return EXIT_NOT_CONVERGED
    if args.json:
        out = {"case": case.name, "case_file": str(args.case), "time_s": float(st.time)}
        out.update(st.summary())
        out["input_warnings"] = warns
        out["caution"] = TOUCH_CAUTION
        print(_dumps(out))
    else:
        print(format_steady(st, case), end="")
    return EXIT_OK


def cmd_check(args) -> int:
    from .report.text import format_case
    case, warns = _load(args.case)
    system = _build(case, args.case)
    print(format_case(case, system, warns), end="")
    print(f"\ncase file '{args.case}' is valid"
          + (f" ({len(warns)} warning(s) above)." if warns else "."))
    return EXIT_OK


def _k_row(m):
    from .report.text import LIST_TEMPS_C, material_k_in_range
    return {f"{t:g}": material_k_in_range(m, t) for t in LIST_TEMPS_C}


def cmd_materials(args) -> int:
    from .materials import MaterialError, get_material, list_materials
    from .report.text import format_material, format_material_list, material_table
    if args.name:
        try:
            m = get_material(args.name)
        except MaterialError as exc:
            raise InputError(f"{exc} List the bundled materials with: fdwall materials") from None
        if args.json:
            T, k, cp = material_table(m)
            print(_dumps({"name": m.name, "category": m.category, "rho_kg_m3": m.rho,
                          "emissivity": m.emissivity, "t_max_K": m.t_max, "source": m.source,
                          "notes": m.notes,
                          "table": {"T_K": T, "k_W_mK": k, "cp_J_kgK": cp}}))
        else:
            print(format_material(m), end="")
        return EXIT_OK
    mats = [get_material(n) for n in list_materials()]
    if args.json:
        print(_dumps([{"name": m.name, "category": m.category, "rho_kg_m3": m.rho,
                       "k_W_mK_at_degC": _k_row(m), "emissivity": m.emissivity,
                       "t_max_K": m.t_max} for m in mats]))
    else:
        print(format_material_list(mats), end="")
    return EXIT_OK


# --------------------------------------------------------------------------- parser

_DESCRIPTION = """\
fdwall: transient and steady heat flow through the walls of heated equipment
(ovens, furnaces, kilns, heated tanks, insulated pipes) from a TOML case file."""

_EPILOG = """\
exit codes: 0 done; 1 results could not be written; 2 bad input (nothing written);
3 run stopped early (partial result written, marked incomplete) or no steady state;
130 interrupted.
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

    r = sub.add_parser("run", help="run a case over time; write results, summary and plots",
                       description="Load CASE, run it over time, solve its steady state, write "
                       "DIR/<stem>.h5, DIR/<stem>-summary.json and PNG plots, print a summary.")
    r.add_argument("case", metavar="CASE", help="TOML case file")
    r.add_argument("--out", metavar="DIR", default=None,
                   help="folder for the results (default: ./results/<case-stem>/)")
    r.add_argument("--json", action="store_true",
                   help="print the summary as JSON (SI units, kelvin) instead of text")
    r.add_argument("--no-plots", action="store_true", help="do not draw the PNG plots")
    r.add_argument("--quiet", action="store_true",
                   help="print nothing but warnings and errors (and JSON with --json)")
    r.add_argument("--progress", action=argparse.BooleanOptionalAction, default=None,
                   help="show a progress bar (default: only for long runs on a terminal)")
    r.set_defaults(func=cmd_run)

    s = sub.add_parser("steady", help="steady state only: face and interface temperatures, "
                       "heat flows", description="Solve the steady state of CASE with the "
                       "boundary conditions at the end of its run time and print a table.")
    s.add_argument("case", metavar="CASE", help="TOML case file")
    s.add_argument("--json", action="store_true", help="print JSON (SI units, kelvin)")
    s.set_defaults(func=cmd_steady)

    c = sub.add_parser("check", help="validate a case and describe it without running",
                       description="Validate CASE and print its walls, layers, mesh, R-values "
                       "and faces, with any warnings. Exit code 0 when valid.")
    c.add_argument("case", metavar="CASE", help="TOML case file")
    c.set_defaults(func=cmd_check)

    m = sub.add_parser("materials", help="list the bundled materials or show one",
                       description="List the bundled material library, or show the property "
                       "tables of material NAME.")
    m.add_argument("name", metavar="NAME", nargs="?", default=None, help="material name")
    m.add_argument("--json", action="store_true", help="print JSON (SI units)")
    m.set_defaults(func=cmd_materials)

    k = sub.add_parser("compile", help="compile the numerical kernels ahead of time (once per "
                       "install)", description="Compile the numerical kernels into an extension "
                       "module beside the package, so that no run waits for just-in-time "
                       "compilation (about 10 s on the first run otherwise). Needs a C compiler; "
                       "without one fdwall keeps compiling just in time and works the same. "
                       "Run it again after upgrading numba or numpy.")
    k.add_argument("--status", action="store_true",
                   help="only say whether the ahead-of-time kernels are in use")
    k.add_argument("--strict", action="store_true",
                   help="exit with code 1 if the kernels cannot be compiled")
    k.set_defaults(func=cmd_compile)
    return p


def cmd_compile(args) -> int:
    """``fdwall compile``: build the ahead-of-time kernel module, or report its status."""
    from .solver import native
    if args.status:
        print(f"kernels: {'ahead-of-time' if native.MODE == 'aot' else 'just-in-time'}"
              f" ({native.STATUS})")
        return EXIT_OK
    import time as _t
    t0 = _t.perf_counter()
    print("fdwall: compiling the kernels ahead of time (tens of seconds) ...", flush=True)
    try:
        path = native.build()
    except Exception as exc:  # no compiler, read-only install, numba without pycc ...
        detail = next((ln.strip() for ln in str(exc).splitlines() if ln.strip()), "no detail")
        msg = (f"fdwall: the kernels could not be compiled ahead of time "
               f"({type(exc).__name__}: {detail[:300]}). "
               "fdwall still works: it compiles them just in time on first use (about 10 s, "
               "once per machine). A C compiler and a writable install folder are needed.")
        print(msg, file=sys.stderr)
        return EXIT_WRITE if args.strict else EXIT_OK
    print(f"fdwall: kernels compiled in {_t.perf_counter() - t0:.0f} s: {path}")
    return EXIT_OK


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
    except InputError as exc:
        _error(str(exc))
        return EXIT_INPUT
    except Failure as exc:
        _error(str(exc))
        return EXIT_WRITE
    except KeyboardInterrupt:
        print("fdwall: interrupted", file=sys.stderr)
        return EXIT_INTERRUPTED
    except BrokenPipeError:  # e.g. `fdwall materials | head`
        try:
            sys.stdout = open(os.devnull, "w")
        except OSError:  # pragma: no cover
            pass
        return EXIT_OK


if __name__ == "__main__":
    raise SystemExit(main())
