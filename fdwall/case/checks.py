"""Warnings about a case that can be given before it runs.

:func:`case_warnings` lists

* materials whose maximum service temperature (``Material.t_max``) is below a temperature the
  case imposes on them: a fixed face temperature, the fluid or radiant-surroundings
  temperature at a face, the setpoint (on the layers between the heater and the sensor), or a
  start temperature.  A face's temperature reaches the layer at that face and the layers
  behind thin conductive ones (summed resistance below 0.01 m2K/W, e.g. a metal liner);
* convection correlations used outside the range of their data, checked at an assumed
  surface temperature (30 K from the air at the face).

The interior of a wall is not known before the run: layers that get too hot *inside* a wall
are found from the results (``fdwall.materials.check_service_temperature`` on the computed
temperatures).
"""

from __future__ import annotations

import numpy as np

from ..schedule import Schedule

__all__ = ["case_warnings"]

C0 = 273.15  # degC = K - C0
ASSUMED_SKIN_DIFFERENCE = 30.0  # [K] surface-to-air difference assumed for correlation checks


def _max(x):
    if x is None:
        return None
    return max(x.values) if isinstance(x, Schedule) else float(x)


def _c(T) -> str:
    return f"{T - C0:.0f} degC"


def _face_sources(face):
    """(temperature [K], what) imposed by a Face, hottest first."""
    out = []
    if face is None:
        return out
    for attr, what in (("fixed_temperature", "fixed surface temperature"),
                       ("fluid_temperature", "fluid temperature"),
                       ("surroundings_temperature", "radiant surroundings temperature")):
        v = _max(getattr(face, attr, None))
        if v is not None:
            out.append((v, what))
    return out


def _layer_service(out, wall, i, T, what):
    layer = wall.layers[i]
    m = layer.material
    tm = getattr(m, "t_max", None)
    if tm is None or not T > tm:
        return
    out.append(
        f"Wall '{wall.name}', layer {i} '{layer.label}' (material '{m.name}'): its maximum "
        f"service temperature is {_c(tm)} ({tm:.1f} K), but the case imposes {_c(T)} "
        f"({T:.1f} K) on it ({what}). Above its limit the material may sinter, melt, oxidise or "
        "lose binder or strength, and its properties are extrapolated; choose a material rated "
        "for this temperature or put a better-rated layer on the hot side.")


#: Layers behind a face whose summed resistance is below this see the face's temperature [m2K/W]
THIN_RESISTANCE = 0.01


def _exposed(wall, side):
    """Indices of the layers that see a face's temperature: the face layer and the ones
    behind thin, conductive layers (a metal liner passes the face temperature on)."""
    order = range(len(wall.layers)) if side == "inner" else range(len(wall.layers) - 1, -1, -1)
    out, r = [], 0.0
    for i in order:
        out.append(i)
        l = wall.layers[i]
        k = float(l.material.k(600.0))
        r += l.thickness / k
        if r >= THIN_RESISTANCE:
            break
    return out


