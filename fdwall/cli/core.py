"""The engine's commands: ``fdwall run | steady | check | materials | compile``."""
from __future__ import annotations

import sys
import time as _t
from pathlib import Path

from .. import solver  # drivers as solver.run / solver.solve_steady (patchable in tests)
from ..analyses import convergence
from ..analyses.enclosure import summarise_enclosure
from ..errors import InternalError, OutputError
from ..materials import MaterialError, get_material, list_materials
from ..report.plots import write_plots
from ..report.text import (
    LIST_TEMPS_C,
    TOUCH_CAUTION,
    fmt_time,
    format_case,
    format_material,
    format_material_list,
    format_steady,
    format_summary,
    material_k_in_range,
    material_table,
)
from ..solver import native
from ..solver.observers import InterruptCheck, StorageObserver
from . import common
from .common import (
    EXIT_NOT_CONVERGED,
    EXIT_OK,
    EXIT_WRITE,
    InputError,
    WriteError,
    _build,
    _dumps,
    _error,
    _input_errors,
    _load,
    _names_file,
    _version,
    _warn,
    _write_text_atomic,
)
from .interrupts import SIGNAL_NAMES, SecondSignal, exit_code_for, signals_to_flag


def cmd_run(args) -> int:
    """``fdwall run``: SIGINT / SIGTERM during the run stop it cleanly (partial result written,
    marked incomplete, exit 130 / 143); a second signal stops the writing too."""
    try:
        with signals_to_flag() as flag:
            return _run_and_write(args, flag)
    except SecondSignal as exc:
        _error(f"interrupted again ({exc.signum}) while the partial result of '{args.case}' "
               "was being written: nothing more is written (no half-written file is left).")
        return exit_code_for(exc.signum)


def _run_and_write(args, flag) -> int:
    quiet = args.quiet
    case, warns = _load(args.case)
    for w in warns:
        _warn(w)
    system = _build(case, args.case)
    stem = Path(args.case).stem
    outdir = Path(args.out) if args.out else Path("results") / stem
    progress = False if quiet else args.progress
    # the output streams to the result file as the run goes (memory bounded by a window of
    # rows, not by the run's length); the file is renamed to <stem>.h5 when written below
    store = StorageObserver(outdir / f"{stem}.h5", keep_open=True)
    try:
        result = solver.run(case, progress=progress, strict=False, system=system,
                     observers=[InterruptCheck(flag)], store=store)
    except _input_errors() as exc:
        raise InputError(_names_file(str(exc), args.case)) from None
    except OutputError as exc:   # the streamed result file could not be written
        cause = exc.__cause__
        why = getattr(cause, "strerror", None) or str(exc)
        raise WriteError(f"cannot write the results to '{outdir}': {why}. "
                         "Choose another folder with --out DIR.") from None
    try:
        return _write_run(args, flag, case, warns, system, stem, outdir, progress, result)
    finally:
        if store.pending:  # not finished (a failure, or a result replaced): no temporary left
            store.abort()


