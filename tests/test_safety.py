"""Touch safety (fdwall.safety): each check names the outside source it is held to."""
from __future__ import annotations

import json
import math

import numpy as np
import pytest

from fdwall import safety as S
from fdwall.analyses import safety as SA
from fdwall.cautions import SAFETY_CAUTION
from fdwall.errors import InputError
from fdwall.materials import Material
from fdwall.model import Case, Face, Layer, RunSettings, Wall
from fdwall.schedule import Schedule

try:
    import tomllib
except ModuleNotFoundError:  # pragma: no cover
    import tomli as tomllib

C = 273.15

# Property values of common surfaces near room temperature (Incropera et al., Fundamentals of
# Heat and Mass Transfer, Tables A.1 and A.3; from memory): k [W/m/K], rho [kg/m3], cp [J/kg/K]
SURFACES = {
    "carbon steel": (60.5, 7854.0, 434.0),
    "glass (plate)": (1.4, 2500.0, 750.0),
    "plastic (acrylic)": (0.19, 1190.0, 1470.0),
    "wood (oak)": (0.17, 545.0, 2385.0),
}


# ----------------------------------------------------------------- contact temperature
@pytest.mark.parametrize("name", list(SURFACES))
def test_contact_temperature_two_semi_infinite_bodies(name):
    # Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., sec. 2.15: two semi-infinite
    # bodies brought into contact take the interface temperature (b1 T1 + b2 T2)/(b1 + b2),
    # b = sqrt(k rho c), constant for all t > 0.
    k, rho, cp = SURFACES[name]
    b = S.effusivity(k, rho, cp)
    assert b == pytest.approx(math.sqrt(k * rho * cp), rel=1e-12)
    b_skin = math.sqrt(0.37 * 1000 * 3600)          # a living-skin value (from memory)
    Ts, Tk = 90 + C, 33 + C
    Tc = S.contact_temperature(Ts, b, T_skin=Tk, b_skin=b_skin)
    assert Tc == pytest.approx((b * Ts + b_skin * Tk) / (b + b_skin), rel=1e-12)
    assert Tk < Tc < Ts
    # the inverse: the surface temperature that gives this contact temperature
    assert S.surface_for_contact(Tc, b, T_skin=Tk, b_skin=b_skin) == pytest.approx(Ts, abs=1e-9)


def test_contact_temperature_ordering_of_materials():
    # Carslaw & Jaeger sec. 2.15: the higher the surface's effusivity, the nearer the contact
    # temperature to the surface's own; metal > glass > plastic ~ wood (the ordering behind
    # the material classes of ISO 13732-1).
    Tc = {n: S.contact_temperature(90 + C, S.effusivity(*p)) for n, p in SURFACES.items()}
    assert Tc["carbon steel"] > Tc["glass (plate)"] > Tc["plastic (acrylic)"] > 33 + C
    # b_steel ~ 14400 against b_epidermis ~ 1050: (14400*90 + 1050*33)/15450 = 86.1 degC
    assert Tc["carbon steel"] == pytest.approx(86.1 + C, abs=0.1)


def test_effusivity_rejects_bad_values():
    with pytest.raises(InputError):
        S.effusivity(0.0, 1000, 1000)


# ----------------------------------------------------------------- threshold data
def test_thresholds_read_back_at_tabulated_points():
    # ISO 13732-1 values (from memory, REFERENCES): 1 min 51 degC bare metal, 56 degC
    # ceramics/glass/stone, 60 degC plastics and wood; 10 min 48 degC and 8 h 43 degC for all.
    quoted = {"bare-metal": 51, "ceramic-glass-stone": 56, "plastic": 60, "wood": 60}
    for cls, v in quoted.items():
        lo, hi, banded = S.threshold(cls, 60.0)
        assert lo == pytest.approx(v + C) and hi == pytest.approx(v + C) and not banded
    for cls in S.SURFACE_CLASSES:
        assert S.threshold(cls, 600.0)[0] == pytest.approx(48 + C)
        assert S.threshold(cls, 8 * 3600.0)[0] == pytest.approx(43 + C)
    # every tabulated point read back exactly from the bundled file
    with open(SA._HERE / "touch_thresholds.toml", "rb") as fh:
        data = tomllib.load(fh)
    for cls in S.SURFACE_CLASSES:
        row = data[cls]
        assert row["source"]
        for t, lo, hi in zip(row["times_s"], row["lower_C"], row["upper_C"]):
            got = S.threshold(cls, float(t))
            assert got[0] == pytest.approx(lo + C) and got[1] == pytest.approx(hi + C)
            assert got[2] == (hi > lo)


