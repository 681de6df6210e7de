"""Imports run one direction, as the layers of /work/shared/DESIGN.md and the contributor
guide (DEVELOPERS.md, "Data flow") lay out, the module-top imports have no cycles, and no
function imports a module of fdwall (package imports sit at module top; only optional or
heavy outside libraries may be imported where they are used, from the allow-list below).

The import graph is read from the source with ``ast`` (no module is imported).  Layers, from
the bottom: 1 base, 2 physics, 3 model, 4 case I/O, 5 system and mesh (with the names of the
kernel arrays, fdwall/solver/layout.py, and the numpy read-out between nodes of those arrays,
fdwall/solver/readout.py), 6 result (the arrays of a run and what derives from
them; it knows the layout names, not the drivers, which build Results), 7 solver (kernels,
their native dispatch and the drivers), 8 analyses, 9 report, 10 cli and the package facade.
A module may import its own layer or a lower one.  Python code below the solver reaches the
compiled build of its own kernels through fdwall.compiled (layer 1), which the native
dispatch fills when it loads.  House rules of the project (no outside source).
"""
from __future__ import annotations

import ast
import pathlib

PKG = pathlib.Path(__file__).resolve().parents[1] / "fdwall"

LAYERS = [
    # (layer, module prefixes); the longest matching prefix wins
    (1, ("fdwall.errors", "fdwall.units", "fdwall.atomic", "fdwall.cautions", "fdwall.h5tree",
         "fdwall.provenance", "fdwall.compiled")),
    (2, ("fdwall.physics",)),
    (3, ("fdwall.schedule", "fdwall.materials", "fdwall.model")),
    (4, ("fdwall.case",)),
    (5, ("fdwall.system", "fdwall.mesh", "fdwall.solver.layout", "fdwall.solver.readout")),
    (6, ("fdwall.result",)),
    (7, ("fdwall.solver",)),
    (8, ("fdwall.analyses", "fdwall.safety", "fdwall.sizing", "fdwall.study")),
    (9, ("fdwall.report",)),
    (10, ("fdwall.cli", "fdwall")),
]

#: Package-internal imports inside functions that remain (all upward), with why (edges:
#: importer -> imported).
KNOWN_UPWARD: dict = {}

# analyses: a later one may use an earlier one (DESIGN.md, "Layers")
ANALYSES_ORDER = ["enclosure", "lumped", "safety", "sizing", "logs", "study"]


