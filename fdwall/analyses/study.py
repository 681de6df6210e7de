"""Design studies: case variants from a grid or a random sample, run in batches on local
processes or a Dask cluster, gathered in one table, with an uncertainty summary.

This module reads study files, samples the inputs and summarises; the outputs per variant are
defined in :mod:`fdwall.analyses.study_outputs`, the execution (batches, pool, Dask, resume,
the table) in :mod:`fdwall.analyses.study_run`, the statistics (correlated sampling, partial
rank correlation, delta, Sobol) in :mod:`fdwall.analyses.study_stats`.  See docs/studies.md.

A study file (TOML)::

    base = "../lab-furnace-wall.toml"        # relative to the study file
    outputs = ["outer_T_K", "peak_skin_T_K"] # optional (default DEFAULT_OUTPUTS)
    [[vary]]
    path = "wall.layers[1].thickness"         # case-file path, as in loader messages
    values = ["100 mm", "150 mm"]            # written with units as in case files

Every combination of the ``values`` of all ``[[vary]]`` entries is one variant.

Random sampling instead of a grid::

    method = "latin-hypercube"               # or "monte-carlo", or "sobol" (Saltelli design)
    samples = 200
    correlation = [[1.0, 0.5], [0.5, 1.0]]   # optional Spearman matrix (Iman-Conover)
    sensitivity = ["prcc", "spearman"]       # optional; "delta" too (SALib)
    [[uncertain]]
    path = "materials.demo-board.conductivity"
    distribution = "lognormal"               # uniform | normal | lognormal | triangular
    median = "0.1 W/m/K"                     # lognormal: median, log_spread (sigma of ln x)
    log_spread = 0.2
    low = "0.05 W/m/K"                       # optional truncation (normal, lognormal)
    [exceed]                                 # optional limits for exceedance probabilities
    outer_T_K = "60 degC"

Parameters per distribution: uniform ``low``, ``high``; normal ``mean``, ``spread``
(standard deviation), optional ``low``/``high``; lognormal ``median``, ``log_spread``,
optional ``low``/``high``; triangular ``low``, ``mode``, ``high``.  All parameters of one
entry are written in one unit (as in case files); the sampled value goes into the case in
that unit.  A variant edits the parsed TOML of the base case and goes through the normal
loader, so validation lives in one place.  Outputs are SI with unit suffixes
(``outer_T_K`` [K], ``loss_W`` [W], ...).
"""
from __future__ import annotations

import copy
import hashlib
import itertools
import os
import re

import numpy as np
import tomllib

from ..case.loader import case_from_dict
from ..errors import FdwallError, InputError
from ..units import parse_quantity
from .study_outputs import (
    DEFAULT_OUTPUTS,
    TEXT_OUTPUTS,
    _set,
    check_outputs,
    evaluate_variant,
)
from .study_run import SCHEDULER_TIMEOUT, execute, read_partial, read_stamp
from .study_stats import (
    check_correlation,
    delta_indices,
    iman_conover,
    prcc,
    sobol_indices,
    sobol_unit_sample,
    spearman,
)

OUTPUTS = DEFAULT_OUTPUTS


METHODS = ("monte-carlo", "latin-hypercube", "sobol")
_PARAMS = {"uniform": (("low", "high"), ()),
           "normal": (("mean", "spread"), ("low", "high")),
           "lognormal": (("median", "log_spread"), ("low", "high")),
           "triangular": (("low", "mode", "high"), ())}
_NUM = re.compile(r"^\s*([-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?)\s*(.*?)\s*$")


def _number(v, where: str, file: str):
    """(value, unit text) of a parameter written as in case files ('0.1 W/m/K' or 0.1)."""
    if isinstance(v, bool) or not isinstance(v, (int, float, str)):
        raise InputError(f"{file}: {where} must be a number or a value with its unit "
                         "(e.g. \"0.1 W/m/K\").")
    if not isinstance(v, str):
        return float(v), ""
    m = _NUM.match(v)
    if not m:
        raise InputError(f"{file}: {where} = {v!r} is not a number followed by a unit "
                         "(e.g. \"0.1 W/m/K\").")
    return float(m.group(1)), m.group(4)


