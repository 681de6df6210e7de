"""Checks of the heated-enclosure, control and lumped R/C features against
references outside fdwall.

Each check compares fdwall with a closed-form solution of the governing equations, a
quadrature or root solve written here with scipy, a textbook network, or CoolProp; none
compares fdwall only with itself.  All cases are demo data (invented materials, dimensions
and ratings), SI units.

What the existing tests already cover (and is not repeated here): warm-up and cool-down of a
one-node box at constant capacity, the steady series/parallel network with leakage at a 20 degC
room, heater sizing, thermostat duty against the loss at the mean temperature, PID anti-windup
and the P-only offset with a chamber sensor, parallel-path bridges, the box edge/corner shape
factors, implied R/C of a thin conductive box, and fitting an exact exponential.

Sources
-------
* One-node (lumped-capacitance) model ``C dT/dt = P - (T - T_amb)/R`` and its exponential
  solutions: Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer,
  6th ed. (INC), sections 5.2-5.3 (from memory).  The on/off cycle of a thermostat, the
  periodic state of a repeated firing and the response to a linear ambient ramp are the
  same linear first-order ODE solved piece by piece (written out beside each check).
* Plane and cylindrical walls, films and contact resistance in series: INC section 3.1 and
  3.3.1, eqs. 3.19, 3.28, 3.32 (from memory).  Steady temperature in a cylindrical shell is
  linear in ln r (INC eq. 3.26, from memory).
* Air properties: CoolProp (PropsSI).
* Joule heating with a linear resistance-temperature coefficient: P = V^2 / R(T),
  R(T) = R0 (1 + alpha (T - T_ref)) (elementary circuit physics, from memory).
* Nonlinear least squares: the Gauss-Newton covariance sigma^2 (J^T J)^-1 (standard
  statistics, from memory) sizes the tolerance of the noisy fit.
"""
import math

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.optimize import brentq

from fdwall.analyses import (
    hold_duty,
    periodic_state,
    steady_duty,
    summarise_enclosure,
    switch_on_times,
    warm_up_time,
)
from fdwall.analyses.lumped import fit_one_node, implied_rc
from fdwall.materials import material_from_dict
from fdwall.model import (
    Case,
    Chamber,
    Control,
    EnclosureWall,
    Face,
    Heater,
    Layer,
    RunSettings,
    Wall,
)
from fdwall.schedule import Schedule
from fdwall.solver import run, solve_steady

AMB = 293.15

# demo materials (invented, constant properties)
FOIL = material_from_dict("demo-massless-foil", {"k": 1.0, "cp": 1.0, "rho": 1.0})
BRICK = material_from_dict("demo-light-brick", {"k": 0.25, "cp": 1000.0, "rho": 800.0})
BOARD = material_from_dict("demo-board", {"k": 0.06, "cp": 1100.0, "rho": 250.0})
STEEL = material_from_dict("demo-steel", {"k": 45.0, "cp": 480.0, "rho": 7850.0})
WOOL = material_from_dict("demo-wool", {"k": 0.04, "cp": 840.0, "rho": 120.0})
LINER = material_from_dict("demo-dense-liner", {"k": 1.2, "cp": 900.0, "rho": 2000.0})

# ------------------------------------------------------------------ one-node demo enclosure
# Two 1 mm "foil" panels of negligible heat capacity (rho cp L A = 0.002 J/K against a
# 30 kJ/K chamber: 7e-8 relative), so the walls are quasi-steady resistances and the
# enclosure is exactly one node:  C = C_chamber,
#   1/R = sum A / (1/h_in + L/k + 1/h_out) + extra UA  (INC eq. 3.19, walls in parallel).
H_IN, H_OUT, L_FOIL = 50.0, 8.0, 0.001
AREAS = (1.2, 0.8)
C_CH = 3.0e4          # [J/K]
EXTRA = 0.5           # [W/K]
P_RATED = 5000.0      # [W]


