"""What a calculation report states besides the results: resolved inputs with units, the
materials and their data sources, the correlations and their references, and the assumptions
and limits of the 1-D model (edges, corners, bridges, Biot numbers), computed from a run.

Layer: analyses (reads the model objects and a Result; no files, no report code).  The
run stores this with ``fdwall run CASE --report`` (``/report_data`` of the result file); the
HTML report only presents it.  All numbers SI: [m], [K], [s], [W], [J], [W/m/K] ...
"""
from __future__ import annotations

import math

import numpy as np

__all__ = ["input_rows", "material_rows", "correlation_rows", "model_notes", "biot_rows",
           "calc_notes", "CORRELATION_REFERENCES"]

#: Convection kind -> the correlation and its published source.
CORRELATION_REFERENCES = {
    "fixed": "film coefficient as given (no correlation)",
    "vertical_plate": "natural convection, vertical plate: Churchill & Chu (1975), full range, "
                      "Int. J. Heat Mass Transfer 18, 1323",
    "horizontal_plate": "natural convection, horizontal plate: Lloyd & Moran (1974) and "
                        "McAdams (1954), upper/lower surface chosen from the sign of Ts - Tf",
    "tilted_plate": "natural convection, tilted plate: Churchill & Chu (1975) with g cos(tilt) "
                    "up to 60 deg, the horizontal-plate pair with g sin(tilt) beyond "
                    "(common practice after Raithby & Hollands)",
    "horizontal_cylinder": "natural convection, horizontal cylinder: Churchill & Chu (1975), "
                           "Int. J. Heat Mass Transfer 18, 1049",
    "vertical_cylinder": "natural convection, vertical cylinder: Churchill & Chu (1975) "
                         "vertical plate x the Popiel, Wojtkowiak & Bober (2007) curvature factor",
    "wind_plate": "forced convection, flat plate in parallel flow: laminar 0.664 Re^1/2 Pr^1/3, "
                  "mixed 0.037 Re^4/5 Pr^1/3 (Incropera et al., Fundamentals of Heat and Mass "
                  "Transfer, sec. 7.2)",
    "wind_cylinder": "forced convection, cylinder in cross-flow: Churchill & Bernstein (1977), "
                     "J. Heat Transfer 99, 300",
    "power_law": "power-law film coefficient h = a |T_face - T_fluid|^n with a and n as given "
                 "(the simplified natural-convection forms of air, McAdams 1954 and Holman, "
                 "Heat Transfer, table 7-2, are of this kind); no air properties",
}
MIXED_REFERENCE = ("natural and forced parts combined as (h_N^3 + h_F^3)^(1/3) (Churchill 1977; "
                   "Incropera et al. sec. 9.9)")
RADIATION_REFERENCE = ("grey diffuse radiation to large surroundings, Stefan-Boltzmann law "
                       "q = eps sigma (Ts^4 - Tr^4), sigma from CODATA 2018")
AIR_REFERENCE = ("air properties: Lemmon & Jacobsen (2004), Int. J. Thermophysics 25, 21 "
                 "(viscosity, conductivity); ideal gas (density, cp)")
CONDUCTION_REFERENCE = ("conduction: vertex-centred finite volumes, Kirchhoff-integral mean "
                        "conductivity between nodes, enthalpy-form heat capacity, TR-BDF2 time "
                        "steps with an embedded error estimate (second order in space and time)")


def _sched(s):
    """(first value, min, max, n points) of a Schedule or number (None -> NaNs)."""
    if s is None:
        return math.nan, math.nan, math.nan, 0
    vals = np.atleast_1d(np.asarray(getattr(s, "values", s), dtype=float))
    return float(vals[0]), float(vals.min()), float(vals.max()), int(vals.size)


def _row(section, quantity, value=math.nan, unit="", text="", value_max=math.nan):
    return {"section": section, "quantity": quantity, "value": float(value), "unit": unit,
            "text": text, "value_max": float(value_max)}


def _sched_rows(section, quantity, s, unit):
    v0, lo, hi, n = _sched(s)
    if n == 0:
        return []
    if lo == hi:
        return [_row(section, quantity, lo, unit)]
    return [_row(section, quantity, lo, unit, text=f"range of a table of {n} points",
                 value_max=hi)]


