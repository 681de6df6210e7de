"""Uncertainty summary of sampled studies: intervals against published values and scipy."""
import json

import h5py
import numpy as np
import pytest
from scipy import stats
from study_cases import ONE_LAYER_WALL

from fdwall.cli import main
from fdwall.study import (
    quantile_interval,
    read_study,
    read_table,
    run_study,
    uncertainty_summary,
    wilson_interval,
)

CASE = ONE_LAYER_WALL

K = '''
[[uncertain]]
path = "materials.demo-board.conductivity"
distribution = "lognormal"
median = "0.1 W/m/K"
log_spread = 0.3
'''


def test_median_interval_n20():
    # Distribution-free 95 % interval of the median from n = 20: the 6th and 15th order
    # statistics, coverage 1 - 2 * P(Bin(20, 1/2) <= 5) = 0.9586 (binomial tables; e.g.
    # Conover, Practical Nonparametric Statistics, 3rd ed., sec. 3.2, from memory).
    r, s, cover = quantile_interval(20, 0.5)
    assert (r, s) == (6, 15)
    assert cover == pytest.approx(1 - 2 * stats.binom(20, 0.5).cdf(5), rel=1e-12)
    assert cover == pytest.approx(0.9586, abs=1e-4)


def test_p95_interval_needs_72():
    # Upper bound X_(n) of the 95 % quantile holds it with probability 1 - 0.95**n; a
    # two-sided 95 % interval needs 1 - 0.95**n >= 0.975, so n >= ln 0.025 / ln 0.95 = 71.9
    # (order statistics of a sample; any statistics text, e.g. David & Nagaraja sec. 7.1).
    assert quantile_interval(71, 0.95)[1] == 72          # unbounded above (s = n + 1)
    assert quantile_interval(72, 0.95)[1] == 72
    assert quantile_interval(72, 0.95)[2] >= 0.95


def test_wilson_newcombe_example():
    # Newcombe (1998), Statistics in Medicine 17:857-872, Table I: 81/263 -> Wilson score
    # interval 0.2553 to 0.3662; and 0/10 -> 0 to 0.2775.
    lo, hi = wilson_interval(81, 263)
    assert (lo, hi) == (pytest.approx(0.2553, abs=1e-4), pytest.approx(0.3662, abs=1e-4))
    lo, hi = wilson_interval(0, 10)
    assert lo == 0.0 and hi == pytest.approx(0.2775, abs=1e-4)


THICK = '''
[[uncertain]]
path = "wall.layers[0].thickness"
distribution = "normal"
mean = "50 mm"
spread = "30 mm"
[exceed]
outer_T_K = "45 degC"
loss_W = "300 W"
'''


def _files(tmp_path, n=120):
    (tmp_path / "wall.toml").write_text(CASE)
    p = tmp_path / "u-study.toml"
    p.write_text(f'base = "wall.toml"\nmethod = "monte-carlo"\nsamples = {n}\n' + K + THICK)
    return p


def test_summary_against_table(tmp_path):
    # Figures recomputed from the written table with pandas and scipy.stats.spearmanr;
    # normal thickness with spread 30 mm about 50 mm gives about 5 % negative thicknesses,
    # which the loader rejects: failed variants counted and left out.
    p = _files(tmp_path)
    st_ = read_study(p, seed=11)
    csv_path, rows = run_study(st_, tmp_path, workers=1)
    u = uncertainty_summary(st_, rows)
    s = u["summary"]
    df = read_table(csv_path)
    ok = df[df["status"] == "done"]
    nf = int((df["status"] == "failed").sum())
    assert nf > 0 and s["failed"] == nf and s["done"] == len(ok)
    assert any("failed" in n for n in u["notes"])
    y = ok["outer_T [K]"].to_numpy()
    assert s["outer_T_p50_K"] == pytest.approx(np.median(y))
    r, q, _ = quantile_interval(len(y), 0.5)
    ys = np.sort(y)
    assert (s["outer_T_p50_low_K"], s["outer_T_p50_high_K"]) == (ys[r - 1], ys[q - 1])
    k = int((y > 318.15).sum())
    assert s["outer_T_exceed_probability"] == pytest.approx(k / len(y))
    assert s["outer_T_exceed_probability_low"] == pytest.approx(wilson_interval(k, len(y))[0])
    kk = ok["materials.demo-board.conductivity"].str.split().str[0].astype(float)
    tt = ok["wall.layers[0].thickness"].str.split().str[0].astype(float)
    sens = u["tables"]["sensitivity"]
    rho = dict(zip([(o, i) for o, i in zip(sens["output"], sens["input"])],
                   sens["spearman_rho"]))
    assert rho[("outer_T_K", "materials.demo-board.conductivity")] == pytest.approx(
        stats.spearmanr(kk, y).statistic, rel=1e-9)
    assert rho[("outer_T_K", "wall.layers[0].thickness")] == pytest.approx(
        stats.spearmanr(tt, y).statistic, rel=1e-9)
    # physics direction (Incropera sec. 3.1): skin warmer with higher k, cooler when thicker
    assert rho[("outer_T_K", "materials.demo-board.conductivity")] > 0
    assert rho[("outer_T_K", "wall.layers[0].thickness")] < 0


def test_cli_writes_summary(tmp_path, capsys):
    # same figures as above reach the HDF5 file and the JSON (common practice, no source)
    p = _files(tmp_path, n=40)
    out = tmp_path / "o"
    assert main(["study", str(p), "--out", str(out), "--workers", "1", "--seed", "4",
                 "--json", "--no-plots"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert {"quantiles", "exceedance", "sensitivity", "failed"} <= set(d["uncertainty"])
    assert d["summary"]["failed"] == d["uncertainty"]["failed"]
    from fdwall.cautions import SAFETY_CAUTION
    assert d["caution"] == SAFETY_CAUTION
    with h5py.File(out / "u-study.h5") as h:
        assert {"quantiles", "sensitivity", "exceedance", "variants"} <= set(h["tables"])
        assert h["summary"].attrs["outer_T_p95_K"] == pytest.approx(
            d["summary"]["outer_T_p95_K"])
        assert h["inputs"].attrs["seed"] == 4
        assert h.attrs["caution"] == SAFETY_CAUTION
    assert main(["study", str(p), "--out", str(out), "--workers", "1", "--seed", "4",
                 "--json", "--no-plots"]) == 0
    assert json.loads(capsys.readouterr().out)["uncertainty"] == d["uncertainty"]
