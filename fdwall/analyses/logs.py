"""Measured heating logs: reading them and fitting a one-node R/C model.

Analyses layer (after lumped). SI inside: time in s, temperature in K, power in W,
R in K/W, C in J/K. Column headers are ``name [unit]``; units follow the case-file grammar
(split by :func:`fdwall.units.parse_header_unit`, parsed by
:func:`fdwall.units.parse_unit`).
"""
from __future__ import annotations

import io
import re
from datetime import datetime, timedelta, timezone
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import numpy as np

from fdwall.analyses.twonode import fit_log
from fdwall.errors import CaseError, InputError
from fdwall.units import parse_header_unit, parse_unit, ureg

_EXAMPLE_UNIT = {"time": "s", "temperature": "degC", "power": "W", "duty": "1 or %",
                 "state": "1"}

#: Repairs the reader may make when asked (``repair=``); each one it makes is reported.
REPAIRS = ("sort", "duplicates", "outliers", "gaps")

#: A time step longer than this many times the median step is a gap in the log.
GAP_FACTOR = 10.0
#: Outlier test (Hampel identifier): a reading further than max(OUTLIER_SIGMAS sigma,
#: OUTLIER_MIN_K) from the median of its OUTLIER_WINDOW neighbours (centred), sigma being
#: 1.4826 times the median absolute deviation of the column from those running medians.
OUTLIER_WINDOW = 7
OUTLIER_SIGMAS = 8.0
OUTLIER_MIN_K = 3.0

_CLOCK = re.compile(r"^\s*(\d{1,2}):(\d{2})(?::(\d{2}(?:\.\d*)?))?\s*$")


def _err(file, what, allowed=""):
    msg = f"{file}: {what}"
    if allowed:
        msg += f"; allowed: {allowed}"
    return InputError(msg)


def _split_spec(spec, name, option_word):
    """``"oven [degC]"`` -> ("oven", "degC"); ``"oven"`` -> ("oven", None) (strict grammar)."""
    try:
        return parse_header_unit(str(spec), where=option_word)
    except CaseError as exc:
        raise _err(name, f"{option_word} {spec!r}: {exc.problem}", exc.allowed) from None


def parse_time_zone(text):
    """A time zone: an IANA name (``"Europe/Berlin"``), ``"UTC"`` or an offset ``"+01:00"``.

    Returns a :class:`datetime.tzinfo`; raises InputError naming what is allowed.
    """
    s = str(text).strip()
    m = re.fullmatch(r"(?:UTC)?([+-])(\d{1,2}):?(\d{2})?", s)
    if m:
        h, mi = int(m.group(2)), int(m.group(3) or 0)
        if h > 14 or mi > 59:
            raise InputError(f"time zone {s!r}: the offset is out of range; allowed: offsets "
                             "from -14:00 to +14:00")
        sign = 1 if m.group(1) == "+" else -1
        return timezone(sign * timedelta(hours=h, minutes=mi))
    if s.upper() in ("UTC", "Z", "GMT"):
        return timezone.utc
    try:
        return ZoneInfo(s)
    except (ZoneInfoNotFoundError, ValueError, TypeError):
        raise InputError(f"time zone {s!r} is not known; allowed: an IANA zone name such as "
                         "'Europe/Berlin' or 'America/Chicago', 'UTC', or an offset such as "
                         "'+01:00'") from None


