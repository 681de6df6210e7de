"""Foster and Cauer networks of the heated node: exact transform, and the full model's step."""
import math
from fractions import Fraction

import numpy as np
import pytest

from fdwall.analyses.lumped import rc_networks, wall_time_constants
from fdwall.analyses.networks import (
    cauer_from_foster,
    cauer_impedance,
    cauer_step_response,
    foster_from_cauer,
    foster_impedance,
    foster_step_response,
)
from fdwall.errors import InputError
from fdwall.materials import Constant, Material
from fdwall.model import Case, Face, Layer, RunSettings, Wall
from fdwall.system import build_system

# invented reference solid: k = 1 W/(m K), rho cp = 1e6 J/(m3 K), alpha = 1e-6 m2/s; A = 1 m2
SOLID = Material("rc-test-solid", k=Constant(1.0), cp=Constant(1000.0), rho=1000.0)
ALPHA, L = 1e-6, 0.1


def _slab(cells):
    return Case(run=RunSettings(duration=1000.0, start_temperature=300.0),
                wall=Wall((Layer(SOLID, L, cells=cells),)), inner=Face(heat_flux=500.0),
                outer=Face.fixed(300.0), name="rc-networks")


def _series(t, m_max=400):
    # Source: Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., Sec. 3.3 (from memory):
    # 1 W/m2 into x=0 of a slab held at x=L, from rest: theta(0,t) = L/k [1 - sum_m
    # 8/((2m-1)^2 pi^2) exp(-(2m-1)^2 pi^2 alpha t/(4 L^2))]  [K per W on 1 m2]
    j = 2 * np.arange(1, m_max + 1) - 1
    w = 8 / (j ** 2 * math.pi ** 2)
    return L * (1 - (w[None, :] * np.exp(-np.outer(t, j ** 2 * math.pi ** 2 * ALPHA
                                                   / (4 * L * L)))).sum(1))


def test_two_term_worked_example_exact():
    # Worked by hand (Cauer's first form, continued fraction of Y = 1/Z about s = infinity;
    # Guillemin, Synthesis of Passive Networks, ch. 3, from memory): R = (1, 1) K/W,
    # tau = (1, 2) s.  Z = (2 + 3s)/(1 + 3s + 2s^2), Y = (2s^2 + 3s + 1)/(3s + 2):
    # C1 = 2/3, then Y - 2s/3 = (5s/3 + 1)/(3s + 2), R1 = 9/5, remainder (1/5)/(5s/3 + 1):
    # C2 = 25/3, R2 = 1/5.
    c = cauer_from_foster([1.0, 1.0], [1.0, 2.0])
    assert c["C_J_per_K"] == pytest.approx([2 / 3, 25 / 3], rel=1e-15)
    assert c["R_K_per_W"] == pytest.approx([9 / 5, 1 / 5], rel=1e-15)
    # the same numbers as exact fractions (floats round once, at the end)
    assert Fraction(c["R_K_per_W"][0]).limit_denominator(100) == Fraction(9, 5)


def test_known_ladder_round_trip_and_limits():
    # A ladder of our own: its modes by scipy.linalg.eigh, back to the ladder by the exact
    # continued fraction. Identities of RC networks (common practice, no source): Z(0) is the
    # sum of all resistances in either form; at high frequency Z ~ 1/(s C1), so
    # 1/C1 = sum over the Foster capacities of 1/C_i.
    R = np.array([0.3, 0.1, 0.5, 0.2, 0.05, 0.4])
    C = np.array([100.0, 2000.0, 50.0, 800.0, 30.0, 5000.0])
    f = foster_from_cauer(R, C)
    assert np.all(np.diff(f["tau_s"]) < 0)
    assert f["R_K_per_W"].sum() == pytest.approx(R.sum(), rel=1e-12)
    assert 1.0 / (1.0 / f["C_J_per_K"]).sum() == pytest.approx(C[0], rel=1e-9)
    c = cauer_from_foster(f["R_K_per_W"], f["C_J_per_K"])
    assert c["R_K_per_W"] == pytest.approx(R, rel=1e-7)
    assert c["C_J_per_K"] == pytest.approx(C, rel=1e-7)
    s = 1j * np.geomspace(1e-6, 10.0, 50)
    zc = cauer_impedance(s, R, C)
    zf = foster_impedance(s, f["R_K_per_W"], f["C_J_per_K"])
    assert np.max(np.abs(zc - zf) / np.abs(zf)) < 1e-10