def one_node_box(P=P_RATED, duration=6 * 3600.0, oi=None, tol=1e-4, amb=AMB, cap=C_CH,
                 leak=0.0, extra=EXTRA, heater=None, **ctl):
    walls = tuple(
        EnclosureWall(Wall((Layer(FOIL, L_FOIL, cells=2),), area=A, name=f"panel{i}"),
                      Face.exchange(amb, H_OUT), inner_face_convection=H_IN)
        for i, A in enumerate(AREAS))
    return Case(run=RunSettings(duration=duration, output_every=oi, start_temperature=AMB,
                                tolerance=tol),
                walls=walls,
                chamber=Chamber(heat_capacity=cap, room_temperature=amb, leakage=leak, extra_loss=extra),
                heater=heater if heater is not None else Heater(P), control=Control(**ctl),
                name="demo one-node box")


def walls_G():
    """Conductance of the two panels to the room [W/K] (INC eq. 3.19)."""
    return sum(A / (1 / H_IN + L_FOIL / 1.0 + 1 / H_OUT) for A in AREAS)


R_BOX = 1.0 / (walls_G() + EXTRA)      # [K/W]
TAU = R_BOX * C_CH                     # [s], ~2100 s


# ============================================================== 1. thermostat cycle timing
def test_thermostat_on_off_times_match_exponential_pieces():
    """On/off thermostat with hysteresis band dT around T_sp on the one-node box.  Each piece
    is an exponential towards T_inf,on = T_amb + P R (on) or T_amb (off) (INC 5.2-5.3):
        t_on  = tau ln((T_inf,on - T_lo) / (T_inf,on - T_hi))
        t_off = tau ln((T_hi - T_amb) / (T_lo - T_amb)),  T_hi,lo = T_sp +- dT/2,
    the first switch-off at tau ln((T_inf,on - T_0)/(T_inf,on - T_hi)), duty t_on/(t_on+t_off).
    Tolerance: fdwall switches when the sensor lies within its event tolerance (0.02 K for
    this band) of a threshold, i.e. within 0.02 K / |dT/dt| ~ 0.3 s of the exact instant
    (|dT/dt| ~ 0.08 K/s here); t_on, t_off can each be off by two such errors: 0.5 % on
    110-130 s, 1 s on an absolute instant.  Band read as a half-width would double t_on."""
    sp, band = 453.15, 10.0
    res = run(one_node_box(duration=3 * 3600.0, oi=5.0, mode="thermostat", setpoint=sp,
                           band=band))
    T_inf = AMB + P_RATED * R_BOX
    T_hi, T_lo = sp + band / 2, sp - band / 2
    t_on = TAU * math.log((T_inf - T_lo) / (T_inf - T_hi))
    t_off = TAU * math.log((T_hi - AMB) / (T_lo - AMB))
    t_first_off = TAU * math.log((T_inf - AMB) / (T_inf - T_hi))

    ons, E_on = switch_on_times(res)
    assert len(ons) > 20
    assert ons[0] == pytest.approx(t_first_off + t_off, abs=1.0)
    periods = np.diff(ons)
    assert np.max(np.abs(periods - (t_on + t_off))) < 1.0
    # on-time of each whole cycle = heater energy over the cycle / P (constant power)
    on_times = np.diff(E_on) / P_RATED
    assert np.max(np.abs(on_times / t_on - 1)) < 5e-3
    assert np.max(np.abs((periods - on_times) / t_off - 1)) < 5e-3
    duty = t_on / (t_on + t_off)
    assert hold_duty(res, 0.0, whole_cycles=True) == pytest.approx(duty, rel=5e-3)
    s = summarise_enclosure(res, band=band / 2, steady=False)
    assert s["hold_duty"] == pytest.approx(duty, rel=5e-3)
    # the swing stays within the band (plus the switching tolerance)
    late = res.times > ons[1]
    assert res.chamber_T[late].max() < T_hi + 0.05
    assert res.chamber_T[late].min() > T_lo - 0.05


