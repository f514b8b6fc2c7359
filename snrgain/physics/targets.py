"""Where the wanted signals come from: bearings and arrival elevations.

A target is a small set of directions with weights adding to 1.  Given as a
bearing with an elevation range, the range is sampled every degree.  Given as
a place (latitude, longitude), the great-circle bearing and distance come
from the WGS-84 ellipsoid (Vincenty's inverse, snrgain.physics.geodesy,
checked against pyproj.Geod: C. F. F. Karney, "Algorithms for geodesics",
J. Geodesy 87, 43 (2013)), and the arrival elevations from
sky-wave hop geometry over a spherical earth with a mirror-reflecting layer
at a stated height:

    elevation = atan((cos(theta) - R / (R + h)) / sin(theta)),  theta = d / (2 n R),

for n equal hops over the ground distance d: plane trigonometry in the
triangle earth centre, ground point, reflection point (tests/test_targets.py
checks it by the law of sines; the textbook citation, K. Davies, "Ionospheric
Radio", IEE (1990), Chapter 5, is from memory and not verified).  The fewest hops that keep the
elevation at or above ``min_elevation`` and one hop more span the elevations
the target arrives at, sampled every degree.  The default layer height of
250 km stands for night-time F-region reflection on the low bands (common
practice); set it per target.
"""

from __future__ import annotations

import numpy as np

from noisemodels.hops import fewest_hops, hop_elevation_rad
from snrgain.records import record

DEFAULT_LAYER_HEIGHT_M = 250e3
DEFAULT_MIN_ELEVATION_RAD = np.radians(3.0)


@record
class TargetDirections:
    """A target's directions of arrival.

    Attributes
    ----------
    name : label
    azimuth_rad, elevation_rad : sample directions [rad]
    weight : weight of each sample, adding to 1 [-]
    bearing_rad : the principal bearing [rad]
    distance_m : great-circle distance for a place target, else None [m]
    hops : hop counts used for a place target, else None
    """

    name: str
    azimuth_rad: np.ndarray
    elevation_rad: np.ndarray
    weight: np.ndarray
    bearing_rad: float
    distance_m: float | None = None
    hops: tuple[int, ...] | None = None

    @property
    def mean_elevation_rad(self) -> float:
        return float(np.sum(self.weight * self.elevation_rad))


SAMPLE_STEP_RAD = float(np.radians(1.0))
"""Spacing of a target's elevation samples [rad]."""


def _samples(lo_rad, hi_rad, step_rad=SAMPLE_STEP_RAD):
    if hi_rad - lo_rad < 1e-9:
        return np.array([lo_rad])
    n = int(np.ceil((hi_rad - lo_rad) / step_rad)) + 1
    return np.linspace(lo_rad, hi_rad, n)


def from_bearing(
    name: str, *, bearing_rad: float, elevation_lo_rad: float, elevation_hi_rad: float
) -> TargetDirections:
    """A target at one bearing, uniform over an elevation range [rad]."""
    if elevation_hi_rad < elevation_lo_rad:
        raise ValueError(
            f"target {name!r}: elevation range [{np.degrees(elevation_lo_rad):g}, {np.degrees(elevation_hi_rad):g}] "
            "deg is reversed; give [low, high]"
        )
    el = _samples(elevation_lo_rad, elevation_hi_rad)
    az = np.full_like(el, np.mod(bearing_rad, 2 * np.pi))
    return TargetDirections(name, az, el, np.full(el.size, 1.0 / el.size), float(np.mod(bearing_rad, 2 * np.pi)))


def geodesic(lat1_deg, lon1_deg, lat2_deg, lon2_deg) -> tuple[float, float]:
    """(initial bearing [rad, compass], distance [m]) from point 1 to point 2 on WGS-84: Vincenty's inverse
    (snrgain.physics.geodesy, no import of pyproj), pyproj's for the nearly antipodal points it does not reach."""
    from snrgain.physics.geodesy import inverse

    found = inverse(float(lat1_deg), float(lon1_deg), float(lat2_deg), float(lon2_deg))
    if found is not None:
        az, dist = found
    else:
        from pyproj import Geod

        az, _, dist = Geod(ellps="WGS84").inv(lon1_deg, lat1_deg, lon2_deg, lat2_deg)
    return float(np.mod(np.radians(az), 2 * np.pi)), float(dist)


NEAR_ANTIPODE_M = 19_800e3
"""A target farther than this [m] lies near the site's antipode (half the earth's meridian, about 20,004 km, less
200 km): its great-circle bearing is not defined there, and signals arrive by every path."""


def from_place(
    name: str,
    *,
    site_lat_deg: float,
    site_lon_deg: float,
    lat_deg: float,
    lon_deg: float,
    layer_height_m: float = DEFAULT_LAYER_HEIGHT_M,
    min_elevation_rad: float = DEFAULT_MIN_ELEVATION_RAD,
) -> TargetDirections:
    """A target area by its coordinates: great-circle bearing, hop-geometry elevations."""
    bearing, dist = geodesic(site_lat_deg, site_lon_deg, lat_deg, lon_deg)
    if dist < 1e3:
        raise ValueError(f"target {name!r} lies within 1 km of the site; give it by bearing and elevation instead")
    if dist > NEAR_ANTIPODE_M:  # the great circles through the site all meet there: its bearing is not defined
        raise ValueError(
            f"target {name!r} lies {dist / 1e3:,.0f} km away, about at the site's antipode (within 200 km of it), "
            "where every bearing leads; give it by the bearing you hear it from and elevation"
        )
    n_min = fewest_hops(dist, layer_height_m=layer_height_m, min_elevation_rad=min_elevation_rad)
    hops = (n_min, n_min + 1)
    lo, hi = (float(hop_elevation_rad(dist, n, layer_height_m=layer_height_m)) for n in hops)
    el = _samples(lo, hi)
    az = np.full_like(el, bearing)
    return TargetDirections(name, az, el, np.full(el.size, 1.0 / el.size), bearing, dist, hops)
