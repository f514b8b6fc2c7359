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

from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import numpy as np

from noisemodels import p372, skycache, solar
from noisemodels.hops import EARTH_RADIUS_M, fewest_hops, hop_elevation_rad
from noisemodels.sky import SkyComponent, normalised_component
from noisemodels.sphere import Directions, direction_to_pixel, interpolation_weights, to_healpy_angles, upper_hemisphere

SKY_MODEL_VERSION = 2
"""Part of the persistent cache's key (noisemodels.skycache): bump it when a change to this module or to the
P.372 evaluation changes the maps it computes, so that no stored map outlives the code that made it."""
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
    return _hop_loss_db(noon_absorption_db(freq_mhz, elevation_rad), solar_zenith_rad)


def _hop_loss_db(noon_db, solar_zenith_rad):
    """Absorption of one hop [dB] from the noon absorption [dB] and the sun's zenith angle [rad]."""
    c = np.clip(np.cos(0.881 * np.asarray(solar_zenith_rad)), 0.0, None)
    return NIGHT_LOSS_DB_PER_HOP + noon_db * c**1.3


def _hops_and_elevation(d_m, layer_height_m):
    n = np.atleast_1d(fewest_hops(d_m, layer_height_m=layer_height_m, min_elevation_rad=MIN_ELEVATION_RAD))
    n = n.reshape(np.shape(d_m)) if np.ndim(d_m) else n[0]
    return n, hop_elevation_rad(d_m, n, layer_height_m=layer_height_m)


# -- what the hour does not change, computed once per site and memoised ------------------------------------------


@dataclass(frozen=True, eq=False)
class PathGeometry:
    """The storm-to-site geometry of a sample grid: the same for every month and hour.

    Arrays are indexed [bearing, distance] (cells of ``bearing_step_deg`` x ``distance_step_m``).

    key : the inputs it was built from (site [deg], layer height [m], bearing step [deg], distance step and
        maximum [m]); the caches below are keyed by it
    bearing_deg, distance_m : cell centres [deg], [m]
    latitude_deg, longitude_deg : where each cell lies [deg] (WGS84 geodesics from the site)
    hops, elevation_rad : the fewest equal hops and the arrival elevation [rad]
    reflection_cells : per hop i = 1..max(hops), the cells (flat indices) whose paths have an i-th hop
    reflection_lat_rad, reflection_lon_rad : per hop i, the i-th reflection point of those cells' paths, at
        the fraction (2i - 1) / (2 n) of the path [rad]
    spreading_per_m : 1 / (R sin(d / R)) [1/m]
    sub_elevation_rad : arrival elevations of the SUB_DISTANCE sub-samples across each cell [rad]
    """

    key: tuple
    bearing_deg: np.ndarray
    distance_m: np.ndarray
    latitude_deg: np.ndarray
    longitude_deg: np.ndarray
    hops: np.ndarray
    elevation_rad: np.ndarray
    reflection_cells: tuple[np.ndarray, ...]
    reflection_lat_rad: tuple[np.ndarray, ...]
    reflection_lon_rad: tuple[np.ndarray, ...]
    spreading_per_m: np.ndarray
    sub_elevation_rad: np.ndarray

    @property
    def bearing_step_deg(self) -> float:
        return self.key[3]

    @property
    def distance_step_m(self) -> float:
        return self.key[4]

    def sub_azimuth_rad(self) -> np.ndarray:
        """Azimuths of the sub-samples, shape [bearing, distance, SUB_DISTANCE, SUB_BEARING] [rad]."""
        sub_b = (np.arange(SUB_BEARING) + 0.5) / SUB_BEARING - 0.5
        az = np.radians(self.bearing_deg[..., None, None] + sub_b[None, None, None, :] * self.bearing_step_deg)
        return np.broadcast_to(az, self.bearing_deg.shape + (SUB_DISTANCE, SUB_BEARING))


WGS84_A_M = 6378137.0
WGS84_F = 1.0 / 298.257223563


