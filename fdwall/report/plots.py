"""PNG plots of a run: temperatures over time, profiles through the walls, heat flows and energy.

matplotlib is imported only when a plot is drawn, and only its object-oriented API with the Agg
canvas is used (no pyplot, no global backend switch), so plotting works headless and does not
disturb an interactive session.  Every file is written to a temporary name and renamed when
complete.  Axes: time in [h], temperature in [degC], depth in [mm], heat flow in [W] or [kW]
(per metre of pipe, [W/m], when the walls are cylinders), layers named by their material,
energy in [MJ].
"""
from __future__ import annotations

import os
import textwrap

import numpy as np

from ..atomic import atomic_path
from ..cautions import SAFETY_CAUTION
from ..solver.readout import profile_points

__all__ = ["plot_temperatures", "plot_profiles", "layer_label", "plot_energy", "write_plots"]

KELVIN_OFFSET = 273.15
_WALL_COLOURS = ["#b2182b", "#2166ac", "#1b7837", "#762a83", "#e08214", "#35978f", "#8c510a",
                 "#4d4d4d"]
_LAYER_FILLS = ["#f2efe9", "#e3e9f0"]


def _figure(w=9.0, h=5.5, rows=1, cols=1, sharex=False):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    fig = Figure(figsize=(w, h), dpi=110, layout="constrained")
    FigureCanvasAgg(fig)
    axes = fig.subplots(rows, cols, sharex=sharex, squeeze=False)
    return fig, [ax for row in axes for ax in row]


def _save(fig, path) -> str:
    """Write ``fig`` as PNG to ``path`` atomically; return the path."""
    path = os.fspath(path)
    with atomic_path(path, ".png.part") as tmp:
        fig.savefig(tmp, format="png")
    return path


def _walls(result):
    """The 1-D walls solved, in result order (bridge paths included)."""
    w = list(getattr(result.system, "walls", None) or [])
    return w if w else list(result.case.wall_list)


def _hours(result):
    return np.asarray(result.times, dtype=float) / 3600.0


def _title(result, what):
    t = f"{result.case.name}: {what}"
    if not result.complete:
        t += f"  (INCOMPLETE: stopped at {result.times[-1] / 3600.0:.3g} h)"
    return "\n".join(textwrap.wrap(t, 90))


def _suptitle(fig, result, what):
    fig.suptitle(_title(result, what), fontsize=11)


def _style(ax, xlabel=None, ylabel=None):
    ax.grid(True, color="#d9d9d9", linewidth=0.6)
    ax.set_axisbelow(True)
    for s in ("top", "right"):
        ax.spines[s].set_visible(False)
    if xlabel:
        ax.set_xlabel(xlabel)
    if ylabel:
        ax.set_ylabel(ylabel)


def _legend(ax, n_entries):
    """Legend of the curves one can see (hidden ones merged, see :func:`merge_hidden`)."""
    handles, labels = _visible_legend(ax)
    if n_entries > 9:
        ax.legend(handles, labels, loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=7,
                  frameon=False)
    else:
        ax.legend(handles, labels, loc="best", fontsize=8, framealpha=0.85)


#: Dash patterns of interface curves (on/off lengths in points), one per interface index.
_DASHES = [(6.0, 2.0), (2.0, 1.6), (8.0, 2.0, 1.6, 2.0), (3.5, 3.5), (11.0, 2.5),
           (1.2, 1.2, 5.0, 1.2)]
#: Curves whose largest vertical distance is below this many pixels count as one (the
#: lower one cannot be seen): the legend merges their labels.
HIDDEN_TOLERANCE_PX = 1.5


def _tint(colour, f):
    """``colour`` mixed with white by the fraction ``f`` (0: unchanged) [-]."""
    from matplotlib.colors import to_rgb
    r, g, b = to_rgb(colour)
    return (r + (1 - r) * f, g + (1 - g) * f, b + (1 - b) * f)


