"""Public docstrings state the unit of every physical number (house style: SI in brackets).

For the public classes and functions of the core modules, every numpydoc parameter whose type
is a number or a schedule must carry a unit in square brackets, e.g. ``[W/m/K]`` or ``[-]``
(common practice in scientific Python libraries, no source).
"""
import importlib
import inspect
import re

import pytest

MODULES = ["fdwall.model", "fdwall.schedule", "fdwall.solver.transient", "fdwall.solver.steady",
           "fdwall.result", "fdwall.physics.convection", "fdwall.materials.material"]
NUMERIC = re.compile(r"\b(float|Schedule|ndarray|array)\b")


def _params(doc):
    """(name, type, description) of each entry in the Parameters section."""
    m = re.search(r"\nParameters\n-+\n(.*?)(\n\n[A-Z][a-z]+\n-+\n|\Z)", "\n" + doc, re.S)
    if not m:
        return []
    out, cur = [], None
    for line in m.group(1).splitlines():
        if line and not line.startswith(" ") and ":" in line:
            name, typ = line.split(":", 1)
            cur = [name.strip(), typ.strip(), ""]
            out.append(cur)
        elif cur is not None:
            cur[2] += " " + line.strip()
    return out


def _public():
    for mn in MODULES:
        mod = importlib.import_module(mn)
        for name, obj in vars(mod).items():
            if name.startswith("_") or getattr(obj, "__module__", None) != mn:
                continue
            if inspect.isclass(obj) or inspect.isfunction(obj):
                yield f"{mn}.{name}", obj
                if inspect.isclass(obj):
                    for mname, meth in vars(obj).items():
                        if not mname.startswith("_") and inspect.isfunction(meth):
                            yield f"{mn}.{name}.{mname}", meth


@pytest.mark.parametrize("qualname,obj", list(_public()), ids=lambda x: x if isinstance(x, str) else "")
def test_numeric_parameters_have_units(qualname, obj):
    doc = inspect.getdoc(obj) or ""
    assert doc, f"{qualname} has no docstring"
    missing = [name for name, typ, desc in _params(doc)
               if NUMERIC.search(typ) and "[" not in desc and "[" not in typ]
    assert not missing, f"{qualname}: parameters without a unit in brackets: {missing}"
