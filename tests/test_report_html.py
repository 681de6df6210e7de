"""HTML calculation report: structure, self-containment, values and display units.

External references: the HTML5 parsing rules as implemented by html5lib/lxml (a real parser);
unit conversions checked against pint (open library) and the exact definitions
1 in = 0.0254 m, degF = degC * 9/5 + 32 (NIST SP 811, from memory).
"""
from __future__ import annotations

import re
import shutil
import subprocess

import h5py
import numpy as np
import pint
import pytest

from fdwall.cautions import SAFETY_CAUTION
from fdwall.h5tree import write_file
from fdwall.report import html as rhtml
from fdwall.report.units import display


def _fixture(path, kind="size", caution=True):
    """A small result file in the common analysis layout (invented numbers)."""
    attrs = {"kind": kind, "fdwall_version": "0.test", "case_name": "invented-oven",
             "created": "2026-01-01T00:00:00Z"}
    if caution:
        attrs["caution"] = SAFETY_CAUTION
    groups = {
        "inputs": {"target": "60 degC", "target_K": 333.15},
        "summary": {"thickness_m": 0.0254, "shell_temperature_K": 323.15, "loss_W": 1000.0},
        "tables": {"sweep": {"thickness_m": np.array([0.01, 0.02, 0.03]),
                             "shell_K": np.array([350.0, 330.0, 320.0])}},
        "warnings": {"items": ["invented warning"]},
        "references": {"items": ["Churchill-Chu (1975)"]},
        "notes": {"items": ["invented scenario"]},
    }
    write_file(str(path), groups, attrs=attrs)
    return path


def _parse(text):
    try:
        import html5lib
        parser = html5lib.HTMLParser(strict=True)
        return parser.parse(text)
    except ImportError:  # pragma: no cover
        from lxml import html as lh
        return lh.fromstring(text)


def test_report_sections_valid_and_self_contained(tmp_path):
    h5 = _fixture(tmp_path / "x-size.h5")
    out = rhtml.write_report(h5, tmp_path / "r.html")
    text = out.read_text()
    _parse(text)  # a real HTML5 parser (html5lib strict) raises on parse errors
    for sec in ("identification", "summary", "inputs", "tables", "warnings", "references",
                "notes", "provenance", "caution"):
        assert f'id="{sec}"' in text, sec
    assert SAFETY_CAUTION in text
    assert not re.search(r'(src|href)\s*=\s*"https?:', text)
    assert "@import" not in text
    assert "counter(page)" in text
    assert "not recorded" in text  # no input_sha256 in the fixture


def test_values_equal_file_and_us_units(tmp_path):
    h5 = _fixture(tmp_path / "x-size.h5")
    si = rhtml.render_report(h5, units="si")
    with h5py.File(h5) as f:
        g = f["summary"]
        t = float(g.attrs["shell_temperature_K"] if "shell_temperature_K" in g.attrs
                  else g["shell_temperature_K"][()])
    assert f"{t - 273.15:.6g}" in si  # K -> degC: 50
    us = rhtml.render_report(h5, units="us")
    assert ">1<" in us.replace(" ", "")  # 0.0254 m = 1 in exactly (NIST definition)
    assert "122" in us  # 50 degC = 122 degF
    ureg = pint.UnitRegistry()
    w, label = display(1000.0, "W", "us")
    assert label == "Btu/h"
    assert float(w) == pytest.approx(ureg.Quantity(1000.0, "W").to("Btu/hour").magnitude)
    r, _ = display(1.0, "m2*K/W", "us")
    assert float(r) == pytest.approx(5.678263, rel=1e-4)  # 1 m2K/W = 5.678 h ft2 F/Btu (ASHRAE)


def test_not_a_result_is_input_error(tmp_path):
    bad = tmp_path / "bad.h5"
    with h5py.File(bad, "w") as f:
        f["x"] = 1
    with pytest.raises(rhtml.InputError):
        rhtml.render_report(bad)
    from fdwall.cli import main
    assert main(["report", str(bad)]) == 2
    assert main(["report", str(tmp_path / "missing.h5")]) == 2


def test_cli_report_ident(tmp_path):
    from fdwall.cli import main
    h5 = _fixture(tmp_path / "x-size.h5")
    out = tmp_path / "o.html"
    assert main(["report", str(h5), "--out", str(out), "--project", "Invented P1",
                 "--units", "us"]) == 0
    assert "Invented P1" in out.read_text()