def merge_hidden(ax, tol_px: float = HIDDEN_TOLERANCE_PX) -> list:
    """Give the legend of ``ax`` only the curves one can see.

    A curve that lies under a later-drawn one within ``tol_px`` pixels over its whole length
    (same x samples) is hidden: its label joins the visible curve's label (``'a = b'``, in
    drawing order) and leaves the legend; curves with no finite point are dropped.

    Returns
    -------
    list of (Line2D, list of str)
        Per visible curve, in the order of the first-drawn member of its group: the curve
        and the original labels it stands for (drawing order).
    """
    fig = ax.figure
    lines = [ln for ln in ax.get_lines() if not ln.get_label().startswith("_")]
    h_px = ax.get_position().height * fig.get_figheight() * fig.dpi
    y0, y1 = ax.get_ylim()
    tol = tol_px * abs(y1 - y0) / max(h_px, 1.0)
    order = sorted(range(len(lines)), key=lambda i: (lines[i].get_zorder(), i), reverse=True)
    groups = []   # lists of indices into lines, the visible (topmost) one first
    for i in order:
        y = np.asarray(lines[i].get_ydata(), dtype=float)
        if not np.any(np.isfinite(y)):
            lines[i].set_label("_empty: " + lines[i].get_label())
            continue
        x = np.asarray(lines[i].get_xdata(), dtype=float)
        for g in groups:
            xt = np.asarray(lines[g[0]].get_xdata(), dtype=float)
            yt = np.asarray(lines[g[0]].get_ydata(), dtype=float)
            if xt.shape == x.shape and np.allclose(xt, x) and \
                    np.nanmax(np.abs(yt - y)) <= tol:
                g.append(i)
                break
        else:
            groups.append([i])
    out = []
    for g in sorted(groups, key=min):
        labels = [lines[i].get_label() for i in sorted(g)]
        top = lines[g[0]]
        if len(g) > 1:
            top.set_label(" = ".join(labels))
            for i in g[1:]:
                lines[i].set_label("_hidden: " + lines[i].get_label())
        out.append((top, labels))
    return out


def _close_pairs(ax, tol_px: float) -> dict:
    """{(label_a, label_b): True} for the labelled curves of ``ax`` that stay within
    ``tol_px`` pixels of each other over their whole length (same x samples)."""
    fig = ax.figure
    lines = [ln for ln in ax.get_lines() if not ln.get_label().startswith("_")]
    h_px = ax.get_position().height * fig.get_figheight() * fig.dpi
    y0, y1 = ax.get_ylim()
    tol = tol_px * abs(y1 - y0) / max(h_px, 1.0)
    out = {}
    for a in lines:
        for b in lines:
            if a is b:
                continue
            xa, xb = np.asarray(a.get_xdata(), float), np.asarray(b.get_xdata(), float)
            ya, yb = np.asarray(a.get_ydata(), float), np.asarray(b.get_ydata(), float)
            if xa.shape == xb.shape and np.allclose(xa, xb) and \
                    np.nanmax(np.abs(ya - yb)) <= tol:
                out[(a.get_label(), b.get_label())] = True
    return out


def shared_visible_legend(axes, tol_px: float = HIDDEN_TOLERANCE_PX):
    """Handles and labels for one legend shared by ``axes`` whose curves carry the same
    labels (profiles at the same times in every wall): a curve is merged into a later-drawn
    one (``'a = b'``) only when it is hidden under it in every one of the axes."""
    axes = [a for a in axes if a.get_visible()]
    if not axes:
        return [], []
    pairs = [_close_pairs(a, tol_px) for a in axes]
    lines = [ln for ln in axes[0].get_lines() if not ln.get_label().startswith("_")]
    labels = [ln.get_label() for ln in lines]
    top_of = {}
    for i in range(len(labels) - 1, -1, -1):       # topmost (last drawn) first
        for j in range(len(labels) - 1, i, -1):
            top = top_of.get(labels[j], labels[j])
            if top == labels[j] and all(p.get((labels[i], labels[j])) for p in pairs):
                top_of[labels[i]] = labels[j]
                break
    handles, out = [], []
    for ln, lab in zip(lines, labels):
        if lab in top_of:
            continue
        members = [x for x in labels if top_of.get(x) == lab] + [lab]
        members.sort(key=labels.index)
        handles.append(ln)
        out.append(" = ".join(members))
    return handles, out


def _visible_legend(ax, width=60):
    """Handles and labels of the curves :func:`merge_hidden` leaves visible, long labels
    wrapped at ``width`` characters."""
    handles, labels = [], []
    for ln, _ in merge_hidden(ax):
        handles.append(ln)
        labels.append("\n".join(textwrap.wrap(ln.get_label(), width, subsequent_indent="  ")))
    return handles, labels


def _split_outer(result, walls) -> bool:
    """Outer faces get their own panel on an enclosure, and on a single wall whose outer
    face moves over less than 30 % of the whole temperature range (it would be squashed)."""
    if len(walls) > 1 or result.system.has_chamber:
        return True
    T = result.wall_T(0)
    outer = T[:, -1]
    span_o = float(np.ptp(outer)) if outer.size else 0.0
    span = float(np.ptp(T)) if T.size else 0.0
    return 0.5 < span_o < 0.3 * span


