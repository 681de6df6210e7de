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


def write_study_plots(st: dict, rows: list, unc, outdir, stem) -> list:
    """Write the study plots into ``outdir``; return their paths.

    One ``<stem>-study-<output>.png`` per numeric output (histogram and empirical CDF, with
    the ``[exceed]`` limit and ``skin_limit`` drawn) and, for a sampled study,
    ``<stem>-study-sensitivity.png`` (bars of the ranking measure, with its confidence
    half-width where the method gives one).
    """
    title = os.path.basename(st["file"])
    files = []
    for key in st["outputs"]:
        if key == "touch_verdict":
            continue
        files.append(_distribution_plot(st, rows, key,
                                        os.path.join(outdir, f"{stem}-study-{key}.png"), title))
    if unc is not None:
        p = _sensitivity_plot(st, unc, os.path.join(outdir, f"{stem}-study-sensitivity.png"),
                              title)
        if p:
            files.append(p)
    return files
