"""Wall materials: temperature-dependent property models and a bundled library.

Quick use::

    from fdwall.materials import get_material, list_materials, material_from_dict
    wool = get_material("mineral-wool-128")
    T, k, cp = wool.tables()            # [K], [W/m/K], [J/kg/K]
    mine = material_from_dict("my-board", {"k": 0.08, "cp": 900.0, "rho": 300.0})

The bundled library (``library.toml`` in this package) is read once, on first use.
"""

from __future__ import annotations

import difflib
import functools
import math
import numbers
from importlib import resources
from pathlib import Path
from typing import Mapping, Union

import numpy as np

try:  # Python >= 3.11
    import tomllib as _toml
except ModuleNotFoundError:  # pragma: no cover - Python 3.10
    import tomli as _toml

from .errors import MaterialError
from .material import Material, check_service_temperature
from .properties import PROPERTY_MODELS, Constant, Polynomial, Table

__all__ = [
    "Constant", "Table", "Polynomial", "Material", "MaterialError",
    "get_material", "list_materials", "material_from_dict", "read_library",
    "check_service_temperature",
]

KELVIN_OFFSET = 273.15  # T[K] = T[degC] + KELVIN_OFFSET
LIBRARY_FILE = "library.toml"

_DICT_KEYS = ("k", "cp", "rho", "emissivity", "t_max", "category", "source", "notes")
_REQUIRED = ("k", "cp", "rho")
_UNITS = {"k": "[W/m/K]", "cp": "[J/kg/K]"}

_PROPERTY_FORMS = (
    'a number, a table {"T": [...K], "values": [...]} with at least 2 strictly increasing '
    'temperatures, or a polynomial {"coeffs": [c0, c1, ...], "T_min": K, "T_max": K} '
    "(ascending powers of T in kelvin)")


def _is_number(x) -> bool:
    return isinstance(x, numbers.Real) and not isinstance(x, bool)


def _property_from_spec(spec, ctx: str, key: str):
    """Build a property model from its plain SI form (see :func:`material_from_dict`)."""
    unit = _UNITS[key]
    where = f"{ctx}, key '{key}' {unit}"
    if isinstance(spec, PROPERTY_MODELS):
        return spec
    try:
        if _is_number(spec):
            return Constant(spec)
        if isinstance(spec, Mapping):
            keys = set(spec)
            if keys == {"T", "values"}:
                return Table(spec["T"], spec["values"])
            if keys == {"coeffs", "T_min", "T_max"}:
                return Polynomial(spec["coeffs"], spec["T_min"], spec["T_max"])
            raise MaterialError(
                f"unrecognised keys {sorted(keys)}; a table has exactly the keys "
                "['T', 'values'] and a polynomial exactly ['coeffs', 'T_min', 'T_max']")
    except MaterialError as exc:
        raise MaterialError(f"{where}: {str(exc).rstrip('.')}. Allowed: {_PROPERTY_FORMS}.") from None
    raise MaterialError(f"{where}: got {spec!r}. Allowed: {_PROPERTY_FORMS}.")


