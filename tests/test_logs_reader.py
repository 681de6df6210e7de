"""Log reader: header units by the strict unit grammar, units in options, clock times and
ISO timestamps with a stated time zone, and the reported repairs (fdwall.analyses.logs)."""
import numpy as np
import pytest

from fdwall.analyses.logs import read_log
from fdwall.errors import InputError

KW = dict(temperature="oven", power="heater", ambient=293.15, file="x.csv")


def _log(times, temps=None, head="time [min]"):
    temps = temps if temps is not None else [20.0 + i for i in range(len(times))]
    return "\n".join([f"{head},oven [degC],heater [W]"]
                     + [f"{a},{b},1000" for a, b in zip(times, temps)]) + "\n"


@pytest.mark.parametrize("header, match", [
    ("time [s]],oven [degC],heater [W]", "not 'name \\[unit\\]'"),
    ("time [s^],oven [degC],heater [W]", "power"),
    ("time [s],oven [deg C =],heater [W]", "not allowed"),
])
def test_header_units_use_strict_grammar(header, match):
    # Source: fdwall's unit grammar (docs/case-file.md, fdwall.units.check_unit_text): a
    # header 'name [unit]' whose unit breaks the grammar is refused naming the header.
    text = header + "\n0,20,1000\n1,21,1000\n2,22,1000\n"
    with pytest.raises(InputError, match=match):
        read_log(text, time="time", **KW)


def test_unit_in_option_and_conflict():
    # Source: unit definitions (NIST SP 811): 1 h = 3600 s, T[K] = T[degC] + 273.15.
    text = "time,oven,heater [W]\n0,20,1000\n0.5,21,1000\n1,22,1000\n"
    d = read_log(text, time="time [h]", temperature="oven [degC]", power="heater",
                 ambient=293.15, file="x.csv")
    assert np.allclose(d["t_s"], [0, 1800, 3600]) and np.allclose(d["T_K"][0], 293.15)
    with pytest.raises(InputError, match=r"\[min\] in its header and \[s\] in the option"):
        read_log(_log([0, 1, 2]), time="time [s]", **KW)


def test_iso_timestamps_across_a_dst_change():
    # Source: IANA time zone database, EU rule: on 2026-03-29 clocks in Europe/Berlin go from
    # 02:00 CET (+01:00) to 03:00 CEST (+02:00); so 01:59 to 03:00 local is one minute.
    text = _log(["2026-03-29T01:58:00", "2026-03-29T01:59:00", "2026-03-29T03:00:00",
                 "2026-03-29T03:01"], head="stamp")
    with pytest.raises(InputError, match="row 2, column 'stamp'.*no UTC offset"):
        read_log(text, time="stamp", **KW)
    d = read_log(text, time="stamp", time_zone="Europe/Berlin", **KW)
    assert np.allclose(d["t_s"], [0, 60, 120, 180])
    assert d["start"] == "2026-03-29T00:58:00+00:00"
    # the same instants written with offsets need no zone (ISO 8601 offsets)
    text = _log(["2026-03-29T01:58:00+01:00", "2026-03-29T00:59:00Z",
                 "2026-03-29T03:00:00+02:00", "2026-03-29T01:01:00+00:00"], head="stamp")
    assert np.allclose(read_log(text, time="stamp", **KW)["t_s"], [0, 60, 120, 180])
    # a local time that does not exist (in the skipped hour) is refused naming the row
    bad = _log(["2026-03-29T01:59:00", "2026-03-29T02:30:00", "2026-03-29T03:01:00"],
               head="stamp")
    with pytest.raises(InputError, match="row 3.*does not exist"):
        read_log(bad, time="stamp", time_zone="Europe/Berlin", **KW)
    # and one that occurs twice (2026-10-25 02:30 in Berlin, clocks set back at 03:00 CEST)
    bad = _log(["2026-10-25T02:00:00+02:00", "2026-10-25T02:30:00", "2026-10-25T03:10:00"],
               head="stamp")
    with pytest.raises(InputError, match="row 3.*occurs twice"):
        read_log(bad, time="stamp", time_zone="Europe/Berlin", **KW)
    with pytest.raises(InputError, match="time zone 'Mars/Base' is not known"):
        read_log(text, time="stamp", time_zone="Mars/Base", **KW)
    with pytest.raises(InputError, match="row 3, column 'stamp'.*neither a number"):
        read_log(_log(["2026-03-29T01:58:00Z", "soon", "2026-03-29T03:00:00Z"], head="stamp"),
                 time="stamp", **KW)