def test_cauer_of_discretised_slab_is_its_mesh():
    # A finite-volume slab heated at x=0 and held at x=L is itself a Cauer ladder (textbook
    # lumped-capacitance discretisation, e.g. Incropera, Fundamentals of Heat and Mass
    # Transfer, Sec. 5.10, from memory): node i holds rho c A (x_{i+1} - x_{i-1})/2 (half a
    # cell at the heated face), links have R = dx/(k A). The exact Foster form of the wall
    # (all its modes) turned into a ladder recovers those values from the node positions.
    case = _slab(6)
    m = wall_time_constants(case)
    c = cauer_from_foster(m["mode_R_K_per_W"], m["time_constants_s"] / m["mode_R_K_per_W"])
    x = build_system(case).meshes[0].x
    x = x - x[0]
    dx = np.diff(x)
    C_ref = 1e6 * np.r_[dx[0] / 2, 0.5 * (dx[:-1] + dx[1:])]
    R_ref = dx / 1.0
    assert c["R_K_per_W"] == pytest.approx(R_ref, rel=1e-6)
    assert c["C_J_per_K"] == pytest.approx(C_ref, rel=1e-6)


@pytest.fixture(scope="module")
def modes():
    return wall_time_constants(_slab(40))


@pytest.mark.parametrize("n", [2, 3, 4, 6])
def test_foster_and_cauer_reproduce_full_step(modes, n):
    # The two networks are one impedance: they agree to round-off at every frequency, their
    # step responses agree to 1e-12 of the final rise, and both reproduce the full model's
    # step response within their stated error; against the Carslaw & Jaeger series (see
    # _series) within that error plus the mesh error (0.2 %, tests/test_lumped_foster.py).
    net = rc_networks(modes, n)
    Rf = np.array([p["R_K_per_W"] for p in net["foster"]])
    Cf = np.array([p["C_J_per_K"] for p in net["foster"]])
    Rc = np.array([p["R_K_per_W"] for p in net["cauer"]])
    Cc = np.array([p["C_J_per_K"] for p in net["cauer"]])
    assert len(net["cauer"]) == len(net["foster"]) <= n
    assert np.all(Rc > 0) and np.all(Cc > 0)
    assert Rc.sum() == pytest.approx(Rf.sum(), rel=1e-12)
    s = 1j * np.geomspace(1e-7, 10.0, 60)
    zf, zc = foster_impedance(s, Rf, Cf), cauer_impedance(s, Rc, Cc)
    assert np.max(np.abs(zc - zf) / np.abs(zf)) < 1e-9
    assert net["cauer_foster_max_K_per_W"] < 1e-12 * L
    # the stated error (over the fitting times) holds on a denser grid of our own, 0.01 s to
    # 2e5 s (the full model from its modes, summed here)
    t = np.geomspace(0.01, 2e5, 1500)
    full = (modes["mode_R_K_per_W"][None, :]
            * -np.expm1(-np.outer(t, 1 / modes["time_constants_s"]))).sum(1)
    yf, yc = foster_step_response(t, Rf, Cf), cauer_step_response(t, Rc, Cc)
    assert np.max(np.abs(yf - full)) <= 1.05 * net["foster_max_error_K_per_W"]
    assert np.max(np.abs(yc - full)) <= 1.05 * net["cauer_max_error_K_per_W"]
    # measured: n=2 1.6 %, 3 0.42 %, 4 0.12 %, 6 0.009 % of the final rise
    tol = {2: 0.02, 3: 0.006, 4: 0.002, 6: 3e-4}[n]
    assert net["max_error_fraction"] < tol
    t1 = np.geomspace(1.0, 60000.0, 500)
    for y in (foster_step_response(t1, Rf, Cf), cauer_step_response(t1, Rc, Cc)):
        assert np.max(np.abs(y - _series(t1))) < (net["max_error_fraction"] + 2e-3) * L


def test_bad_network_input():
    # common practice, no source: non-positive elements and bad counts are refused
    with pytest.raises(InputError):
        cauer_from_foster([1.0, -1.0], [1.0, 1.0])
    with pytest.raises(InputError):
        foster_from_cauer([1.0], [1.0, 2.0])
    with pytest.raises(InputError):
        rc_networks({"time_constants_s": np.array([1.0]), "mode_R_K_per_W": np.array([1.0])},
                    0)