def _service_warnings(case, sysm=None):
    out = []
    walls = case.wall_list
    # --- faces
    if case.is_enclosure:
        sp = _max(case.control.setpoint) if case.control.mode in ("thermostat", "pid") else None
        for j, ew in enumerate(case.walls):
            w = ew.wall
            if sp is not None:
                for i in _exposed(w, "inner"):
                    _layer_service(out, w, i, sp, "the chamber setpoint, seen by the inner face")
            for T, what in _face_sources(ew.outer):
                for i in _exposed(w, "outer"):
                    _layer_service(out, w, i, T, f"the {what} of the outer face")
    else:
        w = walls[0]
        for T, what in _face_sources(case.inner):
            for i in _exposed(w, "inner"):
                _layer_service(out, w, i, T, f"the {what} of the inner face")
        for T, what in _face_sources(case.outer):
            for i in _exposed(w, "outer"):
                _layer_service(out, w, i, T, f"the {what} of the outer face")
    # --- setpoint of a wall sensor: the layer holding the sensor, and the layers between it
    # and a heater on the inner side, run at least at the setpoint
    ctl = case.control
    if ctl.mode in ("thermostat", "pid") and ctl.sensor == "wall" and ctl.setpoint is not None \
            and 0 <= ctl.sensor_wall < len(walls):
        w = walls[ctl.sensor_wall]
        edges = np.concatenate([[0.0], np.cumsum([l.thickness for l in w.layers])])
        k = int(np.clip(np.searchsorted(edges, ctl.sensor_depth, side="right") - 1, 0,
                        len(w.layers) - 1))
        hz = case.heater
        first = 0 if hz is not None and hz.placement in ("chamber", "inner_face") else k
        if hz is not None and hz.placement == "interface" and hz.wall == ctl.sensor_wall:
            first = min(k, hz.after_layer + 1)
        sp = _max(ctl.setpoint)
        for i in range(first, k + 1):
            _layer_service(out, w, i, sp, "the setpoint of the wall sensor "
                                          f"{ctl.sensor_depth * 1000:g} mm deep")
    # --- start temperatures
    init = np.asarray(case.run.start_temperature, dtype=float)
    if init.ndim == 0:
        for w in walls:
            for i, layer in enumerate(w.layers):
                T0 = float(init) if layer.start_temperature is None else layer.start_temperature
                _layer_service(out, w, i, T0, "the start temperature" if layer.start_temperature is None
                               else "its start temperature")
    elif sysm is not None:   # a start temperature per node: needs the system's node map
        try:
            if init.shape == (sysm.n_unknowns,):
                seen = {}
                gid = 0
                for w, o, b in zip(sysm.walls, sysm.wall_origin, sysm.is_bridge):
                    for i in range(len(w.layers)):
                        nodes = np.where((sysm.layer_of_half == gid).any(axis=1))[0]
                        if not b and nodes.size:
                            key = (o, i)
                            seen[key] = max(seen.get(key, -np.inf), float(init[nodes].max()))
                        gid += 1
                for (o, i), T in sorted(seen.items()):
                    _layer_service(out, walls[o], i, T, "its start temperature")
        except Exception:  # a warning pass must never fail the load
            pass
    # one message per layer and cause is enough; keep the order
    uniq = []
    for m in out:
        if m not in uniq:
            uniq.append(m)
    return uniq


def _convection_warnings(case):
    out = []

    def check(conv, Tf, hotter, label):
        if conv is None or isinstance(conv, (int, float)) or Tf is None:
            return
        if not hasattr(conv, "validity_warnings"):
            return
        Ts = Tf + (ASSUMED_SKIN_DIFFERENCE if hotter else -ASSUMED_SKIN_DIFFERENCE)
        try:
            msgs = conv.validity_warnings(Ts, Tf)
        except Exception:
            return
        for m in msgs:
            out.append(f"{label}, convection model '{conv.kind}' (checked at an assumed surface "
                       f"temperature of {_c(Ts)} with air at {_c(Tf)}): {m}")

    if case.is_enclosure:
        sp = _max(case.control.setpoint)
        for ew in case.walls:
            check(ew.outer.convection, _max(ew.outer.fluid_temperature), True,
                  f"Wall '{ew.wall.name}' outer face")
            check(ew.inner_face_convection, sp, False, f"Wall '{ew.wall.name}' inner face")
    else:
        w = case.wall
        hot_in = max([T for T, _ in _face_sources(case.inner)] or [0.0])
        hot_out = max([T for T, _ in _face_sources(case.outer)] or [0.0])
        if case.heater is not None or case.inner.heat_flux is not None:
            hot_in = max(hot_in, hot_out + 1.0)
        check(case.inner.convection, _max(case.inner.fluid_temperature), hot_in < hot_out,
              f"Wall '{w.name}' inner face")
        check(case.outer.convection, _max(case.outer.fluid_temperature), hot_out <= hot_in,
              f"Wall '{w.name}' outer face")
    return out


def case_warnings(case, system=None) -> list:
    """Warnings about a case found before running it.

    Parameters
    ----------
    case : fdwall.model.Case
        A case (e.g. from :func:`fdwall.case.load_case`).
    system : fdwall.system.System, optional
        The case's system (``fdwall.build_system(case)``), read only.  Needed only for a
        start temperature given per node (an array): without it those starts are not checked
        against the layers' service temperatures (the case layer builds no system).

    Returns
    -------
    list of str
        One paragraph per warning: materials whose maximum service temperature [K] is below a
        temperature the case imposes on them (fixed face temperature, air or surroundings
        temperature at the face, setpoint, start temperature), then convection correlations
        used outside their data range.  Empty when nothing was found.
    """
    return _service_warnings(case, system) + _convection_warnings(case)
