"""Outputs of a design-study variant: what is computed per variant, and how.

Each output has a key ``<name>_<unit>`` (SI unit suffix; the table header is ``name [unit]``)
or, for a text output, a bare name.  Steady outputs come from :func:`fdwall.solve_steady`,
transient ones from one :func:`fdwall.run` of the variant (the case's own duration, start
and schedules); a variant that needs both runs both.

==================  =========  =================================================================
key                 kind       meaning
==================  =========  =================================================================
``outer_T_K``       steady     steady temperature of the outer face (hottest outer face of an
                               enclosure) [K]
``loss_W``          steady     steady heat flow out of the outer face(s) [W]
``peak_skin_T_K``   transient  highest outer-face temperature over the run [K]
``stored_energy_J`` transient  energy stored in the wall(s) and chamber at the end of the run,
                               relative to the start [J]
``time_to_limit_s`` transient  first time the outer face reaches ``skin_limit`` [s]; ``inf``
                               when it stays below within the run
``warmup_time_s``   transient  enclosures: time until the chamber first reaches the control
                               setpoint (:func:`fdwall.analyses.enclosure.warm_up_time`) [s];
                               ``inf`` when it never gets there
``touch_limit_K``   transient  highest safe surface temperature of the outer face for the
                               touch contact time (:func:`fdwall.safety.touch_limit`, class
                               from :func:`fdwall.safety.surface_class_of`) [K]
``touch_margin_K``  transient  ``touch_limit_K - peak_skin_T_K`` [K] (negative: too hot)
``touch_verdict``   transient  ``below-limit`` or ``above-limit`` (text)
==================  =========  =================================================================

Layer 8 (analyses): imports enclosure and safety (earlier analyses), the solver and the loader.
"""
from __future__ import annotations

import difflib
import math
import os
import re
import socket
import time

import numpy as np

from ..case.loader import case_from_dict
from ..errors import FdwallError, InputError
from ..solver import run, solve_steady
from ..system import build_system
from ..units import parse_power_law_coefficient
from .enclosure import warm_up_time
from .safety import DEFAULT_CONTACT_TIME, surface_class_of, touch_limit

_STEP = re.compile(r"([A-Za-z_][A-Za-z0-9_\-]*)(\[(\d+)\])?$")


def _steps(path: str, file: str):
    out = []
    for part in path.split("."):
        m = _STEP.match(part)
        if not m:
            raise InputError(f"{file}: [[vary]] path {path!r}: part {part!r} is not a key or "
                             "key[index] (allowed e.g. 'wall.layers[1].thickness').")
        out.append(m.group(1))
        if m.group(3) is not None:
            out.append(int(m.group(3)))
    return out


def _set(data: dict, path: str, value, file: str, copied=None) -> None:
    """Set ``value`` at case-file ``path`` in the parsed case ``data`` (in place).

    With ``copied`` (a set of ids of containers already copied), every table or list on the
    path is replaced by a shallow copy first, so ``data`` may share everything else with the
    base case it was copied from (copy on write; see :func:`edited`).
    """
    steps = _steps(path, file)
    node = data
    for i, s in enumerate(steps):
        last = i == len(steps) - 1
        if isinstance(s, int):
            if not isinstance(node, list) or s >= len(node):
                n = len(node) if isinstance(node, list) else 0
                raise InputError(f"{file}: [[vary]] path {path!r}: index [{s}] is out of range "
                                 f"(the base case has {n} entries there).")
        else:
            if not isinstance(node, dict) or (s not in node and not last):
                near = difflib.get_close_matches(s, list(node) if isinstance(node, dict) else [])
                hint = f" Did you mean {', '.join(near)}?" if near else ""
                raise InputError(f"{file}: [[vary]] path {path!r}: key {s!r} is not in the base "
                                 f"case.{hint}")
            if last and s not in node:
                near = difflib.get_close_matches(s, list(node))
                if near:
                    raise InputError(f"{file}: [[vary]] path {path!r}: key {s!r} is not in the "
                                     f"base case. Did you mean {', '.join(near)}?")
        if last:
            node[s] = value
        else:
            child = node[s]
            if copied is not None and id(child) not in copied and isinstance(child, (dict, list)):
                child = dict(child) if isinstance(child, dict) else list(child)
                node[s] = child
                copied.add(id(child))
            node = child


def edited(base: dict, edits: dict, file: str) -> dict:
    """The parsed base case with ``edits`` (path -> value) applied; ``base`` is not changed.

    Only the tables and lists on the edited paths are copied (the case loader only reads its
    input), which is cheaper per variant than a deep copy of the whole case.  A varied
    power-law exponent carries its coefficient's unit along (:func:`_follow_exponent`).
    """
    data = dict(base)
    copied = {id(data)}
    for p, v in edits.items():
        _set(data, p, v, file, copied)
    _follow_exponent(base, data, edits, file, copied)
    return data


_FRACTION = re.compile(r"^\s*(\d+(?:\.\d*)?)\s*/\s*(\d+(?:\.\d*)?)\s*$")


