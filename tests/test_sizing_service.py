"""Service-limit target: every layer's hot face at or below its material's rating.  A backing
layer's hot side gets hotter as the insulation outside it thickens, so that target is met only
below a thickness (sources named beside each check)."""
import pytest

from fdwall import Case, Face, Layer, RunSettings, Wall
from fdwall.materials import material_from_dict
from fdwall.sizing import ServiceTarget, size_layer

TI, TA, H, RI = 473.15, 293.15, 10.0, 1e-6    # RI: the 1e6 W/m2/K inner film
K1, L1, K2, L2, TMAX = 0.1, 0.04, 0.03, 0.05, 373.15


def _case(L1=L1, L2=L2):
    hot = material_from_dict("t-hot", {"k": K1, "cp": 840.0, "rho": 200.0})
    foam = material_from_dict("t-foam", {"k": K2, "cp": 1400.0, "rho": 40.0, "t_max": TMAX})
    return Case(run=RunSettings(duration=3600.0, start_temperature=TA),
                wall=Wall(layers=(Layer(hot, L1), Layer(foam, L2)), area=1.0),
                inner=Face(fluid_temperature=TI, convection=1e6), outer=Face(fluid_temperature=TA, convection=H))


def test_service_target_backing_layer_closed_form():
    # Two plane layers in series (Incropera 7th ed., eq. 3.19 / Fig. 3.2):
    # T_int = T_i - q (R_i + L1/k1), q = (T_i - T_a) / (R_i + L1/k1 + L2/k2 + 1/h).
    # Sizing the foam (outer): T_int = T_max at L2 = k2 ((T_i - T_a)/q* - R_i - L1/k1 - 1/h)
    # with q* = (T_i - T_max)/(R_i + L1/k1): feasible only BELOW that thickness.
    q = (TI - TMAX) / (RI + L1 / K1)
    L2_ref = K2 * ((TI - TA) / q - RI - L1 / K1 - 1 / H)
    r = size_layer(_case(), 1, [ServiceTarget()], t_min=0.002, t_max=0.3, step=0.002)
    assert len(r.feasible_m) == 1 and r.feasible_m[0][0] == pytest.approx(0.002)
    assert r.feasible_m[0][1] == pytest.approx(L2_ref, rel=2e-3)
    assert r.targets[0]["limit"] == pytest.approx(TMAX) and r.targets[0]["verdict"] == "pass"
    # sizing the hot layer instead: L1 = k1 (T_i - T_max)(L2/k2 + 1/h)/(T_max - T_a) (same
    # network solved for L1, inner film neglected at 1e-6 m2K/W), feasible ABOVE it
    L1_ref = K1 * (TI - TMAX) * (L2 / K2 + 1 / H) / (TMAX - TA) - K1 * RI
    r = size_layer(_case(), 0, [ServiceTarget()], t_min=0.002, t_max=0.3, step=0.005)
    assert r.thickness_exact_m == pytest.approx(L1_ref, rel=2e-3)
    assert r.feasible_m[-1][1] == pytest.approx(0.3)
