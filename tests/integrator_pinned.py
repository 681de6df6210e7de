"""Time-loop inputs and results pinned to the last digit (tests/data/integrator_pinned.npz).

The inputs of the compiled time loop (:func:`fdwall.solver.kernels.integrate`: the system
arrays, the start state, the output times) were captured from ``fdwall.run`` on the cases
below, and the SHA-256 digests of every output array it wrote were recorded, with the time
loop as it stood before it was split into one compiled function per concern and before the
kernel speed work.  Both keep the arithmetic and its order, so replaying the captured inputs
through today's kernel must give the same bits.  Pinning the kernel's own inputs keeps the
check independent of the mesh and the default settings chosen above the kernel.

Cases: the demo cases in cases/ (invented data) and the six single-term cases of
tests/test_jacobian_fd.py, plus the demo enclosure under each control mode (thermostat,
switched duty, switched PID).  The event crossing times are not pinned (the read-out between
nodes that locates them is expected to change); everything else is.

``python tests/integrator_pinned.py --record`` rewrites the file: only when a change of the
numbers is intended, with the reason in the commit message.
"""
from __future__ import annotations

import hashlib
import pathlib
import sys

import numpy as np

HERE = pathlib.Path(__file__).resolve().parent
ROOT = HERE.parent
PINNED = HERE / "data" / "integrator_pinned.npz"
DEMOS = ("curing-oven-panel.toml", "heat-treat-furnace.toml", "hot-oil-pipe.toml",
         "lab-furnace-wall.toml")
#: integrate's arguments: (T, cs, acc, stats, t_out, k0, k1, land_outputs, bp, bpj, tol,
#: max_step, 14 system arrays, dirich_node, dirich_sched, dirich_face, qd_state, ev_i, ev_f,
#: ev_out, T_out, qf_out, E_out, P_out, hc_out, hr_out, ks, max_steps)
N_ARGS = 41
OUT_ARGS = {"T": 0, "cs": 1, "acc": 2, "stats": 3, "qd_state": 29, "T_out": 33,
            "qf_out": 34, "E_out": 35, "P_out": 36, "hc_out": 37, "hr_out": 38, "ks": 39}
SCALARS = {5: int, 6: int, 7: bool, 10: float, 11: float, 40: int}


def _control_cases():
    import dataclasses

    from test_jacobian_fd import CASES, _enclosure

    from fdwall.model import Control, RunSettings
    out = {name: CASES[name]() for name in CASES}
    run = RunSettings(duration=4 * 3600.0, output_every=120.0)
    base = _enclosure()
    out["enclosure, thermostat"] = dataclasses.replace(
        base, run=run, control=Control(mode="thermostat", setpoint=420.0, band=4.0))
    out["enclosure, switched duty"] = dataclasses.replace(
        base, run=run, control=Control(mode="duty", duty=0.4, switched=True, period=120.0))
    out["enclosure, pid switched"] = dataclasses.replace(
        base, run=run, control=Control(mode="pid", setpoint=400.0, switched=True,
                                       period=60.0, proportional_gain=0.05,
                                       integral_gain=2e-5))
    return out


def cases():
    """name -> Case of every pinned run."""
    import fdwall
    out = {f"demo {d}": fdwall.load_case(ROOT / "cases" / d) for d in DEMOS}
    out.update(_control_cases())
    return out


def _digest(a) -> str:
    return hashlib.sha256(np.ascontiguousarray(a).tobytes()).hexdigest()


def capture(case) -> list:
    """The arguments of the first ``integrate`` call of ``fdwall.run(case)`` (copies): the
    reported run's (the estimate's extra runs come after it)."""
    import fdwall
    from fdwall.solver import native, transient
    got = []
    orig = native.integrate

    def spy(*args):
        if not got:
            got.append([a.copy() if isinstance(a, np.ndarray) else a for a in args])
        return orig(*args)
    transient.K.integrate = spy
    try:
        fdwall.run(case, progress=False)
    finally:
        transient.K.integrate = orig
    return got[0]


def replay(args) -> dict:
    """Run the captured inputs through the kernel in one call; digests of its outputs."""
    from fdwall.solver import native
    a = [x.copy() if isinstance(x, np.ndarray) else x for x in args]
    a[N_ARGS - 1] = 1 << 40          # no step budget: the whole run in one call
    native.integrate(*a)
    return {name: _digest(a[j]) for name, j in OUT_ARGS.items()}


def load() -> dict:
    """name -> (captured arguments, recorded digests)."""
    z = np.load(PINNED, allow_pickle=False)
    names = [str(s) for s in z["names"]]
    out = {}
    for c, name in enumerate(names):
        args = []
        for j in range(N_ARGS):
            v = z[f"c{c}_a{j}"]
            args.append(SCALARS[j](v[()]) if j in SCALARS else v)
        dig = {k: str(z[f"c{c}_d_{k}"]) for k in OUT_ARGS}
        out[name] = (args, dig)
    return out


def record() -> None:
    store = {}
    names = []
    for c, (name, case) in enumerate(cases().items()):
        args = capture(case)
        assert len(args) == N_ARGS
        names.append(name)
        for j, v in enumerate(args):
            store[f"c{c}_a{j}"] = np.asarray(v)
        for k, d in replay(args).items():
            store[f"c{c}_d_{k}"] = np.asarray(d)
    store["names"] = np.asarray(names)
    np.savez_compressed(PINNED, **store)
    print("wrote", PINNED, len(names), "cases")


if __name__ == "__main__":
    sys.path.insert(0, str(HERE))
    sys.path.insert(0, str(ROOT))
    if "--record" in sys.argv:
        record()
