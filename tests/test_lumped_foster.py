"""Foster network fitted to the heated node's step response, against the slab series solution."""
import math

import numpy as np
import pytest

from fdwall.analyses.lumped import foster_fit, step_response_from_modes, wall_time_constants
from fdwall.errors import InputError
from fdwall.materials import Constant, Material
from fdwall.model import Case, Face, Layer, RunSettings, Wall

# invented reference solid: k = 1 W/(m K), rho cp = 1e6 J/(m3 K), alpha = 1e-6 m2/s; A = 1 m2
SOLID = Material("rc-test-solid", k=Constant(1.0), cp=Constant(1000.0), rho=1000.0)
ALPHA, L = 1e-6, 0.1


def _exact(t, m_max=400):
    # Source: Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., Sec. 3.3 (from memory):
    # 1 W/m2 into x=0 of a slab held at x=L, from rest: theta(0,t) = L/k [1 - sum_m
    # 8/((2m-1)^2 pi^2) exp(-(2m-1)^2 pi^2 alpha t/(4 L^2))]  [K per W on 1 m2]
    j = 2 * np.arange(1, m_max + 1) - 1
    w = 8 / (j ** 2 * math.pi ** 2)
    return L * (1 - (w[None, :] * np.exp(-np.outer(t, j ** 2 * math.pi ** 2 * ALPHA
                                                   / (4 * L * L)))).sum(1))


@pytest.fixture(scope="module")
def modes():
    case = Case(run=RunSettings(duration=1000.0, start_temperature=300.0),
                wall=Wall((Layer(SOLID, L, cells=40),)), inner=Face(heat_flux=500.0),
                outer=Face.fixed(300.0), name="rc-foster")
    return wall_time_constants(case)


def test_modal_expansion_matches_series(modes):
    # the exact Foster form of the discretised wall: first mode resistance 8 L/(pi^2 k) and the
    # sum L/k (same source as _exact); step response within 0.2 % of the final rise from 1 s on
    r = modes["mode_R_K_per_W"]
    assert r[0] == pytest.approx(8 * L / math.pi ** 2, rel=1e-3)
    assert r.sum() == pytest.approx(L, rel=1e-9)
    t = np.geomspace(1.0, 40000.0, 300)
    y = step_response_from_modes(t, modes["time_constants_s"], r)
    assert np.max(np.abs(y - _exact(t))) < 2e-3 * L


@pytest.mark.parametrize("n, tol", [(3, 0.01), (4, 0.005), (6, 0.002)])
def test_foster_reproduces_step_response(modes, n, tol):
    # nnls Foster network with n positive terms: its stated error holds against the modes and
    # it reproduces the series solution within that error plus the mesh error (0.14 %); the
    # resistances sum to R = L/k (measured errors: n=3 0.42 %, n=4 0.12 %, n=6 0.009 %)
    f = foster_fit(modes["time_constants_s"], modes["mode_R_K_per_W"], n_terms=n)
    assert len(f["tau_s"]) <= n
    assert np.all(f["R_K_per_W"] > 0) and np.all(f["C_J_per_K"] > 0)
    assert np.all(np.diff(f["tau_s"]) < 0)
    assert f["max_error_fraction"] < tol
    t = np.geomspace(modes["time_constants_s"].min() / 10, 40000.0, 400)
    foster = (f["R_K_per_W"][None, :] * -np.expm1(-np.outer(t, 1 / f["tau_s"]))).sum(1)
    ref = step_response_from_modes(t, modes["time_constants_s"], modes["mode_R_K_per_W"])
    assert np.max(np.abs(foster - ref)) <= f["max_error_K_per_W"] * 1.05
    t1 = np.geomspace(1.0, 40000.0, 300)
    foster1 = (f["R_K_per_W"][None, :] * -np.expm1(-np.outer(t1, 1 / f["tau_s"]))).sum(1)
    assert np.max(np.abs(foster1 - _exact(t1))) < (f["max_error_fraction"] + 2e-3) * L
    assert f["R_K_per_W"].sum() == pytest.approx(L, rel=0.01)


def test_foster_bad_input():
    # common practice, no source: mismatched inputs raise InputError
    with pytest.raises(InputError):
        foster_fit([1.0, 2.0], [1.0], n_terms=2)


def test_foster_fit_multilayer_enclosure_stays_finite():
    # A refit during merging can zero a term (found on the demo furnace: a NaN time constant
    # followed); such terms are dropped. Checked against the case's own modal step response and
    # the identity that the terms' resistances sum to the total (common practice, no source).
    from pathlib import Path

    from fdwall.case import load_case
    case = load_case(Path(__file__).resolve().parent.parent / "cases" / "heat-treat-furnace.toml")
    m = wall_time_constants(case)
    f = foster_fit(m["time_constants_s"], m["mode_R_K_per_W"], n_terms=5)
    assert np.all(np.isfinite(f["tau_s"])) and np.all(f["R_K_per_W"] > 0)
    assert f["max_error_fraction"] < 0.005
    assert f["R_K_per_W"].sum() == pytest.approx(m["mode_R_K_per_W"].sum(), rel=0.01)
