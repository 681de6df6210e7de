"""The power-law film coefficient h = a |T_face - T_fluid|^n (convection model ``power_law``).

Checked against references outside fdwall, named beside each test:
* the simplified natural-convection forms of air (McAdams 1954; Holman, Heat Transfer, 10th
  ed., table 7-2, from memory): laminar vertical plate h = 1.42 (dT/L)^(1/4), turbulent
  h = 1.31 dT^(1/3), as power-law inputs, against the Nusselt correlations they simplify,
  evaluated with the ``ht`` library and CoolProp air properties;
* a steady slab between a held face and a power-law film against the closed-form energy
  balance k/L (T1 - Ts) = a (Ts - Tf)^(1+n), solved with scipy.optimize.brentq;
* a lumped (low-Biot) plate cooling through a power-law film against the closed form of the
  separable ODE C dT/dt = -a A dT^(1+n): dT(t) = (dT0^-n + n a A t / C)^(-1/n);
* the lumped log fit recovering a and n from invented synthetic logs made by that closed form
  (cooling) and by scipy's solve_ivp (heating, then cooling);
* case-file round trip and bad input through the command line (house rules: exit 2 and a
  one-paragraph message naming the key).
"""
from __future__ import annotations

import copy
import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

import fdwall
import fdwall.cli as cli
from fdwall.analyses.lumped import fit_power_law_loss, lumped_cooling
from fdwall.case import case_from_dict
from fdwall.case.errors import CaseError
from fdwall.errors import InputError
from fdwall.physics.convection import Convection, h_power_law
from fdwall.result import resolved_inputs
from fdwall.units import parse_power_law_coefficient

K0 = 273.15


def _air(T):
    """Air at 1 atm from CoolProp: conductivity [W/m/K], kinematic viscosity [m2/s], Pr [-]."""
    from CoolProp.CoolProp import PropsSI
    k = PropsSI("L", "T", T, "P", 101325.0, "Air")
    mu = PropsSI("V", "T", T, "P", 101325.0, "Air")
    rho = PropsSI("D", "T", T, "P", 101325.0, "Air")
    cp = PropsSI("C", "T", T, "P", 101325.0, "Air")
    return k, mu / rho, cp * mu / k


def _gr(T_film, dT, L):
    k, nu, pr = _air(T_film)
    return k, pr, 9.80665 * dT * L ** 3 / (T_film * nu ** 2)


# ----------------------------------------------------------------- the simplified air forms
@pytest.mark.parametrize("L, dT", [(0.2, 10.0), (0.3, 20.0), (0.5, 30.0), (0.5, 60.0)])
def test_laminar_vertical_plate_form(L, dT):
    # Holman table 7-2 (from memory): vertical plate, laminar (1e4 < Ra < 1e9),
    # h = 1.42 (dT/L)^(1/4) -> power law a = 1.42 L^(-1/4) W/(m2 K^1.25), n = 1/4.
    ht = pytest.importorskip("ht")
    Tf = 293.15
    c = Convection.power_law(1.42 * L ** -0.25, 0.25)
    h = c.h(Tf + dT, Tf)
    assert h == pytest.approx(1.42 * (dT / L) ** 0.25, rel=1e-12)
    assert c.h(Tf - dT, Tf) == pytest.approx(h, rel=1e-12)   # |dT|: a cold face too
    # the full form it simplifies, Nu = 0.59 Ra^(1/4) (McAdams; ht's
    # Nu_vertical_cylinder_McAdams_Weiss_Saunders, a vertical surface), air from CoolProp:
    # the simplified constant matches to better than 10 % (it is fitted near room temperature)
    k, pr, gr = _gr(Tf + dT / 2, dT, L)
    assert 1e4 < gr * pr < 1e9
    h_ref = ht.Nu_vertical_cylinder_McAdams_Weiss_Saunders(pr, gr) * k / L
    assert h == pytest.approx(h_ref, rel=0.10)


