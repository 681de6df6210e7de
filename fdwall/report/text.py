"""Plain-text reports: run summary, steady state, case description, material tables.

Every number printed carries its unit.  Temperatures are shown in degC (inputs and results stay
in kelvin inside), energies in kWh and MJ, powers in W or kW, times in s, min or h, depths in mm.
Only ASCII is used so the text prints on any console.
"""
from __future__ import annotations

import math
import textwrap

import numpy as np

from ..solver import native

__all__ = [
    "format_summary", "format_steady", "format_case", "format_material_list", "format_material",
    "layer_peaks", "TOUCH_CAUTION", "KELVIN_OFFSET",
]

KELVIN_OFFSET = 273.15  # T[degC] = T[K] - 273.15

TOUCH_CAUTION = (
    "Caution: skin/touch temperatures here are an engineering estimate; confirm them by "
    "measurement on the real equipment, and follow local codes, the applicable product-safety "
    "standard and licensed professional practice.")

WIDTH = 92  # wrap width of free text [characters]


# --------------------------------------------------------------------------- number formats

def degc(T):
    """Temperature [K] -> [degC] (number or array)."""
    return np.asarray(T, dtype=float) - KELVIN_OFFSET if np.ndim(T) else float(T) - KELVIN_OFFSET


def fmt_temp(T: float) -> str:
    """A temperature [K] as text in degC, e.g. '198.1 degC'."""
    if T is None or not math.isfinite(T):
        return "n/a"
    return f"{float(T) - KELVIN_OFFSET:.1f} degC"


def fmt_time(t: float) -> str:
    """A time [s] in a readable unit: s, min or h (labelled)."""
    if t is None or not math.isfinite(t):
        return "n/a"
    t = float(t)
    if abs(t) >= 3600.0:
        return f"{t / 3600.0:.3f} h"
    if abs(t) >= 60.0:
        return f"{t / 60.0:.2f} min"
    return f"{t:.1f} s"


def fmt_energy(E: float) -> str:
    """An energy [J] as 'x.xxx kWh  (y.yyy MJ)'."""
    return f"{E / 3.6e6:10.4f} kWh  {E / 1e6:10.4f} MJ"


def fmt_power(P: float) -> str:
    """A power [W] as text in W or kW (labelled)."""
    if not math.isfinite(P):
        return "n/a"
    if abs(P) >= 1e4:
        return f"{P / 1e3:.2f} kW"
    return f"{P:.1f} W"


def _power_scale(values):
    """(divisor, unit) for a column of powers [W]: kW when any magnitude reaches 10 kW."""
    v = np.asarray(values, dtype=float)
    v = v[np.isfinite(v)]
    if v.size and np.max(np.abs(v)) >= 1e4:
        return 1e3, "kW"
    return 1.0, "W"


def _table(header, units, rows, indent="  ", align=None):
    """Aligned columns: a header line, a units line, then rows.  First column left-aligned."""
    cols = len(header)
    align = align or (["<"] + [">"] * (cols - 1))
    cells = [list(map(str, header)), list(map(str, units))] + [list(map(str, r)) for r in rows]
    w = [max(len(r[c]) for r in cells) for c in range(cols)]
    out = []
    for r in cells:
        out.append(indent + "  ".join(f"{r[c]:{align[c]}{w[c]}}" for c in range(cols)).rstrip())
    return out


def _wrap(text, indent="  "):
    return textwrap.fill(text, WIDTH, initial_indent=indent, subsequent_indent=indent,
                         break_long_words=False, break_on_hyphens=False)


def _heading(title):
    return ["", title, "-" * len(title)]


# --------------------------------------------------------------------------- helpers on results

def layer_peaks(result):
    """Highest temperature reached in each layer during a run.

    Returns
    -------
    list of dict
        One per layer: ``wall`` (index), ``wall_name``, ``layer`` (index), ``label``,
        ``material`` (Material), ``T_max_K`` [K], ``t_max_K`` (service limit [K] or None).
    """
    out = []
    for j, w in enumerate(solved_walls(result.system, result.case)):
        m = result.system.meshes[j]
        T = result.wall_T(j)
        for i, (layer, (a, b)) in enumerate(zip(w.layers, m.layer_nodes)):
            out.append({
                "wall": j, "wall_name": w.name, "layer": i, "label": layer.label,
                "material": layer.material, "T_max_K": float(np.nanmax(T[:, a:b + 1])),
                "t_max_K": getattr(layer.material, "t_max", None),
            })
    return out


def solved_walls(system, case=None) -> list:
    """The 1-D walls actually solved, in result order (a bridged wall appears twice: its clear
    path and its bridge path '<name>~bridge'); falls back to the case's walls."""
    w = list(getattr(system, "walls", None) or [])
    return w if w else list((case or system.case).wall_list)


def _is_outer(name: str) -> bool:
    return name.endswith(":outer")


