"""A vertical monopole over real ground.

Model
-----
A thin vertical wire of height h, fed at its base against a radial system,
carries the sinusoidal current I(z) = sin(k (h + t - z)), t the electrical
length added by top loading (0 without; the top hat's own radiation, which
cancels in the far field for a symmetric hat, is left out).  Its far field is that
of the current plus its image weighted by the Fresnel coefficient for vertical
polarization (the reflection-coefficient approximation):

    E ~ cos(psi) * integral_0^h I(z) [exp(+j k z sin psi) + R_v(psi) exp(-j k z sin psi)] dz,

with radiation intensity U = eta0 k^2 / (32 pi^2) * cos^2(psi) |F|^2 per unit
current.  The input power is the power the same current radiates over a
perfect ground plane plus the loss in the ground-loss resistance R_loss of the
radial system at the base current, so G = 4 pi U / (P_rad,perfect + |I_base|^2 R_loss / 2).
Over a perfect ground and with R_loss = 0 this gives the textbook 4.77 dBi of
a short monopole and 5.15 dBi of a quarter-wave monopole.  Over real ground
the reflected ray carries the far-field ground loss; the near-field loss is
what R_loss stands for.

References: J. D. Kraus, "Antennas", 2nd ed. (1988), Sections 5-6 and 16-3
(monopoles over ground, reflection coefficients); the quarter-wave value
5.15 dBi is the half-wave dipole's 2.15 dBi plus 3 dB for the ground plane.

Default ground loss: 10 ohm, roughly what a quarter-wave vertical with a
modest buried radial system (a dozen or two radials) shows (common practice;
G. H. Brown, R. F. Lewis and J. Epstein, "Ground systems as a factor in antenna
efficiency", Proc. IRE 25(6), 753 (1937), measured the loss falling toward
zero with 113 radials -- cited from memory; the paper not read, its title,
date and largest radial count confirmed only by secondary sources; formerly
given as 120 radials).  The 10 ohm is snrgain's assumption.  The loss scales signal and sky
noise alike, so it changes SNR only where receiver noise matters.

Near sources
------------
A source a few metres away is read through the wire's current (:meth:`Vertical.transmit_segments`), and there
the sinusoid is not close enough: what a source 5 m away delivers hangs on the charge near the base, which the
sinusoid of a quarter-wave wire puts at zero (dI/dz = 0 at the base).  The wire's own current is solved instead
(:func:`thin_wire_current`): Hallen's integral equation for the wire and its image (the reduced thin-wire kernel,
pulses up the wire, matched at their centres and at the tip; R. F. Harrington, "Field Computation by Moment
Methods" (1968), ch. 4; C. A. Balanis, "Antenna Theory", 3rd ed. (2005), Sec. 8.3 -- both cited from memory),
the image weighted by the soil's quasi-static image coefficient (eps_c - 1) / (eps_c + 1) (the image of a charge
over a dielectric half-space, J. D. Jackson, "Classical Electrodynamics", 3rd ed., Sec. 4.4, with the soil's
complex permittivity).  That is the reflection-coefficient approximation for a wire close to the soil (E. K.
Miller et al., "Analysis of wire antennas in the presence of a conducting half-space", Can. J. Phys. 50 (1972),
from memory) and takes the soil under the wire as it is: a dense radial system would bring the image toward a
perfect one.  Measured against NEC-2 over Sommerfeld ground (tests/test_near_compact.py, the quarter-wave
vertical 5 m from a source against its reading 50 m away): within 0.3 dB where the sinusoid missed by -2.5 dB (a
vertical source 2 m up) and +3.05/+5.9 dB (a horizontal one 4 m up, moist loam/1 mS/m).  The pattern keeps the
sinusoid (the solved current's pattern is within 0.02 dB of it below 20 deg, 0.11 dB at 75 deg, for a
quarter-wave wire; for a 0.6-wave wire 0.3 dB at 5 deg, 3 dB at 45 deg, where the sinusoid is the poorer); the near
reading takes the solved current's near-to-far ratio in the source's direction
(:func:`snrgain.model.placed._through_currents`), so the two agree far away.  With top loading the sinusoid is
kept (a hat is not solved), and for a wire under 80 radii tall (too fat for a thin-wire solution).
"""

from __future__ import annotations

