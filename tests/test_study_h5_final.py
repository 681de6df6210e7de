"""The CSV table is the incremental, resumable record of a study; the HDF5 file is written once,
complete, and a run that changes the table first removes an older one (never a stale HDF5 next
to a newer CSV).  The answers are checked against the series-resistance closed form of a steady
one-layer plane wall (Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., sec. 3.1,
eq. 3.19).
"""
import pytest
from study_cases import ONE_LAYER_WALL

import fdwall.cli.study as cli_study
from fdwall.cli import main
from fdwall.study import read_table

GRID = """
base = "wall.toml"
outputs = ["outer_T_K", "loss_W"]
[[vary]]
path = "wall.layers[0].thickness"
values = ["20 mm", "30 mm", "40 mm", "60 mm", "80 mm", "100 mm"]
"""


def _q(L):
    return 180.0 / (1 / 20 + L / 0.1 + 1 / 10)


def _run(tmp_path, *extra):
    return main(["study", str(tmp_path / "h-study.toml"), "--out", str(tmp_path / "o"),
                 "--workers", "1", "--quiet", "--no-plots", *extra])


def test_interrupted_restart_leaves_no_stale_h5(tmp_path, monkeypatch):
    (tmp_path / "wall.toml").write_text(ONE_LAYER_WALL)
    (tmp_path / "h-study.toml").write_text(GRID)
    assert _run(tmp_path) == 0
    h5 = tmp_path / "o" / "h-study.h5"
    csv = tmp_path / "o" / "h-study.csv"
    assert h5.exists()
    df = read_table(h5)
    for t, q in zip(df["wall.layers[0].thickness"], df["loss [W]"]):
        assert q == pytest.approx(_q(float(t.split()[0]) / 1000), rel=1e-6)

    real = cli_study.run_study

    def stopped(*a, **k):
        def hook(indices, rows):
            raise KeyboardInterrupt
        return real(*a, batch=2, on_batch=hook, **k)

    monkeypatch.setattr(cli_study, "run_study", stopped)
    assert _run(tmp_path, "--restart") == 130
    assert not h5.exists()                       # the old final file would be stale
    assert len(read_table(csv)) == 2             # the partial, resumable record
    monkeypatch.setattr(cli_study, "run_study", real)
    assert _run(tmp_path) == 0                   # resume: the HDF5 is written, complete
    df = read_table(h5)
    assert len(df) == 6 and set(df["status"]) == {"done"}


def test_a_refused_table_keeps_its_h5(tmp_path):
    (tmp_path / "wall.toml").write_text(ONE_LAYER_WALL)
    (tmp_path / "h-study.toml").write_text(GRID)
    assert _run(tmp_path) == 0
    (tmp_path / "h-study.toml").write_text(GRID.replace('"100 mm"', '"110 mm"'))
    assert _run(tmp_path) == 2                   # another study: refused, nothing touched
    assert (tmp_path / "o" / "h-study.h5").exists()
