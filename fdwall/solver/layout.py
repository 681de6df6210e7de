"""Named layouts of the kernel arrays: every row and column index used outside the kernels.

Layer 6 (solver); imports nothing of fdwall.  The kernels (:mod:`fdwall.solver.kernels`)
and everything that builds or reads their arrays (:mod:`fdwall.system`, the drivers, the
result) index by these names, never by bare numbers, so that a column can move in one place.

Solver statistics ``stats[N_STATS]`` (float)
--------------------------------------------
Counters, the step range seen [s], the state time reached [s], the energy ledger check [J].

Control state ``cs[N_CS]`` (mixed units)
----------------------------------------
Heater fraction [-], thermostat on flag [-], PID integral [-] and last error [K], next
sampling time [s], switch-off time [s], next step size [s], last heater fraction [-], the step
that worked after the last switch and after the last schedule jump [s].

Resume state ``ks[resume_size(nun, nf)]`` (mixed units)
-------------------------------------------------------
What the time loop carries from one accepted step to the next beyond T, cs, acc and stats,
so that a run stopped after any step continues exactly: scalars ``KS_*``, then the arrays
Tprev (state before the last step) [K], F1 (net flows at its end) [W], Cap [J/K], H1 [J]
(nun each), q1 face flows [W], hcw, hrw film coefficients [W/m2/K] (nf each), ex1 heater
power and chamber loss [W] (2).  All zeros before the first call.
"""
from __future__ import annotations

# ------------------------------------------------------------------ solver statistics
(ST_ACC, ST_REJ, ST_NFAIL, ST_NEWTON, ST_EVRETRY, ST_STATUS, ST_T, ST_HMIN, ST_HMAX,
 ST_ASSEMBLE, ST_H0, ST_RESMAX, ST_SCALE, ST_COLD, ST_STALL) = range(15)
N_STATS = 15
# ST_STATUS values: 0 running/done, 1 step size fell below its floor, 2 steps stalled
STATUS_OK = 0
STATUS_STEP_FLOOR = 1
STATUS_STALLED = 2
# ST_COLD counts Newton solutions rejected for reaching the 1 K floor (heat the wall lacks)

# ------------------------------------------------------------------ control state
CS_U, CS_ON, CS_INT, CS_PREV, CS_NEXT, CS_OFF, CS_H, CS_UPREV, CS_HSW, CS_HJ = range(10)
N_CS = 10

# ------------------------------------------------------------------ resume state
(KS_INIT, KS_HPREV, KS_HAVE_PREV, KS_REUSE, KS_AFTER_JUMP, KS_ULAST, KS_IBP) = range(7)
KS_ARRAYS = 7          # first index of the arrays


def resume_size(nun: int, nf: int) -> int:
    """Length of the resume state for ``nun`` unknowns and ``nf`` faces [-]."""
    return KS_ARRAYS + 4 * nun + 3 * nf + 2
