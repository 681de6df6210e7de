"""Verification of fdwall's steady solutions against exact steady conduction results.

For piecewise-constant conductivity the vertex-centred finite-volume scheme is exact at
steady state in all three geometries (each link carries the exact conductance of its shell:
A/dx, 2 pi L/ln(r2/r1), 4 pi/(1/r1 - 1/r2)), and with a conductivity linear in T the
Kirchhoff mean over each link makes it exact too.  So the steady checks use tight relative
tolerances (1e-9), limited only by the Newton stopping test (1e-9 K) and round-off; a wrong
film, contact or geometry factor would show up at the percent level.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
import reference as ref

from fdwall.materials import Constant, Material, Table
from fdwall.model import Case, Face, Layer, RunSettings, Wall
from fdwall.solver import run, solve_steady

RTOL = 1e-9


def _mat(name, k, cp=1000.0, rho=1000.0):
    return Material(name, k=Constant(k), cp=Constant(cp), rho=rho)


# Invented demo constructions (round numbers, not product data): a steel liner, a mineral
# insulation and an aluminium jacket.
LINER = _mat("demo-liner", 40.0, cp=500.0, rho=7800.0)
INSUL = _mat("demo-insulation", 0.05, cp=900.0, rho=120.0)
JACKET = _mat("demo-jacket", 200.0, cp=900.0, rho=2700.0)


def _steady(wall, inner, outer):
    case = Case(run=RunSettings(duration=3600.0), wall=wall, inner=inner, outer=outer)
    return case, solve_steady(case)


def _nodes_at_faces_and_interfaces(ss, wall_index=0):
    """Inner face, both sides of every interface, outer face (matches the network helpers)."""
    sysm = ss.system
    m = sysm.meshes[wall_index]
    T = ss.wall_T(wall_index)
    out = [T[0]]
    for j, node in enumerate(m.interface_nodes):
        out.append(T[node])
        # with a contact resistance the outer side is the next node (same radius)
        out.append(T[node + 1] if m.x[node + 1] == m.x[node] else T[node])
    out.append(T[-1])
    return np.array(out)


@pytest.mark.parametrize("area", [1.0, 2.5])
def test_composite_slab_with_films_and_contacts(area, fp_strict):
    # Series network, Incropera §3.1.3-3.1.4 (eq. 3.19 and the contact resistance R''_tc).
    layers = [(0.006, 40.0), (0.10, 0.05), (0.001, 200.0)]
    contacts = [2e-3, 5e-4]
    h_in, h_out, T_in, T_out = 25.0, 8.0, 873.15, 293.15
    wall = Wall((Layer(LINER, 0.006), Layer(INSUL, 0.10), Layer(JACKET, 0.001)),
                area=area, interface_resistance=tuple(contacts))
    case, ss = _steady(wall, Face.exchange(T_in, h_in), Face.exchange(T_out, h_out))
    q, T_ref = ref.slab_network(layers, contacts, h_in, h_out, T_in, T_out, area=area)
    assert ss.face_flow[0] == pytest.approx(q, rel=RTOL)        # into the wall at the hot face
    assert ss.face_flow[1] == pytest.approx(-q, rel=RTOL)       # leaves at the cold face
    np.testing.assert_allclose(_nodes_at_faces_and_interfaces(ss), T_ref, rtol=RTOL)
    assert abs(ss.balance) < 1e-9 * q
    # interior nodes of a constant-k layer lie on a straight line between its end nodes
    x, T = ss.x(), ss.wall_T()
    a, b = ss.system.meshes[0].layer_nodes[1]
    lin = T[a] + (T[b] - T[a]) * (x[a:b + 1] - x[a]) / (x[b] - x[a])
    np.testing.assert_allclose(T[a:b + 1], lin, rtol=RTOL)


def test_composite_cylinder_with_films_and_contact():
    # Insulated pipe per metre and for 2.5 m: R = ln(r2/r1)/(2 pi k L) per layer, films
    # 1/(h 2 pi r L), contact R''/(2 pi r L) (Incropera §3.3.1, eq. 3.28).
    r_in, length = 0.05, 2.5
    layers = [(0.004, 40.0), (0.08, 0.05), (0.0008, 200.0)]
    contacts = [0.0, 1e-3]
    h_in, h_out, T_in, T_out = 150.0, 10.0, 523.15, 283.15
    wall = Wall((Layer(LINER, 0.004), Layer(INSUL, 0.08), Layer(JACKET, 0.0008)),
                shape="cylinder", inner_radius=r_in, length=length, interface_resistance=tuple(contacts))
    case, ss = _steady(wall, Face.exchange(T_in, h_in), Face.exchange(T_out, h_out))
    q, T_ref = ref.cylinder_network(r_in, layers, contacts, h_in, h_out, T_in, T_out, length)
    assert ss.face_flow[0] == pytest.approx(q, rel=RTOL)
    assert ss.face_flow[1] == pytest.approx(-q, rel=RTOL)
    np.testing.assert_allclose(_nodes_at_faces_and_interfaces(ss), T_ref, rtol=RTOL)
    # inside the insulation T is linear in ln r (Incropera eq. 3.26)
    m = ss.system.meshes[0]
    a, b = m.layer_nodes[1]
    r, T = m.x, ss.wall_T()
    lin = T[a] + (T[b] - T[a]) * np.log(r[a:b + 1] / r[a]) / math.log(r[b] / r[a])
    np.testing.assert_allclose(T[a:b + 1], lin, rtol=RTOL)


def test_composite_sphere_with_films():
    # Spherical vessel wall: R = (1/r1 - 1/r2)/(4 pi k) (Incropera §3.4, eq. 3.36).
    r_in = 0.3
    layers = [(0.01, 40.0), (0.12, 0.05)]
    h_in, h_out, T_in, T_out = 40.0, 6.0, 673.15, 298.15
    wall = Wall((Layer(LINER, 0.01), Layer(INSUL, 0.12)), shape="sphere", inner_radius=r_in,
                interface_resistance=(1e-3,))
    case, ss = _steady(wall, Face.exchange(T_in, h_in), Face.exchange(T_out, h_out))
    q, T_ref = ref.sphere_network(r_in, layers, [1e-3], h_in, h_out, T_in, T_out)
    assert ss.face_flow[0] == pytest.approx(q, rel=RTOL)
    assert ss.face_flow[1] == pytest.approx(-q, rel=RTOL)
    np.testing.assert_allclose(_nodes_at_faces_and_interfaces(ss), T_ref, rtol=RTOL)


def _linear_k_material(k0, b, T0, Tlo=200.0, Thi=1500.0):
    """k = k0 (1 + b (T - T0)) exactly on [Tlo, Thi] as a two-point Table (linear between)."""
    return Material("demo-linear-k", k=Table([Tlo, Thi], [k0 * (1 + b * (Tlo - T0)),
                                                         k0 * (1 + b * (Thi - T0))]),
                    cp=Constant(1000.0), rho=500.0)


def test_slab_conductivity_linear_in_temperature():
    # k rises 2.5x from 300 K to 900 K, like a calcium-silicate or a refractory brick.
    k0, b, T0, L, T1, T2 = 0.05, 2.5e-3, 300.0, 0.12, 900.0, 320.0
    wall = Wall((Layer(_linear_k_material(k0, b, T0), L, cells=16),))
    case, ss = _steady(wall, Face.fixed(T1), Face.fixed(T2))
    x = ss.x()
    q, T_ref = ref.slab_linear_k(k0, b, T0, L, T1, T2, x)
    # exact flux through mean conductivity, Incropera §3.2 / Ozisik Kirchhoff transform
    assert ss.face_flow[0] == pytest.approx(q, rel=RTOL)
    assert ss.face_flow[1] == pytest.approx(-q, rel=RTOL)
    np.testing.assert_allclose(ss.wall_T(), T_ref, rtol=RTOL)
    # the constant-k answer at the cold-face conductivity is far off: the check can fail
    assert abs(k0 * (1 + b * (T2 - T0)) * (T1 - T2) / L - q) > 0.3 * q


def test_cylinder_conductivity_linear_in_temperature():
    k0, b, T0, r1, t, T1, T2, length = 0.04, 3e-3, 300.0, 0.04, 0.06, 700.0, 310.0, 1.5
    wall = Wall((Layer(_linear_k_material(k0, b, T0), t, cells=12),), shape="cylinder",
                inner_radius=r1, length=length)
    case, ss = _steady(wall, Face.fixed(T1), Face.fixed(T2))
    Q = ref.cylinder_linear_k(k0, b, T0, r1, r1 + t, T1, T2, length)
    assert ss.face_flow[0] == pytest.approx(Q, rel=RTOL)
    assert ss.face_flow[1] == pytest.approx(-Q, rel=RTOL)


@pytest.mark.parametrize("eps, h", [(0.9, 5.0), (0.1, 5.0), (0.9, 0.0)])
def test_radiating_outer_face(eps, h, fp_strict):
    # Surface energy balance k (T1 - Ts)/L = h (Ts - Tf) + eps sigma (Ts^4 - Tsur^4) solved by
    # scipy's brentq (Incropera eqs. 1.7 and 1.12).
    k, L, T1, Tf, Tsur = 0.5, 0.08, 773.15, 293.15, 283.15
    wall = Wall((Layer(_mat("demo-board", k), L, cells=6),))
    outer = Face(fluid_temperature=Tf, convection=h, emissivity=eps, surroundings_temperature=Tsur)
    case, ss = _steady(wall, Face.fixed(T1), outer)
    Ts, q = ref.radiating_slab(T1, L, k, h, Tf, eps, Tsur)
    assert ss.face_T[1] == pytest.approx(Ts, rel=RTOL)
    assert ss.face_flow[1] == pytest.approx(-q, rel=1e-8)
    assert ss.face_flow[0] == pytest.approx(q, rel=1e-8)
    # the radiative film coefficient the solver reports: eps sigma (Ts^2 + Tr^2)(Ts + Tr)
    # (Incropera eq. 1.9)
    assert ss.h_rad[1] == pytest.approx(eps * ref.SIGMA * (Ts ** 2 + Tsur ** 2) * (Ts + Tsur),
                                        rel=1e-8)


def test_radiating_face_transient_reaches_brentq_state():
    """A thin radiating wall run in time settles on the brentq surface balance."""
    k, L, T1, Tf, Tsur, eps, h = 0.5, 0.02, 773.15, 293.15, 283.15, 0.8, 4.0
    wall = Wall((Layer(_mat("demo-board", k), L, cells=8),))
    # diffusion time L^2/alpha = 800 s; 30000 s is ~40 of them
    case = Case(run=RunSettings(duration=30000.0, start_temperature=293.15, tolerance=1e-3),
                wall=wall, inner=Face.fixed(T1),
                outer=Face(fluid_temperature=Tf, convection=h, emissivity=eps, surroundings_temperature=Tsur))
    res = run(case)
    Ts, q = ref.radiating_slab(T1, L, k, h, Tf, eps, Tsur)
    assert res.face_T[-1, 1] == pytest.approx(Ts, abs=2e-3)
    assert res.face_flow[-1, 0] == pytest.approx(q, rel=1e-4)      # Dirichlet face flow
    assert res.face_flow[-1, 1] == pytest.approx(-q, rel=1e-4)


def test_dirichlet_faces_heat_flows():
    # Both faces held: q = dT / sum(L/k) per unit area (Incropera eq. 3.19 without films);
    # steady face flows come from the node balance of the held nodes.
    layers = [(0.006, 40.0), (0.10, 0.05), (0.001, 200.0)]
    T1, T2, area = 700.0, 330.0, 3.0
    wall = Wall((Layer(LINER, 0.006), Layer(INSUL, 0.10), Layer(JACKET, 0.001)), area=area)
    case, ss = _steady(wall, Face.fixed(T1), Face.fixed(T2))
    q, T_ref = ref.slab_network(layers, [0.0, 0.0], None, None, T1, T2, area=area)
    assert ss.face_flow[0] == pytest.approx(q, rel=RTOL)
    assert ss.face_flow[1] == pytest.approx(-q, rel=RTOL)
    np.testing.assert_allclose(_nodes_at_faces_and_interfaces(ss), T_ref, rtol=RTOL)
    # the same held faces run in time: the transient face flows settle on the same q
    # (insulation diffusion time ~ 0.1^2 / (0.05/108000) ~ 2e4 s; 4e5 s is ~20 of them)
    case_t = Case(run=RunSettings(duration=4e5, start_temperature=T2, tolerance=1e-3), wall=wall,
                  inner=Face.fixed(T1), outer=Face.fixed(T2))
    res = run(case_t)
    assert res.face_flow[-1, 0] == pytest.approx(q, rel=1e-4)
    assert res.face_flow[-1, 1] == pytest.approx(-q, rel=1e-4)
    # ... and the heat taken in, less what left, is what the wall stored (first law)
    assert res.face_energy[-1].sum() == pytest.approx(res.stored[-1], rel=1e-6)


def test_fp_strict_fixture_is_active(fp_strict):
    """The opt-in fixture of conftest.py really turns numpy floating-point errors into
    exceptions (so the tests above that request it would see an overflow or 0/0)."""
    with pytest.raises(FloatingPointError):
        np.float64(1.0) / np.float64(0.0)
