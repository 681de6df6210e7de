"""Notebook results: pandas frames, xarray Dataset and the HTML summary of a run.

External references: the steady series-resistance solution of a plane wall with films on
both sides, q = dT / (1/h1 + L1/k1 + L2/k2 + 1/h2) per unit area, and the interface
temperature that follows from it (Incropera et al., Fundamentals of Heat and Mass Transfer,
ch. 3); frames and Dataset are built by the open libraries pandas and xarray, and their
selections (``.loc``, ``.sel``) are checked to return the run's own arrays; the summary
table is read back with Python's html.parser (standard library).
"""
from __future__ import annotations

from html.parser import HTMLParser

import numpy as np
import pytest

import fdwall
from fdwall.materials import material_from_dict
from fdwall.model import Case, Face, Layer, RunSettings, Wall

K0 = 273.15
# invented demo slab: board + insulation between hot and room air (constant properties)
L1, K1, L2, K2 = 0.02, 0.5, 0.03, 0.05      # [m], [W/m/K]
H1, H2, T1, T2, AREA = 20.0, 8.0, 150.0, 20.0, 1.5  # [W/m2/K], [degC], [m2]


@pytest.fixture(scope="module")
def res():
    a = material_from_dict("demo-board", {"k": K1, "cp": 900.0, "rho": 800.0})
    b = material_from_dict("demo-wool", {"k": K2, "cp": 800.0, "rho": 60.0})
    case = Case(run=RunSettings(duration=40 * 3600.0, output_every=1800.0),
                wall=Wall(layers=(Layer(a, L1), Layer(b, L2)), area=AREA, name="slab"),
                inner=Face.exchange(K0 + T1, H1), outer=Face.exchange(K0 + T2, H2),
                name="demo-notebook")
    return fdwall.run(case)


def test_faces_frame_equals_arrays_and_steady_closed_form(res):
    df = res.faces_frame()
    assert df.index.name == "time [s]"
    np.testing.assert_array_equal(df.index.to_numpy(), res.times)
    for f, name in enumerate(res.face_names):
        np.testing.assert_array_equal(df[f"{name} T [K]"].to_numpy(), res.face_T[:, f])
        np.testing.assert_array_equal(df[f"{name} heat_flow [W]"].to_numpy(),
                                      res.face_flow[:, f])
        np.testing.assert_array_equal(df[f"{name} energy [J]"].to_numpy(),
                                      res.face_energy[:, f])
    assert all(c.endswith("]") and " [" in c for c in df.columns)
    # after 40 h the wall is steady: heat in at the inner face = series-resistance flow
    # (Incropera ch. 3); the outer face gives it back (flow into the wall negative there)
    q = AREA * (T1 - T2) / (1 / H1 + L1 / K1 + L2 / K2 + 1 / H2)
    inner = [c for c in df.columns if c.endswith("heat_flow [W]")][0]
    assert df[inner].iloc[-1] == pytest.approx(q, rel=2e-3)


def test_interfaces_frame_equals_arrays_and_closed_form(res):
    df = res.interfaces_frame()
    assert list(df.columns) == ["slab: " + res.system.walls[0].layers[0].label + " | "
                                + res.system.walls[0].layers[1].label + " [K]"]
    np.testing.assert_array_equal(df.iloc[:, 0].to_numpy(), res.interface_T(0)[:, 0])
    # steady interface temperature: T1 - q (1/h1 + L1/k1) (Incropera ch. 3)
    q = (T1 - T2) / (1 / H1 + L1 / K1 + L2 / K2 + 1 / H2)
    Ti = K0 + T1 - q * (1 / H1 + L1 / K1)
    assert df.iloc[-1, 0] == pytest.approx(Ti, abs=0.05)


def test_to_xarray_selection_equals_array(res):
    pytest.importorskip("xarray")
    ds = res.to_xarray()
    assert ds["T"].dims == ("time", "x") and ds["T"].attrs["units"] == "K"
    k, i = 5, 3
    sel = ds["T"].sel(time=res.times[k], x=res.x(0)[i]).item()
    assert sel == res.wall_T(0)[k, i]
    np.testing.assert_array_equal(ds["T"].sel(time=res.times[-1]).to_numpy(),
                                  res.wall_T(0)[-1])
    np.testing.assert_array_equal(ds["x"].to_numpy(), res.x(0))


def test_to_xarray_without_xarray_is_clear(res, monkeypatch):
    import builtins
    real = builtins.__import__

    def fake(name, *a, **kw):
        if name == "xarray" or name.startswith("xarray."):
            raise ImportError("no xarray")
        return real(name, *a, **kw)
    monkeypatch.setattr(builtins, "__import__", fake)
    with pytest.raises(ImportError, match="needs the optional package xarray"):
        res.to_xarray()


def test_repr_html_summary_table(res):
    text = res._repr_html_()

    class Cells(HTMLParser):
        def __init__(self):
            super().__init__()
            self.cells, self._on = [], False

        def handle_starttag(self, tag, attrs):
            self._on = tag in ("td", "th")

        def handle_endtag(self, tag):
            self._on = False

        def handle_data(self, data):
            if self._on:
                self.cells.append(data)
    p = Cells()
    p.feed(text)
    assert "final T [degC]" in p.cells
    row = p.cells.index(res.face_names[0])
    assert float(p.cells[row + 1]) == pytest.approx(res.face_T[-1, 0] - K0, abs=0.006)


def test_profiles_frame_equals_arrays_and_steady_profile(res):
    df = res.profiles_frame()
    assert df.index.name == "x [m]" and df.columns.name == "time [s]"
    np.testing.assert_array_equal(df.columns.to_numpy(), res.times)   # no profile_times
    np.testing.assert_array_equal(df.index.to_numpy(), res.x(0))
    np.testing.assert_array_equal(df[res.times[3]].to_numpy(), res.wall_T(0)[3])
    assert df.attrs["units"] == "K" and df.attrs["wall"] == "slab"
    # nearest output times, as Result.profile
    sel = res.profiles_frame(times=[3600.0 * 2.1, 3600.0 * 40])
    assert list(sel.columns) == [2 * 3600.0, 40 * 3600.0]
    # steady plane wall with films (Incropera ch. 3): piecewise linear, each layer's drop
    # = q L / k with q = dT / (1/h1 + L1/k1 + L2/k2 + 1/h2)
    q = (T1 - T2) / (1 / H1 + L1 / K1 + L2 / K2 + 1 / H2)
    x = sel.index.to_numpy()
    ts = T1 - q / H1
    exact = np.where(x <= L1, ts - q * x / K1, ts - q * L1 / K1 - q * (x - L1) / K2) + K0
    np.testing.assert_allclose(sel[40 * 3600.0].to_numpy(), exact, atol=2e-3)
    # the same numbers as the xarray Dataset (when xarray is installed)
    xr = pytest.importorskip("xarray")
    assert xr is not None
    ds = res.to_xarray()
    np.testing.assert_array_equal(ds["T"].sel(time=2 * 3600.0).values, sel[2 * 3600.0].values)
