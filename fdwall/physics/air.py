"""Thermophysical properties of dry air for the film-coefficient correlations.

All functions are numba ``@njit(cache=True)`` kernels of the absolute temperature
``T`` [K] and (where it matters) the pressure ``p`` [Pa]; they are equally callable from
Python with scalars.

Sources
-------
* Viscosity and thermal conductivity: E. W. Lemmon and R. T. Jacobsen, "Viscosity and
  thermal conductivity equations for nitrogen, oxygen, argon, and air", Int. J.
  Thermophysics 25 (2004) 21-69.  Dilute-gas terms (collision-integral form for the
  viscosity, the three-term dilute conductivity) plus the published residual (density)
  terms.  The critical enhancement of the conductivity is omitted: it is below 1e-5 of the
  value for T > 200 K at p <= a few bar.
* Density: ideal gas, molar mass 28.9586 g/mol (the same mixture as above).  The
  compressibility of air at 1 atm differs from 1 by less than 0.1 % above 240 K.
* Isobaric specific heat: ideal-gas statistical mechanics -- translational and rotational
  modes fully excited (cp/R = 7/2 for N2 and O2, 5/2 for Ar) plus a harmonic-oscillator
  (Planck-Einstein) vibrational term for N2 (theta_v = 3393.5 K) and O2 (theta_v =
  2273.6 K), mole fractions N2 0.7812, O2 0.2096, Ar 0.0092.  Within 0.7 % of the full
  real-gas value from 240 K to 1300 K at 1 atm (neglected: anharmonicity, the electronic
  states of O2, real-gas departure), about 0.9 % low at 1600 K.
* Volumetric expansion coefficient: ideal gas, beta = 1/T.
* Pressure vs altitude: ICAO/ISA standard atmosphere, troposphere (0..11 km).

Validity: built for 230 K .. 1300 K and 10 kPa .. 0.5 MPa; the formulas extrapolate
smoothly (no NaN) from 50 K to 5000 K.
"""

from __future__ import annotations

import math

from numba import njit

from fdwall.errors import InputError

#: Molar mass of dry air [kg/mol] (Lemmon & Jacobsen 2004 mixture).
M_AIR = 28.9586e-3
#: Molar gas constant [J/mol/K] (CODATA 2018).
R_MOLAR = 8.314462618
#: Specific gas constant of air [J/kg/K].
R_AIR = R_MOLAR / M_AIR
_R_EARTH = 6356766.0  # effective Earth radius of the standard atmosphere [m]
#: Standard sea-level pressure [Pa].
P_ATM = 101325.0

# Lemmon & Jacobsen (2004) parameters for air.
_SIGMA_NM = 0.360  # Lennard-Jones size [nm]
_EPS_K = 103.3  # Lennard-Jones energy / k_B [K]
_T_RED = 132.6312  # reducing temperature [K]
_RHO_RED = 10.4477  # reducing molar density [mol/dm3]
_LN_EPS_K = math.log(_EPS_K)
_LN_T_RED = math.log(_T_RED)

# Mole fractions and vibrational temperatures for the ideal-gas cp model.
_X_N2 = 0.7812
_X_O2 = 0.2096
_X_AR = 0.0092
_TH_N2 = 3393.5  # [K] = h c 2358.6 cm^-1 / k_B
_TH_O2 = 2273.6  # [K] = h c 1580.2 cm^-1 / k_B


@njit(cache=True)
def _delta(T, p):
    """Reduced molar density rho/rho_c [-] of the ideal gas at T [K], p [Pa]."""
    return p / (R_MOLAR * T) * 1.0e-3 / _RHO_RED


@njit(cache=True)
def _eta0_micro_ln(T, lnT):
    """Dilute-gas viscosity [micro Pa s] (Lemmon & Jacobsen 2004, eq. 2-3); lnT = ln(T)."""
    ls = lnT - _LN_EPS_K
    omega = math.exp(0.431 + ls * (-0.4623 + ls * (0.08406 + ls * (0.005341 + ls * -0.00331))))
    return 0.0266958 * math.sqrt(M_AIR * 1.0e3 * T) / (_SIGMA_NM * _SIGMA_NM * omega)


