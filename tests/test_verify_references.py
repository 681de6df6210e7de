"""Checks of fdwall's physics against references outside the project.

Every check below compares a full fdwall run (Case -> run / solve_steady) with a result
derived here from the governing equations or quoted from the literature; nothing is taken
from tests/reference.py or from fdwall itself.  The situations were chosen so as not to
repeat the existing verification tests (convective cooling series, constant-flux and step
semi-infinite solids, steady composite networks, steady radiating slab, lumped enclosure
warm-up, duty bookkeeping):

* periodic surface temperature on a thick solid: the exact start-up (Duhamel) solution and
  the periodic state exp(-x/d) sin(wt - x/d) (Carslaw & Jaeger §2.5-§2.6);
* periodic surface temperature on a finite slab with an adiabatic back (Carslaw & Jaeger
  §3.6, complex-amplitude method);
* semi-infinite solid with surface convection (Carslaw & Jaeger §2.7; Incropera eq. 5.60);
* two semi-infinite solids put in contact (Carslaw & Jaeger §2.15; Incropera eq. 5.66);
* a conductivity and heat capacity both linear in T (Kirchhoff transform, Carslaw & Jaeger
  §1.7) under a step of surface temperature;
* surface temperature rising linearly in time (Carslaw & Jaeger §2.5, i^2 erfc solution);
* a flux pulse switched off by a schedule step (Carslaw & Jaeger §2.9 and superposition);
* the time a given depth reaches a threshold after a surface step, located by fdwall's Event
  and by brentq on the erfc solution (Carslaw & Jaeger §2.4);
* the region outside a sphere whose surface is held (Carslaw & Jaeger §9.10);
* a thin conductive plate cooling by convection and grey radiation to a fluid whose
  temperature follows a schedule: the lumped ODE integrated with scipy's solve_ivp;
* a heat-traced pipe at steady state with a self-limiting element (resistance rising with
  temperature) embedded between the pipe and its lagging: the resistance network and
  P = P0 / (1 + alpha (T - T_ref)) solved with brentq;
* a steady face whose grey emissivity rises with its temperature: surface balance by brentq.

Books (section/equation numbers quoted from memory):
  CJ  -- H. S. Carslaw, J. C. Jaeger, Conduction of Heat in Solids, 2nd ed., Oxford 1959.
  INC -- F. P. Incropera, D. P. DeWitt, T. L. Bergman, A. S. Lavine, Fundamentals of Heat and
         Mass Transfer, 6th ed., Wiley 2007.
All materials are invented demo solids with round numbers (not product data).
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad, solve_ivp
from scipy.optimize import brentq
from scipy.special import erf, erfc, erfcx, erfinv

from fdwall.materials import Constant, Material, Table
from fdwall.model import Case, Event, Face, Heater, Layer, RunSettings, Wall
from fdwall.schedule import Schedule
from fdwall.solver import run, solve_steady

SIGMA = 5.670374419e-8      # Stefan-Boltzmann constant [W/m2/K4] (CODATA 2018, exact SI value)


def _solid(name, k, rho_cp, rho=1000.0):
    """Demo solid with constant k [W/m/K] and volumetric heat capacity rho_cp [J/m3/K]."""
    return Material(name, k=Constant(k), cp=Constant(rho_cp / rho), rho=rho)


# demo reference solid, alpha = 1e-6 m2/s (the order of a dense refractory)
K1, C1 = 1.0, 1.0e6
A1 = K1 / C1
SOLID = _solid("demo-refractory", K1, C1)


def _row(res, t):
    """Index of the stored output at time t [s] (outputs are placed on a regular grid)."""
    k = int(np.argmin(np.abs(res.times - t)))
    assert abs(res.times[k] - t) < 1e-6 * max(t, 1.0)
    return k


# ------------------------------------------------------------------ 1. periodic, thick solid
PERIOD = 3600.0                                  # [s]
OMEGA = 2.0 * math.pi / PERIOD                   # [1/s]
DEPTH = math.sqrt(2.0 * A1 / OMEGA)              # damping depth d = sqrt(2 alpha/omega) [m]
T_MEAN, AMP = 400.0, 50.0                        # [K]
N_PERIODS = 8
KNOTS = 360                                      # schedule knots per period


def _sine_schedule(n_periods):
    """T_s = T_m + A sin(wt) as a piecewise-linear schedule with 360 knots a period: the
    chord error A (w dt)^2/8 = 4e-5 A (interpolation bound, any numerical-analysis text)."""
    t = np.linspace(0.0, n_periods * PERIOD, n_periods * KNOTS + 1)
    return Schedule(t, T_MEAN + AMP * np.sin(OMEGA * t))


@pytest.fixture(scope="module")
def periodic_thick():
    # 0.1 m skin of 100 cells (d/30 each) on a 0.9 m core: the start-up heat reaches
    # 2 sqrt(alpha t) = 0.34 m by the end, so the back face at 1 m stays out of reach
    # (with a 0.3 m slab its reflection showed up at 1e-3 A at x = 2d).
    wall = Wall((Layer(SOLID, 0.1, cells=100), Layer(SOLID, 0.9, cells=60)))
    case = Case(run=RunSettings(duration=N_PERIODS * PERIOD, start_temperature=T_MEAN, tolerance=1e-3,
                                output_every=PERIOD / 120),
                wall=wall, inner=Face(fixed_temperature=_sine_schedule(N_PERIODS)),
                outer=Face.adiabatic(), name="periodic thick")
    return run(case)


def _duhamel_sine(x, t):
    """Start-up response to T_s - T_m = A sin(wt), from rest, of a semi-infinite solid.

    Duhamel's theorem with the step response erfc(x/(2 sqrt(alpha s))) (CJ §2.5), written
    with u = x/(2 sqrt(alpha s)):  theta = (2A/sqrt(pi)) int_{u0}^inf sin(w(t - x^2/(4 alpha
    u^2))) exp(-u^2) du,  u0 = x/(2 sqrt(alpha t)).  Integrated with scipy quad.
    """
    u0 = x / (2.0 * math.sqrt(A1 * t))
    f = lambda u: math.sin(OMEGA * (t - x * x / (4.0 * A1 * u * u))) * math.exp(-u * u)
    v, _ = quad(f, u0, u0 + 8.0, limit=400, epsabs=1e-12, epsrel=1e-12)
    return 2.0 * AMP / math.sqrt(math.pi) * v


def _last_period(res):
    sel = res.times >= (N_PERIODS - 1) * PERIOD - 1e-6
    return res.times[sel][:-1], res.wall_T()[sel][:-1]      # one full period, end dropped


def test_periodic_surface_start_up_matches_duhamel(periodic_thick):
    """Whole time series of the last (8th) period at x = d/2, d, 2d against the exact
    start-up solution (CJ §2.5 Duhamel integral).  Measured while writing: 5e-5, 2e-5,
    1.5e-4 of A (mesh error; falls to 1.5e-5 at d/2 with 200 skin cells and tolerance 1e-4).
    Tolerance 5e-4 A = 0.025 K: a 1 % error in alpha moves x = d by ~2e-3 A."""
    res = periodic_thick
    x = res.x()
    tt, TT = _last_period(res)
    for depth in (0.5, 1.0, 2.0):
        i = int(np.argmin(np.abs(x - depth * DEPTH)))
        exact = np.array([_duhamel_sine(x[i], t) for t in tt])
        err = np.max(np.abs(TT[:, i] - T_MEAN - exact)) / AMP
        assert err < 5e-4, f"x = {x[i] / DEPTH:.2f} d: deviation {err:.2e} A"


def test_periodic_surface_amplitude_decay_and_phase_lag(periodic_thick):
    """Periodic state of a semi-infinite solid under T_m + A sin(wt) (CJ §2.6, eq. 2.6(6)):
    T - T_m = A exp(-x/d) sin(wt - x/d), d = sqrt(2 alpha/w).  Amplitude and phase by
    Fourier projection over the 8th period at x = d/2, d, 2d.

    The start-up transient has not quite died out (it decays like t^-3/2): computed from
    the Duhamel solution it is still 2.6e-3 A at x = 2d in the 8th period, and measured the
    projection is off by 1.5e-3 (relative amplitude) and 1.5e-3 rad at 2d, < 2e-4 above d.
    Tolerance 4e-3 on both: a 1 % error in alpha gives 1e-2 at x = 2d."""
    res = periodic_thick
    x = res.x()
    tt, TT = _last_period(res)
    a = 2.0 * np.mean((TT - T_MEAN) * np.sin(OMEGA * tt)[:, None], axis=0)
    b = 2.0 * np.mean((TT - T_MEAN) * np.cos(OMEGA * tt)[:, None], axis=0)
    amp, lag = np.hypot(a, b), np.arctan2(-b, a)           # T - T_m = amp sin(wt - lag)
    for depth in (0.5, 1.0, 2.0):
        i = int(np.argmin(np.abs(x - depth * DEPTH)))
        xi = x[i] / DEPTH
        assert amp[i] / AMP / math.exp(-xi) - 1.0 == pytest.approx(0.0, abs=4e-3), f"x={xi:.2f}d"
        assert lag[i] == pytest.approx(xi, abs=4e-3), f"x={xi:.2f}d"
    # the surface itself follows the schedule (first Fourier coefficient, chord error 4e-5)
    assert amp[0] == pytest.approx(AMP, rel=2e-4) and lag[0] == pytest.approx(0.0, abs=2e-4)
    assert res.relative_residual < 1e-6


# ------------------------------------------------------- 2. periodic, finite slab (CJ §3.6)
def test_periodic_surface_finite_slab_adiabatic_back():
    """Slab 0 < x < L = d, T_m + A sin(wt) at x = 0, adiabatic at x = L.  Periodic state by
    the complex-amplitude method (CJ §3.6): theta = Im[A e^{iwt} cosh(m(L-x))/cosh(mL)],
    m = (1+i)/d (derived here from theta_t = alpha theta_xx with theta_x(L) = 0).

    The slowest transient decays with exp(-alpha pi^2 t/(4 L^2)), time constant 0.13 period,
    so after 4 periods it is e^-30 of A.  Measured while writing (30 cells): amplitude
    within 2e-4 (rel), phase within 1.3e-4 rad, time series within 1.7e-4 A at the middle
    and the back face.  Tolerance 1e-3: at the back face the amplitude is 0.77 A, twice the
    semi-infinite exp(-1); a 1 % alpha error moves it by ~3e-3."""
    L = DEPTH
    n = 4
    case = Case(run=RunSettings(duration=n * PERIOD, start_temperature=T_MEAN, tolerance=1e-3,
                                output_every=PERIOD / 120),
                wall=Wall((Layer(SOLID, L, cells=30),)),
                inner=Face(fixed_temperature=_sine_schedule(n)), outer=Face.adiabatic())
    res = run(case)
    sel = res.times >= (n - 1) * PERIOD - 1e-6
    tt, TT = res.times[sel][:-1], res.wall_T()[sel][:-1]
    x = res.x()
    m = (1.0 + 1.0j) / DEPTH
    for i in (x.size // 2, x.size - 1):
        ratio = np.cosh(m * (L - x[i])) / np.cosh(m * L)         # complex amplitude / A
        exact = AMP * np.imag(ratio * np.exp(1j * OMEGA * tt))
        a = 2.0 * np.mean((TT[:, i] - T_MEAN) * np.sin(OMEGA * tt))
        b = 2.0 * np.mean((TT[:, i] - T_MEAN) * np.cos(OMEGA * tt))
        assert math.hypot(a, b) / AMP == pytest.approx(abs(ratio), rel=1e-3)
        assert math.atan2(-b, a) == pytest.approx(-np.angle(ratio), abs=1e-3)
        assert np.max(np.abs(TT[:, i] - T_MEAN - exact)) < 1e-3 * AMP
    assert abs(ratio) > 2.0 * math.exp(-1.0)       # the back face matters: not semi-infinite


# -------------------------------------------- 3. semi-infinite solid, surface convection
def test_semi_infinite_surface_convection():
    """Solid at T_i, fluid at T_inf with film h from t = 0 (CJ §2.7 eq. 2.7(1); INC eq. 5.60):
    (T - T_i)/(T_inf - T_i) = erfc(eta) - exp(hx/k + h^2 alpha t/k^2) erfc(eta + h sqrt(alpha
    t)/k), written with erfcx for round-off.  Heat taken in by time t: int h (T_inf - T_s) dt
    with scipy quad on the exact surface temperature.

    0.15 m slab, back face adiabatic: the image term there is erfc(4.7) ~ 1e-11 at 1000 s.
    Measured while writing: profile within 3.3e-4 of T_inf - T_i, heat within 1.3e-4.
    Tolerances 1e-3 and 1e-3 (the time is 0.1 ... 1.6 of k^2/(h^2 alpha), so a film error
    of 1 % moves T_s by ~ 4e-3)."""
    h, Ti, Tinf = 50.0, 300.0, 500.0
    times = (100.0, 400.0, 1000.0)
    wall = Wall((Layer(SOLID, 0.03, cells=90), Layer(SOLID, 0.12, cells=30)))
    case = Case(run=RunSettings(duration=times[-1], start_temperature=Ti, tolerance=1e-4,
                                output_every=50.0),
                wall=wall, inner=Face.exchange(Tinf, h), outer=Face.adiabatic())
    res = run(case)

    def theta(x, t):
        eta = x / (2.0 * math.sqrt(A1 * t))
        beta = h * math.sqrt(A1 * t) / K1
        return erfc(eta) - np.exp(-eta * eta) * erfcx(eta + beta)

    x = res.x()
    for t in times:
        k = _row(res, t)
        err = np.abs(res.wall_T()[k] - Ti - (Tinf - Ti) * theta(x, t)) / (Tinf - Ti)
        assert err.max() < 1e-3, f"t = {t}: {err.max():.2e}"
        # face temperature and Newton's law at the face (INC eq. 1.3a)
        Ts = Ti + (Tinf - Ti) * float(theta(0.0, t))
        assert res.face_T[k, 0] == pytest.approx(Ts, abs=1e-3 * (Tinf - Ti))
        Q, _ = quad(lambda s: h * (Tinf - Ti) * (1.0 - float(theta(0.0, s))), 0.0, t,
                    epsrel=1e-12, limit=200)
        assert res.face_energy[k, 0] == pytest.approx(Q, rel=1e-3), f"heat in by t = {t}"
    assert res.relative_residual < 1e-6


# ------------------------------------------------------- 4. two solids put in contact
def test_two_semi_infinite_solids_in_contact():
    """Solid A at 500 K and solid B at 300 K touch at t = 0 (CJ §2.15; INC eq. 5.66):
    the contact temperature is constant, T_c = (e_A T_A + e_B T_B)/(e_A + e_B) with the
    effusivities e = sqrt(k rho c), and each side follows an erf profile with its own
    alpha.  Heat passed from A to B by time t: 2 e_B (T_c - T_B) sqrt(t/pi) (CJ §2.4 applied
    to side B), compared with rho c int (T - T_B) dx over side B done here by hand
    (trapezoid rule on fdwall's node temperatures).

    The shared interface node starts at the mean of the two layers, so the first steps are
    off; measured while writing: T_c within 0.27 K (1.4e-3 of T_A - T_B) at 25 s, 0.05 K by
    600 s, halving with each halving of the interface cells (0.25 mm here); profiles within
    1e-3 of T_A - T_B, heat into B within 1e-3.  Tolerances: 2e-3 on profiles and T_c, 5e-3
    on the heat.  Weighting by k instead of e would put T_c 15 K off."""
    kA, cA, TA = 1.0, 1.0e6, 500.0
    kB, cB, TB = 0.2, 0.5e6, 300.0
    mA, mB = _solid("demo-block-A", kA, cA), _solid("demo-block-B", kB, cB)
    aA, aB = kA / cA, kB / cB
    eA, eB = math.sqrt(kA * cA), math.sqrt(kB * cB)
    Tc = (eA * TA + eB * TB) / (eA + eB)
    wall = Wall((Layer(mA, 0.08, cells=20, start_temperature=TA), Layer(mA, 0.02, cells=80, start_temperature=TA),
                 Layer(mB, 0.02, cells=80, start_temperature=TB), Layer(mB, 0.08, cells=20, start_temperature=TB)))
    times = (150.0, 600.0)
    case = Case(run=RunSettings(duration=times[-1], start_temperature=400.0, tolerance=1e-4,
                                output_every=25.0),
                wall=wall, inner=Face.adiabatic(), outer=Face.adiabatic())
    res = run(case)
    x = res.x() - 0.1                                # signed distance from the contact [m]
    iface = res.interface_T()[:, 1]                   # A | B interface
    late = res.times >= 25.0
    assert np.max(np.abs(iface[late] - Tc)) < 2e-3 * (TA - TB)
    for t in times:
        k = _row(res, t)
        T = res.wall_T()[k]
        ref = np.where(x < 0, Tc + (TA - Tc) * erf(-x / (2 * math.sqrt(aA * t))),
                       Tc + (TB - Tc) * erf(x / (2 * math.sqrt(aB * t))))
        assert np.max(np.abs(T - ref)) < 2e-3 * (TA - TB), f"profile at t = {t}"
        side = x >= 0
        Q_B = cB * np.trapezoid(T[side] - TB, x[side])
        assert Q_B == pytest.approx(2 * eB * (Tc - TB) * math.sqrt(t / math.pi), rel=5e-3)
    # the pair is insulated: nothing is stored or lost overall (first law)
    assert abs(res.stored[-1]) < 1e-6 * cA * (TA - TB) * 0.1


# --------------------------------------- 5. k and rho c linear in T (Kirchhoff transform)
def test_step_with_conductivity_and_capacity_linear_in_temperature():
    """k = k0 (1 + b theta) and rho c = C0 (1 + b theta), theta = T - T_i: alpha is constant,
    so the Kirchhoff variable U = int k dT / k0 = theta + b theta^2/2 obeys the linear
    diffusion equation exactly (CJ §1.7; from memory).  A surface step to T_s gives
    U = U_s erfc(x/(2 sqrt(alpha t))) (CJ §2.4), theta = (sqrt(1 + 2 b U) - 1)/b, and the heat
    stored per m2 = C0 int U dx = 2 C0 U_s sqrt(alpha t/pi).

    k and cp rise 1 -> 1.8 over the 400 K step.  Measured while writing: profile within
    6.4e-4 of T_s - T_i, stored heat within 2.5e-4.  Tolerances 2e-3 and 2e-3; evaluating k or cp at
    the wrong temperature (e.g. the initial one) is off by tens of percent."""
    k0, C0, b = 1.0, 1.0e6, 2.0e-3
    Ti, Ts = 300.0, 700.0
    Tg = [200.0, 900.0]
    mat = Material("demo-linear-solid",
                   k=Table(Tg, [k0 * (1 + b * (T - Ti)) for T in Tg]),
                   cp=Table(Tg, [C0 / 1000.0 * (1 + b * (T - Ti)) for T in Tg]), rho=1000.0)
    alpha = k0 / C0
    times = (100.0, 400.0)
    wall = Wall((Layer(mat, 0.02, cells=120), Layer(mat, 0.08, cells=30)))
    case = Case(run=RunSettings(duration=times[-1], start_temperature=Ti, tolerance=1e-4,
                                output_every=20.0),
                wall=wall, inner=Face.fixed(Ts), outer=Face.adiabatic())
    res = run(case)
    Us = (Ts - Ti) + b * (Ts - Ti) ** 2 / 2
    x = res.x()
    for t in times:
        k = _row(res, t)
        U = Us * erfc(x / (2 * math.sqrt(alpha * t)))
        ref = Ti + (np.sqrt(1 + 2 * b * U) - 1) / b
        err = np.max(np.abs(res.wall_T()[k] - ref)) / (Ts - Ti)
        assert err < 2e-3, f"t = {t}: {err:.2e}"
        assert res.stored[k] == pytest.approx(2 * C0 * Us * math.sqrt(alpha * t / math.pi),
                                              rel=2e-3)
    # the constant-property answer would be far off: the check can tell
    lin = Ti + (Ts - Ti) * erfc(0.01 / (2 * math.sqrt(alpha * times[-1])))
    assert abs(lin - ref[np.argmin(np.abs(x - 0.01))]) > 10.0
    assert res.relative_residual < 1e-6


# ------------------------------------------------- 6. surface temperature rising linearly
def test_surface_temperature_ramp():
    """T_s = T_i + c t from t = 0 (CJ §2.5 eq. 2.5(4), n = 2): T - T_i = 4 c t i2erfc(eta),
    i2erfc(z) = ((1 + 2 z^2) erfc z - 2 z exp(-z^2)/sqrt(pi))/4, and the heat flow into the
    face q = 2 k c sqrt(t/(pi alpha)) (derivative of the above at x = 0, done by hand).

    Measured while writing: profile within 3.5e-4 of the surface rise, face flow within
    2.7e-4.
    Tolerances 1e-3 and 3e-3."""
    c, Ti, t_end = 0.2, 300.0, 1000.0                  # 0.2 K/s -> +200 K
    times = (250.0, 1000.0)
    wall = Wall((Layer(SOLID, 0.03, cells=90), Layer(SOLID, 0.12, cells=30)))
    case = Case(run=RunSettings(duration=t_end, start_temperature=Ti, tolerance=1e-4,
                                output_every=50.0, exact_outputs=True),
                wall=wall, inner=Face(fixed_temperature=Schedule([0.0, t_end], [Ti, Ti + c * t_end])),
                outer=Face.adiabatic())
    res = run(case)
    x = res.x()
    for t in times:
        k = _row(res, t)
        z = x / (2 * math.sqrt(A1 * t))
        i2 = ((1 + 2 * z * z) * erfc(z) - 2 * z * np.exp(-z * z) / math.sqrt(math.pi)) / 4
        err = np.max(np.abs(res.wall_T()[k] - Ti - 4 * c * t * i2)) / (c * t)
        assert err < 1e-3, f"t = {t}: {err:.2e}"
        q = 2 * K1 * c * math.sqrt(t / (math.pi * A1))
        assert res.face_flow[k, 0] == pytest.approx(q, rel=3e-3), f"t = {t}"


# ------------------------------------------------- 6b. flux pulse switched off by a step
def test_flux_pulse_switched_off():
    """Constant flux q into the face for 0 < t < t1, none after (a step in the flux schedule).
    Constant flux from rest (CJ §2.9 eq. 2.9(4)): T - T_i = (2 q/k) [sqrt(alpha t/pi)
    exp(-x^2/(4 alpha t)) - (x/2) erfc(x/(2 sqrt(alpha t)))] = f(x, t); switching off is the
    same solution with -q from t1 (superposition, linear problem): f(x, t) - f(x, t - t1).

    Measured while writing: within 1.9e-4 of the peak surface rise (39 K) at 150, 310, 400
    and 1200 s, falling to 5e-5 with twice the cells (second order).  Tolerance 1e-3 of the
    peak rise; the heat stored after switch-off must stay q t1 (first law, 1e-6)."""
    q, t1, Ti = 2000.0, 300.0, 300.0
    wall = Wall((Layer(SOLID, 0.04, cells=120), Layer(SOLID, 0.16, cells=40)))
    case = Case(run=RunSettings(duration=1200.0, start_temperature=Ti, tolerance=1e-4,
                                output_every=10.0),
                wall=wall, inner=Face(heat_flux=Schedule([0.0, t1, t1, 1200.0], [q, q, 0.0, 0.0])),
                outer=Face.adiabatic())
    res = run(case)

    def f(x, t):
        s = math.sqrt(A1 * t)
        z = x / (2 * s)
        return 2 * q / K1 * (s * np.exp(-z * z) / math.sqrt(math.pi) - x / 2 * erfc(z))

    x = res.x()
    peak = float(f(0.0, t1))
    for t in (150.0, 310.0, 400.0, 1200.0):
        k = _row(res, t)
        ref = Ti + f(x, t) - (f(x, t - t1) if t > t1 else 0.0)
        err = np.max(np.abs(res.wall_T()[k] - ref)) / peak
        assert err < 1e-3, f"t = {t}: {err:.2e}"
        assert res.stored[k] == pytest.approx(q * min(t, t1), rel=1e-6)
    # the surface has fallen to about a quarter of its peak rise by 1200 s: the step was seen
    assert res.face_T[-1, 0] - Ti < 0.35 * peak


# ---------------------------------------------------- 7. event timing after a surface step
def test_event_time_at_depth_after_surface_step():
    """A face stepped to T_s at t = 0: the time a depth x reaches T* solves
    erfc(x/(2 sqrt(alpha t))) = (T* - T_i)/(T_s - T_i) (CJ §2.4), found with brentq, against
    fdwall's Event at an interface node (x = 10 mm) and at a depth between nodes (25 mm).

    Measured while writing: crossing times within 3e-4 (relative).  Tolerance 2e-3 of the
    time (~0.2 s of ~110 s; a 1 % alpha error shifts it 1 %)."""
    Ti, Ts = 300.0, 500.0
    x1, x2 = 0.01, 0.025
    thresholds = {"x1 half": (x1, 400.0), "x1 quarter": (x1, 350.0), "x2 fifth": (x2, 340.0)}
    events = (Event(400.0, at="interface:1", name="x1 half"),
              Event(350.0, at="interface:1", name="x1 quarter"),
              Event(340.0, at="", depth=x2, name="x2 fifth"))
    wall = Wall((Layer(SOLID, x1, cells=60), Layer(SOLID, 0.03, cells=120),
                 Layer(SOLID, 0.16, cells=30)))
    case = Case(run=RunSettings(duration=3000.0, start_temperature=Ti, tolerance=1e-4, watch=events),
                wall=wall, inner=Face.fixed(Ts), outer=Face.adiabatic())
    res = run(case)
    for name, (x, Tstar) in thresholds.items():
        g = lambda t: Ti + (Ts - Ti) * erfc(x / (2 * math.sqrt(A1 * t))) - Tstar
        t_ref = brentq(g, 1.0, 3000.0, xtol=1e-10, rtol=1e-14)
        up, down = res.events[name]
        assert up == pytest.approx(t_ref, rel=2e-3), name
        assert math.isnan(down), name                   # heating only: no downward crossing
    # closed form of the half-rise time (erfc^-1(1/2) = erfinv(1/2)): the brentq set-up is right
    assert brentq(lambda t: erfc(x1 / (2 * math.sqrt(A1 * t))) - 0.5, 1.0, 3000.0) == \
        pytest.approx(x1 ** 2 / (4 * A1 * erfinv(0.5) ** 2), rel=1e-9)


# ------------------------------------------------ 8. outside a sphere with a held surface
def test_region_outside_sphere_surface_held():
    """Infinite medium r > a at T_i, surface r = a held at T_s from t = 0 (CJ §9.10 eq. (2);
    INC Table 5.2, from memory): T - T_i = (T_s - T_i) (a/r) erfc((r - a)/(2 sqrt(alpha t))),
    heat flow into the medium Q' = 4 pi a^2 k (T_s - T_i)(1/a + 1/sqrt(pi alpha t)), and heat
    taken in by t: 4 pi a^2 k (T_s - T_i)(t/a + 2 sqrt(t/(pi alpha))) (time integral).

    Shell a = 20 mm to 220 mm; at 1000 s the erfc term at the outer radius is erfc(3.2) ~
    6e-6 times a/r = 0.1: negligible.  Measured while writing: profile within 1.4e-4 of
    T_s - T_i, face flow within 1e-4, heat within 1e-4.  Tolerances 1e-3, 3e-3, 2e-3."""
    a, Ti, Ts = 0.02, 300.0, 500.0
    times = (200.0, 1000.0)
    wall = Wall((Layer(SOLID, 0.03, cells=90), Layer(SOLID, 0.17, cells=40)),
                shape="sphere", inner_radius=a)
    case = Case(run=RunSettings(duration=times[-1], start_temperature=Ti, tolerance=1e-4,
                                output_every=50.0, exact_outputs=True),
                wall=wall, inner=Face.fixed(Ts), outer=Face.adiabatic())
    res = run(case)
    r = a + res.x()
    dT = Ts - Ti
    for t in times:
        k = _row(res, t)
        ref = Ti + dT * (a / r) * erfc((r - a) / (2 * math.sqrt(A1 * t)))
        err = np.max(np.abs(res.wall_T()[k] - ref)) / dT
        assert err < 1e-3, f"t = {t}: {err:.2e}"
        Qdot = 4 * math.pi * a * a * K1 * dT * (1 / a + 1 / math.sqrt(math.pi * A1 * t))
        assert res.face_flow[k, 0] == pytest.approx(Qdot, rel=3e-3)
        E = 4 * math.pi * a * a * K1 * dT * (t / a + 2 * math.sqrt(t / (math.pi * A1)))
        assert res.face_energy[k, 0] == pytest.approx(E, rel=2e-3)
    # the steady part (1/a term) is 40 % of the flow at 1000 s: a slab answer would fail
    assert 1 / a > 0.3 * (1 / a + 1 / math.sqrt(math.pi * A1 * times[-1]))


# ----------------------------------- 9. thin plate, convection + radiation, lumped ODE
def test_thin_plate_convection_and_radiation_lumped_ode():
    """A 2 mm aluminium-like plate (k 200 W/m/K) at 700 K cools on both faces by convection
    (h = 15 W/m2/K) to air whose temperature follows a schedule (300 K, rising to 360 K
    between 200 s and 400 s) and radiates (eps = 0.8) to 300 K surroundings.  Modelled as
    the half thickness with an adiabatic mid-plane (symmetry).  Bi = (h + h_r) L/k < 2e-4,
    so the lumped model applies (INC §5.1-5.3, Bi < 0.1); its ODE
    rho c L dT/dt = -h (T - T_air(t)) - eps sigma (T^4 - T_sur^4)  (INC eq. 5.15 with
    radiation) is integrated here with scipy's solve_ivp (Radau, rtol 1e-11).

    The lumped error is of order Bi/3 of the rise, the plate's internal difference being
    q L/(2k) < 0.05 K.  Measured while writing: node temperatures within 0.02 K.  Tolerance
    0.1 K of a 400 K swing (2.5e-4); leaving out the radiation moves T by ~100 K."""
    k, rho, cp, L = 200.0, 2700.0, 900.0, 0.001
    h, eps, Tsur, T0 = 15.0, 0.8, 300.0, 700.0
    plate = Material("demo-alu-plate", k=Constant(k), cp=Constant(cp), rho=rho)
    air = Schedule([0.0, 200.0, 400.0], [300.0, 300.0, 360.0])
    t_end = 900.0
    case = Case(run=RunSettings(duration=t_end, start_temperature=T0, tolerance=1e-3, output_every=10.0),
                wall=Wall((Layer(plate, L, cells=4),)), inner=Face.adiabatic(),
                outer=Face(fluid_temperature=air, convection=h, emissivity=eps, surroundings_temperature=Tsur))
    res = run(case)

    def T_air(t):
        return float(np.interp(t, [0.0, 200.0, 400.0], [300.0, 300.0, 360.0]))

    def rhs(t, y):
        T = y[0]
        return [-(h * (T - T_air(t)) + eps * SIGMA * (T ** 4 - Tsur ** 4)) / (rho * cp * L)]

    sol = solve_ivp(rhs, (0.0, t_end), [T0], method="Radau", rtol=1e-11, atol=1e-9,
                    t_eval=res.times, max_step=5.0)
    T = res.wall_T()
    assert np.max(np.abs(T - sol.y[0][:, None])) < 0.1
    assert np.ptp(T[-1]) < 0.05                        # lumped: nearly uniform
    # without the radiation term the same ODE ends far higher: the check can tell
    conv = solve_ivp(lambda t, y: [-h * (y[0] - T_air(t)) / (rho * cp * L)], (0.0, t_end), [T0],
                     method="Radau", rtol=1e-11, atol=1e-9, t_eval=res.times, max_step=5.0)
    assert np.max(np.abs(conv.y[0] - sol.y[0])) > 50.0


# -------------------------------- 10. heat-traced pipe with a self-limiting element, steady
@pytest.mark.parametrize("volts", [1.0, 0.9])
def test_heat_traced_pipe_self_limiting_element_steady(volts):
    """Steel pipe (r 50 -> 54 mm, k 45) carrying 320 K liquid (h_i = 200 W/m2/K), a heating
    cable between the steel and 50 mm of lagging (k 0.04), outer film 10 W/m2/K to 270 K
    air, 3 m long.  Element rated 150 W at 293.15 K with resistance rising alpha = 4e-3 1/K,
    supplied at ``volts`` x rated voltage: P = P0 u^2 / (1 + alpha (T_h - T_ref))
    (P = V^2/R with R linear in T; Joule's law).
    Network by hand (INC §3.3.1, eqs. 3.28 and 3.32): R_in = 1/(h_i 2 pi r_i L) +
    ln(r_1/r_i)/(2 pi k_s L); R_out = ln(r_2/r_1)/(2 pi k_ins L) + 1/(h_o 2 pi r_2 L); the
    element temperature solves P(T_h) = (T_h - T_liq)/R_in + (T_h - T_air)/R_out (brentq).

    Steady solutions are exact at the nodes for constant k (shell conductances), so the
    tolerance is 1e-7 (Newton stopping); a missing alpha changes P by ~10 %."""
    steel = Material("demo-pipe-steel", k=Constant(45.0), cp=Constant(480.0), rho=7850.0)
    lag = Material("demo-lagging", k=Constant(0.04), cp=Constant(840.0), rho=100.0)
    ri, t_s, t_i, length = 0.05, 0.004, 0.05, 3.0
    hi, ho, T_liq, T_air = 200.0, 10.0, 320.0, 270.0
    P0, alpha, Tref = 150.0, 4e-3, 293.15
    wall = Wall((Layer(steel, t_s), Layer(lag, t_i)), shape="cylinder", inner_radius=ri,
                length=length)
    case = Case(run=RunSettings(duration=3600.0), wall=wall,
                inner=Face.exchange(T_liq, hi), outer=Face.exchange(T_air, ho),
                heater=Heater(P0, placement="interface", wall=0, after_layer=0, resistance_coefficient=alpha,
                              rated_at=Tref, voltage_ratio=volts))
    ss = solve_steady(case)
    r1, r2 = ri + t_s, ri + t_s + t_i
    R_in = 1 / (hi * 2 * math.pi * ri * length) + math.log(r1 / ri) / (2 * math.pi * 45.0 * length)
    R_out = math.log(r2 / r1) / (2 * math.pi * 0.04 * length) + 1 / (ho * 2 * math.pi * r2 * length)
    P = lambda T: P0 * volts ** 2 / (1 + alpha * (T - Tref))
    Th = brentq(lambda T: P(T) - (T - T_liq) / R_in - (T - T_air) / R_out, 250.0, 600.0,
                xtol=1e-12)
    assert ss.interface_T()[0] == pytest.approx(Th, rel=1e-7)
    assert float(np.ravel(ss.heater_power)[0]) == pytest.approx(P(Th), rel=1e-7)
    # heat to the liquid leaves the wall at the inner face; the rest at the outer face
    assert ss.face_flow[0] == pytest.approx(-(Th - T_liq) / R_in, rel=1e-6)
    assert ss.face_flow[1] == pytest.approx(-(Th - T_air) / R_out, rel=1e-6)
    assert abs(P(Th) / (P0 * volts ** 2) - 1) > 0.05    # alpha matters here


# ---------------------------------------- 11. emissivity rising with surface temperature
def test_steady_face_with_temperature_dependent_emissivity():
    """Steady slab (k 0.5, 60 mm) held at 900 K inside; outer face with h = 6 W/m2/K to 300 K
    air and a grey emissivity that rises with the surface temperature (a metal skin that
    darkens as it oxidises; demo data: 0.25 at 300 K -> 0.75 at 700 K, linear between, held
    beyond).  Surface balance k (T1 - Ts)/L = h (Ts - T_air) + eps(Ts) sigma (Ts^4 - Tsur^4)
    (INC eqs. 1.3a, 1.7 and 3.19; grey surface, eps taken at the surface temperature) solved
    here with brentq.  Steady slab solutions are exact at the nodes, so the tolerance is
    1e-8 (Newton stopping); eps fixed at either end of the table moves Ts by > 10 K."""
    k, L, T1, Ta, Tsur, h = 0.5, 0.06, 900.0, 300.0, 290.0, 6.0
    eps_T, eps_v = [300.0, 700.0], [0.25, 0.75]
    wall = Wall((Layer(_solid("demo-board", k, 1.0e6), L, cells=8),))
    outer = Face(fluid_temperature=Ta, convection=h, emissivity=Schedule(eps_T, eps_v), surroundings_temperature=Tsur)
    case = Case(run=RunSettings(duration=3600.0), wall=wall, inner=Face.fixed(T1), outer=outer)
    ss = solve_steady(case)

    def eps(T):
        return float(np.interp(T, eps_T, eps_v))

    def balance(Ts, e=None):
        e = eps(Ts) if e is None else e
        return k * (T1 - Ts) / L - h * (Ts - Ta) - e * SIGMA * (Ts ** 4 - Tsur ** 4)

    Ts = brentq(balance, Ta, T1, xtol=1e-12)
    q = k * (T1 - Ts) / L
    assert ss.face_T[1] == pytest.approx(Ts, rel=1e-8)
    assert ss.face_flow[0] == pytest.approx(q, rel=1e-8)
    assert ss.face_flow[1] == pytest.approx(-q, rel=1e-8)
    # with either end value of the emissivity the answer is far off: the check can tell
    for e in eps_v:
        assert abs(brentq(lambda T: balance(T, e), Ta, T1) - Ts) > 10.0