def _event_where(ev, wall=None) -> str:
    """Where an event watches: 'outer face', 'interface after layer N (label)', 'x mm deep'."""
    if ev.at == "outer":
        return "outer face"
    if ev.at == "inner":
        return "inner face"
    if ev.at.startswith("interface:"):
        n = ev.at.split(":", 1)[1]
        label = ""
        try:
            label = f" ({wall.layers[int(n) - 1].label})" if wall is not None else ""
        except (ValueError, IndexError, AttributeError):
            pass
        return f"interface after layer {n}{label}"
    return f"{ev.depth * 1e3:.1f} mm deep"


def _case_wall_name(case, j) -> str:
    walls = case.wall_list
    return walls[j].name if 0 <= j < len(walls) else f"wall {j}"


def _case_wall(case, j):
    walls = case.wall_list
    return walls[j] if 0 <= j < len(walls) else None


def _speaks_of_skin(text: str) -> bool:
    t = text.lower()
    return any(w in t for w in ("skin", "touch", "outer", "surface"))


# --------------------------------------------------------------------------- run summary

def run_status_text(result) -> str:
    """One line for the state of a run: "complete", "INCOMPLETE: interrupted (SIGINT)" (or
    SIGTERM; "(stop requested)" when an observer, not a signal, stopped it), or
    "INCOMPLETE (stopped early)" for a run that failed to converge or was implausible."""
    if result.complete:
        return "complete"
    if getattr(result, "status", "") == "interrupted":
        msg = result.message or ""
        names = [n for n in ("SIGINT", "SIGTERM") if n in msg]
        return f"INCOMPLETE: interrupted ({names[0] if names else 'stop requested'})"
    return "INCOMPLETE (stopped early)"