# ============================================================== 2. leakage at a warm room
def test_leakage_loss_uses_air_at_room_conditions():
    """Air leaking out at the chamber temperature, replaced by room air: the enthalpy flow is
    m_dot cp (T_c - T_room) with m_dot = rho(T_room, 1 atm) Vdot for a flow given at room
    conditions (first law for an open system, INC 1.3.1, from memory; rho and cp from
    CoolProp).  Room at 35 degC (a hot workshop), chamber held at 180 degC.  Tolerance
    0.5 %: cp of air from 20 to 35 degC changes by < 0.1 % and any reasonable air data agree
    within that.  Measured when the audit found it: fdwall 526.9 W against 501.8 W (+5.0 %,
    the ratio rho(20 degC)/rho(35 degC) = 308.15/293.15: air was taken at 20 degC whatever
    the room temperature); fixed since."""
    from CoolProp.CoolProp import PropsSI
    T_room, Vdot, sp = 308.15, 0.003, 453.15
    sd = steady_duty(one_node_box(amb=T_room, leak=Vdot, extra=0.0, mode="thermostat",
                                  setpoint=sp))
    rho_cp = (PropsSI("D", "T", T_room, "P", 101325.0, "Air")
              * PropsSI("C", "T", T_room, "P", 101325.0, "Air"))
    assert sd["leakage_loss_W"] == pytest.approx(rho_cp * Vdot * (sp - T_room), rel=5e-3)


# ======================================== 3. heater with resistance coefficient and low voltage
def test_chamber_heater_alpha_and_voltage_steady_and_hold():
    """Element rated P0 at T_ref, supplied at u x rated voltage, resistance rising with
    alpha: P(T) = P0 u^2 / (1 + alpha (T - T_ref)) (Joule heating, from memory), the element
    at the chamber temperature (fdwall's chamber heater).
    (a) fixed full power: T_c solves P(T_c) = (T_c - T_amb)/R (brentq);
    (b) thermostat hold at T_sp: loss G (T_sp - T_amb) = f P(T_sp), so the on-fraction is
        f = G (T_sp - T_amb) (1 + alpha (T_sp - T_ref)) / (P0 u^2);
    (c) the energy duty of a transient hold over whole cycles is mean loss / (P0 u^2) =
        G (T_mean - T_amb) / (P0 u^2) (first law; chamber back at the same state at each
        switch-on).
    Steady network solutions are exact (Newton to 1e-9); the transient ledger to 1e-3.
    Without alpha (a) would be 115 K higher and (b) 0.56 instead of 0.92."""
    P0, u, alpha, T_ref, sp = 5000.0, 0.9, 4e-3, 293.15, 453.15
    heater = Heater(P0, voltage_ratio=u, resistance_coefficient=alpha, rated_at=T_ref)
    G = 1.0 / R_BOX
    P = lambda T: P0 * u * u / (1 + alpha * (T - T_ref))
    st = solve_steady(one_node_box(heater=heater))
    Tc = brentq(lambda T: P(T) - (T - AMB) * G, AMB, 2000.0, xtol=1e-12)
    assert st.T[-1] == pytest.approx(Tc, rel=1e-9)
    assert float(st.heater_power) == pytest.approx(P(Tc), rel=1e-9)
    assert Tc < AMB + P0 * u * u * R_BOX - 50.0           # alpha matters (115 K)

    case = one_node_box(heater=heater, duration=4 * 3600.0, oi=5.0, mode="thermostat",
                        setpoint=sp, band=6.0)
    sd = steady_duty(case)
    assert sd["duty"] == pytest.approx(G * (sp - AMB) / P(sp), rel=1e-9)
    assert sd["full_power_W"] == pytest.approx(P(sp), rel=1e-9)
    assert sd["heater_power_W"] == pytest.approx(G * (sp - AMB), rel=1e-9)

    res = run(case)
    ons, _ = switch_on_times(res)
    a, b = ons[1], ons[-1]
    m = (res.times > a) & (res.times < b)
    tt = np.concatenate([[a], res.times[m], [b]])
    T_mean = np.trapezoid(np.interp(tt, res.times, res.chamber_T), tt) / (b - a)
    duty_E = hold_duty(res, a, b)
    assert duty_E == pytest.approx(G * (T_mean - AMB) / (P0 * u * u), rel=1e-3)
    assert duty_E < 0.7 * sd["duty"]     # energy fraction of the rating << on-fraction