def test_enclosure_one_pair_network_is_the_one_node_model():
    # A chamber of 50 kJ/K behind walls of negligible capacity (1e-3 of it) is a one-node
    # model: R = 1/(h_in A) + L/(k A) + 1/(h_out A) (series resistances, Incropera,
    # Fundamentals of Heat and Mass Transfer, Sec. 3.1), C = the chamber capacity. Its 1-pair
    # Foster network and 1-stage Cauer ladder are that R and C (the walls' 100 J/K added to
    # C at most), with a step-response error below 0.2 % of R.
    from fdwall.model import Chamber, EnclosureWall
    light = Material("rc-light", k=Constant(0.05), cp=Constant(1000.0), rho=1.0)
    A, Lw, hin, hout, Cch = 2.0, 0.05, 10.0, 8.0, 5e4
    case = Case(run=RunSettings(duration=1000.0, start_temperature=293.15),
                walls=(EnclosureWall(Wall((Layer(light, Lw, cells=4),), area=A, name="w"),
                                     Face.exchange(293.15, hout), inner_face_convection=hin),),
                chamber=Chamber(heat_capacity=Cch, room_temperature=293.15), name="rc-box")
    R_ref = 1 / (hin * A) + Lw / (0.05 * A) + 1 / (hout * A)
    net = rc_networks(wall_time_constants(case), 1)
    for key in ("foster", "cauer"):
        (p,) = net[key]
        assert p["R_K_per_W"] == pytest.approx(R_ref, rel=2e-3)
        assert Cch <= p["C_J_per_K"] <= Cch + 100.0
    assert net["R_total_K_per_W"] == pytest.approx(R_ref, rel=1e-9)
    assert net["max_error_fraction"] < 2e-3


def test_two_node_from_physics_of_a_chamber_behind_a_plate():
    # A chamber (20 kJ/K) behind a 5 mm steel-like plate (k 50 W/(m K), rho c 3.9e6
    # J/(m3 K), so it is near-isothermal) and 50 mm of insulation of negligible capacity
    # (k 0.04 W/(m K)), films 10 W/(m2 K) inside and 8 outside, 2 m2, is a two-node model
    # by construction (common practice, no source): C1 = chamber, R12 = 1/(h_in A) + L_p/(k_p A),
    # C2 = plate (+ the insulation's 50 J/K), R2 = L/(k A) + 1/(h_out A) (series resistances,
    # Incropera Sec. 3.1). The 2-stage Cauer ladder from the physics gives these values, and
    # the two-node model's step response (scipy.linalg.expm of its state matrix) matches the
    # full model's to 1e-6 of R.
    from scipy.linalg import expm

    from fdwall.analyses.lumped import two_node_from_modes
    from fdwall.model import Chamber, EnclosureWall, Heater
    plate = Material("rc-plate", k=Constant(50.0), cp=Constant(500.0), rho=7800.0)
    ins = Material("rc-ins", k=Constant(0.04), cp=Constant(1000.0), rho=0.5)
    A, hin, hout, Cch = 2.0, 10.0, 8.0, 2e4
    case = Case(run=RunSettings(duration=1000.0, start_temperature=293.15),
                walls=(EnclosureWall(Wall((Layer(plate, 0.005, cells=4),
                                           Layer(ins, 0.05, cells=8)), area=A, name="w"),
                                     Face.exchange(293.15, hout), inner_face_convection=hin),),
                chamber=Chamber(heat_capacity=Cch, room_temperature=293.15), heater=Heater(power=500.0),
                name="rc-two-node")
    m = wall_time_constants(case)
    p = two_node_from_modes(m)
    R12, R2 = 1 / (hin * A) + 0.005 / (50 * A), 0.05 / (0.04 * A) + 1 / (hout * A)
    assert p["C_chamber_J_per_K"] == pytest.approx(Cch, rel=1e-4)
    assert p["R_chamber_wall_K_per_W"] == pytest.approx(R12, rel=1e-3)
    assert p["C_wall_J_per_K"] == pytest.approx(7800 * 500 * 0.005 * A, rel=2e-3)
    assert p["R_wall_ambient_K_per_W"] == pytest.approx(R2, rel=1e-3)
    C1, C2, r12, r2 = (p[k] for k in ("C_chamber_J_per_K", "C_wall_J_per_K",
                                      "R_chamber_wall_K_per_W", "R_wall_ambient_K_per_W"))
    Am = np.array([[-1 / (r12 * C1), 1 / (r12 * C1)],
                   [1 / (r12 * C2), -1 / (r12 * C2) - 1 / (r2 * C2)]])
    b = np.array([1 / C1, 0.0])
    Ai_b = np.linalg.solve(Am, b)
    t = np.geomspace(1.0, 3e5, 60)
    two = np.array([((expm(Am * tt) - np.eye(2)) @ Ai_b)[0] for tt in t])
    full = (m["mode_R_K_per_W"][None, :] * -np.expm1(-np.outer(t, 1 / m["time_constants_s"]))).sum(1)
    assert np.max(np.abs(two - full)) < 1e-6 * (R12 + R2)
