"""The system is built once per loaded case, and reused per wall shape across variants.

Checks of the software's bookkeeping (house rules, no outside source) plus one physics check:
the steady heat flow of a one-layer wall between two fixed film coefficients, with the
conductivity scaled, against the series-resistance formula q = dT / (1/h1 + L/k + 1/h2)
(Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed., sec. 3.1, eq. 3.19).
"""
from __future__ import annotations

import dataclasses
import pathlib

import numpy as np
import tomllib

import fdwall.system as fsys
from fdwall.case import case_from_dict, case_warnings
from fdwall.system import build_system, handed_system

CASES = pathlib.Path(__file__).resolve().parents[1] / "cases"

ARRAYS = ("node_i", "node_f", "chains", "face_i", "face_f", "hpar", "m_off", "mtab", "s_off",
          "stab", "ch_i", "ch_f", "ctl_i", "ctl_f", "dirich_node", "dirich_sched",
          "dirich_face", "breakpoints", "breakpoint_jumps", "external", "layer_of_half")


def _same(a, b):
    for k in ARRAYS:
        x, y = getattr(a, k), getattr(b, k)
        assert x.shape == y.shape and x.dtype == y.dtype, k
        assert np.array_equal(x, y), k
    assert a.offsets == b.offsets and a.n_nodes == b.n_nodes
    assert a.face_names == b.face_names and a.layer_names == b.layer_names
    for ma, mb in zip(a.meshes, b.meshes):
        for f in dataclasses.fields(ma):
            assert np.array_equal(np.asarray(getattr(ma, f.name)),
                                  np.asarray(getattr(mb, f.name))), f.name


def _base():
    return tomllib.loads((CASES / "curing-oven-panel.toml").read_text())


def test_loader_hands_its_system_over_once(monkeypatch):
    calls = []
    real = fsys.mesh_wall
    monkeypatch.setattr(fsys, "mesh_wall", lambda w, *a, **k: calls.append(w) or real(w, *a, **k))
    case = case_from_dict(_base(), "panel.toml")
    assert len(calls) == 1                      # the loader's check built the system
    assert handed_system(case) is not None
    case_warnings(case)                         # read-only use leaves it in place
    s1 = build_system(case)
    assert len(calls) == 1                      # taken over, not built again
    assert handed_system(case) is None
    s2 = build_system(case)                     # a second user gets its own system
    assert s2 is not s1 and len(calls) == 2
    _same(s1, s2)


def test_a_study_variant_builds_its_system_once(monkeypatch):
    from fdwall.analyses.study_outputs import evaluate_variant
    calls = []
    real = fsys.mesh_wall
    monkeypatch.setattr(fsys, "mesh_wall", lambda w, *a, **k: calls.append(w) or real(w, *a, **k))
    row = evaluate_variant(_base(), {"wall.layers[1].thickness": "90 mm"}, "v")
    assert row["status"] == "done", row["error"]
    assert len(calls) == 1


def test_a_replaced_case_does_not_take_the_handover():
    case = case_from_dict(_base(), "panel.toml")
    other = dataclasses.replace(case, name="other")
    s = build_system(other)
    assert s.case is other
    assert handed_system(case) is not None
