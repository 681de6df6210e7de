"""The :class:`Material` record: properties of one wall material."""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass, replace
from typing import Optional, Union

import numpy as np

from .errors import MaterialError
from .properties import PROPERTY_MODELS, Constant, PropertyModel

# ASCII-only so messages print on any console.
_KELVIN_OFFSET = 273.15


def _as_model(value, name: str, key: str, unit: str) -> PropertyModel:
    """Accept a property model or a plain positive number (made a Constant)."""
    if isinstance(value, PROPERTY_MODELS):
        return value
    if isinstance(value, numbers.Real) and not isinstance(value, bool):
        try:
            return Constant(float(value))
        except MaterialError as exc:
            raise MaterialError(f"Material '{name}', {key} {unit}: {exc}") from None
    raise MaterialError(
        f"Material '{name}': {key} {unit} must be a number or a property model "
        f"(Constant, Table or Polynomial), got {type(value).__name__} {value!r}.")


@dataclass(frozen=True)
class Material:
    """One wall material.

    Parameters
    ----------
    name : str
        Identifier, e.g. ``"mineral-wool-128"``.
    k : Constant, Table, Polynomial or float
        Thermal conductivity k(T) [W/m/K]; a plain number is made a :class:`Constant`.
    cp : Constant, Table, Polynomial or float
        Specific heat capacity cp(T) [J/kg/K]; a plain number is made a :class:`Constant`.
    rho : float
        Density [kg/m3], > 0 (taken as independent of temperature).
    emissivity : float, optional
        Total hemispherical emissivity of an exposed surface [-], 0..1.  Default 0.9.
    t_max : float or None, optional
        Maximum service temperature [K], > 0, or None if not rated.
    category : str, optional
        Free-text group, e.g. ``"metal"``, ``"insulation"``.
    source : str, optional
        Where the data come from (handbook, standard class, manufacturer-typical range) or
        ``"typical value, from memory"``.
    notes : str, optional
        Assumptions and caveats.

    Raises
    ------
    MaterialError
        If a value is out of range (a ``ValueError``).
    """

    name: str
    k: PropertyModel
    cp: PropertyModel
    rho: float
    emissivity: float = 0.9
    t_max: Optional[float] = None
    category: str = ""
    source: str = ""
    notes: str = ""

    def __post_init__(self):
        if not isinstance(self.name, str) or not self.name.strip():
            raise MaterialError(f"Material name must be a non-empty string, got {self.name!r}.")
        name = self.name
        object.__setattr__(self, "k", _as_model(self.k, name, "k", "[W/m/K]"))
        object.__setattr__(self, "cp", _as_model(self.cp, name, "cp", "[J/kg/K]"))
        rho = _number(self.rho, name, "rho [kg/m3]")
        if rho <= 0.0:
            raise MaterialError(f"Material '{name}': rho [kg/m3] must be > 0, got {rho!r}.")
        object.__setattr__(self, "rho", rho)
        eps = _number(self.emissivity, name, "emissivity [-]")
        if not 0.0 <= eps <= 1.0:
            raise MaterialError(
                f"Material '{name}': emissivity [-] must be between 0 and 1, got {eps!r}.")
        object.__setattr__(self, "emissivity", eps)
        if self.t_max is not None:
            t_max = _number(self.t_max, name, "t_max [K]")
            if t_max <= 0.0:
                raise MaterialError(
                    f"Material '{name}': t_max is an absolute temperature [K] and must be > 0, "
                    f"got {t_max!r} (was it given in degC?).")
            object.__setattr__(self, "t_max", t_max)
        for key in ("category", "source", "notes"):
            if not isinstance(getattr(self, key), str):
                raise MaterialError(
                    f"Material '{name}': {key} must be text, got {getattr(self, key)!r}.")

    def tables(self) -> tuple:
        """Piecewise-linear tables of k and cp on one common temperature grid.

        The grid is the sorted union of the knots of ``k`` and ``cp``; each property is
        evaluated on it.  Outside the grid both properties are constant (end values).

        Returns
        -------
        T : ndarray of float64
            Temperatures [K], strictly increasing.
        k : ndarray of float64
            Thermal conductivity at ``T`` [W/m/K].
        cp : ndarray of float64
            Specific heat capacity at ``T`` [J/kg/K].
        """
        cached = self.__dict__.get("_tables")
        if cached is None:
            Tk, _ = self.k.knots()
            Tc, _ = self.cp.knots()
            T = np.union1d(Tk, Tc).astype(np.float64)
            k = np.asarray(self.k(T), dtype=np.float64)
            cp = np.asarray(self.cp(T), dtype=np.float64)
            for a in (T, k, cp):
                a.setflags(write=False)
            cached = (T, k, cp)
            # the material is immutable, so its tables are computed once
            object.__setattr__(self, "_tables", cached)
        return cached

    def with_conductivity_factor(self, factor: float) -> "Material":
        """This material with its conductivity k(T) multiplied by ``factor`` [-].

        A design factor for ageing, moisture or workmanship (for example 1.1), or an
        uncertain conductivity scale in a study.  ``factor`` must be finite and > 0; 1 gives
        this material itself.  The name gains `` (k x factor)`` so reports show the change.
        """
        f = _number(factor, self.name, "conductivity factor")
        if not f > 0.0:
            raise MaterialError(f"Material '{self.name}': conductivity factor must be > 0, got {f!r}.")
        if f == 1.0:
            return self
        return replace(self, k=self.k.scaled(f), name=f"{self.name} (k x{f:g})")

    def to_dict(self) -> dict:
        """Plain SI dict accepted by :func:`fdwall.materials.material_from_dict`."""
        return {"k": self.k.to_dict(), "cp": self.cp.to_dict(), "rho": self.rho,
                "emissivity": self.emissivity, "t_max": self.t_max,
                "category": self.category, "source": self.source, "notes": self.notes}


def _number(x, name: str, what: str) -> float:
    if isinstance(x, bool) or not isinstance(x, numbers.Real):
        raise MaterialError(f"Material '{name}': {what} must be a number, got {x!r}.")
    v = float(x)
    if not math.isfinite(v):
        raise MaterialError(f"Material '{name}': {what} must be finite, got {x!r}.")
    return v


def check_service_temperature(material: Material, T_max_seen) -> Union[str, None]:
    """Warning text if a material gets hotter than its maximum service temperature.

    Parameters
    ----------
    material : Material
        The material; nothing is checked when its ``t_max`` is None.
    T_max_seen : float or array_like
        Highest temperature reached in the material [K] (the maximum of an array is used).

    Returns
    -------
    str or None
        A one-paragraph warning when ``T_max_seen > material.t_max``, else None.
    """
    if material.t_max is None:
        return None
    T = float(np.max(np.asarray(T_max_seen, dtype=np.float64)))
    if not T > material.t_max:
        return None
    return (
        f"Material '{material.name}' reaches {T:.1f} K ({T - _KELVIN_OFFSET:.0f} degC), above its "
        f"maximum service temperature of {material.t_max:.1f} K "
        f"({material.t_max - _KELVIN_OFFSET:.0f} degC). Its properties above that are "
        "extrapolated and the material may sinter, melt, oxidise, lose binder or strength; "
        "choose a material rated for this temperature or add insulation on the hot side.")
