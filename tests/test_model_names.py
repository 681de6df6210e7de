"""One vocabulary: the model's Python names follow the case-file keys; the old names stay for a
release as deprecated aliases (constructor keywords and read-only properties).

Physics reference for the runs compared here: the steady heat flow through a plane wall with
a film on each side, q = A dT / (1/h1 + L/k + 1/h2) (series resistances; Incropera, DeWitt,
Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 6th ed., ch. 3), reached after many
time constants; with a contact resistance R'' the series gains R''.  Demo data (invented).
"""
from __future__ import annotations

import dataclasses
import warnings

import numpy as np
import pytest

from fdwall.materials import material_from_dict
from fdwall.model import (
    RENAMED,
    Bridge,
    Case,
    Chamber,
    Control,
    EnclosureWall,
    Event,
    Face,
    Heater,
    Layer,
    RunSettings,
    Wall,
)
from fdwall.schedule import Schedule
from fdwall.solver import run

# this file uses the old names on purpose: their warnings are not errors here (pyproject.toml
# makes them errors everywhere else)
pytestmark = pytest.mark.filterwarnings("default::DeprecationWarning")

K_B, RHO, CP = 0.1, 500.0, 1000.0                 # demo board [W/m/K], [kg/m3], [J/kg/K]
L1, L2, RC = 0.02, 0.03, 0.05                     # [m], [m], contact [m2.K/W]
H1, H2, T1, T2, AREA = 10.0, 5.0, 473.15, 293.15, 2.0

#: (class, old Python name, case-file key of docs/case-file.md = new Python name)
PAIRS = [(RunSettings, "initial", "start_temperature"),
         (RunSettings, "output_interval", "output_every"),
         (RunSettings, "profile_times", "snapshots"),
         (RunSettings, "events", "watch"),
         (Wall, "geometry", "shape"),
         (Wall, "contact", "interface_resistance"),
         (Layer, "initial", "start_temperature"),
         (Chamber, "initial", "start_temperature"),
         (Chamber, "ambient", "room_temperature"),
         (Face, "fluid", "fluid_temperature"),
         (Face, "surroundings", "surroundings_temperature"),
         (Chamber, "extra_ua", "extra_loss"),
         (Heater, "alpha", "resistance_coefficient"),
         (Heater, "t_ref", "rated_at"),
         (Control, "kp", "proportional_gain"),
         (Control, "ki", "integral_gain"),
         (Control, "kd", "derivative_gain"),
         (Control, "enable", "power_on"),
         (Face, "temperature", "fixed_temperature"),
         (Chamber, "box", "inner_dimensions"),
         (Bridge, "fraction", "area_fraction"),
         (Bridge, "layers", "replaces_layers"),
         (Event, "threshold", "temperature"),
         (Face, "flux", "heat_flux"),
         (Chamber, "capacity", "heat_capacity"),
         (Heater, "location", "placement"),
         (Heater, "interface", "after_layer"),
         (EnclosureWall, "inner_h", "inner_face_convection"),
         (EnclosureWall, "inner_emissivity", "inner_face_emissivity"),
         (Event, "where", "at")]


def _pairs(*which):
    """The PAIRS of the classes (or (class, old name)) given."""
    return [p for p in PAIRS if p[0] in which or (p[0], p[1]) in which]


CLASSES = (RunSettings, Wall, Layer, Chamber, Face, Heater, Control, Event, Bridge,
           EnclosureWall)


def _case(new: bool) -> Case:
    m = material_from_dict("demo-board", {"k": K_B, "cp": CP, "rho": RHO})
    layers = (Layer(m, L1), Layer(m, L2))
    if new:
        watch = (Event(temperature=330.0, at="outer", name="outer at 330 K"),)
        wall = Wall(layers, shape="slab", area=AREA, interface_resistance=(RC,), name="w")
        rs = RunSettings(duration=40 * 3600.0, start_temperature=T2, output_every=1800.0,
                         snapshots=(3600.0,), watch=watch)
    else:
        watch = (Event(threshold=330.0, where="outer", name="outer at 330 K"),)
        wall = Wall(layers, geometry="slab", area=AREA, contact=(RC,), name="w")
        rs = RunSettings(duration=40 * 3600.0, initial=T2, output_interval=1800.0,
                         profile_times=(3600.0,), events=watch)
    return Case(run=rs, wall=wall, inner=Face.exchange(T1, H1), outer=Face.exchange(T2, H2),
                name="demo two boards")


