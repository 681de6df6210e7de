"""Transient outputs of study variants against closed forms.

A 5 mm steel plate between two fixed films has a Biot number h L / k = 0.003, so its
temperature follows the lumped-capacitance law (Incropera, Fundamentals of Heat and Mass
Transfer, 6th ed., sec. 5.1-5.3, eq. 5.6 generalised to two films):

    rho c L dT/dt = h_i (T_i - T) + h_o (T_o - T)
    T(t) = T_eq + (T_0 - T_eq) exp(-t / tau),  T_eq = (h_i T_i + h_o T_o) / (h_i + h_o),
    tau = rho c L / (h_i + h_o)

so the time to reach a skin limit T_lim is -tau ln((T_lim - T_eq) / (T_0 - T_eq)) (the
across-plate difference, q L / k = 0.12 K, is the lumped error).  After 30 tau the plate is
steady: the peak skin temperature is the steady series-resistance value (Incropera sec. 3.1,
eq. 3.19) and the stored energy is rho c A L (mean of the linear profile - T_0) (energy
conservation, Incropera sec. 1.3).
"""
import math

import pytest

from fdwall.cautions import SAFETY_CAUTION
from fdwall.cli import main
from fdwall.errors import InputError
from fdwall.safety import touch_limit
from fdwall.study import read_study, run_study

RHO, CP, K, L, HI, HO, TI, TO = 7850.0, 480.0, 50.0, 0.005, 20.0, 10.0, 473.15, 293.15

PLATE = f"""
title = "thin steel plate between two films (invented test case)"
[run]
duration = "6 h"
start_temperature = "20 degC"
output_every = "10 s"
[materials.demo-steel]
conductivity = "{K} W/m/K"
specific_heat = "{CP} J/kg/K"
density = "{RHO} kg/m3"
[wall]
area = "2 m2"
[[wall.layers]]
material = "demo-steel"
thickness = "{L * 1000} mm"
[wall.inner_face]
fluid_temperature = "200 degC"
film_coefficient = "{HI} W/m2/K"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "{HO} W/m2/K"
"""

STUDY = """
base = "plate.toml"
outputs = ["peak_skin_T_K", "stored_energy_J", "time_to_limit_s", "touch_limit_K",
           "touch_margin_K", "touch_verdict"]
skin_limit = "{lim} degC"
[[vary]]
path = "wall.inner_face.film_coefficient"
values = ["20 W/m2/K", "40 W/m2/K"]
"""


def _study(tmp_path, lim=60):
    (tmp_path / "plate.toml").write_text(PLATE)
    p = tmp_path / "p-study.toml"
    p.write_text(STUDY.format(lim=lim))
    return p


def test_transient_outputs_against_lumped_and_steady_closed_forms(tmp_path):
    _, rows = run_study(_study(tmp_path), tmp_path, workers=1)
    assert all(r["status"] == "done" for r in rows)
    for r, hi in zip(rows, (20.0, 40.0)):
        t_eq = (hi * TI + HO * TO) / (hi + HO)
        tau = RHO * CP * L / (hi + HO)
        t_lim = -tau * math.log((333.15 - t_eq) / (TO - t_eq))
        assert r["time_to_limit_s"] == pytest.approx(t_lim, rel=0.01)
        q = (TI - TO) / (1 / hi + L / K + 1 / HO)               # W/m2, steady
        t_out = TO + q / HO
        t_in = TI - q / hi
        assert r["peak_skin_T_K"] == pytest.approx(t_out, abs=0.02)
        stored = RHO * CP * 2.0 * L * (0.5 * (t_in + t_out) - TO)
        assert r["stored_energy_J"] == pytest.approx(stored, rel=2e-3)
        # touch: the limit of a bare steel face at the default 10 s contact (the threshold
        # table itself is checked against ISO 13732-1 in tests/test_safety.py)
        lim = touch_limit("bare-metal", 10.0)
        assert r["touch_limit_K"] == lim
        assert r["touch_margin_K"] == pytest.approx(lim - r["peak_skin_T_K"])
        assert r["touch_verdict"] == ("above-limit" if r["peak_skin_T_K"] > lim
                                      else "below-limit")
    assert rows[0]["touch_verdict"] == "above-limit"      # 140 degC plate: too hot to touch


