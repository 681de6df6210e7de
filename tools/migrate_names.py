"""Rewrite uses of the model's deprecated Python names to the names that follow the case-file
keys (``fdwall.model.RENAMED``, documented in docs/python-api.md).

Two passes, both idempotent (a second run changes nothing):

1. static: keyword arguments of calls to a model class by name, ``Face(flux=...)`` ->
   ``Face(heat_flux=...)`` (only calls whose callee is the class itself, so the constructors
   ``Face.exchange(fluid, h, ...)`` and other functions keep their own argument names);
2. run (``--run``): runs pytest with the given arguments, records every DeprecationWarning
   of a renamed name with the first calling line outside fdwall/model.py and the standard
   library, and rewrites exactly that use: the attribute ``.old`` on that line, or the
   keyword ``old=`` of the call that spans it (e.g. ``dataclasses.replace(obj, old=...)``).
   Uses that no test reaches are not seen by this pass; the static pass and the test suite
   with fdwall's DeprecationWarning as an error (pyproject.toml) catch the rest.  The old
   heater placement value ``location="inner"`` becomes ``placement="inner_face"`` in the
   static pass; a value held in a variable is left for a person (the warning says so).

Files kept as they are: tests/test_model_names.py (it uses the old names on purpose) and
anything given with ``--keep``.  Only files under tests/, fdwall/, cases/, benchmarks/ and
tools/ are rewritten.

Usage (from the repository root)::

    python tools/migrate_names.py                 # static pass over the tree
    python tools/migrate_names.py --run -- tests  # and the run pass over the test suite
    python tools/migrate_names.py --dry-run ...   # say what would change, change nothing

Prints one line per rewritten use and a count; exit code 0.
"""
from __future__ import annotations

import argparse
import ast
import pathlib
import sys
import tempfile

ROOT = pathlib.Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from fdwall import model  # noqa: E402  (the checkout's model, not an installed one)

TREES = ("tests", "fdwall", "cases", "benchmarks", "tools")
KEEP = {"tests/test_model_names.py", "tools/migrate_names.py", "fdwall/model.py"}


def _rel(path) -> str:
    try:
        return pathlib.Path(path).resolve().relative_to(ROOT).as_posix()
    except ValueError:
        return ""


def _editable(rel: str, keep: set) -> bool:
    return bool(rel) and rel.split("/")[0] in TREES and rel not in keep and rel.endswith(".py")


def _offset(lines, lineno, col):
    """Character offset in the text of (1-based line, 0-based UTF-8 byte column)."""
    line = lines[lineno - 1]
    return sum(len(x) for x in lines[:lineno - 1]) + len(line.encode()[:col].decode())


def _callee_class(call: ast.Call):
    f = call.func
    name = f.id if isinstance(f, ast.Name) else f.attr if isinstance(f, ast.Attribute) else None
    return name if name in model.RENAMED else None


def _apply(path: pathlib.Path, edits, dry: bool, log):
    """Apply ``edits`` [(start offset, end offset, old text, new text, line)] to ``path``."""
    if not edits:
        return 0
    text = path.read_text()
    done = set()
    for start, end, old, new, line in sorted(set(edits), reverse=True):
        if text[start:end] != old or (start, end) in done:
            continue
        text = text[:start] + new + text[end:]
        done.add((start, end))
        log.append(f"{_rel(path)}:{line}: {old} -> {new}")
    if not dry and done:
        path.write_text(text)
    return len(done)


