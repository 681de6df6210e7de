"""Air properties of fdwall.physics.air against outside references.

References
----------
* CoolProp (PropsSI, fluid 'Air'): Lemmon et al. (2000) mixture EOS + Lemmon & Jacobsen
  (2004) transport.  fdwall implements the same published transport correlation from the
  paper's coefficients, so mu and k must agree to well under 0.1 %; the remaining terms
  (ideal-gas density instead of the EOS, omitted critical enhancement) matter < 0.05 % at
  p <= 1 atm and T >= 240 K.
* fdwall's cp is an ideal-gas harmonic-oscillator model (see air.py): it neglects
  anharmonicity, the O2 electronic states and the real-gas departure, which together stay
  below 0.7 % from 240 K to 1200 K at 1 atm -> tolerance 0.8 % on cp, Pr and alpha.
* Density is the ideal gas: the compressibility of air at 1 atm departs from 1 by
  about 0.14 % at 240 K -> tolerance 0.25 %.
* fluids.atmosphere.ATMOSPHERE_1976 for the standard-atmosphere pressure.
* Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, Table A.4 (air at 1 atm),
  300 K row, from memory; it is an older data set -> 2 % tolerance.
"""

import math

import numpy as np
import pytest
from CoolProp.CoolProp import PropsSI
from fluids.atmosphere import ATMOSPHERE_1976

from fdwall.physics import air

TEMPS = [240.0, 273.15, 300.0, 350.0, 400.0, 500.0, 600.0, 800.0, 1000.0, 1200.0]
# 1 atm, and a reduced pressure (about 3000 m altitude / a partial vacuum oven).
PRESSURES = [101325.0, 70000.0, 30000.0]


def rel(a, b):
    return abs(a / b - 1.0)


@pytest.mark.parametrize("p", PRESSURES)
@pytest.mark.parametrize("T", TEMPS)
def test_viscosity_conductivity_vs_coolprop(T, p):
    # CoolProp Air, Lemmon & Jacobsen (2004) transport; tolerance 0.1 % (see module doc).
    assert rel(air.dynamic_viscosity(T, p), PropsSI("V", "T", T, "P", p, "Air")) < 1e-3
    assert rel(air.thermal_conductivity(T, p), PropsSI("L", "T", T, "P", p, "Air")) < 1e-3


@pytest.mark.parametrize("p", PRESSURES)
@pytest.mark.parametrize("T", TEMPS)
def test_density_cp_derived_vs_coolprop(T, p):
    # CoolProp Air EOS; ideal-gas density 0.25 %, ideal-gas harmonic cp 0.8 %.
    rho = PropsSI("D", "T", T, "P", p, "Air")
    cp = PropsSI("C", "T", T, "P", p, "Air")
    mu = PropsSI("V", "T", T, "P", p, "Air")
    k = PropsSI("L", "T", T, "P", p, "Air")
    assert rel(air.density(T, p), rho) < 2.5e-3
    assert rel(air.specific_heat(T, p), cp) < 8e-3
    assert rel(air.kinematic_viscosity(T, p), mu / rho) < 3e-3
    assert rel(air.thermal_diffusivity(T, p), k / (rho * cp)) < 8e-3
    assert rel(air.prandtl(T, p), PropsSI("Prandtl", "T", T, "P", p, "Air")) < 8e-3


@pytest.mark.parametrize("T", [240.0, 300.0, 600.0, 1200.0])
def test_film_properties_bundle_vs_coolprop(T):
    # CoolProp Air at 1 atm; same tolerances as above.
    p = 101325.0
    k, nu, alpha, pr = air.film_properties(T, p)
    rho = PropsSI("D", "T", T, "P", p, "Air")
    assert rel(k, PropsSI("L", "T", T, "P", p, "Air")) < 1e-3
    assert rel(nu, PropsSI("V", "T", T, "P", p, "Air") / rho) < 3e-3
    assert rel(alpha, k / (rho * PropsSI("C", "T", T, "P", p, "Air"))) < 8e-3
    assert rel(pr, PropsSI("Prandtl", "T", T, "P", p, "Air")) < 8e-3


@pytest.mark.parametrize("T", [250.0, 300.0, 400.0])
def test_expansion_coefficient_vs_coolprop(T):
    # CoolProp isobaric expansion coefficient of Air at 1 atm; ideal gas 1/T within 0.5 %.
    ref = PropsSI("isobaric_expansion_coefficient", "T", T, "P", 101325.0, "Air")
    assert rel(air.expansion_coefficient(T), ref) < 5e-3


def test_incropera_table_a4_300K():
    # Incropera Table A.4, air at 300 K and 1 atm (from memory): rho 1.1614 kg/m3,
    # cp 1.007 kJ/kg/K, mu 184.6e-7 N s/m2, nu 15.89e-6 m2/s, k 26.3e-3 W/m/K,
    # alpha 22.5e-6 m2/s, Pr 0.707.  Older data set: 2 % tolerance.
    T, p = 300.0, 101325.0
    assert rel(air.density(T, p), 1.1614) < 0.02
    assert rel(air.specific_heat(T, p), 1007.0) < 0.02
    assert rel(air.dynamic_viscosity(T, p), 184.6e-7) < 0.02
    assert rel(air.kinematic_viscosity(T, p), 15.89e-6) < 0.02
    assert rel(air.thermal_conductivity(T, p), 26.3e-3) < 0.02
    assert rel(air.thermal_diffusivity(T, p), 22.5e-6) < 0.02
    assert rel(air.prandtl(T, p), 0.707) < 0.02


def test_finite_far_outside_range():
    # The kernel may see film temperatures far outside 230..1300 K during Newton
    # iterations: all properties must stay finite and positive (no reference needed).
    for T in [50.0, 100.0, 200.0, 1600.0, 2500.0, 5000.0]:
        vals = air.film_properties(T, 101325.0)
        assert all(math.isfinite(v) and v > 0 for v in vals), (T, vals)
        assert math.isfinite(air.specific_heat(T)) and air.specific_heat(T) > 0


def test_cp_limits_statistical_mechanics():
    # Ideal-gas limits (statistical mechanics, textbook): vibrations frozen at low T so
    # cp/R -> 0.99 * 7/2 + 0.0092 * 5/2; this checks the Einstein term vanishes cleanly.
    R = air.R_AIR
    low = air.specific_heat(60.0) / R
    assert abs(low - (0.9908 * 3.5 + 0.0092 * 2.5)) < 1e-6


@pytest.mark.parametrize("z", [-500.0, 0.0, 1000.0, 2000.0, 3000.0, 5000.0, 11000.0])
def test_pressure_at_altitude_vs_fluids(z):
    # fluids.atmosphere.ATMOSPHERE_1976 (US standard atmosphere 1976); same model -> 1e-5.
    assert rel(air.pressure_at_altitude(z), ATMOSPHERE_1976(z).P) < 1e-5


@pytest.mark.parametrize("z", [-1000.0, 12000.0, float("nan"), float("inf")])
def test_pressure_at_altitude_rejects(z):
    with pytest.raises(ValueError, match="altitude"):
        air.pressure_at_altitude(z)


def test_pressure_scaling_of_kinematic_viscosity():
    # Ideal gas (kinetic theory): nu ~ 1/p at fixed T within the small residual terms.
    T = 400.0
    r = air.kinematic_viscosity(T, 50000.0) / air.kinematic_viscosity(T, 100000.0)
    assert abs(r - 2.0) < 2e-3
    assert np.isclose(air.density(T, 2 * 50000.0), 2 * air.density(T, 50000.0))
