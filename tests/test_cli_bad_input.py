"""The bad-input rule on the command line.

Rule (fdwall contributor rules, "bad input"): a case file that is wrong in any way gives ONE
paragraph on stderr that names the file, the key (or the line of a TOML syntax error), what
was wrong and what is allowed; exit code 2; never a Python traceback; and nothing is written
to the output folder.

Each test starts from one of the demo cases in ``cases/`` (demo data, invented), applies ONE
mutation, writes the mutated case to ``tmp_path`` and runs ``fdwall run CASE --out DIR
--no-plots`` in-process (a few also through a subprocess, for the real exit code and stderr,
and through ``fdwall check`` / ``fdwall steady``).

What counts as "impossible" or "not allowed" below is taken from outside fdwall:
- absolute zero, 0 K = -273.15 degC = -459.67 degF (SI Brochure, 9th ed., sec. 2.3.1; NIST
  SP 811) -- no temperature may lie at or below it;
- an emissivity, absorptivity or view factor is a fraction 0..1 (Incropera et al.,
  Fundamentals of Heat and Mass Transfer, 7th ed., sec. 12.3 and 13.1: eps <= 1 for any real
  surface, a view factor is a share of the radiation leaving a surface);
- thickness, area, radius, density, conductivity and heat capacity are positive for any real
  body (a layer of zero or negative thickness does not exist) -- common practice, no source;
- a schedule is a function of time, so its times cannot go backwards (common practice, no
  source);
- the case-file format itself (keys, units, what each table allows) is docs/case-file.md;
- TOML syntax and UTF-8 encoding: the TOML 1.0.0 specification (toml.io), which requires
  UTF-8 and refuses duplicate keys.
"""
from __future__ import annotations

import copy
import json
import math
import os
import subprocess
import sys
from pathlib import Path

import pytest
import tomllib

import fdwall.cli as cli

REPO = Path(__file__).resolve().parents[1]
CASES = REPO / "cases"
DEMO = {
    "oven": "curing-oven-panel.toml",
    "lab": "lab-furnace-wall.toml",
    "pipe": "hot-oil-pipe.toml",
    "furnace": "heat-treat-furnace.toml",
}


def _text(which: str) -> str:
    return (CASES / DEMO[which]).read_text(encoding="utf-8")


def _data(which: str) -> dict:
    return tomllib.loads(_text(which))


# --------------------------------------------------------------------------- a tiny TOML writer
# (no TOML writer is installed; the mutated dict is written back as one inline value per
# top-level key, which tomllib reads back into the same dict)

def _key(k) -> str:
    return json.dumps(str(k), ensure_ascii=False)


