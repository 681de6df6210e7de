"""Output streamed to the HDF5 file in windows of rows (run(case, store=...), ``fdwall run``).

What is checked, and against what
---------------------------------
* Physics of a streamed run: a semi-infinite solid whose face is held at Ts from t = 0,
  T(x, t) = Ts + (Ti - Ts) erf(x / (2 sqrt(alpha t))) (Incropera, DeWitt, Bergman & Lavine,
  Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.57; scipy.special.erf), and the heat
  taken in up to t, Q'' = 2 k (Ts - Ti) sqrt(t / (pi alpha)) (the time integral of eq. 5.58),
  read back from the file with h5py (an independent reader of the bytes).
* The result file of a streamed run holds the same groups, datasets, attributes and values,
  to the last digit, as the file the in-memory run writes (only chunking may differ): the
  issue asks for exactly that; checked dataset by dataset with h5py for demo cases of every
  kind (slab with k(T) and radiation, cylinder, enclosure with a heater and events), with
  windows so small that the driver must cut, undo and redo kernel calls at window ends.
* Memory: the Python-side peak of a long streamed run (tracemalloc, which numpy reports its
  buffers to) stays below a bound set by the window, while the in-memory run of the same case
  needs the whole history (a behavioural bound, not a timing).
* A run killed outright (SIGKILL, POSIX kill(2)) leaves its temporary file; the next run into
  that folder removes it; a temporary of a live process is kept (house rule, no source).
* Interrupted and failed streamed runs leave a complete, readable file marked incomplete.
The demo materials and cases are invented.
"""
from __future__ import annotations

import dataclasses
import os
import signal
import subprocess
import sys
import time
import tracemalloc

import h5py
import numpy as np
import pytest
from scipy.special import erf

import fdwall
from fdwall import atomic
from fdwall.errors import ConvergenceError, Interrupted
from fdwall.materials import material_from_dict
from fdwall.model import Case, Face, Layer, RunSettings, Wall
from fdwall.result import FileResult, Result
from fdwall.solver import run
from fdwall.solver.observers import EarlyStop, StorageObserver

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
CASES = os.path.join(ROOT, "cases")

K_B, RHO_B, CP_B = 0.5, 1500.0, 1000.0     # demo brick-like solid [W/m/K], [kg/m3], [J/kg/K]
ALPHA = K_B / (RHO_B * CP_B)               # [m2/s]
TI, TS = 293.15, 393.15                    # [K]


def _slab(duration=4 * 3600.0, every=60.0, cells=120, exact=False, L=0.30):
    """A thick slab, inner face held at TS from t = 0, outer face adiabatic (demo data)."""
    m = material_from_dict("demo-solid", {"k": K_B, "cp": CP_B, "rho": RHO_B})
    return Case(run=RunSettings(duration=duration, output_every=every, start_temperature=TI,
                                tolerance=0.002, exact_outputs=exact),
                wall=Wall(layers=(Layer(m, L, cells=cells),), area=1.0, name="thick"),
                inner=Face.fixed(TS), outer=Face(), name="demo thick slab")


