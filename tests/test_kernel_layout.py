"""Named kernel data: every row and column of the kernel arrays has a name in
fdwall/solver/layout.py, and nothing else in the package indexes them by number.

Sources
-------
* Volume of a plane layer A L and of a cylindrical shell pi (r2^2 - r1^2) L, area of a
  cylinder face 2 pi r L (elementary geometry): the named node and face columns hold them.
* The rest are house rules of the project (no outside source).
"""
from __future__ import annotations

import inspect
import math
import pathlib
import re

import numpy as np
import pytest

import fdwall.solver.layout as L
from fdwall.materials import material_from_dict
from fdwall.model import Case, Control, Face, Heater, Layer, RunSettings, Wall
from fdwall.solver import kernels, native
from fdwall.system import build_system

PKG = pathlib.Path(L.__file__).resolve().parents[1]

# kernel arrays indexed by column (2-D: last index) or by position (1-D), and the tables
# indexed by row; ``fi`` / ``ff`` are the face rows built in fdwall/system.py
_TWO_D = r"node_i|node_f|face_i|face_f|chains|ev_i|ev_f|ev_out|fi|ff"
_ONE_D = r"ctl_i|ctl_f|ch_i|ch_f"
_BARE = [
    re.compile(rf"\b({_TWO_D})\[[^\[\]]*,\s*-?\d+\s*\]"),      # face_i[f, 7]
    re.compile(rf"\b({_ONE_D}|fi|ff)\[\s*-?\d+\s*\]"),          # ctl_f[8]
    re.compile(r"\b(mtab|stab)\[\s*\d"),                        # mtab[1, a]
]
# inside the solver, the heater/loss pairs too (elsewhere ``extra`` is a common word)
_SOLVER_ONLY = [re.compile(r"\b(extra|ex0|ex1|exg|exa|exb)\[\s*-?\d+\s*\]")]

DEMO = material_from_dict("demo-board", {"k": 0.2, "cp": 1000.0, "rho": 600.0})  # invented


def test_no_bare_column_numbers_outside_layout():
    bad = []
    for p in sorted(PKG.rglob("*.py")):
        if p.name == "layout.py" and p.parent.name == "solver":
            continue
        text = p.read_text()
        if text.startswith('"""'):           # the module docstring may show layouts
            text = "\n" * text[:text.index('"""', 3)].count("\n") + text[text.index('"""', 3):]
        for n, line in enumerate(text.splitlines(), 1):
            code = line.split("#", 1)[0]
            for rx in _BARE + (_SOLVER_ONLY if p.parent.name == "solver" else []):
                if rx.search(code):
                    bad.append(f"{p.relative_to(PKG.parent)}:{n}: {line.strip()}")
    assert not bad, "bare column numbers (use fdwall.solver.layout names):\n" + "\n".join(bad)


def test_the_grep_catches_what_it_should():
    # the patterns above must see the forms the review found (a test that cannot fail is none)
    for s in ("face_i[f, 7]", "ctl_f[8]", "sysm.ch_i[2]", "mtab[1, a]", "node_i[i - 1, 2]",
              "fi[0] = node"):
        assert any(rx.search(s) for rx in _BARE), s
    assert _SOLVER_ONLY[0].search("P = extra[0]")
    for s in ("face_i[f, FI_H_MODE]", "ctl_f[CF_POWER_FACTOR]", "mtab[MT_K, a]", "T[0]"):
        assert not any(rx.search(s) for rx in _BARE), s


def _groups():
    prefixes = ("ST_", "CS_", "KS_", "NI_", "NF_", "CHAIN_", "FI_", "FF_", "MT_", "SC_", "CHI_",
                "CHF_", "CI_", "CF_", "CTL_", "EV_", "EX_", "H_")
    out = {}
    for name, v in vars(L).items():
        if isinstance(v, int) and not name.startswith("N_") and name.isupper():
            for p in prefixes:
                if name.startswith(p):
                    out.setdefault(p, {})[name] = v
    return out


