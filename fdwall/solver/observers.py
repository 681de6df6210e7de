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

Output rows: an observer with a ``rows(block)`` method receives every output row of the run
exactly once, in order, as :class:`OutputBlock` s (the initial state included, the stop row
of an interrupted run too).  When one is present the driver holds at most a bounded window of
output rows in memory (``window_bytes`` of :func:`fdwall.solver.transient.run`) and hands each
filled window on; :class:`StorageObserver` appends them to resizable HDF5 datasets, so the
memory of a run is bounded by the window and not by its length.  An ``abort()`` method, when
present, is called if the run ends by an exception.
"""
from __future__ import annotations

import os
import sys
from dataclasses import dataclass, field

import numpy as np

from ..atomic import commit_part, discard_part, open_part
from ..errors import OutputError
from ..h5tree import GuardedFile

__all__ = ["CHUNK_SECONDS", "RunProgress", "Stop", "RunObserver", "StopFlag", "InterruptCheck",
           "EarlyStop", "ProgressBar", "OutputBlock", "StorageObserver", "WINDOW_BYTES"]

WINDOW_BYTES = 4 << 20
"""Default size of the window of output rows a streamed run holds in memory [bytes] (common
practice, no source: a few MB amortise the HDF5 appends and stay small beside the kernels)."""

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


@dataclass(frozen=True)
class OutputBlock:
    """Consecutive output rows of a run, handed to observers that have a ``rows`` method.

    Attributes
    ----------
    first : int
        Index of the first row in the whole run (row 0 is the initial state) [-].
    times : ndarray
        Output times (n,) [s].
    T : ndarray
        Temperatures of all unknowns (n, n_unknowns) [K].
    face_flow, face_energy : ndarray
        Heat flow into the wall (n, n_faces) [W] and its running total (n, n_faces) [J].
    heater_energy, loss_energy, heater_power : ndarray
        Cumulative heater energy [J], cumulative chamber loss [J], heater power [W], (n,).
    h_conv, h_rad : ndarray
        Convective and linearised radiative film coefficients (n, n_faces) [W/m2/K].
    series : callable
        ``series()`` -> dict of HDF5 dataset path -> array with n rows: every time series of
        the result file (derived ones such as stored energy and duty included), computed on
        demand by the driver.

    The arrays are views of the driver's window: copy what you keep.
    """

    first: int
    times: np.ndarray
    T: np.ndarray
    face_flow: np.ndarray
    face_energy: np.ndarray
    heater_energy: np.ndarray
    loss_energy: np.ndarray
    heater_power: np.ndarray
    h_conv: np.ndarray
    h_rad: np.ndarray
    series: object = field(default=None, repr=False)

    @property
    def n(self) -> int:
        """Number of rows [-]."""
        return int(self.times.shape[0])


class StorageObserver(RunObserver):
    """Streams the output rows of a run into an HDF5 result file.

    The rows go to resizable, chunked, compressed datasets (h5py, ``maxshape=None``) in a
    temporary file beside ``path`` (named as :mod:`fdwall.atomic` names its temporaries, so a
    run killed outright leaves a file that the next run into that folder removes).  When the
    run ends -- complete, interrupted or failed -- :meth:`finish` writes the rest of the file
    (input, mesh, events, solver statistics, status) and renames it to ``path``: a reader
    never sees a half-written file.  If the run ends by an exception, :meth:`abort` removes
    the temporary file.

    Parameters
    ----------
    path : str or os.PathLike
        The result file to write.
    keep_open : bool
        False: the driver finishes the file at the end of the run.  True: the file stays open
        (still under its temporary name) until the returned result's ``write_hdf5(path)``
        finishes it, so that the caller can add to it first (the command line adds the
        steady state); ``discard()`` of the result removes it instead.
    chunk_bytes : int
        Size of one HDF5 chunk when the run's length is not known [bytes] (otherwise h5py
        chooses, as for an in-memory write).
    cache_bytes : int
        HDF5 chunk cache of each dataset [bytes] (rows come in order: a small one serves).
    """

    def __init__(self, path, keep_open: bool = False, chunk_bytes: int = 1 << 16,
                 cache_bytes: int = 1 << 20):
        self.path = os.fspath(path)
        self.cache_bytes = int(cache_bytes)
        self.keep_open = bool(keep_open)
        self.chunk_bytes = int(chunk_bytes)
        self.tmp = None
        self.h = None
        self.n_rows = 0
        self.names = []          # dataset paths streamed, in creation order
        self._empty = {}         # datasets whose rows hold no values: path -> (shape, dtype)
        self.finished = False
        self._raw = None

    def _open(self):
        if self.h is None and not self.finished:
            import h5py
            self.tmp = open_part(self.path, ".h5.part")
            try:
                self._raw = GuardedFile(self.tmp)
                # a small chunk cache: rows are appended in order, whole windows at a time
                self.h = h5py.File(self._raw, "w", rdcc_nbytes=self.cache_bytes)
            except OSError as e:
                self.abort()
                raise OutputError(f"cannot write {self.path}: {e.strerror or e}") from e

    def _check(self):
        """Raise OutputError (and remove the temporary file) once a write has failed."""
        e = self._raw.error if self._raw is not None else None
        if e is not None:
            self.abort()
            raise OutputError(f"cannot write {self.path}: {e.strerror or e}") from e

    def start(self, progress):
        self.expected_rows = int(progress.n_outputs)
        self._open()

    def _chunks(self, rest, itemsize):
        """Chunk shape of a series: h5py's own choice for the run's whole length when it can
        be had (so a streamed file is chunked like an in-memory write), else rows of about
        ``chunk_bytes``."""
        n = getattr(self, "expected_rows", 0)
        if n > 0:
            try:
                from h5py._hl.filters import guess_chunk
                c = guess_chunk((n,) + rest, None, itemsize)
                if c is not None:
                    return tuple(int(x) for x in c)
            except Exception:  # pragma: no cover - a private helper of h5py may move
                pass
        per_row = max(1, int(np.prod(rest, dtype=np.int64)) * itemsize)
        return (max(1, min(self.chunk_bytes // per_row, 1 << 20)),) + rest

    def rows(self, block: OutputBlock) -> None:
        """Append ``block`` (its ``series()``) to the datasets, creating them on first use."""
        self._open()
        if block.first != self.n_rows:
            raise OutputError(f"output rows out of order for {self.path}: got row "
                              f"{block.first}, expected {self.n_rows}")
        n = block.n
        if n == 0:
            return
        for name, arr in block.series().items():
            arr = np.asarray(arr)
            rest = arr.shape[1:]
            if int(np.prod(rest, dtype=np.int64)) == 0:
                self._empty.setdefault(name, (rest, arr.dtype))
                if name not in self.names:
                    self.names.append(name)
                continue
            if name not in self.h:
                chunks = self._chunks(rest, arr.dtype.itemsize)
                # cache one band of chunks across all columns, twice: a window's rows then
                # fill each chunk in memory and it is compressed and written once
                band = int(np.prod(rest, dtype=np.int64)) * chunks[0] * arr.dtype.itemsize
                self.h.create_dataset(name, shape=(0,) + rest, maxshape=(None,) + rest,
                                      dtype=arr.dtype, chunks=chunks, compression="gzip",
                                      rdcc_nbytes=max(self.cache_bytes, 2 * band),
                                      rdcc_nslots=10007)
                self.names.append(name)
            d = self.h[name]
            d.resize(self.n_rows + n, axis=0)
            d[self.n_rows:self.n_rows + n] = arr
        self.n_rows += n
        self._check()

    def finish(self, write=None) -> str:
        """Complete the file and rename it to ``path``; return ``path``.

        ``write``: a callable taking the open h5py file, that writes everything but the
        streamed series (:meth:`fdwall.result.Result._write` does: it keeps the streamed
        datasets and adds their attributes).  On any failure the temporary file is removed.
        """
        self._open()
        try:
            for name, (rest, dt) in self._empty.items():
                if name not in self.h:
                    self.h.create_dataset(name, shape=(self.n_rows,) + rest, dtype=dt)
            if write is not None:
                write(self.h)
            self.h.flush()
            self._check()
            self.h.close()
            self.h = None
            self._raw.close()
            self._check()
            self._raw = None
        except BaseException:
            self.abort()
            raise
        commit_part(self.tmp, self.path)
        self.finished = True
        return self.path

    def abort(self) -> None:
        """Close and remove the temporary file (nothing is left)."""
        if self.h is not None:
            try:
                self.h.close()
            except Exception:  # pragma: no cover - a broken file is removed anyway
                pass
            self.h = None
        if self._raw is not None:
            try:
                self._raw.close()
            except OSError:
                pass
            self._raw = None
        discard_part(self.tmp)
        self.tmp = None

    @property
    def pending(self) -> bool:
        """True while the file is open under its temporary name."""
        return self.h is not None and not self.finished
