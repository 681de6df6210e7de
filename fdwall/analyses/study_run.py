"""Running a design study: batches on local processes or a Dask cluster, one table, resume.

The variants are cut into batches (:func:`batch_size`) so that the scheduling overhead per
variant stays small next to its run time (about 5-20 ms for a single wall).  A batch is one
task: it runs its variants one after another in a worker process.  Workers import fdwall once,
so the compiled kernels (the ahead-of-time module, or numba's cache) are loaded once per
worker process, not per task.

The table ``DIR/<stem>-study.csv`` is rewritten atomically (:mod:`fdwall.atomic`) after each
finished batch, rows in variant order, so an interrupted study leaves a valid partial table.
Its first line records the study hash (study file and base case file), the sampling method
and the seed; a rerun into the same folder with the same study runs only the variants missing
from the table.

Layer 8 (analyses).
"""
from __future__ import annotations

import csv
import io
import math
import os
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait

from ..atomic import atomic_path
from ..errors import InputError
from ..solver import native  # noqa: F401  (loaded in every worker, see _warm)
from .study_outputs import TEXT_OUTPUTS, header_of, variant_row

__all__ = ["batch_size", "table_header", "write_table", "read_partial", "execute",
           "SCHEDULER_TIMEOUT"]

#: Seconds to wait for a Dask scheduler before giving up with a clear message.
SCHEDULER_TIMEOUT = 10.0
_META = ("status", "error", "run_time_s", "host", "worker")
_META_HEAD = ("status", "error", "run_time [s]", "host", "worker")


def batch_size(n: int, workers: int) -> int:
    """Variants per task: about 4 batches per worker, at most 50 and at least 1.

    Four batches per worker keep the load balanced when variants differ in cost; the cap of
    50 (about 0.5 s of work for a single wall) keeps the table and the progress bar fresh.
    """
    return max(1, min(50, math.ceil(n / (4 * max(1, workers)))))


def table_header(st: dict) -> tuple[list, list]:
    """(row keys, CSV headers) of a study's table."""
    ins = list(st["input_paths"])
    outs = list(st["outputs"])
    keys = ["variant"] + ins + outs + list(_META)
    head = ["variant"] + ins + [header_of(o) for o in outs] + list(_META_HEAD)
    return keys, head


def _stamp(st: dict) -> str:
    return f"# study_sha256={st['sha']} method={st['method']} seed={st['seed']}"


def write_table(path, st: dict, rows: dict, lines: dict | None = None) -> None:
    """Write the rows (dict variant -> row) to ``path`` atomically, in variant order.

    ``lines`` (variant -> CSV text of its row), if given, caches the formatted rows between
    writes: a study rewrites its table after every batch, and formats each row only once.
    """
    keys, head = table_header(st)
    lines = {} if lines is None else lines
    buf = io.StringIO()
    w = csv.writer(buf)
    for i in rows:
        if i not in lines:
            r = rows[i]
            w.writerow([_cell(r.get(k, "")) for k in keys])
            lines[i] = buf.getvalue()
            buf.seek(0)
            buf.truncate()
    w.writerow([_stamp(st)])
    w.writerow(head)
    with atomic_path(path) as tmp, open(tmp, "w", newline="") as f:
        f.write(buf.getvalue())
        f.writelines(lines[i] for i in sorted(rows))


def _cell(v):
    if isinstance(v, float):
        return repr(v)        # round-trips exactly (a resumed table equals a fresh one)
    return v


def read_stamp(path) -> dict | None:
    """The hash line of an existing table as a dict (sha, method, seed), or None."""
    try:
        with open(path, newline="") as f:
            first = f.readline().strip()
    except OSError:
        return None
    if not first.startswith("# study_sha256="):
        return None
    d = dict(p.split("=", 1) for p in first[2:].split() if "=" in p)
    return {"sha": d.get("study_sha256"), "method": d.get("method"), "seed": d.get("seed")}