def geodesic_forward(lat_deg: float, lon_deg: float, azimuth_deg, distance_m) -> tuple[np.ndarray, np.ndarray]:
    """Where the geodesic on the WGS-84 ellipsoid from (lat, lon) [deg] along ``azimuth_deg`` [deg from north]
    ends after ``distance_m`` [m]: (latitude, longitude) [deg], vectorised over azimuths and distances.

    Vincenty's direct solution (T. Vincenty, "Direct and inverse solutions of geodesics on the ellipsoid with
    application of nested equations", Survey Review 23 (176), 88-93 (1975); the formulae as written there, from
    memory): the auxiliary sphere's arc found by fixed-point iteration, which converges for every distance
    shorter than half a meridian.  The tests compare it with pyproj.Geod (Karney's algorithm) to a millimetre;
    pyproj is not imported here (its import costs more than the whole geometry)."""
    a, f = WGS84_A_M, WGS84_F
    b_axis = (1.0 - f) * a
    alpha1 = np.radians(np.asarray(azimuth_deg, dtype=float))
    s = np.asarray(distance_m, dtype=float)
    sin_a1, cos_a1 = np.sin(alpha1), np.cos(alpha1)
    tan_u1 = (1.0 - f) * np.tan(np.radians(lat_deg))
    cos_u1 = 1.0 / np.sqrt(1.0 + tan_u1 * tan_u1)
    sin_u1 = tan_u1 * cos_u1
    sigma1 = np.arctan2(tan_u1, cos_a1)
    sin_alpha = cos_u1 * sin_a1
    cos2_alpha = 1.0 - sin_alpha * sin_alpha
    u2 = cos2_alpha * (a * a - b_axis * b_axis) / (b_axis * b_axis)
    big_a = 1.0 + u2 / 16384.0 * (4096.0 + u2 * (-768.0 + u2 * (320.0 - 175.0 * u2)))
    big_b = u2 / 1024.0 * (256.0 + u2 * (-128.0 + u2 * (74.0 - 47.0 * u2)))
    first = s / (b_axis * big_a)
    sigma = first
    for _ in range(200):
        cos_2sm = np.cos(2.0 * sigma1 + sigma)
        sin_s, cos_s = np.sin(sigma), np.cos(sigma)
        d_sigma = (
            big_b
            * sin_s
            * (
                cos_2sm
                + big_b
                / 4.0
                * (
                    cos_s * (-1.0 + 2.0 * cos_2sm * cos_2sm)
                    - big_b / 6.0 * cos_2sm * (-3.0 + 4.0 * sin_s * sin_s) * (-3.0 + 4.0 * cos_2sm * cos_2sm)
                )
            )
        )
        new = first + d_sigma
        done = np.all(np.abs(new - sigma) < 1e-13)
        sigma = new
        if done:
            break
    cos_2sm = np.cos(2.0 * sigma1 + sigma)
    sin_s, cos_s = np.sin(sigma), np.cos(sigma)
    tmp = sin_u1 * sin_s - cos_u1 * cos_s * cos_a1
    lat2 = np.arctan2(sin_u1 * cos_s + cos_u1 * sin_s * cos_a1, (1.0 - f) * np.sqrt(sin_alpha * sin_alpha + tmp * tmp))
    lam = np.arctan2(sin_s * sin_a1, cos_u1 * cos_s - sin_u1 * sin_s * cos_a1)
    c = f / 16.0 * cos2_alpha * (4.0 + f * (4.0 - 3.0 * cos2_alpha))
    big_l = lam - (1.0 - c) * f * sin_alpha * (
        sigma + c * sin_s * (cos_2sm + c * cos_s * (-1.0 + 2.0 * cos_2sm * cos_2sm))
    )
    lon2 = np.mod(np.radians(lon_deg) + big_l + np.pi, 2.0 * np.pi) - np.pi
    return np.degrees(lat2), np.degrees(lon2)


