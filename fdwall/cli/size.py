"""``fdwall size CASE``: insulation thickness of one layer (of a wall) meeting targets."""
from __future__ import annotations

import difflib
import math
import re
from pathlib import Path

from ..errors import ConvergenceError
from ..errors import InputError as LibInputError
from ..materials import MaterialError, get_material, list_materials
from ..report.sizing_plot import plot_tradeoff
from ..sizing import (
    Conditions,
    Economics,
    Energy,
    LossTarget,
    PeakSkinTarget,
    ServiceTarget,
    SkinTarget,
    WarmUpTarget,
    size_candidates,
    size_heater_at,
    size_layer,
    touch_target,
    wall_index,
)
from . import common
from .common import EXIT_OK, InputError
from .interrupts import run_guarded


def _loss(text, geometry):
    m = re.fullmatch(r"\s*([0-9.eE+-]+)\s*(W/m2|W/m|W)\s*", text or "")
    want = {"slab": "W/m2", "cylinder": "W/m", "sphere": "W"}[geometry]
    if not m or m.group(2) != want:
        raise InputError(f"--loss-limit: {text!r} is not a heat loss for a {geometry} wall; "
                         f"write it in {want}, e.g. \"50 {want}\".")
    try:
        v = float(m.group(1))
    except ValueError:
        v = math.nan
    if not (math.isfinite(v) and v > 0):
        raise InputError(f"--loss-limit: {text!r} must be a positive heat loss in {want}.")
    return v, want


#: Named stock presets for --stock (common practice, no source: pipe sections and slabs sold
#: in half-inch steps to 4 in, then whole inches).
STOCK_PRESETS = {"inch": "0.5 in,1 in,1.5 in,2 in,2.5 in,3 in,3.5 in,4 in,5 in,6 in,7 in,"
                         "8 in,9 in,10 in,12 in"}


_PRICE_UNITS = {"J": 1.0, "kJ": 1e3, "MJ": 1e6, "GJ": 1e9, "Wh": 3600.0, "kWh": 3.6e6,
                "MWh": 3.6e9}


def _price(text):
    """``"0.12 /kWh"`` or ``"0.12 per kWh"`` -> money per J."""
    m = re.fullmatch(r"\s*([0-9.eE+-]+)\s*(?:/|per\s+)\s*([kMG]?J|[kM]?Wh)\s*", text or "")
    try:
        v = float(m.group(1)) if m else -1.0
    except ValueError:
        v = -1.0
    if not m or v < 0:
        raise InputError(f"--energy-price: {text!r} is not an energy price; write money per "
                         "energy unit, e.g. \"0.12 /kWh\" or \"9 per GJ\" (units: "
                         f"{', '.join(_PRICE_UNITS)}).")
    return v / _PRICE_UNITS[m.group(2)]


def _efficiency(text):
    """``"0.85"`` or ``"85 %"`` -> fraction in (0, 1]."""
    m = re.fullmatch(r"\s*([0-9.eE+-]+)\s*(%?)\s*", text or "")
    try:
        v = float(m.group(1)) / (100.0 if m.group(2) else 1.0) if m else -1.0
    except ValueError:
        v = -1.0
    if not 0 < v <= 1:
        raise InputError(f"--supply-efficiency: {text!r} is not an efficiency; give a fraction "
                         "in (0, 1] or a percentage, e.g. \"0.85\" or \"85 %\".")
    return v


def _energy(args):
    if args.hours_per_year is None:
        if args.energy_price is not None or args.supply_efficiency is not None:
            raise InputError("--energy-price and --supply-efficiency need --hours-per-year "
                             "TIME (operating hours per year, e.g. \"8000 h\").")
        return None
    hours = common.quantity(args.hours_per_year, "time", "--hours-per-year", positive=True)
    if hours > 8784 * 3600.0 * (1 + 1e-9):
        raise InputError(f"--hours-per-year: {args.hours_per_year!r} is more than a year "
                         "(8784 h); give operating hours per year, e.g. \"8000 h\".")
    eta = _efficiency(args.supply_efficiency) if args.supply_efficiency is not None else 1.0
    price = _price(args.energy_price) if args.energy_price is not None else None
    # lazy like the other commands: keeps the start-up of every command light
    return Energy(hours=hours, efficiency=eta, price=price)


