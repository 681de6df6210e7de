"""Typed, path-aware access to the tables of a parsed case file.

:class:`Section` wraps one TOML table with its key path (``walls[0].layers[1]``) and the
file name, checks its keys against the allowed set (suggesting the nearest key for a typo)
and reads values with units through :func:`fdwall.units.parse_quantity`, so every error is
a :class:`CaseError` that names the file, the key path, what was wrong and what is allowed.
"""

from __future__ import annotations

import difflib
import math
import numbers
from typing import Mapping

from .. import units as U
from ..schedule import Schedule
from .errors import CaseError

__all__ = ["Section", "MISSING", "join"]


class _Missing:
    def __repr__(self):
        return "MISSING"


#: Marker for "no default: the key is required".
MISSING = _Missing()


def join(path: str, key) -> str:
    """Key path of ``key`` below ``path`` (``walls[0]`` + ``area`` -> ``walls[0].area``)."""
    if isinstance(key, int):
        return f"{path}[{key}]"
    return f"{path}.{key}" if path else str(key)


def _type_name(v) -> str:
    if isinstance(v, bool):
        return "a boolean"
    if isinstance(v, numbers.Real):
        return "a number"
    if isinstance(v, str):
        return "text"
    if isinstance(v, list):
        return "a list"
    if isinstance(v, Mapping):
        return "a table"
    return type(v).__name__