def test_limit_never_reached_is_inf(tmp_path):
    # the plate never gets above T_eq (140 / 160 degC): a 300 degC limit is never reached
    _, rows = run_study(_study(tmp_path, lim=300), tmp_path, workers=1)
    assert all(math.isinf(r["time_to_limit_s"]) for r in rows)


def test_output_errors(tmp_path):
    # common practice, no source: clear errors naming the key
    p = _study(tmp_path)
    p.write_text(STUDY.format(lim=60).replace('skin_limit = "60 degC"\n', ""))
    with pytest.raises(InputError, match="needs skin_limit"):
        read_study(p)
    p.write_text(STUDY.format(lim=60).replace('"peak_skin_T_K"', '"peak_skin_T"'))
    with pytest.raises(InputError, match="Did you mean peak_skin_T_K"):
        read_study(p)
    p.write_text(STUDY.format(lim=60).replace('"peak_skin_T_K"', '"warmup_time_s"'))
    with pytest.raises(InputError, match="needs an enclosure"):
        read_study(p)


def test_cli_touch_outputs_carry_the_caution(tmp_path, capsys):
    p = _study(tmp_path)
    assert main(["study", str(p), "--out", str(tmp_path / "o"), "--workers", "1",
                 "--no-plots"]) == 0
    text = capsys.readouterr().out
    assert SAFETY_CAUTION in text


# An enclosure whose walls store next to nothing (density 1 kg/m3, wall time constant about
# 2 s) around a chamber of capacity C heated at full power P until the thermostat's setpoint:
# C dT/dt = P - UA (T - T_a), UA = A / (1/h_i + L/k + 1/h_o) (lumped chamber with quasi-steady
# walls; Incropera sec. 5.3 with a source term), so the warm-up time to the setpoint T_s is
# -C/UA ln(1 - UA (T_s - T_a) / P).
BOX = """
title = "lumped chamber behind weightless walls (invented test case)"
[run]
duration = "3 h"
start_temperature = "20 degC"
output_every = "20 s"
[materials.demo-foil]
conductivity = "0.05 W/m/K"
specific_heat = "1000 J/kg/K"
density = "1 kg/m3"
[chamber]
heat_capacity = "50 kJ/K"
room_temperature = "20 degC"
[heater]
power = "2 kW"
placement = "chamber"
[control]
mode = "thermostat"
sensor = "chamber"
setpoint = "200 degC"
band = "2 K"
[[walls]]
name = "box"
area = "2 m2"
[walls.inner_face]
film_coefficient = "10 W/m2/K"
[[walls.layers]]
material = "demo-foil"
thickness = "10 mm"
[walls.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "10 W/m2/K"
"""


def test_warmup_time_against_lumped_chamber(tmp_path):
    (tmp_path / "box.toml").write_text(BOX)
    p = tmp_path / "w-study.toml"
    p.write_text('base = "box.toml"\noutputs = ["warmup_time_s"]\n[[vary]]\n'
                 'path = "heater.power"\nvalues = ["2 kW", "3 kW"]\n')
    _, rows = run_study(p, tmp_path, workers=1)
    assert all(r["status"] == "done" for r in rows), rows[0]["error"]
    ua = 2.0 / (1 / 10 + 0.01 / 0.05 + 1 / 10)
    for r, P in zip(rows, (2000.0, 3000.0)):
        t = -50e3 / ua * math.log(1 - ua * 180.0 / P)
        assert r["warmup_time_s"] == pytest.approx(t, rel=0.01)
