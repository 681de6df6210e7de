"""Results of a run: arrays, derived quantities (stored energy, energy ledger), HDF5 archive.

The HDF5 layout (groups, datasets, attributes, units) and the JSON summary are documented in
docs/results.md, which tests/test_results_files.py holds to the files actually written.
"""
from __future__ import annotations

import json
import os
import shutil
from dataclasses import dataclass, fields
from datetime import datetime, timezone
from html import escape
from importlib.metadata import version

import numpy as np

from .atomic import atomic_path
from .h5tree import h5_atomic
from .materials import check_service_temperature
from .provenance import provenance, stamp_h5
from .solver import layout as K
from .solver.layout import EV_DOWN, EV_UP, EX_HEATER, EX_LOSS, FI_NODE
from .solver.readout import temperature_at

__all__ = ["Result", "FileResult", "read_result", "series_view", "stream_series",
           "STREAMED"]


def _version():
    try:
        return version("fdwall")
    except Exception:  # pragma: no cover - running from a source tree
        return "0+unknown"


def _heat_capacity(sysm, T0) -> float:
    """Total heat capacity of walls and chamber at the start state [J/K]: the enthalpy it
    takes to raise every node from ``T0`` [K] by 1 K (forward difference, so a start at the
    1 K floor needs no property below it)."""
    T0 = np.asarray(T0, float)
    Hh, Hc = sysm.enthalpy(np.vstack([T0, T0 + 1.0]))
    dH = float(Hh[1].sum() - Hh[0].sum()) + float(np.sum(Hc[1]) - np.sum(Hc[0]))
    return dH if np.isfinite(dH) else 0.0


