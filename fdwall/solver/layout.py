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

System arrays (built by :mod:`fdwall.system`, passed to the kernels in the order of
:data:`SYSTEM_ARRAYS` by :func:`system_args`)
------------------------------------------------------------------------------------------
node_i[N, N_NI] int   : NI_MAT_L, NI_MAT_R material of the left / right half of the node
                        (-1 none), NI_LINK material of the link to the next node (LINK_CONTACT
                        for a contact conductance, LINK_NONE after the last node of a chain)
node_f[N, N_NF] float : NF_VOL_L, NF_VOL_R half volumes [m3], NF_LINK_G link geometry
                        factor [m] (or the contact conductance [W/K])
chains[nc, 2] int     : CHAIN_FIRST, CHAIN_LAST node of each chain (one per wall path)
face_i[nf, N_FI] int  : FI_NODE, schedules (-1 none) FI_FIXED_T (face temperature), FI_FLUX,
                        FI_FLUID, FI_RADIANT (radiant temperature), FI_EMISSIVITY (table against
                        T); FI_TO_CHAMBER (1: exchanges with the chamber), FI_H_MODE (H_FIXED or
                        H_CORRELATION)
face_f[nf, N_FF] float: FF_AREA [m2], FF_H fixed film coefficient [W/m2/K]
hpar[nf, PAR_LEN]     : correlation parameters (layout in :mod:`fdwall.physics.convection`)
m_off[nm+1], mtab[N_MT, :] : material tables, rows MT_T [K], MT_K k [W/m/K], MT_KINT
                        K = int k dT [W/m], MT_C c = rho*cp [J/m3/K], MT_H H = int c dT [J/m3]
s_off[ns+1], stab[N_SC, :] : schedules, rows SC_X (time [s], or T [K] for tables against T)
                        and SC_VALUE
ch_i[N_CHI] int       : CHI_PRESENT (1 with a chamber), CHI_CAPACITY (material of unit
                        volume), CHI_AMBIENT (schedule)
ch_f[N_CHF] float     : CHF_UA extra conductance to ambient [W/K], CHF_LEAK leakage air flow at
                        room conditions [m3/s]
ctl_i[N_CI] int       : CI_MODE (a CTL_* code), CI_HEATER_NODE (-1 none), CI_SENSOR_A,
                        CI_SENSOR_B (nodes), schedules CI_POWER (rated power), CI_DUTY,
                        CI_SETPOINT, CI_ENABLE; CI_SENSOR_MAT the material whose Kirchhoff
                        integral the sensor read-out inverts (-1: linear in T)
ctl_f[N_CF] float     : CF_PERIOD [s], CF_BAND [K], CF_KP [1/K], CF_KI [1/K/s], CF_KD [s/K],
                        CF_SENSOR_W (geometry weight on sensor a) [-], CF_ALPHA [1/K], CF_T_REF [K],
                        CF_POWER_FACTOR (voltage ratio squared) [-], CF_EVENT_TOL [K]

Other kernel arrays
-------------------
ev_i[ne, N_EVI] int (EV_NODE_A, EV_NODE_B, EV_MAT), ev_f[ne, 2] float (EV_WEIGHT on node a
[-], EV_THRESHOLD [K]), ev_out[ne, 2] float (EV_UP, EV_DOWN: first crossing times [s]);
extra[N_EX] float: EX_HEATER heater power [W], EX_LOSS chamber loss to ambient [W];
acc[nf + N_EX + 1] float: cumulative energy into each face [J], then heater and loss [J]
(``nf + EX_*``), then the state time [s] (last).
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


# ------------------------------------------------------------------ wall nodes
NI_MAT_L, NI_MAT_R, NI_LINK = range(3)
N_NI = 3
LINK_CONTACT = -1          # NI_LINK: a contact conductance joins the node to the next
LINK_NONE = -2             # NI_LINK: last node of a chain, no link
NF_VOL_L, NF_VOL_R, NF_LINK_G = range(3)
N_NF = 3
CHAIN_FIRST, CHAIN_LAST = range(2)

