"""Read a TOML case file into a :class:`fdwall.model.Case`.

The schema is described key by key in ``docs/case-file.md``; the allowed keys of each table
are listed in :mod:`fdwall.case.schema`.  Every value that has a unit is written with it
("100 mm", "250 degC") and converted to SI here, once.  Every problem found is raised as a
:class:`fdwall.case.errors.CaseError`: one paragraph naming the file, the key path, what was
wrong and what is allowed.
"""

from __future__ import annotations

import contextlib
import math
import re
from pathlib import Path
from typing import Mapping

import numpy as np

try:  # Python >= 3.11
    import tomllib as _toml
except ModuleNotFoundError:  # pragma: no cover - Python 3.10
    import tomli as _toml

import difflib
from dataclasses import replace

from .. import units as U
from ..errors import InputError
from ..materials import MaterialError, get_material, list_materials, material_from_dict
from ..model import (
    SURFACE_CLASSES,
    TOUCH_MARKS,
    Bridge,
    Case,
    Chamber,
    Control,
    EnclosureWall,
    Event,
    Face,
    Heater,
    Layer,
    RunSettings,
    Wall,
    chamber_watch_problem,
    default_cells,
    depth_problem,
    interface_problem,
)
from ..physics.convection import EXPONENT_RANGE, Convection
from ..physics.radiation import get_finish
from ..schedule import Schedule
from . import schema as S
from .errors import CaseError
from .reader import MISSING, Section, is_finite_number, join, parse_pairs, parse_value

__all__ = ["load_case", "case_from_dict"]

ROOM = 293.15  # default start/room temperature: 20 degC [K]

# Limits on the size of the problem (common practice, no source): the default mesh has 2 to 24
# cells per layer and is converged to second order, so these are orders of magnitude beyond
# any accuracy need; they keep the arrays of a run within a few GB of memory.
MAX_LAYER_CELLS = 10_000       # cells in one layer, after mesh_refine
MAX_WALL_CELLS = 100_000       # cells in one wall, after mesh_refine
MAX_REFINE = 100.0             # mesh_refine
MAX_CONDUCTIVITY_FACTOR = 100.0  # a layer's conductivity_factor
MAX_OUTPUTS = 1_000_000        # stored output times of a run
MAX_STORED = 100_000_000       # stored temperatures: output times x nodes (0.8 GB as float64)
# Other bounds on dimensionless factors (common practice, no source)
MAX_VOLTAGE_RATIO = 10.0       # 10 x rated voltage = 100 x rated power: the element burns out
MAX_MULTIPLIER = 100.0         # a factor of 100 on a correlation is no correction any more


# ============================================================================ entry points

def load_case(path) -> Case:
    """Read a TOML case file.

    Parameters
    ----------
    path : str or Path
        The case file.

    Returns
    -------
    fdwall.model.Case
        The case in SI units (m, K, s, W); ``case.name`` is the file's ``title`` and
        ``case.source`` the file's text, verbatim.

    Raises
    ------
    CaseError
        If the file cannot be read, is not valid TOML, or any key is missing, unknown or
        invalid (one-paragraph message naming the file and the key path).
    """
    p = Path(path)
    name = str(path)
    try:
        raw = p.read_bytes()
    except FileNotFoundError:
        raise CaseError("the file does not exist", file=name,
                        allowed="the path of an existing TOML case file") from None
    except IsADirectoryError:
        raise CaseError("this is a directory, not a file", file=name,
                        allowed="the path of a TOML case file") from None
    except OSError as exc:
        raise CaseError(f"the file cannot be read ({exc.strerror or exc})", file=name) from None
    if raw.startswith(b"\xef\xbb\xbf"):  # a UTF-8 byte-order mark, as some editors write
        raw = raw[3:]
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[:exc.start].count(b"\n") + 1
        col = exc.start - (raw.rfind(b"\n", 0, exc.start) + 1) + 1
        raise CaseError(f"the file is not UTF-8 text: byte 0x{raw[exc.start]:02x} at line {line}, "
                        f"column {col} (byte {exc.start}) is not UTF-8", file=name,
                        allowed="a TOML file saved as UTF-8 (re-save it as UTF-8 in the "
                                "editor; degree signs and accents are fine in UTF-8)") from None
    try:
        data = _toml.loads(text)
    except _toml.TOMLDecodeError as exc:
        raise CaseError(f"the file is not valid TOML: {exc}", file=name,
                        allowed="TOML syntax: key = value lines, [table] and [[array]] "
                                'headers; text values in quotes, e.g. thickness = "100 mm"') from None
    if not data:
        raise CaseError("the file holds no keys: it is empty or has only comments", file=name,
                        allowed="a case file with a [run] table and a [wall] table (or [[walls]] "
                                "with a [chamber]), as in the demo cases in cases/ and "
                                "docs/case-file.md")
    return case_from_dict(data, name, text=text, stem=p.stem)


def case_from_dict(data: Mapping, source_name: str = "<case>", *, text: str = "",
                   stem: str = "") -> Case:
    """Build a Case from an already parsed case file (a dict as read from TOML).

    Parameters
    ----------
    data : mapping
        The parsed TOML document.
    source_name : str
        Name of the file (or other source) for error messages.
    text : str, optional
        Text of the case file, kept verbatim in ``Case.source``.
    stem : str, optional
        Default title when the file has none.
    Returns
    -------
    fdwall.model.Case

    Raises
    ------
    CaseError
        For any missing, unknown or invalid key.
    """
    loader = _Loader(data, source_name, text, stem)
    return loader.case()


# ============================================================================ helpers

def _refuse(sec, key, problem):
    """Refuse ``key`` of ``sec`` when a rule of :mod:`fdwall.model` (the rule's owner) gives a
    (problem, allowed) pair; the same words as the model's own error."""
    if problem is not None:
        raise sec.error(key, *problem)


@contextlib.contextmanager
def _model(file, key, what="this part of the case"):
    """Turn errors of the model constructors into CaseErrors located at ``key``."""
    try:
        yield
    except CaseError:
        raise
    except InputError as exc:  # ModelError and MaterialError too; a bare ValueError is a bug
        raise CaseError(f"{what} is not valid: {exc}", file=file, key=key) from None


