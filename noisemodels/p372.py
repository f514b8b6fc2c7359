"""Radio-noise levels of Recommendation ITU-R P.372 ("Radio noise").

Every level is the external noise figure Fa in dB above kT0b (T0 = 290 K), for
a short lossless vertical monopole over a perfect ground plane, the antenna the
Recommendation refers its values to.  Frequencies are in Hz at this interface.

References
----------
.. [1] Recommendation ITU-R P.372, "Radio noise", Section 5 (man-made noise,
   Table 1 for the environment categories and their decile deviations),
   Section 6 (galactic noise, Fa = 52 - 23 log10 f), Section 8 (combination
   of noises from several sources).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from noisemodels.constants import BOLTZMANN_J_PER_K  # noqa: F401  (also imported from here by snrgain)

T0_K = 290.0
"""Reference temperature of P.372 [K]."""

DECILE_Z = 1.282
"""Standard-normal deviate of the 10 % and 90 % points, used by [1] Section 8."""


@dataclass(frozen=True)
class NoiseLevel:
    """A noise level with its decile deviations.

    Attributes
    ----------
    fa_db : median external noise figure [dB above kT0b]
    du_db : upper decile deviation (90 % point minus median) [dB]
    dl_db : lower decile deviation (median minus 10 % point) [dB]
    """

    fa_db: float | np.ndarray
    du_db: float | np.ndarray
    dl_db: float | np.ndarray


@dataclass(frozen=True)
class ManMadeCategory:
    """Coefficients of Fam = c - d log10(f / 1 MHz) and decile deviations [dB]."""

    c_db: float
    d_db: float
    du_db: float
    dl_db: float


MAN_MADE_CATEGORIES: dict[str, ManMadeCategory] = {
    # ITU-R P.372, Section 5, Table 1 (Fam coefficients and decile deviations).
    "city": ManMadeCategory(76.8, 27.7, 11.0, 6.7),
    "residential": ManMadeCategory(72.5, 27.7, 10.6, 5.3),
    "rural": ManMadeCategory(67.2, 27.7, 9.2, 4.6),
    # P.372 gives no decile deviations for quiet rural; the rural values are
    # the usual practice (see shared/data/p372/README.md).
    "quiet rural": ManMadeCategory(53.6, 28.6, 9.2, 4.6),
}

GALACTIC_DECILE_DB = 2.0
"""Decile deviation of galactic noise, upper and lower [dB] (P.372 Section 6)."""

MAN_MADE_RANGE_HZ = (0.3e6, 250e6)
"""Frequency range over which P.372 gives the man-made curves [Hz]."""


def _freq_mhz(freq_hz):
    f = np.asarray(freq_hz, dtype=float)
    if np.any(~np.isfinite(f)) or np.any(f <= 0):
        raise ValueError(f"freq_hz must be positive and finite, got {freq_hz!r}")
    return f / 1e6


def man_made(freq_hz, *, environment: str) -> NoiseLevel:
    """Median man-made noise Fam of P.372 Table 1 for an environment category.

    Parameters
    ----------
    freq_hz : frequency [Hz], scalar or array
    environment : one of ``MAN_MADE_CATEGORIES`` ("city", "residential",
        "rural", "quiet rural")

    Returns
    -------
    NoiseLevel with Fam = c - d log10(f_MHz) [dB above kT0b] and the
    category's decile deviations [dB].

    Notes
    -----
    P.372 states the curves from 0.3 MHz; below that the same line is an
    extrapolation (the caller decides whether to allow it).
    """
    try:
        cat = MAN_MADE_CATEGORIES[environment]
    except KeyError:
        valid = ", ".join(repr(k) for k in MAN_MADE_CATEGORIES)
        raise ValueError(f"environment must be one of {valid}; got {environment!r}") from None
    f = _freq_mhz(freq_hz)
    fa = cat.c_db - cat.d_db * np.log10(f)
    return NoiseLevel(fa, np.full_like(fa, cat.du_db), np.full_like(fa, cat.dl_db))


def galactic(freq_hz) -> NoiseLevel:
    """Median galactic noise of P.372 Section 6: Fa = 52 - 23 log10(f_MHz).

    This is the level above the ionosphere; it reaches the ground only in the
    directions in which the frequency exceeds the ionosphere's penetration
    frequency (see :func:`noisemodels.sky.penetration_elevation_rad`).
    """
    f = _freq_mhz(freq_hz)
    fa = 52.0 - 23.0 * np.log10(f)
    return NoiseLevel(fa, np.full_like(fa, GALACTIC_DECILE_DB), np.full_like(fa, GALACTIC_DECILE_DB))


def fa_to_temperature_k(fa_db):
    """Noise temperature [K] of an external noise figure Fa [dB above kT0b]."""
    return T0_K * 10.0 ** (np.asarray(fa_db, dtype=float) / 10.0)


def temperature_to_fa_db(temp_k):
    """External noise figure Fa [dB above kT0b] of a noise temperature [K]."""
    return 10.0 * np.log10(np.asarray(temp_k, dtype=float) / T0_K)


def fa_to_dbm(fa_db, *, bandwidth_hz):
    """Available noise power [dBm] in a bandwidth [Hz] for Fa [dB above kT0b]."""
    p_w = BOLTZMANN_J_PER_K * fa_to_temperature_k(fa_db) * bandwidth_hz
    return 10.0 * np.log10(p_w / 1e-3)


def dbm_to_fa(power_dbm, *, bandwidth_hz):
    """Fa [dB above kT0b] of an available noise power [dBm] in a bandwidth [Hz]."""
    ktb_dbm = 10.0 * np.log10(BOLTZMANN_J_PER_K * T0_K * bandwidth_hz / 1e-3)
    return np.asarray(power_dbm, dtype=float) - ktb_dbm


def _combine_one_side(fa_db, dev_db):
    c = 10.0 / np.log(10.0)
    sigma = np.asarray(dev_db, dtype=float) / DECILE_Z
    f = np.asarray(fa_db, dtype=float)
    alpha = np.sum(np.exp(f / c + sigma**2 / (2 * c**2)), axis=0)
    beta = np.sum(np.exp(2 * f / c + sigma**2 / c**2) * (np.exp(sigma**2 / c**2) - 1.0), axis=0)
    sigma_t = c * np.sqrt(np.log1p(beta / alpha**2))
    f_t = c * (np.log(alpha) - sigma_t**2 / (2 * c**2))
    return f_t, DECILE_Z * sigma_t


def combine(levels: list[NoiseLevel]) -> NoiseLevel:
    """Combine noise components as log-normal variables, P.372 Section 8.

    The median and each decile deviation are combined by matching the first
    two moments of the sum of the components' powers (the moment-matching
    method of Section 8), once with the upper and once with the lower decile
    deviations; the median of the total is reported from the upper-decile
    pass, as the two passes differ only through the deviations.

    Notes
    -----
    With ``c = 10/ln 10`` and ``sigma_i = D_i / 1.282``:
    ``alpha = sum exp(F_i/c + sigma_i^2/(2 c^2))``,
    ``beta = sum exp(2 F_i/c + sigma_i^2/c^2) (exp(sigma_i^2/c^2) - 1)``,
    ``sigma_T = c sqrt(ln(1 + beta/alpha^2))``,
    ``F_T = c (ln alpha - sigma_T^2/(2 c^2))``, ``D_T = 1.282 sigma_T``.
    Section 8 also gives a variant for deviations above 12 dB, which is not
    implemented; every deviation used by snrgain is below that.  Two equal
    components without spread add 3.01 dB to the median.
    """
    if not levels:
        raise ValueError("combine needs at least one noise level")
    fa = np.array([np.asarray(lv.fa_db, dtype=float) for lv in levels])
    du = np.array([np.asarray(lv.du_db, dtype=float) for lv in levels])
    dl = np.array([np.asarray(lv.dl_db, dtype=float) for lv in levels])
    f_upper, d_upper = _combine_one_side(fa, du)
    f_lower, d_lower = _combine_one_side(fa, dl)
    # The median is the mean of the two passes (identical when du == dl).
    return NoiseLevel(0.5 * (f_upper + f_lower), d_upper, d_lower)


def combine_present(levels: list[NoiseLevel]) -> NoiseLevel:
    """Section 8 combination of the components present: a screened one (Fa = -inf) adds nothing.

    With none present, Fa is -inf.
    """
    present = [lv for lv in levels if np.isfinite(np.asarray(lv.fa_db))]
    if not present:
        return NoiseLevel(-np.inf, 0.0, 0.0)
    return combine(present)


def _atmospheric_inputs(latitude_deg, longitude_deg, freq_hz):
    """Checked (lat, lon [deg], f [MHz]) for the P.372 maps."""
    from noisemodels import p372_maps as maps

    f_mhz = _freq_mhz(freq_hz)
    lo, hi = maps.FREQ_RANGE_HZ
    if np.any(f_mhz * 1e6 < lo) or np.any(f_mhz * 1e6 > hi):
        raise ValueError(f"freq_hz must lie between {lo:g} and {hi:g} Hz for P.372 atmospheric noise")
    lat = np.asarray(latitude_deg, dtype=float)
    lon = np.asarray(longitude_deg, dtype=float)
    if np.any(np.abs(lat) > 90):
        raise ValueError(f"latitude_deg must lie in [-90, 90], got {latitude_deg!r}")
    return lat, lon, f_mhz


def atmospheric(
    latitude_deg, longitude_deg, *, month: int, freq_hz, time_block=None, utc_hour=None, data_dir=None
) -> NoiseLevel:
    """Median atmospheric noise FaA and its decile deviations from P.372's numerical maps.

    Parameters
    ----------
    latitude_deg, longitude_deg : site, north and east positive [deg]; arrays broadcast
    month : 1..12 (the coefficient file of that month is read)
    freq_hz : frequency [Hz], 10 kHz to 30 MHz; broadcasts with the site
    time_block : 0..5, the Recommendation's block values (local time 00-04, ..., 20-24)
    utc_hour : instead of ``time_block``, any hour [h UTC]: a smooth value interpolated
        in power between block centres at local mean time UTC + longitude / 15
    data_dir : folder of COEFF01W.txt ... COEFF12W.txt; default $SNRGAIN_P372_DIR

    Returns
    -------
    NoiseLevel with ``fa_db`` (median, dB above kT0b), ``du_db`` and ``dl_db``
    (upper and lower decile deviations of the hourly medians in the block, dB).

    Raises
    ------
    noisemodels.p372_maps.P372DataError when the data are missing or unreadable;
    ValueError for arguments out of range.

    References
    ----------
    Recommendation ITU-R P.372 and its numerical maps (ITU-R Study Group 3);
    the method is in :mod:`noisemodels.p372_maps`.
    """
    from noisemodels import p372_maps as maps

    if (time_block is None) == (utc_hour is None):
        raise ValueError("give exactly one of time_block (0..5) or utc_hour")
    if time_block is None:
        blocks = atmospheric_blocks(latitude_deg, longitude_deg, month=month, freq_hz=freq_hz, data_dir=data_dir)
        return blocks.at_utc_hour(utc_hour)
    lat, lon, f_mhz = _atmospheric_inputs(latitude_deg, longitude_deg, freq_hz)
    coeffs = maps.load_month(month, data_dir)
    b = np.asarray(time_block)
    if not np.issubdtype(b.dtype, np.integer) or np.any((b < 0) | (b > 5)):
        raise ValueError(f"time_block must be an integer 0..5, got {time_block!r}")
    fa, du, dl = maps.block_values(coeffs, np.radians(lat), np.radians(lon), f_mhz, b)
    return NoiseLevel(fa, du, dl)


@dataclass(frozen=True)
class BlockLevels:
    """P.372 atmospheric noise of the six time blocks at a set of places, before the blend in time.

    Attributes
    ----------
    fa_db, du_db, dl_db : median and decile deviations, leading axis the blocks 0..5, then the places [dB]
    longitude_deg : the places' longitudes, broadcast to their shape [deg] (for their local mean time)
    """

    fa_db: np.ndarray
    du_db: np.ndarray
    dl_db: np.ndarray
    longitude_deg: np.ndarray

    def at_utc_hour(self, utc_hour) -> NoiseLevel:
        """The levels at a UTC hour (arrays broadcast with the places): blended in power between the block
        centres at local mean time, as :func:`atmospheric` with ``utc_hour``."""
        from noisemodels import p372_maps as maps

        hour = np.asarray(utc_hour, dtype=float)
        shape = np.broadcast_shapes(self.longitude_deg.shape, hour.shape)
        pad = (1,) * (len(shape) - self.longitude_deg.ndim)
        per_block = tuple(
            np.broadcast_to(a.reshape((6,) + pad + a.shape[1:]), (6,) + shape)
            for a in (self.fa_db, self.du_db, self.dl_db)
        )
        lmt = maps.local_mean_time_h(hour, self.longitude_deg)
        return NoiseLevel(*maps.interpolate_blocks(lmt, per_block))


def atmospheric_blocks(latitude_deg, longitude_deg, *, month: int, freq_hz, data_dir=None) -> BlockLevels:
    """P.372 atmospheric noise at places for each of the six time blocks of a month, computed once.

    The blocks do not depend on the hour: a caller that needs many hours of the same month (a sky over a
    night) computes them once here and blends them with :meth:`BlockLevels.at_utc_hour` per hour.  Arguments
    and errors as :func:`atmospheric`.
    """
    from noisemodels import p372_maps as maps

    lat, lon, f_mhz = _atmospheric_inputs(latitude_deg, longitude_deg, freq_hz)
    lat_r, lon_r, f_b = np.broadcast_arrays(np.radians(lat), np.radians(lon), f_mhz)
    if lat_r.ndim == 0:  # one place (a site's own level): kept in this process and in the persistent cache
        source = _month_source(month, data_dir)
        if source is not None:
            kept = _one_place(float(lat_r), float(lon_r), float(f_b), int(month), *source, data_dir)
            return BlockLevels(*(np.array(v) for v in kept), np.degrees(lon_r))
    coeffs = maps.load_month(month, data_dir)
    blocks = np.arange(6).reshape((6,) + (1,) * lat_r.ndim)
    fa, du, dl = maps.block_values(coeffs, lat_r[None], lon_r[None], f_b[None], blocks)
    return BlockLevels(fa, du, dl, np.degrees(lon_r))


BLOCKS_VERSION = 1
"""Part of the persistent cache's key of one place's block levels (:func:`atmospheric_blocks`); bump it when what they
hold changes in a way the key's code digest (this module's and p372_maps' sources) would not show."""