def _rate(text):
    """``"5 %"`` or ``"0.05"`` -> fraction per year."""
    m = re.fullmatch(r"\s*([0-9.eE+-]+)\s*(%?)\s*", text or "")
    try:
        v = float(m.group(1)) / (100.0 if m.group(2) else 1.0) if m else math.nan
    except ValueError:
        v = math.nan
    if not (math.isfinite(v) and -1 < v < 1):
        raise InputError(f"--discount-rate: {text!r} is not a discount rate; give a fraction "
                         "or a percentage per year, e.g. \"0.05\" or \"5 %\".")
    return v


def _years(text):
    try:
        v = float(text)
    except (TypeError, ValueError):
        v = math.nan
    if not (math.isfinite(v) and v > 0):
        raise InputError(f"--years: {text!r} is not a number of years; give a positive "
                         "number, e.g. \"10\".")
    return v


def _installed(text):
    """``"450 /m3"`` (per volume) or ``"50 mm=18, 100 mm=27"`` (per thickness)."""
    t = (text or "").strip()
    m = re.fullmatch(r"([0-9.eE+-]+)\s*(?:/|per\s+)\s*m3", t)
    if m:
        try:
            v = float(m.group(1))
        except ValueError:
            v = -1.0
        if v < 0:
            raise InputError(f"--installed-cost: {text!r} must not be negative.")
        return {"per_volume": v}
    pairs = []
    for item in t.split(","):
        if "=" not in item:
            raise InputError(f"--installed-cost: {text!r} is neither a cost per volume "
                             "(\"450 /m3\") nor a list of thickness=cost entries "
                             "(\"50 mm=18, 100 mm=27\", cost per m2, or per m of pipe).")
        a, b = item.split("=", 1)
        L = common.quantity(a.strip(), "length", "--installed-cost", positive=True)
        try:
            c = float(b)
        except ValueError:
            c = -1.0
        if not c >= 0:
            raise InputError(f"--installed-cost: cost {b.strip()!r} in {text!r} is not a "
                             "non-negative number.")
        pairs.append((L, c))
    if any(q[0] <= p[0] for p, q in zip(pairs, pairs[1:])):
        raise InputError(f"--installed-cost: the thicknesses of {text!r} must increase.")
    return {"per_thickness": tuple(pairs)}


def _economics(args, energy):
    given = [o for o, v in (("--installed-cost", args.installed_cost), ("--years", args.years),
                            ("--discount-rate", args.discount_rate)) if v is not None]
    if not given:
        return None
    if args.installed_cost is None or args.years is None:
        raise InputError("the economic thickness needs --installed-cost COST and --years N "
                         "(and optionally --discount-rate RATE); given: " + ", ".join(given)
                         + ".")
    if energy is None or energy.price is None:
        raise InputError("the economic thickness needs the energy cost: give --hours-per-year "
                         "TIME and --energy-price PRICE too.")
    rate = _rate(args.discount_rate) if args.discount_rate is not None else 0.0
    return Economics(years=_years(args.years), rate=rate, **_installed(args.installed_cost))


def _factor(text):
    try:
        v = float(text)
    except (TypeError, ValueError):
        v = math.nan
    if not (math.isfinite(v) and 0 < v <= 100):
        raise InputError(f"--conductivity-factor: {text!r} is not a factor; give a positive "
                         "number (1 = as the case, e.g. \"1.1\" for 10 % ageing allowance).")
    return v


def _conditions(args, which):
    amb = getattr(args, f"{which}_ambient")
    wind = getattr(args, f"{which}_wind")
    return Conditions(
        ambient=common.quantity(amb, "temperature", f"--{which}-ambient")
        if amb is not None else None,
        wind=common.quantity(wind, "speed", f"--{which}-wind", nonnegative=True)
        if wind is not None else None)