from functools import lru_cache
from typing import Literal

import numpy as np

from snrgain.antennas.base import Antenna, AntennaParams, above_horizon, register
from snrgain.antennas.geometry import direction_geometry
from snrgain.fields import GroundField, make_ground, quantity
from snrgain.memo import Memo
from snrgain.physics.ground import C_M_PER_S, ETA0_OHM, vertical_reflection
from snrgain.physics.quadrature import gauss_legendre
from snrgain.units import length_said

MAX_HEIGHT_WAVELENGTHS = 0.625
"""The sinusoidal-current model is used up to a 5/8-wave vertical."""

_NZ = 24
_NPSI = 96

THIN_WIRE_PULSES = 160
"""Most pulses up the wire for its solved current (:func:`thin_wire_current`).  A quarter-wave wire 5 m from a
horizontal source 4 m up over moist loam reads -2.6, -1.4, -0.9, -0.67, -0.57 dB against NEC-2 with the
perfect-ground image at 20, 40, 80, 160, 320 pulses (the charge by the feed converges slowly); 160 cost about 1 ms
per wire and frequency."""
PULSE_RADII = 4.0
"""Pulses no shorter than this many radii (the reduced kernel wanders below about two: a 2 m wire of 12.5 mm radius
puts its mid-height current at 0.442, 0.457, 0.471 of the base's with pulses 1, 2, 4 radii long)."""
MIN_PULSES = 20
"""Fewer pulses than this (a wire under 80 radii tall) and the wire is too fat for the thin-wire solution: the
sinusoid is kept."""
_KERNEL_POINTS = 16
_CURRENTS = Memo(64)
"""The solved current per (frequency, height, radius, image coefficient)."""


def image_coefficient(ground, freq_hz: float) -> complex:
    """The quasi-static image weight of a charge over the soil, (eps_c - 1) / (eps_c + 1) (1 over perfect ground)."""
    if ground is None:
        return 1.0 + 0j
    eps_c = complex(ground.complex_permittivity(freq_hz))
    return (eps_c - 1) / (eps_c + 1)


def _pulse_kernel(k: float, u: np.ndarray, dz: float, a: float) -> np.ndarray:
    """Integral over a pulse of length dz centred at 0 of exp(-j k R) / R, R = sqrt((u - t)^2 + a^2): the 1/R part
    exactly (asinh), the rest by Gauss-Legendre."""
    x, w = gauss_legendre(_KERNEL_POINTS)
    r = np.sqrt((u[:, None] - 0.5 * dz * x[None, :]) ** 2 + a * a)
    smooth = ((np.exp(-1j * k * r) - 1.0) / r) @ w * (0.5 * dz)
    return smooth + np.arcsinh((u + 0.5 * dz) / a) - np.arcsinh((u - 0.5 * dz) / a)


def pulses(height_m: float, radius_m: float) -> int:
    """The pulses up a wire for its solved current: :data:`THIN_WIRE_PULSES`, fewer where they would be shorter than
    :data:`PULSE_RADII` radii."""
    return int(min(THIN_WIRE_PULSES, np.floor(height_m / (PULSE_RADII * radius_m))))


def thin_wire_current(freq_hz: float, height_m: float, radius_m: float, image: complex = 1.0):
    """(z [m] (N,), I (N,)) the current of a base-fed vertical wire of ``height_m`` and ``radius_m`` at the centres
    of N equal pulses (:func:`pulses`), for 1 V at the base, its image weighted by ``image`` (1: perfect
    ground; :func:`image_coefficient`): Hallen's equation with the reduced kernel,
    integral I(z') [K(z - z') + image K(z + z')] dz' = -j (4 pi / eta0) [C cos kz + sin kz], matched at the pulses'
    centres and at the tip (the unknowns the currents and C).  The pulses' offsets repeat, so the kernel is worked
    once per offset.  The currents are kept in the persistent cache too (:func:`noisemodels.skycache.remembered`,
    kind "wirecurrent"): a later run reads them back, to the bit."""
    key = (float(freq_hz), float(height_m), float(radius_m), complex(image))

    def make():
        n = pulses(height_m, radius_m)
        if n < 2:
            raise ValueError(f"height: {length_said(height_m)} is too short for a wire of {radius_m:g} m radius")
        dz = height_m / n
        i = np.arange(n)
        current = _remembered_current(key, n, lambda: _solve_current(freq_hz, height_m, radius_m, image, n))
        z = (i + 0.5) * dz
        z.flags.writeable = False
        current.flags.writeable = False
        return z, current

    return _CURRENTS.get(key, make)