def test_chromium_renders_not_blank(tmp_path):
    exe = shutil.which("chromium") or shutil.which("chromium-browser")
    if exe is None:
        import os
        if os.environ.get("CI") or os.environ.get("FDWALL_EXPECT_CHROMIUM"):
            pytest.fail("chromium expected in CI but not found")
        pytest.skip("chromium not installed")
    h5 = _fixture(tmp_path / "x-size.h5")
    out = rhtml.write_report(h5, tmp_path / "r.html")
    png = tmp_path / "shot.png"
    subprocess.run([exe, "--headless", "--no-sandbox", "--disable-gpu",
                    f"--screenshot={png}", "--window-size=900,900", out.as_uri()],
                   check=False, timeout=120, capture_output=True)
    import matplotlib.image as mpimg
    img = mpimg.imread(str(png))
    assert np.var(img) > 1e-4


def test_temperature_differences_are_not_shifted():
    """A residual or standard error in kelvin is a difference: 1 K shows as 1 K (si) and as
    1.8 degF (us), never as -272.15 degC (NIST SP 811: a kelvin difference equals a degC
    difference and 1.8 degF differences, from memory); checked against pint's delta units."""
    ureg = pint.UnitRegistry()
    v, label = display(1.0, "K", "si", key="rms_K")
    assert v == pytest.approx(1.0) and label == "K"
    v, label = display(1.0, "K", "us", key="R_stderr_K")
    assert v == pytest.approx(ureg.Quantity(1.0, "delta_degC").to("delta_degF").magnitude)
    v, label = display(300.0, "K", "si", key="T_max_K")
    assert v == pytest.approx(26.85) and label == "degC"


# ----------------------------------------------------------------- run results (kind transient)
RUN_CASE = """
title = "invented report panel"
[run]
duration = "2 h"
start_temperature = "20 degC"
output_every = "5 min"
[materials.test-board]
conductivity = "0.05 W/m/K"
specific_heat = "1000 J/kg/K"
density = "100 kg/m3"
source = "invented test data"
[wall]
name = "panel"
[[wall.layers]]
material = "test-board"
thickness = "50 mm"
[wall.inner_face]
fixed_temperature = "200 degC"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "10 W/m2/K"
"""


def _rows(text, section):
    """(cells of each row) of the tables inside section ``id=section`` (html5lib tree)."""
    import xml.etree.ElementTree as ET
    doc = _parse(text)
    ns = "{http://www.w3.org/1999/xhtml}"
    sec = [s for s in doc.iter(f"{ns}section") if s.get("id") == section]
    assert sec, section
    out = []
    for tr in sec[0].iter(f"{ns}tr"):
        out.append(["".join(ET.tostring(c, method="text", encoding="unicode")).strip()
                    for c in tr if c.tag in (f"{ns}td", f"{ns}th")])
    return out


def test_run_report_energy_balance_and_mesh_equal_file(tmp_path, capsys):
    from fdwall.cli import main
    p = tmp_path / "panel.toml"
    p.write_text(RUN_CASE)
    out = tmp_path / "out"
    assert main(["run", str(p), "--out", str(out), "--report", "--no-plots", "--quiet"]) == 0
    text = (out / "panel-report.html").read_text()
    with h5py.File(out / "panel.h5") as h:
        res_max = float(h["solver"].attrs["energy_residual_max_J"])
        scale = float(h["solver"].attrs["energy_scale_J"])
        rel = float(h["energy/residual"].attrs["relative_max"])
        stored = float(h["energy/stored"][-1])
        n_nodes = h["mesh/wall_0/x"].shape[0]
        accepted = int(h["solver"].attrs["accepted_steps"])
    energy = {r[0]: r[1:] for r in _rows(text, "energy-balance")}
    assert float(energy["largest residual at a step end"][0]) == pytest.approx(res_max, rel=1e-5)
    assert float(energy["energy stored at the end"][0]) == pytest.approx(stored, rel=1e-5)
    assert energy["energy stored at the end"][1] == "J"
    assert float(energy["largest residual relative to the energy scale"][0]) == \
        pytest.approx(rel, rel=1e-2)
    # first law (energy conservation): the stored residual is tiny beside the energy that moved
    assert rel == pytest.approx(res_max / scale) and rel < 1e-6
    # stored energy from the closed form: for an initially uniform slab heated to a profile
    # between T0 and the end profile, E = rho cp A int (T - T0) dx; bounded above by the
    # steady linear profile's content rho cp A L (T_mean_steady - T0) (Incropera ch. 3, 5)
    Ts = 20 + 180 * 0.1 / 1.1
    e_steady = 100 * 1000 * 1.0 * 0.05 * ((200 + Ts) / 2 - 20)
    assert 0 < stored < e_steady
    mesh = _rows(text, "mesh-steps")
    assert mesh[1][0] == "panel" and int(mesh[1][2]) == n_nodes
    steps = {r[0]: r[1:] for r in mesh}
    assert int(steps["steps accepted"][0]) == accepted
    assert float(steps["duration"][0]) == 7200.0 and steps["duration"][1] == "s"
    # a tolerance is a temperature difference, never shifted by -273.15 degC: the default is
    # derived from the accuracy contract, 1e-4 of the temperature scale, here the 180 K between
    # the 200 degC air and the 20 degC start (fdwall.model.contract_tolerance): 0.018 K
    assert steps["local error tolerance per step"] == ["0.018", "K"]
    assert 'id="touch"' not in text
    us = rhtml.render_report(out / "panel.h5", units="us")
    steps_us = {r[0]: r[1:] for r in _rows(us, "mesh-steps")}
    # 1 K difference = 1.8 degF difference (pint delta_degF)
    tol_f = pint.UnitRegistry().Quantity(0.018, "delta_degC").to("delta_degF").magnitude
    assert float(steps_us["local error tolerance per step"][0]) == pytest.approx(tol_f)