@lru_cache(maxsize=8)
def path_geometry(
    site_lat_deg: float,
    site_lon_deg: float,
    layer_height_m: float,
    bearing_step_deg: float,
    distance_step_m: float,
    max_distance_m: float,
) -> PathGeometry:
    """The hour-independent geometry of the sample grid around a site (memoised by its inputs)."""
    key = (site_lat_deg, site_lon_deg, layer_height_m, bearing_step_deg, distance_step_m, max_distance_m)
    bearings = np.arange(0.0, 360.0, bearing_step_deg)
    dist = np.arange(distance_step_m, max_distance_m + 1.0, distance_step_m)
    b, d = np.meshgrid(bearings, dist, indexing="ij")
    lat2, lon2 = geodesic_forward(site_lat_deg, site_lon_deg, b.ravel(), d.ravel())
    n, el = _hops_and_elevation(d, layer_height_m)
    ref_cells, ref_lat, ref_lon = [], [], []
    for i in range(1, int(n.max()) + 1):
        cells = np.flatnonzero(n >= i)
        frac = (2 * i - 1) / (2.0 * n.ravel()[cells])
        la, lo = geodesic_forward(site_lat_deg, site_lon_deg, b.ravel()[cells], d.ravel()[cells] * frac)
        ref_cells.append(cells)
        ref_lat.append(np.radians(la))
        ref_lon.append(np.radians(lo))
    sub_d = (np.arange(SUB_DISTANCE) + 0.5) / SUB_DISTANCE - 0.5
    d_sub = np.clip(d[..., None] + sub_d * distance_step_m, 1e3, None)
    _, el_sub = _hops_and_elevation(d_sub, layer_height_m)
    out = PathGeometry(
        key=key,
        bearing_deg=b,
        distance_m=d,
        latitude_deg=lat2.reshape(b.shape),
        longitude_deg=lon2.reshape(b.shape),
        hops=n,
        elevation_rad=el,
        reflection_cells=tuple(ref_cells),
        reflection_lat_rad=tuple(ref_lat),
        reflection_lon_rad=tuple(ref_lon),
        spreading_per_m=1.0 / (EARTH_RADIUS_M * np.sin(d / EARTH_RADIUS_M)),
        sub_elevation_rad=el_sub,
    )
    for arr in (
        *ref_cells,
        *ref_lat,
        *ref_lon,
        b,
        d,
        out.latitude_deg,
        out.longitude_deg,
        n,
        el,
        out.spreading_per_m,
        el_sub,
    ):
        arr.setflags(write=False)
    return out


def _geometry(site_lat_deg, site_lon_deg, layer_height_m, bearing_step_deg, distance_step_m, max_distance_m):
    return path_geometry(
        float(site_lat_deg),
        float(site_lon_deg),
        float(layer_height_m),
        float(bearing_step_deg),
        float(distance_step_m),
        float(max_distance_m),
    )


@lru_cache(maxsize=16)
def _p372_blocks_cached(key, month, freq_hz, path_str, mtime):
    geom = path_geometry(*key)
    out = p372.atmospheric_blocks(
        geom.latitude_deg, geom.longitude_deg, month=month, freq_hz=freq_hz, data_dir=Path(path_str).parent
    )
    for arr in (out.fa_db, out.du_db, out.dl_db, out.longitude_deg):
        arr.setflags(write=False)
    return out


def p372_blocks(geom: PathGeometry, *, month: int, freq_hz: float, data_dir=None) -> p372.BlockLevels:
    """P.372 atmospheric noise at the grid's cells for the six time blocks of a month (memoised by the grid,
    the month, the frequency and the coefficient file with its modification time)."""
    from noisemodels import p372_maps

    try:
        path = p372_maps.month_file(p372_maps.resolve_data_dir(data_dir), month)
        mtime = path.stat().st_mtime
    except (OSError, ValueError):  # missing data or a bad month: the uncached call raises the clear error
        return p372.atmospheric_blocks(
            geom.latitude_deg, geom.longitude_deg, month=month, freq_hz=freq_hz, data_dir=data_dir
        )
    return _p372_blocks_cached(geom.key, int(month), float(freq_hz), str(path), mtime)


