"""Core features checked against closed-form results: chamber events, controller carry-over,
steady state with the heater switched off, per-layer start temperatures."""
import numpy as np
import pytest

from fdwall import (
    Case,
    Chamber,
    Control,
    EnclosureWall,
    Event,
    Face,
    Heater,
    Layer,
    RunSettings,
    Schedule,
    Wall,
    run,
    solve_steady,
)
from fdwall.materials import Constant, Material

# A box of six thin, very conductive walls behaves as one lumped node (Incropera §5.2,
# lumped capacitance): C dT/dt = P - (T - T_amb)/R.
STEEL = Material(name="cond", k=Constant(2000.0), cp=Constant(500.0), rho=8000.0)
H_OUT = 5.0
P = 1000.0
T_AMB = 293.15


def _box(duration=40000.0, events=(), control=None, heater_power=P, cap=1.0e4):
    walls = [EnclosureWall(wall=Wall(layers=(Layer(STEEL, 0.001, cells=2),), name=f"w{i}"),
                           outer=Face(fluid_temperature=T_AMB, convection=H_OUT), inner_face_convection=1e5)
             for i in range(6)]
    return Case(run=RunSettings(duration=duration, start_temperature=T_AMB, tolerance=1e-3,
                                watch=tuple(events)),
                walls=walls, chamber=Chamber(heat_capacity=cap, room_temperature=T_AMB),
                heater=Heater(power=heater_power), control=control or Control())


def _rc():
    # per wall: outer film 1/(h A) in series with negligible conduction and inner film
    r_wall = 1 / H_OUT + 0.001 / 2000.0 + 1 / 1e5
    R = r_wall / 6
    C = 1.0e4 + 6 * 8000 * 500 * 0.001
    return R, C


def test_chamber_event_time_matches_lumped_solution():
    R, C = _rc()
    T_star = T_AMB + 0.5 * P * R
    # exact crossing of T_amb + P R (1 - exp(-t/RC)) at half the final rise: t = RC ln 2
    res = run(_box(events=[Event(temperature=T_star, at="chamber", name="half rise")]))
    t_up = res.events["half rise"][0]
    assert t_up == pytest.approx(R * C * np.log(2.0), rel=2e-3)


def test_steady_with_heater_disabled_reports_heater_off():
    ctl = Control(mode="thermostat", setpoint=350.0, power_on=Schedule([0, 100, 100], [1, 1, 0]))
    st = solve_steady(_box(control=ctl))
    assert not st.heater_on and st.heater_power == 0.0 and st.duty == 0.0
    assert st.T[-1] == pytest.approx(T_AMB, abs=1e-9)      # nothing heats: room temperature


def test_controller_state_carries_over_between_runs():
    """A thermostat run in two halves, the second continuing the first's controller and
    temperatures, delivers the same mean power as the lumped energy balance requires:
    P_mean = (T_set - T_amb)/R at the hold (energy conservation)."""
    R, C = _rc()
    sp = T_AMB + 20.0
    ctl = Control(mode="thermostat", setpoint=sp, band=1.0)
    case = _box(duration=20000.0, control=ctl, heater_power=2000.0)
    first = run(case)
    second = run(case, initial=first.T[-1], control_state=first.control_state)
    # continuing: the heater state at the start of the second run is the end state of the first
    assert second.heater_power[0] == pytest.approx(first.heater_power[-1])
    e = second.heater_energy
    mean_power = (e[-1] - e[0]) / second.times[-1]
    assert mean_power == pytest.approx((sp - T_AMB) / R, rel=0.02)


def test_impossible_case_stops_with_partial_result():
    """Drawing 1 MW/m2 out of an adiabatic 50 mm slab (rho c = 1e6 J/m3/K) at 300 K empties
    its heat content above 0 K in rho c L T / q = 15 s (energy conservation): the solver must
    stop before then with a clear message and keep what it computed, marked incomplete."""
    from fdwall import ConvergenceError
    m = Material(name="x", k=Constant(1.0), cp=Constant(1000.0), rho=1000.0)
    c = Case(run=RunSettings(duration=3600.0, start_temperature=300.0),
             wall=Wall(layers=(Layer(m, 0.05),)), inner=Face(heat_flux=-1e6), outer=Face())
    with pytest.raises(ConvergenceError) as info:
        run(c)
    res = info.value.result
    assert res is not None and not res.complete
    assert "could not converge at t =" in str(info.value)
    assert res.stats["reached_s"] < 15.0
    assert res.times.size >= 1 and res.T[0, 0] == 300.0


def test_pinhole_bore_needs_no_warning():
    """A sphere with a pinhole bore (1e-6 of its radius) is solved accurately (see
    test_verify_transient.test_pinhole_centre_temperature against the series solution), so
    the case check raises no accuracy warning for it, nor for a realistic vessel."""
    from fdwall.case import case_warnings
    m = Material(name="x", k=Constant(1.0), cp=Constant(1000.0), rho=1000.0)
    tiny = Wall(layers=(Layer(m, 0.1),), shape="sphere", inner_radius=1e-6)
    vessel = Wall(layers=(Layer(m, 0.1),), shape="sphere", inner_radius=0.4)
    assert not case_warnings(Case(run=RunSettings(duration=1.0), wall=tiny))
    assert not case_warnings(Case(run=RunSettings(duration=1.0), wall=vessel))