def test_run_report_touch_verdicts_with_caution(tmp_path, capsys):
    from fdwall.cautions import BURN_INDICATOR_NOTE
    from fdwall.cli import main
    p = tmp_path / "panel.toml"
    p.write_text(RUN_CASE)
    out = tmp_path / "out"
    assert main(["touch", str(p), "--criterion", "limit", "--limit", "35 degC", "--out",
                 str(out), "--no-plots", "--contact-time", "4 s", "--quiet"]) == 0
    capsys.readouterr()
    rep = rhtml.write_report(out / "panel.h5", tmp_path / "t.html")
    text = rep.read_text()
    assert SAFETY_CAUTION in text and BURN_INDICATOR_NOTE in text
    with h5py.File(out / "panel.h5") as h:
        f0 = h["touch/faces/0"]
        tmax = float(f0.attrs["T_max_K"])
        margin = float(f0.attrs["margin_K"])
        verdict = f0.attrs["verdict"]
        Tsteady = float(f0.attrs["T_steady_K"])
    # steady skin temperature by the composite-wall formula (Incropera sec. 3.1)
    assert Tsteady == pytest.approx(293.15 + 180 * 0.1 / 1.1, abs=1e-5)
    rows = _rows(text, "touch")
    assert rows[0][:3] == ["face", "surface class", "verdict"]
    r = rows[1]
    assert r[2] == verdict == "fail"
    # degC = K - 273.15 (definition of the Celsius scale, NIST SP 811)
    assert float(r[3]) == pytest.approx(tmax - 273.15, abs=1e-4)
    assert float(r[4]) == pytest.approx(35.0, abs=1e-6)
    assert float(r[5]) == pytest.approx(margin, abs=1e-4)   # a difference: not shifted
    assert r[7] == "degC"


def test_run_report_shows_the_stored_error_estimate(tmp_path, capsys):
    # the report presents /error_estimate as stored (docs/results.md); an estimated error is
    # a temperature difference: 1 K = 1.8 delta_degF (pint)
    import json

    from fdwall.cli import main
    p = tmp_path / "panel.toml"
    p.write_text(RUN_CASE)
    out = tmp_path / "out"
    assert main(["run", str(p), "--out", str(out), "--report", "--no-plots", "--quiet"]) == 0
    text = (out / "panel-report.html").read_text()
    with h5py.File(out / "panel.h5") as h:
        g = h["error_estimate"]
        points = json.loads(g.attrs["points"])
        margin = float(g.attrs["margin"])
        met = bool(g.attrs["meets_contract"])
    assert 'id="accuracy"' in text and "Accuracy (spatial error estimate)" in text
    assert f"margin {margin:.2f} for temperatures" in text
    assert ("<b>met</b>" if met else "<b>NOT met</b>") in text
    rows = {r[0]: r[1:] for r in _rows(text, "mesh-steps") if r and r[0] in
            {q["point"] for q in points}}
    assert set(rows) == {q["point"] for q in points}
    for q in points:
        assert float(rows[q["point"]][0]) == pytest.approx(q["max_error_K"], rel=1e-5)
        assert rows[q["point"]][1] == "K"
    us = rhtml.render_report(out / "panel.h5", units="us")
    rows_us = {r[0]: r[1:] for r in _rows(us, "mesh-steps") if r and r[0] == points[0]["point"]}
    f = pint.UnitRegistry().Quantity(points[0]["max_error_K"], "delta_degC").to("delta_degF")
    assert float(rows_us[points[0]["point"]][0]) == pytest.approx(f.magnitude, rel=1e-5)
