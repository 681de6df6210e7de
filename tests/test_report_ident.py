"""Identification block of the report: the case file's [report] table and the report options.

What is checked: the texts given reach the result file (/report) and the report's
identification table unchanged, options override them, blanks stay blank, and a bad value
is a one-paragraph input error naming the key (exit 2). The values are plain texts, so the
reference is the input itself (common practice, no source).
"""
from __future__ import annotations

import h5py
import pytest

from fdwall.cli import main

CASE = """
title = "invented report ident panel"
[report]
project = "P-17 invented demo"
equipment = "demo oven door"
author = "A. Engineer"
revision = "B"
date = 2026-12-03
[run]
duration = "20 min"
start_temperature = "20 degC"
[materials.demo-board]
conductivity = "0.5 W/m/K"
specific_heat = "1000 J/kg/K"
density = "1000 kg/m3"
source = "invented test data"
[wall]
name = "door"
[[wall.layers]]
material = "demo-board"
thickness = "20 mm"
[wall.inner_face]
fixed_temperature = "100 degC"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "10 W/m2/K"
"""


def _ident(text):
    import xml.etree.ElementTree as ET

    import html5lib
    doc = html5lib.HTMLParser(strict=True).parse(text)
    ns = "{http://www.w3.org/1999/xhtml}"
    sec = [s for s in doc.iter(f"{ns}section") if s.get("id") == "identification"][0]
    out = {}
    for tr in sec.iter(f"{ns}tr"):
        cells = [ET.tostring(c, method="text", encoding="unicode").strip() for c in tr]
        out[cells[0]] = cells[1]
    return out


def test_report_table_reaches_file_and_report(tmp_path, capsys):
    p = tmp_path / "door.toml"
    p.write_text(CASE)
    out = tmp_path / "out"
    assert main(["run", str(p), "--out", str(out), "--report", "--no-plots", "--quiet"]) == 0
    with h5py.File(out / "door.h5") as h:
        assert dict(h["report"].attrs) == {"project": "P-17 invented demo",
                                           "equipment": "demo oven door",
                                           "author": "A. Engineer", "revision": "B",
                                           "date": "2026-12-03"}
    ident = _ident((out / "door-report.html").read_text())
    assert ident["project"] == "P-17 invented demo" and ident["date"] == "2026-12-03"
    assert ident["checker"] == ""          # not given: blank
    # options override the stored texts
    rep = tmp_path / "r.html"
    assert main(["report", str(out / "door.h5"), "--out", str(rep), "--checker", "B. Checker",
                 "--date", "2026-12-04"]) == 0
    ident = _ident(rep.read_text())
    assert ident["checker"] == "B. Checker" and ident["date"] == "2026-12-04"
    assert ident["author"] == "A. Engineer"


def test_no_report_table_leaves_blanks(tmp_path, capsys):
    p = tmp_path / "door.toml"
    p.write_text(CASE.split("[report]")[0] + "[run]" + CASE.split("[run]")[1])
    out = tmp_path / "out"
    assert main(["run", str(p), "--out", str(out), "--report", "--no-plots", "--quiet"]) == 0
    with h5py.File(out / "door.h5") as h:
        assert "report" not in h
    assert set(_ident((out / "door-report.html").read_text()).values()) == {""}


@pytest.mark.parametrize("line, key", [('revision = 3', "report.revision"),
                                       ('reviewer = "X"', "report.reviewer")])
def test_bad_report_key_is_input_error(tmp_path, capsys, line, key):
    p = tmp_path / "door.toml"
    p.write_text(CASE.replace('revision = "B"', line))
    assert main(["check", str(p)]) == 2
    err = capsys.readouterr().err
    assert key in err and "Traceback" not in err


def test_plots_of_an_earlier_run_are_not_embedded(tmp_path, capsys):
    """A result rewritten with --no-plots leaves the older PNGs beside it: the report must
    not show them as this run's plots (their file times predate the result's 'created')."""
    import os
    import time
    p = tmp_path / "door.toml"
    p.write_text(CASE)
    out = tmp_path / "out"
    assert main(["run", str(p), "--out", str(out), "--quiet"]) == 0
    assert main(["report", str(out / "door.h5")]) == 0
    text = (out / "door-report.html").read_text()
    assert text.count('src="data:image/png;base64,') == 3
    old = time.time() - 3600.0
    for png in out.glob("*.png"):
        os.utime(png, (old, old))
    assert main(["run", str(p), "--out", str(out), "--quiet", "--no-plots", "--report"]) == 0
    text = (out / "door-report.html").read_text()
    assert 'src="data:image/png' not in text
    assert "door-temperatures.png" in text and "earlier run" in text
