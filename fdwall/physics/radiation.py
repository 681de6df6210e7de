"""Thermal radiation at wall faces: constants, grey exchange and surface finishes.

* :data:`SIGMA` -- Stefan-Boltzmann constant (CODATA 2018).
* :func:`h_rad_kernel` / :func:`h_radiative` -- linearised radiative coefficient
  ``h_r = eps sigma (Ts^2 + Tr^2)(Ts + Tr)`` so that ``q = h_r (Ts - Tr)`` exactly.
* :func:`grey_exchange_emissivity`, :func:`net_exchange` -- two grey diffuse surfaces, the
  first enclosed by the second (small body in a large room: area_ratio -> 0; parallel
  plates: area_ratio = 1).
* :func:`get_finish` -- library of emissivities of jacketing and finishes
  (``finishes.toml`` beside this module).
"""

from __future__ import annotations

import difflib

try:
    import tomllib
except ImportError:  # Python 3.10
    import tomli as tomllib
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import numpy as np
from numba import njit

from fdwall.errors import InputError

__all__ = [
    "SIGMA",
    "h_rad_kernel",
    "h_radiative",
    "grey_exchange_emissivity",
    "net_exchange",
    "Finish",
    "get_finish",
    "finish_names",
]

#: Stefan-Boltzmann constant [W/m2/K4] (CODATA 2018, exact from h, c, k_B).
SIGMA = 5.670374419e-8

_FINISHES_FILE = Path(__file__).with_name("finishes.toml")


@njit(cache=True)
def h_rad_kernel(eps, Ts, Trad):
    """Linearised radiative coefficient of a grey face seeing large surroundings.

    Parameters
    ----------
    eps : float
        Effective emissivity [-] (use :func:`grey_exchange_emissivity` for two surfaces).
    Ts : float
        Surface temperature [K].
    Trad : float
        Temperature of the radiant surroundings [K].

    Returns
    -------
    float
        h_r [W/m2/K] with ``q = h_r (Ts - Trad)`` [W/m2] exact.
    """
    return eps * SIGMA * (Ts * Ts + Trad * Trad) * (Ts + Trad)


def h_radiative(eps, Ts, Trad):
    """Linearised radiative film coefficient (Python helper, accepts arrays).

    Parameters
    ----------
    eps : float or array_like
        Effective grey emissivity [-], 0..1.
    Ts : float or array_like
        Surface temperature [K].
    Trad : float or array_like
        Temperature of the radiant surroundings [K].

    Returns
    -------
    float or numpy.ndarray
        ``eps sigma (Ts^2 + Trad^2)(Ts + Trad)`` [W/m2/K].

    Raises
    ------
    ValueError
        If an emissivity is outside 0..1 or a temperature is not positive.
    """
    e = np.asarray(eps, dtype=float)
    ts = np.asarray(Ts, dtype=float)
    tr = np.asarray(Trad, dtype=float)
    if np.any(~np.isfinite(e)) or np.any((e < 0.0) | (e > 1.0)):
        raise InputError(f"h_radiative: emissivity {eps!r} is not allowed; it must be within 0 .. 1 [-].")
    if np.any(~(ts > 0.0)) or np.any(~(tr > 0.0)):
        raise InputError(
            f"h_radiative: temperatures must be absolute and > 0 [K]; got Ts = {Ts!r}, Trad = {Trad!r}."
        )
    h = e * SIGMA * (ts * ts + tr * tr) * (ts + tr)
    return float(h) if h.ndim == 0 else h


def grey_exchange_emissivity(eps1, eps2=1.0, area_ratio=0.0):
    """Effective emissivity of grey diffuse exchange between a surface and its enclosure.

    ``eps_eff = 1 / (1/eps1 + area_ratio (1/eps2 - 1))`` so that the net flux leaving
    surface 1 is ``eps_eff sigma (T1^4 - T2^4)``.

    Parameters
    ----------
    eps1 : float
        Emissivity of surface 1 (the enclosed surface) [-], 0 < eps1 <= 1.
    eps2 : float, optional
        Emissivity of the enclosing surface 2 [-], 0 < eps2 <= 1.
    area_ratio : float, optional
        A1 / A2 [-], 0 .. 1; 0 for a small body in a large room, 1 for large parallel
        plates or long concentric cylinders of nearly equal size.

    Returns
    -------
    float
        Effective emissivity [-].
    """
    for name, v in (("eps1", eps1), ("eps2", eps2)):
        if not (isinstance(v, (int, float)) and 0.0 < v <= 1.0):
            raise InputError(f"grey_exchange_emissivity: {name} = {v!r} must be within (0, 1] [-].")
    if not (isinstance(area_ratio, (int, float)) and 0.0 <= area_ratio <= 1.0):
        raise InputError(
            f"grey_exchange_emissivity: area_ratio = {area_ratio!r} must be A1/A2 within 0 .. 1 [-] "
            "(the enclosed surface is the smaller one)."
        )
    return 1.0 / (1.0 / eps1 + area_ratio * (1.0 / eps2 - 1.0))


