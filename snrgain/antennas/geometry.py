"""What a set of directions gives every antenna, computed once: distinct elevations, sines and cosines.

Patterns are asked for on the same directions again and again (a sky grid, a pattern grid, by every antenna
and every design of a sweep); the few sets last used are kept (:func:`direction_geometry`).
"""

from __future__ import annotations

from collections import OrderedDict

import numpy as np

from snrgain.records import record


def distinct(values) -> tuple[np.ndarray, np.ndarray]:
    """(distinct values, index of each value among them), like ``np.unique(..., return_inverse=True)`` but in one
    linear pass when the values are already sorted either way (the rows of a pattern grid, HEALPix rings)."""
    v = np.asarray(values, dtype=float).ravel()
    if v.size > 1:
        d = np.diff(v)
        if np.all(d >= 0) or np.all(d <= 0):
            starts = np.concatenate(([True], d != 0))
            return v[starts], np.cumsum(starts) - 1
    u, inv = np.unique(v, return_inverse=True)
    return u, inv.ravel()


@record
class Geometry:
    """What a set of directions gives every antenna: distinct elevations, cos and sin of the azimuths."""

    az: np.ndarray
    el: np.ndarray
    el_u: np.ndarray
    inv: np.ndarray
    c_u: np.ndarray
    s_u: np.ndarray
    ce: np.ndarray
    cos_az: np.ndarray
    sin_az: np.ndarray
    all_up: bool = False
    """Every direction at or above the horizon (no mask for a pattern to apply)."""
    east: np.ndarray | None = None
    """cos(elevation) sin(azimuth): the direction's component east (with :attr:`north`, what a position phase
    reads)."""
    north: np.ndarray | None = None
    """cos(elevation) cos(azimuth): its component north."""


_GEOMETRY: OrderedDict = OrderedDict()
_GEOMETRY_SLOTS = 8


def _fingerprint(a: np.ndarray) -> bytes:
    """A cheap key for a direction array: about 64 of its values spread over it (hashing the whole array cost more
    than a vertical's pattern).  Two sets that share it are told apart by the full comparison on a hit."""
    flat = a.reshape(-1)
    return flat[:: max(1, flat.size // 64)].tobytes()


def direction_geometry(az: np.ndarray, el: np.ndarray) -> Geometry:
    """The geometry of a direction set, kept for the last few sets (a pattern grid or a sky is asked for again
    and again, by every antenna and every design of a sweep).  A hit is checked against the stored copies, so an
    array changed in place is never mistaken for the one it was."""
    key = (az.shape, _fingerprint(az), _fingerprint(el))
    hit = _GEOMETRY.get(key)
    if hit is not None and np.array_equal(hit.az, az) and np.array_equal(hit.el, el):
        _GEOMETRY.move_to_end(key)
        return hit
    el_u, inv = distinct(np.clip(el, 0.0, np.pi / 2))
    inv = inv.reshape(el.shape)
    c_u = np.cos(el_u)
    all_up = bool(el.size == 0 or el.min() >= 0.0)
    ce, cos_az, sin_az = c_u[inv], np.cos(az), np.sin(az)
    east, north = ce * sin_az, ce * cos_az
    geo = Geometry(az.copy(), el.copy(), el_u, inv, c_u, np.sin(el_u), ce, cos_az, sin_az, all_up, east, north)
    _GEOMETRY[key] = geo
    if len(_GEOMETRY) > _GEOMETRY_SLOTS:
        _GEOMETRY.popitem(last=False)
    return geo
