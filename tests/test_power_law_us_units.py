"""The power-law film coefficient a of h = a |dT|^n in US display units, Btu/(h ft2 F^(1+n)).

Sources
-------
* pint (an open unit library, independent of fdwall's arithmetic): the quantity
  a W/(m2 delta_degC^(1+n)) converted to Btu_it/(h ft2 delta_degF^(1+n)).
* Hand calculation from the definitions: 1 Btu (International Table) = 1055.05585262 J,
  1 ft = 0.3048 m, 1 h = 3600 s, a temperature difference of 1 K = 1.8 F (NIST SP 811,
  appendix B, from memory).  q'' = a dT^(1+n), so a_US = a_SI x (W/m2 in Btu/(h ft2)) /
  1.8^(1+n).
* For n = 0 the film coefficient's own factor, 1 W/(m2 K) = 0.17611 Btu/(h ft2 F) (Incropera
  & DeWitt, Fundamentals of Heat and Mass Transfer, 6th ed., conversion table inside the
  front cover, from memory).
"""
from __future__ import annotations

import html
import re

import numpy as np
import pint
import pytest

import fdwall.cli as cli
from fdwall.report import units as display_units
from fdwall.units import (
    W_M2K_IN_BTU_HFT2F,
    parse_power_law_coefficient,
    power_law_coefficient_us,
    power_law_unit_power,
)

EXPONENTS = [0.0, 0.25, 1.0 / 3.0, 0.8]


def _hand(a_si, n):
    """a [W/(m2 K^(1+n))] in Btu/(h ft2 F^(1+n)) from the unit definitions."""
    w_m2_in_btu_h_ft2 = 3600.0 / 1055.05585262 * 0.3048 ** 2     # 0.3169983
    return a_si * w_m2_in_btu_h_ft2 / 1.8 ** (1.0 + n)


@pytest.mark.parametrize("n", EXPONENTS)
def test_conversion_against_pint_and_hand_calculation(n):
    ureg = pint.UnitRegistry()
    a = 1.42
    q = ureg.Quantity(a, ureg.W / ureg.m ** 2 / ureg.delta_degC ** (1.0 + n))
    want = q.to(ureg.Btu_it / ureg.hour / ureg.ft ** 2 / ureg.delta_degF ** (1.0 + n)).magnitude
    got = power_law_coefficient_us(a, n)
    assert got == pytest.approx(want, rel=1e-12)
    assert got == pytest.approx(_hand(a, n), rel=1e-12)
    # the brief's form: 0.17611 x (5/9)^n per unit of a (0.17611 rounded: rel 1e-5)
    assert got == pytest.approx(a * 0.17611 * (5.0 / 9.0) ** n, rel=2e-5)


def test_film_coefficient_factor_of_the_handbook():
    # Incropera, conversion table (from memory): 1 W/(m2 K) = 0.17611 Btu/(h ft2 F)
    assert W_M2K_IN_BTU_HFT2F == pytest.approx(0.17611, rel=1e-4)
    assert power_law_coefficient_us(1.0, 0.0) == pytest.approx(0.17611, rel=1e-4)


@pytest.mark.parametrize("n", EXPONENTS)
def test_us_value_reads_back_through_the_case_file_parser(n):
    # the case-file reader (pint underneath) takes the US text back to the SI value
    a = 2.3
    us = power_law_coefficient_us(a, n)
    text = f"{us!r} Btu/h/ft2/degF^{1.0 + n!r}"
    assert parse_power_law_coefficient(text, n) == pytest.approx(a, rel=1e-10)


def test_unit_text_is_recognised_only_in_fdwall_spelling():
    assert power_law_unit_power("W/(m2 K^1.25)") == 1.25
    assert power_law_unit_power("W/(m2 K^1.333)") == 1.333
    for other in ("W/m2/K", "W/(m2 K)", "Btu/(h ft2 F^1.25)", "", "W/(m2 K^abc)"):
        assert power_law_unit_power(other) is None


def test_display_in_us_and_si():
    # exact exponent given: pint's answer; only the unit text: its (rounded) power
    a, n = 1.31, 1.0 / 3.0
    v, lab = display_units.display(a, "W/(m2 K^1.333)", "us", key="coefficient", exponent=n)
    assert float(v) == pytest.approx(_hand(a, n), rel=1e-12)
    assert lab == "Btu/(h ft2 F^1.333)"
    v, lab = display_units.display(a, "W/(m2 K^1.25)", "us")
    assert float(v) == pytest.approx(_hand(a, 0.25), rel=1e-12)
    assert lab == "Btu/(h ft2 F^1.25)"
    v, lab = display_units.display(np.array([a, 2 * a]), "W/(m2 K^1.25)", "si")
    assert np.allclose(v, [a, 2 * a]) and lab == "W/(m2 K^1.25)"


