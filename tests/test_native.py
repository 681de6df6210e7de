"""Ahead-of-time kernels (fdwall.solver.native): same answers as the just-in-time kernels,
safe fallback for arguments of other types, stale builds ignored.

The physics of both paths is checked by the rest of the suite (which runs through
``fdwall.solver.native``, i.e. the ahead-of-time module when it is built, as in `.ci/run`);
here the two compiled forms of the same source are held to each other, and the guard rails
that keep a wrong or stale module from being called are exercised.  Source: none needed for
the agreement of two builds of one source; the outside checks of the numbers are the
verification tests (Carslaw & Jaeger, Incropera, CoolProp ...), which run on the compiled
module in CI.
"""
from __future__ import annotations

import os
import pathlib

import numpy as np
import pytest

from fdwall.case import load_case
from fdwall.solver import native, run

CASES = sorted((pathlib.Path(__file__).resolve().parent.parent / "cases").glob("*.toml"))
needs_aot = pytest.mark.skipif(native.MODE != "aot",
                               reason=f"ahead-of-time kernels not in use: {native.STATUS}")


def test_ci_uses_the_ahead_of_time_kernels():
    # .ci/run builds the module and sets FDWALL_EXPECT_AOT=1: there the module must load
    if os.environ.get("FDWALL_EXPECT_AOT") != "1":
        pytest.skip("FDWALL_EXPECT_AOT not set (only .ci/run requires the built module)")
    assert native.MODE == "aot", native.STATUS


def _jit_everywhere(monkeypatch):
    for name, fn in native._jit_functions().items():
        monkeypatch.setattr(native, name, fn)


@needs_aot
@pytest.mark.parametrize("path", CASES, ids=lambda p: p.stem)
def test_ahead_of_time_and_just_in_time_runs_agree(path, monkeypatch):
    case = load_case(path)
    native.FALLBACKS.clear()
    a = run(case, progress=False)
    a.summary()                 # post-processing: stored energy per layer, steady state ...
    # a standard run passes exactly the compiled types: nothing fell back to the JIT path
    assert native.FALLBACKS == {}
    _jit_everywhere(monkeypatch)
    b = run(case, progress=False)
    assert a.T.shape == b.T.shape
    # same source, same compiler: identical up to rounding of a different instruction order
    assert np.max(np.abs(a.T - b.T)) < 1e-9
    assert np.max(np.abs(a.heater_power - b.heater_power)) <= 1e-9 * max(
        1.0, np.max(np.abs(b.heater_power)))


@needs_aot
def test_steady_and_helpers_agree(monkeypatch):
    from fdwall.solver import solve_steady
    case = load_case(CASES[0])
    a = solve_steady(case)
    _jit_everywhere(monkeypatch)
    b = solve_steady(case)
    assert np.max(np.abs(a.T - b.T)) < 1e-9


def test_other_argument_types_fall_back_to_the_jit_kernel():
    # schedule of two knots: 0 s -> 300 K, 100 s -> 500 K; at 25 s linear interpolation gives
    # 350 K (hand arithmetic; common practice, no source)
    s_off = np.array([0, 2], dtype=np.int64)
    stab = np.array([[0.0, 100.0], [300.0, 500.0]])
    native.FALLBACKS.clear()
    assert native.sched_eval(s_off, stab, 0, 25.0, 0.0) == pytest.approx(350.0)
    assert native.FALLBACKS.get("sched_eval", 0) == 0
    # int32 offsets, a Fortran-ordered table, a read-only table: not the compiled types
    ro = stab.copy()
    ro.flags.writeable = False
    for so, st in ((s_off.astype(np.int32), stab), (s_off, np.asfortranarray(stab)),
                   (s_off, ro)):
        assert native.sched_eval(so, st, 0, 25.0, 0.0) == pytest.approx(350.0)
    if native.MODE == "aot":
        assert native.FALLBACKS["sched_eval"] == 3


@needs_aot
def test_a_module_built_from_other_sources_is_ignored(monkeypatch, tmp_path):
    monkeypatch.setattr(native, "fingerprint", lambda: 12345)
    mod, why = native._load_extension()
    assert mod is None and "other sources" in why
    # a stamp that matches while the module itself says otherwise is caught on import
    stamp = tmp_path / "stamp"
    stamp.write_text("12345\n")
    monkeypatch.setattr(native, "_stamp_path", lambda: stamp)
    mod, why = native._load_extension()
    assert mod is None and "other sources" in why
    # no stamp: not built, and the module is not even imported
    monkeypatch.setattr(native, "_stamp_path", lambda: tmp_path / "missing")
    mod, why = native._load_extension()
    assert mod is None and "not built" in why


def test_forcing_jit_by_environment(monkeypatch):
    monkeypatch.setenv("FDWALL_JIT", "1")
    mod, why = native._load_extension()
    assert mod is None and "FDWALL_JIT" in why


def test_fingerprint_follows_the_sources(tmp_path, monkeypatch):
    # a copy of the package sources with one kernel file changed gets another fingerprint
    fp = native.fingerprint()
    assert fp == native.fingerprint() and 0 <= fp < 2 ** 63
    pkg = tmp_path / "fdwall"
    for rel in native.SOURCES:
        (pkg / rel).parent.mkdir(parents=True, exist_ok=True)
        (pkg / rel).write_bytes((native._PKG / rel).read_bytes())
    monkeypatch.setattr(native, "_PKG", pkg)
    assert native.fingerprint() == fp
    (pkg / "solver/kernels.py").write_bytes((pkg / "solver/kernels.py").read_bytes() + b"\n")
    assert native.fingerprint() != fp


def test_compile_status_and_a_failed_build(monkeypatch, capsys):
    from fdwall.cli import main
    assert main(["compile", "--status"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("kernels: ") and ("ahead-of-time" in out or "just-in-time" in out)
    # no usable C compiler: a clear message, exit 0 (fdwall still runs just in time), exit 1
    # with --strict, and any module built before is left as it was
    before = sorted((p.name, p.stat().st_mtime) for p in
                    pathlib.Path(native.__file__).parent.glob(native.MODULE + ".*"))
    monkeypatch.setenv("CC", "/nonexistent/cc")
    assert main(["compile"]) == 0
    err = capsys.readouterr().err
    assert "could not be compiled ahead of time" in err and "just in time" in err
    assert "Traceback" not in err
    assert main(["compile", "--strict"]) == 1
    after = sorted((p.name, p.stat().st_mtime) for p in
                   pathlib.Path(native.__file__).parent.glob(native.MODULE + ".*"))
    assert after == before
    assert not list(pathlib.Path(native.__file__).parent.glob(".build-*"))
