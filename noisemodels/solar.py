"""Position of the sun, for day and night on the ionosphere.

Declination and the equation of time by the Fourier series of
J. W. Spencer, "Fourier series representation of the position of the sun",
Search 2(5), 172 (1971); accuracy about 0.1 deg in declination and about one
minute in time, ample for telling day from night on a radio path.
"""

from __future__ import annotations

import numpy as np

_MID_MONTH_DAY = np.array([15, 46, 74, 105, 135, 166, 196, 227, 258, 288, 319, 349])
"""Day of year of the 15th of each month (non-leap year)."""


def mid_month_day_of_year(month) -> np.ndarray:
    """Day of year (1..365) of the 15th of a month (1..12)."""
    m = np.asarray(month, dtype=int)
    if np.any((m < 1) | (m > 12)):
        raise ValueError(f"month must be 1..12, got {month!r}")
    return _MID_MONTH_DAY[m - 1]


def _spencer(day_of_year):
    g = 2 * np.pi * (np.asarray(day_of_year, dtype=float) - 1) / 365.0
    decl = (
        0.006918
        - 0.399912 * np.cos(g)
        + 0.070257 * np.sin(g)
        - 0.006758 * np.cos(2 * g)
        + 0.000907 * np.sin(2 * g)
        - 0.002697 * np.cos(3 * g)
        + 0.00148 * np.sin(3 * g)
    )
    eot_min = 229.18 * (
        0.000075 + 0.001868 * np.cos(g) - 0.032077 * np.sin(g) - 0.014615 * np.cos(2 * g) - 0.040849 * np.sin(2 * g)
    )
    return decl, eot_min


def hour_terms(*, day_of_year, utc_hour) -> tuple[float, float, float, float]:
    """(sin d, cos d, cos c, sin c): the day's and hour's part of the sun's zenith angle chi at any place,
    cos chi = sin(lat) sin d + cos(lat) cos d cos(lon + c), d the declination and c the hour angle at longitude 0
    (the same formula as :func:`solar_elevation_rad`, for many places at one hour with their own sines kept)."""
    decl, eot_min = _spencer(day_of_year)
    c = np.radians(15.0 * (float(utc_hour) + float(eot_min) / 60.0 - 12.0))
    return float(np.sin(decl)), float(np.cos(decl)), float(np.cos(c)), float(np.sin(c))


def solar_elevation_rad(latitude_rad, longitude_rad, *, day_of_year, utc_hour):
    """Elevation of the sun's centre above the horizon [rad], refraction ignored.

    Parameters
    ----------
    latitude_rad, longitude_rad : place, north and east positive [rad]
    day_of_year : 1..366
    utc_hour : hour of day in UTC [h], fractional allowed
    """
    decl, eot_min = _spencer(day_of_year)
    solar_time_h = np.asarray(utc_hour, dtype=float) + np.degrees(longitude_rad) / 15.0 + eot_min / 60.0
    hour_angle = np.radians(15.0 * (solar_time_h - 12.0))
    lat = np.asarray(latitude_rad, dtype=float)
    s = np.sin(lat) * np.sin(decl) + np.cos(lat) * np.cos(decl) * np.cos(hour_angle)
    return np.arcsin(np.clip(s, -1.0, 1.0))