def test_the_table_of_renamed_names_is_the_one_documented():
    got = sorted((cls.__name__, old, new) for cls in CLASSES
                 for old, new in RENAMED[cls.__name__].items())
    assert got == sorted((c.__name__, o, n) for c, o, n in PAIRS)
    assert set(RENAMED) == {c.__name__ for c in CLASSES}
    fields = {c: {f.name for f in dataclasses.fields(c)} for c in CLASSES}
    for cls, old, new in PAIRS:
        assert new in fields[cls] and old not in fields[cls]


def test_old_names_warn_and_give_the_same_model_and_results():
    with warnings.catch_warnings():
        warnings.simplefilter("error")            # the new names never warn
        new = _case(True)
        res_new = run(new, progress=False)
    with pytest.warns(DeprecationWarning) as rec:
        old = _case(False)
    msgs = " ".join(str(w.message) for w in rec)
    for cls, old_name, new_name in _pairs(RunSettings, Wall, Event):
        assert f"{cls.__name__}.{old_name} is deprecated" in msgs and new_name in msgs
    assert old == new                            # the same frozen model
    # the old names still read, with a warning, the new fields
    for cls, old_name, new_name in _pairs(RunSettings, Wall):
        obj = new.run if cls is RunSettings else new.wall
        with pytest.warns(DeprecationWarning, match=f"{old_name} is deprecated"):
            assert getattr(obj, old_name) == getattr(obj, new_name)
    # dataclasses.replace with an old name changes the new field
    with pytest.warns(DeprecationWarning):
        r2 = dataclasses.replace(new.run, output_interval=900.0)
    assert r2.output_every == 900.0 and r2.start_temperature == T2
    # results identical to the last digit
    res_old = run(old, progress=False)
    for name in ("times", "T", "face_flow", "face_energy"):
        assert np.array_equal(getattr(res_old, name), getattr(res_new, name)), name
    assert res_old.events.keys() == res_new.events.keys()
    for k in res_new.events:
        assert np.array_equal(res_old.events[k], res_new.events[k], equal_nan=True)
    # and right: steady flow through the series resistances (Incropera ch. 3), 40 h >> tau
    q = AREA * (T1 - T2) / (1 / H1 + (L1 + L2) / K_B + RC + 1 / H2)
    assert res_new.face_flow[-1, 0] == pytest.approx(q, rel=2e-3)
    assert res_new.face_flow[-1, 1] == pytest.approx(-q, rel=2e-3)
    assert np.isfinite(res_new.events["outer at 330 K"][0])


def _box(new: bool) -> Case:
    """An insulated box heated at 300 W, one layer starting warmer (demo data, invented)."""
    m = material_from_dict("demo-board", {"k": K_B, "cp": CP, "rho": RHO})
    kw = dict(start_temperature=330.0) if new else dict(initial=330.0)
    wall = Wall((Layer(m, L1), Layer(m, L2, **kw)), area=AREA, name="box wall")
    ch_kw = (dict(room_temperature=T2, start_temperature=300.0) if new
             else dict(ambient=T2, initial=300.0))
    return Case(run=RunSettings(duration=60 * 3600.0, start_temperature=T2),
                walls=(EnclosureWall(wall, Face.exchange(T2, H2), inner_face_convection=H1),),
                chamber=Chamber(heat_capacity=2e4, leakage=0.0, **ch_kw), heater=Heater(300.0),
                name="demo box")


