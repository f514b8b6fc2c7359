"""Maidenhead locators (the amateur grid-square convention) to latitude and longitude, and back.

The convention divides the earth into pairs of characters, longitude first in each pair:

- field: two letters A-R, 20 deg of longitude by 10 deg of latitude, from 180 W and 90 S;
- square: two digits 0-9, 2 deg by 1 deg;
- subsquare: two letters A-X (either case), 5' by 2.5' (1/12 deg by 1/24 deg);
- extended square: two digits 0-9, 30" by 15".

A locator of 2, 4, 6 or 8 characters names a cell; :func:`to_latlon` returns its centre.  Written from the
convention as published by the IARU (from memory: adopted at the IARU Region 1 conference of 1980); the tests check
hand-computed cells.

>>> to_latlon("FN42")
(42.5, -71.0)
>>> from_latlon(42.5, -71.0, chars=4)
'FN42'
"""

from __future__ import annotations

import re

import numpy as np

LOCATOR = re.compile(r"^[A-Ra-r]{2}(?:[0-9]{2}(?:[A-Xa-x]{2}(?:[0-9]{2})?)?)?$")
"""A well-formed locator of 2, 4, 6 or 8 characters."""
LOCATOR_SHAPE = re.compile(r"^[A-Za-z]{2}[0-9]{2}(?:[A-Za-z]{2}(?:[0-9]{2})?)?$")
"""The shape of a 4, 6 or 8 character locator, letters unchecked: a token of this shape that is not a
:data:`LOCATOR` is an invalid locator (e.g. ZZ99), not another kind of word."""

# Cell sizes of each pair [deg]: (longitude, latitude).
_STEPS = ((20.0, 10.0), (2.0, 1.0), (1.0 / 12.0, 1.0 / 24.0), (1.0 / 120.0, 1.0 / 240.0))


def is_locator(text: str) -> bool:
    """True for a well-formed locator of 2, 4, 6 or 8 characters."""
    return bool(LOCATOR.match(text))


def to_latlon(locator: str) -> tuple[float, float]:
    """The centre (latitude, longitude) [deg] of a locator's cell; ValueError naming the locator otherwise.

    >>> [round(x, 6) for x in to_latlon("IO91wm")]
    [51.520833, -0.125]
    """
    loc = str(locator).strip()
    if not LOCATOR.match(loc):
        raise ValueError(
            f"locator {locator!r} is not a Maidenhead locator: 2, 4, 6 or 8 characters, letters A-R, then digits, "
            "then letters A-X, then digits (e.g. FN42 or FN42hn)"
        )
    loc = loc.upper()
    lon, lat = -180.0, -90.0
    for k in range(len(loc) // 2):
        a, b = loc[2 * k], loc[2 * k + 1]
        if k % 2 == 0:  # letters
            i, j = ord(a) - ord("A"), ord(b) - ord("A")
        else:
            i, j = int(a), int(b)
        lon += i * _STEPS[k][0]
        lat += j * _STEPS[k][1]
    last = _STEPS[len(loc) // 2 - 1]
    return lat + last[1] / 2.0, lon + last[0] / 2.0


def from_latlon(lat_deg: float, lon_deg: float, *, chars: int = 6) -> str:
    """The locator of ``chars`` characters (2, 4, 6 or 8) whose cell holds the point.

    >>> from_latlon(51.52, -0.13)
    'IO91wm'
    """
    if chars not in (2, 4, 6, 8):
        raise ValueError(f"chars must be 2, 4, 6 or 8; got {chars!r}")
    if not (-90.0 <= lat_deg <= 90.0 and -180.0 <= lon_deg <= 180.0):
        raise ValueError(f"latitude {lat_deg!r} and longitude {lon_deg!r} must lie in [-90, 90] and [-180, 180]")
    x = min(lon_deg + 180.0, 360.0 - 1e-9)
    y = min(lat_deg + 90.0, 180.0 - 1e-9)
    out = []
    for k in range(chars // 2):
        i = int(np.floor(x / _STEPS[k][0] + 1e-9))
        j = int(np.floor(y / _STEPS[k][1] + 1e-9))
        i, j = min(i, 17 if k == 0 else 9 if k % 2 else 23), min(j, 17 if k == 0 else 9 if k % 2 else 23)
        x -= i * _STEPS[k][0]
        y -= j * _STEPS[k][1]
        if k % 2 == 0:
            base = "A" if k == 0 else "a"
            out.append(chr(ord(base) + i) + chr(ord(base) + j))
        else:
            out.append(f"{i}{j}")
    return "".join(out)