def _material(name, case, option):
    own = {la.material.name: la.material for w in case.wall_list for la in w.layers}
    if name in own:
        return own[name]
    try:
        return get_material(name)
    except MaterialError:
        near = difflib.get_close_matches(name, list(own) + list_materials(), n=3, cutoff=0.5)
        raise InputError(f"{option}: unknown material {name!r}; it is neither in the case nor "
                         "in the bundled library" + (f" (did you mean "
                                                     f"{', '.join(repr(n) for n in near)}?)"
                                                     if near else "")
                         + ". fdwall.materials.list_materials() lists the bundled names.") \
            from None


def _layer(args, wall):
    try:
        return int(args.layer)
    except ValueError:
        pass
    names = [la.material.name for la in wall.layers]
    labels = [la.label for la in wall.layers]
    for lst in (names, labels):
        if args.layer in lst:
            return lst.index(args.layer)
    near = difflib.get_close_matches(args.layer, names + labels)
    raise InputError(f"--layer: no layer of material {args.layer!r} in '{args.case}'"
                     f"{' wall ' + repr(wall.name) if args.wall else ''}; layers are {names}"
                     + (f" (did you mean {near[0]}?)" if near else "") + ".")


def cmd_size(args) -> int:
    """``fdwall size``: SIGINT / SIGTERM while it searches stop it at once, write nothing (a
    search cut short has no answer) and exit 130 / 143."""
    return run_guarded(lambda guard: _size(args, guard), "fdwall size", args.case,
                       "sizing results")