@dataclass
class Result:
    """Everything a transient run produced.

    Attributes
    ----------
    times : ndarray
        Output times [s].
    T : ndarray
        Temperatures of all unknowns at output times (n_time, n_unknowns) [K].
    face_flow : ndarray
        Heat flowing into the wall at each face (n_time, n_faces) [W].
    face_energy : ndarray
        Cumulative heat into the wall at each face (n_time, n_faces) [J].
    heater_energy, loss_energy : ndarray
        Cumulative heater energy and chamber loss to ambient [J].
    heater_power : ndarray
        Heater power at the output times [W].
    h_conv, h_rad : ndarray
        Convective and linearised radiative film coefficients per face [W/m2/K].
    stats : dict
        Solver statistics (steps accepted/rejected, Newton iterations, ...).
    events : dict
        name -> (first upward crossing [s], first downward crossing [s]); NaN when none.
    complete : bool
        False when the run stopped early (see ``message``).
    status : str
        How the run ended: "complete", "interrupted" (stopped on request: Ctrl-C, SIGTERM,
        an observer), "not converged" or "implausible" (see ``message``).
    """

    case: object
    system: object
    times: np.ndarray
    T: np.ndarray
    face_flow: np.ndarray
    face_energy: np.ndarray
    heater_energy: np.ndarray
    loss_energy: np.ndarray
    heater_power: np.ndarray
    h_conv: np.ndarray
    h_rad: np.ndarray
    stats: dict
    events: dict
    complete: bool = True
    message: str = ""
    status: str = "complete"
    wall_time: float = 0.0
    steady: object = None
    control_state: object = None
    #: Spatial error estimate and contract margin (fdwall.solver.accuracy); None: not made.
    error_estimate: object = None
    #: The enclosure analysis of the run (fdwall.analyses.summarise_enclosure, steady hold
    #: included), set by the caller that made it; the text summary shows it. None: not made.
    enclosure: object = None

    #: Path of the HDF5 file that backs the result (:class:`FileResult`); None: in memory.
    store = None

    @classmethod
    def from_run(cls, case, sysm, t_out, T_out, qf_out, E_out, P_out, hc_out, hr_out, stats,
                 ev_out, complete, wall_time):
        n = len(t_out)
        if not complete:
            n = int(np.sum(np.isfinite(T_out[:, 0])))
        nf = qf_out.shape[1]
        st = {
            "accepted_steps": int(stats[K.ST_ACC]), "rejected_steps": int(stats[K.ST_REJ]),
            "newton_failures": int(stats[K.ST_NFAIL]), "newton_iterations": int(stats[K.ST_NEWTON]),
            "event_retries": int(stats[K.ST_EVRETRY]), "assemblies": int(stats[K.ST_ASSEMBLE]),
            "min_step_s": float(stats[K.ST_HMIN]) if np.isfinite(stats[K.ST_HMIN]) else 0.0,
            "max_step_s": float(stats[K.ST_HMAX]), "reached_s": float(stats[K.ST_T]),
            "tolerance_K": float(case.run.tolerance), "wall_time_s": float(wall_time),
            "nodes": int(sysm.n_unknowns),
            "energy_residual_max_J": float(stats[K.ST_RESMAX]),
            "energy_scale_J": float(stats[K.ST_SCALE]),
            "heat_capacity_J_per_K": _heat_capacity(sysm, T_out[0]),
        }
        evs = {}
        for e, ev in enumerate(case.run.watch):
            evs[ev.name or f"event{e + 1}"] = (float(ev_out[e, EV_UP]), float(ev_out[e, EV_DOWN]))
        # the temperature history is the run's own array when every row of it is kept (no
        # copy of the largest array; the driver hands it over), else the rows kept
        T = T_out if n == T_out.shape[0] and T_out.flags.c_contiguous else T_out[:n].copy()
        return cls(case=case, system=sysm, times=t_out[:n].copy(), T=T,
                   face_flow=qf_out[:n].copy(), face_energy=E_out[:n, :nf].copy(),
                   heater_energy=E_out[:n, nf + EX_HEATER].copy(),
                   loss_energy=E_out[:n, nf + EX_LOSS].copy(),
                   heater_power=P_out[:n].copy(), h_conv=hc_out[:n].copy(),
                   h_rad=hr_out[:n].copy(), stats=st, events=evs, complete=complete,
                   status="complete" if complete else "stopped early",
                   wall_time=wall_time)

    # ----------------------------------------------------------------- temperatures
    # Wall arguments below count the 1-D *paths* solved: the case's walls in order, with the
    # bridge path of a bridged wall inserted right after its clear path.  Without bridges the
    # path index equals the case wall index; ``path_of(case_wall)`` maps one to the other.
    def path_of(self, case_wall: int, bridge: bool = False) -> int:
        """Path index of case wall ``case_wall`` (its clear path, or its bridge path)."""
        return self.system.path_of(case_wall, bridge)

    @property
    def face_names(self):
        """Labels of the faces, '<wall>:inner' and '<wall>:outer'."""
        return list(self.system.face_names)

    @property
    def face_T(self) -> np.ndarray:
        """Temperature of every face (n_time, n_faces) [K]."""
        return self.T[:, self.system.face_i[:, FI_NODE]]

    def wall_T(self, wall: int = 0) -> np.ndarray:
        """Node temperatures of one wall (n_time, n_nodes) [K]."""
        return self.T[:, self.system.wall_nodes(wall)]

    def x(self, wall: int = 0) -> np.ndarray:
        """Node positions of one wall, depth from the inner face [m]."""
        m = self.system.meshes[wall]
        return m.x - m.x[0]

    def T_at_depth(self, depth: float, wall: int = 0) -> np.ndarray:
        """Temperature history at ``depth`` [m] below the inner face of a wall (n_time) [K].

        Read between the two nodes around that depth in the Kirchhoff integral K = int k dT,
        linear in x (slab), ln r (cylinder) or -1/r (sphere), as sensors and events are read:
        exact at steady state for any k(T) (see :mod:`fdwall.solver.readout`).  ``wall``
        counts the solved paths, as :meth:`wall_T` does.
        """
        return temperature_at(self.system, self.T, wall, depth)

    def interface_T(self, wall: int = 0) -> np.ndarray:
        """Temperatures at the interfaces of a wall (n_time, n_interfaces) [K]."""
        m = self.system.meshes[wall]
        return self.wall_T(wall)[:, m.interface_nodes]

    @property
    def chamber_T(self):
        """Chamber temperature (n_time) [K], or None without a chamber."""
        return self.T[:, -1] if self.system.has_chamber else None

    def profile(self, t: float, wall: int = 0):
        """Temperature profile nearest to time ``t`` [s]: (depth [m], T [K], actual time [s])."""
        k = int(np.argmin(np.abs(self.times - t)))
        return self.x(wall), self.wall_T(wall)[k], float(self.times[k])

    @property
    def duty(self) -> np.ndarray:
        """Mean heater duty over each output interval (n_time; first entry 0) [-]: heater
        energy in the interval over what the element would give fully on (rated-power
        schedule times the voltage ratio squared).  Zeros without a heater."""
        out = np.zeros(self.times.size)
        hz = getattr(self.case, "heater", None)
        if hz is None:
            return out
        for k in range(1, self.times.size):
            full = hz.power.integral(self.times[k - 1], self.times[k]) * hz.voltage_ratio ** 2
            if full > 0:
                out[k] = (self.heater_energy[k] - self.heater_energy[k - 1]) / full
        return out

    # ----------------------------------------------------------------- energy
    def _enthalpy(self):
        if not hasattr(self, "_H"):
            self._H = self.system.enthalpy(self.T)
        return self._H

    @property
    def stored_layers(self) -> np.ndarray:
        """Energy stored in each layer relative to the start (n_time, n_layers) [J]."""
        Hh, Hc = self._enthalpy()
        lid = self.system.layer_of_half
        n_l = len(self.system.layer_names)
        out = np.zeros((self.T.shape[0], n_l))
        for s in (0, 1):
            for l in range(n_l):
                mask = lid[:, s] == l
                out[:, l] += Hh[:, mask, s].sum(axis=1)
        return out - out[0]

    @property
    def stored_chamber(self) -> np.ndarray:
        """Energy stored in the chamber contents relative to the start (n_time) [J]."""
        Hh, Hc = self._enthalpy()
        return Hc - Hc[0]

    @property
    def stored(self) -> np.ndarray:
        """Total energy stored in walls and chamber relative to the start (n_time) [J]."""
        return self.stored_layers.sum(axis=1) + self.stored_chamber

    def stored_wall(self, wall: int) -> np.ndarray:
        """Energy stored in one wall relative to the start (n_time) [J]."""
        cols = [l for l, w in enumerate(self.system.layer_wall) if w == wall]
        return self.stored_layers[:, cols].sum(axis=1)

    @property
    def heat_in(self) -> np.ndarray:
        """Cumulative heat entering the system from outside (faces + heater - chamber loss) [J]."""
        ext = self.system.external
        return self.face_energy[:, ext].sum(axis=1) + self.heater_energy - self.loss_energy

    @property
    def residual(self) -> np.ndarray:
        """Energy-balance residual: heat in - heat out - change in stored energy (n_time) [J]."""
        return self.heat_in - self.stored

    @property
    def residual_scale(self) -> float:
        """Energy the residual is measured against [J]: the total heat capacity of walls and
        chamber times 1 K (``heat_capacity_J_per_K`` x 1 K) plus the energy throughput (the
        largest energy that crossed a face, was delivered by the heater or was stored,
        ``energy_scale_J``).  The first term keeps the scale meaningful for a case at rest,
        where no energy moves."""
        cap = self.stats.get("heat_capacity_J_per_K", 0.0) * 1.0
        return float(cap + self.stats.get("energy_scale_J", 0.0))

    @property
    def relative_residual(self) -> float:
        """Largest |energy residual| over all accepted steps over ``residual_scale`` [-]:
        |residual| / (total heat capacity x 1 K + energy throughput).

        Checked inside the kernel at every step end, where the ledger is exact; the
        ``residual`` series at output times between steps also carries the interpolation
        error of the outputs (see ``RunSettings.exact_outputs``).
        """
        scale = max(self.residual_scale, 1e-300)
        return float(self.stats.get("energy_residual_max_J", np.nan) / scale)

    def layer_max_T(self) -> list:
        """Highest temperature reached in each layer over the run (one per layer id) [K]."""
        lid = self.system.layer_of_half
        Tw = self.T[:, :self.system.n_nodes]
        tmax = np.max(Tw, axis=0)
        out = []
        for l in range(len(self.system.layer_names)):
            nodes = np.where((lid[:, 0] == l) | (lid[:, 1] == l))[0]
            out.append(float(tmax[nodes].max()) if nodes.size else float("nan"))
        return out

    def warnings(self) -> list:
        """Materials used above their maximum service temperature (text, one per layer)."""
        out = []
        layers = [l for w in self.system.walls for l in w.layers]
        for name, layer, tm in zip(self.system.layer_names, layers, self.layer_max_T()):
            msg = check_service_temperature(layer.material, tm)
            if msg:
                out.append(f"layer {name}: {msg}")
        return out

    # ----------------------------------------------------------------- summary and files
    def summary(self) -> dict:
        """A plain dict of the headline numbers (SI units, keys name the unit)."""
        sysm = self.system
        walls = sysm.walls
        faces = []
        for f, name in enumerate(self.face_names):
            faces.append({
                "face": name,
                "T_final_K": float(self.face_T[-1, f]),
                "T_max_K": float(np.max(self.face_T[:, f])),
                "heat_in_final_W": float(self.face_flow[-1, f]),
                "energy_in_J": float(self.face_energy[-1, f]),
                "h_conv_final_W_m2K": float(self.h_conv[-1, f]),
                "h_rad_final_W_m2K": float(self.h_rad[-1, f]),
            })
        wall_rows = []
        for j, w in enumerate(walls):
            wall_rows.append({
                "wall": w.name,
                "interfaces_final_K": [float(v) for v in self.interface_T(j)[-1]],
                "stored_final_J": float(self.stored_wall(j)[-1]),
            })
        out = {
            "case": self.case.name,
            "complete": bool(self.complete),
            "status": self.status,
            "message": self.message,
            "duration_s": float(self.times[-1]),
            "faces": faces,
            "walls": wall_rows,
            "layers": {n: float(v) for n, v in zip(sysm.layer_names, self.stored_layers[-1])},
            "stored_total_J": float(self.stored[-1]),
            "heater_energy_J": float(self.heater_energy[-1]),
            "chamber_loss_J": float(self.loss_energy[-1]),
            "energy_residual_J": float(self.residual[-1]),
            "energy_residual_relative": self.relative_residual,
            "events": {k: {"up_s": v[0], "down_s": v[1]} for k, v in self.events.items()},
            "layer_max_K": {n: v for n, v in zip(sysm.layer_names, self.layer_max_T())},
            "warnings": self.warnings(),
            "solver": self.stats,
        }
        bridges = {}
        for j, (w, o, b) in enumerate(zip(sysm.walls, sysm.wall_origin, sysm.is_bridge)):
            if b:
                main = sysm.chain_of(o)
                qb = self.face_energy[-1, 2 * j + 1]
                qm = self.face_energy[-1, 2 * main + 1]
                tot = qb + qm
                bridges[sysm.walls[main].name] = {
                    "bridge_share_of_outer_heat_loss": float(qb / tot) if tot != 0 else 0.0,
                    "bridge_outer_T_final_K": float(self.face_T[-1, 2 * j + 1]),
                    "clear_outer_T_final_K": float(self.face_T[-1, 2 * main + 1])}
        if bridges:
            out["bridges"] = bridges
        if sysm.area_factor != 1.0:
            out["box_edge_corner_area_factor"] = float(sysm.area_factor)
        if sysm.has_chamber:
            out["chamber_final_K"] = float(self.chamber_T[-1])
            out["chamber_max_K"] = float(np.max(self.chamber_T))
        if self.steady is not None:
            out["steady"] = self.steady.summary()
        if self.error_estimate is not None:
            out["error_estimate"] = _plain(self.error_estimate)
        return out

    # ----------------------------------------------------------------- notebooks
    def faces_frame(self):
        """Face series as a pandas DataFrame: index time [s], for every face its temperature
        [K], heat flow into the wall [W], cumulative energy [J] and film coefficients [W/m2/K];
        columns are named ``'<face> <quantity> [<unit>]'``."""
        import pandas as pd
        cols = {}
        for f, name in enumerate(self.face_names):
            cols[f"{name} T [K]"] = self.face_T[:, f]
            cols[f"{name} heat_flow [W]"] = self.face_flow[:, f]
            cols[f"{name} energy [J]"] = self.face_energy[:, f]
            cols[f"{name} h_conv [W/m2/K]"] = self.h_conv[:, f]
            cols[f"{name} h_rad [W/m2/K]"] = self.h_rad[:, f]
        return pd.DataFrame(cols, index=pd.Index(self.times, name="time [s]"))

    def interfaces_frame(self):
        """Interface temperatures of every wall as a pandas DataFrame: index time [s], one
        column ``'<wall>: <layer> | <layer> [K]'`` per interface [K]."""
        import pandas as pd
        cols = {}
        for j, w in enumerate(self.system.walls):
            Ti = self.interface_T(j).reshape(len(self.times), -1)
            for i, (a, b) in enumerate(zip(w.layers[:-1], w.layers[1:])):
                cols[f"{w.name}: {a.label} | {b.label} [K]"] = Ti[:, i]
        return pd.DataFrame(cols, index=pd.Index(self.times, name="time [s]"))

    def profiles_frame(self, times=None, wall: int = 0):
        """Temperature profiles through one wall as a pandas DataFrame: index ``x [m]``
        (depth from the inner face) [m], one column per output time, the column index named
        ``time [s]`` holding the actual output times [s]; values are node temperatures [K].

        Parameters
        ----------
        times : sequence of float, optional
            Wanted times [s]; each is taken at the nearest output time (as
            :meth:`profile`).  Default: the case's profile times, or else every output time.
        wall : int
            Path index of the wall (see :meth:`path_of`) [-].
        """
        import pandas as pd
        if times is None:
            times = list(self.case.run.snapshots) or list(self.times)
        idx = []
        for t in times:
            k = int(np.argmin(np.abs(self.times - float(t))))
            if k not in idx:
                idx.append(k)
        Tw = self.wall_T(wall)
        df = pd.DataFrame(Tw[idx].T, index=pd.Index(self.x(wall), name="x [m]"),
                          columns=pd.Index(self.times[idx], name="time [s]"))
        df.attrs.update({"units": "K", "wall": self.system.walls[wall].name,
                         "case": self.case.name})
        return df

    def to_xarray(self, wall: int = 0):
        """Node temperatures of one wall as an xarray Dataset: variable ``T`` [K] on dims
        ``time`` [s] x ``x`` (depth from the inner face) [m].  Needs xarray (optional)."""
        try:
            import xarray as xr
        except ImportError as exc:
            raise ImportError("Result.to_xarray needs the optional package xarray, which is "
                              "not installed; install it with 'pip install xarray' or use "
                              "faces_frame() / interfaces_frame() (pandas) instead.") from exc
        w = self.system.walls[wall]
        return xr.Dataset(
            {"T": (("time", "x"), self.wall_T(wall), {"units": "K",
                                                      "long_name": "node temperature"})},
            coords={"time": ("time", self.times, {"units": "s"}),
                    "x": ("x", self.x(wall), {"units": "m",
                                              "long_name": "depth from the inner face"})},
            attrs={"case": self.case.name, "wall": w.name, "geometry": w.shape})

    def _repr_html_(self) -> str:
        """Short summary table for notebooks (final and peak face temperatures in degC)."""
        state = "complete" if self.complete else f"stopped early: {escape(self.message)}"
        rows = "".join(
            f"<tr><td>{escape(n)}</td><td>{self.face_T[-1, f] - 273.15:.2f}</td>"
            f"<td>{np.max(self.face_T[:, f]) - 273.15:.2f}</td>"
            f"<td>{self.face_flow[-1, f]:.4g}</td></tr>"
            for f, n in enumerate(self.face_names))
        return (f"<div><b>fdwall result: {escape(str(self.case.name))}</b> "
                f"({state}; {self.times[-1]:.6g} s, {self.times.size} outputs, "
                f"energy residual {self.relative_residual:.2e} relative)"
                "<table><thead><tr><th>face</th><th>final T [degC]</th>"
                "<th>max T [degC]</th><th>final heat flow into wall [W]</th></tr></thead>"
                f"<tbody>{rows}</tbody></table></div>")

    def _write_error_estimate(self, h):
        """Write ``/error_estimate`` when the run carries one."""
        if self.error_estimate is not None:
            _write_error_estimate_group(h, self.error_estimate)

    def write_hdf5(self, path) -> str:
        """Write the run to ``path`` atomically (a temporary file renamed when complete)."""
        path = os.fspath(path)
        with h5_atomic(path) as h:
            self._write(h)
        return path

    def _write(self, h):
        import h5py
        sysm = self.system
        h.attrs["fdwall_version"] = _version()
        h.attrs["case_name"] = self.case.name
        h.attrs["complete"] = bool(self.complete)
        h.attrs["status"] = self.status
        h.attrs["message"] = self.message
        h.attrs["created"] = datetime.now(timezone.utc).isoformat()
        h.attrs["kind"] = "transient"
        stamp_h5(h, provenance(self.case))
        ident = dict(getattr(self.case, "report", ()) or ())
        if ident:  # the case file's [report] table: identification block of the HTML report
            rg = h.create_group("report")
            for k, v in ident.items():
                rg.attrs[k] = str(v)
        g = h.create_group("input")
        g.create_dataset("case_text", data=self.case.source or "")
        g.create_dataset("resolved_json", data=json.dumps(resolved_inputs(self.case), default=str))

        def ds(grp, name, data, units, **attrs):
            if name in grp:      # streamed during the run (FileResult): keep its rows
                d = grp[name]
            else:
                data = np.asarray(data)
                kw = {}
                if data.ndim >= 1 and data.size > 16:
                    kw = dict(chunks=True, compression="gzip",
                              maxshape=(None,) + data.shape[1:])
                d = grp.create_dataset(name, data=data, **kw)
            d.attrs["units"] = units
            for k, v in attrs.items():
                d.attrs[k] = v
            return d

        mg = h.create_group("mesh")
        for j, (w, m) in enumerate(zip(sysm.walls, sysm.meshes)):
            wg = mg.create_group(f"wall_{j}")
            wg.attrs["name"] = w.name
            wg.attrs["geometry"] = w.shape
            ds(wg, "x", m.x, "m")
            ds(wg, "layer_first", [a for a, b in m.layer_nodes], "1")
            ds(wg, "layer_last", [b for a, b in m.layer_nodes], "1")
            ds(wg, "interface_nodes", np.array(m.interface_nodes, dtype=int), "1")
            wg.attrs["layers"] = json.dumps([l.label for l in w.layers])
        ig = h.require_group("interfaces")
        for j, w in enumerate(sysm.walls):
            d = ds(ig, f"wall_{j}", self.interface_T(j).reshape(len(self.times), -1), "K")
            d.attrs["wall"] = w.name
            d.attrs["between"] = json.dumps([f"{a.label} | {b.label}"
                                             for a, b in zip(w.layers[:-1], w.layers[1:])])
        ds(h, "time", self.times, "s")
        ds(h, "temperature", self.T, "K")
        fg = h.require_group("faces")
        fg.create_dataset("names", data=np.array(self.face_names, dtype=object),
                          dtype=h5py.string_dtype())
        ds(fg, "heat_flow", self.face_flow, "W")
        ds(fg, "energy", self.face_energy, "J")
        ds(fg, "h_convective", self.h_conv, "W/m2/K")
        ds(fg, "h_radiative", self.h_rad, "W/m2/K")
        ds(fg, "temperature", self.face_T, "K")
        eg = h.require_group("energy")
        ds(eg, "stored", self.stored, "J")
        ds(eg, "stored_layers", self.stored_layers, "J",
           layer_names=json.dumps(list(sysm.layer_names)))
        ds(eg, "stored_chamber", self.stored_chamber, "J")
        ds(eg, "heater", self.heater_energy, "J")
        ds(eg, "loss_chamber", self.loss_energy, "J")
        ds(eg, "residual", self.residual, "J", relative_max=self.relative_residual)
        hg = h.require_group("heater")
        ds(hg, "power", self.heater_power, "W")
        ds(hg, "duty", self.duty, "1")
        evg = h.create_group("events")
        names = list(self.events)
        evg.create_dataset("names", data=np.array(names, dtype=object), dtype=h5py.string_dtype())
        ds(evg, "up", np.array([v[0] for v in self.events.values()]), "s")
        ds(evg, "down", np.array([v[1] for v in self.events.values()]), "s")
        h.create_dataset("warnings", data=np.array(self.warnings(), dtype=object),
                         dtype=h5py.string_dtype())
        sg = h.create_group("solver")
        for k, v in self.stats.items():
            sg.attrs[k] = v
        self._write_error_estimate(h)
        if self.steady is not None:
            stg = h.create_group("steady")
            ds(stg, "temperature", self.steady.T, "K")
            stg.attrs["summary_json"] = json.dumps(self.steady.summary(), default=float)