def _clock_or_timestamps(cells, key, name, time_zone):
    """Elapsed seconds [s] from clock times (HH:MM[:SS]) or ISO 8601 timestamps.

    Returns (seconds since the first row, start as ISO text or '', list of repair notes).
    """
    notes = []
    clock = [_CLOCK.match(str(c)) for c in cells]
    if all(clock):
        sec = np.array([int(m.group(1)) * 3600 + int(m.group(2)) * 60 + float(m.group(3) or 0)
                        for m in clock])
        for i, m in enumerate(clock):
            if int(m.group(1)) > 23 or int(m.group(2)) > 59 or float(m.group(3) or 0) >= 60:
                raise _err(name, f"row {i + 2}, column {key!r}: {cells[i]!r} is not a clock "
                           "time", "HH:MM or HH:MM:SS with hours 0-23")
        d = np.diff(sec)
        wraps = np.flatnonzero(d < -12 * 3600.0)
        if wraps.size:
            sec = sec + 86400.0 * np.concatenate([[0], np.cumsum(d < -12 * 3600.0)])
            notes.append(f"column {key!r}: clock time passes midnight at row"
                         f"{'s' if wraps.size > 1 else ''} "
                         + ", ".join(str(int(w) + 3) for w in wraps[:5])
                         + " (a drop of more than 12 h is read as the next day)")
        return sec - sec[0], "", notes
    tz = None if time_zone is None else (time_zone if not isinstance(time_zone, str)
                                         else parse_time_zone(time_zone))
    stamps = []
    for i, c in enumerate(cells):
        row = i + 2
        try:
            ts = datetime.fromisoformat(str(c).strip())
        except ValueError:
            raise _err(name, f"row {row}, column {key!r}: {str(c)[:30]!r} is neither a number "
                       "with the column's unit nor a clock time or ISO 8601 timestamp",
                       "a time unit in the header ('time [s]', '[min]', '[h]'), or, with no "
                       "unit, clock times HH:MM:SS or timestamps such as 2026-03-01T08:30:00 "
                       "(with an offset, or with --time-zone)") from None
        if ts.tzinfo is None:
            if tz is None:
                raise _err(name, f"row {row}, column {key!r}: timestamp {str(c).strip()!r} "
                           "has no UTC offset and no time zone was stated",
                           "timestamps with an offset (2026-03-01T08:30:00+01:00) or a stated "
                           "time zone (--time-zone Europe/Berlin, UTC, +01:00)")
            a, b = ts.replace(tzinfo=tz, fold=0), ts.replace(tzinfo=tz, fold=1)
            back = a.astimezone(timezone.utc).astimezone(tz).replace(tzinfo=None)
            if back != ts:
                raise _err(name, f"row {row}, column {key!r}: local time {str(c).strip()!r} "
                           f"does not exist in {time_zone} (clocks set forward)",
                           "real local times, or timestamps with a UTC offset")
            if a.utcoffset() != b.utcoffset():
                raise _err(name, f"row {row}, column {key!r}: local time {str(c).strip()!r} "
                           f"occurs twice in {time_zone} (clocks set back)",
                           "timestamps with a UTC offset in that hour")
            ts = a
        stamps.append(ts.astimezone(timezone.utc))
    t0 = stamps[0]
    sec = np.array([(s - t0).total_seconds() for s in stamps])
    return sec, t0.isoformat(), notes


def _hampel(x):
    """Indices of outliers in ``x`` (Hampel identifier, see OUTLIER_* constants) [same unit]."""
    n = x.size
    if n < OUTLIER_WINDOW:
        return np.array([], dtype=int)
    h = OUTLIER_WINDOW // 2
    pad = np.concatenate([np.full(h, x[0]), x, np.full(h, x[-1])])
    win = np.lib.stride_tricks.sliding_window_view(pad, OUTLIER_WINDOW)
    med = np.median(win, axis=1)
    dev = np.abs(x - med)
    sigma = 1.4826 * np.median(dev)
    return np.flatnonzero(dev > max(OUTLIER_SIGMAS * sigma, OUTLIER_MIN_K))