# ======================================== 4. warm-up with a temperature-dependent capacity
def test_warm_up_with_capacity_rising_with_temperature():
    """Chamber capacity a table against temperature (a load whose cp rises): 20 kJ/K at
    293.15 K to 60 kJ/K at 600 K, linear between.  One-node energy balance
    C(T) dT/dt = P - (T - T_amb)/R gives, by separation of variables,
        t(T*) = integral_{T_amb}^{T*} C(T) / (P - (T - T_amb)/R) dT   (quad, rel 1e-12).
    Tolerance 5e-4: the warm-up is read from 10 s outputs by linear interpolation
    (curvature error < 0.1 s) on a run with 1e-4 K step tolerance.  A constant 20 kJ/K
    capacity would be > 30 % early at the upper levels."""
    capT = Schedule([293.15, 600.0], [2.0e4, 6.0e4])
    res = run(one_node_box(cap=capT, duration=4 * 3600.0, oi=10.0))
    G = 1.0 / R_BOX
    C = lambda T: np.interp(T, [293.15, 600.0], [2.0e4, 6.0e4])
    for level in (350.0, 450.0, 550.0):
        t_ref = quad(lambda T: C(T) / (P_RATED - (T - AMB) * G), AMB, level,
                     epsabs=0.0, epsrel=1e-12)[0]
        assert warm_up_time(res, level) == pytest.approx(t_ref, rel=5e-4)
        t_const = -R_BOX * 2.0e4 * math.log(1 - (level - AMB) * G / P_RATED)
        assert abs(t_const / t_ref - 1) > (0.05 if level < 400 else 0.3)


# ======================================== 5. periodic firing of a one-node chamber
def test_periodic_state_matches_closed_form_cycle():
    """Heater fully on for t1 of every period Pi, off for the rest (enable schedule).  For one
    node the cycle map is T_start -> T_amb + (T_start - T_amb) q + P R (1 - a) b with
    a = exp(-t1/tau), b = exp(-(Pi - t1)/tau), q = ab (exponential pieces, INC 5.2-5.3), so
        periodic start  T_s = T_amb + P R (1 - a) b / (1 - q),
        periodic peak   T_p = T_amb + P R + (T_s - T_amb - P R) a,
    and the cycle-to-cycle change contracts by exactly q.  Here tau ~ 2.9 h, q = 0.256.
    Tolerances: 0.02 K on temperatures (the global error of a 1e-3 K step tolerance run
    over 8 cycles, measured 0.008 K; P R = 352 K); 1 % on the contraction while the
    changes exceed 0.2 K (far above the integration error); heater energy P t1 to 1e-9."""
    cap = 1.5e5
    tau = R_BOX * cap
    PER, t1 = 4 * 3600.0, 1.5 * 3600.0
    en = Schedule([0.0, t1, t1, PER], [1.0, 1.0, 0.0, 0.0])
    case = one_node_box(duration=PER, oi=PER / 240, cap=cap, tol=1e-3, power_on=en)
    out = periodic_state(case, PER, tol_K=0.01, max_cycles=30)
    assert out["converged"]
    PR = P_RATED * R_BOX
    a, b = math.exp(-t1 / tau), math.exp(-(PER - t1) / tau)
    q = a * b
    T_s = AMB + PR * (1 - a) * b / (1 - q)
    T_p = AMB + PR + (T_s - AMB - PR) * a
    assert out["periodic_start_chamber_K"] == pytest.approx(T_s, abs=0.02)
    assert out["cycles"][-1]["chamber_max_K"] == pytest.approx(T_p, abs=0.02)
    ch = np.array([c["change_K"] for c in out["cycles"]])
    big = ch > 0.2
    ratios = ch[1:][big[1:]] / ch[:-1][big[1:]]
    assert len(ratios) >= 3
    assert np.max(np.abs(ratios / q - 1)) < 0.01
    for c in out["cycles"]:
        assert c["heater_energy_J"] == pytest.approx(P_RATED * t1, rel=1e-9)
    # the first cycle from a cold start: start = T_amb, so its peak is PR (1 - a) above T_amb
    assert out["cycles"][0]["chamber_max_K"] == pytest.approx(AMB + PR * (1 - a), abs=0.02)