_FRACTION = re.compile(r"^\s*(\d+(?:\.\d*)?)\s*/\s*(\d+(?:\.\d*)?)\s*$")


def _power_law_exponent(sec, key):
    """The exponent n [-] of a power-law film: a number or a fraction text ("1/3"), 0 .. 1."""
    lo, hi = EXPONENT_RANGE
    allowed = (f"a number {lo:g} .. {hi:g}, e.g. 0.25 (laminar natural convection of air) or "
               '"1/3" (turbulent); 0 is a constant film coefficient. Below 0 the film '
               "coefficient would be infinite where the face reaches the fluid temperature; "
               "above 1 no convective loss in air grows that fast")
    v = sec.raw(key)
    n = None
    if isinstance(v, str):
        m = _FRACTION.match(v)
        if m and float(m.group(2)) > 0:
            n = float(m.group(1)) / float(m.group(2))
        else:
            try:
                n = float(v)
            except ValueError:
                n = None
    elif isinstance(v, (int, float)) and not isinstance(v, bool):
        n = float(v)
    if n is None or not math.isfinite(n):
        raise sec.error(key, f"expected the power-law exponent as a plain number, got {v!r}",
                        allowed)
    if not (lo <= n <= hi):
        raise sec.error(key, f"the power-law exponent {v!r} is outside {lo:g} .. {hi:g}", allowed)
    return n


def _combine(func, *parts):
    """Combine numbers/Schedules pointwise with ``func`` (None parts are passed as None).

    The result is a number when all parts are numbers, otherwise a Schedule on the union of
    all knot times (a step in any part gives a step in the result).
    """
    scheds = [p for p in parts if isinstance(p, Schedule)]
    if not scheds:
        return func(*parts)
    times = sorted({t for s in scheds for t in s.times})

    def at(t, side):
        return func(*[p(t, side=side) if isinstance(p, Schedule) else p for p in parts])

    ts, vs = [], []
    for t in times:
        left, right = at(t, "left"), at(t, "right")
        if not math.isclose(left, right, rel_tol=1e-12, abs_tol=1e-12):
            ts += [t, t]
            vs += [left, right]
        else:
            ts.append(t)
            vs.append(right)
    return vs[0] if len(set(vs)) == 1 else Schedule(ts, vs)


def _at_most(sec, name, default, hi, why):
    """A positive dimensionless factor of ``sec`` no larger than ``hi``."""
    x = sec.quantity(name, "dimensionless", default, positive=True)
    if x > hi:
        raise sec.error(name, f"{sec.raw(name)!r} is more than fdwall accepts for {name} "
                              f"({hi:g}): {why}", f"a number above 0 and at most {hi:g}")
    return x


def _max(x) -> float:
    return max(x.values) if isinstance(x, Schedule) else float(x)


def _min(x) -> float:
    return min(x.values) if isinstance(x, Schedule) else float(x)


_NUMERIC_TEXT = re.compile(r"^\s*[-+]?(\d|\.\d)")


# ============================================================================ the loader

