"""Sizing on small pipes: the critical radius makes the loss non-monotone, so the feasible set
is two intervals and the stock answer must lie inside one; a pipe with a natural-convection
correlation whose diameter follows the insulation (sources named beside each check)."""
import math

import pytest
from CoolProp.CoolProp import PropsSI
from ht import Nu_horizontal_cylinder_Churchill_Chu
from scipy.optimize import brentq, minimize_scalar

from fdwall import Case, Convection, Face, Layer, RunSettings, Wall
from fdwall.materials import material_from_dict
from fdwall.sizing import LossTarget, SkinTarget, critical_radius_cylinder, size_layer

K, R1, H, TI, TA = 0.1, 0.005, 10.0, 473.15, 293.15


def _q(L):
    # per metre: ln(r2/r1)/(2 pi k) + 1/(2 pi r2 h) (Incropera 7th ed., eq. 3.33, Table 3.3)
    r2 = R1 + L
    return (TI - TA) / (math.log(r2 / R1) / (2 * math.pi * K) + 1 / (2 * math.pi * r2 * H)
                        + 1 / (1e6 * 2 * math.pi * R1))


def _tube():
    mat = material_from_dict("t-lag", {"k": K, "cp": 900.0, "rho": 150.0})
    wall = Wall(layers=(Layer(mat, 0.01),), shape="cylinder", inner_radius=R1)
    return Case(run=RunSettings(duration=3600.0, start_temperature=TA), wall=wall,
                inner=Face(fluid_temperature=TI, convection=1e6), outer=Face(fluid_temperature=TA, convection=H))


def test_critical_radius_two_feasible_intervals():
    # the loss peaks at the critical radius r = k/h (Incropera 7th ed., sec. 3.3.1), found
    # here numerically with scipy minimize_scalar on the network above
    rc = critical_radius_cylinder(K, H)
    peak = minimize_scalar(lambda L: -_q(L), bounds=(1e-5, 0.05), method="bounded")
    assert R1 + peak.x == pytest.approx(rc, rel=1e-3)
    q_lim = 0.5 * (_q(0.0) + _q(rc - R1))     # between the bare loss and the peak
    a = brentq(lambda L: _q(L) - q_lim, 1e-6, rc - R1)
    b = brentq(lambda L: _q(L) - q_lim, rc - R1, 1.0)
    # stock: the first size lies in the gap (a, b), so the answer is the next one beyond b
    stock = [round(a + 0.5 * (b - a), 4), round(b + 0.002, 4), 0.05]
    r = size_layer(_tube(), 0, [LossTarget(q_lim, unit="W/m")], t_min=0.0005, t_max=0.1,
                   stock=stock)
    assert len(r.feasible_m) == 2
    assert r.feasible_m[0][0] == pytest.approx(0.0005)
    assert r.feasible_m[0][1] == pytest.approx(a, rel=2e-3)
    assert r.feasible_m[1][0] == pytest.approx(b, rel=2e-3)
    assert r.thickness_m == stock[1]
    assert r.table["all_pass"] == [False, True, True]
    assert r.critical_radius_m == pytest.approx(rc, rel=1e-6)
    assert any("critical radius" in n for n in r.notes)


def _h_cyl(D, Ts):
    # Churchill-Chu horizontal cylinder (ht library), CoolProp air at the film temperature
    Tf = 0.5 * (Ts + TA)
    k = PropsSI("L", "T", Tf, "P", 101325, "Air")
    mu = PropsSI("V", "T", Tf, "P", 101325, "Air")
    rho = PropsSI("D", "T", Tf, "P", 101325, "Air")
    cp = PropsSI("C", "T", Tf, "P", 101325, "Air")
    Pr, nu = cp * mu / k, mu / rho
    Gr = 9.81 * (Ts - TA) / Tf * D ** 3 / nu ** 2
    return Nu_horizontal_cylinder_Churchill_Chu(Pr, Gr) * k / D


def test_pipe_skin_with_correlation_at_the_insulated_diameter():
    # Surface balance on the insulated pipe at the skin limit (Incropera 7th ed., eq. 3.33 and
    # eq. 9.34 for Churchill-Chu; Stefan-Boltzmann): the conducted heat
    # 2 pi k (T_i - T_s) / ln(r2/r1) equals 2 pi r2 [h(2 r2) (T_s - T_a) + eps sigma (T_s^4 -
    # T_a^4)], root in r2 by scipy brentq, h from the ht library at the insulated diameter.
    r1, k, eps, Ts = 0.03, 0.05, 0.3, 273.15 + 40.0
    sigma = 5.670374419e-8

    def bal(r2):
        return (2 * math.pi * k * (TI - Ts) / math.log(r2 / r1)
                - 2 * math.pi * r2 * (_h_cyl(2 * r2, Ts) * (Ts - TA)
                                      + eps * sigma * (Ts ** 4 - TA ** 4)))
    L_ref = brentq(bal, r1 * 1.01, 1.0) - r1
    mat = material_from_dict("t-wool", {"k": k, "cp": 840.0, "rho": 100.0})
    L0 = 0.02
    wall = Wall(layers=(Layer(mat, L0),), shape="cylinder", inner_radius=r1)
    case = Case(run=RunSettings(duration=3600.0, start_temperature=TA), wall=wall,
                inner=Face(fluid_temperature=TI, convection=1e7),
                outer=Face(fluid_temperature=TA, emissivity=eps,
                           convection=Convection.horizontal_cylinder(2 * (r1 + L0))))
    r = size_layer(case, 0, [SkinTarget(Ts)], step=0.01)
    # correlation property data differ between libraries; checked to 1 % (common practice)
    assert r.thickness_exact_m == pytest.approx(L_ref, rel=0.01)


