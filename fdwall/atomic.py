"""Atomic file writing: write to a temporary file beside the target, rename when complete.

A crash or Ctrl-C while writing leaves the old file (or none), never a half-written one.
Finished files get the usual permissions (0666 less the umask), not the private 0600 of a
temporary file.
"""
from __future__ import annotations

import os
import tempfile
from contextlib import contextmanager

__all__ = ["atomic_path"]


@contextmanager
def atomic_path(path, suffix=".part"):
    """Context manager yielding a temporary path; on success it is renamed to ``path``.

    Parameters
    ----------
    path : str or os.PathLike
        Final file path; its folder is created if missing.
    suffix : str
        Suffix of the temporary file (it starts with ``.fdwall-``).
    """
    path = os.fspath(path)
    d = os.path.dirname(os.path.abspath(path))
    os.makedirs(d, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=".fdwall-", suffix=suffix, dir=d)
    os.close(fd)
    try:
        yield tmp
        mask = os.umask(0)
        os.umask(mask)
        os.chmod(tmp, 0o666 & ~mask)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.remove(tmp)
        raise
