"""PNG of a fit to a heating log: data and fitted model over time, power, and residuals.

Axes: time [h], temperature [degC], power [kW], residual [K].  matplotlib's object API with
the Agg canvas, written atomically (see :mod:`fdwall.report.plots`).
"""
from __future__ import annotations

import numpy as np

from .plots import KELVIN_OFFSET, _figure, _save, _style

__all__ = ["plot_fit"]


def plot_fit(t_s, T_K, model_K, P_W, path, *, title="", model_label="fitted model",
             T_amb_K=None, extra=None) -> str:
    """Draw the fit: logged and model temperature with the heater power, then the residuals.

    ``t_s`` [s], ``T_K``, ``model_K``, ``T_amb_K`` [K], ``P_W`` [W]; ``extra`` an optional
    second curve ``(T_K, label)`` (e.g. the calibrated solver run); returns ``path``.
    """
    t = np.asarray(t_s, float) / 3600.0
    fig, (ax, axr) = _figure(9.0, 6.5, rows=2, sharex=True)
    fig.get_layout_engine().set(h_pad=0.05)
    ax.plot(t, np.asarray(T_K) - KELVIN_OFFSET, ".", ms=2.5, color="#4d4d4d", label="log")
    ax.plot(t, np.asarray(model_K) - KELVIN_OFFSET, "-", lw=1.4, color="#b2182b",
            label=model_label)
    if extra is not None:
        ax.plot(t, np.asarray(extra[0]) - KELVIN_OFFSET, "--", lw=1.2, color="#762a83",
                label=extra[1])
    if T_amb_K is not None:
        ax.plot(t, np.asarray(T_amb_K) - KELVIN_OFFSET, ":", lw=1.0, color="#2166ac",
                label="ambient")
    _style(ax, ylabel="temperature [degC]")
    axp = ax.twinx()
    axp.step(t, np.asarray(P_W) / 1000.0, where="post", lw=0.8, color="#e08214", alpha=0.6,
             label="heater power")
    axp.set_ylabel("heater power [kW]", color="#e08214")
    axp.set_ylim(bottom=0, top=max(float(np.max(P_W)) / 1000.0 * 2.2, 1e-3))
    for s in ("top",):
        axp.spines[s].set_visible(False)
    h1, l1 = ax.get_legend_handles_labels()
    h2, l2 = axp.get_legend_handles_labels()
    ax.legend(h1 + h2, l1 + l2, loc="best", fontsize=8, framealpha=0.85)
    res = np.asarray(T_K) - np.asarray(model_K)
    axr.plot(t, res, "-", lw=0.7, color="#1b7837", label=model_label)
    if extra is not None:
        axr.plot(t, np.asarray(T_K) - np.asarray(extra[0]), "-", lw=0.7, color="#762a83",
                 label=extra[1])
        axr.legend(loc="best", fontsize=8, framealpha=0.85)
    axr.axhline(0.0, color="#4d4d4d", lw=0.6)
    _style(axr, xlabel="time [h]", ylabel="residual, log - model [K]")
    if title:
        fig.suptitle(title, fontsize=11)
    return _save(fig, path)
