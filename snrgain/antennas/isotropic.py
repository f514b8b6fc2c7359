"""The isotropic antenna: 0 dBi in every direction above the horizon.

For tests and as a yardstick.  Half the gain in each polarization; 0 below the
horizon, like every antenna in snrgain.
"""

from __future__ import annotations

from typing import Literal

import numpy as np

from snrgain.antennas.base import Antenna, AntennaParams, above_horizon, register


class IsotropicParams(AntennaParams):
    family: Literal["isotropic"]


@register("isotropic", IsotropicParams, "0 dBi everywhere above the horizon (for tests and comparison)")
class Isotropic(Antenna):
    fixed_ground = True
    buildable = False

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
        half = np.where(above_horizon(el), 0.5, 0.0)
        return half, half.copy()

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        gv, gh = self.partial_gains(freq_hz, azimuth_rad, elevation_rad)
        return np.sqrt(gv).astype(complex), np.sqrt(gh).astype(complex)