class Section:
    """One table of the case file.

    Parameters
    ----------
    data : mapping
        The parsed TOML table.
    path : str
        Its key path ('' for the top level).
    file : str
        File name for messages.
    allowed : mapping of str to str
        Allowed keys and a short description of each (used in messages).
    what : str
        What the table is, for messages (e.g. "a layer").
    """

    def __init__(self, data, path: str, file: str, allowed: Mapping, what: str = "this table"):
        if not isinstance(data, Mapping):
            raise CaseError(f"expected a table of keys ({what}), got {_type_name(data)}: {data!r}",
                            file=file, key=path or "(top level)",
                            allowed="a TOML table with the keys " + ", ".join(allowed))
        self.data = dict(data)
        self.path = path
        self.file = file
        self.allowed = dict(allowed)
        self.what = what
        unknown = [k for k in self.data if k not in self.allowed]
        if unknown:
            k = unknown[0]
            near = difflib.get_close_matches(str(k), list(self.allowed), n=2, cutoff=0.6)
            hint = f" (did you mean {' or '.join(repr(n) for n in near)}?)" if near else ""
            raise CaseError(f"unknown key '{k}' in {what}{hint}", file=file, key=join(path, k),
                            allowed="the keys " + ", ".join(self.allowed))

    # ---------------------------------------------------------------- basics
    def key(self, name) -> str:
        """Key path of ``name`` in this table."""
        return join(self.path, name)

    def has(self, name: str) -> bool:
        """True when ``name`` is given."""
        return name in self.data

    def error(self, name, problem: str, allowed: str = "") -> CaseError:
        """A CaseError located at key ``name`` of this table (``None``: the table itself)."""
        return CaseError(problem, file=self.file, key=self.key(name) if name is not None else
                         (self.path or "(top level)"), allowed=allowed)

    def raw(self, name: str, default=MISSING):
        """The value as parsed from TOML, or ``default``; raises if required and missing."""
        if name in self.data:
            return self.data[name]
        if default is MISSING:
            raise CaseError(f"the required key '{name}' is missing from {self.what}",
                            file=self.file, key=self.key(name),
                            allowed=f"{name}: {self.allowed.get(name, '')}")
        return default

    def exclusive(self, *names, required: bool = False):
        """The one of ``names`` that is given (None if none); error if several are given."""
        given = [n for n in names if n in self.data]
        if len(given) > 1:
            raise self.error(given[1], f"'{given[0]}' and '{given[1]}' are both given in "
                                       f"{self.what}, but they exclude each other",
                             f"only one of {', '.join(names)}")
        if required and not given:
            raise self.error(None, f"{self.what} needs one of the keys {', '.join(names)}",
                             "; ".join(f"{n}: {self.allowed.get(n, '')}" for n in names))
        return given[0] if given else None

    # ---------------------------------------------------------------- scalars
    def text(self, name: str, default=MISSING, choices=None) -> str:
        """A text value, optionally one of ``choices``."""
        v = self.raw(name, default)
        if v is default and name not in self.data:
            return v
        if not isinstance(v, str):
            raise self.error(name, f"expected text, got {_type_name(v)} {v!r}",
                             " or ".join(f"'{c}'" for c in choices) if choices else "a text value")
        if choices is not None:
            key = v.strip().lower().replace("-", "_").replace(" ", "_")
            norm = {c.lower().replace("-", "_").replace(" ", "_"): c for c in choices}
            if key not in norm:
                near = difflib.get_close_matches(key, list(norm), n=1, cutoff=0.5)
                hint = f" (did you mean '{norm[near[0]]}'?)" if near else ""
                raise self.error(name, f"'{v}' is not a known choice{hint}",
                                 "one of " + ", ".join(f"'{c}'" for c in choices))
            return norm[key]
        return v

    def boolean(self, name: str, default=MISSING) -> bool:
        """A true/false value."""
        v = self.raw(name, default)
        if name not in self.data:
            return v
        if not isinstance(v, bool):
            raise self.error(name, f"expected true or false, got {_type_name(v)} {v!r}",
                             "true or false (TOML booleans, without quotes)")
        return v

    def integer(self, name: str, default=MISSING, minimum=None) -> int:
        """A whole number, optionally >= ``minimum``."""
        v = self.raw(name, default)
        if name not in self.data:
            return v
        if isinstance(v, bool) or not isinstance(v, numbers.Integral):
            if isinstance(v, float) and v.is_integer():
                v = int(v)
            else:
                raise self.error(name, f"expected a whole number, got {_type_name(v)} {v!r}",
                                 "a whole number" + (f" >= {minimum}" if minimum is not None else ""))
        if minimum is not None and v < minimum:
            raise self.error(name, f"{v} is less than {minimum}", f"a whole number >= {minimum}")
        return int(v)

    def quantity(self, name: str, kind: str, default=MISSING, *, positive=False,
                 nonnegative=False, lo=None, hi=None) -> float:
        """A value with unit, converted to SI (see :func:`fdwall.units.parse_quantity`).

        ``lo``/``hi`` bound the SI value (inclusive)."""
        v = self.raw(name, default)
        if name not in self.data:
            return v
        return parse_value(v, kind, self.key(name), self.file, positive=positive,
                           nonnegative=nonnegative, lo=lo, hi=hi)

    def quantity_list(self, name: str, kind: str, default=MISSING, *, positive=False,
                      nonnegative=False, length=None) -> list:
        """A list of values with units, converted to SI."""
        v = self.raw(name, default)
        if name not in self.data:
            return v
        ex = U.KINDS[kind].examples
        if not isinstance(v, list):
            raise self.error(name, f"expected a list, got {_type_name(v)} {v!r}",
                             f"a list of values with units, e.g. [{ex}]")
        if length is not None and len(v) != length:
            raise self.error(name, f"expected {length} value(s), got {len(v)}",
                             f"a list of exactly {length} value(s) with units")
        return [parse_value(x, kind, join(self.key(name), i), self.file, positive=positive,
                            nonnegative=nonnegative) for i, x in enumerate(v)]

    def schedule(self, name: str, kind: str, default=MISSING, *, nonnegative=False, lo=None,
                 hi=None):
        """A single value (float) or a schedule of [time, value] pairs (Schedule), SI."""
        v = self.raw(name, default)
        if name not in self.data:
            return v
        return parse_schedule(v, kind, self.key(name), self.file, nonnegative=nonnegative,
                              lo=lo, hi=hi)

    def table(self, name: str, allowed: Mapping, what: str, default=MISSING):
        """A sub-table as a Section (or ``default`` when absent)."""
        v = self.raw(name, default)
        if name not in self.data:
            return v
        return Section(v, self.key(name), self.file, allowed, what)

    def tables(self, name: str, allowed: Mapping, what: str, default=MISSING) -> list:
        """An array of tables as a list of Sections (or ``default`` when absent)."""
        v = self.raw(name, default)
        if name not in self.data:
            return v
        if isinstance(v, Mapping):
            raise self.error(name, f"expected an array of tables ([[{self.key(name)}]] "
                                   f"headers), got a single table",
                             f"one [[{self.key(name)}]] header per entry")
        if not isinstance(v, list) or not v:
            got = "an empty list" if isinstance(v, list) else _type_name(v)
            raise self.error(name, f"expected a non-empty array of tables, got {got}",
                             f"one [[{self.key(name)}]] header per entry")
        return [Section(x, join(self.key(name), i), self.file, allowed, what)
                for i, x in enumerate(v)]


