"""``fdwall fit LOG.csv``: fit a one-node R/C model to a measured heating log."""
from __future__ import annotations

from pathlib import Path

from . import common
from .common import EXIT_OK, InputError


def _value_or_column(text, kind, option):
    """A text that parses as a quantity with a unit is a value (SI); anything else a column."""
    from ..errors import CaseError
    from ..units import parse_quantity
    try:
        float(text)
    except ValueError:
        try:
            return parse_quantity(text, kind, where=option)
        except CaseError:
            return str(text).strip()
    return common.quantity(text, kind, option)  # bare number: rejected, naming the option


def cmd_fit(args) -> int:
    from ..analyses.logs import fit_one_node_log, read_log
    from ..errors import InputError as LibInputError
    if args.model != "one-node":
        raise InputError(f"--model {args.model}: only one-node is available in this version. "
                         "Allowed: one-node.")
    given = [o for o, v in (("--power", args.power), ("--duty", args.duty),
                            ("--state", args.state)) if v is not None]
    if len(given) != 1:
        raise InputError("heater input: " + (" and ".join(given) + " given together"
                         if given else "none given") + ". Allowed: exactly one of --power "
                         "COLUMN|VALUE, --duty COLUMN --rated-power VALUE, --state COLUMN "
                         "--rated-power VALUE.")
    rated = None
    if args.rated_power is not None:
        if args.power is not None:
            raise InputError("--rated-power goes with --duty or --state, not with --power. "
                             "Allowed: --power alone, or --duty/--state with --rated-power.")
        rated = common.quantity(args.rated_power, "power", "--rated-power")
        if not rated > 0:
            raise InputError(f"--rated-power {args.rated_power}: must be above 0 W. "
                             'Allowed: a positive power such as "2 kW".')
    elif args.power is None:
        raise InputError(f"{given[0]} needs --rated-power VALUE (the heater's full power, "
                         'e.g. "2 kW").')
    power = None if args.power is None else _value_or_column(args.power, "power", "--power")
    ambient = _value_or_column(args.ambient, "temperature", "--ambient")
    temps = [c.strip() for c in args.temperature.split(",") if c.strip()]
    if not temps:
        raise InputError("--temperature: no column named. Allowed: COLUMN[,COLUMN...].")
    try:
        log = read_log(args.log, time=args.time, temperature=temps, power=power,
                       ambient=ambient, duty=args.duty, state=args.state, rated_power=rated)
        fit = fit_one_node_log(log["t_s"], log["T_K"], log["P_W"], log["T_amb_K"])
    except LibInputError as exc:
        raise InputError(str(exc)) from None
    setpoint = (None if args.setpoint is None
                else common.quantity(args.setpoint, "temperature", "--setpoint"))
    at_power = (None if args.at_power is None
                else common.quantity(args.at_power, "power", "--at-power"))
    check = None
    if args.case:
        case, case_warns = common._load(args.case)
        from ..analyses.logs import physics_check
        from ..analyses.lumped import implied_rc
        try:
            implied = implied_rc(case)
            check = physics_check(fit, implied, float(log["t_s"][-1] - log["t_s"][0]))
        except (LibInputError, ValueError) as exc:
            raise InputError(f"--case {args.case}: {exc}") from None
        fit["warnings"].extend(check["warnings"])
    import numpy as _np

    from ..analyses.logs import predict_one_node
    full = rated if rated else float(_np.max(log["P_W"]))
    pred = predict_one_node(fit["R_K_per_W"], fit["C_J_per_K"], float(_np.mean(log["T_amb_K"])),
                            setpoint=setpoint, power=at_power if at_power is not None else full,
                            rated_power=full, T0=float(_np.mean(log["T_amb_K"])),
                            R_stderr=fit["R_stderr_K_per_W"])
    if pred.get("duty_at_setpoint", 0.0) > 1.0:
        fit["warnings"].append(f"holding {args.setpoint} needs {pred['duty_at_setpoint']:.2f} of "
                               f"the heater's {full:.4g} W: more than it can give")
    stem = Path(args.log).stem
    outdir = common.output_dir(args, stem)
    h5 = outdir / f"{stem}-fit.h5"
    warns = fit.pop("warnings")
    summary = {k: float(v) for k, v in fit.items()}
    resid = log["T_K"] - _model(log, fit)
    groups_extra, notes = {}, ["R and C are the fitted lumped values of the whole equipment"]
    groups_extra["predictions"] = pred
    notes.append("predictions use the one-node closed forms: steady T = T_amb + P R; time to "
                 "a setpoint from ambient t = R C ln((T_inf - T_amb)/(T_inf - T_set)); duty = "
                 f"(T_set - T_amb)/(R P_full) with P_full = {full:.6g} W")
    if check:
        groups_extra["physics"] = check["physics"]
        groups_extra["ratios"] = check["ratios"]
        summary["log_time_constants"] = check["log_time_constants"]
        notes += check["reading"]
    files = common.write_analysis(args, h5, {
            "inputs": {"log": str(args.log), "time": args.time, "temperature": ",".join(temps),
                       "power": str(args.power), "duty": str(args.duty),
                       "state": str(args.state), "rated_power": str(args.rated_power),
                       "rated_power_W": float(rated) if rated else 0.0,
                       "ambient": str(args.ambient),
                       "model": args.model},
            "summary": summary,
            "tables": {"log": {"time_s": log["t_s"], "T_K": log["T_K"], "P_W": log["P_W"],
                               "T_amb_K": log["T_amb_K"], "residual_K": resid}},
            "warnings": {"items": warns or ["none"]},
            "references": {"items": ["one-node lumped model, exact piecewise-constant-power propagation",
                           "scipy.optimize.least_squares; standard errors from the Jacobian "
                           "with an effective sample size n(1-r1)/(1+r1)"]},
            "notes": {"items": notes},
            **groups_extra,
        }, kind="fit", case_name=stem)
    for w in warns:
        common.warn(w)
    if args.json:
        out = {**summary, "predictions": pred, "warnings": warns, "files": files}
        if check:
            out.update(physics=check["physics"], ratios=check["ratios"],
                       reading=check["reading"])
        print(common.dumps(out))
    elif not args.quiet:
        print(f"One-node fit of '{args.log}'")
        print(f"  R    {fit['R_K_per_W']:.5g} +/- {fit['R_stderr_K_per_W']:.2g} K/W")
        print(f"  C    {fit['C_J_per_K']:.5g} +/- {fit['C_stderr_J_per_K']:.2g} J/K")
        print(f"  tau  {fit['tau_s']:.5g} s")
        print(f"  residual RMS {fit['rms_K']:.3g} K, lag-1 autocorrelation "
              f"{fit['lag1_autocorrelation']:.2f} (effective samples {fit['n_eff']:.0f})")
        if "steady_temperature_K" in pred:
            print(f"  steady temperature at {at_power if at_power is not None else full:.4g} W: "
                  f"{pred['steady_temperature_K'] - 273.15:.1f} degC")
        if "duty_at_setpoint" in pred:
            ts = pred["time_to_setpoint_s"]
            when = (f"{ts / 60:.1f} min from ambient" if ts != float("inf")
                    else "never reached at that power")
            print(f"  at setpoint {args.setpoint}: duty {pred['duty_at_setpoint']:.3f}, {when}")
        if check:
            ph, ra = check["physics"], check["ratios"]
            print(f"Physics of '{args.case}' (implied):")
            print(f"  R    {ph['R_K_per_W']:.5g} K/W        fitted/implied {ra['R']:.3f}")
            print(f"  C    {ph['C_stored_J_per_K']:.5g} J/K (stored)  fitted/implied "
                  f"{ra['C_stored']:.3f}; total {ph['C_total_J_per_K']:.5g} J/K")
            print(f"  tau  {ph['tau_s']:.5g} s         fitted/implied {ra['tau']:.3f}")
            for line in check["reading"]:
                print(f"  - {line}")
        print("\nFiles written:")
        for f in files:
            print(f"  {f}")
    return EXIT_OK