def _modules():
    out = {}
    for p in PKG.rglob("*.py"):
        parts = list(p.relative_to(PKG.parent).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        out[".".join(parts)] = p
    return out


MODS = _modules()


def _targets(cur, is_pkg, node):
    if isinstance(node, ast.Import):
        return [a.name for a in node.names if a.name.split(".")[0] == "fdwall"]
    if node.level:
        base = cur.split(".")
        if not is_pkg:
            base = base[:-1]
        base = base[:len(base) - (node.level - 1)]
        mod = ".".join(base + ([node.module] if node.module else []))
    else:
        mod = node.module or ""
    if mod.split(".")[0] != "fdwall":
        return []
    return [f"{mod}.{a.name}" if f"{mod}.{a.name}" in MODS else mod for a in node.names]


#: Outside libraries a function may import where it uses them (heavy to load, or optional
#: extras), with why; every other import sits at module top.
LAZY_OK = {
    "scipy": "heavy; only some analyses and the steady heater root solve need it",
    "pandas": "heavy; log reading, tables and Result.to_dataframe",
    "matplotlib": "heavy; plots only",
    "h5py": "heavy; only when a file is read or written",
    "xarray": "optional extra (notebook)",
    "jinja2": "only for the HTML report",
    "distributed": "optional extra (cluster)",
    "SALib": "only for sampled studies",
    "tqdm": "only when a progress bar is shown",
    "numba": "the ahead-of-time tool (numba.pycc) and version look-ups of fdwall compile",
    "llvmlite": "the CPU name for the kernels' fingerprint",
    "pint": "heavy; the report's display units",
}


def _graph():
    """(module-top edges, edges inside functions, other imports inside functions) of the
    package; the last as (module, line, top-level name imported)."""
    top, inner, lazy = set(), set(), set()
    for m, p in MODS.items():
        tree = ast.parse(p.read_text())
        is_pkg = p.name == "__init__.py"
        in_func = set()
        for node in ast.walk(tree):
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
                for n in ast.walk(node):
                    if isinstance(n, (ast.Import, ast.ImportFrom)):
                        in_func.add(id(n))
                        targets = _targets(m, is_pkg, n)
                        inner.update((m, t) for t in targets if t != m)
                        if not targets:
                            names = ([a.name for a in n.names] if isinstance(n, ast.Import)
                                     else [n.module or ""])
                            lazy.update((m, n.lineno, x.split(".")[0]) for x in names)
        for node in ast.walk(tree):
            if isinstance(node, (ast.Import, ast.ImportFrom)) and id(node) not in in_func:
                top.update((m, t) for t in _targets(m, is_pkg, node) if t != m)
    return top, inner, lazy


TOP, INNER, LAZY = _graph()


def layer(mod: str) -> int:
    best, n = None, -1
    for lay, prefixes in LAYERS:
        for p in prefixes:
            if (mod == p or mod.startswith(p + ".")) and len(p) > n:
                best, n = lay, len(p)
    assert best is not None, mod
    return best


def _upward(edges):
    bad = set()
    for a, b in edges:
        if a == "fdwall" or b.startswith(a + "."):
            continue  # a package facade re-exports from below it
        if layer(b) > layer(a):
            bad.add((a, b))
        elif layer(a) == layer(b) == 8:
            ka, kb = (m.split(".")[2] if m.startswith("fdwall.analyses.") else None
                      for m in (a, b))
            if ka in ANALYSES_ORDER and kb in ANALYSES_ORDER and \
                    ANALYSES_ORDER.index(kb) > ANALYSES_ORDER.index(ka):
                bad.add((a, b))
    return bad


def test_every_module_has_a_layer():
    for m in MODS:
        layer(m)


def test_module_top_imports_go_down():
    bad = _upward(TOP)
    assert not bad, "upward imports at module top:\n" + "\n".join(f"{a} -> {b}" for a, b in
                                                                   sorted(bad))


def test_no_cycles_at_module_top():
    graph = {}
    for a, b in TOP:
        graph.setdefault(a, set()).add(b)
    # a package's __init__ importing its own submodules is not a cycle of the design
    state, stack, cycles = {}, [], []

    def visit(n):
        state[n] = 1
        stack.append(n)
        for t in sorted(graph.get(n, ())):
            if state.get(t) == 1:
                cyc = stack[stack.index(t):] + [t]
                if not all(c == cyc[0] or c.startswith(cyc[0] + ".") or
                           cyc[0].startswith(c + ".") for c in cyc):
                    cycles.append(" -> ".join(cyc))
            elif t not in state:
                visit(t)
        stack.pop()
        state[n] = 2

    for n in sorted(graph):
        if n not in state:
            visit(n)
    assert not cycles, "\n".join(cycles)


def test_no_package_imports_inside_functions():
    # fdwall's own modules are imported at module top; the ones that remain are listed above
    bad = INNER - set(KNOWN_UPWARD)
    assert not bad, ("package-internal imports inside functions (move them to module top; "
                     "an import that would go upwards means the code is in the wrong layer):\n"
                     + "\n".join(f"{a} -> {b}" for a, b in sorted(bad)))
    gone = set(KNOWN_UPWARD) - INNER
    assert not gone, "fixed, remove from KNOWN_UPWARD: " + ", ".join(map(str, sorted(gone)))
    assert all(layer(b) > layer(a) for a, b in KNOWN_UPWARD), "only upward debts are listed"


def test_only_heavy_or_optional_libraries_are_imported_inside_functions():
    bad = sorted((m, line, name) for m, line, name in LAZY if name not in LAZY_OK)
    assert not bad, ("imports inside functions of libraries that are neither heavy nor "
                     "optional (move them to module top, or add the library to LAZY_OK with "
                     "why):\n" + "\n".join(f"{m}:{line} {name}" for m, line, name in bad))


def test_the_checker_sees_an_upward_import():
    # a test that cannot fail is none: the checker must flag these
    assert _upward({("fdwall.physics.air", "fdwall.solver.native")})
    assert _upward({("fdwall.analyses.enclosure", "fdwall.analyses.study")})
    assert not _upward({("fdwall.analyses.sizing", "fdwall.analyses.safety")})
    assert ("fdwall.solver.kernels", "fdwall.physics.convection") in TOP
    # and the graph sees module-top imports and outside imports inside functions
    assert ("fdwall.case.loader", "fdwall.model") in TOP
    assert any(m == "fdwall.report.plots" and name == "matplotlib" for m, _, name in LAZY)


def test_the_kernels_know_nothing_of_files_or_cases():
    # DESIGN.md: the kernels know nothing of TOML, units or files; the model knows no numba
    for m in ("fdwall.solver.kernels", "fdwall.solver.post", "fdwall.solver.layout"):
        for a, b in TOP | INNER:
            if a == m:
                assert layer(b) <= 2 or b.startswith("fdwall.solver"), (a, b)
    for m in ("fdwall.model", "fdwall.schedule", "fdwall.materials.material", "fdwall.case.loader"):
        for node in ast.walk(ast.parse(MODS[m].read_text())):
            if isinstance(node, ast.Import):
                assert not any(a.name.split(".")[0] == "numba" for a in node.names), m
            elif isinstance(node, ast.ImportFrom):
                assert (node.module or "").split(".")[0] != "numba", m
