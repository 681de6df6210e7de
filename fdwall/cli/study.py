"""``fdwall study STUDY.toml``: run a grid of case variants and write one table."""
from __future__ import annotations

import datetime
import os
import signal
import sys
import threading
from pathlib import Path

from ..analyses.study import read_study, run_study, table_path, uncertainty_summary
from ..analyses.study_outputs import TEXT_OUTPUTS
from ..analyses.study_run import table_header
from ..cautions import SAFETY_CAUTION
from ..errors import InputError as LibInputError
from ..h5tree import write_file
from ..provenance import provenance
from ..report.study_plots import write_study_plots
from . import common
from .common import InputError, WriteError


class _Terminated(Exception):
    """SIGTERM arrived while the study ran (the table holds every finished batch)."""



def _shown(v, absolute_temperature: bool, unit: str) -> str:
    """A study figure for the text summary: absolute temperatures [K] in degC, an interval end
    a sample this small cannot give (NaN) as "n/a", a time never reached (inf) as "never"."""
    if v is None or v != v:
        return "n/a (sample too small)"
    if v == float("inf"):
        return "never"
    if absolute_temperature:
        return f"{v - 273.15:.4g} degC"
    return f"{v:.6g} {unit}"

def _on_term(signum, frame):
    raise _Terminated()


def cmd_study(args) -> int:
    if args.workers is not None and args.workers < 1:
        raise InputError(f"--workers: {args.workers} is not allowed; give a whole number >= 1.")
    if args.scheduler is not None and not args.scheduler.strip():
        raise InputError("--scheduler: the address is empty; give the address of a Dask "
                         "scheduler, e.g. tcp://10.0.0.5:8786.")
    stem = Path(args.study).stem
    stem = stem[:-len("-study")] if stem.endswith("-study") else stem
    outdir = common.output_dir(args, stem)
    try:
        st = read_study(args.study, seed=args.seed)
    except LibInputError as exc:
        raise InputError(str(exc)) from None
    try:
        outdir.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise WriteError(f"cannot create '{outdir}': {exc.strerror or exc}. Choose another "
                         "folder with --out DIR.") from None
    show = args.progress if args.progress is not None else (
        sys.stderr.isatty() and not args.quiet and not args.json)
    old = None
    if threading.current_thread() is threading.main_thread():
        old = signal.signal(signal.SIGTERM, _on_term)
    h5 = outdir / f"{stem}-study.h5"

    def stale_h5():
        # the CSV is the incremental, resumable record; the HDF5 file is written once, when
        # every variant is in the table: an older one would disagree with the new table
        try:
            h5.unlink(missing_ok=True)
        except OSError as exc:
            raise WriteError(f"cannot remove the previous '{h5}': {exc.strerror or exc}.") \
                from None

    try:
        csv_path, rows = run_study(st, outdir, workers=args.workers, scheduler=args.scheduler,
                                   restart=args.restart, progress=show, on_start=stale_h5)
    except LibInputError as exc:
        raise InputError(str(exc)) from None
    except (KeyboardInterrupt, _Terminated) as exc:
        print(f"fdwall: study interrupted; the table {table_path(st, outdir)} holds every "
              "finished batch. Run the same command again to resume (--restart starts "
              "over).", file=sys.stderr)
        return common.EXIT_TERMINATED if isinstance(exc, _Terminated) else \
            common.EXIT_INTERRUPTED
    finally:
        if old is not None:
            signal.signal(signal.SIGTERM, old)
    if st.get("resumed") and not args.quiet and not args.json:
        print(f"fdwall: resumed {csv_path}: {st['resumed']} variants were already in the "
              "table and were not run again.", file=sys.stderr)
    done = [r for r in rows if r["status"] == "done"]
    keys, head = table_header(st)
    table = {h: [r[k] for r in rows] for k, h in zip(keys, head)}
    summary = {"variants": len(rows), "done": len(done), "failed": len(rows) - len(done)}
    for k in [o for o in st["outputs"] if o not in TEXT_OUTPUTS]:
        vals = [r[k] for r in done]
        if vals:
            name, unit = k.rsplit("_", 1)
            summary[f"{name}_max_{unit}"] = max(vals)
            summary[f"{name}_min_{unit}"] = min(vals)
    notes = ["every combination of the [[vary]] values is one variant"]
    refs = ["steady state by fdwall.solve_steady, transient outputs by fdwall.run (one "
            "system per variant shared by both)"]
    tables = {"variants": table}
    unc = None
    if st["method"] != "grid":
        unc = uncertainty_summary(st, rows)
        summary.update(unc["summary"])
        tables.update(unc["tables"])
        notes = unc["notes"]
        refs += unc["references"]
    groups = {"inputs": {"study_file": str(args.study), "method": st["method"],
                         "seed": -1 if st["seed"] is None else st["seed"],
                         "workers": args.workers or os.cpu_count() or 1},
              "summary": summary, "tables": tables,
              "references": {"items": refs},
              "notes": {"items": notes}}
    attrs = {"kind": "study", "fdwall_version": common.version(), "case_name": stem,
             "caution": SAFETY_CAUTION,
             "created": datetime.datetime.now(datetime.UTC).isoformat()}
    # provenance: the study file, the base case it names, the library and the seed
    prov = provenance(str(args.study), [st["base_file"]],
                      {"seed": st["seed"], "method": st["method"]})
    try:
        write_file(h5, groups, attrs=attrs, provenance=prov)
    except OSError as exc:
        raise WriteError(f"cannot write '{h5}': {exc.strerror or exc}.") from None
    files = [str(csv_path), str(h5)]
    if not getattr(args, "no_plots", False) and rows:
        try:
            files += write_study_plots(st, rows, unc, str(outdir), stem)
        except OSError as exc:
            raise WriteError(f"cannot write the study plots into '{outdir}': "
                             f"{exc.strerror or exc}.") from None
    report = common.write_report(args, h5)
    if report:
        files.append(str(report))
    if args.json:
        out = {"summary": summary, "files": files, "caution": SAFETY_CAUTION}
        if unc:
            out["uncertainty"] = unc["json"]
        print(common.dumps(out))
    elif not args.quiet:
        print(f"Study {args.study}: {summary['variants']} variants, {summary['done']} done, "
              f"{summary['failed']} failed.")
        if unc:
            for q in unc["json"]["quantiles"]:
                absolute = "_T_" in q["output"] + "_" and q["unit"] == "K"
                print(f"  {q['output']:>10} p{q['percent']:02d} = "
                      f"{_shown(q['value_si'], absolute, q['unit'])}  "
                      f"(confidence interval {_shown(q['ci_low_si'], absolute, q['unit'])} .. "
                      f"{_shown(q['ci_high_si'], absolute, q['unit'])})")
            for e in unc["json"]["exceedance"]:
                if e["output"] == "touch_verdict":
                    print(f"  P(peak skin above the touch limit) = {e['probability']:.3f}  "
                          f"({e['ci_low']:.3f} .. {e['ci_high']:.3f})")
                    continue
                lim = _shown(e["limit_si"], "_T_" in e["output"] + "_" and e["unit"] == "K",
                             e["unit"])
                print(f"  P({e['output']} > {lim}) = "
                      f"{e['probability']:.3f}  ({e['ci_low']:.3f} .. {e['ci_high']:.3f})")
            for o in [o for o in st["outputs"] if o not in TEXT_OUTPUTS]:
                top = summary.get(f"{o.rsplit('_', 1)[0]}_top_input")
                if top:
                    how = unc["tables"]["sensitivity"]["ranked_by"][0]
                    print(f"  {o}: strongest input {top} (by {how})")
            for note in unc["notes"]:
                if note.startswith(("sample size", "sensitivity")) or "failed" in note:
                    print(f"  note: {note}")
        if not unc:
            for k in [o for o in st["outputs"] if o not in TEXT_OUTPUTS]:
                name, unit = k.rsplit("_", 1)
                if f"{name}_min_{unit}" in summary:
                    print(f"  {k:>16}: {summary[f'{name}_min_{unit}']:.6g} .. "
                          f"{summary[f'{name}_max_{unit}']:.6g} {unit}")
        print(f"  {SAFETY_CAUTION}")
        for f in files:
            print(f"  {f}")
    return 0