def test_layer_and_chamber_names_and_results():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        new = _box(True)
        res_new = run(new, progress=False)
    with pytest.warns(DeprecationWarning) as rec:
        old = _box(False)
    msgs = " ".join(str(w.message) for w in rec)
    for cls, old_name, new_name in _pairs(Layer, (Chamber, "initial"), (Chamber, "ambient")):
        assert f"{cls.__name__}.{old_name} is deprecated" in msgs
    assert old == new
    with pytest.warns(DeprecationWarning):
        assert new.chamber.ambient == new.chamber.room_temperature
    res_old = run(old, progress=False)
    assert np.array_equal(res_old.T, res_new.T)
    # the start temperatures are used: chamber node and outer layer start as given [K]
    assert res_new.chamber_T[0] == pytest.approx(300.0)
    assert res_new.wall_T(0)[0, -1] == pytest.approx(330.0)
    # steady chamber temperature of a heated box: 300 W through the series resistances
    # (Incropera ch. 3) above the room; 60 h is many time constants of this box
    R = 1 / (H1 * AREA) + (L1 + L2) / (K_B * AREA) + 1 / (H2 * AREA)
    assert res_new.chamber_T[-1] == pytest.approx(T2 + 300.0 * R, abs=0.5)


def test_face_names():
    with pytest.warns(DeprecationWarning) as rec:
        old = Face(fluid=T2, convection=H2, emissivity=0.9, surroundings=280.0)
    assert {str(w.message).split(" is ")[0] for w in rec} == {"Face.fluid", "Face.surroundings"}
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        new = Face(fluid_temperature=T2, convection=H2, emissivity=0.9,
                   surroundings_temperature=280.0)
        assert new == Face.exchange(T2, H2, emissivity=0.9, surroundings=280.0)
    assert old == new and new.surroundings_temperature(0.0) == 280.0
    with pytest.warns(DeprecationWarning):
        assert old.fluid(0.0) == T2
    with pytest.warns(DeprecationWarning, match="Face.temperature is deprecated"):
        held = Face(temperature=400.0)
    assert held == Face.fixed(400.0) and held.fixed_temperature(0.0) == 400.0
    with pytest.warns(DeprecationWarning):
        assert held.temperature(0.0) == 400.0


def _pid_box(new: bool) -> Case:
    """The box of _box under PID control with a temperature-dependent element (demo data)."""
    c = _box(True)
    off = [[0.0, 1.0], [30 * 3600.0, 1.0], [30 * 3600.0, 0.0]]
    sw = Schedule([t for t, _ in off], [v for _, v in off])
    if new:
        ctl = Control(mode="pid", setpoint=380.0, proportional_gain=0.1, integral_gain=1e-4,
                      derivative_gain=0.0, power_on=sw, period=30.0)
        hz = Heater(600.0, resistance_coefficient=1e-3, rated_at=T2)
        ch = dataclasses.replace(c.chamber, extra_loss=0.5)
    else:
        ctl = Control(mode="pid", setpoint=380.0, kp=0.1, ki=1e-4, kd=0.0, enable=sw,
                      period=30.0)
        hz = Heater(600.0, alpha=1e-3, t_ref=T2)
        ch = dataclasses.replace(c.chamber, extra_ua=0.5)
    return dataclasses.replace(c, control=ctl, heater=hz, chamber=ch)


def test_heater_control_and_chamber_loss_names_and_results():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        new = _pid_box(True)
        res_new = run(new, progress=False)
    with pytest.warns(DeprecationWarning) as rec:
        old = _pid_box(False)
    msgs = " ".join(str(w.message) for w in rec)
    for cls, old_name, new_name in _pairs((Heater, "alpha"), (Heater, "t_ref"), Control, (Chamber, "extra_ua")):
        assert f"{cls.__name__}.{old_name} is deprecated" in msgs, old_name
    assert old == new
    res_old = run(old, progress=False)
    for name in ("T", "heater_power", "heater_energy", "face_flow"):
        assert np.array_equal(getattr(res_old, name), getattr(res_new, name)), name
    # first law: heater energy = stored + losses (energy conservation); the ledger closes
    assert abs(res_new.residual[-1]) / res_new.heater_energy[-1] < 1e-6
    # the PID holds the setpoint before the power goes off at 30 h (within 1 K)
    mid = (res_new.times > 20 * 3600.0) & (res_new.times < 30 * 3600.0)
    assert np.all(np.abs(res_new.chamber_T[mid] - 380.0) < 1.0)
    # after power-off: no heater power
    assert np.all(res_new.heater_power[res_new.times > 30.5 * 3600.0] == 0.0)


