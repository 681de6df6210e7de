"""Touch target, service-limit warning and annual energy / cost of insulation sizing
(sources named beside each check)."""
import math
from pathlib import Path

import pytest
import tomllib

from fdwall import Case, Face, Layer, RunSettings, Wall
from fdwall.materials import material_from_dict
from fdwall.safety import threshold
from fdwall.sizing import Energy, LossTarget, SkinTarget, size_layer, touch_target

K_INS = 0.04
MAT = material_from_dict("test-ins", {"k": K_INS, "cp": 840.0, "rho": 100.0})
TABLE = Path(__file__).resolve().parents[1] / "fdwall" / "analyses" / "touch_thresholds.toml"


def _slab(mat=MAT, T_in=473.15, T_out=293.15, h_out=10.0, layers=None):
    wall = Wall(layers=layers or (Layer(mat, 0.05),), area=1.0)
    return Case(run=RunSettings(duration=3600.0, start_temperature=293.15), wall=wall,
                inner=Face(fluid_temperature=T_in, convection=1e6), outer=Face(fluid_temperature=T_out, convection=h_out))


def test_touch_target_sizes_to_threshold_read_back():
    # Threshold: ISO 13732-1 bare metal, 60 s contact, lower edge 51 degC (bundled table,
    # from memory, not checked against the standard) -- read back here from the data file with
    # tomllib, and through fdwall.safety.threshold.  Thickness: plane wall series resistances
    # (Incropera 7th ed., eq. 3.19), L = k/h ((T_i - T_a)/(T_s - T_a) - 1).
    row = tomllib.loads(TABLE.read_text())["bare-metal"]
    Ts = row["lower_C"][row["times_s"].index(60)] + 273.15
    tg = touch_target("bare-metal", 60.0)
    assert tg.name == "touch"
    assert tg.limit == pytest.approx(Ts) and tg.limit == pytest.approx(threshold("bare-metal",
                                                                                 60.0)[0])
    L_exact = K_INS / 10.0 * ((473.15 - 293.15) / (Ts - 293.15) - 1.0)
    r = size_layer(_slab(), 0, [tg], step=0.01)
    assert r.thickness_exact_m == pytest.approx(L_exact, rel=2e-3)
    assert r.targets[0]["value"] <= Ts and r.caution
    i = r.table["thickness_m"].index(r.thickness_m)
    assert r.table["all_pass"][i] and not r.table["all_pass"][i - 1]


def test_service_limit_warning_names_interface_temperature():
    # Interface temperature of two plane layers in series (Incropera 7th ed., eq. 3.19 / Fig.
    # 3.2): T_int = T_i - q L1/k1 with q = (T_i - T_a)/(L1/k1 + L2/k2 + 1/h).  The outer
    # layer's rating 100 degC lies below T_int, so a warning naming both numbers is required.
    foam = material_from_dict("test-foam", {"k": 0.03, "cp": 1400.0, "rho": 40.0,
                                            "t_max": 373.15})
    hot = material_from_dict("test-hot", {"k": 0.1, "cp": 840.0, "rho": 200.0})
    case = _slab(layers=(Layer(hot, 0.02), Layer(foam, 0.05)))
    r = size_layer(case, 1, [SkinTarget(273.15 + 40.0)], step=0.01)
    L2 = r.thickness_m
    q = (473.15 - 293.15) / (0.02 / 0.1 + L2 / 0.03 + 1 / 10.0 + 1e-6)
    T_int = 473.15 - q * (0.02 / 0.1 + 1e-6)
    assert T_int > 373.15
    assert len(r.warnings) == 1
    w = r.warnings[0]
    assert "test-foam" in w and f"{T_int - 273.15:.1f} degC" in w and "100.0 degC" in w
    # a rating above the hot face gives no warning (same closed form: T_int < T_i)
    ok = material_from_dict("test-foam2", {"k": 0.03, "cp": 1400.0, "rho": 40.0,
                                           "t_max": 500.0})
    case = _slab(layers=(Layer(hot, 0.02), Layer(ok, 0.05)))
    assert size_layer(case, 1, [SkinTarget(273.15 + 40.0)], step=0.01).warnings == []


def test_annual_energy_and_cost_hand_computation():
    # Hand computation (common practice, no source beyond the definitions): steady loss per m2
    # q = (T_i - T_a)/(L/k + 1/h) (Incropera 7th ed., eq. 3.19); supplied energy per year
    # E = q * hours / efficiency [J/m2]; cost = E * price.  8000 h, eta 0.85, 0.12 per kWh.
    hours, eta, price_kwh = 8000.0, 0.85, 0.12
    en = Energy(hours=hours * 3600.0, efficiency=eta, price=price_kwh / 3.6e6)
    r = size_layer(_slab(), 0, [LossTarget(200.0)], step=0.025, t_max=0.2, energy=en)
    for L, E, c in zip(r.table["thickness_m"], r.table["energy_J_per_m2"],
                        r.table["cost_per_year"]):
        q = (473.15 - 293.15) / (L / K_INS + 1 / 10.0 + 1e-6)
        kwh = q * hours / eta / 1000.0
        assert E / 3.6e6 == pytest.approx(kwh, rel=1e-3)
        assert c == pytest.approx(kwh * price_kwh, rel=1e-3)
    # 50 mm by hand: q = 180/(1.25 + 0.1) = 133.33 W/m2 -> 1254.9 kWh/m2/yr -> 150.59 per m2/yr
    i = [round(x, 6) for x in r.table["thickness_m"]].index(0.05)
    assert r.table["cost_per_year"][i] == pytest.approx(150.59, rel=1e-3)
    with pytest.raises(ValueError, match="efficiency"):
        Energy(hours=1.0, efficiency=1.5)
    assert math.isfinite(r.thickness_m)