def read_partial(path, st: dict) -> dict:
    """Finished rows (variant -> row) of an existing table written for the same study.

    Rows whose inputs differ from the study's variants are an error (the table belongs to
    another study) and so is a header of other columns.
    """
    keys, head = table_header(st)
    rows = {}
    with open(path, newline="") as f:
        rd = csv.reader(f)
        next(rd)
        got = next(rd, None)
        if got != head:
            raise InputError(f"{path}: the columns of this table are not those of the study "
                             f"{st['file']} (was it written by another version of fdwall?); "
                             "run with --restart to start over, or choose another --out DIR.")
        for line in rd:
            if len(line) != len(keys):
                continue      # a line cut short cannot happen (atomic writes), skip it safely
            r = dict(zip(keys, line))
            i = int(r["variant"])
            if not 0 <= i < len(st["variants"]):
                raise InputError(f"{path}: variant {i} is not in the study {st['file']}; run "
                                 "with --restart to start over.")
            for o in st["outputs"]:
                if o not in TEXT_OUTPUTS:
                    r[o] = float(r[o]) if r[o] not in ("", "nan") else float("nan")
            r["run_time_s"] = float(r["run_time_s"])
            r["variant"] = i
            for p, v in st["variants"][i].items():
                if str(v) != r[p]:
                    raise InputError(f"{path}: variant {i} has {p} = {r[p]} in the table but "
                                     f"{v} in the study; the table belongs to another study. "
                                     "Run with --restart to start over.")
                r[p] = v
            rows[i] = r
    return rows


def _batch(base, items, outputs, skin_limit):
    """Run a batch of (variant index, edits, name); returns [(index, row)] (a task).

    Each variant's system is the ``like`` of the next: walls of unchanged shape are meshed
    once per batch (:func:`fdwall.system.build_system`); the numbers are those of separate
    builds.
    """
    out, like = [], None
    for i, e, name in items:
        row, sysm = variant_row(base, e, name, outputs, skin_limit, like)
        like = sysm if sysm is not None else like
        out.append((i, row))
    return out


def _warm():
    """Worker start-up: load the compiled kernels once per worker process (importing this
    module, which the pool does to find this function, loads fdwall.solver.native)."""


class _Progress:
    """A tqdm bar with done / failed counts and the time left (stderr), or nothing."""

    def __init__(self, show, total, initial, failed):
        self.bar = None
        self.failed = failed
        if show:
            from tqdm import tqdm
            self.bar = tqdm(total=total, initial=initial, unit="variant", desc="study",
                            dynamic_ncols=True, smoothing=0.1)
            self.bar.set_postfix(done=initial - failed, failed=failed)

    def update(self, rows):
        if self.bar is None:
            return
        nf = sum(1 for r in rows if r["status"] == "failed")
        self.failed += nf
        self.bar.update(len(rows))
        self.bar.set_postfix(done=self.bar.n - self.failed, failed=self.failed)

    def close(self):
        if self.bar is not None:
            self.bar.close()


def _keep_finished(futures, rows, st, csv_path):
    """Add the results of the futures that finished after a stop to the table."""
    got = False
    for fut in futures:
        if fut.done() and not fut.cancelled() and fut.exception() is None:
            for i, r in fut.result():
                rows[i] = {"variant": i, **st["variants"][i], **r}
                got = True
    if got:
        write_table(csv_path, st, rows)


def _connect(address, timeout):
    """A dask.distributed Client of the scheduler at ``address``; InputError if unreachable."""
    try:
        from distributed import Client
    except ImportError:
        raise InputError("--scheduler: dask.distributed is not installed; install it "
                         "(pip install \"dask[distributed]\") or leave the option out to run "
                         "on local processes.") from None
    try:
        return Client(address, timeout=timeout, set_as_default=False)
    except (OSError, TimeoutError, ValueError, TypeError) as e:
        raise InputError(f"--scheduler {address}: no Dask scheduler answered within "
                         f"{timeout:g} s ({type(e).__name__}: {' '.join(str(e).split())[:200]}). "
                         "Give the address of a running scheduler, e.g. "
                         "tcp://10.0.0.5:8786, or leave the option out to run on local "
                         "processes.") from None


