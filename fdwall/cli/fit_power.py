"""``fdwall fit LOG.csv --model power-law``: a lumped body with a power-law film loss.

The model is ``C dT/dt = P - A a |T - T_amb|^n (T - T_amb)``, the loss of the case-file
convection model ``power_law`` (same function, same names: ``coefficient`` a in
W/(m2 K^(1+n)) and ``exponent`` n), fitted by :func:`fdwall.analyses.lumped.
fit_power_law_loss`.  SI inside; option values are written as in case files.
"""
from __future__ import annotations

import math
from pathlib import Path

from . import common
from .common import EXIT_OK, InputError

#: Options of the R/C fits that the power-law fit does not take.
_NOT_WITH = (("sensor_lag", "--sensor-lag"), ("dead_time", "--dead-time"), ("case", "--case"),
             ("calibrate", "--calibrate"))


def exponent_option(text):
    """The value of ``--exponent``: a plain number or a fraction ("1/3"), 0 .. 1; None if not
    given."""
    from ..physics.convection import EXPONENT_RANGE
    if text is None:
        return None
    lo, hi = EXPONENT_RANGE
    s = str(text).strip()
    try:
        if "/" in s:
            p, q = s.split("/", 1)
            n = float(p) / float(q)
        else:
            n = float(s)
    except (ValueError, ZeroDivisionError):
        n = math.nan
    if not (math.isfinite(n) and lo <= n <= hi):
        raise InputError(f"option --exponent {text}: not a power-law exponent. Allowed: a "
                         f"number {lo:g} .. {hi:g} or a fraction, e.g. 0.25 (laminar natural "
                         'convection of air) or "1/3" (turbulent); leave it out to fit it.')
    return n


def predictions(fit, T_amb, area, *, setpoint=None, power=None, rated_power=None):
    """Steady temperature at ``power`` and the power to hold ``setpoint`` [K] of the fitted
    law: ``P = A a dT^(1+n)`` at equilibrium, so ``dT = (P / (A a))^(1/(1+n))``.  SI."""
    a, n = fit["coefficient"], fit["exponent"]
    out = {}
    if power is not None and power > 0:
        out["power_W"] = float(power)
        out["steady_temperature_K"] = float(T_amb + (power / (area * a)) ** (1.0 / (1.0 + n)))
    if setpoint is not None:
        need = area * a * abs(setpoint - T_amb) ** (1.0 + n)
        out["setpoint_K"] = float(setpoint)
        out["power_at_setpoint_W"] = float(need)
        if rated_power:
            out["duty_at_setpoint"] = float(need / rated_power)
    return out


