"""Self-contained HTML calculation report rendered from an fdwall HDF5 result file.

Layer: report (presents only, computes nothing). Reads the file with fdwall.h5tree, converts
displayed numbers with fdwall.report.units and renders a Jinja2 template (CSS inline, images as
base64 data URIs, no external resource). Files keep SI; display units are "si" (degC) or "us".
"""
from __future__ import annotations

import base64
import json
from datetime import datetime
from pathlib import Path

import numpy as np

from .. import atomic
from ..cautions import BURN_INDICATOR_NOTE, SAFETY_CAUTION
from ..errors import InputError
from ..h5tree import SUFFIX_UNITS, read_tree, unit_of
from ..units import power_law_unit_power
from . import units as _units

__all__ = ["write_report", "render_report", "KINDS"]

KINDS = ("transient", "steady", "touch", "size", "fit", "rc", "study")
_IDENT_KEYS = ("project", "equipment", "author", "checker", "revision", "date")


def _fmt(v) -> str:
    if isinstance(v, (float, np.floating)):
        return f"{float(v):.6g}"
    return str(v)


def _strip(key: str, unit: str) -> str:
    for suf in sorted((s for s in _units_suffixes() if s), key=len, reverse=True):
        if key.endswith(suf) and len(key) > len(suf):
            return key[: -len(suf)]
    return key


def _units_suffixes():
    return SUFFIX_UNITS.keys()


def _sibling_unit(d: dict, k: str):
    """(unit, exponent) a number ``k`` (or its ``<k>_stderr``) takes from a ``<k>_unit`` text
    beside it (a power-law coefficient, whose unit depends on its exponent n, stored beside it
    as ``exponent``), or ('', None)."""
    base = k[:-len("_stderr")] if k.endswith("_stderr") else k
    u = d.get(f"{base}_unit")
    if not isinstance(u, str) or power_law_unit_power(u) is None:
        return "", None
    n = d.get("exponent")
    n = float(n) if isinstance(n, (int, float, np.integer, np.floating)) else None
    return u, n


def _scalar_rows(d: dict, system: str):
    rows = []
    for k, v in d.items():
        if isinstance(v, dict):
            for name, val, u in _scalar_rows(v, system):
                rows.append((f"{k}.{name}", val, u))
            continue
        u = unit_of(k)
        su, n = _sibling_unit(d, k)
        if k.endswith("_unit") and k[:-len("_unit")] in d and su == "" and \
                power_law_unit_power(str(v)) is not None:
            continue   # shown as the unit of its number
        if su and isinstance(v, (int, float, np.integer, np.floating)) and \
                not isinstance(v, bool):
            conv, label = _units.display(float(v), su, system, key=k, exponent=n)
            rows.append((k, _fmt(float(conv)), label))
        elif isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, bool) \
                and u:
            conv, label = _units.display(float(v), u, system, key=k)
            rows.append((_strip(k, u), _fmt(float(conv)), label))
        elif isinstance(v, np.ndarray) and v.dtype.kind in "fi" and u:
            conv, label = _units.display(v, u, system, key=k)
            rows.append((_strip(k, u), ", ".join(_fmt(x) for x in np.ravel(conv)[:20]), label))
        else:
            if isinstance(v, np.ndarray):
                v = ", ".join(_fmt(x) for x in np.ravel(v)[:20])
            elif isinstance(v, list):
                v = ", ".join(_fmt(x) for x in v)
            rows.append((k, _fmt(v), ""))
    return rows


def _table(tname: str, cols: dict, system: str):
    headers, columns = [], []
    for k, v in cols.items():
        arr = np.atleast_1d(np.asarray(v))
        u = unit_of(k)
        if arr.dtype.kind in "fi" and u:
            arr, label = _units.display(arr, u, system, key=k)
            headers.append(f"{_strip(k, u)} [{label}]")
        else:
            headers.append(k)
        columns.append([_fmt(x.decode() if isinstance(x, bytes) else x) for x in arr])
    n = max((len(c) for c in columns), default=0)
    rows = [[c[i] if i < len(c) else "" for c in columns] for i in range(n)]
    return tname, headers, rows


def _as_list(v):
    if v is None:
        return []
    if isinstance(v, (list, tuple, np.ndarray)):
        return [str(x) for x in v]
    if isinstance(v, dict):  # a group holding one list (write_file groups are mappings)
        return [x for item in v.values() for x in _as_list(item)]
    return [str(v)]


