"""Signals of the command line: SIGINT and SIGTERM become a stop flag that a run observes.

Only the command line installs signal handlers (the library never does: see
:mod:`fdwall.solver.observers`).  Inside :func:`signals_to_flag`, the first SIGINT (Ctrl-C) or
SIGTERM sets the flag: the run stops after its current chunk (a fraction of a second), the
command writes the partial result marked incomplete and exits 130 (SIGINT) or 143 (SIGTERM).
A second signal while that happens raises ``KeyboardInterrupt`` (exit 130 or 143; the atomic
writers leave no half-written file).  Outside the main thread nothing is installed.
"""
from __future__ import annotations

import signal
import threading
from contextlib import contextmanager

from ..solver.observers import StopFlag
from .common import EXIT_INTERRUPTED, EXIT_TERMINATED

__all__ = ["signals_to_flag", "exit_code_for", "SIGNAL_NAMES"]

SIGNAL_NAMES = {signal.SIGINT: "SIGINT", signal.SIGTERM: "SIGTERM"}


class SecondSignal(KeyboardInterrupt):
    """A second SIGINT or SIGTERM arrived while the first was being handled."""

    def __init__(self, signum):
        super().__init__(signum)
        self.signum = signum


@contextmanager
def signals_to_flag(flag: StopFlag | None = None):
    """Within the block, SIGINT and SIGTERM set ``flag`` (a new one if None); yields it.

    The previous handlers are restored on exit.  In a thread other than the main one (where
    Python cannot install handlers) the block runs with the handlers untouched.
    """
    flag = flag if flag is not None else StopFlag()
    if threading.current_thread() is not threading.main_thread():
        yield flag
        return

    def handler(signum, frame):
        if flag.is_set():
            raise SecondSignal(signum)
        flag.set(signum, f"{SIGNAL_NAMES.get(signum, signum)} received")

    old = {}
    try:
        for s in SIGNAL_NAMES:
            old[s] = signal.signal(s, handler)
        yield flag
    finally:
        for s, h in old.items():
            signal.signal(s, h)


def exit_code_for(signum) -> int:
    """Exit code of a command stopped by signal ``signum``: 143 for SIGTERM, else 130."""
    return EXIT_TERMINATED if signum == signal.SIGTERM else EXIT_INTERRUPTED
