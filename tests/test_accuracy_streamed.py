"""The error estimate of streamed runs, and the estimate of the first switch-off under on/off
control (fdwall.solver.accuracy).

Sources:
- semi-infinite solid under a constant surface flux: Carslaw & Jaeger, Conduction of Heat in
  Solids, 2nd ed. 1959, sec. 2.9, eq. (7); Incropera et al., 6th ed., eq. 5.59;
- a box of thin, very conductive walls heated at constant power behaves as one lumped node,
  C dT/dt = P - (T - T_amb)/R, so T = T_amb + P R (1 - exp(-t / (R C))) (Incropera 6th ed.
  sec. 5.2, lumped capacitance); a thermostat switches off at the setpoint plus half its band
  (fdwall.model.Control: hysteresis band, total width), so the first switch-off is at
  t = -R C ln(1 - (T_off - T_amb) / (P R)).
"""
from __future__ import annotations

import os

import h5py
import numpy as np
import pytest

from fdwall.materials import Constant, Material
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
from fdwall.solver.transient import run

T0 = 300.0
K_W, RHO, CP = 1.0, 2000.0, 1000.0            # invented solid: k [W/m/K], rho [kg/m3], cp [J/kg/K]
ALPHA = K_W / (RHO * CP)
SOLID = Material("test-solid", k=K_W, cp=CP, rho=RHO, source="invented for the test")


def _parts(folder):
    return [f for f in os.listdir(folder) if f.endswith(".part") or f.startswith(".fdwall-")]


def _flux_slab():
    wall = Wall([Layer(SOLID, 0.5)], shape="slab", name="thick-slab")
    return Case(RunSettings(duration=3600.0, start_temperature=T0, output_every=60.0),
                wall=wall, inner=Face(heat_flux=5000.0), outer=Face(), name="semi-infinite")


def test_streamed_run_that_refines_stores_the_refined_run_and_leaves_no_temporaries(
        tmp_path, monkeypatch):
    # a mesh made coarse on purpose, so that the run refines; the stored file must hold the
    # refined run, equal to the in-memory one, and meet Carslaw & Jaeger 2.9 eq. 7
    import fdwall.mesh as M
    monkeypatch.setattr(M, "PENETRATION_FRACTION", 2.0)
    monkeypatch.setattr(M, "GROWTH", 1.6)
    monkeypatch.setattr(M, "MID_CELLS_FACTOR", 0.5)
    case = _flux_slab()
    mem = run(case, progress=False)
    assert mem.error_estimate["refinements"] >= 1
    path = tmp_path / "slab.h5"
    st = run(case, progress=False, store=path, window_bytes=4096)
    assert _parts(tmp_path) == [] and sorted(os.listdir(tmp_path)) == ["slab.h5"]
    assert st.error_estimate["margin"] == mem.error_estimate["margin"]
    with h5py.File(path, "r") as h:
        T = h["temperature"][()]
        x = h["mesh/wall_0/x"][()]
        t = h["time"][()]
        g = h["error_estimate"]
        assert int(g.attrs["refinements"]) == mem.error_estimate["refinements"]
        assert float(g.attrs["margin"]) == mem.error_estimate["margin"]
    assert x.size == mem.system.meshes[0].n
    np.testing.assert_array_equal(T, mem.T)
    q, s = 5000.0, np.sqrt(ALPHA * t)
    exact = T0 + 2.0 * q / K_W * s / np.sqrt(np.pi)     # C&J 2.9 eq. 7 at x = 0
    allow = np.maximum(0.005 * np.abs(exact - T0), 0.05)
    assert np.all(np.abs(T[:, 0] - exact) <= allow)


def test_streamed_estimate_equals_the_in_memory_estimate(tmp_path):
    case = _flux_slab()
    mem = run(case, progress=False)
    st = run(case, progress=False, store=tmp_path / "a.h5", window_bytes=2048)
    a, b = dict(mem.error_estimate), dict(st.error_estimate)
    a.pop("extra_wall_time_s"), b.pop("extra_wall_time_s")
    assert a == b
    assert _parts(tmp_path) == []


STEEL = Material(name="cond", k=Constant(2000.0), cp=Constant(500.0), rho=8000.0,
                 source="invented for the test")
H_OUT, P, T_AMB = 5.0, 2000.0, 293.15


