"""PNG plots of a design study: output distributions (histogram and ECDF, with the limits)
and the sensitivity ranking, drawn from the table and the stored summary (nothing computed
here but the empirical CDF of the stored values).

Temperatures are shown in [degC], times in [h], energies in [MJ], powers in [W].  Plots of
skin temperatures and touch figures carry the safety caution in their footer.  Uses the
object-oriented matplotlib API (no pyplot), written atomically like the run plots.
"""
from __future__ import annotations

import os
import textwrap

import numpy as np

from ..cautions import SAFETY_CAUTION
from .plots import _figure, _save, _style

__all__ = ["write_study_plots"]

_SHOW = {  # output key -> (label, SI -> shown, unit shown)
    "K": (lambda v: v - 273.15, "degC"),
    "s": (lambda v: v / 3600.0, "h"),
    "J": (lambda v: v / 1e6, "MJ"),
    "W": (lambda v: v, "W"),
}
_TOUCH = ("outer_T_K", "peak_skin_T_K", "time_to_limit_s", "touch_limit_K", "touch_margin_K")


def _shown(key, v):
    unit = key.rsplit("_", 1)[1]
    f, u = _SHOW.get(unit, (lambda x: x, unit))
    if key == "touch_margin_K":
        return np.asarray(v, float), "K"
    return f(np.asarray(v, float)), u


def _caution(fig):
    fig.supxlabel("\n".join(textwrap.wrap(SAFETY_CAUTION, 140)), fontsize=7, color="#555555")


def _distribution_plot(st, rows, key, path, title):
    done = [r[key] for r in rows if r["status"] == "done"]
    y = np.asarray(done, float)
    fin = y[np.isfinite(y)]
    n_inf = int(np.sum(np.isinf(y)))
    fig, (a1, a2) = _figure(10.0, 4.8 if key not in _TOUCH else 5.3, 1, 2)
    v, unit = _shown(key, fin)
    name = key.rsplit("_", 1)[0].replace("_", " ")
    if v.size:
        a1.hist(v, bins=max(5, min(40, int(np.sqrt(v.size)) + 1)), color="#6baed6",
                edgecolor="white")
        xs = np.sort(v)
        a2.step(xs, np.arange(1, xs.size + 1) / y.size, where="post", color="#08519c",
                label="empirical CDF")
    lims = []
    if key in st.get("limits", {}):
        lims.append(("limit", st["limits"][key]))
    if key in ("peak_skin_T_K", "outer_T_K") and st.get("skin_limit") is not None:
        lims.append(("skin_limit", st["skin_limit"]))
    for lab, lim in lims:
        lv, _ = _shown(key, [lim])
        for ax in (a1, a2):
            ax.axvline(float(lv[0]), color="#cb181d", linestyle="--", linewidth=1.2,
                       label=f"{lab} {float(lv[0]):.4g} {unit}")
    _style(a1, f"{name} [{unit}]", "variants")
    _style(a2, f"{name} [{unit}]", "fraction of successful variants")
    a2.set_ylim(0, 1.02)
    if lims or v.size:
        a2.legend(loc="lower right", fontsize=8)
    extra = f"; {n_inf} never reached (not shown)" if n_inf else ""
    nf = sum(1 for r in rows if r["status"] != "done")
    fig.suptitle("\n".join(textwrap.wrap(
        f"{title}: {name}, {y.size} successful variants, {nf} failed{extra}", 100)),
        fontsize=11)
    if key in _TOUCH:
        _caution(fig)
    return _save(fig, path)