def read_result(h5_path) -> tuple[dict, dict]:
    """Root attributes and groups of an fdwall result file; InputError when it is not one."""
    import h5py
    path = Path(h5_path)
    try:
        with h5py.File(path, "r") as f:
            attrs = {k: (v.decode() if isinstance(v, bytes) else v) for k, v in f.attrs.items()}
            data = read_tree(f)
            if "energy/residual" in f and isinstance(data.get("energy"), dict):
                rel = f["energy/residual"].attrs.get("relative_max")
                if rel is not None:
                    data["energy"]["relative_max"] = float(rel)
    except (OSError, ValueError) as exc:
        raise InputError(f"'{path}' is not a readable HDF5 file ({exc}); give an fdwall result "
                         "file (.h5) written by fdwall run, steady, touch, size, fit or study.") \
            from None
    if "fdwall_version" not in attrs and "kind" not in attrs:
        raise InputError(f"'{path}' is not an fdwall result: it has no root attribute 'kind' or "
                         "'fdwall_version'. Give a file written by an fdwall command.")
    return attrs, data


#: A PNG beside the result older than the result's ``created`` time by more than this is
#: from an earlier run (e.g. the result was rewritten with --no-plots) and is not embedded [s].
STALE_PLOT_S = 120.0


def _images(h5_path: Path, created: str = ""):
    """PNG plots written beside the result (<stem>*.png) as base64 data URIs; plots older
    than the result (by more than :data:`STALE_PLOT_S`) belong to an earlier run: skipped,
    and returned by name as the second item."""
    try:
        t_created = datetime.fromisoformat(str(created).replace("Z", "+00:00")).timestamp()
    except ValueError:
        t_created = None
    out, stale = [], []
    for png in sorted(h5_path.parent.glob(f"{h5_path.stem}*.png")):
        if t_created is not None and png.stat().st_mtime < t_created - STALE_PLOT_S:
            stale.append(png.name)
            continue
        uri = "data:image/png;base64," + base64.b64encode(png.read_bytes()).decode("ascii")
        out.append((png.stem, uri))
    return out, stale


def _q(value, unit, system, key="", exponent=None):
    """One stored number as (text, display unit label); '' for a missing value.
    ``exponent``: the exact n [-] of a power-law coefficient (see :func:`_units.display`)."""
    if value is None or (isinstance(value, float) and not np.isfinite(value)):
        return "", ""
    if not unit:
        return _fmt(value), ""
    conv, label = _units.display(float(value), unit, system, key=key, exponent=exponent)
    return _fmt(float(conv)), label


_NOT_STORED = ("not computed: this result file does not hold it (fdwall run CASE --report "
               "computes it and stores it in the result)")


def _num(v):
    try:
        v = float(v)
    except (TypeError, ValueError):
        return None
    return v if np.isfinite(v) else None


def _notes(data: dict, system: str) -> dict:
    """Resolved inputs, materials, correlations, Biot numbers and assumptions stored by the
    run in ``/report_data`` (see fdwall.analyses.calc_notes), as display rows."""
    rd = data.get("report_data")
    if not isinstance(rd, dict) or "inputs" not in rd:
        return {"status": _NOT_STORED}
    resolved = []
    # the exact exponent of a power-law coefficient: the exponent row of the same section
    expo = {r.get("section", ""): _num(r.get("value")) for r in rd.get("inputs") or []
            if isinstance(r, dict) and r.get("quantity") == "power-law exponent n"}
    for r in rd.get("inputs") or []:
        if not isinstance(r, dict):
            continue
        v, hi, u = _num(r.get("value")), _num(r.get("value_max")), r.get("unit", "")
        if v is None:
            resolved.append((r.get("section", ""), r.get("quantity", ""), r.get("text", ""), ""))
            continue
        key = r.get("quantity", "")
        n = expo.get(r.get("section", "")) if power_law_unit_power(u) is not None else None
        txt, lab = _q(v, u, system, key=key, exponent=n)
        if hi is not None:
            txt = f"{txt} .. {_q(hi, u, system, key=key, exponent=n)[0]}"
        if r.get("text"):
            txt = f"{txt} ({r['text']})"
        resolved.append((r.get("section", ""), key, txt, lab or "-"))
    mats, mat_units = [], {}
    for m in rd.get("materials") or []:
        if not isinstance(m, dict):
            continue
        row = [m.get("name", ""), m.get("category", "")]
        for key, unit in (("rho_kg_m3", "kg/m3"), ("k_20_W_mK", "W/m/K"),
                          ("cp_20_J_kgK", "J/kg/K"), ("T_top_K", "K"), ("k_top_W_mK", "W/m/K"),
                          ("cp_top_J_kgK", "J/kg/K"), ("t_max_K", "K")):
            txt, _ = _q(_num(m.get(key)), unit, system, key=key)
            row.append(txt or "not given")
            mat_units[key] = _q(300.0, unit, system, key=key)[1]
        row.append(m.get("source", ""))
        mats.append(row)
    ref20 = _q(293.15, "K", system)
    biot, bu = [], {}
    for b in rd.get("biot") or []:
        if not isinstance(b, dict):
            continue
        row = [b.get("wall", "")]
        for key, unit in (("R_wall_K_per_W", "K/W"), ("h_outer_W_m2K", "W/m2/K"),
                          ("biot", ""), ("spread_m", "m")):
            txt, _ = _q(_num(b.get(key)), unit, system, key=key)
            row.append(txt or "n/a (fixed surface temperature)")
            bu[key] = _q(1.0, unit, system, key=key)[1] or "-"
        row.insert(4, b.get("outer_layer", ""))
        biot.append(row)
    return {"status": "computed", "resolved": resolved, "materials": mats, "mat_units": mat_units,
            "at20": f"{ref20[0]} {ref20[1]}", "biot": biot, "biot_units": bu,
            "correlations": [(c.get("face", ""), c.get("model", ""), c.get("reference", ""))
                             for c in rd.get("correlations") or [] if isinstance(c, dict)],
            "assumptions": _as_list(rd.get("assumptions")),
            "criteria": _as_list(rd.get("criteria")),
            "references": _as_list(rd.get("references"))}