def _setpoint(ax, result, th):
    """Draw the controller setpoint (thermostat: with its band) on ``ax``; True if drawn."""
    case = result.case
    ctl = getattr(case, "control", None)
    if case.heater is None or ctl is None or ctl.mode not in ("thermostat", "pid") \
            or ctl.setpoint is None:
        return False
    t = np.asarray(result.times, dtype=float)
    sp = np.asarray(ctl.setpoint(t), dtype=float) - KELVIN_OFFSET
    if ctl.power_on is not None:   # no setpoint while the master switch is off
        sp = np.where(np.asarray(ctl.power_on(t), dtype=float) > 0.5, sp, np.nan)
    where = "chamber" if ctl.sensor == "chamber" else f"wall sensor at {ctl.sensor_depth * 1e3:g} mm"
    ax.plot(th, sp, color="#555555", lw=1.3, dashes=(4.0, 1.5, 1.0, 1.5), zorder=6,
            label=f"setpoint ({where})", gid="setpoint")
    if ctl.mode == "thermostat" and ctl.band > 0:
        ax.fill_between(th, sp - ctl.band / 2, sp + ctl.band / 2, color="#999999", alpha=0.18,
                        lw=0, zorder=0.5, label="_thermostat band")
    return True


def plot_temperatures(result, path) -> str:
    """Face and interface temperatures [degC] (and the chamber's, with the controller
    setpoint) against time [h].

    On an enclosure (or a wall whose outer face would be squashed against the hot curves)
    the outer faces, the ones that matter for touch, get their own lower panel.  Inner
    faces are solid, interfaces dashed with a distinct dash and tint each, outer faces
    dotted; the legend lists only the curves one can see (see :func:`merge_hidden`).

    Parameters
    ----------
    result : fdwall.result.Result
    path : str or Path
        PNG file to write.

    Returns
    -------
    str
        The path written.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    case = result.case
    th = _hours(result)
    walls = _walls(result)
    split = _split_outer(result, walls)
    n_curves = sum(len(w.layers) + 1 for w in walls) + int(result.system.has_chamber)
    wide = n_curves > 9
    fig = Figure(figsize=(12.5 if wide else 9.0, 8.0 if split else 5.5), dpi=110,
                 layout="constrained")
    FigureCanvasAgg(fig)
    if split:
        ax, ax_out = fig.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [3, 2]})
    else:
        ax = ax_out = fig.subplots(1, 1)
    single = len(walls) == 1
    mids = ["#e08214", "#1b7837", "#762a83", "#35978f", "#8c510a", "#de77ae"]
    for j, w in enumerate(walls):
        T = result.wall_T(j) - KELVIN_OFFSET
        Ti = result.interface_T(j).reshape(len(th), -1) - KELVIN_OFFSET
        pre = "" if single else f"{w.name}: "
        c = _WALL_COLOURS[0] if single else _WALL_COLOURS[j % len(_WALL_COLOURS)]
        ax.plot(th, T[:, 0], "-", color=c, lw=2.0 if single else 1.8, label=f"{pre}inner face",
                gid=f"inner-{j}")
        for i in range(len(w.layers) - 1):
            col = mids[i % len(mids)] if single else _tint(c, 0.45 * (i % 3) / 2)
            ax.plot(th, Ti[:, i], color=col, lw=1.4 if single else 1.2,
                    dashes=_DASHES[i % len(_DASHES)], gid=f"interface-{j}-{i}",
                    label=f"{pre}{layer_label(w.layers[i])} | {layer_label(w.layers[i + 1])}")
        c_out = _WALL_COLOURS[1] if single else c
        ax_out.plot(th, T[:, -1], ":" if not single else "-", color=c_out, lw=2.0,
                    label=f"{pre}outer face", gid=f"outer-{j}")
    if result.system.has_chamber:
        ax.plot(th, result.chamber_T - KELVIN_OFFSET, "-", color="black", lw=2.2,
                label="chamber", zorder=3, gid="chamber")
    _setpoint(ax, result, th)
    # event crossings as small markers on the panel of the watched spot
    for (name, (up, down)), ev in zip(result.events.items(), case.run.watch):
        a = ax_out if ev.at == "outer" else ax
        for t, mk in ((up, "^"), (down, "v")):
            if np.isfinite(t):
                a.plot([t / 3600.0], [ev.temperature - KELVIN_OFFSET], mk, color="#444444", ms=7,
                       mfc="white", mew=1.3, zorder=7, label="_event")
                a.annotate(name, (t / 3600.0, ev.temperature - KELVIN_OFFSET),
                           textcoords="offset points", xytext=(5, 5), fontsize=7,
                           color="#444444")
    axes = [ax, ax_out] if split else [ax]
    for a in axes:
        _style(a, None, "temperature [degC]")
    axes[-1].set_xlabel("time [h]")
    ax.set_xlim(0.0, max(th[-1], 1e-9))
    if split:
        ax.set_title("chamber, inner faces and interfaces" if not single else
                     "inner face and interfaces", fontsize=9)
        ax_out.set_title("outer faces (skin: the surfaces people can touch)" if not single
                         else "outer face (skin)", fontsize=9)
        # the panel speaks of skin temperatures: it carries the caution
        fig.supxlabel("\n".join(textwrap.wrap(SAFETY_CAUTION, 150)), fontsize=7,
                      color="#444444")
    _suptitle(fig, result, "face and interface temperatures")
    for a in axes:
        handles, labels = _visible_legend(a)
        if not handles:
            continue
        if wide or split:
            a.legend(handles, labels, loc="upper left", bbox_to_anchor=(1.01, 1.0),
                     fontsize=7, frameon=False)
        else:  # below the axes, so it never hides a curve or an event label
            fig.legend(handles, labels, loc="outside lower center", ncol=min(len(labels), 3),
                       fontsize=8, frameon=False)
    return _save(fig, path)


def _profile_times(result, times):
    if times is None:
        times = list(result.case.run.snapshots)
    times = [float(t) for t in times]
    if not times:
        t_end = float(result.times[-1])
        times = list(np.linspace(t_end / 5.0, t_end, 5))
    t_reached = float(result.times[-1])
    return sorted(set(t for t in times if t <= t_reached * (1 + 1e-9)))


def layer_label(layer) -> str:
    """Label of a layer on plots: its material's name, with the layer's own name when it has
    one that differs (``'hot face (castable-dense)'``)."""
    mat = getattr(layer.material, "name", "") or "layer"
    own = getattr(layer, "name", "") or ""
    return f"{own} ({mat})" if own and mat not in own else (own or mat)


def _per_length(result):
    """(divisor [m], label suffix) for heat flows: per metre of pipe when every wall is a
    cylinder (results of a pipe are per its length), else (1, '')."""
    walls = _walls(result)
    if walls and all(w.shape == "cylinder" for w in walls):
        lengths = {float(getattr(w, "length", 1.0)) for w in walls}
        if len(lengths) == 1:
            return lengths.pop(), "/m"
    return 1.0, ""


def _fine_profile(system, T, wall):
    """Depths [m] and temperatures [K] of a profile drawn between the nodes: the Kirchhoff
    read-out (:func:`fdwall.solver.readout.profile_points`) at a few points per cell, more on
    a coarse mesh (about 120 points per wall at least), so the curve follows ln r in a
    cylinder, 1/r in a sphere and the k(T) shape of each layer."""
    cells = max(system.meshes[wall].n - 1, 1)
    return profile_points(system, T, wall, per_cell=max(4, -(-120 // cells)))


def plot_profiles(result, path, times=None) -> str:
    """Temperature profiles [degC] through each wall against depth from the inner face [mm], at
    the case's profile times (or 5 evenly spaced times), with the layers shaded and labelled.
    The curves pass through the nodes (dots) and, between them, through the Kirchhoff
    read-out (exact at steady state for any k(T) in slab, cylinder and sphere).

    Parameters
    ----------
    result : fdwall.result.Result
    path : str or Path
        PNG file to write.
    times : sequence of float, optional
        Times of the profiles [s]; default ``case.run.snapshots`` or 5 evenly spaced.

    Returns
    -------
    str
        The path written.
    """
    from matplotlib import colormaps
    walls = _walls(result)
    times = _profile_times(result, times)
    ncol = 1 if len(walls) <= 2 else 2
    nrow = -(-len(walls) // ncol)
    fig, axes = _figure(9.0 if ncol == 1 else 13.0, 3.4 * nrow + 1.2, rows=nrow, cols=ncol)
    cmap = colormaps["viridis"]
    for j, (w, ax) in enumerate(zip(walls, axes)):
        edges = np.concatenate([[0.0], np.cumsum([l.thickness for l in w.layers])]) * 1e3
        total = edges[-1]
        for i, layer in enumerate(w.layers):
            ax.axvspan(edges[i], edges[i + 1], color=_LAYER_FILLS[i % 2], zorder=0, lw=0)
            if i > 0:
                ax.axvline(edges[i], color="#8c8c8c", lw=0.8, zorder=1)
        for k, t in enumerate(times):
            kt = int(np.argmin(np.abs(result.times - t)))
            ta = float(result.times[kt])
            xx, T = _fine_profile(result.system, np.asarray(result.T[kt], dtype=float), j)
            col = cmap(0.9 * k / max(len(times) - 1, 1))
            ax.plot(xx * 1e3, T - KELVIN_OFFSET, "-", color=col, lw=1.8,
                    label=f"t = {ta / 3600.0:.3g} h", zorder=3)
            # the nodes themselves, on the curve (not in the legend)
            ax.plot(result.x(j) * 1e3, result.wall_T(j)[kt] - KELVIN_OFFSET, ".", color=col,
                    ms=3, label="_nodes", zorder=3)
        if result.steady is not None:
            xs, Ts = _fine_profile(result.steady.system, result.steady.T, j)
            ax.plot(xs * 1e3, Ts - KELVIN_OFFSET, "--", color="black", lw=1.3,
                    label=f"steady state (conditions at {result.steady.time / 3600.0:.3g} h)",
                    zorder=4)
        _style(ax, "depth from inner face [mm]", "temperature [degC]")
        ax.set_xlim(-0.01 * total, 1.01 * total)
        # layer labels along the top (numbers only for narrow layers, named in the title)
        ymin, ymax = ax.get_ylim()
        ax.set_ylim(ymin, ymax + 0.14 * (ymax - ymin))
        ytop = ymax + 0.12 * (ymax - ymin)
        chars_across = 80 if ncol == 2 else 130   # label characters that fit across the axes
        for i, layer in enumerate(w.layers):
            width = edges[i + 1] - edges[i]
            label = layer_label(layer)
            wide = (width / total) * chars_across >= len(label) + 3
            # every layer is named by its material: across the band when it fits, else
            # upright inside the band (thin casings, foils)
            ax.text(0.5 * (edges[i] + edges[i + 1]), ytop if wide else ymax, label,
                    ha="center", va="top", fontsize=8 if wide else 7, color="#333333",
                    rotation=0 if wide else 90, zorder=6, clip_on=True, gid=f"layer-{i}",
                    bbox=None if wide else dict(fc="white", ec="none", alpha=0.75, pad=1.0))
        geo = "" if w.shape == "slab" else f" ({w.shape})"
        ttl = f"wall '{w.name}'{geo}"
        ax.set_title("\n".join(textwrap.wrap(ttl, 70 if ncol == 2 else 100)), fontsize=9)
    for ax in axes[len(walls):]:
        ax.set_visible(False)
    _suptitle(fig, result, "temperature profiles through the wall" + ("s" if len(walls) > 1 else ""))
    handles = shared_visible_legend(axes[:len(walls)])
    if handles[0]:
        fig.legend(*handles, loc="outside lower center", ncol=min(len(handles[0]), 6),
                   fontsize=8, frameon=False)
    return _save(fig, path)


def plot_energy(result, path) -> str:
    """Heat flow into the wall at each face [W or kW] (and heater power) against time [h], and
    stored energy [MJ] with the cumulative heat in from outside.

    Parameters
    ----------
    result : fdwall.result.Result
    path : str or Path
        PNG file to write.

    Returns
    -------
    str
        The path written.
    """
    sysm = result.system
    th = _hours(result)
    n_walls = len(_walls(result))
    outside = n_walls > 1
    fig, (a1, a2) = _figure(12.0 if outside else 9.0, 7.5, rows=2, sharex=True)
    q = result.face_flow
    # heater: mean power over each output interval (on/off control sampled at output
    # instants would alias); drawn as steps
    t = np.asarray(result.times, dtype=float)
    has_heater = bool(np.any(result.heater_energy > 0))
    if has_heater and t.size > 1:
        p_mean = np.diff(result.heater_energy) / np.maximum(np.diff(t), 1e-300)
    else:
        p_mean = np.zeros(0)
    big = max(np.nanmax(np.abs(q)) if q.size else 0.0,
              np.nanmax(np.abs(p_mean)) if p_mean.size else 0.0)
    per, suffix = _per_length(result)
    big /= per
    sc, pu = (1e3, "kW") if big >= 1e4 else (1.0, "W")
    sc, pu = sc * per, pu + suffix
    names = result.face_names
    walls = _walls(result)
    single = len(walls) == 1
    for f, n in enumerate(names):
        j = f // 2
        inner = n.endswith(":inner")
        if single:
            col = _WALL_COLOURS[0] if inner else _WALL_COLOURS[1]
            ls = "-"
        else:
            col = _WALL_COLOURS[j % len(_WALL_COLOURS)]
            ls = "-" if inner else "--"
        a1.plot(th, q[:, f] / sc, ls, color=col, lw=1.6, label=f"{n} (into wall)")
    if p_mean.size:
        a1.plot(th, np.append(p_mean, p_mean[-1]) / sc, "-", color="#f4a582", lw=1.0,
                drawstyle="steps-post", label="heater power (mean per output interval)",
                zorder=1)
    a1.axhline(0.0, color="#666666", lw=0.7)
    # a short start-up spike (a hot fluid meeting a cold wall) would flatten everything else:
    # scale the axis to the rest of the run and say that the peak is off scale
    series = [q[:, f] for f in range(q.shape[1])] + ([np.append(p_mean, p_mean[-1])]
                                                      if p_mean.size else [])
    late = t > 0.03 * t[-1]
    if series and np.count_nonzero(late) > 3:
        allv = np.concatenate([s_ for s_ in series]) / sc
        latev = np.concatenate([s_[late] for s_ in series]) / sc
        lo, hi = float(np.nanmin(latev)), float(np.nanmax(latev))
        span_all = float(np.nanmax(np.abs(allv)))
        span_late = max(abs(lo), abs(hi), 1e-12)
        if span_all > 4.0 * span_late:
            pad = 0.15 * (hi - lo if hi > lo else span_late)
            a1.set_ylim(min(lo, 0.0) - pad, max(hi, 0.0) + pad)
            a1.text(0.5, 0.97, f"start-up peak of {span_all:.3g} {pu} off scale",
                    transform=a1.transAxes, ha="center", va="top", fontsize=8, color="#555555")
    _style(a1, None, ("heat flow per metre of pipe" if suffix else "heat flow") + f" [{pu}]")
    _suptitle(fig, result, "heat flows and energy")
    _legend(a1, 99 if outside else len(names) + 1)

    MJ = 1e6 * per
    if single:
        layers = walls[0].layers
        for l, n in enumerate(sysm.layer_names):
            name = layer_label(layers[l]) if len(layers) == len(sysm.layer_names) \
                else n.split('/', 1)[-1]
            a2.plot(th, result.stored_layers[:, l] / MJ, "-", lw=1.2, label=f"stored: {name}")
    else:
        for j, w in enumerate(walls):
            a2.plot(th, result.stored_wall(j) / MJ, "-", lw=1.2,
                    color=_WALL_COLOURS[j % len(_WALL_COLOURS)], label=f"stored: wall {w.name}")
    if sysm.has_chamber:
        a2.plot(th, result.stored_chamber / MJ, "-", color="black", lw=1.2,
                label="stored: chamber contents")
    a2.plot(th, result.stored / MJ, "-", color="#222222", lw=2.4, alpha=0.6, label="stored: total")
    a2.plot(th, result.heat_in / MJ, ":", color="#d6604d", lw=2.0,
            label="net heat in from outside (cumulative)")
    if has_heater:
        a2.plot(th, result.heater_energy / MJ, "-.", color="#f4a582", lw=1.4,
                label="heater energy (cumulative)")
    _style(a2, "time [h]", f"energy since start [MJ{suffix}]  (1 kWh = 3.6 MJ)")
    a2.set_xlim(0.0, max(th[-1], 1e-9))
    _legend(a2, 99 if outside else 6)
    return _save(fig, path)


def write_plots(result, outdir, stem) -> list:
    """Write the three standard plots of a run into ``outdir``.

    Files: ``<stem>-temperatures.png``, ``<stem>-profiles.png``, ``<stem>-energy.png``.

    Returns
    -------
    list of str
        Paths written.
    """
    outdir = os.fspath(outdir)
    return [
        plot_temperatures(result, os.path.join(outdir, f"{stem}-temperatures.png")),
        plot_profiles(result, os.path.join(outdir, f"{stem}-profiles.png")),
        plot_energy(result, os.path.join(outdir, f"{stem}-energy.png")),
    ]