def _bounds(x, key, file, kind, lo, hi, shown):
    if (lo is not None and x < lo) or (hi is not None and x > hi):
        lab = U.KINDS[kind].label
        rng = (f"between {lo:g} and {hi:g}" if lo is not None and hi is not None
               else f">= {lo:g}" if lo is not None else f"<= {hi:g}")
        raise CaseError(f"{shown} is outside the allowed range", file=file, key=key,
                        allowed=f"a {lab.split(' [')[0]} {rng}"
                                + (f" [{lab.split('[')[-1]}" if "[" in lab else ""))


def parse_value(v, kind, key, file, *, positive=False, nonnegative=False, lo=None, hi=None):
    """One value with unit -> SI float, with optional bounds on the SI value."""
    x = U.parse_quantity(v, kind, key, file=file, positive=positive, nonnegative=nonnegative)
    _bounds(x, key, file, kind, lo, hi, f"'{v}'" if isinstance(v, str) else repr(v))
    return x


def parse_pairs(v, x_kind, y_kind, key, file, *, nonnegative=False, lo=None, hi=None,
                strictly=False, what="schedule"):
    """A list of [x, y] pairs -> (xs, ys) in SI; xs must not decrease (increase if strictly)."""
    xe, ye = U.KINDS[x_kind].examples.split(", ")[0], U.KINDS[y_kind].examples.split(", ")[0]
    form = f"a list of [{U.KINDS[x_kind].label.split(' [')[0]}, value] pairs, e.g. [[{xe}, {ye}], ...]"
    if not isinstance(v, list) or not v:
        raise CaseError(f"expected a non-empty list of pairs, got {_type_name(v)} {v!r}",
                        file=file, key=key, allowed=form)
    xs, ys = [], []
    for i, pair in enumerate(v):
        k = join(key, i)
        if not isinstance(pair, list) or len(pair) != 2:
            raise CaseError(f"entry {i} is {pair!r}, not a pair [{U.KINDS[x_kind].label.split(' [')[0]}, "
                            "value]", file=file, key=k, allowed=form)
        x = U.parse_quantity(pair[0], x_kind, join(k, 0), file=file,
                             nonnegative=(x_kind == "time"))
        y = parse_value(pair[1], y_kind, join(k, 1), file, nonnegative=nonnegative, lo=lo, hi=hi)
        if xs and (x < xs[-1] or (strictly and x == xs[-1])):
            xname = "times" if x_kind == "time" else "temperatures"
            order = ("increase from entry to entry" if strictly else
                     "never go backwards (repeat a time to make a step)")
            raise CaseError(f"the {what} goes backwards at entry {i}: {pair[0]!r} comes after "
                            f"{v[i - 1][0]!r}", file=file, key=join(k, 0),
                            allowed=f"entries in order: the {xname} must {order}")
        if not strictly and len(xs) >= 2 and x == xs[-1] == xs[-2]:
            raise CaseError(f"the time {pair[0]!r} appears three times", file=file,
                            key=join(k, 0), allowed="at most two entries at the same time "
                                                    "(one step per instant)")
        xs.append(x)
        ys.append(y)
    return xs, ys


def parse_schedule(v, kind, key, file, *, nonnegative=False, lo=None, hi=None):
    """A single value -> float; a list of [time, value] pairs -> Schedule (SI)."""
    if isinstance(v, list):
        ts, ys = parse_pairs(v, "time", kind, key, file, nonnegative=nonnegative, lo=lo, hi=hi)
        if len(ts) == 1:
            return ys[0]
        return Schedule(ts, ys)
    return parse_value(v, kind, key, file, nonnegative=nonnegative, lo=lo, hi=hi)


def is_finite_number(v) -> bool:
    """True for a finite int/float (not a bool)."""
    return isinstance(v, numbers.Real) and not isinstance(v, bool) and math.isfinite(float(v))