# ------------------------------------------------------------------ faces
(FI_NODE, FI_FIXED_T, FI_FLUX, FI_FLUID, FI_RADIANT, FI_EMISSIVITY, FI_TO_CHAMBER,
 FI_H_MODE) = range(8)
N_FI = 8
H_FIXED, H_CORRELATION = range(2)
FF_AREA, FF_H = range(2)
N_FF = 2

# ------------------------------------------------------------------ tables
MT_T, MT_K, MT_KINT, MT_C, MT_H = range(5)
N_MT = 5
SC_X, SC_VALUE = range(2)
N_SC = 2

# ------------------------------------------------------------------ chamber
CHI_PRESENT, CHI_CAPACITY, CHI_AMBIENT = range(3)
N_CHI = 3
CHF_UA, CHF_LEAK = range(2)
N_CHF = 2

# ------------------------------------------------------------------ heater and control
(CI_MODE, CI_HEATER_NODE, CI_SENSOR_A, CI_SENSOR_B, CI_POWER, CI_DUTY, CI_SETPOINT,
 CI_ENABLE) = range(8)
N_CI = 10                  # two spare slots
(CF_PERIOD, CF_BAND, CF_KP, CF_KI, CF_KD, CF_SENSOR_W, CF_ALPHA, CF_T_REF, CF_POWER_FACTOR,
 CF_EVENT_TOL) = range(10)
N_CF = 10
# controller modes (ctl_i[CI_MODE])
CTL_DUTY_AVERAGED = 0      # heater fraction = the duty schedule, applied as a mean power
CTL_DUTY_SWITCHED = 1      # the duty schedule, time-proportioned on/off over the period
CTL_THERMOSTAT = 2         # on/off with a band around the setpoint
CTL_PID_AVERAGED = 3       # PID output applied as a mean power
CTL_PID_SWITCHED = 4       # PID output, time-proportioned on/off over the period
CTL_MODE_NAMES = ("duty (averaged)", "duty (switched)", "thermostat", "pid (averaged)",
                  "pid (switched)")

# ------------------------------------------------------------------ events, extras
EV_NODE_A, EV_NODE_B = range(2)
EV_WEIGHT, EV_THRESHOLD = range(2)
EV_UP, EV_DOWN = range(2)
EX_HEATER, EX_LOSS = range(2)
N_EX = 2

# ------------------------------------------------------------------ read-out between nodes
# A temperature read at a point between nodes a and b of one material (a sensor, an event at a
# depth) inverts the Kirchhoff integral K = int k dT, which is linear at steady state in the
# geometry coordinate g (x for a slab, ln r for a cylinder, -1/r for a sphere):
# K(T) = w K(T_a) + (1 - w) K(T_b) with the geometry weight w = (g_b - g) / (g_b - g_a) [-]
# (CF_SENSOR_W, EV_WEIGHT).  The material column names the material (-1: read linearly in T,
# exact for a constant k, a node read alone or the chamber).
CI_SENSOR_MAT = 8          # ctl_i: material of the sensor's link (uses a spare slot of N_CI)
EV_MAT = 2                 # ev_i: material of the event's link
N_EVI = 3                  # columns of ev_i

#: Names of the System attributes the kernels take, in their argument order.
SYSTEM_ARRAYS = ("node_i", "node_f", "chains", "face_i", "face_f", "hpar", "m_off", "mtab",
                 "s_off", "stab", "ch_i", "ch_f", "ctl_i", "ctl_f")


def system_args(system) -> tuple:
    """The system arrays of ``system`` (a :class:`fdwall.system.System`) in the order the
    kernels take them (:data:`SYSTEM_ARRAYS`): the one argument builder of both drivers."""
    return tuple(getattr(system, name) for name in SYSTEM_ARRAYS)
