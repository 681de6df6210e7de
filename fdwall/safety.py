"""Touch safety (public module): burn verdicts for outer faces, contact temperature, contact
simulation with a burn-damage indicator, time to safe after power-off.

The code lives in :mod:`fdwall.analyses.safety`; see docs/touch-safety.md.  Units SI: [K], [s],
[m], effusivity [J/(m2 K s^0.5)].
"""
from .analyses.safety import *  # noqa: F401,F403
from .analyses.safety import __all__  # noqa: F401
