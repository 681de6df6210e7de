"""Case files: read a TOML case file into a :class:`fdwall.model.Case`.

Quick use::

    from fdwall.case import load_case, case_warnings, CaseError
    try:
        case = load_case("cases/curing-oven-panel.toml")
    except CaseError as exc:      # one paragraph: file, key path, what is wrong, what is allowed
        print(exc)
    for w in case_warnings(case):  # service-temperature and correlation-range warnings
        print("warning:", w)

The schema (tables, keys, units, defaults, examples) is documented in ``docs/case-file.md``.
"""
from .checks import case_warnings
from .errors import CaseError
from .loader import case_from_dict, load_case

__all__ = ["CaseError", "load_case", "case_from_dict", "case_warnings"]