def read_log(path_or_text, *, time, temperature, power=None, ambient, duty=None, state=None,
             rated_power=None, file=None, time_zone=None, repair=()) -> dict:
    """Read a CSV heating log into SI arrays.

    Column options name a column by the part of its header before the bracket; a header
    ``name [unit]`` gives the unit, or the option does (``"oven [degC]"`` for a header ``oven``;
    when both give one they must agree).  Units follow the strict unit grammar
    (:func:`fdwall.units.parse_header_unit`).

    Parameters
    ----------
    path_or_text : str or path
        CSV file, or CSV text (lines starting with ``#`` are comments).
    time : str
        Time column.  With a time unit (s, min, h) the cells are numbers; with no unit they are
        clock times ``HH:MM[:SS]`` (a drop of more than 12 h is read as passing midnight, and
        reported) or ISO 8601 timestamps (with a UTC offset, or local times in ``time_zone``).
    temperature : str or list of str
        Temperature column name(s); several are averaged. Unit K, degC or degF.
    power : str or float, optional
        Power column name, or a constant power in W.  Give exactly one of ``power``,
        ``duty`` or ``state``.
    duty : str, optional
        Duty column name (a fraction 0..1, or % in the header unit); power = duty x
        ``rated_power``.
    state : str, optional
        On/off column name (values 0 or 1 only); power = state x ``rated_power``.
    rated_power : float, optional
        Rated heater power in W, needed with ``duty`` or ``state``.
    ambient : str or float
        Ambient column name, or a constant ambient temperature in K.
    time_zone : str or tzinfo, optional
        Zone of timestamps written without an offset (IANA name, ``"UTC"``, ``"+01:00"``).
    repair : iterable of str
        Repairs allowed (each one made is reported in ``repairs``), from :data:`REPAIRS`:
        ``sort`` (stable sort of unsorted rows by time), ``duplicates`` (rows with the same
        time averaged into one), ``outliers`` (rows with a temperature reading that fails the
        Hampel test dropped), ``gaps`` (time steps over GAP_FACTOR x the median step kept,
        the power of the row before held across).  Without them each is an error.

    Returns
    -------
    dict
        ``t_s`` [s from the first row], ``T_K``, ``P_W``, ``T_amb_K`` as float arrays of
        equal length, ``repairs`` (list of strings), ``start`` (ISO UTC text of the first
        timestamp, or ''), ``rows`` (the file's row numbers kept, header = row 1).

    Raises
    ------
    InputError
        For unreadable files, unknown columns, text in number columns, gaps, duplicate or
        unsorted times, outliers (unless repaired); the message names the file, row and column.
    """
    import pandas as pd  # lazy: heavy optional dependency

    name = str(file or path_or_text) if not (isinstance(path_or_text, str)
                                             and "\n" in path_or_text) else str(file or "log")
    repair = set(repair or ())
    unknown = repair - set(REPAIRS)
    if unknown:
        raise _err(name, f"unknown repair {sorted(unknown)[0]!r}", ", ".join(REPAIRS))
    try:
        if isinstance(path_or_text, str) and "\n" in path_or_text:
            src = io.StringIO(path_or_text)
        else:
            src = path_or_text
        df = pd.read_csv(src, comment="#", dtype=str, skipinitialspace=True)
    except FileNotFoundError:
        raise _err(name, "the log file does not exist") from None
    except (UnicodeDecodeError, pd.errors.ParserError, pd.errors.EmptyDataError, OSError,
            ValueError) as exc:
        raise _err(name, f"cannot be read as CSV ({type(exc).__name__})",
                   "comma-separated text with a header row 'name [unit],...'") from None
    cols = {}
    for raw in df.columns:
        try:
            key, unit = parse_header_unit(str(raw), where=f"header {str(raw)!r}")
        except CaseError as exc:
            raise _err(name, f"header {str(raw)!r}: {exc.problem}",
                       exc.allowed or "headers like 'time [s]'") from None
        if key in cols:
            raise _err(name, f"column name {key!r} appears twice")
        cols[key] = (raw, unit)
    if len(df) < 3:
        raise _err(name, f"has {len(df)} data rows", "at least 3 rows")

    def cells(spec, option_word):
        key, opt_unit = _split_spec(spec, name, option_word)
        if key not in cols:
            raise _err(name, f"no column named {key!r}", "one of " + ", ".join(map(repr, cols)))
        raw, unit = cols[key]
        if opt_unit is not None:
            if unit is not None and unit.replace(" ", "") != opt_unit.replace(" ", ""):
                raise _err(name, f"column {key!r} has the unit [{unit}] in its header and "
                           f"[{opt_unit}] in the option", "one unit, or the same in both")
            unit = opt_unit
        vals = df[raw].tolist()
        for i, s in enumerate(vals):
            if s is None or (isinstance(s, float) and np.isnan(s)) or str(s).strip() == "":
                raise _err(name, f"row {i + 2}, column {key!r}: empty cell (gap)",
                           "a number in every cell")
        return key, unit, vals

    def column(spec, kind):
        key, unit, vals = cells(spec, f"the {kind} column")
        if not unit:
            raise _err(name, f"column {key!r} has no unit in brackets",
                       f"a header such as '{key} [{_EXAMPLE_UNIT[kind]}]', or the unit in the "
                       f"option: '{key} [{_EXAMPLE_UNIT[kind].split()[0]}]'")
        try:
            u = parse_unit(unit, where=key, file=name)
        except InputError as exc:
            raise _err(name, f"column {key!r}: {getattr(exc, 'problem', exc)}") from None
        out = np.empty(len(vals))
        for i, s in enumerate(vals):
            row = i + 2  # header is row 1
            try:
                out[i] = float(s)
            except ValueError:
                raise _err(name, f"row {row}, column {key!r}: {str(s)[:30]!r} is not a number",
                           "a number in every cell") from None
            if not np.isfinite(out[i]):
                raise _err(name, f"row {row}, column {key!r}: non-finite value", "finite numbers")
        if kind in ("duty", "state"):
            try:
                return key, np.asarray(ureg.Quantity(out, u).to("dimensionless").magnitude,
                                       float)
            except Exception:  # pint DimensionalityError
                raise _err(name, f"column {key!r}: unit {unit!r} is not a fraction",
                           "[1] or [%]") from None
        target = {"time": "s", "temperature": "K", "power": "W"}[kind]
        try:
            return key, np.asarray(ureg.Quantity(out, u).to(target).magnitude, float)
        except Exception:  # pint DimensionalityError and offset-unit errors
            raise _err(name, f"column {key!r}: unit {unit!r} is not a {kind} unit") from None

    repairs, start = [], ""
    tkey, tunit, tcells = cells(time, "the time column")
    if tunit is None:
        t, start, notes = _clock_or_timestamps(tcells, tkey, name, time_zone)
        repairs += notes
    else:
        tkey, t = column(time, "time")
    temps = [temperature] if isinstance(temperature, str) else list(temperature)
    Tcols = [column(c, "temperature") for c in temps]
    given = [k for k, v in (("power", power), ("duty", duty), ("state", state)) if v is not None]
    if len(given) != 1:
        raise _err(name, "heater input given as " + (", ".join(given) or "nothing"),
                   "exactly one of a power (column or value), a duty column or a state column")
    if power is not None:
        P = (column(power, "power")[1] if isinstance(power, str)
             else np.full(len(t), float(power)))
    else:
        if rated_power is None or not np.isfinite(rated_power) or rated_power <= 0:
            raise _err(name, f"a {given[0]} column needs a positive rated power "
                       f"(got {rated_power!r})", "a rated power > 0 W")
        key, f = column(duty if duty is not None else state,
                        "duty" if duty is not None else "state")
        if duty is not None:
            bad = np.flatnonzero((f < 0) | (f > 1))
            if bad.size:
                raise _err(name, f"row {bad[0] + 2}, column {key!r}: duty {f[bad[0]]:g} is "
                           "outside 0..1", "a fraction 0..1 (or 0..100 with a [%] header)")
        else:
            bad = np.flatnonzero((f != 0) & (f != 1))
            if bad.size:
                raise _err(name, f"row {bad[0] + 2}, column {key!r}: state {f[bad[0]]:g} is "
                           "not 0 or 1", "0 (off) or 1 (on)")
        P = f * float(rated_power)
    Acol = column(ambient, "temperature") if isinstance(ambient, str) else None
    Ta = Acol[1] if Acol else np.full(len(t), float(ambient))
    rows = np.arange(2, len(t) + 2)
    data = np.column_stack([t, P, Ta] + [c[1] for c in Tcols])

    d = np.diff(data[:, 0])
    if np.any(d < 0):
        i = int(np.argmax(d < 0)) + 3
        if "sort" not in repair:
            raise _err(name, f"row {i}, column {tkey!r}: time goes backwards (rows unsorted)",
                       "strictly increasing times, or the repair 'sort' (--repair sort)")
        order = np.argsort(data[:, 0], kind="stable")
        data, rows = data[order], rows[order]
        repairs.append(f"column {tkey!r}: rows sorted by time ({int(np.sum(d < 0))} "
                       f"backward step(s), the first at row {i})")
    d = np.diff(data[:, 0])
    if np.any(d == 0):
        i = int(rows[int(np.argmax(d == 0)) + 1])
        if "duplicates" not in repair:
            raise _err(name, f"row {i}, column {tkey!r}: duplicate time",
                       "strictly increasing times, or the repair 'duplicates' (--repair "
                       "duplicates averages rows of the same time)")
        uniq, inv, counts = np.unique(data[:, 0], return_inverse=True, return_counts=True)
        merged = np.zeros((uniq.size, data.shape[1]))
        np.add.at(merged, inv, data)
        merged /= counts[:, None]
        first = np.full(uniq.size, -1)
        for j in range(len(inv) - 1, -1, -1):
            first[inv[j]] = rows[j]
        repairs.append(f"column {tkey!r}: {int(np.sum(counts - 1))} duplicate time(s) averaged "
                       f"with the row of the same time (the first at row {i})")
        data, rows = merged, first
    bad_rows = {}
    for j, (ckey, _) in enumerate([(c[0], None) for c in Tcols] + ([(Acol[0], None)] if Acol
                                                                   else [])):
        col = data[:, 3 + j] if j < len(Tcols) else data[:, 2]
        for k in _hampel(col):
            bad_rows.setdefault(int(k), (ckey, col[k]))
    if bad_rows:
        k0 = min(bad_rows)
        ckey, v = bad_rows[k0]
        if "outliers" not in repair:
            raise _err(name, f"row {rows[k0]}, column {ckey!r}: reading {v - 273.15:.6g} degC "
                       f"is an outlier (more than max({OUTLIER_SIGMAS:g} sigma, "
                       f"{OUTLIER_MIN_K:g} K) from the median of its {OUTLIER_WINDOW} "
                       f"neighbours; {len(bad_rows)} such row(s))",
                       "check the sensor, or the repair 'outliers' (--repair outliers drops "
                       "those rows)")
        keep = np.setdiff1d(np.arange(len(rows)), list(bad_rows))
        repairs.append(f"{len(bad_rows)} outlier row(s) dropped: rows "
                       + ", ".join(str(int(rows[k])) for k in sorted(bad_rows)[:10])
                       + (" ..." if len(bad_rows) > 10 else ""))
        data, rows = data[keep], rows[keep]
    d = np.diff(data[:, 0])
    if d.size:
        med = float(np.median(d))
        gaps = np.flatnonzero(d > GAP_FACTOR * med)
        if gaps.size:
            g = int(gaps[0])
            if "gaps" not in repair:
                raise _err(name, f"row {rows[g + 1]}, column {tkey!r}: a gap of {d[g]:.6g} s "
                           f"in the times (over {GAP_FACTOR:g} x the median step {med:.6g} s; "
                           f"{gaps.size} such gap(s))",
                           "a log without gaps, or the repair 'gaps' (--repair gaps holds the "
                           "power of the row before across the gap)")
            repairs.append(f"{gaps.size} time gap(s) kept, the power of the row before held "
                           "across: rows " + ", ".join(str(int(rows[k + 1])) for k in gaps[:10]))
    if len(rows) < 3:
        raise _err(name, f"has {len(rows)} data rows after repairs", "at least 3 rows")
    return {"t_s": data[:, 0] - data[0, 0], "T_K": data[:, 3:].mean(axis=1), "P_W": data[:, 1],
            "T_amb_K": data[:, 2], "repairs": repairs, "start": start, "rows": rows}