def _sensitivity_plot(st, unc, path, title):
    se = unc["tables"]["sensitivity"]
    outs = list(dict.fromkeys(se["output"]))
    if not outs:
        return None
    key = se["ranked_by"][0]
    conf = {"delta": "delta_conf", "sobol_ST": "sobol_ST_conf"}.get(key)
    fig, axes = _figure(10.0, 1.2 + 0.45 * len(st["uncertain"]) * len(outs) + 0.8,
                        len(outs), 1)
    for ax, o in zip(axes, outs):
        idx = [i for i, oo in enumerate(se["output"]) if oo == o]
        names = [se["input"][i] for i in idx][::-1]
        vals = np.array([se[key][i] for i in idx][::-1], float)
        err = np.array([se[conf][i] for i in idx][::-1], float) if conf else None
        colours = ["#2171b5" if v >= 0 else "#cb181d" for v in np.nan_to_num(vals)]
        ax.barh(range(len(names)), np.nan_to_num(vals), xerr=err, color=colours,
                ecolor="#444444", capsize=3)
        ax.set_yticks(range(len(names)), names, fontsize=8)
        if not np.isfinite(vals).any():
            ax.text(0.5, 0.5, "not computed: too few successful variants with a finite value "
                    "(or a failed design)", transform=ax.transAxes, ha="center", fontsize=8,
                    color="#555555")
        ax.axvline(0, color="#444444", linewidth=0.8)
        _style(ax, key.replace("_", " "), None)
        ax.set_title(o, fontsize=9, loc="left")
    fig.suptitle(f"{title}: sensitivity ranking by {key.replace('_', ' ')}", fontsize=11)
    if any(o in _TOUCH for o in outs):
        _caution(fig)
    return _save(fig, path)


def _number(v):
    """The number at the start of a value as written ('100 mm' -> 100.0), or None."""
    if isinstance(v, (int, float)) and not isinstance(v, bool):
        return float(v)
    try:
        return float(str(v).split()[0])
    except (ValueError, IndexError):
        return None


def _grid_plot(st, rows, key, path, title):
    """Output against the first varied input, one line per combination of the others."""
    first, vals = st["vary"][0]
    xs = [_number(v) for v in vals]
    if any(x is None for x in xs):
        return _distribution_plot(st, rows, key, path, title)
    unit_in = str(vals[0]).split(maxsplit=1)[1] if len(str(vals[0]).split()) > 1 else ""
    others = [p for p, _ in st["vary"][1:]]
    groups = {}
    for r in rows:
        groups.setdefault(tuple(str(r[p]) for p in others), []).append(r)
    fig, (ax,) = _figure(9.0, 5.2 if key not in _TOUCH else 5.7)
    name = key.rsplit("_", 1)[0].replace("_", " ")
    unit = _shown(key, [0.0])[1]
    for n, (g, rs) in enumerate(sorted(groups.items())):
        pts = sorted((_number(r[first]), r[key]) for r in rs if r["status"] == "done")
        if not pts:
            continue
        x, y = zip(*pts)
        lab = ", ".join(f"{p.rsplit('.', 1)[-1]} = {v}" for p, v in zip(others, g)) or None
        ax.plot(x, _shown(key, y)[0], marker="o", markersize=3.5, linewidth=1.3, label=lab)
    if key in st.get("limits", {}):
        lv = float(_shown(key, [st["limits"][key]])[0][0])
        ax.axhline(lv, color="#cb181d", linestyle="--", linewidth=1.2, label=f"limit {lv:.4g}")
    _style(ax, f"{first} [{unit_in}]" if unit_in else first, f"{name} [{unit}]")
    if len(groups) > 1 or key in st.get("limits", {}):
        ax.legend(fontsize=7.5, loc="best")
    nf = sum(1 for r in rows if r["status"] != "done")
    fig.suptitle(f"{title}: {name}, {len(rows) - nf} variants done, {nf} failed", fontsize=11)
    if key in _TOUCH:
        _caution(fig)
    return _save(fig, path)


def write_study_plots(st: dict, rows: list, unc, outdir, stem) -> list:
    """Write the study plots into ``outdir``; return their paths.

    One ``<stem>-study-<output>.png`` per numeric output -- for a sampled study a histogram
    and empirical CDF, with the ``[exceed]`` limit and ``skin_limit`` drawn; for a grid the
    output against the first varied input, a line per combination of the others -- and, for
    a sampled study,
    ``<stem>-study-sensitivity.png`` (bars of the ranking measure, with its confidence
    half-width where the method gives one).
    """
    title = os.path.basename(st["file"])
    files = []
    for key in st["outputs"]:
        if key == "touch_verdict":
            continue
        draw = _grid_plot if st["method"] == "grid" else _distribution_plot
        files.append(draw(st, rows, key, os.path.join(outdir, f"{stem}-study-{key}.png"), title))
    if unc is not None:
        p = _sensitivity_plot(st, unc, os.path.join(outdir, f"{stem}-study-sensitivity.png"),
                              title)
        if p:
            files.append(p)
    return files
