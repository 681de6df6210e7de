"""Sensitivity measures and correlated sampling of design studies, against known answers.

- Sobol indices of the Ishigami function, a = 7, b = 0.1, inputs uniform on [-pi, pi]: closed
  forms of the partial variances (T. Ishigami & T. Homma, Proc. ISUMA 1990; the formulas as
  in A. Saltelli et al., Global Sensitivity Analysis: The Primer, Wiley 2008, sec. 4.9 --
  from memory, recomputed below): V = a^2/8 + b pi^4/5 + b^2 pi^8/18 + 1/2,
  V1 = (1 + b pi^4/5)^2 / 2, V2 = a^2/8, V3 = 0, V13 = b^2 pi^8 (1/18 - 1/50).
- Partial correlation from the inverse of the correlation matrix, rho_ij.rest =
  -P_ij / sqrt(P_ii P_jj) (e.g. J. Whittaker, Graphical Models in Applied Multivariate
  Statistics, Wiley 1990, sec. 5.7), applied to the ranks: an algorithm independent of the
  residual regression used in fdwall.
- Borgonovo's delta is zero for an input the output does not depend on (definition,
  E. Borgonovo, Reliab. Eng. Syst. Saf. 92, 2007, property of independence).
- Induced rank correlation (Iman & Conover 1982): the sample's Spearman matrix matches the
  target within sampling error; the Latin-hypercube strata are kept.
- A steady wall's temperatures do not depend on density (no storage term in the steady heat
  equation; Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 2.21 with
  dT/dt = 0), so its Sobol indices are exactly zero.
"""
import numpy as np
import pytest
from scipy import stats
from study_cases import ONE_LAYER_WALL

from fdwall.analyses.study import _distribution, sample_inputs
from fdwall.analyses.study_stats import delta_indices, prcc, sobol_indices
from fdwall.errors import InputError
from fdwall.study import read_study, run_study, uncertainty_summary

A, B = 7.0, 0.1


def _ishigami(x):
    return np.sin(x[:, 0]) + A * np.sin(x[:, 1]) ** 2 + B * x[:, 2] ** 4 * np.sin(x[:, 0])


def _ishigami_indices():
    pi = np.pi
    v1 = 0.5 * (1 + B * pi ** 4 / 5) ** 2
    v2 = A ** 2 / 8
    v13 = B ** 2 * pi ** 8 * (1 / 18 - 1 / 50)
    v = A ** 2 / 8 + B * pi ** 4 / 5 + B ** 2 * pi ** 8 / 18 + 0.5
    return np.array([v1, v2, 0.0]) / v, np.array([v1 + v13, v2, v13]) / v


def _uniforms(d=3):
    return [_distribution({"path": f"p{j}", "distribution": "uniform", "low": -np.pi,
                           "high": np.pi}, j, "test") for j in range(d)]


def test_ishigami_sobol_indices():
    s1, st = _ishigami_indices()
    assert s1 == pytest.approx([0.3139, 0.4424, 0.0], abs=1e-4)      # published values
    x = sample_inputs(_uniforms(), "sobol", 2048, seed=5)
    assert x.shape == (2048 * 5, 3)
    r = sobol_indices(_ishigami(x), 3, seed=5)
    assert r["S1"] == pytest.approx(s1, abs=0.04)
    assert r["ST"] == pytest.approx(st, abs=0.04)
    # the estimate can fail: with the input columns swapped the indices are far off
    assert abs(sobol_indices(_ishigami(x[:, [1, 0, 2]]), 3, seed=5)["S1"][0] - s1[0]) > 0.1


def test_delta_independence_property():
    # an input the output ignores: delta 0 up to the positive bias of the kernel-density
    # estimate (about 0.06 at this n, the level SALib gives a pure-noise output); inputs
    # that matter stand well above it
    x = sample_inputs(_uniforms(), "latin-hypercube", 600, seed=3)
    d = delta_indices(x, x[:, 0] + 0.1 * x[:, 1] ** 3, seed=3, resamples=10)["delta"]
    assert d[2] < 0.12 and d[0] > 0.2 and d[1] > 0.2


def test_prcc_equals_partial_correlation_of_ranks():
    rng = np.random.default_rng(1)
    x = rng.normal(size=(300, 3))
    x[:, 1] += 0.5 * x[:, 0]                       # correlated inputs
    y = np.exp(x[:, 0]) + 2 * x[:, 1] ** 3 - x[:, 2] + rng.normal(size=300)
    r, p = prcc(x, y)
    ranks = np.column_stack([stats.rankdata(c) for c in np.column_stack([x, y]).T])
    P = np.linalg.inv(np.corrcoef(ranks, rowvar=False))
    ref = [-P[j, 3] / np.sqrt(P[j, j] * P[3, 3]) for j in range(3)]
    assert r == pytest.approx(ref, abs=1e-10)
    assert r[0] > 0 and r[1] > 0 and r[2] < 0 and np.all(p < 1e-3)


CORR = '''
base = "wall.toml"
method = "latin-hypercube"
samples = 1000
correlation = [[1.0, 0.6, -0.3], [0.6, 1.0, 0.2], [-0.3, 0.2, 1.0]]
[[uncertain]]
path = "wall.layers[0].conductivity_factor"
distribution = "lognormal"
median = 1.0
log_spread = 0.15
[[uncertain]]
path = "wall.outer_face.film_coefficient"
distribution = "uniform"
low = "6 W/m2/K"
high = "14 W/m2/K"
[[uncertain]]
path = "wall.outer_face.fluid_temperature"
distribution = "normal"
mean = "20 degC"
spread = "5 degC"
'''