def one_node_propagate(t, P, T_amb, R, C, T0):
    """Exact one-node response C dT/dt = P - (T - T_amb)/R, power held over each step.

    Parameters in SI (s, W, K, K/W, J/K, K). ``P[i]`` and ``T_amb[i]`` act on [t[i], t[i+1]).
    Returns temperatures in K at ``t``.
    """
    t = np.asarray(t, float)
    T = np.empty_like(t)
    T[0] = T0
    tau = R * C
    for i in range(len(t) - 1):
        Tinf = T_amb[i] + P[i] * R
        T[i + 1] = Tinf + (T[i] - Tinf) * np.exp(-(t[i + 1] - t[i]) / tau)
    return T


def _check_inputs(t, T, P, T_amb):
    for nm, a in (("time", t), ("temperature", T), ("power", P), ("ambient", T_amb)):
        if not np.all(np.isfinite(a)):
            raise InputError(f"fit: {nm} holds non-finite values; allowed: finite numbers")
    if np.any(np.diff(t) <= 0):
        raise InputError("fit: times are not strictly increasing; allowed: sorted, unique times")
    if np.nanmax(T) < 150.0:
        raise InputError(f"fit: temperatures up to {np.max(T):.1f} K look like degC given as "
                         "kelvin; allowed: K (or a degC column header)")
    if np.all(P == 0):
        raise InputError("fit: power is zero throughout, so R and C cannot be separated; "
                         "allowed: a log with heating power (zero power gives the time constant "
                         "only)")