# ======================================== 6. room temperature rising linearly
def test_one_node_follows_linear_ambient_ramp():
    """Room (leakage/extra-UA ambient and the panels' outer air) rising linearly,
    T_a = T_0 + B t.  C dT/dt = P - (T - T_a(t))/R has the exact solution
        T = T_0 + B t + P R - B tau + (B tau - P R) exp(-t/tau)    (T(0) = T_0)
    (linear first-order ODE, integrating factor; from memory).  Tolerance 0.01 K (run step
    tolerance 1e-4 K, measured 0.0024 K); ignoring the ramp would be 25 K off."""
    D = 4 * 3600.0
    rise = 30.0
    B = rise / D
    amb = Schedule([0.0, D], [AMB, AMB + rise])
    res = run(one_node_box(duration=D, oi=60.0, amb=amb))
    t = res.times
    PR = P_RATED * R_BOX
    exact = AMB + B * t + PR - B * TAU + (B * TAU - PR) * np.exp(-t / TAU)
    assert np.max(np.abs(res.chamber_T - exact)) < 0.01
    fixed_room = AMB + PR * (1 - np.exp(-t / TAU))
    assert np.max(np.abs(exact - fixed_room)) > 20.0


# ======================================== 7. implied R and C of single walls
def test_implied_rc_of_composite_slab_wall():
    """Brick + board slab with a contact resistance, inner face held at 600 K, outer film
    9 W/m2/K to the room.  R = (L1/k1 + R_c + L2/k2 + 1/h)/A (INC eq. 3.19); the steady
    profile is linear in each layer, so the energy held above ambient is
    A sum rho c L (theta_in + theta_out)/2 per layer, and C_stored = that / theta_hot
    (fdwall's documented definition); C_total = A sum rho c L.  Steady slab solutions and
    the trapezoidal half-cell energy are exact for linear profiles: tolerance 1e-9."""
    A, L1, L2, Rc, h, Th = 1.7, 0.06, 0.05, 0.01, 9.0, 600.0
    w = Wall((Layer(BRICK, L1), Layer(BOARD, L2)), area=A, interface_resistance=(Rc,), name="demo lining")
    case = Case(run=RunSettings(duration=3600.0), wall=w, inner=Face.fixed(Th),
                outer=Face.exchange(AMB, h))
    rc = implied_rc(case)
    R = (L1 / 0.25 + Rc + L2 / 0.06 + 1 / h) / A
    q = (Th - AMB) / R
    th0 = Th - AMB
    th1 = th0 - q / A * L1 / 0.25
    th2 = th1 - q / A * Rc
    th3 = th2 - q / A * L2 / 0.06
    stored = A * (800 * 1000 * L1 * (th0 + th1) / 2 + 250 * 1100 * L2 * (th2 + th3) / 2)
    assert rc["R_K_per_W"] == pytest.approx(R, rel=1e-9)
    assert rc["Q_W"] == pytest.approx(q, rel=1e-9)
    assert rc["stored_J"] == pytest.approx(stored, rel=1e-9)
    assert rc["C_stored_J_per_K"] == pytest.approx(stored / th0, rel=1e-9)
    assert rc["C_total_J_per_K"] == pytest.approx(A * (800 * 1000 * L1 + 250 * 1100 * L2),
                                                  rel=1e-9)
    assert rc["tau_s"] == pytest.approx(R * stored / th0, rel=1e-9)


