"""fdwall study on the command line: plots and --no-plots, the progress bar, --restart,
--scheduler errors, and the demo study in cases/studies/.

The demo's figures are checked against the physics they must obey: the skin warms with a
higher conductivity factor and cools with more wool (series resistance, Incropera,
Fundamentals of Heat and Mass Transfer, 6th ed., sec. 3.1), so their partial rank
correlations have those signs.
"""
import json
from pathlib import Path

from study_cases import ONE_LAYER_WALL

from fdwall.cautions import SAFETY_CAUTION
from fdwall.cli import main

ROOT = Path(__file__).resolve().parents[1]

STUDY = """
base = "wall.toml"
outputs = ["outer_T_K", "peak_skin_T_K"]
method = "monte-carlo"
samples = 30
[[uncertain]]
path = "wall.layers[0].conductivity_factor"
distribution = "uniform"
low = 0.5
high = 1.5
[exceed]
outer_T_K = "45 degC"
"""


def _files(tmp_path, text=STUDY):
    (tmp_path / "wall.toml").write_text(ONE_LAYER_WALL)
    p = tmp_path / "c-study.toml"
    p.write_text(text)
    return p


def test_plots_written_and_no_plots_honoured(tmp_path, capsys):
    # common practice, no source: the files a user is told about exist and are PNGs
    p = _files(tmp_path)
    assert main(["study", str(p), "--out", str(tmp_path / "a"), "--workers", "1", "--seed",
                 "3", "--json"]) == 0
    files = json.loads(capsys.readouterr().out)["files"]
    pngs = [f for f in files if f.endswith(".png")]
    assert {Path(f).name for f in pngs} == {"c-study-outer_T_K.png",
                                            "c-study-peak_skin_T_K.png",
                                            "c-study-sensitivity.png"}
    for f in pngs:
        assert open(f, "rb").read(8) == b"\x89PNG\r\n\x1a\n"
    assert main(["study", str(p), "--out", str(tmp_path / "b"), "--workers", "1", "--seed",
                 "3", "--json", "--no-plots"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert not any(f.endswith(".png") for f in d["files"])
    assert not list((tmp_path / "b").glob("*.png"))


def test_progress_bar_counts_done_and_failed(tmp_path, capsys):
    # a negative conductivity factor is refused by the loader: failed variants are counted
    p = _files(tmp_path, STUDY.replace("low = 0.5", "low = -0.5"))
    assert main(["study", str(p), "--out", str(tmp_path / "o"), "--workers", "1", "--seed",
                 "5", "--progress", "--no-plots"]) == 0
    cap = capsys.readouterr()
    last = cap.err.replace("\r", "\n").strip().splitlines()
    bar = [ln for ln in last if "30/30" in ln][-1]
    import csv
    rows = list(csv.DictReader(l for l in open(tmp_path / "o" / "c-study.csv")
                               if not l.startswith("#")))
    nf = sum(r["status"] == "failed" for r in rows)
    assert nf > 0
    assert f"failed={nf}" in bar and f"done={30 - nf}" in bar
    assert "failed" in cap.out and SAFETY_CAUTION in cap.out


def test_restart_and_resume_messages(tmp_path, capsys):
    p = _files(tmp_path)
    out = str(tmp_path / "o")
    assert main(["study", str(p), "--out", out, "--workers", "1", "--no-plots"]) == 0
    capsys.readouterr()
    # no --seed: the resume takes the recorded seed and runs nothing again
    assert main(["study", str(p), "--out", out, "--workers", "1", "--no-plots"]) == 0
    assert "30 variants were already in the table" in capsys.readouterr().err
    p.write_text(STUDY.replace("samples = 30", "samples = 31"))
    assert main(["study", str(p), "--out", out, "--workers", "1", "--no-plots"]) == 2
    assert "--restart" in capsys.readouterr().err
    assert main(["study", str(p), "--out", out, "--workers", "1", "--no-plots",
                 "--restart", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["summary"]["variants"] == 31


def test_scheduler_option_errors(tmp_path, capsys):
    p = _files(tmp_path)
    assert main(["study", str(p), "--scheduler", " ", "--no-plots"]) == 2
    assert "--scheduler" in capsys.readouterr().err


def test_demo_study(tmp_path, capsys):
    demo = ROOT / "cases" / "studies" / "curing-oven-skin-uncertainty-study.toml"
    text = demo.read_text()
    assert "invented" in text and "conductivity_factor" in text
    assert main(["study", str(demo), "--out", str(tmp_path), "--seed", "2026", "--json",
                 "--no-plots"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["summary"]["variants"] >= 20 and d["summary"]["failed"] == 0
    assert d["caution"] == SAFETY_CAUTION
    sens = {(s["output"], s["input"]): s["prcc"] for s in d["uncertainty"]["sensitivity"]}
    assert sens[("peak_skin_T_K", "wall.layers[1].conductivity_factor")] > 0.5
    assert sens[("peak_skin_T_K", "wall.layers[1].thickness")] < 0
    assert sens[("loss_W", "wall.layers[1].conductivity_factor")] > 0.5


def test_hdf5_table_equals_csv_table(tmp_path):
    # common practice, no source: the two files of one study hold the same table
    from fdwall.study import read_table
    p = _files(tmp_path)
    assert main(["study", str(p), "--out", str(tmp_path / "o"), "--workers", "1", "--seed",
                 "9", "--quiet", "--no-plots"]) == 0
    a = read_table(tmp_path / "o" / "c-study.csv")
    b = read_table(tmp_path / "o" / "c-study.h5")
    assert list(a.columns) == list(b.columns)
    assert "outer_T [K]" in b.columns and "status" in b.columns
    for c in a.columns:
        if a[c].dtype.kind == "f":
            assert (a[c].to_numpy() == b[c].to_numpy()).all(), c
        else:
            assert [str(x) for x in a[c]] == [str(x) for x in b[c]], c


def test_text_summary_in_degc_without_nan():
    # common practice, no source: the text summary shows absolute temperatures in degC (the
    # files keep SI), and an interval end a small sample cannot give is said, not printed "nan"
    from fdwall.cli.study import _shown
    assert _shown(323.15, True, "K") == "50 degC"
    assert _shown(float("nan"), True, "K").startswith("n/a")
    assert _shown(float("inf"), False, "s") == "never"
    assert _shown(12.5, False, "K") == "12.5 K"        # a margin is a difference: stays K
