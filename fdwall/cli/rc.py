"""``fdwall rc CASE``: the lumped R/C model the walls of a case imply (see docs/lumped-rc.md)."""
from __future__ import annotations

from pathlib import Path

import numpy as np

from ..analyses.lumped import fit_vs_log_length, rc_analysis
from ..errors import SolverError
from ..report.rc_plots import plot_rc
from ..report.text import fmt_time
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
    if r.get("R_differential_K_per_W") is not None:
        L.append(f"  R linearised   {r['R_differential_K_per_W']:.5g} K/W (dT/dQ at the "
                 "operating point)")
    if r.get("first_moment_tau_s") is not None:
        L.append(f"  first moment   {_fmt_s(r['first_moment_tau_s'])}")
        L.append(f"  C_effective    {r['C_effective_J_per_K']:.5g} J/K")
    tn = r.get("two_node")
    if tn is not None and tn.get("C_wall_J_per_K") is not None:
        L.append(f"  two-node model (2-stage Cauer ladder, step response to "
                 f"{100 * tn['max_error_fraction']:.2g} % of R): C_chamber "
                 f"{tn['C_chamber_J_per_K']:.5g} J/K, R_chamber_wall "
                 f"{tn['R_chamber_wall_K_per_W']:.5g} K/W, C_wall {tn['C_wall_J_per_K']:.5g} "
                 f"J/K, R_wall_ambient {tn['R_wall_ambient_K_per_W']:.5g} K/W")
    tc = r["time_constants_s"]
    L.append(f"  time constants (slowest {min(n_show, len(tc))} of {len(tc)}):")
    for i, x in enumerate(tc[:n_show], 1):
        L.append(f"    {i:2d}  {_fmt_s(x)}")
    L.append("")
    L.append("  notes:")
    for n in r["notes"]:
        L.append(f"    - {n}")
    return "\n".join(L) + "\n"


def _options(args):
    """Check the option values before anything runs: (networks, log lengths [s], power [W])."""
    n = args.networks
    if n is not None and not 1 <= n <= 12:
        raise InputError(f"option --networks: {n} resistor-capacitor pairs asked; give a "
                         "whole number from 1 to 12 (a Foster network and its Cauer ladder of "
                         "that many pairs).")
    lengths = None
    if args.log_lengths is not None:
        lengths = common.quantity_list(args.log_lengths, "time", "--log-lengths",
                                       positive=True)
    power = None
    if args.log_power is not None:
        if lengths is None:
            raise InputError("option --log-power needs --log-lengths (the power of the "
                             "simulated heating logs).")
        power = common.quantity(args.log_power, "power", "--log-power", positive=True)
    return n, lengths, power


def _network_rows(net) -> dict:
    """One table of both networks: network, stage, R [K/W], C [J/K], tau [s] (Cauer: R C)."""
    rows = {"network": [], "stage": [], "R_K_per_W": [], "C_J_per_K": [], "tau_s": []}
    for name in ("foster", "cauer"):
        for i, p in enumerate(net[name], 1):
            rows["network"].append(name)
            rows["stage"].append(i)
            rows["R_K_per_W"].append(p["R_K_per_W"])
            rows["C_J_per_K"].append(p["C_J_per_K"])
            rows["tau_s"].append(p.get("tau_s", p["R_K_per_W"] * p["C_J_per_K"]))
    return rows


def _csv(rows: dict) -> str:
    keys = list(rows)
    lines = ["# Foster network (pairs R || C in series, slowest first) and Cauer ladder (stage "
             "1 at the heated node: C_1 to ambient, R_1 to the next node, ..., R_N to "
             "ambient); for a Cauer stage tau_s is just R C",
             ",".join(keys)]
    for i in range(len(rows[keys[0]])):
        lines.append(",".join(f"{rows[k][i]:.10g}" if isinstance(rows[k][i], float)
                              else str(rows[k][i]) for k in keys))
    return "\n".join(lines) + "\n"


def format_networks(net) -> str:
    """Text table of the Foster and Cauer networks."""
    L = [f"  networks ({net['n_terms']} pairs), step response to "
         f"{100 * net['max_error_fraction']:.3g} % of R (Foster "
         f"{net['foster_max_error_K_per_W']:.3g} K/W, Cauer "
         f"{net['cauer_max_error_K_per_W']:.3g} K/W):",
         "    Foster (slowest first)             Cauer (stage 1 at the heated node)",
         "     i    R [K/W]      C [J/K]     tau [s]     R [K/W]      C [J/K]"]
    for i, (f, c) in enumerate(zip(net["foster"], net["cauer"]), 1):
        L.append(f"    {i:2d}  {f['R_K_per_W']:10.4g} {f['C_J_per_K']:12.5g} {f['tau_s']:11.4g}"
                 f"  {c['R_K_per_W']:10.4g} {c['C_J_per_K']:12.5g}")
    return "\n".join(L) + "\n"


