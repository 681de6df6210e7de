"""Statistics of sampled design studies: correlated sampling and sensitivity measures.

- :func:`iman_conover` gives independent uniforms a target rank (Spearman) correlation by
  reordering each column (R. L. Iman & W. J. Conover, "A distribution-free approach to
  inducing rank correlation among input variables", Commun. Statist. B 11(3), 311-334,
  1982).  Marginals, and the strata of a Latin hypercube, are kept exactly.
- :func:`prcc`: partial rank correlation coefficients (rank-transform, remove the linear
  effect of the other inputs, correlate the residuals; S. Marino et al., J. Theor. Biol. 254,
  178-196, 2008), with a t-test p-value.
- :func:`delta_indices`: Borgonovo's moment-independent delta measure and a first-order
  index from the same sample (E. Borgonovo, Reliab. Eng. Syst. Saf. 92, 771-784, 2007; as
  implemented by SALib ``SALib.analyze.delta``, Plischke, Borgonovo & Smith 2013).  It suits
  any random sample, correlated inputs included.
- :func:`sobol_unit_sample` / :func:`sobol_indices`: first-order and total Sobol indices
  with their own sampling design (Saltelli's scheme, SALib ``sample.sobol`` and
  ``analyze.sobol``; A. Saltelli et al., Comput. Phys. Commun. 181, 259-270, 2010).  They
  need independent inputs and every variant of the design.

Arrays in, arrays out; units are those of the inputs and outputs (the measures are
dimensionless [-]).  Layer 8 (analyses): numpy, scipy, SALib (imported lazily).
"""
from __future__ import annotations

import contextlib
import io
import math
import warnings

import numpy as np

from ..errors import InputError

__all__ = ["check_correlation", "iman_conover", "prcc", "delta_indices", "sobol_unit_sample",
           "sobol_indices", "spearman"]


def check_correlation(c, d: int, file: str) -> np.ndarray:
    """Validate a rank-correlation matrix from a study file (InputError naming the key)."""
    try:
        m = np.array(c, dtype=float)
    except (TypeError, ValueError):
        m = None
    if m is None or m.shape != (d, d):
        raise InputError(f"{file}: correlation must be a {d} x {d} matrix (a list of {d} "
                         f"lists of {d} numbers), one row and column per [[uncertain]] entry "
                         "in their order.")
    if not np.all(np.isfinite(m)) or not np.allclose(np.diag(m), 1.0):
        raise InputError(f"{file}: correlation: the diagonal must be 1 (an input is fully "
                         "correlated with itself) and every entry a finite number.")
    if not np.allclose(m, m.T):
        bad = np.argwhere(~np.isclose(m, m.T))[0]
        raise InputError(f"{file}: correlation[{bad[0]}][{bad[1]}] = {m[bad[0], bad[1]]:g} but "
                         f"correlation[{bad[1]}][{bad[0]}] = {m[bad[1], bad[0]]:g}; the matrix "
                         "must be symmetric.")
    if np.any(np.abs(m) > 1):
        raise InputError(f"{file}: correlation: entries must lie between -1 and 1.")
    try:
        np.linalg.cholesky(_pearson_of_scores(m))
    except np.linalg.LinAlgError:
        raise InputError(f"{file}: correlation: the matrix is not positive definite (these "
                         "correlations cannot hold together, e.g. A with B and B with C "
                         "strongly positive but A with C negative); weaken them.") from None
    return m


def _pearson_of_scores(rank_c: np.ndarray) -> np.ndarray:
    """Pearson correlation of normal scores that gives Spearman ``rank_c``: 2 sin(pi r / 6).

    For a bivariate normal, Spearman rho_s = (6/pi) asin(rho/2) (K. Pearson 1907; e.g.
    Kruskal, JASA 53, 814-861, 1958); inverting it makes the induced rank correlation hit
    the user's value rather than the Pearson one.
    """
    p = 2.0 * np.sin(np.pi * rank_c / 6.0)
    np.fill_diagonal(p, 1.0)
    return p


def iman_conover(u: np.ndarray, rank_c: np.ndarray, rng) -> np.ndarray:
    """Reorder each column of ``u`` (n x d) so its Spearman correlation is about ``rank_c``.

    Iman & Conover (1982): van der Waerden scores Phi^-1(i/(n+1)) in a random order per
    column, decorrelated by the Cholesky factor of their own correlation and given the
    target by the factor of the target; each column of ``u`` then takes the ranks of its
    score column.  The values of each column are unchanged (only their order).
    """
    from scipy import stats  # lazily (about 0.8 s to import)
    n, d = u.shape
    if d < 2 or np.allclose(rank_c, np.eye(d)):
        return u
    scores = stats.norm.ppf(np.arange(1, n + 1) / (n + 1))
    m = np.column_stack([rng.permutation(scores) for _ in range(d)])
    e = np.corrcoef(m, rowvar=False)
    q = np.linalg.cholesky(e)
    p = np.linalg.cholesky(_pearson_of_scores(rank_c))
    t = m @ np.linalg.inv(q).T @ p.T
    out = np.empty_like(u)
    for j in range(d):
        ranks = stats.rankdata(t[:, j], method="ordinal").astype(int) - 1
        out[:, j] = np.sort(u[:, j])[ranks]
    return out