@pytest.mark.parametrize("L, dT", [(2.5, 100.0), (3.0, 50.0), (4.0, 30.0)])
def test_turbulent_vertical_plate_form(L, dT):
    # Holman table 7-2 (from memory): vertical plate, turbulent (Ra > 1e9), h = 1.31 dT^(1/3),
    # independent of the height; Churchill & Chu (1975) full range from the ht library with
    # CoolProp air agrees to better than 8 % here.
    ht = pytest.importorskip("ht")
    Tf = 293.15
    c = Convection.power_law(1.31, 1.0 / 3.0)
    h = c.h(Tf + dT, Tf)
    assert h == pytest.approx(1.31 * dT ** (1.0 / 3.0), rel=1e-12)
    k, pr, gr = _gr(Tf + dT / 2, dT, L)
    assert gr * pr > 1e9
    h_ref = ht.Nu_vertical_plate_Churchill(pr, gr) * k / L
    assert h == pytest.approx(h_ref, rel=0.08)


def test_safe_at_zero_difference():
    # h -> 0 continuously as dT -> 0 for n > 0 (a |dT|^n), h = a for n = 0; never NaN.
    # The flux a |dT|^n dT has the slope (1 + n) a |dT|^n (calculus), so the forward
    # difference of the flux, which the solver's Newton step takes, stays finite and small.
    a, n = 1.42, 0.25
    c = Convection.power_law(a, n)
    Tf = 300.0
    dts = np.array([0.0, 1e-12, 1e-6, 1e-3, 1.0])
    h = c.h(Tf + dts, np.full(dts.size, Tf))
    assert np.all(np.isfinite(h)) and h[0] == 0.0
    assert np.all(np.diff(h) > 0)
    assert h_power_law(a, 0.0, 0.0) == a
    assert h_power_law(a, n, float("nan")) == 0.0
    q = lambda d: h_power_law(a, n, d) * d  # noqa: E731
    eps = 1e-3
    for d in (0.0, 1e-9, 1e-3, 5.0):
        slope = (q(d + eps) - q(d)) / eps
        assert math.isfinite(slope)
        exact = (1 + n) * a * abs(d) ** n
        assert abs(slope - exact) <= (1 + n) * a * (abs(d) + eps) ** n  # bounded by the next
    assert Convection.power_law(a, n, multiplier=1.25).h(310.0, 300.0) == \
        pytest.approx(1.25 * a * 10.0 ** n, rel=1e-12)


def test_power_law_as_natural_part_of_wind():
    # mixed convection (h_N^3 + h_F^3)^(1/3) (Churchill 1977; Incropera sec. 9.9) with the
    # power law as the natural part: the forced part is the same as the wind alone.
    nat = Convection.power_law(1.31, 1.0 / 3.0)
    w = Convection.wind_cylinder(0.2, 3.0, with_natural=nat)
    f = Convection.wind_cylinder(0.2, 3.0)
    Ts, Tf = 340.0, 290.0
    hn = 1.31 * 50.0 ** (1.0 / 3.0)
    assert w.h(Ts, Tf) == pytest.approx((hn ** 3 + f.h(Ts, Tf) ** 3) ** (1.0 / 3.0), rel=1e-12)


@pytest.mark.parametrize("a, n", [(1.3, -0.1), (1.3, 1.5), (0.0, 0.25), (-1.0, 0.25),
                                  (float("nan"), 0.25), (1.3, float("inf")), (1.3, None)])
def test_bad_python_inputs(a, n):
    with pytest.raises(InputError, match="power_law"):
        Convection.power_law(a, n)


def test_coefficient_only_for_power_law():
    with pytest.raises(InputError, match="power_law"):
        Convection("vertical_plate", height=1.0, coefficient=1.3)


# ----------------------------------------------------------------- steady slab vs brentq
def _slab_case(a_text, n_text, *, T_in="200 degC", T_air="20 degC", k="0.05 W/m/K",
               thickness="50 mm", extra=None):
    d = {
        "title": "power-law film slab (invented test case)",
        "run": {"duration": "2 h", "start_temperature": "20 degC", "output_every": "10 min"},
        "materials": {"demo-board": {"conductivity": k, "specific_heat": "1000 J/kg/K",
                                     "density": "200 kg/m3"}},
        "wall": {
            "shape": "slab", "area": "2 m2",
            "layers": [{"material": "demo-board", "thickness": thickness}],
            "inner_face": {"fixed_temperature": T_in},
            "outer_face": {"fluid_temperature": T_air,
                           "convection": {"model": "power_law", "coefficient": a_text,
                                          "exponent": n_text}},
        },
    }
    if extra:
        d["wall"]["outer_face"]["convection"].update(extra)
    return d