THIN_WIRE_VERSION = 1
"""Part of the persistent cache's key of :func:`thin_wire_current`; bump it when what it holds changes in a way the
key's code digest (this module's, the ground's and the quadrature's sources) would not show."""


def _remembered_current(key: tuple, n: int, solve) -> np.ndarray:
    """The solved current (n,) for ``key`` (frequency, height, radius, image): from the persistent cache, or
    ``solve()``."""
    from noisemodels import skycache
    from snrgain.physics import ground, quadrature

    disk_key = {
        "version": THIN_WIRE_VERSION,
        "code": skycache.code_digest(__file__, ground.__file__, quadrature.__file__),
        "wire": list(key),
        "pulses": n,
        "kernel_points": _KERNEL_POINTS,
    }
    return skycache.remembered("wirecurrent", disk_key, solve, dtype=complex, shapes=((n,),))


def _solve_current(freq_hz: float, height_m: float, radius_m: float, image: complex, n: int) -> np.ndarray:
    """The currents (n,) of :func:`thin_wire_current`, solved."""
    k = 2 * np.pi * freq_hz / C_M_PER_S
    dz = height_m / n
    # K at offsets m dz / 2, m = 0 .. 4n: centre to centre (even m), tip to centre (odd m), images beyond
    p = _pulse_kernel(k, 0.5 * dz * np.arange(4 * n + 2), dz, radius_m)
    i = np.arange(n)
    a = np.zeros((n + 1, n + 1), dtype=complex)
    a[:n, :n] = p[2 * np.abs(i[:, None] - i[None, :])] + image * p[2 * (i[:, None] + i[None, :] + 1)]
    a[n, :n] = p[2 * n - 2 * i - 1] + image * p[2 * n + 2 * i + 1]  # the tip, h - z_j and h + z_j
    zm = np.concatenate([(i + 0.5) * dz, [height_m]])
    a[:, n] = 1j * 4 * np.pi / ETA0_OHM * np.cos(k * zm)
    b = -1j * 4 * np.pi / ETA0_OHM * np.sin(k * zm)
    return np.linalg.solve(a, b)[:n]


class VerticalParams(AntennaParams):
    family: Literal["vertical"]
    height: quantity("length", ge=0.05, le=300.0)
    ground_loss: quantity("resistance", ge=0.0, le=5000.0) = 10.0
    top_loading: quantity("length", ge=0.0, le=300.0) = 0.0
    """Electrical length added by a top hat or top wires [m]: the current runs as sin(k (h + top_loading - z))."""
    diameter: quantity("length", ge=1e-4, le=0.5) = 0.025
    """Conductor diameter [m], for the wire's solved current that near sources are read through (25 mm tubing,
    common practice, as phased verticals' elements take it)."""
    ground: GroundField | None = None


