"""PNG plot of the lumped R/C analysis (``fdwall rc``): step response, spectrum, log length.

It draws what :func:`fdwall.analyses.lumped.rc_analysis` (and, when asked,
:func:`fdwall.analyses.lumped.fit_vs_log_length`) computed; it computes nothing itself.
matplotlib's object-oriented API with the Agg canvas, written atomically (as
:mod:`fdwall.report.plots`).  Axes: time in [h] (log scale), rise per watt in [K/W],
resistance in [K/W], heat capacity in [kJ/K].
"""
from __future__ import annotations

import textwrap

import numpy as np

from .plots import _figure, _save, _style

__all__ = ["plot_rc"]

_FULL, _FOSTER, _CAUER = "#252525", "#b2182b", "#2166ac"


def plot_rc(rc: dict, path, title: str, log_lengths: dict | None = None) -> str:
    """Write the R/C figure to ``path`` (PNG) and return the path.

    Panels: (1) rise of the heated node after a 1 W step from rest [K/W] against time [h]: the
    full (linearised finite-volume) model, and the Foster and Cauer networks when
    ``rc["networks"]`` holds them, with their stated error, and then their error [% of R];
    (2) the wall's time-constant
    spectrum: each mode's resistance at the heated node [K/W] against its time constant [h],
    with the Foster terms; (3) with ``log_lengths`` (from ``fit_vs_log_length``), the one-node
    C fitted to the simulated curve [kJ/K] against the log length [h], beside C_effective,
    C_stored and C_total.
    """
    net = rc.get("networks")
    rows = 2 + (net is not None) + bool(log_lengths)
    fig, axes = _figure(w=9.0, h=3.4 * rows, rows=rows, cols=1)
    fig.suptitle("\n".join(textwrap.wrap(f"{title}: lumped R/C of the heated node", 90)),
                 fontsize=11)
    tau = np.asarray(rc["time_constants_s"], dtype=float)
    r_m = np.asarray(rc.get("mode_R_K_per_W") or [], dtype=float)

    ax = axes[0]
    if net is not None:
        t = np.asarray(net["t_s"], dtype=float)
        ax.plot(t / 3600.0, net["full_K_per_W"], color=_FULL, lw=2.4,
                label=f"full model ({len(tau)} modes)")
        n = net["n_terms"]
        ax.plot(t / 3600.0, net["foster_K_per_W"], color=_FOSTER, lw=1.4, ls="--",
                label=f"Foster, {len(net['foster'])} pairs (max error "
                      f"{100 * net['foster_max_error_K_per_W'] / net['R_total_K_per_W']:.2g} %)")
        ax.plot(t / 3600.0, net["cauer_K_per_W"], color=_CAUER, lw=1.0, ls=":",
                label=f"Cauer ladder, {len(net['cauer'])} stages (same impedance)")
        ax.set_title(f"step response: full model and {n}-pair networks", fontsize=10)
    elif r_m.size:
        t = np.geomspace(tau.min() / 10.0, tau.max() * 10.0, 200)
        y = (r_m[None, :] * -np.expm1(-np.outer(t, 1.0 / tau))).sum(axis=1)
        ax.plot(t / 3600.0, y, color=_FULL, lw=2.0, label=f"full model ({len(tau)} modes)")
        ax.set_title("step response of the heated node (networks: --networks N)", fontsize=10)
    else:
        ax.text(0.5, 0.5, "heated node held at a fixed temperature:\nno response from heat "
                "flow to its temperature", ha="center", va="center", transform=ax.transAxes)
        ax.set_title("step response of the heated node", fontsize=10)
    if ax.lines:
        ax.set_xscale("log")
    _style(ax, "time after a 1 W step from rest [h] (log scale)", "rise of heated node [K/W]")
    if ax.lines:
        ax.legend(loc="upper left", fontsize=8, framealpha=0.85)

    k = 1
    if net is not None:
        ax = axes[k]
        k += 1
        Rt = net["R_total_K_per_W"]
        full = np.asarray(net["full_K_per_W"])
        ax.plot(t / 3600.0, 100 * (np.asarray(net["foster_K_per_W"]) - full) / Rt,
                color=_FOSTER, lw=1.4, ls="--", label="Foster minus full model")
        ax.plot(t / 3600.0, 100 * (np.asarray(net["cauer_K_per_W"]) - full) / Rt,
                color=_CAUER, lw=1.0, ls=":", label="Cauer minus full model")
        ax.axhline(0.0, color=_FULL, lw=0.8)
        ax.set_xscale("log")
        ax.set_title("error of the networks' step response", fontsize=10)
        _style(ax, "time after a 1 W step from rest [h] (log scale)",
               "error [% of the full model's R]")
        ax.legend(loc="upper left", fontsize=8, framealpha=0.85)

    ax = axes[k]
    k += 1
    if r_m.size:
        floor = 1e-6 * r_m.sum()
        shown = r_m >= floor
        ax.vlines(tau[shown] / 3600.0, floor, r_m[shown], color=_FULL, lw=1.2)
        ax.plot(tau[shown] / 3600.0, r_m[shown], "o", color=_FULL, ms=3.5,
                label=f"wall modes ({int(shown.sum())} of {r_m.size} above 1e-6 of R)")
        if net is not None:
            ft = np.array([p["tau_s"] for p in net["foster"]])
            fr = np.array([p["R_K_per_W"] for p in net["foster"]])
            ax.plot(ft / 3600.0, fr, "D", color=_FOSTER, ms=6, mfc="none", mew=1.5,
                    label="Foster pairs")
        ax.set_xscale("log")
        ax.set_yscale("log")
        ax.set_ylim(bottom=floor)
        ax.legend(loc="upper left", fontsize=8, framealpha=0.85)
        _style(ax, "time constant [h] (log scale)", "resistance of the mode at the heated "
               "node [K/W]")
    elif tau.size:
        ax.plot(np.arange(1, tau.size + 1), tau / 3600.0, "o-", color=_FULL, ms=3.5,
                label="time constants of the wall (heated node held)")
        ax.set_yscale("log")
        ax.legend(loc="upper right", fontsize=8, framealpha=0.85)
        _style(ax, "mode number, slowest first", "time constant [h] (log scale)")
    ax.set_title(f"time-constant spectrum (slowest {tau[0] / 3600.0:.3g} h)" if tau.size
                 else "time-constant spectrum", fontsize=10)

    if log_lengths:
        ax = axes[k]
        rows_ = log_lengths["rows"]
        Ln = np.array([r["log_length_s"] for r in rows_]) / 3600.0
        ax.plot(Ln, [r["C_fit_R_fixed_J_per_K"] / 1e3 for r in rows_], "o-", color=_FOSTER,
                label="fitted C, R fixed at the implied R")
        ax.plot(Ln, [r["C_fit_J_per_K"] / 1e3 for r in rows_], "s--", color=_CAUER, ms=4,
                label="fitted C, R fitted too")
        imp = log_lengths["implied"]
        # labels alternate left / right so that close values stay readable
        for key, lab, ls, side in (("C_effective_J_per_K", "C_effective", "-", 0.0),
                                   ("C_stored_J_per_K", "C_stored", "--", 1.0),
                                   ("C_total_J_per_K", "C_total", ":", 0.0)):
            if imp.get(key):
                ax.axhline(imp[key] / 1e3, color="#4d4d4d", ls=ls, lw=1.0)
                ax.annotate(lab, (side, imp[key] / 1e3), xycoords=("axes fraction", "data"),
                            xytext=(4 if side == 0.0 else -4, 3), textcoords="offset points",
                            ha="left" if side == 0.0 else "right", fontsize=8,
                            color="#4d4d4d")
        if len(Ln) > 1 and Ln.max() / Ln.min() > 5:
            ax.set_xscale("log")
        ax.set_ylim(bottom=0.0)
        ax.set_title(f"one-node fit of the simulated curve ({log_lengths['power_W']:.4g} W "
                     "step from ambient) against log length", fontsize=10)
        _style(ax, "log length [h]", "fitted C [kJ/K]")
        ax.legend(loc="lower right", fontsize=8, framealpha=0.85)
    return _save(fig, path)
