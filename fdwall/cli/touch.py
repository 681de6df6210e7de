"""``fdwall touch CASE``: touch-safety verdicts of the outer faces (see docs/touch-safety.md)."""
from __future__ import annotations

from pathlib import Path

from ..analyses import convergence
from ..analyses.safety import _check_class, _check_criterion
from ..cautions import BURN_INDICATOR_NOTE, SAFETY_CAUTION
from ..errors import InputError as LibInputError
from ..h5tree import add_group
from ..report.text import fmt_time
from ..safety import CRITERIA, DAMAGE_MODELS, SURFACE_CLASSES, evaluate_touch, write_touch_plots
from . import common
from .common import EXIT_NOT_CONVERGED, EXIT_OK, InputError, WriteError
from .interrupts import SIGNAL_NAMES, SignalStop, exit_code_for, run_guarded


def _c(T):
    return "-" if T is None else f"{T - 273.15:.1f} degC"


def _t(t):
    return "-" if t is None else fmt_time(t)


def format_touch(a, case_file) -> str:
    """Text summary of a :class:`fdwall.safety.TouchAssessment`."""
    info = a.criterion_info
    L = [f"Touch safety of '{case_file}'",
         f"  criterion: {a.criterion}, contact time {a.contact_time_s:g} s, ambient "
         f"{_c(a.ambient_K)}"]
    if "source" in info:
        L.append(f"  data: {info['source']}"
                 + ("" if info.get("checked_against_standard", True) else
                    f" ({info.get('data_note', 'from memory')})"))
    if "interpolation" in info:
        L.append(f"  interpolation: {info['interpolation']}")
    if "design_case" in info:
        L.append(f"  design case: {info['design_case']}")
    for k, v in a.conditions.items():
        L.append(f"  {k}: {v}")
    for f in a.faces:
        L.append("")
        L.append(f"  {f.face}: {f.verdict.upper()}")
        L.append(f"    surface class   {f.surface_class}  ({f.class_source})")
        lim = f"{_c(f.limit_K)}"
        if f.band and f.band["banded"]:
            lim += (f" (lower edge of the band {_c(f.band['lower_K'])} .. "
                    f"{_c(f.band['upper_K'])})")
        L.append(f"    limit           {lim}")
        L.append(f"    highest skin    {_c(f.T_max_K)} at {_t(f.t_max_s)}")
        L.append(f"    steady skin     {_c(f.T_steady_K)}")
        L.append("    margin          " + ("-" if f.margin_K is None else f"{f.margin_K:+.1f} K"))
        L.append(f"    above limit     from {_t(f.first_over_s)}, for {_t(f.time_over_s)}"
                 if f.first_over_s is not None else "    above limit     never during the run")
        L.append(f"    contact temp.   {_c(f.contact_temperature_K)} (instant, at the hottest "
                 "instant)")
        if f.contact:
            c = f.contact
            L.append(f"    contact sim.    basal layer peak {_c(c['basal_peak_K'])} at "
                     f"{c['basal_peak_s']:.3g} s; damage integral {c['damage_integral']:.3g} "
                     f"({c['indicator']}; {c['damage_model_title']})")
        if f.safe_after_off_s is not None:
            L.append(f"    safe after off  {_t(f.safe_after_off_s)}")
    if a.skipped:
        L.append("")
        L.append("  not assessed: " + ", ".join(f"{s['face']} ({s['touch']})" for s in a.skipped))
    po = a.after_power_off
    if po:
        L.append("")
        if po.get("off_at_s") is None:
            L.append(f"  after power-off: {po['source']}")
        else:
            L.append(f"  after power-off at {_t(po['off_at_s'])} ({po['source']}):")
            if "safe_to_touch_after_s" in po:
                s = po["safe_to_touch_after_s"]
                L.append("    every face safe to touch after " + (_t(s) if s is not None
                                                                  else "- (not within the run)"))
            if "door_open_K" in po:
                d = po["door_open_after_s"]
                L.append(f"    {po['door_reference']} below {_c(po['door_open_K'])} after "
                         + (_t(d) if d is not None else "- (not within the run)"))
            if po.get("note"):
                L.append(f"    note: {po['note']}")
    if a.sensitivity:
        L.append("")
        L.append("  sensitivity (steady skin temperature):")
        for v in a.sensitivity:
            parts = ", ".join(f"{r['face']} {_c(r['T_steady_K'])} {r['verdict']}"
                              for r in v["faces"])
            L.append(f"    {v['variant']}: {parts}")
    for w in a.warnings:
        L.append("")
        L.append(f"  warning: {w}")
    L.append("")
    L.append(f"  {SAFETY_CAUTION}")
    if any(f.contact for f in a.faces):
        L.append(f"  {BURN_INDICATOR_NOTE}")
    return "\n".join(L) + "\n"