def _conv_kind(c):
    if c is None:
        return None
    if isinstance(c, (int, float)):
        return "fixed"
    return getattr(c, "kind", "fixed")


def _conv_rows(section, c, fixed_label="film coefficient"):
    """Rows of a film coefficient or a correlation with its lengths and speed."""
    if isinstance(c, (int, float)) or _conv_kind(c) == "fixed":
        h = float(c) if isinstance(c, (int, float)) else float(c.h_fixed)
        return [_row(section, fixed_label, h, "W/m2/K")]
    rows = [_row(section, "convection correlation", text=_conv_kind(c))]
    nat = getattr(c, "natural", None)
    pl = c if _conv_kind(c) == "power_law" else nat if _conv_kind(nat) == "power_law" else None
    if pl is not None:
        n = float(pl.exponent)
        rows.append(_row(section, "power-law coefficient a of h = a |dT|^n", pl.coefficient,
                         f"W/(m2 K^{1.0 + n:.4g})"))
        rows.append(_row(section, "power-law exponent n", n, ""))
    for attr, label in (("height", "height"), ("char_length", "length A/P"),
                        ("diameter", "diameter"), ("length", "length along the flow")):
        v = getattr(c, attr, None)
        if v:
            rows.append(_row(section, label, v, "m"))
    if getattr(c, "speed", 0.0):
        rows.append(_row(section, "wind speed", c.speed, "m/s"))
    if getattr(c, "multiplier", 1.0) != 1.0:
        rows.append(_row(section, "factor on the film coefficient", c.multiplier, ""))
    return rows


def _face_rows(section, face):
    rows = []
    if face.fixed_temperature is not None:
        return _sched_rows(section, "fixed surface temperature", face.fixed_temperature, "K")
    c = face.convection
    if c is not None:
        rows += _sched_rows(section, "fluid (air) temperature", face.fluid_temperature, "K")
        rows += _conv_rows(section, c)
    if face.emissivity is not None:
        rows += _sched_rows(section, "emissivity", face.emissivity, "")
        sur = face.surroundings_temperature if face.surroundings_temperature is not None else face.fluid_temperature
        rows += _sched_rows(section, "radiant surroundings temperature", sur, "K")
    if face.flux is not None:
        rows += _sched_rows(section, "imposed heat flux into the wall", face.flux, "W/m2")
    if not rows:
        rows.append(_row(section, "boundary", text="adiabatic (no heat flow)"))
    return rows


def _faces(case):
    """(wall index, wall, label, Face or None, inner film or None) per case face."""
    out = []
    if case.wall is not None:
        w = case.wall
        out += [(0, w, f"{w.name}:inner", case.inner, None), (0, w, f"{w.name}:outer",
                                                               case.outer, None)]
    else:
        for j, ew in enumerate(case.walls):
            out += [(j, ew.wall, f"{ew.wall.name}:inner", None, ew),
                    (j, ew.wall, f"{ew.wall.name}:outer", ew.outer, None)]
    return out


