"""Run observers: code called between the chunks of a transient run.

Layer 6 (solver).  The transient driver (:func:`fdwall.solver.transient.run`) advances the
compiled time loop in chunks of bounded wall time (about :data:`CHUNK_SECONDS` each, whatever
the output interval) and, between chunks, hands every observer a :class:`RunProgress`.  An
observer may show progress, store or watch the state, or ask the run to stop by returning a
:class:`Stop`; the run then ends after the step it is on, keeps what it computed (the outputs
so far plus the state at the stop time) marked incomplete, and
:func:`~fdwall.solver.transient.run` raises :class:`fdwall.errors.Interrupted` carrying that
partial result (or, with ``strict=False``, returns it with ``status == "interrupted"``).

Signals: the library never installs a signal handler (that belongs to the program that owns
the main thread; a library doing it breaks Dask workers, threads and notebooks).  A program
that wants Ctrl-C / SIGTERM to stop a run cleanly sets a :class:`StopFlag` from its own handler
and passes ``InterruptCheck(flag)`` as an observer; the ``fdwall`` command line does exactly
that.  Without one, Ctrl-C in the main thread raises ``KeyboardInterrupt`` between two chunks,
i.e. within a fraction of a second.

An observer is any object with an ``update(progress)`` method; ``start(progress)`` and
``close()`` are called too when present.  Observers are called in the order given; the first
:class:`Stop` wins.
"""
from __future__ import annotations

import sys
from dataclasses import dataclass

import numpy as np

__all__ = ["CHUNK_SECONDS", "RunProgress", "Stop", "RunObserver", "StopFlag", "InterruptCheck",
           "EarlyStop", "ProgressBar"]

CHUNK_SECONDS = 0.1
"""Target wall time of one chunk of a run [s]: observers (and Ctrl-C) are served at least
about this often.  The driver adapts the step budget of each chunk from the measured time per
step (common practice, no source: a tenth of a second feels immediate to a user)."""


@dataclass(frozen=True)
class RunProgress:
    """Where a run stands between two chunks.

    Attributes
    ----------
    case_name : str
        Name of the case.
    time : float
        Model time reached [s].
    duration : float
        Model time the run goes to [s].
    outputs : int
        Output rows written so far (the initial state counts) [-].
    n_outputs : int
        Output rows of the whole run [-].
    steps : int
        Time steps accepted so far [-].
    wall_time : float
        Wall time since the run started [s].
    T : ndarray
        Temperatures of all unknowns at ``time`` [K] (a copy; the chamber is the last one).
    """

    case_name: str
    time: float
    duration: float
    outputs: int
    n_outputs: int
    steps: int
    wall_time: float
    T: np.ndarray

    @property
    def fraction(self) -> float:
        """Fraction of the model time done [-]."""
        return self.time / self.duration if self.duration > 0 else 1.0


@dataclass(frozen=True)
class Stop:
    """An observer's request to stop a run.

    Attributes
    ----------
    reason : str
        Why, for the messages (e.g. ``"SIGINT received"``).
    signal : int or None
        The signal that asked for the stop (2 SIGINT, 15 SIGTERM), None otherwise.
    """

    reason: str
    signal: int | None = None


class RunObserver:
    """Base class of observers (optional: any object with ``update`` will do)."""

    def start(self, progress: RunProgress) -> None:
        """Called once before the first chunk (``progress.time`` is the start time)."""

    def update(self, progress: RunProgress) -> Stop | None:
        """Called after every chunk; return a :class:`Stop` to end the run."""
        return None

    def close(self) -> None:
        """Called once when the run ends, however it ends."""


class StopFlag:
    """A flag that a signal handler (or another thread) sets and :class:`InterruptCheck` reads.

    Setting it only stores two attributes, which is safe inside a signal handler.
    """

    def __init__(self):
        self.signal = None
        self.reason = ""
        self._set = False

    def set(self, signal: int | None = None, reason: str = "") -> None:
        """Ask every run watching this flag to stop (``signal``: the signal number, if any)."""
        self.signal = signal
        self.reason = reason
        self._set = True

    def is_set(self) -> bool:
        """True once :meth:`set` was called (until :meth:`clear`)."""
        return self._set

    def clear(self) -> None:
        """Reset the flag."""
        self._set = False
        self.signal = None
        self.reason = ""


class InterruptCheck(RunObserver):
    """Stops the run once ``flag`` (a :class:`StopFlag`) is set."""

    def __init__(self, flag: StopFlag):
        self.flag = flag

    def update(self, progress):
        if self.flag.is_set():
            sig = self.flag.signal
            reason = self.flag.reason or (f"signal {sig} received" if sig else "stop requested")
            return Stop(reason, sig)
        return None


class EarlyStop(RunObserver):
    """Stops the run as soon as ``condition(progress)`` is true (checked between chunks).

    Parameters
    ----------
    condition : callable
        Takes a :class:`RunProgress`, returns a truth value.
    reason : str
        Text for the messages.
    """

    def __init__(self, condition, reason: str = "early-stop condition met"):
        self.condition = condition
        self.reason = reason

    def update(self, progress):
        return Stop(self.reason) if self.condition(progress) else None


class ProgressBar(RunObserver):
    """A progress bar on stderr (tqdm), in model time.

    Parameters
    ----------
    show : bool or None
        True: always; None: only on a terminal and once the run looks like taking longer than
        ``after`` seconds of wall time; False: never.
    after : float
        Projected wall time above which the bar appears when ``show`` is None [s].
    """

    def __init__(self, show: bool | None = None, after: float = 1.5):
        self.show = show
        self.after = after
        self.bar = None
        self._decided = show is not None
        self._done = 0.0

    def _open(self, p):
        from tqdm import tqdm
        self.bar = tqdm(total=max(p.duration, 1e-300), desc=p.case_name, leave=False,
                        unit="s", unit_scale=True,
                        bar_format="{desc}: {percentage:3.0f}%|{bar}| "
                                   "{elapsed}<{remaining} (model {n:.4g}/{total:.4g} s)")

    def start(self, progress):
        if self.show:
            self._open(progress)
            self._advance(progress)

    def _advance(self, p):
        if self.bar is not None:
            n = min(p.time, p.duration)
            self.bar.update(n - self._done)
            self._done = n

    def update(self, progress):
        if not self._decided and progress.wall_time > 0.2:
            projected = progress.wall_time / max(progress.fraction, 1e-9)
            if projected > self.after:
                self._decided = True
                if sys.stderr.isatty():
                    self._open(progress)
        self._advance(progress)
        return None

    def close(self):
        if self.bar is not None:
            self.bar.close()
            self.bar = None
