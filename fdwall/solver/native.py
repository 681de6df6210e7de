"""Entry points into the compiled kernels: ahead-of-time when built, else just-in-time.

numba compiles the kernels on first use and caches the machine code per machine; the first
compile takes several seconds (see benchmarks/README.md for where it goes).  ``fdwall
compile`` (or :func:`build`) compiles the entry points below ahead of time, once per install,
into an extension module beside this file.  Python code calls the kernels through this module
(``from fdwall.solver import native as K``), which uses the extension when it is present and
built from the very same source, and the numba dispatchers otherwise.

Safety: an extension built from other kernel sources, numba or numpy would silently compute
something else, so the module carries a fingerprint of everything it was compiled from and is
ignored unless that matches.  Compiled functions do not check argument types (a wrong type
crashes the process), so every call is checked here first: any argument that is not exactly
the compiled type (dtype, dimensions, C order, writable) goes to the just-in-time dispatcher,
which is always correct.  ``FDWALL_JIT=1`` in the environment ignores the extension.

Everything else in :mod:`fdwall.solver.kernels` (constants, layouts) is re-exported unchanged.
"""
from __future__ import annotations

import hashlib
import importlib
import os
import pathlib
import sys

import numpy as np

from .. import compiled
from ..physics import air, convection
from . import aot, post
from . import kernels as _kernels
from .kernels import *  # noqa: F401,F403  (state and stats layouts, constants)

MODULE = "_native"            # extension module name, beside this file
_PKG = pathlib.Path(__file__).resolve().parent.parent   # the fdwall package folder

# Source files the compiled entry points are made from (relative to the package).
SOURCES = ("solver/kernels.py", "solver/layout.py", "solver/post.py", "solver/native.py",
           "solver/aot.py",
           "physics/convection.py", "physics/air.py", "physics/radiation.py")

# Argument codes: f float64, i int64, b boolean; F1/F2/F3 float64 and I1/I2 int64 C-ordered
# writable arrays of 1/2/3 dimensions.  A trailing "*n" repeats a code n times.
_SYSTEM = "I2 F2 I2 I2 F2 F2 I1 F2 I1 F2 I1 F1 I1 F1"   # node_i .. ctl_f
ENTRIES = {
    # name: (module, argument codes, return type)
    "integrate": ("kernels", "F1*5 i i b F1 F1 f f " + _SYSTEM + " I1 I1 I1 F1 I2 F2 F2 F2 F2 F2 "
                  "F1 F2 F2 F1 i", "i"),
    "assemble": ("kernels", "F1 f f f " + _SYSTEM + " F1*12", "none"),
    "steady": ("kernels", "F1 f f " + _SYSTEM + " I1 I1 F1*4 f i", "(i,f)"),
    "_newton_stage": ("kernels", "F1 F1 f f F1 f I1 I1 " + _SYSTEM + " F1*17 f F1", "b"),
    "sched_eval": ("kernels", "I1 F2 i f f", "f"),
    "mat_eval": ("kernels", "I1 F2 i f", "(f,f,f,f)"),
    "half_enthalpy": ("post", "F2 I2 F2 I1 F2 I1", "(F3,F1)"),
    "h_conv": ("convection", "F1 f f", "f"),
    "h_conv_array": ("convection", "F1 F1 F1", "F1"),
    "dimensionless_numbers": ("convection", "F1 f f", "(f,f,f,f,f)"),
    "rho_cp": ("air", "f f", "f"),
}


def _codes(spec):
    out = []
    for tok in spec.split():
        code, _, rep = tok.partition("*")
        out += [code] * (int(rep) if rep else 1)
    return out


def _host_cpu():
    """Name and features of this machine's CPU (the module is compiled for it)."""
    import llvmlite.binding as ll
    return ll.get_host_cpu_name(), ll.get_host_cpu_features().flatten()


def fingerprint() -> int:
    """63-bit hash of the kernel sources, the entry table, the numba/numpy/Python versions and
    the CPU (the module uses this machine's instruction set, as numba's own cache does)."""
    import numba
    h = hashlib.sha256()
    for rel in SOURCES:
        h.update((_PKG / rel).read_bytes())
    h.update(repr((numba.__version__, np.__version__, sys.version_info[:2], _host_cpu())).encode())
    return int.from_bytes(h.digest()[:8], "little") >> 1


def _jit_functions():
    mods = {"kernels": _kernels, "post": post, "convection": convection, "air": air}
    return {name: getattr(mods[m], name) for name, (m, _, _) in ENTRIES.items()}


# ---------------------------------------------------------------- checked call into the extension
#: Calls that went to the just-in-time dispatcher although the extension is loaded, by entry
#: point (an argument of another type than compiled); for tests and diagnostics.
FALLBACKS: dict = {}
_DT = {"F": np.dtype(np.float64), "I": np.dtype(np.int64)}


