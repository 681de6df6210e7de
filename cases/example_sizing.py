"""Example (invented scenario): how thick must the insulation of a drying-cabinet door be?

An invented drying cabinet runs at 120 degC.  Its 1 m2 door is a 1.5 mm steel inner sheet, a
layer of an invented insulation board (k = 0.04 W/m/K, constant) and a 1 mm steel outer sheet.
Outside: still room air at 25 degC, taken here as a fixed combined film coefficient of
9 W/m2K (convection and radiation together).  The inner face is held at 120 degC.  Which board
thickness keeps the steady outer skin at or below 45 degC, and which stock size (10 mm steps)
should be ordered?  fdwall.sizing answers; the closed form below checks it.

Skin temperature is an engineering estimate: confirm by measurement, and follow the
applicable product-safety standard, local codes and licensed practice.

Run it:  python cases/example_sizing.py
The test suite runs it too (tests/test_examples.py) and checks its number against the closed
form.
"""
from fdwall import Case, Face, Layer, RunSettings, Wall
from fdwall.materials import material_from_dict
from fdwall.sizing import SkinTarget, size_layer

K0 = 273.15
steel = material_from_dict("example-steel", {"k": 50.0, "cp": 480.0, "rho": 7850.0})
board = material_from_dict("example-board", {"k": 0.04, "cp": 1000.0, "rho": 150.0})
T_in, T_amb, h, T_limit = K0 + 120.0, K0 + 25.0, 9.0, K0 + 45.0


def build_case(board_thickness: float = 0.05) -> Case:
    """The door as an fdwall Case (SI units); the board is layer 1."""
    return Case(run=RunSettings(duration=3600.0, start_temperature=T_amb),
                wall=Wall(layers=(Layer(steel, 0.0015), Layer(board, board_thickness),
                                  Layer(steel, 0.001)), area=1.0),
                inner=Face.fixed(T_in), outer=Face.exchange(T_amb, h))


def closed_form() -> float:
    """Board thickness [m] that puts the skin exactly at the limit, by hand.

    Series resistances of a plane wall (Incropera, Fundamentals of Heat and Mass Transfer,
    sec. 3.1): the skin sits at T_amb + (T_in - T_amb) (1/h) / R_total, so the limit needs
    R_total = (T_in - T_amb) / (h (T_limit - T_amb)), and the board supplies what the steel
    sheets and the film do not: L = k (R_total - 1/h - sum L_steel / k_steel).
    """
    R_total = (T_in - T_amb) / (h * (T_limit - T_amb))
    R_steel = 0.0015 / 50.0 + 0.001 / 50.0
    return 0.04 * (R_total - 1.0 / h - R_steel)


def main() -> dict:
    r = size_layer(build_case(), 1, [SkinTarget(T_limit)], t_min=0.005, t_max=0.2, step=0.01)
    exact = closed_form()
    print(f"board thickness for a {T_limit - K0:.0f} degC skin: {r.thickness_exact_m * 1000:.2f} mm "
          f"(closed form {exact * 1000:.2f} mm); order {r.thickness_m * 1000:.0f} mm stock")
    print(r.caution)
    return {"thickness_exact_m": r.thickness_exact_m, "thickness_m": r.thickness_m,
            "closed_form_m": exact}


if __name__ == "__main__":
    main()
