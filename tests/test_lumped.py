"""Lumped R/C implied by a wall, and fitting the one-node model (Incropera §5.2-5.3, lumped
capacitance; series resistances, Incropera ch. 3)."""
import numpy as np
import pytest

from fdwall import (
    Case,
    Chamber,
    Control,
    EnclosureWall,
    Face,
    Heater,
    Layer,
    RunSettings,
    Wall,
    run,
)
from fdwall.analyses.lumped import fit_one_node, implied_rc, one_node_response
from fdwall.materials import Constant, Material

T_AMB = 293.15


def _box(k, thick, P=800.0, cap=2.0e4):
    m = Material(name="w", k=Constant(k), cp=Constant(900.0), rho=1500.0)
    walls = [EnclosureWall(wall=Wall(layers=(Layer(m, thick),), area=1.0, name=f"w{i}"),
                           outer=Face(fluid_temperature=T_AMB, convection=8.0), inner_face_convection=50.0)
             for i in range(6)]
    return Case(run=RunSettings(duration=20 * 3600.0, start_temperature=T_AMB),
                walls=walls, chamber=Chamber(heat_capacity=cap, room_temperature=T_AMB),
                heater=Heater(power=P), control=Control()), m


def test_implied_r_and_c_of_thin_conductive_box_match_hand_values():
    case, m = _box(k=500.0, thick=0.002)
    rc = implied_rc(case)
    # six walls in parallel, each 1/h_in + L/k + 1/h_out per m2 (Incropera eq. 3.19)
    R = (1 / 50.0 + 0.002 / 500.0 + 1 / 8.0) / 6
    assert rc["R_K_per_W"] == pytest.approx(R, rel=1e-9)
    # a conductive wall sits at T_hot - (T_hot - T_amb) (1/h_in)/(R_wall): its stored energy
    # over the chamber rise is C_wall * fraction of the rise it carries
    frac = (1 / 8.0 + 0.5 * 0.002 / 500.0) / (1 / 50.0 + 0.002 / 500.0 + 1 / 8.0)
    C = 2.0e4 + 6 * 1500 * 900 * 0.002 * frac
    assert rc["C_stored_J_per_K"] == pytest.approx(C, rel=1e-3)


def test_fit_recovers_exact_exponential():
    t = np.linspace(0, 6 * 3600.0, 73)
    T = one_node_response(t, 1500.0, 0.2, 4.0e5, T_AMB, T_AMB)
    fit = fit_one_node(t, T, 1500.0, T_AMB)
    assert fit["R_K_per_W"] == pytest.approx(0.2, rel=1e-6)
    assert fit["C_J_per_K"] == pytest.approx(4.0e5, rel=1e-6)
    fixed = fit_one_node(t, T, 1500.0, T_AMB, R=0.2)
    assert fixed["C_J_per_K"] == pytest.approx(4.0e5, rel=1e-6)


def test_thick_wall_curve_is_not_one_exponential():
    """A thick insulating lining: the one-node fit with R from equilibrium leaves a clear
    misfit, and the fitted C differs from the stored-energy C (distributed capacity)."""
    case, m = _box(k=0.15, thick=0.1, cap=5.0e3)
    rc = implied_rc(case)
    res = run(case)
    fit = fit_one_node(res.times, res.chamber_T, 800.0, T_AMB, R=rc["R_K_per_W"])
    assert fit["rms_K"] > 1.0
    assert abs(fit["C_J_per_K"] / rc["C_stored_J_per_K"] - 1) > 0.05
