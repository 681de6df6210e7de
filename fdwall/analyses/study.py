"""Design studies: a grid of case variants, run in parallel, one table of answers.

First slice (grid of explicit values, steady outputs, local processes, CSV table).
Sampling, uncertainty summaries, Dask and resume are not built yet.

A study file (TOML)::

    base = "../lab-furnace-wall.toml"        # relative to the study file
    [[vary]]
    path = "wall.layers[1].thickness"         # case-file path, as in loader messages
    values = ["100 mm", "150 mm"]            # written with units as in case files

Every combination of the ``values`` of all ``[[vary]]`` entries is one variant.  A variant
edits the parsed TOML of the base case and goes through the normal loader, so validation
lives in one place.  Outputs per variant (SI, unit suffixes): ``outer_T_K`` (steady
temperature of the last face), ``loss_W`` (steady heat flow out of the last face).
"""
from __future__ import annotations

import copy
import csv
import difflib
import hashlib
import itertools
import os
import re
import socket
import time
from concurrent.futures import ProcessPoolExecutor

import tomllib

from ..atomic import atomic_path
from ..case.loader import case_from_dict
from ..errors import FdwallError, InputError
from ..solver import solve_steady

_STEP = re.compile(r"([A-Za-z_][A-Za-z0-9_\-]*)(\[(\d+)\])?$")
OUTPUTS = ("outer_T_K", "loss_W")


def _steps(path: str, file: str):
    out = []
    for part in path.split("."):
        m = _STEP.match(part)
        if not m:
            raise InputError(f"{file}: [[vary]] path {path!r}: part {part!r} is not a key or "
                             "key[index] (allowed e.g. 'wall.layers[1].thickness').")
        out.append(m.group(1))
        if m.group(3) is not None:
            out.append(int(m.group(3)))
    return out


def _set(data: dict, path: str, value, file: str) -> None:
    """Set ``value`` at case-file ``path`` in the parsed case ``data`` (in place)."""
    steps = _steps(path, file)
    node = data
    for i, s in enumerate(steps):
        last = i == len(steps) - 1
        if isinstance(s, int):
            if not isinstance(node, list) or s >= len(node):
                n = len(node) if isinstance(node, list) else 0
                raise InputError(f"{file}: [[vary]] path {path!r}: index [{s}] is out of range "
                                 f"(the base case has {n} entries there).")
        else:
            if not isinstance(node, dict) or (s not in node and not last):
                near = difflib.get_close_matches(s, list(node) if isinstance(node, dict) else [])
                hint = f" Did you mean {', '.join(near)}?" if near else ""
                raise InputError(f"{file}: [[vary]] path {path!r}: key {s!r} is not in the base "
                                 f"case.{hint}")
            if last and s not in node:
                near = difflib.get_close_matches(s, list(node))
                if near:
                    raise InputError(f"{file}: [[vary]] path {path!r}: key {s!r} is not in the "
                                     f"base case. Did you mean {', '.join(near)}?")
        if last:
            node[s] = value
        else:
            node = node[s]


def read_study(path) -> dict:
    """Read a study file -> dict(base=dict, base_file, vary=[(path, values)], variants, sha).

    Raises InputError naming the file and key for any bad entry.
    """
    file = os.fspath(path)
    try:
        raw = open(file, "rb").read()
        doc = tomllib.loads(raw.decode("utf-8"))
    except OSError as e:
        raise InputError(f"{file}: cannot read the study file ({e.strerror}).") from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as e:
        raise InputError(f"{file}: not a valid TOML file ({e}).") from None
    base = doc.get("base")
    if not isinstance(base, str):
        raise InputError(f"{file}: key 'base' is missing or not a string; give the path of the "
                         "base case file, relative to the study file.")
    base_file = os.path.join(os.path.dirname(os.path.abspath(file)), base)
    try:
        base_data = tomllib.loads(open(base_file, "rb").read().decode("utf-8"))
    except OSError as e:
        raise InputError(f"{file}: key 'base': cannot read {base_file} ({e.strerror}).") from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as e:
        raise InputError(f"{file}: key 'base': {base_file} is not valid TOML ({e}).") from None
    vary = doc.get("vary")
    if not isinstance(vary, list) or not vary:
        raise InputError(f"{file}: no [[vary]] entries; a study needs at least one, each with "
                         "'path' and a non-empty list 'values'.")
    items = []
    for i, v in enumerate(vary):
        if not isinstance(v, dict) or not isinstance(v.get("path"), str):
            raise InputError(f"{file}: vary[{i}].path is missing or not a string.")
        vals = v.get("values")
        if not isinstance(vals, list) or not vals:
            raise InputError(f"{file}: vary[{i}].values must be a non-empty list of values "
                             "written as in case files (e.g. [\"100 mm\", \"150 mm\"]).")
        _set(copy.deepcopy(base_data), v["path"], vals[0], file)   # path check up front
        items.append((v["path"], vals))
    variants = [dict(zip([p for p, _ in items], combo))
                for combo in itertools.product(*[vals for _, vals in items])]
    sha = hashlib.sha256(raw).hexdigest()
    return dict(file=file, base_file=base_file, base=base_data, vary=items,
                variants=variants, sha=sha)


