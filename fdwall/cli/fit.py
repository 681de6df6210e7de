"""``fdwall fit LOG.csv``: fit a lumped R/C network (one node or two) to a heating log."""
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


def _time_or_fit(text, option):
    """``fit`` or a time with a unit ("30 s") [s]; None when not given."""
    if text is None:
        return None
    if str(text).strip().lower() == "fit":
        return "fit"
    return common.quantity(text, "time", option, nonnegative=True)


def _heater(args):
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
    return power, rated


def _scalars(d):
    """The numbers, strings and None of a flat dict (what goes into ``summary``)."""
    out = {}
    for k, v in d.items():
        if v is None or isinstance(v, (bool, str, int)):
            out[k] = v
        elif isinstance(v, (int, float)) or hasattr(v, "dtype") and getattr(v, "ndim", 1) == 0:
            out[k] = float(v)
    return out


def cmd_fit(args) -> int:
    import numpy as np

    from ..analyses.logs import REPAIRS, read_log
    from ..analyses.twonode import fit_log, predict
    from ..errors import InputError as LibInputError
    power, rated = _heater(args)
    ambient = _value_or_column(args.ambient, "temperature", "--ambient")
    temps = [c.strip() for c in args.temperature.split(",") if c.strip()]
    if not temps:
        raise InputError("--temperature: no column named. Allowed: COLUMN[,COLUMN...].")
    lag = _time_or_fit(args.sensor_lag, "--sensor-lag")
    dead = _time_or_fit(args.dead_time, "--dead-time")
    repair = [r.strip() for r in (args.repair or "").split(",") if r.strip()]
    for r in repair:
        if r not in REPAIRS:
            raise InputError(f"--repair {r}: not a repair of the log reader. Allowed: "
                             + ", ".join(REPAIRS) + " (comma-separated).")
    if args.bootstrap < 0:
        raise InputError(f"--bootstrap {args.bootstrap}: must be 0 or more resamples.")
    setpoint = (None if args.setpoint is None
                else common.quantity(args.setpoint, "temperature", "--setpoint"))
    at_power = (None if args.at_power is None
                else common.quantity(args.at_power, "power", "--at-power"))
    if args.model == "power-law":
        from .fit_power import cmd_fit_power_law
        return cmd_fit_power_law(args, power, rated, ambient, temps, repair)
    for opt, v in (("--area", args.area), ("--heat-capacity", args.heat_capacity),
                   ("--exponent", args.exponent)):
        if v is not None:
            raise InputError(f"option {opt} goes with --model power-law only. Allowed: "
                             "--model power-law with it, or leave it out.")
    try:
        log = read_log(args.log, time=args.time, temperature=temps, power=power,
                       ambient=ambient, duty=args.duty, state=args.state, rated_power=rated,
                       time_zone=args.time_zone, repair=repair)
        fit = fit_log(log["t_s"], log["T_K"], log["P_W"], log["T_amb_K"], model=args.model,
                      sensor_lag=lag, dead_time=dead, n_boot=args.bootstrap)
    except LibInputError as exc:
        raise InputError(str(exc)) from None
    warns = [f"log repaired: {r}" for r in log["repairs"]] + list(fit["warnings"])
    check = cal = lfl = None
    if args.calibrate and not args.case:
        raise InputError("--calibrate needs --case CASE (the case whose physics is fitted to "
                         "the log).")
    if args.case:
        case, case_warns = common._load(args.case)
        from ..analyses.calibrate import like_for_like
        from ..analyses.logs import physics_check
        from ..analyses.lumped import rc_analysis
        try:
            implied = rc_analysis(case)
            check = physics_check(fit, implied, float(log["t_s"][-1] - log["t_s"][0]))
            if fit["R_K_per_W"] is not None:
                lfl = like_for_like(case, log["t_s"], log["P_W"], float(log["T_K"][0]), fit,
                                    model=fit["model"], T_amb=implied["T_amb_K"],
                                    tau_hint=implied.get("first_moment_tau_s"), rc=implied)
        except (LibInputError, ValueError) as exc:
            raise InputError(f"--case {args.case}: {exc}") from None
        except (RuntimeError, ArithmeticError) as exc:
            common.error(f"--case {args.case}: the solver failed: {exc}")
            return common.EXIT_NOT_CONVERGED
        short = any("too short to see equilibrium" in w for w in warns)
        warns.extend(w for w in check["warnings"]
                     if not (short and "too short to see equilibrium" in w))
        if lfl:
            check["reading"] = check["reading"] + lfl["reading"]
        if args.calibrate:
            from ..analyses.calibrate import calibrate
            keys = [k.strip() for k in args.calibrate.split(",") if k.strip()]
            try:
                cal = calibrate(case, log["t_s"], log["T_K"], log["P_W"], keys,
                                n_boot=args.bootstrap, sensor_lag=fit["sensor_lag_s"],
                                dead_time=fit["dead_time_s"])
            except LibInputError as exc:
                raise InputError(f"--calibrate {args.calibrate}: {exc}") from None
            except (RuntimeError, ArithmeticError) as exc:
                common.error(f"--calibrate: the solver failed on '{args.case}' driven by the "
                             f"log: {exc}")
                return common.EXIT_NOT_CONVERGED
            warns.extend(f"calibration: {w}" for w in cal["warnings"])
    Ta = float(np.mean(log["T_amb_K"]))
    full = rated if rated else float(np.max(log["P_W"]))
    pred = predict(fit, Ta, setpoint=setpoint,
                   power=at_power if at_power is not None else full, rated_power=full)
    if pred.get("duty_at_setpoint", 0.0) > 1.0:
        warns.append(f"holding {args.setpoint} needs {pred['duty_at_setpoint']:.2f} of the "
                     f"heater's {full:.4g} W: more than it can give")
    stem = Path(args.log).stem
    outdir = common.output_dir(args, stem)
    h5 = outdir / f"{stem}-fit.h5"
    keys = ("R_K_per_W", "R_stderr_K_per_W", "C_J_per_K", "C_stderr_J_per_K", "tau_s",
            "tau_stderr_s", "T0_K", "rms_K", "lag1_autocorrelation", "n_eff", "n",
            "correlation_RC", "identifiable", "block_length", "bootstrap_samples",
            "sensor_lag_s", "dead_time_s", "C_ignoring_lag_J_per_K", "R_ignoring_lag_K_per_W",
            "C_lag_bias_fraction", "tau_ignoring_lag_s")
    summary = {"model": fit["model"], **_scalars({k: fit[k] for k in keys if k in fit})}
    for nm in ("R", "C"):
        src = (fit["parameters"].get(nm) or fit["parameters"].get(f"{nm}_total") or {})
        unit = "K_per_W" if nm == "R" else "J_per_K"
        if "boot_ci95" in src:
            summary[f"{nm}_boot_stderr_{unit}"] = src["boot_stderr"]
    if log["start"]:
        summary["log_start_utc"] = log["start"]
    notes = [f"model {fit['model']}: " + {
        "one-node": "C dT/dt = P - (T - T_amb)/R",
        "two-node": "chamber C_chamber -- R_chamber_wall -- wall C_wall -- R_wall_ambient -- "
                    "ambient; R = R_chamber_wall + R_wall_ambient, C = C_chamber + C_wall",
        "time-constant": "zero power throughout: T = T_amb + (T0 - T_amb) exp(-t/tau)"}[
        fit["model"]]]
    if fit["sensor_lag_s"] or fit["dead_time_s"]:
        notes.append(f"sensor: first-order lag {fit['sensor_lag_s']:.4g} s and dead time "
                     f"{fit['dead_time_s']:.4g} s between the chamber and the logged value")
    if "C_lag_bias_fraction" in fit:
        notes.append(f"ignoring the sensor lag and dead time the same fit gives C = "
                     f"{fit['C_ignoring_lag_J_per_K']:.5g} J/K, {100 * fit['C_lag_bias_fraction']:+.1f} "
                     "% against the fit with them (a lagging sensor makes the warm-up look "
                     "slower)")
    notes.append("R and C are the fitted lumped values of the whole equipment, at the "
                 "temperatures of the log: radiation and k(T) make them depend on the "
                 "operating temperature")
    if check:
        summary["log_time_constants"] = check["log_time_constants"]
        notes += check["reading"]
    params = {k: {kk: vv for kk, vv in v.items()} for k, v in fit["parameters"].items()}
    names = fit["parameter_names"]
    groups = {
        "inputs": {"log": str(args.log), "time": args.time, "temperature": ",".join(temps),
                   "power": str(args.power), "duty": str(args.duty), "state": str(args.state),
                   "rated_power": str(args.rated_power),
                   "rated_power_W": float(rated) if rated else 0.0,
                   "ambient": str(args.ambient), "model": args.model,
                   "sensor_lag": str(args.sensor_lag), "dead_time": str(args.dead_time),
                   "time_zone": str(args.time_zone), "repair": ",".join(repair) or "none"},
        "summary": summary,
        "parameters": params,
        "tables": {"log": {"time_s": log["t_s"], "row": log["rows"], "T_K": log["T_K"],
                           "model_K": fit["model_K"], "P_W": log["P_W"],
                           "T_amb_K": log["T_amb_K"], "residual_K": fit["residual_K"]},
                   "residual_acf": {"lag": list(range(1, len(fit["residual_acf"]) + 1)),
                                    "autocorrelation": fit["residual_acf"]},
                   "correlation": {"parameter": names,
                                   **{n: fit["correlation"][:, i] for i, n in
                                      enumerate(names)}}},
        "predictions": pred,
        "warnings": {"items": warns or ["none"]},
        "repairs": {"items": log["repairs"] or ["none"]},
        "references": {"items": [
            "lumped network propagated exactly between rows (eigen-decomposition of the "
            "state matrix; checked against scipy.linalg.expm)",
            "scipy.optimize.least_squares; standard errors from the Jacobian with an "
            "effective sample size n(1-r1)/(1+r1) and Student t on n_eff - k",
            "block bootstrap of AR(1)-whitened residuals, post-blackened, linearised at "
            "the fit (Kuensch 1989; Davison & Hinkley 1997, sec. 8.2.3)"]},
        "notes": {"items": notes},
    }
    if check:
        groups["physics"] = check["physics"]
        groups["ratios"] = check["ratios"]
    if lfl:
        groups["like_for_like"] = {k: v for k, v in lfl.items() if k != "model_K"}
        groups["tables"]["log"]["simulated_K"] = lfl["model_K"]
    if cal:
        groups["calibration"] = {"parameters": cal["parameters"], "rms_K": cal["rms_K"],
                                 "lag1_autocorrelation": cal["lag1_autocorrelation"],
                                 "n_eff": cal["n_eff"], "runs": cal["runs"],
                                 "keys": cal["keys"]}
        groups["tables"]["log"]["calibrated_K"] = cal["model_K"]
        groups["notes"]["items"].append(
            "calibration: the case driven by the logged power (heater power, or the inner "
            "face's flux over the wall area), started at a fitted uniform temperature, "
            "fitted by least squares through the solver, seen through the fit's sensor lag "
            f"({fit['sensor_lag_s']:.4g} s) and dead time ({fit['dead_time_s']:.4g} s); "
            "intervals as for the fit")
    png = outdir / f"{stem}-fit.png"
    plots = []
    if not args.no_plots:  # drawn first, so that --report embeds it
        from ..report.fitplot import plot_fit
        label = {"one-node": "one-node fit", "two-node": "two-node fit",
                 "time-constant": "time-constant fit"}[fit["model"]]
        try:
            outdir.mkdir(parents=True, exist_ok=True)
            plots.append(plot_fit(log["t_s"], log["T_K"], fit["model_K"], log["P_W"], png,
                                  title=f"{stem}: {label}, residual RMS {fit['rms_K']:.3g} K",
                                  model_label=label, T_amb_K=log["T_amb_K"],
                                  extra=None if not cal else
                                  (cal["model_K"], "solver, calibrated")))
        except OSError as exc:
            raise common.WriteError(f"cannot write the plot '{png}': "
                                    f"{exc.strerror or exc}. Choose another folder with "
                                    "--out DIR.") from None
    files = common.write_analysis(args, h5, groups, kind="fit", case_name=stem)
    files[1:1] = plots
    for w in warns:
        common.warn(w)
    if args.json:
        out = {**summary, "parameters": params, "residual_acf": fit["residual_acf"],
               "predictions": pred, "warnings": warns, "repairs": log["repairs"],
               "files": files}
        if check:
            out.update(physics=check["physics"], ratios=check["ratios"],
                       reading=check["reading"])
        if cal:
            out["calibration"] = groups["calibration"]
        if lfl:
            out["like_for_like"] = groups["like_for_like"]
        print(common.dumps(out))
    elif not args.quiet:
        print(_text(args, fit, pred, check, full, at_power, files, cal, lfl), end="")
    return EXIT_OK


