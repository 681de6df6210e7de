"""SIGINT / SIGTERM in the commands with no meaningful partial answer: ``fdwall touch`` and
``fdwall size`` (``fdwall run`` is covered in tests/test_cli.py).

A real signal is sent to a subprocess once its run is under way (its progress bar shows); the
command must stop within a few seconds (a behavioural bound, not a speed target), write
nothing, say so in one message without a traceback, and exit 130 (SIGINT) or 143 (SIGTERM).
Reference for the codes: the POSIX shell convention 128 + signal number for a process ended
by a signal (SIGINT = 2, SIGTERM = 15; POSIX.1-2017, Shell Command Language, 2.8.2 "Exit
Status for Commands"), which fdwall follows (README, "Exit codes").
The case is demo data (invented): a one-layer board slab between hot and room air, made slow
by tiny time steps so that a run would take a minute or more.
"""
from __future__ import annotations

import os
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest

from fdwall.cli.interrupts import SecondSignal, SignalStop, signal_guard, signals_to_flag

REPO = Path(__file__).resolve().parents[1]

LONG_TOML = """\
# demo data (invented): a one-layer board slab between hot and room air, tiny steps
title = "demo slow slab"

[run]
duration = "100 h"
max_step = "0.05 s"

[materials.demo-board]
conductivity = "0.1 W/m/K"
specific_heat = "1000 J/kg/K"
density = "500 kg/m3"

[wall]
name = "slab"
area = "2 m2"

[[wall.layers]]
material = "demo-board"
thickness = "50 mm"

[wall.inner_face]
fluid_temperature = "200 degC"
film_coefficient = "10 W/m2/K"

[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "5 W/m2/K"
"""


def _env():
    env = dict(os.environ)
    env["PYTHONPATH"] = str(REPO) + os.pathsep + env.get("PYTHONPATH", "")
    env["MPLBACKEND"] = "Agg"
    return env