def _distribution(entry: dict, i: int, file: str):
    """(frozen scipy distribution, low cdf, high cdf, unit) of uncertain[i]; checks params."""
    from scipy import stats  # lazily: about 0.8 s to import, not needed by grid studies
    key = f"uncertain[{i}]"
    name = entry.get("distribution")
    if name not in _PARAMS:
        raise InputError(f"{file}: {key}.distribution = {name!r} is not known; allowed: "
                         f"{', '.join(_PARAMS)}.")
    need, optional = _PARAMS[name]
    extra = set(entry) - {"path", "distribution", *need, *optional}
    if extra:
        raise InputError(f"{file}: {key}: key(s) {', '.join(sorted(extra))} not allowed for a "
                         f"{name} distribution; allowed: {', '.join(need + optional)}.")
    p, units = {}, set()
    for k in need + optional:
        if k not in entry:
            if k in need:
                raise InputError(f"{file}: {key}.{k} is missing; a {name} distribution needs "
                                 f"{', '.join(need)}.")
            continue
        x, u = _number(entry[k], f"{key}.{k}", file)
        if not np.isfinite(x):
            raise InputError(f"{file}: {key}.{k} must be a finite number.")
        p[k] = x
        if k != "log_spread":
            units.add(u)
    if len(units) > 1:
        raise InputError(f"{file}: {key}: the parameters are written in different units "
                         f"({', '.join(sorted(units))}); write all of one entry in one unit.")
    unit = units.pop() if units else ""
    lo, hi = p.get("low"), p.get("high")
    if lo is not None and hi is not None and not lo < hi:
        raise InputError(f"{file}: {key}: low ({lo:g}) must be below high ({hi:g}).")
    if name == "uniform":
        dist = stats.uniform(loc=lo, scale=hi - lo)
    elif name == "triangular":
        if not lo <= p["mode"] <= hi:
            raise InputError(f"{file}: {key}.mode ({p['mode']:g}) must lie between low "
                             f"({lo:g}) and high ({hi:g}).")
        dist = stats.triang(c=(p["mode"] - lo) / (hi - lo), loc=lo, scale=hi - lo)
    elif name == "normal":
        if not p["spread"] > 0:
            raise InputError(f"{file}: {key}.spread ({p['spread']:g}) must be positive (it is "
                             "the standard deviation).")
        dist = stats.norm(loc=p["mean"], scale=p["spread"])
    else:
        if not p["median"] > 0:
            raise InputError(f"{file}: {key}.median ({p['median']:g}) must be positive for a "
                             "lognormal distribution.")
        if not p["log_spread"] > 0:
            raise InputError(f"{file}: {key}.log_spread ({p['log_spread']:g}) must be positive "
                             "(it is the standard deviation of ln x).")
        dist = stats.lognorm(s=p["log_spread"], scale=p["median"])
    c_lo = float(dist.cdf(lo)) if lo is not None and name in ("normal", "lognormal") else 0.0
    c_hi = float(dist.cdf(hi)) if hi is not None and name in ("normal", "lognormal") else 1.0
    if not c_hi - c_lo > 1e-12:
        raise InputError(f"{file}: {key}: the truncation low/high leaves no probability; "
                         "widen it or move it towards the centre of the distribution.")
    return dict(dist=dist, c_lo=c_lo, c_hi=c_hi, unit=unit, name=name)


def sample_inputs(dists: list, method: str, n: int, seed: int, correlation=None) -> np.ndarray:
    """Sample (numbers in each entry's unit) of ``dists`` by ``method``, seeded.

    Monte Carlo draws ``n`` rows of independent uniforms; Latin hypercube (scipy.stats.qmc)
    puts one point in each of ``n`` equal-probability strata per input; ``sobol`` is
    Saltelli's design of ``n`` (d + 2) rows for Sobol indices (SALib).  A ``correlation``
    matrix (Spearman, d x d) reorders the uniforms by Iman & Conover (1982) before they map
    through the inverse CDF, restricted to [F(low), F(high)] for a truncated entry.
    """
    from scipy.stats import qmc  # lazily (see _distribution)
    rng = np.random.default_rng(seed)
    d = len(dists)
    if method == "sobol":
        u = sobol_unit_sample(d, n, seed)
    else:
        u = (qmc.LatinHypercube(d=d, seed=rng).random(n) if method == "latin-hypercube"
             else rng.random((n, d)))
        if correlation is not None:
            u = iman_conover(u, np.asarray(correlation, float), rng)
    out = np.empty(u.shape)
    for j, dd in enumerate(dists):
        out[:, j] = dd["dist"].ppf(dd["c_lo"] + u[:, j] * (dd["c_hi"] - dd["c_lo"]))
    return out