def format_summary(result) -> str:
    """Plain-text summary of a transient run (and of its steady state, if attached).

    Parameters
    ----------
    result : fdwall.result.Result
        A run; ``result.steady`` (a SteadyResult) is reported too when set.

    Returns
    -------
    str
        Aligned columns; temperatures in [degC], heat flows in [W] or [kW], energies in
        [kWh] and [MJ], film coefficients in [W/m2/K], times in [s], [min] or [h].
    """
    case, sysm = result.case, result.system
    names = result.face_names
    L = []
    title = f"fdwall run summary: case '{case.name}'"
    L += [title, "=" * len(title)]
    L.append(f"  status            {run_status_text(result)}")
    L.append(f"  simulated time    {fmt_time(float(result.times[-1]))}  "
             f"({float(result.times[-1]):.0f} s of {case.run.duration:.0f} s asked)")
    L.append(f"  walls             {len(case.wall_list)}"
             + ("  (enclosure with chamber)" if case.is_enclosure else "  (single wall)"))
    if not result.complete and result.message:
        L.append(_wrap(result.message, "  "))

    # faces
    L += _heading("Faces (end of run; heat in = into the wall, positive)")
    q_end = result.face_flow[-1]
    sc, pu = _power_scale(q_end)
    rows = []
    for f, n in enumerate(names):
        T = result.face_T[:, f]
        hc, hr = float(result.h_conv[-1, f]), float(result.h_rad[-1, f])
        rows.append([n, f"{degc(T[-1]):.1f}", f"{degc(np.nanmax(T)):.1f}",
                     f"{q_end[f] / sc:.1f}", f"{hc:.2f}", f"{hr:.2f}", f"{hc + hr:.2f}"])
    L += _table(["face", "T end", "T max", "heat in", "h conv", "h rad", "h conv+rad"],
                ["", "[degC]", "[degC]", f"[{pu}]", "[W/m2/K]", "[W/m2/K]", "[W/m2/K]"], rows)
    if case.is_enclosure:
        L.append("  (inner faces exchange heat with the chamber; film coefficients there are to "
                 "the chamber air)")

    # skin temperature with its caution
    outer = [f for f, n in enumerate(names) if _is_outer(n)]
    if outer:
        L += _heading("Skin (outer face) temperature")
        for f in outer:
            T = result.face_T[:, f]
            k = int(np.nanargmax(T))
            L.append(f"  {names[f]}: max {fmt_temp(float(T[k]))} at t = "
                     f"{fmt_time(float(result.times[k]))}; at end {fmt_temp(float(T[-1]))}")
        L.append(_wrap(TOUCH_CAUTION, "  "))

    # chamber
    if sysm.has_chamber:
        Tc = result.chamber_T
        L += _heading("Chamber")
        L.append(f"  chamber air/contents: end {fmt_temp(float(Tc[-1]))}, max "
                 f"{fmt_temp(float(np.nanmax(Tc)))}")
        if np.any(result.heater_power > 0):
            L.append(f"  heater power: end {fmt_power(float(result.heater_power[-1]))}, "
                     f"max {fmt_power(float(np.nanmax(result.heater_power)))}, "
                     f"mean {fmt_power(_mean_power(result))}")
    elif np.any(result.heater_power > 0):
        L += _heading("Heater")
        L.append(f"  heater power: end {fmt_power(float(result.heater_power[-1]))}, "
                 f"max {fmt_power(float(np.nanmax(result.heater_power)))}, "
                 f"mean {fmt_power(_mean_power(result))}")

    # interfaces
    L += _heading("Interfaces (between layers, inner to outer)")
    rows = []
    for j, w in enumerate(solved_walls(sysm, case)):
        Ti = result.interface_T(j)
        for i in range(len(w.layers) - 1):
            rows.append([w.name, f"{w.layers[i].label} | {w.layers[i + 1].label}",
                         f"{degc(Ti[-1, i]):.1f}", f"{degc(np.nanmax(Ti[:, i])):.1f}"])
    if rows:
        L += _table(["wall", "interface", "T end", "T max"], ["", "", "[degC]", "[degC]"], rows,
                    align=["<", "<", ">", ">"])
    else:
        L.append("  (single-layer walls: no interfaces)")

    # layer peaks vs service limits
    L += _heading("Layers: highest temperature vs maximum service temperature")
    rows = []
    for p in layer_peaks(result):
        lim = p["t_max_K"]
        flag = "" if lim is None or p["T_max_K"] <= lim else "OVER LIMIT"
        rows.append([p["wall_name"], p["label"], f"{degc(p['T_max_K']):.1f}",
                     "-" if lim is None else f"{degc(lim):.0f}", flag])
    L += _table(["wall", "layer", "T max", "limit", ""], ["", "", "[degC]", "[degC]", ""], rows,
                align=["<", "<", ">", ">", "<"])

    # energy ledger
    L += _heading("Energy (from start to end of run)")
    for f, n in enumerate(names):
        src = "from outside" if bool(sysm.external[f]) else "from chamber"
        L.append(f"  heat in through {n:<28s} ({src:12s}) {fmt_energy(float(result.face_energy[-1, f]))}")
    st_l = result.stored_layers[-1]
    for n, v in zip(sysm.layer_names, st_l):
        L.append(f"  stored in layer {n:<43s} {fmt_energy(float(v))}")
    if sysm.has_chamber:
        L.append(f"  stored in chamber contents{'':33s} {fmt_energy(float(result.stored_chamber[-1]))}")
    L.append(f"  stored, total{'':46s} {fmt_energy(float(result.stored[-1]))}")
    L.append(f"  heater energy{'':46s} {fmt_energy(float(result.heater_energy[-1]))}")
    if sysm.has_chamber:
        L.append(f"  chamber loss to ambient (leakage, extra UA){'':16s} "
                 f"{fmt_energy(float(result.loss_energy[-1]))}")
    L.append(f"  net heat in from outside{'':35s} {fmt_energy(float(result.heat_in[-1]))}")
    res = float(result.residual[-1])
    L.append(f"  energy residual (in - stored)     {res:.3e} J   relative "
             f"{result.relative_residual:.2e} [-]")

    # events
    if case.run.watch:
        L += _heading("Events (first crossings)")
        rows = []
        for e, (ev, (name, (up, down))) in enumerate(zip(case.run.watch, result.events.items())):
            wname = _case_wall_name(case, ev.wall)
            rows.append([name, f"{wname}, {_event_where(ev, _case_wall(case, ev.wall))}", f"{degc(ev.temperature):.1f}",
                         fmt_time(up) if math.isfinite(up) else "not reached",
                         fmt_time(down) if math.isfinite(down) else "not reached"])
        L += _table(["event", "where", "threshold", "rising at", "falling at"],
                    ["", "", "[degC]", "", ""], rows, align=["<", "<", ">", ">", ">"])
        if any(_speaks_of_skin(r[0] + " " + r[1]) for r in rows):
            L.append(_wrap(TOUCH_CAUTION, "  "))

    # bridges, box factor and warnings from the core's summary
    summ = result.summary()
    if summ.get("bridges"):
        L += _heading("Thermal bridges (parallel paths)")
        for wname, b in summ["bridges"].items():
            L.append(_wrap(
                f"wall {wname}: the bridge carries "
                f"{100 * b.get('bridge_share_of_outer_heat_loss', float('nan')):.1f} % of the "
                f"outer heat loss; outer face at end: bridge "
                f"{fmt_temp(b.get('bridge_outer_T_final_K', float('nan')))}, clear wall "
                f"{fmt_temp(b.get('clear_outer_T_final_K', float('nan')))}"))
        L.append(_wrap(TOUCH_CAUTION, "  "))
    if summ.get("box_edge_corner_area_factor"):
        L.append("")
        fac = summ['box_edge_corner_area_factor']
        L.append(_wrap(f"box edges and corners (conduction shape factors): the slab walls' "
                       f"areas are multiplied by {fac:.3f} [-], i.e. edges and corners add "
                       f"{100 * (fac - 1):.1f} % to the heat the walls conduct and store"))
    if case.is_enclosure:
        L += _enclosure_lines(result)
    warns = list(summ.get("warnings") or [])
    if warns:
        L += _heading("Warnings")
        for w in warns:
            L.append(textwrap.fill(w, WIDTH, initial_indent="  - ", subsequent_indent="    ",
                                   break_long_words=False, break_on_hyphens=False))

    # solver
    s = result.stats
    L += _heading("Solver")
    L.append(f"  steps accepted {s.get('accepted_steps', 0)}, rejected {s.get('rejected_steps', 0)}; "
             f"Newton iterations {s.get('newton_iterations', 0)}, failures "
             f"{s.get('newton_failures', 0)}")
    L.append(f"  step size {s.get('min_step_s', 0.0):.3g} s to {s.get('max_step_s', 0.0):.3g} s; "
             f"tolerance {s.get('tolerance_K', 0.0):.3g} K; {s.get('nodes', 0)} unknowns; "
             f"wall-clock {s.get('wall_time_s', 0.0):.2f} s")

    L += _accuracy_lines(result)
    if result.steady is not None:
        L += _steady_lines(result.steady, case, "Steady state (boundary conditions at t = "
                           f"{fmt_time(result.steady.time)})")
    return "\n".join(L) + "\n"


