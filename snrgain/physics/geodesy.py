"""The inverse geodesic problem on the WGS-84 ellipsoid in plain Python: a target's initial bearing and distance
without importing pyproj (whose import, with the network and TLS modules it loads, costs more than a `check`'s
own work).

T. Vincenty, "Direct and inverse solutions of geodesics on the ellipsoid with application of nested equations",
Survey Review 23(176) (1975) 88-93: the longitude on the auxiliary sphere iterated to 1e-12 rad, then the
distance by the series in u^2.  Accurate to about a millimetre and a few 1e-9 deg of bearing against Karney's
algorithm (pyproj.Geod; tests/test_geodesy.py).  The iteration fails to converge only for nearly antipodal points,
where :func:`inverse` returns None and the caller falls back to pyproj.
"""

from __future__ import annotations

import math

WGS84_A_M = 6378137.0
"""WGS-84 semi-major axis [m] (NIMA TR8350.2)."""
WGS84_F = 1 / 298.257223563
"""WGS-84 flattening (NIMA TR8350.2)."""


def inverse(lat1_deg: float, lon1_deg: float, lat2_deg: float, lon2_deg: float) -> tuple[float, float] | None:
    """(initial azimuth [deg, clockwise from north, in (-180, 180]], distance [m]) from point 1 to point 2 on
    WGS-84; None where Vincenty's iteration does not converge (nearly antipodal points)."""
    a, f = WGS84_A_M, WGS84_F
    b = (1 - f) * a
    lon_diff = math.radians(lon2_deg - lon1_deg)
    u1 = math.atan((1 - f) * math.tan(math.radians(lat1_deg)))
    u2 = math.atan((1 - f) * math.tan(math.radians(lat2_deg)))
    sin_u1, cos_u1, sin_u2, cos_u2 = math.sin(u1), math.cos(u1), math.sin(u2), math.cos(u2)
    lam = lon_diff
    for _ in range(200):
        sin_lam, cos_lam = math.sin(lam), math.cos(lam)
        sin_sigma = math.hypot(cos_u2 * sin_lam, cos_u1 * sin_u2 - sin_u1 * cos_u2 * cos_lam)
        if sin_sigma == 0.0:
            return 0.0, 0.0  # the same point
        cos_sigma = sin_u1 * sin_u2 + cos_u1 * cos_u2 * cos_lam
        sigma = math.atan2(sin_sigma, cos_sigma)
        sin_alpha = cos_u1 * cos_u2 * sin_lam / sin_sigma
        cos2_alpha = 1.0 - sin_alpha * sin_alpha
        cos_2sm = cos_sigma - 2.0 * sin_u1 * sin_u2 / cos2_alpha if cos2_alpha != 0.0 else 0.0  # equatorial line
        c = f / 16.0 * cos2_alpha * (4.0 + f * (4.0 - 3.0 * cos2_alpha))
        previous = lam
        lam = lon_diff + (1.0 - c) * f * sin_alpha * (
            sigma + c * sin_sigma * (cos_2sm + c * cos_sigma * (-1.0 + 2.0 * cos_2sm * cos_2sm))
        )
        if abs(lam - previous) < 1e-12:
            break
    else:
        return None
    u_sq = cos2_alpha * (a * a - b * b) / (b * b)
    big_a = 1.0 + u_sq / 16384.0 * (4096.0 + u_sq * (-768.0 + u_sq * (320.0 - 175.0 * u_sq)))
    big_b = u_sq / 1024.0 * (256.0 + u_sq * (-128.0 + u_sq * (74.0 - 47.0 * u_sq)))
    delta_sigma = (
        big_b
        * sin_sigma
        * (
            cos_2sm
            + big_b
            / 4.0
            * (
                cos_sigma * (-1.0 + 2.0 * cos_2sm * cos_2sm)
                - big_b / 6.0 * cos_2sm * (-3.0 + 4.0 * sin_sigma * sin_sigma) * (-3.0 + 4.0 * cos_2sm * cos_2sm)
            )
        )
    )
    distance = b * big_a * (sigma - delta_sigma)
    sin_lam, cos_lam = math.sin(lam), math.cos(lam)
    azimuth = math.degrees(math.atan2(cos_u2 * sin_lam, cos_u1 * sin_u2 - sin_u1 * cos_u2 * cos_lam))
    return azimuth, distance
