"""Convective film coefficients of wall faces in air: kernel and model object.

Kernel
------
``h_conv(par, Ts, Tf) -> h`` [W/m2/K] is the single numba dispatcher the solver calls.
``par`` is a float64 array of length :data:`PAR_LEN` built by :meth:`Convection.to_par`
(never by hand); its layout is (index constant: meaning [unit]):

====  ============  ==========================================================================
 idx  name          meaning
====  ============  ==========================================================================
  0   P_MODE        0 fixed h, 1 natural, 2 forced, 3 mixed (natural + forced),
                    4 power law h = a |Ts - Tf|^n
  1   P_NAT         natural geometry: 0 none, 1 vertical plate, 2 horizontal plate,
                    3 tilted plate, 4 horizontal cylinder, 5 vertical cylinder,
                    6 power law (the natural part of a mixed condition)
  2   P_FORCED      forced geometry: 0 none, 1 flat plate in parallel flow, 2 cylinder in
                    cross-flow
  3   P_HFIX        fixed film coefficient [W/m2/K] (mode 0 only)
  4   P_MULT        multiplier applied to the final h [-] (1.0 = none)
  5   P_PRESS       air pressure [Pa]
  6   P_HEIGHT      height of vertical plate / vertical cylinder, slant length of a tilted
                    plate [m]
  7   P_CHAR        characteristic length A/P of a horizontal (or steep-tilted) plate [m]
  8   P_DIAM        diameter of the cylinder for natural convection [m]
  9   P_FACING      +1 face looks upward, -1 face looks downward, 0 vertical / n.a.
 10   P_COSV        cos of the plate's angle from the vertical [-] (tilted plate)
 11   P_SINV        sin of the plate's angle from the vertical [-] (tilted plate)
 12   P_FLEN        forced-flow length: plate length along the flow, or cylinder diameter [m]
 13   P_SPEED       free-stream (wind) speed [m/s]
 14   P_RETR        transition Reynolds number of the flat plate [-] (5e5; 0 = tripped)
 15   P_AMIX        0.037 Re_c^0.8 - 0.664 Re_c^0.5 for the mixed boundary layer [-]
 16   P_GRAV        gravitational acceleration [m/s2]
 17   P_WHERE       0 outside face, 1 face inside a chamber (information only)
 18   P_PLAW_A      power-law coefficient a [W/(m2 K^(1+n))] (mode 4, natural code 6)
 19   P_PLAW_N      power-law exponent n [-], 0 <= n <= 1 (mode 4, natural code 6)
====  ============  ==========================================================================

Power law (mode 4, and natural code 6 inside a mixed condition): ``h = a |Ts - Tf|^n``
[W/m2/K] with the power-law coefficient ``a`` [W/(m2 K^(1+n))] and the exponent ``n`` [-]
given by the user, no air properties.  The simplified natural-convection forms of air are of
this kind (for example ``h = 1.42 (dT/L)^(1/4)`` for a laminar vertical plate, ``1.31
dT^(1/3)`` turbulent; McAdams 1954 / Holman, Heat Transfer, table 7-2).  At ``Ts == Tf`` it
returns 0 for n > 0 and ``a`` for n = 0; dh/dTs is unbounded there for 0 < n < 1 but the heat
flux ``a |dT|^n dT`` has the finite slope ``(1 + n) a |dT|^n`` (0 at dT = 0), so the
solver's forward difference and Newton steps stay finite.

Correlations (all with properties at the film temperature (Ts+Tf)/2 and the pressure
``par[P_PRESS]``; Ra and Gr use |Ts - Tf|, beta = 1/T_film):

* vertical plate, height L: Churchill & Chu (1975) full-range
  ``Nu = {0.825 + 0.387 Ra^(1/6) / [1 + (0.492/Pr)^(9/16)]^(8/27)}^2``;
* horizontal plate, L = A/P: upper surface of a hot plate / lower surface of a cold plate
  ``Nu = max(0.54 Ra^(1/4), 0.15 Ra^(1/3))`` (Lloyd & Moran 1974, McAdams); lower surface
  of a hot plate / upper surface of a cold plate ``Nu = 0.27 Ra^(1/4)`` (McAdams).  The
  side is chosen at run time from the sign of Ts - Tf.  Taking the larger branch (instead
  of switching at Ra = 1e7) removes the 6 % jump of the tabulated form; the two differ only
  for 4.7e6 < Ra < 1e7, by at most 6 %;
* tilted plate, angle theta from the vertical: for theta <= 60 deg the vertical correlation
  with g cos(theta) in Ra; on the side where the boundary layer tends to lift off (hot face
  looking up, cold face looking down) the larger of that and the upper-surface horizontal
  correlation with g sin(theta) (common practice after Raithby & Hollands, from memory).
  For theta > 60 deg the horizontal-plate pair with g sin(theta);
* horizontal cylinder, diameter D: Churchill & Chu (1975)
  ``Nu_D = {0.60 + 0.387 Ra_D^(1/6) / [1 + (0.559/Pr)^(9/16)]^(8/27)}^2``;
* vertical cylinder, height L, diameter D: vertical-plate value times the Popiel,
  Wojtkowiak & Bober (2007) curvature factor ``1 + B (32^0.5 Gr_L^-0.25 L/D)^C``.  The
  factor tends to 1 for thick cylinders (it is < 1.06 wherever the classical
  thin-cylinder test D >= 35 L / Gr_L^(1/4) says the plate value may be used) and is
  applied always so that h stays continuous in Ts; Gr_L in the factor is floored at the
  value for Ra_L = 1e4 (the lower end of its data) so h stays finite as Ts -> Tf;
* flat plate in parallel flow, length L, speed V: average Nusselt, laminar
  ``0.664 Re^(1/2) Pr^(1/3)`` for Re <= Re_c, mixed laminar/turbulent
  ``(0.037 Re^(4/5) - A) Pr^(1/3)`` above, A = 0.037 Re_c^0.8 - 0.664 Re_c^0.5 (= 871 for
  Re_c = 5e5, Incropera); Re_c = 0 gives a boundary layer tripped at the leading edge;
* cylinder in cross-flow: Churchill & Bernstein (1977), all Re with Re Pr > 0.2;
* mixed convection: ``h = (h_N^3 + h_F^3)^(1/3)``, the assisting / transverse-flow
  combination (Churchill 1977; Incropera sec. 9.9).  Written on h so that the natural and
  forced parts can use their own lengths; with one common length it is exactly
  ``Nu^3 = Nu_N^3 + Nu_F^3``.  Opposing flow (which would subtract) is not modelled: the
  combined h is an upper estimate there.

Robustness: the film temperature used for the properties is clamped to 50 .. 5000 K, so
no input in the kernel's working range gives NaN or inf; at Ts == Tf the natural part
returns its Ra -> 0 limit (Churchill-Chu: 0.68 k/L for a plate, 0.36 k/D for a
cylinder; 0 for the horizontal-plate power laws).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from functools import cached_property

import numpy as np
from numba import njit

from fdwall.errors import InputError
from fdwall.physics.air import (
    P_ATM,
    film_properties,
    pressure_at_altitude,
)
from fdwall.physics.radiation import h_radiative

__all__ = [
    "PAR_LEN",
    "MODE_FIXED",
    "MODE_NATURAL",
    "MODE_FORCED",
    "MODE_MIXED",
    "MODE_POWER",
    "h_power_law",
    "EXPONENT_RANGE",
    "h_conv",
    "h_conv_array",
    "dimensionless_numbers",
    "Convection",
    "h_radiative",
    "combined_h",
]

# --------------------------------------------------------------------------- par layout
P_MODE = 0
P_NAT = 1
P_FORCED = 2
P_HFIX = 3
P_MULT = 4
P_PRESS = 5
P_HEIGHT = 6
P_CHAR = 7
P_DIAM = 8
P_FACING = 9
P_COSV = 10
P_SINV = 11
P_FLEN = 12
P_SPEED = 13
P_RETR = 14
P_AMIX = 15
P_GRAV = 16
P_WHERE = 17
P_PLAW_A = 18
P_PLAW_N = 19
#: Length of the parameter vector given to :func:`h_conv`.
PAR_LEN = 20

MODE_FIXED = 0
MODE_NATURAL = 1
MODE_FORCED = 2
MODE_MIXED = 3
MODE_POWER = 4

NAT_NONE = 0
NAT_VPLATE = 1
NAT_HPLATE = 2
NAT_TILTED = 3
NAT_HCYL = 4
NAT_VCYL = 5
NAT_POWER = 6

FORCED_NONE = 0
FORCED_PLATE = 1
FORCED_CYL = 2

#: Standard gravity [m/s2].
G_STD = 9.80665
#: Film-temperature clamp used for the property evaluation [K].
T_FILM_MIN = 50.0
T_FILM_MAX = 5000.0
#: Validity range of the air-property formulas [K] (for warnings).
T_PROPS_VALID = (230.0, 1300.0)

_THIRD = 1.0 / 3.0
_SIXTH = 1.0 / 6.0
_COS60 = 0.5

#: Allowed range of the power-law exponent n [-].  0 is a constant film coefficient; the
#: simplified natural-convection forms of air have 1/4 (laminar) to 1/3 (turbulent), and a
#: combined convection-plus-radiation fit in air rarely exceeds about 0.5.  Above 1 the loss
#: would grow faster than dT^2, which no convective mechanism in air does (nucleate boiling,
#: n of 2 to 3, is no face condition of fdwall); below 0 h would grow without bound as the
#: face approaches the fluid temperature, which is unphysical and singular.
EXPONENT_RANGE = (0.0, 1.0)
#: Usual film coefficients of natural (free) convection in gases [W/m2/K] (Incropera et al.,
#: Fundamentals of Heat and Mass Transfer, table 1.1): a power law outside gets a warning.
H_FREE_GAS_RANGE = (2.0, 25.0)


# --------------------------------------------------------------------------- correlations
@njit(cache=True)
def nu_vertical_plate_cc(ra, pr):
    """Churchill & Chu (1975) full-range average Nusselt number of a vertical plate.

    Parameters
    ----------
    ra : float
        Rayleigh number on the plate height [-], >= 0.
    pr : float
        Prandtl number [-].

    Returns
    -------
    float
        Average Nusselt number [-].
    """
    f = (1.0 + (0.492 / pr) ** 0.5625) ** (8.0 / 27.0)
    t = 0.825 + 0.387 * ra**_SIXTH / f
    return t * t


@njit(cache=True)
def nu_horizontal_cylinder_cc(ra, pr):
    """Churchill & Chu (1975) average Nusselt number of a horizontal cylinder.

    Parameters
    ----------
    ra : float
        Rayleigh number on the diameter [-], >= 0 (valid to 1e12).
    pr : float
        Prandtl number [-].

    Returns
    -------
    float
        Average Nusselt number on the diameter [-].
    """
    f = (1.0 + (0.559 / pr) ** 0.5625) ** (8.0 / 27.0)
    t = 0.60 + 0.387 * ra**_SIXTH / f
    return t * t


@njit(cache=True)
def nu_plate_upper_hot(ra):
    """Upper surface of a hot (or lower surface of a cold) horizontal plate, L = A/P.

    ``max(0.54 Ra^(1/4), 0.15 Ra^(1/3))`` (Lloyd & Moran 1974; McAdams).

    Parameters
    ----------
    ra : float
        Rayleigh number on A/P [-], >= 0.

    Returns
    -------
    float
        Average Nusselt number [-].
    """
    lam = 0.54 * ra**0.25
    tur = 0.15 * ra**_THIRD
    return lam if lam > tur else tur


@njit(cache=True)
def nu_plate_lower_hot(ra):
    """Lower surface of a hot (or upper surface of a cold) horizontal plate, L = A/P.

    ``0.27 Ra^(1/4)`` (McAdams).

    Parameters
    ----------
    ra : float
        Rayleigh number on A/P [-], >= 0.

    Returns
    -------
    float
        Average Nusselt number [-].
    """
    return 0.27 * ra**0.25


@njit(cache=True)
def popiel_churchill_factor(gr, pr, length, diameter):
    """Curvature factor Nu_cyl / Nu_plate of a vertical cylinder (Popiel et al. 2007).

    Parameters
    ----------
    gr : float
        Grashof number on the height [-], > 0.
    pr : float
        Prandtl number [-].
    length : float
        Cylinder height [m].
    diameter : float
        Cylinder diameter [m].

    Returns
    -------
    float
        Factor >= 1 [-].
    """
    b = 0.0571322 + 0.20305 * pr**-0.43
    c = 0.9165 - 0.0043 * math.sqrt(pr) + 0.01333 * math.log(pr) + 0.0004809 / pr
    xi = math.sqrt(32.0) * gr**-0.25 * length / diameter
    return 1.0 + b * xi**c


@njit(cache=True)
def nu_flat_plate_forced(re, pr, a_mix, re_c):
    """Average Nusselt number of a flat plate in parallel flow (laminar / mixed).

    Parameters
    ----------
    re : float
        Reynolds number on the plate length [-].
    pr : float
        Prandtl number [-].
    a_mix : float
        0.037 Re_c^0.8 - 0.664 Re_c^0.5 [-].
    re_c : float
        Transition Reynolds number [-].

    Returns
    -------
    float
        Average Nusselt number [-].
    """
    pr3 = pr**_THIRD
    if re <= re_c:
        return 0.664 * math.sqrt(re) * pr3
    return (0.037 * re**0.8 - a_mix) * pr3


@njit(cache=True)
def nu_cylinder_crossflow_cb(re, pr):
    """Churchill & Bernstein (1977) average Nusselt number of a cylinder in cross-flow.

    Parameters
    ----------
    re : float
        Reynolds number on the diameter [-], >= 0.
    pr : float
        Prandtl number [-].

    Returns
    -------
    float
        Average Nusselt number [-].
    """
    return 0.3 + 0.62 * math.sqrt(re) * pr**_THIRD / (1.0 + (0.4 / pr) ** (2.0 / 3.0)) ** 0.25 * (
        1.0 + (re / 282000.0) ** 0.625
    ) ** 0.8


# --------------------------------------------------------------------------- kernel
@njit(cache=True)
def h_power_law(a, n, dT):
    """Power-law film coefficient ``h = a |dT|^n`` [W/m2/K].

    The one implementation shared by the solver (:func:`h_conv`, mode 4) and the lumped
    helpers (:func:`fdwall.analyses.lumped.lumped_cooling`, :func:`fdwall.analyses.lumped.
    fit_power_law_loss`).

    Parameters
    ----------
    a : float
        Power-law coefficient [W/(m2 K^(1+n))], > 0.
    n : float
        Exponent [-], 0 <= n <= 1 (see :data:`EXPONENT_RANGE`).
    dT : float
        Temperature difference surface minus fluid [K] (either sign).

    Returns
    -------
    float
        h >= 0 [W/m2/K]: 0 at dT = 0 for n > 0 (``a`` for n = 0), never NaN for finite
        inputs (the magnitude is taken before the power).
    """
    d = abs(dT)
    if n == 0.0:
        return a
    if not (d > 0.0):  # 0, or NaN in: no film (NaN would otherwise spread into the Newton step)
        return 0.0
    return a * d**n


@njit(cache=True)
def _film(Ts, Tf):
    t = 0.5 * (Ts + Tf)
    if t < T_FILM_MIN:
        t = T_FILM_MIN
    elif t > T_FILM_MAX:
        t = T_FILM_MAX
    if not (t == t):  # NaN in -> clamp to a harmless value, NaN out is the caller's sign
        t = T_FILM_MIN
    return t


@njit(cache=True)
def _h_natural(par, dT, tfilm, k, nu, alpha, pr):
    kind = int(par[P_NAT] + 0.5)
    if kind == NAT_POWER:
        return h_power_law(par[P_PLAW_A], par[P_PLAW_N], dT)
    # Ra per m^3: g beta |dT| / (nu alpha)
    c = par[P_GRAV] * abs(dT) / (tfilm * nu * alpha)
    if kind == NAT_VPLATE:
        L = par[P_HEIGHT]
        return nu_vertical_plate_cc(c * L * L * L, pr) * k / L
    if kind == NAT_HPLATE:
        L = par[P_CHAR]
        ra = c * L * L * L
        if par[P_FACING] * dT >= 0.0:  # hot facing up or cold facing down
            return nu_plate_upper_hot(ra) * k / L
        return nu_plate_lower_hot(ra) * k / L
    if kind == NAT_TILTED:
        H = par[P_HEIGHT]
        Lc = par[P_CHAR]
        cosv = par[P_COSV]
        sinv = par[P_SINV]
        unstable = par[P_FACING] * dT > 0.0
        ra_h = c * Lc * Lc * Lc * sinv
        if cosv >= _COS60:
            h = nu_vertical_plate_cc(c * H * H * H * cosv, pr) * k / H
            if unstable:
                hh = nu_plate_upper_hot(ra_h) * k / Lc
                if hh > h:
                    h = hh
            return h
        if unstable:
            return nu_plate_upper_hot(ra_h) * k / Lc
        return nu_plate_lower_hot(ra_h) * k / Lc
    if kind == NAT_HCYL:
        D = par[P_DIAM]
        return nu_horizontal_cylinder_cc(c * D * D * D, pr) * k / D
    if kind == NAT_VCYL:
        L = par[P_HEIGHT]
        D = par[P_DIAM]
        ra = c * L * L * L
        nu_fp = nu_vertical_plate_cc(ra, pr)
        ra_f = ra if ra > 1.0e4 else 1.0e4
        return nu_fp * popiel_churchill_factor(ra_f / pr, pr, L, D) * k / L
    return 0.0


@njit(cache=True)
def _h_forced(par, k, nu, pr):
    kind = int(par[P_FORCED] + 0.5)
    L = par[P_FLEN]
    re = par[P_SPEED] * L / nu
    if kind == FORCED_PLATE:
        return nu_flat_plate_forced(re, pr, par[P_AMIX], par[P_RETR]) * k / L
    if kind == FORCED_CYL:
        return nu_cylinder_crossflow_cb(re, pr) * k / L
    return 0.0


@njit(cache=True)
def h_conv(par, Ts, Tf):
    """Convective film coefficient of one wall face (the solver's dispatcher).

    Parameters
    ----------
    par : numpy.ndarray
        float64 vector of length :data:`PAR_LEN` from :meth:`Convection.to_par`.
    Ts : float
        Surface temperature [K].
    Tf : float
        Fluid (air) temperature far from the face [K].

    Returns
    -------
    float
        Film coefficient h >= 0 [W/m2/K], referred to Ts - Tf.
    """
    mode = int(par[P_MODE] + 0.5)
    if mode == MODE_FIXED:
        h = par[P_HFIX]
        return (h if h > 0.0 else 0.0) * par[P_MULT]
    if mode == MODE_POWER:
        return h_power_law(par[P_PLAW_A], par[P_PLAW_N], Ts - Tf) * par[P_MULT]
    tfilm = _film(Ts, Tf)
    k, nu, alpha, pr = film_properties(tfilm, par[P_PRESS])
    hn = 0.0
    hf = 0.0
    if mode == MODE_NATURAL or mode == MODE_MIXED:
        hn = _h_natural(par, Ts - Tf, tfilm, k, nu, alpha, pr)
    if mode == MODE_FORCED or mode == MODE_MIXED:
        hf = _h_forced(par, k, nu, pr)
    if mode == MODE_MIXED:
        h = (hn * hn * hn + hf * hf * hf) ** _THIRD
    else:
        h = hn + hf
    return h * par[P_MULT]


@njit(cache=True)
def h_conv_array(par, Ts, Tf):
    """Vectorised :func:`h_conv` over arrays of surface and fluid temperatures.

    Parameters
    ----------
    par : numpy.ndarray
        Parameter vector of length :data:`PAR_LEN`.
    Ts : numpy.ndarray
        Surface temperatures [K].
    Tf : numpy.ndarray
        Fluid temperatures [K], same shape as ``Ts``.

    Returns
    -------
    numpy.ndarray
        Film coefficients [W/m2/K].
    """
    out = np.empty(Ts.size)
    ts = Ts.ravel()
    tf = Tf.ravel()
    for i in range(ts.size):
        out[i] = h_conv(par, ts[i], tf[i])
    return out.reshape(Ts.shape)


@njit(cache=True)
def dimensionless_numbers(par, Ts, Tf):
    """Rayleigh, Grashof, Reynolds and Prandtl numbers the kernel uses.

    Parameters
    ----------
    par : numpy.ndarray
        Parameter vector of length :data:`PAR_LEN`.
    Ts : float
        Surface temperature [K].
    Tf : float
        Fluid temperature [K].

    Returns
    -------
    ra : float
        Rayleigh number of the natural part on its main length (height, A/P or D;
        including cos(theta) for a tilted plate) [-]; 0 if no natural part.
    gr : float
        Grashof number on the same length [-].
    re : float
        Reynolds number of the forced part [-]; 0 if no forced part.
    pr : float
        Prandtl number at the film temperature [-].
    tfilm : float
        Film temperature used for the properties [K].
    """
    tfilm = _film(Ts, Tf)
    k, nu, alpha, pr = film_properties(tfilm, par[P_PRESS])
    mode = int(par[P_MODE] + 0.5)
    ra = 0.0
    re = 0.0
    if mode == MODE_NATURAL or mode == MODE_MIXED:
        c = par[P_GRAV] * abs(Ts - Tf) / (tfilm * nu * alpha)
        kind = int(par[P_NAT] + 0.5)
        if kind == NAT_VPLATE or kind == NAT_VCYL:
            L = par[P_HEIGHT]
            ra = c * L * L * L
        elif kind == NAT_HPLATE:
            L = par[P_CHAR]
            ra = c * L * L * L
        elif kind == NAT_TILTED:
            if par[P_COSV] >= _COS60:
                L = par[P_HEIGHT]
                ra = c * L * L * L * par[P_COSV]
            else:
                L = par[P_CHAR]
                ra = c * L * L * L * par[P_SINV]
        elif kind == NAT_HCYL:
            L = par[P_DIAM]
            ra = c * L * L * L
    if mode == MODE_FORCED or mode == MODE_MIXED:
        re = par[P_SPEED] * par[P_FLEN] / nu
    return ra, ra / pr, re, pr, tfilm


# --------------------------------------------------------------------------- model object
_NATURAL_KINDS = (
    "vertical_plate",
    "horizontal_plate",
    "tilted_plate",
    "horizontal_cylinder",
    "vertical_cylinder",
)
_FORCED_KINDS = ("wind_plate", "wind_cylinder")
_KINDS = ("fixed",) + _NATURAL_KINDS + _FORCED_KINDS + ("power_law",)
#: Kinds that may be the natural part of a wind condition (mixed convection).
_NATURAL_PART_KINDS = _NATURAL_KINDS + ("power_law",)
_NAT_CODE = {
    "vertical_plate": NAT_VPLATE,
    "horizontal_plate": NAT_HPLATE,
    "tilted_plate": NAT_TILTED,
    "horizontal_cylinder": NAT_HCYL,
    "vertical_cylinder": NAT_VCYL,
}
_FACINGS = ("up", "down")
_WHERE = ("outside", "chamber")


def _resolve_pressure(pressure, altitude, who):
    if pressure is not None and altitude is not None:
        raise InputError(
            f"{who}: both pressure = {pressure!r} Pa and altitude = {altitude!r} m were "
            "given; give one of them (pressure [Pa] or altitude above sea level [m])."
        )
    if altitude is not None:
        try:
            return pressure_at_altitude(altitude)
        except ValueError as exc:
            raise InputError(f"{who}: {exc}") from None
    return P_ATM if pressure is None else pressure


def _check_power_law(who, coefficient, exponent):
    """Validated (a [W/(m2 K^(1+n))], n [-]) of a power-law film; InputError otherwise."""
    lo, hi = EXPONENT_RANGE
    try:
        n = float(exponent)
    except (TypeError, ValueError):
        n = float("nan")
    if isinstance(exponent, bool) or not math.isfinite(n) or not (lo <= n <= hi):
        raise InputError(
            f"{who}: exponent = {exponent!r} is not allowed; the power-law exponent n of "
            f"h = a |Ts - Tf|^n must be a number {lo:g} .. {hi:g} [-] (1/4 laminar, 1/3 "
            "turbulent natural convection of air, 0 a constant h; below 0 h would be "
            "infinite at Ts = Tf, above 1 no convective loss in air grows that fast)."
        )
    try:
        a = float(coefficient)
    except (TypeError, ValueError):
        a = float("nan")
    if isinstance(coefficient, bool) or not math.isfinite(a) or a <= 0.0:
        raise InputError(
            f"{who}: coefficient = {coefficient!r} is not allowed; the power-law coefficient "
            f"a must be a finite number > 0 [W/(m2 K^{1.0 + n:g})]."
        )
    return a, n


def _check_positive(who, name, value, unit):
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(
            f"{who}: {name} = {value!r} is not a number; give a positive length/value in "
            f"[{unit}]."
        ) from None
    if not math.isfinite(v) or v <= 0.0:
        raise InputError(
            f"{who}: {name} = {value!r} {unit} is not allowed; it must be a finite number "
            f"> 0 [{unit}]."
        )
    return v


@dataclass(frozen=True)
class Convection:
    """Convective boundary condition of one wall face in air.

    Build it with the constructors (:meth:`fixed`, :meth:`natural_vertical`,
    :meth:`natural_horizontal`, :meth:`natural_tilted`, :meth:`horizontal_cylinder`,
    :meth:`vertical_cylinder`, :meth:`wind_plate`, :meth:`wind_cylinder`,
    :meth:`chamber`, :meth:`power_law`); all lengths in [m], speeds in [m/s], pressures in
    [Pa].

    Attributes
    ----------
    kind : str
        One of ``"fixed"``, ``"vertical_plate"``, ``"horizontal_plate"``,
        ``"tilted_plate"``, ``"horizontal_cylinder"``, ``"vertical_cylinder"``,
        ``"wind_plate"``, ``"wind_cylinder"``, ``"power_law"``.
    h_fixed : float or None
        Given film coefficient [W/m2/K] (kind ``"fixed"``).
    height : float or None
        Vertical-plate / vertical-cylinder height, or the slant length of a tilted plate
        [m].
    char_length : float or None
        Characteristic length A/P of a horizontal plate (and of a tilted plate's
        horizontal branch) [m].
    diameter : float or None
        Outside diameter of a cylinder [m].
    length : float or None
        Plate length along the wind [m] (kind ``"wind_plate"``).
    speed : float
        Wind speed [m/s] (forced kinds).
    tilt_deg : float or None
        Tilt of a tilted plate [deg]: angle between the face's outward normal and the
        upward vertical; 0 = horizontal face looking up, 90 = vertical, 180 = horizontal
        face looking down.
    facing : str or None
        ``"up"`` or ``"down"`` for a horizontal plate.
    natural : Convection or None
        Natural part combined with the wind (mixed convection), or None.
    pressure : float
        Air pressure [Pa].
    multiplier : float
        Factor applied to the computed h [-] (e.g. surface roughness allowance).
    where : str
        ``"outside"`` or ``"chamber"`` (face inside a heated chamber); information only.
    re_transition : float
        Transition Reynolds number of the flat-plate boundary layer [-]; 0 = turbulent
        from the leading edge.
    coefficient : float or None
        Power-law coefficient a of ``h = a |Ts - Tf|^n`` [W/(m2 K^(1+n))] (kind
        ``"power_law"``), > 0.
    exponent : float or None
        Power-law exponent n [-] (kind ``"power_law"``), 0 <= n <= 1.
    """

    kind: str
    h_fixed: float | None = None
    height: float | None = None
    char_length: float | None = None
    diameter: float | None = None
    length: float | None = None
    speed: float = 0.0
    tilt_deg: float | None = None
    facing: str | None = None
    natural: "Convection | None" = None
    pressure: float = P_ATM
    multiplier: float = 1.0
    where: str = "outside"
    re_transition: float = 5.0e5
    coefficient: float | None = None
    exponent: float | None = None

    # ------------------------------------------------------------------ validation
    def __post_init__(self):
        who = f"Convection({self.kind!r})"
        if self.kind not in _KINDS:
            raise InputError(
                f"Convection: unknown kind {self.kind!r}; allowed kinds are "
                f"{', '.join(_KINDS)}."
            )
        setf = lambda name, v: object.__setattr__(self, name, v)  # noqa: E731
        setf("pressure", _check_positive(who, "pressure", self.pressure, "Pa"))
        if not (1.0e3 <= self.pressure <= 1.0e7):
            raise InputError(
                f"{who}: pressure = {self.pressure!r} Pa is outside 1e3 .. 1e7 Pa; give the "
                "absolute air pressure in pascal [Pa] (101325 Pa at sea level)."
            )
        setf("multiplier", _check_positive(who, "multiplier", self.multiplier, "-"))
        if self.where not in _WHERE:
            raise InputError(
                f"{who}: where = {self.where!r} is not known; allowed: {', '.join(_WHERE)}."
            )
        k = self.kind
        if k == "fixed":
            try:
                hf = float(self.h_fixed)
            except (TypeError, ValueError):
                raise InputError(
                    f"{who}: h = {self.h_fixed!r} is not a number; give the film "
                    "coefficient in [W/m2/K], >= 0."
                ) from None
            if not math.isfinite(hf) or hf < 0.0:
                raise InputError(
                    f"{who}: h = {self.h_fixed!r} W/m2/K is not allowed; the film "
                    "coefficient must be a finite number >= 0 [W/m2/K]."
                )
            setf("h_fixed", hf)
        if k == "power_law":
            a, n = _check_power_law(who, self.coefficient, self.exponent)
            setf("coefficient", a)
            setf("exponent", n)
        elif self.coefficient is not None or self.exponent is not None:
            raise InputError(
                f"{who}: coefficient and exponent belong to the kind 'power_law' only; "
                f"leave them out for {k!r}."
            )
        if k in ("vertical_plate", "vertical_cylinder", "tilted_plate"):
            setf("height", _check_positive(who, "height", self.height, "m"))
        if k in ("horizontal_plate", "tilted_plate"):
            setf("char_length", _check_positive(who, "char_length", self.char_length, "m"))
        if k in ("horizontal_cylinder", "vertical_cylinder", "wind_cylinder"):
            setf("diameter", _check_positive(who, "diameter", self.diameter, "m"))
        if k == "wind_plate":
            setf("length", _check_positive(who, "length", self.length, "m"))
        if k == "horizontal_plate" and self.facing not in _FACINGS:
            raise InputError(
                f"{who}: facing = {self.facing!r} is not a known orientation; a horizontal "
                "plate faces 'up' (its outward normal points up) or 'down'."
            )
        if k == "tilted_plate":
            try:
                t = float(self.tilt_deg)
            except (TypeError, ValueError):
                t = float("nan")
            if not math.isfinite(t) or t < 0.0 or t > 180.0:
                raise InputError(
                    f"{who}: tilt_deg = {self.tilt_deg!r} is not allowed; give the angle "
                    "between the face's outward normal and the upward vertical, 0 .. 180 "
                    "[deg] (0 = horizontal facing up, 90 = vertical, 180 = facing down)."
                )
            setf("tilt_deg", t)
        if k in _FORCED_KINDS:
            try:
                v = float(self.speed)
            except (TypeError, ValueError):
                v = float("nan")
            if not math.isfinite(v) or v < 0.0:
                raise InputError(
                    f"{who}: wind speed = {self.speed!r} m/s is not allowed; the speed must "
                    "be a finite number >= 0 [m/s]."
                )
            if v == 0.0 and self.natural is None and k == "wind_plate":
                raise InputError(
                    f"{who}: wind speed is 0 m/s and no natural part is given, so the face "
                    "would get h = 0; give a speed > 0 [m/s], add with_natural=..., or "
                    "use a natural-convection constructor."
                )
            setf("speed", v)
            try:
                rc = float(self.re_transition)
            except (TypeError, ValueError):
                rc = float("nan")
            if not math.isfinite(rc) or rc < 0.0 or rc > 1.0e7:
                raise InputError(
                    f"{who}: re_transition = {self.re_transition!r} is not allowed; give the "
                    "transition Reynolds number, 0 .. 1e7 [-] (5e5 usual, 0 = turbulent "
                    "from the leading edge)."
                )
            setf("re_transition", rc)
            if self.natural is not None:
                if not isinstance(self.natural, Convection) or self.natural.kind not in _NATURAL_PART_KINDS:
                    raise InputError(
                        f"{who}: the natural part must be a natural-convection Convection "
                        f"(one of {', '.join(_NATURAL_PART_KINDS)}), got {self.natural!r}."
                    )
                if self.natural.pressure != self.pressure:
                    setf("natural", dataclasses.replace(self.natural, pressure=self.pressure))
        elif self.natural is not None:
            raise InputError(
                f"{who}: a natural part (with_natural) only combines with the wind kinds "
                f"{', '.join(_FORCED_KINDS)}."
            )

    # ------------------------------------------------------------------ constructors
    @classmethod
    def power_law(cls, coefficient, exponent, *, multiplier=1.0, where="outside"):
        """Power-law film coefficient ``h = a |Ts - Tf|^n``.

        A simplified natural-convection form (McAdams 1954; Holman, Heat Transfer, table
        7-2), or the loss law fitted to a cooling log.  No air properties are used, so the
        air pressure has no effect.

        Parameters
        ----------
        coefficient : float
            Power-law coefficient a [W/(m2 K^(1+n))], > 0 (e.g. 1.31 for turbulent natural
            convection of air with n = 1/3).
        exponent : float
            Exponent n [-], 0 <= n <= 1 (:data:`EXPONENT_RANGE`): 1/4 laminar, 1/3
            turbulent natural convection; 0 is a constant h = a.
        multiplier : float, optional
            Factor on h [-].
        where : str, optional
            ``"outside"`` or ``"chamber"``.

        Returns
        -------
        Convection
        """
        return cls("power_law", coefficient=coefficient, exponent=exponent,
                   multiplier=multiplier, where=where)

    @classmethod
    def fixed(cls, h, *, where="outside"):
        """Given film coefficient.

        Parameters
        ----------
        h : float
            Film coefficient [W/m2/K], >= 0.
        where : str, optional
            ``"outside"`` or ``"chamber"``.

        Returns
        -------
        Convection
        """
        return cls("fixed", h_fixed=h, where=where)

    @classmethod
    def natural_vertical(cls, height, *, pressure=None, altitude=None, multiplier=1.0, where="outside"):
        """Natural convection on a vertical plate (Churchill-Chu 1975).

        Parameters
        ----------
        height : float
            Plate height [m].
        pressure : float, optional
            Air pressure [Pa] (default 101325 Pa).
        altitude : float, optional
            Site altitude [m]; sets the pressure from the standard atmosphere.
        multiplier : float, optional
            Factor on h [-].
        where : str, optional
            ``"outside"`` or ``"chamber"``.

        Returns
        -------
        Convection
        """
        p = _resolve_pressure(pressure, altitude, "Convection.natural_vertical")
        return cls("vertical_plate", height=height, pressure=p, multiplier=multiplier, where=where)

    @classmethod
    def natural_horizontal(
        cls, char_length, facing="up", *, pressure=None, altitude=None, multiplier=1.0, where="outside"
    ):
        """Natural convection on a horizontal plate; hot/cold side decided at run time.

        Parameters
        ----------
        char_length : float
            Characteristic length A/P (area over perimeter) [m].
        facing : {"up", "down"}
            Direction of the face's outward normal.
        pressure, altitude, multiplier, where
            As in :meth:`natural_vertical`.

        Returns
        -------
        Convection
        """
        p = _resolve_pressure(pressure, altitude, "Convection.natural_horizontal")
        return cls(
            "horizontal_plate", char_length=char_length, facing=facing, pressure=p,
            multiplier=multiplier, where=where,
        )

    @classmethod
    def natural_tilted(
        cls, height, tilt_deg, *, char_length=None, pressure=None, altitude=None, multiplier=1.0,
        where="outside",
    ):
        """Natural convection on a tilted plate.

        Parameters
        ----------
        height : float
            Slant length of the plate, measured up the slope [m].
        tilt_deg : float
            Angle between the face's outward normal and the upward vertical [deg]:
            0 = horizontal facing up, 90 = vertical, 180 = horizontal facing down.
        char_length : float, optional
            A/P for the horizontal-plate branch [m]; default ``height / 2`` (a plate much
            wider than long).
        pressure, altitude, multiplier, where
            As in :meth:`natural_vertical`.

        Returns
        -------
        Convection
        """
        p = _resolve_pressure(pressure, altitude, "Convection.natural_tilted")
        if char_length is None:
            try:
                char_length = 0.5 * float(height)
            except (TypeError, ValueError):
                char_length = height
        return cls(
            "tilted_plate", height=height, tilt_deg=tilt_deg, char_length=char_length,
            pressure=p, multiplier=multiplier, where=where,
        )

    @classmethod
    def horizontal_cylinder(cls, diameter, *, pressure=None, altitude=None, multiplier=1.0, where="outside"):
        """Natural convection around a horizontal cylinder (Churchill-Chu 1975).

        Parameters
        ----------
        diameter : float
            Outside diameter [m].
        pressure, altitude, multiplier, where
            As in :meth:`natural_vertical`.

        Returns
        -------
        Convection
        """
        p = _resolve_pressure(pressure, altitude, "Convection.horizontal_cylinder")
        return cls("horizontal_cylinder", diameter=diameter, pressure=p, multiplier=multiplier, where=where)

    @classmethod
    def vertical_cylinder(cls, height, diameter, *, pressure=None, altitude=None, multiplier=1.0, where="outside"):
        """Natural convection on a vertical cylinder (plate value x Popiel curvature factor).

        Parameters
        ----------
        height : float
            Cylinder height [m].
        diameter : float
            Outside diameter [m].
        pressure, altitude, multiplier, where
            As in :meth:`natural_vertical`.

        Returns
        -------
        Convection
        """
        p = _resolve_pressure(pressure, altitude, "Convection.vertical_cylinder")
        return cls(
            "vertical_cylinder", height=height, diameter=diameter, pressure=p,
            multiplier=multiplier, where=where,
        )

    @classmethod
    def wind_plate(
        cls, length, speed, *, with_natural=False, re_transition=5.0e5, pressure=None, altitude=None,
        multiplier=1.0,
    ):
        """Forced convection on a flat plate in parallel wind, optionally mixed.

        Parameters
        ----------
        length : float
            Plate length along the wind [m].
        speed : float
            Wind speed [m/s], >= 0.
        with_natural : bool or Convection, optional
            False: forced only.  True: combined with natural convection of a vertical
            plate of height ``length``.  A natural-convection :class:`Convection`: combined
            with that one.  Combination ``h = (h_N^3 + h_F^3)^(1/3)``.
        re_transition : float, optional
            Transition Reynolds number [-]; 5e5 usual, 0 = tripped boundary layer.
        pressure, altitude, multiplier
            As in :meth:`natural_vertical`.

        Returns
        -------
        Convection
        """
        p = _resolve_pressure(pressure, altitude, "Convection.wind_plate")
        nat = cls._natural_part(with_natural, lambda: cls.natural_vertical(length, pressure=p))
        return cls(
            "wind_plate", length=length, speed=speed, natural=nat, re_transition=re_transition,
            pressure=p, multiplier=multiplier,
        )

    @classmethod
    def wind_cylinder(cls, diameter, speed, *, with_natural=False, pressure=None, altitude=None, multiplier=1.0):
        """Forced convection on a cylinder in cross-flow (Churchill-Bernstein 1977).

        Parameters
        ----------
        diameter : float
            Outside diameter [m].
        speed : float
            Wind speed normal to the axis [m/s], >= 0.
        with_natural : bool or Convection, optional
            False: forced only.  True: combined with natural convection of a horizontal
            cylinder of the same diameter.  A natural-convection :class:`Convection`:
            combined with that one.
        pressure, altitude, multiplier
            As in :meth:`natural_vertical`.

        Returns
        -------
        Convection
        """
        p = _resolve_pressure(pressure, altitude, "Convection.wind_cylinder")
        nat = cls._natural_part(with_natural, lambda: cls.horizontal_cylinder(diameter, pressure=p))
        return cls("wind_cylinder", diameter=diameter, speed=speed, natural=nat, pressure=p, multiplier=multiplier)

    @classmethod
    def chamber(cls, face="wall", size=None, *, h=None, pressure=None, altitude=None, multiplier=1.0):
        """Film on the inside face of a heated chamber (oven, furnace, kiln).

        Either a given coefficient (``h``, e.g. a fan-stirred oven) or natural
        convection for the face's orientation, with the chamber air temperature as Tf.

        Parameters
        ----------
        face : {"wall", "ceiling", "floor"}
            Inside face: a side wall (vertical, ``size`` = height), the ceiling (looks
            down, ``size`` = A/P) or the floor (looks up, ``size`` = A/P).
        size : float, optional
            Height [m] (wall) or A/P [m] (ceiling, floor); required unless ``h`` is given.
        h : float, optional
            Given film coefficient [W/m2/K].
        pressure, altitude, multiplier
            As in :meth:`natural_vertical`.

        Returns
        -------
        Convection
        """
        faces = ("wall", "ceiling", "floor")
        if face not in faces:
            raise InputError(
                f"Convection.chamber: face = {face!r} is not a known orientation; allowed: "
                f"{', '.join(faces)}."
            )
        if h is not None:
            return cls("fixed", h_fixed=h, where="chamber")
        if size is None:
            raise InputError(
                "Convection.chamber: give either the film coefficient h [W/m2/K] or the size "
                "of the face [m] (height of a wall, A/P of ceiling or floor)."
            )
        if face == "wall":
            return cls.natural_vertical(size, pressure=pressure, altitude=altitude, multiplier=multiplier,
                                        where="chamber")
        return cls.natural_horizontal(
            size, "down" if face == "ceiling" else "up", pressure=pressure, altitude=altitude,
            multiplier=multiplier, where="chamber",
        )

    @classmethod
    def _natural_part(cls, with_natural, default):
        if with_natural is False or with_natural is None:
            return None
        if with_natural is True:
            return default()
        if isinstance(with_natural, Convection):
            return with_natural
        raise InputError(
            f"with_natural = {with_natural!r} is not allowed; give False, True or a "
            "natural-convection Convection."
        )

    # ------------------------------------------------------------------ kernel interface
    @cached_property
    def par(self):
        """Cached read-only parameter vector (see :meth:`to_par`)."""
        a = self.to_par()
        a.setflags(write=False)
        return a

    def to_par(self):
        """Parameter vector for :func:`h_conv` (layout in the module docstring).

        Returns
        -------
        numpy.ndarray
            float64 array of length :data:`PAR_LEN`.
        """
        par = np.zeros(PAR_LEN)
        par[P_MULT] = self.multiplier
        par[P_PRESS] = self.pressure
        par[P_GRAV] = G_STD
        par[P_WHERE] = 1.0 if self.where == "chamber" else 0.0
        if self.kind == "fixed":
            par[P_MODE] = MODE_FIXED
            par[P_HFIX] = self.h_fixed
            return par
        if self.kind == "power_law":
            par[P_MODE] = MODE_POWER
            par[P_PLAW_A] = self.coefficient
            par[P_PLAW_N] = self.exponent
            return par
        nat = self if self.kind in _NATURAL_KINDS else self.natural
        if nat is not None and nat.kind == "power_law":
            par[P_NAT] = NAT_POWER
            par[P_PLAW_A] = nat.coefficient
            par[P_PLAW_N] = nat.exponent
        elif nat is not None:
            par[P_NAT] = _NAT_CODE[nat.kind]
            if nat.height is not None:
                par[P_HEIGHT] = nat.height
            if nat.char_length is not None:
                par[P_CHAR] = nat.char_length
            if nat.kind in ("horizontal_cylinder", "vertical_cylinder"):
                par[P_DIAM] = nat.diameter
            if nat.kind == "horizontal_plate":
                par[P_FACING] = 1.0 if nat.facing == "up" else -1.0
            if nat.kind == "tilted_plate":
                theta_v = math.radians(abs(90.0 - nat.tilt_deg))
                par[P_COSV] = math.cos(theta_v)
                par[P_SINV] = math.sin(theta_v)
                par[P_FACING] = 0.0 if nat.tilt_deg == 90.0 else (1.0 if nat.tilt_deg < 90.0 else -1.0)
        if self.kind in _FORCED_KINDS:
            par[P_FORCED] = FORCED_PLATE if self.kind == "wind_plate" else FORCED_CYL
            par[P_FLEN] = self.length if self.kind == "wind_plate" else self.diameter
            par[P_SPEED] = self.speed
            rc = self.re_transition
            par[P_RETR] = rc
            par[P_AMIX] = 0.037 * rc**0.8 - 0.664 * rc**0.5
            par[P_MODE] = MODE_MIXED if nat is not None else MODE_FORCED
        else:
            par[P_MODE] = MODE_NATURAL
        return par

    def h(self, Ts, Tf):
        """Film coefficient at the given temperatures (Python convenience).

        Parameters
        ----------
        Ts : float or array_like
            Surface temperature [K].
        Tf : float or array_like
            Fluid temperature [K].

        Returns
        -------
        float or numpy.ndarray
            Film coefficient [W/m2/K].
        """
        from ..solver import native  # compiled ahead of time when built
        par = np.array(self.par, dtype=float)
        if np.ndim(Ts) == 0 and np.ndim(Tf) == 0:
            return float(native.h_conv(par, float(Ts), float(Tf)))
        ts, tf = np.broadcast_arrays(np.asarray(Ts, float), np.asarray(Tf, float))
        shape = ts.shape
        out = native.h_conv_array(par, np.array(ts, dtype=float).ravel(),
                                  np.array(tf, dtype=float).ravel())
        return out.reshape(shape)

    # ------------------------------------------------------------------ diagnostics
    def validity_warnings(self, Ts, Tf):
        """Plain-language notes where the correlation is used outside its data.

        Parameters
        ----------
        Ts : float
            Surface temperature [K].
        Tf : float
            Fluid temperature [K].

        Returns
        -------
        list of str
            One message per issue (empty if all is within range).
        """
        out = []
        if self.kind == "fixed":
            return out  # given by the user: no correlation range to leave
        if self.kind == "power_law":
            h = float(self.h(Ts, Tf))
            lo, hi = H_FREE_GAS_RANGE
            if abs(Ts - Tf) > 0.0 and not (lo <= h <= hi):
                out.append(
                    f"the power law gives h = {h:.3g} W/m2/K at |Ts - Tf| = {abs(Ts - Tf):.3g} "
                    f"K, outside {lo:g} .. {hi:g} W/m2/K, the usual range of natural convection "
                    "in gases (Incropera et al., Fundamentals of Heat and Mass Transfer, table "
                    "1.1); check the coefficient and its unit (a liquid or a fitted combined "
                    "film may lie outside)."
                )
            return out
        from ..solver import native
        ra, gr, re, pr, tfilm = native.dimensionless_numbers(np.array(self.par, dtype=float),
                                                             float(Ts), float(Tf))
        lo, hi = T_PROPS_VALID
        if not (lo <= tfilm <= hi):
            out.append(
                f"film temperature {tfilm:.0f} K is outside the {lo:.0f}-{hi:.0f} K range of "
                "the air-property formulas (values are extrapolated)."
            )
        nat = self if self.kind in _NATURAL_KINDS else self.natural
        if nat is not None:
            out.extend(self._natural_warnings(nat, ra, gr, pr, Ts, Tf))
        if self.kind == "wind_plate":
            if re > 1.0e8:
                out.append(
                    f"Reynolds number Re_L = {re:.3g} is above 1e8, the upper end of the "
                    "mixed-boundary-layer flat-plate correlation (5e5 < Re_L <= 1e8)."
                )
            if not (0.6 <= pr <= 60.0):
                out.append(f"Prandtl number {pr:.3g} is outside 0.6..60 of the flat-plate correlation.")
        if self.kind == "wind_cylinder":
            if re * pr < 0.2:
                out.append(
                    f"Re_D Pr = {re * pr:.3g} is below 0.2, the lower limit of the "
                    f"Churchill-Bernstein correlation (Re_D = {re:.3g})."
                )
            if re > 1.0e7:
                out.append(f"Reynolds number Re_D = {re:.3g} is above 1e7, beyond the Churchill-Bernstein data.")
        return out

    @staticmethod
    def _natural_warnings(nat, ra, gr, pr, Ts, Tf):
        out = []
        k = nat.kind
        hot = Ts > Tf
        if k == "vertical_plate" or k == "vertical_cylinder":
            if ra > 1.0e12:
                out.append(
                    f"Rayleigh number Ra_L = {ra:.3g} is above 1e12, the upper end of the "
                    "Churchill-Chu vertical-plate correlation (0.1 <= Ra_L <= 1e12)."
                )
            elif 0.0 < ra < 0.1:
                out.append(
                    f"Rayleigh number Ra_L = {ra:.3g} is below 0.1, the lower end of the "
                    "Churchill-Chu vertical-plate correlation (0.1 <= Ra_L <= 1e12)."
                )
        if k == "vertical_cylinder" and gr > 0.0:
            lim = 35.0 * nat.height / gr**0.25
            if nat.diameter < lim:
                f = float(popiel_churchill_factor(max(ra, 1.0e4) / pr, pr, nat.height, nat.diameter))
                out.append(
                    f"thin vertical cylinder: D = {nat.diameter:.4g} m < 35 L / Gr_L^(1/4) = "
                    f"{lim:.4g} m (Gr_L = {gr:.3g}), so the plate value is multiplied by the "
                    f"Popiel-Churchill curvature factor {f:.3g}."
                )
            if ra < 1.0e4 or ra > 1.0e9:
                out.append(
                    f"Rayleigh number Ra_L = {ra:.3g} is outside 1e4 .. 1e9, the range of the "
                    "Popiel-Churchill vertical-cylinder data."
                )
        if k == "horizontal_plate":
            upper = (nat.facing == "up") == hot
            out.extend(Convection._hplate_warnings(upper, ra))
        if k == "tilted_plate":
            theta = abs(90.0 - nat.tilt_deg)
            if theta > 60.0:
                up = nat.tilt_deg < 90.0
                upper = up == hot
                out.append(
                    f"tilted plate {theta:.0f} deg from vertical (> 60 deg): the horizontal-plate "
                    "correlation is used with g sin(theta)."
                )
                out.extend(Convection._hplate_warnings(upper, ra))
            elif ra > 1.0e12:
                out.append(
                    f"Rayleigh number Ra_L cos(theta) = {ra:.3g} is above 1e12, the upper end of "
                    "the Churchill-Chu vertical-plate correlation."
                )
        if k == "horizontal_cylinder" and ra > 1.0e12:
            out.append(
                f"Rayleigh number Ra_D = {ra:.3g} is above 1e12, the upper end of the "
                "Churchill-Chu horizontal-cylinder correlation (Ra_D <= 1e12)."
            )
        return out

    @staticmethod
    def _hplate_warnings(upper, ra):
        if upper:
            lo, hi, name = 1.0e4, 1.0e11, "upper surface of a hot (or lower surface of a cold) plate"
        else:
            lo, hi, name = 1.0e5, 1.0e10, "lower surface of a hot (or upper surface of a cold) plate"
        if ra < lo or ra > hi:
            return [
                f"Rayleigh number Ra = {ra:.3g} (on A/P) is outside 1e{round(math.log10(lo))} .. "
                f"1e{round(math.log10(hi))}, the "
                f"range of the horizontal-plate correlation for the {name}."
            ]
        return []


def combined_h(conv, eps, Ts, Tf, Trad=None):
    """Sum of the convective and linearised radiative film coefficients.

    Parameters
    ----------
    conv : Convection
        Convective condition of the face.
    eps : float
        Grey emissivity of the face [-].
    Ts : float
        Surface temperature [K].
    Tf : float
        Air temperature [K].
    Trad : float, optional
        Temperature of the radiant surroundings [K]; default ``Tf``.

    Returns
    -------
    float
        ``h_conv + h_rad`` [W/m2/K].  When ``Trad == Tf`` this is the combined film
        coefficient on Ts - Tf; otherwise each part acts on its own difference
        (Ts - Tf and Ts - Trad).
    """
    if Trad is None:
        Trad = Tf
    return conv.h(Ts, Tf) + float(h_radiative(eps, Ts, Trad))