def test_threshold_interpolation_is_linear_in_log_time():
    # stated rule: linear in log10(contact time); at the geometric mean of two tabulated
    # times the threshold is the arithmetic mean of theirs (hand calculation)
    with open(SA._HERE / "touch_thresholds.toml", "rb") as fh:
        row = tomllib.load(fh)["plastic"]
    t1, t2 = row["times_s"][1], row["times_s"][2]
    lo = S.threshold("plastic", math.sqrt(t1 * t2))[0]
    assert lo == pytest.approx(0.5 * (row["lower_C"][1] + row["lower_C"][2]) + C, abs=1e-9)
    # a quarter of the way in log time
    t = 10 ** (0.75 * math.log10(t1) + 0.25 * math.log10(t2))
    want = 0.75 * row["lower_C"][1] + 0.25 * row["lower_C"][2] + C
    assert S.threshold("plastic", t)[0] == pytest.approx(want, abs=1e-9)


def test_touch_limit_criteria():
    # industrial / consumer: the table at 5 s / 60 s (ASTM C1055 design contact times, from
    # memory); rise: ambient + rise; limit: as given
    assert S.touch_limit("bare-metal", None, "industrial") == pytest.approx(
        S.threshold("bare-metal", 5.0)[0])
    assert S.touch_limit("wood", None, "consumer") == pytest.approx(60 + C)
    assert S.touch_limit("wood", 4.0, "rise", ambient=25 + C, rise=35.0) == pytest.approx(60 + C)
    assert S.touch_limit("wood", 4.0, "limit", ambient=25 + C, limit=70 + C) == 70 + C
    with pytest.raises(InputError, match="outside the range"):
        S.touch_limit("bare-metal", 0.2)
    with pytest.raises(InputError, match="did you mean"):
        S.touch_limit("bare_metal", 4.0)
    with pytest.raises(InputError, match="not above the ambient"):
        S.touch_limit("wood", 4.0, "limit", ambient=30 + C, limit=20 + C)


# ----------------------------------------------------------------- damage integral
def test_damage_integral_constant_temperature_closed_form():
    # Henriques (1947): Omega = P exp(-dE/(R T)) t for a constant basal temperature T above
    # 44 degC; P = 3.1e98 1/s, dE/R = 75,535 K (REFERENCES, from memory).  Hand calculation:
    # at 50 degC, P exp(-75535/323.15) = exp(ln 3.1e98 - 233.746) = 9.5e-4 1/s.
    T = 50 + C
    t = np.linspace(0.0, 100.0, 11)
    om = S.damage_integral(t, np.full(t.size, T))
    rate = 3.1e98 * math.exp(-75535.0 / T)
    assert rate == pytest.approx(9.5e-4, rel=0.02)
    assert om == pytest.approx(rate * 100.0, rel=1e-12)
    # below 44 degC no damage accrues
    assert S.damage_integral(t, np.full(t.size, 43.9 + C)) == 0.0
    # Weaver & Stoll (1969) upper range above 50 degC: P = 1.823e51 1/s, dE/R = 39,110 K
    T2 = 60 + C
    om2 = S.damage_integral(t, np.full(t.size, T2), "weaver-stoll-1969")
    assert om2 == pytest.approx(1.823e51 * math.exp(-39110.0 / T2) * 100.0, rel=1e-12)
    assert S.damage_indicator(0.6) == "first-degree" and S.damage_indicator(1.2) == "second-degree"
    assert S.damage_indicator(0.1) == "none"