@njit(cache=True)
def _mu_k(T, p):
    """Viscosity [Pa s] and conductivity [W/m/K] sharing the logarithms (kernel helper).

    Residual terms of order delta^4 and higher are evaluated only when delta > 0.02
    (about 4 bar at 230 K); below that they change mu and k by less than 1e-8.
    """
    lnT = math.log(T)
    lt = _LN_T_RED - lnT  # ln(tau)
    d = _delta(T, p)
    eta0 = _eta0_micro_ln(T, lnT)
    ed = math.exp(-d)
    d2 = d * d
    d3 = d2 * d
    eta_r = d * (10.72 * math.exp(0.2 * lt) - 8.876 * math.exp(0.6 * lt) * ed)
    lam0 = 1.308 * eta0 + 1.405 * math.exp(-1.1 * lt) - 1.036 * math.exp(-0.3 * lt)
    lam_r = 8.743 * math.exp(0.1 * lt) * d + 14.76 * d2 - 16.62 * math.exp(0.5 * lt) * d3
    if d > 0.02:
        d4 = d2 * d2
        d7 = d4 * d3
        d8 = d4 * d4
        eta_r += (
            1.122 * math.exp(0.05 * lt) * d4
            + 0.002019 * math.exp(2.4 * lt) * d8 * d
            - 0.02916 * math.exp(3.6 * lt) * d8 * ed
        )
        lam_r += (
            3.793 * math.exp(2.7 * lt) * d7
            - 6.142 * math.exp(0.3 * lt) * d7 * ed
            - 0.3778 * math.exp(1.3 * lt) * d7 * d4 * math.exp(-d2)
        )
    return (eta0 + eta_r) * 1.0e-6, (lam0 + lam_r) * 1.0e-3


@njit(cache=True)
def dynamic_viscosity(T, p=P_ATM):
    """Dynamic viscosity of dry air.

    Parameters
    ----------
    T : float
        Temperature [K].
    p : float, optional
        Pressure [Pa]; default 101325 Pa.

    Returns
    -------
    float
        Dynamic viscosity mu [Pa s].
    """
    return _mu_k(T, p)[0]


@njit(cache=True)
def thermal_conductivity(T, p=P_ATM):
    """Thermal conductivity of dry air.

    Parameters
    ----------
    T : float
        Temperature [K].
    p : float, optional
        Pressure [Pa]; default 101325 Pa.

    Returns
    -------
    float
        Thermal conductivity k [W/m/K].
    """
    return _mu_k(T, p)[1]


@njit(cache=True)
def density(T, p=P_ATM):
    """Density of dry air, ideal gas.

    Parameters
    ----------
    T : float
        Temperature [K].
    p : float, optional
        Pressure [Pa]; default 101325 Pa.

    Returns
    -------
    float
        Density rho [kg/m3].
    """
    return p / (R_AIR * T)


@njit(cache=True)
def rho_cp(T, p=P_ATM):
    """Heat capacity per volume of dry air, rho * cp [J/m3/K], at ``T`` [K] and ``p`` [Pa]
    (default 1 atm): what a volume flow of air [m3/s] carries per kelvin."""
    return density(T, p) * specific_heat(T, p)


@njit(cache=True)
def _einstein(u):
    """Planck-Einstein heat-capacity function u^2 e^u / (e^u - 1)^2 [-], stable for all u > 0."""
    if u > 700.0:
        return 0.0
    em = math.exp(-u)
    return u * u * em / ((1.0 - em) * (1.0 - em))


