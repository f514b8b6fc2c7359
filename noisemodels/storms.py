"""Directions of arrival of atmospheric noise: a storm-to-site sky-wave model.

This is a model of snrgain's own, stated plainly so its limits are clear.

Sources.  The P.372 map value at a place (FaA at the frequency, for that
place's local time) is taken as a measure of how much noise thunderstorms
generate there; the source power per unit area is proportional to
10^(FaA/10).  (The map is a map of *received* noise, so this also counts
noise that reached that place from elsewhere; in the tropics, where storms
dominate, the two agree best.)

Paths.  Along the great circle from the site at each bearing, a source area
element at ground distance d contributes in proportion to
source density x spreading x absorption, with

- spreading 1 / (R sin(d/R)) per unit bearing and distance (power from an
  area element spread over a sphere; the area element is R sin(d/R) dphi dd);
- n equal hops, the fewest that keep the elevation at or above 3 deg, via a
  mirror layer at ``layer_height_m``; arrival elevation from hop geometry;
- per hop, D-region absorption that grows with the sun's height at the
  reflection point, L = L_noon (cos 0.881 chi)^1.3 (0 when chi > 102 deg), with
  L_noon = 430 / (f_MHz + 1.2)^1.98 dB times the secant of the incidence at
  80 km, capped at 3.5 (the form of the absorption law of P. A. George and
  P. A. Bradley, Telecomm. J. 41, 307 (1974); attribution and constants
  from memory and not verified, so snrgain's assumption, the constants chosen
  so that noon absorption per hop is some 50-100 dB at 1.8 MHz and about
  10 dB at 7 MHz); 1 dB per hop at night; 3 dB per ground reflection between
  hops (an assumption).

Limits.  No propagation modes other than equal hops of one layer, no
magneto-ionic effects, no focusing, no ground-wave; paths up to 12,000 km.
The result is only a distribution of directions: it is normalised so that
P.372's reference monopole returns the site's own P.372 Fa.
"""

from __future__ import annotations

import numpy as np

from noisemodels import p372, solar
from noisemodels.hops import EARTH_RADIUS_M, fewest_hops, hop_elevation_rad
from noisemodels.sky import SkyComponent, normalised_component
from noisemodels.sphere import Directions, to_healpy_angles

MIN_ELEVATION_RAD = np.radians(3.0)
NIGHT_LOSS_DB_PER_HOP = 1.0
GROUND_LOSS_DB_PER_REFLECTION = 3.0
D_REGION_HEIGHT_M = 80e3
SUB_DISTANCE = 8
SUB_BEARING = 2


def noon_absorption_db(freq_mhz, elevation_rad):
    """D-region absorption per hop with the sun overhead [dB] (see the module docstring)."""
    sin_i = EARTH_RADIUS_M * np.cos(elevation_rad) / (EARTH_RADIUS_M + D_REGION_HEIGHT_M)
    sec_i = np.minimum(1.0 / np.sqrt(np.clip(1.0 - sin_i**2, 1e-6, None)), 3.5)
    return 430.0 / (np.asarray(freq_mhz) + 1.2) ** 1.98 * sec_i


def hop_absorption_db(freq_mhz, elevation_rad, solar_zenith_rad):
    """Absorption of one hop [dB] for the sun's zenith angle at the reflection point."""
    c = np.clip(np.cos(0.881 * np.asarray(solar_zenith_rad)), 0.0, None)
    day = noon_absorption_db(freq_mhz, elevation_rad) * c**1.3
    return NIGHT_LOSS_DB_PER_HOP + day


def _hops_and_elevation(d_m, layer_height_m):
    n = np.atleast_1d(fewest_hops(d_m, layer_height_m=layer_height_m, min_elevation_rad=MIN_ELEVATION_RAD))
    n = n.reshape(np.shape(d_m)) if np.ndim(d_m) else n[0]
    return n, hop_elevation_rad(d_m, n, layer_height_m=layer_height_m)