def material_from_dict(name: str, d: Mapping, *, where: str = "") -> Material:
    """Build a user-defined material from a plain dict of SI numbers.

    Parameters
    ----------
    name : str
        Material name.
    d : mapping
        Keys (SI units):

        * ``k`` -- thermal conductivity [W/m/K], required;
        * ``cp`` -- specific heat capacity [J/kg/K], required;
        * ``rho`` -- density [kg/m3], required, > 0;
        * ``emissivity`` -- surface emissivity [-], 0..1, default 0.9;
        * ``t_max`` -- maximum service temperature [K] or None, default None;
        * ``category``, ``source``, ``notes`` -- text, optional.

        ``k`` and ``cp`` are each a number (constant), a table
        ``{"T": [...K], "values": [...]}`` or a polynomial
        ``{"coeffs": [...], "T_min": K, "T_max": K}`` (ascending powers of T in [K]).
        A ready property model (Constant, Table, Polynomial) is accepted too.
    where : str, optional
        Where the dict came from (e.g. a file name and table), put in error messages.

    Returns
    -------
    Material

    Raises
    ------
    MaterialError
        With a one-paragraph message naming the key, what was wrong and what is allowed.
    """
    ctx = f"Material '{name}'" + (f" in {where}" if where else "")
    if not isinstance(name, str) or not name.strip():
        raise MaterialError(f"Material name must be a non-empty string, got {name!r}"
                            + (f" in {where}" if where else "") + ".")
    if not isinstance(d, Mapping):
        raise MaterialError(
            f"{ctx}: expected a table/dict with keys {list(_DICT_KEYS)}, got {type(d).__name__}.")
    unknown = [k for k in d if k not in _DICT_KEYS]
    if unknown:
        hints = []
        for u in unknown:
            close = difflib.get_close_matches(str(u), _DICT_KEYS, n=1)
            hints.append(f"'{u}'" + (f" (did you mean '{close[0]}'?)" if close else ""))
        raise MaterialError(
            f"{ctx}: unknown key(s) {', '.join(hints)}. Allowed keys: {list(_DICT_KEYS)} "
            "(SI units: k [W/m/K], cp [J/kg/K], rho [kg/m3], emissivity [-], t_max [K]).")
    missing = [k for k in _REQUIRED if k not in d]
    if missing:
        raise MaterialError(
            f"{ctx}: missing required key(s) {missing}. A material needs k [W/m/K], "
            "cp [J/kg/K] and rho [kg/m3]; emissivity [-] and t_max [K] are optional.")
    k = _property_from_spec(d["k"], ctx, "k")
    cp = _property_from_spec(d["cp"], ctx, "cp")
    kwargs = {}
    for key in ("rho", "emissivity", "t_max"):
        if key not in d or (key == "t_max" and d[key] is None):
            continue
        v = d[key]
        if not _is_number(v) or not math.isfinite(float(v)):
            unit = {"rho": "[kg/m3]", "emissivity": "[-]", "t_max": "[K]"}[key]
            raise MaterialError(f"{ctx}, key '{key}' {unit}: must be a finite number, got {v!r}.")
        kwargs[key] = float(v)
    for key in ("category", "source", "notes"):
        if key in d:
            if not isinstance(d[key], str):
                raise MaterialError(f"{ctx}, key '{key}': must be text, got {d[key]!r}.")
            kwargs[key] = d[key]
    try:
        return Material(name=name, k=k, cp=cp, **kwargs)
    except MaterialError as exc:
        msg = str(exc)
        if where:
            msg = msg.replace(f"Material '{name}'", ctx, 1)
        raise MaterialError(msg) from None


# --------------------------------------------------------------------------- TOML layer

def _toml_temps(entry: Mapping, base: str, ctx: str, allow_list: bool):
    """Read ``<base>_C`` or ``<base>_K`` from ``entry`` and return kelvin (or None)."""
    has_c, has_k = f"{base}_C" in entry, f"{base}_K" in entry
    if has_c and has_k:
        raise MaterialError(f"{ctx}: give either '{base}_C' [degC] or '{base}_K' [K], not both.")
    if not (has_c or has_k):
        return None
    key = f"{base}_C" if has_c else f"{base}_K"
    raw = entry[key]
    off = KELVIN_OFFSET if has_c else 0.0
    if allow_list and isinstance(raw, list):
        if not all(_is_number(x) for x in raw):
            raise MaterialError(f"{ctx}, key '{key}': must be a list of numbers, got {raw!r}.")
        return [float(x) + off for x in raw]
    if not _is_number(raw):
        raise MaterialError(f"{ctx}, key '{key}': must be a number, got {raw!r}.")
    return float(raw) + off


def _toml_property(spec, ctx: str, key: str):
    """Convert a property spec with degC/K keys to the SI form of material_from_dict."""
    if not isinstance(spec, Mapping):
        return spec
    pctx = f"{ctx}, key '{key}'"
    keys = set(spec)
    if "values" in keys:
        allowed = {"T_C", "T_K", "values"}
        if not keys <= allowed:
            raise MaterialError(f"{pctx}: unknown keys {sorted(keys - allowed)} in a table; "
                                "a table has 'values' and one of 'T_C' [degC] or 'T_K' [K].")
        T = _toml_temps(spec, "T", pctx, allow_list=True)
        if T is None:
            raise MaterialError(f"{pctx}: a table needs temperatures 'T_C' [degC] or 'T_K' [K].")
        return {"T": T, "values": spec["values"]}
    allowed = {"coeffs_C", "coeffs_K", "T_min_C", "T_min_K", "T_max_C", "T_max_K"}
    if keys and keys <= allowed:
        has_c, has_k = "coeffs_C" in keys, "coeffs_K" in keys
        if has_c == has_k:
            raise MaterialError(f"{pctx}: a polynomial needs exactly one of 'coeffs_C' (powers "
                                "of T in degC) or 'coeffs_K' (powers of T in kelvin).")
        lo = _toml_temps(spec, "T_min", pctx, allow_list=False)
        hi = _toml_temps(spec, "T_max", pctx, allow_list=False)
        if lo is None or hi is None:
            raise MaterialError(f"{pctx}: a polynomial needs 'T_min_C'/'T_min_K' and "
                                "'T_max_C'/'T_max_K'.")
        c = spec["coeffs_C"] if has_c else spec["coeffs_K"]
        if not isinstance(c, list) or not c or not all(_is_number(x) for x in c):
            raise MaterialError(f"{pctx}: coefficients must be a non-empty list of numbers, "
                                f"got {c!r}.")
        c = [float(x) for x in c]
        if has_c:  # p(T - 273.15) expanded in powers of T [K]
            shifted = np.polynomial.Polynomial(c)(np.polynomial.Polynomial([-KELVIN_OFFSET, 1.0]))
            c = [float(x) for x in shifted.coef]
        return {"coeffs": c, "T_min": lo, "T_max": hi}
    raise MaterialError(
        f"{pctx}: unrecognised keys {sorted(keys)}. Allowed: a number, a table "
        "{T_C|T_K = [...], values = [...]} or a polynomial {coeffs_C|coeffs_K = [...], "
        "T_min_C|T_min_K = ..., T_max_C|T_max_K = ...}.")


