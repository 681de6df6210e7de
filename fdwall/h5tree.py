"""Nested plain data (dicts, lists, numbers, strings, arrays) to and from HDF5 groups.

Layer 1 (base): numpy, h5py (imported lazily) and :mod:`fdwall.atomic` only.  The analyses
(touch safety, sizing, fits, studies) store their answers with these functions, so a report
or a script can read back exactly what the analysis computed.

Writing: new files are built in memory and written atomically (:func:`h5_atomic`);
:func:`add_group` changes a copy of an existing file beside it and renames it over the
original, through :class:`GuardedFile`, which keeps a failed write (disk full, size limit)
from HDF5's error paths.

Mapping
-------
- ``dict`` -> a group; its keys are the member names;
- a number, bool or string -> an attribute of the group;
- ``None`` -> an attribute holding the string ``"null"`` (read back as ``None``);
- a list or array of numbers (any shape) -> a dataset;
- a list of strings -> a dataset of variable-length strings;
- a list of dicts (or mixed) -> a group with members ``"0"``, ``"1"``, ... and the attribute
  ``list_length`` (read back as a list).

Units: a dataset or attribute whose key ends in a unit suffix of :data:`SUFFIX_UNITS`
(``T_max_K``, ``t_max_s``, ``loss_W_per_m2``) gets that unit in ``units`` attributes
(datasets: ``dataset.attrs["units"]``; attributes: ``group.attrs["units:<key>"]``).
"""
from __future__ import annotations

import json
import os
import shutil
from contextlib import contextmanager

import numpy as np

from .atomic import atomic_path, write_bytes
from .provenance import stamp_h5

__all__ = ["GuardedFile", "h5_atomic", "write_tree", "read_tree", "add_group", "write_file", "unit_of", "SUFFIX_UNITS"]

#: Key suffix -> unit text (longest suffix wins).
SUFFIX_UNITS = {
    "_K": "K", "_s": "s", "_m": "m", "_m2": "m2", "_m3": "m3", "_W": "W", "_J": "J", "_kg": "kg",
    "_W_per_m2": "W/m2", "_W_m2": "W/m2", "_W_per_m": "W/m", "_W_m": "W/m",
    "_W_per_K": "W/K", "_K_per_W": "K/W", "_J_per_K": "J/K", "_W_m2K": "W/m2/K",
    "_W_per_m2K": "W/m2/K", "_W_mK": "W/m/K", "_W_per_mK": "W/m/K", "_J_kgK": "J/kg/K",
    "_kg_m3": "kg/m3", "_m2K_W": "m2*K/W", "_Pa": "Pa", "_h": "h", "_kWh": "kWh",
    "_J_per_m2": "J/m2", "_J_per_m": "J/m", "_per_s": "1/s", "_1_s": "1/s",
}
_SUFFIXES = sorted(SUFFIX_UNITS, key=len, reverse=True)


def unit_of(key: str) -> str:
    """The unit text a key's suffix stands for ('' when it names none)."""
    for suf in _SUFFIXES:
        if key.endswith(suf) and len(key) > len(suf):
            return SUFFIX_UNITS[suf]
    return ""


def _is_scalar(v) -> bool:
    return isinstance(v, (bool, int, float, str, np.bool_, np.integer, np.floating))


def _numeric_array(v):
    """``v`` as a numeric ndarray, or None when it is not a rectangular list of numbers."""
    if isinstance(v, np.ndarray):
        return v if v.dtype.kind in "biuf" else None
    try:
        a = np.asarray(v)
    except (ValueError, TypeError):
        return None
    if a.dtype.kind in "biuf":
        return a
    if a.dtype == object and a.size and all(x is None or isinstance(x, (int, float))
                                             for x in a.ravel()):
        return np.array([np.nan if x is None else x for x in a.ravel()], float).reshape(a.shape)
    return None


def write_tree(group, data: dict) -> None:
    """Write the mapping ``data`` into the HDF5 group ``group`` (see the module docstring)."""
    import h5py
    for key, v in data.items():
        key = str(key)
        if isinstance(v, dict):
            write_tree(group.create_group(key), v)
            continue
        if v is None:
            group.attrs[key] = "null"
            continue
        if _is_scalar(v):
            group.attrs[key] = v.item() if isinstance(v, np.generic) else v
            u = unit_of(key)
            if u:
                group.attrs[f"units:{key}"] = u
            continue
        if isinstance(v, (list, tuple)) and v and all(isinstance(x, str) for x in v):
            group.create_dataset(key, data=np.array(v, dtype=object),
                                 dtype=h5py.string_dtype())
            continue
        arr = None if (isinstance(v, (list, tuple)) and not v) else _numeric_array(v)
        if arr is not None:
            kw = {}
            if arr.ndim >= 1 and arr.size > 64:
                kw = dict(chunks=True, compression="gzip")
            d = group.create_dataset(key, data=arr, **kw)
            u = unit_of(key)
            if u:
                d.attrs["units"] = u
            continue
        if isinstance(v, (list, tuple)):
            g = group.create_group(key)
            g.attrs["list_length"] = len(v)
            for i, item in enumerate(v):
                if isinstance(item, dict):
                    write_tree(g.create_group(str(i)), item)
                else:
                    write_tree(g, {str(i): item})
            continue
        group.attrs[key] = json.dumps(v, default=str)


def _attr(v):
    if isinstance(v, bytes):
        v = v.decode()
    if isinstance(v, str) and v == "null":
        return None
    if isinstance(v, np.generic):
        return v.item()
    return v