def arrival_samples(
    site_lat_deg: float,
    site_lon_deg: float,
    *,
    month: int,
    utc_hour: float,
    freq_hz: float,
    layer_height_m: float = 250e3,
    data_dir=None,
    bearing_step_deg: float = 3.0,
    distance_step_m: float = 100e3,
    max_distance_m: float = 12_000e3,
    sources=None,
):
    """Relative noise power arriving from each (bearing, distance) sample.

    Returns (azimuth_rad, elevation_rad, power) flat arrays; ``power`` is
    relative.  ``sources``, if given, replaces the P.372 map as the source
    density: a function (lat_deg, lon_deg) -> relative power per unit area
    (used by tests to place a single storm region by hand).
    """
    from pyproj import Geod

    bearings = np.arange(0.0, 360.0, bearing_step_deg)
    dist = np.arange(distance_step_m, max_distance_m + 1.0, distance_step_m)
    b, d = np.meshgrid(bearings, dist, indexing="ij")
    geod = Geod(ellps="WGS84")
    lon2, lat2, _ = geod.fwd(np.full(b.size, site_lon_deg), np.full(b.size, site_lat_deg), b.ravel(), d.ravel())
    lat2 = lat2.reshape(b.shape)
    lon2 = lon2.reshape(b.shape)
    f_mhz = freq_hz / 1e6
    if sources is None:
        fa = p372.atmospheric(lat2, lon2, month=month, freq_hz=freq_hz, utc_hour=utc_hour, data_dir=data_dir).fa_db
        density = 10.0 ** (fa / 10.0)
    else:
        density = np.asarray(sources(lat2, lon2), dtype=float)
    n, el = _hops_and_elevation(d, layer_height_m)
    # Absorption at each hop's reflection point: fractions (2i - 1) / (2n) of the path.
    doy = solar.mid_month_day_of_year(month)
    nmax = int(n.max())
    loss_db = np.zeros(b.shape)
    for i in range(1, nmax + 1):
        active = n >= i
        frac = (2 * i - 1) / (2.0 * n)
        lo, la, _ = geod.fwd(
            np.full(b.size, site_lon_deg), np.full(b.size, site_lat_deg), b.ravel(), (d * frac).ravel()
        )
        chi = np.pi / 2 - solar.solar_elevation_rad(np.radians(la), np.radians(lo), day_of_year=doy, utc_hour=utc_hour)
        hop = hop_absorption_db(f_mhz, el, chi.reshape(b.shape))
        loss_db += np.where(active, hop, 0.0)
    loss_db += GROUND_LOSS_DB_PER_REFLECTION * (n - 1)
    spreading = 1.0 / (EARTH_RADIUS_M * np.sin(d / EARTH_RADIUS_M))
    power = density * spreading * 10.0 ** (-loss_db / 10.0) * np.radians(bearing_step_deg) * distance_step_m
    # Each sample stands for a cell of bearing x distance: spread its power over sub-samples across the cell,
    # so that the arrival elevations (which change fast with distance near the site) fill the sky smoothly.
    sub_d = (np.arange(SUB_DISTANCE) + 0.5) / SUB_DISTANCE - 0.5
    sub_b = (np.arange(SUB_BEARING) + 0.5) / SUB_BEARING - 0.5
    d_sub = np.clip(d[..., None] + sub_d * distance_step_m, 1e3, None)
    _, el_sub = _hops_and_elevation(d_sub, layer_height_m)
    az_sub = np.radians(b[..., None, None] + sub_b[None, None, None, :] * bearing_step_deg)
    el_sub = np.broadcast_to(el_sub[..., None], d.shape + (SUB_DISTANCE, SUB_BEARING))
    az_sub = np.broadcast_to(az_sub, d.shape + (SUB_DISTANCE, SUB_BEARING))
    p_sub = np.broadcast_to((power / (SUB_DISTANCE * SUB_BEARING))[..., None, None], el_sub.shape)
    return az_sub.ravel(), el_sub.ravel(), p_sub.ravel()


def deposit(directions: Directions, azimuth_rad, elevation_rad, power):
    """Spread sample powers onto a HEALPix direction set by bilinear weights; returns power per pixel."""
    import healpy as hp

    nside = directions.nside
    if nside is None:
        raise ValueError("deposit needs a HEALPix direction set (upper_hemisphere)")
    theta, phi = to_healpy_angles(azimuth_rad, elevation_rad)
    pix, w = hp.get_interp_weights(nside, theta, phi)
    full = np.bincount(pix.ravel(), weights=(w * power[None, :]).ravel(), minlength=hp.nside2npix(nside))
    # Map full-sphere pixel indices onto the upper-hemisphere subset.
    up_pix = hp.ang2pix(nside, *to_healpy_angles(directions.azimuth_rad, directions.elevation_rad))
    return full[up_pix]


def storm_component(
    site_lat_deg: float,
    site_lon_deg: float,
    *,
    month: int,
    utc_hour: float,
    freq_hz: float,
    level: p372.NoiseLevel,
    directions: Directions,
    layer_height_m: float = 250e3,
    data_dir=None,
    sources=None,
    name: str = "atmospheric (P.372, storm directions)",
) -> SkyComponent:
    """Atmospheric noise spread over the sky by the storm-to-site model, normalised to ``level``."""
    az, el, power = arrival_samples(
        site_lat_deg,
        site_lon_deg,
        month=month,
        utc_hour=utc_hour,
        freq_hz=freq_hz,
        layer_height_m=layer_height_m,
        data_dir=data_dir,
        sources=sources,
    )
    per_pixel = deposit(directions, az, el, power)
    if not np.any(per_pixel > 0):
        raise ValueError("the storm model found no path to the site; use a uniform or sector arrival instead")
    return normalised_component(name, "atmospheric", directions, per_pixel / directions.solid_angle_sr, level)