@lru_cache(maxsize=8)
def _reflection_trig(key: tuple) -> tuple[tuple[np.ndarray, ...], ...]:
    """Per hop, (sin, cos) of the reflection points' latitudes and (cos, sin) of their longitudes: what the sun's
    zenith angle there needs that the hour does not change (:func:`noisemodels.solar.hour_terms`)."""
    geom = path_geometry(*key)
    out = []
    for la, lo in zip(geom.reflection_lat_rad, geom.reflection_lon_rad):
        arrs = (np.sin(la), np.cos(la), np.cos(lo), np.sin(lo))
        for a in arrs:
            a.setflags(write=False)
        out.append(arrs)
    return tuple(out)


@lru_cache(maxsize=16)
def _noon_loss_db(key: tuple, freq_mhz: float) -> np.ndarray:
    """noon_absorption_db at each cell's arrival elevation (it does not depend on the hour)."""
    out = noon_absorption_db(freq_mhz, path_geometry(*key).elevation_rad)
    out.setflags(write=False)
    return out


_COS_CUTOFF = float(np.cos(np.pi / 2 / 0.881))
"""cos of the solar zenith angle beyond which the absorption law's factor (cos 0.881 chi) is 0 (chi > 102.2 deg)."""
_POWERS: dict[int, tuple] = {}


def _block_powers(blocks: p372.BlockLevels) -> tuple[p372.BlockLevels, np.ndarray]:
    """(blocks, 10^(FaA/10) of each block at each place), made once per memoised blocks (p372_blocks)."""
    held = _POWERS.get(id(blocks))
    if held is None or held[0] is not blocks:
        if len(_POWERS) >= 16:
            _POWERS.clear()
        powers = 10.0 ** (blocks.fa_db / 10.0)
        powers.setflags(write=False)
        held = _POWERS[id(blocks)] = (blocks, powers)
    return held


def cell_power(
    geom: PathGeometry, *, month: int, utc_hour: float, freq_hz: float, data_dir=None, sources=None
) -> np.ndarray:
    """Relative noise power arriving from each cell of the grid at a UTC hour (module docstring)."""
    if sources is None:
        from noisemodels import p372_maps

        blocks, powers = _block_powers(p372_blocks(geom, month=month, freq_hz=freq_hz, data_dir=data_dir))
        density = p372_maps.blend_block_powers(p372_maps.local_mean_time_h(utc_hour, blocks.longitude_deg), powers)
    else:
        density = np.asarray(sources(geom.latitude_deg, geom.longitude_deg), dtype=float)
    n = geom.hops
    f_mhz = freq_hz / 1e6
    noon = _noon_loss_db(geom.key, f_mhz).ravel()
    # Absorption at each hop's reflection point (fractions (2i - 1) / (2n) of the path), where there is one.
    sin_d, cos_d, cos_c, sin_c = solar.hour_terms(day_of_year=solar.mid_month_day_of_year(month), utc_hour=utc_hour)
    loss = np.zeros(n.size)
    for cells, (sin_lat, cos_lat, cos_lon, sin_lon) in zip(geom.reflection_cells, _reflection_trig(geom.key)):
        cos_chi = sin_lat * sin_d + cos_lat * cos_d * (cos_lon * cos_c - sin_lon * sin_c)
        # the night's loss where the sun is below the absorption law's cut-off (0.881 chi >= 90 deg), the law's
        # powers only where it is up (the same values: its factor is 0 there)
        day = cos_chi > _COS_CUTOFF
        hop = np.full(cells.size, NIGHT_LOSS_DB_PER_HOP)
        hop[day] = _hop_loss_db(noon[cells[day]], np.arccos(np.clip(cos_chi[day], -1.0, 1.0)))
        loss[cells] += hop
    loss_db = loss.reshape(n.shape)
    loss_db += GROUND_LOSS_DB_PER_REFLECTION * (n - 1)
    return (
        density
        * geom.spreading_per_m
        * 10.0 ** (-loss_db / 10.0)
        * np.radians(geom.bearing_step_deg)
        * geom.distance_step_m
    )


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
    geom = _geometry(site_lat_deg, site_lon_deg, layer_height_m, bearing_step_deg, distance_step_m, max_distance_m)
    power = cell_power(geom, month=month, utc_hour=utc_hour, freq_hz=freq_hz, data_dir=data_dir, sources=sources)
    # Each sample stands for a cell of bearing x distance: spread its power over sub-samples across the cell,
    # so that the arrival elevations (which change fast with distance near the site) fill the sky smoothly.
    az_sub = geom.sub_azimuth_rad()
    el_sub = np.broadcast_to(geom.sub_elevation_rad[..., None], az_sub.shape)
    p_sub = np.broadcast_to((power / (SUB_DISTANCE * SUB_BEARING))[..., None, None], el_sub.shape)
    return az_sub.ravel(), el_sub.ravel(), p_sub.ravel()


