"""Signals of the command line: SIGINT and SIGTERM become a stop flag that a run observes.

Only the command line installs signal handlers (the library never does: see
:mod:`fdwall.solver.observers`).  Inside :func:`signals_to_flag`, the first SIGINT (Ctrl-C) or
SIGTERM sets the flag: the run stops after its current chunk (a fraction of a second), the
command writes the partial result marked incomplete and exits 130 (SIGINT) or 143 (SIGTERM).
A second signal while that happens raises ``KeyboardInterrupt`` (exit 130 or 143; the atomic
writers leave no half-written file).  Outside the main thread nothing is installed.

Commands whose answer has no meaningful partial form (``fdwall touch``: verdicts of an
unfinished run would be 'unknown'; ``fdwall size``: a root search cut short has no answer)
use :func:`signal_guard` instead: while they compute, the first signal sets the flag *and*
stops the computation at once (the runs inside it are cut into chunks of a fraction of a
second, so the signal lands within one), nothing is written and the command exits 130 / 143
with a message saying so.  While such a command writes its files the signal is only noted:
the files are finished (a fraction of a second) and the command then exits 130 / 143.
"""
from __future__ import annotations

import _thread
import signal
import threading
from contextlib import contextmanager

from ..solver.observers import StopFlag
from .common import EXIT_INTERRUPTED, EXIT_TERMINATED, _error

__all__ = ["signals_to_flag", "signal_guard", "SignalGuard", "SignalStop", "exit_code_for",
           "SIGNAL_NAMES", "run_guarded"]

SIGNAL_NAMES = {signal.SIGINT: "SIGINT", signal.SIGTERM: "SIGTERM"}


class SecondSignal(KeyboardInterrupt):
    """A second SIGINT or SIGTERM arrived while the first was being handled."""

    def __init__(self, signum):
        super().__init__(signum)
        self.signum = signum


class SignalStop(KeyboardInterrupt):
    """The first SIGINT or SIGTERM inside :func:`signal_guard` while the command computes."""

    def __init__(self, signum):
        super().__init__(signum)
        self.signum = signum


class SignalGuard:
    """State of :func:`signal_guard`: the stop ``flag`` and whether a signal stops at once.

    ``at_once`` is True while the command computes (a signal raises :class:`SignalStop`) and
    False inside :meth:`writing` (a first signal is only noted in ``flag``).
    """

    def __init__(self, flag: StopFlag, at_once: bool):
        self.flag = flag
        self.at_once = at_once

    @contextmanager
    def writing(self):
        """Within the block a first signal is noted, not raised: the files get finished."""
        old = self.at_once
        self.at_once = False
        try:
            yield self
        finally:
            self.at_once = old

    @property
    def signal_name(self) -> str:
        """Name of the signal received ("SIGINT", "SIGTERM"), or "" if none."""
        s = self.flag.signal
        return "" if s is None else SIGNAL_NAMES.get(s, str(s))


@contextmanager
def signals_to_flag(flag: StopFlag | None = None):
    """Within the block, SIGINT and SIGTERM set ``flag`` (a new one if None); yields it.

    The previous handlers are restored on exit.  In a thread other than the main one (where
    Python cannot install handlers) the block runs with the handlers untouched.
    """
    with _installed(SignalGuard(flag if flag is not None else StopFlag(), False)) as guard:
        yield guard.flag


@contextmanager
def signal_guard(flag: StopFlag | None = None):
    """Within the block, the first SIGINT / SIGTERM sets ``flag`` and raises
    :class:`SignalStop` (outside :meth:`SignalGuard.writing`); yields the :class:`SignalGuard`.

    For commands with no meaningful partial answer: they catch :class:`SignalStop`, write
    nothing and exit with :func:`exit_code_for`.  A second signal raises :class:`SecondSignal`.
    Handlers are restored on exit; outside the main thread nothing is installed.
    """
    with _installed(SignalGuard(flag if flag is not None else StopFlag(), True)) as guard:
        yield guard


#: Modules whose Python code must not be cut by an exception: the just-in-time compiler.
#: A stop raised inside it breaks the compilation for the rest of the process (and the
#: compiled code is cached), so a signal that lands there is served when it has finished.
COMPILER_MODULES = ("numba", "llvmlite")

RETRY_SECONDS = 0.05
"""How often a signal that landed inside the compiler is tried again [s] (common practice, no
source: well below what a user notices)."""


def _in_compiler(frame) -> bool:
    """True when ``frame`` or a caller of it runs code of :data:`COMPILER_MODULES`."""
    while frame is not None:
        name = frame.f_globals.get("__name__", "")
        if name.split(".", 1)[0] in COMPILER_MODULES:
            return True
        frame = frame.f_back
    return False


@contextmanager
def _installed(guard: SignalGuard):
    flag = guard.flag
    if threading.current_thread() is not threading.main_thread():
        yield guard
        return
    active = [True]
    pending = []        # a stop that landed inside the compiler, served when it is left

    def retry(signum):
        if active[0]:
            _thread.interrupt_main(signum)     # runs ``handler`` again in the main thread

    def handler(signum, frame):
        if pending:
            if not guard.at_once:              # now writing: the stop stays noted in flag
                pending.clear()
                return
            if _in_compiler(frame):
                _later(retry, pending[0])
                return
            raise SignalStop(pending.pop())
        if flag.is_set():
            raise SecondSignal(signum)
        flag.set(signum, f"{SIGNAL_NAMES.get(signum, signum)} received")
        if guard.at_once:
            if _in_compiler(frame):
                pending.append(signum)
                _later(retry, signum)
                return
            raise SignalStop(signum)

    old = {}
    try:
        for s in SIGNAL_NAMES:
            old[s] = signal.signal(s, handler)
        yield guard
    finally:
        active[0] = False
        for s, h in old.items():
            signal.signal(s, h)


def _later(fn, signum) -> None:
    t = threading.Timer(RETRY_SECONDS, fn, args=(signum,))
    t.daemon = True
    t.start()


def exit_code_for(signum) -> int:
    """Exit code of a command stopped by signal ``signum``: 143 for SIGTERM, else 130."""
    return EXIT_TERMINATED if signum == signal.SIGTERM else EXIT_INTERRUPTED


def run_guarded(body, command: str, case_file, what: str) -> int:
    """Run ``body(guard)`` (returns an exit code) under :func:`signal_guard`.

    ``command`` names the command ("fdwall touch"), ``what`` its answer ("touch verdicts").
    A signal while it computes: nothing is written, a one-paragraph message, exit 130 / 143.
    A signal while it writes (inside ``guard.writing()``): the files are finished, then the
    same exit code.  A second signal ends the writing too (no half-written file is left).
    """
    try:
        with signal_guard() as guard:
            code = body(guard)
    except SignalStop as exc:
        name = SIGNAL_NAMES.get(exc.signum, str(exc.signum))
        _error(f"interrupted ({name}): {command} '{case_file}' stopped before its {what} were "
               "complete; nothing is written (a partial answer would not be meaningful). Run "
               "the command again to get them.")
        return exit_code_for(exc.signum)
    except SecondSignal as exc:
        name = SIGNAL_NAMES.get(exc.signum, str(exc.signum))
        _error(f"interrupted again ({name}) while the results of {command} '{case_file}' were "
               "being written: nothing more is written (no half-written file is left).")
        return exit_code_for(exc.signum)
    if guard.flag.is_set():
        _error(f"interrupted ({guard.signal_name}) while the results of {command} "
               f"'{case_file}' were being written: they were finished and are complete.")
        return exit_code_for(guard.flag.signal)
    return code