def _accuracy_lines(result) -> list:
    """The "Accuracy" section: the spatial error estimate and the contract margin
    (:mod:`fdwall.solver.accuracy`); nothing when the run made no estimate."""
    est = getattr(result, "error_estimate", None)
    if est is None:
        return []
    L = _heading("Accuracy (spatial error estimate)")
    ok = est.get("meets_contract")
    if ok is None:
        L.append("  not estimated")
    else:
        L.append(_wrap(f"contract: every temperature within max(0.5 % of its largest change so "
                       f"far, 0.05 K) of the converged answer -- "
                       f"{'met' if ok else 'NOT met'} (margin {est['margin']:.2f}: the largest "
                       f"estimated error over its allowance; at most 1 meets it)"))
        L.append(_wrap(f"largest estimated error {est['max_error_K']:.3g} K; cells per layer "
                       + "; ".join(", ".join(str(c) for c in w) for w in est.get("cells", []))
                       + f"; refined {est.get('refinements', 0)} time(s); "
                       f"{est.get('extra_runs', 0)} extra run(s), "
                       f"{est.get('extra_wall_time_s', 0.0):.2f} s"))
        rows = [(p["point"], f"{p['max_error_K']:.3g}", fmt_time(p["at_s"]), f"{p['margin']:.2f}")
                for p in est.get("points", [])]
        if rows:
            L += _table(("point", "est. error", "worst at", "margin"), ("", "K", "", "-"), rows)
        sw = est.get("switching")
        if sw is not None:
            L.append(_wrap(f"on/off control: first switch-off at {fmt_time(sw['first_switch_off_s'])}"
                           f", estimated error {sw['error_s']:.3g} s (margin {sw['margin']:.2f}; "
                           "allowed max(0.5 % of its time, 1 s))"))
    for n in est.get("notes", []):
        L.append(textwrap.fill(n, WIDTH, initial_indent="  - ", subsequent_indent="    ",
                               break_long_words=False, break_on_hyphens=False))
    return L


def _enclosure_lines(result) -> list:
    """Warm-up, hold duty, steady duty and where the heater energy went (enclosures)."""
    s = getattr(result, "enclosure", None)
    if s is None:   # the report computes nothing: the analysis is made by whoever ran the case
        return _heading("Heating") + [_wrap(
            "(not computed for this result: fdwall.analyses.summarise_enclosure(result) gives "
            "warm-up, hold duty, steady duty and where the heater energy went; set it as "
            "result.enclosure to have it here, as fdwall run does)")]
    if isinstance(s, str):
        return _heading("Heating") + [_wrap(f"(enclosure analysis not available: {s})")]
    L = _heading("Heating")
    sp = s.get("setpoint_K")
    if sp is not None and math.isfinite(sp):
        wu = s.get("warm_up_s", float("nan"))
        L.append(f"  setpoint {fmt_temp(sp)}; warm-up to it "
                 + (fmt_time(wu) if math.isfinite(wu) else "not reached in the run"))
        hd = s.get("hold_duty", float("nan"))
        win = s.get("hold_window_s")
        if math.isfinite(hd) and win:
            L.append(f"  mean duty while holding ({fmt_time(win[0])} to {fmt_time(win[1])}): "
                     f"{100 * hd:.1f} %")
    sd = s.get("steady_duty", float("nan"))
    if sd is not None and math.isfinite(sd):
        L.append(f"  steady state: duty {100 * sd:.1f} %, loss {fmt_power(s.get('steady_loss_W', float('nan')))}"
                 + ("" if s.get("steady_reachable", True) else " (setpoint NOT reachable at full power)"))
    e = s.get("energy") or {}
    if e:
        rows = []
        for wname, w in (e.get("walls") or {}).items():
            rows.append([wname, fmt_energy(w.get("stored_J", 0.0)),
                         fmt_energy(w.get("outer_loss_J", 0.0))])
        rows.append(["chamber contents", fmt_energy(e.get("chamber_stored_J", 0.0)), ""])
        rows.append(["leakage and extra UA", "", fmt_energy(e.get("leakage_loss_J", 0.0))])
        L.append(f"  heater energy {fmt_energy(e.get('heater_J', 0.0))}; where it went:")
        L += _table(["", "stored", "lost outside"], ["", "", ""], rows, indent="    ",
                    align=["<", ">", ">"])
    return L