# ----------------------------------------------------------------- contact simulation
def _mat(name, k, rhoc):
    return Material(name=name, k=k, cp=rhoc / 1000.0, rho=1000.0, category="test")


def test_contact_simulation_follows_semi_infinite_solution():
    # Carslaw & Jaeger sec. 2.15: a hot semi-infinite body (T1, b1) on a cold one (T2, b2):
    # the interface sits at Tc = (b1 T1 + b2 T2)/(b1 + b2) from the first instant, and inside
    # the cold body T = Tc + (T2 - Tc) erf(z / (2 sqrt(alpha2 t))).  Both bodies 50 mm thick:
    # semi-infinite for 10 s (penetration sqrt(alpha t) ~ 2 mm).
    body = _mat("body", 1.0, 2.0e6)
    tissue = _mat("tissue", 0.5, 4.0e6)
    wall = Wall(layers=(Layer(body, 0.05),))
    skin = (Layer(tissue, 0.5e-3, name="outer"), Layer(tissue, 0.0495, name="deep"))
    T1, T2 = 80 + C, 33 + C
    res = S.simulate_contact(wall, np.array([0.0, 0.05]), np.array([T1, T1]), 10.0, skin=skin,
                             T_skin_surface=T2, T_core=T2)
    b1, b2 = math.sqrt(1.0 * 2.0e6), math.sqrt(0.5 * 4.0e6)
    Tc = (b1 * T1 + b2 * T2) / (b1 + b2)
    late = res.times > 0.5
    assert np.max(np.abs(res.T_surface[late] - Tc)) < 0.05
    from scipy.special import erf
    a2 = 0.5 / 4.0e6
    for t in (2.0, 5.0, 10.0):
        k = int(np.argmin(np.abs(res.times - t)))
        want = Tc + (T2 - Tc) * erf(0.5e-3 / (2 * math.sqrt(a2 * res.times[k])))
        assert res.T_basal[k] == pytest.approx(want, abs=0.1)


def test_contact_simulation_early_time_is_instant_contact_temperature():
    # at early times the skin surface of the layered model reaches the instant contact
    # temperature of epidermis on the wall's outer layer (Carslaw & Jaeger sec. 2.15)
    steel = _mat("steel", 50.0, 3.6e6)
    wall = Wall(layers=(Layer(steel, 0.02),))
    T = 70 + C
    res = S.simulate_contact(wall, np.array([0.0, 0.02]), np.array([T, T]), 4.0)
    ep = S.skin_data()["layer"][0]
    b_ep = math.sqrt(ep["k_W_mK"] * ep["rho_c_J_m3K"])
    want = S.contact_temperature(T, math.sqrt(50.0 * 3.6e6), T_skin=33 + C, b_skin=b_ep)
    assert res.T_surface[1] == pytest.approx(want, abs=0.3)
    assert res.T_basal.max() < res.T_surface.max()


def test_spreading_length_formula():
    # spreading (fin) length sqrt(k d / G) with the contact conductance G = b / sqrt(pi t) of
    # a semi-infinite body under a step in surface temperature (Carslaw & Jaeger sec. 2.5)
    k, d, t, b = 50.0, 1.5e-3, 5.0, 1000.0
    assert S.spreading_length(k, d, t, b) == pytest.approx(
        math.sqrt(k * d * math.sqrt(math.pi * t) / b))


# ----------------------------------------------------------------- verdicts on cases
def _slab_case(ti=200 + C, ta=20 + C, h=10.0, L=0.05, k=0.05, duration=3600.0, outer=None):
    ins = _mat("ins", k, 1.0e5)
    wall = Wall(layers=(Layer(ins, L),), area=1.0, name="panel")
    outer = outer or Face.exchange(fluid=ta, h=h)
    return Case(run=RunSettings(duration=duration, start_temperature=ta), wall=wall,
                inner=Face.fixed(ti), outer=outer, name="slab")