def read_tree(group) -> dict:
    """Read a group written by :func:`write_tree` back into plain data."""
    import h5py
    out = {}
    for k, v in group.attrs.items():
        if k.startswith("units:") or k == "list_length":
            continue
        out[k] = _attr(v)
    for k, obj in group.items():
        if isinstance(obj, h5py.Group):
            out[k] = _read_member(obj)
        else:
            val = obj[()]
            if isinstance(val, np.ndarray) and val.dtype == object:
                val = [x.decode() if isinstance(x, bytes) else x for x in val]
            elif isinstance(val, bytes):
                val = val.decode()
            out[k] = val
    return out


def _read_member(g):
    if "list_length" in g.attrs:
        d = read_tree(g)
        return [d.get(str(i)) for i in range(int(g.attrs["list_length"]))]
    return read_tree(g)


class GuardedFile:
    """A raw file for h5py's ``fileobj`` driver that never lets a failed write reach HDF5.

    A write that fails (disk full, file-size limit, I/O error) is recorded in ``error`` and
    reported to HDF5 as done; that write and every later one are kept in memory (``reads``
    see them), so HDF5 stays consistent until the caller, who checks ``error`` after each
    step, abandons the file.  HDF5's own error paths on a failing file are never taken.
    """

    def __init__(self, name):
        self.f = open(name, "r+b", buffering=0)
        self.pos = 0
        self.error = None
        self.overlay = []        # (offset, bytes) written after the first failure

    def seek(self, pos, whence=0):
        if whence == 0:
            self.pos = pos
        elif whence == 1:
            self.pos += pos
        else:
            self.pos = max(self.f.seek(0, 2), max((o + len(b) for o, b in self.overlay),
                                                   default=0)) + pos
        return self.pos

    def tell(self):
        return self.pos

    def write(self, data):
        data = bytes(data)
        n = len(data)
        if self.error is None:
            try:
                self.f.seek(self.pos)
                view = memoryview(data)
                while view:
                    w = self.f.write(view)
                    view = view[w:]
            except OSError as e:
                self.error = e
        if self.error is not None:
            self.overlay.append((self.pos, data))
        self.pos += n
        return n

    def read(self, n=-1):
        self.f.seek(self.pos)
        out = bytearray(self.f.read(n) if n >= 0 else self.f.read())
        if n >= 0 and len(out) < n and self.overlay:
            out.extend(bytes(n - len(out)))
        for o, b in self.overlay:
            lo, hi = max(o, self.pos), min(o + len(b), self.pos + len(out))
            if lo < hi:
                out[lo - self.pos:hi - self.pos] = b[lo - o:hi - o]
        self.pos += len(out)
        return bytes(out)

    def readinto(self, buf):
        data = self.read(len(buf))
        buf[:len(data)] = data
        return len(data)

    def truncate(self, size=None):
        if self.error is None:
            try:
                self.f.truncate(self.pos if size is None else size)
            except OSError as e:
                self.error = e
        return self.pos if size is None else size

    def flush(self):
        pass

    def raise_error(self):
        """Raise the OSError of the first failed write, if any."""
        if self.error is not None:
            raise self.error

    def close(self):
        self.f.close()


@contextmanager
def h5_atomic(path, source=None):
    """Yield an in-memory HDF5 file; on success write its bytes to ``path`` atomically.

    The file is built with h5py's ``core`` driver (no backing store), so a full disk or a
    file-size limit can never hit h5py mid-write; the finished image goes through
    :func:`fdwall.atomic.write_bytes` (OSError -> OutputError, no file left).  ``source``: an
    existing file whose bytes start the image (to change a file), else the image starts empty.
    """
    import h5py
    path = os.fspath(path)
    if source is not None:
        # core driver, no backing store: the file is read into memory, never written back
        h = h5py.File(os.fspath(source), "r+", driver="core", backing_store=False)
    else:
        h = h5py.File(_MemName.next(), "w", driver="core", backing_store=False)
    try:
        yield h
        h.flush()
        data = h.id.get_file_image()
    finally:
        h.close()
    write_bytes(path, data)


class _MemName:
    n = 0

    @classmethod
    def next(cls):
        cls.n += 1
        return f"fdwall-mem-{os.getpid()}-{cls.n}.h5"


def add_group(path, name: str, data: dict, *, attrs: dict | None = None) -> str:
    """Add (or replace) the group ``name`` in the existing HDF5 file ``path``, atomically.

    The file is copied to a temporary file beside it (block by block: memory does not grow
    with the file, which may hold a long run's history), changed there through a
    :class:`GuardedFile` and renamed over the original, so a failure (OSError ->
    OutputError) leaves the old file as it was and no temporary file.
    """
    import h5py
    path = os.fspath(path)
    with atomic_path(path, ".h5.part") as tmp:
        shutil.copyfile(path, tmp)
        raw = GuardedFile(tmp)
        try:
            with h5py.File(raw, "r+") as h:
                if name in h:
                    del h[name]
                g = h.create_group(name)
                write_tree(g, data)
                for k, v in (attrs or {}).items():
                    g.attrs[k] = v
                h.flush()
                raw.raise_error()
            raw.raise_error()
        finally:
            raw.close()
    return path


def write_file(path, groups: dict, *, attrs: dict | None = None,
               provenance: dict | None = None) -> str:
    """Write a new HDF5 file atomically: one group per entry of ``groups``, root ``attrs``,
    and with ``provenance`` (a dict from :func:`fdwall.provenance.provenance`) its record
    (root ``input_sha256`` and the ``/provenance`` group, :func:`fdwall.provenance.stamp_h5`)."""
    path = os.fspath(path)
    with h5_atomic(path) as h:
        for k, v in (attrs or {}).items():
            h.attrs[k] = v
        for name, data in groups.items():
            write_tree(h.create_group(name), data)
        if provenance is not None:
            stamp_h5(h, provenance)
    return path