@pytest.mark.parametrize("a_text, n_text, a, n", [
    ("1.42 W/(m2 K^1.25)", 0.25, 1.42, 0.25),
    ("1.31 W/(m2*K^(4/3))", "1/3", 1.31, 1.0 / 3.0),
    ("2.0 W/m2/K^1.8", 0.8, 2.0, 0.8),
])
def test_steady_slab_against_energy_balance(a_text, n_text, a, n):
    # Energy balance of a constant-k slab (Fourier; Incropera sec. 3.1) with the power-law
    # film outside: k/L (T1 - Ts) = a (Ts - Tf)^(1+n), one root in (Tf, T1), scipy brentq.
    k, L, A, T1, Tf = 0.05, 0.05, 2.0, 200.0 + K0, 20.0 + K0
    case = case_from_dict(_slab_case(a_text, n_text), "slab.toml")
    ss = fdwall.solve_steady(case)
    Ts = brentq(lambda x: k / L * (T1 - x) - a * (x - Tf) ** (1 + n), Tf, T1, xtol=1e-13)
    q = k / L * (T1 - Ts) * A
    T_out = float(ss.T[-1])
    assert T_out == pytest.approx(Ts, abs=1e-6)
    assert float(ss.face_flow[0]) == pytest.approx(q, rel=1e-7)
    assert float(ss.face_flow[1]) == pytest.approx(-q, rel=1e-7)
    assert float(ss.h_conv[1]) == pytest.approx(a * (Ts - Tf) ** n, rel=1e-6)


def test_steady_at_zero_difference_is_finite():
    # Every temperature equal: the exact steady state is uniform, no heat flows (h = 0 there).
    case = case_from_dict(_slab_case("1.42 W/(m2 K^1.25)", 0.25, T_in="20 degC"), "flat.toml")
    ss = fdwall.solve_steady(case)
    assert np.all(np.isfinite(ss.T))
    assert np.allclose(ss.T, 20.0 + K0, atol=1e-9)
    assert abs(float(ss.face_flow[0])) < 1e-9


# ----------------------------------------------------------------- lumped cooling vs closed form
def test_lumped_plate_cooling_against_closed_form():
    # A 5 mm copper-like plate (k = 400 W/m/K) insulated on one side cools through a
    # power-law film: Biot h L / k ~ 1e-4, so it is lumped.  Separable ODE (any calculus
    # text): C dT/dt = -a A dT^(1+n) gives dT(t) = (dT0^-n + n a A t / C)^(-1/n).  The run
    # goes to dT of a few hundredths of a kelvin, where dh/dT of the film is singular.
    rho, cp, L = 8900.0, 385.0, 0.005
    a, n, T0, Tf = 1.42 / 0.5 ** 0.25, 0.25, 220.0 + K0, 20.0 + K0
    d = {
        "title": "lumped copper plate, power-law film (invented test case)",
        "run": {"duration": "24 h", "start_temperature": "220 degC", "output_every": "15 min"},
        "materials": {"demo-copper": {"conductivity": "400 W/m/K", "specific_heat": "385 J/kg/K",
                                      "density": "8900 kg/m3"}},
        "wall": {
            "shape": "slab", "area": "1 m2",
            "layers": [{"material": "demo-copper", "thickness": "5 mm"}],
            "outer_face": {"fluid_temperature": "20 degC",
                           "convection": {"model": "power_law",
                                          "coefficient": f"{a:.12g} W/(m2 K^1.25)",
                                          "exponent": n}},
        },
    }
    res = fdwall.run(case_from_dict(d, "plate.toml"))
    assert res.complete
    t = np.asarray(res.times)
    C_per_A = rho * cp * L
    dT0 = T0 - Tf
    exact = (dT0 ** -n + n * a * t / C_per_A) ** (-1.0 / n)
    got = res.face_T[:, 1] - Tf
    assert np.all(np.isfinite(got))
    # accuracy contract of the README: within max(0.5 % of the largest change, 0.05 K)
    assert np.max(np.abs(got - exact)) < max(0.005 * dT0, 0.05)
    assert exact[-1] < 0.1 and got[-1] == pytest.approx(exact[-1], abs=0.02)
    # the shared lumped helper with the same names integrates the same closed form
    T_l = lumped_cooling(t, C_per_A, 1.0, T0, Tf, coefficient=a, exponent=n)
    assert np.max(np.abs(T_l - Tf - exact)) < 1e-5