def _mean_power(result) -> float:
    t = float(result.times[-1])
    return float(result.heater_energy[-1]) / t if t > 0 else 0.0


# --------------------------------------------------------------------------- steady state

def _steady_lines(st, case, title):
    sysm = st.system
    names = list(sysm.face_names)
    L = _heading(title)
    sc, pu = _power_scale(st.face_flow)
    rows = []
    for f, n in enumerate(names):
        hc, hr = float(st.h_conv[f]), float(st.h_rad[f])
        rows.append([n, f"{degc(st.face_T[f]):.1f}", f"{st.face_flow[f] / sc:.1f}",
                     f"{hc:.2f}", f"{hr:.2f}", f"{hc + hr:.2f}"])
    L += _table(["face", "T", "heat in", "h conv", "h rad", "h conv+rad"],
                ["", "[degC]", f"[{pu}]", "[W/m2/K]", "[W/m2/K]", "[W/m2/K]"], rows)
    rows = []
    for j, w in enumerate(solved_walls(sysm, case)):
        Ti = st.interface_T(j)
        for i in range(len(w.layers) - 1):
            rows.append([w.name, f"{w.layers[i].label} | {w.layers[i + 1].label}",
                         f"{degc(Ti[i]):.1f}"])
    if rows:
        L.append("")
        L += _table(["wall", "interface", "T"], ["", "", "[degC]"], rows, align=["<", "<", ">"])
    outer = [f for f, n in enumerate(names) if _is_outer(n)]
    if outer:
        L.append("")
        for f in outer:
            L.append(f"  skin temperature {names[f]}: {fmt_temp(float(st.face_T[f]))}")
        L.append(_wrap(TOUCH_CAUTION, "  "))
    L.append("")
    if sysm.has_chamber:
        L.append(f"  chamber: {fmt_temp(float(st.T[-1]))}; loss to ambient "
                 f"{fmt_power(float(st.chamber_loss))}")
    if case.heater is not None:
        enabled = True
        try:
            enabled = float(case.control.power_on(st.time)) > 0.5
        except Exception:  # pragma: no cover - enable always a Schedule in valid cases
            pass
        if not enabled:
            note = "; the heater is switched off at this time (enable schedule)"
        elif not st.reachable:
            note = "; SETPOINT NOT REACHABLE: even full heater power cannot hold it"
        else:
            note = ""
        L.append(_wrap(f"heater power {fmt_power(float(st.heater_power))}, duty "
                       f"{st.duty:.3f} [-]{note}"))
    loss = -float(np.sum(st.face_flow[outer])) if outer else 0.0
    L.append(f"  heat leaving through the outer faces {fmt_power(loss)}; balance "
             f"{st.balance:.3e} W (should be ~0)")
    return L


def format_steady(steady, case) -> str:
    """Plain-text table of a steady state: face and interface temperatures [degC], heat flows
    [W] or [kW], film coefficients [W/m2/K], heater power and duty."""
    title = f"fdwall steady state: case '{case.name}'"
    L = [title, "=" * len(title)]
    L += _steady_lines(steady, case, f"Boundary conditions at t = {fmt_time(steady.time)}")
    return "\n".join(L) + "\n"


# --------------------------------------------------------------------------- case description

def _sched_text(s, unit="K") -> str:
    """Describe a schedule: a constant value, or its range and knot count."""
    if s is None:
        return "-"
    vals = np.asarray(s.values, dtype=float)

    def one(v):
        if unit == "K":
            return f"{v - KELVIN_OFFSET:.1f} degC"
        if unit == "W":
            return fmt_power(v)
        return f"{v:g} {unit}"
    if len(set(vals.tolist())) == 1:
        return one(vals[0])
    return (f"{one(vals.min())} .. {one(vals.max())} (schedule, {len(vals)} points to "
            f"t = {fmt_time(max(s.times))})")


def power_law_text(c) -> str:
    """``power law h = a |dT|^n`` of a power-law Convection, with the units of a."""
    n = c.exponent
    text = (f"power law h = {c.coefficient:.4g} |dT|^{n:.4g} W/m2/K (coefficient "
            f"{c.coefficient:.4g} W/(m2 K^{1.0 + n:.4g}), exponent {n:.4g})")
    if getattr(c, "multiplier", 1.0) != 1.0:
        text += f" x {c.multiplier:g}"
    return text