def input_rows(case, system) -> list:
    """The inputs as resolved, SI, one dict per quantity: ``section``, ``quantity``,
    ``value`` (NaN for texts), ``value_max`` (upper end of a schedule, else NaN), ``unit``
    (SI unit text, '' for numbers without unit) and ``text``."""
    r = case.run
    rows = [_row("run", "duration", r.duration, "s")]
    if np.ndim(r.start_temperature) == 0:
        rows.append(_row("run", "start temperature", float(r.start_temperature), "K"))
    else:
        rows.append(_row("run", "start temperature", text="node profile given"))
    rows.append(_row("run", "output interval", r.output_every
                     if r.output_every is not None else r.duration / 200.0, "s"))
    rows.append(_row("run", "local error tolerance per step", r.tolerance, "K"))
    if r.max_step is not None:
        rows.append(_row("run", "largest step", r.max_step, "s"))
    mesh_of = {w.name: m for w, m in zip(system.walls, system.meshes)}
    for j, w in enumerate(case.wall_list):
        sec = f"wall {w.name}"
        rows.append(_row(sec, "geometry", text=w.shape))
        if w.shape == "slab":
            rows.append(_row(sec, "area", w.area, "m2"))
        else:
            rows.append(_row(sec, "inner radius", w.inner_radius, "m"))
            if w.shape == "cylinder":
                rows.append(_row(sec, "length", w.length, "m"))
        rows.append(_row(sec, "total thickness", w.thickness, "m"))
        m = mesh_of.get(w.name)
        for i, layer in enumerate(w.layers):
            lab = f"layer {i + 1} ({layer.label})"
            rows.append(_row(sec, f"{lab} material", text=getattr(layer.material, "name", "")))
            rows.append(_row(sec, f"{lab} thickness", layer.thickness, "m"))
            if m is not None:
                a, b = m.layer_nodes[i]
                rows.append(_row(sec, f"{lab} cells", int(b) - int(a), ""))
        for i, rc in enumerate(w.interface_resistance):
            if rc:
                rows.append(_row(sec, f"contact resistance after layer {i + 1}", rc, "m2*K/W"))
        if w.refine != 1.0:
            rows.append(_row(sec, "mesh refinement factor", w.refine, ""))
        br = case.walls[j].bridge if case.is_enclosure else None
        if br is not None:
            rows.append(_row(sec, "bridge: share of the wall area", br.area_fraction, ""))
            rows.append(_row(sec, "bridge: material", text=getattr(br.material, "name", "")))
            rows.append(_row(sec, "bridge: replaces layers", text=", ".join(
                str(i + 1) for i in br.replaces_layers)))
    for j, w, name, face, ew in _faces(case):
        sec = f"face {name}"
        if face is not None:
            rows += _face_rows(sec, face)
        else:
            rows += _conv_rows(sec, ew.inner_h, "film coefficient to the chamber")
            if ew.inner_emissivity is not None:
                rows += _sched_rows(sec, "emissivity", ew.inner_emissivity, "")
    ch = case.chamber
    if ch is not None:
        cap = ch.capacity
        if isinstance(cap, (int, float)):
            rows.append(_row("chamber", "heat capacity of the contents", cap, "J/K"))
        else:
            rows += _sched_rows("chamber", "heat capacity of the contents", cap, "J/K")
        rows += _sched_rows("chamber", "room temperature", ch.room_temperature, "K")
        rows.append(_row("chamber", "leakage air flow", ch.leakage, "m3/s"))
        rows.append(_row("chamber", "further losses (conductance)", ch.extra_loss, "W/K"))
    hz = case.heater
    if hz is not None:
        rows += _sched_rows("heater", "rated power", hz.power, "W")
        rows.append(_row("heater", "placement", text=hz.location))
        rows.append(_row("heater", "supply / rated voltage", hz.voltage_ratio, ""))
        ctl = case.control
        rows.append(_row("control", "mode", text=ctl.mode))
        if ctl.mode in ("thermostat", "pid"):
            rows += _sched_rows("control", "setpoint", ctl.setpoint, "K")
            rows.append(_row("control", "sensor", text=ctl.sensor))
        if ctl.mode == "thermostat":
            rows.append(_row("control", "hysteresis band", ctl.band, "K"))
    return rows


def _k_cp(material, T):
    Tt, k, cp = material.tables()
    return float(np.interp(T, Tt, k)), float(np.interp(T, Tt, cp))


def material_rows(result) -> list:
    """One dict per material used: ``name``, ``category``, ``source``, ``rho_kg_m3``,
    conductivity and specific heat at 20 degC and at the highest temperature it reached
    (``k_20_W_mK``, ``k_top_W_mK``, ``cp_20_J_kgK``, ``cp_top_J_kgK``, ``T_top_K``),
    ``t_max_K`` (maximum service temperature, NaN when unknown) and ``emissivity``."""
    layers = [l for w in result.system.walls for l in w.layers]
    tops = result.layer_max_T()
    seen = {}
    for layer, top in zip(layers, tops):
        m = layer.material
        name = getattr(m, "name", "material")
        if name in seen:
            seen[name]["T_top_K"] = max(seen[name]["T_top_K"], top)
            continue
        seen[name] = {"m": m, "T_top_K": top}
    out = []
    for name, d in seen.items():
        m, top = d["m"], d["T_top_K"]
        k20, cp20 = _k_cp(m, 293.15)
        kt, cpt = _k_cp(m, top)
        out.append({"name": name, "category": getattr(m, "category", "") or "",
                    "source": getattr(m, "source", "") or "not given",
                    "rho_kg_m3": float(m.rho), "k_20_W_mK": k20, "cp_20_J_kgK": cp20,
                    "T_top_K": float(top), "k_top_W_mK": kt, "cp_top_J_kgK": cpt,
                    "t_max_K": float(m.t_max) if m.t_max is not None else math.nan,
                    "emissivity": float(m.emissivity) if getattr(m, "emissivity", None)
                    is not None else math.nan})
    return out


