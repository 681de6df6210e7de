"""``fdwall rc CASE``: the lumped R/C model the walls of a case imply (see docs/lumped-rc.md)."""
from __future__ import annotations

from pathlib import Path

from . import common
from .common import EXIT_NOT_CONVERGED, EXIT_OK, InputError

#: JSON keys of the answer (SI: K/W, J/K, s).
JSON_KEYS = ("R_K_per_W", "C_stored_J_per_K", "C_total_J_per_K", "tau_s", "time_constants_s",
             "first_moment_tau_s", "C_effective_J_per_K", "notes")

_REFERENCES = [
    "R = (T_hot - T_amb)/Q at the steady state; C_stored = energy held above ambient / "
    "(T_hot - T_amb)",
    "time constants: generalised eigenproblem G v = lambda C v of the finite-volume system "
    "linearised at the steady state (scipy.linalg.eigh)",
    "first moment of the heated node's step response: -Z'(0)/Z(0) with Z(s) = e^T (G + sC)^-1 e",
]


def _fmt_s(x):
    from ..report.text import fmt_time
    return "-" if x is None else f"{x:.5g} s ({fmt_time(x)})"


def format_rc(r, case_file, n_show=5) -> str:
    """Text summary of :func:`fdwall.analyses.lumped.rc_analysis`."""
    L = [f"Lumped R/C implied by '{case_file}'",
         f"  operating point: heated node {r['T_hot_K'] - 273.15:.1f} degC, ambient "
         f"{r['T_amb_K'] - 273.15:.1f} degC, heat flow {r['Q_W']:.5g} W",
         f"  R              {r['R_K_per_W']:.5g} K/W",
         f"  C_stored       {r['C_stored_J_per_K']:.5g} J/K",
         f"  C_total        {r['C_total_J_per_K']:.5g} J/K",
         f"  tau = R C_st   {_fmt_s(r['tau_s'])}"]
    if r.get("first_moment_tau_s") is not None:
        L.append(f"  first moment   {_fmt_s(r['first_moment_tau_s'])}")
        L.append(f"  C_effective    {r['C_effective_J_per_K']:.5g} J/K")
    tc = r["time_constants_s"]
    L.append(f"  time constants (slowest {min(n_show, len(tc))} of {len(tc)}):")
    for i, x in enumerate(tc[:n_show], 1):
        L.append(f"    {i:2d}  {_fmt_s(x)}")
    L.append("")
    L.append("  notes:")
    for n in r["notes"]:
        L.append(f"    - {n}")
    return "\n".join(L) + "\n"


def cmd_rc(args) -> int:
    from ..analyses.lumped import rc_analysis
    case, warns = common.load(args.case)
    for w in warns:
        common.warn(w)
    common.build(case, args.case)
    try:
        r = rc_analysis(case)
    except common._input_errors() as exc:
        raise InputError(common._names_file(str(exc), args.case)) from None
    except (RuntimeError, ArithmeticError) as exc:
        common.error(f"no steady state found for '{args.case}', so no R/C: {exc}")
        return EXIT_NOT_CONVERGED
    d = {k: r[k] for k in JSON_KEYS}
    d.update({"T_hot_K": r["T_hot_K"], "T_amb_K": r["T_amb_K"], "Q_W": r["Q_W"],
              "stored_J": r["stored_J"], "case_file": str(args.case),
              "fdwall_version": common.version(), "input_warnings": warns})
    stem = Path(args.case).stem
    outdir = common.output_dir(args, stem)
    h5 = outdir / f"{stem}-rc.h5"
    tc = r["time_constants_s"]
    summary = {k: r[k] for k in ("R_K_per_W", "C_stored_J_per_K", "C_total_J_per_K", "tau_s",
                                 "T_hot_K", "T_amb_K", "Q_W", "stored_J")}
    for k in ("first_moment_tau_s", "C_effective_J_per_K"):
        if r.get(k) is not None:
            summary[k] = r[k]
    files = common.write_analysis(args, h5, {
            "inputs": {"case": str(args.case), "n_unknowns": r["n_unknowns"]},
            "summary": summary,
            "tables": {"modes": {"mode": list(range(1, len(tc) + 1)), "tau_s": list(tc)}},
            "warnings": {"items": warns or ["none"]},
            "references": {"items": _REFERENCES},
            "notes": {"items": r["notes"]},
        }, kind="rc", case_name=stem)
    d["files"] = files
    if args.json:
        print(common.dumps(d))
    elif not args.quiet:
        print(format_rc(r, args.case), end="")
        print("\nFiles written:")
        for f in files:
            print(f"  {f}")
    return EXIT_OK


def register(sub) -> None:
    """Add the ``rc`` command."""
    p = sub.add_parser(
        "rc", help="lumped R/C the walls imply: R, stored and total C, time constants",
        description="Solve the steady state of CASE and derive the one-node R (K/W) and C "
        "(J/K) its walls imply (C_stored from the stored energy, C_total the sum of heat "
        "capacities), the wall's own time constants from the linearised finite-volume "
        "system, the first-moment time constant and C_effective of the heated node, and "
        "notes on which C a one-node fit of a heating log should be compared with. Exit 2 on "
        "a bad case, 3 when no steady state is found.")
    p.add_argument("case", metavar="CASE", help="TOML case file")
    common.add_output_options(p, plots=False, progress=False)
    p.set_defaults(func=cmd_rc)