def cmd_fit_power_law(args, power, rated, ambient, temps, repair) -> int:
    """Run ``fdwall fit --model power-law`` (options already parsed by ``cmd_fit``)."""
    import numpy as np

    from ..analyses.logs import read_log
    from ..analyses.lumped import fit_power_law_loss
    from ..errors import InputError as LibInputError
    for attr, opt in _NOT_WITH:
        if getattr(args, attr, None):
            raise InputError(f"option {opt} does not go with --model power-law (the power-law "
                             "fit has no sensor model and no case comparison yet). Allowed: "
                             "--model one-node or two-node for it, or leave it out.")
    if args.area is None:
        raise InputError("--model power-law needs --area AREA, the area of the film the body "
                         'loses its heat through, e.g. --area "1.2 m2".')
    area = common.quantity(args.area, "area", "--area", positive=True)
    C = (None if args.heat_capacity is None
         else common.quantity(args.heat_capacity, "heat_capacity", "--heat-capacity",
                              positive=True))
    n_given = exponent_option(args.exponent)
    setpoint = (None if args.setpoint is None
                else common.quantity(args.setpoint, "temperature", "--setpoint"))
    at_power = (None if args.at_power is None
                else common.quantity(args.at_power, "power", "--at-power"))
    try:
        log = read_log(args.log, time=args.time, temperature=temps, power=power,
                       ambient=ambient, duty=args.duty, state=args.state, rated_power=rated,
                       time_zone=args.time_zone, repair=repair)
        fit = fit_power_law_loss(log["t_s"], log["T_K"], log["T_amb_K"], area=area,
                                 power=log["P_W"], heat_capacity=C, exponent=n_given)
    except LibInputError as exc:
        msg = str(exc)
        if "heat_capacity" in msg:
            msg = msg.replace("give heat_capacity [J/K]", 'give --heat-capacity (e.g. "45 kJ/K")')
        raise InputError(msg) from None
    warns = [f"log repaired: {r}" for r in log["repairs"]]
    for k in fit["fitted"]:
        se = fit["stderr"].get(k, math.nan)
        v = fit[k]
        if not (math.isfinite(se) and se <= 0.5 * abs(v)) and k != "T0_K":
            warns.append(f"{k} is poorly determined by this log (standard error {se:.3g} for "
                         f"{v:.4g}): a longer log, or one with more temperature change, helps")
    Ta = float(np.mean(log["T_amb_K"]))
    full = rated if rated else float(np.max(log["P_W"]))
    pred = predictions(fit, Ta, area, setpoint=setpoint,
                       power=at_power if at_power is not None else full,
                       rated_power=full if full > 0 else None)
    if pred.get("duty_at_setpoint", 0.0) > 1.0:
        warns.append(f"holding {args.setpoint} needs {pred['duty_at_setpoint']:.2f} of the "
                     f"heater's {full:.4g} W: more than it can give")
    stem = Path(args.log).stem
    outdir = common.output_dir(args, stem)
    h5 = outdir / f"{stem}-fit.h5"
    summary = {"model": "power-law", "coefficient": fit["coefficient"],
               "coefficient_unit": fit["coefficient_unit"], "exponent": fit["exponent"],
               "C_J_per_K": fit["C_J_per_K"], "T0_K": fit["T0_K"], "rms_K": fit["rms_K"],
               "n": fit["n_points"], "n_eff": fit["n_eff"],
               "lag1_autocorrelation": fit["lag1_autocorrelation"], "area_m2": area,
               "fitted": ",".join(fit["fitted"]),
               **{f"{k}_stderr": v for k, v in fit["stderr"].items()}}
    if log["start"]:
        summary["log_start_utc"] = log["start"]
    notes = ["model power-law: C dT/dt = P - A a |T - T_amb|^n (T - T_amb), the loss of the "
             "case-file convection model power_law (coefficient a, exponent n)",
             "a, n and C are lumped values of the whole body at the temperatures of the log; "
             "a film that also radiates makes the fitted n larger than the convective one"]
    if C is not None:
        notes.append(f"heat capacity held at {C:.5g} J/K (--heat-capacity)")
    if n_given is not None:
        notes.append(f"exponent held at {n_given:.4g} (--exponent)")
    groups = {
        "inputs": {"log": str(args.log), "time": args.time, "temperature": ",".join(temps),
                   "power": str(args.power), "duty": str(args.duty), "state": str(args.state),
                   "rated_power": str(args.rated_power), "ambient": str(args.ambient),
                   "model": "power-law", "area": str(args.area),
                   "heat_capacity": str(args.heat_capacity), "exponent": str(args.exponent),
                   "time_zone": str(args.time_zone), "repair": ",".join(repair) or "none"},
        "summary": summary,
        "tables": {"log": {"time_s": log["t_s"], "row": log["rows"], "T_K": log["T_K"],
                           "model_K": fit["model_K"], "P_W": log["P_W"],
                           "T_amb_K": log["T_amb_K"], "residual_K": fit["residual_K"]}},
        "predictions": pred,
        "warnings": {"items": warns or ["none"]},
        "repairs": {"items": log["repairs"] or ["none"]},
        "references": {"items": [
            "scipy.optimize.least_squares over scipy.integrate.solve_ivp (LSODA), power and "
            "ambient held from each log row to the next",
            "standard errors from the Jacobian with the residual variance on an effective "
            "sample size n(1-r1)/(1+r1) (lag-1 autocorrelation r1 of the residuals)"]},
        "notes": {"items": notes},
    }
    png = outdir / f"{stem}-fit.png"
    plots = []
    if not args.no_plots:
        from ..report.fitplot import plot_fit
        label = f"power-law fit, n = {fit['exponent']:.3g}"
        try:
            outdir.mkdir(parents=True, exist_ok=True)
            plots.append(plot_fit(log["t_s"], log["T_K"], fit["model_K"], log["P_W"], png,
                                  title=f"{stem}: {label}, residual RMS {fit['rms_K']:.3g} K",
                                  model_label=label, T_amb_K=log["T_amb_K"]))
        except OSError as exc:
            raise common.WriteError(f"cannot write the plot '{png}': "
                                    f"{exc.strerror or exc}. Choose another folder with "
                                    "--out DIR.") from None
    files = common.write_analysis(args, h5, groups, kind="fit", case_name=stem)
    files[1:1] = plots
    for w in warns:
        common.warn(w)
    if args.json:
        print(common.dumps({**summary, "stderr": fit["stderr"], "predictions": pred,
                            "warnings": warns, "repairs": log["repairs"], "files": files}))
    elif not args.quiet:
        print(_text(args, fit, pred, area, files), end="")
    return EXIT_OK


def _text(args, fit, pred, area, files) -> str:
    se = fit["stderr"]
    n = fit["exponent"]

    def pm(k, fmt=".5g"):
        return f"{fit[k]:{fmt}}" + (f" +/- {se[k]:.2g}" if k in se else " (held)")

    L = [f"power-law fit of '{args.log}'",
         f"  coefficient a    {pm('coefficient')} {fit['coefficient_unit']}",
         f"  exponent n       {pm('exponent', '.4g')}",
         f"  C                {pm('C_J_per_K')} J/K",
         f"  film             h = {fit['coefficient']:.4g} |T - T_amb|^{n:.3g} W/m2/K over "
         f"{area:.4g} m2",
         f"  residual RMS {fit['rms_K']:.3g} K over {fit['n_points']} rows (lag-1 "
         f"autocorrelation {fit['lag1_autocorrelation']:.2f}, effective samples "
         f"{fit['n_eff']:.0f})",
         "  as a case-file film (when all the loss leaves through this area): "
         "[convection] model = \"power_law\", coefficient = "
         f"\"{fit['coefficient']:.4g} W/(m2 K^{1.0 + n:.4g})\", exponent = {n:.4g}"]
    if "steady_temperature_K" in pred:
        L.append(f"  steady temperature at {pred['power_W']:.4g} W: "
                 f"{pred['steady_temperature_K'] - 273.15:.1f} degC")
    if "power_at_setpoint_W" in pred:
        L.append(f"  at setpoint {args.setpoint}: loss {pred['power_at_setpoint_W']:.4g} W"
                 + (f", duty {pred['duty_at_setpoint']:.3f}" if "duty_at_setpoint" in pred
                    else ""))
    L.append("\nFiles written:")
    L += [f"  {f}" for f in files]
    return "\n".join(L) + "\n"
