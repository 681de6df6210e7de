"""Textbook results checked end to end through the steady solver.

- Critical radius of insulation on a cylinder, r_cr = k/h (Incropera, Fundamentals of Heat and
  Mass Transfer, 6th ed., sec. 3.3.1 and Example 3.5; from memory): with a fixed film
  coefficient outside, the heat loss per metre is largest when the insulation's outer radius
  equals k/h.
- Sphere: r_cr = 2k/h (same section, problem statement; from memory).
"""
import numpy as np
import pytest

from fdwall import Case, Face, Layer, RunSettings, Wall, solve_steady
from fdwall.materials import Constant, Material

K_INS = 0.055   # W/m/K
H_OUT = 5.0     # W/m2/K
T_IN, T_AIR = 373.15, 293.15


def _loss(geometry, ri, thickness):
    m = Material(name="ins", k=Constant(K_INS), cp=Constant(1000.0), rho=100.0)
    w = Wall(layers=(Layer(m, thickness),), shape=geometry, inner_radius=ri, length=1.0)
    c = Case(run=RunSettings(duration=1.0), wall=w, inner=Face(fixed_temperature=T_IN),
             outer=Face(fluid_temperature=T_AIR, convection=H_OUT))
    return solve_steady(c).face_flow[0]


@pytest.mark.parametrize("geometry,r_cr", [("cylinder", K_INS / H_OUT), ("sphere", 2 * K_INS / H_OUT)])
def test_critical_radius(geometry, r_cr):
    ri = 0.002
    ro = np.linspace(ri * 1.05, 4 * r_cr, 400)
    q = np.array([_loss(geometry, ri, r - ri) for r in ro])
    k = int(np.argmax(q))
    assert 0 < k < ro.size - 1, "the loss must peak inside the range"
    # refine the peak with a parabola through the three best points
    a, b, c = q[k - 1], q[k], q[k + 1]
    dr = ro[1] - ro[0]
    r_peak = ro[k] + 0.5 * dr * (a - c) / (a - 2 * b + c)
    assert r_peak == pytest.approx(r_cr, rel=2e-3)
    # and the loss at the peak matches the series resistance (Incropera eqs. 3.33, 3.41)
    if geometry == "cylinder":
        R = np.log(r_cr / ri) / (2 * np.pi * K_INS) + 1 / (H_OUT * 2 * np.pi * r_cr)
    else:
        R = (1 / ri - 1 / r_cr) / (4 * np.pi * K_INS) + 1 / (H_OUT * 4 * np.pi * r_cr ** 2)
    assert _loss(geometry, ri, r_cr - ri) == pytest.approx((T_IN - T_AIR) / R, rel=1e-9)