def _conv_text(c) -> str:
    if c is None:
        return ""
    if isinstance(c, (int, float)):
        return f"h = {float(c):.2f} W/m2/K"
    kind = getattr(c, "kind", type(c).__name__)
    if kind == "fixed" and getattr(c, "h_fixed", None) is not None:
        return f"h = {c.h_fixed:.2f} W/m2/K"
    if kind == "power_law":
        return power_law_text(c)
    bits = []
    for attr, unit in (("height", "m"), ("char_length", "m"), ("diameter", "m"),
                       ("length", "m")):
        v = getattr(c, attr, None)
        if v:
            bits.append(f"{attr.replace('_', ' ')} {v:g} {unit}")
    if getattr(c, "speed", 0.0):
        bits.append(f"wind {c.speed:g} m/s")
    if getattr(c, "facing", None):
        bits.append(f"facing {c.facing}")
    if getattr(c, "tilt_deg", None) is not None:
        bits.append(f"tilt {c.tilt_deg:g} deg")
    return f"correlation '{kind.replace('_', ' ')}'" + (f" ({', '.join(bits)})" if bits else "")


def _eps_text(e) -> str:
    if e is None:
        return ""
    if isinstance(e, (int, float)):
        return f"emissivity {float(e):.2f}"
    return f"emissivity {min(e.values):.2f}..{max(e.values):.2f} (table vs temperature)"


def _face_text(face) -> str:
    if face.fixed_temperature is not None:
        return f"held at {_sched_text(face.fixed_temperature)}"
    parts = []
    if face.convection is not None:
        parts.append(f"convection {_conv_text(face.convection)} to air at {_sched_text(face.fluid_temperature)}")
    if face.emissivity is not None:
        sur = face.surroundings_temperature if face.surroundings_temperature is not None else face.fluid_temperature
        parts.append(f"radiation, {_eps_text(face.emissivity)}, to surroundings at {_sched_text(sur)}")
    if face.heat_flux is not None:
        parts.append(f"imposed flux {_sched_text(face.heat_flux, 'W/m2')} into the wall")
    return "; ".join(parts) if parts else "adiabatic (no heat flow)"


def _layer_resistance(wall, i, k) -> float:
    """Conduction resistance of layer ``i`` of ``wall`` with conductivity ``k`` [K/W]."""
    r = wall.radii()
    r1, r2 = float(r[i]), float(r[i + 1])
    if wall.shape == "slab":
        return (r2 - r1) / (k * wall.area)
    if wall.shape == "cylinder":
        return math.log(r2 / r1) / (2 * math.pi * k * wall.length)
    return (1.0 / r1 - 1.0 / r2) / (4 * math.pi * k)