#: HDF5 paths of the time series of a result file (one row per output time), streamed by
#: :class:`fdwall.solver.observers.StorageObserver`; :func:`stream_series` gives their rows.
STREAMED = ("time", "temperature", "interfaces/wall_{j}", "faces/heat_flow", "faces/energy",
            "faces/h_convective", "faces/h_radiative", "faces/temperature", "energy/stored",
            "energy/stored_layers", "energy/stored_chamber", "energy/heater",
            "energy/loss_chamber", "energy/residual", "heater/power", "heater/duty")

#: Result attribute -> dataset of a result file holding it.
_ARRAY_DATASETS = {"times": "time", "T": "temperature", "face_flow": "faces/heat_flow",
                   "face_energy": "faces/energy", "heater_energy": "energy/heater",
                   "loss_energy": "energy/loss_chamber", "heater_power": "heater/power",
                   "h_conv": "faces/h_convective", "h_rad": "faces/h_radiative"}


def series_view(case, sysm, t, T, qf, E, P, hc, hr) -> Result:
    """A :class:`Result` over some consecutive output rows (no statistics), from the driver's
    raw arrays: times [s], temperatures [K], face flows [W], energies (faces, heater, loss)
    [J], heater power [W], film coefficients [W/m2/K].  Its derived series (stored energy,
    residual, duty) are those of the whole run at these rows when the rows start with the
    run's first row (the reference of the stored energy) and, before the rows wanted, the
    row preceding them (the duty of an interval needs its start)."""
    nf = qf.shape[1]
    return Result(case=case, system=sysm, times=t, T=T, face_flow=qf, face_energy=E[:, :nf],
                  heater_energy=E[:, nf + EX_HEATER], loss_energy=E[:, nf + EX_LOSS],
                  heater_power=P, h_conv=hc, h_rad=hr, stats={}, events={})