def correlation_rows(case) -> list:
    """One dict per face: ``face``, ``model`` (what sets its heat exchange) and
    ``reference`` (the correlation's published source)."""
    out = []
    for j, w, name, face, ew in _faces(case):
        if face is None:
            c, eps, fixed, flux = ew.inner_h, ew.inner_emissivity, None, None
        else:
            c, eps, fixed, flux = face.convection, face.emissivity, face.fixed_temperature, face.flux
        if fixed is not None:
            out.append({"face": name, "model": "fixed surface temperature",
                        "reference": "boundary condition as given"})
            continue
        kind = _conv_kind(c)
        if kind is not None:
            ref = CORRELATION_REFERENCES.get(kind, kind)
            if getattr(c, "natural", None) is not None:
                ref += "; natural part " + CORRELATION_REFERENCES.get(c.natural.kind, "") + \
                    "; " + MIXED_REFERENCE
            if kind not in ("fixed", "power_law"):
                ref += "; " + AIR_REFERENCE
            out.append({"face": name, "model": f"convection: {kind.replace('_', ' ')}",
                        "reference": ref})
        if eps is not None:
            out.append({"face": name, "model": "radiation", "reference": RADIATION_REFERENCE})
        if flux is not None:
            out.append({"face": name, "model": "imposed heat flux",
                        "reference": "boundary condition as given"})
        if kind is None and eps is None and flux is None:
            out.append({"face": name, "model": "adiabatic", "reference": "no heat flow"})
    return out


def _layer_R(wall, i, k) -> float:
    """Conduction resistance of layer ``i`` of ``wall`` with conductivity ``k`` [K/W]
    (slab L/(k A); cylinder ln(r2/r1)/(2 pi k L); sphere (1/r1 - 1/r2)/(4 pi k))."""
    r = wall.radii()
    r1, r2 = float(r[i]), float(r[i + 1])
    if wall.shape == "slab":
        return (r2 - r1) / (k * wall.area)
    if wall.shape == "cylinder":
        return math.log(r2 / r1) / (2 * math.pi * k * wall.length)
    return (1.0 / r1 - 1.0 / r2) / (4 * math.pi * k)


def biot_rows(result) -> list:
    """Per solved wall path at the end of the run: conduction resistance ``R_wall_K_per_W``
    (layers at their final mean temperature, contact resistances included), outer film
    coefficient ``h_outer_W_m2K`` (convection + linearised radiation), the Biot number
    ``biot`` = R_wall / R_film with R_film = 1/(h A_outer) [-] (NaN for a face at fixed
    temperature), and the lateral spreading length of the outer layer
    ``spread_m`` = sqrt(k t / (h + U_behind)) [m] (fin theory, Incropera et al. sec. 3.6),
    over which an edge, support or bridge disturbs the skin temperature."""
    sysm = result.system
    out = []
    for j, w in enumerate(sysm.walls):
        m = sysm.meshes[j]
        Tw = result.wall_T(j)[-1]
        Rs = []
        for i, layer in enumerate(w.layers):
            a, b = m.layer_nodes[i]
            k, _ = _k_cp(layer.material, float(np.mean(Tw[a:b + 1])))
            Rs.append(_layer_R(w, i, k))
        A_out = w.outer_area
        R_contact = sum(rc / w.area_at(w.radii()[i + 1]) for i, rc in enumerate(w.interface_resistance))
        R = float(sum(Rs) + R_contact)
        f = 2 * j + 1
        fixed = _outer_fixed(result.case, sysm, j)
        h = math.nan if fixed else float(result.h_conv[-1, f] + result.h_rad[-1, f])
        bi = math.nan if fixed else R * h * A_out
        spread = math.nan
        last = w.layers[-1]
        if not fixed and h > 0:
            k_last, _ = _k_cp(last.material, float(Tw[-1]))
            R_behind = (R - Rs[-1]) * A_out       # per unit outer area [m2 K/W]
            U_b = 1.0 / R_behind if R_behind > 0 else 0.0
            spread = math.sqrt(k_last * last.thickness / (h + U_b))
        out.append({"wall": w.name, "R_wall_K_per_W": R, "h_outer_W_m2K": h, "biot": bi,
                    "outer_layer": last.label, "spread_m": spread})
    return out