def format_case(case, system=None, warnings=()) -> str:
    """Short description of a case: walls, layers (thickness [mm], mesh nodes, conductivity
    [W/m/K] and R-value at 20 degC), faces, chamber, heater, run settings, and warnings."""
    T20 = 293.15
    title = f"fdwall case '{case.name}'"
    L = [title, "=" * len(title)]
    kind = "enclosure with a chamber node" if case.is_enclosure else "single wall"
    L.append(f"  kind              {kind}, {len(case.wall_list)} wall(s)")
    r = case.run
    L.append(f"  run               {fmt_time(r.duration)} simulated, tolerance {r.tolerance:g} K, "
             f"outputs every {fmt_time(r.output_every or r.duration / 200.0)}")
    init = np.asarray(r.start_temperature, dtype=float)
    L.append("  initial           " + (fmt_temp(float(init)) if init.ndim == 0 else
                                      f"profile of {init.size} values, {fmt_temp(float(init.min()))}"
                                      f" .. {fmt_temp(float(init.max()))}"))
    if system is not None:
        L.append(f"  unknowns          {system.n_unknowns} (mesh nodes"
                 + (" + chamber)" if system.has_chamber else ")"))
    for j, w in enumerate(case.wall_list):
        if w.shape == "slab":
            geo = f"slab, area {w.area:g} m2"
        elif w.shape == "cylinder":
            geo = f"cylinder, inner radius {w.inner_radius * 1e3:.1f} mm, length {w.length:g} m"
        else:
            geo = f"sphere, inner radius {w.inner_radius * 1e3:.1f} mm"
        L += _heading(f"Wall {j} '{w.name}': {geo}, {w.thickness * 1e3:.1f} mm thick")
        mesh = None
        if system is not None:
            jj = system.chain_of(j) if hasattr(system, "chain_of") else j
            mesh = system.meshes[jj]
        rows = []
        R_tot = 0.0
        slab = w.shape == "slab"
        for i, layer in enumerate(w.layers):
            k = float(layer.material.k(T20))
            R = _layer_resistance(w, i, k)
            R_tot += R
            nodes = "-"
            if mesh is not None:
                a, b = mesh.layer_nodes[i]
                nodes = str(b - a + 1)
            tmax = getattr(layer.material, "t_max", None)
            lab = layer.label if layer.label == layer.material.name else \
                f"{layer.label} ({layer.material.name})"
            row = [str(i), lab, f"{layer.thickness * 1e3:.1f}",
                   nodes, f"{k:.4g}", f"{R:.4g}"]
            if slab:
                row.append(f"{R * w.area:.4g}")
            row.append("-" if tmax is None else f"{tmax - KELVIN_OFFSET:.0f}")
            rows.append(row)
            if i < len(w.layers) - 1 and w.interface_resistance[i] > 0:
                Rc = w.interface_resistance[i] / w.area_at(float(w.radii()[i + 1]))
                R_tot += Rc
                row = ["", "contact resistance", "-", "", "", f"{Rc:.4g}"]
                if slab:
                    row.append(f"{w.interface_resistance[i]:.4g}")
                row.append("")
                rows.append(row)
        tot = ["", "total", f"{w.thickness * 1e3:.1f}",
               str(mesh.n) if mesh is not None else "-", "", f"{R_tot:.4g}"]
        if slab:
            tot.append(f"{R_tot * w.area:.4g}")
        tot.append("")
        rows.append(tot)
        head = ["#", "layer (material)", "thickness", "nodes", "k at 20 degC", "R"]
        units = ["", "", "[mm]", "", "[W/m/K]", "[K/W]"]
        if slab:
            head.append("R-value")
            units.append("[m2.K/W]")
        head.append("limit")
        units.append("[degC]")
        L += _table(head, units, rows, align=["<", "<"] + [">"] * (len(head) - 2))
        if case.is_enclosure:
            ew = case.walls[j]
            inner = f"to the chamber: convection {_conv_text(ew.inner_face_convection)}"
            if ew.inner_face_emissivity is not None:
                inner += f"; radiation, {_eps_text(ew.inner_face_emissivity)}"
            L.append(_wrap(f"inner face: {inner}", "  "))
            L.append(_wrap(f"outer face: {_face_text(ew.outer)}", "  "))
        else:
            L.append(_wrap(f"inner face: {_face_text(case.inner)}", "  "))
            L.append(_wrap(f"outer face: {_face_text(case.outer)}", "  "))
        if case.is_enclosure and getattr(case.walls[j], "bridge", None) is not None:
            b = case.walls[j].bridge
            L.append(_wrap(f"thermal bridge: {b.area_fraction * 100:.1f} % of the area has "
                           f"{b.material.name} in place of layer(s) "
                           f"{', '.join(str(i) for i in b.replaces_layers)} (parallel paths)"))
        L.append(_wrap("(#: layer index as in the case file, from 0; nodes: mesh nodes in the "
                       "layer, shared with its neighbours at interfaces; k and R at 20 degC, "
                       "conduction only, without surface films)"))
    if case.chamber is not None:
        ch = case.chamber
        cap = ch.heat_capacity
        cap_t = (f"{float(cap) / 1e3:.3g} kJ/K" if not hasattr(cap, "values") else
                 f"{min(cap.values) / 1e3:.3g}..{max(cap.values) / 1e3:.3g} kJ/K (table vs T)")
        L += _heading("Chamber")
        L.append(_wrap(f"capacity {cap_t}; ambient {_sched_text(ch.room_temperature)}; leakage "
                       f"{ch.leakage:.3g} m3/s ({_leak_ua(ch):.3g} W/K with room air at the start); extra UA "
                       f"{ch.extra_loss:.3g} W/K"))
        if getattr(ch, "inner_dimensions", None):
            fac = getattr(system, "area_factor", None) if system is not None else None
            L.append(_wrap(f"box {' x '.join(f'{x:g}' for x in ch.inner_dimensions)} m (inner width x depth "
                           "x height): edges and corners add conduction"
                           + (f", slab areas x {fac:.3f} [-]" if fac else "")))
    if case.heater is not None:
        hz = case.heater
        c = case.control
        L += _heading("Heater and control")
        where = {"chamber": "in the chamber", "inner": f"on the inner face of wall {hz.wall}",
                 "interface": f"behind layer {hz.after_layer + 1} of wall {hz.wall}"}[hz.placement]
        L.append(f"  heater {_sched_text(hz.power, 'W')} {where}")
        ctl = f"  control '{c.mode}'"
        if c.setpoint is not None and c.mode in ("thermostat", "pid"):
            ctl += f", setpoint {_sched_text(c.setpoint)}, sensor {c.sensor}"
        if c.mode == "thermostat":
            ctl += f", band {c.band:g} K"
        if c.mode in ("fixed", "duty"):
            ctl += f", duty {_sched_text(c.duty, '[-]')}"
        L.append(_wrap(ctl.strip()))
    if r.watch:
        L += _heading("Events watched")
        for e, ev in enumerate(r.watch):
            wname = _case_wall_name(case, ev.wall)
            L.append(f"  {ev.name or f'event{e + 1}'}: {wname}, "
                     f"{_event_where(ev, _case_wall(case, ev.wall))} crossing "
                     f"{fmt_temp(ev.temperature)}")
        if any(_speaks_of_skin(f"{ev.name} {ev.at}") for ev in r.watch):
            L.append(_wrap(TOUCH_CAUTION, "  "))
    L += _heading("Warnings")
    if warnings:
        for w in warnings:
            L.append(textwrap.fill(w, WIDTH, initial_indent="  - ", subsequent_indent="    ",
                                   break_long_words=False, break_on_hyphens=False))
    else:
        L.append("  none")
    return "\n".join(L) + "\n"


