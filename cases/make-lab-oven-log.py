"""Write cases/lab-oven-log.csv: an INVENTED heating log of a lab oven (a scenario of our own).

Two-node model (chamber C1 coupled through R12 to the wall C2, wall to ambient through R2),
exact piecewise-constant propagation with scipy.linalg.expm, an on/off thermostat (control
ripple), sensor noise (0.2 K) and 0.1 K quantisation. Run: python3 cases/make-lab-oven-log.py
"""
from pathlib import Path

import numpy as np
from scipy.linalg import expm

C1, C2, R12, R2, Pr, Ta = 2.0e4, 1.2e5, 0.02, 0.12, 1500.0, 293.15
A = np.array([[-1 / (R12 * C1), 1 / (R12 * C1)],
              [1 / (R12 * C2), -1 / (R12 * C2) - 1 / (R2 * C2)]])
dt = 30.0
E = expm(A * dt)
Ainv = np.linalg.solve(A, np.eye(2))
rng = np.random.default_rng(2026)
x = np.array([Ta, Ta])
rows = []
on = True
for i in range(int(6 * 3600 / dt) + 1):
    t = i * dt
    if t >= 4 * 3600:
        on = False
    elif x[0] > 473.15 + 2:
        on = False
    elif x[0] < 473.15 - 2:
        on = True
    P = Pr if on else 0.0
    Tm = np.round(x[0] - 273.15 + rng.normal(0, 0.2), 1)
    rows.append(f"{t / 60:.1f},{Tm:.1f},{Tm + np.round(rng.normal(0, 0.2), 1):.1f},{P:.0f}")
    b = np.array([P / C1, Ta / (R2 * C2)])
    x = E @ x + (E - np.eye(2)) @ Ainv @ b
head = ["# INVENTED data: lab oven heating log from a two-node model with noise,",
        "# thermostat ripple and 0.1 K quantisation (cases/make-lab-oven-log.py).",
        "# Ambient 20 degC.",
        "time [min],chamber top [degC],chamber bottom [degC],heater [W]"]
Path(__file__).with_name("lab-oven-log.csv").write_text("\n".join(head + rows) + "\n")

# --- second log: the same oven under its thermostat, logged by a data logger that writes
# local clock timestamps (Europe/Berlin), the heater's on/off state, the room temperature, and
# a chamber probe with a first-order lag of 90 s and a 30 s dead time (also INVENTED).
import datetime as _dt  # noqa: E402
from zoneinfo import ZoneInfo  # noqa: E402

TAU_S, DEAD = 90.0, 30.0
rng2 = np.random.default_rng(4711)
dt2, sub = 20.0, 20                      # log step; sub-steps for the lag and the dead time
h = dt2 / sub
A3 = np.array([[A[0, 0], A[0, 1], 0.0], [A[1, 0], A[1, 1], 0.0], [1 / TAU_S, 0.0, -1 / TAU_S]])
E3 = expm(A3 * h)
A3inv = np.linalg.inv(A3)
x3 = np.array([Ta, Ta, Ta])
start = _dt.datetime(2026, 3, 12, 7, 45, tzinfo=ZoneInfo("Europe/Berlin"))
n_steps = int(5 * 3600 / dt2)
hist = [Ta] * (int(DEAD / h) + 1)        # probe history for the dead time
rows2, on = [], True
for i in range(n_steps + 1):
    t = i * dt2
    Tread = hist[-int(DEAD / h) - 1]     # the probe's value DEAD seconds ago
    if t >= 3.5 * 3600:
        on = False
    elif Tread > 393.15 + 1.5:
        on = False
    elif Tread < 393.15 - 1.5:
        on = True
    room = Ta + 1.5 * np.sin(2 * np.pi * t / 86400.0)
    stamp = (start + _dt.timedelta(seconds=t)).replace(tzinfo=None).isoformat()
    rows2.append(f"{stamp},{Tread - 273.15 + rng2.normal(0, 0.15):.2f},{int(on)},"
                 f"{room - 273.15:.2f}")
    b3 = np.array([Pr * on / C1, room / (R2 * C2), 0.0])
    for _ in range(sub):
        x3 = E3 @ x3 + (E3 - np.eye(3)) @ A3inv @ b3
        hist.append(x3[2])
head2 = ["# INVENTED data: the lab oven of lab-oven-log.csv under its thermostat (120 degC),",
         "# logged with local timestamps (Europe/Berlin), the heater's on/off state (rated",
         "# 1500 W), the room temperature and a chamber probe with a 90 s first-order lag and",
         "# a 30 s dead time, noise 0.15 K (cases/make-lab-oven-log.py).",
         "timestamp,probe [degC],heater on [1],room [degC]"]
Path(__file__).with_name("lab-oven-log-stamped.csv").write_text("\n".join(head2 + rows2)
                                                                 + "\n")