def _outer_fixed(case, sysm, j) -> bool:
    o = sysm.wall_origin[j] if hasattr(sysm, "wall_origin") else j
    face = case.outer if case.wall is not None else case.walls[o].outer
    return face.fixed_temperature is not None


def model_notes(result) -> list:
    """Assumptions and limits of the 1-D model for this case, as sentences."""
    case, sysm = result.case, result.system
    notes = ["Heat flows only through the thickness of each wall (one-dimensional); "
             "temperatures are uniform over each face.",
             "Material properties k(T) and cp(T) are taken from the tables of each material "
             "(bundled library or the case file); density is constant; no moisture, phase "
             "change or ageing is modelled unless the data include it."]
    if case.is_enclosure:
        if sysm.area_factor != 1.0:
            notes.append(f"Edges and corners of the box: conduction shape factors S_edge = 0.54 D "
                         f"and S_corner = 0.15 L (Incropera et al., Table 4.1) spread over the "
                         f"slab walls as an area factor of {sysm.area_factor:.4g}.")
        else:
            notes.append("Edges and corners of the enclosure are not modelled (no "
                         "inner_dimensions given): the walls are treated as flat, so the heat "
                         "loss through edges and corners is missing.")
        notes.append("The chamber contents are one lumped node (uniform air and load "
                     "temperature).")
    else:
        notes.append("The wall is taken as infinite (results per its area, or per metre of "
                     "pipe): edges, corners, openings, doors and supports are not modelled; near "
                     "them the shell temperature and the heat loss differ from these values.")
    if any(sysm.is_bridge):
        notes.append("Thermal bridges by the parallel-path method: the bridged and clear paths "
                     "share the face conditions but exchange no heat sideways, so lateral "
                     "spreading in conductive skins is not resolved (an upper-bound style "
                     "estimate of the bridge's share; ISO 6946 combines it with a lower bound).")
    else:
        notes.append("No thermal bridges are modelled (studs, anchors, fasteners, seals): "
                     "they can make local hot spots on the shell that this model does not show.")
    notes.append("Biot number Bi = R_wall / R_film (conduction resistance of the wall over the "
                 "outer film resistance at the end of the run): Bi < 0.1 means the wall is "
                 "nearly isothermal through its thickness (a lumped one-node model would do); "
                 "larger Bi means the temperature drop inside the wall matters and the 1-D "
                 "conduction model is needed. The spreading length of the outer layer tells how "
                 "far from an edge, support or bridge the 1-D skin temperature applies.")
    return notes


def calc_notes(result, case=None) -> dict:
    """Everything above for one run, as plain data for ``/report_data``."""
    case = case if case is not None else result.case
    refs = [CONDUCTION_REFERENCE]
    corr = correlation_rows(case)
    for r in corr:
        if r["reference"] not in refs and r["reference"] != "boundary condition as given":
            refs.append(r["reference"])
    return {"inputs": input_rows(case, result.system), "materials": material_rows(result),
            "correlations": corr, "biot": biot_rows(result), "assumptions": model_notes(result),
            "criteria": ["none applied by a run: it computes temperatures, heat flows and "
                         "energies; touch-safety verdicts and their criteria come from fdwall "
                         "touch, insulation targets from fdwall size"],
            "references": refs}