def _compare_files(a_path, b_path):
    """Every group, dataset and attribute of two result files, values exactly equal (NaN
    equal to NaN); the creation time and the measured wall times (run and error
    estimate) may differ."""
    diffs = []

    def attrs(x, y, where):
        ax, ay = dict(x.attrs), dict(y.attrs)
        if set(ax) != set(ay):
            diffs.append((where, "attribute names", sorted(set(ax) ^ set(ay))))
        for k in set(ax) & set(ay):
            if k in ("created", "wall_time_s", "extra_wall_time_s"):
                continue
            vx, vy = ax[k], ay[k]
            same = (np.array_equal(vx, vy, equal_nan=True) if np.asarray(vx).dtype.kind == "f"
                    else np.array_equal(np.asarray(vx), np.asarray(vy)))
            if not same:
                diffs.append((where, k, vx, vy))

    def walk(x, y, where):
        attrs(x, y, where or "/")
        if set(x) != set(y):
            diffs.append((where, "members", sorted(set(x) ^ set(y))))
        for k in set(x) & set(y):
            p = f"{where}/{k}"
            if isinstance(x[k], h5py.Group):
                walk(x[k], y[k], p)
                continue
            vx, vy = x[k][()], y[k][()]
            if isinstance(vx, np.ndarray) and vx.dtype.kind == "f":
                if vx.shape != vy.shape or not np.array_equal(vx, vy, equal_nan=True):
                    diffs.append((p, "values", np.shape(vx), np.shape(vy)))
            elif not np.array_equal(np.asarray(vx, dtype=object), np.asarray(vy, dtype=object)):
                diffs.append((p, "values"))
            attrs(x[k], y[k], p)

    with h5py.File(a_path, "r") as a, h5py.File(b_path, "r") as b:
        walk(a, b, "")
    return diffs


def _untimed(s):
    """A summary without its measured wall times (run and error estimate)."""
    s = dict(s, solver={k: v for k, v in s["solver"].items() if k != "wall_time_s"})
    if isinstance(s.get("error_estimate"), dict):
        s["error_estimate"] = {k: v for k, v in s["error_estimate"].items()
                               if k != "extra_wall_time_s"}
    return s


def _same_summary(s0, s1):
    s0, s1 = _untimed(s0), _untimed(s1)
    # json round trip with NaN written as a string: NaN == NaN for the comparison
    import json
    return json.dumps(s0, sort_keys=True, default=str) == json.dumps(s1, sort_keys=True,
                                                                    default=str)


def test_streamed_slab_meets_the_erf_solution_read_from_the_file(tmp_path):
    case = _slab()
    path = tmp_path / "slab.h5"
    res = run(case, progress=False, store=path, window_bytes=64 << 10)
    assert isinstance(res, FileResult) and res.store == os.fspath(path)
    assert res.complete and res.status == "complete"
    with h5py.File(path, "r") as h:                      # read back by h5py, not by fdwall
        t = h["time"][()]
        T = h["temperature"][()]
        Q = h["faces/energy"][()][:, 0]
        x = h["mesh/wall_0/x"][()]
        assert h.attrs["complete"] and h.attrs["status"] == "complete"
    assert t.size == 241 and T.shape == (241, case.wall.layers[0].cells + 1)
    for k in (30, 60, 120):          # 30 min, 1 h, 2 h: the front is still far from the back
        exact = TS + (TI - TS) * erf((x - x[0]) / (2.0 * np.sqrt(ALPHA * t[k])))
        # second-order mesh of 120 cells and a 0.002 K step tolerance: within 0.2 K of a
        # 100 K step (0.2 %, the accuracy contract's scale)
        assert np.max(np.abs(T[k] - exact)) < 0.2, k
        Qx = 2.0 * K_B * (TS - TI) * np.sqrt(t[k] / (np.pi * ALPHA))
        assert abs(Q[k] - Qx) / Qx < 0.01, k
    # the energy balance of the stored series closes (first law)
    assert res.relative_residual < 1e-6


CASE_FILES = ["lab-furnace-wall.toml", "hot-oil-pipe.toml", "heat-treat-furnace.toml",
              "curing-oven-panel.toml"]