def test_clock_times_passing_midnight_are_reported():
    # Source: common practice, no source (a clock that drops by more than 12 h between rows
    # of a minute-by-minute log has passed midnight); the repair is reported, never silent.
    d = read_log(_log(["23:58", "23:59:00", "00:00", "00:01:30"], head="clock"),
                 time="clock", **KW)
    assert np.allclose(d["t_s"], [0, 60, 120, 210])
    assert any("midnight at row 4" in r for r in d["repairs"])


def test_repairs_sort_duplicates_and_their_errors():
    # Source: common practice, no source: sorting is stable; duplicate rows are averaged
    # (hand arithmetic: (21 + 23)/2 = 22 degC).
    text = _log([0, 2, 1, 3], [20, 22, 21, 23])
    with pytest.raises(InputError, match="row 4.*unsorted.*--repair sort"):
        read_log(text, time="time", **KW)
    d = read_log(text, time="time", repair=["sort"], **KW)
    assert np.allclose(d["t_s"], [0, 60, 120, 180]) and np.allclose(d["T_K"] - 273.15,
                                                                     [20, 21, 22, 23])
    assert list(d["rows"]) == [2, 4, 3, 5] and "sorted" in d["repairs"][0]
    text = _log([0, 1, 1, 2], [20, 21, 23, 24])
    with pytest.raises(InputError, match="row 4.*duplicate"):
        read_log(text, time="time", **KW)
    d = read_log(text, time="time", repair=["duplicates"], **KW)
    assert np.allclose(d["T_K"] - 273.15, [20, 22, 24]) and "averaged" in d["repairs"][0]
    with pytest.raises(InputError, match="unknown repair"):
        read_log(text, time="time", repair=["guess"], **KW)


def test_outliers_and_gaps():
    # Source: Hampel identifier (F. R. Hampel, J. Am. Stat. Assoc. 69 (1974) 383; the running
    # median / MAD form of R. K. Pearson, "Outliers in process modeling and identification",
    # IEEE Trans. Control Syst. Technol. 10 (2002) 55; from memory): a 40 K spike in a smooth
    # warm-up with 0.1 K noise is an outlier, the warm-up itself is not.
    rng = np.random.default_rng(0)
    t = np.arange(60)
    T = 20 + 150 * (1 - np.exp(-t / 20.0)) + rng.normal(0, 0.1, t.size)
    assert read_log(_log(t, np.round(T, 2)), time="time", **KW)["repairs"] == []
    T[30] += 40
    text = _log(t, np.round(T, 2))
    with pytest.raises(InputError, match="row 32, column 'oven'.*outlier"):
        read_log(text, time="time", **KW)
    d = read_log(text, time="time", repair=["outliers"], **KW)
    assert d["t_s"].size == 59 and 32 not in d["rows"] and "rows 32" in d["repairs"][0]
    tg = np.concatenate([np.arange(30), np.arange(60, 90)])
    text = _log(tg, 20 + 0.1 * tg)
    with pytest.raises(InputError, match="row 32, column 'time': a gap of 1860 s"):
        read_log(text, time="time", **KW)
    d = read_log(text, time="time", repair=["gaps"], **KW)
    assert d["t_s"].size == 60 and "gap" in d["repairs"][0]


def test_timestamp_reader_never_tracebacks_on_mutated_csv():
    # Source: property-based testing (hypothesis); common practice, no source: a mutated log
    # with timestamps gives a result or an InputError, never another exception.
    import tempfile

    from hypothesis import HealthCheck, given, settings
    from hypothesis import strategies as st
    good = _log(["2026-03-29T01:58:00", "2026-03-29T01:59:00", "2026-03-29T03:00:00",
                 "23:59"], head="stamp").encode()

    @settings(max_examples=200, derandomize=True, deadline=None,
              suppress_health_check=list(HealthCheck))
    @given(st.integers(0, len(good) - 1), st.binary(max_size=4),
           st.sampled_from([None, "Europe/Berlin", "+01:00", "UTC", "Nowhere/Land"]),
           st.sampled_from([(), ("sort", "duplicates", "outliers", "gaps")]))
    def check(i, b, zone, repair):
        with tempfile.NamedTemporaryFile(suffix=".csv", delete=False) as f:
            f.write(good[:i] + b + good[i + 1:])
        try:
            read_log(f.name, time="stamp", temperature="oven", power="heater",
                     ambient=293.15, time_zone=zone, repair=repair)
        except InputError:
            pass

    check()