def deposit(directions: Directions, azimuth_rad, elevation_rad, power):
    """Spread sample powers onto a HEALPix direction set by bilinear weights; returns power per pixel."""
    nside = directions.nside
    if nside is None:
        raise ValueError("deposit needs a HEALPix direction set (upper_hemisphere)")
    theta, phi = to_healpy_angles(azimuth_rad, elevation_rad)
    pix, w = interpolation_weights(nside, theta, phi)
    full = np.bincount(pix.ravel(), weights=(w * power[None, :]).ravel(), minlength=12 * nside * nside)
    return full[_up_pixels(directions)]


@lru_cache(maxsize=8)
def _deposit_weights(key: tuple, nside: int):
    """The bilinear weights that spread the grid's cells onto the full HEALPix sphere, summed per (pixel, cell)
    pair: (pixel, cell, weight) flat arrays and the number of pixels.  They depend on the geometry only."""
    geom = path_geometry(*key)
    az_sub = geom.sub_azimuth_rad()
    el_sub = np.broadcast_to(geom.sub_elevation_rad[..., None], az_sub.shape)
    pix, w = interpolation_weights(nside, *to_healpy_angles(az_sub.ravel(), el_sub.ravel()))
    per_cell = SUB_DISTANCE * SUB_BEARING
    # the sub-samples come cell by cell: each cell's 4 x per_cell (pixel, weight) pairs are one row, summed per
    # pixel within it (a sort of short rows, not of every pair at once: 2x faster)
    ncell = geom.bearing_deg.size
    pixel, cell, weight = _summed_per_row(pix.T.reshape(ncell, -1), (w.T / per_cell).reshape(ncell, -1))
    return pixel, cell, weight, 12 * nside * nside


