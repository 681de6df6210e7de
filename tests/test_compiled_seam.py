"""The Python helpers below the solver layer call the build of the compiled entry points that
fdwall.solver.native chose, through fdwall.compiled, without importing the solver.

Values are checked against outside references: the film coefficient of a vertical plate
against ht's Churchill-Chu correlation with CoolProp air properties (as in
tests/test_physics_convection.py), the conductance and heat capacity of a one-layer slab
against k A / L and rho cp V (Fourier's law and the definition of heat capacity).
"""
from __future__ import annotations

import numpy as np
import pytest

import fdwall
from fdwall import compiled
from fdwall.errors import InternalError
from fdwall.solver import native

SLAB = fdwall.Case(
    wall=fdwall.Wall(layers=(fdwall.Layer(fdwall.get_material("mineral-wool-128"), 0.1,
                                          cells=4),), area=2.0),
    inner=fdwall.Face.fixed(400.0), outer=fdwall.Face.fixed(300.0),
    run=fdwall.RunSettings(duration=60.0))


def _counting(monkeypatch, name):
    calls = []
    real = getattr(native, name)

    def counted(*a):
        calls.append(name)
        return real(*a)
    monkeypatch.setattr(native, name, counted)
    return calls


def test_convection_h_goes_through_natives_build(monkeypatch):
    CoolProp = pytest.importorskip("CoolProp.CoolProp")
    ht = pytest.importorskip("ht")
    calls = _counting(monkeypatch, "h_conv")
    Ts, Tf, L = 350.0, 293.15, 1.0
    h = fdwall.Convection.natural_vertical(L).h(Ts, Tf)
    assert calls == ["h_conv"]
    # reference: ht Churchill-Chu, CoolProp air at the film temperature (1 %, module doc of
    # fdwall.physics.convection)
    Tm = 0.5 * (Ts + Tf)
    PS = CoolProp.PropsSI
    k = PS("L", "T", Tm, "P", 101325.0, "Air")
    mu = PS("V", "T", Tm, "P", 101325.0, "Air")
    rho = PS("D", "T", Tm, "P", 101325.0, "Air")
    pr = PS("Prandtl", "T", Tm, "P", 101325.0, "Air")
    nu = mu / rho
    gr = 9.80665 * (Ts - Tf) / Tm * L ** 3 / nu ** 2
    ref = ht.conv_free_immersed.Nu_vertical_plate_Churchill(pr, gr) * k / L
    assert h == pytest.approx(ref, rel=0.01)


def test_system_properties_go_through_natives_build(monkeypatch):
    calls = _counting(monkeypatch, "mat_eval")
    sysm = fdwall.build_system(SLAB)
    mat = SLAB.wall.layers[0].material
    G = sysm.conductances(np.full(sysm.n_nodes, 293.15))
    assert "mat_eval" in calls
    # links in series: 1 / sum(1/G) = k A / L (Fourier's law, uniform temperature)
    links = G[:sysm.n_nodes - 1]
    k = float(mat.k(293.15))
    assert 1.0 / np.sum(1.0 / links) == pytest.approx(k * 2.0 / 0.1, rel=1e-9)
    C = sysm.capacities(np.full(sysm.n_unknowns, 293.15))
    assert C.sum() == pytest.approx(mat.rho * float(mat.cp(293.15)) * 2.0 * 0.1, rel=1e-9)


def test_entry_without_a_provider_is_an_internal_error(monkeypatch):
    monkeypatch.setattr(compiled, "_SOURCE", None)
    with pytest.raises(InternalError, match="before fdwall.solver.native was loaded"):
        compiled.entry("mat_eval")
    assert compiled.entry("h_conv", len) is len      # a helper's own default is used