def _opt(args, name, kind, **kw):
    v = getattr(args, name)
    return None if v is None else common.quantity(v, kind, "--" + name.replace("_", "-"), **kw)


def cmd_touch(args) -> int:
    """``fdwall touch``: SIGINT / SIGTERM while it computes stop it at once, write nothing
    (verdicts of an unfinished run would be 'unknown') and exit 130 / 143."""
    return run_guarded(lambda guard: _touch(args, guard), "fdwall touch", args.case,
                       "touch verdicts")


def _touch(args, guard) -> int:
    # options first: bad input must write nothing
    try:
        if args.criterion not in CRITERIA:
            _check_criterion(args.criterion)
        if args.surface is not None and args.surface not in SURFACE_CLASSES:
            _check_class(args.surface)
    except LibInputError as exc:
        raise InputError(str(exc)) from None
    if args.damage_model not in DAMAGE_MODELS:
        raise InputError(f"--damage-model: unknown coefficient set {args.damage_model!r}. "
                         f"Allowed: {', '.join(DAMAGE_MODELS)}.")
    ct = _opt(args, "contact_time", "time")
    limit = _opt(args, "limit", "temperature")
    rise = _opt(args, "rise", "temperature_difference")
    amb = _opt(args, "ambient", "temperature")
    off = _opt(args, "off_at", "time", nonnegative=True)
    door = _opt(args, "door_open", "temperature")
    rc = _opt(args, "contact_resistance", "contact_resistance", nonnegative=True) or 0.0
    if args.criterion != "rise" and rise is not None:
        raise InputError("--rise goes with --criterion rise.")
    if args.criterion != "limit" and limit is not None:
        raise InputError("--limit goes with --criterion limit.")
    case, warns = common.load(args.case)
    for w in warns:
        common.warn(w)
    system = common.build(case, args.case)
    quiet = args.quiet
    try:
        a = evaluate_touch(case, criterion=args.criterion, contact_time=ct, surface=args.surface,
                           limit=limit, rise=rise, ambient=amb, off_at=off, door_open=door,
                           simulate_contact=not args.no_contact, progress=(False if quiet else
                                                                           args.progress),
                           damage_model=args.damage_model, contact_resistance=rc,
                           faces=args.face, result=None, steady=None)
    except common._input_errors() as exc:
        raise InputError(common._names_file(str(exc), args.case)) from None
    del system
    stem = Path(args.case).stem
    outdir = common.output_dir(args, stem)
    h5 = outdir / f"{stem}.h5"
    js = outdir / f"{stem}-touch.json"
    d = a.to_dict()
    d.update({"case_file": str(args.case), "fdwall_version": common.version(),
              "input_warnings": warns})
    files = [str(h5), str(js)]
    with guard.writing():
        _write_touch(args, a, d, h5, js, outdir, stem, files)
    if guard.flag.is_set():   # a signal while writing: the files are done, stop here
        return EXIT_OK
    if args.report:  # convergence check and report data, stored in the result first
        try:
            convergence.store_report_data(a.result, h5, case,
                                          progress=bool(getattr(args, "progress", False)))
        except SignalStop as exc:
            common.error(f"interrupted ({SIGNAL_NAMES.get(exc.signum, exc.signum)}) during the "
                         f"convergence check of --report: the touch results of '{args.case}' "
                         f"are written and complete ({', '.join(files)}); no report is made.")
            return exit_code_for(exc.signum)
    with guard.writing():
        report = common.write_report(args, h5)
        if report:
            files.append(str(report))
        _print_touch(args, a, d, files)
    if not a.complete:
        common.error(f"the run of '{args.case}' stopped early: {a.result.message} Verdicts are "
                     "'unknown'.")
        return EXIT_NOT_CONVERGED
    return EXIT_OK