def static_pass(keep: set, dry: bool, log) -> int:
    n = 0
    for tree in TREES:
        for path in sorted((ROOT / tree).rglob("*.py")):
            rel = _rel(path)
            if not _editable(rel, keep):
                continue
            text = path.read_text()
            lines = text.splitlines(keepends=True)
            edits = []
            for node in ast.walk(ast.parse(text)):
                if isinstance(node, ast.Call) and (cls := _callee_class(node)):
                    table = model.RENAMED[cls]
                    for kw in node.keywords:
                        if kw.arg in table:
                            s = _offset(lines, kw.lineno, kw.col_offset)
                            edits.append((s, s + len(kw.arg), kw.arg, table[kw.arg], kw.lineno))
                        v = kw.value
                        if cls == "Heater" and kw.arg in ("location", "placement") and \
                                isinstance(v, ast.Constant) and v.value == "inner":
                            # the old placement value: 'inner' is 'inner_face' now
                            s = _offset(lines, v.lineno, v.col_offset)
                            e = _offset(lines, v.end_lineno, v.end_col_offset)
                            q = text[s]
                            edits.append((s, e, f"{q}inner{q}", f"{q}inner_face{q}", v.lineno))
            n += _apply(path, edits, dry, log)
    return n


class _Recorder:
    """pytest plugin: where each renamed name was used (file, line, old, new)."""

    def __init__(self):
        self.uses = set()

    def pytest_configure(self, config):
        real = model._warn_renamed
        uses = self.uses
        skip = (str(pathlib.Path(model.__file__).resolve()),)
        stdlib = str(pathlib.Path(ast.__file__).resolve().parent)

        def record(cls_name, old, new, stacklevel):
            f = sys._getframe(1)
            while f is not None:
                fn = str(pathlib.Path(f.f_code.co_filename).resolve())
                if fn not in skip and not fn.startswith(stdlib):
                    uses.add((fn, f.f_lineno, old, new))
                    break
                f = f.f_back
            real(cls_name, old, new, stacklevel + 1)
        model._warn_renamed = record


def run_pass(pytest_args, keep: set, dry: bool, log) -> int:
    import pytest

    rec = _Recorder()
    with tempfile.TemporaryDirectory() as tmp:
        pytest.main(["-q", "-p", "no:cacheprovider", "-W", "default::DeprecationWarning",
                     "--basetemp", tmp, *pytest_args], plugins=[rec])
    by_file = {}
    for fn, line, old, new in rec.uses:
        by_file.setdefault(fn, []).append((line, old, new))
    n = 0
    for fn, uses in sorted(by_file.items()):
        path = pathlib.Path(fn)
        if not _editable(_rel(path), keep):
            continue
        text = path.read_text()
        lines = text.splitlines(keepends=True)
        tree = ast.parse(text)
        edits = []
        for line, old, new in uses:
            for node in ast.walk(tree):
                if isinstance(node, ast.Attribute) and node.attr == old and \
                        node.lineno <= line <= node.end_lineno:
                    # the name is the last characters of the attribute expression
                    e = _offset(lines, node.end_lineno, node.end_col_offset)
                    edits.append((e - len(old), e, old, new, node.end_lineno))
                elif isinstance(node, ast.Call) and node.lineno <= line <= node.end_lineno:
                    for kw in node.keywords:
                        if kw.arg == old:
                            s = _offset(lines, kw.lineno, kw.col_offset)
                            edits.append((s, s + len(old), old, new, kw.lineno))
        n += _apply(path, edits, dry, log)
    return n


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--run", action="store_true", help="also run pytest and rewrite the uses "
                    "its DeprecationWarnings point at (arguments after -- go to pytest)")
    ap.add_argument("--dry-run", action="store_true", help="report, change nothing")
    ap.add_argument("--keep", action="append", default=[], help="a file (relative to the "
                    "repository root) to leave as it is; may be repeated")
    ap.add_argument("pytest_args", nargs="*", help="pytest arguments for --run (default: tests)")
    a = ap.parse_args(argv)
    keep = KEEP | set(a.keep)
    log = []
    n = static_pass(keep, a.dry_run, log)
    if a.run:
        n += run_pass(a.pytest_args or ["tests"], keep, a.dry_run, log)
    print("\n".join(log))
    print(f"{'would rewrite' if a.dry_run else 'rewrote'} {n} use(s) of deprecated model names")
    return 0


if __name__ == "__main__":
    sys.exit(main())