def _text(path):
    s = path.read_text()
    s = re.sub(r"<style.*?</style>|<script.*?</script>", "", s, flags=re.S)
    return " ".join(html.unescape(re.sub(r"<[^>]+>", " ", s)).split())


def _cooling_csv(tmp_path, a=1.42, n=0.25, C=5.0e4, A=1.2, d0=180.0, TA=20.0):
    # invented cooling log: closed form of C dT/dt = -A a dT^(1+n) (separable ODE), 0.05 K noise
    t = np.linspace(0.0, 6 * 3600.0, 150)
    rng = np.random.default_rng(11)
    T = TA + (d0 ** -n + n * a * A * t / C) ** (-1.0 / n) + rng.normal(0.0, 0.05, t.size)
    p = tmp_path / "cooling.csv"
    p.write_text("time [min],body [degC]\n"
                 + "".join(f"{ti / 60:.4f},{Ti:.4f}\n" for ti, Ti in zip(t, T)))
    return p


@pytest.mark.parametrize("units", ["us", "si"])
def test_fit_report_shows_the_coefficient_in_the_display_units(tmp_path, capsys, units):
    import json
    p = _cooling_csv(tmp_path)
    out = tmp_path / "out"
    rc = cli.main(["fit", str(p), "--time", "time [min]", "--temperature", "body [degC]",
                   "--power", "0 W", "--ambient", "20 degC", "--model", "power-law",
                   "--area", "1.2 m2", "--heat-capacity", "50 kJ/K", "--json", "--no-plots",
                   "--report", "--units", units, "--out", str(out)])
    assert rc == 0
    data = json.loads(capsys.readouterr().out)
    a, n = data["coefficient"], data["exponent"]
    assert data["coefficient_unit"] == "W/(m2 K^1.25)"      # the JSON keeps SI
    txt = _text(out / "cooling-fit-report.html")
    m = re.search(r"\bcoefficient ([0-9.eE+-]+) ((?:Btu|W)/\([^)]*\))", txt)
    assert m, txt[:2000]
    if units == "us":
        assert m.group(2) == "Btu/(h ft2 F^1.25)"
        assert float(m.group(1)) == pytest.approx(_hand(a, n), rel=1e-5)   # 6 digits shown
        assert "W/(m2 K^1.25)" not in txt.split("Inputs")[0]
    else:
        assert m.group(2) == "W/(m2 K^1.25)"
        assert float(m.group(1)) == pytest.approx(a, rel=1e-5)


def test_run_report_calc_notes_show_the_coefficient_in_us(tmp_path):
    case = tmp_path / "pl.toml"
    case.write_text("""title = "power-law film slab (invented test case)"
[run]
duration = "1 h"
start_temperature = "20 degC"
output_every = "10 min"
[materials.demo-board]
conductivity = "0.05 W/m/K"
specific_heat = "1000 J/kg/K"
density = "200 kg/m3"
[wall]
shape = "slab"
area = "2 m2"
[[wall.layers]]
material = "demo-board"
thickness = "50 mm"
[wall.inner_face]
fixed_temperature = "200 degC"
[wall.outer_face]
fluid_temperature = "20 degC"
[wall.outer_face.convection]
model = "power_law"
coefficient = "1.31 W/(m2*K^(4/3))"
exponent = "1/3"
""")
    out = tmp_path / "out"
    assert cli.main(["run", str(case), "--out", str(out), "--report", "--units", "us",
                     "--no-plots", "--quiet"]) == 0
    txt = _text(out / "pl-report.html")
    m = re.search(r"power-law coefficient a of h = a \|dT\|\^n ([0-9.eE+-]+) ((?:Btu|W)/\([^)]*\))",
                  txt)
    assert m, txt[:2000]
    assert m.group(2) == "Btu/(h ft2 F^1.333)"
    # converted with the exact n = 1/3, not the rounded 0.333 of the label
    assert float(m.group(1)) == pytest.approx(_hand(1.31, 1.0 / 3.0), rel=1e-5)
