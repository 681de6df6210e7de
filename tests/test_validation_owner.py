"""One owner per validation rule: the rules between the parts of a case (heater, sensor and
watch entries against the walls, layers and chamber) live in fdwall.model; Case checks them,
and the case loader calls the same functions, so one bad input gives the same words whether
the case comes from a file or is built in Python.  The loader builds no system for it.

House rules of the project (DESIGN.md, "Layers"; no outside source).  The invented demo wall
below is a two-layer board slab (demo data).
"""
from __future__ import annotations

import dataclasses

import pytest
import tomllib

import fdwall
import fdwall.system as fsys
from fdwall.case import CaseError, case_from_dict
from fdwall.model import ModelError

CASE = """\
# demo data: a two-layer board slab between hot and room air (invented)
title = "demo slab for the validation owner"

[run]
duration = "1 h"

[materials.demo-board]
conductivity = "0.1 W/m/K"
specific_heat = "1000 J/kg/K"
density = "500 kg/m3"

[wall]
name = "slab"
area = "1 m2"

[[wall.layers]]
material = "demo-board"
thickness = "50 mm"

[[wall.layers]]
material = "demo-board"
thickness = "30 mm"

[wall.inner_face]
fluid_temperature = "200 degC"
film_coefficient = "10 W/m2/K"

[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "5 W/m2/K"
"""

HEATER = """
[heater]
power = "1 kW"
placement = "interface"
after_layer = {k}
"""

THERMOSTAT = """
[heater]
power = "1 kW"

[control]
mode = "thermostat"
setpoint = "100 degC"
sensor = "wall"
sensor_depth = "{d}"
"""

WATCH = """
[[run.watch]]
name = "probe"
temperature = "60 degC"
{spot}
"""


def _file(extra):
    data = tomllib.loads(CASE + extra)
    return case_from_dict(data, "demo.toml")


def _good():
    return _file("")


def _api(edit):
    """The good case rebuilt in Python with one part replaced (``edit(case) -> kwargs``)."""
    case = _good()
    return dataclasses.replace(case, **edit(case))


def _watch(**kw):
    return lambda c: {"run": dataclasses.replace(c.run, watch=(fdwall.Event(
        temperature=333.15, name="probe", **kw),))}


BAD = {
    "heater interface": (HEATER.format(k=3), lambda c: {"heater": fdwall.Heater(
        power=1000.0, placement="interface", after_layer=3)},
        "there is no interface after layer 3 in wall 'slab', which has 2 layer(s)",
        "a layer index 0..0"),
    "sensor depth": (THERMOSTAT.format(d="120 mm"), lambda c: {
        "heater": fdwall.Heater(power=1000.0, placement="inner_face"),
        "control": fdwall.Control(mode="thermostat", setpoint=373.15, sensor="wall",
                                  sensor_depth=0.12)},
        "a depth of 120 mm lies beyond the outer face of wall 'slab' (80 mm thick)",
        "a depth from 0 to 80 mm below the inner face"),
    "watch depth": (WATCH.format(spot='depth = "95 mm"'), _watch(at="", depth=0.095),
                    "a depth of 95 mm lies beyond the outer face of wall 'slab' (80 mm thick)",
                    "a depth from 0 to 80 mm below the inner face"),
    "watch interface": (WATCH.format(spot="after_layer = 1"), _watch(at="interface:2"),
                        "there is no interface after layer 1 in wall 'slab', which has 2 "
                        "layer(s)", "a layer index 0..0"),
    "watch chamber": (WATCH.format(spot='at = "chamber"'), _watch(at="chamber"),
                      "the watch entry 'probe' watches the chamber, but the case has none",
                      'at = "inner" or "outer", after_layer or depth for a single wall'),
}


@pytest.mark.parametrize("what", sorted(BAD))
def test_the_same_words_from_the_file_and_from_python(what):
    extra, edit, problem, allowed = BAD[what]
    with pytest.raises(CaseError) as from_file:
        _file(extra)
    with pytest.raises(ModelError) as from_python:
        _api(edit)
    for exc in (from_file.value, from_python.value):
        text = str(exc)
        assert problem in text, (what, text)
        assert allowed in text, (what, text)
    assert "demo.toml" in str(from_file.value)   # the loader names the file (and the key)


def test_a_good_case_passes_both_ways():
    # the control: the same parts, in range, are accepted by both paths
    _file(HEATER.format(k=0) + WATCH.format(spot='depth = "80 mm"'))
    _api(lambda c: {"heater": fdwall.Heater(power=1000.0, placement="interface", after_layer=0),
                    "run": dataclasses.replace(c.run, watch=(fdwall.Event(
                        temperature=333.15, at="", depth=0.08),))})


def test_the_loader_builds_no_system_to_check(monkeypatch):
    def no_build(*a, **k):
        raise AssertionError("the case loader built a system")
    monkeypatch.setattr(fsys, "build_system", no_build)
    with pytest.raises(CaseError, match="there is no interface after layer 3"):
        _file(HEATER.format(k=3))
    _file(WATCH.format(spot="after_layer = 0"))
