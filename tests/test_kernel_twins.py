"""Each compiled term of the assembly against its plain numpy twin (tests/kernel_twins.py).

The twins are written from the layouts and the physics (Kirchhoff links over exact
integrals of piecewise-linear tables, Newton's law of cooling, Stefan-Boltzmann radiation,
UA (Tc - T_room) with rho*cp of room air from CoolProp, the heater law P0/(1 + alpha dT));
they share no code with the kernels.  The cases are those of tests/test_jacobian_fd.py, one
per physical term (demo data).
"""
from __future__ import annotations

import kernel_twins as tw
import numpy as np
import pytest
from CoolProp.CoolProp import PropsSI
from test_jacobian_fd import CASES, _dense

from fdwall.solver import kernels as Kr
from fdwall.solver.layout import CHI_AMBIENT, EX_HEATER, N_EX, system_args
from fdwall.system import build_system


def _zeros(sysm):
    n, nf = sysm.n_unknowns, sysm.face_i.shape[0]
    return ([np.zeros(n) for _ in range(8)], [np.zeros(nf) for _ in range(3)],
            np.zeros(N_EX))


def _state(sysm):
    rng = np.random.default_rng(11)
    return np.linspace(560.0, 320.0, sysm.n_unknowns) + rng.uniform(-3.0, 3.0, sysm.n_unknowns)


def _close(a, b, rel, what):
    scale = max(np.max(np.abs(b)), 1e-300)
    assert np.all(np.abs(a - b) <= rel * np.abs(b) + 1e-12 * scale), what


@pytest.mark.parametrize("name", list(CASES))
def test_terms_match_their_numpy_twins(name):
    sysm = build_system(CASES[name]())
    T, t = _state(sysm), 100.0
    N = sysm.n_nodes
    # conduction
    (F, Cap, H, Jd, Jl, Ju, Jcol, Jrow), _, _ = _zeros(sysm)
    Kr.conduction(T, sysm.node_i, sysm.node_f, sysm.m_off, sysm.mtab, F, Cap, H, Jd, Jl, Ju)
    Ft, Jt, Ct, Ht = tw.conduction(sysm, T)
    _close(F[:N], Ft, 1e-10, "conduction F")
    _close(_dense(sysm, (Jd, Jl, Ju, Jcol, Jrow))[:N, :N], Jt, 1e-10, "conduction J")
    _close(Cap[:N], Ct, 1e-12, "capacity")
    _close(H[:N], Ht, 1e-12, "enthalpy")
    # faces: films and radiation
    (F, Cap, H, Jd, Jl, Ju, Jcol, Jrow), (qf, hc, hr), _ = _zeros(sysm)
    Kr.faces(T, t, 0.0, sysm.face_i, sysm.face_f, sysm.hpar, sysm.s_off, sysm.stab,
             sysm.has_chamber, N, F, Jd, Jcol, Jrow, qf, hc, hr)
    Ft, Jt, qt = tw.faces(sysm, T, t)
    # the correlation's slope: forward difference in the kernel, central in the twin
    rel = 2e-3 if ("correlation" in name or "chamber" in name) else 1e-10
    _close(F, Ft, 1e-10, "faces F")
    _close(qf, qt, 1e-10, "face flows")
    _close(_dense(sysm, (Jd, Jl, Ju, Jcol, Jrow)), Jt, rel, "faces J")
    # chamber: rho*cp of room air at 1 atm from CoolProp (the kernel uses fdwall.physics.air)
    (F, Cap, H, Jd, Jl, Ju, Jcol, Jrow), _, extra = _zeros(sysm)
    Kr.chamber(T, t, 0.0, sysm.ch_i, sysm.ch_f, sysm.m_off, sysm.mtab, sysm.s_off, sysm.stab,
               N, F, Cap, H, Jd, extra)
    if sysm.has_chamber:
        T_room = tw.schedule(sysm, sysm.ch_i[CHI_AMBIENT], t)
        rc = PropsSI("D", "T", T_room, "P", 101325.0, "Air") * PropsSI("C", "T", T_room, "P",
                                                                     101325.0, "Air")
        Ft, Jt, loss = tw.chamber(sysm, T, t, rc)
        _close(F, Ft, 2e-3, "chamber F")
        _close(Jd, np.diag(Jt), 2e-3, "chamber J")
    else:
        assert not F.any() and not extra.any()
    # heater
    (F, Cap, H, Jd, Jl, Ju, Jcol, Jrow), _, extra = _zeros(sysm)
    Kr.heater(T, t, 0.0, -1.0, sysm.ctl_i, sysm.ctl_f, sysm.s_off, sysm.stab, F, Jd, extra)
    Ft, Jt, P = tw.heater(sysm, T, t, -1.0)
    _close(F, Ft, 1e-12, "heater F")
    _close(Jd, np.diag(Jt), 1e-12, "heater J")
    assert extra[EX_HEATER] == pytest.approx(P, rel=1e-12)


def test_assembly_is_the_sum_of_its_terms():
    sysm = build_system(CASES["chamber, leakage, films and radiation to it"]())
    T, t = _state(sysm), 100.0

    (F, Cap, H, Jd, Jl, Ju, Jcol, Jrow), (qf, hc, hr), extra = _zeros(sysm)
    Kr.assemble(T, t, 0.0, -1.0, *system_args(sysm), F, Cap, H, Jd, Jl, Ju, Jcol, Jrow, qf, hc,
                hr, extra)
    total = tw.conduction(sysm, T)[0]
    Ff = tw.faces(sysm, T, t)[0]
    Ft = np.concatenate([total, [0.0]]) + Ff + tw.heater(sysm, T, t, -1.0)[0]
    T_room = tw.schedule(sysm, sysm.ch_i[CHI_AMBIENT], t)
    rc = PropsSI("D", "T", T_room, "P", 101325.0, "Air") * PropsSI("C", "T", T_room, "P",
                                                                 101325.0, "Air")
    Ft = Ft + tw.chamber(sysm, T, t, rc)[0]
    _close(F, Ft, 2e-3, "assembled F")