class _Loader:
    def __init__(self, data, file, text, stem):
        self.file = str(file)
        self.text = text if isinstance(text, str) else ""
        self.stem = stem or Path(self.file).stem or "case"
        self.top = Section(data, "", self.file, S.TOP, "the case file")
        self.user_materials = {}
        self.n_nodes = 1  # temperatures solved for (estimate: wall nodes + chamber)

    # ------------------------------------------------------------------ whole case
    def case(self) -> Case:
        top = self.top
        title = top.text("title", self.stem)
        top.text("description", "")
        ident = self._report(top.table("report", S.REPORT, "the [report] table", None))
        self.user_materials = self._materials()
        run = top.table("run", S.RUN, "the [run] table")
        duration = run.quantity("duration", "time", positive=True)
        start = run.quantity("start_temperature", "temperature", ROOM)

        kind = top.exclusive("wall", "walls", required=True)
        chamber = None
        if kind == "wall":
            if top.has("chamber"):
                raise top.error("chamber", "a [chamber] belongs to an enclosure, but this case "
                                           "has a single [wall]",
                                "[[walls]] headers (one per wall) together with [chamber], or "
                                "a single [wall] without [chamber]")
            sec = top.table("wall", S.WALL, "the [wall] table")
            wall, inner, outer, starts = self._wall(sec, enclosure=False)
            walls, wall_names, layer_starts = [wall], [wall.name], [starts]
            ews = ()
        else:
            secs = top.tables("walls", S.ENCLOSURE_WALL, "an enclosure wall")
            if not top.has("chamber"):
                raise top.error("chamber", "an enclosure ([[walls]]) needs a [chamber] table",
                                "a [chamber] table with at least heat_capacity")
            ews, walls, layer_starts = [], [], []
            for j, sec in enumerate(secs):
                ew, starts = self._wall(sec, enclosure=True, index=j)
                ews.append(ew)
                walls.append(ew.wall)
                layer_starts.append(starts)
            wall_names = [w.name for w in walls]
            dup = sorted({n for n in wall_names if wall_names.count(n) > 1})
            if dup:
                j = [i for i, n in enumerate(wall_names) if n == dup[0]][1]
                raise CaseError(f"the wall name '{dup[0]}' is used twice", file=self.file,
                                key=f"walls[{j}].name", allowed="a different name for each wall")
            chamber, ch_start = self._chamber(top.table("chamber", S.CHAMBER, "the [chamber] table"))
        self.walls, self.wall_names = walls, wall_names
        self.has_chamber = chamber is not None

        heater = None
        if top.has("heater"):
            heater = self._heater(top.table("heater", S.HEATER, "the [heater] table"), chamber)
        control = Control()
        if top.has("control"):
            if heater is None:
                raise top.error("control", "[control] is given but there is no [heater] to control",
                                "a [heater] table together with [control]")
            control = self._control(top.table("control", S.CONTROL, "the [control] table"), chamber)

        out_every = run.quantity("output_every", "time", None, positive=True)
        if out_every is not None and out_every > duration:
            raise run.error("output_every", f"{run.raw('output_every')!r} is longer than the "
                                            f"run ({run.raw('duration')!r})",
                            "a spacing no longer than the duration")
        snaps = run.quantity_list("snapshots", "time", [], nonnegative=True)
        for i, t in enumerate(snaps):
            if t > duration * (1 + 1e-12):
                raise CaseError(f"the snapshot {run.raw('snapshots')[i]!r} is after the end of "
                                f"the run ({run.raw('duration')!r})", file=self.file,
                                key=join(run.key("snapshots"), i),
                                allowed="times between 0 and the duration")
        self._check_outputs(run, duration, out_every, len(snaps))
        tol = run.quantity("tolerance", "temperature_difference", None, positive=True)  # None: from the contract
        max_step = run.quantity("max_step", "time", None, positive=True)
        steady_at = run.quantity("steady_at", "time", None, nonnegative=True)
        if steady_at is not None and steady_at > duration:
            raise run.error("steady_at", f"{run.raw('steady_at')!r} lies after the end of the run "
                                         f"({run.raw('duration')!r})",
                            "a time between 0 and the duration")
        events = tuple(self._watch(w, i) for i, w in
                       enumerate(run.tables("watch", S.WATCH, "a [[run.watch]] entry", [])))

        with _model(self.file, "run", "the [run] table"):
            settings = RunSettings(duration=duration, start_temperature=start, output_every=out_every,
                                   snapshots=tuple(snaps), tolerance=tol, max_step=max_step,
                                   watch=events, steady_at=steady_at)
        with _model(self.file, "(case)", "the case"):
            if kind == "wall":
                case = Case(run=settings, wall=walls[0], inner=inner, outer=outer,
                            heater=heater, control=control, name=title, source=self.text,
                            report=ident)
            else:
                case = Case(run=settings, walls=tuple(ews), chamber=chamber, heater=heater,
                            control=control, name=title, source=self.text, report=ident)
        return case

    def _report(self, sec) -> tuple:
        """The [report] table as ((key, text), ...) in the order of schema.REPORT."""
        if sec is None:
            return ()
        out = []
        for k in S.REPORT:
            if not sec.has(k):
                continue
            v = sec.raw(k)
            if k == "date" and hasattr(v, "isoformat"):   # a TOML date or date-time
                v = v.isoformat()
            if not isinstance(v, str):
                raise sec.error(k, f"expected text, got {v!r}", S.REPORT[k])
            out.append((k, v))
        return tuple(out)

    def _check_outputs(self, run, duration, out_every, n_snaps):
        """Refuse runs that would store more results than memory holds."""
        dt = out_every if out_every is not None else duration / 200.0
        n_out = duration / dt + 2 + n_snaps
        key = "output_every" if run.has("output_every") else "duration"
        if n_out > MAX_OUTPUTS:
            raise run.error(key, f"a run of {run.raw('duration')!r} with results every "
                                 f"{run.raw('output_every', f'{dt:g} s')!r} stores {n_out:.3g} "
                                 f"output times, more than fdwall keeps ({MAX_OUTPUTS:g})",
                            f"an output_every of at least the duration / {MAX_OUTPUTS:g} "
                            f"({duration / MAX_OUTPUTS:.3g} s here)")
        if n_out * self.n_nodes > MAX_STORED:
            raise run.error(key, f"{n_out:.3g} output times x about {self.n_nodes} temperatures "
                                 f"make {n_out * self.n_nodes:.3g} stored values, more than fdwall "
                                 f"keeps ({MAX_STORED:g}, {MAX_STORED * 8 / 1e9:g} GB)",
                            "a longer output_every, or fewer cells (cells, mesh_refine)")

    # ------------------------------------------------------------------ materials
    def _materials(self):
        if not self.top.has("materials"):
            return {}
        mats = self.top.raw("materials")
        if not isinstance(mats, Mapping):
            raise self.top.error("materials", "expected [materials.<name>] tables",
                                 "one [materials.<name>] table per material, with conductivity, "
                                 "specific_heat and density")
        out = {}
        for name, entry in mats.items():
            sec = Section(entry, join("materials", name), self.file, S.MATERIAL,
                          f"material '{name}'")
            d = {
                "k": self._property(sec, "conductivity", "conductivity"),
                "cp": self._property(sec, "specific_heat", "specific_heat"),
                "rho": sec.quantity("density", "density", positive=True),
            }
            if sec.has("emissivity"):
                d["emissivity"] = sec.quantity("emissivity", "dimensionless", lo=0.0, hi=1.0)
            t_max = sec.quantity("max_service_temperature", "temperature", None)
            if t_max is not None:
                d["t_max"] = t_max
            for key in ("category", "source", "notes"):
                if sec.has(key):
                    d[key] = sec.text(key)
            with _model(self.file, sec.path, f"material '{name}'"):
                out[name] = material_from_dict(name, d)
        return out

    def _property(self, sec, key, kind):
        v = sec.raw(key)
        k = sec.key(key)
        if isinstance(v, list):
            T, vals = parse_pairs(v, "temperature", kind, k, self.file, strictly=True,
                                  what="table", lo=None)
            for i, x in enumerate(vals):
                if not x > 0:
                    raise CaseError(f"the value {v[i][1]!r} must be greater than zero", file=self.file,
                                    key=join(join(k, i), 1), allowed="positive values")
            if len(T) == 1:
                return vals[0]
            return {"T": T, "values": vals}
        if isinstance(v, Mapping):
            return self._polynomial(Section(v, k, self.file, S.POLYNOMIAL, "a polynomial"), kind)
        return parse_value(v, kind, k, self.file, positive=True)

    def _polynomial(self, sec, kind):
        c = sec.raw("coefficients")
        if not isinstance(c, list) or not c or not all(is_finite_number(x) for x in c):
            raise sec.error("coefficients", f"expected a non-empty list of numbers, got {c!r}",
                            "a list of numbers, ascending powers of T: [c0, c1, c2, ...]")
        tu = sec.text("temperature_unit", "K", choices=("K", "degC", "degF"))
        unit = sec.text("unit")
        factor = U.parse_quantity(f"1 {unit}", kind, sec.key("unit"), file=self.file,
                                  check_range=False)
        lo = sec.quantity("valid_from", "temperature")
        hi = sec.quantity("valid_to", "temperature")
        if not hi > lo:
            raise sec.error("valid_to", "valid_to must be above valid_from",
                            "a fit range with valid_from < valid_to")
        # T_u = a T_K + b: the polynomial in T_u expanded in powers of T_K
        a, b = {"K": (1.0, 0.0), "degC": (1.0, -273.15), "degF": (1.8, -459.67)}[tu]
        p = np.polynomial.Polynomial([float(x) for x in c])(np.polynomial.Polynomial([b, a]))
        coeffs = [float(x) * factor for x in p.coef]
        T = np.linspace(lo, hi, 201)
        with np.errstate(all="ignore"):
            vals = np.polynomial.polynomial.polyval(T, coeffs)
        for Ti, v in zip(T, vals):
            if v > 0 or not np.isfinite(v):  # sign: checked by the material itself
                U.check_magnitude(float(v), kind, sec.key("coefficients"), file=self.file,
                                  shown=f"the polynomial at {Ti:.6g} K", positive=True)
        return {"coeffs": coeffs, "T_min": lo, "T_max": hi}

    def _material(self, name, key):
        if not isinstance(name, str) or not name.strip():
            raise CaseError(f"expected a material name as text, got {name!r}", file=self.file,
                            key=key, allowed="the name of a bundled material or of a "
                                             "[materials.<name>] table in this file")
        if name in self.user_materials:
            return self.user_materials[name]
        try:
            return get_material(name)
        except MaterialError as exc:
            msg = str(exc).split(" Call fdwall.materials")[0]
            near = [n for n in self.user_materials if n.lower() in name.lower()
                    or name.lower() in n.lower()]
            if near:
                msg += f" Materials defined in this file: {', '.join(self.user_materials)}."
            raise CaseError(msg, file=self.file, key=key,
                            allowed=f"one of the {len(list_materials())} bundled materials ("
                                    + ", ".join(list_materials()) + ") or a material defined "
                                    "in this file as a [materials.<name>] table") from None

    # ------------------------------------------------------------------ walls
    def _wall(self, sec, enclosure, index=0):
        name = sec.text("name", f"wall {index}" if enclosure else "wall")
        shape = sec.text("shape", "slab", choices=("slab", "cylinder", "sphere"))
        orientation = sec.text("orientation", "side", choices=("side", "top", "bottom"))
        if shape == "slab":
            for k in ("inner_radius", "inner_diameter", "length"):
                if sec.has(k):
                    raise sec.error(k, f"'{k}' applies to a cylinder or sphere, but this wall "
                                       "is a slab", "for a slab: area; for a cylinder: "
                                                    "inner_radius (or inner_diameter) and length")
            area = sec.quantity("area", "area", MISSING if enclosure else 1.0, positive=True)
            r_in, length = None, 1.0
        else:
            if sec.has("area"):
                raise sec.error("area", f"'area' applies to a slab; a {shape} gets its areas "
                                        "from its radii" + (" and length" if shape == "cylinder"
                                                            else ""),
                                "inner_radius (or inner_diameter)"
                                + (" and length" if shape == "cylinder" else ""))
            if shape == "sphere" and sec.has("length"):
                raise sec.error("length", "'length' applies to a cylinder, not to a sphere",
                                "inner_radius or inner_diameter")
            which = sec.exclusive("inner_radius", "inner_diameter", required=True)
            r_in = sec.quantity(which, "length", positive=True)
            if which == "inner_diameter":
                r_in *= 0.5
            length = sec.quantity("length", "length", 1.0, positive=True)
            area = 1.0
        refine = _at_most(sec, "mesh_refine", 1.0, MAX_REFINE,
                          "the default mesh is already converged; more cells only cost memory")
        lsecs = sec.tables("layers", S.LAYER, "a layer")
        layers, starts = [], []
        for i, ls in enumerate(lsecs):
            mat = self._material(ls.raw("material"), ls.key("material"))
            if ls.has("conductivity_factor"):
                kf = ls.quantity("conductivity_factor", "dimensionless")
                if not 0.0 < kf <= MAX_CONDUCTIVITY_FACTOR:
                    raise ls.error("conductivity_factor",
                                   f"{kf!r} is not a usable multiplier on the conductivity",
                                   f"a number > 0 and at most {MAX_CONDUCTIVITY_FACTOR:g} "
                                   "(1 keeps the material's own k(T), e.g. 1.1 for +10 %)")
                mat = mat.with_conductivity_factor(kf)
            th = ls.quantity("thickness", "length", positive=True)
            cells = ls.integer("cells", None, minimum=1)
            if cells is not None and cells > MAX_LAYER_CELLS:
                raise ls.error("cells", f"{cells} cells is more than fdwall meshes in one layer "
                                        f"({MAX_LAYER_CELLS}); the default of 2 to 24 cells is "
                                        "already converged",
                               f"a whole number from 1 to {MAX_LAYER_CELLS}, or leave cells out")
            lname = ls.text("name", "")
            start_l = ls.quantity("start_temperature", "temperature", None)
            starts.append(start_l)
            with _model(self.file, ls.path, "the layer"):
                layers.append(Layer(material=mat, thickness=th, cells=cells, name=lname,
                                    start_temperature=start_l))
        n_if = len(layers) - 1
        contact = ()
        if sec.has("interface_resistance"):
            contact = tuple(sec.quantity_list("interface_resistance", "contact_resistance",
                                              nonnegative=True))
            if len(contact) != n_if:
                raise sec.error("interface_resistance",
                                f"{len(contact)} value(s) given, but the wall has {len(layers)} "
                                f"layer(s) and so {n_if} interface(s)",
                                f"a list of {n_if} contact resistance(s), one per interface "
                                'from the inner face outward, e.g. "0.002 m2K/W" ("0 m2K/W" for '
                                "perfect contact)")
        with _model(self.file, sec.path, f"wall '{name}'"):
            wall = Wall(layers=tuple(layers), shape=shape, area=area, inner_radius=r_in,
                        length=length, interface_resistance=contact, refine=refine, name=name)
        nodes = self._check_mesh(sec, wall, lsecs)
        geo = dict(wall=wall, orientation=orientation)
        if not enclosure:
            if sec.has("bridge"):
                raise sec.error("bridge", "thermal bridges are available on enclosure walls only")
            inner = self._face(sec.table("inner_face", S.FACE, "the inner face", None), "inner",
                               geo)
            outer = self._face(sec.table("outer_face", S.FACE, "the outer face", None), "outer",
                               geo)
            return wall, inner, outer, starts
        isec = sec.table("inner_face", S.CHAMBER_FACE, "the inner face (facing the chamber)", None)
        inner_h, inner_eps = 10.0, None
        if isec is not None:
            which = isec.exclusive("film_coefficient", "convection")
            if which == "film_coefficient":
                inner_h = isec.quantity("film_coefficient", "film_coefficient", nonnegative=True)
            elif which == "convection":
                inner_h = self._convection(isec.table("convection", S.CONVECTION,
                                                      "a convection table"), "inner", geo,
                                           chamber=True)
            if isec.has("emissivity"):
                inner_eps = self._emissivity(isec, "emissivity")
        outer = self._face(sec.table("outer_face", S.FACE, "the outer face", None), "outer", geo)
        bridge = None
        if sec.has("bridge"):
            bridge = self._bridge(sec.table("bridge", S.BRIDGE, "a thermal bridge"), wall)
            self.n_nodes += nodes  # the bridge is a second path through the wall
        with _model(self.file, sec.path, f"wall '{name}'"):
            ew = EnclosureWall(wall=wall, outer=outer, inner_face_convection=inner_h, inner_face_emissivity=inner_eps,
                               bridge=bridge)
        return ew, starts

    def _check_mesh(self, sec, wall, lsecs):
        """Refuse meshes too large to hold in memory; count the wall's nodes."""
        refine = wall.refine
        cells = [int(math.ceil(l.cells * refine)) if l.cells is not None else c
                 for l, c in zip(wall.layers, default_cells(wall))]
        for i, (l, c) in enumerate(zip(wall.layers, cells)):
            if c > MAX_LAYER_CELLS:
                raise lsecs[i].error("cells", f"{l.cells} cells times mesh_refine = {refine:g} "
                                              f"makes {c} cells, more than fdwall meshes in one "
                                              f"layer ({MAX_LAYER_CELLS})",
                                     f"cells x mesh_refine up to {MAX_LAYER_CELLS}")
        if sum(cells) > MAX_WALL_CELLS:
            raise sec.error("mesh_refine" if sec.has("mesh_refine") else "layers",
                            f"the wall's mesh would have {sum(cells)} cells, more than fdwall "
                            f"meshes in one wall ({MAX_WALL_CELLS})",
                            f"fewer cells or a smaller mesh_refine: up to {MAX_WALL_CELLS} cells "
                            "per wall")
        nodes = sum(cells) + len(cells) + 1
        self.n_nodes += nodes
        return nodes

    def _bridge(self, sec, wall):
        if wall.shape != "slab":
            raise sec.error(None, "thermal bridges are supported on slab walls only")
        f = sec.quantity("area_fraction", "dimensionless")
        if not 0.0 < f < 1.0:
            raise sec.error("area_fraction", f"{sec.raw('area_fraction')!r} is not strictly "
                                             "between 0 and 1", "a fraction 0 < f < 1, e.g. 0.05")
        mat = self._material(sec.raw("material"), sec.key("material"))
        idx = sec.raw("replaces_layers")
        if isinstance(idx, int) and not isinstance(idx, bool):
            idx = [idx]
        if not isinstance(idx, list) or not idx or not all(
                isinstance(i, int) and not isinstance(i, bool) for i in idx):
            raise sec.error("replaces_layers", f"expected a list of layer indices, got {idx!r}",
                            f"0-based layer indices, e.g. [1] (0..{len(wall.layers) - 1})")
        for i in idx:
            if not 0 <= i < len(wall.layers):
                raise sec.error("replaces_layers", f"layer index {i} does not exist: the wall has "
                                                   f"{len(wall.layers)} layer(s)",
                                f"0-based layer indices 0..{len(wall.layers) - 1}")
        with _model(self.file, sec.path, "the bridge"):
            return Bridge(area_fraction=f, material=mat, replaces_layers=tuple(idx))

    # ------------------------------------------------------------------ faces
    def _face(self, sec, side, geo):
        if sec is None:
            return Face()
        marks = self._touch_marks(sec, side)
        face = self._face_conditions(sec, side, geo)
        if marks:
            face = replace(face, **marks)
        return face

    def _touch_marks(self, sec, side):
        """``touch`` and ``surface_class`` of an outer face (fdwall touch), as Face fields."""
        out = {}
        for key, field_name, choices in (("touch", "touch", TOUCH_MARKS),
                                         ("surface_class", "surface_class", SURFACE_CLASSES)):
            if not sec.has(key):
                continue
            if side != "outer":
                raise sec.error(key, f"'{key}' applies to outer faces only (the faces people "
                                     "can touch)", f"{key} in the outer face's table")
            out[field_name] = sec.text(key, choices=choices)
        return out

    def _face_conditions(self, sec, side, geo):
        if sec.has("fixed_temperature"):
            others = [k for k in sec.data if k not in ("fixed_temperature", "touch",
                                                       "surface_class")]
            if others:
                raise sec.error(others[0], f"'{others[0]}' has no effect: fixed_temperature "
                                           "holds the surface temperature and overrides every "
                                           "other condition of the face",
                                "either fixed_temperature alone, or the exchange keys (air, "
                                "convection, radiation, fluxes) without it")
            T = sec.schedule("fixed_temperature", "temperature")
            return Face(fixed_temperature=T)
        air = sec.schedule("fluid_temperature", "temperature", None)
        conv = None
        which = sec.exclusive("film_coefficient", "convection")
        if which == "film_coefficient":
            conv = sec.quantity("film_coefficient", "film_coefficient", nonnegative=True)
        elif which == "convection":
            conv = self._convection(sec.table("convection", S.CONVECTION, "a convection table"),
                                    side, geo, chamber=False)
        if conv is not None and air is None:
            raise sec.error(which, f"'{which}' needs the temperature of the fluid (air) at the face, but "
                                   "fluid_temperature is not given",
                            'fluid_temperature = "20 degC" (or a schedule) next to it')
        eps = self._emissivity(sec, "emissivity") if sec.has("emissivity") else None
        surr = sec.schedule("surroundings_temperature", "temperature", None)
        sky = sec.schedule("sky_temperature", "temperature", None)
        if sky is not None or sec.has("sky_view"):
            if sky is None or not sec.has("sky_view"):
                given, need = (("sky_temperature", "sky_view") if sky is not None
                               else ("sky_view", "sky_temperature"))
                raise sec.error(given, f"'{given}' is given without '{need}'",
                                "sky_temperature and sky_view together (e.g. sky_temperature = "
                                '"-10 degC", sky_view = 0.5)')
            F = sec.quantity("sky_view", "dimensionless", lo=0.0, hi=1.0)
            rest = surr if surr is not None else air
            if rest is None and F < 1.0:
                raise sec.error("sky_view", "the part of the view not taken by the sky needs a "
                                            "temperature, but neither surroundings_temperature "
                                            "nor fluid_temperature is given",
                                "surroundings_temperature or fluid_temperature, or sky_view = 1")
            if rest is None:
                rest = 1.0
            surr = _combine(lambda ts, tr: (F * ts ** 4 + (1.0 - F) * tr ** 4) ** 0.25, sky, rest)
        if surr is not None and eps is None:
            key = "sky_temperature" if sky is not None else "surroundings_temperature"
            raise sec.error(key, f"'{key}' is given but the face has no emissivity, so it "
                                 "exchanges no radiation", "emissivity next to it (0..1 or a "
                                                           "finish name)")
        if eps is not None and surr is None and air is None:
            raise sec.error("emissivity", "radiation needs the temperature of what the face "
                                          "sees, but neither surroundings_temperature, "
                                          "sky_temperature nor fluid_temperature is given",
                            "surroundings_temperature (or fluid_temperature) next to emissivity")
        if air is not None and conv is None and eps is None:
            raise sec.error("fluid_temperature", "fluid_temperature has no effect without a film "
                                               "coefficient, a convection model or an emissivity",
                            "film_coefficient or [convection], and/or emissivity, next to it")
        fluxes = []
        if sec.has("heat_flux"):
            fluxes.append(sec.schedule("heat_flux", "heat_flux"))
        if sec.has("heater_area") and not sec.has("heater_power"):
            raise sec.error("heater_area", "'heater_area' is given without 'heater_power'",
                            "heater_power (and optionally heater_area)")
        if sec.has("heater_power"):
            P = sec.schedule("heater_power", "power", nonnegative=True)
            w = geo["wall"]
            default_area = w.inner_area if side == "inner" else w.outer_area
            A = sec.quantity("heater_area", "area", default_area, positive=True)
            q = _combine(lambda p: p / A, P)
            U.check_magnitude(max(abs(_max(q)), abs(_min(q))), "heat_flux",
                              sec.key("heater_area" if sec.has("heater_area") else "heater_power"),
                              file=self.file, shown="heater_power / heater_area")
            fluxes.append(q)
        sol = [k for k in ("solar_absorptivity", "solar_irradiance") if sec.has(k)]
        if len(sol) == 1:
            other = "solar_irradiance" if sol[0] == "solar_absorptivity" else "solar_absorptivity"
            raise sec.error(sol[0], f"'{sol[0]}' is given without '{other}'",
                            'both, e.g. solar_absorptivity = 0.6 and solar_irradiance = '
                            '[["0 h", "0 W/m2"], ["6 h", "600 W/m2"], ["12 h", "0 W/m2"]]')
        if sol:
            a = sec.quantity("solar_absorptivity", "dimensionless", lo=0.0, hi=1.0)
            G = sec.schedule("solar_irradiance", "heat_flux", nonnegative=True)
            fluxes.append(_combine(lambda g: a * g, G))
        flux = _combine(lambda *q: float(sum(q)), *fluxes) if fluxes else None
        with _model(self.file, sec.path, f"the {side} face"):
            return Face(heat_flux=flux, fluid_temperature=air, convection=conv, emissivity=eps, surroundings_temperature=surr)

    def _emissivity(self, sec, key):
        v = sec.raw(key)
        k = sec.key(key)
        allowed = ('a number 0..1 (e.g. 0.85), a finish name such as "painted_steel" or '
                   '"aluminium_oxidised", or a table [[temperature, emissivity], ...]')
        if isinstance(v, list):
            T, e = parse_pairs(v, "temperature", "dimensionless", k, self.file, strictly=True,
                               lo=0.0, hi=1.0, what="table")
            return e[0] if len(T) == 1 else Schedule(T, e)
        if isinstance(v, str) and not _NUMERIC_TEXT.match(v):
            try:
                fin = get_finish(v)
            except InputError as exc:
                raise CaseError(str(exc).rstrip("."), file=self.file, key=k,
                                allowed=allowed) from None
            if fin.T_K:
                return Schedule(fin.T_K, fin.eps)
            return float(fin.emissivity)
        if isinstance(v, (str, int, float)) and not isinstance(v, bool):
            return parse_value(v, "dimensionless", k, self.file, lo=0.0, hi=1.0)
        raise CaseError(f"expected an emissivity, got {v!r}", file=self.file, key=k,
                        allowed=allowed)

    def _convection(self, sec, side, geo, chamber):
        model = sec.text("model", choices=S.CONVECTION_MODELS)
        used = set(S.CONVECTION_KEYS[model]) | {"model", "multiplier"}
        if model not in S.CONVECTION_NO_AIR:
            used |= {"altitude", "pressure"}
        for k in sec.data:
            if k not in used:
                raise sec.error(k, f"'{k}' does not apply to the convection model '{model}'",
                                f"for '{model}': " + ", ".join(sorted(used)))
        wall, orient = geo["wall"], geo["orientation"]
        if model == "natural":
            need = ("diameter" if wall.shape != "slab" else
                    "height" if orient == "side" else "char_length")
            for k in ("height", "char_length", "diameter"):
                if k != need and sec.has(k):
                    raise sec.error(k, f"'{k}' does not apply to the convection model 'natural' "
                                       f"on a {wall.shape} wall with orientation '{orient}'",
                                    f"'{need}' (natural convection of "
                                    + ("a horizontal cylinder" if need == "diameter" else
                                       "a vertical plate" if need == "height" else
                                       "a horizontal plate, area/perimeter") + ")")
        kw = {"multiplier": _at_most(sec, "multiplier", 1.0, MAX_MULTIPLIER,
                                     "a factor that large is no correction of the correlation "
                                     "any more; give film_coefficient instead")}
        loc = {"where": "chamber" if chamber else "outside"}
        if model == "power_law":
            n = _power_law_exponent(sec, "exponent")
            a = U.parse_power_law_coefficient(sec.raw("coefficient"), n, sec.key("coefficient"),
                                              file=self.file, exponent_key=sec.key("exponent"))
            with _model(self.file, sec.path, "the convection model"):
                return Convection.power_law(a, n, **kw, **loc)
        where = sec.exclusive("altitude", "pressure")
        if where == "altitude":
            kw["altitude"] = sec.quantity("altitude", "length")
        elif where == "pressure":
            kw["pressure"] = sec.quantity("pressure", "pressure", positive=True)
        r = wall.radii()[0] if side == "inner" else wall.radii()[-1]
        face_d = 2.0 * r if wall.shape == "cylinder" else None

        def diameter():
            if sec.has("diameter"):
                return sec.quantity("diameter", "length", positive=True)
            if face_d is None:
                raise sec.error("diameter", f"the convection model '{model}' needs the diameter, "
                                            "and this wall is not a cylinder to take it from",
                                'diameter = "0.3 m"')
            return face_d

        with _model(self.file, sec.path, "the convection model"):
            if model == "natural":
                if wall.shape == "cylinder":
                    return Convection.horizontal_cylinder(diameter(), **kw, **loc)
                if wall.shape == "sphere":
                    raise sec.error("model", "there is no natural-convection model for a sphere",
                                    "film_coefficient, or a model that fits the face best, e.g. "
                                    "horizontal_cylinder with a diameter")
                if orient == "side":
                    return Convection.natural_vertical(
                        sec.quantity("height", "length", positive=True), **kw, **loc)
                up = (orient == "top") == (side == "outer")  # roof outside / floor inside look up
                return Convection.natural_horizontal(
                    sec.quantity("char_length", "length", positive=True),
                    "up" if up else "down", **kw, **loc)
            if model == "vertical_plate":
                return Convection.natural_vertical(sec.quantity("height", "length", positive=True),
                                                   **kw, **loc)
            if model == "horizontal_plate":
                return Convection.natural_horizontal(
                    sec.quantity("char_length", "length", positive=True),
                    sec.text("facing", choices=("up", "down")), **kw, **loc)
            if model == "tilted_plate":
                tilt = math.degrees(sec.quantity("tilt", "angle"))
                return Convection.natural_tilted(
                    sec.quantity("height", "length", positive=True), tilt,
                    char_length=sec.quantity("char_length", "length", None, positive=True),
                    **kw, **loc)
            if model == "horizontal_cylinder":
                return Convection.horizontal_cylinder(diameter(), **kw, **loc)
            if model == "vertical_cylinder":
                return Convection.vertical_cylinder(
                    sec.quantity("height", "length", positive=True), diameter(), **kw, **loc)
            speed = sec.quantity("wind_speed", "speed", nonnegative=True)
            nat = sec.boolean("with_natural", False)
            if model == "wind_plate":
                return Convection.wind_plate(
                    sec.quantity("length", "length", positive=True), speed, with_natural=nat,
                    re_transition=sec.quantity("transition_reynolds", "dimensionless", 5.0e5,
                                               nonnegative=True), **kw)
            return Convection.wind_cylinder(diameter(), speed, with_natural=nat, **kw)

    # ------------------------------------------------------------------ chamber, heater, control
    def _chamber(self, sec):
        v = sec.raw("heat_capacity")
        if isinstance(v, list):
            T, C = parse_pairs(v, "temperature", "heat_capacity", sec.key("heat_capacity"),
                               self.file, strictly=True, what="table")
            cap = C[0] if len(T) == 1 else Schedule(T, C)
        else:
            cap = sec.quantity("heat_capacity", "heat_capacity")
        if not _min(cap) > 0:
            raise sec.error("heat_capacity", "the heat capacity must be greater than zero",
                            'a positive heat capacity, e.g. "40 kJ/K"')
        load = [k for k in ("load_mass", "load_specific_heat") if sec.has(k)]
        if len(load) == 1:
            other = "load_specific_heat" if load[0] == "load_mass" else "load_mass"
            raise sec.error(load[0], f"'{load[0]}' is given without '{other}'",
                            'both, e.g. load_mass = "25 kg" and load_specific_heat = '
                            '"500 J/kg/K"')
        if load:
            mc = (sec.quantity("load_mass", "mass", nonnegative=True)
                  * sec.quantity("load_specific_heat", "specific_heat", positive=True))
            cap = _combine(lambda c: c + mc, cap)
        room = sec.schedule("room_temperature", "temperature", ROOM)
        vol = sec.quantity("volume", "volume", None, positive=True)
        leak = 0.0
        if sec.has("leakage"):
            leak = U.parse_leakage(sec.raw("leakage"), vol, sec.key("leakage"), file=self.file,
                                   volume_key=sec.key("volume"))
        extra = sec.quantity("extra_loss", "conductance", 0.0, nonnegative=True)
        box = sec.quantity_list("inner_dimensions", "length", None, positive=True, length=3)
        start = sec.quantity("start_temperature", "temperature", None)
        with _model(self.file, sec.path, "the chamber"):
            ch = Chamber(heat_capacity=cap, room_temperature=room, leakage=leak, extra_loss=extra,
                         inner_dimensions=tuple(box) if box else None, start_temperature=start)
        return ch, start

    def _wall_ref(self, sec, key, default=0):
        v = sec.raw(key, default)
        names = self.wall_names
        listing = "; ".join(f"{i} = '{n}'" for i, n in enumerate(names))
        allowed = f"a wall index 0..{len(names) - 1} or a wall name ({listing})"
        if isinstance(v, bool):
            raise sec.error(key, f"expected a wall index or name, got {v!r}", allowed)
        if isinstance(v, int):
            if not 0 <= v < len(names):
                raise sec.error(key, f"wall index {v} is out of range: the case has "
                                     f"{len(names)} wall(s)", allowed)
            return v
        if isinstance(v, str):
            if v in names:
                return names.index(v)
            near = difflib.get_close_matches(v, names, n=1, cutoff=0.5)
            hint = f" (did you mean '{near[0]}'?)" if near else ""
            raise sec.error(key, f"there is no wall named '{v}'{hint}", allowed)
        raise sec.error(key, f"expected a wall index or name, got {v!r}", allowed)

    def _heater(self, sec, chamber):
        P = sec.schedule("power", "power", nonnegative=True)
        placement = sec.text("placement", "chamber" if chamber is not None else "inner_face",
                             choices=("chamber", "inner_face", "interface"))
        if placement == "chamber" and chamber is None:
            raise sec.error("placement", "a heater in the chamber needs an enclosure with a "
                                         "[chamber], but this is a single-wall case",
                            '"inner_face" or "interface" for a single wall')
        if placement == "chamber":
            for k in ("wall", "after_layer"):
                if sec.has(k):
                    raise sec.error(k, f"'{k}' does not apply to a heater placed in the chamber",
                                    'placement = "inner_face" or "interface" to use it')
        j = self._wall_ref(sec, "wall") if placement != "chamber" else 0
        iface = 0
        if placement == "interface":
            iface = sec.integer("after_layer")
            _refuse(sec, "after_layer", interface_problem(self.walls[j], iface))
        elif sec.has("after_layer"):
            raise sec.error("after_layer", "'after_layer' applies to placement = \"interface\" only")
        with _model(self.file, sec.path, "the heater"):
            return Heater(power=P, placement=placement, wall=j, after_layer=iface,
                          voltage_ratio=_at_most(sec, "voltage_ratio", 1.0, MAX_VOLTAGE_RATIO,
                                                 "an element on ten times its rated voltage "
                                                 "takes a hundred times its rated power and "
                                                 "burns out"),
                          resistance_coefficient=sec.quantity(
                              "resistance_coefficient", "inverse_temperature", 0.0,
                              nonnegative=True),
                          rated_at=sec.quantity("rated_at", "temperature", ROOM))

    def _control(self, sec, chamber):
        mode = sec.text("mode", "fixed", choices=("fixed", "duty", "thermostat", "pid"))
        kw = {"mode": mode}
        kw["duty"] = sec.schedule("duty", "dimensionless", 1.0, lo=0.0, hi=1.0)
        kw["switched"] = sec.boolean("switched", False)
        kw["period"] = sec.quantity("period", "time", 60.0, positive=True)
        sp = sec.schedule("setpoint", "temperature", None)
        if mode in ("thermostat", "pid") and sp is None:
            raise sec.error("setpoint", f"mode '{mode}' needs a setpoint",
                            'setpoint = "850 degC" or a schedule [["0 h", "20 degC"], '
                            '["2 h", "850 degC"], ...]')
        kw["setpoint"] = sp
        kw["band"] = sec.quantity("band", "temperature_difference", 2.0, nonnegative=True)
        sensor = sec.text("sensor", "chamber" if chamber is not None else "wall",
                          choices=("chamber", "wall"))
        if sensor == "chamber" and chamber is None:
            raise sec.error("sensor", "a chamber sensor needs an enclosure with a [chamber]",
                            'sensor = "wall" with sensor_wall and sensor_depth')
        kw["sensor"] = sensor
        if sensor == "wall":
            j = self._wall_ref(sec, "sensor_wall")
            d = sec.quantity("sensor_depth", "length", 0.0, nonnegative=True)
            _refuse(sec, "sensor_depth", depth_problem(self.walls[j], d))
            kw["sensor_wall"], kw["sensor_depth"] = j, d
        else:
            for k in ("sensor_wall", "sensor_depth"):
                if sec.has(k):
                    raise sec.error(k, f"'{k}' applies to sensor = \"wall\" only")
        for k, default in (("proportional_gain", 0.05), ("integral_gain", 0.0),
                           ("derivative_gain", 0.0)):
            kw[k] = sec.quantity(k, k, default, nonnegative=True)
        kw["power_on"] = sec.schedule("power_on", "dimensionless", 1.0, lo=0.0, hi=1.0)
        with _model(self.file, sec.path, "the control"):
            return Control(**kw)

    def _watch(self, sec, i):
        j = self._wall_ref(sec, "wall")
        thr = sec.quantity("temperature", "temperature")
        which = sec.exclusive("at", "after_layer", "depth", required=True)
        wall = self.walls[j]
        if which == "at":
            where = sec.text("at", choices=("inner", "outer", "chamber"))
            depth = 0.0
            spot = "chamber" if where == "chamber" else f"{where} face"
        elif which == "after_layer":
            k = sec.integer("after_layer")
            _refuse(sec, "after_layer", interface_problem(wall, k))
            where, depth = f"interface:{k + 1}", 0.0
            spot = f"interface after layer {k}"
        else:
            depth = sec.quantity("depth", "length", nonnegative=True)
            _refuse(sec, "depth", depth_problem(wall, depth))
            where, spot = "", f"{depth * 1000:g} mm deep"
        name = sec.text("name", f"{self.wall_names[j]} {spot} at {thr - 273.15:g} degC")
        if which == "at" and where == "chamber":
            _refuse(sec, "at", chamber_watch_problem(self.has_chamber, name))
        with _model(self.file, sec.path, "the watch entry"):
            return Event(temperature=thr, wall=j, depth=depth, at=where, name=name)
