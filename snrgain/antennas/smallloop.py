"""The small unterminated loop in a vertical plane: a figure-eight with deep side nulls.

Model: a loop of area A (much smaller than a wavelength) responds to the
magnetic field along its normal n (horizontal, at right angles to the loop's
plane, whose compass direction is ``bearing``): V = j omega mu0 A H_n.  At
the loop's centre height h the field is the incident wave plus its ground
reflection; for unit incident E,

    vertical polarization:   eta0 H_n = -cos(phi - b) [exp(+j k h s) + R_v exp(-j k h s)]
    horizontal polarization: eta0 H_n =  s sin(phi - b) [-exp(+j k h s) + R_h exp(-j k h s)]

(s = sin elevation; R_v, R_h Fresnel coefficients).  With the loop's input
resistance R_r + R_loss, R_r = 320 pi^4 (A / lambda^2)^2 (the small loop's
radiation resistance, Kraus, "Antennas", 2nd ed., Section 6-5) and
R_loss = (perimeter / (2 pi a)) R_s (skin-effect wire loss), a matched
receiver takes A_e = (omega mu0 A)^2 |H_n|^2 / (4 eta0 (R_r + R_loss)) per
unit incident power density; gain = 4 pi A_e / lambda^2.  In free space
(no ground, no loss) this is the textbook directivity 1.5.  The loop is
taken as balanced (no electric, "antenna effect" pick-up), and the radiation
resistance is the free-space one.

Nulls lie broadside to the loop's plane (phi = b +- 90 deg) for vertically
polarized waves; a reading of a source with such a loop cannot tell its
bearing from the opposite one (180 deg ambiguity).
"""

from __future__ import annotations

from typing import Literal

import numpy as np
from pydantic import Field, model_validator

from snrgain.antennas.base import Antenna, AntennaParams, above_horizon, register
from snrgain.antennas.geometry import direction_geometry
from snrgain.fields import Bearing, GroundField, WireSize, make_ground, quantity
from snrgain.physics import lines
from snrgain.physics.ground import C_M_PER_S, ETA0_OHM, MU0_H_PER_M, reflection_coefficients
from snrgain.physics.quadrature import gauss_legendre
from snrgain.units import bearing_deg, length_said


class SmallLoopParams(WireSize, AntennaParams):
    family: Literal["small-loop"]
    width: quantity("length", ge=0.05, le=20.0)
    loop_height: quantity("length", ge=0.05, le=20.0)
    height: quantity("length", ge=0.05, le=50.0)
    bearing: Bearing = 0.0
    turns: int = Field(default=1, ge=1, le=50)
    ground: GroundField | None = None

    @model_validator(mode="after")
    def _fits(self):
        if self.height < self.loop_height / 2:
            raise ValueError(
                f"height: the loop's centre at {length_said(self.height)} must be at least half the loop's "
                f"height, {length_said(self.loop_height / 2)}"
            )
        return self