def _write_touch(args, a, d, h5, js, outdir, stem, files) -> None:
    """Write the touch result file, its JSON and plots (each atomically)."""
    try:
        outdir.mkdir(parents=True, exist_ok=True)
        a.result.steady = a.steady
        a.result.write_hdf5(h5)
        add_group(h5, "touch", a.h5_dict(d))
        if not args.no_plots:
            files += [str(p) for p in write_touch_plots(a, outdir, stem)]
        d["files"] = files
        common.write_text_atomic(js, common.dumps(d) + "\n")
    except OSError as exc:
        raise WriteError(f"cannot write the results to '{outdir}': {exc.strerror or exc}. "
                         "Choose another folder with --out DIR.") from None


def _print_touch(args, a, d, files) -> None:
    if args.json:
        print(common.dumps(d))
    elif not args.quiet:
        print(format_touch(a, args.case), end="")
        print("\nFiles written:")
        for f in files:
            print(f"  {f}")


def register(sub) -> None:
    """Add the ``touch`` command."""
    p = sub.add_parser(
        "touch", help="touch safety: burn verdict of every outer face, contact temperature, "
        "contact simulation, time to safe after power-off",
        description="Run CASE and judge every touchable outer face against a burn criterion: "
        "highest and steady skin temperature, verdict and margin, first time over the limit and "
        "time over it, instant contact temperature, a short-contact simulation with a "
        "burn-damage indicator, time to safe after power-off, and how the verdict moves with "
        "the film coefficient and emissivity. Exit 0 whatever the verdict; 3 when the run "
        "stopped early (verdict 'unknown'). " + SAFETY_CAUTION + " " + BURN_INDICATOR_NOTE)
    p.add_argument("case", metavar="CASE", help="TOML case file")
    p.add_argument("--criterion", default="table", metavar="NAME",
                   help="table (default; burn thresholds by surface class and contact time), "
                        "industrial (table at 5 s), consumer (table at 60 s), rise (--rise over "
                        "ambient) or limit (--limit)")
    p.add_argument("--contact-time", metavar="TIME", default=None,
                   help='contact time for the table criterion and the simulation, e.g. "4 s" '
                        "(default 10 s; table range 1 s to 8 h)")
    p.add_argument("--surface", metavar="CLASS", default=None,
                   help="surface class for every face: bare-metal, coated-metal, "
                        "ceramic-glass-stone, plastic or wood (default: case file per face, "
                        "else from the outer layer and its finish)")
    p.add_argument("--limit", metavar="TEMPERATURE", default=None,
                   help='your own limit with --criterion limit, e.g. "60 degC"')
    p.add_argument("--rise", metavar="DIFFERENCE", default=None,
                   help='allowed rise over ambient with --criterion rise, e.g. "35 K"')
    p.add_argument("--ambient", metavar="TEMPERATURE", default=None,
                   help="worst-case ambient: outer air and surroundings set to it, case re-run")
    p.add_argument("--off-at", metavar="TIME", default=None,
                   help="power-off time for the time to safe (default: the heater's last "
                        "switch-off in the case)")
    p.add_argument("--door-open", metavar="TEMPERATURE", default=None,
                   help="chamber temperature (single wall: inner face) below which the door "
                        "may be opened after power-off")
    p.add_argument("--face", action="append", metavar="NAME", default=None,
                   help='judge only this outer face (repeatable), e.g. "side panel:outer"')
    p.add_argument("--contact-resistance", metavar="R", default=None,
                   help='skin contact resistance for the simulation, e.g. "0.0005 m2K/W" '
                        "(default 0, the conservative choice)")
    p.add_argument("--damage-model", default="henriques-1947", metavar="SET",
                   help="burn-damage coefficient set: henriques-1947 (default) or "
                        "weaver-stoll-1969")
    p.add_argument("--no-contact", action="store_true",
                   help="skip the short-contact simulation")
    common.add_output_options(p)
    p.set_defaults(func=cmd_touch)
