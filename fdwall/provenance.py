"""Provenance of a result: software versions and a hash of the inputs (base layer).

``provenance(case=None, extra_files=())`` returns a dict with the versions of fdwall, Python,
numpy, numba, h5py and scipy, the platform, the SHA-256 of the bundled material library, and
``input_sha256``: one SHA-256 over the case file text (line endings made ``\\n``, UTF-8), each
extra input file (bytes, in the order given) and the bundled material library (bytes).  The
same inputs give the same hash on any machine; a change to any of them changes it.  Timestamps
and software versions are recorded but are not part of ``input_sha256``.

``stamp_h5(h5, prov)`` writes the root attribute ``input_sha256`` and a group ``/provenance``
(one string attribute per entry) into an open h5py file or group.

No units: every value here is text.
"""

from __future__ import annotations

import hashlib
import json
import os
import platform
import sys
from importlib.metadata import version
from pathlib import Path

#: The bundled material library, hashed as an input of every run.
LIBRARY_PATH = Path(__file__).resolve().parent / "materials" / "library.toml"

_PACKAGES = ("numpy", "numba", "h5py", "scipy")


def _version(dist: str) -> str:
    try:
        return version(dist)
    except Exception:  # not installed, or a source tree without metadata
        return "unknown"


def _canonical(data: bytes) -> bytes:
    """Bytes as hashed: CRLF / CR line endings made LF (a case copied between systems keeps
    its hash)."""
    return data.replace(b"\r\n", b"\n").replace(b"\r", b"\n")


def _case_bytes(case) -> bytes:
    """The bytes of a case: a path (the file is read), a text, bytes, or a Case (its source)."""
    if case is None:
        return b""
    if isinstance(case, (bytes, bytearray)):
        return _canonical(bytes(case))
    if isinstance(case, os.PathLike):
        return _canonical(Path(case).read_bytes())
    if isinstance(case, str):
        if "\n" not in case and len(case) < 4096 and os.path.isfile(case):
            return _canonical(Path(case).read_bytes())
        return _canonical(case.encode("utf-8"))
    return _canonical((getattr(case, "source", "") or "").encode("utf-8"))


def sha256_file(path) -> str:
    """SHA-256 (hex) of a file's bytes."""
    h = hashlib.sha256()
    with open(path, "rb") as f:
        for block in iter(lambda: f.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def input_sha256(case=None, extra_files=(), library=LIBRARY_PATH, options=None) -> str:
    """SHA-256 (hex) of the inputs of a run.

    Parameters
    ----------
    case : Case, str, bytes or path, optional
        The case (its ``source`` text), the case text, or the case file path.
    extra_files : iterable of paths, optional
        Further input files (schedules, material files), hashed in the order given.
    library : path or None, optional
        The material library file (default: the bundled one); None leaves it out.
    options : dict, optional
        Settings of an analysis that change its answer (the command-line options of ``size``,
        ``fit``, ``rc`` ...), hashed as canonical JSON (sorted keys); None leaves them out.

    Returns
    -------
    str
        64 hex digits.
    """
    h = hashlib.sha256()

    def part(label: str, data: bytes) -> None:
        # label and length first, so that no two different sets of inputs run together
        h.update(f"{label}\0{len(data)}\0".encode())
        h.update(data)

    part("case", _case_bytes(case))
    for p in extra_files:
        part("file:" + os.path.basename(os.fspath(p)), Path(p).read_bytes())
    if library is not None:
        part("library", Path(library).read_bytes())
    if options is not None:
        part("options", json.dumps(options, sort_keys=True, default=str).encode("utf-8"))
    return h.hexdigest()


def provenance(case=None, extra_files=(), options=None) -> dict:
    """Versions, platform and input hash of a run.

    Parameters
    ----------
    case : Case, str, bytes or path, optional
        See :func:`input_sha256`.
    extra_files : iterable of paths, optional
        Further input files.
    options : dict, optional
        Settings of an analysis (see :func:`input_sha256`); recorded as ``options`` (JSON).

    Returns
    -------
    dict of str
        Keys ``fdwall_version``, ``python_version``, ``numpy_version``, ``numba_version``,
        ``h5py_version``, ``scipy_version``, ``platform``, ``material_library_sha256``,
        ``input_sha256``.
    """
    extra_files = [os.fspath(p) for p in extra_files]
    out = {"fdwall_version": _version("fdwall") if _version("fdwall") != "unknown"
           else "0+unknown",
           "python_version": platform.python_version()}
    for name in _PACKAGES:
        mod = sys.modules.get(name)
        out[f"{name}_version"] = str(getattr(mod, "__version__", "")) or _version(name)
    out["platform"] = platform.platform()
    out["material_library_sha256"] = sha256_file(LIBRARY_PATH) if LIBRARY_PATH.is_file() else ""
    if extra_files:
        out["input_files"] = "\n".join(extra_files)
    if options is not None:
        out["options"] = json.dumps(options, sort_keys=True, default=str)
    out["input_sha256"] = input_sha256(case, extra_files,
                                       LIBRARY_PATH if LIBRARY_PATH.is_file() else None, options)
    return out


def stamp_h5(h5, prov: dict) -> None:
    """Write ``prov`` into an open h5py file or group.

    Sets the attribute ``input_sha256`` on ``h5`` and creates the group ``provenance`` holding
    every entry of ``prov`` as a string attribute.

    Parameters
    ----------
    h5 : h5py.File or h5py.Group
        Open for writing.
    prov : dict
        As returned by :func:`provenance`.
    """
    h5.attrs["input_sha256"] = str(prov.get("input_sha256", ""))
    g = h5.require_group("provenance")
    for k, v in prov.items():
        g.attrs[k] = str(v)
