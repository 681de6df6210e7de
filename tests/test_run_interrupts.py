"""Run observers and interrupts of the Python API (fdwall.solver.observers).

A run is cut into chunks of bounded wall time; observers are called between chunks and may
stop it; a stopped run raises fdwall.errors.Interrupted carrying the partial result.

Sources
-------
* Semi-infinite solid with a sudden surface temperature: T(x, t) = Ts + (Ti - Ts)
  erf(x / (2 sqrt(alpha t))) (Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and
  Mass Transfer, 6th ed., eq. 5.57); scipy.special.erf.
* Surface heat flux of the same problem, q'' = k (Ts - Ti) / sqrt(pi alpha t) (ibid., eq. 5.58),
  and the heat taken in up to t, Q'' = 2 k (Ts - Ti) sqrt(t / (pi alpha)) (its time integral).
* Heater control and the first law: heater energy = stored + losses (energy conservation).
The demo materials are invented.
"""
from __future__ import annotations

import signal
import threading
import time

import numpy as np
import pytest
from scipy.special import erf

from fdwall.errors import FdwallError, Interrupted
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
from fdwall.solver import run
from fdwall.solver.observers import EarlyStop, InterruptCheck, RunObserver, Stop, StopFlag

K0 = 273.15
K_B, RHO_B, CP_B = 0.5, 1500.0, 1000.0     # demo brick-like solid [W/m/K], [kg/m3], [J/kg/K]
ALPHA = K_B / (RHO_B * CP_B)               # [m2/s]
TI, TS = 293.15, 393.15                    # initial and surface temperature [K]
L = 0.30                                   # [m]: the heat front stays far from the back face


def _slab(duration=4 * 3600.0, oi=600.0, max_step=None):
    """A thick slab, inner face held at TS from t = 0, outer face adiabatic (demo data)."""
    m = material_from_dict("demo-solid", {"k": K_B, "cp": CP_B, "rho": RHO_B})
    return Case(run=RunSettings(duration=duration, output_every=oi, start_temperature=TI,
                                tolerance=0.002, max_step=max_step),
                wall=Wall(layers=(Layer(m, L, cells=120),), area=1.0, name="thick"),
                inner=Face.fixed(TS), outer=Face(), name="demo thick slab")


def _box(**ctl):
    """An insulated box with a thermostat heater (demo data, as in test_enclosure_control)."""
    skin = material_from_dict("demo-steel-skin", {"k": 45.0, "cp": 480.0, "rho": 7850.0})
    wool = material_from_dict("demo-wool", {"k": 0.04, "cp": 840.0, "rho": 80.0})
    w = Wall((Layer(skin, 0.001), Layer(wool, 0.06), Layer(skin, 0.001)), area=3.0, name="shell")
    walls = (EnclosureWall(w, Face.exchange(293.15, 8.0), inner_face_convection=15.0),)
    return Case(run=RunSettings(duration=3 * 3600.0, output_every=60.0), walls=walls,
                chamber=Chamber(heat_capacity=15e3, room_temperature=293.15, leakage=0.0005),
                heater=Heater(1500.0), control=Control(**ctl), name="demo box")


def _erf_profile(x, t):
    """Incropera eq. 5.57 [K]."""
    return TS + (TI - TS) * erf(x / (2.0 * np.sqrt(ALPHA * t)))


def test_observer_stop_raises_interrupted_with_partial_result():
    t_stop = 1.3 * 3600.0     # between two outputs (every 600 s)
    stopper = EarlyStop(lambda p: p.time >= t_stop, "enough for this test")
    with pytest.raises(Interrupted) as ei:
        run(_slab(), progress=False, observers=[stopper], chunk_seconds=0.0)
    exc = ei.value
    assert isinstance(exc, FdwallError) and exc.signal is None
    res = exc.result
    assert res is not None and not res.complete and res.status == "interrupted"
    assert "enough for this test" in res.message and "incomplete" in res.message
    # one-step chunks: the run stops right after the step that crossed t_stop; the partial
    # result holds every output before it plus the state at the stop time
    t_end = res.times[-1]
    assert t_stop <= t_end < t_stop + 600.0 and t_end == res.stats["reached_s"]
    assert np.allclose(res.times[:-1], np.arange(len(res.times) - 1) * 600.0)
    # physics of the partial result: erf profile (Incropera eq. 5.57) at the stop time
    x = res.x(0)
    T = res.wall_T(0)[-1]
    assert np.max(np.abs(T - _erf_profile(x, t_end))) < 0.2
    # and the heat taken in so far (eq. 5.58 integrated), within 1 %
    Q = 2 * K_B * (TS - TI) * np.sqrt(t_end / (np.pi * ALPHA))
    assert res.face_energy[-1, 0] == pytest.approx(Q, rel=0.01)
    # strict=False returns the same partial result instead of raising
    res2 = run(_slab(), progress=False, strict=False, observers=[stopper], chunk_seconds=0.0)
    assert res2.status == "interrupted" and not res2.complete
    assert np.array_equal(res2.T, res.T)