def test_implied_rc_of_insulated_cylinder():
    """Steel pipe wall (r 50 -> 60 mm) under 40 mm of wool, 2 m long, inside held at 600 K,
    outer film 9 W/m2/K.  R = ln(r1/ri)/(2 pi k1 L) + ln(r2/r1)/(2 pi k2 L) + 1/(h 2 pi r2 L)
    (INC eqs. 3.28, 3.32); theta(r) linear in ln r in each layer (INC eq. 3.26), stored
    energy integral rho c theta 2 pi r L dr by quad.  R is exact (shell conductances,
    tolerance 1e-8); the stored energy of the finite-volume mesh converges at second order
    (measured 1.9e-5 at the default mesh): tolerance 1e-4, and halving the cells cuts the
    error by > 3x."""
    ri, t1, t2, Lc, h, Th = 0.05, 0.01, 0.04, 2.0, 9.0, 600.0
    r1, r2 = ri + t1, ri + t1 + t2
    Ra = math.log(r1 / ri) / (2 * math.pi * 45.0 * Lc)
    Rb = math.log(r2 / r1) / (2 * math.pi * 0.04 * Lc)
    Ro = 1 / (h * 2 * math.pi * r2 * Lc)
    R = Ra + Rb + Ro
    q = (Th - AMB) / R
    thA = lambda r: (Th - AMB) - q * math.log(r / ri) / (2 * math.pi * 45.0 * Lc)
    thB = lambda r: thA(r1) - q * math.log(r / r1) / (2 * math.pi * 0.04 * Lc)
    stored = (quad(lambda r: 7850 * 480 * thA(r) * 2 * math.pi * r * Lc, ri, r1, epsrel=1e-13)[0]
              + quad(lambda r: 120 * 840 * thB(r) * 2 * math.pi * r * Lc, r1, r2, epsrel=1e-13)[0])
    C_stored = stored / (Th - AMB)
    errs = []
    for refine in (1.0, 2.0):
        w = Wall((Layer(STEEL, t1), Layer(WOOL, t2)), shape="cylinder", inner_radius=ri,
                 length=Lc, refine=refine, name="demo lagged pipe")
        case = Case(run=RunSettings(duration=3600.0), wall=w, inner=Face.fixed(Th),
                    outer=Face.exchange(AMB, h))
        rc = implied_rc(case)
        assert rc["R_K_per_W"] == pytest.approx(R, rel=1e-8)
        assert rc["C_total_J_per_K"] == pytest.approx(
            (7850 * 480 * (r1 ** 2 - ri ** 2) + 120 * 840 * (r2 ** 2 - r1 ** 2)) * math.pi * Lc,
            rel=1e-9)
        errs.append(abs(rc["C_stored_J_per_K"] / C_stored - 1))
    assert errs[0] < 1e-4
    assert errs[1] < errs[0] / 3