def stream_series(view: Result, skip: int = 0) -> dict:
    """The time series of a result file (:data:`STREAMED`, as :meth:`Result.write_hdf5`
    writes them) at the rows of ``view`` after the first ``skip`` (context rows, see
    :func:`series_view`): dataset path -> array (SI units: s, K, W, J, W/m2/K, -)."""
    n = len(view.times)
    out = {"time": view.times, "temperature": view.T}
    for j in range(len(view.system.walls)):
        out[f"interfaces/wall_{j}"] = view.interface_T(j).reshape(n, -1)
    out.update({"faces/heat_flow": view.face_flow, "faces/energy": view.face_energy,
                "faces/h_convective": view.h_conv, "faces/h_radiative": view.h_rad,
                "faces/temperature": view.face_T, "energy/stored": view.stored,
                "energy/stored_layers": view.stored_layers,
                "energy/stored_chamber": view.stored_chamber,
                "energy/heater": view.heater_energy, "energy/loss_chamber": view.loss_energy,
                "energy/residual": view.residual, "heater/power": view.heater_power,
                "heater/duty": view.duty})
    return {k: np.asarray(v)[skip:] for k, v in out.items()}


def _lazy(attr):
    def get(self):
        return self._load(attr)
    get.__doc__ = f"``{attr}`` of the run, read from ``{_ARRAY_DATASETS[attr]}`` of the file."
    return property(get)