def test_steady_verdict_against_closed_form_skin_temperature():
    # composite-wall resistance (Incropera, Fundamentals, sec. 3.1): fixed inner temperature,
    # film coefficient h outside, no radiation: Ts = Ta + (Ti - Ta) (1/h) / (L/k + 1/h).
    ti, ta, h, L, k = 200 + C, 20 + C, 10.0, 0.05, 0.05
    Ts = ta + (ti - ta) * (1 / h) / (L / k + 1 / h)          # 36.36 degC
    case = _slab_case(ti, ta, h, L, k)
    a = S.evaluate_touch(case, criterion="limit", limit=35 + C, simulate_contact=False,
                         sensitivity=False)
    f = a.faces[0]
    assert f.T_steady_K == pytest.approx(Ts, abs=1e-6)
    assert f.verdict == "fail" and f.margin_K == pytest.approx(35 + C - Ts, abs=1e-6)
    a = S.evaluate_touch(case, criterion="limit", limit=40 + C, simulate_contact=False,
                         sensitivity=True)
    f = a.faces[0]
    assert f.verdict == "pass" and f.margin_K == pytest.approx(40 + C - Ts, abs=1e-6)
    # sensitivity: h -25 % gives the closed form with 0.75 h
    v = {s["variant"]: s["faces"][0]["T_steady_K"] for s in a.sensitivity}
    h2 = 0.75 * h
    assert v["film coefficient -25 %"] == pytest.approx(ta + (ti - ta) / h2 / (L / k + 1 / h2),
                                                         abs=1e-6)
    d = a.to_dict()
    assert d["caution"] == SAFETY_CAUTION
    for key in ("face", "surface_class", "verdict", "T_max_K", "t_max_s", "T_steady_K",
                "limit_K", "margin_K", "contact_temperature_K", "first_over_s", "time_over_s",
                "contact"):
        assert key in d["faces"][0]


def test_time_to_safe_after_power_off_lumped_exponential():
    # lumped capacitance (Incropera, Fundamentals, sec. 5.2; Biot = hL/k = 6e-4 << 0.1):
    # after the flux stops, T - Ta = (T0 - Ta) exp(-t h / (rho c L)), so the face falls to
    # the limit after tau ln((T0 - Ta)/(Tlim - Ta)), tau = rho c L / h.
    steel = _mat("steel", 50.0, 3.6e6)
    L, h, ta = 3e-3, 10.0, 20 + C
    wall = Wall(layers=(Layer(steel, L),), name="skin")
    case = Case(run=RunSettings(duration=3 * 3600.0, start_temperature=ta, output_every=10.0),
                wall=wall, inner=Face(heat_flux=Schedule((0.0, 3600.0, 3600.0), (1000.0, 1000.0, 0.0))),
                outer=Face.exchange(fluid=ta, h=h), name="thin")
    lim = 40 + C
    a = S.evaluate_touch(case, criterion="limit", limit=lim, simulate_contact=False,
                         sensitivity=False)
    po = a.after_power_off
    assert po["off_at_s"] == pytest.approx(3600.0) and po["source"] == "inner-face heat flux"
    r = a.result
    T0 = float(np.interp(3600.0, r.times, r.face_T[:, 1]))
    tau = 3.6e6 * L / h
    want = tau * math.log((T0 - ta) / (lim - ta))
    assert po["safe_to_touch_after_s"] == pytest.approx(want, rel=0.01)
    # with an explicit --off-at, the same answer from that time
    a2 = S.evaluate_touch(case, criterion="limit", limit=lim, off_at=3600.0,
                          simulate_contact=False, sensitivity=False, door_open=30 + C)
    assert a2.after_power_off["safe_to_touch_after_s"] == pytest.approx(want, rel=0.01)
    assert a2.after_power_off["door_reference"].startswith("inner face")