@pytest.mark.parametrize("name", CASE_FILES)
@pytest.mark.parametrize("window", [1, 64 << 10])
def test_streamed_file_equals_in_memory_file_dataset_by_dataset(tmp_path, name, window):
    # window = 1 byte: the smallest window (8 rows), many windows, calls cut at their ends
    case = fdwall.load_case(os.path.join(CASES, name))
    mem = run(case, progress=False)
    mem.write_hdf5(tmp_path / "mem.h5")
    st = run(case, progress=False, store=tmp_path / "st.h5", window_bytes=window)
    assert _compare_files(tmp_path / "mem.h5", tmp_path / "st.h5") == []
    assert _same_summary(mem.summary(), st.summary())
    # the file-backed series are the in-memory ones
    for attr in ("times", "T", "face_flow", "face_energy", "heater_energy", "loss_energy",
                 "heater_power", "h_conv", "h_rad"):
        np.testing.assert_array_equal(getattr(st, attr), getattr(mem, attr), err_msg=attr)
    np.testing.assert_array_equal(st.stored, mem.stored)
    np.testing.assert_array_equal(st.face_T, mem.face_T)
    assert st.events.keys() == mem.events.keys()
    assert [f for f in os.listdir(tmp_path) if f.startswith(".fdwall-")] == []


def test_exact_outputs_streamed_equal_in_memory(tmp_path):
    case = _slab(duration=3600.0, every=20.0, cells=40, exact=True)
    mem = run(case, progress=False)
    mem.write_hdf5(tmp_path / "mem.h5")
    run(case, progress=False, store=tmp_path / "st.h5", window_bytes=1)
    assert _compare_files(tmp_path / "mem.h5", tmp_path / "st.h5") == []


def test_interrupted_streamed_run_leaves_a_complete_file_marked_incomplete(tmp_path):
    # one step per chunk (chunk_seconds=0) and a stop after a fixed number of steps: the
    # stop lands on the same step in both runs, so their files must agree exactly
    case = _slab(duration=8 * 3600.0, every=60.0, cells=60)
    stop = EarlyStop(lambda p: p.steps >= 60, "enough steps")
    with pytest.raises(Interrupted) as e_mem:
        run(case, progress=False, observers=[stop], chunk_seconds=0)
    e_mem.value.result.write_hdf5(tmp_path / "mem.h5")
    stop2 = EarlyStop(lambda p: p.steps >= 60, "enough steps")
    with pytest.raises(Interrupted) as e_st:
        run(case, progress=False, observers=[stop2], chunk_seconds=0,
            store=tmp_path / "st.h5", window_bytes=1)
    res = e_st.value.result
    assert isinstance(res, FileResult) and res.status == "interrupted" and not res.complete
    with h5py.File(tmp_path / "st.h5", "r") as h:
        assert not h.attrs["complete"] and h.attrs["status"] == "interrupted"
        # the last row is the state at the stop time
        assert h["time"][-1] == pytest.approx(res.stats["reached_s"], rel=0, abs=0)
        assert h["time"][-1] < case.run.duration
    assert _compare_files(tmp_path / "mem.h5", tmp_path / "st.h5") == []


_PLATE = """
# Invented test case: a steel plate heated by the largest flux a case may give.
title = "flux at the documented maximum (invented)"
[run]
duration = "1 h"
start_temperature = "20 degC"
output_every = "1 min"
[wall]
name = "plate"
shape = "slab"
area = "1 m2"
[[wall.layers]]
name = "steel"
material = "carbon-steel"
thickness = "5 mm"
[wall.inner_face]
heat_flux = "1e9 W/m2"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "10 W/m2/K"
"""


def test_implausible_streamed_run_is_kept_and_marked(tmp_path):
    # a 1e9 W/m2 flux into a 5 mm steel plate: lumped rise q'' t / (rho cp L) of 3.3e3 K in
    # one minute (Incropera ch. 5, lumped capacitance), far beyond the ceiling
    p = tmp_path / "plate.toml"
    p.write_text(_PLATE)
    case = fdwall.load_case(p)
    with pytest.raises(ConvergenceError):
        run(case, progress=False, store=tmp_path / "p.h5")
    with h5py.File(tmp_path / "p.h5", "r") as h:
        assert h.attrs["status"] == "implausible" and not h.attrs["complete"]
        assert np.all(h["temperature"][()] <= 1.0e4)
    mem = run(case, progress=False, strict=False, estimate=False)
    mem.write_hdf5(tmp_path / "m.h5")
    assert _compare_files(tmp_path / "m.h5", tmp_path / "p.h5") == []


