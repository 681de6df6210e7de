"""Tests of fdwall.materials: property models, Material, the bundled library.

Reference values come from outside the project and are named beside each check:
Incropera et al., Fundamentals of Heat and Mass Transfer (Tables A.1, A.3; from memory),
the VDI Heat Atlas refractory table and the ASHRAE / ISO 10456 building-material tables as
shipped in the `ht` package, CoolProp (air conductivity), scipy.constants (Stefan-Boltzmann),
EN 1992-1-2 (concrete, from memory).
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from fdwall.materials import (
    Constant,
    Material,
    MaterialError,
    Polynomial,
    Table,
    check_service_temperature,
    get_material,
    list_materials,
    material_from_dict,
    read_library,
)

C2K = 273.15


# ------------------------------------------------------------------ property models

def test_constant_scalar_array_and_knots():
    c = Constant(0.5)
    assert c(300.0) == 0.5 and isinstance(c(300.0), float)
    out = c(np.array([[1.0, 2.0], [3.0, 4.0]]))
    assert out.shape == (2, 2) and np.all(out == 0.5)
    T, v = c.knots()
    np.testing.assert_array_equal(T, [1.0, 6000.0])
    np.testing.assert_array_equal(v, [0.5, 0.5])


def test_table_linear_interpolation_and_constant_extrapolation():
    # straight line through (300, 10) and (500, 30): value = 10 + (T - 300) / 10 (analytical)
    t = Table([300.0, 500.0, 700.0], [10.0, 30.0, 20.0])
    assert t(400.0) == pytest.approx(20.0)
    assert t(650.0) == pytest.approx(22.5)     # 30 + (650 - 500) * (20 - 30) / 200
    assert t(100.0) == 10.0 and t(5000.0) == 20.0  # constant beyond the ends
    np.testing.assert_allclose(t(np.array([300.0, 350.0, 800.0])), [10.0, 15.0, 20.0])
    T, v = t.knots()
    np.testing.assert_array_equal(T, [300.0, 500.0, 700.0])
    np.testing.assert_array_equal(v, [10.0, 30.0, 20.0])
    assert isinstance(t(400.0), float)


@pytest.mark.parametrize("T, values, fragment", [
    ([300.0], [1.0], "at least 2"),
    ([300.0, 300.0], [1.0, 2.0], "strictly increasing"),
    ([400.0, 300.0], [1.0, 2.0], "strictly increasing"),
    ([300.0, 400.0], [1.0], "as many values"),
    ([300.0, 400.0], [1.0, 0.0], "> 0"),
    ([300.0, 400.0], [1.0, -2.0], "> 0"),
    ([-10.0, 400.0], [1.0, 2.0], "degC"),
    ([300.0, float("nan")], [1.0, 2.0], "finite"),
    ([300.0, 400.0], [1.0, float("inf")], "finite"),
    ([300.0, 400.0], ["a", 2.0], "number"),
])
def test_table_validation(T, values, fragment):
    with pytest.raises(MaterialError, match=fragment):
        Table(T, values)


def test_constant_validation():
    for bad in (0.0, -1.0, float("nan"), float("inf"), "x", True):
        with pytest.raises(ValueError):  # MaterialError is a ValueError
            Constant(bad)


def test_polynomial_evaluation_and_extrapolation():
    # 1 + 0.01 T on [300, 500] K (analytical)
    p = Polynomial([1.0, 0.01], 300.0, 500.0)
    assert p(400.0) == pytest.approx(5.0)
    assert p(100.0) == pytest.approx(4.0)   # end value at T_min
    assert p(900.0) == pytest.approx(6.0)   # end value at T_max
    np.testing.assert_allclose(p(np.array([300.0, 500.0])), [4.0, 6.0])


def test_polynomial_knots_meet_tolerance():
    # a cubic with strong curvature; exact values from numpy's own polynomial evaluation
    coeffs = [0.05, -1.2e-4, 2.0e-7, 8.0e-11]
    p = Polynomial(coeffs, 250.0, 1500.0)
    T, v = p.knots()
    assert T[0] == 250.0 and T[-1] == 1500.0 and np.all(np.diff(T) > 0)
    dense = np.linspace(250.0, 1500.0, 200_001)
    exact = np.polynomial.polynomial.polyval(dense, coeffs)
    assert exact.min() > 0
    lin = np.interp(dense, T, v)
    assert np.max(np.abs(lin - exact) / exact) < 1e-5
    assert T.size < 5000  # adaptive, not absurdly fine


def test_polynomial_linear_needs_few_knots():
    # a straight line is represented exactly; the refinement must stop immediately
    p = Polynomial([2.0, 1e-3], 300.0, 1300.0)
    T, v = p.knots()
    assert T.size <= 9
    np.testing.assert_allclose(v, 2.0 + 1e-3 * T)


@pytest.mark.parametrize("coeffs, lo, hi, fragment", [
    ([1.0, -0.01], 50.0, 200.0, "> 0"),        # zero at 100 K, inside the range
    ([1.0], 400.0, 300.0, "T_min < T_max"),
    ([1.0], -5.0, 300.0, "T_min < T_max"),
    ([], 300.0, 400.0, "at least one"),
    ([1.0, float("nan")], 300.0, 400.0, "finite"),
    ([4e4, -200.0, 0.25], 300.0, 500.0, "> 0"),  # (T-400)^2*0.25 = 0 at 400 K: touches zero
])
def test_polynomial_validation(coeffs, lo, hi, fragment):
    with pytest.raises(MaterialError, match=fragment):
        Polynomial(coeffs, lo, hi)


def test_polynomial_root_outside_range_is_fine():
    # -1 + 0.01 T is 2..3 on [300, 400] K; its root at 100 K lies outside the range
    assert Polynomial([-1.0, 0.01], 300.0, 400.0)(350.0) == pytest.approx(2.5)


def test_models_are_frozen_and_comparable():
    t = Table([300.0, 400.0], [1.0, 2.0])
    with pytest.raises(dataclasses.FrozenInstanceError):
        t.values = (3.0, 4.0)
    assert t == Table((300, 400), (1, 2))
    assert hash(t) == hash(Table((300, 400), (1, 2)))
    assert Polynomial([1.0, 0.001], 300, 900) == Polynomial((1, 0.001), 300.0, 900.0)


# --------------------------------------------------------------------------- Material

def _mat(**kw):
    base = dict(name="m", k=1.0, cp=900.0, rho=2000.0)
    base.update(kw)
    return Material(**base)


def test_material_numbers_become_constants_and_defaults():
    m = _mat()
    assert m.k == Constant(1.0) and m.cp == Constant(900.0)
    assert m.emissivity == 0.9 and m.t_max is None
    with pytest.raises(dataclasses.FrozenInstanceError):
        m.rho = 1.0


@pytest.mark.parametrize("kw, fragment", [
    (dict(rho=0.0), "rho"),
    (dict(rho=-5.0), "rho"),
    (dict(rho=float("nan")), "rho"),
    (dict(emissivity=1.2), "emissivity"),
    (dict(emissivity=-0.1), "emissivity"),
    (dict(t_max=0.0), "t_max"),
    (dict(t_max=-20.0), "degC"),
    (dict(k=-1.0), "k"),
    (dict(k="steel"), "k"),
    (dict(cp=[1, 2]), "cp"),
    (dict(name=""), "name"),
    (dict(source=3), "source"),
])
def test_material_validation(kw, fragment):
    with pytest.raises(MaterialError, match=fragment):
        _mat(**kw)


def test_material_tables_on_union_grid():
    k = Table([300.0, 500.0, 900.0], [1.0, 2.0, 4.0])
    cp = Table([400.0, 600.0], [800.0, 1000.0])
    T, kv, cpv = _mat(k=k, cp=cp).tables()
    np.testing.assert_array_equal(T, [300.0, 400.0, 500.0, 600.0, 900.0])
    # hand interpolation: k(400) = 1.5, k(600) = 2 + 100/400 * 2 = 2.5; cp held at ends
    np.testing.assert_allclose(kv, [1.0, 1.5, 2.0, 2.5, 4.0])
    np.testing.assert_allclose(cpv, [800.0, 800.0, 900.0, 1000.0, 1000.0])
    assert T.dtype == kv.dtype == cpv.dtype == np.float64


def test_material_tables_with_constant_and_polynomial():
    p = Polynomial([0.02, 1e-4, 1e-7], 300.0, 1000.0)
    T, kv, cpv = _mat(k=p, cp=850.0).tables()
    assert T[0] == 1.0 and T[-1] == 6000.0          # Constant knots
    assert np.all(cpv == 850.0)
    inside = (T >= 300.0) & (T <= 1000.0)
    np.testing.assert_allclose(kv[inside], 0.02 + 1e-4 * T[inside] + 1e-7 * T[inside] ** 2)
    assert kv[0] == pytest.approx(p(300.0)) and kv[-1] == pytest.approx(p(1000.0))


def test_check_service_temperature():
    m = _mat(t_max=873.15)
    assert check_service_temperature(m, 800.0) is None
    assert check_service_temperature(m, 873.15) is None
    msg = check_service_temperature(m, np.array([500.0, 900.0]))
    assert msg is not None and "'m'" in msg and "900.0 K" in msg and "600 degC" in msg
    assert check_service_temperature(_mat(), 5000.0) is None   # not rated


# ----------------------------------------------------------------- bundled library

REQUIRED_NAMES = [
    "carbon-steel", "stainless-steel-304", "aluminium-alloy", "copper",
    "fireclay-brick-dense", "insulating-firebrick-23", "insulating-firebrick-26",
    "castable-dense", "castable-insulating", "calcium-silicate-board",
    "mineral-wool-64", "mineral-wool-128", "ceramic-fibre-blanket-96",
    "ceramic-fibre-blanket-128", "microporous-board", "glass-soda-lime",
    "glass-borosilicate", "air-gap-10mm", "plasterboard-gypsum", "concrete-normal",
    "perlite-board", "vermiculite-board", "fibreglass-batt",
]


def test_library_has_required_materials():
    names = list_materials()
    assert len(names) >= 18
    assert names == sorted(names)
    for n in REQUIRED_NAMES:
        assert n in names


@pytest.mark.parametrize("name", list_materials())
def test_every_library_entry_is_sane(name):
    m = get_material(name)
    assert m.name == name
    T, k, cp = m.tables()
    assert np.all(np.diff(T) > 0)
    assert np.all(k > 0) and np.all(cp > 0)
    assert m.rho > 0 and 0.0 <= m.emissivity <= 1.0
    assert m.t_max is not None and 273.15 < m.t_max < 2200.0
    assert m.source.strip() and m.category.strip()
    # every property is tabulated at least up to room temperature
    assert float(m.k(293.15)) > 0 and float(m.cp(293.15)) > 0
    # plausible ranges for solids and gases (common practice, no source)
    assert 1e-3 < float(m.k(300.0)) < 500.0
    assert 100.0 < float(m.cp(300.0)) < 2500.0
    assert 0.5 < m.rho < 10000.0


def test_library_is_cached():
    assert get_material("copper") is get_material("copper")


def test_insulation_k_rises_with_temperature():
    # porous insulants: gas conduction and radiation both grow with T (common practice, no source)
    for name in list_materials():
        m = get_material(name)
        if m.category in ("insulation", "gap"):
            T = np.linspace(300.0, m.t_max, 30)
            assert np.all(np.diff(m.k(T)) >= 0), name


def test_metals_against_incropera_table_a1():
    # Incropera et al., Fundamentals of Heat and Mass Transfer, Table A.1 (from memory)
    cases = [
        ("stainless-steel-304", 300.0, 14.9, 477.0, 7900.0),
        ("stainless-steel-304", 600.0, 19.8, 557.0, None),
        ("stainless-steel-304", 1000.0, 25.4, 611.0, None),
        ("carbon-steel", 300.0, 63.9, 434.0, 7832.0),    # AISI 1010
        ("carbon-steel", 600.0, 48.8, 559.0, None),
        ("copper", 300.0, 401.0, 385.0, 8933.0),
        ("aluminium-alloy", 300.0, 177.0, 875.0, 2770.0),  # 2024-T6
        ("aluminium-pure", 300.0, 237.0, 903.0, 2702.0),
        ("stainless-steel-316", 300.0, 13.4, 468.0, 8238.0),
    ]
    for name, T, k, cp, rho in cases:
        m = get_material(name)
        assert float(m.k(T)) == pytest.approx(k, rel=0.02), name
        assert float(m.cp(T)) == pytest.approx(cp, rel=0.02), name
        if rho is not None:
            assert m.rho == pytest.approx(rho, rel=0.01), name
    # between table points, AISI 304 k at 500 K is about 18.3 (mean of 16.6 and 19.8 [W/m/K],
    # Incropera Table A.1 lists 16.6 at 400 K and 19.8 at 600 K; from memory)
    assert float(get_material("stainless-steel-304").k(500.0)) == pytest.approx(18.2, rel=0.02)


def test_refractories_against_vdi_heat_atlas_table():
    # VDI Heat Atlas refractory table as shipped in the ht package (independent library):
    # k at 400, 600, 800, 1000, 1200 degC and the listed density.
    ins = pytest.importorskip("ht.insulation")
    pairs = [
        ("fireclay-brick-dense", "Fireclay", 0.08),
        ("insulating-firebrick-23", "L1260", 0.10),   # 1260 degC class, ~490 kg/m3
        ("insulating-firebrick-26", "L1400", 0.10),   # 1400 degC class, ~790 kg/m3
        ("insulating-firebrick-28", "L1540", 0.10),   # 1540 degC class, ~890 kg/m3
    ]
    for ours, vdi, rtol in pairs:
        m = get_material(ours)
        for T in (673.15, 873.15, 1073.15, 1273.15, 1473.15):
            if T > m.t_max:
                continue
            assert float(m.k(T)) == pytest.approx(ins.refractory_VDI_k(vdi, T), rel=rtol), (ours, T)
        assert m.rho == pytest.approx(ins.refractories[vdi][0], rel=0.10), ours
    # fireclay specific heat, same table
    m = get_material("fireclay-brick-dense")
    for T in (673.15, 1073.15, 1473.15):
        assert float(m.cp(T)) == pytest.approx(ins.refractory_VDI_Cp("Fireclay", T), rel=0.05)


def test_building_and_insulation_against_ashrae_iso_tables():
    # ASHRAE / ISO 10456 design values (near 10-24 degC) as shipped in the ht package
    ins = pytest.importorskip("ht.insulation")
    pairs = [
        ("mineral-wool-128", "Mineral wool, felted, 100 kg/m^3", 283.15, 0.10),
        ("mineral-wool-64", "Mineral wool, felted, 100 kg/m^3", 283.15, 0.10),
        ("fibreglass-batt", "Glass-fiber batts, 90 mm", 283.15, 0.10),
        ("perlite-board", "Perlite board", 293.15, 0.05),
        ("plasterboard-gypsum", "Gypsum, plasterboard", 293.15, 0.15),
        ("clay-brick-common", "Brick, fired clay, 1920 kg/m^3", 293.15, 0.15),
        ("glass-soda-lime", "Glass, soda lime", 293.15, 0.05),
    ]
    for ours, ref, T, rtol in pairs:
        assert float(get_material(ours).k(T)) == pytest.approx(ins.k_material(ref), rel=rtol), ours


def test_insulation_and_glass_against_incropera_table_a3():
    # Incropera et al., Table A.3 (from memory): calcium silicate (190 kg/m3) k at
    # 365 / 420 / 530 / 645 / 750 K = 0.059 / 0.063 / 0.075 / 0.089 / 0.104 W/m/K
    cs = get_material("calcium-silicate-board")
    for T, k in [(365.0, 0.059), (420.0, 0.063), (530.0, 0.075), (645.0, 0.089), (750.0, 0.104)]:
        assert float(cs.k(T)) == pytest.approx(k, rel=0.10), T
    # Table A.3 (from memory): Pyrex 1.4, plate glass 1.4, common brick 0.72, concrete
    # (stone mix) 1.4 W/m/K at 300 K.  Data sheets give lower values for glass (EN 572
    # float glass 1.0; borosilicate 3.3 about 1.2), so only a band is checked for glass.
    assert 1.0 <= float(get_material("glass-borosilicate").k(300.0)) <= 1.4
    assert 0.95 <= float(get_material("glass-soda-lime").k(300.0)) <= 1.4
    assert float(get_material("clay-brick-common").k(300.0)) == pytest.approx(0.72, rel=0.15)
    assert float(get_material("concrete-normal").k(300.0)) == pytest.approx(1.4, rel=0.10)


def test_concrete_matches_eurocode_lower_limit():
    # EN 1992-1-2, 3.3.3 lower limit (from memory): k = 1.36 - 0.136 (t/100) + 0.0057 (t/100)^2,
    # t in degC, 20 <= t <= 1200
    m = get_material("concrete-normal")
    for t in (20.0, 100.0, 300.0, 600.0, 1000.0, 1200.0):
        ref = 1.36 - 0.136 * (t / 100) + 0.0057 * (t / 100) ** 2
        assert float(m.k(t + C2K)) == pytest.approx(ref, rel=1e-9), t
    # dry-concrete specific heat (same standard, from memory): 900 up to 100 degC,
    # 1000 at 200 degC, 1100 from 400 degC
    for t, cp in [(50.0, 900.0), (200.0, 1000.0), (300.0, 1050.0), (800.0, 1100.0)]:
        assert float(m.cp(t + C2K)) == pytest.approx(cp, rel=1e-9)
    # the piecewise-linear tables follow the polynomial to 1e-5
    T, k, _ = m.tables()
    dense = np.linspace(20.0 + C2K, 1200.0 + C2K, 5001)
    tt = (dense - C2K) / 100
    exact = 1.36 - 0.136 * tt + 0.0057 * tt ** 2
    assert np.max(np.abs(np.interp(dense, T, k) / exact - 1)) < 1e-5


def test_air_gap_against_coolprop_and_stefan_boltzmann():
    # k_eff = k_air (CoolProp, 1 atm) + 4 sigma T^3 L / (2/eps - 1), L = 10 mm, eps = 0.9
    CP = pytest.importorskip("CoolProp.CoolProp")
    from scipy.constants import sigma
    from scipy.integrate import trapezoid
    m = get_material("air-gap-10mm")
    L, eps = 0.010, 0.9
    for t in (20.0, 100.0, 275.0, 500.0, 825.0):
        T = t + C2K
        ref = CP.PropsSI("L", "T", T, "P", 101325.0, "Air") + 4 * sigma * T ** 3 * L / (2 / eps - 1)
        assert float(m.k(T)) == pytest.approx(ref, rel=0.01), t
    # integrating k over the gap's temperature drop reproduces the exact grey-plate exchange
    # sigma (T1^4 - T2^4) / (2/eps - 1) plus conduction (Stefan-Boltzmann law)
    T2, T1 = 350.0 + C2K, 650.0 + C2K
    Ts = np.linspace(T2, T1, 3001)
    q_model = trapezoid(m.k(Ts), Ts) / L
    ka = np.array([CP.PropsSI("L", "T", x, "P", 101325.0, "Air") for x in Ts[::100]])
    q_ref = sigma * (T1 ** 4 - T2 ** 4) / (2 / eps - 1) + trapezoid(ka, Ts[::100]) / L
    assert q_model == pytest.approx(q_ref, rel=0.01)


def test_library_emissivity_by_class():
    # typical total emissivities (from memory): metals as specified lower than refractories
    assert get_material("aluminium-alloy").emissivity < 0.2
    assert get_material("glass-soda-lime").emissivity > 0.85
    assert get_material("fireclay-brick-dense").emissivity >= 0.7


# -------------------------------------------------------------------------- lookup

def test_get_material_normalises_name():
    assert get_material("Mineral Wool 128").name == "mineral-wool-128"
    assert get_material("ceramic_fibre_blanket_96").name == "ceramic-fibre-blanket-96"


def test_unknown_name_suggests_close_names():
    with pytest.raises(MaterialError) as exc:
        get_material("ceramic-fiber-blanket-128")
    msg = str(exc.value)
    assert "ceramic-fibre-blanket-128" in msg
    assert "list_materials()" in msg
    with pytest.raises(MaterialError, match="stainless-steel-304"):
        get_material("stainless-304")
    with pytest.raises(MaterialError, match="list_materials"):
        get_material("unobtainium")
    with pytest.raises(MaterialError):
        get_material(42)


# --------------------------------------------------------------- material_from_dict

def test_material_from_dict_forms():
    m = material_from_dict("my-board", {
        "k": {"T": [300.0, 600.0], "values": [0.05, 0.08]},
        "cp": {"coeffs": [700.0, 0.5], "T_min": 300.0, "T_max": 800.0},
        "rho": 300, "emissivity": 0.7, "t_max": 900.0, "source": "demo data",
    })
    assert m.k(450.0) == pytest.approx(0.065)
    assert m.cp(400.0) == pytest.approx(900.0)
    assert m.rho == 300.0 and m.emissivity == 0.7 and m.t_max == 900.0
    m2 = material_from_dict("plain", {"k": 1, "cp": 800, "rho": 2000, "t_max": None})
    assert m2.k == Constant(1.0) and m2.t_max is None
    # round trip through the plain SI form
    assert material_from_dict("my-board", m.to_dict()) == m
    lib = get_material("concrete-normal")
    assert material_from_dict(lib.name, lib.to_dict()) == lib


@pytest.mark.parametrize("d, fragment", [
    ({"k": 1.0, "cp": 900.0}, "missing required key"),
    ({"k": 1.0, "cp": 900.0, "rho": 1.0, "rhoo": 2.0}, "did you mean 'rho'"),
    ({"k": "hot", "cp": 900.0, "rho": 1.0}, "key 'k'"),
    ({"k": {"T": [300.0], "values": [1.0]}, "cp": 900.0, "rho": 1.0}, "at least 2"),
    ({"k": {"T": [300.0, 200.0], "values": [1, 2]}, "cp": 900.0, "rho": 1.0}, "strictly increasing"),
    ({"k": {"Temp": [300.0, 400.0], "values": [1, 2]}, "cp": 900.0, "rho": 1.0}, "unrecognised keys"),
    ({"k": 1.0, "cp": {"coeffs": [-5.0], "T_min": 300, "T_max": 400}, "rho": 1.0}, "key 'cp'"),
    ({"k": 1.0, "cp": 900.0, "rho": -1.0}, "rho"),
    ({"k": 1.0, "cp": 900.0, "rho": "heavy"}, "key 'rho'"),
    ({"k": 1.0, "cp": 900.0, "rho": 1.0, "emissivity": 2.0}, "emissivity"),
    ({"k": 1.0, "cp": 900.0, "rho": 1.0, "emissivity": True}, "emissivity"),
    ({"k": 1.0, "cp": 900.0, "rho": 1.0, "t_max": -3.0}, "t_max"),
    ({"k": 1.0, "cp": 900.0, "rho": 1.0, "notes": 5}, "notes"),
    ([1, 2, 3], "expected a table"),
])
def test_material_from_dict_errors(d, fragment):
    with pytest.raises(MaterialError, match=fragment) as exc:
        material_from_dict("bad-one", d, where="case.toml")
    assert "bad-one" in str(exc.value) and "case.toml" in str(exc.value)


# ---------------------------------------------------------------- user library file

def test_read_library_converts_degc(tmp_path):
    f = tmp_path / "mine.toml"
    f.write_text(
        "[materials.demo-board]\n"
        "rho = 300.0\n"
        "t_max_C = 600\n"
        "source = 'demo data'\n"
        "k = { T_C = [0, 100], values = [0.05, 0.07] }\n"
        "cp = { coeffs_C = [800.0, 1.0], T_min_C = 0, T_max_C = 500 }\n", encoding="utf-8")
    m = read_library(f)["demo-board"]
    assert m.t_max == pytest.approx(873.15)
    assert m.k(323.15) == pytest.approx(0.06)          # 50 degC, midway
    assert m.cp(373.15) == pytest.approx(900.0)        # 800 + 1.0 * 100 degC
    assert m.k.T[0] == pytest.approx(273.15)


@pytest.mark.parametrize("text, fragment", [
    ("[materials.x]\nrho = 1.0\nk = 1.0\ncp = 1.0\nt_max = 500\n", "t_max_C"),
    ("[materials.x]\nrho = 1.0\nk = { T = [1, 2], values = [1, 2] }\ncp = 1.0\n", "unknown keys"),
    ("[materials.x]\nrho = 1.0\nk = 1.0\n", "missing required key"),
    ("[materials.x\nrho = 1.0\n", "not valid TOML"),
    ("title = 'nothing'\n", "no \\[materials"),
])
def test_read_library_errors(tmp_path, text, fragment):
    f = tmp_path / "bad.toml"
    f.write_text(text, encoding="utf-8")
    with pytest.raises(MaterialError, match=fragment) as exc:
        read_library(f)
    assert "bad.toml" in str(exc.value)


def test_read_library_missing_file(tmp_path):
    with pytest.raises(MaterialError, match="Cannot read"):
        read_library(tmp_path / "none.toml")