def test_guarded_faces_are_skipped_and_face_class_used():
    case = _slab_case(outer=Face(fluid_temperature=20 + C, convection=10.0, touch="guarded"))
    a = S.evaluate_touch(case, simulate_contact=False, sensitivity=False)
    assert a.faces == [] and a.skipped == [{"face": "panel:outer", "touch": "guarded"}]
    case = _slab_case(outer=Face(fluid_temperature=20 + C, convection=10.0, surface_class="wood"))
    a = S.evaluate_touch(case, simulate_contact=False, sensitivity=False)
    assert a.faces[0].surface_class == "wood" and "case file" in a.faces[0].class_source
    a = S.evaluate_touch(case, surface="plastic", simulate_contact=False, sensitivity=False)
    assert a.faces[0].surface_class == "plastic"
    with pytest.raises(InputError, match="no outer face"):
        S.evaluate_touch(case, faces=["panel:outr"], simulate_contact=False)


def test_json_is_plain_data():
    a = S.evaluate_touch(_slab_case(duration=600.0), contact_time=4.0, sensitivity=False)
    from fdwall.cli.common import dumps
    d = json.loads(dumps(a.to_dict()))
    assert d["criterion"] == "table" and d["contact_time_s"] == 4.0
    c = d["faces"][0]["contact"]
    assert c["damage_model"] == "henriques-1947" and "basal_peak_K" in c and c["note"]


def test_thin_jacket_against_thick_casting():
    # Carslaw & Jaeger sec. 2.15: on a thick steel casting (b ~ 13400 >> b_skin ~ 1050) the
    # skin surface stays near the instant contact temperature for the whole contact; a 1.5 mm
    # jacket over insulation holds only rho c d (T - T_skin) per m2 and cools under the finger,
    # so its skin and basal temperatures fall well below the casting's.
    steel = _mat("steel", 50.0, 3.6e6)
    wool = _mat("wool", 0.04, 1.0e5)
    T = 70 + C
    thick = Wall(layers=(Layer(steel, 0.1),))
    thin = Wall(layers=(Layer(wool, 0.1), Layer(steel, 1.5e-3)))
    r_thick = S.simulate_contact(thick, np.array([0.0, 0.1]), np.array([T, T]), 10.0)
    r_thin = S.simulate_contact(thin, np.array([0.0, 0.1015]), np.array([T, T]), 10.0)
    Tc = S.contact_temperature(T, math.sqrt(50.0 * 3.6e6))
    assert np.all(np.abs(r_thick.T_surface[1:] - Tc) < 1.0)
    assert r_thin.T_surface[-1] < Tc - 10.0
    assert r_thin.T_basal.max() < r_thick.T_basal.max() - 5.0
    assert r_thick.damage > r_thin.damage


def test_surface_class_from_outer_layer():
    # class rules of docs/touch-safety.md (common practice, no source): painted metal is
    # coated, bright metal bare, glass ceramic-glass-stone
    from fdwall.materials import get_material
    steel = Layer(get_material("carbon-steel"), 2e-3)
    glass = Layer(get_material("glass-soda-lime"), 5e-3)
    assert S.surface_class_of(steel, Face(fluid_temperature=300.0, emissivity=0.9))[0] == "coated-metal"
    assert S.surface_class_of(steel, Face(fluid_temperature=300.0, emissivity=0.1))[0] == "bare-metal"
    assert S.surface_class_of(glass, Face(fluid_temperature=300.0, emissivity=0.9))[0] == \
        "ceramic-glass-stone"


def test_given_result_gives_the_same_answer():
    # sizing and studies pass their own run: the answer must equal a fresh evaluation
    from fdwall.solver import run, solve_steady
    case = _slab_case(duration=1800.0)
    r = run(case)
    st = solve_steady(case)
    a = S.evaluate_touch(case, result=r, steady=st, simulate_contact=False, sensitivity=False)
    b = S.evaluate_touch(case, simulate_contact=False, sensitivity=False)
    assert a.faces[0].T_max_K == pytest.approx(b.faces[0].T_max_K, abs=1e-9)
    assert a.faces[0].margin_K == pytest.approx(b.faces[0].margin_K, abs=1e-9)