SENSITIVITY = ("spearman", "prcc", "delta")
#: delta (SALib, bootstrap) takes about a second per output and few hundred variants: on request
DEFAULT_SENSITIVITY = ("spearman", "prcc")


def _read_sampling(doc: dict, file: str, base_data: dict, seed) -> dict:
    unc = doc["uncertain"]
    if not isinstance(unc, list) or not unc:
        raise InputError(f"{file}: 'uncertain' must be a list of [[uncertain]] tables, each "
                         "with path, distribution and its parameters.")
    if "vary" in doc:
        raise InputError(f"{file}: give either [[vary]] (grid) or [[uncertain]] (random "
                         "sample), not both.")
    method = doc.get("method", "latin-hypercube")
    if method not in METHODS:
        raise InputError(f"{file}: method = {method!r} is not known; allowed: "
                         f"{', '.join(METHODS)}.")
    n = doc.get("samples")
    if isinstance(n, bool) or not isinstance(n, int) or n < 1:
        raise InputError(f"{file}: samples = {n!r}: give a whole number >= 1 of variants to "
                         "draw (e.g. samples = 200).")
    paths, dists = [], []
    for i, e in enumerate(unc):
        if not isinstance(e, dict) or not isinstance(e.get("path"), str):
            raise InputError(f"{file}: uncertain[{i}].path is missing or not a string.")
        dists.append(_distribution(e, i, file))
        _set(copy.deepcopy(base_data), e["path"], 1.0, file)   # path check up front
        if e["path"] in paths:
            raise InputError(f"{file}: uncertain[{i}].path {e['path']!r} is given twice.")
        paths.append(e["path"])
    corr = None
    if "correlation" in doc:
        if method == "sobol":
            raise InputError(f"{file}: correlation cannot be used with method = \"sobol\": "
                             "Sobol indices need independent inputs. Use latin-hypercube or "
                             "monte-carlo with sensitivity = [\"delta\"] for correlated "
                             "inputs.")
        corr = check_correlation(doc["correlation"], len(dists), file)
    if method == "sobol":
        if n < 2 or n & (n - 1):
            raise InputError(f"{file}: samples = {n}: for method = \"sobol\" give a power of "
                             "2 (e.g. 256 or 1024); the study then runs samples x (inputs + 2) "
                             "variants.")
        if len(dists) < 2:
            raise InputError(f"{file}: method = \"sobol\" needs at least two [[uncertain]] "
                             "inputs (with one, its index is 1 by definition).")
        sens = ["sobol"]
        if "sensitivity" in doc:
            raise InputError(f"{file}: sensitivity: method = \"sobol\" computes Sobol indices "
                             "only; leave the key out.")
    else:
        sens = doc.get("sensitivity", list(DEFAULT_SENSITIVITY))
        if isinstance(sens, str):
            sens = [sens]
        if not isinstance(sens, list) or not sens or any(m not in SENSITIVITY for m in sens):
            raise InputError(f"{file}: sensitivity = {doc.get('sensitivity')!r}: give a list "
                             f"of methods from {', '.join(SENSITIVITY)} (the first ranks the "
                             "inputs); Sobol indices need method = \"sobol\".")
    if seed is None:
        seed = int(np.random.SeedSequence().entropy % (2**63))
    x = sample_inputs(dists, method, n, seed, corr)
    variants = [{p: (f"{v:.12g} {dd['unit']}".strip() if dd["unit"] else float(v))
                 for p, v, dd in zip(paths, row, dists)} for row in x]
    return dict(method=method, seed=seed, samples=x, uncertain=paths, variants=variants,
                correlation=None if corr is None else corr.tolist(), sensitivity=sens,
                base_samples=n,
                vary=[(p, None) for p in paths],
                distributions=[dd["name"] for dd in dists])


def _limit_kind(out: str) -> str:
    """Quantity kind of the [exceed] limit of a numeric output."""
    if out == "touch_margin_K":
        return "temperature_difference"
    return {"K": "temperature", "W": "power", "J": "energy", "s": "time"}[out.rsplit("_", 1)[1]]


