"""The ahead-of-time compile step of the kernels, isolated: the only module that knows the
compiler (numba's ``pycc``).

Layer 6 (solver); imports nothing of fdwall.  :mod:`fdwall.solver.native` decides *what* is
compiled (the entry points, their argument codes, the fingerprint) and loads the result; this
module only turns that list into an extension module file.  Replacing numba's ahead-of-time
tool (deprecated upstream) by another means changing this module alone, as long as the new
one keeps :func:`build_extension`'s contract.

Argument codes: ``f`` float64, ``i`` int64, ``b`` boolean, ``none``; ``F1``/``F2``/``F3``
float64 and ``I1``/``I2`` int64 C-ordered arrays of 1/2/3 dimensions; ``(a,b,...)`` a tuple.
"""
from __future__ import annotations

import os
import pathlib
import shutil
import tempfile
import warnings

__all__ = ["build_extension", "numba_type"]


def numba_type(code: str):
    """The numba type of an argument or return code (see the module docstring)."""
    from numba import types as nt
    if code == "f":
        return nt.float64
    if code == "i":
        return nt.int64
    if code == "b":
        return nt.boolean
    if code == "none":
        return nt.none
    if code.startswith("("):
        return nt.Tuple([numba_type(c) for c in code[1:-1].split(",")])
    base = nt.float64 if code[0] == "F" else nt.int64
    return nt.Array(base, int(code[1]), "C")


def build_extension(module: str, entries: dict, fingerprint: int, dest_dir, stamp_path,
                    cpu: str, verbose: bool = False) -> pathlib.Path:
    """Compile ``entries`` into the extension module ``module`` in ``dest_dir``; return its path.

    Parameters
    ----------
    module : str
        Name of the extension module.
    entries : dict
        name -> (Python function, list of argument codes, return code).
    fingerprint : int
        Exported as ``fingerprint()`` from the module and written to ``stamp_path`` (a text
        file), so a loader can check what the module was built from before importing it.
    dest_dir : path
        Folder of the module.
    stamp_path : path
        The fingerprint file beside the module.
    cpu : str
        Target CPU name (the module uses that instruction set).
    verbose : bool
        Let the compiler print what it does.

    The module is built in a temporary folder and moved into place in one step (the old stamp
    first, so that no stamp matches a half-replaced module); a failed or interrupted build
    leaves any previous module untouched.  Needs a C compiler.
    """
    from numba.core.errors import NumbaPendingDeprecationWarning
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", NumbaPendingDeprecationWarning)
        from numba.pycc import CC
    dest_dir = pathlib.Path(dest_dir)
    stamp_path = pathlib.Path(stamp_path)
    with tempfile.TemporaryDirectory(dir=dest_dir, prefix=".build-") as tmp:
        cc = CC(module)
        cc.output_dir = tmp
        cc.target_cpu = cpu
        cc.verbose = verbose
        for name, (func, codes, ret) in entries.items():
            sig = numba_type(ret)(*[numba_type(c) for c in codes])
            cc.export(name, sig)(func)

        def _fingerprint():
            return fingerprint
        cc.export("fingerprint", numba_type("i")())(_fingerprint)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", NumbaPendingDeprecationWarning)
            cc.compile()
        built = [p for p in pathlib.Path(tmp).iterdir() if p.name.startswith(module + ".")]
        if len(built) != 1:
            raise RuntimeError(f"the compiler produced {[p.name for p in built]}, "
                               f"expected one {module} extension module")
        final = dest_dir / built[0].name
        stamp = pathlib.Path(tmp) / "stamp"
        stamp.write_text(f"{fingerprint}\n")
        stamp_path.unlink(missing_ok=True)
        os.replace(built[0], final)
        os.replace(stamp, stamp_path)
    # stale modules under other names (another Python version) are left alone; clear any
    # leftover build folders of interrupted builds
    for p in dest_dir.glob(".build-*"):
        shutil.rmtree(p, ignore_errors=True)
    return final