def _size(args, guard) -> int:
    case, warns = common.load(args.case)
    for w in warns:
        common.warn(w)
    try:
        wi = wall_index(case, args.wall)
    except LibInputError as exc:
        raise InputError(f"'{args.case}': {exc}. Give --wall NAME for an enclosure case.") \
            from None
    wall = case.wall if wi is None else case.walls[wi].wall
    layer = _layer(args, wall)
    if not 0 <= layer < len(wall.layers):
        raise InputError(f"--layer: layer {layer} does not exist in '{args.case}'; the wall "
                         f"has layers 0..{len(wall.layers) - 1} (counted from the inner face).")
    skin_c, loss_c = _conditions(args, "skin"), _conditions(args, "loss")
    targets = []
    if args.transient and not skin_c.is_default:
        raise InputError("--skin-ambient/--skin-wind apply to steady skin and touch targets; "
                         "with --transient they are judged over the case's own profile.")
    if args.skin_limit:
        lim = common.quantity(args.skin_limit, "temperature", "--skin-limit")
        if args.transient:
            targets.append(PeakSkinTarget(lim))
        else:
            targets.append(SkinTarget(lim, conditions=skin_c))
    elif args.transient and args.contact_time is None:
        raise InputError("--transient judges the --skin-limit (and the touch target) over the "
                         "case's run; give --skin-limit TEMPERATURE or --contact-time TIME "
                         "--surface CLASS.")
    if args.loss_limit:
        v, u = _loss(args.loss_limit, wall.shape)
        targets.append(LossTarget(v, unit=u, conditions=loss_c))
    if (args.contact_time is None) != (args.surface is None):
        raise InputError("--contact-time TIME and --surface CLASS go together (the touch "
                         "target); give both or neither.")
    if args.contact_time is not None:
        tc = common.quantity(args.contact_time, "time", "--contact-time", positive=True)
        try:
            tt = touch_target(args.surface, tc, conditions=skin_c)
        except LibInputError as exc:
            raise InputError(str(exc)) from None
        # with --transient the touch threshold is judged against the peak skin of the run
        targets.append(PeakSkinTarget(tt.limit, name="touch") if args.transient else tt)
    if args.service_limits:
        targets.append(ServiceTarget())
    wlim = None
    if args.warm_up_limit:
        wlim = common.quantity(args.warm_up_limit, "time", "--warm-up-limit", positive=True)
        if wi is None:
            raise InputError("--warm-up-limit applies to enclosures (the chamber warm-up); "
                             f"'{args.case}' is a single wall.")
        if not args.heater:
            targets.append(WarmUpTarget(wlim))
    if args.heater:
        if wi is None or case.heater is None:
            raise InputError(f"--heater sizes the heater of an enclosure; '{args.case}' is "
                             + ("a single wall." if wi is None else "an enclosure without a "
                                "heater."))
        if wlim is None:
            raise InputError("--heater needs --warm-up-limit TIME (the heater is sized to "
                             "reach the setpoint within it).")
    if not targets:
        raise InputError("give at least one target: --skin-limit TEMPERATURE, --loss-limit "
                         "VALUE, --contact-time TIME with --surface CLASS, --service-limits, "
                         "or --warm-up-limit TIME (enclosures).")
    step = stock = None
    if args.stock:
        text = STOCK_PRESETS.get(args.stock.strip().lower(), args.stock)
        stock = common.quantity_list(text, "length", "--stock", positive=True)
        if any(b <= a for a, b in zip(stock, stock[1:])):
            raise InputError(f"--stock: {args.stock!r} must list thicknesses in increasing "
                             "order, each once.")
    else:
        step = common.quantity(args.stock_step, "length", "--stock-step", positive=True)
    tmin = common.quantity(args.min_thickness, "length", "--min-thickness", positive=True)
    tmax = common.quantity(args.max_thickness, "length", "--max-thickness", positive=True)
    if tmin >= tmax:
        raise InputError(f"--min-thickness {args.min_thickness!r} must be below "
                         f"--max-thickness {args.max_thickness!r}.")
    kf = _factor(args.conductivity_factor) if args.conductivity_factor is not None else 1.0
    energy = _energy(args)
    econ = _economics(args, energy)
    mats = None
    if args.candidates:
        names = [n.strip() for n in args.candidates.split(",")]
        if not names or any(not n for n in names):
            raise InputError(f"--candidates: {args.candidates!r} is not a comma-separated list "
                             "of material names.")
        mats = [_material(n, case, "--candidates") for n in names]
    kw = dict(t_min=tmin, t_max=tmax, step=step, stock=stock, energy=energy, wall=wi,
              conductivity_factor=kf, economics=econ, progress=args.progress,
              skin_conditions=skin_c, loss_conditions=loss_c)
    cand_rows = None
    try:
        if mats is not None:
            cand_rows = size_candidates(case, layer, mats, targets, **kw)
            ok = [c for c in cand_rows if c["result"] is not None]
            if not ok:
                raise LibInputError("no candidate material meets the targets: " + "; ".join(
                    f"{c['material']}: {c['error']}" for c in cand_rows))
            key = ("total_cost" if econ is not None else
                   "cost_per_year" if energy is not None and energy.price is not None else
                   "thickness_m")
            def rank(c):
                v = c.get(key, math.nan)
                return (v if v is not None and math.isfinite(v) else math.inf,
                        c["thickness_m"])
            r = min(ok, key=rank)["result"]
        else:
            r = size_layer(case, layer, targets, **kw)
        heater = None
        if args.heater:
            heater = size_heater_at(case, layer, r.thickness_m, wlim, wall=wi,
                                    conductivity_factor=kf)
    except LibInputError as exc:
        raise InputError(f"'{args.case}': {exc}") from None
    except ConvergenceError as exc:
        raise common.Failure(f"'{args.case}': the solver failed for a trial thickness during "
                             f"the sizing: {exc}") from None
    d = r.to_dict()
    d.update({"case_file": str(args.case)})
    if cand_rows is not None:
        d["candidates"] = [{k: v for k, v in c.items() if k != "result"} for c in cand_rows]
    if heater is not None:
        d["heater"] = heater
    stem = Path(args.case).stem
    outdir = common.output_dir(args, stem)
    h5 = outdir / f"{stem}-size.h5"
    lunit = {"slab": "W/m2", "cylinder": "W/m"}.get(wall.shape, "W")
    inputs = {"layer": layer, "t_min_m": tmin, "t_max_m": tmax, "conductivity_factor": kf,
              "wall": r.wall or "", "material": r.material, "loss_unit": lunit,
              "stored_unit": {"W/m2": "J/m2", "W/m": "J/m"}.get(lunit, "J")}
    if energy:
        inputs.update({"hours_per_year_s": energy.hours, "supply_efficiency": energy.efficiency,
                       "energy_price_per_J": energy.price if energy.price is not None
                       else float("nan")})
    if econ:
        inputs.update({"years": econ.years, "discount_rate": econ.rate,
                       "pv_factor": econ.pv_factor})
    summary = {"thickness_m": r.thickness_m, "thickness_exact_m": r.thickness_exact_m,
               "transient_runs": r.runs}
    if r.economic:
        summary["economic_thickness_m"] = r.economic["thickness_m"]
    if heater:
        summary["heater_power_W"] = heater["power_W"]
    tables = {"tradeoff": r.table, "targets": {
        "name": [t["name"] for t in r.targets], "value": [t["value"] for t in r.targets],
        "limit": [t["limit"] for t in r.targets], "unit": [t["unit"] for t in r.targets],
        "verdict": [t["verdict"] for t in r.targets]},
        "feasible_m": {"low": [a for a, _ in r.feasible_m], "high": [b for _, b in r.feasible_m]}}
    if cand_rows is not None:
        tables["candidates"] = {
            "material": [c["material"] for c in cand_rows],
            "thickness_m": [c["thickness_m"] if c["thickness_m"] is not None else float("nan")
                            for c in cand_rows],
            "loss": [c.get("loss", float("nan")) for c in cand_rows]}
    with guard.writing():
        files = []
        if not args.no_plots:
            png = outdir / f"{stem}-size.png"
            outdir.mkdir(parents=True, exist_ok=True)
            what = f"layer {layer} ({r.material})" + (f" of wall '{r.wall}'" if r.wall else "")
            files.append(plot_tradeoff(d, png, f"{stem}: sizing {what}", lunit))
        files = common.write_analysis(args, h5, {
                "inputs": inputs, "summary": summary, "tables": tables,
                "warnings": {"items": r.warnings or ["none"]},
                "references": {"items": [
                    "grid bracket + scipy.optimize.brentq on the steady solve (and on runs of the "
                    "case for transient targets)",
                    "touch target: fdwall.safety.touch_limit (ISO 13732-1 table, from memory)",
                    "present value factor (1 - (1 + i)^-n) / i (engineering economics)"]},
                "notes": {"items": r.notes + ["service limits checked at the answer thickness "
                          "against each material's maximum service temperature"]}},
            kind="size", case_name=stem, caution=r.caution) + files
        d["files"] = files
        if args.json:
            print(common.dumps(d))
        elif not args.quiet:
            _print_text(args, r, d, layer, lunit, cand_rows, heater)
    return EXIT_OK