# ----------------------------------------------------------------- lumped log fit
def test_fit_recovers_power_law_from_cooling_log():
    # Invented synthetic cooling log from the closed form dT = (dT0^-n + n a A t / C)^(-1/n)
    # (separable ODE) with 0.05 K noise; C is known (a cooling log alone gives a A / C).
    C, A, a, n, TA, d0 = 5.0e4, 1.2, 1.42, 0.25, 293.15, 180.0
    t = np.linspace(0.0, 6 * 3600.0, 200)
    rng = np.random.default_rng(7)
    T = TA + (d0 ** -n + n * a * A * t / C) ** (-1.0 / n) + rng.normal(0.0, 0.05, t.size)
    f = fit_power_law_loss(t, T, TA, area=A, heat_capacity=C)
    assert f["coefficient"] == pytest.approx(a, rel=0.01)
    assert f["exponent"] == pytest.approx(n, abs=0.003)
    assert f["rms_K"] == pytest.approx(0.05, rel=0.2)
    assert f["coefficient_unit"] == "W/(m2 K^1.25)"
    conv = f["convection"]
    assert conv.kind == "power_law" and conv.h(TA + 10, TA) == pytest.approx(a * 10 ** n, rel=0.02)
    # with the exponent held, only a (and T0) are fitted
    g = fit_power_law_loss(t, T, TA, area=A, heat_capacity=C, exponent=0.25)
    assert g["fitted"] == ["coefficient", "T0_K"]
    assert g["coefficient"] == pytest.approx(a, rel=0.003)


def test_fit_recovers_power_law_and_capacity_from_heating_log():
    # Invented log: 600 W for 3 h, then off.  Heating part from scipy's solve_ivp of
    # C dT/dt = P - a A dT^(1+n) (an integration of its own, not fdwall's), cooling part from
    # the closed form above; C is fitted too (the power fixes the scale).
    C, A, a, n, TA, P = 5.0e4, 1.2, 1.31, 1.0 / 3.0, 293.15, 600.0
    t1 = np.linspace(0.0, 3 * 3600.0, 121)
    s = solve_ivp(lambda _t, y: [(P - A * a * abs(y[0]) ** (1 + n)) / C], (0.0, t1[-1]), [0.0],
                  t_eval=t1, rtol=1e-11, atol=1e-11)
    d1 = s.y[0]
    t2 = np.linspace(3 * 3600.0, 8 * 3600.0, 201)[1:]
    d2 = (d1[-1] ** -n + n * a * A * (t2 - t1[-1]) / C) ** (-1.0 / n)
    t = np.r_[t1, t2]
    power = np.r_[np.full(t1.size - 1, P), np.zeros(t2.size + 1)]   # held to the next row
    rng = np.random.default_rng(3)
    T = TA + np.r_[d1, d2] + rng.normal(0.0, 0.05, t.size)
    f = fit_power_law_loss(t, T, TA, area=A, power=power)
    assert f["coefficient"] == pytest.approx(a, rel=0.01)
    assert f["exponent"] == pytest.approx(n, abs=0.003)
    assert f["C_J_per_K"] == pytest.approx(C, rel=0.005)
    for k in ("coefficient", "exponent", "C_J_per_K"):
        assert 0 < f["stderr"][k] < 0.01 * abs(f[k])


def test_fit_refuses_what_the_log_cannot_carry():
    t = np.linspace(0, 3600, 20)
    T = 350.0 - t / 100
    with pytest.raises(InputError, match="heat_capacity"):
        fit_power_law_loss(t, T, 293.15, area=1.0)
    with pytest.raises(InputError, match="exponent"):
        fit_power_law_loss(t, T, 293.15, area=1.0, heat_capacity=1e4, exponent=-0.2)
    with pytest.raises(InputError, match="power"):
        fit_power_law_loss(t, T, 293.15, area=1.0, power=np.ones(5))


