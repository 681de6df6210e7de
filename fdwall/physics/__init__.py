"""Surface heat-exchange physics: air properties, convective film coefficients, radiation.

Kernels (numba, used inside the solver): :func:`fdwall.physics.convection.h_conv`,
:func:`fdwall.physics.radiation.h_rad_kernel` and the property functions of
:mod:`fdwall.physics.air`.  Model objects: :class:`fdwall.physics.convection.Convection`,
:func:`fdwall.physics.radiation.get_finish`.
"""

from fdwall.physics.convection import PAR_LEN, Convection, combined_h, h_conv
from fdwall.physics.radiation import SIGMA, get_finish, h_rad_kernel, h_radiative

__all__ = [
    "PAR_LEN",
    "Convection",
    "combined_h",
    "h_conv",
    "SIGMA",
    "get_finish",
    "h_rad_kernel",
    "h_radiative",
]