def test_partial_result_rows_equal_the_uninterrupted_run():
    # the kernel resumes exactly: a run stopped (or cut into one-step chunks) computes the
    # same outputs as one left alone; the reference for its values is the erf solution
    full = run(_slab(), progress=False)
    x = full.x(0)
    for j in (3, 6, 12):      # up to 2 h the back face (0.3 m) is still untouched
        assert np.max(np.abs(full.wall_T(0)[j] - _erf_profile(x, full.times[j]))) < 0.2
    stepwise = run(_slab(), progress=False, chunk_seconds=0.0)
    assert np.array_equal(stepwise.T, full.T)
    assert np.array_equal(stepwise.face_energy, full.face_energy)
    stopped = run(_slab(), progress=False, strict=False, chunk_seconds=0.0,
                  observers=[EarlyStop(lambda p: p.time > 2 * 3600.0)])
    n = len(stopped.times) - 1
    assert 12 <= n < len(full.times)
    assert np.array_equal(stopped.T[:n], full.T[:n])
    assert np.array_equal(stopped.face_flow[:n], full.face_flow[:n])


def test_thermostat_run_in_one_step_chunks_matches_and_closes_its_ledger():
    # the controller state, predictor and reuse of the last step survive every stop
    case = _box(mode="thermostat", setpoint=373.15, band=4.0)
    a = run(case, progress=False)
    b = run(case, progress=False, chunk_seconds=0.0)
    for name in ("T", "face_flow", "face_energy", "heater_power", "heater_energy"):
        assert np.array_equal(getattr(a, name), getattr(b, name)), name
    assert a.stats["accepted_steps"] == b.stats["accepted_steps"]
    # first law: heater energy = stored + losses
    assert abs(a.residual[-1]) / a.heater_energy[-1] < 1e-6
    # thermostat holds the chamber inside its band once warm (setpoint 100 degC, band 4 K)
    late = a.times > 2 * 3600.0
    assert np.all(np.abs(a.chamber_T[late] - 373.15) < 2.0 + 0.1)


class _Recorder(RunObserver):
    def __init__(self):
        self.calls = []
        self.started = self.closed = 0

    def start(self, p):
        self.started += 1

    def update(self, p):
        self.calls.append((time.perf_counter(), p.time, p.outputs, p.steps))
        return None

    def close(self):
        self.closed += 1


def test_chunks_are_bounded_in_wall_time_with_sparse_outputs():
    # two outputs only (start and end): chunks are cut by wall time, not by outputs
    rec = _Recorder()
    res = run(_slab(duration=6 * 3600.0, oi=6 * 3600.0, max_step=1.0), progress=False,
              observers=[rec], chunk_seconds=0.05)
    assert res.complete and len(res.times) == 2
    assert rec.started == 1 and rec.closed == 1
    assert len(rec.calls) >= 5
    times = [c[1] for c in rec.calls]
    assert all(b > a for a, b in zip(times, times[1:]))
    assert all(c[2] == 1 for c in rec.calls)      # inside the one output interval
    gaps = np.diff([c[0] for c in rec.calls])
    # behavioural bound, generous for a loaded machine: well under a second per chunk
    assert np.median(gaps) < 0.5


def test_stop_flag_set_from_another_thread():
    flag = StopFlag()
    timer = threading.Timer(0.3, flag.set, kwargs={"signal": 15})
    timer.start()
    t0 = time.perf_counter()
    try:
        with pytest.raises(Interrupted) as ei:
            run(_slab(duration=400 * 3600.0, oi=3600.0, max_step=0.5), progress=False,
                observers=[InterruptCheck(flag)])
    finally:
        timer.cancel()
    assert time.perf_counter() - t0 < 10.0
    assert ei.value.signal == 15 and ei.value.result.status == "interrupted"
    assert "signal 15" in str(ei.value)


def test_library_installs_no_signal_handler():
    before = (signal.getsignal(signal.SIGINT), signal.getsignal(signal.SIGTERM))
    seen = []

    class Look(RunObserver):
        def update(self, p):
            seen.append((signal.getsignal(signal.SIGINT), signal.getsignal(signal.SIGTERM)))

    run(_slab(duration=3600.0, max_step=1.0), progress=False, observers=[Look()],
        chunk_seconds=0.0)
    assert seen and all(s == before for s in seen)
    assert (signal.getsignal(signal.SIGINT), signal.getsignal(signal.SIGTERM)) == before


def test_observer_may_return_true_or_stop():
    class Once(RunObserver):
        def update(self, p):
            return True

    with pytest.raises(Interrupted, match="stopped by an observer"):
        run(_slab(duration=3600.0), progress=False, observers=[Once()])
    assert Stop("x").signal is None


def test_keyboard_interrupt_lands_between_chunks_without_a_bar():
    # Ctrl-C in a script or notebook (no observer, no bar): Python raises KeyboardInterrupt in
    # the main thread at the next bytecode, i.e. between two chunks, not at the end of the run
    import _thread
    timer = threading.Timer(0.5, _thread.interrupt_main)
    t0 = time.perf_counter()
    timer.start()
    try:
        with pytest.raises(KeyboardInterrupt):
            run(_slab(duration=400 * 3600.0, oi=400 * 3600.0, max_step=0.5), progress=False)
    finally:
        timer.cancel()
    # behavioural bound, generous for a loaded machine; the whole run takes far longer
    assert time.perf_counter() - t0 < 10.0


def test_progress_bar_shows_model_time_when_asked(capsys):
    res = run(_slab(duration=2 * 3600.0, oi=3600.0), progress=True, chunk_seconds=0.0)
    err = capsys.readouterr().err
    assert res.complete
    assert "demo thick slab" in err and "%|" in err and "model" in err