def test_rows_observer_sees_every_row_once_in_order(tmp_path):
    class Rows:
        def __init__(self):
            self.blocks = []

        def update(self, p):
            return None

        def rows(self, b):
            self.blocks.append((b.first, b.times.copy(), b.T.copy()))

    case = _slab(duration=3600.0, every=10.0, cells=30)
    for store in (None, tmp_path / "r.h5"):
        obs = Rows()
        res = run(case, progress=False, observers=[obs], store=store, window_bytes=4096)
        firsts = [f for f, _, _ in obs.blocks]
        sizes = [len(t) for _, t, _ in obs.blocks]
        assert firsts == list(np.cumsum([0] + sizes[:-1]))
        np.testing.assert_array_equal(np.concatenate([t for _, t, _ in obs.blocks]), res.times)
        np.testing.assert_array_equal(np.concatenate([T for _, _, T in obs.blocks]), res.T)
        if store is not None:
            assert len(obs.blocks) > 5          # windows of 4 kB: many blocks


def test_file_result_copy_with_steady_and_replace(tmp_path):
    case = fdwall.load_case(os.path.join(CASES, "curing-oven-panel.toml"))
    res = run(case, progress=False, store=tmp_path / "a.h5")
    res.steady = fdwall.solve_steady(case)
    res.write_hdf5(tmp_path / "b.h5")                 # a copy with the steady state added
    mem = run(case, progress=False)
    mem.steady = res.steady
    mem.write_hdf5(tmp_path / "m.h5")
    assert _compare_files(tmp_path / "m.h5", tmp_path / "b.h5") == []
    with h5py.File(tmp_path / "a.h5", "r") as h:       # the original stays as it was
        assert "steady" not in h
    cut = dataclasses.replace(res, times=res.times[:3], T=res.T[:3])
    assert type(cut) is Result and cut.T.shape[0] == 3
    assert "FileResult" in repr(res) and res.n_outputs == mem.times.size


def test_keep_open_store_is_finished_by_write_hdf5_or_discarded(tmp_path):
    case = _slab(duration=1800.0, every=60.0, cells=20)
    st = StorageObserver(tmp_path / "k.h5", keep_open=True)
    res = run(case, progress=False, store=st)
    assert st.pending and not (tmp_path / "k.h5").exists()
    parts = [f for f in os.listdir(tmp_path) if f.startswith(".fdwall-")]
    assert len(parts) == 1 and parts[0].endswith(".h5.part")
    np.testing.assert_array_equal(res.T, run(case, progress=False).T)   # read while open
    res.write_hdf5(tmp_path / "k.h5")
    assert (tmp_path / "k.h5").exists() and not st.pending
    assert [f for f in os.listdir(tmp_path) if f.startswith(".fdwall-")] == []
    st2 = StorageObserver(tmp_path / "d.h5", keep_open=True)
    res2 = run(case, progress=False, store=st2)
    res2.discard()
    assert os.listdir(tmp_path) == ["k.h5"]


def _traced_peak(fn):
    tracemalloc.start()
    tracemalloc.reset_peak()
    base = tracemalloc.get_traced_memory()[0]
    try:
        fn()
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    return peak - base