def _read_limits(doc: dict, file: str, outputs=DEFAULT_OUTPUTS) -> dict:
    lim = doc.get("exceed", {})
    if not isinstance(lim, dict):
        raise InputError(f"{file}: [exceed] must be a table of output = limit "
                         "(e.g. outer_T_K = \"60 degC\").")
    numeric = [o for o in outputs if o not in TEXT_OUTPUTS]
    out = {}
    for k, v in lim.items():
        if k not in numeric:
            raise InputError(f"{file}: exceed.{k}: not a numeric output of this study; "
                             f"allowed: {', '.join(numeric)}.")
        out[k] = parse_quantity(v, _limit_kind(k), f"exceed.{k}", file=file)
    return out


def read_study(path, seed=None) -> dict:
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
        base_raw = open(base_file, "rb").read()
        base_data = tomllib.loads(base_raw.decode("utf-8"))
    except OSError as e:
        raise InputError(f"{file}: key 'base': cannot read {base_file} ({e.strerror}).") from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as e:
        raise InputError(f"{file}: key 'base': {base_file} is not valid TOML ({e}).") from None
    try:
        base_case = case_from_dict(copy.deepcopy(base_data), base_file)
    except (FdwallError, ValueError) as e:
        raise InputError(f"{file}: key 'base': the base case does not load: "
                         f"{' '.join(str(e).split())}") from None
    outputs = check_outputs(doc.get("outputs"), file, base_case)
    limits = _read_limits(doc, file, outputs)
    skin_limit = None
    if "skin_limit" in doc:
        skin_limit = parse_quantity(doc["skin_limit"], "temperature", "skin_limit", file=file)
    elif "time_to_limit_s" in outputs:
        raise InputError(f"{file}: output time_to_limit_s needs skin_limit, the outer-face "
                         "temperature whose first reaching is timed (e.g. skin_limit = "
                         "\"60 degC\").")
    # the hash covers the study and the base case: a change to either is a new study
    sha = hashlib.sha256(raw + b"\0" + base_raw).hexdigest()
    common = dict(file=file, base_file=base_file, base=base_data, sha=sha, limits=limits,
                  outputs=outputs, skin_limit=skin_limit, seed_given=seed is not None)
    if "uncertain" in doc:
        smp = _read_sampling(doc, file, base_data, seed)
        return dict(**common, input_paths=list(smp["uncertain"]), **smp)
    vary = doc.get("vary")
    if not isinstance(vary, list) or not vary:
        raise InputError(f"{file}: no [[vary]] or [[uncertain]] entries; a study needs at "
                         "least one, [[vary]] with 'path' and a non-empty list 'values', or "
                         "[[uncertain]] with 'path', 'distribution' and its parameters.")
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
    return dict(**common, vary=items, input_paths=[p for p, _ in items], variants=variants,
                method="grid", seed=None)


def run_variant(base: dict, edits: dict, name: str = "<variant>", outputs=DEFAULT_OUTPUTS,
                skin_limit=None) -> dict:
    """Apply ``edits`` (path -> value) to the base case dict, load it and compute ``outputs``.

    Returns a row: outputs in SI (keys with unit suffix, see
    :mod:`fdwall.analyses.study_outputs`), ``status``, ``error``, ``run_time_s`` [s],
    ``host``, ``worker``.  A failure is recorded in the row, never raised.
    """
    return evaluate_variant(base, edits, name, outputs, skin_limit)


def table_path(st: dict, out_dir) -> str:
    """``DIR/<stem>-study.csv`` of study ``st`` (a trailing ``-study`` of the stem dropped)."""
    stem = os.path.splitext(os.path.basename(st["file"]))[0]
    if stem.endswith("-study"):
        stem = stem[: -len("-study")]
    return os.path.join(os.fspath(out_dir), f"{stem}-study.csv")