# ----------------------------------------------------------------- case file and command line
def test_case_file_round_trip_and_units():
    base = _slab_case("1.31 W/(m2 K^(4/3))", "1/3")
    case = case_from_dict(copy.deepcopy(base), "rt.toml")
    c = case.outer.convection
    assert (c.kind, c.coefficient, c.exponent) == ("power_law", 1.31, pytest.approx(1 / 3))
    r = resolved_inputs(case)["outer"]["convection"]
    assert (r["kind"], r["coefficient"], r["exponent"]) == ("power_law", 1.31, c.exponent)
    again = Convection(**{k: v for k, v in r.items() if k != "type"})
    assert np.array_equal(again.to_par(), c.to_par())
    # a rounded exponent next to the exact unit power, and US units: 1 Btu/(h ft2 degF^1.25)
    # = 5.678263 W/(m2 K) x (9/5)^0.25 (NIST SP 811 factor for Btu_IT/(h ft2 degF))
    assert case_from_dict(_slab_case("1.31 W/(m2 K^1.33)", 0.333), "r.toml") \
        .outer.convection.coefficient == 1.31
    us = case_from_dict(_slab_case("1 Btu/h/ft2/degF^1.25", 0.25), "us.toml").outer.convection
    assert us.coefficient == pytest.approx(5.678263 * 1.8 ** 0.25, rel=1e-6)
    assert parse_power_law_coefficient("1.42 W/(m2 K^1.25)", 0.25) == 1.42


@pytest.mark.parametrize("coef, expo, key, words", [
    (1.31, 0.25, "coefficient", "bare number"),
    ("1.31 W/m2/K", 0.25, "coefficient", "power must be 1 + 0.25"),
    ("1.31 W/(m2 K^1.25)", -0.25, "exponent", "outside 0 .. 1"),
    ("1.31 W/(m2 K^2.5)", 1.5, "exponent", "outside 0 .. 1"),
    ("1.31 W/(m2 K^1.25)", "a quarter", "exponent", "plain number"),
    ("-1.31 W/(m2 K^1.25)", 0.25, "coefficient", "greater than zero"),
])
def test_bad_case_input_names_the_key(coef, expo, key, words):
    with pytest.raises(CaseError) as e:
        case_from_dict(_slab_case(coef, expo), "bad.toml")
    msg = str(e.value)
    assert f"wall.outer_face.convection.{key}" in msg and words in msg
    assert "\n" not in msg.strip()


def test_pressure_does_not_apply_to_power_law():
    with pytest.raises(CaseError, match="does not apply"):
        case_from_dict(_slab_case("1.42 W/(m2 K^1.25)", 0.25, extra={"altitude": "1500 m"}),
                       "alt.toml")


def _toml(d, path=()):
    """A small TOML writer for these nested test cases (strings, numbers, tables, arrays of
    tables); the standard library reads TOML but does not write it."""
    def val(v):
        if isinstance(v, str):
            return '"' + v.replace('"', '\\"') + '"'
        return repr(v)
    lines, subs = [], []
    for k, v in d.items():
        if isinstance(v, dict):
            subs.append((k, v, False))
        elif isinstance(v, list) and v and isinstance(v[0], dict):
            subs.append((k, v, True))
        else:
            lines.append(f"{k} = {val(v)}")
    out = []
    if path and lines:
        out.append("[" + ".".join(path) + "]")
    out += lines
    for k, v, many in subs:
        if many:
            for item in v:
                out.append("[[" + ".".join(path + (k,)) + "]]")
                out += [f"{kk} = {val(vv)}" for kk, vv in item.items()]
        else:
            out.append(_toml(v, path + (k,)))
    return "\n".join(out)


def _write(tmp_path, d, name="pl.toml"):
    p = tmp_path / name
    p.write_text(_toml(d) + "\n")
    return p