def _summed_per_row(keys: np.ndarray, weights: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Each row's distinct non-negative integer ``keys`` (ascending within the row) and the sum of the ``weights`` of
    each, flat: (key, row, weight).  Keys and their places in the row are packed into one integer and the rows sorted
    (as :func:`_summed_by_key` does for one long run)."""
    keys = np.asarray(keys, dtype=np.int64)
    rows, width = keys.shape
    shift = max(int(width - 1).bit_length(), 1)
    if keys.size == 0 or int(keys.max()).bit_length() + shift > 62:
        each = [_summed_by_key(k, w) for k, w in zip(keys, np.asarray(weights, dtype=float))]  # row by row
        return (
            np.concatenate([k for k, _ in each] or [np.zeros(0, dtype=np.int64)]),
            np.concatenate([np.full(k.size, r) for r, (k, _) in enumerate(each)] or [np.zeros(0, dtype=np.int64)]),
            np.concatenate([w for _, w in each] or [np.zeros(0)]),
        )
    packed = np.sort((keys << shift) | np.arange(width, dtype=np.int64), axis=1)
    ordered = np.take_along_axis(np.asarray(weights, dtype=float), packed & ((1 << shift) - 1), axis=1)
    packed >>= shift
    first = np.ones(packed.shape, dtype=bool)
    first[:, 1:] = packed[:, 1:] != packed[:, :-1]
    start = np.flatnonzero(first)
    return packed.ravel()[start], start // width, np.add.reduceat(ordered.ravel(), start)


def _summed_by_key(keys: np.ndarray, weights: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The distinct non-negative integer ``keys`` (ascending) and the sum of the ``weights`` of each.  The keys and
    their positions are packed into one integer and sorted (a plain sort, several times faster than an argsort or
    np.unique's inverse on a million keys), the positions read back from the low bits."""
    keys = np.asarray(keys, dtype=np.int64)
    shift = max(int(keys.size - 1).bit_length(), 1)
    if keys.size == 0 or int(keys.max()).bit_length() + shift > 62:
        pair, inverse = np.unique(keys, return_inverse=True)
        return pair, np.bincount(inverse.ravel(), weights=weights)
    packed = np.sort((keys << shift) | np.arange(keys.size, dtype=np.int64))
    order = packed & ((1 << shift) - 1)
    sorted_keys = packed >> shift
    start = np.flatnonzero(np.concatenate([[True], sorted_keys[1:] != sorted_keys[:-1]]))
    return sorted_keys[start], np.add.reduceat(weights[order], start)


def _up_pixels(directions: Directions) -> np.ndarray:
    """The full-sphere (RING) pixel of each direction of a HEALPix direction set."""
    if directions is upper_hemisphere(directions.nside):
        return np.arange(directions.size)  # built ring by ring from the north pole: the first pixels, in order
    return direction_to_pixel(directions.nside, directions.azimuth_rad, directions.elevation_rad)


def _disk_key(grid, *, month, utc_hour, freq_hz, nside, data_dir) -> dict | None:
    """Every input of a storm map, for the persistent cache: the grid, the hour, the model's constants and the
    P.372 coefficient file (path, size and modification time); None when that file cannot be found (the
    computation then raises its clear error)."""
    from noisemodels import p372_maps

    try:
        source = p372_maps.month_source(month, data_dir)
    except (OSError, ValueError):
        return None
    return {
        "version": SKY_MODEL_VERSION,
        "grid": [float(x) for x in grid],
        "month": int(month),
        "utc_hour": float(utc_hour),
        "freq_hz": float(freq_hz),
        "nside": int(nside),
        "constants": [
            float(MIN_ELEVATION_RAD),
            NIGHT_LOSS_DB_PER_HOP,
            GROUND_LOSS_DB_PER_REFLECTION,
            D_REGION_HEIGHT_M,
            SUB_DISTANCE,
            SUB_BEARING,
            EARTH_RADIUS_M,
        ],
        "p372": list(source),
    }


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
    """Atmospheric noise spread over the sky by the storm-to-site model, normalised to ``level``.

    The geometry of the paths, the P.372 maps of the month's six time blocks at the source cells and the
    weights that spread the cells over the HEALPix pixels are memoised, so a night of hours at one site costs
    the hour's absorption and one weighted sum each.  On the upper hemisphere and with P.372's sources, the
    map is also kept in the persistent cache (:mod:`noisemodels.skycache`), keyed by every input.
    """
    if directions.nside is None:
        raise ValueError("deposit needs a HEALPix direction set (upper_hemisphere)")
    grid = (site_lat_deg, site_lon_deg, layer_height_m, 3.0, 100e3, 12_000e3)
    key = None
    if sources is None and directions is upper_hemisphere(directions.nside):
        key = _disk_key(
            grid, month=month, utc_hour=utc_hour, freq_hz=freq_hz, nside=directions.nside, data_dir=data_dir
        )
    per_pixel = skycache.load("storms", key) if key is not None else None
    if per_pixel is None or per_pixel.shape != (directions.size,):
        geom = _geometry(*grid)
        power = cell_power(geom, month=month, utc_hour=utc_hour, freq_hz=freq_hz, data_dir=data_dir, sources=sources)
        pixel, cell, weight, npix = _deposit_weights(geom.key, int(directions.nside))
        full = np.bincount(pixel, weights=weight * power.ravel()[cell], minlength=npix)
        per_pixel = full[_up_pixels(directions)]
        if key is not None:
            skycache.store("storms", key, per_pixel)
    if not np.any(per_pixel > 0):
        raise ValueError("the storm model found no path to the site; use a uniform or sector arrival instead")
    return normalised_component(name, "atmospheric", directions, per_pixel / directions.solid_angle_sr, level)