def _interrupt(argv, cwd, signame):
    """Start ``fdwall ARGV``, send ``signame`` 2 s after its progress bar shows; return
    (exit code, stdout, stderr, seconds from the signal to the exit)."""
    p = subprocess.Popen([sys.executable, "-m", "fdwall.cli", *map(str, argv)], cwd=cwd,
                         env=_env(), stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    chunks, running = [], threading.Event()

    def read_err():
        for chunk in iter(lambda: p.stderr.read1(4096), b""):
            chunks.append(chunk)
            if b"%|" in b"".join(chunks[-2:]):
                running.set()
    reader = threading.Thread(target=read_err, daemon=True)
    reader.start()
    try:
        assert running.wait(180), b"".join(chunks).decode(errors="replace")
        time.sleep(2.0)
        assert p.poll() is None, "the command finished before it could be interrupted"
        t_sig = time.perf_counter()
        p.send_signal(getattr(signal, signame))
        out = p.stdout.read().decode()
        p.wait(timeout=120)
        after = time.perf_counter() - t_sig
    finally:
        if p.poll() is None:
            p.kill()
            p.wait()
    reader.join(10)
    return p.returncode, out, b"".join(chunks).decode(errors="replace"), after


@pytest.mark.parametrize("command, extra, signame, code", [
    ("touch", [], "SIGINT", 130),
    ("touch", [], "SIGTERM", 143),
    ("size", ["--layer", "0", "--transient", "--skin-limit", "60 degC"], "SIGINT", 130),
    ("size", ["--layer", "0", "--transient", "--skin-limit", "60 degC"], "SIGTERM", 143),
])
def test_signal_stops_command_and_writes_nothing(tmp_path, command, extra, signame, code):
    f = tmp_path / "slow.toml"
    f.write_text(LONG_TOML)
    out_dir = tmp_path / "o"
    rc, out, err, after = _interrupt([command, f, "--out", out_dir, "--progress", *extra],
                                     tmp_path, signame)
    assert rc == code, err
    assert f"interrupted ({signame})" in err and "nothing is written" in err, err
    assert f"fdwall {command}" in err and "slow.toml" in err
    assert "Traceback" not in err
    assert after < 10.0        # far sooner than the minute or more the run would take
    # nothing written, not even a temporary file
    assert not out_dir.exists() or not any(out_dir.rglob("*")), list(out_dir.rglob("*"))


# ------------------------------------------------------------------ the guard itself, in-process

def _raise_signal(sig):
    os.kill(os.getpid(), sig)
    time.sleep(0.05)    # Python runs the handler between bytecodes, right after the kill


@pytest.mark.skipif(threading.current_thread() is not threading.main_thread(),
                    reason="signal handlers need the main thread")
def test_signal_guard_stops_at_once_notes_while_writing_and_restores_handlers():
    before = {s: signal.getsignal(s) for s in (signal.SIGINT, signal.SIGTERM)}
    # computing: the first signal stops at once and is remembered in the flag
    with pytest.raises(SignalStop) as ei:
        with signal_guard() as guard:
            _raise_signal(signal.SIGTERM)
            pytest.fail("SIGTERM did not stop the block")
    assert ei.value.signum == signal.SIGTERM and guard.flag.signal == signal.SIGTERM
    assert guard.signal_name == "SIGTERM"
    # writing: the first signal is only noted; the block goes on; a second one stops it
    reached = []
    with pytest.raises(SecondSignal) as e2:
        with signal_guard() as guard:
            with guard.writing():
                _raise_signal(signal.SIGINT)
                reached.append(1)
                assert guard.flag.is_set() and guard.signal_name == "SIGINT"
                _raise_signal(signal.SIGINT)
                pytest.fail("a second SIGINT did not stop the writing")
    assert reached == [1] and e2.value.signum == signal.SIGINT
    # the flag form used by `fdwall run` never raises on the first signal
    with signals_to_flag() as flag:
        _raise_signal(signal.SIGINT)
        assert flag.is_set() and flag.signal == signal.SIGINT
    assert {s: signal.getsignal(s) for s in before} == before


@pytest.mark.skipif(threading.current_thread() is not threading.main_thread(),
                    reason="signal handlers need the main thread")
def test_signal_inside_the_compiler_is_served_when_it_has_finished():
    # a stop raised inside numba's compiler breaks the compilation for the whole process, so
    # the guard lets code of a numba module finish and stops right after it
    ns = {"__name__": "numba._fdwall_signal_test", "os": os, "time": time,
          "SIGTERM": signal.SIGTERM}
    exec("def compile_something():\n"
         "    os.kill(os.getpid(), SIGTERM)\n"
         "    t = time.perf_counter()\n"
         "    while time.perf_counter() - t < 0.3:\n"
         "        pass\n"
         "    return 'compiled'\n", ns)
    got = []
    with pytest.raises(SignalStop) as ei:
        with signal_guard():
            got.append(ns["compile_something"]())
            t = time.perf_counter()
            while time.perf_counter() - t < 5.0:    # served within a retry interval
                pass
            pytest.fail("the deferred SIGTERM was never served")
    assert got == ["compiled"] and ei.value.signum == signal.SIGTERM


@pytest.mark.skipif(threading.current_thread() is not threading.main_thread(),
                    reason="signal handlers need the main thread")
def test_summary_of_an_interrupted_run_says_interrupted_by_the_signal(tmp_path, capsys):
    # `fdwall run` in-process, SIGINT sent to this process 1.5 s into a run of a minute or more
    import fdwall.cli as cli
    f = tmp_path / "slow.toml"
    f.write_text(LONG_TOML)
    timer = threading.Timer(1.5, os.kill, args=(os.getpid(), signal.SIGINT))
    timer.start()
    try:
        t0 = time.perf_counter()
        rc = cli.main(["run", str(f), "--out", str(tmp_path / "o"), "--no-plots"])
        took = time.perf_counter() - t0
    finally:
        timer.cancel()
    out, err = capsys.readouterr()
    assert rc == 130, err
    assert took < 30.0           # the run alone would take a minute or more
    status = [ln for ln in out.splitlines() if ln.strip().startswith("status")]
    assert status and "interrupted (SIGINT)" in status[0], out
    assert "stopped early" not in out


def test_status_line_of_runs_stopped_otherwise():
    # an observer's stop is no signal; a run that failed to converge "stopped early"
    from types import SimpleNamespace

    from fdwall.report.text import run_status_text
    assert run_status_text(SimpleNamespace(complete=True)) == "complete"
    stopped = SimpleNamespace(complete=False, status="interrupted",
                              message="the run was stopped at t = 5 s: a node passed 500 K.")
    assert run_status_text(stopped) == "INCOMPLETE: interrupted (stop requested)"
    term = SimpleNamespace(complete=False, status="interrupted",
                           message="the run was stopped at t = 5 s: SIGTERM received.")
    assert run_status_text(term) == "INCOMPLETE: interrupted (SIGTERM)"
    failed = SimpleNamespace(complete=False, status="stopped early", message="no convergence")
    assert run_status_text(failed) == "INCOMPLETE (stopped early)"