def test_tradeoff_plot_of_the_two_intervals(tmp_path, monkeypatch):
    # The plot presents the stored numbers: loss curve = the log network above (Incropera eq.
    # 3.33), the limit as a horizontal line, one shaded band per feasible interval, the answer
    # as a vertical line; per-metre unit on a pipe.  Checked on the matplotlib objects.
    from matplotlib.patches import Polygon, Rectangle

    from fdwall.report import sizing_plot
    figs = []
    real = sizing_plot._save
    monkeypatch.setattr(sizing_plot, "_save", lambda fig, p: (figs.append(fig), real(fig, p))[1])
    rc = critical_radius_cylinder(K, H)
    q_lim = 0.5 * (_q(0.0) + _q(rc - R1))
    a = brentq(lambda L: _q(L) - q_lim, 1e-6, rc - R1)
    b = brentq(lambda L: _q(L) - q_lim, rc - R1, 1.0)
    stock = [round(a + 0.5 * (b - a), 4), round(b + 0.002, 4), 0.05]
    r = size_layer(_tube(), 0, [LossTarget(q_lim, unit="W/m")], t_min=0.0005, t_max=0.1,
                   stock=stock)
    d = r.to_dict()
    path = sizing_plot.plot_tradeoff(d, tmp_path / "t.png", "tube", "W/m")
    assert (tmp_path / "t.png").stat().st_size > 10000 and path.endswith("t.png")
    ax = figs[-1].axes[1]
    assert ax.get_ylabel() == "heat loss [W/m]"
    line = [ln for ln in ax.get_lines() if ln.get_label() == "heat loss, steady"][0]
    for x_mm, y in zip(line.get_xdata(), line.get_ydata()):
        assert y == pytest.approx(_q(x_mm / 1000.0), rel=1e-3)
    hl = [ln for ln in ax.get_lines() if list(ln.get_ydata()) == [q_lim, q_lim]]
    assert hl
    spans = [p for p in ax.patches if isinstance(p, (Polygon, Rectangle))]
    assert len(spans) == 2
    xs = sorted((min(p.get_xy()[:, 0]) if isinstance(p, Polygon) else p.get_x()) for p in spans)
    assert xs[1] == pytest.approx(r.feasible_m[1][0] * 1000.0)
    vl = [ln for ln in ax.get_lines() if ln.get_label().startswith("answer")]
    assert vl and vl[0].get_xdata()[0] == pytest.approx(r.thickness_m * 1000.0)
    assert "Caution" in " ".join(t.get_text() for t in figs[-1].texts)


def test_sphere_loss_against_spherical_shell_network():
    # Spherical shell (1/r1 - 1/r2)/(4 pi k) plus film 1/(4 pi r2^2 h) (Incropera 7th ed.,
    # eq. 3.41 and Table 3.3); root for the loss limit by scipy brentq; critical radius 2k/h.
    r1, k, h, q_lim = 0.2, 0.05, 8.0, 150.0

    def q(L):
        r2 = r1 + L
        return (TI - TA) / ((1 / r1 - 1 / r2) / (4 * math.pi * k) + 1 / (4 * math.pi * r2 ** 2 * h)
                           + 1 / (1e6 * 4 * math.pi * r1 ** 2))
    L_ref = brentq(lambda L: q(L) - q_lim, 1e-4, 1.0)
    mat = material_from_dict("t-sph", {"k": k, "cp": 900.0, "rho": 150.0})
    case = Case(run=RunSettings(duration=3600.0, start_temperature=TA),
                wall=Wall(layers=(Layer(mat, 0.05),), shape="sphere", inner_radius=r1),
                inner=Face(fluid_temperature=TI, convection=1e6), outer=Face(fluid_temperature=TA, convection=h))
    r = size_layer(case, 0, [LossTarget(q_lim, unit="W")], step=0.01)
    assert r.thickness_exact_m == pytest.approx(L_ref, rel=2e-3)
    assert r.critical_radius_m == pytest.approx(2 * k / h)
    assert not any("critical radius" in n for n in r.notes)     # 12.5 mm < r1: no effect
