"""Monte Carlo study of a one-layer wall with lognormal conductivity against its closed form.

Derivation (steady plane wall, constant k, fixed film coefficients; series thermal
resistance, Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., sec. 3.1, eq. 3.19):

    q   = (T_i - T_o) / (1/h_i + L/k + 1/h_o)        [W/m2]
    T_s = T_o + q / h_o = g(k)                        [K]

g is strictly increasing in k (dR/dk = -L/k^2 < 0), so for any p the p-quantile of T_s is
g of the p-quantile of k.  For k lognormal with median m and log-spread sigma,
k_p = m exp(sigma z_p), z_p the standard-normal quantile: T_s,p = g(m exp(sigma z_p)).

Sampling error (order statistics; e.g. David & Nagaraja, Order Statistics, 3rd ed., sec.
10.2, from memory): the sample p-quantile of n independent draws is asymptotically normal
about the true quantile with standard deviation sqrt(p (1 - p) / n) / f_T(T_s,p), where the
density of T_s is f_T(g(k)) = f_k(k) / g'(k) and g'(k) = (T_i - T_o) L / (h_o R^2 k^2).
The sample mean has standard error std(T_s) / sqrt(n); the mean and variance of T_s come
from quadrature of g against the lognormal density (scipy.integrate.quad).  Checks use
4 standard errors.  A Latin hypercube sample of a monotone function has a variance no
larger than a Monte Carlo sample of the same size (McKay, Beckman & Conover 1979,
Technometrics 21), so the same tolerances hold for it.
"""
import numpy as np
import pytest
from scipy import integrate, stats

from fdwall.study import quantile_interval, read_study, run_study, uncertainty_summary

TI, TO, HI, HO, L, M, SIG = 473.15, 293.15, 20.0, 10.0, 0.05, 0.1, 0.3

CASE = f"""
title = "one-layer plane wall, uncertain conductivity (invented test case)"
[run]
duration = "1 h"
[materials.demo-board]
conductivity = "{M} W/m/K"
specific_heat = "1000 J/kg/K"
density = "200 kg/m3"
[wall]
area = "1 m2"
[[wall.layers]]
material = "demo-board"
thickness = "{L * 1000} mm"
[wall.inner_face]
fluid_temperature = "200 degC"
film_coefficient = "{HI} W/m2/K"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "{HO} W/m2/K"
"""


def g(k):
    R = 1 / HI + L / k + 1 / HO
    return TO + (TI - TO) / (R * HO)


def dg(k):
    R = 1 / HI + L / k + 1 / HO
    return (TI - TO) * L / (HO * R * R * k * k)


@pytest.mark.parametrize("method, n", [("monte-carlo", 400), ("latin-hypercube", 200)])
def test_skin_temperature_quantiles(tmp_path, method, n):
    (tmp_path / "wall.toml").write_text(CASE)
    p = tmp_path / "k-study.toml"
    p.write_text(f'''base = "wall.toml"
method = "{method}"
samples = {n}
[[uncertain]]
path = "materials.demo-board.conductivity"
distribution = "lognormal"
median = "{M} W/m/K"
log_spread = {SIG}
''')
    st_ = read_study(p, seed=2024)
    _, rows = run_study(st_, tmp_path, workers=2)
    assert all(r["status"] == "done" for r in rows)
    y = np.array([r["outer_T_K"] for r in rows])
    s = uncertainty_summary(st_, rows)["summary"]
    kd = stats.lognorm(s=SIG, scale=M)
    mean = integrate.quad(lambda k: g(k) * kd.pdf(k), 0, np.inf)[0]
    var = integrate.quad(lambda k: (g(k) - mean) ** 2 * kd.pdf(k), 0, np.inf)[0]
    assert y.mean() == pytest.approx(mean, abs=4 * np.sqrt(var / n))
    assert s["outer_T_mean_K"] == pytest.approx(y.mean())
    ys = np.sort(y)
    for pc in (5, 50, 95):
        q = pc / 100
        kq = M * np.exp(SIG * stats.norm.ppf(q))
        tq = g(kq)                                         # exact quantile of T_s
        f_t = kd.pdf(kq) / dg(kq)                          # density of T_s at tq
        se = np.sqrt(q * (1 - q) / n) / f_t
        est = s[f"outer_T_p{pc:02d}_K"]
        assert est == pytest.approx(tq, abs=4 * se), (pc, est, tq, se)
        # the distribution-free interval holds the exact quantile (95 % each, seed fixed)
        r, u, _ = quantile_interval(n, q)
        lo = ys[r - 1] if r >= 1 else -np.inf
        hi = ys[u - 1] if u <= n else np.inf
        assert lo <= tq <= hi
        if r >= 1:
            assert s[f"outer_T_p{pc:02d}_low_K"] == lo
    # the test can fail: a wrong mapping (e.g. sigma taken as a variance) moves p95 by
    # many standard errors; guard that the tolerance is tight against that mistake
    wrong = g(M * np.exp(SIG ** 2 * stats.norm.ppf(0.95)))
    se95 = np.sqrt(0.05 * 0.95 / n) * dg(M * np.exp(SIG * 1.645)) / kd.pdf(
        M * np.exp(SIG * 1.645))
    assert abs(wrong - s["outer_T_p95_K"]) > 4 * se95