def _materials_from_toml(data: Mapping, source: str) -> dict:
    """Build {name: Material} from parsed TOML data in the library format."""
    table = data.get("materials")
    if not isinstance(table, Mapping) or not table:
        raise MaterialError(f"{source}: no [materials.<name>] tables found; each material is a "
                            "table such as [materials.my-board] with k, cp, rho, ...")
    out = {}
    for name, entry in table.items():
        ctx = f"{source} [materials.{name}]"
        if not isinstance(entry, Mapping):
            raise MaterialError(f"{ctx}: expected a table of keys, got {entry!r}.")
        d = {}
        for key, val in entry.items():
            if key in ("k", "cp"):
                d[key] = _toml_property(val, ctx, key)
            elif key in ("t_max_C", "t_max_K"):
                if "t_max" in d:
                    raise MaterialError(f"{ctx}: give either 't_max_C' or 't_max_K', not both.")
                d["t_max"] = _toml_temps(entry, "t_max", ctx, allow_list=False)
            elif key == "t_max":
                raise MaterialError(f"{ctx}: write the maximum service temperature as 't_max_C' "
                                    "[degC] or 't_max_K' [K] so the unit is explicit.")
            else:
                d[key] = val
        out[name] = material_from_dict(name, d, where=source)
    return out


def read_library(path: Union[str, Path]) -> dict:
    """Read a material file in the bundled-library TOML format.

    Parameters
    ----------
    path : str or Path
        TOML file with ``[materials.<name>]`` tables (see the header of the bundled
        ``library.toml`` for the keys; temperatures in degC with ``_C`` keys or in kelvin
        with ``_K`` keys).

    Returns
    -------
    dict of str to Material

    Raises
    ------
    MaterialError
        If the file cannot be read or parsed, or an entry is invalid.
    """
    p = Path(path)
    try:
        data = _toml.loads(p.read_text(encoding="utf-8"))
    except OSError as exc:
        raise MaterialError(f"Cannot read material file '{p}': {exc.strerror or exc}.") from None
    except _toml.TOMLDecodeError as exc:
        raise MaterialError(f"Material file '{p}' is not valid TOML: {exc}.") from None
    return _materials_from_toml(data, str(p))


@functools.lru_cache(maxsize=1)
def _library() -> dict:
    """The bundled library, parsed once."""
    text = resources.files(__name__).joinpath(LIBRARY_FILE).read_text(encoding="utf-8")
    return _materials_from_toml(_toml.loads(text), f"bundled {LIBRARY_FILE}")


def list_materials() -> list:
    """Names of the bundled materials, sorted.

    Returns
    -------
    list of str
    """
    return sorted(_library())


def _normalise(name: str) -> str:
    return "-".join(name.strip().lower().replace("_", " ").replace("-", " ").split())


def get_material(name: str) -> Material:
    """A bundled material by name.

    Matching ignores case and treats spaces, underscores and hyphens alike.

    Parameters
    ----------
    name : str
        e.g. ``"ceramic-fibre-blanket-128"``.

    Returns
    -------
    Material

    Raises
    ------
    MaterialError
        For an unknown name; the message suggests close names.
    """
    lib = _library()
    if not isinstance(name, str):
        raise MaterialError(f"Material name must be a string, got {name!r}.")
    if name in lib:
        return lib[name]
    key = _normalise(name)
    for n in lib:
        if _normalise(n) == key:
            return lib[n]
    close = difflib.get_close_matches(key, list(lib), n=3, cutoff=0.5)
    if not close:  # try matching on any word, e.g. "wool" -> the wools
        close = [n for n in sorted(lib) if any(w and w in n for w in key.split("-") if len(w) > 3)][:5]
    hint = f" Did you mean {', '.join(repr(c) for c in close)}?" if close else ""
    raise MaterialError(
        f"Unknown material '{name}'.{hint} Call fdwall.materials.list_materials() to see the "
        f"{len(lib)} bundled names, or define your own with material_from_dict(name, "
        "{'k': ..., 'cp': ..., 'rho': ...}).")