def _bridged_box(new: bool) -> Case:
    """A box with a bridged wall and edge/corner correction (demo data, invented)."""
    c = _box(True)
    steel = material_from_dict("demo-stud", {"k": 45.0, "cp": 480.0, "rho": 7850.0})
    if new:
        br = Bridge(area_fraction=0.05, material=steel, replaces_layers=(1,))
        ch = dataclasses.replace(c.chamber, inner_dimensions=(0.6, 0.5, 0.7))
    else:
        br = Bridge(fraction=0.05, material=steel, layers=(1,))
        ch = dataclasses.replace(c.chamber, box=(0.6, 0.5, 0.7))
    return dataclasses.replace(c, walls=(dataclasses.replace(c.walls[0], bridge=br),),
                               chamber=ch)


def test_bridge_and_box_names_and_results():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        new = _bridged_box(True)
        res_new = run(new, progress=False)
    with pytest.warns(DeprecationWarning) as rec:
        old = _bridged_box(False)
    msgs = " ".join(str(w.message) for w in rec)
    for cls, old_name, new_name in _pairs(Bridge, (Chamber, "box")):
        assert f"{cls.__name__}.{old_name} is deprecated" in msgs, old_name
    assert old == new
    res_old = run(old, progress=False)
    assert np.array_equal(res_old.T, res_new.T)
    # the 5 % steel stud path carries more heat than the clear wall around it (parallel
    # paths: each path's flow ~ its area / its series resistance, Incropera ch. 3); the end
    # state is near steady after 60 h
    sysm = res_new.system
    clear, stud = sysm.path_of(0, bridge=False), sysm.path_of(0, bridge=True)
    q_clear = -res_new.face_flow[-1, 2 * clear + 1]     # heat leaving at the outer face [W]
    q_stud = -res_new.face_flow[-1, 2 * stud + 1]
    assert q_clear > 0 and q_stud / 0.05 > 1.2 * q_clear / 0.95


def _interface_heater(new: bool) -> Case:
    """Two boards with a heater element between them and a probe on that interface; both
    faces lose heat by films to room air (demo data, invented)."""
    m = material_from_dict("demo-board", {"k": K_B, "cp": CP, "rho": RHO})
    wall = Wall((Layer(m, L1), Layer(m, L2)), area=AREA, name="w")
    if new:
        hz = Heater(200.0, placement="interface", after_layer=0)
        watch = (Event(temperature=305.0, at="interface:1", name="probe"),)
        inner = Face(fluid_temperature=T2, convection=H1, heat_flux=-5.0)
    else:
        hz = Heater(200.0, location="interface", interface=0)
        watch = (Event(temperature=305.0, where="interface:1", name="probe"),)
        inner = Face(fluid_temperature=T2, convection=H1, flux=-5.0)
    return Case(run=RunSettings(duration=60 * 3600.0, start_temperature=T2, watch=watch),
                wall=wall, inner=inner, outer=Face.exchange(T2, H2), heater=hz,
                name="demo heated boards")


