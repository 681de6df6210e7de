"""Plausibility ceiling of the transient run (issue 14).

Reference: energy balance of a lumped slab (from memory, any heat-transfer text, e.g.
Incropera ch. 5 lumped capacitance): a flux q'' into an insulated plate of thickness L raises
its mean temperature by q'' t / (rho cp L).  For 1e9 W/m2 (the documented maximum heat flux of
docs/case-file.md) into 5 mm of carbon steel (rho cp about 3.6e6 J/m3/K at room temperature,
more when hot) that is of order 1e6 K within a minute: a run that reaches it must stop
as unphysical, not finish with exit 0.
"""
import numpy as np
import pytest

import fdwall
from fdwall.errors import ConvergenceError
from fdwall.solver.transient import PLAUSIBLE_CEILING_K

CASE = """
# Invented test case: a steel plate heated by the largest flux a case may give.
title = "flux at the documented maximum (invented)"
[run]
duration = "1 h"
start_temperature = "20 degC"
output_every = "1 min"
[wall]
name = "plate"
shape = "slab"
area = "1 m2"
[[wall.layers]]
name = "steel"
material = "carbon-steel"
thickness = "5 mm"
[wall.inner_face]
heat_flux = "FLUX"
[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "10 W/m2/K"
"""


def _case(tmp_path, flux):
    p = tmp_path / "plate.toml"
    p.write_text(CASE.replace("FLUX", flux))
    return fdwall.load_case(p)


def test_flux_at_documented_maximum_stops_as_implausible(tmp_path):
    case = _case(tmp_path, "1e9 W/m2")
    # lumped estimate of the mean temperature rise after one output interval (60 s)
    rise = 1e9 * 60.0 / (3.6e6 * 0.005)
    assert rise > 10 * PLAUSIBLE_CEILING_K
    with pytest.raises(ConvergenceError) as exc:
        fdwall.run(case, progress=False)
    res = exc.value.result
    assert not res.complete
    assert "plausibility ceiling" in res.message
    kept = res.T[np.isfinite(res.T).all(axis=1)]
    assert len(kept) >= 1
    assert kept.max() <= PLAUSIBLE_CEILING_K
    # non-strict: returned, still marked incomplete
    res2 = fdwall.run(case, progress=False, strict=False)
    assert not res2.complete and "plausibility ceiling" in res2.message


def test_moderate_flux_is_not_stopped(tmp_path):
    # 2 kW/m2 through 5 mm steel to a 10 W/m2/K film: steady surface rise q/h = 200 K
    # (Newton's law of cooling), far below the ceiling; the run completes.
    res = fdwall.run(_case(tmp_path, "2 kW/m2"), progress=False)
    assert res.complete
    assert np.nanmax(res.T) < 293.15 + 200.0 + 1.0


def test_implausible_row_search_finds_nan_inf_and_hot_rows():
    # the plausibility check of a block of output rows: the first row with a NaN, an
    # infinity or a temperature above the ceiling, with its peak (NaN when not finite);
    # None for a plausible block (common practice, no source: the ceiling is fdwall's own)
    from fdwall.solver.transient import _implausible
    T = np.full((6, 4), 500.0)
    assert _implausible(T, 0, 6) is None
    assert _implausible(T, 3, 3) is None
    for j, bad, peak in ((4, np.nan, np.nan), (2, np.inf, np.nan), (1, -np.inf, np.nan),
                         (3, 2 * PLAUSIBLE_CEILING_K, 2 * PLAUSIBLE_CEILING_K)):
        U = T.copy()
        U[j, 2] = bad
        got = _implausible(U, 0, 6)
        assert got[0] == j and (np.isnan(got[1]) if np.isnan(peak) else got[1] == peak)
        # a block that starts after the bad row is plausible
        assert _implausible(U, j + 1, 6) is None
        if j >= 1:      # row numbers count from the start of the array, not of the block
            assert _implausible(U, 1, 6)[0] == j
