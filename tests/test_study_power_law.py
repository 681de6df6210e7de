"""Design studies that vary or sample a power-law film (coefficient a and exponent n of
h = a |T_face - T_fluid|^n) against the closed-form energy balance of each variant.

Source: steady plane wall between a held inner face and a power-law film outside; the heat
flow through the wall equals the film loss, k / L (T1 - Ts) = a (Ts - Tf)^(1 + n)
(Fourier's law and Newton's law of cooling with h = a dT^n, Incropera & DeWitt, Fundamentals
of Heat and Mass Transfer, 6th ed., sec. 3.1; the power-law form of natural convection,
McAdams 1954, from memory), solved for Ts with scipy.optimize.brentq.
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import brentq

from fdwall.analyses.study_outputs import edited
from fdwall.errors import InputError
from fdwall.study import read_study, run_study

K_C = 273.15
k, L, T1, TF = 0.05, 0.05, 200.0 + K_C, 20.0 + K_C

CASE = """title = "power-law film slab (invented test case)"
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
area = "1 m2"
[[wall.layers]]
material = "demo-board"
thickness = "50 mm"
[wall.inner_face]
fixed_temperature = "200 degC"
[wall.outer_face]
fluid_temperature = "20 degC"
[wall.outer_face.convection]
model = "power_law"
coefficient = "1.42 W/(m2 K^1.25)"
exponent = 0.25
"""

COEF = "wall.outer_face.convection.coefficient"
EXPO = "wall.outer_face.convection.exponent"


def _Ts(a, n):
    return brentq(lambda x: k / L * (T1 - x) - a * (x - TF) ** (1 + n), TF, T1, xtol=1e-13)


def _files(tmp_path, study):
    (tmp_path / "pl.toml").write_text(CASE)
    p = tmp_path / "pl-study.toml"
    p.write_text(study)
    return p


def _n(v):
    if isinstance(v, str) and "/" in v:
        p, q = v.split("/")
        return float(p) / float(q)
    return float(v)


def test_grid_of_exponent_and_coefficient(tmp_path):
    p = _files(tmp_path, f"""base = "pl.toml"
outputs = ["outer_T_K", "loss_W"]
[[vary]]
path = "{EXPO}"
values = [0.2, 0.25, "1/3"]
[[vary]]
path = "{COEF}"
values = ["1.2 W/(m2 K^1.25)", "1.6 W/(m2 K^1.25)"]
""")
    _, rows = run_study(p, tmp_path, workers=1)
    assert len(rows) == 6 and all(r["status"] == "done" for r in rows), rows
    seen = set()
    for r in rows:
        a = float(str(r[COEF]).split()[0])
        n = _n(r[EXPO])
        Ts = _Ts(a, n)
        assert r["outer_T_K"] == pytest.approx(Ts, abs=1e-6)
        assert r["loss_W"] == pytest.approx(k / L * (T1 - Ts), rel=1e-6)
        seen.add(round(r["outer_T_K"], 3))
    assert len(seen) == 6          # every exponent and coefficient changes the answer


def test_sampled_exponent_and_coefficient(tmp_path):
    p = _files(tmp_path, f"""base = "pl.toml"
outputs = ["outer_T_K"]
method = "latin-hypercube"
samples = 6
[[uncertain]]
path = "{EXPO}"
distribution = "uniform"
low = 0.2
high = 0.35
[[uncertain]]
path = "{COEF}"
distribution = "uniform"
low = "1.0 W/(m2 K^1.25)"
high = "2.0 W/(m2 K^1.25)"
""")
    st = read_study(p, seed=7)
    ns = np.array([v[EXPO] for v in st["variants"]])
    assert np.all((ns >= 0.2) & (ns <= 0.35)) and np.ptp(ns) > 0.05
    _, rows = run_study(p, tmp_path, workers=1, seed=7)
    assert len(rows) == 6 and all(r["status"] == "done" for r in rows), rows
    for r in rows:
        a = float(str(r[COEF]).split()[0])
        n = float(r[EXPO])
        assert r["outer_T_K"] == pytest.approx(_Ts(a, n), abs=1e-6)


def test_coefficient_in_us_units_is_held_in_si_when_the_exponent_varies(tmp_path):
    # "0.2159 Btu/h/ft2/degF^1.25" is a = 0.2159 / (0.17611 (5/9)^0.25) W/(m2 K^1.25)
    # (hand calculation from the unit definitions, see tests/test_power_law_us_units.py);
    # a variant with n = 0.3 keeps that SI value
    import tomllib
    base = tomllib.loads(CASE.replace('"1.42 W/(m2 K^1.25)"', '"0.2159 Btu/h/ft2/degF^1.25"'))
    data = edited(base, {EXPO: 0.3}, "study.toml")
    a_si = 0.2159 / (3600.0 / 1055.05585262 * 0.3048 ** 2 / 1.8 * (5.0 / 9.0) ** 0.25)
    text = data["wall"]["outer_face"]["convection"]["coefficient"]
    assert text.endswith("W/(m2 K^1.3)")
    assert float(text.split()[0]) == pytest.approx(a_si, rel=1e-10)
    # the base case is not changed
    assert base["wall"]["outer_face"]["convection"]["coefficient"] == \
        "0.2159 Btu/h/ft2/degF^1.25"


def test_coefficient_written_for_the_variant_exponent_is_left_alone():
    import tomllib
    base = tomllib.loads(CASE)
    data = edited(base, {EXPO: "1/3", COEF: "1.31 W/(m2*K^(4/3))"}, "study.toml")
    assert data["wall"]["outer_face"]["convection"]["coefficient"] == "1.31 W/(m2*K^(4/3))"


def test_a_wrong_coefficient_unit_still_fails_in_the_loader(tmp_path):
    # a coefficient unit that fits neither the base nor the variant exponent is not repaired:
    # the variant fails with the loader's message naming the key
    p = _files(tmp_path, f"""base = "pl.toml"
outputs = ["outer_T_K"]
[[vary]]
path = "{EXPO}"
values = [0.3]
[[vary]]
path = "{COEF}"
values = ["1.2 W/(m2 K^1.8)"]
""")
    _, rows = run_study(p, tmp_path, workers=1)
    assert rows[0]["status"] == "failed"
    assert "coefficient" in rows[0]["error"] and "1.3" in rows[0]["error"]


def test_exponent_out_of_range_is_reported_by_the_loader(tmp_path):
    p = _files(tmp_path, f"""base = "pl.toml"
outputs = ["outer_T_K"]
[[vary]]
path = "{EXPO}"
values = [1.5]
""")
    try:
        _, rows = run_study(p, tmp_path, workers=1)
    except InputError as exc:          # a study may refuse it up front
        assert "exponent" in str(exc)
        return
    assert rows[0]["status"] == "failed" and "exponent" in rows[0]["error"]