def _write_run(args, flag, case, warns, system, stem, outdir, progress, result) -> int:
    quiet = args.quiet
    interrupted = result.status == "interrupted"
    reached = float(result.stats.get("reached_s", result.times[-1]))
    for note in (result.error_estimate or {}).get("notes", []):
        if note.startswith("outputs are asked for closer than"):   # the mesh's time floor
            warns = list(warns) + [note]
            _warn(note)
    if interrupted:
        name = SIGNAL_NAMES.get(flag.signal, "a signal")
        _error(f"interrupted ({name}): the run of '{args.case}' stopped at t = {reached:.6g} s "
               f"({fmt_time(reached)}) of {case.run.duration:.6g} s. The partial result is "
               f"written to {outdir} and marked incomplete (status 'interrupted'); no steady "
               "state, analyses, plots or report are made for it.")
    elif not result.complete:
        _error(f"the run of '{args.case}' did not converge; it stopped at t = {reached:.6g} s "
               f"({fmt_time(reached)}) of {case.run.duration:.6g} s. {result.message} The partial "
               f"result is written to {outdir} and marked incomplete.")
    # steady state at the end-of-run boundary conditions
    result.steady = None
    if not interrupted:
        try:
            result.steady = solver.solve_steady(case, system=system)
        except Exception as exc:  # a failed steady solve must not lose the transient result
            _warn(f"no steady state found for '{args.case}': {exc}")
    # write
    h5 = outdir / f"{stem}.h5"
    js = outdir / f"{stem}-summary.json"
    files = [str(h5), str(js)]
    summary = result.summary()
    summary.update({"case_file": str(args.case), "fdwall_version": _version(),
                    "input_warnings": warns, "caution": TOUCH_CAUTION})
    if case.is_enclosure and not interrupted:
        try:
            summary["enclosure"] = summarise_enclosure(result, steady=False)
        except Exception as exc:  # analyses must never lose the run's own results
            _warn(f"enclosure analysis not available: {exc}")
    summary["replaced_files"] = common.warn_replacing([h5, js])
    try:
        result.write_hdf5(h5)
        plots = []
        if not args.no_plots and not interrupted:
            plots = write_plots(result, outdir, stem)
        files += [str(p) for p in plots]
        summary["files"] = files
        _write_text_atomic(js, _dumps(summary) + "\n")
    except OSError as exc:
        raise WriteError(f"cannot write the results to '{outdir}': {exc.strerror or exc}. "
                         "Choose another folder with --out DIR.") from None
    if not interrupted:
        if args.report:  # convergence check and report data, stored in the result first
            convergence.store_report_data(result, h5, case, progress=progress)
        report = common.write_report(args, h5)
        if report:
            files.append(str(report))
    if args.json:
        print(_dumps(summary))
    elif not quiet:
        if case.is_enclosure and not interrupted:   # the text's "Heating" section
            try:
                result.enclosure = summarise_enclosure(result, steady=True)
            except Exception as exc:  # analyses must never lose the run's own results
                result.enclosure = str(exc)
        print(format_summary(result), end="")
        print("\nFiles written:")
        for f in files:
            print(f"  {f}")
    else:
        for w in summary.get("warnings") or []:
            _warn(w)
    if interrupted:
        return exit_code_for(flag.signal)
    return EXIT_OK if result.complete else EXIT_NOT_CONVERGED


def cmd_steady(args) -> int:
    case, warns = _load(args.case)
    for w in warns:
        _warn(w)
    system = _build(case, args.case)
    try:
        st = solver.solve_steady(case, system=system)
    except _input_errors() as exc:
        raise InputError(_names_file(str(exc), args.case)) from None
    except InternalError:
        raise  # a bug: reported as such by the entry point, never as "no steady state"
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
    case, warns = _load(args.case)
    system = _build(case, args.case)
    print(format_case(case, system, warns), end="")
    print(f"\ncase file '{args.case}' is valid"
          + (f" ({len(warns)} warning(s) above)." if warns else "."))
    return EXIT_OK


def _k_row(m):
    return {f"{t:g}": material_k_in_range(m, t) for t in LIST_TEMPS_C}


def cmd_materials(args) -> int:
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



def cmd_compile(args) -> int:
    """``fdwall compile``: build the ahead-of-time kernel module, or report its status."""
    if args.status:
        print(f"kernels: {'ahead-of-time' if native.MODE == 'aot' else 'just-in-time'}"
              f" ({native.STATUS})")
        return EXIT_OK
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




def register(sub) -> None:
    """Add run, steady, check, materials and compile to the sub-command parser."""
    r = sub.add_parser("run", help="run a case over time; write results, summary and plots",
                       description="Load CASE, run it over time, solve its steady state, write "
                       "DIR/<stem>.h5, DIR/<stem>-summary.json and PNG plots, print a summary.")
    r.add_argument("case", metavar="CASE", help="TOML case file")
    common.add_output_options(r)
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