def register(sub) -> None:
    p = sub.add_parser("study", help="run a design study: a grid or a random sample of case "
                                     "variants, with an uncertainty summary",
                       description="Run every variant of a study file (a grid, or a random "
                                   "sample of uncertain inputs) on local processes or a Dask "
                                   "cluster and write one table (CSV and HDF5) of answers per "
                                   "variant, with quantiles, exceedance probabilities and a "
                                   "sensitivity ranking for samples. A rerun into the same "
                                   "folder resumes a partial table. See docs/studies.md.")
    p.add_argument("study", metavar="STUDY.toml", help="study file")
    p.add_argument("--workers", type=int, default=None, metavar="N",
                   help="local worker processes (default: all cores)")
    p.add_argument("--scheduler", default=None, metavar="ADDRESS",
                   help="run on the Dask distributed cluster of this scheduler (e.g. "
                        "tcp://10.0.0.5:8786); an address that does not answer within 10 s "
                        "is an error (exit 2)")
    p.add_argument("--seed", type=int, default=None, metavar="N",
                   help="random seed of an [[uncertain]] sample (same seed, same table; "
                        "grids do not use it)")
    p.add_argument("--restart", action="store_true",
                   help="start the table over (default: resume a partial table of the same "
                        "study in DIR)")
    common.add_output_options(p)
    p.set_defaults(func=cmd_study)
