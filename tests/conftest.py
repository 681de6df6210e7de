"""Shared pytest set-up for the fdwall tests.

* matplotlib is switched to the non-interactive Agg backend before anything imports pyplot,
  so tests that draw figures run on a machine without a screen.
* ``fp_strict`` is an opt-in fixture that turns numpy floating-point warnings (overflow,
  division by zero, invalid operations) into errors for the duration of one test.  It is not
  global on purpose: numba and h5py may legitimately trip these flags inside library code.
* the ``slow`` marker is registered here too (also in pyproject.toml), so ``-m "not slow"``
  works whichever configuration file pytest picks up.
"""
from __future__ import annotations

import os
import sys

import numpy as np
import pytest

os.environ.setdefault("MPLBACKEND", "Agg")
try:  # pragma: no cover - matplotlib is a dependency, but keep the tests importable without it
    import matplotlib
    matplotlib.use("Agg", force=True)
except ImportError:  # pragma: no cover
    pass

# tests/ on the path so the verification tests can ``import reference``.
_HERE = os.path.dirname(os.path.abspath(__file__))
if _HERE not in sys.path:
    sys.path.insert(0, _HERE)


def pytest_configure(config):
    """Register the markers used by the suite (harmless if pyproject.toml already does)."""
    config.addinivalue_line("markers", "slow: long-running checks (deselect with -m 'not slow')")


@pytest.fixture
def fp_strict():
    """Raise on numpy floating-point errors (overflow, divide, invalid, underflow excluded)
    inside the test that asks for this fixture; the previous settings are restored after."""
    old = np.seterr(all="raise", under="ignore")
    try:
        yield
    finally:
        np.seterr(**old)


# Hypothesis profiles for the property-based tests (tests/test_fuzz_inputs.py and the readers):
# "ci" (default) is derandomised, so every CI run checks the same few hundred examples per
# property; FDWALL_FUZZ=long runs 20,000 random examples per property (by hand, minutes).
try:
    from hypothesis import HealthCheck
    from hypothesis import settings as _hyp_settings

    _hyp_settings.register_profile("ci", max_examples=300, derandomize=True, deadline=None,
                                   suppress_health_check=[HealthCheck.too_slow])
    _hyp_settings.register_profile("long", max_examples=20_000, derandomize=False,
                                   deadline=None, suppress_health_check=[HealthCheck.too_slow])
    _hyp_settings.load_profile("long" if os.environ.get("FDWALL_FUZZ") == "long" else "ci")
except ImportError:  # pragma: no cover - hypothesis comes with the test extras
    pass