def format_log_lengths(ll) -> str:
    """Text table of the one-node fits against the log length."""
    imp = ll["implied"]
    L = [f"  one-node fit of fdwall's own curve ({ll['power_W']:.5g} W step from ambient; "
         f"R fixed at {ll['R_fixed_K_per_W']:.5g} K/W, or fitted):",
         "    log length        C (R fixed)   /C_eff  /C_stored    C (R fitted)   R fitted"]
    for r in ll["rows"]:
        ce = r["C_R_fixed_over_C_effective"]
        L.append(f"    {fmt_time(r['log_length_s']):>12s}  {r['C_fit_R_fixed_J_per_K']:12.5g}"
                 f"  {'-' if ce is None else format(ce, '6.3f'):>6s}  "
                 f"{r['C_R_fixed_over_C_stored']:8.3f}  {r['C_fit_J_per_K']:13.5g}"
                 f"  {r['R_fit_K_per_W']:9.4g}{' *' if r.get('below_slowest_tau') else ''}")
    if any(r.get("below_slowest_tau") for r in ll["rows"]):
        L.append("    * log shorter than the slowest time constant "
                 f"({fmt_time(imp['slowest_time_constant_s'])}): no equilibrium in sight, so "
                 "the fitted R (and the C fitted with it) is not a property of the wall")
    L.append(f"    the longest log's C is closest to {ll['closest']} "
             f"(C_effective {imp['C_effective_J_per_K'] or float('nan'):.5g}, C_stored "
             f"{imp['C_stored_J_per_K']:.5g}, C_total {imp['C_total_J_per_K']:.5g} J/K)")
    return "\n".join(L) + "\n"