def _names(v) -> list:
    return [x.decode() if isinstance(x, bytes) else str(x) for x in (v if v is not None else [])]


def _run_results(data: dict, system: str) -> dict:
    """Result tables of a run read from its stored datasets: per face the last and the
    highest stored temperature, last heat flow and cumulative energy; per interface the last
    and highest temperature; the watched events; and the main series at about a dozen of
    the stored output times (every k-th row, the last always included)."""
    faces = data.get("faces") or {}
    names = _names(faces.get("names"))
    T = np.asarray(faces.get("temperature", np.zeros((0, 0))), dtype=float)
    q = np.asarray(faces.get("heat_flow", np.zeros((0, 0))), dtype=float)
    E = np.asarray(faces.get("energy", np.zeros((0, 0))), dtype=float)
    out = {"faces": [], "interfaces": [], "events": [], "series": None}
    lab_T = _q(300.0, "K", system)[1]
    lab_W, lab_J = _q(1.0, "W", system)[1], _q(1.0, "J", system)[1]
    out["units"] = {"T": lab_T, "W": lab_W, "J": lab_J}
    if T.ndim == 2 and T.shape[0] and T.shape[1] == len(names):
        for f, n in enumerate(names):
            out["faces"].append((n, _q(T[-1, f], "K", system)[0], _q(T[:, f].max(), "K",
                                                                        system)[0],
                                 _q(q[-1, f], "W", system)[0] if q.ndim == 2 else "",
                                 _q(E[-1, f], "J", system)[0] if E.ndim == 2 else ""))
    itf = data.get("interfaces") or {}
    for name in sorted(k for k in itf if k.startswith("wall_")):
        arr = np.asarray(itf[name], dtype=float)
        mesh = (data.get("mesh") or {}).get(name) or {}
        wall = mesh.get("name", name)
        try:
            labels = json.loads(mesh.get("layers", "[]"))
        except (TypeError, ValueError):
            labels = []
        for i in range(arr.shape[1] if arr.ndim == 2 else 0):
            between = (f"{labels[i]} | {labels[i + 1]}" if i + 1 < len(labels)
                       else f"interface {i + 1}")
            out["interfaces"].append((wall, between, _q(arr[-1, i], "K", system)[0],
                                      _q(arr[:, i].max(), "K", system)[0]))
    ev = data.get("events") or {}
    for n, up, down in zip(_names(ev.get("names")), np.ravel(ev.get("up", [])),
                           np.ravel(ev.get("down", []))):
        def _h(v):
            v = _num(v)
            return _fmt(v / 3600.0) if v is not None else "none"
        out["events"].append((n, _q(up, "s", system)[0] or "none", _h(up),
                              _q(down, "s", system)[0] or "none", _h(down)))
    t = np.asarray(data.get("time", []), dtype=float)
    if t.size and T.ndim == 2 and T.shape[0] == t.size:
        step = max(1, int(np.ceil((t.size - 1) / 12)))
        idx = sorted(set(range(0, t.size, step)) | {t.size - 1})
        heads = ["time [h]"] + [f"{n} temperature [{lab_T}]" for n in names]
        cols = [[_fmt(float(v) / 3600.0) for v in t[idx]]]
        cols += [[_q(v, "K", system)[0] for v in T[idx, f]] for f in range(len(names))]
        stored = (data.get("energy") or {}).get("stored")
        if isinstance(stored, np.ndarray) and stored.size == t.size:
            heads.append(f"stored energy [{lab_J}]")
            cols.append([_q(v, "J", system)[0] for v in stored[idx]])
        power = (data.get("heater") or {}).get("power")
        if isinstance(power, np.ndarray) and power.size == t.size and np.any(power):
            heads.append(f"heater power [{lab_W}]")
            cols.append([_q(v, "W", system)[0] for v in power[idx]])
        out["series"] = (heads, [list(r) for r in zip(*cols)])
    return out