def test_heater_placement_face_flux_and_watch_spot_names_and_results():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        new = _interface_heater(True)
        res_new = run(new, progress=False)
    with pytest.warns(DeprecationWarning) as rec:
        old = _interface_heater(False)
    msgs = " ".join(str(w.message) for w in rec)
    for cls, old_name, new_name in _pairs((Heater, "location"), (Heater, "interface"),
                                          (Event, "where"), (Face, "flux")):
        assert f"{cls.__name__}.{old_name} is deprecated" in msgs, old_name
    assert old == new
    res_old = run(old, progress=False)
    assert np.array_equal(res_old.T, res_new.T)
    # the old names read in the old vocabulary, with a warning
    with pytest.warns(DeprecationWarning, match="Heater.location is deprecated"):
        assert new.heater.location == "interface"
    with pytest.warns(DeprecationWarning) as both:   # the old keyword and its old value
        assert Heater(100.0, location="inner").placement == "inner_face"
    said = " ".join(str(w.message) for w in both)
    assert "Heater placement 'inner' is deprecated" in said and "Heater.location" in said
    with pytest.warns(DeprecationWarning):
        assert Heater(100.0, placement="inner_face").location == "inner"
    # steady interface temperature (Incropera ch. 3, parallel resistances to the same air):
    # the element's 200 W and the 5 W/m2 drawn out of the inner face split between the two
    # resistances to room air, R_in = 1/(h1 A) + L1/(k A), R_out = L2/(k A) + 1/(h2 A);
    # an imposed flux -q at the inner face acts through R_in's film part only, so
    # T_i = T_air + (P R_out - q A (1/(h1 A)) R_out / ... ) is solved here as a 2-node network
    A = AREA
    g1, g2 = H1 * A, K_B * A / L1                  # film and board 1 [W/K]
    g3, g4 = K_B * A / L2, H2 * A                  # board 2 and film [W/K]
    # nodes: inner face (s), interface (i); outer side lumped as R_out = 1/g3 + 1/g4
    G = np.array([[g1 + g2, -g2], [-g2, g2 + 1 / (1 / g3 + 1 / g4)]])
    b = np.array([g1 * T2 - 5.0 * A, 200.0 + T2 / (1 / g3 + 1 / g4)])
    Ts, Ti = np.linalg.solve(G, b)
    assert res_new.interface_T(0)[-1, 0] == pytest.approx(Ti, abs=0.05)
    assert res_new.face_T[-1, 0] == pytest.approx(Ts, abs=0.05)
    assert np.isfinite(res_new.events["probe"][0])


def _box_names(new: bool) -> Case:
    """The box of _box with a chamber capacity, inner-face film and emissivity given by
    name (demo data, invented)."""
    c = _box(True)
    ew = c.walls[0]
    if new:
        ew = dataclasses.replace(ew, inner_face_convection=H1, inner_face_emissivity=0.8)
        ch = dataclasses.replace(c.chamber, heat_capacity=3e4)
        watch = (Event(temperature=320.0, at="chamber", name="air"),)
    else:
        ew = dataclasses.replace(ew, inner_h=H1, inner_emissivity=0.8)
        ch = dataclasses.replace(c.chamber, capacity=3e4)
        watch = (Event(temperature=320.0, where="chamber", name="air"),)
    return dataclasses.replace(c, walls=(ew,), chamber=ch,
                               run=dataclasses.replace(c.run, watch=watch))


def test_chamber_capacity_and_inner_face_names_and_results():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        new = _box_names(True)
        res_new = run(new, progress=False)
    with pytest.warns(DeprecationWarning) as rec:
        old = _box_names(False)
    msgs = " ".join(str(w.message) for w in rec)
    for cls, old_name, new_name in _pairs(EnclosureWall, (Chamber, "capacity"),
                                          (Event, "where")):
        assert f"{cls.__name__}.{old_name} is deprecated" in msgs, old_name
    assert old == new
    with pytest.warns(DeprecationWarning):
        assert new.walls[0].inner_h == new.walls[0].inner_face_convection == H1
    with pytest.warns(DeprecationWarning):
        assert new.chamber.capacity == new.chamber.heat_capacity
    res_old = run(old, progress=False)
    assert np.array_equal(res_old.T, res_new.T)
    # steady state (60 h, many time constants): the 300 W leave through the boards and the
    # outer film in series (Incropera ch. 3), which fixes the inner face temperature; from
    # the chamber to that face they pass by convection and grey radiation in parallel,
    # 300 = A [h1 (Tc - Ts) + eps sigma (Tc^4 - Ts^4)] (Stefan-Boltzmann law)
    from scipy.optimize import brentq
    sigma = 5.670374419e-8                        # CODATA 2018 [W/m2/K4]
    Ts = T2 + 300.0 * ((L1 + L2) / (K_B * AREA) + 1 / (H2 * AREA))
    Tc = brentq(lambda T: AREA * (H1 * (T - Ts) + 0.8 * sigma * (T ** 4 - Ts ** 4)) - 300.0,
                Ts, Ts + 200.0)
    assert res_new.chamber_T[-1] == pytest.approx(Tc, abs=0.5)
    assert res_new.face_T[-1, 0] == pytest.approx(Ts, abs=0.5)
