"""Example (invented scenario): networks and the like-for-like fit of a thick kiln wall.

A 1 m2 wall of an invented small kiln: 230 mm of a brick-like layer and 75 mm of a board, both
with constant properties so that the closed forms below are exact; elements put 300 W into
the hot face; still room air at 20 degC outside with a fixed film coefficient of 10 W/m2K.

fdwall derives the wall's one-node R and C (C_stored, C_effective, C_total), its 4-pair
Foster network and the equivalent Cauer ladder, and the one-node C that a heating log of
each length would give (fitted to fdwall's own simulated curve, R fixed at the implied R).

Run it:  python cases/example_rc_networks.py
The test suite runs it too (tests/test_lumped_example.py) and checks its numbers against the
closed forms printed below.
"""
from fdwall import Case, Face, Layer, RunSettings, Wall
from fdwall.analyses.lumped import fit_vs_log_length, rc_analysis
from fdwall.materials import material_from_dict

K0 = 273.15
# invented materials with constant properties
brick = material_from_dict("example-brick", {"k": 0.95, "cp": 900.0, "rho": 2150.0})
board = material_from_dict("example-board", {"k": 0.052, "cp": 1000.0, "rho": 240.0})
L1, L2, A, h, P, T_amb = 0.23, 0.075, 1.0, 10.0, 300.0, K0 + 20.0
LOG_HOURS = (4, 16, 64, 256, 1024)


def build_case() -> Case:
    """The example wall as an fdwall Case (SI units)."""
    return Case(run=RunSettings(duration=24 * 3600.0, start_temperature=T_amb),
                wall=Wall(layers=(Layer(brick, L1), Layer(board, L2)), area=A),
                inner=Face(heat_flux=P / A), outer=Face.exchange(T_amb, h), name="example kiln wall")


def closed_form() -> dict:
    """R [K/W], C_stored and C_effective [J/K] of the one-node model, by hand.

    Series resistances of a plane wall (Incropera, Fundamentals of Heat and Mass Transfer,
    sec. 3.1): R = L1/(k1 A) + L2/(k2 A) + 1/(h A).  Per watt into the hot face the steady rise
    runs linearly over each layer from a to b, so the layer holds rho c A L (a + b)/2 per watt
    and the first moment of the hot face's step response is sum rho c A L (a^2 + a b + b^2)/3
    over R (the steady-profile form of -Z'(0)/Z(0)); C_stored = sum(first)/R and
    C_effective = first moment / R.
    """
    Rf, R2, R1 = 1 / (h * A), L2 / (0.052 * A), L1 / (0.95 * A)
    R = Rf + R2 + R1
    layers = [(2150 * 900 * A * L1, R, Rf + R2), (240 * 1000 * A * L2, Rf + R2, Rf)]
    stored = sum(m * (a + b) / 2 for m, a, b in layers)
    moment = sum(m * (a * a + a * b + b * b) / 3 for m, a, b in layers)
    return {"R_K_per_W": R, "C_stored_J_per_K": stored / R, "C_effective_J_per_K": moment / R ** 2}


def main() -> dict:
    case = build_case()
    rc = rc_analysis(case, networks=4)
    ref = closed_form()
    print(f"R           = {rc['R_K_per_W']:.5f} K/W   (closed form {ref['R_K_per_W']:.5f})")
    print(f"C_stored    = {rc['C_stored_J_per_K'] / 1e3:.1f} kJ/K  (closed form "
          f"{ref['C_stored_J_per_K'] / 1e3:.1f})")
    print(f"C_effective = {rc['C_effective_J_per_K'] / 1e3:.1f} kJ/K  (closed form "
          f"{ref['C_effective_J_per_K'] / 1e3:.1f})")
    print(f"C_total     = {rc['C_total_J_per_K'] / 1e3:.1f} kJ/K; slowest time constant "
          f"{rc['time_constants_s'][0] / 3600:.0f} h")
    net = rc["networks"]
    print(f"4-pair networks, step response within {100 * net['max_error_fraction']:.3f} % of R:")
    print("   Foster R [K/W]  C [kJ/K]  tau [h]  |  Cauer R [K/W]  C [kJ/K]")
    for f, c in zip(net["foster"], net["cauer"]):
        print(f"   {f['R_K_per_W']:13.4g} {f['C_J_per_K'] / 1e3:9.4g} {f['tau_s'] / 3600:8.3g}  |"
              f"  {c['R_K_per_W']:13.4g} {c['C_J_per_K'] / 1e3:9.4g}")
    ll = fit_vs_log_length(case, P, [x * 3600.0 for x in LOG_HOURS])
    print("one-node C fitted to a heating log of each length (R fixed at the implied R):")
    for row in ll["rows"]:
        print(f"   {row['log_length_s'] / 3600:6.0f} h  C = {row['C_fit_R_fixed_J_per_K'] / 1e3:6.1f}"
              f" kJ/K = {row['C_R_fixed_over_C_effective']:.3f} C_effective"
              f" = {row['C_R_fixed_over_C_stored']:.3f} C_stored")
    print(f"the longest log's C is closest to {ll['closest']}")
    return {"rc": rc, "log_lengths": ll, "closed_form": ref}


if __name__ == "__main__":
    main()
