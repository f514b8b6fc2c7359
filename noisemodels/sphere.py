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


def healpy():
    """healpy, imported on first use without its plotting half.

    healpy's package imports its map-plotting functions, and with them matplotlib.pyplot (half a second),
    whenever matplotlib is installed; these helpers need only its pixel functions.  When matplotlib is not
    loaded yet, it is hidden for the duration of the import, so healpy loads its pixel functions alone
    (``healpy.visufunc`` can still be imported explicitly later).  When matplotlib is already loaded (figures),
    healpy is imported as usual.
    """
    import sys

    hp = sys.modules.get("healpy")
    if hp is not None:
        return hp
    if "matplotlib" in sys.modules:
        import healpy as hp

        return hp
    sys.modules["matplotlib"] = None  # makes "import matplotlib" fail inside healpy's __init__
    try:
        import healpy as hp
    finally:
        if "matplotlib" in sys.modules and sys.modules["matplotlib"] is None:
            del sys.modules["matplotlib"]
    return hp


def direction_to_pixel(nside: int, azimuth_rad, elevation_rad):
    """HEALPix pixel index (RING order) holding a direction (numpy; the same pixels as healpy's ang2pix).

    The RING scheme's closed form (Gorski et al. 2005, Section 4): in the equatorial belt (|z| <= 2/3) the
    pixel follows from the two families of boundary lines through the direction; in the polar caps from the
    ring counted from the nearer pole and the position along it.
    """
    theta, phi = to_healpy_angles(azimuth_rad, elevation_rad)
    shape = np.shape(theta)
    theta, phi = np.broadcast_arrays(np.atleast_1d(theta), np.atleast_1d(phi))
    theta, phi = theta.ravel(), phi.ravel()
    z = np.cos(theta)
    za = np.abs(z)
    tt = np.mod(phi, 2 * np.pi) / (np.pi / 2)  # in [0, 4)
    # Equatorial belt.
    t1 = nside * (0.5 + tt)
    t2 = nside * z * 0.75
    jp = np.floor(t1 - t2).astype(np.int64)  # index of the ascending edge line
    jm = np.floor(t1 + t2).astype(np.int64)  # index of the descending edge line
    ir = nside + 1 + jp - jm  # ring counted from z = 2/3, 1 .. 2 nside + 1
    kshift = 1 - (ir & 1)
    ip = np.mod((jp + jm - nside + kshift + 1) // 2, 4 * nside)
    belt = 2 * nside * (nside - 1) + (ir - 1) * 4 * nside + ip
    # Polar caps (near a pole, 3 (1 - |z|) from sin(theta) for accuracy).
    tp = tt - np.floor(tt)
    root = np.where(za > 0.99, nside * np.sin(theta) / np.sqrt((1.0 + za) / 3.0), nside * np.sqrt(3 * (1 - za)))
    jp = np.floor(tp * root).astype(np.int64)
    jm = np.floor((1.0 - tp) * root).astype(np.int64)
    ir = jp + jm + 1  # ring counted from the nearer pole
    ip = np.mod(np.floor(tt * ir).astype(np.int64), 4 * ir)
    cap = np.where(z > 0, 2 * ir * (ir - 1) + ip, 12 * nside * nside - 2 * ir * (ir + 1) + ip)
    pix = np.where(za <= 2.0 / 3.0, belt, cap)
    return pix.reshape(shape) if shape else pix[0]


def pixel_to_direction(nside: int, pixel):
    """(azimuth, elevation) [rad] of a pixel centre (RING order)."""
    hp = healpy()

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


def _ring_info(nside: int, ring):
    """(first pixel, pixels in the ring, theta [rad], shifted) of RING-scheme rings 1 .. 4 nside - 1.

    Polar rings hold 4 i pixels (i counted from the nearer pole), equatorial ones 4 nside; pixel centres lie at
    phi = (k + shifted / 2) 2 pi / (pixels in the ring) (Gorski et al. 2005, Section 4).
    """
    ring = np.asarray(ring, dtype=np.int64)
    north, south = ring < nside, ring > 3 * nside
    polar = north | south
    i = np.where(south, 4 * nside - ring, ring)
    npix = 12 * nside * nside
    start = np.where(
        north,
        2 * i * (i - 1),
        np.where(south, npix - 2 * i * (i + 1), 2 * nside * (nside - 1) + (ring - nside) * 4 * nside),
    )
    count = np.where(polar, 4 * i, 4 * nside)
    tmp = i * i / (3.0 * nside * nside)  # 1 - |z| on a polar ring
    theta = np.where(
        polar,
        np.arctan2(np.sqrt(np.clip(tmp * (2.0 - tmp), 0.0, None)), 1.0 - tmp),  # accurate near the poles
        np.arccos(np.clip(4.0 / 3.0 - 2.0 * ring / (3.0 * nside), -1.0, 1.0)),
    )
    theta = np.where(south, np.pi - theta, theta)
    shifted = polar | ((ring - nside) % 2 == 0)
    return start, count, theta, shifted


def _ring_neighbours(nside: int, ring, phi):
    """The two pixels of a ring either side of phi, and their linear weights in phi."""
    start, count, theta, shifted = _ring_info(nside, ring)
    dphi = 2 * np.pi / count
    half = 0.5 * shifted
    k1 = np.floor(phi / dphi - half).astype(np.int64)
    w = (phi - (k1 + half) * dphi) / dphi
    k2 = k1 + 1
    k1 = np.where(k1 < 0, k1 + count, k1)
    k2 = np.where(k2 >= count, k2 - count, k2)
    return start + k1, start + k2, 1.0 - w, w, theta


def interpolation_weights(nside: int, theta_rad, phi_rad) -> tuple[np.ndarray, np.ndarray]:
    """The four RING-scheme pixels around each direction and their bilinear weights, shapes (4, n).

    Linear in phi between the two nearest pixel centres on the ring above and on the ring below, then linear
    in theta between the rings; above the first ring (below the last) the four pixels of that ring share the
    rest equally.  The same pixels and weights as healpy's ``get_interp_weights`` (a test compares them), in
    numpy, so the sky machinery need not import healpy (and with it astropy) for them.

    theta_rad : healpy's theta, the zenith angle [rad]; phi_rad : healpy's phi [rad] in [0, 2 pi)
    """
    theta = np.atleast_1d(np.asarray(theta_rad, dtype=float)).ravel()
    phi = np.atleast_1d(np.asarray(phi_rad, dtype=float)).ravel()
    z = np.cos(theta)
    az = np.abs(z)
    polar_ring = np.floor(nside * np.sqrt(3.0 * (1.0 - az))).astype(np.int64)
    above = np.where(
        az <= 2.0 / 3.0,
        np.floor(nside * (2.0 - 1.5 * z)).astype(np.int64),
        np.where(z > 0, polar_ring, 4 * nside - polar_ring - 1),
    )  # the ring at or above each direction (0: above the first ring)
    last = 4 * nside - 1
    p0, p1, w0, w1, theta1 = _ring_neighbours(nside, np.clip(above, 1, last), phi)
    p2, p3, w2, w3, theta2 = _ring_neighbours(nside, np.clip(above + 1, 1, last), phi)
    npix = 12 * nside * nside
    north, south = above == 0, above + 1 == 4 * nside
    mid = ~(north | south)
    t = np.where(mid, (theta - theta1) / np.where(mid, theta2 - theta1, 1.0), 0.0)
    pix = np.stack([p0, p1, p2, p3])
    wgt = np.stack([w0 * (1 - t), w1 * (1 - t), w2 * t, w3 * t])
    if np.any(north):  # between the pole and the first ring: that ring's four pixels
        tn = theta[north] / theta2[north]
        fac = (1.0 - tn) * 0.25
        wgt[:, north] = [fac, fac, w2[north] * tn + fac, w3[north] * tn + fac]
        pix[0, north] = (p2[north] + 2) & 3
        pix[1, north] = (p3[north] + 2) & 3
    if np.any(south):  # between the last ring and the south pole
        ts = (theta[south] - theta1[south]) / (np.pi - theta1[south])
        fac = ts * 0.25
        wgt[:, south] = [w0[south] * (1 - ts) + fac, w1[south] * (1 - ts) + fac, fac, fac]
        pix[2, south] = ((p0[south] + 2) & 3) + npix - 4
        pix[3, south] = ((p1[south] + 2) & 3) + npix - 4
    return pix, wgt


def mirror_pixels(nside: int) -> tuple[np.ndarray, np.ndarray]:
    """The RING-scheme pixels below the equator ring and, for each, the pixel at the same bearing with the
    elevation reflected (theta -> pi - theta): ring r and ring 4 nside - r hold as many pixels at the same phi
    (Gorski et al. 2005, Section 4), so the k-th pixel of one mirrors the k-th of the other."""
    rings = np.arange(2 * nside + 1, 4 * nside)
    start, count, _, _ = _ring_info(nside, rings)
    m_start, _, _, _ = _ring_info(nside, 4 * nside - rings)
    offsets = np.concatenate([np.arange(c) for c in count])
    return np.repeat(start, count) + offsets, np.repeat(m_start, count) + offsets


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