@register("vertical", VerticalParams, "vertical monopole over real ground with a radial system")
class Vertical(Antenna):
    """Vertical monopole; see the module docstring for the model."""

    placeable = True
    resonant_tx = True

    def __init__(self, params: VerticalParams):
        super().__init__(params)
        self.height_m = params.height
        self.top_m = params.top_loading
        self.ground_loss_ohm = params.ground_loss
        self.radius_m = 0.5 * params.diameter
        self.ground = make_ground(params.ground)
        self._cache: dict[float, tuple[float, float]] = {}
        self._segments: dict[tuple, tuple] = {}
        """transmit_segments per (frequency, soil): what a near source is read through, asked once per source."""
        zq, wq = gauss_legendre(_NZ)
        self._z = 0.5 * self.height_m * (zq + 1.0)
        self._wz = 0.5 * self.height_m * wq

    def check_frequency(self, freq_hz):
        h_wl = (self.height_m + self.top_m) * freq_hz / C_M_PER_S
        if h_wl > MAX_HEIGHT_WAVELENGTHS:
            raise ValueError(
                f"height: {length_said(self.height_m)}"
                + (f", plus {length_said(self.top_m)} of top loading," if self.top_m > 0 else "")
                + f" is {h_wl:.2f} "
                f"wavelengths at {freq_hz / 1e6:g} MHz; the vertical model holds up to {MAX_HEIGHT_WAVELENGTHS} "
                "wavelengths"
            )

    def _form_factor(self, k, sin_psi, r_v):
        """F = integral I(z) [e^{jkz s} + R_v e^{-jkz s}] dz for arrays of s, R_v."""
        return _form_factor(k, self._z, self._wz, self.height_m + self.top_m, sin_psi, r_v)

    def _power_terms(self, freq_hz):
        """(P_rad over perfect ground per unit current [W], |I_base|^2): the same for every vertical of this height
        and top loading (kept per kind, like a wire's line constants)."""
        if freq_hz not in self._cache:
            self._cache[freq_hz] = _power_terms(float(self.height_m), float(self.top_m), float(freq_hz))
        return self._cache[freq_hz]

    def radiation_resistance_ohm(self, freq_hz: float) -> float:
        """Radiation resistance at the base over perfect ground [ohm]."""
        p_rad, i_sq = self._power_terms(freq_hz)
        return 2 * p_rad / i_sq

    def efficiency(self, freq_hz: float) -> float:
        """Radiation efficiency against the ground-loss resistance (near-field loss only) [-]."""
        p_rad, i_sq = self._power_terms(freq_hz)
        return p_rad / (p_rad + 0.5 * i_sq * self.ground_loss_ohm)

    def elevation_response(self, freq_hz, azimuth_rad, elevation_rad):
        """(the vertical response on the distinct elevations, their index per direction, the above-horizon mask or
        None when every direction is up): the pattern depends on the elevation alone, so it is worked on the
        distinct elevations (kept per direction set by direction_geometry) and spread.  An array of these reads it
        (snrgain.antennas.array.Array.partial_gains); a family whose pattern depends on elevation alone may give
        it too."""
        self.check_frequency(freq_hz)
        az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
        k = 2 * np.pi * freq_hz / C_M_PER_S
        geo = direction_geometry(az, el)
        r_v = vertical_reflection(self.ground, geo.s_u, geo.c_u, freq_hz)
        f = self._form_factor(k, geo.s_u, r_v)
        p_rad, i_sq = self._power_terms(freq_hz)
        # |e|^2 = 4 pi U / P_in with U = eta0 k^2 / (32 pi^2) cos^2(psi) |F|^2.
        scale = np.sqrt(4 * np.pi * ETA0_OHM * k**2 / (32 * np.pi**2) / (p_rad + 0.5 * i_sq * self.ground_loss_ohm))
        return scale * geo.c_u * f, geo.inv, (None if geo.all_up else above_horizon(el))

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        e, inv, up = self.elevation_response(freq_hz, azimuth_rad, elevation_rad)
        ev = e[inv] if up is None else np.where(up, e[inv], 0.0)
        return ev, np.zeros_like(ev)

    def transmit_segments(self, freq_hz: float):
        """The wire's current on segments (the hook :func:`snrgain.model.placed.received_amplitudes` reads a near
        source through): points (N, 3) [m east, north, up] from the base, unit directions (up) and current times
        length (N,) on Gauss-Legendre points up the wire (about one per half metre, 16 to 96).  The current is the
        wire's solved one (:func:`thin_wire_current`, over this soil's image; the sinusoid with top loading),
        scaled to the sinusoid's effective height (integral I dz) times the pattern's scale: a unit plane wave's
        field along it, incident plus Fresnel-reflected, gives :meth:`complex_response` within the two currents'
        difference in pattern (module docstring), exactly with top loading."""
        g = self.ground
        key = (float(freq_hz), None if g is None else (g.permittivity, g.conductivity_s_per_m), self.gain_key())
        if key in self._segments:
            return self._segments[key]
        if len(self._segments) > 64:
            self._segments.clear()
        k = 2 * np.pi * freq_hz / C_M_PER_S
        p_rad, i_sq = self._power_terms(freq_hz)
        scale = np.sqrt(4 * np.pi * ETA0_OHM * k**2 / (32 * np.pi**2) / (p_rad + 0.5 * i_sq * self.ground_loss_ohm))
        x, w = gauss_legendre(int(np.clip(np.ceil(self.height_m / 0.5), 16, 96)))
        z = 0.5 * self.height_m * (x + 1.0)
        pts = np.zeros((len(z), 3))
        pts[:, 2] = z
        dirs = np.zeros((len(z), 3))
        dirs[:, 2] = 1.0
        cur = (scale * 0.5 * self.height_m) * w * self._near_current(freq_hz, z)
        for v in (pts, dirs, cur):
            v.flags.writeable = False
        self._segments[key] = (pts, dirs, cur)
        return pts, dirs, cur

    def _near_current(self, freq_hz: float, z: np.ndarray) -> np.ndarray:
        """The current the near reading takes at heights ``z`` (module docstring, "Near sources"): the solved current
        between the pulses' centres taken linearly (centres h / 160 apart; to the base from the first two, zero at
        the tip), scaled to the sinusoid's effective height."""
        k = 2 * np.pi * freq_hz / C_M_PER_S
        sinusoid = np.sin(k * (self.height_m + self.top_m - z)) + 0j
        if self.top_m > 0 or pulses(self.height_m, self.radius_m) < MIN_PULSES:
            return sinusoid
        zc, ic = thin_wire_current(freq_hz, self.height_m, self.radius_m, image_coefficient(self.ground, freq_hz))
        h = self.height_m
        zs = np.concatenate([[0.0], zc, [h]])
        cs = np.concatenate([[ic[0] - (ic[1] - ic[0]) * zc[0] / (zc[1] - zc[0])], ic, [0.0]])
        area = np.trapezoid(cs, zs)  # integral I dz, the sinusoid's (1 - cos kh) / k
        return (np.interp(z, zs, cs.real) + 1j * np.interp(z, zs, cs.imag)) * ((1.0 - np.cos(k * h)) / k / area)

    def gain_linear(self, freq_hz, azimuth_rad, elevation_rad):
        e, inv, up = self.elevation_response(freq_hz, azimuth_rad, elevation_rad)
        p = (e.real * e.real + e.imag * e.imag)[inv]
        return p if up is None else np.where(up, p, 0.0)

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        gv = self.gain_linear(freq_hz, azimuth_rad, elevation_rad)
        return gv, np.zeros_like(gv)

    def describe(self):
        return {
            **super().describe(),
            "height_m": self.height_m,
            "ground_loss_ohm": self.ground_loss_ohm,
            "top_loading_m": self.top_m,
            "diameter_m": 2 * self.radius_m,
            "ground": "perfect" if self.ground is None else self.ground.name,
        }


