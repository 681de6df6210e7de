"""Temperature-dependent property models.

Three frozen models describe a material property as a function of temperature ``T`` [K]:

* :class:`Constant` -- one value at every temperature;
* :class:`Table` -- piecewise-linear through given points, constant beyond the end points;
* :class:`Polynomial` -- a polynomial in ``T`` [K] valid on ``[T_min, T_max]``, constant
  (end values) outside.

Each model is callable (``model(T)`` returns a float for a scalar and an ndarray for an
array) and gives a piecewise-linear representation with :meth:`knots`, which is what the
solver's kernels interpolate.  Outside the knot range every model is constant, so the
knots describe the property at every temperature.

The values must be finite and strictly positive (they are conductivities [W/m/K] and
specific heats [J/kg/K]); a violation raises :class:`~fdwall.materials.MaterialError`
(a ``ValueError``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Union

import numpy as np
import numpy.polynomial.polynomial as npoly

from .errors import MaterialError

#: Lowest / highest temperature of the two knots of a :class:`Constant` [K].
CONSTANT_KNOT_RANGE = (1.0, 6000.0)

#: Target relative error of the piecewise-linear knots of a :class:`Polynomial` [-].
POLYNOMIAL_KNOT_RTOL = 1e-5

FloatOrArray = Union[float, np.ndarray]


def _scalar_or_array(T, out: np.ndarray) -> FloatOrArray:
    """Return a Python float when ``T`` is a scalar, else the float64 array ``out``."""
    if np.ndim(T) == 0:
        return float(out)
    return out


def _finite_float(x, what: str) -> float:
    """Convert ``x`` to a finite float or raise MaterialError naming ``what``."""
    if isinstance(x, bool):
        raise MaterialError(f"{what} must be a number, got the boolean {x!r}.")
    try:
        v = float(x)
    except (TypeError, ValueError):
        raise MaterialError(f"{what} must be a number, got {x!r}.") from None
    if not math.isfinite(v):
        raise MaterialError(f"{what} must be a finite number, got {x!r}.")
    return v


def _float_tuple(seq, what: str) -> tuple:
    """Convert a 1-D sequence of numbers to a tuple of finite floats."""
    if isinstance(seq, (str, bytes)) or np.ndim(seq) != 1:
        raise MaterialError(f"{what} must be a 1-D list of numbers, got {seq!r}.")
    return tuple(_finite_float(x, f"{what}[{i}]") for i, x in enumerate(seq))


@dataclass(frozen=True)
class Constant:
    """A property that does not depend on temperature.

    Parameters
    ----------
    value : float
        The property value, finite and > 0 (e.g. [W/m/K] or [J/kg/K]).

    Examples
    --------
    >>> Constant(0.5)(300.0)
    0.5
    """

    value: float

    def __post_init__(self):
        v = _finite_float(self.value, "Constant property value")
        if v <= 0.0:
            raise MaterialError(
                f"Constant property value must be > 0 (a conductivity [W/m/K] or a specific "
                f"heat [J/kg/K]), got {v!r}.")
        object.__setattr__(self, "value", v)

    def __call__(self, T) -> FloatOrArray:
        """Value at temperature ``T`` [K] (scalar or array); same shape as ``T``."""
        out = np.full(np.shape(T), self.value, dtype=np.float64)
        return _scalar_or_array(T, out)

    def knots(self) -> tuple:
        """Piecewise-linear representation: two points at 1.0 K and 6000.0 K.

        Returns
        -------
        T : ndarray
            Knot temperatures [K], ``[1.0, 6000.0]``.
        values : ndarray
            The value at both knots (unit of the property).
        """
        return (np.array(CONSTANT_KNOT_RANGE, dtype=np.float64),
                np.array([self.value, self.value], dtype=np.float64))

    def scaled(self, factor: float) -> "Constant":
        """The same property multiplied by ``factor`` [-] (> 0)."""
        return Constant(self.value * float(factor))

    def to_dict(self) -> float:
        """Plain SI form accepted by :func:`fdwall.materials.material_from_dict`: the number."""
        return self.value


@dataclass(frozen=True)
class Table:
    """A property tabulated against temperature, piecewise-linear between points.

    Beyond the first and last point the value is held constant (end values).

    Parameters
    ----------
    T : sequence of float
        Temperatures [K], at least 2, finite, > 0 and strictly increasing.
    values : sequence of float
        Property values at ``T`` (e.g. [W/m/K] or [J/kg/K]), finite and > 0, same length.

    Examples
    --------
    >>> t = Table([300.0, 400.0], [10.0, 20.0])
    >>> t(350.0), t(200.0), t(900.0)
    (15.0, 10.0, 20.0)
    """

    T: tuple
    values: tuple
    _T_arr: np.ndarray = field(init=False, repr=False, compare=False)
    _v_arr: np.ndarray = field(init=False, repr=False, compare=False)

    def __post_init__(self):
        T = _float_tuple(self.T, "Table temperatures T [K]")
        v = _float_tuple(self.values, "Table values")
        if len(T) != len(v):
            raise MaterialError(
                f"Table needs as many values as temperatures: got {len(T)} temperatures and "
                f"{len(v)} values.")
        if len(T) < 2:
            raise MaterialError(
                f"Table needs at least 2 points, got {len(T)}; use a Constant for a single value.")
        if min(T) <= 0.0:
            raise MaterialError(
                f"Table temperatures are absolute [K] and must be > 0, got {min(T)!r} "
                "(were they given in degC?).")
        dT = np.diff(T)
        if np.any(dT <= 0.0):
            i = int(np.argmax(dT <= 0.0))
            raise MaterialError(
                f"Table temperatures must be strictly increasing, but T[{i}] = {T[i]!r} K is "
                f"followed by T[{i + 1}] = {T[i + 1]!r} K.")
        if min(v) <= 0.0:
            i = int(np.argmin(v))
            raise MaterialError(
                f"Table values must be > 0 (a conductivity [W/m/K] or a specific heat [J/kg/K]), "
                f"got {v[i]!r} at T = {T[i]!r} K.")
        object.__setattr__(self, "T", T)
        object.__setattr__(self, "values", v)
        object.__setattr__(self, "_T_arr", np.array(T, dtype=np.float64))
        object.__setattr__(self, "_v_arr", np.array(v, dtype=np.float64))

    def __call__(self, T) -> FloatOrArray:
        """Value at temperature ``T`` [K] (scalar or array), linear between points."""
        out = np.interp(np.asarray(T, dtype=np.float64), self._T_arr, self._v_arr)
        return _scalar_or_array(T, np.asarray(out, dtype=np.float64))

    def knots(self) -> tuple:
        """Piecewise-linear representation: the table points themselves.

        Returns
        -------
        T : ndarray
            Knot temperatures [K].
        values : ndarray
            Values at the knots (unit of the property).
        """
        return self._T_arr.copy(), self._v_arr.copy()

    def scaled(self, factor: float) -> "Table":
        """The same table with every value multiplied by ``factor`` [-] (> 0)."""
        return Table(self.T, tuple(v * float(factor) for v in self.values))

    def to_dict(self) -> dict:
        """Plain SI form ``{"T": [...K], "values": [...]}``."""
        return {"T": list(self.T), "values": list(self.values)}


@dataclass(frozen=True)
class Polynomial:
    """A property given by a polynomial in temperature on a validity range.

    ``value(T) = sum(coeffs[i] * T**i)`` for ``T_min <= T <= T_max``; outside that range the
    end values ``value(T_min)`` and ``value(T_max)`` are used.

    Parameters
    ----------
    coeffs : sequence of float
        Coefficients in ascending powers of ``T`` in kelvin (``coeffs[i]`` has the unit of
        the property divided by [K^i]); at least one.
    T_min, T_max : float
        Validity range [K], ``0 < T_min < T_max``.  The polynomial must be > 0 on it.

    Examples
    --------
    >>> p = Polynomial([1.0, 0.01], 300.0, 500.0)
    >>> p(400.0), p(1000.0)
    (5.0, 6.0)
    """

    coeffs: tuple
    T_min: float
    T_max: float
    _knots: tuple = field(init=False, repr=False, compare=False)

    def __post_init__(self):
        c = _float_tuple(self.coeffs, "Polynomial coeffs")
        if len(c) < 1:
            raise MaterialError("Polynomial needs at least one coefficient.")
        lo = _finite_float(self.T_min, "Polynomial T_min [K]")
        hi = _finite_float(self.T_max, "Polynomial T_max [K]")
        if not 0.0 < lo < hi:
            raise MaterialError(
                f"Polynomial validity range must satisfy 0 < T_min < T_max [K], got "
                f"T_min = {lo!r}, T_max = {hi!r} (were they given in degC?).")
        object.__setattr__(self, "coeffs", c)
        object.__setattr__(self, "T_min", lo)
        object.__setattr__(self, "T_max", hi)
        self._check_positive()
        object.__setattr__(self, "_knots", self._build_knots())

    def _check_positive(self):
        """Raise MaterialError unless the polynomial is > 0 on [T_min, T_max]."""
        c = np.array(self.coeffs)
        ends = npoly.polyval(np.array([self.T_min, self.T_max]), c)
        bad = None
        if ends[0] <= 0.0:
            bad = self.T_min
        elif ends[1] <= 0.0:
            bad = self.T_max
        else:
            nz = np.trim_zeros(c, "b")
            if nz.size > 1:
                for r in npoly.polyroots(nz):
                    if abs(r.imag) <= 1e-6 * max(1.0, abs(r.real)) and \
                            self.T_min <= r.real <= self.T_max:
                        bad = float(r.real)
                        break
        if bad is not None:
            raise MaterialError(
                f"Polynomial property must be > 0 on its range [{self.T_min:g}, {self.T_max:g}] K, "
                f"but it reaches {float(npoly.polyval(bad, c)):.6g} at T = {bad:.6g} K; check the "
                "coefficients (ascending powers of T in kelvin) and the range.")

    def _eval(self, T):
        return npoly.polyval(np.clip(T, self.T_min, self.T_max), np.array(self.coeffs))

    def _build_knots(self):
        """Bisect a uniform start grid until linear interpolation meets the tolerance."""
        tol = 0.5 * POLYNOMIAL_KNOT_RTOL  # safety margin against the checks between tests
        x = np.linspace(self.T_min, self.T_max, 9)
        for _ in range(40):
            x0, x1 = x[:-1], x[1:]
            y0, y1 = self._eval(x0), self._eval(x1)
            worst = np.zeros(x0.size)
            for f in (0.25, 0.5, 0.75):
                xt = x0 + f * (x1 - x0)
                exact = self._eval(xt)
                lin = y0 + f * (y1 - y0)
                worst = np.maximum(worst, np.abs(lin - exact) / np.abs(exact))
            bad = worst > tol
            if not np.any(bad) or x.size > 200_000:
                break
            mids = 0.5 * (x0[bad] + x1[bad])
            x = np.sort(np.concatenate([x, mids]))
        return x, self._eval(x)

    def __call__(self, T) -> FloatOrArray:
        """Value at temperature ``T`` [K] (scalar or array); end values outside the range."""
        out = np.asarray(self._eval(np.asarray(T, dtype=np.float64)), dtype=np.float64)
        return _scalar_or_array(T, out)

    def knots(self) -> tuple:
        """Piecewise-linear representation on ``[T_min, T_max]``.

        The points are placed adaptively so that linear interpolation between them differs
        from the polynomial by less than 1e-5 relative.

        Returns
        -------
        T : ndarray
            Knot temperatures [K], from ``T_min`` to ``T_max``.
        values : ndarray
            Polynomial values at the knots (unit of the property).
        """
        return self._knots[0].copy(), self._knots[1].copy()

    def scaled(self, factor: float) -> "Polynomial":
        """The same polynomial multiplied by ``factor`` [-] (> 0), same validity range."""
        return Polynomial(tuple(c * float(factor) for c in self.coeffs), self.T_min, self.T_max)

    def to_dict(self) -> dict:
        """Plain SI form ``{"coeffs": [...], "T_min": ..., "T_max": ...}``."""
        return {"coeffs": list(self.coeffs), "T_min": self.T_min, "T_max": self.T_max}


PropertyModel = Union[Constant, Table, Polynomial]
PROPERTY_MODELS = (Constant, Table, Polynomial)