def fit_one_node_log(t, T, P, T_amb, **kw) -> dict:
    """Fit R (K/W), C (J/K) and the start temperature to a log by least squares.

    The one-node case of :func:`fdwall.analyses.twonode.fit_log` (keyword arguments go there:
    ``sensor_lag``, ``dead_time``, ``n_boot``, ``seed``).  Standard errors are from the
    Jacobian, scaled by the residual variance and inflated for lag-1 residual autocorrelation
    through the effective sample size n_eff = n (1-r1)/(1+r1); a moving-block bootstrap gives
    intervals beside them.  Returns at least ``R_K_per_W``, ``R_stderr_K_per_W``,
    ``C_J_per_K``, ``C_stderr_J_per_K``, ``tau_s``, ``T0_K``, ``rms_K``,
    ``lag1_autocorrelation``, ``n_eff``, ``correlation_RC``, ``warnings``.
    """
    t, T, P, Ta = (np.asarray(a, float) for a in (t, T, P, T_amb))
    _check_inputs(t, T, P, Ta)
    return fit_log(t, T, P, Ta, model="one-node", **kw)


def physics_check(fit: dict, implied: dict, log_duration_s: float) -> dict:
    """Compare a one-node fit with the R and C the case's physics implies.

    Parameters
    ----------
    fit : dict
        From :func:`fit_one_node_log` (``R_K_per_W``, ``C_J_per_K``, ``tau_s``).
    implied : dict
        From :func:`fdwall.analyses.lumped.implied_rc` (``R_K_per_W`` [K/W],
        ``C_stored_J_per_K`` and ``C_total_J_per_K`` [J/K], ``tau_s`` [s]).
    log_duration_s : float
        Length of the log [s].

    Returns
    -------
    dict
        ``physics`` (the implied values under their own keys), ``ratios`` (fitted / implied:
        ``R``, ``C_stored``, ``C_total``, ``tau``, dimensionless), ``reading`` (list of
        plain-language sentences) and ``warnings`` (list of strings).
    """
    phys = {k: float(implied[k]) for k in ("R_K_per_W", "C_stored_J_per_K", "C_total_J_per_K",
                                           "tau_s")}
    for k, v in phys.items():
        if not (np.isfinite(v) and v > 0):
            raise InputError(f"physics cross-check: the case implies {k} = {v!r}; allowed: a "
                             "case whose heater drives it above ambient at steady state")
    reading, warns = [], []
    n_tau = log_duration_s / fit["tau_s"]
    if fit.get("R_K_per_W") is None:  # zero-power log: the time constant only
        rt = fit["tau_s"] / phys["tau_s"]
        reading.append(f"The log has no heating power, so it gives the time constant only: "
                       f"fitted/implied tau {rt:.2f}. R and C cannot be compared one by one.")
        return {"physics": phys, "ratios": {"tau": rt}, "reading": reading, "warnings": warns,
                "log_time_constants": float(n_tau)}
    rR = fit["R_K_per_W"] / phys["R_K_per_W"]
    rC = fit["C_J_per_K"] / phys["C_stored_J_per_K"]
    ratios = {"R": rR, "C_stored": rC, "C_total": fit["C_J_per_K"] / phys["C_total_J_per_K"],
              "tau": fit["tau_s"] / phys["tau_s"]}
    if n_tau < 3.0:
        warns.append(f"the log lasts {n_tau:.1f} fitted time constants (under about 3): it is "
                     "too short to see equilibrium, so R is extrapolated and R and C trade off")
        reading.append("Log too short to see equilibrium: the fitted R rests on extrapolation "
                       "and the fitted C on the early, fast part of the warm-up.")
    if abs(rR - 1) <= 0.1:
        reading.append(f"R agrees with the physics within 10 % (fitted/implied {rR:.2f}).")
    elif rR < 1:
        reading.append(f"Fitted R is {100 * (1 - rR):.0f} % below the physics: the equipment "
                       "loses more heat than its walls conduct. Leakage (door gaps, vents) adds "
                       "to 1/R; so do edges, corners and fixings that the 1-D wall leaves out, "
                       "or conductivity (k) data lower than the real, aged or damp material.")
    else:
        reading.append(f"Fitted R is {100 * (rR - 1):.0f} % above the physics: the case's "
                       "films or k data may be pessimistic, or the sensor sits where the air is "
                       "hotter than the chamber mean (sensor placement).")
    if abs(rC - 1) <= 0.1:
        reading.append(f"C agrees with the stored-energy C within 10 % (fitted/implied "
                       f"{rC:.2f}).")
    elif rC > 1:
        reading.append(f"Fitted C is {100 * (rC - 1):.0f} % above the walls' stored-energy C: "
                       "contents (load, racks, trays, heater mass) add to C, moisture being "
                       "driven off absorbs heat, and a lagging sensor makes the warm-up look "
                       "slower (sensor lag biases C upward).")
    else:
        reading.append(f"Fitted C is {100 * (1 - rC):.0f} % below the walls' stored-energy C: "
                       "in a short log only the inner part of a thick lining has warmed "
                       "(distributed capacity), or the sensor reads the fast air node rather "
                       "than the walls (sensor placement).")
    reading.append("R and C hold at the temperatures the log ran at: radiation loss grows "
                   "roughly as T^3 and the conductivity of insulation rises with temperature, "
                   "so R falls and C moves (cp(T)) when the equipment runs hotter.")
    return {"physics": phys, "ratios": ratios, "reading": reading, "warnings": warns,
            "log_time_constants": float(n_tau)}