def run_variant(base: dict, edits: dict, name: str = "<variant>") -> dict:
    """Apply ``edits`` (path -> value) to the base case dict, load and solve steady.

    Returns a row: outputs in SI (``outer_T_K`` [K], ``loss_W`` [W]), ``status``, ``error``,
    ``run_time_s`` [s], ``host``, ``worker``.
    """
    t0 = time.perf_counter()
    row = {k: float("nan") for k in OUTPUTS}
    try:
        data = copy.deepcopy(base)
        for p, v in edits.items():
            _set(data, p, v, name)
        case = case_from_dict(data, name)
        ss = solve_steady(case)
        row["outer_T_K"] = float(ss.face_T[-1])
        row["loss_W"] = float(-ss.face_flow[-1])
        row.update(status="done", error="")
    except (FdwallError, ValueError, ArithmeticError) as e:
        row.update(status="failed", error=str(e).replace("\n", " "))
    row.update(run_time_s=time.perf_counter() - t0, host=socket.gethostname(),
               worker=str(os.getpid()))
    return row


def _job(args):
    base, edits, name = args
    return run_variant(base, edits, name)


def run_study(path, out_dir=".", workers=None) -> tuple[str, list]:
    """Run every variant of study file ``path``; write DIR/<stem>-study.csv atomically.

    Returns (csv path, rows).  ``workers`` local processes (default: all cores; 1 = serial).
    """
    st = read_study(path)
    stem = os.path.splitext(os.path.basename(st["file"]))[0]
    if stem.endswith("-study"):
        stem = stem[: -len("-study")]
    jobs = [(st["base"], v, f"{st['file']} variant {i}") for i, v in enumerate(st["variants"])]
    workers = workers or os.cpu_count() or 1
    if workers == 1:
        results = [_job(j) for j in jobs]
    else:
        with ProcessPoolExecutor(workers) as ex:
            results = list(ex.map(_job, jobs, chunksize=max(1, len(jobs) // (4 * workers))))
    rows = []
    for i, (v, r) in enumerate(zip(st["variants"], results)):
        rows.append({"variant": i, **v, **r})
    csv_path = os.path.join(out_dir, f"{stem}-study.csv")
    head = ["variant"] + [p for p, _ in st["vary"]] + [
        "outer_T [K]", "loss [W]", "status", "error", "run_time [s]", "host", "worker"]
    keys = ["variant"] + [p for p, _ in st["vary"]] + list(OUTPUTS) + [
        "status", "error", "run_time_s", "host", "worker"]
    with atomic_path(csv_path) as tmp, open(tmp, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow([f"# study_sha256={st['sha']}"])
        w.writerow(head)
        for r in rows:
            w.writerow([r[k] for k in keys])
    return csv_path, rows


def read_table(path):
    """Read a study table (DIR/<stem>-study.csv) into a pandas DataFrame.

    Column names keep their ``name [unit]`` headers; the study hash line is skipped.
    """
    import pandas as pd  # optional heavy library, imported lazily
    return pd.read_csv(path, comment="#", keep_default_na=False,
                       na_values=["nan"])
