"""PNG of an insulation-sizing trade-off table: skin temperature and heat loss against the
thickness of the sized layer, with the target limits drawn, the feasible band shaded and the
answer marked.  It presents the numbers the sizing stored (computes nothing).

Axes: thickness [mm], temperature [degC], heat loss [W/m2, W/m or W].
"""
from __future__ import annotations

import textwrap

import numpy as np

from .plots import _figure, _save

__all__ = ["plot_tradeoff"]


def plot_tradeoff(result: dict, path, title: str = "", loss_unit: str = "W/m2") -> str:
    """Draw the trade-off of a sizing result dict (``SizingResult.to_dict()``) to ``path``.

    Upper panel: steady skin temperature (and the transient peak when present) [degC] with the
    temperature limits; middle: heat loss [loss_unit] with the loss limit; lower (when the
    table has it): warm-up time [h] with its limit.  Feasible
    intervals are shaded, the answer is a vertical line.  The safety caution is printed below.
    Returns the path.
    """
    tab = result["table"]
    x = np.asarray(tab["thickness_m"], float) * 1000.0
    warm = "warm_up_s" in tab
    fig, axes = _figure(8.5, 9.0 if warm else 7.0, rows=3 if warm else 2, sharex=True)
    a1, a2 = axes[0], axes[1]
    if warm:
        wu = np.asarray([np.nan if v is None else v for v in tab["warm_up_s"]], float)
        axes[2].plot(x, wu / 3600.0, "o-", color="#762a83", label="warm-up, case's run")
        axes[2].set_ylabel("warm-up [h]")
    a1.plot(x, np.asarray(tab["skin_K"], float) - 273.15, "o-", color="#b2182b",
            label="skin, steady")
    if "skin_peak_K" in tab:
        a1.plot(x, np.asarray(tab["skin_peak_K"], float) - 273.15, "s--", color="#e08214",
                label="skin, peak over the run")
    a2.plot(x, np.asarray(tab["loss"], float), "o-", color="#2166ac", label="heat loss, steady")
    for t in result["targets"]:
        if t["name"] == "service":      # ratings of the layers, not a skin limit
            continue
        if t["unit"] == "K":
            a1.axhline(t["limit"] - 273.15, color="#4d4d4d", ls=":", lw=1.2)
            a1.annotate(f"{t['name']} limit {t['limit'] - 273.15:.0f} degC",
                        (x[len(x) // 2], t["limit"] - 273.15), ha="left", va="bottom", fontsize=8)
        elif t["unit"] == "s" and warm:
            axes[2].axhline(t["limit"] / 3600.0, color="#4d4d4d", ls=":", lw=1.2)
            axes[2].annotate(f"{t['name']} limit {t['limit'] / 3600:.3g} h",
                             (x[len(x) // 2], t["limit"] / 3600.0), ha="left", va="bottom",
                             fontsize=8)
        elif t["unit"] != "s":
            a2.axhline(t["limit"], color="#4d4d4d", ls=":", lw=1.2)
            a2.annotate(f"{t['name']} limit {t['limit']:.4g} {t['unit']}", (x[len(x) // 2], t["limit"]),
                        ha="left", va="bottom", fontsize=8)
    for ax in axes:
        for i, (lo, hi) in enumerate(result["feasible_m"]):
            ax.axvspan(lo * 1000.0, hi * 1000.0, color="#1b7837", alpha=0.12,
                       label="meets all targets" if i == 0 else None)
        ax.axvline(result["thickness_m"] * 1000.0, color="#1b7837", lw=1.5,
                   label=f"answer {result['thickness_m'] * 1000:.1f} mm")
        ax.grid(True, alpha=0.3)
        ax.legend(fontsize=8, loc="best")
    a1.set_ylabel("skin temperature [degC]")
    a2.set_ylabel(f"heat loss [{loss_unit}]")
    axes[-1].set_xlabel("thickness of the sized layer [mm]")
    a1.set_title("\n".join(textwrap.wrap(title or "insulation sizing trade-off", 90)),
                 fontsize=10)
    fig.text(0.01, 0.002, "\n".join(textwrap.wrap(result.get("caution", ""), 140)),
             fontsize=6.5, va="bottom")
    fig.get_layout_engine().set(rect=(0, 0.06, 1, 0.94))
    return _save(fig, path)