def test_names_in_a_group_are_distinct_and_fit_their_arrays():
    g = _groups()
    sizes = {"ST_": L.N_STATS, "CS_": L.N_CS, "NI_": L.N_NI, "NF_": L.N_NF, "FI_": L.N_FI,
             "FF_": L.N_FF, "MT_": L.N_MT, "SC_": L.N_SC, "CHI_": L.N_CHI, "CHF_": L.N_CHF,
             "CI_": L.N_CI, "CF_": L.N_CF, "EX_": L.N_EX}
    for p, n in sizes.items():
        vals = list(g[p].values())
        assert len(set(vals)) == len(vals), p
        assert min(vals) == 0 and max(vals) < n, p
    # the controller codes: one name per code the kernels know, 0..4, and a label for each
    ctl = sorted(g["CTL_"].values())
    assert ctl == list(range(5)) and len(L.CTL_MODE_NAMES) == 5


def test_system_args_follow_the_kernel_signatures():
    names = list(inspect.signature(kernels.assemble.py_func).parameters)
    assert tuple(names[4:4 + len(L.SYSTEM_ARRAYS)]) == L.SYSTEM_ARRAYS
    names = list(inspect.signature(kernels.integrate.py_func).parameters)
    i = names.index("node_i")
    assert tuple(names[i:i + len(L.SYSTEM_ARRAYS)]) == L.SYSTEM_ARRAYS
    names = list(inspect.signature(kernels.steady.py_func).parameters)
    assert tuple(names[3:3 + len(L.SYSTEM_ARRAYS)]) == L.SYSTEM_ARRAYS
    # the ahead-of-time argument codes of the system arrays: one per array
    assert len(native._SYSTEM.split()) == len(L.SYSTEM_ARRAYS)
    sysm = build_system(_slab())
    for name, a in zip(L.SYSTEM_ARRAYS, L.system_args(sysm)):
        assert a is getattr(sysm, name)


def _slab(**ctl):
    return Case(run=RunSettings(duration=3600.0),
                wall=Wall((Layer(DEMO, 0.04), Layer(DEMO, 0.06)), area=2.5, name="demo"),
                inner=Face.exchange(373.15, 10.0), outer=Face.exchange(293.15, 5.0),
                heater=Heater(500.0, placement="inner_face") if ctl else None,
                control=Control(**ctl) if ctl else Control(), name="demo slab")


def test_named_columns_hold_geometry():
    s = build_system(_slab())
    assert s.node_i.shape[1] == L.N_NI and s.node_f.shape[1] == L.N_NF
    assert s.face_i.shape[1] == L.N_FI and s.face_f.shape[1] == L.N_FF
    assert s.mtab.shape[0] == L.N_MT and s.stab.shape[0] == L.N_SC
    assert s.ch_i.size == L.N_CHI and s.ctl_i.size == L.N_CI and s.ctl_f.size == L.N_CF
    # plane wall: half volumes add up to A L (geometry); face areas are A
    vol = s.node_f[:, L.NF_VOL_L].sum() + s.node_f[:, L.NF_VOL_R].sum()
    assert vol == pytest.approx(2.5 * 0.10, rel=1e-12)
    assert np.allclose(s.face_f[:, L.FF_AREA], 2.5)
    assert s.face_i[0, L.FI_NODE] == s.chains[0, L.CHAIN_FIRST] == 0
    assert s.face_i[1, L.FI_NODE] == s.chains[0, L.CHAIN_LAST] == s.n_nodes - 1
    assert s.node_i[-1, L.NI_LINK] == L.LINK_NONE
    assert np.all(s.node_i[:-1, L.NI_LINK] >= 0)
    # film coefficients given as numbers: fixed mode, the number in FF_H
    assert np.all(s.face_i[:, L.FI_H_MODE] == L.H_FIXED)
    assert list(s.face_f[:, L.FF_H]) == [10.0, 5.0]
    # material table rows: k and rho*cp of the demo board
    assert np.allclose(s.mtab[L.MT_K], 0.2) and np.allclose(s.mtab[L.MT_C], 600.0 * 1000.0)