def _study(tmp_path, text):
    (tmp_path / "wall.toml").write_text(ONE_LAYER_WALL)
    p = tmp_path / "c-study.toml"
    p.write_text(text)
    return p


def test_rank_correlation_matches_target(tmp_path):
    st = read_study(_study(tmp_path, CORR), seed=8)
    x = st["samples"]
    target = np.array([[1.0, 0.6, -0.3], [0.6, 1.0, 0.2], [-0.3, 0.2, 1.0]])
    got = stats.spearmanr(x).statistic
    # standard error of a Spearman coefficient about (1 - rho^2) / sqrt(n - 3) (Fieller,
    # Hartley & Pearson, Biometrika 44, 1957, approximately); 3 standard errors
    se = (1 - target ** 2) / np.sqrt(1000 - 3) + 1e-9
    assert np.all(np.abs(got - target) <= 3 * se + 1e-12)
    # Latin-hypercube strata kept: one value of each input in each of the 1000 strata
    for j, dist in enumerate((stats.lognorm(s=0.15, scale=1.0), stats.uniform(6, 8),
                              stats.norm(20, 5))):
        strata = np.sort(np.floor(dist.cdf(x[:, j]) * 1000).astype(int))
        assert np.array_equal(strata, np.arange(1000))
    # without the correlation key the inputs are independent
    free = read_study(_study(tmp_path, CORR.replace("correlation = ", "# ")), seed=8)
    assert np.all(np.abs(stats.spearmanr(free["samples"]).statistic - np.eye(3)) < 0.1)


@pytest.mark.parametrize("text, match", [
    ("correlation = [[1.0, 0.6], [0.6, 1.0]]", "3 x 3 matrix"),
    ("correlation = [[1.0, 0.6, 0.0], [0.5, 1.0, 0.0], [0.0, 0.0, 1.0]]", "symmetric"),
    ("correlation = [[1.0, 0.9, 0.9], [0.9, 1.0, -0.9], [0.9, -0.9, 1.0]]",
     "not positive definite"),
    ("correlation = [[2.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]", "diagonal"),
])
def test_bad_correlation(tmp_path, text, match):
    # common practice, no source: a clear error naming the key
    body = CORR.replace("correlation = [[1.0, 0.6, -0.3], [0.6, 1.0, 0.2], [-0.3, 0.2, 1.0]]",
                        text)
    with pytest.raises(InputError, match=match):
        read_study(_study(tmp_path, body))


SOBOL = '''
base = "wall.toml"
method = "sobol"
samples = 64
outputs = ["outer_T_K"]
[[uncertain]]
path = "wall.layers[0].conductivity_factor"
distribution = "uniform"
low = 0.5
high = 1.5
[[uncertain]]
path = "materials.demo-board.density"
distribution = "uniform"
low = "100 kg/m3"
high = "300 kg/m3"
'''


def test_sobol_study_on_a_steady_wall(tmp_path):
    p = _study(tmp_path, SOBOL)
    st = read_study(p, seed=2)
    assert len(st["variants"]) == 64 * (2 + 2)
    _, rows = run_study(st, tmp_path, workers=1)
    u = uncertainty_summary(st, rows)
    sens = u["tables"]["sensitivity"]
    got = {i: (s1, stt) for i, s1, stt in zip(sens["input"], sens["sobol_S1"],
                                               sens["sobol_ST"])}
    # density does not enter the steady state: both indices exactly zero (Incropera eq. 2.21)
    # (zero to round-off: the problem-graded mesh follows the diffusivity, so the density moves
    # the nodes, and the steady state is exact on any mesh; fdwall.mesh)
    assert got["materials.demo-board.density"] == pytest.approx((0.0, 0.0), abs=1e-12)
    # the only input that matters carries all the variance (S1 = ST = 1 up to sampling)
    assert got["wall.layers[0].conductivity_factor"][1] == pytest.approx(1.0, abs=0.1)
    assert u["summary"]["outer_T_top_input"] == "wall.layers[0].conductivity_factor"
    assert any("Saltelli" in n for n in u["notes"])


@pytest.mark.parametrize("text, match", [
    (SOBOL.replace("samples = 64", "samples = 60"), "power of 2"),
    (SOBOL.replace('method = "sobol"', 'method = "sobol"\ncorrelation = [[1, 0.5], [0.5, 1]]'),
     "independent inputs"),
    (SOBOL.replace('method = "sobol"', 'method = "latin-hypercube"\nsensitivity = ["sobol"]'),
     "Sobol indices need method"),
])
def test_bad_sobol(tmp_path, text, match):
    # common practice, no source
    with pytest.raises(InputError, match=match):
        read_study(_study(tmp_path, text))


def test_failed_variants_void_sobol_indices(tmp_path):
    # a variant the loader rejects breaks Saltelli's design: no index, and the note says so
    p = _study(tmp_path, SOBOL.replace("low = 0.5", "low = -0.5"))
    st = read_study(p, seed=2)
    _, rows = run_study(st, tmp_path, workers=1)
    u = uncertainty_summary(st, rows)
    assert u["summary"]["failed"] > 0
    assert all(np.isnan(v) for v in u["tables"]["sensitivity"]["sobol_ST"])
    assert any("design is incomplete" in n for n in u["notes"])