# ======================================== 8. fitting the one-node model
def test_fit_one_node_noisy_synthetic_and_thin_wall_run():
    """(a) Synthetic heating curve from the exact one-node solution (INC 5.2-5.3) with
    R = 0.12 K/W, C = 3e5 J/K, P = 2.5 kW, 181 points over 5 h, plus deterministic
    pseudo-noise of 0.1 K rms.  The Gauss-Newton 1-sigma of R and C for this noise is
    0.19 % and 0.04 % (computed here from the Jacobian): tolerance 3 sigma.  The residual rms
    of a 2-parameter fit must be the noise rms within a few %.
    (b) A 10 mm steel plate, 0.5 m2, 2 kW/m2 into its inner face, 10 W/m2/K outside: Biot
    h L/k = 0.002, so the inner face follows one node with R = (L/k + 1/h)/A (the steady
    resistance, INC eq. 3.19) and C = rho c L A; the fitted R must equal the steady R
    within 0.1 % (the curve runs 7.6 time constants), C within 1 % (lumping error ~ Bi)."""
    R0, C0, P = 0.12, 3.0e5, 2500.0
    t = np.linspace(0.0, 5 * 3600.0, 181)
    n = np.arange(t.size)
    noise = 0.2 * np.sin(0.37 * n) * np.cos(0.011 * n ** 2)
    model = lambda R, C: AMB + P * R * (1 - np.exp(-t / (R * C)))
    eps = 1e-6
    J = np.column_stack([(model(R0 * (1 + eps), C0) - model(R0, C0)) / eps,
                         (model(R0, C0 * (1 + eps)) - model(R0, C0)) / eps])
    sig = np.sqrt(np.diag(np.linalg.inv(J.T @ J)) * np.mean(noise ** 2))   # relative sigmas
    fit = fit_one_node(t, model(R0, C0) + noise, P, AMB)
    assert abs(fit["R_K_per_W"] / R0 - 1) < 3 * sig[0]
    assert abs(fit["C_J_per_K"] / C0 - 1) < 3 * sig[1]
    assert fit["rms_K"] == pytest.approx(np.sqrt(np.mean(noise ** 2)), rel=0.03)
    fixed = fit_one_node(t, model(R0, C0) + noise, P, AMB, R=R0)
    assert abs(fixed["C_J_per_K"] / C0 - 1) < 3 * sig[1]

    plate = material_from_dict("demo-steel-plate", {"k": 50.0, "cp": 480.0, "rho": 7850.0})
    Lw, h, qin, A = 0.01, 10.0, 2000.0, 0.5
    case = Case(run=RunSettings(duration=8 * 3600.0, output_every=120.0, tolerance=1e-3),
                wall=Wall((Layer(plate, Lw),), area=A, name="demo plate"),
                inner=Face(heat_flux=qin), outer=Face.exchange(AMB, h))
    res = run(case)
    Rw = (Lw / 50.0 + 1 / h) / A
    Cw = 7850 * 480 * Lw * A
    fw = fit_one_node(res.times, res.face_T[:, 0], qin * A, AMB)
    assert fw["R_K_per_W"] == pytest.approx(Rw, rel=1e-3)
    assert fw["C_J_per_K"] == pytest.approx(Cw, rel=1e-2)


# ======================================== 9. PI control on a wall sensor
def test_pi_with_wall_sensor_holds_the_sensor_and_power_equals_loss():
    """PI time-proportioning control with its sensor 15 mm deep in a 40 mm dense liner
    (k 1.2).  At steady state the integral removes the offset, so the sensor sits at T_sp;
    the profile through the liner is linear, so the chamber rise follows from the series
    network (INC eq. 3.19):
        theta_c = theta_sp (1/h_in + L/k + 1/h_out) / ((L - d)/k + 1/h_out),
    and the heater power equals the loss G theta_c (G: both walls + extra UA).
    Tolerances: steady_duty exact (1e-9); the 12 h transient settles to 0.05 K / 0.2 %
    (measured 2e-4 K and 3e-5).  A P-only controller would sit > 1 K short (hand offset)."""
    hin, hout, Lw, d, sp, P, kp = 12.0, 8.0, 0.04, 0.015, 423.15, 3000.0, 0.05
    liner = Wall((Layer(LINER, Lw),), area=2.0, name="liner")
    door = Wall((Layer(STEEL, 0.002), Layer(BOARD, 0.08)), area=1.5, name="door")
    case = Case(run=RunSettings(duration=12 * 3600.0, output_every=60.0, tolerance=1e-3),
                walls=(EnclosureWall(liner, Face.exchange(AMB, hout), inner_face_convection=hin),
                       EnclosureWall(door, Face.exchange(AMB, hout), inner_face_convection=hin)),
                chamber=Chamber(heat_capacity=2e4, room_temperature=AMB, extra_loss=0.5), heater=Heater(P),
                control=Control(mode="pid", setpoint=sp, proportional_gain=kp, integral_gain=2e-5, period=30.0,
                                sensor="wall", sensor_wall=0, sensor_depth=d),
                name="demo liner-sensor oven")
    R_w = 1 / hin + Lw / 1.2 + 1 / hout
    R_s = (Lw - d) / 1.2 + 1 / hout
    th_c = (sp - AMB) * R_w / R_s
    G = 2.0 / R_w + 1.5 / (1 / hin + 0.002 / 45.0 + 0.08 / 0.06 + 1 / hout) + 0.5
    sd = steady_duty(case)
    assert sd["chamber_K"] - AMB == pytest.approx(th_c, rel=1e-9)
    assert sd["heater_power_W"] == pytest.approx(G * th_c, rel=1e-9)
    assert sd["duty"] == pytest.approx(G * th_c / P, rel=1e-9)

    res = run(case)
    late = res.times > 10 * 3600.0
    assert res.chamber_T[late].mean() - AMB == pytest.approx(th_c, abs=0.05)
    assert hold_duty(res, 10 * 3600.0) * P == pytest.approx(G * th_c, rel=2e-3)
    T_sensor = np.interp(d, res.x(0), res.wall_T(0)[-1])
    assert T_sensor == pytest.approx(sp, abs=0.05)
    # P-only: u = kp (theta_sp - r theta_c), u P = G theta_c, r = R_s/R_w (from memory)
    r = R_s / R_w
    th_c_p = kp * P * (sp - AMB) / (G + kp * P * r)
    assert (sp - AMB) - r * th_c_p > 1.0


