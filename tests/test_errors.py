"""fdwall's error classes and how the command line reports them.

One base class of fdwall's own; bad input (InputError, a ValueError for older callers) apart
from internal failures (InternalError, never reported as bad input).  Exit codes as in
fdwall/cli/__init__.py (2 bad input, 1 internal failure or unwritable output, 3 no
convergence).  House rules of the project, no outside source (common practice: a program's
own exception hierarchy with user errors apart from bugs).
"""
from __future__ import annotations

import pathlib
import re

import pytest

import fdwall.cli as cli
import fdwall.errors as E
from fdwall.case import CaseError
from fdwall.materials import MaterialError
from fdwall.model import ModelError
from fdwall.schedule import Schedule

PKG = pathlib.Path(E.__file__).resolve().parent

SLAB = """\
# demo data: a one-layer board slab between hot and room air
title = "demo slab for error reports"

[run]
duration = "1 h"

[materials.demo-board]
conductivity = "0.1 W/m/K"
specific_heat = "1000 J/kg/K"
density = "500 kg/m3"

[wall]
name = "slab"
area = "1 m2"

[[wall.layers]]
material = "demo-board"
thickness = "50 mm"

[wall.inner_face]
fluid_temperature = "200 degC"
film_coefficient = "10 W/m2/K"

[wall.outer_face]
fluid_temperature = "20 degC"
film_coefficient = "5 W/m2/K"
"""


def test_hierarchy():
    for cls in (E.InputError, E.CaseError, E.SolverError, E.ConvergenceError, E.Interrupted,
                E.OutputError, E.InternalError, CaseError, MaterialError, ModelError):
        assert issubclass(cls, E.FdwallError), cls
    for cls in (E.InputError, CaseError, MaterialError, ModelError):
        assert issubclass(cls, E.InputError) and issubclass(cls, ValueError), cls
    assert not issubclass(E.InternalError, (ValueError, E.InputError))
    assert issubclass(E.ConvergenceError, RuntimeError)
    assert not issubclass(E.Interrupted, (E.InputError, E.SolverError, E.InternalError))


def test_no_bare_value_error_raised_in_the_package():
    # a bare ValueError cannot be told from a bug: fdwall raises its own classes
    bad = []
    for p in PKG.rglob("*.py"):
        for n, line in enumerate(p.read_text().splitlines(), 1):
            if re.search(r"\braise\s+ValueError\b", line):
                bad.append(f"{p.relative_to(PKG.parent)}:{n}: {line.strip()}")
    assert not bad, "\n".join(bad)


def test_library_input_errors_are_input_errors():
    with pytest.raises(E.InputError):
        Schedule((0.0, 1.0), (1.0,))
    from fdwall.physics.air import pressure_at_altitude
    with pytest.raises(E.InputError):
        pressure_at_altitude(20000.0)
    from fdwall.physics.radiation import get_finish
    with pytest.raises(E.InputError, match="unknown surface finish"):
        get_finish("no-such-finish")


def _run_cli(capsys, *args):
    rc = cli.main([str(a) for a in args])
    cap = capsys.readouterr()
    return rc, cap.out, cap.err


@pytest.fixture
def slab(tmp_path):
    f = tmp_path / "slab.toml"
    f.write_text(SLAB)
    return f


@pytest.mark.parametrize("exc", [ValueError("operands could not be broadcast together"),
                                 E.InternalError("node table out of step with the mesh")])
def test_cli_reports_a_bug_as_internal_failure_naming_the_case(slab, capsys, monkeypatch, exc):
    import fdwall.system as system

    def broken(case):
        raise exc
    monkeypatch.setattr(system, "build_system", broken)
    out_dir = slab.parent / "o"
    rc, out, err = _run_cli(capsys, "run", slab, "--out", out_dir)
    assert rc == 1, err
    assert "internal failure" in err and "bug" in err and "slab.toml" in err
    assert "not a problem with your input" in err
    assert "Traceback" not in err and not out_dir.exists()


def test_cli_steady_internal_error_is_not_no_steady_state(slab, capsys, monkeypatch):
    import fdwall.solver as solver

    def broken(case, **kw):
        raise E.InternalError("steady driver lost its work arrays")
    monkeypatch.setattr(solver, "solve_steady", broken)
    rc, out, err = _run_cli(capsys, "steady", slab)
    assert rc == 1 and "internal failure" in err and "no steady state" not in err


def test_cli_input_error_from_deep_inside_is_exit_2(slab, capsys, monkeypatch):
    import fdwall.solver as solver

    def picky(case, **kw):
        raise E.InputError("a made-up objection to the case, phrased for the user")
    monkeypatch.setattr(solver, "run", picky)
    rc, out, err = _run_cli(capsys, "run", slab, "--out", slab.parent / "o2")
    assert rc == 2 and "made-up objection" in err and "slab.toml" in err
