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
