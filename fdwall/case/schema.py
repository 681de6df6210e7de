"""The keys of a case file, table by table, with a one-line description of each.

These dicts drive the unknown-key check (with near-key suggestions) and the "Allowed:" part
of error messages.  The full description with units, defaults and examples is
``docs/case-file.md``.
"""

from __future__ import annotations

TOP = {
    "title": "text, the case's name in reports",
    "description": "text, free notes",
    "run": "table [run]: duration, start temperature, outputs, solver settings",
    "materials": "tables [materials.<name>]: materials defined in this file",
    "wall": "table [wall]: the one wall of a single-wall case",
    "walls": "array [[walls]]: the walls of an enclosure (with [chamber])",
    "chamber": "table [chamber]: the lumped chamber of an enclosure",
    "heater": "table [heater]: an electric heater",
    "control": "table [control]: how the heater is switched",
    "report": "table [report]: identification block of the HTML report (project, author ...)",
}

REPORT = {
    "project": "text: project name or number",
    "equipment": "text: the equipment the case describes",
    "author": "text: who made the calculation",
    "checker": "text: who checked it",
    "revision": "text: revision of the calculation",
    "date": 'text or a TOML date, e.g. 2026-12-03',
}

RUN = {
    "duration": 'time simulated, e.g. "6 h"',
    "start_temperature": 'uniform start temperature, e.g. "20 degC" (default 20 degC)',
    "output_every": 'spacing of stored results, e.g. "5 min" (default duration/200)',
    "snapshots": 'times of stored temperature profiles, e.g. ["1 h", "3 h"]',
    "tolerance": 'local error tolerance per step, e.g. "0.01 K" (default: derived from the accuracy contract, 0.001 to 0.05 K)',
    "max_step": 'upper limit of the time step, e.g. "60 s"',
    "steady_at": 'time whose conditions define the reported steady state, e.g. "5 h" (default: end)',
    "watch": "array [[run.watch]]: temperature crossings to report",
}

WATCH = {
    "name": "text label",
    "wall": "wall index (0-based) or wall name (default 0)",
    "at": '"inner" or "outer" face, or "chamber" (the chamber of an enclosure)',
    "after_layer": "interface after layer N (0-based layer index)",
    "depth": 'depth below the inner face, e.g. "25 mm"',
    "temperature": 'threshold, e.g. "60 degC"',
}

MATERIAL = {
    "conductivity": 'k: "0.04 W/m/K", a table [[temperature, k], ...] or a polynomial table',
    "specific_heat": 'cp: "840 J/kg/K", a table or a polynomial table',
    "density": '"128 kg/m3"',
    "emissivity": "surface emissivity 0..1 (default 0.9)",
    "max_service_temperature": 'highest service temperature, e.g. "650 degC"',
    "category": "text",
    "source": "text: where the data come from",
    "notes": "text",
}

POLYNOMIAL = {
    "coefficients": "list of numbers, ascending powers of T",
    "temperature_unit": 'unit of T in the polynomial: "K", "degC" or "degF"',
    "unit": 'unit of the property value, e.g. "W/m/K"',
    "valid_from": 'lowest temperature of the fit, e.g. "20 degC"',
    "valid_to": 'highest temperature of the fit, e.g. "800 degC"',
}

_WALL_COMMON = {
    "name": "text label (unique in an enclosure)",
    "shape": '"slab", "cylinder" or "sphere" (default "slab")',
    "area": 'slab area, e.g. "1.2 m2"',
    "inner_radius": 'inner radius of a cylinder or sphere, e.g. "57 mm"',
    "inner_diameter": 'inner diameter of a cylinder or sphere (instead of inner_radius)',
    "length": 'cylinder length (default "1 m")',
    "orientation": '"side", "top" or "bottom" (default "side"); used by convection model "natural"',
    "interface_resistance": 'contact resistance per interface, e.g. ["0 m2K/W", "0.002 m2K/W"]',
    "mesh_refine": "factor on the default cell counts (default 1)",
    "layers": "array [[...layers]]: layers from the inner face outward",
    "inner_face": "table: conditions at the inner face",
    "outer_face": "table: conditions at the outer face",
}

WALL = dict(_WALL_COMMON)
ENCLOSURE_WALL = dict(_WALL_COMMON, bridge="table: a thermal bridge through the wall")

LAYER = {
    "material": "name of a bundled material or one from [materials.<name>]",
    "thickness": 'e.g. "100 mm"',
    "cells": "number of cells across the layer (default automatic)",
    "name": "text label (default: the material name)",
    "start_temperature": 'start temperature of this layer, e.g. "200 degC"',
    "conductivity_factor": "multiplier on the material's conductivity k(T), > 0 (default 1): a "
                           "design factor for ageing or workmanship, or an uncertain scale",
}

BRIDGE = {
    "area_fraction": "share of the wall area taken by the bridge, 0..1 (exclusive)",
    "material": "bridging material (bundled or from [materials.<name>])",
    "replaces_layers": "list of layer indices (0-based) the bridge replaces",
}