def run_study(path, out_dir=".", workers=None, seed=None, *, scheduler=None, restart=False,
              batch=None, progress=False, on_batch=None, on_start=None,
              timeout=SCHEDULER_TIMEOUT) -> tuple[str, list]:
    """Run every variant of study file ``path``; write DIR/<stem>-study.csv atomically.

    Returns (csv path, rows in variant order).  ``workers`` local processes (default: all
    cores; 1 = in this process), or ``scheduler`` the address of a Dask scheduler (an
    InputError if none answers within ``timeout`` [s]).  ``path`` may also be a study
    already read by :func:`read_study`.  ``seed`` fixes the random sample (same seed, same
    table apart from run time, host and worker).

    Resume: when the table already exists for the same study (same hash of the study and
    base case files), only the missing variants run; a seed drawn for the first run is
    taken from the table (and a study dict passed in is updated to that sample).  A table
    of another study is refused (InputError) unless
    ``restart``, which starts the table over.  ``on_batch(indices, rows)`` is called after
    each batch is written (see :func:`fdwall.analyses.study_run.execute`).  ``on_start()``
    is called once the table is accepted (the checks above passed), before any variant runs
    (the command uses it to remove a final HDF5 file that the new run would make stale).
    """
    st = path if isinstance(path, dict) else read_study(path, seed=seed)
    csv_path = table_path(st, out_dir)
    rows = {}
    stamp = None if restart else read_stamp(csv_path)
    if stamp is not None:
        if stamp["sha"] != st["sha"]:
            raise InputError(
                f"{csv_path} holds a partial or finished table of a different study: the "
                f"study file {st['file']} or its base case changed since that table was "
                "written (their hash differs). Run with --restart to start the table over, "
                "or choose another --out DIR.")
        if st["method"] != "grid" and stamp["seed"] != str(st["seed"]):
            if st.get("seed_given"):
                raise InputError(
                    f"{csv_path} was drawn with seed {stamp['seed']}, not {st['seed']}: "
                    f"resume with --seed {stamp['seed']} (or without --seed), or run with "
                    "--restart to start over with the new seed.")
            # the caller's study dict is updated in place: its samples are the table's
            st.update(read_study(st["file"], seed=int(stamp["seed"])))
        rows = read_partial(csv_path, st)
    todo = [i for i in range(len(st["variants"])) if i not in rows]
    if on_start is not None:
        on_start()
    execute(st, todo, rows, csv_path, workers=workers, scheduler=scheduler, batch=batch,
            progress=progress, on_batch=on_batch, timeout=timeout)
    st["resumed"] = len(st["variants"]) - len(todo)
    return csv_path, [rows[i] for i in sorted(rows)]


def read_table(path):
    """Read a study table into a pandas DataFrame: ``DIR/<stem>-study.csv`` or ``.h5``.

    Column names keep their ``name [unit]`` headers; the study hash line of the CSV is
    skipped; from HDF5 the ``tables/variants`` group is read, columns in the CSV's order.
    """
    import pandas as pd  # optional heavy library, imported lazily
    if os.fspath(path).endswith((".h5", ".hdf5")):
        import h5py
        with h5py.File(path, "r") as h:
            g = h["tables/variants"]
            cols = {}
            for k in g:
                v = g[k][()]
                if v.dtype.kind in "OS":
                    v = [x.decode() if isinstance(x, bytes) else x for x in v]
                cols[k] = v
        order = [c for c in pd.read_csv(_csv_beside(path), comment="#", nrows=0).columns
                 if c in cols] if os.path.exists(_csv_beside(path)) else list(cols)
        return pd.DataFrame({c: cols[c] for c in order})
    return pd.read_csv(path, comment="#", keep_default_na=False,
                       na_values=["nan"])


def _csv_beside(h5_path) -> str:
    return os.path.splitext(os.fspath(h5_path))[0] + ".csv"


def quantile_interval(n: int, p: float, confidence: float = 0.95):
    """Distribution-free interval of the ``p`` quantile from a sample of ``n``.

    Returns 1-based ranks (r, s) and the coverage: the order statistics X_(r) <= x_p <=
    X_(s) hold the true quantile with probability F(s-1) - F(r-1), F the Binomial(n, p)
    CDF (order statistics; e.g. David & Nagaraja, Order Statistics, sec. 7.1).  ``r`` = 0
    or ``s`` = n + 1 means that side is unbounded for this sample size.
    """
    from scipy import stats  # lazily: about 0.8 s to import, not needed by grid studies
    a = 1.0 - confidence
    b = stats.binom(n, p)
    r = int(b.ppf(a / 2))                 # F(r - 1) < a/2
    s = int(b.ppf(1 - a / 2)) + 1         # F(s - 1) >= 1 - a/2
    cover = float(b.cdf(min(s, n + 1) - 1) - (b.cdf(r - 1) if r >= 1 else 0.0))
    return r, s, cover


