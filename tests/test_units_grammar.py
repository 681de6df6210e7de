"""Tests of the strict unit grammar of fdwall.units (check_unit_text, parse_header_unit).

Sources: the accepted spellings are checked against exact unit definitions (1 in = 0.0254 m,
1 ft = 0.3048 m, 1 Btu(IT) = 1055.05585262 J, 1 h = 3600 s: NIST SP 811, Appendix B;
scipy.constants) so the grammar must not change what a good text means.  Which texts are
refused is the grammar documented in docs/case-file.md section 1 (a design rule of this
project: common practice, no source); the list of bad texts is the list of the issue.
"""

from __future__ import annotations

import glob
import re
import time

import pytest
import scipy.constants as sc

from fdwall.errors import InputError
from fdwall.units import MAX_UNIT_DEPTH, check_unit_text, parse_header_unit, parse_quantity

BAD = ["100 mm*", "100 mm/", "100 mm^", "100 mm)", "100 (mm", "100 mm]",
       "100 " + "(" * 60 + "mm" + ")" * 60, "100 mm = 1", "100 mm # x", "100 mm!",
       "100 {mm}", "100 ~mm", "60 degC;", "100 pi mm",
       # more of the same families (common practice, no source)
       "100 mm**", "100 mm^^2", "100 m^2^3", "100 m^(1/)", "100 mm//m", "100 *mm",
       "100 mm;rm", "100 mm\\", "100 mm'", "100 mm\"", "100 mm,", "100 mm@", "100 [mm]",
       "100 mm$", "100 mm&m", "100 ()", "100 mm()", "100 e mm", "100 tau mm"]


@pytest.mark.parametrize("text", BAD)
def test_bad_texts_are_refused_naming_key_and_text(text):
    # grammar of docs/case-file.md section 1 (project rule, common practice, no source)
    kind = "temperature" if "degC" in text else "length"
    with pytest.raises(InputError) as ei:
        parse_quantity(text, kind, "walls[0].layers[1].thickness", file="oven.toml")
    msg = str(ei.value)
    assert "walls[0].layers[1].thickness" in msg
    assert "oven.toml" in msg
    unit = text.split(" ", 1)[1].strip()
    assert unit[:40] in msg
    assert "Traceback" not in msg and "\n" not in msg


def test_deep_nesting_is_refused_quickly_without_recursion():
    # no recursion on user input: 100 000 parentheses give a clean error at once
    # (common practice, no source)
    text = "(" * 100_000 + "m" + ")" * 100_000
    t0 = time.perf_counter()
    with pytest.raises(InputError, match="characters long"):
        check_unit_text(text, "x")
    assert time.perf_counter() - t0 < 1.0
    with pytest.raises(InputError, match="nested deeper"):
        check_unit_text("(" * 50 + "m" + ")" * 50, "x")
    ok = "(" * MAX_UNIT_DEPTH + "m" + ")" * MAX_UNIT_DEPTH
    assert check_unit_text(ok, "x") == ok


INCH, FOOT, BTU = 0.0254, 0.3048, sc.Btu   # NIST SP 811 App. B; scipy.constants


@pytest.mark.parametrize("text,kind,si", [
    ("10 W/(m2*K)", "film_coefficient", 10.0),
    ("10 W/m2/K", "film_coefficient", 10.0),
    ("10 W/m^2/K", "film_coefficient", 10.0),
    ("10 W/(m**2*K)", "film_coefficient", 10.0),
    ("10 W m^-2 K^-1", "film_coefficient", 10.0),
    ("10 W/((m)^2*K)", "film_coefficient", 10.0),
    ("1 Btu/h/ft2/degF", "film_coefficient", BTU / 3600 / FOOT ** 2 * 1.8),  # NIST SP 811
    ("4 in", "length", 4 * INCH),                                            # NIST SP 811
    ("1 m^0.5*m^0.5", "length", 1.0),
    ("1 m^(1/2) m^(1/2)", "length", 1.0),
    ("2 ft²", "area", 2 * FOOT ** 2),
    ("0.01 1/K", "inverse_temperature", 0.01),
    ("3 m2K/W", "contact_resistance", 3.0),
    ("40 %", "dimensionless", 0.4),
    ("5 delta_degC", "temperature_difference", 5.0),
    ("250 degC", "temperature", 523.15),                   # SI Brochure, degree Celsius
])
def test_good_texts_keep_their_meaning(text, kind, si):
    assert parse_quantity(text, kind) == pytest.approx(si, rel=1e-12)


def _quoted_quantities(path):
    return re.findall(r'"([-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?) +([^"]+)"',
                      open(path, encoding="utf-8").read())


def test_every_unit_text_of_the_shipped_cases_and_docs_passes_the_grammar():
    # the grammar must read what the project's own case files and docs write
    # (common practice, no source)
    files = sorted(glob.glob("cases/*.toml")) + ["docs/case-file.md"]
    n = 0
    for f in files:
        for _, unit in _quoted_quantities(f):
            if unit.startswith(("mm*", "mm/", "mm^", "mm)", "(mm", "mm]", "mm ", "mm!", "{mm}",
                                "~mm", "degC;", "pi mm", "mm#", "e mm", "tau")):
                continue  # the refused examples quoted in docs/case-file.md
            check_unit_text(unit, f)
            n += 1
    assert n > 50


@pytest.mark.parametrize("header,expected", [
    ("time [s]", ("time", "s")),
    ("shell temperature [degC]", ("shell temperature", "degC")),
    ("power [kW]", ("power", "kW")),
    ("flux [W/m2]", ("flux", "W/m2")),
    ("label", ("label", None)),
])
def test_header_units(header, expected):
    # column headers 'name [unit]' (docs/case-file.md section 1; common practice, no source)
    assert parse_header_unit(header) == expected


@pytest.mark.parametrize("header", ["time [s", "time s]", "[s]", "time [s] [h]", "time [s;]",
                                    "time [pi s]", "time [s]x"])
def test_bad_headers_are_refused(header):
    with pytest.raises(InputError) as ei:
        parse_header_unit(header, file="log.csv")
    assert "log.csv" in str(ei.value)


@pytest.mark.parametrize("bad", ["50 mm*", "50 mm = 1", "50 (mm", "50 pi mm"])
def test_cli_run_refuses_a_case_with_a_bad_unit_exit_2_nothing_written(tmp_path, bad):
    # exit code 2 for bad input and nothing written: the project's command-line rule
    # (common practice, no source)
    import os
    import subprocess
    import sys
    root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    text = open(os.path.join(root, "cases", "lab-furnace-wall.toml"), encoding="utf-8").read()
    assert 'thickness = "50 mm"' in text
    case = tmp_path / "bad.toml"
    case.write_text(text.replace('thickness = "50 mm"', f'thickness = "{bad}"', 1))
    out = tmp_path / "out"
    p = subprocess.run([sys.executable, "-m", "fdwall.cli", "run", str(case), "--out", str(out)],
                       capture_output=True, text=True, cwd=root, timeout=120,
                       env=dict(os.environ, PYTHONPATH=root))
    err = " ".join(p.stderr.split())
    assert p.returncode == 2, p.stderr
    assert "Traceback" not in p.stderr
    assert "thickness" in err and bad.split(" ", 1)[1] in err and "bad.toml" in err
    assert not out.exists() or not os.listdir(out)