def _c(T):
    return f"{T - 273.15:.1f} degC" if T is not None and math.isfinite(T) else "-"


def _iface(layer, T, lim):
    if layer is None or layer < 0:
        return "-"
    return f"{layer}: {_c(T)} ({_c(lim)})" if lim is not None and math.isfinite(lim) else \
        f"{layer}: {_c(T)}"


def _print_text(args, r, d, layer, lunit, cand_rows, heater):
    where = f" of wall '{r.wall}'" if r.wall else ""
    print(f"Sizing layer {layer} ({r.material}){where} of '{args.case}'")
    print(f"  answer {r.thickness_m * 1000:.1f} mm (exact {r.thickness_exact_m * 1000:.2f}"
          " mm); meets all targets in " + ", ".join(
              f"{a * 1000:.1f}-{b * 1000:.1f} mm" for a, b in r.feasible_m))
    for w in r.warnings:
        print(f"  warning: {w}")
    for t in r.targets:
        cond = f" [{t['conditions']}]" if t.get("conditions") else ""
        if t["unit"] == "K":   # temperatures shown in degC, as case files write them
            print(f"  {t['name']}: {_c(t['value'])} (limit {_c(t['limit'])}) "
                  f"{t['verdict']}{cond}")
        elif t["unit"] == "s":
            v = t["value"]
            vs = f"{v / 3600:.3g} h" if v is not None and math.isfinite(v) else "not reached"
            print(f"  {t['name']}: {vs} (limit {t['limit'] / 3600:.3g} h) {t['verdict']}")
        else:
            print(f"  {t['name']}: {t['value']:.4g} {t['unit']} (limit {t['limit']:.4g}) "
                  f"{t['verdict']}{cond}")
    for n in r.notes:
        print(f"  note: {n}")
    tab = r.table
    ekey = next((k for k in tab if k.startswith("energy_J")), None)
    per = {"W/m2": "m2", "W/m": "m"}.get(lunit, "piece")
    head = (f"  {'thickness':>9}  {'skin':>10}  {'loss':>8}  {'stored MJ':>9}  "
            f"{'hottest layer face (limit)':>27}")
    if "skin_peak_K" in tab:
        head += f"  {'peak skin':>10}"
    if "warm_up_s" in tab:
        head += f"  {'warm-up':>8}"
    if ekey:
        head += f"  {'kWh/yr/' + per:>12}"
    if "cost_per_year" in tab:
        head += f"  {'cost/yr':>9}"
    if "total_cost" in tab:
        head += f"  {'installed':>9}  {'total':>9}"
    print(f"  trade-off (loss in {lunit}, stored energy per {per} above the start "
          "temperature):")
    print(head + "  pass")
    for i, x in enumerate(tab["thickness_m"]):
        line = (f"  {x * 1000:6.1f} mm  {_c(tab['skin_K'][i]):>10}  {tab['loss'][i]:8.4g}  "
                f"{tab['stored'][i] / 1e6:9.4g}  "
                f"{_iface(tab['interface_layer'][i], tab['interface_T_K'][i], tab['interface_limit_K'][i]):>27}")
        if "skin_peak_K" in tab:
            line += f"  {_c(tab['skin_peak_K'][i]):>10}"
        if "warm_up_s" in tab:
            wu = tab["warm_up_s"][i]
            line += f"  {(f'{wu / 3600:.3g} h' if math.isfinite(wu) else 'never'):>8}"
        if ekey:
            line += f"  {tab[ekey][i] / 3.6e6:12.4g}"
        if "cost_per_year" in tab:
            line += f"  {tab['cost_per_year'][i]:9.4g}"
        if "total_cost" in tab:
            line += f"  {tab['installed_cost'][i]:9.4g}  {tab['total_cost'][i]:9.4g}"
        print(line + ("  yes" if tab["all_pass"][i] else "  no"))
    if r.economic:
        e = r.economic
        print(f"  economic thickness {e['thickness_m'] * 1000:.1f} mm: total cost "
              f"{e['total_cost']:.4g} over {e['years']:g} years at {e['discount_rate'] * 100:g} %"
              f" (present value factor {e['pv_factor']:.4g}); "
              + ("meets" if e["meets_targets"] else "does NOT meet") + " the targets")
    if cand_rows:
        print("  candidates:")
        for c in cand_rows:
            if c["thickness_m"] is None:
                print(f"    {c['material']}: {c['error']}")
            else:
                extra = "".join(f", {k.replace('_', ' ')} {c[k]:.4g}" for k in
                                ("cost_per_year", "total_cost") if k in c)
                print(f"    {c['material']}: {c['thickness_m'] * 1000:.1f} mm, loss "
                      f"{c['loss']:.4g} {lunit}{extra}")
    if heater:
        print(f"  heater: {heater['power_W'] / 1000:.3g} kW rated reaches "
              f"{_c(heater['target_K'])} in {heater['warm_up_s'] / 3600:.3g} h (steady minimum "
              f"{heater['p_min_W'] / 1000:.3g} kW, {heater['n_trials']} runs)")
    print(f"  {r.caution}")
    print("Files written:\n  " + "\n  ".join(d["files"]))