def _pm(item, fmt=".5g"):
    s = f"{item['value']:{fmt}} +/- {item['stderr']:.2g}"
    lo, hi = item["ci95"]
    s += f"  (95 %: {lo:{fmt}} .. {hi:{fmt}}"
    if "boot_ci95" in item:
        a, b = item["boot_ci95"]
        s += f"; bootstrap {a:{fmt}} .. {b:{fmt}}"
    return s + ")"


def _text(args, fit, pred, check, full, at_power, files, cal=None, lfl=None) -> str:
    P = fit["parameters"]
    L = [f"{fit['model']} fit of '{args.log}'"
         + ("" if fit["identifiable"] else "  [NOT IDENTIFIABLE: see the warnings]")]
    units = {"K_per_W": "K/W", "J_per_K": "J/K", "K": "K", "s": "s"}
    for k, v in P.items():
        L.append(f"  {k:<16s} {_pm(v)} {units.get(v['unit'], v['unit'])}")
    if fit["model"] != "one-node":
        L.append("  time constants   " + ", ".join(f"{x:.5g} s" for x in fit["time_constants_s"]))
    else:
        L.append(f"  tau = R C        {fit['tau_s']:.5g} s")
    L.append(f"  residual RMS {fit['rms_K']:.3g} K; residual autocorrelation lag 1..3: "
             + ", ".join(f"{a:.2f}" for a in fit["residual_acf"][:3])
             + f" (effective samples {fit['n_eff']:.0f} of {fit['n']}; bootstrap blocks of "
             f"{fit['block_length']})")
    if "C_lag_bias_fraction" in fit:
        L.append(f"  ignoring the sensor lag: C {fit['C_ignoring_lag_J_per_K']:.5g} J/K "
                 f"({100 * fit['C_lag_bias_fraction']:+.1f} %)")
    if "steady_temperature_K" in pred:
        L.append(f"  steady temperature at {at_power if at_power is not None else full:.4g} W: "
                 f"{pred['steady_temperature_K'] - 273.15:.1f} degC")
    if "duty_at_setpoint" in pred:
        ts = pred["time_to_setpoint_s"]
        when = (f"{ts / 60:.1f} min from ambient" if ts != float("inf")
                else "never reached at that power")
        L.append(f"  at setpoint {args.setpoint}: duty {pred['duty_at_setpoint']:.3f}, {when}")
    if check:
        ph, ra = check["physics"], check["ratios"]
        L.append(f"Physics of '{args.case}' (implied):")
        if "R" in ra:
            L.append(f"  R    {ph['R_K_per_W']:.5g} K/W        fitted/implied {ra['R']:.3f}")
            L.append(f"  C    {ph['C_stored_J_per_K']:.5g} J/K (stored)  fitted/implied "
                     f"{ra['C_stored']:.3f}; total {ph['C_total_J_per_K']:.5g} J/K")
        L.append(f"  tau  {ph['tau_s']:.5g} s         fitted/implied {ra['tau']:.3f}")
        if lfl and "ratios" in lfl:
            L.append(f"  same {fit['model']} fit of fdwall's own curve (this power history "
                     f"and length): R {lfl['R_K_per_W']:.5g} K/W, C {lfl['C_J_per_K']:.5g} "
                     f"J/K; log/simulated R {lfl['ratios']['R']:.3f}, C "
                     f"{lfl['ratios']['C']:.3f}")
            fl = lfl.get("fit_vs_length")
            if fl:
                L.append("  fitted C against log length (constant-power warm-up of the case "
                         f"at {fl['power_W']:.4g} W):")
                for a, b in zip(fl["length_s"], fl["C_J_per_K"]):
                    L.append(f"    {a / 3600:8.3g} h   " + (f"C {b:.5g} J/K" if b is not None
                                                            else "not resolved"))
        for line in check["reading"]:
            L.append(f"  - {line}")
    if cal:
        L.append(f"Calibration of '{args.case}' through the solver ({cal['runs']} runs, "
                 f"residual RMS {cal['rms_K']:.3g} K):")
        for k, v in cal["parameters"].items():
            L.append(f"  {k:<28s} {_pm(v, '.4g')} [{v['unit']}] (started at {v['start']:.4g})")
    L.append("\nFiles written:")
    L += [f"  {f}" for f in files]
    return "\n".join(L) + "\n"