def test_streamed_run_memory_is_bounded_by_the_window(tmp_path):
    # 100 000 outputs of a 31-unknown wall: the history is 100 001 rows x 328 bytes = 33 MB of
    # driver arrays (and as much again in the Result); a streamed run holds a window of them
    case = _slab(duration=100_000 * 10.0, every=10.0, cells=30, L=0.05)
    n_out = 100_001
    row_bytes = 8 * (31 + 4 * 2 + 2 + 2)
    window = 256 << 10
    run(_slab(duration=100.0, every=10.0, cells=30, L=0.05), progress=False)   # warm up
    res = {}
    peak_st = _traced_peak(lambda: res.setdefault("st", run(
        case, progress=False, store=tmp_path / "long.h5", window_bytes=window)))
    assert res["st"].n_outputs == n_out and res["st"].complete
    # bound: a few windows (buffers, the block and its derived series, the HDF5 write) plus
    # the output-time column of 8 bytes a row, plus 4 MB for everything else
    bound = 8 * window + 8 * n_out + (4 << 20)
    assert peak_st < bound, (peak_st, bound)
    peak_mem = _traced_peak(lambda: run(case, progress=False))
    assert peak_mem > n_out * row_bytes                # the in-memory run holds the history
    assert peak_mem > 3 * peak_st


_LONG_CASE = """
# Invented test case: a long run with dense outputs, to be killed while it streams.
title = "long demo run (invented)"
[run]
duration = "200 d"
start_temperature = "20 degC"
output_every = "1 min"
max_step = "20 s"
[wall]
name = "plate"
shape = "slab"
area = "1 m2"
[[wall.layers]]
name = "brick"
material = "fireclay-brick-dense"
thickness = "100 mm"
cells = 100
[wall.inner_face]
fluid_temperature = "400 degC"
film_coefficient = "10 W/m2/K"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "10 W/m2/K"
"""


def _parts(d):
    return sorted(f for f in os.listdir(d) if f.startswith(".fdwall-") and f.endswith(".part"))