FACE = {
    "fixed_temperature": 'imposed surface temperature, value or [[time, temperature], ...]',
    "fluid_temperature": "temperature of the air (or other fluid) at the face, value or schedule",
    "film_coefficient": 'fixed convective film coefficient, e.g. "10 W/m2/K"',
    "convection": "table: a convection correlation (model = ...)",
    "emissivity": "number 0..1, a finish name, or [[temperature, emissivity], ...]",
    "surroundings_temperature": "radiant surroundings, value or schedule (default: fluid_temperature)",
    "sky_temperature": "sky temperature, value or schedule (needs sky_view)",
    "sky_view": "fraction of the view taken by the sky, 0..1",
    "heat_flux": 'imposed flux into the wall, e.g. "2 kW/m2" or a schedule',
    "heater_power": 'power of a heater spread over the face, e.g. "3 kW" or a schedule',
    "heater_area": "area the heater_power is spread over (default: the face area)",
    "solar_absorptivity": "solar absorptivity 0..1 (with solar_irradiance)",
    "solar_irradiance": 'solar irradiance on the face, e.g. "600 W/m2" or a schedule',
    "touch": 'outer face only: "touchable" (default), "guarded" or "out-of-reach" (fdwall touch)',
    "surface_class": 'outer face only: touch surface class "bare-metal", "coated-metal", '
                     '"ceramic-glass-stone", "plastic" or "wood" (default: from the outer layer)',
}

CHAMBER_FACE = {
    "film_coefficient": FACE["film_coefficient"],
    "convection": FACE["convection"],
    "emissivity": FACE["emissivity"],
}

CONVECTION_MODELS = ("natural", "vertical_plate", "horizontal_plate", "tilted_plate",
                     "horizontal_cylinder", "vertical_cylinder", "wind_plate", "wind_cylinder",
                     "power_law")

CONVECTION = {
    "model": "one of " + ", ".join(CONVECTION_MODELS),
    "height": "height of a vertical plate or cylinder, slant length of a tilted plate",
    "char_length": "area/perimeter of a horizontal plate",
    "facing": '"up" or "down" for a horizontal plate',
    "tilt": 'angle of the outward normal from straight up, e.g. "45 deg"',
    "diameter": "outside diameter of a cylinder (default: from a cylinder wall)",
    "length": "plate length along the wind",
    "wind_speed": 'e.g. "3 m/s"',
    "with_natural": "true: add natural convection to the wind (mixed)",
    "transition_reynolds": "transition Reynolds number of a wind plate (default 5e5)",
    "altitude": 'site altitude, e.g. "1500 m" (sets the air pressure)',
    "pressure": 'air pressure, e.g. "85 kPa"',
    "multiplier": "factor on the film coefficient (default 1)",
    "coefficient": 'power_law: a of h = a |T_face - T_fluid|^n, unit W/(m2 K^(1+n)), '
                   'e.g. "1.31 W/(m2 K^1.25)"',
    "exponent": 'power_law: n of h = a |T_face - T_fluid|^n, 0 .. 1, e.g. 0.25 or "1/3"',
}

# keys each model uses (besides model, altitude, pressure, multiplier)
CONVECTION_KEYS = {
    "natural": ("height", "char_length", "diameter"),
    "vertical_plate": ("height",),
    "horizontal_plate": ("char_length", "facing"),
    "tilted_plate": ("height", "tilt", "char_length"),
    "horizontal_cylinder": ("diameter",),
    "vertical_cylinder": ("height", "diameter"),
    "wind_plate": ("length", "wind_speed", "with_natural", "transition_reynolds"),
    "wind_cylinder": ("diameter", "wind_speed", "with_natural"),
    "power_law": ("coefficient", "exponent"),
}
# models that use no air properties, so altitude and pressure have no effect
CONVECTION_NO_AIR = ("power_law",)

CHAMBER = {
    "heat_capacity": 'contents (air, racks, load): "40 kJ/K" or [[temperature, capacity], ...]',
    "load_mass": 'mass of a load added to heat_capacity, e.g. "25 kg"',
    "load_specific_heat": 'specific heat of that load, e.g. "500 J/kg/K"',
    "room_temperature": 'air around the enclosure, for leakage and extra_loss (default 20 degC)',
    "volume": 'inner volume, e.g. "0.125 m3" (needed for leakage in air changes)',
    "leakage": 'air flow through the chamber: "12 m3/h" or air changes "2 1/h"',
    "extra_loss": 'further losses as a conductance, e.g. "1.5 W/K"',
    "inner_dimensions": 'inner width, depth, height of a box, e.g. ["0.5 m", "0.6 m", "0.4 m"]',
    "start_temperature": "start temperature of the chamber (default run.start_temperature)",
}

HEATER = {
    "power": 'rated power, e.g. "6 kW", or a schedule',
    "placement": '"chamber", "inner_face" or "interface"',
    "wall": "wall index (0-based) or name, for inner_face and interface",
    "after_layer": "for interface: the element lies after this layer (0-based)",
    "voltage_ratio": "supply voltage / rated voltage (default 1)",
    "resistance_coefficient": 'temperature coefficient of the element resistance, e.g. "0.0002 1/K"',
    "rated_at": 'element temperature at which power is rated (default 20 degC)',
}

CONTROL = {
    "mode": '"fixed", "duty", "thermostat" or "pid" (default "fixed")',
    "duty": "fraction of rated power 0..1, value or schedule (fixed and duty modes)",
    "switched": "true: full on/off within each period; false: period-averaged power",
    "period": 'cycle period and PID sampling interval (default "60 s")',
    "setpoint": "temperature or [[time, temperature], ...] (thermostat, pid)",
    "band": 'thermostat hysteresis, total width (default "2 K")',
    "sensor": '"chamber" or "wall"',
    "sensor_wall": "wall index (0-based) or name of a wall sensor (default 0)",
    "sensor_depth": 'depth of a wall sensor below the inner face (default "0 mm")',
    "proportional_gain": 'PID gain, e.g. "0.05 1/K"',
    "integral_gain": 'PID gain, e.g. "2e-4 1/K/s"',
    "derivative_gain": 'PID gain, e.g. "0 s/K"',
    "power_on": "master switch 0/1, value or [[time, 0 or 1], ...]",
}