def _month_source(month, data_dir) -> tuple[str, int, int] | None:
    """(path, size, modification time [ns]) of a month's coefficient file; None when it cannot be found (the
    computation then raises its clear error)."""
    from noisemodels import p372_maps as maps

    try:
        return maps.month_source(month, data_dir)
    except (OSError, ValueError, maps.P372DataError):
        return None


@lru_cache(maxsize=256)
def _one_place(lat_rad: float, lon_rad: float, f_mhz: float, month: int, path: str, size: int, mtime_ns: int, data_dir):
    """(FaA, D_u, D_l) [dB] of the six blocks (3, 6) at one place, from the persistent cache (kind "p372blocks",
    keyed by the place, the frequency, the coefficient file and the code) or worked as for many places: a later run
    reads them back, to the bit, without reading the coefficient file."""
    from noisemodels import p372_maps as maps
    from noisemodels import skycache

    def compute():
        coeffs = maps.load_month(month, data_dir)
        lat_r, lon_r, f_b = (np.asarray(v, dtype=float) for v in (lat_rad, lon_rad, f_mhz))
        return np.stack(maps.block_values(coeffs, lat_r[None], lon_r[None], f_b[None], np.arange(6)))

    key = {
        "version": BLOCKS_VERSION,
        "code": skycache.code_digest(__file__, maps.__file__),
        "place_rad": [lat_rad, lon_rad],
        "freq_mhz": f_mhz,
        "month": month,
        "p372": [path, size, mtime_ns],
    }
    kept = skycache.remembered("p372blocks", key, compute, dtype=float, shapes=((3, 6),))
    kept.flags.writeable = False
    return kept