@njit(cache=True)
def specific_heat(T, p=P_ATM):
    """Isobaric specific heat of dry air (ideal gas; ``p`` is accepted for symmetry).

    Parameters
    ----------
    T : float
        Temperature [K].
    p : float, optional
        Pressure [Pa]; unused (ideal gas).

    Returns
    -------
    float
        cp [J/kg/K].
    """
    cp_r = (
        _X_AR * 2.5
        + _X_N2 * (3.5 + _einstein(_TH_N2 / T))
        + _X_O2 * (3.5 + _einstein(_TH_O2 / T))
    )
    return cp_r * R_AIR


@njit(cache=True)
def kinematic_viscosity(T, p=P_ATM):
    """Kinematic viscosity nu = mu/rho of dry air.

    Parameters
    ----------
    T : float
        Temperature [K].
    p : float, optional
        Pressure [Pa]; default 101325 Pa.

    Returns
    -------
    float
        Kinematic viscosity [m2/s].
    """
    return dynamic_viscosity(T, p) / density(T, p)


@njit(cache=True)
def thermal_diffusivity(T, p=P_ATM):
    """Thermal diffusivity alpha = k/(rho cp) of dry air.

    Parameters
    ----------
    T : float
        Temperature [K].
    p : float, optional
        Pressure [Pa]; default 101325 Pa.

    Returns
    -------
    float
        Thermal diffusivity [m2/s].
    """
    return thermal_conductivity(T, p) / (density(T, p) * specific_heat(T, p))


@njit(cache=True)
def prandtl(T, p=P_ATM):
    """Prandtl number cp mu / k of dry air.

    Parameters
    ----------
    T : float
        Temperature [K].
    p : float, optional
        Pressure [Pa]; default 101325 Pa.

    Returns
    -------
    float
        Prandtl number [-].
    """
    return specific_heat(T, p) * dynamic_viscosity(T, p) / thermal_conductivity(T, p)


@njit(cache=True)
def expansion_coefficient(T):
    """Volumetric thermal expansion coefficient of an ideal gas, beta = 1/T.

    Parameters
    ----------
    T : float
        Temperature [K].

    Returns
    -------
    float
        beta [1/K].
    """
    return 1.0 / T


@njit(cache=True)
def film_properties(T, p):
    """All transport properties needed by the correlations, in one call.

    Parameters
    ----------
    T : float
        Film temperature [K].
    p : float
        Pressure [Pa].

    Returns
    -------
    k : float
        Thermal conductivity [W/m/K].
    nu : float
        Kinematic viscosity [m2/s].
    alpha : float
        Thermal diffusivity [m2/s].
    pr : float
        Prandtl number [-].
    """
    mu, k = _mu_k(T, p)
    rho = density(T, p)
    cp = specific_heat(T, p)
    return k, mu / rho, k / (rho * cp), cp * mu / k


def pressure_at_altitude(altitude):
    """Standard-atmosphere (ISA) static pressure at a geometric altitude.

    Uses the troposphere barometric formula p = p0 (1 - L H / T0)^(g0 M / (R L)) with
    p0 = 101325 Pa, T0 = 288.15 K, L = 0.0065 K/m, g0 M / (R L) = 5.255877 (ICAO / US 1976
    standard atmosphere), H = r0 z / (r0 + z) the geopotential altitude, r0 = 6356766 m.

    Parameters
    ----------
    altitude : float
        Altitude above mean sea level [m], from -500 m to 11000 m.

    Returns
    -------
    float
        Pressure [Pa].

    Raises
    ------
    ValueError
        If the altitude is not a finite number in -500 .. 11000 m.
    """
    z = float(altitude)
    if not math.isfinite(z) or z < -500.0 or z > 11000.0:
        raise InputError(
            f"altitude = {altitude!r} m is outside the standard-atmosphere troposphere "
            "formula; give an altitude from -500 m to 11000 m above sea level [m], or give "
            "the pressure [Pa] directly."
        )
    h = _R_EARTH * z / (_R_EARTH + z)  # geopotential altitude [m]
    return P_ATM * (1.0 - 0.0065 * h / 288.15) ** 5.255877
