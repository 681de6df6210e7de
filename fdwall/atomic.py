"""Atomic file writing: write to a temporary file beside the target, rename when complete.

A crash, a full disk, a file-size limit or Ctrl-C while writing leaves the old file (or none),
never a half-written one.  Finished files get the usual permissions (0666 less the umask), not
the private 0600 of a temporary file.

Signals: while the temporary file is renamed (the critical section) SIGINT, SIGTERM and SIGHUP
are deferred and delivered again just after -- only when called from the main thread (a
library must not install signal handlers otherwise).  The temporary ``.part`` file is removed
on every failure.  Temporary names carry a tag of the host and the id of the process that
writes them (``.fdwall-<host>-p<pid>-<random><suffix>``); a ``.part`` file of this host whose
process is gone (left by a killed run) is removed by the next write into that folder, and so
is an untagged ``.fdwall-*.part`` of an older release once it is older than this process.  A
file whose writer still runs (another run into the same folder) or that another host wrote is
never touched.

:func:`open_part`, :func:`commit_part` and :func:`discard_part` are the same steps for a
temporary file that stays open for a while (a run streaming its output to HDF5).

Layer 1 (base): imports only :mod:`fdwall.errors`.
"""
from __future__ import annotations

import glob
import os
import re
import signal
import socket
import tempfile
import threading
import time
import zlib
from contextlib import contextmanager

from .errors import OutputError

__all__ = ["atomic_path", "write_bytes", "remove_stale_parts", "PROCESS_START", "open_part",
           "commit_part", "discard_part", "part_prefix"]

#: Wall-clock start of this process (s since the epoch); older ``.part`` files are stale.
PROCESS_START = time.time()

_DEFERRED = ("SIGINT", "SIGTERM", "SIGHUP")


#: Short tag of this host in temporary names (a pid means nothing on another host).
HOST_TAG = f"{zlib.crc32(socket.gethostname().encode()) & 0xFFFFFFFF:08x}"

_TAGGED = re.compile(r"^\.fdwall-([0-9a-f]{8})-p(\d+)-")


def part_prefix() -> str:
    """Prefix of this process's temporary files: ``.fdwall-<host tag>-p<pid>-``."""
    return f".fdwall-{HOST_TAG}-p{os.getpid()}-"


def _pid_alive(pid: int) -> bool:
    """True when a process with id ``pid`` exists on this host (it may belong to another user)."""
    if pid <= 0:
        return False
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:          # EPERM: it exists, owned by someone else
        return True
    return True


def remove_stale_parts(folder) -> list:
    """Remove the temporary files in ``folder`` that a killed earlier run left; return their paths.

    Removed: ``.fdwall-<this host>-p<pid>-*.part`` whose process ``pid`` no longer runs, and
    untagged ``.fdwall-*.part`` (older releases) last changed before this process started.
    Kept: files of live processes (a concurrent run into the same folder), of other hosts, of
    this process, and everything not named like ours.
    """
    gone = []
    for p in glob.glob(os.path.join(os.fspath(folder), ".fdwall-*.part")):
        name = os.path.basename(p)
        m = _TAGGED.match(name)
        try:
            if m:
                if m.group(1) != HOST_TAG or _pid_alive(int(m.group(2))):
                    continue
            elif os.path.getmtime(p) >= PROCESS_START - 1.0:
                continue
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
    tmp = open_part(path, suffix)
    try:
        yield tmp
        _finish(tmp, path)
    except BaseException as e:
        discard_part(tmp)
        if isinstance(e, OSError) and not isinstance(e, OutputError):
            raise OutputError(f"cannot write {path}: {e.strerror or e}") from e
        raise


def open_part(path, suffix=".part") -> str:
    """Create an empty temporary file beside ``path`` and return its name (see the module
    docstring for the naming); stale temporaries in that folder are removed first.

    Raises OutputError when the folder or the file cannot be made."""
    path = os.fspath(path)
    d = os.path.dirname(os.path.abspath(path))
    try:
        os.makedirs(d, exist_ok=True)
        remove_stale_parts(d)
        fd, tmp = tempfile.mkstemp(prefix=part_prefix(), suffix=suffix, dir=d)
        os.close(fd)
    except OSError as e:
        raise OutputError(f"cannot write {path}: {e.strerror or e}") from e
    return tmp


def commit_part(tmp, path) -> str:
    """Give the finished temporary file ``tmp`` the usual permissions and rename it to
    ``path`` (signals deferred during the rename); return ``path``.  OSError -> OutputError,
    and the temporary file is removed."""
    path = os.fspath(path)
    try:
        _finish(tmp, path)
    except OSError as e:
        discard_part(tmp)
        raise OutputError(f"cannot write {path}: {e.strerror or e}") from e
    return path


def discard_part(tmp) -> None:
    """Remove the temporary file ``tmp`` if it is there (errors ignored)."""
    try:
        if tmp and os.path.exists(tmp):
            os.remove(tmp)
    except OSError:
        pass


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