def cmd_rc(args) -> int:
    n_net, lengths, power = _options(args)
    case, warns = common.load(args.case)
    for w in warns:
        common.warn(w)
    common.build(case, args.case)
    try:
        r = rc_analysis(case, networks=n_net)
        ll = None
        if lengths is not None:
            P = r["Q_W"] if power is None else power
            try:
                ll = fit_vs_log_length(case, P, lengths,
                                       progress=False if args.quiet else args.progress)
            except SolverError as exc:
                common.error(f"the simulated heating log of '{args.case}' for --log-lengths "
                             f"did not finish, so no log-length fits: {exc}")
                return EXIT_NOT_CONVERGED
            ll["power_W"] = float(P)
    except common._input_errors() as exc:
        raise InputError(common._names_file(str(exc), args.case)) from None
    except (RuntimeError, ArithmeticError) as exc:
        common.error(f"no steady state found for '{args.case}', so no R/C: {exc}")
        return EXIT_NOT_CONVERGED
    d = {k: r[k] for k in JSON_KEYS}
    d.update({"T_hot_K": r["T_hot_K"], "T_amb_K": r["T_amb_K"], "Q_W": r["Q_W"],
              "stored_J": r["stored_J"], "mode_R_K_per_W": r.get("mode_R_K_per_W"),
              "R_differential_K_per_W": r.get("R_differential_K_per_W"),
              "two_node": r.get("two_node"),
              "case_file": str(args.case), "fdwall_version": common.version(),
              "input_warnings": warns})
    net = r.get("networks")
    if net is not None:
        d["foster"] = net["foster"]
        d["cauer"] = net["cauer"]
        d["networks"] = {k: net[k] for k in ("n_terms", "foster_max_error_K_per_W",
                                             "cauer_max_error_K_per_W", "max_error_fraction",
                                             "cauer_foster_max_K_per_W", "R_total_K_per_W")}
    if ll is not None:
        d["log_length_fits"] = ll
    stem = Path(args.case).stem
    outdir = common.output_dir(args, stem)
    h5 = outdir / f"{stem}-rc.h5"
    tc = r["time_constants_s"]
    summary = {k: r[k] for k in ("R_K_per_W", "C_stored_J_per_K", "C_total_J_per_K", "tau_s",
                                 "T_hot_K", "T_amb_K", "Q_W", "stored_J")}
    for k in ("first_moment_tau_s", "C_effective_J_per_K", "R_differential_K_per_W"):
        if r.get(k) is not None:
            summary[k] = r[k]
    for k, v in (r.get("two_node") or {}).items():
        if v is not None:
            summary[f"two_node_{k}"] = v
    modes = {"mode": list(range(1, len(tc) + 1)), "tau_s": list(tc)}
    if r.get("mode_R_K_per_W") is not None:
        modes["R_K_per_W"] = r["mode_R_K_per_W"]
    tables = {"modes": modes}
    refs = list(_REFERENCES)
    if net is not None:
        tables["networks"] = _network_rows(net)
        tables["step_response"] = {"t_s": net["t_s"], "full_K_per_W": net["full_K_per_W"],
                                   "foster_K_per_W": net["foster_K_per_W"],
                                   "cauer_K_per_W": net["cauer_K_per_W"]}
        for k in ("foster_max_error_K_per_W", "cauer_max_error_K_per_W"):
            summary[k] = net[k]
        summary["network_pairs"] = net["n_terms"]
        refs += ["Foster network: non-negative least squares (scipy.optimize.nnls) on "
                 "log-spaced time constants, merged to N pairs",
                 "Cauer ladder: continued fraction of 1/Z(s) about s = infinity in exact "
                 "rational arithmetic (fractions.Fraction)"]
    if ll is not None:
        cols = ("log_length_s", "C_fit_R_fixed_J_per_K", "C_fit_J_per_K", "R_fit_K_per_W",
                "rms_K", "rms_R_fixed_K", "C_R_fixed_over_C_effective",
                "C_R_fixed_over_C_stored", "C_R_fixed_over_C_total", "below_slowest_tau")
        tables["log_lengths"] = {c: [np.nan if row[c] is None else row[c]
                                     for row in ll["rows"]] for c in cols}
        summary["log_power_W"] = ll["power_W"]
        refs.append("log-length fits: fdwall's transient run under the power step from "
                    "ambient, one-node model fitted by scipy.optimize.least_squares")
    notes = list(r["notes"])
    if ll is not None:
        notes.append(f"A one-node C fitted to fdwall's own simulated heating curve grows with "
                     f"the log length; over the longest log here "
                     f"({ll['rows'][-1]['log_length_s']:.4g} s) it is closest to "
                     f"{ll['closest']}.")
    # write: PNG first (the HTML report embeds it), then the CSV, then the HDF5 (+ report)
    files_pre = []
    try:
        outdir.mkdir(parents=True, exist_ok=True)
        if not args.no_plots:
            files_pre.append(plot_rc(r, outdir / f"{stem}-rc.png", case.name or stem, ll))
        if net is not None:
            csv = outdir / f"{stem}-rc-networks.csv"
            common.write_text_atomic(csv, _csv(_network_rows(net)))
            files_pre.append(str(csv))
    except OSError as exc:
        raise common.WriteError(f"cannot write the results to '{outdir}': "
                                f"{exc.strerror or exc}. Choose another folder with --out "
                                "DIR.") from None
    files = common.write_analysis(args, h5, {
            "inputs": {"case": str(args.case), "n_unknowns": r["n_unknowns"],
                       "networks": n_net if n_net is not None else 0,
                       "log_lengths_s": lengths if lengths is not None else []},
            "summary": summary,
            "tables": tables,
            "warnings": {"items": warns or ["none"]},
            "references": {"items": refs},
            "notes": {"items": notes},
        }, kind="rc", case_name=stem)
    files = [files[0]] + files_pre + files[1:]
    d["files"] = files
    if args.json:
        print(common.dumps(d))
    elif not args.quiet:
        print(format_rc(r, args.case), end="")
        if net is not None:
            print()
            print(format_networks(net), end="")
        if ll is not None:
            print()
            print(format_log_lengths(ll), end="")
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
        "notes on which C a one-node fit of a heating log should be compared with. With "
        "--networks N also N-pair Foster and Cauer networks of the heated node (table in "
        "<stem>-rc-networks.csv); with --log-lengths the one-node C fitted to fdwall's own "
        "simulated heating curve for each log length. Exit 2 on a bad case or option, 3 when "
        "no steady state is found.")
    p.add_argument("case", metavar="CASE", help="TOML case file")
    p.add_argument("--networks", metavar="N", type=int, default=None,
                   help="also fit an N-pair Foster network (1 to 12) to the heated node's step "
                        "response and give its Cauer ladder")
    p.add_argument("--log-lengths", metavar="LIST", default=None,
                   help='log lengths for the like-for-like fit, e.g. "1 h,2 h,4 h,8 h": '
                        "fdwall's own heating curve under a power step from ambient is fitted "
                        "by the one-node model over each length")
    p.add_argument("--log-power", metavar="POWER", default=None,
                   help='power of that step, e.g. "300 W" (default: the heat flow of the '
                        "steady state)")
    common.add_output_options(p, plots=True, progress=True)
    p.set_defaults(func=cmd_rc)