class FileResult(Result):
    """A run whose output went to an HDF5 file as it ran (``run(case, store=path)``).

    It has everything a :class:`Result` has, with the same numbers.  The series (``times``,
    ``T``, ``face_flow``, ...) live in the file and are read from it when first used (then
    kept in memory), so a long run costs memory only for what is looked at.
    :meth:`summary` needs no series: it comes from the first and last rows and the running
    maxima the run kept.  ``store`` is the file's path.

    While the file is still open under its temporary name (``StorageObserver(path,
    keep_open=True)``), :meth:`write_hdf5` with that path finishes it (adding e.g. a
    ``steady`` set in the meantime) and :meth:`discard` removes it.
    """

    times = _lazy("times")
    T = _lazy("T")
    face_flow = _lazy("face_flow")
    face_energy = _lazy("face_energy")
    heater_energy = _lazy("heater_energy")
    loss_energy = _lazy("loss_energy")
    heater_power = _lazy("heater_power")
    h_conv = _lazy("h_conv")
    h_rad = _lazy("h_rad")

    def __new__(cls, *args, **kw):
        if kw and "storage" not in kw and not args:
            # dataclasses.replace(file_result, ...) builds from Result's fields: a changed
            # copy is an ordinary in-memory Result
            return Result(**kw)
        return super().__new__(cls)

    def __init__(self, ends: Result, storage):
        self.__dict__["_fields"] = [f.name for f in fields(Result)
                                    if f.name not in _ARRAY_DATASETS]
        for name in self._fields:
            setattr(self, name, getattr(ends, name))
        self._ends = ends
        self._storage = storage
        self._cache = {}

    @property
    def store(self):
        """Path of the HDF5 file holding the series (its final name)."""
        return self._storage.path

    @property
    def n_outputs(self) -> int:
        """Number of output rows in the file [-]."""
        return int(self._storage.n_rows)

    def _synced(self) -> Result:
        """The result over the first row, the running maxima and the last row, with this
        result's current status, message, steady state, ..."""
        for name in self._fields:
            setattr(self._ends, name, getattr(self, name))
        return self._ends

    def _load(self, attr):
        if attr not in self._cache:
            path = _ARRAY_DATASETS[attr]
            if self._storage.pending:
                self._cache[attr] = self._storage.h[path][()]
            else:
                import h5py
                with h5py.File(self._storage.path, "r") as h:
                    self._cache[attr] = h[path][()]
        return self._cache[attr]

    @property
    def face_T(self) -> np.ndarray:
        """Temperature of every face (n_time, n_faces) [K], read from ``faces/temperature``
        (without loading ``T``)."""
        if "face_T" not in self._cache:
            if self._storage.pending:
                self._cache["face_T"] = self._storage.h["faces/temperature"][()]
            else:
                import h5py
                with h5py.File(self._storage.path, "r") as h:
                    self._cache["face_T"] = h["faces/temperature"][()]
        return self._cache["face_T"]

    def layer_max_T(self) -> list:
        return self._synced().layer_max_T()

    def summary(self) -> dict:
        return self._synced().summary()

    def __repr__(self):
        return (f"FileResult(case={self.case.name!r}, status={self.status!r}, "
                f"outputs={self.n_outputs}, store={self.store!r})")

    def write_hdf5(self, path) -> str:
        """Finish the file (when still open) as ``path``, or write a copy of it to ``path``
        with this result's current attributes (e.g. a steady state set after the run);
        atomically either way."""
        import h5py
        path = os.fspath(path)
        ends = self._synced()
        st = self._storage
        if st.pending and os.path.abspath(path) == os.path.abspath(st.path):
            st.finish(ends._write)
            return path
        if st.pending:
            st.finish(ends._write)
        keep = set(st.names)
        with atomic_path(path, ".h5.part") as tmp:
            shutil.copyfile(st.path, tmp)
            with h5py.File(tmp, "r+") as h:
                _strip_to(h, keep)
                ends._write(h)
        return path

    def discard(self) -> None:
        """Remove the file while it is still open under its temporary name (no-op after)."""
        if self._storage.pending:
            self._storage.abort()