def _convergence(data: dict, system: str) -> dict:
    """The stored convergence check (``/report_data/convergence``) as display rows, or its
    status ("not computed ...") when the run stored none."""
    conv = (data.get("report_data") or {}).get("convergence")
    if not isinstance(conv, dict):
        return {"status": _NOT_STORED, "rows": []}
    rows = []
    if conv.get("status") == "computed":
        for row in conv.get("rows") or []:
            q, u, b, r, d, rel = (row.get(k) for k in ("quantity", "unit", "base", "refined",
                                                        "difference", "relative"))
            u = "" if u == "-" else u
            bt, lab = _q(b, u, system)
            rt, _ = _q(r, u, system)
            dt, dlab = _q(d, u, system, key="difference")
            rows.append((q, bt, rt, lab or "-", dt, dlab or "-", f"{float(rel):.2g}"))
    return {"status": conv.get("status", "not recorded"), "rows": rows,
            "note": conv.get("note") or "",
            "factor": _fmt(conv.get("refine_factor", "")),
            "tolerance": _q(conv.get("tolerance_K"), "K", system, key="tolerance"),
            "refined_tolerance": _q(conv.get("refined_tolerance_K"), "K", system,
                                    key="tolerance"),
            "nodes": conv.get("nodes", ""), "refined_nodes": conv.get("refined_nodes", "")}


def _accuracy(data: dict, system: str) -> dict | None:
    """The run's stored spatial error estimate (``/error_estimate``) as display rows, or None
    when the file holds none (fdwall.solver.accuracy; docs/accuracy.md)."""
    est = data.get("error_estimate")
    if not isinstance(est, dict):
        return None

    def js(key, default):
        v = est.get(key)
        try:
            return json.loads(v) if isinstance(v, (str, bytes)) else (default if v is None else v)
        except ValueError:
            return default
    estimated = bool(est.get("estimated"))
    rows = []
    for p in js("points", []) or []:
        if isinstance(p, dict):
            rows.append((p.get("point", ""), *_q(p.get("max_error_K"), "K", system,
                                                 key="difference"),
                         " ".join(_q(p.get("at_s"), "s", system)).strip(),
                         f"{float(p.get('margin', 0.0)):.2f}"))
    sw = js("switching", None)
    switching = None
    if isinstance(sw, dict):
        switching = (_q(sw.get("first_switch_off_s"), "s", system),
                     _q(sw.get("error_s"), "s", system, key="difference"),
                     f"{float(sw.get('margin', 0.0)):.2f}")
    cells = js("cells", [])
    return {"estimated": estimated, "meets": bool(est.get("meets_contract")),
            "method": str(est.get("method", "")),
            "margin": f"{float(est.get('margin', float('nan'))):.2f}",
            "flow_margin": f"{float(est.get('flow_margin', float('nan'))):.2f}",
            "refinements": int(est.get("refinements", 0) or 0),
            "extra_runs": int(est.get("extra_runs", 0) or 0),
            "cells": "; ".join(", ".join(str(c) for c in w) for w in cells or []),
            "rows": rows, "switching": switching, "notes": [str(n) for n in js("notes", []) or []]}


