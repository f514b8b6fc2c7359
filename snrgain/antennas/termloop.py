"""Small terminated loops in a vertical plane: rectangles, triangles, diamonds, with a resistor opposite the feed.

Model (snrgain's own)
---------------------
The loop's top and bottom wires form a short balanced two-wire line of
length w (the loop's width, from the feed side to the terminated side) and
spacing s; its vertical sides close the line at both
ends.  This is the same structure as a terminated long wire over ground
(snrgain.antennas.longwire), with the ground replaced by the bottom wire, so
the same closed-form line solution serves:

- line: Z0 = 120 acosh(s / 2a) (two-wire line in air), gamma = alpha + j k,
  alpha = Re(Z_int) / Z0 (both conductors' skin-effect loss);
- distributed source: the difference of the fields along the top and bottom
  wires at their heights (incident plus Fresnel-reflected, both
  polarizations), E_x(z_top) - E_x(z_bottom);
- end sources: the EMF of each vertical side, the integral of E_z from the
  bottom wire to the top wire (the trade's "electric" response of the loop);
  their difference with the distributed source is Faraday's law, the
  loop's magnetic response;
- loads: the feed (transformer to the coax) at one side, the termination at
  the other.

With the termination near Z0 the vertical sides' EMFs dominate: a wave from
the terminated side reaches the far side first, and its EMF, carried back
along the matched line, meets the near side's opposite EMF at the same
instant and cancels it.  So the cardioid's null points toward the
termination and its maximum toward the feed side: ``bearing`` is that
favoured direction (termination opposite it).  Shorted, the loop becomes a
figure-eight.  A
triangle or diamond is taken as the rectangle of the same width and area
centred at the same height (an approximation for the narrow ends).
``termination = "auto"`` picks the resistor of highest RDF (``auto_for =
"rdf"``, the default) or front-to-back (``"front_to_back"``) toward the
bearing at ``auto_elevation`` (20 deg).  Checked against NEC-2 (tests/nec/).
"""

from __future__ import annotations

from typing import Literal

import numpy as np

from snrgain.antennas.base import Antenna, AntennaParams, TransformerFeed, register
from snrgain.antennas.longwire import field_along_wire, line_currents, plane_wave, port_response, vertical_emf
from snrgain.fields import Bearing, GroundField, WireSize, make_ground, quantity
from snrgain.physics import lines
from snrgain.physics.ground import C_M_PER_S

AUTO_TERMINATIONS_OHM = np.geomspace(100.0, 5000.0, 41)
"""Resistors tried by termination = "auto" [ohm]."""


class TerminatedLoopParams(WireSize, AntennaParams):
    family: Literal["terminated-loop"]
    shape: Literal["rectangle", "triangle", "diamond"] = "rectangle"
    width: quantity("length", ge=0.05, le=60.0)
    loop_height: quantity("length", ge=0.05, le=30.0)
    height: quantity("length", ge=0.0, le=30.0) = 1.0
    """Height of the loop's lowest point above the ground [m]."""
    bearing: Bearing = 0.0
    termination: quantity("resistance", ge=0.0, le=20000.0) | Literal["auto"] = "auto"
    auto_for: Literal["rdf", "front_to_back"] = "rdf"
    """What termination = "auto" maximises, toward the bearing at auto_elevation."""
    auto_elevation: quantity("angle", ge=0.0, le=np.pi / 2) = np.radians(20.0)
    coax: Literal[50, 75] = 75
    turns_ratio: float | Literal["auto"] = "auto"
    ground: GroundField | None = None


def loop_line(freq_hz: float, *, radius_m: float, spacing_m: float) -> lines.LineConstants:
    """The loop's top and bottom wires as a two-wire line in air: Z0 = 120 acosh(s / 2a), alpha = Re(Z_int) / Z0."""
    z0 = 120.0 * np.arccosh(spacing_m / (2 * radius_m))
    k = 2 * np.pi * freq_hz / C_M_PER_S
    alpha = np.real(lines.wire_internal_impedance(freq_hz, radius_m)) / z0
    gamma = complex(alpha, k)
    return lines.LineConstants(float(freq_hz), gamma * z0, gamma / z0, gamma, complex(z0))