def wilson_interval(k: int, n: int, confidence: float = 0.95):
    """Wilson score interval (low, high) of a binomial proportion k/n (Wilson 1927)."""
    from scipy import stats  # lazily: about 0.8 s to import, not needed by grid studies
    if n == 0:
        return float("nan"), float("nan")
    z = float(stats.norm.ppf(0.5 + confidence / 2))
    ph = k / n
    den = 1 + z * z / n
    mid = (ph + z * z / (2 * n)) / den
    half = z / den * np.sqrt(ph * (1 - ph) / n + z * z / (4 * n * n))
    return float(max(0.0, mid - half)), float(min(1.0, mid + half))


def _samples_for_bounded(p: float, confidence: float) -> int:
    n = 1
    while True:
        r, s, _ = quantile_interval(n, p, confidence)
        if r >= 1 and s <= n:
            return n
        n += 1


PERCENTS = (5, 50, 95)


def _sens_columns(st: dict) -> list:
    cols = ["output", "input"]
    for m in st.get("sensitivity", ["spearman"]):
        cols += {"spearman": ["spearman_rho", "p_value"], "prcc": ["prcc", "prcc_p_value"],
                 "delta": ["delta", "delta_conf", "delta_S1", "delta_S1_conf"],
                 "sobol": ["sobol_S1", "sobol_S1_conf", "sobol_ST", "sobol_ST_conf"]}[m]
    return cols + ["ranked_by", "rank"]


_RANK_KEY = {"spearman": "spearman_rho", "prcc": "prcc", "delta": "delta", "sobol": "sobol_ST"}


def _sensitivity(st, out, x, y, n, nf, se, summ, base):
    """Append the sensitivity rows of output ``out`` to the table ``se`` (columns lists)."""
    d = len(st["uncertain"])
    methods = st.get("sensitivity", ["spearman"])
    cols = {}
    fin = np.isfinite(y)
    xf, yf = x[fin], y[fin]          # 'never reached' (inf) cannot enter delta or Sobol
    for m in methods:
        if m == "spearman":        # ranks: an 'inf' (never reached) ranks above all
            cols["spearman_rho"], cols["p_value"] = spearman(x, y)
        elif m == "prcc":
            cols["prcc"], cols["prcc_p_value"] = prcc(x, y)
        elif m == "delta":
            r = delta_indices(xf, yf, st["seed"])
            cols.update(delta=r["delta"], delta_conf=r["delta_conf"], delta_S1=r["S1"],
                        delta_S1_conf=r["S1_conf"])
        elif m == "sobol":
            if nf or not np.all(fin) or len(np.unique(y)) < 2:
                cols.update({k: np.full(d, np.nan) for k in ("sobol_S1", "sobol_S1_conf",
                                                             "sobol_ST", "sobol_ST_conf")})
            else:
                r = sobol_indices(y, d, st["seed"])
                cols.update(sobol_S1=r["S1"], sobol_S1_conf=r["S1_conf"], sobol_ST=r["ST"],
                            sobol_ST_conf=r["ST_conf"])
    key = _RANK_KEY[methods[0]]
    v = np.abs(cols[key])
    order = sorted(range(d), key=lambda j: -v[j] if np.isfinite(v[j]) else 1.0)
    for rank, j in enumerate(order, 1):
        se["output"].append(out)
        se["input"].append(st["uncertain"][j])
        for c in cols:
            se[c].append(float(cols[c][j]))
        se["ranked_by"].append(key)
        se["rank"].append(rank)
    if d and np.isfinite(v[order[0]]):
        summ[f"{base}_top_input"] = st["uncertain"][order[0]]