# --------------------------------------------------------------------------- materials

LIST_TEMPS_C = (20.0, 200.0, 500.0)


def material_k_in_range(m, T_C: float):
    """k [W/m/K] of material ``m`` at ``T_C`` [degC], or None where that temperature lies above
    the maximum service temperature or more than 10 K outside the data range."""
    T = T_C + KELVIN_OFFSET
    if m.t_max is not None and T > m.t_max + 1e-9:
        return None
    Tk, _ = m.k.knots()
    lo, hi = float(Tk[0]), float(Tk[-1])
    if T < lo - 10.0 or T > hi + 10.0:
        return None
    return float(m.k(T))


def format_material_list(materials) -> str:
    """Table of materials: name, category, density [kg/m3], k [W/m/K] at 20/200/500 degC, and
    maximum service temperature [degC]."""
    rows = []
    for m in materials:
        ks = [material_k_in_range(m, t) for t in LIST_TEMPS_C]
        rows.append([m.name, m.category or "-", f"{m.rho:.4g}"]
                    + ["-" if k is None else f"{k:.4g}" for k in ks]
                    + ["-" if m.t_max is None else f"{m.t_max - KELVIN_OFFSET:.0f}"])
    head = ["material", "category", "rho"] + [f"k {t:.0f} degC" for t in LIST_TEMPS_C] + ["t_max"]
    units = ["", "", "[kg/m3]"] + ["[W/m/K]"] * len(LIST_TEMPS_C) + ["[degC]"]
    L = [f"fdwall bundled materials ({len(rows)})", ""]
    L += _table(head, units, rows, align=["<", "<"] + [">"] * (len(head) - 2))
    L.append("")
    L.append(_wrap("'-': above the maximum service temperature or outside the data range. "
                   "Typical values of the material class (demo/handbook data), not of a product: "
                   "for design use the data sheet of the product installed. "
                   "Show one material's tables with: fdwall materials NAME", ""))
    return "\n".join(L) + "\n"


def material_table(m, max_rows: int = 25):
    """Rows (T [K], k [W/m/K], cp [J/kg/K]) for showing a material.  Constant properties give
    a short grid; very fine grids (polynomials) are resampled to ``max_rows`` points."""
    T, k, cp = m.tables()
    lo, hi = float(T[0]), float(T[-1])
    if lo <= 1.0 + 1e-9 and hi >= 5999.0:  # both constant
        T = np.array([293.15])
    else:
        lo = max(lo, 273.15) if lo <= 1.0 + 1e-9 else lo
        hi = min(hi, max(lo + 100.0, (m.t_max or hi))) if hi >= 5999.0 else hi
        T = T[(T >= lo) & (T <= hi)]
        if T.size < 2 or T.size > max_rows:
            T = np.linspace(lo, hi, min(max_rows, 11 if T.size < 2 else max_rows))
    return T, np.asarray(m.k(T), dtype=float), np.asarray(m.cp(T), dtype=float)


def format_material(m) -> str:
    """One material: density [kg/m3], emissivity [-], service limit [degC], source, notes, and
    its conductivity [W/m/K] and specific heat [J/kg/K] against temperature [degC]."""
    title = f"material '{m.name}'"
    L = [title, "=" * len(title)]
    L.append(f"  category      {m.category or '-'}")
    L.append(f"  density       {m.rho:.0f} kg/m3")
    L.append(f"  emissivity    {m.emissivity:.2f} [-]")
    L.append("  t_max         " + ("not rated" if m.t_max is None else
                                    f"{m.t_max - KELVIN_OFFSET:.0f} degC ({m.t_max:.2f} K)"))
    if m.source:
        L.append(textwrap.fill(m.source, WIDTH, initial_indent="  source        ",
                               subsequent_indent=" " * 16, break_long_words=False))
    if m.notes:
        L.append(textwrap.fill(m.notes, WIDTH, initial_indent="  notes         ",
                               subsequent_indent=" " * 16, break_long_words=False))
    T, k, cp = material_table(m)
    rows = [[f"{t - KELVIN_OFFSET:.1f}", f"{t:.2f}", f"{a:.4g}", f"{b:.4g}"]
            for t, a, b in zip(T, k, cp)]
    L.append("")
    L += _table(["T", "T", "k", "cp"], ["[degC]", "[K]", "[W/m/K]", "[J/kg/K]"], rows,
                align=[">"] * 4)
    L.append("")
    L.append("  (linear between rows; held at the end values outside them)")
    return "\n".join(L) + "\n"


def _leak_ua(ch):
    """Leakage of a chamber as a conductance [W/K], room air at t = 0 (as the solver uses)."""
    return float(ch.leakage) * native.rho_cp(float(ch.room_temperature(0.0)), 101325.0)