def predict_one_node(R, C, T_amb, *, setpoint=None, power=None, rated_power=None, T0=None,
                     R_stderr=0.0) -> dict:
    """Predictions of a fitted one-node model (closed forms of C dT/dt = P - (T - T_amb)/R).

    Parameters
    ----------
    R, C : float
        Fitted resistance [K/W] and capacity [J/K].
    T_amb : float
        Ambient temperature [K].
    setpoint : float, optional
        Setpoint [K]; gives the duty needed to hold it and, with ``power``, the time to reach
        it from ``T0``.
    power : float, optional
        Heater power [W] for the steady temperature and the warm-up (default ``rated_power``).
    rated_power : float, optional
        Full heater power [W] for the duty at the setpoint.
    T0 : float, optional
        Start temperature [K] for the time to the setpoint (default ``T_amb``).
    R_stderr : float
        Standard error of R [K/W], carried to the steady temperature and duty (first order).

    Returns
    -------
    dict
        Any of ``steady_temperature_K`` (+ ``steady_temperature_stderr_K``),
        ``time_to_setpoint_s`` (``inf`` when the setpoint lies beyond the steady temperature),
        ``duty_at_setpoint`` (fraction; > 1 means the heater cannot hold it) with
        ``duty_at_setpoint_stderr``, and ``power_at_setpoint_W``.
    """
    out = {}
    P = power if power is not None else rated_power
    T0 = T_amb if T0 is None else T0
    if P is not None:
        T_inf = T_amb + P * R
        out["steady_temperature_K"] = float(T_inf)
        out["steady_temperature_stderr_K"] = float(abs(P) * R_stderr)
    if setpoint is not None:
        out["power_at_setpoint_W"] = float((setpoint - T_amb) / R)
        if rated_power:
            duty = (setpoint - T_amb) / (R * rated_power)
            out["duty_at_setpoint"] = float(duty)
            out["duty_at_setpoint_stderr"] = float(abs(duty) * R_stderr / R)
        if P is not None:
            # T(t) = T_inf + (T0 - T_inf) exp(-t / RC)  =>  t = RC ln((T0 - T_inf)/(Tset - T_inf))
            a, b = T0 - T_inf, setpoint - T_inf
            if a * b <= 0 and setpoint != T0:  # setpoint at or beyond the steady temperature
                t_set = float("inf") if (setpoint - T0) * (T_inf - T0) > 0 else 0.0
            elif abs(b) >= abs(a):  # already at or past the setpoint
                t_set = 0.0
            else:
                t_set = float(R * C * np.log(a / b))
            out["time_to_setpoint_s"] = t_set
    return out