def _exponent_value(v):
    """A power-law exponent as written in a case file (a number or a fraction text, "1/3")
    [-], or None when it is neither (the loader then reports it)."""
    if isinstance(v, bool):
        return None
    if isinstance(v, (int, float)):
        return float(v)
    if isinstance(v, str):
        m = _FRACTION.match(v)
        if m:
            return float(m.group(1)) / float(m.group(2)) if float(m.group(2)) > 0 else None
        try:
            return float(v)
        except ValueError:
            return None
    return None


def _table_at(data, path: str, file: str):
    """The table at case-file ``path`` in the parsed case ``data``, or None."""
    node = data
    for s in _steps(path, file):
        if isinstance(s, int):
            if not isinstance(node, list) or s >= len(node):
                return None
        elif not isinstance(node, dict) or s not in node:
            return None
        node = node[s]
    return node if isinstance(node, dict) else None


def _follow_exponent(base: dict, data: dict, edits: dict, file: str, copied) -> None:
    """Keep a power-law coefficient consistent with a varied exponent (in place in ``data``).

    The unit of the coefficient a of h = a |dT|^n has the temperature power 1 + n, so a
    coefficient written for the base case's exponent (``"1.42 W/(m2 K^1.25)"`` with n = 0.25)
    would not load once a variant changes n.  When a variant edits ``...exponent`` of a
    ``power_law`` table and the coefficient (the base's, or the variant's own edit) is
    written for the base exponent, it is converted to SI with the base exponent and written
    back as ``"<a> W/(m2 K^(1 + n))"`` with the variant's n: the SI value of a (h at a 1 K
    difference) is held, its unit follows n.  A coefficient that already fits the variant's
    exponent, or that fits neither, is left as it is (the loader judges it).
    """
    for p, v in edits.items():
        if p.split(".")[-1] != "exponent" or "." not in p:
            continue
        parent = p[: -len(".exponent")]
        table = _table_at(data, parent, file)
        if table is None or table.get("model") != "power_law":
            continue
        coef = table.get("coefficient")
        btab = _table_at(base, parent, file)
        n_new = _exponent_value(v)
        n_old = _exponent_value(btab.get("exponent")) if btab is not None else None
        if not isinstance(coef, str) or n_new is None or n_old is None:
            continue
        try:
            parse_power_law_coefficient(coef, n_new)
            continue                       # written for this variant's exponent already
        except FdwallError:
            pass
        try:
            a = parse_power_law_coefficient(coef, n_old)
        except FdwallError:
            continue                       # wrong either way: the loader says why
        _set(data, f"{parent}.coefficient", f"{a!r} W/(m2 K^{1.0 + n_new!r})", file, copied)


__all__ = ["OUTPUT_INFO", "DEFAULT_OUTPUTS", "TOUCH_OUTPUTS", "header_of", "check_outputs",
           "evaluate_variant", "variant_row", "edited"]

#: key -> (kind, description); kind "steady" or "transient".
OUTPUT_INFO = {
    "outer_T_K": ("steady", "steady outer-face temperature"),
    "loss_W": ("steady", "steady heat loss through the outer face(s)"),
    "peak_skin_T_K": ("transient", "highest outer-face temperature over the run"),
    "stored_energy_J": ("transient", "energy stored at the end of the run"),
    "time_to_limit_s": ("transient", "time until the outer face reaches skin_limit"),
    "warmup_time_s": ("transient", "time until the chamber reaches the setpoint"),
    "touch_limit_K": ("transient", "touch limit of the outer face"),
    "touch_margin_K": ("transient", "touch limit minus peak skin temperature"),
    "touch_verdict": ("transient", "peak skin temperature below or above the touch limit"),
}
DEFAULT_OUTPUTS = ("outer_T_K", "loss_W", "peak_skin_T_K", "stored_energy_J")
#: Outputs that speak of touch safety (they carry the caution wherever shown).
TOUCH_OUTPUTS = ("peak_skin_T_K", "time_to_limit_s", "touch_limit_K", "touch_margin_K",
                 "touch_verdict", "outer_T_K")
TEXT_OUTPUTS = ("touch_verdict",)


def header_of(key: str) -> str:
    """Table header of an output key: ``outer_T_K`` -> ``outer_T [K]`` (text outputs bare)."""
    if key in TEXT_OUTPUTS or key not in OUTPUT_INFO:
        return key
    name, unit = key.rsplit("_", 1)
    return f"{name} [{unit}]"


def check_outputs(outputs, file: str, base_case) -> tuple:
    """Validate a study's ``outputs`` list against the base case (InputError naming the key)."""
    if outputs is None:
        return DEFAULT_OUTPUTS
    if not isinstance(outputs, list) or not outputs or not all(isinstance(o, str) for o in outputs):
        raise InputError(f"{file}: outputs must be a non-empty list of output names; allowed: "
                         f"{', '.join(OUTPUT_INFO)}.")
    for o in outputs:
        if o not in OUTPUT_INFO:
            near = difflib.get_close_matches(o, list(OUTPUT_INFO))
            hint = f" Did you mean {', '.join(near)}?" if near else ""
            raise InputError(f"{file}: outputs: {o!r} is not an output.{hint} Allowed: "
                             f"{', '.join(OUTPUT_INFO)}.")
    if len(set(outputs)) != len(outputs):
        raise InputError(f"{file}: outputs: a name is given twice.")
    if "warmup_time_s" in outputs and base_case is not None and not base_case.is_enclosure:
        raise InputError(f"{file}: outputs: warmup_time_s needs an enclosure (a chamber with a "
                         "heater and a setpoint); the base case is a single wall.")
    return tuple(outputs)