def register(sub) -> None:
    """Add the ``size`` command."""
    p = sub.add_parser("size", help="insulation thickness meeting skin, loss, touch and warm-up targets")
    p.add_argument("case", metavar="CASE")
    p.add_argument("--layer", required=True, metavar="N|MATERIAL",
                   help="layer to size: index from 0 at the inner face, or material/label")
    p.add_argument("--skin-limit", metavar="TEMPERATURE",
                   help='target: skin temperature at or below, e.g. "50 degC" (steady; see '
                        '--transient)')
    p.add_argument("--loss-limit", metavar="VALUE",
                   help='target: heat loss at or below, "W/m2" (slab), "W/m" (pipe), "W" '
                        '(sphere)')
    p.add_argument("--contact-time", metavar="TIME",
                   help='touch target: contact time, e.g. "5 s" (with --surface)')
    p.add_argument("--surface", metavar="CLASS",
                   help="touch target: surface class of the outer face (with --contact-time)")
    p.add_argument("--hours-per-year", metavar="TIME",
                   help='operating hours per year for annual energy, e.g. "8000 h"')
    p.add_argument("--supply-efficiency", metavar="FRACTION",
                   help='efficiency of the heat supply, e.g. "0.85" or "85 %%" (default 1)')
    p.add_argument("--energy-price", metavar="PRICE",
                   help='price of supplied energy, money per energy unit, e.g. "0.12 /kWh"')
    p.add_argument("--stock-step", default="25 mm", metavar="LENGTH",
                   help='stock step when no --stock list is given (default "25 mm")')
    p.add_argument("--stock", metavar='"L1,L2,..."',
                   help='stock thicknesses, each with its unit, e.g. "1 in,1.5 in,2 in" or '
                        '"40 mm,50 mm,80 mm"; the preset "inch" is 0.5 in steps to 4 in, then '
                        'whole inches to 12 in')
    p.add_argument("--min-thickness", default="5 mm", metavar="LENGTH",
                   help='search range start (default "5 mm")')
    p.add_argument("--max-thickness", default="500 mm", metavar="LENGTH",
                   help='search range end (default "500 mm")')
    p.add_argument("--wall", metavar="NAME", help="enclosures: the wall whose layer is sized")
    p.add_argument("--candidates", metavar="M1,M2,...",
                   help="size the layer in each of these materials (library or case names)")
    p.add_argument("--transient", action="store_true",
                   help="judge --skin-limit and the touch target over the case's own run "
                        "(peak skin temperature)")
    p.add_argument("--warm-up-limit", metavar="TIME",
                   help='enclosures: chamber reaches its setpoint within TIME, e.g. "3 h"')
    p.add_argument("--service-limits", action="store_true",
                   help="target: every layer's hot face at or below its material's maximum "
                        "service temperature")
    p.add_argument("--heater", action="store_true",
                   help="enclosures: also size the heater for --warm-up-limit at the answer")
    p.add_argument("--skin-ambient", metavar="TEMPERATURE",
                   help="design ambient of the skin and touch targets (default the case's)")
    p.add_argument("--skin-wind", metavar="SPEED",
                   help='design wind of the skin and touch targets, e.g. "0 m/s" (still air)')
    p.add_argument("--loss-ambient", metavar="TEMPERATURE",
                   help="design ambient of the loss target and energy (e.g. the annual mean)")
    p.add_argument("--loss-wind", metavar="SPEED",
                   help="design wind of the loss target and energy")
    p.add_argument("--conductivity-factor", metavar="FACTOR",
                   help="design factor on the sized layer's conductivity, e.g. 1.1")
    p.add_argument("--installed-cost", metavar="COST",
                   help='installed cost: per volume "450 /m3" or per thickness '
                        '"50 mm=18,100 mm=27" (per m2, or per m of pipe)')
    p.add_argument("--years", metavar="N", help="economic thickness: years of operation")
    p.add_argument("--discount-rate", metavar="RATE",
                   help='economic thickness: discount rate per year, e.g. "5 %%" (default 0)')
    common.add_output_options(p)
    p.set_defaults(func=cmd_size)