def _val(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v, ensure_ascii=False)
    if isinstance(v, list):
        return "[" + ", ".join(_val(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{_key(k)} = {_val(x)}" for k, x in v.items()) + "}"
    raise TypeError(type(v))


def dump_toml(data: dict) -> str:
    return "".join(f"{_key(k)} = {_val(v)}\n" for k, v in data.items())


def test_writer_round_trips_every_demo_case():
    for which in DEMO:
        d = _data(which)
        assert tomllib.loads(dump_toml(d)) == d


# --------------------------------------------------------------------------- mutations

def _get(d, path):
    for p in path:
        d = d[p]
    return d


def SET(*path_and_value):
    *path, value = path_and_value

    def edit(d):
        _get(d, path[:-1])[path[-1]] = copy.deepcopy(value)
    return edit


def DEL(*path):
    def edit(d):
        del _get(d, path[:-1])[path[-1]]
    return edit


def RENAME(*path_and_new):
    *path, new = path_and_new

    def edit(d):
        parent = _get(d, path[:-1])
        # keep the order of the keys
        items = [(new if k == path[-1] else k, v) for k, v in parent.items()]
        parent.clear()
        parent.update(items)
    return edit


def BOTH(*edits):
    def edit(d):
        for e in edits:
            e(d)
    return edit


L0 = ("wall", "layers", 0)
W0 = ("walls", 0)
OUT = ("wall", "outer_face")
INN = ("wall", "inner_face")

# (id, demo case, edit of the parsed dict, key path expected in the message, words expected)
MUTATIONS = [
    # ---- unknown / misspelt keys (docs/case-file.md: every table lists its keys)
    ("top-level-typo", "oven", RENAME("title", "titel"), "titel", ["unknown key", "title"]),
    ("layer-thickness-typo", "oven", RENAME(*L0, "thickness", "thicknes"),
     "wall.layers[0].thicknes", ["did you mean 'thickness'"]),
    ("face-film-typo", "pipe", RENAME(*INN, "film_coefficient", "film_coeficient"),
     "wall.inner_face.film_coeficient", ["film_coefficient"]),
    ("convection-height-typo", "oven", RENAME(*OUT, "convection", "height", "heigth"),
     "wall.outer_face.convection.heigth", ["height"]),
    ("run-duration-typo", "lab", RENAME("run", "duration", "durations"),
     "run.durations", ["duration"]),
    ("watch-key-typo", "pipe", RENAME("run", "watch", 0, "after_layer", "afterlayer"),
     "run.watch[0].afterlayer", ["after_layer"]),
    ("material-key-typo", "lab", RENAME("materials", "demo-microporous-panel", "density",
                                        "densty"),
     "materials.demo-microporous-panel.densty", ["density"]),
    ("chamber-key-typo", "furnace", RENAME("chamber", "leakage", "leakge"), "chamber.leakge",
     ["leakage"]),
    ("heater-key-typo", "furnace", RENAME("heater", "power", "powr"), "heater.powr",
     ["power"]),
    # ---- missing keys
    ("missing-duration", "oven", DEL("run", "duration"), "run.duration", ["missing"]),
    ("missing-thickness", "pipe", DEL("wall", "layers", 1, "thickness"),
     "wall.layers[1].thickness", ["missing"]),
    ("missing-material", "lab", DEL("wall", "layers", 2, "material"),
     "wall.layers[2].material", ["missing"]),
    ("missing-run", "oven", DEL("run"), "run", ["missing"]),
    ("missing-wall", "oven", DEL("wall"), "(top level)", ["wall", "walls"]),
    ("missing-pipe-diameter", "pipe", DEL("wall", "inner_diameter"), "wall",
     ["inner_radius", "inner_diameter"]),
    # ---- units: missing, wrong kind, unknown, absolute vs difference
    ("thickness-bare-number", "oven", SET(*L0, "thickness", 100), "wall.layers[0].thickness",
     ["no unit"]),
    ("thickness-wrong-unit", "lab", SET("wall", "layers", 1, "thickness", "114 kg"),
     "wall.layers[1].thickness", ["mass", "length"]),
    ("thickness-unknown-unit", "pipe", SET("wall", "layers", 1, "thickness", "80 mmm"),
     "wall.layers[1].thickness", ["unknown unit"]),
    ("temperature-bare-number", "oven", SET(*OUT, "fluid_temperature", 25),
     "wall.outer_face.fluid_temperature", ["no unit"]),
    ("temperature-as-difference", "lab", SET("run", "start_temperature", "30 delta_degC"),
     "run.start_temperature", ["difference", "absolute"]),
    ("temperature-in-coulomb", "oven", SET(*OUT, "fluid_temperature", "25 C"),
     "wall.outer_face.fluid_temperature", ["degC"]),
    ("film-product-after-slash", "pipe", SET(*INN, "film_coefficient", "350 W/m2K"),
     "wall.inner_face.film_coefficient", ["W/(m2*K)"]),
    ("duration-in-metres", "oven", SET("run", "duration", "8 m"), "run.duration",
     ["length", "time"]),
    ("heater-power-as-flux", "furnace", SET("heater", "power", "6 kW/m2"), "heater.power",
     ["heat flux", "power"]),
    ("leakage-wrong-unit", "furnace", SET("chamber", "leakage", "3 kg"), "chamber.leakage",
     ["air flow"]),
    ("schedule-value-no-unit", "pipe", SET(*OUT, "solar_irradiance", [["0 h", 0], ["6 h", 200]]),
     "wall.outer_face.solar_irradiance[0][1]", ["no unit"]),
    ("schedule-time-no-unit", "oven", SET(*INN, "fluid_temperature", [[0, "25 degC"],
                                                                      [20, "200 degC"]]),
     "wall.inner_face.fluid_temperature[0][0]", ["no unit"]),
    # ---- zero / negative sizes
    ("thickness-negative", "pipe", SET("wall", "layers", 0, "thickness", "-6.02 mm"),
     "wall.layers[0].thickness", ["greater than zero"]),
    ("thickness-zero", "oven", SET("wall", "layers", 2, "thickness", "0 mm"),
     "wall.layers[2].thickness", ["greater than zero"]),
    ("area-zero", "oven", SET("wall", "area", "0 m2"), "wall.area", ["greater than zero"]),
    ("area-negative-enclosure", "furnace", SET(*W0, "area", "-0.385 m2"), "walls[0].area",
     ["greater than zero"]),
    ("diameter-negative", "pipe", SET("wall", "inner_diameter", "-102 mm"),
     "wall.inner_diameter", ["greater than zero"]),
    ("length-zero", "pipe", SET("wall", "length", "0 m"), "wall.length", ["greater than zero"]),
    ("density-zero", "lab", SET("materials", "demo-microporous-panel", "density", "0 kg/m3"),
     "materials.demo-microporous-panel.density", ["greater than zero"]),
    ("conductivity-negative-in-table", "furnace",
     SET("materials", "demo-fibre-door-board", "conductivity",
         [["200 degC", "0.07 W/m/K"], ["600 degC", "-0.12 W/m/K"]]),
     "materials.demo-fibre-door-board.conductivity[1][1]", ["greater than zero"]),
    ("heat-capacity-negative", "furnace", SET("chamber", "heat_capacity", "-6 kJ/K"),
     "chamber.heat_capacity", ["greater than zero"]),
    ("duration-zero", "lab", SET("run", "duration", "0 h"), "run.duration",
     ["greater than zero"]),
    ("cells-zero", "oven", SET(*L0, "cells", 0), "wall.layers[0].cells", [">= 1"]),
    ("mesh-refine-negative", "lab", SET("wall", "mesh_refine", -2), "wall.mesh_refine",
     ["greater than zero"]),
    ("wind-speed-negative", "pipe", SET(*OUT, "convection", "wind_speed", "-3 m/s"),
     "wall.outer_face.convection.wind_speed", ["negative"]),
    ("heater-power-negative", "furnace", SET("heater", "power", "-6 kW"), "heater.power",
     ["negative"]),
    # ---- fractions 0..1
    ("emissivity-above-1", "oven", SET(*OUT, "emissivity", 1.2), "wall.outer_face.emissivity",
     ["between 0 and 1"]),
    ("emissivity-percent-above-1", "pipe", SET(*OUT, "emissivity", "120 %"),
     "wall.outer_face.emissivity", ["between 0 and 1"]),
    ("emissivity-negative-enclosure", "furnace", SET(*W0, "inner_face", "emissivity", -0.2),
     "walls[0].inner_face.emissivity", ["between 0 and 1"]),
    ("emissivity-table-above-1", "lab", SET(*OUT, "emissivity", [["20 degC", 0.9],
                                                                  ["500 degC", 1.3]]),
     "wall.outer_face.emissivity[1][1]", ["between 0 and 1"]),
    ("material-emissivity-above-1", "lab",
     SET("materials", "demo-microporous-panel", "emissivity", 1.5),
     "materials.demo-microporous-panel.emissivity", ["between 0 and 1"]),
    ("unknown-finish", "oven", SET(*OUT, "emissivity", "painted_steal"),
     "wall.outer_face.emissivity", ["painted_steel"]),
    ("sky-view-above-1", "pipe", SET(*OUT, "sky_view", 2), "wall.outer_face.sky_view",
     ["between 0 and 1"]),
    ("solar-absorptivity-negative", "pipe", SET(*OUT, "solar_absorptivity", -0.3),
     "wall.outer_face.solar_absorptivity", ["between 0 and 1"]),
    ("bridge-fraction-above-1", "furnace", SET("walls", 4, "bridge", "area_fraction", 1.5),
     "walls[4].bridge.area_fraction", ["between 0 and 1"]),
    ("power-on-above-1", "furnace", SET("control", "power_on", [["0 h", 1], ["5 h", 2]]),
     "control.power_on[1][1]", ["between 0 and 1"]),
    ("duty-above-1", "furnace", BOTH(SET("control", {"mode": "duty", "duty": 1.5})),
     "control.duty", ["between 0 and 1"]),
    # ---- temperatures at / below absolute zero
    ("start-below-absolute-zero", "oven", SET("run", "start_temperature", "-300 degC"),
     "run.start_temperature", ["absolute zero"]),
    ("zero-kelvin", "pipe", SET(*OUT, "fluid_temperature", "0 K"),
     "wall.outer_face.fluid_temperature", ["absolute zero"]),
    ("layer-start-below-zero-degF", "lab", SET("wall", "layers", 0, "start_temperature",
                                               "-500 degF"),
     "wall.layers[0].start_temperature", ["absolute zero"]),
    ("sky-schedule-below-zero", "pipe", SET(*OUT, "sky_temperature", [["0 h", "-12 degC"],
                                                                      ["6 h", "-280 degC"]]),
     "wall.outer_face.sky_temperature[1][1]", ["absolute zero"]),
    ("setpoint-below-zero", "furnace", SET("control", "setpoint", "-274 degC"),
     "control.setpoint", ["absolute zero"]),
    ("watch-threshold-below-zero", "oven", SET("run", "watch", 0, "temperature", "-1 K"),
     "run.watch[0].temperature", ["absolute zero"]),
    ("service-temperature-below-zero", "lab",
     SET("materials", "demo-microporous-panel", "max_service_temperature", "-300 degC"),
     "materials.demo-microporous-panel.max_service_temperature", ["absolute zero"]),
    # ---- unknown names and choices
    ("unknown-material", "oven", SET("wall", "layers", 1, "material", "mineral-wool-46"),
     "wall.layers[1].material", ["mineral-wool-64"]),
    ("unknown-bridge-material", "furnace", SET("walls", 4, "bridge", "material", "castable"),
     "walls[4].bridge.material", ["castable-insulating"]),
    ("unknown-shape", "pipe", SET("wall", "shape", "tube"), "wall.shape", ["cylinder"]),
    ("unknown-orientation", "oven", SET("wall", "orientation", "sideways"), "wall.orientation",
     ["side"]),
    ("unknown-convection-model", "oven", SET(*OUT, "convection", "model", "vertical"),
     "wall.outer_face.convection.model", ["vertical_plate"]),
    ("unknown-control-mode", "furnace", SET("control", "mode", "fuzzy"), "control.mode",
     ["pid"]),
    ("unknown-watch-spot", "oven", SET("run", "watch", 0, "at", "middle"), "run.watch[0].at",
     ["inner", "outer"]),
    # ---- wrong types
    ("title-number", "oven", SET("title", 5), "title", ["text"]),
    ("material-number", "pipe", SET("wall", "layers", 0, "material", 5),
     "wall.layers[0].material", ["material name"]),
    ("thickness-boolean", "oven", SET(*L0, "thickness", True), "wall.layers[0].thickness",
     ["boolean"]),
    ("thickness-table", "lab", SET("wall", "layers", 0, "thickness", {"value": "50 mm"}),
     "wall.layers[0].thickness", ["length"]),
    ("cells-fraction", "oven", SET(*L0, "cells", 2.5), "wall.layers[0].cells", ["whole number"]),
    ("with-natural-text", "pipe", SET(*OUT, "convection", "with_natural", "yes"),
     "wall.outer_face.convection.with_natural", ["true or false"]),
    ("layers-single-table", "oven", SET("wall", "layers", {"material": "carbon-steel",
                                                           "thickness": "2 mm"}),
     "wall.layers", ["array of tables"]),
    ("run-is-text", "oven", SET("run", "8 h"), "run", ["table"]),
    ("snapshots-not-list", "oven", SET("run", "snapshots", "1 h"), "run.snapshots", ["list"]),
    ("emissivity-boolean", "oven", SET(*OUT, "emissivity", True), "wall.outer_face.emissivity",
     ["emissivity"]),
    ("replaces-layers-text", "furnace", SET("walls", 4, "bridge", "replaces_layers", "door"),
     "walls[4].bridge.replaces_layers", ["layer indices"]),
    # ---- empty tables / lists
    ("layers-empty", "oven", SET("wall", "layers", []), "wall.layers", ["empty"]),
    ("run-empty-table", "lab", SET("run", {}), "run.duration", ["missing"]),
    ("wall-empty-table", "oven", SET("wall", {}), "wall.layers", ["missing"]),
    ("material-empty-table", "lab", SET("materials", "demo-microporous-panel", {}),
     "materials.demo-microporous-panel.conductivity", ["missing"]),
    ("convection-empty-table", "oven", SET(*OUT, "convection", {}),
     "wall.outer_face.convection.model", ["missing"]),
    ("schedule-empty-list", "pipe", SET(*INN, "fluid_temperature", []),
     "wall.inner_face.fluid_temperature", ["non-empty"]),
    ("walls-empty", "furnace", SET("walls", []), "walls", ["empty"]),
    ("heater-empty-table", "furnace", SET("heater", {}), "heater.power", ["missing"]),
    # ---- huge, NaN and inf numbers
    ("thickness-nan", "oven", SET(*L0, "thickness", float("nan")), "wall.layers[0].thickness",
     ["finite"]),
    ("emissivity-nan", "pipe", SET(*OUT, "emissivity", float("nan")),
     "wall.outer_face.emissivity", ["finite"]),
    ("sky-view-inf", "pipe", SET(*OUT, "sky_view", float("inf")), "wall.outer_face.sky_view",
     ["finite"]),
    ("thickness-text-inf", "lab", SET("wall", "layers", 0, "thickness", "inf mm"),
     "wall.layers[0].thickness", ["number"]),
    ("temperature-overflow", "oven", SET(*OUT, "fluid_temperature", "1e400 degC"),
     "wall.outer_face.fluid_temperature", ["finite"]),
    ("mesh-refine-nan", "lab", SET("wall", "mesh_refine", float("nan")), "wall.mesh_refine",
     ["finite"]),
    # ---- schedules
    ("schedule-backwards", "pipe", SET(*OUT, "sky_temperature", [["0 h", "-12 degC"],
                                                                  ["14 h", "2 degC"],
                                                                  ["6 h", "-14 degC"]]),
     "wall.outer_face.sky_temperature[2][0]", ["backwards"]),
    ("schedule-backwards-lab-heater", "lab",
     SET(*INN, "heater_power", [["0 h", "0 kW"], ["6 h", "3.6 kW"], ["0.5 h", "3.6 kW"]]),
     "wall.inner_face.heater_power[2][0]", ["backwards"]),
    ("schedule-time-three-times", "oven",
     SET(*INN, "fluid_temperature", [["0 min", "25 degC"], ["20 min", "25 degC"],
                                     ["20 min", "200 degC"], ["20 min", "150 degC"]]),
     "wall.inner_face.fluid_temperature[3][0]", ["three times"]),
    ("schedule-negative-time", "oven",
     SET(*INN, "fluid_temperature", [["-20 min", "25 degC"], ["20 min", "200 degC"]]),
     "wall.inner_face.fluid_temperature[0][0]", ["negative"]),
    ("schedule-entry-not-pair", "pipe", SET(*INN, "fluid_temperature", [["0 h", "15 degC"],
                                                                         ["2 h"]]),
     "wall.inner_face.fluid_temperature[1]", ["pair"]),
    ("table-temperatures-not-increasing", "lab",
     SET("materials", "demo-microporous-panel", "conductivity",
         [["400 degC", "0.026 W/m/K"], ["20 degC", "0.021 W/m/K"]]),
     "materials.demo-microporous-panel.conductivity[1][0]", ["increase"]),
    ("polynomial-range-inverted", "lab",
     SET("materials", "demo-microporous-panel", "specific_heat", "valid_to", "10 degC"),
     "materials.demo-microporous-panel.specific_heat.valid_to", ["valid_from"]),
    ("snapshot-after-end", "pipe", SET("run", "snapshots", ["1 h", "25 h"]), "run.snapshots[1]",
     ["after the end"]),
    ("steady-at-after-end", "lab", SET("run", "steady_at", "17 h"), "run.steady_at",
     ["after the end"]),
    ("output-every-longer-than-run", "oven", SET("run", "output_every", "9 h"),
     "run.output_every", ["longer"]),
    # ---- references: walls, layers, interfaces, depths
    ("heater-on-missing-wall-index", "furnace",
     SET("heater", {"power": "6 kW", "placement": "inner_face", "wall": 7}), "heater.wall",
     ["out of range"]),
    ("heater-on-missing-wall-name", "furnace",
     SET("heater", {"power": "6 kW", "placement": "inner_face", "wall": "dor"}), "heater.wall",
     ["'door'"]),
    ("heater-on-missing-wall-single", "lab",
     SET("heater", {"power": "1 kW", "placement": "inner_face", "wall": 1}), "heater.wall",
     ["out of range"]),
    ("heater-interface-out-of-range", "lab",
     SET("heater", {"power": "1 kW", "placement": "interface", "after_layer": 3}),
     "heater.after_layer", ["no interface"]),
    ("heater-interface-negative", "furnace",
     SET("heater", {"power": "6 kW", "placement": "interface", "wall": 0, "after_layer": -1}),
     "heater.after_layer", ["no interface"]),
    ("watch-interface-out-of-range", "pipe", SET("run", "watch", 0, "after_layer", 2),
     "run.watch[0].after_layer", ["no interface"]),
    ("watch-wall-out-of-range", "furnace", SET("run", "watch", 0, "wall", 5), "run.watch[0].wall",
     ["out of range"]),
    ("watch-depth-outside-wall", "oven",
     SET("run", "watch", 0, {"depth": "150 mm", "temperature": "50 degC"}),
     "run.watch[0].depth", ["beyond the outer face"]),
    ("sensor-depth-outside-wall", "furnace",
     BOTH(SET("control", "sensor", "wall"), SET("control", "sensor_wall", "roof"),
          SET("control", "sensor_depth", "1 m")),
     "control.sensor_depth", ["beyond the outer face"]),
    ("sensor-depth-negative", "furnace",
     BOTH(SET("control", "sensor", "wall"), SET("control", "sensor_depth", "-5 mm")),
     "control.sensor_depth", ["negative"]),
    ("sensor-wall-missing", "furnace",
     BOTH(SET("control", "sensor", "wall"), SET("control", "sensor_wall", 9)),
     "control.sensor_wall", ["out of range"]),
    ("interface-resistance-count", "lab",
     SET("wall", "interface_resistance", ["0 m2K/W", "0.005 m2K/W"]),
     "wall.interface_resistance", ["3 interface"]),
    ("interface-resistance-negative", "furnace",
     SET(*W0, "interface_resistance", ["0 m2K/W", "-0.002 m2K/W"]),
     "walls[0].interface_resistance[1]", ["negative"]),
    ("bridge-layer-out-of-range", "furnace", SET("walls", 4, "bridge", "replaces_layers", [5]),
     "walls[4].bridge.replaces_layers", ["does not exist"]),
    # ---- contradictions and keys without effect
    ("wall-and-walls", "oven", SET("walls", [{"area": "1 m2"}]), "walls", ["exclude"]),
    ("film-and-convection", "oven", SET(*OUT, "film_coefficient", "8 W/m2/K"),
     "wall.outer_face.convection", ["exclude"]),
    ("fixed-and-fluid", "pipe", SET(*INN, "fixed_temperature", "250 degC"),
     "wall.inner_face.fluid_temperature", ["fixed_temperature"]),
    ("pid-without-setpoint", "furnace", DEL("control", "setpoint"), "control.setpoint",
     ["needs a setpoint"]),
    ("control-without-heater", "lab", SET("control", {"mode": "duty", "duty": 0.5}), "control",
     ["heater"]),
    ("duplicate-wall-name", "furnace", SET("walls", 1, "name", "side walls"), "walls[1].name",
     ["twice"]),
    ("air-changes-without-volume", "furnace", DEL("chamber", "volume"), "chamber.leakage",
     ["chamber.volume"]),
    # ---- huge and tiny magnitudes (before the range checks these overflowed, divided by
    # zero, ran out of memory, or ran and gave impossible results without a word)
    ("thickness-huge", "oven", SET(*L0, "thickness", "1e300 m"), "wall.layers[0].thickness",
     ["largest length", "100000 m"]),
    ("thickness-tiny", "pipe", SET("wall", "layers", 0, "thickness", "1e-300 m"),
     "wall.layers[0].thickness", ["smallest length", "1e-06 m"]),
    ("thickness-below-a-micrometre", "oven", SET(*L0, "thickness", "1e-7 m"),
     "wall.layers[0].thickness", ["smallest length", "continuum"]),
    ("bore-tiny", "pipe", SET("wall", "inner_diameter", "1e-300 m"), "wall.inner_diameter",
     ["smallest length", "pinhole"]),
    ("bore-huge", "pipe", SET("wall", "inner_diameter", "1e300 m"), "wall.inner_diameter",
     ["largest length"]),
    ("area-huge", "oven", SET("wall", "area", "1e300 m2"), "wall.area", ["largest area"]),
    ("area-tiny", "furnace", SET(*W0, "area", "1e-300 m2"), "walls[0].area", ["smallest area"]),
    ("mesh-refine-huge", "lab", SET("wall", "mesh_refine", 1e9), "wall.mesh_refine",
     ["at most 100"]),
    ("cells-huge", "oven", SET(*L0, "cells", 10 ** 12), "wall.layers[0].cells",
     ["from 1 to 10000"]),
    ("cells-times-refine-huge", "oven", BOTH(SET(*L0, "cells", 500),
                                             SET("wall", "mesh_refine", 50)),
     "wall.layers[0].cells", ["25000 cells"]),
    ("film-coefficient-huge", "pipe", SET(*INN, "film_coefficient", "1e300 W/m2/K"),
     "wall.inner_face.film_coefficient", ["largest film coefficient"]),
    ("fluid-temperature-huge", "oven", SET(*OUT, "fluid_temperature", "1e30 K"),
     "wall.outer_face.fluid_temperature", ["largest absolute temperature", "10000 K"]),
    ("sky-temperature-huge", "pipe", SET(*OUT, "sky_temperature", "1e300 K"),
     "wall.outer_face.sky_temperature", ["largest absolute temperature"]),
    ("start-temperature-huge", "lab", SET("run", "start_temperature", "1e300 K"),
     "run.start_temperature", ["largest absolute temperature"]),
    ("setpoint-huge", "furnace", SET("control", "setpoint", "1e30 degC"), "control.setpoint",
     ["largest absolute temperature"]),
    ("duration-huge", "oven", SET("run", "duration", "1e300 h"), "run.duration",
     ["largest time"]),
    ("output-every-tiny", "oven", SET("run", "output_every", "1e-300 s"), "run.output_every",
     ["smallest time"]),
    ("too-many-outputs", "oven", BOTH(SET("run", "duration", "1e10 s"),
                                      SET("run", "output_every", "1 h")),
     "run.output_every", ["output times", "more than fdwall keeps"]),
    ("tolerance-tiny", "oven", SET("run", "tolerance", "1e-300 K"), "run.tolerance",
     ["smallest temperature difference"]),
    ("density-huge", "lab", SET("materials", "demo-microporous-panel", "density", "1e300 kg/m3"),
     "materials.demo-microporous-panel.density", ["largest density"]),
    ("density-tiny", "lab", SET("materials", "demo-microporous-panel", "density",
                                "1e-300 kg/m3"),
     "materials.demo-microporous-panel.density", ["smallest density"]),
    ("conductivity-huge", "lab", SET("materials", "demo-microporous-panel", "conductivity",
                                     "1e300 W/m/K"),
     "materials.demo-microporous-panel.conductivity", ["largest thermal conductivity"]),
    ("specific-heat-tiny", "lab", SET("materials", "demo-microporous-panel", "specific_heat",
                                      "1e-300 J/kg/K"),
     "materials.demo-microporous-panel.specific_heat", ["smallest specific heat"]),
    ("polynomial-value-huge", "lab", SET("materials", "demo-microporous-panel", "specific_heat",
                                         "coefficients", [1e9]),
     "materials.demo-microporous-panel.specific_heat.coefficients",
     ["largest specific heat"]),
    ("contact-resistance-tiny", "lab",
     SET("wall", "interface_resistance", ["0 m2K/W", "1e-300 m2K/W", "0 m2K/W"]),
     "wall.interface_resistance[1]", ["perfect contact", "zero, or"]),
    ("contact-resistance-huge", "lab",
     SET("wall", "interface_resistance", ["0 m2K/W", "1e300 m2K/W", "0 m2K/W"]),
     "wall.interface_resistance[1]", ["largest contact resistance"]),
    ("chamber-capacity-tiny", "furnace", BOTH(SET("chamber", "heat_capacity", "1e-300 J/K"),
                                              DEL("chamber", "load_mass"),
                                              DEL("chamber", "load_specific_heat")),
     "chamber.heat_capacity", ["smallest heat capacity"]),
    ("load-mass-huge", "furnace", SET("chamber", "load_mass", "1e300 kg"), "chamber.load_mass",
     ["largest mass"]),
    ("leakage-huge", "furnace", SET("chamber", "leakage", "1e300 m3/h"), "chamber.leakage",
     ["largest volume flow"]),
    ("voltage-ratio-huge", "furnace", SET("heater", "voltage_ratio", 1e300),
     "heater.voltage_ratio", ["at most 10"]),
    ("resistance-coefficient-huge", "furnace",
     SET("heater", "resistance_coefficient", "1e300 1/K"), "heater.resistance_coefficient",
     ["largest coefficient per kelvin"]),
    ("multiplier-huge", "pipe", SET(*OUT, "convection", "multiplier", 1e300),
     "wall.outer_face.convection.multiplier", ["at most 100"]),
    ("wind-speed-huge", "pipe", SET(*OUT, "convection", "wind_speed", "1e300 m/s"),
     "wall.outer_face.convection.wind_speed", ["largest speed"]),
    ("heat-flux-huge-negative", "lab", SET(*INN, "heat_flux", "-1e300 W/m2"),
     "wall.inner_face.heat_flux", ["in magnitude", "largest heat flux"]),
    ("heater-area-tiny", "lab", SET(*INN, "heater_area", "1e-9 m2"),
     "wall.inner_face.heater_area", ["heater_power / heater_area", "largest heat flux"]),
]

IDS = [m[0] for m in MUTATIONS]
assert len(set(IDS)) == len(IDS), "mutation ids must be unique"

# Mutations fdwall cannot refuse without changes outside the case-file layer: id -> reason
XFAIL: dict = {}


def _flat(text: str) -> str:
    """Messages are wrapped paragraphs: compare words, not line breaks."""
    return " ".join(text.split())


def _write(tmp_path: Path, which: str, edit) -> Path:
    d = _data(which)
    edit(d)
    f = tmp_path / f"audit-{which}.toml"
    f.write_text(dump_toml(d), encoding="utf-8")
    return f


def _check_refused(rc, raw_err, f: Path, out_dir: Path | None, key: str, words, what=""):
    err = _flat(raw_err)
    assert rc == 2, (what, rc, raw_err)
    assert "Traceback" not in raw_err, raw_err
    # one paragraph: a single 'fdwall: error:' at the start, no blank line inside
    assert raw_err.startswith("fdwall: error:") and raw_err.count("fdwall: error:") == 1, raw_err
    assert "\n\n" not in raw_err.strip(), raw_err
    assert str(f) in err, err                                # names the file
    assert key in err, (key, err)                            # names the key
    for w in words:                                          # says what was wrong / allowed
        assert w in err, (w, err)
    if out_dir is not None:                                  # nothing written
        assert not out_dir.exists() or not any(out_dir.rglob("*")), list(out_dir.rglob("*"))


def _params():
    out = []
    for m in MUTATIONS:
        marks = [pytest.mark.xfail(strict=True, reason=XFAIL[m[0]])] if m[0] in XFAIL else []
        out.append(pytest.param(*m, id=m[0], marks=marks))
    return out


@pytest.mark.parametrize("label, which, edit, key, words", _params())
def test_mutated_demo_case_is_refused_by_run(tmp_path, capsys, label, which, edit, key, words):
    f = _write(tmp_path, which, edit)
    out_dir = tmp_path / "out"
    rc = cli.main(["run", str(f), "--out", str(out_dir), "--no-plots"])
    _, err = capsys.readouterr()
    _check_refused(rc, err, f, out_dir, f"key {key}", words, label)


# --------------------------------------------------------------------------- the file itself

def _refused_text(tmp_path, capsys, name: str, content: bytes, words, cmd="run"):
    f = tmp_path / name
    f.write_bytes(content)
    out_dir = tmp_path / "out"
    argv = [cmd, str(f)] + (["--out", str(out_dir), "--no-plots"] if cmd == "run" else [])
    rc = cli.main(argv)
    _, err = capsys.readouterr()
    _check_refused(rc, err, f, out_dir, "", words, name)
    return err


OVEN = _text("oven")


def _line_of(text: str, needle: str) -> int:
    return text[:text.index(needle)].count("\n") + 1


# TOML syntax errors: the message names the file and the line (TOML 1.0.0 specification)
SYNTAX = [
    ("unclosed-table-header", "[wall]\n", "[wall\n", "[wall\n"),
    ("unclosed-string", 'thickness = "100 mm"', 'thickness = "100 mm', 'thickness = "100 mm'),
    ("missing-value", 'area = "2.4 m2"', "area = ", "area = "),
    ("duplicate-key", 'name = "insulation"', 'name = "insulation"\nname = "wool"',
     'name = "wool"'),
    ("bare-word-value", 'shape = "slab"', "shape = slab", "shape = slab"),
    ("unclosed-array", 'snapshots = ["15 min", "1 h", "3 h", "8 h"]',
     'snapshots = ["15 min", "1 h", "3 h", "8 h"\n', "snapshots"),
]


@pytest.mark.parametrize("label, old, new, marker", SYNTAX, ids=[x[0] for x in SYNTAX])
def test_toml_syntax_error_names_file_and_line(tmp_path, capsys, label, old, new, marker):
    assert old in OVEN, label
    text = OVEN.replace(old, new, 1)
    err = _refused_text(tmp_path, capsys, "broken.toml", text.encode(), ["not valid TOML"])
    # the line named is the edited one (or, for an unclosed array, the one where TOML gives up
    # looking for the ']', which is after it)
    line = int(_flat(err).split("at line ")[1].split(",")[0])
    assert line >= _line_of(text, marker), err
    if label != "unclosed-array":
        assert line == _line_of(text, marker), err


def test_empty_file(tmp_path, capsys):
    _refused_text(tmp_path, capsys, "nothing.toml", b"", ["holds no keys", "[run]"])


def test_file_with_only_comments(tmp_path, capsys):
    _refused_text(tmp_path, capsys, "notes.toml", b"# to do: the oven panel\n\n# later\n",
                  ["empty or has only comments"])


def test_non_utf8_bytes_name_the_line(tmp_path, capsys):
    # "250 degC" written with a Latin-1 degree sign (0xb0) on line 3: not UTF-8 (TOML 1.0.0
    # requires UTF-8)
    text = b'title = "oven"\n[run]\nduration = "8 h" # 250 \xb0C\n'
    _refused_text(tmp_path, capsys, "latin1.toml", text, ["not UTF-8", "line 3", "0xb0"])


def test_binary_file(tmp_path, capsys):
    _refused_text(tmp_path, capsys, "picture.toml", bytes(range(256)) * 4, ["not UTF-8"])


def test_utf8_byte_order_mark_is_read(tmp_path, capsys):
    # a UTF-8 byte-order mark (as some editors write) is not an error: the demo case still loads
    f = tmp_path / "bom.toml"
    f.write_bytes(b"\xef\xbb\xbf" + OVEN.encode("utf-8"))
    assert cli.main(["check", str(f)]) == 0, capsys.readouterr().err


def test_missing_file(tmp_path, capsys):
    f = tmp_path / "no-such-case.toml"
    out_dir = tmp_path / "out"
    rc = cli.main(["run", str(f), "--out", str(out_dir), "--no-plots"])
    _, err = capsys.readouterr()
    _check_refused(rc, err, f, out_dir, "", ["does not exist"])


def test_directory_instead_of_file(tmp_path, capsys):
    d = tmp_path / "cases.toml"
    d.mkdir()
    out_dir = tmp_path / "out"
    rc = cli.main(["run", str(d), "--out", str(out_dir), "--no-plots"])
    _, err = capsys.readouterr()
    _check_refused(rc, err, d, out_dir, "", ["folder"])


# --------------------------------------------------------------------------- baseline

@pytest.mark.parametrize("which", list(DEMO))
def test_unmutated_demo_cases_pass_check(tmp_path, capsys, which):
    """The refusals above come from the mutations: the same files unmutated are valid."""
    f = _write(tmp_path, which, lambda d: None)
    assert cli.main(["check", str(f)]) == 0, capsys.readouterr().err


# --------------------------------------------------------------------------- check, steady

SOME = ["layer-thickness-typo", "thickness-negative", "emissivity-above-1",
        "start-below-absolute-zero", "unknown-material", "schedule-backwards",
        "heater-on-missing-wall-name", "sensor-depth-outside-wall", "thickness-huge",
        "voltage-ratio-huge", "contact-resistance-tiny", "layers-empty"]
BY_ID = {m[0]: m for m in MUTATIONS}


@pytest.mark.parametrize("command", ["check", "steady"])
@pytest.mark.parametrize("label", SOME)
def test_check_and_steady_refuse_too(tmp_path, capsys, command, label):
    _, which, edit, key, words = BY_ID[label]
    f = _write(tmp_path, which, edit)
    rc = cli.main([command, str(f)])
    out, err = capsys.readouterr()
    _check_refused(rc, err, f, None, f"key {key}", words, label)
    assert out == ""  # no half report on stdout


# --------------------------------------------------------------------------- safety net

def test_arithmetic_failure_while_setting_up_is_input_error(tmp_path, capsys, monkeypatch):
    """Should a value slip past the checks and overflow while the case is set up, the command
    still says which file, exits with 2 and writes nothing (no traceback)."""
    import fdwall.system

    def overflow(case):
        raise OverflowError("(34, 'Numerical result out of range')")
    monkeypatch.setattr(fdwall.system, "build_system", overflow)
    f = _write(tmp_path, "oven", lambda d: None)
    out_dir = tmp_path / "out"
    rc = cli.main(["run", str(f), "--out", str(out_dir), "--no-plots"])
    _, err = capsys.readouterr()
    _check_refused(rc, err, f, out_dir, "", ["OverflowError", "far outside"])


# --------------------------------------------------------------------------- real processes

def _env():
    env = dict(os.environ)
    env["PYTHONPATH"] = str(REPO) + os.pathsep + env.get("PYTHONPATH", "")
    env["MPLBACKEND"] = "Agg"
    return env


SUBPROCESS = ["thickness-bare-number", "thickness-huge", "heater-on-missing-wall-index"]


@pytest.mark.parametrize("label", SUBPROCESS)
def test_subprocess_exit_code_and_stderr(tmp_path, label):
    _, which, edit, key, words = BY_ID[label]
    f = _write(tmp_path, which, edit)
    out_dir = tmp_path / "out"
    p = subprocess.run([sys.executable, "-m", "fdwall.cli", "run", str(f), "--out", str(out_dir),
                        "--no-plots"], cwd=tmp_path, capture_output=True, text=True, env=_env(),
                       timeout=600)
    assert p.stdout == ""
    _check_refused(p.returncode, p.stderr, f, out_dir, f"key {key}", words, label)


def test_subprocess_syntax_error(tmp_path):
    f = tmp_path / "broken.toml"
    text = OVEN.replace("[wall]\n", "[wall\n", 1)
    f.write_text(text, encoding="utf-8")
    out_dir = tmp_path / "out"
    p = subprocess.run([sys.executable, "-m", "fdwall.cli", "run", str(f), "--out", str(out_dir),
                        "--no-plots"], cwd=tmp_path, capture_output=True, text=True, env=_env(),
                       timeout=600)
    _check_refused(p.returncode, p.stderr, f, out_dir, f"line {_line_of(text, '[wall')}",
                   ["not valid TOML"])
