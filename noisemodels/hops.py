"""Sky-wave hop geometry over a spherical earth with a mirror-reflecting layer.

For n equal hops over a ground distance d via a layer at height h,

    elevation = atan((cos(theta) - R / (R + h)) / sin(theta)),  theta = d / (2 n R),

(plane trigonometry in the triangle earth centre, ground point, reflection
point, checked by the law of sines in the tests; the textbook citation, K.
Davies, "Ionospheric Radio", IEE (1990), Chapter 5, is from memory and not
verified).
The longest hop for an elevation no lower than Delta_min spans the central
angle 2 (acos(R cos(Delta_min) / (R + h)) - Delta_min).

    >>> import numpy as np
    >>> round(float(np.degrees(hop_elevation_rad(0.0, 1, layer_height_m=250e3))), 6)
    90.0
    >>> round(float(max_hop_distance_m(layer_height_m=250e3, min_elevation_rad=np.radians(3.0))) / 1e3)
    2907
    >>> fewest_hops(3000e3, layer_height_m=250e3, min_elevation_rad=np.radians(3.0))
    2
"""

from __future__ import annotations

import numpy as np

EARTH_RADIUS_M = 6_371_000.0
"""Mean radius of the earth [m] (IUGG mean radius R1, rounded)."""


def hop_elevation_rad(distance_m, hops, *, layer_height_m):
    """Elevation [rad] of an n-hop path of ground distance [m] via a layer at a height [m]."""
    theta = np.asarray(distance_m, dtype=float) / (2.0 * np.asarray(hops) * EARTH_RADIUS_M)
    return np.arctan2(np.cos(theta) - EARTH_RADIUS_M / (EARTH_RADIUS_M + layer_height_m), np.sin(theta))


def max_hop_distance_m(*, layer_height_m, min_elevation_rad):
    """Longest single hop [m] for an elevation no lower than ``min_elevation_rad``."""
    a = np.arccos(EARTH_RADIUS_M * np.cos(min_elevation_rad) / (EARTH_RADIUS_M + layer_height_m))
    return 2.0 * EARTH_RADIUS_M * (a - min_elevation_rad)


def fewest_hops(distance_m, *, layer_height_m, min_elevation_rad):
    """The fewest equal hops (>= 1) that keep the elevation at or above ``min_elevation_rad``."""
    n = np.ceil(
        np.asarray(distance_m, dtype=float)
        / max_hop_distance_m(layer_height_m=layer_height_m, min_elevation_rad=min_elevation_rad)
    )
    n = np.maximum(1, n).astype(int)
    return int(n) if n.ndim == 0 else n