def _sens_notes(st: dict, n_rows: int, nf: int) -> list:
    """What the sensitivity figures mean and how many variants they need."""
    m = st.get("sensitivity", ["spearman"])
    out = []
    if "sobol" in m:
        d = len(st["uncertain"])
        out.append(f"sensitivity: Sobol first-order (S1) and total (ST) indices from "
                   f"Saltelli's design, {st['base_samples']} base samples x ({d} inputs + 2) "
                   f"= {n_rows} variants, with 95 % bootstrap half-widths (_conf); inputs "
                   "are ranked by ST; if a half-width exceeds about 0.1 double samples")
        return out
    names = {"spearman": "Spearman rank correlation (monotone effects; misses effects "
                         "that rise and fall)",
             "prcc": "partial rank correlation (the other inputs' monotone effects "
                     "removed; p-values from a t-test)",
             "delta": "Borgonovo's delta (moment-independent: any shape of effect, "
                      "correlated inputs allowed; with a first-order index S1)"}
    out.append("sensitivity: " + "; ".join(names[k] for k in m) + f"; inputs ranked by "
               f"{m[0]}")
    if "delta" in m:
        out.append("sample size for delta: its bootstrap half-width (delta_conf) shrinks as "
                   "1/sqrt(n); a few hundred successful variants usually separate inputs "
                   "whose delta differs by 0.05")
    if st.get("correlation") is not None:
        out.append("inputs are correlated as given (Iman-Conover rank correlation): "
                   "Spearman and delta then share an input's effect with the inputs "
                   "correlated with it; partial rank correlation separates them")
    return out


