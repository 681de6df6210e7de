"""Atomic file writing: write to a temporary file beside the target, rename when complete.

A crash, a full disk, a file-size limit or Ctrl-C while writing leaves the old file (or none),
never a half-written one.  Finished files get the usual permissions (0666 less the umask), not
the private 0600 of a temporary file.

Signals: while the temporary file is renamed (the critical section) SIGINT, SIGTERM and SIGHUP
are deferred and delivered again just after -- only when called from the main thread (a
library must not install signal handlers otherwise).  The temporary ``.part`` file is removed
on every failure.  Stale ``.fdwall-*.part`` files older than this process, left by a killed
run, are removed by the next write into that folder.

Layer 1 (base): imports only :mod:`fdwall.errors`.
"""
from __future__ import annotations

import glob
import os
import signal
import tempfile
import threading
import time
from contextlib import contextmanager

from .errors import OutputError

__all__ = ["atomic_path", "write_bytes", "remove_stale_parts", "PROCESS_START"]

#: Wall-clock start of this process (s since the epoch); older ``.part`` files are stale.
PROCESS_START = time.time()

_DEFERRED = ("SIGINT", "SIGTERM", "SIGHUP")


def remove_stale_parts(folder) -> list:
    """Remove ``.fdwall-*.part`` files in ``folder`` older than this process; return their paths."""
    gone = []
    for p in glob.glob(os.path.join(os.fspath(folder), ".fdwall-*.part")):
        try:
            if os.path.getmtime(p) < PROCESS_START - 1.0:
                os.remove(p)
                gone.append(p)
        except OSError:
            pass
    return gone


@contextmanager
def _signals_deferred():
    """Defer SIGINT/SIGTERM/SIGHUP inside the block (main thread only), re-raise them after."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    got = []
    old = {}
    for name in _DEFERRED:
        sig = getattr(signal, name, None)
        if sig is None:
            continue
        try:
            old[sig] = signal.signal(sig, lambda s, f: got.append(s))
        except (ValueError, OSError):
            pass
    try:
        yield
    finally:
        for sig, h in old.items():
            signal.signal(sig, h)
        for sig in got:
            os.kill(os.getpid(), sig)


def _finish(tmp, path):
    mask = os.umask(0)
    os.umask(mask)
    os.chmod(tmp, 0o666 & ~mask)
    with _signals_deferred():
        os.replace(tmp, path)


@contextmanager
def atomic_path(path, suffix=".part"):
    """Context manager yielding a temporary path; on success it is renamed to ``path``.

    Parameters
    ----------
    path : str or os.PathLike
        Final file path; its folder is created if missing.
    suffix : str
        Suffix of the temporary file (it starts with ``.fdwall-``).

    Raises
    ------
    OutputError
        The folder or the file could not be written (an OSError underneath).
    """
    path = os.fspath(path)
    d = os.path.dirname(os.path.abspath(path))
    try:
        os.makedirs(d, exist_ok=True)
        remove_stale_parts(d)
        fd, tmp = tempfile.mkstemp(prefix=".fdwall-", suffix=suffix, dir=d)
        os.close(fd)
    except OSError as e:
        raise OutputError(f"cannot write {path}: {e.strerror or e}") from e
    try:
        yield tmp
        _finish(tmp, path)
    except BaseException as e:
        try:
            if os.path.exists(tmp):
                os.remove(tmp)
        except OSError:
            pass
        if isinstance(e, OSError) and not isinstance(e, OutputError):
            raise OutputError(f"cannot write {path}: {e.strerror or e}") from e
        raise


def write_bytes(path, data: bytes) -> str:
    """Write ``data`` to ``path`` atomically (os.write loop, fsync, rename); return ``path``.

    Raises OutputError on any OSError (disk full, RLIMIT_FSIZE, permissions); no file is left.
    """
    path = os.fspath(path)
    with atomic_path(path, ".part") as tmp:
        fd = os.open(tmp, os.O_WRONLY | os.O_TRUNC)
        try:
            view = memoryview(data)
            while view:
                n = os.write(fd, view)
                view = view[n:]
            os.fsync(fd)
        finally:
            os.close(fd)
    return path
