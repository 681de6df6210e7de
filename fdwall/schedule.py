"""Piecewise-linear schedules of a quantity in time (steps, ramps and holds).

A schedule is a list of knots ``(t_i, v_i)`` with non-decreasing times.  Between knots the
value is interpolated linearly; before the first knot and after the last it is held.  A
*step* is two knots at the same time: the value jumps there (the later knot wins from that
instant on).  The same object also serves for tables against temperature (emissivity
versus surface temperature), where "time" is read as temperature.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

__all__ = ["Schedule"]


@dataclass(frozen=True)
class Schedule:
    """Piecewise-linear function of time, held constant outside its knots.

    Parameters
    ----------
    times : sequence of float
        Knot times, non-decreasing [s] (or [K] for a table against temperature).  A repeated
        time makes a step.
    values : sequence of float
        Values at the knots, in the SI unit of the quantity scheduled (e.g. [K], [W/m2], [W]).

    Examples
    --------
    A heater flux of 2 kW/m2 for 3 h, then off:

    >>> s = Schedule([0, 10800, 10800], [2000.0, 2000.0, 0.0])
    >>> float(s(3600.0)), float(s(20000.0))
    (2000.0, 0.0)
    """

    times: tuple = field()
    values: tuple = field()
    # read-only numpy copies of the knots, built once: every evaluation is then a binary
    # search, O(log n), so validating or running a schedule of n knots costs O(n log n)
    _t: np.ndarray = field(init=False, repr=False, compare=False)
    _v: np.ndarray = field(init=False, repr=False, compare=False)

    def __post_init__(self):
        t, v = self.times, self.values
        if isinstance(t, (int, float)) and isinstance(v, (int, float)):
            t, v, ndim_ok = [float(t)], [float(v)], True       # one knot: a constant
        else:
            try:
                ndim_ok = np.ndim(t) <= 1 and np.ndim(v) <= 1
                t = [float(x) for x in np.atleast_1d(np.asarray(t, dtype=float)).ravel()]
                v = [float(x) for x in np.atleast_1d(np.asarray(v, dtype=float)).ravel()]
            except (TypeError, ValueError):
                raise ValueError("schedule times and values must be numbers") from None
        if not ndim_ok or len(t) != len(v) or not t:
            raise ValueError("a schedule needs equally many times and values (at least one knot)")
        if not all(math.isfinite(x) for x in t + v):
            raise ValueError("schedule times and values must be finite numbers")
        for i in range(len(t) - 1):
            if t[i + 1] < t[i]:
                raise ValueError(
                    f"schedule times go backwards at knot {i + 2} ({t[i + 1]:g} after {t[i]:g}); "
                    "times must be non-decreasing (repeat a time to make a step)")
            if i + 2 < len(t) and t[i] == t[i + 1] == t[i + 2]:
                raise ValueError("a schedule may repeat a time at most twice (one step per instant)")
        object.__setattr__(self, "times", tuple(t))
        object.__setattr__(self, "values", tuple(v))
        for name, seq in (("_t", t), ("_v", v)):
            arr = np.array(seq, dtype=np.float64)
            arr.setflags(write=False)
            object.__setattr__(self, name, arr)

    @classmethod
    def constant(cls, value: float) -> "Schedule":
        """A schedule holding ``value`` at all times (SI unit of the quantity)."""
        return cls(0.0, float(value))

    @classmethod
    def coerce(cls, x) -> "Schedule":
        """Return ``x`` as a Schedule (numbers become constant schedules)."""
        if isinstance(x, Schedule):
            return x
        return cls.constant(float(x))

    @property
    def is_constant(self) -> bool:
        """True when the schedule never changes."""
        return len(set(self.values)) == 1

    def __call__(self, t, side: str = "right"):
        """Value at time(s) ``t`` [s]; at a step, ``side='left'`` gives the value before it."""
        t_k = self._t
        v_k = self._v
        t = np.asarray(t, dtype=float)
        idx = np.searchsorted(t_k, t, side=side) - 1
        idx = np.clip(idx, 0, t_k.size - 1)
        nxt = np.clip(idx + 1, 0, t_k.size - 1)
        dt = t_k[nxt] - t_k[idx]
        with np.errstate(divide="ignore", invalid="ignore"):
            w = np.where(dt > 0, (t - t_k[idx]) / np.where(dt > 0, dt, 1.0), 0.0)
        w = np.clip(w, 0.0, 1.0)
        out = v_k[idx] + w * (v_k[nxt] - v_k[idx])
        out = np.where(t < t_k[0], v_k[0], out)
        return out if out.ndim else float(out)

    def shifted(self, dt: float) -> "Schedule":
        """The same schedule delayed by ``dt`` [s]."""
        return Schedule(tuple(t + dt for t in self.times), self.values)

    def scaled(self, factor: float) -> "Schedule":
        """The same schedule with every value multiplied by ``factor`` [-]."""
        return Schedule(self.times, tuple(v * factor for v in self.values))

    def integral(self, a: float, b: float) -> float:
        """Exact integral of the schedule over [a, b] [value x s] (0 when b <= a)."""
        if b <= a:
            return 0.0
        a, b = float(a), float(b)
        lo = int(np.searchsorted(self._t, a, side="right"))
        hi = int(np.searchsorted(self._t, b, side="left"))
        inner = np.unique(self._t[lo:hi])                 # knots strictly inside (a, b)
        pts = np.concatenate(([a], inner, [b]))
        # trapezoids between consecutive points are exact for a piecewise-linear function;
        # the right-hand value at each start and the left-hand value at each end handle steps
        left_vals = self(pts[:-1], "right")
        right_vals = self(pts[1:], "left")
        return float(np.sum(0.5 * (left_vals + right_vals) * np.diff(pts)))

    def breakpoints(self):
        """Knot times where the slope or the value may jump [s], sorted, without repeats."""
        return np.unique(self._t).tolist()
