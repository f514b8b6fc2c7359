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
"""

from __future__ import annotations

from functools import lru_cache
from typing import Literal

import numpy as np

from snrgain.antennas.base import Antenna, AntennaParams, above_horizon, register
from snrgain.antennas.geometry import direction_geometry
from snrgain.fields import GroundField, make_ground, quantity
from snrgain.physics.ground import C_M_PER_S, ETA0_OHM, reflection_coefficients
from snrgain.physics.quadrature import gauss_legendre

MAX_HEIGHT_WAVELENGTHS = 0.625
"""The sinusoidal-current model is used up to a 5/8-wave vertical."""

_NZ = 24
_NPSI = 96


class VerticalParams(AntennaParams):
    family: Literal["vertical"]
    height: quantity("length", ge=0.05, le=300.0)
    ground_loss: quantity("resistance", ge=0.0, le=5000.0) = 10.0
    top_loading: quantity("length", ge=0.0, le=300.0) = 0.0
    """Electrical length added by a top hat or top wires [m]: the current runs as sin(k (h + top_loading - z))."""
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
        self.ground = make_ground(params.ground)
        self._cache: dict[float, tuple[float, float]] = {}
        zq, wq = gauss_legendre(_NZ)
        self._z = 0.5 * self.height_m * (zq + 1.0)
        self._wz = 0.5 * self.height_m * wq

    def check_frequency(self, freq_hz):
        h_wl = (self.height_m + self.top_m) * freq_hz / C_M_PER_S
        if h_wl > MAX_HEIGHT_WAVELENGTHS:
            raise ValueError(
                f"height: {self.height_m:g} m (plus {self.top_m:g} m of top loading) is {h_wl:.2f} wavelengths at "
                f"{freq_hz / 1e6:g} MHz; the vertical model holds up to {MAX_HEIGHT_WAVELENGTHS} wavelengths"
            )

    def _form_factor(self, k, sin_psi, r_v):
        """F = integral I(z) [e^{jkz s} + R_v e^{-jkz s}] dz for arrays of s, R_v."""
        current = np.sin(k * (self.height_m + self.top_m - self._z))  # (nz,)
        phase = np.exp(1j * k * np.multiply.outer(sin_psi, self._z))  # (..., nz)
        direct = phase @ (current * self._wz)
        reflected = np.conj(phase) @ (current * self._wz)
        return direct + r_v * reflected

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

    def _distinct_response(self, freq_hz, azimuth_rad, elevation_rad):
        """(the vertical response on the distinct elevations, their index per direction, the above-horizon mask):
        the pattern depends on the elevation alone, so it is worked on the distinct elevations (kept per direction
        set by direction_geometry) and spread."""
        self.check_frequency(freq_hz)
        az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
        k = 2 * np.pi * freq_hz / C_M_PER_S
        geo = direction_geometry(az, el)
        r_v, _ = reflection_coefficients(self.ground, geo.el_u, freq_hz)
        f = self._form_factor(k, geo.s_u, r_v)
        p_rad, i_sq = self._power_terms(freq_hz)
        # |e|^2 = 4 pi U / P_in with U = eta0 k^2 / (32 pi^2) cos^2(psi) |F|^2.
        scale = np.sqrt(4 * np.pi * ETA0_OHM * k**2 / (32 * np.pi**2) / (p_rad + 0.5 * i_sq * self.ground_loss_ohm))
        return scale * geo.c_u * f, geo.inv, above_horizon(el)

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        e, inv, up = self._distinct_response(freq_hz, azimuth_rad, elevation_rad)
        ev = np.where(up, e[inv], 0.0)
        return ev, np.zeros_like(ev)

    def transmit_segments(self, freq_hz: float):
        """The current the model gives the wire, on segments (the hook :func:`snrgain.model.placed.received_amplitudes`
        reads a near source through): points (N, 3) [m east, north, up] from the base, unit directions (up) and
        current times length (N,), I(z) = sin(k (h + t - z)) on Gauss-Legendre points up the wire (about one per
        half metre, 16 to 96), scaled so that a unit plane wave's field along them, incident plus Fresnel-reflected,
        gives :meth:`complex_response` (sum E_z I dz = cos(el) F, the form factor the pattern is made of)."""
        k = 2 * np.pi * freq_hz / C_M_PER_S
        p_rad, i_sq = self._power_terms(freq_hz)
        scale = np.sqrt(4 * np.pi * ETA0_OHM * k**2 / (32 * np.pi**2) / (p_rad + 0.5 * i_sq * self.ground_loss_ohm))
        x, w = gauss_legendre(int(np.clip(np.ceil(self.height_m / 0.5), 16, 96)))
        z = 0.5 * self.height_m * (x + 1.0)
        pts = np.zeros((len(z), 3))
        pts[:, 2] = z
        dirs = np.zeros((len(z), 3))
        dirs[:, 2] = 1.0
        return pts, dirs, (scale * 0.5 * self.height_m) * w * np.sin(k * (self.height_m + self.top_m - z)) + 0j

    def gain_linear(self, freq_hz, azimuth_rad, elevation_rad):
        e, inv, up = self._distinct_response(freq_hz, azimuth_rad, elevation_rad)
        p = (e.real * e.real + e.imag * e.imag)[inv]
        return p if up.all() else np.where(up, p, 0.0)

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        gv = self.gain_linear(freq_hz, azimuth_rad, elevation_rad)
        return gv, np.zeros_like(gv)

    def describe(self):
        return {
            **super().describe(),
            "height_m": self.height_m,
            "ground_loss_ohm": self.ground_loss_ohm,
            "top_loading_m": self.top_m,
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
    current = np.sin(k * (height_m + top_m - z)) * wz
    phase = np.exp(1j * k * np.multiply.outer(np.sin(psi), z))
    f_pg = phase @ current + np.conj(phase) @ current
    u = ETA0_OHM * k**2 / (32 * np.pi**2) * np.cos(psi) ** 2 * np.abs(f_pg) ** 2
    p_rad = 2 * np.pi * float(np.sum(u * np.cos(psi) * wpsi))
    return p_rad, float(np.sin(k * (height_m + top_m)) ** 2)