def execute(st: dict, todo: list, rows: dict, csv_path, *, workers=None, scheduler=None,
            batch=None, progress=False, on_batch=None, timeout=SCHEDULER_TIMEOUT) -> dict:
    """Run the variants ``todo`` (indices) of study ``st``, adding to ``rows`` (index -> row).

    Writes the table after each finished batch.  ``on_batch(indices, rows)`` is called after
    each write (a hook for progress displays and tests; an exception from it stops the study,
    leaving the table as written).  ``workers`` local processes (default all cores; 1 runs
    in this process), or ``scheduler`` a Dask address.  Returns ``rows``.
    """
    names = [f"{st['file']} variant {i}" for i in range(len(st["variants"]))]
    items = [(i, st["variants"][i], names[i]) for i in todo]
    if scheduler:
        client = _connect(scheduler, timeout)
        try:
            info = client.scheduler_info(n_workers=-1)
        except TypeError:                      # older distributed: all workers by default
            info = client.scheduler_info()
        nw = max(1, len(info.get("workers", {})))
    else:
        client = None
        nw = workers or os.cpu_count() or 1
    size = batch or batch_size(len(items), nw)
    chunks = [items[k:k + size] for k in range(0, len(items), size)]
    args = (st["base"], st["outputs"], st.get("skin_limit"))
    bar = _Progress(progress, len(st["variants"]), len(rows),
                    sum(1 for r in rows.values() if r["status"] == "failed"))

    lines = {}                      # formatted rows, shared by the table's rewrites

    def finished(res):
        new = []
        for i, r in res:
            rows[i] = {"variant": i, **st["variants"][i], **r}
            lines.pop(i, None)
            new.append(rows[i])
        write_table(csv_path, st, rows, lines)
        bar.update(new)
        if on_batch is not None:
            on_batch([i for i, _ in res], rows)

    try:
        if not chunks:
            write_table(csv_path, st, rows)
        elif client is not None:
            from distributed import as_completed
            base = client.scatter(st["base"], broadcast=True)
            futs = [client.submit(_batch, base, c, st["outputs"], st.get("skin_limit"),
                                  pure=False) for c in chunks]
            try:
                with client.as_current():
                    for fut in as_completed(futs):
                        finished(fut.result())
            finally:
                client.cancel(futs)
        elif nw == 1 or len(chunks) == 1:
            for c in chunks:
                finished(_batch(st["base"], c, *args[1:]))
        else:
            n_proc = min(nw, len(chunks))
            ex = ProcessPoolExecutor(n_proc, initializer=_warm)
            # at most two batches per process are handed to the pool at a time: enough to
            # keep every process busy, and a stop leaves little work running on
            todo_chunks = iter(chunks)
            pending, unread = set(), set()

            def top_up():
                while len(pending) < 2 * n_proc:
                    c = next(todo_chunks, None)
                    if c is None:
                        return
                    pending.add(ex.submit(_batch, st["base"], c, *args[1:]))

            try:
                top_up()
                while pending:
                    done, _ = wait(pending, return_when=FIRST_COMPLETED)
                    pending -= done
                    unread = set(done)
                    for fut in done:
                        unread.discard(fut)
                        finished(fut.result())
                    top_up()
            except BaseException:
                # stopped: batches already running finish and are kept in the table, so a
                # resume does not run them again; batches not started are dropped
                ex.shutdown(wait=True, cancel_futures=True)
                _keep_finished(pending | unread, rows, st, csv_path)
                raise
            finally:
                ex.shutdown(wait=True, cancel_futures=True)
    finally:
        bar.close()
        if client is not None:
            client.close()
    return rows
