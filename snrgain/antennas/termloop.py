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
from pydantic import Field

from noisemodels.sphere import upper_hemisphere
from snrgain import lines
from snrgain.antennas.base import AntennaParams, register
from snrgain.antennas.longwire import LongWire, _safe_expint
from snrgain.fields import Bearing, GroundField, quantity
from snrgain.ground import C_M_PER_S


class TerminatedLoopParams(AntennaParams):
    family: Literal["terminated-loop"]
    shape: Literal["rectangle", "triangle", "diamond"] = "rectangle"
    width: quantity("length", gt=0.0, le=60.0)
    loop_height: quantity("length", gt=0.0, le=30.0)
    height: quantity("length", gt=0.0, le=30.0) = 1.0
    """Height of the loop's lowest point above the ground [m]."""
    bearing: Bearing = 0.0
    termination: quantity("resistance", ge=0.0, le=20000.0) | Literal["auto"] = "auto"
    auto_for: Literal["rdf", "front_to_back"] = "rdf"
    """What termination = "auto" maximises, toward the bearing at auto_elevation."""
    auto_elevation: quantity("angle", ge=0.0, le=np.pi / 2) = np.radians(20.0)
    gauge: int | None = Field(default=None, ge=-3, le=40)
    diameter: quantity("length", gt=0.0, le=0.02) | None = None
    coax: Literal[50, 75] = 75
    turns_ratio: float | Literal["auto"] = "auto"
    ground: GroundField | None = None

    # the long-wire machinery reads these; a floating loop has none of them
    velocity_factor: None = None
    attenuation_db_per_100m: None = None
    z0: None = None

    @property
    def radius_m(self) -> float:
        if self.diameter is not None:
            return self.diameter / 2
        return lines.awg_diameter_m(14 if self.gauge is None else self.gauge) / 2


@register("terminated-loop", TerminatedLoopParams,
          "small loop in a vertical plane with a termination resistor (rectangle, triangle, diamond)")
class TerminatedLoop(LongWire):
    has_leads = True
    has_far_lead = True
    terminated = True

    def __init__(self, params: TerminatedLoopParams):
        from snrgain.fields import make_ground

        self.params = params
        self.ground = make_ground(params.ground)
        self.length_m = params.width
        # The line runs from the feed side to the terminated side, which lies opposite the favoured bearing.
        self.bearing_rad = params.bearing + np.pi
        self.favoured_rad = params.bearing
        self._cache = {}
        self._auto_term: dict[float, float] = {}
        area = params.width * params.loop_height * (1.0 if params.shape == "rectangle" else 0.5)
        self.spacing_m = area / params.width
        center = params.height + params.loop_height / 2
        self.z_bottom = center - self.spacing_m / 2
        self.z_top = center + self.spacing_m / 2
        if self.spacing_m <= 4 * params.radius_m:
            raise ValueError("loop_height: the loop is too flat for its wire")

    @property
    def feed_rod_ohm(self) -> float:
        return 0.0

    def wire_height_m(self) -> float:
        return self.z_top

    def check_frequency(self, freq_hz):
        lam = C_M_PER_S / freq_hz
        if self.spacing_m > 0.1 * lam or self.params.width > 0.5 * lam:
            raise ValueError(f"width, loop_height: the loop is too large for the line model at {freq_hz / 1e6:g} MHz "
                             "(spacing up to 0.1 and width up to 0.5 wavelength)")

    def _computed_line(self, freq_hz):
        a = self.params.radius_m
        z0 = 120.0 * np.arccosh(self.spacing_m / (2 * a))
        k = 2 * np.pi * freq_hz / C_M_PER_S
        alpha = np.real(lines.wire_internal_impedance(freq_hz, a)) / z0
        gamma = complex(alpha, k)
        return lines.LineConstants(float(freq_hz), gamma * z0, gamma / z0, gamma, complex(z0))

    def termination_ohm(self, freq_hz: float) -> float:
        t = self.params.termination
        if t != "auto":
            return float(t)
        if freq_hz not in self._auto_term:
            self._auto_term[freq_hz] = self._best_termination(freq_hz)
        return self._auto_term[freq_hz]

    def _best_termination(self, freq_hz: float) -> float:
        """The resistor of highest RDF (or front-to-back) toward the bearing at auto_elevation (coarse sweep)."""
        grid = upper_hemisphere(8)
        el = np.array([self.params.auto_elevation])
        best, best_r = -np.inf, None
        for r in np.geomspace(100.0, 5000.0, 41):
            self._auto_term[freq_hz] = float(r)
            fwd = self.gain_linear(freq_hz, np.array([self.favoured_rad]), el)[0]
            if self.params.auto_for == "rdf":
                g = self.gain_linear(freq_hz, grid.azimuth_rad, grid.elevation_rad)
                figure = fwd / (np.dot(g, grid.solid_angle_sr) / (2 * np.pi))
            else:
                figure = fwd / max(self.gain_linear(freq_hz, np.array([self.favoured_rad + np.pi]), el)[0], 1e-300)
            if figure > best:
                best, best_r = figure, float(r)
        return best_r

    def far_load_ohm(self, freq_hz: float):
        return self.termination_ohm(freq_hz)

    def _excitation(self, k, el_c, s, dphi, r_v, r_h):
        def along(z, pol):
            up = np.exp(1j * k * z * s)
            down = np.conj(up)
            if pol == "h":
                return -np.sin(dphi) * (up + r_h * down)
            return -s * np.cos(dphi) * (up - r_v * down)

        a_v = along(self.z_top, "v") - along(self.z_bottom, "v")
        a_h = along(self.z_top, "h") - along(self.z_bottom, "h")
        # EMF of a vertical side from the bottom wire to the top wire.
        top = _safe_expint(1j * k * s, self.z_top)
        bottom = _safe_expint(1j * k * s, self.z_bottom)
        seg = top - bottom
        lead = np.cos(el_c) * (seg + r_v * np.conj(seg))
        return a_v, a_h, lead

    def describe(self):
        p = self.params
        out = {"family": self.family, "name": self.name, "shape": p.shape, "width_m": p.width,
               "loop_height_m": p.loop_height, "height_m": p.height, "length_m": p.width,
               "bearing_deg": float(np.degrees(self.favoured_rad)),
               "ground": "perfect" if self.ground is None else self.ground.name}
        if p.position is not None:
            out["position_m"] = list(p.position)
        return out
