"""The assembly's Jacobian against central finite differences of its heat flows, term by term.

``assemble`` returns the net heat flow F(T) into every unknown [W] and its Jacobian dF/dT
[W/K] as an arrow matrix (tridiagonal per wall plus the chamber row and column).  Each case
below switches on one physical term (conduction with k(T) and a contact resistance, fixed
films, a convection correlation, radiation with an emissivity table, the chamber with its
leakage, a heater whose power falls with temperature); the dense Jacobian is compared with
(F(T + d e_j) - F(T - d e_j)) / (2 d), whose error is O(d^2) (central difference, e.g.
Press et al., Numerical Recipes, 3rd ed., sec. 5.7), and every entry outside the arrow
pattern must be zero.  The demo materials and cases are invented.
"""
from __future__ import annotations

import numpy as np
import pytest

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
from fdwall.physics.convection import Convection
from fdwall.schedule import Schedule
from fdwall.solver import native as K
from fdwall.solver.layout import N_EX, system_args
from fdwall.system import build_system

KT = material_from_dict("demo-kT", {"k": {"T": [250.0, 500.0, 900.0], "values": [0.05, 0.09, 0.2]},
                                    "cp": {"T": [250.0, 900.0], "values": [800.0, 1100.0]},
                                    "rho": 120.0})
STEEL = material_from_dict("demo-steel", {"k": 40.0, "cp": 480.0, "rho": 7800.0})
RUN = RunSettings(duration=600.0)


def _slab(inner, outer, contact=(), heater=None, control=None):
    w = Wall((Layer(STEEL, 0.002), Layer(KT, 0.05), Layer(STEEL, 0.001)), area=1.5,
             interface_resistance=contact, name="demo")
    return Case(run=RUN, wall=w, inner=inner, outer=outer, heater=heater,
                control=control or Control(), name="demo jacobian")


def _enclosure():
    w1 = Wall((Layer(STEEL, 0.001), Layer(KT, 0.06)), area=2.0, name="shell")
    w2 = Wall((Layer(KT, 0.04),), area=0.5, name="door")
    walls = (EnclosureWall(w1, Face.exchange(293.15, 8.0, emissivity=0.8, surroundings=290.0),
                           inner_face_convection=12.0, inner_face_emissivity=0.7),
             EnclosureWall(w2, Face.exchange(293.15, 6.0), inner_face_convection=Convection.chamber(
                 "wall", size=0.5)))
    return Case(run=RUN, walls=walls,
                chamber=Chamber(heat_capacity=8e3, room_temperature=293.15, leakage=0.001, extra_loss=0.4),
                heater=Heater(900.0, resistance_coefficient=2e-3), control=Control(), name="demo box")


CASES = {
    "conduction, k(T), contact, fixed films": lambda: _slab(
        Face.exchange(573.15, 20.0), Face.exchange(293.15, 6.0), contact=(0.0, 0.01)),
    "convection correlation": lambda: _slab(
        Face.exchange(573.15, 20.0),
        Face.exchange(293.15, Convection.natural_vertical(1.2))),
    "radiation, emissivity table": lambda: _slab(
        Face.exchange(573.15, 20.0, emissivity=Schedule((300.0, 700.0), (0.3, 0.8)),
                      surroundings=600.0),
        Face.exchange(293.15, 5.0, emissivity=0.9, surroundings=280.0)),
    "fixed temperature and flux": lambda: _slab(
        Face.fixed(523.15), Face(heat_flux=-150.0)),
    "heater with falling power": lambda: _slab(
        Face.exchange(293.15, 5.0), Face.exchange(293.15, 5.0),
        heater=Heater(800.0, placement="inner_face", resistance_coefficient=3e-3, rated_at=293.15)),
    "chamber, leakage, films and radiation to it": _enclosure,
}


def _assemble(sysm, T):
    nun, nf = sysm.n_unknowns, sysm.face_i.shape[0]
    F, Cap, H = np.empty(nun), np.empty(nun), np.empty(nun)
    J = [np.empty(nun) for _ in range(5)]
    qf, hc, hr, extra = np.empty(nf), np.empty(nf), np.empty(nf), np.zeros(N_EX)
    K.assemble(T, 100.0, 0.0, -1.0, *system_args(sysm), F, Cap, H, *J, qf, hc, hr, extra)
    return F, J


def _dense(sysm, J):
    Jd, Jl, Ju, Jcol, Jrow = J
    nun, N = sysm.n_unknowns, sysm.n_nodes
    A = np.zeros((nun, nun))
    for a, b in sysm.chains:
        for i in range(a, b + 1):
            A[i, i] = Jd[i]
            if i > a:
                A[i, i - 1] = Jl[i]
            if i < b:
                A[i, i + 1] = Ju[i]
    if sysm.has_chamber:
        A[:N, N] = Jcol[:N]
        A[N, :N] = Jrow[:N]
        A[N, N] = Jd[N]
    return A


@pytest.mark.parametrize("name", list(CASES))
def test_jacobian_matches_central_differences(name):
    case = CASES[name]()
    sysm = build_system(case)
    nun = sysm.n_unknowns
    rng = np.random.default_rng(7)
    # a smooth profile with some noise, away from the table knots (250, 500, 900 K)
    T = np.linspace(560.0, 320.0, nun) + rng.uniform(-3.0, 3.0, nun)
    F0, J = _assemble(sysm, T)
    A = _dense(sysm, J)
    d = 1e-3
    fd = np.empty((nun, nun))
    for j in range(nun):
        Tp, Tm = T.copy(), T.copy()
        Tp[j] += d
        Tm[j] -= d
        fd[:, j] = (_assemble(sysm, Tp)[0] - _assemble(sysm, Tm)[0]) / (2 * d)
    scale = np.max(np.abs(fd))
    # the convection correlation's own slope is a one-sided difference (1e-3 K) inside the
    # kernel: allow its truncation error; every other term is differentiated exactly
    rel = 2e-3 if "correlation" in name or "chamber" in name else 1e-6
    err = np.abs(A - fd)
    assert np.all(err <= rel * np.abs(fd) + 1e-7 * scale), (name, np.unravel_index(
        np.argmax(err - rel * np.abs(fd)), err.shape))
    # the arrow pattern holds everything: nothing outside it depends on T
    outside = _dense(sysm, [np.ones(nun)] * 5) == 0.0
    assert np.all(np.abs(fd[outside]) <= 1e-7 * scale), name
    assert scale > 0.0
