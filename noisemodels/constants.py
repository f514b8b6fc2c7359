"""Physical constants: the one place they are written (SI).

The values are those of ``scipy.constants`` (CODATA 2022; c and k exact in the 2019 SI), and a test checks that
they equal scipy's to the last digit.  They are written out here rather than imported from scipy.constants,
because importing that module loads scipy's array-API layer (numpy.testing, numpy.f2py and more: as long as
half a bare numpy import), which ``snrgain check`` and ``--help`` must not pay for.  snrgain.physics.ground re-exports
them under the names the antenna models use; noisemodels uses them directly.
"""

from __future__ import annotations

C_M_PER_S = 299_792_458.0
"""Speed of light in vacuum [m/s] (exact; scipy.constants.c)."""
EPS0_F_PER_M = 8.8541878188e-12
"""Vacuum permittivity [F/m] (CODATA 2022; scipy.constants.epsilon_0)."""
MU0_H_PER_M = 1.25663706127e-6
"""Vacuum permeability [H/m] (CODATA 2022; scipy.constants.mu_0)."""
BOLTZMANN_J_PER_K = 1.380649e-23
"""Boltzmann constant [J/K] (exact; scipy.constants.k)."""
ETA0_OHM = MU0_H_PER_M * C_M_PER_S
"""Impedance of free space [ohm]."""
