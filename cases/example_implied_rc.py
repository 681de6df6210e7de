"""Example (invented scenario): the lumped R and C that a warming-cabinet wall implies.

A 1 m2 side wall of an invented food-warming cabinet: 60 mm of a board with constant
properties, its inner face held at 90 degC, still room air at 20 degC outside with a fixed film
coefficient of 8 W/m2K and no radiation.  fdwall derives the one-node model
C dT/dt = P - (T - T_amb)/R that this wall implies (fdwall.analyses.lumped.implied_rc).

Run it:  python cases/example_implied_rc.py
The test suite runs it too (tests/test_examples.py) and checks its numbers against the closed
forms printed below.
"""
from fdwall import Case, Face, Layer, RunSettings, Wall
from fdwall.analyses.lumped import implied_rc
from fdwall.materials import material_from_dict

K0 = 273.15
# an invented board with constant properties, so the closed forms below are exact
board = material_from_dict("example-board", {"k": 0.05, "cp": 900.0, "rho": 120.0})
L, A, h, T_hot, T_amb = 0.060, 1.0, 8.0, K0 + 90.0, K0 + 20.0


def build_case() -> Case:
    """The example wall as an fdwall Case (SI units)."""
    return Case(run=RunSettings(duration=24 * 3600.0, start_temperature=T_amb),
                wall=Wall(layers=(Layer(board, L),), area=A),
                inner=Face.fixed(T_hot), outer=Face.exchange(T_amb, h))


def closed_form() -> dict:
    """R [K/W] and C_stored [J/K] of the one-node model, by hand.

    Series resistances of a plane wall (Incropera, Fundamentals of Heat and Mass Transfer,
    sec. 3.1): R = L/(k A) + 1/(h A).  At steady state the profile is linear from T_hot to the
    skin temperature T_s = T_amb + (T_hot - T_amb) (1/(h A)) / R, so the energy held above
    ambient is rho cp A L ((T_hot + T_s)/2 - T_amb), and C_stored is that over T_hot - T_amb.
    """
    R = L / (board.k(T_amb) * A) + 1.0 / (h * A)
    T_s = T_amb + (T_hot - T_amb) * (1.0 / (h * A)) / R
    stored = board.rho * board.cp(T_amb) * A * L * (0.5 * (T_hot + T_s) - T_amb)
    return {"R_K_per_W": R, "C_stored_J_per_K": stored / (T_hot - T_amb)}


def main() -> dict:
    rc = implied_rc(build_case())
    ref = closed_form()
    print(f"R        = {rc['R_K_per_W']:.5f} K/W   (closed form {ref['R_K_per_W']:.5f})")
    print(f"C_stored = {rc['C_stored_J_per_K']:.1f} J/K   (closed form "
          f"{ref['C_stored_J_per_K']:.1f})")
    print(f"C_total  = {rc['C_total_J_per_K']:.1f} J/K   tau = R C_stored = "
          f"{rc['tau_s'] / 3600:.2f} h")
    return rc


if __name__ == "__main__":
    main()
