"""fdwall: 1-D transient finite-volume model of the walls of heated equipment.

The small public API::

    import fdwall
    case = fdwall.load_case("cases/curing-oven-panel.toml")   # TOML with units -> Case (SI)
    res = fdwall.run(case)                                    # transient -> Result
    ss = fdwall.solve_steady(case)                            # steady state -> SteadyResult
    res.face_T[-1]            # face temperatures at the end [K]
    res.write_hdf5("out.h5")  # archive (atomic)
    data = fdwall.read_result("out.h5")

Cases can also be built in Python from :mod:`fdwall.model` objects (Wall, Layer, Face, ...),
materials from :func:`get_material`, and film coefficients from :class:`Convection`.
"""
from .case import load_case as _load
from .materials import Material, get_material, list_materials
from .model import (
    Bridge,
    Case,
    Chamber,
    Control,
    EnclosureWall,
    Event,
    Face,
    Heater,
    Layer,
    ModelError,
    RunSettings,
    Wall,
)
from .physics.convection import Convection
from .result import Result, _version, read_result
from .schedule import Schedule
from .solver import ConvergenceError, run, solve_steady
from .system import build_system

#: Installed version of fdwall (from the package metadata; "0+unknown" from a bare source tree).
__version__ = _version()

__all__ = [
    "load_case", "run", "solve_steady", "read_result", "Result", "build_system",
    "Case", "Wall", "Layer", "Face", "Chamber", "Heater", "Control", "EnclosureWall", "Bridge",
    "Event", "RunSettings", "Schedule", "Material", "get_material", "list_materials",
    "Convection", "ModelError", "ConvergenceError",
]


def load_case(path):
    """Read a TOML case file into a :class:`Case` (SI units inside); see docs/case-file.md."""
    return _load(path)