def test_named_columns_hold_cylinder_geometry():
    r1, t, length = 0.05, 0.08, 3.0
    w = Wall((Layer(DEMO, t),), shape="cylinder", inner_radius=r1, length=length, name="pipe")
    s = build_system(Case(run=RunSettings(duration=60.0), wall=w,
                          inner=Face.exchange(423.15, 50.0), outer=Face.exchange(293.15, 8.0),
                          name="demo pipe"))
    vol = s.node_f[:, L.NF_VOL_L].sum() + s.node_f[:, L.NF_VOL_R].sum()
    assert vol == pytest.approx(math.pi * ((r1 + t) ** 2 - r1 ** 2) * length, rel=1e-12)
    assert s.face_f[0, L.FF_AREA] == pytest.approx(2 * math.pi * r1 * length, rel=1e-12)
    assert s.face_f[1, L.FF_AREA] == pytest.approx(2 * math.pi * (r1 + t) * length, rel=1e-12)


@pytest.mark.parametrize("ctl, code", [
    ({"mode": "fixed"}, L.CTL_DUTY_AVERAGED),
    ({"mode": "duty", "duty": 0.5}, L.CTL_DUTY_AVERAGED),
    ({"mode": "duty", "duty": 0.5, "switched": True, "period": 60.0}, L.CTL_DUTY_SWITCHED),
    ({"mode": "thermostat", "setpoint": 350.0, "band": 2.0, "sensor": "wall"}, L.CTL_THERMOSTAT),
    ({"mode": "pid", "setpoint": 350.0, "proportional_gain": 0.1, "sensor": "wall"}, L.CTL_PID_AVERAGED),
    ({"mode": "pid", "setpoint": 350.0, "proportional_gain": 0.1, "switched": True, "period": 60.0,
      "sensor": "wall"},
     L.CTL_PID_SWITCHED),
])
def test_controller_codes(ctl, code):
    s = build_system(_slab(**ctl))
    assert s.ctl_i[L.CI_MODE] == code
    assert s.ctl_i[L.CI_HEATER_NODE] == 0


# the kernels that keep numba's runtime (they allocate or return arrays); every other compiled
# function of the time loop runs without it (fdwall/solver/kernels.py, "Reference counting")
_WITH_RUNTIME = {"integrate", "steady", "resume_views"}
_ALLOC = {"empty", "zeros", "ones", "full", "array", "empty_like", "zeros_like", "copy",
          "concatenate", "arange", "linspace"}


def _njit_options(fn):
    """Keyword options of the function's @njit decorator, or None when it has none."""
    import ast
    for d in fn.decorator_list:
        if isinstance(d, ast.Call) and getattr(d.func, "id", None) == "njit":
            return {k.arg: ast.literal_eval(k.value) for k in d.keywords}
    return None


def test_loop_kernels_run_without_reference_counting_and_allocate_nothing():
    import ast
    tree = ast.parse((PKG / "solver" / "kernels.py").read_text())
    seen = set()
    for fn in [n for n in tree.body if isinstance(n, ast.FunctionDef)]:
        opts = _njit_options(fn)
        if opts is None or opts.get("inline") == "always":
            continue                # inlined bodies belong to their caller
        seen.add(fn.name)
        if fn.name in _WITH_RUNTIME:
            assert opts.get("_nrt", True), fn.name
            continue
        assert opts.get("_nrt") is False, f"{fn.name}: compile it with _nrt=False (or list it)"
        # without the runtime a function may not allocate, nor hand out a view it made
        for node in ast.walk(fn):
            if isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute):
                assert node.func.attr not in _ALLOC, f"{fn.name} allocates ({node.func.attr})"
            if isinstance(node, ast.Return) and node.value is not None:
                vals = node.value.elts if isinstance(node.value, ast.Tuple) else [node.value]
                for v in vals:
                    assert not (isinstance(v, ast.Subscript)
                                and isinstance(v.slice, ast.Slice)), f"{fn.name} returns a view"
    assert _WITH_RUNTIME <= seen
