"""Steady state by Newton on the steady equations (no time marching).

With a controlled heater (thermostat or PID) the steady state is the one that holds the
sensor at the setpoint; the heater fraction that does so is found by a bracketed root solve
on the heater on-fraction, each evaluation a full Newton solve.  If even full power cannot
reach the setpoint, the full-power state is returned and flagged.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import ConvergenceError
from ..system import System, build_system
from . import native as K
from .layout import (
    CHI_AMBIENT,
    CI_DUTY,
    CI_ENABLE,
    CI_HEATER_NODE,
    CI_MODE,
    CI_POWER,
    CI_SETPOINT,
    CTL_DUTY_AVERAGED,
    CTL_DUTY_SWITCHED,
    CTL_PID_AVERAGED,
    CTL_PID_SWITCHED,
    CTL_THERMOSTAT,
    EX_HEATER,
    EX_LOSS,
    FI_FIXED_T,
    FI_FLUID,
    FI_NODE,
    FI_RADIANT,
    N_EX,
    N_STATS,
    system_args,
)
from .readout import sensor_temperature

__all__ = ["solve_steady", "SteadyResult"]


@dataclass
class SteadyResult:
    """A steady state.

    Attributes
    ----------
    T : ndarray
        Temperatures of all unknowns [K].
    face_flow : ndarray
        Heat into the wall at each face [W].
    h_conv, h_rad : ndarray
        Film coefficients per face [W/m2/K].
    heater_power : float
        Heater power [W].
    duty : float
        Heater on-fraction needed (controlled heaters) [-].
    reachable : bool
        False when full heater power cannot hold the setpoint (or the heater is off).
    heater_on : bool
        False when the heater is disabled or rated at zero power at time ``time``.
    iterations : int
        Newton iterations of the last solve.
    """

    system: System
    T: np.ndarray
    face_flow: np.ndarray
    h_conv: np.ndarray
    h_rad: np.ndarray
    heater_power: float
    chamber_loss: float
    duty: float
    reachable: bool
    iterations: int
    time: float
    heater_on: bool = True

    def wall_T(self, wall: int = 0) -> np.ndarray:
        """Node temperatures of one wall [K]."""
        return self.T[self.system.wall_nodes(wall)]

    def x(self, wall: int = 0) -> np.ndarray:
        """Depth of every node of a wall below its inner face [m]."""
        m = self.system.meshes[wall]
        return m.x - m.x[0]

    @property
    def face_T(self) -> np.ndarray:
        """Face temperatures [K]."""
        return self.T[self.system.face_i[:, FI_NODE]]

    def interface_T(self, wall: int = 0) -> np.ndarray:
        """Interface temperatures of a wall [K]."""
        return self.wall_T(wall)[self.system.meshes[wall].interface_nodes]

    @property
    def balance(self) -> float:
        """Net heat into the system at steady state (should be ~0) [W]."""
        ext = self.system.external
        return float(self.face_flow[ext].sum() + self.heater_power - self.chamber_loss)

    def summary(self) -> dict:
        """Headline numbers in SI units."""
        out = {
            "faces": {n: {"T_K": float(t), "heat_in_W": float(q), "h_conv_W_m2K": float(hc),
                          "h_rad_W_m2K": float(hr)}
                      for n, t, q, hc, hr in zip(self.system.face_names, self.face_T,
                                                 self.face_flow, self.h_conv, self.h_rad)},
            "interfaces_K": [[float(v) for v in self.interface_T(j)]
                             for j in range(len(self.system.meshes))],
            "heater_power_W": float(self.heater_power),
            "duty": float(self.duty),
            "setpoint_reachable": bool(self.reachable),
            "heater_on": bool(self.heater_on),
            "time_s": float(self.time),
            "balance_W": self.balance,
            "newton_iterations": int(self.iterations),
        }
        if self.system.has_chamber:
            out["chamber_K"] = float(self.T[-1])
        return out


def _guess(sysm: System, t: float) -> np.ndarray:
    """A starting profile: the mean of the temperatures that drive the faces [K]."""
    temps = []
    for f in range(sysm.face_i.shape[0]):
        for col in (FI_FIXED_T, FI_FLUID, FI_RADIANT):
            s = sysm.face_i[f, col]
            if s >= 0:
                temps.append(K.sched_eval(sysm.s_off, sysm.stab, s, t, 0.0))
    if sysm.has_chamber:
        temps.append(K.sched_eval(sysm.s_off, sysm.stab, sysm.ch_i[CHI_AMBIENT], t, 0.0))
    if sysm.ctl_i[CI_MODE] in (CTL_THERMOSTAT, CTL_PID_AVERAGED, CTL_PID_SWITCHED) and sysm.ctl_i[CI_HEATER_NODE] >= 0:
        temps.append(K.sched_eval(sysm.s_off, sysm.stab, sysm.ctl_i[CI_SETPOINT], t, 0.0))
    T0 = float(np.mean(temps)) if temps else 293.15
    return np.full(sysm.n_unknowns, T0)


def _solve(sysm, t, u, T0, tol):
    """Newton solve at time ``t`` [s] with heater fraction ``u`` [-] (< 0: the duty schedule)
    from ``T0`` [K]; a pseudo-time continuation when plain Newton fails.  Returns (T [K],
    face flows [W], h_conv, h_rad [W/m2/K], extra (heater power, chamber loss) [W],
    iterations)."""
    nf = sysm.face_i.shape[0]
    qf, hc, hr, extra = np.empty(nf), np.empty(nf), np.empty(nf), np.zeros(N_EX)
    sa = system_args(sysm)
    T = T0.copy()
    it, mx = K.steady(T, t, u, *sa, sysm.dirich_node, sysm.dirich_sched, qf, hc, hr, extra,
                      tol, 200)
    if it < 0:
        # continuation: reach the state through a sequence of pseudo-time relaxations
        T = _continuation(sysm, t, u, T0, tol)
        it, mx = K.steady(T, t, u, *sa, sysm.dirich_node, sysm.dirich_sched, qf, hc, hr, extra,
                          tol, 200)
        if it < 0:
            raise ConvergenceError(
                f"the steady state did not converge (last correction {mx:.3g} K). The case may "
                "have no steady state (e.g. a heater with no path for its heat, or all faces "
                "adiabatic).")
    # face flow of Dirichlet faces from the node balance
    w = _Work(sysm.n_unknowns)
    K.assemble(T, t, 0.0, u, *sa, w.F, w.Cap, w.H, *w.jacobian(), qf, hc, hr, extra)
    for k, i in enumerate(sysm.dirich_node):
        qf[sysm.dirich_face[k]] = -w.F[i]
    return T, qf, hc, hr, extra.copy(), it


class _Work:
    """Work arrays of one assembly / Newton stage for ``nun`` unknowns: F [W], Cap [J/K],
    H [J], the Jacobian (diagonal, sub, super, chamber column and row) [W/K], and the Newton
    solve's residual, correction and elimination arrays."""

    def __init__(self, nun):
        (self.F, self.Cap, self.H, self.Jd, self.Jl, self.Ju, self.Jcol, self.Jrow, self.R,
         self.dx, self.wc, self.wy, self.wz) = (np.empty(nun) for _ in range(13))

    def jacobian(self):
        return self.Jd, self.Jl, self.Ju, self.Jcol, self.Jrow

    def solve(self):
        return self.R, self.dx, self.wc, self.wy, self.wz