@register(
    "terminated-loop",
    TerminatedLoopParams,
    "small loop in a vertical plane with a termination resistor (rectangle, triangle, diamond)",
)
class TerminatedLoop(TransformerFeed, Antenna):
    """See the module docstring."""

    placeable = True

    def __init__(self, params: TerminatedLoopParams):
        super().__init__(params)
        self.ground = make_ground(params.ground)
        self.width_m = params.width
        area = params.width * params.loop_height * (1.0 if params.shape == "rectangle" else 0.5)
        self.spacing_m = area / params.width
        center = params.height + params.loop_height / 2
        self.z_bottom = center - self.spacing_m / 2
        self.z_top = center + self.spacing_m / 2
        if self.spacing_m <= 4 * params.radius_m:
            raise ValueError("loop_height: the loop is too flat for its wire")
        self._lines: dict[float, lines.LineConstants] = {}
        self._auto_term: dict[float, float] = {}

    @property
    def line_bearing_rad(self) -> float:
        """The line runs from the feed side to the terminated side, which lies opposite the favoured bearing."""
        return self.params.bearing + np.pi

    def check_frequency(self, freq_hz):
        lam = C_M_PER_S / freq_hz
        if self.spacing_m > 0.1 * lam or self.params.width > 0.5 * lam:
            raise ValueError(
                f"width, loop_height: the loop is too large for the line model at {freq_hz / 1e6:g} MHz "
                "(spacing up to 0.1 and width up to 0.5 wavelength)"
            )

    def line(self, freq_hz: float) -> lines.LineConstants:
        if freq_hz not in self._lines:
            self._lines[freq_hz] = loop_line(freq_hz, radius_m=self.params.radius_m, spacing_m=self.spacing_m)
        return self._lines[freq_hz]

    def termination_ohm(self, freq_hz: float) -> float:
        """The resistor opposite the feed [ohm]: as given, or the one "auto" chooses."""
        t = self.params.termination
        if t != "auto":
            return float(t)
        if freq_hz not in self._auto_term:
            self._auto_term[freq_hz] = self._best_termination(freq_hz)
        return self._auto_term[freq_hz]

    def _best_termination(self, freq_hz: float) -> float:
        """The resistor of highest RDF (or front-to-back) toward the bearing at auto_elevation (coarse sweep)."""
        from noisemodels.sphere import upper_hemisphere

        grid = upper_hemisphere(8)
        el = np.array([self.params.auto_elevation])
        fwd_dir = np.array([self.params.bearing])
        best, best_r = -np.inf, None
        for r in AUTO_TERMINATIONS_OHM:
            fwd = self._gain(freq_hz, fwd_dir, el, float(r))[0]
            if self.params.auto_for == "rdf":
                g = self._gain(freq_hz, grid.azimuth_rad, grid.elevation_rad, float(r))
                figure = fwd / (np.dot(g, grid.solid_angle_sr) / (2 * np.pi))
            else:
                figure = fwd / max(self._gain(freq_hz, fwd_dir + np.pi, el, float(r))[0], 1e-300)
            if figure > best:
                best, best_r = figure, float(r)
        return best_r

    def feed_point_impedance(self, freq_hz: float) -> complex:
        return self._feed_impedance(freq_hz, self.termination_ohm(freq_hz))

    def _feed_impedance(self, freq_hz: float, termination_ohm: float) -> complex:
        return lines.input_impedance(self.line(freq_hz), length_m=self.width_m, load_ohm=termination_ohm)

    def _load_ohm(self, freq_hz: float, termination_ohm: float) -> float:
        """The coax referred through the transformer, whose 'auto' ratio follows the termination tried [ohm]."""
        n = self.params.turns_ratio
        if n == "auto":
            n = np.sqrt(abs(self._feed_impedance(freq_hz, termination_ohm)) / self.params.coax)
        return float(n) ** 2 * self.params.coax

    def _response(self, freq_hz, azimuth_rad, elevation_rad, termination_ohm: float):
        w = plane_wave(freq_hz, azimuth_rad, elevation_rad, bearing_rad=self.line_bearing_rad, ground=self.ground)
        top_v, top_h = field_along_wire(w, self.z_top)
        bottom_v, bottom_h = field_along_wire(w, self.z_bottom)
        side = vertical_emf(w, self.z_bottom, self.z_top)[w.inv]  # each vertical side, bottom wire to top wire
        load = self._load_ohm(freq_hz, termination_ohm)
        i_f, _ = line_currents(
            w,
            line=self.line(freq_hz),
            length_m=self.width_m,
            z_feed=load,
            z_far=termination_ohm,
            drive_v=-w.cos_dphi * (top_v - bottom_v)[w.inv],
            drive_h=-w.sin_dphi * (top_h - bottom_h)[w.inv],
            v_end=side,
        )
        return tuple(port_response(freq_hz, i, load_ohm=load, elevation_rad=w.el) for i in i_f)

    def _gain(self, freq_hz, azimuth_rad, elevation_rad, termination_ohm):
        ev, eh = self._response(freq_hz, azimuth_rad, elevation_rad, termination_ohm)
        return np.abs(ev) ** 2 + np.abs(eh) ** 2

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        return self._response(freq_hz, azimuth_rad, elevation_rad, self.termination_ohm(freq_hz))

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        ev, eh = self.complex_response(freq_hz, azimuth_rad, elevation_rad)
        return np.abs(ev) ** 2, np.abs(eh) ** 2

    def describe(self):
        p = self.params
        return {
            **super().describe(),
            "shape": p.shape,
            "width_m": p.width,
            "loop_height_m": p.loop_height,
            "height_m": p.height,
            "length_m": p.width,
            "bearing_deg": float(np.degrees(p.bearing)),
            "ground": "perfect" if self.ground is None else self.ground.name,
        }