def _box(setpoint, band):
    walls = [EnclosureWall(wall=Wall(layers=(Layer(STEEL, 0.001),), name=f"w{i}"),
                           outer=Face(fluid_temperature=T_AMB, convection=H_OUT),
                           inner_face_convection=1e5)
             for i in range(6)]
    ctl = Control(mode="thermostat", setpoint=setpoint, band=band)
    return Case(run=RunSettings(duration=3000.0, start_temperature=T_AMB, output_every=5.0),
                walls=walls, chamber=Chamber(heat_capacity=1.0e4, room_temperature=T_AMB),
                heater=Heater(power=P), control=ctl)


def test_first_switch_off_is_estimated_and_matches_the_lumped_solution():
    # per wall 1/(h A) + L/(k A) + 1/(h_in A), A = 1 m2; six in parallel (Incropera 5.2)
    R = (1 / H_OUT + 0.001 / 2000.0 + 1 / 1e5) / 6
    C = 1.0e4 + 6 * 8000 * 500 * 0.001
    sp, band = T_AMB + 30.0, 2.0
    t_off = -R * C * np.log(1.0 - (sp + band / 2 - T_AMB) / (P * R))
    res = run(_box(sp, band), progress=False)
    est = res.error_estimate
    sw = est.get("switching")
    assert sw is not None and "switch-off" in est["method"]
    # within 0.5 % of the lumped time: the walls are lumped to Bi ~ 1e-6, and the read-off
    # from the heater energy at 5-s outputs is exact for one switching in the interval
    assert sw["first_switch_off_s"] == pytest.approx(t_off, rel=5e-3)
    assert sw["error_s"] <= max(0.005 * t_off, 1.0) and sw["margin"] <= 1.0
    assert est["margin"] >= sw["margin"]


def test_face_flow_of_a_convective_face_meets_the_contract_for_flows():
    # fluid at 800 K, h = 200 W/m2/K on a thick slab (1 m2): the heat flow into the solid is
    # h (Tf - Ts) with Ts from Incropera 6th ed. eq. 5.60 at x = 0 (Carslaw & Jaeger 1959,
    # 2.7 eq. 1): (Ts - Ti)/(Tf - Ti) = 1 - exp(b^2) erfc(b), b = h sqrt(alpha t)/k.
    # The contract for flows: within max(0.5 % of the largest flow so far at that face, the
    # flow of the face film for 0.05 K) at every output (fdwall.solver.accuracy)
    from scipy.special import erfcx
    h, Tf = 200.0, 800.0
    wall = Wall([Layer(SOLID, 0.5)], shape="slab", name="thick-slab")
    case = Case(RunSettings(duration=3600.0, start_temperature=T0, output_every=60.0),
                wall=wall, inner=Face.exchange(Tf, h), outer=Face(), name="semi-infinite")
    res = run(case, progress=False)
    t = res.times[1:]                       # the flow at t = 0 is singular in the exact solution
    b = h * np.sqrt(ALPHA * t) / K_W
    Ts = T0 + (Tf - T0) * (1.0 - erfcx(b))
    q_exact = h * (Tf - Ts)                 # W into the solid through 1 m2
    q = np.abs(res.face_flow[1:, 0])
    allow = np.maximum(0.005 * np.maximum.accumulate(q_exact), h * 0.05)
    assert np.all(np.abs(q - q_exact) <= allow), float((np.abs(q - q_exact) / allow).max())
    est = res.error_estimate
    assert est["flow_margin"] <= 1.0 and est["meets_contract"] is True


def test_command_line_warns_when_outputs_are_closer_than_the_mesh_floor(tmp_path, capsys):
    # the mesh resolves the time floor (fdwall.mesh.TIME_FLOOR, 1 s; common practice, no
    # source): outputs every 0.5 s are outside the contract, and the run says so
    import json

    from fdwall import cli
    case = tmp_path / "fast.toml"
    case.write_text('''# Invented test case: a plate sampled faster than the mesh floor.
title = "fast outputs (invented)"
[run]
duration = "20 s"
start_temperature = "20 degC"
output_every = "0.5 s"
[wall]
name = "plate"
shape = "slab"
area = "1 m2"
[[wall.layers]]
name = "brick"
material = "fireclay-brick-dense"
thickness = "100 mm"
[wall.inner_face]
fluid_temperature = "400 degC"
film_coefficient = "10 W/m2/K"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "10 W/m2/K"
''')
    rc = cli.main(["run", str(case), "--out", str(tmp_path / "out"), "--quiet", "--no-plots"])
    assert rc == 0
    err = capsys.readouterr().err
    assert "warning: outputs are asked for closer than 1 s" in err
    summary = json.loads((tmp_path / "out" / "fast-summary.json").read_text())
    assert any(w.startswith("outputs are asked for closer") for w in summary["input_warnings"])
