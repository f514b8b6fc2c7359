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

Near the site the hop geometry does not describe what is heard.  Within the
ground-wave range (:func:`ground_wave`) a station is heard along the ground:
there its vertically polarised ground wave (the field of
:func:`noisemodels.groundwave.dipole_field`: free-space spreading and Norton's
attenuation over the site's ground, flat earth) outweighs its sky wave returned
without loss from the layer overhead and spread over the slant path, the
transmitting antenna taken to radiate as strongly upward as along the ground.
Both choices favour the sky wave (the layer absorbs some of it, and a vertical
radiates little upward), so within that range the ground wave is surely the
stronger for a vertical transmitting antenna; a target by place there is
refused and is given by bearing and elevation instead.  The range is sought out
to :data:`GROUND_WAVE_REACH_M`, the flat earth's reach.  Farther out, a target
whose one hop arrives at :data:`NEAR_VERTICAL_RAD` or higher comes by
near-vertical incidence (NVIS): it takes that one hop alone, as more hops
arrive nearer still to the zenith, over twice the path and twice the layer's
absorption.
"""

from __future__ import annotations

import numpy as np

from noisemodels.hops import fewest_hops, hop_elevation_rad
from snrgain.records import record

DEFAULT_LAYER_HEIGHT_M = 250e3
DEFAULT_MIN_ELEVATION_RAD = np.radians(3.0)
NEAR_VERTICAL_RAD = float(np.radians(60.0))
"""A one-hop arrival at or above this elevation is near-vertical incidence (NVIS) [rad] (snrgain's own choice: at
60 deg a short vertical's power pattern, cos^2 of the elevation, lies 6 dB under its peak, and above it the ranking
rests on how each antenna hears from nearly overhead, where a vertical has its null)."""
GROUND_WAVE_REACH_M = 30e3
"""How far the ground-wave range is sought [m]: the flat earth of noisemodels.groundwave (ITU-R P.368's flat-earth
range at these frequencies, a few tens of kilometres); over sea water or perfect ground the range reaches it."""
NEAREST_PLACE_M = 1e3
"""A target by place nearer than this [m] is refused whatever the band (the library's call without a band)."""


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

    @property
    def near_vertical(self) -> bool:
        """A target by place that arrives by one hop from nearly overhead (NVIS; :data:`NEAR_VERTICAL_RAD`)."""
        return self.hops is not None and len(self.hops) == 1


@record
class GroundWave:
    """Where a band's ground wave outweighs its sky wave (module docstring): within ``range_m`` [m] of the site at
    ``freq_hz`` [Hz] over ``ground`` (a Ground; None: perfect), the sky wave returned from ``layer_height_m`` [m]."""

    freq_hz: float
    ground: object
    layer_height_m: float
    range_m: float

    def words(self) -> str:
        """'28 km at 1.83 MHz over moist loam (5 mS/m, relative permittivity 13)'."""
        g = self.ground
        if g is None:
            over = "perfect ground"
        else:
            constants = f"{g.conductivity_s_per_m * 1e3:.3g} mS/m, relative permittivity {g.permittivity:.3g}"
            over = constants if g.name == "custom" else f"{g.name} ({constants})"
        reach = "at least " if self.range_m >= GROUND_WAVE_REACH_M else ""
        return f"{reach}{self.range_m / 1e3:.0f} km at {self.freq_hz / 1e6:g} MHz over {over}"


def _ground_over_sky(distance_m, freq_hz: float, ground, layer_height_m: float):
    """|ground wave| / |sky wave| at ``distance_m`` [m], both radiated alike (module docstring)."""
    from noisemodels.groundwave import dipole_field
    from noisemodels.hops import EARTH_RADIUS_M as R

    d = np.asarray(distance_m, dtype=float)
    eps, sigma = (None, None) if ground is None else (ground.permittivity, ground.conductivity_s_per_m)
    along = np.abs(dipole_field(d, freq_hz, permittivity=eps, conductivity_s_per_m=sigma))
    top = R + layer_height_m
    half_hop = np.sqrt(R**2 + top**2 - 2 * R * top * np.cos(d / (2 * R)))  # ground point to the layer's point
    return along * 2 * half_hop


def ground_wave(freq_hz: float, ground, layer_height_m: float = DEFAULT_LAYER_HEIGHT_M) -> GroundWave:
    """The ground-wave range at ``freq_hz`` over ``ground`` (None: perfect), sought out to GROUND_WAVE_REACH_M: where
    :func:`_ground_over_sky` falls to 1 (it falls with distance), found on a grid and refined by bisection."""
    args = (freq_hz, ground, layer_height_m)
    grid = np.geomspace(NEAREST_PLACE_M, GROUND_WAVE_REACH_M, 200)
    below = np.nonzero(_ground_over_sky(grid, *args) < 1.0)[0]
    if below.size == 0:
        return GroundWave(freq_hz, ground, layer_height_m, GROUND_WAVE_REACH_M)
    if below[0] == 0:
        return GroundWave(freq_hz, ground, layer_height_m, NEAREST_PLACE_M)
    lo, hi = float(grid[below[0] - 1]), float(grid[below[0]])
    for _ in range(40):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if _ground_over_sky(mid, *args) >= 1.0 else (lo, mid)
    return GroundWave(freq_hz, ground, layer_height_m, hi)


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
    near: GroundWave | None = None,
) -> TargetDirections:
    """A target area by its coordinates: great-circle bearing, hop-geometry elevations.  ``near``: the band's
    ground-wave range (:func:`ground_wave`), within which it is refused (without it, within NEAREST_PLACE_M); one
    whose one hop arrives at NEAR_VERTICAL_RAD or higher takes that hop alone (module docstring)."""
    bearing, dist = geodesic(site_lat_deg, site_lon_deg, lat_deg, lon_deg)
    instead = (
        f"give it by bearing and elevation instead: bearing = {np.degrees(bearing):.0f}, elevation = [1, 3] (a "
        "wave along the ground), or the elevations you hear it at"
    )
    if dist < NEAREST_PLACE_M:
        raise ValueError(f"target {name!r} lies {dist:.0f} m from the site, within 1 km of it; {instead}")
    if near is not None and dist < near.range_m:
        raise ValueError(
            f"target {name!r} lies {dist / 1e3:.1f} km from the site, within the ground-wave range, {near.words()}, "
            "inside which a station's ground wave along the ground outweighs its sky wave from overhead: it is heard "
            f"at elevations near 0, not by the sky-wave hops a target by place is given; {instead} (in a file of "
            "several bands, the target's bands can keep it to the higher bands, where the ground-wave range is "
            "shorter)"
        )
    if dist > NEAR_ANTIPODE_M:  # the great circles through the site all meet there: its bearing is not defined
        raise ValueError(
            f"target {name!r} lies {dist / 1e3:,.0f} km away, about at the site's antipode (within 200 km of it), "
            "where every bearing leads; give it by the bearing you hear it from and elevation"
        )
    n_min = fewest_hops(dist, layer_height_m=layer_height_m, min_elevation_rad=min_elevation_rad)
    one_hop = n_min == 1 and hop_elevation_rad(dist, 1, layer_height_m=layer_height_m) >= NEAR_VERTICAL_RAD
    hops = (1,) if one_hop else (n_min, n_min + 1)
    lo, hi = (float(hop_elevation_rad(dist, n, layer_height_m=layer_height_m)) for n in (hops[0], hops[-1]))
    el = _samples(lo, hi)
    az = np.full_like(el, bearing)
    return TargetDirections(name, az, el, np.full(el.size, 1.0 / el.size), bearing, dist, hops)