def _make_caller(aot, jit, codes):
    """A function that calls ``aot`` when every argument is exactly its compiled type, and
    ``jit`` otherwise.  The checks are generated as straight-line code (a few hundred ns per
    argument less than a loop over them)."""
    name = jit.__name__
    n = len(codes)
    names = [f"a{j}" for j in range(n)]
    lines = ["def call(*args):",
             f"    if len(args) != {n}:",
             "        return fallback(args)",
             f"    {', '.join(names)}{',' if n == 1 else ''} = args"]
    conv = []
    for a, c in zip(names, codes):
        if c == "f":
            lines.append(f"    if type({a}) is not float:")
            lines.append(f"        if not isinstance({a}, NUM) or isinstance({a}, BOOL):")
            lines.append("            return fallback(args)")
            lines.append(f"        {a} = float({a})")
        elif c == "i":
            lines.append(f"    if type({a}) is not int:")
            lines.append(f"        if not isinstance({a}, INT) or isinstance({a}, BOOL):")
            lines.append("            return fallback(args)")
            lines.append(f"        {a} = int({a})")
        elif c == "b":
            lines.append(f"    if not isinstance({a}, BOOL):")
            lines.append("        return fallback(args)")
            lines.append(f"    {a} = bool({a})")
        else:
            dt = "DF" if c[0] == "F" else "DI"
            lines.append(f"    if type({a}) is not ndarray or {a}.ndim != {int(c[1])} or "
                         f"({a}.dtype is not {dt} and {a}.dtype != {dt}):")
            lines.append("        return fallback(args)")
            lines.append(f"    fl = {a}.flags")
            lines.append("    if not (fl.c_contiguous and fl.writeable):")
            lines.append("        return fallback(args)")
        conv.append(a)
    lines.append(f"    return aot({', '.join(conv)})")

    def fallback(args):
        FALLBACKS[name] = FALLBACKS.get(name, 0) + 1
        return jit(*args)

    ns = {"fallback": fallback, "aot": aot, "ndarray": np.ndarray, "DF": _DT["F"],
          "DI": _DT["I"], "NUM": (float, int, np.floating, np.integer),
          "INT": (int, np.integer), "BOOL": (bool, np.bool_)}
    exec("\n".join(lines), ns)
    call = ns["call"]
    call.__name__ = name
    call.__qualname__ = name
    call.__doc__ = jit.__doc__
    call.__wrapped__ = jit
    return call


def _stamp_path() -> pathlib.Path:
    """Text file beside the module holding the fingerprint it was built with."""
    return pathlib.Path(__file__).resolve().parent / f"{MODULE}.fingerprint"


def _load_extension():
    """The extension module if present, importable and built from these sources; else None.

    The fingerprint is read from a text file beside the module before the module is even
    imported (a module compiled for another CPU must not be loaded), then confirmed from the
    module itself."""
    if os.environ.get("FDWALL_JIT", "") not in ("", "0"):
        return None, "FDWALL_JIT is set"
    try:
        stamp = int(_stamp_path().read_text().strip())
    except (OSError, ValueError):
        return None, "not built (run `fdwall compile`)"
    if stamp != fingerprint():
        return None, "built from other sources, versions or CPU (run `fdwall compile` again)"
    try:
        mod = importlib.import_module(f"{__package__}.{MODULE}")
    except ImportError:
        return None, "not built (run `fdwall compile`)"
    try:
        if int(mod.fingerprint()) != fingerprint():
            return None, "built from other sources or versions (run `fdwall compile` again)"
    except Exception as exc:   # a broken build: fall back, never crash
        return None, f"unusable ({exc})"
    return mod, "extension module built from the current sources"


def _bind():
    jits = _jit_functions()
    ext, why = _load_extension()
    g = globals()
    for name, (_, spec, _) in ENTRIES.items():
        if ext is not None:
            g[name] = _make_caller(getattr(ext, name), jits[name], _codes(spec))
        else:
            g[name] = jits[name]
    return ("aot" if ext is not None else "jit"), why


#: "aot" when the ahead-of-time extension is in use, "jit" otherwise; STATUS says why.
MODE, STATUS = _bind()
# Python helpers of the lower layers (Convection.h, System's property evaluations) call these
# through fdwall.compiled: they cannot import this module
compiled.provide(sys.modules[__name__])


# ---------------------------------------------------------------------------------- building
def build(verbose: bool = False) -> pathlib.Path:
    """Compile every entry point ahead of time into the extension module; return its path.

    Needs a C compiler.  The compile step itself lives in :mod:`fdwall.solver.aot` (the only
    module that knows the ahead-of-time tool); this gathers what it compiles: the entry
    points, their argument codes and the fingerprint of the sources.  Takes tens of seconds.
    """
    jits = _jit_functions()
    entries = {name: (jits[name].py_func, _codes(spec), ret)
               for name, (_, spec, ret) in ENTRIES.items()}
    return aot.build_extension(MODULE, entries, fingerprint(),
                               pathlib.Path(__file__).resolve().parent, _stamp_path(),
                               _host_cpu()[0], verbose=verbose)