def test_killed_run_leaves_a_temporary_the_next_run_removes(tmp_path):
    case = tmp_path / "long.toml"
    case.write_text(_LONG_CASE)
    out = tmp_path / "out"
    env = dict(os.environ, PYTHONPATH=ROOT)
    p = subprocess.Popen([sys.executable, "-m", "fdwall.cli", "run", str(case), "--out",
                          str(out), "--no-plots", "--quiet"], env=env,
                         stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    try:
        t0 = time.time()
        while time.time() - t0 < 120 and p.poll() is None:
            if out.is_dir() and _parts(out):
                break
            time.sleep(0.2)
        assert p.poll() is None, p.stderr.read().decode()[-2000:]
        assert _parts(out), "the run made no temporary file"
        time.sleep(1.0)
        os.kill(p.pid, signal.SIGKILL)
        p.wait(timeout=60)
    finally:
        if p.poll() is None:
            p.kill()
            p.wait()
        p.stderr.close()
    stale = _parts(out)
    assert stale and f"-p{p.pid}-" in stale[0]
    assert not (out / "long.h5").exists()
    # a temporary of a live process (this test's) in the same folder must survive
    live = out / f"{atomic.part_prefix()}live.part"
    live.write_bytes(b"x")
    short = fdwall.load_case(os.path.join(CASES, "curing-oven-panel.toml"))
    run(short, progress=False, store=out / "short.h5")
    assert _parts(out) == [live.name]
    assert (out / "short.h5").exists()


def test_stale_rules_other_host_and_untagged(tmp_path):
    dead = 2 ** 22 + 12345        # above the usual pid_max, no such process
    mine = tmp_path / f".fdwall-{atomic.HOST_TAG}-p{dead}-abc.part"
    other = tmp_path / f".fdwall-00000000-p{dead}-abc.part"
    if atomic.HOST_TAG == "00000000":
        pytest.skip("host tag collides with the test's other-host tag")
    fresh_untagged = tmp_path / ".fdwall-new.part"
    not_ours = tmp_path / "data.part"
    for f in (mine, other, fresh_untagged, not_ours):
        f.write_bytes(b"x")
    gone = atomic.remove_stale_parts(tmp_path)
    assert gone == [os.fspath(mine)]
    assert other.exists() and fresh_untagged.exists() and not_ours.exists()


def test_cli_run_writes_the_in_memory_file_content(tmp_path):
    # `fdwall run --out` streams; its file must hold what the in-memory write of the same
    # case (with its steady state) holds, dataset by dataset
    name = "lab-furnace-wall.toml"
    out = tmp_path / "cli"
    env = dict(os.environ, PYTHONPATH=ROOT)
    p = subprocess.run([sys.executable, "-m", "fdwall.cli", "run", os.path.join(CASES, name),
                        "--out", str(out), "--no-plots", "--quiet"], env=env,
                       capture_output=True, text=True, timeout=600)
    assert p.returncode == 0, p.stderr[-2000:]
    assert sorted(os.listdir(out)) == ["lab-furnace-wall-summary.json", "lab-furnace-wall.h5"]
    case = fdwall.load_case(os.path.join(CASES, name))
    mem = run(case, progress=False)
    mem.steady = fdwall.solve_steady(case)
    mem.write_hdf5(tmp_path / "mem.h5")
    diffs = _compare_files(tmp_path / "mem.h5", out / "lab-furnace-wall.h5")
    assert diffs == [], diffs


_ADD_LIMITED = r"""
import resource, signal, sys
import numpy as np
from fdwall import h5tree
from fdwall.errors import OutputError
path = sys.argv[1]
signal.signal(signal.SIGXFSZ, signal.SIG_IGN)
resource.setrlimit(resource.RLIMIT_FSIZE, (200_000, 200_000))
try:
    h5tree.add_group(path, "big", {"x_m": np.random.default_rng(1).random(100_000)})
except OutputError as e:
    print("OutputError", e)
"""


def test_add_group_past_a_size_limit_keeps_the_old_file(tmp_path):
    # setrlimit(2): writes beyond RLIMIT_FSIZE fail with EFBIG; the copy being changed is
    # dropped and the original stays byte for byte (rename(2) is the only commit)
    from fdwall import h5tree
    p = tmp_path / "a.h5"
    h5tree.write_file(p, {"summary": {"T_K": 300.0}})
    before = p.read_bytes()
    out = subprocess.run([sys.executable, "-c", _ADD_LIMITED, str(p)], capture_output=True,
                         text=True, env=dict(os.environ, PYTHONPATH=ROOT), timeout=300)
    assert out.returncode == 0 and "OutputError" in out.stdout, out.stderr[-2000:]
    assert "File too large" in out.stdout
    assert p.read_bytes() == before
    assert os.listdir(tmp_path) == ["a.h5"]


def test_observers_are_served_while_long_steps_are_written_out(tmp_path):
    # a thin slab that settles early: its time steps grow until one call spans thousands of
    # output rows, far more than the window holds.  Observers must still be called at least
    # once per window of rows (behavioural bound), and a stop there keeps exact rows: a
    # prefix of the in-memory run's rows.
    case = _slab(duration=100_000 * 10.0, every=10.0, cells=30, L=0.05)
    window = 64 << 10
    cap = window // (8 * (31 + 4 * 2 + 2 + 2))
    seen = []

    def note(p):
        seen.append(p.outputs)
        return p.time > 3.0e5          # late: by then one step spans many windows

    with pytest.raises(Interrupted) as e:
        run(case, progress=False, observers=[EarlyStop(note, "enough")], chunk_seconds=0,
            store=tmp_path / "s.h5", window_bytes=window)
    steps = np.diff(seen)
    assert steps.max() <= cap, (steps.max(), cap)
    res = e.value.result
    assert "window by window" in res.message          # the stop came between two passes
    mem = run(case, progress=False)
    n = res.n_outputs
    assert 1 < n < mem.times.size
    np.testing.assert_array_equal(res.times[:n - 1], mem.times[:n - 1])
    np.testing.assert_array_equal(res.T[:n - 1], mem.T[:n - 1])
    with h5py.File(tmp_path / "s.h5", "r") as h:
        assert h.attrs["status"] == "interrupted"
        t = h["time"][()]
        assert np.all(np.diff(t) > 0) and t[-1] == h["solver"].attrs["reached_s"]