def _run_sections(data: dict, system: str) -> dict:
    """Sections of a run result (kind transient/steady), read from its stored groups."""
    out = {}
    solver = data.get("solver") or {}
    energy = data.get("energy") or {}
    res = energy.get("residual")
    if res is not None or solver:
        rows = []
        if isinstance(res, np.ndarray) and res.size:
            rows.append(("residual at the end of the run", *_q(res[-1], "J", system)))
        rows.append(("largest residual at a step end",
                     *_q(solver.get("energy_residual_max_J"), "J", system)))
        rows.append(("energy scale (largest energy that crossed a face, came from the heater "
                     "or was stored)", *_q(solver.get("energy_scale_J"), "J", system)))
        rel = energy.get("relative_max")
        if rel is not None:
            rows.append(("largest residual relative to the energy scale", f"{float(rel):.3g}",
                         "-"))
        for key, label in (("heater", "heater energy delivered"),
                           ("stored", "energy stored at the end"),
                           ("loss_chamber", "chamber loss to ambient")):
            v = energy.get(key)
            if isinstance(v, np.ndarray) and v.size:
                rows.append((label, *_q(v[-1], "J", system)))
        out["energy"] = rows
    resolved = {}
    try:
        resolved = json.loads((data.get("input") or {}).get("resolved_json") or "{}")
    except (TypeError, ValueError):
        resolved = {}
    run = resolved.get("run") or {}
    steps = []
    if "output_every" not in run and "output_interval" in run:   # archives written before the rename
        run = {**run, "output_every": run["output_interval"]}
    for key, label, unit in (("duration", "duration", "s"),
                             ("output_every", "output interval", "s"),
                             ("tolerance", "local error tolerance per step", "K"),
                             ("max_step", "largest step allowed", "s"),
                             ("exact_outputs", "outputs at exact step ends", "")):
        if key in run:
            v = run[key]
            if v is None:
                steps.append((label, "automatic", ""))
            elif isinstance(v, (int, float)) and not isinstance(v, bool):
                steps.append((label, *_q(v, unit, system, key="tolerance_dT"
                                           if unit == "K" else "")))
            else:
                steps.append((label, _fmt(v), ""))
    for key, label, unit in (("accepted_steps", "steps accepted", ""),
                             ("rejected_steps", "steps rejected", ""),
                             ("newton_failures", "Newton failures", ""),
                             ("min_step_s", "shortest step", "s"),
                             ("max_step_s", "longest step", "s"),
                             ("reached_s", "time reached", "s"),
                             ("nodes", "unknowns", ""),
                             ("wall_time_s", "computing time", "s")):
        if key in solver:
            steps.append((label, *_q(solver[key], unit, system)))
    meshes = []
    for name in sorted(k for k in (data.get("mesh") or {}) if k.startswith("wall_")):
        m = data["mesh"][name]
        try:
            layers = ", ".join(json.loads(m.get("layers", "[]")))
        except (TypeError, ValueError):
            layers = str(m.get("layers", ""))
        x = np.asarray(m.get("x", []), dtype=float)
        first, last = m.get("layer_first"), m.get("layer_last")
        cells = ""
        if first is not None and last is not None:
            cells = ", ".join(str(int(b) - int(a)) for a, b in zip(np.ravel(first),
                                                                      np.ravel(last)))
        meshes.append((m.get("name", name), m.get("geometry", ""), x.size, cells, layers))
    if steps or meshes:
        out["steps"], out["meshes"] = steps, meshes
        out["convergence"] = _convergence(data, system)
        out["accuracy"] = _accuracy(data, system)
    out["results"] = _run_results(data, system)
    touch = data.get("touch")
    if isinstance(touch, dict):
        faces = []
        for f in touch.get("faces") or []:
            if not isinstance(f, dict):
                continue
            faces.append((f.get("face", ""), f.get("surface_class", ""), f.get("verdict", ""),
                          *_q(f.get("T_max_K"), "K", system),
                          _q(f.get("limit_K"), "K", system)[0],
                          _q(f.get("margin_K"), "K", system, key="margin_K")[0],
                          _q(f.get("contact_temperature_K"), "K", system)[0]))
        out["touch"] = {"criterion": touch.get("criterion", ""),
                        "ambient": _q(touch.get("ambient_K"), "K", system),
                        "contact_time": _q(touch.get("contact_time_s"), "s", system),
                        "faces": faces, "warnings": _as_list(touch.get("warnings")),
                        "caution": touch.get("caution", ""),
                        "note": touch.get("burn_indicator_note", "")}
    return out


