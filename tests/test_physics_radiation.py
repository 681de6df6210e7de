"""Radiation helpers and the finish library of fdwall.physics.radiation.

References: scipy.constants (Stefan-Boltzmann constant, CODATA), ht.radiation.q_rad
(grey body to black surroundings), Incropera & DeWitt eq. 13.19/13.24 for two-surface
grey enclosures (from memory).
"""

import math

import numpy as np
import pytest
from ht.radiation import q_rad
from numba import njit
from scipy.constants import Stefan_Boltzmann

from fdwall.physics import radiation as rad


def test_sigma_codata():
    # scipy.constants.Stefan_Boltzmann (CODATA 2018).
    assert rad.SIGMA == pytest.approx(Stefan_Boltzmann, rel=1e-9)


@pytest.mark.parametrize("eps,Ts,Tr", [(0.9, 400.0, 300.0), (0.05, 800.0, 290.0), (0.7, 250.0, 310.0), (1.0, 1500.0, 300.0)])
def test_h_radiative_vs_ht_q_rad(eps, Ts, Tr):
    # ht.radiation.q_rad = eps sigma (T^4 - T2^4); ht uses sigma = 5.670367e-8 (older
    # CODATA) -> 2e-6 relative.
    q = rad.h_radiative(eps, Ts, Tr) * (Ts - Tr)
    assert q == pytest.approx(q_rad(eps, Ts, Tr), rel=1e-5)
    assert rad.h_rad_kernel(eps, Ts, Tr) == pytest.approx(rad.h_radiative(eps, Ts, Tr), rel=1e-14)


def test_h_radiative_arrays_and_kernel_in_njit():
    @njit
    def f(e, a, b):
        return rad.h_rad_kernel(e, a, b)

    ts = np.array([300.0, 500.0, 900.0])
    h = rad.h_radiative(0.8, ts, 300.0)
    # Incropera eq. 1.9 (from memory): h_r = eps sigma (Ts + Tsur)(Ts^2 + Tsur^2).
    ref = 0.8 * Stefan_Boltzmann * (ts + 300.0) * (ts**2 + 300.0**2)
    assert np.allclose(h, ref, rtol=1e-8)
    assert f(0.8, 500.0, 300.0) == pytest.approx(ref[1], rel=1e-8)


@pytest.mark.parametrize("bad", [(-0.1, 300.0, 300.0), (1.2, 300.0, 300.0), (0.5, 0.0, 300.0), (0.5, 300.0, -1.0)])
def test_h_radiative_rejects(bad):
    with pytest.raises(ValueError):
        rad.h_radiative(*bad)


def test_grey_exchange():
    # Incropera eq. 13.24 (from memory): large parallel plates, 1/(1/e1 + 1/e2 - 1).
    assert rad.grey_exchange_emissivity(0.8, 0.6, 1.0) == pytest.approx(1 / (1 / 0.8 + 1 / 0.6 - 1))
    # Small body in large enclosure: eps_eff = eps1 (Incropera eq. 13.27, from memory).
    assert rad.grey_exchange_emissivity(0.3, 0.5, 0.0) == pytest.approx(0.3)
    # Long concentric cylinders r1/r2 = 0.5, ht.radiation.q_rad as the black-body check
    # at eps = 1: net = sigma (T1^4 - T2^4).
    assert rad.net_exchange(1.0, 1.0, 600.0, 300.0, 0.5) == pytest.approx(q_rad(1.0, 600.0, 300.0), rel=1e-5)
    e = 1 / (1 / 0.9 + 0.5 * (1 / 0.7 - 1))
    assert rad.net_exchange(0.9, 0.7, 600.0, 300.0, 0.5) == pytest.approx(e * Stefan_Boltzmann * (600.0**4 - 300.0**4))
    with pytest.raises(ValueError, match="area_ratio"):
        rad.grey_exchange_emissivity(0.5, 0.5, 2.0)
    with pytest.raises(ValueError, match="eps1"):
        rad.grey_exchange_emissivity(0.0, 0.5)


REQUIRED = [
    "painted_steel",
    "galvanised_steel_new",
    "galvanised_steel_weathered",
    "stainless_steel_polished",
    "stainless_steel_oxidised",
    "aluminium_polished",
    "aluminium_oxidised",
    "aluminium_anodised",
    "ceramic_refractory",
    "oxidised_carbon_steel",
    "white_paint",
    "black_paint",
    "aluminium_foil_jacket",
]


@pytest.mark.parametrize("name", REQUIRED)
def test_finish_library_entries(name):
    f = rad.get_finish(name)
    assert 0.0 < f.emissivity <= 1.0
    lo, hi = f.range
    assert 0.0 < lo <= f.emissivity <= hi <= 1.0
    assert f.source.strip()
    for T in (300.0, 700.0, 1200.0):
        assert 0.0 < f.at(T) <= 1.0


def test_finish_ordering_physics():
    # Common knowledge of surface radiation (Incropera Table A.11, from memory): polished
    # metals are far below paints and oxides; weathering raises galvanised steel.
    g = rad.get_finish
    assert g("aluminium_polished").emissivity < 0.1 < 0.8 < g("black_paint").emissivity
    assert g("galvanised_steel_new").emissivity < g("galvanised_steel_weathered").emissivity
    assert g("stainless_steel_polished").emissivity < g("stainless_steel_oxidised").emissivity
    assert g("aluminium_oxidised").emissivity < g("aluminium_anodised").emissivity


def test_finish_table_interpolation():
    f = rad.get_finish("ceramic_refractory")
    assert f.T_K and len(f.T_K) == len(f.eps)
    mid = 0.5 * (f.T_K[0] + f.T_K[1])
    assert f.at(mid) == pytest.approx(0.5 * (f.eps[0] + f.eps[1]))
    assert f.at(0.5 * f.T_K[0]) == f.eps[0]
    assert f.at(10 * f.T_K[-1]) == f.eps[-1]
    assert rad.get_finish("painted_steel").at(123.0) == rad.get_finish("painted_steel").emissivity


def test_finish_aliases_and_suggestions():
    assert rad.get_finish("Galvanized Steel New").name == "galvanised_steel_new"
    assert rad.get_finish("aluminum-polished").name == "aluminium_polished"
    with pytest.raises(ValueError) as ei:
        rad.get_finish("galvanised_steel_nwe")
    assert "galvanised_steel_new" in str(ei.value) and "Did you mean" in str(ei.value)
    with pytest.raises(ValueError, match="Known finishes"):
        rad.get_finish("unobtainium")
    assert set(REQUIRED) <= set(rad.finish_names())


def test_finish_file_errors(tmp_path):
    bad = tmp_path / "f.toml"
    bad.write_text('[x]\nemissivity = 1.5\nsource = "s"\n')
    with pytest.raises(ValueError, match=r"f.toml.*\[x\].*emissivity"):
        rad._load(str(bad))
    bad.write_text('[y]\nemissivity = 0.5\n')
    with pytest.raises(ValueError, match="source"):
        rad._load(str(bad))
    bad.write_text('[z]\nemissivity = 0.5\nsource = "s"\nT_K = [300.0, 200.0]\neps = [0.5, 0.6]\n')
    with pytest.raises(ValueError, match="T_K"):
        rad._load(str(bad))
    bad.write_text("not toml ===")
    with pytest.raises(ValueError, match="TOML"):
        rad._load(str(bad))
    assert math.isfinite(rad.get_finish("black_paint").emissivity)
