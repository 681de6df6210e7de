"""The layer key ``conductivity_factor``: a multiplier on a material's k(T).

Checked against the closed form of a series resistance (Incropera, Fundamentals of Heat and
Mass Transfer, sec. 3.1): q = (T_in - T_out) / (1/h_i + L/(f k) + 1/h_o).
"""

import pytest
from study_cases import ONE_LAYER_WALL

import fdwall
from fdwall.errors import InputError
from fdwall.materials import Constant, Polynomial, Table, get_material


def _case(tmp_path, factor_line):
    text = ONE_LAYER_WALL.replace('thickness = "50 mm"', 'thickness = "50 mm"\n' + factor_line)
    p = tmp_path / "wall.toml"
    p.write_text(text)
    return fdwall.load_case(p)


@pytest.mark.parametrize("f", [0.5, 1.0, 1.25])
def test_series_resistance_closed_form(tmp_path, f):
    ss = fdwall.solve_steady(_case(tmp_path, f"conductivity_factor = {f}"))
    q = (200.0 - 20.0) / (1 / 20.0 + 0.05 / (0.1 * f) + 1 / 10.0)
    T_out = 293.15 + q / 10.0
    assert float(ss.face_T[-1]) == pytest.approx(T_out, abs=1e-6)


def test_material_is_scaled_everywhere():
    m = get_material(fdwall.materials.list_materials()[0])
    m2 = m.with_conductivity_factor(1.1)
    for T in (300.0, 600.0, 900.0):
        assert float(m2.k(T)) == pytest.approx(1.1 * float(m.k(T)), rel=1e-12)
        assert float(m2.cp(T)) == float(m.cp(T))
    assert "k x1.1" in m2.name
    assert m.with_conductivity_factor(1.0) is m
    # every property model scales the same way
    for model in (Constant(2.0), Table((300.0, 400.0), (1.0, 2.0)),
                  Polynomial((1.0, 0.01), 300.0, 500.0)):
        assert float(model.scaled(3.0)(350.0)) == pytest.approx(3.0 * float(model(350.0)))


@pytest.mark.parametrize("bad", ["conductivity_factor = 0", "conductivity_factor = -1",
                                 'conductivity_factor = "1.1 W/m/K"',
                                 "conductivity_factor = 1e6"])
def test_bad_factor_names_the_key(tmp_path, bad):
    # common practice, no source: a clear error that names the key
    with pytest.raises(InputError, match="conductivity_factor"):
        _case(tmp_path, bad)