def spearman(x: np.ndarray, y: np.ndarray):
    """Spearman rank correlation of each column of ``x`` with ``y``: (rho, p) arrays."""
    from scipy import stats  # lazily (about 0.8 s to import)
    d = x.shape[1]
    rho, pv = np.full(d, np.nan), np.full(d, np.nan)
    if len(y) >= 3 and len(np.unique(y)) > 1:
        for j in range(d):
            if np.ptp(x[:, j]) > 0:
                r = stats.spearmanr(x[:, j], y)
                rho[j], pv[j] = float(r.statistic), float(r.pvalue)
    return rho, pv


def prcc(x: np.ndarray, y: np.ndarray):
    """Partial rank correlation of each input with ``y``, the other inputs held: (r, p).

    Ranks of all columns; for input j the ranks of x_j and of y are regressed (least squares
    with intercept) on the ranks of the other inputs, and the residuals correlated.  The
    p-value is the t-test of a partial correlation with n - 2 - (d - 1) degrees of freedom.
    """
    from scipy import stats  # lazily (about 0.8 s to import)
    n, d = x.shape
    r_out, p_out = np.full(d, np.nan), np.full(d, np.nan)
    dof = n - 2 - (d - 1)
    if dof < 1 or len(np.unique(y)) < 2:
        return r_out, p_out
    rx = np.column_stack([stats.rankdata(x[:, j]) for j in range(d)])
    ry = stats.rankdata(y)
    for j in range(d):
        if np.ptp(rx[:, j]) == 0:
            continue
        others = np.column_stack([np.ones(n)] + [rx[:, k] for k in range(d) if k != j])
        ex = rx[:, j] - others @ np.linalg.lstsq(others, rx[:, j], rcond=None)[0]
        ey = ry - others @ np.linalg.lstsq(others, ry, rcond=None)[0]
        den = math.sqrt(float(ex @ ex) * float(ey @ ey))
        if den == 0:
            continue
        r = float(ex @ ey) / den
        r = max(-1.0, min(1.0, r))
        t = r * math.sqrt(dof / max(1e-300, 1 - r * r))
        r_out[j], p_out[j] = r, float(2 * stats.t.sf(abs(t), dof))
    return r_out, p_out


def _problem(d, x=None):
    b = [[0.0, 1.0]] * d if x is None else [[float(np.min(c)), float(np.max(c))] for c in x.T]
    return {"num_vars": d, "names": [f"x{j}" for j in range(d)], "bounds": b}


def delta_indices(x: np.ndarray, y: np.ndarray, seed: int, resamples: int = 20) -> dict:
    """Borgonovo delta and first-order index estimates (SALib) with 95 % bootstrap halves.

    Returns dict(delta, delta_conf, S1, S1_conf) of arrays (NaN when the sample is too small:
    SALib needs a few tens of points).
    """
    d = x.shape[1]
    nan = {k: np.full(d, np.nan) for k in ("delta", "delta_conf", "S1", "S1_conf")}
    if len(y) < 20 or len(np.unique(y)) < 2:
        return nan

    from SALib.analyze import delta
    with warnings.catch_warnings(), contextlib.redirect_stdout(io.StringIO()), \
            contextlib.redirect_stderr(io.StringIO()), np.errstate(all="ignore"):
        warnings.simplefilter("ignore")       # SALib prints bias notices: keep stdout clean
        res = delta.analyze(_problem(d, x), np.asarray(x, float), np.asarray(y, float),
                            num_resamples=resamples, conf_level=0.95, print_to_console=False,
                            seed=int(seed) % (2**32))
    # 'raw' bootstraps the sample as drawn: the Borgonovo estimator of Plischke et al. for a
    # sample representative of the input distribution (SALib also offers re-binned variants)
    return {"delta": np.asarray(res["delta_raw"], float),
            "delta_conf": np.asarray(res["delta_raw_conf"], float),
            "S1": np.asarray(res["S1"], float), "S1_conf": np.asarray(res["S1_conf"], float)}


def sobol_unit_sample(d: int, n: int, seed: int) -> np.ndarray:
    """Saltelli design for first-order and total indices on [0, 1]^d: n (d + 2) rows."""

    from SALib.sample import sobol
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        u = sobol.sample(_problem(d), n, calc_second_order=False, scramble=True,
                         seed=int(seed) % (2**32))
    eps = 0.5 / (n * (d + 2))           # keep the inverse CDF of unbounded inputs finite
    return np.clip(u, eps, 1 - eps)


def sobol_indices(y: np.ndarray, d: int, seed: int) -> dict:
    """First-order S1 and total ST Sobol indices (SALib) with 95 % bootstrap halves."""

    from SALib.analyze import sobol
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = sobol.analyze(_problem(d), np.asarray(y, float), calc_second_order=False,
                            conf_level=0.95, print_to_console=False, seed=int(seed) % (2**32))
    return {k: np.asarray(res[k], float) for k in ("S1", "S1_conf", "ST", "ST_conf")}
