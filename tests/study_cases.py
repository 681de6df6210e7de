"""Case texts shared by the design-study tests (invented test cases)."""

# A one-layer plane wall with fixed film coefficients: its steady skin temperature has the
# closed form of a series resistance (Incropera, Fundamentals of Heat and Mass Transfer, sec. 3.1).
ONE_LAYER_WALL = """
title = "one-layer plane wall (invented test case)"
[run]
duration = "1 h"
[materials.demo-board]
conductivity = "0.1 W/m/K"
specific_heat = "1000 J/kg/K"
density = "200 kg/m3"
[wall]
area = "1 m2"
[[wall.layers]]
material = "demo-board"
thickness = "50 mm"
[wall.inner_face]
fluid_temperature = "200 degC"
film_coefficient = "20 W/m2/K"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "10 W/m2/K"
"""
