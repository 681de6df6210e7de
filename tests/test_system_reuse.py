"""The case loader builds no system; a study variant builds its system once, and reuses the
meshes of the previous variant per wall shape.

Checks of the software's bookkeeping (house rules, no outside source) plus one physics check:
the steady heat flow of a one-layer wall between two fixed film coefficients, with the
conductivity scaled, against the series-resistance formula q = dT / (1/h1 + L/k + 1/h2)
(Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed., sec. 3.1, eq. 3.19).
"""
from __future__ import annotations

import copy
import dataclasses
import pathlib

import numpy as np
import pytest
import tomllib

import fdwall
import fdwall.system as fsys
from fdwall.case import case_from_dict, case_warnings
from fdwall.system import build_system

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


def test_the_loader_builds_no_system(monkeypatch):
    # DESIGN.md, layer 4: case I/O parses and validates, builds no system
    calls = []
    real = fsys.mesh_wall
    monkeypatch.setattr(fsys, "mesh_wall", lambda w, *a, **k: calls.append(w) or real(w, *a, **k))
    case = case_from_dict(_base(), "panel.toml")
    case_warnings(case)
    assert calls == []
    s1 = build_system(case)
    s2 = build_system(case)                     # every caller gets its own system
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


# ---------------------------------------------------------------- reuse per wall shape
def _load(base, edits):
    from fdwall.analyses.study_outputs import _set
    d = copy.deepcopy(base)
    for p, v in edits.items():
        _set(d, p, v, "t")
    return case_from_dict(d, "t.toml")


NON_SHAPE = [  # curing-oven panel: only face conditions and finishes change
    {"wall.inner_face.film_coefficient": "18 W/m2/K"},
    {"wall.outer_face.fluid_temperature": "35 degC",
     "wall.outer_face.surroundings_temperature": "30 degC"},
    {"wall.outer_face.emissivity": 0.3},
    {"wall.inner_face.fluid_temperature": [["0 min", "25 degC"], ["30 min", "180 degC"]]},
]


@pytest.mark.parametrize("edits", NON_SHAPE)
def test_reused_build_equals_a_fresh_build(edits):
    base = _base()
    prev = build_system(case_from_dict(copy.deepcopy(base), "base.toml"))
    case = _load(base, edits)
    fresh = build_system(case)                    # a build without like
    reused = build_system(case, like=prev)
    assert fresh.mesh_reused == [False] and reused.mesh_reused == [True]
    assert reused.meshes[0] is prev.meshes[0]
    _same(reused, fresh)


def test_heater_variants_reuse_the_mesh():
    base = tomllib.loads((CASES / "lab-furnace-wall.toml").read_text())
    prev = build_system(case_from_dict(copy.deepcopy(base), "base.toml"))
    case = _load(base, {"wall.inner_face.heater_power": "2.5 kW"})
    fresh = build_system(case)                    # a build without like
    reused = build_system(case, like=prev)
    assert all(reused.mesh_reused) and not any(fresh.mesh_reused)
    _same(reused, fresh)


@pytest.mark.parametrize("edits", [{"wall.layers[1].thickness": "120 mm"},
                                   {"wall.layers[1].cells": 7},
                                   {"wall.area": "3 m2"}])
def test_a_changed_shape_falls_back_to_a_full_build(edits):
    base = _base()
    prev = build_system(case_from_dict(copy.deepcopy(base), "base.toml"))
    case = _load(base, edits)
    fresh = build_system(case)
    reused = build_system(case, like=prev)
    assert reused.mesh_reused == [False]
    assert reused.meshes[0] is not prev.meshes[0]
    _same(reused, fresh)


def test_meshes_are_read_only():
    m = build_system(case_from_dict(_base(), "base.toml")).meshes[0]
    with pytest.raises(ValueError):
        m.vol_left[0] = 1.0


@pytest.mark.parametrize("f", [0.5, 0.8, 1.25, 2.0])
def test_conductivity_factor_variants_with_reuse_match_series_resistance(f):
    from study_cases import ONE_LAYER_WALL
    base = tomllib.loads(ONE_LAYER_WALL)
    prev = build_system(case_from_dict(copy.deepcopy(base), "base.toml"))
    case = _load(base, {"wall.layers[0].conductivity_factor": f})
    sysm = build_system(case, like=prev)
    # the problem-graded mesh follows the layer's diffusivity (fdwall.mesh), so a conductivity
    # factor may change it: the mesh is reused exactly when its shape key is unchanged
    assert sysm.mesh_reused == [sysm.shape_keys == prev.shape_keys]
    ss = fdwall.solve_steady(case, system=sysm)
    # Incropera sec. 3.1: series resistance of two films and the scaled layer
    q = (200.0 - 20.0) / (1 / 20.0 + 0.05 / (0.1 * f) + 1 / 10.0)
    assert float(ss.face_T[-1]) == pytest.approx(293.15 + q / 10.0, abs=1e-6)
    assert float(-ss.face_flow[-1]) == pytest.approx(q, rel=1e-9)


def test_a_batch_gives_the_numbers_of_separate_variants():
    from fdwall.analyses.study_outputs import evaluate_variant
    from fdwall.analyses.study_run import _batch
    base = _base()
    items = [(i, e, f"v{i}") for i, e in enumerate(NON_SHAPE + [
        {"wall.layers[1].thickness": "80 mm"}, {"wall.inner_face.film_coefficient": "30 W/m2/K"}])]
    outs = ("outer_T_K", "loss_W", "peak_skin_T_K", "stored_energy_J")
    got = _batch(base, items, outs, None)
    for (i, e, name), (j, row) in zip(items, got):
        ref = evaluate_variant(base, e, name, outs)
        assert i == j and row["status"] == ref["status"] == "done"
        for k in outs:
            assert row[k] == ref[k], (e, k)


# ---------------------------------------------------------------- copy on write of variants
@pytest.mark.parametrize("name", sorted(p.name for p in CASES.glob("*.toml")))
def test_the_loader_only_reads_its_input(name):
    # copy on write of variants (study_outputs.edited) relies on this
    data = tomllib.loads((CASES / name).read_text())
    pristine = copy.deepcopy(data)
    case_from_dict(data, name)
    assert data == pristine


def test_edited_copies_only_the_edited_paths():
    from fdwall.analyses.study_outputs import _set, edited
    base = _base()
    pristine = copy.deepcopy(base)
    edits = {"wall.layers[1].thickness": "90 mm", "wall.layers[2].thickness": "2 mm",
             "wall.inner_face.film_coefficient": "18 W/m2/K"}
    got = edited(base, edits, "v")
    ref = copy.deepcopy(base)
    for p, v in edits.items():
        _set(ref, p, v, "v")
    assert got == ref and base == pristine
    assert got["run"] is base["run"]                       # untouched tables are shared
    assert got["wall"]["layers"][0] is base["wall"]["layers"][0]

