"""Example (invented scenario): the periodic state of a cabinet fired 8 h a day.

An invented drying cabinet: 200 kJ/K of contents behind 4 m2 of light panel (nearly no heat
capacity of its own), fixed film coefficients inside (10 W/m2K) and outside (8 W/m2K), no
radiation, a 400 W element on for the first 8 h of every 24 h.  A cold start is not typical of
daily use: fdwall.analyses.enclosure.periodic_state repeats the day until the cabinet settles
into its periodic state, and compares the first day with a settled one.

Run it:  python cases/example_periodic_state.py
The test suite runs it too (tests/test_examples.py) and checks the settled daily peak against
the closed form of the one-node model printed below.
"""
import math

from fdwall import (
    Case,
    Chamber,
    Control,
    EnclosureWall,
    Face,
    Heater,
    Layer,
    RunSettings,
    Schedule,
    Wall,
)
from fdwall.analyses.enclosure import periodic_state
from fdwall.materials import material_from_dict

K0 = 273.15
DAY, ON = 24 * 3600.0, 8 * 3600.0
C, A, L, k, h_in, h_out, P, T_amb = 200e3, 4.0, 0.05, 0.04, 10.0, 8.0, 400.0, K0 + 20.0
# a panel of negligible heat capacity (0.5 J/K per m2 against 200 kJ/K of contents), so the
# cabinet is a one-node model and the closed form below applies
panel = material_from_dict("example-light-panel", {"k": k, "cp": 10.0, "rho": 1.0})


def build_case() -> Case:
    """The example cabinet as an fdwall Case (SI units)."""
    wall = Wall(layers=(Layer(panel, L),), area=A, name="panel")
    firing = Schedule((0.0, ON, ON, DAY), (1.0, 1.0, 0.0, 0.0))   # on 8 h, off 16 h
    return Case(run=RunSettings(duration=DAY, start_temperature=T_amb, output_every=600.0),
                walls=(EnclosureWall(wall=wall, outer=Face.exchange(T_amb, h_out),
                                     inner_face_convection=h_in),),
                chamber=Chamber(heat_capacity=C, room_temperature=T_amb), heater=Heater(power=P),
                control=Control(mode="fixed", duty=firing), name="example-cabinet")


def closed_form_peak() -> float:
    """Daily peak [K] in the periodic state of the one-node model C dT/dt = P - (T - T_amb)/R.

    With R = (1/h_in + L/k + 1/h_out)/A (series resistances, Incropera sec. 3.1) and
    tau = R C, a square wave of power P for t_on out of every period gives, in the periodic
    state, theta_max = P R (1 - a) / (1 - a b) with a = exp(-t_on/tau), b = exp(-t_off/tau)
    (the on-phase rises towards P R from theta_min, the off-phase decays to
    theta_min = theta_max b; any text on first-order systems under periodic forcing).
    """
    R = (1.0 / h_in + L / k + 1.0 / h_out) / A
    tau = R * C
    a, b = math.exp(-ON / tau), math.exp(-(DAY - ON) / tau)
    return T_amb + P * R * (1 - a) / (1 - a * b)


def main() -> dict:
    out = periodic_state(build_case(), period=DAY, tol_K=0.01, max_cycles=40)
    first, last = out["cycles"][0], out["cycles"][-1]
    print(f"settled after {out['n_cycles']} days (converged: {out['converged']})")
    print(f"daily peak, first day   {first['chamber_max_K'] - K0:7.2f} degC")
    print(f"daily peak, settled     {last['chamber_max_K'] - K0:7.2f} degC   (closed form "
          f"{closed_form_peak() - K0:.2f} degC)")
    return out


if __name__ == "__main__":
    main()
