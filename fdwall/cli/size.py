"""``fdwall size CASE``: insulation thickness of one layer meeting steady targets."""
from __future__ import annotations

import re
from pathlib import Path

from . import common
from .common import EXIT_OK, InputError


def _loss(text, geometry):
    m = re.fullmatch(r"\s*([0-9.eE+-]+)\s*(W/m2|W/m|W)\s*", text or "")
    want = {"slab": "W/m2", "cylinder": "W/m", "sphere": "W"}[geometry]
    if not m or m.group(2) != want:
        raise InputError(f"--loss-limit: {text!r} is not a heat loss for a {geometry} wall; "
                         f"write it in {want}, e.g. \"50 {want}\".")
    return float(m.group(1)), want


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
    from ..sizing import Energy
    return Energy(hours=hours, efficiency=eta, price=price)


def cmd_size(args) -> int:
    from ..errors import InputError as LibInputError
    from ..sizing import LossTarget, SkinTarget, size_layer, touch_target
    case, warns = common.load(args.case)
    for w in warns:
        common.warn(w)
    if case.wall is None:
        raise InputError(f"'{args.case}': sizing enclosure walls is not built yet; give a "
                         "single-wall case.")
    try:
        layer = int(args.layer)
    except ValueError:
        names = [la.material.name for la in case.wall.layers]
        if args.layer not in names:
            import difflib
            near = difflib.get_close_matches(args.layer, names)
            raise InputError(f"--layer: no layer of material {args.layer!r} in '{args.case}'; "
                             f"layers are {names}" + (f" (did you mean {near[0]}?)" if near
                                                      else "") + ".") from None
        layer = names.index(args.layer)
    targets = []
    if args.skin_limit:
        targets.append(SkinTarget(common.quantity(args.skin_limit, "temperature",
                                                  "--skin-limit")))
    if args.loss_limit:
        v, u = _loss(args.loss_limit, case.wall.geometry)
        targets.append(LossTarget(v, unit=u))
    if (args.contact_time is None) != (args.surface is None):
        raise InputError("--contact-time TIME and --surface CLASS go together (the touch "
                         "target); give both or neither.")
    if args.contact_time is not None:
        tc = common.quantity(args.contact_time, "time", "--contact-time", positive=True)
        try:
            targets.append(touch_target(args.surface, tc))
        except LibInputError as exc:
            raise InputError(str(exc)) from None
    if not targets:
        raise InputError("give at least one target: --skin-limit TEMPERATURE, --loss-limit "
                         "VALUE, or --contact-time TIME with --surface CLASS.")
    step = stock = None
    if args.stock:
        stock = common.quantity_list(args.stock, "length", "--stock", positive=True)
    else:
        step = common.quantity(args.stock_step, "length", "--stock-step", positive=True)
    tmin = common.quantity(args.min_thickness, "length", "--min-thickness", positive=True)
    tmax = common.quantity(args.max_thickness, "length", "--max-thickness", positive=True)
    energy = _energy(args)
    try:
        r = size_layer(case, layer, targets, t_min=tmin, t_max=tmax, step=step, stock=stock,
                       energy=energy)
    except LibInputError as exc:
        raise InputError(f"'{args.case}': {exc}") from None
    d = r.to_dict()
    d.update({"case_file": str(args.case), "layer": layer})
    stem = Path(args.case).stem
    outdir = common.output_dir(args, stem)
    h5 = outdir / f"{stem}-size.h5"
    files = common.write_analysis(args, h5, {
            "inputs": {"layer": layer, "t_min_m": tmin, "t_max_m": tmax,
                       **({"hours_per_year_s": energy.hours,
                           "supply_efficiency": energy.efficiency,
                           "energy_price_per_J": energy.price if energy.price is not None
                           else float("nan")} if energy else {})},
            "summary": {"thickness_m": r.thickness_m, "thickness_exact_m": r.thickness_exact_m},
            "tables": {"tradeoff": r.table},
            "warnings": {"items": r.warnings or ["none"]},
            "references": {"items": ["grid bracket + scipy.optimize.brentq on the steady solve",
                           "touch target: fdwall.safety.touch_limit (ISO 13732-1 table, from "
                           "memory)"]},
            "notes": {"items": ["steady targets only; service limits checked at the answer thickness "
                      "against each material's maximum service temperature"]}},
        kind="size", case_name=stem, caution=r.caution)
    d["files"] = files
    if args.json:
        print(common.dumps(d))
    elif not args.quiet:
        print(f"Sizing layer {layer} of '{args.case}'")
        print(f"  answer {r.thickness_m * 1000:.1f} mm (exact {r.thickness_exact_m * 1000:.2f}"
              " mm)")
        for w in r.warnings:
            print(f"  warning: {w}")
        for t in r.targets:
            if t["unit"] == "K":   # temperatures shown in degC, as case files write them
                print(f"  {t['name']}: {t['value'] - 273.15:.1f} degC (limit "
                      f"{t['limit'] - 273.15:.1f} degC) {t['verdict']}")
            else:
                print(f"  {t['name']}: {t['value']:.4g} {t['unit']} (limit {t['limit']:.4g}) "
                      f"{t['verdict']}")
        ekey = next((k for k in r.table if k.startswith("energy_J")), None)
        if ekey:
            per = {"energy_J_per_m2": "m2", "energy_J_per_m": "m"}.get(ekey, "piece")
            lunit = {"m2": "W/m2", "m": "W/m"}.get(per, "W")
            print(f"  thickness  loss [{lunit}]  energy/yr [kWh/{per}]" +
                  ("  cost/yr" if "cost_per_year" in r.table else ""))
            for i, x in enumerate(r.table["thickness_m"]):
                line = (f"  {x * 1000:7.1f} mm  {r.table['loss'][i]:8.4g}  "
                        f"{r.table[ekey][i] / 3.6e6:10.4g}")
                if "cost_per_year" in r.table:
                    line += f"  {r.table['cost_per_year'][i]:9.4g}"
                print(line)
        print(f"  {r.caution}")
        print("Files written:\n  " + "\n  ".join(files))
    return EXIT_OK


def register(sub) -> None:
    """Add the ``size`` command."""
    p = sub.add_parser("size", help="insulation thickness meeting steady skin / loss targets")
    p.add_argument("case", metavar="CASE")
    p.add_argument("--layer", required=True, metavar="N|MATERIAL")
    p.add_argument("--skin-limit", metavar="TEMPERATURE")
    p.add_argument("--loss-limit", metavar="VALUE")
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
    p.add_argument("--stock-step", default="25 mm", metavar="LENGTH")
    p.add_argument("--stock", metavar='"L1,L2,..."')
    p.add_argument("--min-thickness", default="5 mm", metavar="LENGTH")
    p.add_argument("--max-thickness", default="500 mm", metavar="LENGTH")
    common.add_output_options(p)
    p.set_defaults(func=cmd_size)