def net_exchange(eps1, eps2, T1, T2, area_ratio=0.0):
    """Net radiative flux leaving surface 1 toward its grey enclosure 2.

    Parameters
    ----------
    eps1, eps2 : float
        Emissivities [-].
    T1, T2 : float
        Surface temperatures [K].
    area_ratio : float, optional
        A1 / A2 [-], see :func:`grey_exchange_emissivity`.

    Returns
    -------
    float
        Net flux per unit area of surface 1 [W/m2], positive when 1 loses heat.
    """
    e = grey_exchange_emissivity(eps1, eps2, area_ratio)
    return e * SIGMA * (T1**4 - T2**4)


@dataclass(frozen=True)
class Finish:
    """Emissivity record of one surface finish.

    Attributes
    ----------
    name : str
        Key in the library.
    description : str
        What the surface is.
    emissivity : float
        Typical value [-].
    range : tuple of float
        Spread seen in practice [-].
    source : str
        Where the value comes from.
    T_K : tuple of float
        Temperatures of the optional table [K] (empty if none).
    eps : tuple of float
        Emissivities of the optional table [-].
    """

    name: str
    description: str
    emissivity: float
    range: tuple
    source: str
    T_K: tuple = ()
    eps: tuple = ()

    def at(self, T):
        """Emissivity at a surface temperature.

        Parameters
        ----------
        T : float
            Surface temperature [K].

        Returns
        -------
        float
            Emissivity [-]: table value linearly interpolated (held at the end values
            outside the table), or the typical value when there is no table.
        """
        if not self.T_K:
            return self.emissivity
        return float(np.interp(T, self.T_K, self.eps))


def _bad(path, key, msg):
    return InputError(f"{path}: entry [{key}] {msg}")


@lru_cache(maxsize=4)
def _load(path_str):
    path = Path(path_str)
    try:
        with open(path, "rb") as fh:
            raw = tomllib.load(fh)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{path}: not valid TOML ({exc}).") from None
    out = {}
    for key, d in raw.items():
        if not isinstance(d, dict):
            raise _bad(path, key, "must be a table with emissivity, range and source.")
        for req in ("emissivity", "source"):
            if req not in d:
                raise _bad(path, key, f"has no '{req}'; every finish needs emissivity [-] and source.")
        e = d["emissivity"]
        if not isinstance(e, (int, float)) or not 0.0 < e <= 1.0:
            raise _bad(path, key, f"emissivity = {e!r} must be a number in (0, 1] [-].")
        rng = tuple(float(x) for x in d.get("range", (e, e)))
        tk = tuple(float(x) for x in d.get("T_K", ()))
        ev = tuple(float(x) for x in d.get("eps", ()))
        if len(tk) != len(ev) or any(b <= a for a, b in zip(tk, tk[1:])) or any(not 0 < x <= 1 for x in ev):
            raise _bad(
                path, key,
                "table T_K/eps is malformed: T_K [K] must increase, eps [-] must be in (0, 1], "
                "and both must have the same length.",
            )
        out[key] = Finish(key, str(d.get("description", "")), float(e), rng, str(d["source"]), tk, ev)
    return out


def finish_names():
    """Names of the bundled finishes.

    Returns
    -------
    list of str
        Sorted keys usable with :func:`get_finish`.
    """
    return sorted(_load(str(_FINISHES_FILE)))


def get_finish(name):
    """Look up a surface finish in the bundled emissivity library.

    Parameters
    ----------
    name : str
        Finish key, e.g. ``"galvanised_steel_new"``; case, spaces and hyphens are
        forgiven, and the US spellings galvanized/aluminum/oxidized are accepted.

    Returns
    -------
    Finish
        The record (``.emissivity`` [-], ``.at(T)`` for the temperature table).

    Raises
    ------
    ValueError
        If the name is unknown; the message lists the closest names.
    """
    lib = _load(str(_FINISHES_FILE))
    key = str(name).strip().lower().replace("-", "_").replace(" ", "_")
    for us, uk in (("galvanized", "galvanised"), ("aluminum", "aluminium"), ("oxidized", "oxidised"),
                   ("anodized", "anodised")):
        key = key.replace(us, uk)
    if key in lib:
        return lib[key]
    near = difflib.get_close_matches(key, list(lib), n=3, cutoff=0.5)
    if not near:
        near = [k for k in lib if any(part and part in k for part in key.split("_"))][:3]
    hint = f" Did you mean: {', '.join(near)}?" if near else ""
    raise InputError(
        f"unknown surface finish {name!r} in the emissivity library ({_FINISHES_FILE.name}).{hint} "
        f"Known finishes: {', '.join(sorted(lib))}. Or give the emissivity as a number in 0 .. 1."
    )