def register(sub) -> None:
    """Add the ``fit`` command."""
    p = sub.add_parser("fit", help="fit a one- or two-node R/C model to a measured heating log",
                       description="Read a CSV heating log (headers 'name [unit]') and fit "
                       "R (K/W) and C (J/K) of a one-node model, or a chamber-and-wall "
                       "two-node model, over the whole power history, optionally with a "
                       "sensor lag and dead time; intervals from an effective sample size and "
                       "a block bootstrap.")
    p.add_argument("log", metavar="LOG.csv", help="CSV log")
    p.add_argument("--time", required=True, metavar="COLUMN",
                   help="time column: with a unit [s], [min], [h] (in the header or here, "
                   "'time [min]'), or without one clock times HH:MM:SS or ISO timestamps")
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
    p.add_argument("--time-zone", metavar="ZONE",
                   help="zone of timestamps written without a UTC offset: an IANA name "
                   "(Europe/Berlin), UTC, or an offset (+01:00)")
    p.add_argument("--repair", metavar="KIND[,KIND]",
                   help="let the reader repair the log, each repair reported: sort, "
                   "duplicates (averaged), outliers (dropped), gaps (kept, power held)")
    p.add_argument("--model", default="one-node", choices=("one-node", "two-node", "power-law"),
                   help="one-node (default), two-node (chamber plus wall), or power-law (a "
                   "lumped body losing heat through a film h = a |T - T_amb|^n; needs --area)")
    p.add_argument("--area", metavar="AREA",
                   help='power-law: area of the film, e.g. "1.2 m2"')
    p.add_argument("--heat-capacity", metavar="VALUE",
                   help='power-law: heat capacity when known, e.g. "45 kJ/K" (needed for a '
                   "log without power); fitted when left out")
    p.add_argument("--exponent", metavar="N",
                   help='power-law: the exponent n when known, e.g. 0.25 or "1/3"; fitted '
                   "when left out")
    p.add_argument("--sensor-lag", metavar="TIME|fit",
                   help='first-order time constant of the sensor, e.g. "40 s", or fit')
    p.add_argument("--dead-time", metavar="TIME|fit",
                   help='dead time between the chamber and the logged value, e.g. "20 s", '
                   "or fit")
    p.add_argument("--bootstrap", type=int, default=400, metavar="N",
                   help="block-bootstrap resamples (default 400; 0: none)")
    p.add_argument("--setpoint", metavar="TEMPERATURE",
                   help='setpoint for the predicted duty and warm-up time, e.g. "180 degC"')
    p.add_argument("--at-power", metavar="POWER",
                   help="power for the predicted steady temperature and warm-up (default: "
                   "rated power, else the largest logged power)")
    p.add_argument("--case", metavar="CASE",
                   help="case file whose implied R and C the fit is compared with")
    p.add_argument("--calibrate", metavar="KEY[,KEY]",
                   help="with --case: fit these physics of the case to the log through the "
                   "solver: conductivity_factor:[WALL:]LAYER, emissivity:[WALL:]outer|inner, "
                   "contact_resistance:[WALL:]INTERFACE, leakage (WALL a position, name or *)")
    common.add_output_options(p, plots=True, progress=False)
    p.set_defaults(func=cmd_fit)