@lru_cache(maxsize=64)
def _power_terms(height_m: float, top_m: float, freq_hz: float) -> tuple[float, float]:
    """(P_rad over perfect ground per unit current [W], |I_base|^2) of a vertical: the radiated power integral of
    its current over the upper half-space."""
    k = 2 * np.pi * freq_hz / C_M_PER_S
    zq, wq = gauss_legendre(_NZ)
    z, wz = 0.5 * height_m * (zq + 1.0), 0.5 * height_m * wq
    x, w = gauss_legendre(_NPSI)
    psi = 0.25 * np.pi * (x + 1.0)
    wpsi = 0.25 * np.pi * w
    f_pg = _form_factor(k, z, wz, height_m + top_m, np.sin(psi), 1.0)  # over a perfect ground
    u = ETA0_OHM * k**2 / (32 * np.pi**2) * np.cos(psi) ** 2 * np.abs(f_pg) ** 2
    p_rad = 2 * np.pi * float(np.sum(u * np.cos(psi) * wpsi))
    return p_rad, float(np.sin(k * (height_m + top_m)) ** 2)


def _form_factor(k: float, z, wz, length_m: float, sin_psi, r_v):
    """F = integral I(z) [e^{jkz s} + R_v e^{-jkz s}] dz for arrays of s, R_v, the current sin(k (length - z)) on
    the points ``z`` with weights ``wz`` (``length_m``: height plus top loading)."""
    current = np.sin(k * (length_m - z))  # (nz,)
    phase = np.exp(1j * k * np.multiply.outer(sin_psi, z))  # (..., nz)
    direct = phase @ (current * wz)
    reflected = np.conj(phase) @ (current * wz)
    return direct + r_v * reflected