@register("small-loop", SmallLoopParams, "small unterminated loop in a vertical plane (figure-eight, for nulling)")
class SmallLoop(Antenna):
    placeable = True
    both_ways = True  # a figure-eight: its bearing is its plane, heard both ways (the build sheet says so)

    def __init__(self, params: SmallLoopParams):
        super().__init__(params)
        self.ground = make_ground(params.ground)
        self.area_m2 = params.width * params.loop_height

    def check_frequency(self, freq_hz):
        lam = C_M_PER_S / freq_hz
        perimeter = 2 * (self.params.width + self.params.loop_height) * self.params.turns
        if perimeter > 0.1 * lam:
            raise ValueError(
                f"width, loop_height: the loop's wire ({length_said(perimeter)}) exceeds a tenth of a wavelength "
                f"at {freq_hz / 1e6:g} MHz; the small-loop model does not hold"
            )

    def input_resistance_ohm(self, freq_hz: float) -> tuple[float, float]:
        """(radiation resistance, loss resistance) [ohm]."""
        p = self.params
        lam = C_M_PER_S / freq_hz
        n = p.turns
        r_rad = 320 * np.pi**4 * (n * self.area_m2 / lam**2) ** 2
        a = p.radius_m
        r_loss = 2 * (p.width + p.loop_height) * n * np.real(lines.wire_internal_impedance(freq_hz, a))
        return float(r_rad), float(r_loss)

    def _parts(self, freq_hz, azimuth_rad, elevation_rad):
        """(cos and sin of the azimuth off the loop's plane, the vertical and horizontal responses' elevation parts
        on the distinct elevations, their index per direction, the above-horizon mask): h_v = cos(dphi) a_v(el),
        h_h = sin(dphi) a_h(el)."""
        self.check_frequency(freq_hz)
        az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
        geo = direction_geometry(az, el)
        k = 2 * np.pi * freq_hz / C_M_PER_S
        s = geo.s_u
        r_v, r_h = reflection_coefficients(self.ground, geo.el_u, freq_hz)
        up = np.exp(1j * k * self.params.height * s)
        down = np.conj(up)
        cb, sb = np.cos(self.params.bearing), np.sin(self.params.bearing)
        cos_dphi = geo.cos_az * cb + geo.sin_az * sb  # cos(az - bearing)
        sin_dphi = geo.sin_az * cb - geo.cos_az * sb
        r_rad, r_loss = self.input_resistance_ohm(freq_hz)
        omega = 2 * np.pi * freq_hz
        scale = (omega * MU0_H_PER_M * self.area_m2 * self.params.turns) ** 2 / (4 * ETA0_OHM * (r_rad + r_loss))
        lam = C_M_PER_S / freq_hz
        # A_e = scale |h_n|^2 (h_n = eta0 H_n for unit incident E); gain = 4 pi A_e / lambda^2.
        amp = np.sqrt(4 * np.pi * scale / lam**2)
        a_v, a_h = -amp * (up + r_v * down), amp * s * (r_h * down - up)
        return cos_dphi, sin_dphi, a_v, a_h, geo.inv, above_horizon(el)

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        cos_dphi, sin_dphi, a_v, a_h, inv, up = self._parts(freq_hz, azimuth_rad, elevation_rad)
        return np.where(up, cos_dphi * a_v[inv], 0.0), np.where(up, sin_dphi * a_h[inv], 0.0)

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        # |cos(dphi) a_v|^2 = cos^2(dphi) |a_v|^2: powers on the distinct elevations, real arithmetic per direction
        cos_dphi, sin_dphi, a_v, a_h, inv, up = self._parts(freq_hz, azimuth_rad, elevation_rad)
        p_v, p_h = (a_v.real**2 + a_v.imag**2)[inv], (a_h.real**2 + a_h.imag**2)[inv]
        return np.where(up, cos_dphi * cos_dphi * p_v, 0.0), np.where(up, sin_dphi * sin_dphi * p_h, 0.0)

    def transmit_segments(self, freq_hz: float):
        """The loop's current on segments (the hook :func:`snrgain.model.placed.received_amplitudes` reads a near
        source through): points (N, 3) [m east, north, up] from the loop's place (its centre in plan; heights
        above the soil), unit directions and current times length (N,).  One uniform current around the rectangle
        (``width`` along the bearing, ``loop_height`` up), circulating from the bearing upward (right-handed about
        the normal n at bearing + 90 deg, the normal the pattern's H_n is taken along), on Gauss-Legendre points
        along each side.  By Stokes' theorem sum E.dl I = -j omega mu0 I (flux of H through the loop) = -j k A I
        h_n for a unit wave over the area A, so I = j amp / (k A) gives :meth:`complex_response` (amp h_n) for a
        plane wave, and the field's flux through the whole loop for a near source."""
        p = self.params
        k = 2 * np.pi * freq_hz / C_M_PER_S
        r_rad, r_loss = self.input_resistance_ohm(freq_hz)
        omega = 2 * np.pi * freq_hz
        scale = (omega * MU0_H_PER_M * self.area_m2 * p.turns) ** 2 / (4 * ETA0_OHM * (r_rad + r_loss))
        amp = np.sqrt(4 * np.pi * scale) * freq_hz / C_M_PER_S
        u = np.array([np.sin(p.bearing), np.cos(p.bearing), 0.0])
        up = np.array([0.0, 0.0, 1.0])
        w2, h2 = p.width / 2, p.loop_height / 2
        centre = np.array([0.0, 0.0, p.height])
        x, wq = gauss_legendre(8)
        corners = [centre + a * w2 * u + b * h2 * up for a, b in ((-1, -1), (1, -1), (1, 1), (-1, 1))]
        pts, dirs, lengths = [], [], []
        for a, b in zip(corners, corners[1:] + corners[:1]):
            side = b - a
            length = float(np.linalg.norm(side))
            pts.append(a[None, :] + np.multiply.outer(0.5 * (x + 1.0), side))
            dirs.append(np.tile(side / length, (len(x), 1)))
            lengths.append(0.5 * length * wq)
        current = 1j * amp / (k * self.area_m2)
        return np.vstack(pts), np.vstack(dirs), current * np.concatenate(lengths)

    def describe(self):
        return {
            **super().describe(),
            "area_m2": self.area_m2,
            "shape": "rectangle",
            "width_m": self.params.width,
            "loop_height_m": self.params.loop_height,
            "height_m": self.params.height,
            "bearing_deg": bearing_deg(self.params.bearing),
            "turns": self.params.turns,
        }