def _continuation(sysm, t, u, T0, tol):
    """Backward-Euler pseudo-time steps with growing step (a homotopy towards the steady state)."""
    T = T0.copy()
    tau = 1.0
    nf = sysm.face_i.shape[0]
    sa = system_args(sysm)
    stats = np.zeros(N_STATS)
    nun = sysm.n_unknowns
    start = _Work(nun)     # the state at the start of a pseudo-step
    stage = _Work(nun)     # the Newton stage
    qf, hc, hr, extra = np.empty(nf), np.empty(nf), np.empty(nf), np.zeros(N_EX)
    for _ in range(200):
        K.assemble(T, t, 0.0, u, *sa, start.F, start.Cap, start.H, *start.jacobian(), qf, hc,
                   hr, extra)
        Tn = np.empty(nun)
        ok = K._newton_stage(Tn, T, t, tau, start.H.copy(), u, sysm.dirich_node,
                             sysm.dirich_sched, *sa, stage.F, stage.Cap, stage.H,
                             *stage.jacobian(), qf, hc, hr, extra, *stage.solve(), tol, stats)
        if ok:
            change = np.max(np.abs(Tn - T))
            T = Tn
            tau *= 4.0
            if change < tol:
                break
        else:
            tau *= 0.25
    return T


def solve_steady(case, t=None, system=None, guess=None, tol=1e-9) -> SteadyResult:
    """Steady state of ``case`` with the boundary conditions of time ``t`` [s].

    Parameters
    ----------
    case : Case
    t : float, optional
        Time at which schedules are read [s]; default ``case.run.steady_at`` or else the end
        of the run.
    system : System, optional
        Prebuilt system of ``case``.
    guess : ndarray, optional
        Starting temperatures [K].
    tol : float
        Newton stopping tolerance on the correction [K].
    """
    sysm = system if system is not None else build_system(case)
    if t is None:
        t = case.run.steady_at if case.run.steady_at is not None else case.run.duration
    t = float(t)
    T0 = _guess(sysm, t) if guess is None else np.asarray(guess, float)
    mode = sysm.ctl_i[CI_MODE]
    heater = sysm.ctl_i[CI_HEATER_NODE] >= 0
    if not heater:
        T, qf, hc, hr, ex, it = _solve(sysm, t, 0.0, T0, tol)
        return SteadyResult(sysm, T, qf, hc, hr, ex[EX_HEATER], ex[EX_LOSS], 0.0, True, it, t, False)
    on = (K.sched_eval(sysm.s_off, sysm.stab, sysm.ctl_i[CI_ENABLE], t, 0.0) > 0.0
          and K.sched_eval(sysm.s_off, sysm.stab, sysm.ctl_i[CI_POWER], t, 0.0) > 0.0)
    if not on:
        T, qf, hc, hr, ex, it = _solve(sysm, t, 0.0, T0, tol)
        return SteadyResult(sysm, T, qf, hc, hr, ex[EX_HEATER], ex[EX_LOSS], 0.0, mode not in (CTL_THERMOSTAT, CTL_PID_AVERAGED, CTL_PID_SWITCHED),
                            it, t, False)
    if mode in (CTL_DUTY_AVERAGED, CTL_DUTY_SWITCHED):
        u = -1.0 if mode == CTL_DUTY_AVERAGED else K.sched_eval(sysm.s_off, sysm.stab, sysm.ctl_i[CI_DUTY], t, 0.0)
        T, qf, hc, hr, ex, it = _solve(sysm, t, u, T0, tol)
        duty = u if u >= 0 else K.sched_eval(sysm.s_off, sysm.stab, sysm.ctl_i[CI_DUTY], t, 0.0)
        return SteadyResult(sysm, T, qf, hc, hr, ex[EX_HEATER], ex[EX_LOSS], duty, True, it, t)
    # controlled: find u in [0, 1] holding the sensor at the setpoint
    sp = K.sched_eval(sysm.s_off, sysm.stab, sysm.ctl_i[CI_SETPOINT], t, 0.0)
    cache = {}

    def gap(u):
        sol = _solve(sysm, t, u, cache.get("T", T0), tol)
        cache["T"] = sol[0]
        cache[u] = sol
        return sensor_temperature(sysm, sol[0]) - sp

    g1 = gap(1.0)
    if g1 < 0:
        T, qf, hc, hr, ex, it = cache[1.0]
        return SteadyResult(sysm, T, qf, hc, hr, ex[EX_HEATER], ex[EX_LOSS], 1.0, False, it, t)
    g0 = gap(0.0)
    if g0 >= 0:
        T, qf, hc, hr, ex, it = cache[0.0]
        return SteadyResult(sysm, T, qf, hc, hr, ex[EX_HEATER], ex[EX_LOSS], 0.0, True, it, t)
    from scipy.optimize import brentq  # imported here: scipy.optimize takes ~0.3 s to load
    u = brentq(gap, 0.0, 1.0, xtol=1e-12, rtol=1e-12)
    T, qf, hc, hr, ex, it = _solve(sysm, t, u, cache["T"], tol)
    return SteadyResult(sysm, T, qf, hc, hr, ex[EX_HEATER], ex[EX_LOSS], u, True, it, t)