# ======================================== 10. heater embedded in a wall of an enclosure
def test_interface_heater_in_enclosure_matches_two_node_network():
    """Element between the brick and board layers of the first wall, 1200 W rated at 95 %
    voltage (P = 0.9025 x 1200 W).  Steady network (INC eq. 3.19, nodes x = element,
    c = chamber):
        P = (th_x - th_c)/R_in + th_x/R_out,   (th_x - th_c)/R_in = G_1 th_c,
    R_in = (1/h_in + L_brick/k)/A_0, R_out = (L_board/k + 1/h_out)/A_0, G_1 = second wall
    + extra UA.  Solved here with numpy; constant-k steady solutions are exact (1e-9)."""
    A0, A1, hin, hout, P, u, EX = 1.5, 2.0, 12.0, 8.0, 1200.0, 0.95, 0.7
    w0 = Wall((Layer(BRICK, 0.03), Layer(BOARD, 0.06)), area=A0, name="heated")
    w1 = Wall((Layer(STEEL, 0.002), Layer(BOARD, 0.08)), area=A1, name="plain")
    case = Case(run=RunSettings(duration=3600.0),
                walls=(EnclosureWall(w0, Face.exchange(AMB, hout), inner_face_convection=hin),
                       EnclosureWall(w1, Face.exchange(AMB, hout), inner_face_convection=hin)),
                chamber=Chamber(heat_capacity=1e4, room_temperature=AMB, extra_loss=EX),
                heater=Heater(P, placement="interface", wall=0, after_layer=0, voltage_ratio=u),
                name="demo panel-heated cabinet")
    R_in = (1 / hin + 0.03 / 0.25) / A0
    R_out = (0.06 / 0.06 + 1 / hout) / A0
    G1w = A1 / (1 / hin + 0.002 / 45.0 + 0.08 / 0.06 + 1 / hout)
    M = np.array([[1 / R_in + 1 / R_out, -1 / R_in], [-1 / R_in, 1 / R_in + G1w + EX]])
    th_x, th_c = np.linalg.solve(M, [P * u * u, 0.0])
    st = solve_steady(case)
    assert st.T[-1] - AMB == pytest.approx(th_c, rel=1e-9)
    assert st.interface_T(0)[0] - AMB == pytest.approx(th_x, rel=1e-9)
    sd = steady_duty(case)
    assert sd["wall_loss_W"]["heated"] == pytest.approx(th_x / R_out, rel=1e-9)
    assert sd["wall_loss_W"]["plain"] == pytest.approx(G1w * th_c, rel=1e-9)
    assert sd["leakage_loss_W"] == pytest.approx(EX * th_c, rel=1e-9)
    assert sd["loss_W"] == pytest.approx(P * u * u, rel=1e-9)