def _model(log, fit):
    from ..analyses.logs import one_node_propagate
    return one_node_propagate(log["t_s"], log["P_W"], log["T_amb_K"], fit["R_K_per_W"],
                              fit["C_J_per_K"], fit["T0_K"])


def register(sub) -> None:
    """Add the ``fit`` command."""
    p = sub.add_parser("fit", help="fit a one-node R/C model to a measured heating log",
                       description="Read a CSV heating log (headers 'name [unit]') and fit "
                       "R (K/W) and C (J/K) of a one-node model over the whole power history.")
    p.add_argument("log", metavar="LOG.csv", help="CSV log")
    p.add_argument("--time", required=True, metavar="COLUMN", help="time column")
    p.add_argument("--temperature", required=True, metavar="COLUMN[,COLUMN...]",
                   help="temperature column(s); several are averaged")
    p.add_argument("--power", metavar="COLUMN|VALUE",
                   help='heater power column or a value, e.g. "2 kW"')
    p.add_argument("--duty", metavar="COLUMN",
                   help="duty column (fraction 0..1, or a [%%] header); needs --rated-power")
    p.add_argument("--state", metavar="COLUMN",
                   help="heater on/off column (0 or 1); needs --rated-power")
    p.add_argument("--rated-power", metavar="VALUE",
                   help='full heater power for --duty/--state, e.g. "2 kW"')
    p.add_argument("--ambient", required=True, metavar="COLUMN|VALUE",
                   help='ambient temperature column or a value, e.g. "20 degC"')
    p.add_argument("--setpoint", metavar="TEMPERATURE",
                   help='setpoint for the predicted duty and warm-up time, e.g. "180 degC"')
    p.add_argument("--at-power", metavar="POWER",
                   help="power for the predicted steady temperature and warm-up (default: "
                   "rated power, else the largest logged power)")
    p.add_argument("--case", metavar="CASE",
                   help="case file whose implied R and C the fit is compared with")
    p.add_argument("--model", default="one-node", metavar="MODEL", help="one-node (default)")
    common.add_output_options(p, plots=False, progress=False)
    p.set_defaults(func=cmd_fit)