def render_report(h5_path, units: str = "si", ident: dict | None = None) -> str:
    """The report of ``h5_path`` as one HTML string (display ``units`` "si" or "us")."""
    import jinja2
    if units not in _units.UNIT_SYSTEMS:
        raise InputError(f"--units must be one of {', '.join(_units.UNIT_SYSTEMS)}, not "
                         f"'{units}'.")
    h5_path = Path(h5_path)
    attrs, data = read_result(h5_path)
    stored = data.get("report") if isinstance(data.get("report"), dict) else {}
    ident = {**{k: stored.get(k, "") for k in _IDENT_KEYS}, **(ident or {})}
    run = _run_sections(data, units) if attrs.get("kind") in ("transient", "steady") else {}
    skip = {"inputs", "summary", "tables", "warnings", "references", "notes", "report",
            "report_data"}
    notes = _notes(data, units) if run else {}
    summary = _scalar_rows(data.get("summary", {}) or {}, units)
    tables = [_table(n, t, units) for n, t in (data.get("tables") or {}).items()
              if isinstance(t, dict)]
    texts = []
    for name, grp in data.items():  # long stored texts (case text, resolved case) as blocks
        if run and name not in ("input",):
            continue
        if name == "input" and run:   # shown as "as given" / "as resolved" in the inputs
            if notes.get("status") == "computed" or not isinstance(grp, dict):
                continue
            grp = {k: v for k, v in grp.items() if k != "case_text"}
        if isinstance(grp, dict):
            for k in [k for k, v in grp.items() if isinstance(v, str) and len(v) > 120]:
                texts.append((f"{name}.{k}", grp[k]))
    long_keys = {t[0] for t in texts}
    # groups whose scalars a run result shows in its dedicated sections
    shown = {"solver", "energy", "touch", "mesh"} if run else set()
    if run:  # a run's groups are shown by the dedicated sections above
        skip |= set(data)
    for name, grp in data.items():  # other groups: their 1-D columns as tables
        if name in skip or not isinstance(grp, dict):
            continue
        cols = {k: v for k, v in grp.items() if isinstance(v, np.ndarray) and v.ndim == 1}
        lens = {len(v) for v in cols.values()}
        if cols and len(lens) == 1:
            tables.append(_table(name, cols, units))
        scal = {k: v for k, v in grp.items() if not isinstance(v, (np.ndarray, dict, list))
                and f"{name}.{k}" not in long_keys and name not in shown}
        summary += [(f"{name}.{n}", v, u) for n, v, u in _scalar_rows(scal, units)]
    if run.get("touch"):
        run["touch"]["caution"] = run["touch"]["caution"] or SAFETY_CAUTION
        run["touch"]["note"] = run["touch"]["note"] or BURN_INDICATOR_NOTE
        attrs.setdefault("caution", run["touch"]["caution"])
    inputs = data.get("inputs", {}) or {}
    case_text = inputs.get("case_text", "") if isinstance(inputs, dict) else ""
    if run and isinstance(data.get("input"), dict):
        case_text = data["input"].get("case_text", "") or "(the case was built in Python: "\
            "no case file text)"
    images, stale = _images(h5_path, attrs.get("created", ""))
    env = jinja2.Environment(loader=jinja2.PackageLoader("fdwall.report", "templates"),
                             autoescape=True)
    return env.get_template("report.html.j2").render(
        case_name=attrs.get("case_name", h5_path.stem), caution=attrs.get("caution", ""),
        ident=[(k, ident.get(k) or "") for k in _IDENT_KEYS], summary=summary,
        inputs=_scalar_rows({k: v for k, v in inputs.items() if k != "case_text"}, units)
        if isinstance(inputs, dict) else [], case_text=case_text, texts=texts, tables=tables,
        images=images, stale_images=stale, run=run, calc=notes,
        warnings=_as_list(data.get("warnings")) + run.get("touch", {}).get("warnings", []),
        references=_as_list(data.get("references")), notes=_as_list(data.get("notes")),
        version=attrs.get("fdwall_version", "not recorded"), kind=attrs.get("kind", "unknown"),
        created=attrs.get("created", "not recorded"),
        sha=attrs.get("input_sha256") or "not recorded", source=h5_path.name,
        provenance=sorted((k, _fmt(v)) for k, v in (data.get("provenance") or {}).items()
                          if not isinstance(v, (dict, list, np.ndarray))))


def write_report(h5_path, out, units: str = "si", ident: dict | None = None) -> Path:
    """Write the HTML report of ``h5_path`` to ``out`` atomically; returns the path written."""
    text = render_report(h5_path, units=units, ident=ident)
    out = Path(out)
    _write(out, text)
    return out


def _write(out: Path, text: str) -> None:
    with atomic.atomic_path(out) as tmp:
        Path(tmp).write_text(text, encoding="utf-8")