def _strip_to(h, keep) -> None:
    """Delete every attribute, group and dataset of the open file ``h`` except the datasets
    whose paths are in ``keep`` (and the groups that hold them)."""
    import h5py
    for k in list(h.attrs):
        del h.attrs[k]

    def walk(g, prefix):
        for name in list(g):
            p = f"{prefix}{name}"
            obj = g[name]
            if isinstance(obj, h5py.Group):
                if any(x.startswith(p + "/") for x in keep):
                    for a in list(obj.attrs):
                        del obj.attrs[a]
                    walk(obj, p + "/")
                else:
                    del g[name]
            elif p not in keep:
                del g[name]
    walk(h, "")

def _plain(v):
    """A JSON-ready copy of the error estimate (NaN becomes None)."""
    if isinstance(v, dict):
        return {k: _plain(x) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [_plain(x) for x in v]
    if isinstance(v, float) and not np.isfinite(v):
        return None
    return v


def _write_error_estimate_group(h, est):
    """The attribute group ``/error_estimate`` of a run file (see
    :mod:`fdwall.solver.accuracy` and docs/results.md): numbers and flags as attributes,
    ``cells``, ``points`` and ``notes`` as JSON text."""
    g = h.require_group("error_estimate")
    estimated = est.get("meets_contract") is not None
    g.attrs["estimated"] = bool(estimated)
    g.attrs["meets_contract"] = bool(est.get("meets_contract") or False)
    for k in ("method",):
        g.attrs[k] = str(est.get(k, ""))
    for k in ("order", "refinements", "extra_runs"):
        g.attrs[k] = int(est.get(k, 0))
    for k in ("max_error_K", "margin", "flow_margin", "extra_wall_time_s"):
        g.attrs[k] = float(est.get(k, float("nan")))
    for k in ("cells", "points", "notes"):
        g.attrs[k] = json.dumps(_plain(est.get(k, [])))
    # on/off control: the first switch-off [s] and its estimated error; null otherwise
    g.attrs["switching"] = json.dumps(_plain(est.get("switching")))


def resolved_inputs(case) -> dict:
    """The case with every quantity in SI, as plain data (for archives and --json)."""
    def conv(o):
        if hasattr(o, "__dataclass_fields__"):
            out = {"type": type(o).__name__}
            for k in o.__dataclass_fields__:
                if k in ("source",):
                    continue
                out[k] = conv(getattr(o, k))
            return out
        if isinstance(o, (list, tuple)):
            return [conv(x) for x in o]
        if isinstance(o, np.ndarray):
            return o.tolist()
        if isinstance(o, (int, float, str, bool)) or o is None:
            return o
        return str(o)
    return conv(case)


def read_result(path) -> dict:
    """Read an fdwall HDF5 result into a dict of arrays and attributes (SI units)."""
    import h5py
    out = {}
    with h5py.File(path, "r") as h:
        out["attrs"] = {k: (v.decode() if isinstance(v, bytes) else v) for k, v in h.attrs.items()}

        def visit(name, obj):
            if isinstance(obj, h5py.Dataset):
                v = obj[()]
                if isinstance(v, bytes):
                    v = v.decode()
                elif isinstance(v, np.ndarray) and v.dtype == object:
                    v = [x.decode() if isinstance(x, bytes) else x for x in v]
                out[name] = v
        h.visititems(visit)
        if "solver" in h:
            out["solver"] = dict(h["solver"].attrs)
    return out
