"""The local sky as a HEALPix sphere, and direction sets for integration.

One helper maps the local sky to healpy's angles: healpy ``theta`` is the
zenith angle (pi/2 - elevation) and healpy ``phi`` is the azimuth, the compass
bearing clockwise from true north, in radians.  Integrals over the sky are
sums over directions of ``value * solid_angle``.

Pixels whose centre lies exactly on the horizon (HEALPix has an equatorial
ring of 4 nside pixels at z = 0) count with half their area, so that the upper
hemisphere's solid angle is exactly 2 pi sr at every resolution.

The upper hemisphere's pixel centres follow from the RING scheme's closed
form (Gorski et al. 2005, Section 4: rings of constant z, the polar caps'
ring i holding 4 i pixels at z = 1 - i^2 / (3 nside^2), the equatorial belt's
rings 4 nside pixels at z = 4/3 - 2 i / (3 nside), shifted by half a pixel
on alternate rings), so building the integration grid needs no healpy; a test
checks it against healpy's pix2ang.  healpy (imported where used) finds the
pixel holding a direction and interpolates maps.

Reference: K. M. Gorski et al., "HEALPix: a framework for high-resolution
discretization and fast analysis of data distributed on the sphere",
Astrophys. J. 622, 759 (2005).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

DEFAULT_NSIDE = 32


def to_healpy_angles(azimuth_rad, elevation_rad):
    """(azimuth, elevation) [rad] -> healpy (theta, phi) [rad]."""
    az = np.mod(np.asarray(azimuth_rad, dtype=float), 2 * np.pi)
    return np.pi / 2 - np.asarray(elevation_rad, dtype=float), az


def from_healpy_angles(theta_rad, phi_rad):
    """healpy (theta, phi) [rad] -> (azimuth, elevation) [rad]."""
    return np.mod(np.asarray(phi_rad, dtype=float), 2 * np.pi), np.pi / 2 - np.asarray(theta_rad, dtype=float)


def direction_to_pixel(nside: int, azimuth_rad, elevation_rad):
    """HEALPix pixel index (RING order) holding a direction."""
    import healpy as hp

    theta, phi = to_healpy_angles(azimuth_rad, elevation_rad)
    return hp.ang2pix(nside, theta, phi)


def pixel_to_direction(nside: int, pixel):
    """(azimuth, elevation) [rad] of a pixel centre (RING order)."""
    import healpy as hp

    theta, phi = hp.pix2ang(nside, pixel)
    return from_healpy_angles(theta, phi)


@dataclass(frozen=True, eq=False)
class Directions:
    """A set of directions with the solid angle each stands for.

    Attributes
    ----------
    azimuth_rad : compass bearings [rad]
    elevation_rad : elevations above the horizon [rad]
    solid_angle_sr : solid angle of each direction [sr]; for a set of discrete
        sample points (a compact source) this is the quadrature weight.
    label : a short description (for diagnostics)
    """

    azimuth_rad: np.ndarray
    elevation_rad: np.ndarray
    solid_angle_sr: np.ndarray
    label: str = ""
    nside: int | None = field(default=None)

    @property
    def size(self) -> int:
        return int(self.azimuth_rad.size)


def ring_pixels_upper(nside: int) -> tuple[np.ndarray, np.ndarray]:
    """(z, phi) of the HEALPix RING-scheme pixel centres with z >= 0, in pixel order (module docstring)."""
    rings_z, rings_phi = [], []
    for i in range(1, 2 * nside + 1):  # rings from the north pole down to the equator (ring 2 nside)
        if i < nside:  # polar cap: 4 i pixels
            z = 1.0 - i * i / (3.0 * nside * nside)
            j = np.arange(1, 4 * i + 1)
            phi = (j - 0.5) * (np.pi / 2) / i
        else:  # equatorial belt: 4 nside pixels, shifted half a pixel when i + nside is even
            z = 4.0 / 3.0 - 2.0 * i / (3.0 * nside)
            j = np.arange(1, 4 * nside + 1)
            shift = 1.0 if (i + nside) % 2 else 0.5
            phi = (j - shift) * (np.pi / 2) / nside
        rings_z.append(np.full(j.size, z))
        rings_phi.append(phi)
    return np.concatenate(rings_z), np.concatenate(rings_phi)


@lru_cache(maxsize=8)
def upper_hemisphere(nside: int = DEFAULT_NSIDE) -> Directions:
    """The HEALPix pixels of the upper hemisphere (elevation >= 0).

    Horizon pixels carry half their area, so the solid angles add to 2 pi sr.
    The result is cached per nside and must not be modified.
    """
    if not (isinstance(nside, (int, np.integer)) and 1 <= nside <= 2**29 and (nside & (nside - 1)) == 0):
        raise ValueError(f"nside must be a power of 2 between 1 and 2**29; got {nside!r}")
    z, phi = ring_pixels_upper(int(nside))
    area = np.full(z.size, 4 * np.pi / (12 * nside * nside))
    area[np.abs(z) <= 1e-12] *= 0.5
    az = np.mod(phi, 2 * np.pi)
    el = np.clip(np.arcsin(np.clip(z, -1.0, 1.0)), 0.0, np.pi / 2)
    for arr in (az, el, area):
        arr.setflags(write=False)
    return Directions(az, el, area, label=f"HEALPix nside {nside} upper hemisphere", nside=nside)


def unit_vectors(azimuth_rad, elevation_rad):
    """East, north, up components of unit vectors for directions [rad]."""
    az = np.asarray(azimuth_rad, dtype=float)
    el = np.asarray(elevation_rad, dtype=float)
    ce = np.cos(el)
    return np.stack([ce * np.sin(az), ce * np.cos(az), np.sin(el)], axis=-1)


def angular_distance_rad(az1, el1, az2, el2):
    """Great-circle angle between two sky directions [rad]."""
    cosd = np.sin(el1) * np.sin(el2) + np.cos(el1) * np.cos(el2) * np.cos(np.asarray(az1) - np.asarray(az2))
    return np.arccos(np.clip(cosd, -1.0, 1.0))