def test_cli_check_and_steady(tmp_path, capsys):
    import json
    a, n, k, L, T1, Tf = 1.42, 0.25, 0.05, 0.05, 200.0 + K0, 20.0 + K0
    p = _write(tmp_path, _slab_case("1.42 W/(m2 K^1.25)", 0.25))
    assert cli.main(["check", str(p)]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "power law h = 1.42 |dT|^0.25 W/m2/K" in out
    assert cli.main(["steady", str(p), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    face = [v for name, v in data["faces"].items() if name.endswith(":outer")][0]
    # same energy balance as above (Fourier + the power law), scipy brentq
    Ts = brentq(lambda x: k / L * (T1 - x) - a * (x - Tf) ** (1 + n), Tf, T1, xtol=1e-13)
    assert face["T_K"] == pytest.approx(Ts, abs=1e-6)
    assert face["h_conv_W_m2K"] == pytest.approx(a * (Ts - Tf) ** n, rel=1e-6)


@pytest.mark.parametrize("coef, expo, key", [(1.42, 0.25, "coefficient"),
                                             ("1.42 W/(m2 K^1.25)", -0.25, "exponent")])
def test_cli_bad_input_exit_2(tmp_path, capsys, coef, expo, key):
    p = _write(tmp_path, _slab_case(coef, expo), "bad.toml")
    assert cli.main(["check", str(p)]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert f"wall.outer_face.convection.{key}" in err
    assert "Traceback" not in err


# ----------------------------------------------------------------- analyses that read the kind
def test_size_for_skin_limit_against_closed_form(tmp_path, capsys):
    # Smallest layer for a 40 degC skin: the film carries q = a (Ts - Tf)^(1+n) at the limit,
    # and a constant-k slab L = k (T1 - Ts) / q (Fourier; Incropera sec. 3.1).
    import json
    a, n, k, T1, Ts, Tf = 1.42, 0.25, 0.05, 200.0, 40.0, 20.0
    p = _write(tmp_path, _slab_case("1.42 W/(m2 K^1.25)", 0.25))
    rc = cli.main(["size", str(p), "--layer", "0", "--skin-limit", "40 degC", "--json",
                   "--no-plots", "--out", str(tmp_path / "out")])
    assert rc == 0
    data = json.loads(capsys.readouterr().out)
    L = k * (T1 - Ts) / (a * (Ts - Tf) ** (1 + n))
    assert data["thickness_exact_m"] == pytest.approx(L, rel=1e-4)


def test_wind_design_condition_takes_the_power_law_as_natural_part():
    from fdwall.analyses.sizing import Conditions, _apply_conditions
    d = _slab_case("1.31 W/(m2 K^(4/3))", "1/3")
    flat = case_from_dict(copy.deepcopy(d), "flat.toml")
    with pytest.raises(InputError, match="power-law"):
        _apply_conditions(flat, None, Conditions(wind=3.0))
    d["wall"].update(shape="cylinder", inner_radius="50 mm", length="1 m")
    d["wall"].pop("area")
    pipe = case_from_dict(d, "pipe.toml")
    c = _apply_conditions(pipe, None, Conditions(wind=3.0)).outer.convection
    assert c.kind == "wind_cylinder" and c.natural.kind == "power_law"
    assert c.diameter == pytest.approx(2 * 0.1)
    still = _apply_conditions(pipe, None, Conditions(wind=0.0)).outer.convection
    assert still.kind == "power_law"


def test_calc_notes_state_the_law_and_its_source():
    from fdwall.analyses.calc_notes import correlation_rows, input_rows
    from fdwall.system import build_system
    case = case_from_dict(_slab_case("1.42 W/(m2 K^1.25)", 0.25), "notes.toml")
    rows = correlation_rows(case)
    pl = [r for r in rows if r["model"] == "convection: power law"]
    assert len(pl) == 1 and "McAdams" in pl[0]["reference"]
    assert "air properties: Lemmon" not in pl[0]["reference"]
    inp = input_rows(case, build_system(case))
    a_row = [r for r in inp if r["quantity"].startswith("power-law coefficient")][0]
    assert a_row["value"] == 1.42 and a_row["unit"] == "W/(m2 K^1.25)"


# ----------------------------------------------------------------- fdwall fit --model power-law
def _cooling_csv(tmp_path, a=1.42, n=0.25, C=5.0e4, A=1.2, d0=180.0, TA=20.0):
    # invented cooling log from the closed form of the separable ODE (as above), 0.05 K noise
    t = np.linspace(0.0, 6 * 3600.0, 150)
    rng = np.random.default_rng(11)
    T = TA + (d0 ** -n + n * a * A * t / C) ** (-1.0 / n) + rng.normal(0.0, 0.05, t.size)
    p = tmp_path / "cooling.csv"
    p.write_text("time [min],body [degC]\n"
                 + "".join(f"{ti / 60:.4f},{Ti:.4f}\n" for ti, Ti in zip(t, T)))
    return p


def test_cli_fit_power_law_recovers_a_and_n(tmp_path, capsys):
    import json
    p = _cooling_csv(tmp_path)
    rc = cli.main(["fit", str(p), "--time", "time [min]", "--temperature", "body [degC]",
                   "--power", "0 W", "--ambient", "20 degC", "--model", "power-law",
                   "--area", "1.2 m2", "--heat-capacity", "50 kJ/K", "--json", "--no-plots",
                   "--out", str(tmp_path / "out")])
    assert rc == 0
    data = json.loads(capsys.readouterr().out)
    assert data["model"] == "power-law"
    assert data["coefficient"] == pytest.approx(1.42, rel=0.01)
    assert data["exponent"] == pytest.approx(0.25, abs=0.003)
    assert data["coefficient_unit"] == "W/(m2 K^1.25)"
    assert (tmp_path / "out" / "cooling-fit.h5").exists()


@pytest.mark.parametrize("extra, words", [
    ([], "--area"),
    (["--area", "1.2"], "--area"),
    (["--area", "1.2 m2", "--exponent", "-0.2"], "--exponent"),
    (["--area", "1.2 m2"], "--heat-capacity"),
    (["--area", "1.2 m2", "--heat-capacity", "50 kJ/K", "--sensor-lag", "30 s"],
     "--sensor-lag"),
])
def test_cli_fit_power_law_bad_options_exit_2(tmp_path, capsys, extra, words):
    p = _cooling_csv(tmp_path)
    rc = cli.main(["fit", str(p), "--time", "time [min]", "--temperature", "body [degC]",
                   "--power", "0 W", "--ambient", "20 degC", "--model", "power-law",
                   "--out", str(tmp_path / "out"), *extra])
    err = " ".join(capsys.readouterr().err.split())
    assert rc == 2 and words in err and "Traceback" not in err
    assert not (tmp_path / "out").exists()


def test_cli_fit_area_only_with_power_law(tmp_path, capsys):
    p = _cooling_csv(tmp_path)
    rc = cli.main(["fit", str(p), "--time", "time [min]", "--temperature", "body [degC]",
                   "--power", "0 W", "--ambient", "20 degC", "--area", "1 m2",
                   "--out", str(tmp_path / "out")])
    assert rc == 2 and "--model power-law" in " ".join(capsys.readouterr().err.split())


def test_lumped_plate_heated_then_cooled_by_the_fluid():
    # The film works on |dT| both ways: the fluid at 120 degC heats a 20 degC plate for 8 h,
    # then steps to 20 degC and cools it, so the face crosses the fluid temperature twice
    # over (a sign change of dT at each step).  Each stage is the closed form of the separable
    # ODE above with its own start difference (|dT| decays as (dT0^-n + n a t / C')^(-1/n)).
    rho, cp, L = 8900.0, 385.0, 0.005
    a, n = 1.31, 1.0 / 3.0
    Cp = rho * cp * L
    d = {
        "title": "lumped copper plate, fluid step (invented test case)",
        "run": {"duration": "16 h", "start_temperature": "20 degC", "output_every": "10 min"},
        "materials": {"demo-copper": {"conductivity": "400 W/m/K", "specific_heat": "385 J/kg/K",
                                      "density": "8900 kg/m3"}},
        "wall": {
            "shape": "slab", "area": "1 m2",
            "layers": [{"material": "demo-copper", "thickness": "5 mm"}],
            "outer_face": {"fluid_temperature": [["0 h", "120 degC"], ["8 h", "120 degC"],
                                                 ["8 h", "20 degC"]],
                           "convection": {"model": "power_law",
                                          "coefficient": "1.31 W/(m2 K^(4/3))",
                                          "exponent": "1/3"}},
        },
    }
    res = fdwall.run(case_from_dict(d, "step.toml"))
    assert res.complete
    t = np.asarray(res.times)
    T = res.face_T[:, 1] - K0

    def decay(d0, s):
        return (d0 ** -n + n * a * s / Cp) ** (-1.0 / n)

    t1 = 8 * 3600.0
    T_1 = 120.0 - decay(100.0, np.minimum(t, t1))
    T_at = 120.0 - decay(100.0, t1)
    exact = np.where(t <= t1, T_1, 20.0 + decay(T_at - 20.0, np.maximum(t - t1, 0.0)))
    assert np.all(np.isfinite(T))
    assert np.max(np.abs(T - exact)) < 0.005 * 100.0  # 0.5 % of the largest change
    # the run's own energy ledger (heat in - change in stored energy) closes
    assert res.relative_residual < 1e-6
    # energy through the film over stage 1 = stored rise (first law): rho cp L dT, per m2
    i1 = int(np.argmin(np.abs(t - t1)))
    assert float(res.heat_in[i1]) == pytest.approx(Cp * (T_at - 20.0), rel=0.005)


@pytest.mark.parametrize("T_fluid", [293.15, 360.0])
def test_jacobian_of_a_power_law_face_matches_central_differences(T_fluid):
    # dF/dT of the assembly against central differences of F (error O(d^2); Press et al.,
    # Numerical Recipes, 3rd ed., sec. 5.7), the outer face some 30 K above (first case) or
    # below (second) the fluid.  The film's own slope is a one-sided difference (1e-3 K) in
    # the kernel: its truncation error is allowed, as for the correlations.
    from test_jacobian_fd import _assemble, _dense, _slab

    from fdwall.model import Face
    from fdwall.system import build_system
    case = _slab(Face.exchange(573.15, 20.0),
                 Face.exchange(T_fluid, Convection.power_law(1.31, 1.0 / 3.0)))
    sysm = build_system(case)
    nun = sysm.n_unknowns
    T = np.linspace(560.0, 325.0, nun)
    F0, J = _assemble(sysm, T)
    A = _dense(sysm, J)
    d = 1e-3
    fd = np.empty((nun, nun))
    for j in range(nun):
        Tp, Tm = T.copy(), T.copy()
        Tp[j] += d
        Tm[j] -= d
        fd[:, j] = (_assemble(sysm, Tp)[0] - _assemble(sysm, Tm)[0]) / (2 * d)
    scale = np.max(np.abs(fd))
    err = np.abs(A - fd)
    assert np.all(err <= 2e-3 * np.abs(fd) + 1e-7 * scale)
    # the face row carries the film's slope (1 + n) a |dT|^n A (calculus), on top of the
    # conduction to the next node
    i = nun - 1
    film = (1 + 1.0 / 3.0) * 1.31 * abs(T[i] - T_fluid) ** (1.0 / 3.0) * 1.5
    cond = fd[i, i - 1]
    assert -fd[i, i] == pytest.approx(cond + film, rel=1e-4)


def test_validity_warning_for_an_implausible_power_law():
    # Free convection in gases: h = 2 .. 25 W/m2/K (Incropera et al., table 1.1); a
    # coefficient ten times the turbulent air form (a unit slip) gets a plain warning, the
    # form itself none.
    from fdwall.case import case_warnings
    ok = Convection.power_law(1.31, 1.0 / 3.0)
    assert ok.validity_warnings(330.0, 300.0) == []
    bad = Convection.power_law(13.1, 1.0 / 3.0)
    (w,) = bad.validity_warnings(330.0, 300.0)
    assert "h = 40.7 W/m2/K" in w and "unit" in w
    case = case_from_dict(_slab_case("13.1 W/(m2 K^(4/3))", "1/3"), "warn.toml")
    assert any("power_law" in m and "usual range" in m for m in case_warnings(case))


def test_fit_intervals_widen_for_autocorrelated_residuals():
    # AR(1) noise e_i = phi e_(i-1) + w_i (phi = 0.8) on the closed-form cooling curve: the
    # effective sample size is n (1 - r1)/(1 + r1) (e.g. Bayley & Hammersley 1946; Box &
    # Jenkins), about n/9, and the standard errors grow by about 3 against white noise of
    # the same size; the truth then lies within 3 of them (a 99.7 % band), repeated seeds.
    C, A, a, n, TA, d0 = 5.0e4, 1.2, 1.42, 0.25, 293.15, 180.0
    t = np.linspace(0.0, 6 * 3600.0, 300)
    clean = TA + (d0 ** -n + n * a * A * t / C) ** (-1.0 / n)
    hits = 0
    for seed in range(6):
        rng = np.random.default_rng(100 + seed)
        w = rng.normal(0.0, 0.05 * math.sqrt(1 - 0.8 ** 2), t.size)
        e = np.empty(t.size)
        e[0] = rng.normal(0.0, 0.05)
        for i in range(1, t.size):
            e[i] = 0.8 * e[i - 1] + w[i]
        f = fit_power_law_loss(t, clean + e, TA, area=A, heat_capacity=C)
        assert 0.6 < f["lag1_autocorrelation"] < 0.9
        assert f["n_eff"] < t.size / 5
        hits += abs(f["exponent"] - n) <= 3 * f["stderr"]["exponent"]
    assert hits >= 5
