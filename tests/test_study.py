"""Design studies (fdwall.study): grid variants against closed forms and single runs."""
import csv

import pytest
from study_cases import ONE_LAYER_WALL

import fdwall
from fdwall.errors import InputError
from fdwall.study import read_study, run_study

CASE = ONE_LAYER_WALL

STUDY = """
base = "wall.toml"
[[vary]]
path = "wall.layers[0].thickness"
values = ["25 mm", "50 mm", "100 mm"]
[[vary]]
path = "materials.demo-board.conductivity"
values = ["0.05 W/m/K", "0.2 W/m/K"]
"""


def _files(tmp_path, study=STUDY):
    (tmp_path / "wall.toml").write_text(CASE)
    p = tmp_path / "s-study.toml"
    p.write_text(study)
    return p


def test_grid_against_series_resistance(tmp_path):
    # Steady plane wall, constant k, fixed films: q = dT / (1/h_i + L/k + 1/h_o) per m2,
    # T_out = T_o + q/h_o (series thermal resistance; Incropera, Fundamentals of Heat and
    # Mass Transfer, 6th ed., sec. 3.1, eq. 3.19).
    p = _files(tmp_path)
    csv_path, rows = run_study(p, tmp_path, workers=2)
    assert len(rows) == 6 and all(r["status"] == "done" for r in rows)
    for r in rows:
        L = float(r["wall.layers[0].thickness"].split()[0]) / 1000
        k = float(r["materials.demo-board.conductivity"].split()[0])
        q = 180.0 / (1 / 20 + L / k + 1 / 10)
        assert r["loss_W"] == pytest.approx(q, rel=1e-6)
        assert r["outer_T_K"] == pytest.approx(293.15 + q / 10, abs=1e-6)
    with open(csv_path) as f:
        lines = list(csv.reader(f))
    assert lines[0][0].startswith("# study_sha256=") and len(lines) == 8


def test_grid_equals_individual_runs(tmp_path):
    # a variant equals the same case edited by hand and run alone (the series-resistance
    # check above ties both to the closed form)
    p = _files(tmp_path)
    _, rows = run_study(p, tmp_path, workers=1)
    (tmp_path / "one.toml").write_text(CASE.replace('"50 mm"', '"100 mm"').replace(
        '"0.1 W/m/K"', '"0.05 W/m/K"'))
    ss = fdwall.solve_steady(fdwall.load_case(tmp_path / "one.toml"))
    r = [r for r in rows if r["wall.layers[0].thickness"] == "100 mm"
         and r["materials.demo-board.conductivity"] == "0.05 W/m/K"][0]
    assert r["outer_T_K"] == pytest.approx(float(ss.face_T[-1]), abs=1e-9)


def test_bad_inputs(tmp_path):
    # common practice, no source: clear errors naming file and key
    with pytest.raises(InputError, match="Did you mean layers"):
        read_study(_files(tmp_path, STUDY.replace("wall.layers[0]", "wall.layer[0]")))
    with pytest.raises(InputError, match="out of range"):
        read_study(_files(tmp_path, STUDY.replace("layers[0]", "layers[3]")))
    with pytest.raises(InputError, match="non-empty list"):
        read_study(_files(tmp_path, 'base = "wall.toml"\n[[vary]]\npath = "title"\nvalues = []\n'))
    with pytest.raises(InputError, match="'base'"):
        read_study(_files(tmp_path, "[[vary]]\n"))


def test_failed_variant_recorded(tmp_path):
    # a variant the loader rejects (negative thickness) is a 'failed' row with its error
    p = _files(tmp_path, STUDY.replace('"25 mm"', '"-5 mm"'))
    _, rows = run_study(p, tmp_path, workers=1)
    bad = [r for r in rows if r["status"] == "failed"]
    assert len(bad) == 2 and all("thickness" in r["error"] for r in bad)


def test_cli_and_read_table(tmp_path, capsys):
    # closed form as in test_grid_against_series_resistance (Incropera sec. 3.1)
    import json

    import h5py

    from fdwall.cli import main
    from fdwall.study import read_table
    p = _files(tmp_path)
    assert main(["study", str(p), "--out", str(tmp_path / "o"), "--workers", "1",
                 "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["summary"]["variants"] == 6 and d["summary"]["failed"] == 0
    df = read_table(tmp_path / "o" / "s-study.csv")
    assert len(df) == 6
    q_max = 180.0 / (1 / 20 + 0.025 / 0.2 + 1 / 10)
    assert df["loss [W]"].max() == pytest.approx(q_max, rel=1e-6)
    with h5py.File(tmp_path / "o" / "s-study.h5") as h:
        assert h.attrs["kind"] == "study"
    assert main(["study", str(tmp_path / "missing.toml")]) == 2
    assert main(["study", str(p), "--workers", "0"]) == 2