def _outer_faces(case, system):
    """Indices of the external (outer) faces of the solved system."""
    return [f for f in range(len(system.face_names)) if system.external[f]
            and system.face_names[f].endswith(":outer")]


def _touch_limit(case):
    """Touch limit [K] of the hottest-relevant outer face: the lowest over the case's walls."""
    lims = []
    if case.is_enclosure:
        for ew in case.walls:
            cls, _ = surface_class_of(ew.wall.layers[-1], ew.outer)
            lims.append(touch_limit(cls, DEFAULT_CONTACT_TIME))
    else:
        cls, _ = surface_class_of(case.wall.layers[-1], case.outer)
        lims.append(touch_limit(cls, DEFAULT_CONTACT_TIME))
    return min(lims)


def _first_reach(t, y, level):
    """First time [s] the series ``y`` reaches ``level`` (linear interpolation); inf if never."""
    above = np.nonzero(y >= level)[0]
    if above.size == 0:
        return math.inf
    i = int(above[0])
    if i == 0:
        return float(t[0])
    return float(t[i - 1] + (level - y[i - 1]) * (t[i] - t[i - 1]) / (y[i] - y[i - 1]))


def evaluate_variant(base: dict, edits: dict, name: str, outputs=DEFAULT_OUTPUTS,
                     skin_limit=None, like=None) -> dict:
    """One variant: edit the parsed base case, load it, compute ``outputs``; never raises.

    Returns a row dict: the output keys (NaN on failure; text outputs ''), ``status``
    (``done``/``failed``), ``error`` (the message, '' when done), ``run_time_s`` [s],
    ``host``, ``worker``.  ``skin_limit`` [K] is needed by ``time_to_limit_s``.  ``like``
    is the system of an earlier variant: walls of the same shape reuse its mesh
    (:func:`fdwall.system.build_system`).
    """
    return variant_row(base, edits, name, outputs, skin_limit, like)[0]


def variant_row(base: dict, edits: dict, name: str, outputs=DEFAULT_OUTPUTS,
                skin_limit=None, like=None):
    """(row, system) of one variant as :func:`evaluate_variant`; system None on failure.

    A batch passes each variant's system as ``like`` of the next one, so variants that
    differ only in non-shape inputs (face conditions, ambient, emissivity, heater,
    conductivity factor ...) mesh their wall once per batch.
    """
    t0 = time.perf_counter()
    row = {k: ("" if k in TEXT_OUTPUTS else float("nan")) for k in outputs}
    system = None
    try:
        data = edited(base, edits, name)
        case = case_from_dict(data, name)
        system = build_system(case, like=like)   # shared by the steady state and the run
        outer = _outer_faces(case, system)
        if any(OUTPUT_INFO[k][0] == "steady" for k in outputs):
            ss = solve_steady(case, system=system)
            if "outer_T_K" in outputs:
                row["outer_T_K"] = float(max(ss.face_T[f] for f in outer))
            if "loss_W" in outputs:
                row["loss_W"] = float(-sum(ss.face_flow[f] for f in outer))
        if any(OUTPUT_INFO[k][0] == "transient" for k in outputs):
            res = run(case, system=system, progress=False, estimate=False)
            skin = np.max(res.face_T[:, outer], axis=1)
            peak = float(skin.max())
            if "peak_skin_T_K" in outputs:
                row["peak_skin_T_K"] = peak
            if "stored_energy_J" in outputs:
                row["stored_energy_J"] = float(res.stored[-1])
            if "time_to_limit_s" in outputs:
                row["time_to_limit_s"] = _first_reach(res.times, skin, skin_limit)
            if "warmup_time_s" in outputs:
                w = warm_up_time(res)
                row["warmup_time_s"] = float(w) if np.isfinite(w) else math.inf
            if any(k in outputs for k in ("touch_limit_K", "touch_margin_K", "touch_verdict")):
                lim = _touch_limit(case)
                if "touch_limit_K" in outputs:
                    row["touch_limit_K"] = lim
                if "touch_margin_K" in outputs:
                    row["touch_margin_K"] = lim - peak
                if "touch_verdict" in outputs:
                    row["touch_verdict"] = "below-limit" if peak <= lim else "above-limit"
        row.update(status="done", error="")
    except (FdwallError, ValueError, ArithmeticError) as e:
        row.update(status="failed", error=" ".join(str(e).split()))
        system = None
    row.update(run_time_s=time.perf_counter() - t0, host=socket.gethostname(),
               worker=str(os.getpid()))
    return row, system