def uncertainty_summary(st: dict, rows: list, confidence: float = 0.95) -> dict:
    """Uncertainty summary of a sampled study: dict(summary, tables, notes, references, json).

    Per output (SI, unit suffix kept): mean, standard deviation, the 5/50/95 % quantiles with
    order-statistic confidence intervals, the probability of exceeding each ``[exceed]``
    limit with its Wilson interval, and a Spearman rank-correlation ranking of the inputs
    (scipy.stats.spearmanr).  Failed variants are counted and left out.
    """
    from scipy import stats  # lazily: about 0.8 s to import, not needed by grid studies
    done = [i for i, r in enumerate(rows) if r["status"] == "done"]
    n, nf = len(done), len(rows) - len(done)
    x = np.asarray(st["samples"])[done] if n else np.empty((0, len(st["uncertain"])))
    summ = {"samples": len(rows), "done": n, "failed": nf,
            "failed_fraction": nf / len(rows) if rows else float("nan"),
            "confidence": confidence}
    qt = {k: [] for k in ("output", "percent", "value_si", "ci_low_si", "ci_high_si",
                          "ci_coverage", "unit")}
    se = {k: [] for k in _sens_columns(st)}
    ex = {k: [] for k in ("output", "limit_si", "unit", "exceed_count", "probability",
                          "ci_low", "ci_high")}
    outs = st.get("outputs", OUTPUTS)
    if "touch_verdict" in outs:
        k = sum(1 for i in done if rows[i]["touch_verdict"] == "above-limit")
        lo, hi = wilson_interval(k, n, confidence)
        summ["touch_above_limit_probability"] = k / n if n else float("nan")
        summ["touch_above_limit_probability_low"] = lo
        summ["touch_above_limit_probability_high"] = hi
        for key, val in zip(ex, ("touch_verdict", float("nan"), "", k,
                                 k / n if n else float("nan"), lo, hi)):
            ex[key].append(val)
    for out in [o for o in outs if o not in TEXT_OUTPUTS]:
        base, suf = out.rsplit("_", 1)
        suf = "_" + suf
        unit = suf[1:]
        y = np.array([rows[i][out] for i in done], dtype=float)
        ys = np.sort(y)
        finite = bool(np.all(np.isfinite(y)))   # 'inf' = limit never reached: no mean
        summ[f"{base}_mean{suf}"] = float(y.mean()) if n and finite else float("nan")
        summ[f"{base}_std{suf}"] = float(y.std(ddof=1)) if n > 1 and finite else float("nan")
        if not finite:
            summ[f"{base}_never_reached"] = int(np.sum(np.isinf(y)))
        for pc in PERCENTS:
            p = pc / 100
            # an 'inf' (limit never reached) enters as the largest values: order statistic
            how = "inverted_cdf" if np.isinf(y).any() else "linear"
            v = float(np.quantile(y, p, method=how)) if n else float("nan")
            r, s, cover = quantile_interval(n, p, confidence) if n else (0, 1, float("nan"))
            lo = float(ys[r - 1]) if r >= 1 else float("nan")
            hi = float(ys[s - 1]) if s <= n else float("nan")
            summ[f"{base}_p{pc:02d}{suf}"] = v
            summ[f"{base}_p{pc:02d}_low{suf}"] = lo
            summ[f"{base}_p{pc:02d}_high{suf}"] = hi
            for k, val in zip(qt, (out, pc, v, lo, hi, cover, unit)):
                qt[k].append(val)
        if out in st.get("limits", {}):
            lim = st["limits"][out]
            k = int(np.sum(y > lim))
            lo, hi = wilson_interval(k, n, confidence)
            prob = k / n if n else float("nan")
            summ[f"{base}_limit{suf}"] = lim
            summ[f"{base}_exceed_probability"] = prob
            summ[f"{base}_exceed_probability_low"] = lo
            summ[f"{base}_exceed_probability_high"] = hi
            for key, val in zip(ex, (out, lim, unit, k, prob, lo, hi)):
                ex[key].append(val)
        _sensitivity(st, out, x, y, n, nf, se, summ, base)
    need = _samples_for_bounded(0.95, confidence)
    summ["samples_for_bounded_p95_interval"] = need
    notes = [f"random sample: {st['method']}, {len(rows)} variants, seed {st['seed']} "
             "(the same seed gives the same table)",
             f"quantiles p05/p50/p95 with {confidence:.0%} distribution-free intervals from "
             "order statistics; NaN bounds mean the sample is too small for that side "
             f"(at least {need} successful variants bound both sides of the 95 % quantile)",
             ] + _sens_notes(st, len(rows), nf)
    if nf and st["method"] != "sobol":
        notes.append(f"{nf} of {len(rows)} variants failed ({nf / len(rows):.1%}) and are left "
                     "out of every figure above; if the failures gather in one part of the "
                     "input range the quantiles, probabilities and sensitivity measures are "
                     "biased towards the rest; see the error column of the table")
    elif nf:
        notes.append(f"{nf} of {len(rows)} variants failed ({nf / len(rows):.1%}): the Sobol "
                     "design is incomplete, so no Sobol index is given (NaN); the quantiles "
                     "leave the failed variants out and are biased towards the rest if the "
                     "failures gather in one part of the input range; see the error column")
    for e_out, e_p in zip(ex["output"], ex["probability"]):
        if n and 0 < e_p < 1:
            z = float(stats.norm.ppf(0.5 + confidence / 2))
            need_p = int(np.ceil(z * z * (1 - e_p) / (e_p * 0.2 ** 2)))
            key = e_out.rsplit("_", 1)[0] if e_out != "touch_verdict" else "touch_above_limit"
            summ[f"{key}_samples_for_20pct_error"] = need_p
            notes.append(f"sample size for {e_out}: the probability {e_p:.3g} is known to "
                         f"+-20 % (at {confidence:.0%}) with about {need_p} successful "
                         f"variants (z^2 (1 - p) / (0.2^2 p)); this study has {n}")
    if ex["output"]:
        notes.append("probability of exceeding a limit: fraction of successful variants "
                     f"above it, with a {confidence:.0%} Wilson score interval")
    refs = ["order-statistic confidence intervals of quantiles (binomial ranks; e.g. David & "
            "Nagaraja, Order Statistics, 3rd ed., sec. 7.1)",
            "Wilson score interval of a proportion (E. B. Wilson, JASA 22, 1927)",
            "Spearman rank correlation, scipy.stats.spearmanr",
            "partial rank correlation (S. Marino et al., J. Theor. Biol. 254, 178-196, 2008)",
            "delta moment-independent measure (E. Borgonovo, Reliab. Eng. Syst. Saf. 92, "
            "771-784, 2007; SALib.analyze.delta)",
            "Sobol indices by Saltelli's design (A. Saltelli et al., Comput. Phys. Commun. "
            "181, 259-270, 2010; SALib.sample.sobol, SALib.analyze.sobol)",
            "induced rank correlation (R. L. Iman & W. J. Conover, Commun. Statist. B 11, "
            "311-334, 1982)",
            "Latin hypercube sampling, scipy.stats.qmc.LatinHypercube (McKay, Beckman & "
            "Conover, Technometrics 21, 1979)"]
    tables = {"quantiles": qt, "sensitivity": se}
    if ex["output"]:
        tables["exceedance"] = ex
    js = {"quantiles": [dict(zip(qt, t)) for t in zip(*qt.values())],
          "exceedance": [dict(zip(ex, t)) for t in zip(*ex.values())],
          "sensitivity": [dict(zip(se, t)) for t in zip(*se.values())],
          "failed": nf}
    return dict(summary=summ, tables=tables, notes=notes, references=refs, json=js)
