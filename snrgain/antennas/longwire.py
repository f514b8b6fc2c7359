"""Long wires over and on the ground, from a transmission-line model.

Families: ``beverage`` (a terminated wire at a height, down-leads to ground
rods at both ends), ``unterminated`` (the same with the far end open and no
far down-lead), ``bog`` (an insulated wire lying on the ground, terminated,
no down-leads), ``two-wire`` (a terminated pair serving both directions).

Model (DESIGN.md, "Long wire over ground")
------------------------------------------
The wire and the earth form a lossy line (snrgain.lines): Z0, gamma.  A plane
wave of unit field from compass bearing phi at elevation Delta has, at the
wire's height h, the field component along the wire (bearing b, unit vector
u from the feed toward the far end)

    E_x(x) = A exp(+j k x cos(Delta) cos(phi - b)),
    A_h = -sin(phi - b) [exp(+j k h s) + R_h exp(-j k h s)]          (horizontal polarization)
    A_v = -s cos(phi - b) [exp(+j k h s) - R_v exp(-j k h s)]        (vertical polarization)

with s = sin(Delta) and R_v, R_h the Fresnel coefficients (snrgain.ground;
R_v = +1 over a perfect conductor).  A vertical down-lead at position x
adds the EMF cos(Delta) * integral_0^h [exp(+j k z s) + R_v exp(-j k z s)] dz
times the same phase.  EMFs are counted around one loop: up the feed
down-lead, along the wire toward the far end, down the far down-lead, back
through the earth.  A series EMF V at distance x drives the feed current

    I_F = V [Z0 cosh g(L - x) + Z_R sinh g(L - x)] / D,
    D = Z0 (Z_F + Z_R) cosh gL + (Z0^2 + Z_F Z_R) sinh gL,

(a standard transmission-line result), and the far-end current
I_R = V [Z0 cosh g x + Z_F sinh g x] / D, so the distributed source
integrates in closed form (sums of exponential integrals).  Z_F is the feed
load (the transformer's primary, n^2 Z_coax, plus the feed ground rod), Z_R
the far load (termination plus far ground rod; open for ``unterminated``).
The power delivered to the receiver, 0.5 |I_F|^2 Re(n^2 Z_coax), over the
incident power density |E|^2 / (2 eta0) is the effective area; realized
gain = 4 pi A / lambda^2.  Gain (with a conjugate-matched receiver) is the
realized gain over the mismatch factor between the antenna's feed-point
impedance and the load.

The pattern the scenario uses is the realized gain: what reaches the
receiver.  Signal and external noise see the mismatch alike; receiver noise
does not, which is why it matters.

Two-wire (snrgain's own model): two wires a spacing s apart act, against
ground, as one wire of radius sqrt(a s) (common mode).  The forward port is
that line's feed; its far end sees a reflection transformer that hands the
common-mode wave arriving there to the pair's differential mode, which runs
back to the feed with the loss of the pair's conductors (Z0d = 120 acosh(s /
2a), alpha_d = Re(Z_int) / Z0d) to the reverse port.  So the reverse port's
response is the far-end current of the common-mode line, times the
differential line's loss.  Both ports assume the transformers match their
lines; coupling between the modes (ground asymmetry) is neglected.

Validity: h up to 0.1 wavelength (the line model needs a low wire), lengths
up to 3 km, frequencies 0.1 to 30 MHz; the down-leads' own inductance is
neglected.  NEC-2 (PyNEC) is the independent check in the tests.
"""

from __future__ import annotations

from typing import Annotated, Literal

import numpy as np
from pydantic import BeforeValidator, Field, model_validator

from snrgain import lines
from snrgain.antennas.base import Antenna, AntennaParams, TransformerFeed, above_horizon, register
from snrgain.fields import Bearing, GroundField, make_ground, quantity
from snrgain.ground import C_M_PER_S, ETA0_OHM, reflection_coefficients

MAX_HEIGHT_WAVELENGTHS = 0.1
FREQ_RANGE_HZ = (0.1e6, 30e6)


def _attenuation(value):
    """Attenuation as '2 dB/100m', '0.6 dB/100ft' or a bare number of dB per 100 m."""
    from snrgain.units import QuantityError

    if isinstance(value, bool):
        raise QuantityError(f"expected an attenuation such as '2 dB/100m', got {value!r}")
    if isinstance(value, (int, float)):
        x = float(value)
    elif isinstance(value, str):
        text = value.replace(" ", "").lower()
        for suffix, scale in (("db/100m", 1.0), ("db/100ft", 1.0 / 0.3048), ("db/m", 100.0)):
            if text.endswith(suffix):
                try:
                    x = float(text[: -len(suffix)]) * scale
                except ValueError:
                    break
                break
        else:
            raise QuantityError(f"expected an attenuation such as '2 dB/100m' or '0.6 dB/100ft', got {value!r}")
    else:
        raise QuantityError(f"expected an attenuation such as '2 dB/100m', got {value!r}")
    if not 0 <= x <= 200:
        raise QuantityError(f"attenuation must lie between 0 and 200 dB/100 m, got {value!r}")
    return x


Attenuation = Annotated[float, BeforeValidator(_attenuation)]
"""Attenuation of a line: '2 dB/100m', '0.6 dB/100ft', '0.02 dB/m' or a bare number of dB per 100 m."""


class WireParams(AntennaParams):
    """Keys shared by the long-wire families."""

    length: quantity("length", gt=0.0, le=3000.0)
    bearing: Bearing = 0.0
    gauge: int | None = Field(default=None, ge=-3, le=40, description="AWG gauge")
    diameter: quantity("length", gt=0.0, le=0.02) | None = None
    feed_ground: quantity("resistance", ge=0.0, le=1000.0) = 20.0
    coax: Literal[50, 75] = 75
    turns_ratio: float | Literal["auto"] = "auto"
    velocity_factor: float | None = Field(default=None, gt=0.0, le=1.0)
    attenuation: Attenuation | None = None
    z0: float | None = Field(default=None, gt=0.0, le=2000.0)
    ground: GroundField | None = None

    @model_validator(mode="after")
    def _wire(self):
        if self.gauge is not None and self.diameter is not None:
            raise ValueError("give gauge (AWG) or diameter, not both")
        if isinstance(self.turns_ratio, float) and not 0.1 <= self.turns_ratio <= 20:
            raise ValueError(f"turns_ratio must be 'auto' or between 0.1 and 20; got {self.turns_ratio!r}")
        measured = [self.velocity_factor, self.attenuation_db_per_100m, self.z0]
        if any(v is not None for v in measured) and not all(v is not None for v in measured):
            raise ValueError("measured line constants need all three: velocity_factor, attenuation (dB/100 m) and z0")
        return self

    @property
    def attenuation_db_per_100m(self):
        return self.attenuation

    @property
    def radius_m(self) -> float:
        if self.diameter is not None:
            return self.diameter / 2
        return lines.awg_diameter_m(14 if self.gauge is None else self.gauge) / 2


class BeverageParams(WireParams):
    family: Literal["beverage"]
    height: quantity("length", gt=0.05, le=30.0)
    termination: quantity("resistance", ge=0.0, le=5000.0) | Literal["auto"] = "auto"
    far_ground: quantity("resistance", ge=0.0, le=1000.0) = 20.0


class UnterminatedParams(WireParams):
    family: Literal["unterminated"]
    height: quantity("length", gt=0.05, le=30.0)

    @model_validator(mode="before")
    @classmethod
    def _no_termination(cls, data):
        if isinstance(data, dict):
            for key in ("termination", "far_ground"):
                if key in data:
                    raise ValueError(f"{key}: an unterminated wire has no far-end termination or ground rod; "
                                     "use family 'beverage' for a terminated wire")
        return data


class BogParams(WireParams):
    family: Literal["bog"]
    height: quantity("length", gt=0.0, le=0.3) = 0.02
    depth: quantity("length", ge=0.0, le=0.5) = 0.0
    insulation_thickness: quantity("length", gt=0.0, le=0.02) = 0.8e-3
    insulation_permittivity: float = Field(default=3.0, ge=1.0, le=20.0)
    termination: quantity("resistance", ge=0.0, le=5000.0) | Literal["auto"] = "auto"
    far_ground: quantity("resistance", ge=0.0, le=1000.0) = 20.0


class TwoWireParams(WireParams):
    family: Literal["two-wire"]
    height: quantity("length", gt=0.05, le=30.0)
    spacing: quantity("length", gt=0.0, le=2.0) = 0.3
    port: Literal["forward", "reverse"] = "forward"
    far_ground: quantity("resistance", ge=0.0, le=1000.0) = 20.0

    @model_validator(mode="after")
    def _spacing(self):
        if self.spacing <= 4 * self.radius_m:
            raise ValueError(f"spacing must exceed four wire radii ({4 * self.radius_m:g} m)")
        return self


def _safe_expint(z, length):
    """(exp(z L) - 1) / z, with the limit L (1 + z L / 2) where |z L| is tiny."""
    z = np.asarray(z, dtype=complex)
    zl = z * length
    out = np.expm1(zl)
    small = np.abs(zl) < 1e-8
    if np.any(small):
        z = np.where(small, 1.0, z)
        out = np.where(small, zl * (1 + 0.5 * zl), out)
    return out / z


class LongWire(TransformerFeed, Antenna):
    """Shared machinery of the long-wire families."""

    has_far_lead = True
    has_leads = True
    terminated = True
    needs_far_current = False

    def __init__(self, params: WireParams):
        super().__init__(params)
        self.ground = make_ground(params.ground)
        self.length_m = params.length
        self.bearing_rad = params.bearing
        self._cache: dict[float, lines.LineConstants] = {}

    # -- the line and its loads --------------------------------------------------------
    @property
    def feed_rod_ohm(self) -> float:
        """Resistance of the feed end's ground rod [ohm] (in series with the feed load)."""
        return self.params.feed_ground

    def wire_height_m(self) -> float:
        return self.params.height

    def line(self, freq_hz: float) -> lines.LineConstants:
        """The line's constants at a frequency (measured ones if given), cached."""
        hit = self._cache.get(freq_hz)
        if hit is None:
            p = self.params
            if p.velocity_factor is not None:
                hit = lines.measured_constants(freq_hz, velocity_factor=p.velocity_factor,
                                               attenuation_db_per_100m=p.attenuation_db_per_100m, z0_ohm=p.z0)
            else:
                hit = self._computed_line(freq_hz)
            self._cache[freq_hz] = hit
        return hit

    def _computed_line(self, freq_hz):
        return lines.overhead_wire(freq_hz, radius_m=self.params.radius_m, height_m=self.wire_height_m(), ground=self.ground)

    def termination_ohm(self, freq_hz: float) -> float | None:
        """Far-end resistor [ohm]: as given, or |Z0| less the far ground rod for 'auto'; None if open."""
        if not self.terminated:
            return None
        t = self.params.termination
        if t == "auto":
            return max(abs(self.line(freq_hz).z0) - self.params.far_ground, 0.0)
        return float(t)

    def far_load_ohm(self, freq_hz: float):
        t = self.termination_ohm(freq_hz)
        return None if t is None else t + self.params.far_ground

    def feed_point_impedance(self, freq_hz: float) -> complex:
        """Impedance the transformer's primary sees: the line's input impedance plus the feed ground rod [ohm]."""
        ln = self.line(freq_hz)
        return lines.input_impedance(ln, length_m=self.length_m, load_ohm=self.far_load_ohm(freq_hz)) + self.feed_rod_ohm

    def check_frequency(self, freq_hz):
        lo, hi = FREQ_RANGE_HZ
        if not lo <= freq_hz <= hi:
            raise ValueError(f"frequency {freq_hz / 1e6:g} MHz lies outside the long-wire model's 0.1-30 MHz")
        h_wl = self.wire_height_m() * freq_hz / C_M_PER_S
        if h_wl > MAX_HEIGHT_WAVELENGTHS:
            raise ValueError(f"height: {self.wire_height_m():g} m is {h_wl:.3f} wavelengths at {freq_hz / 1e6:g} MHz; "
                             f"the line model holds up to {MAX_HEIGHT_WAVELENGTHS} wavelengths")

    # -- the response ---------------------------------------------------------------
    def _currents(self, freq_hz, azimuth_rad, elevation_rad):
        """Feed and far-end currents [A] per unit incident field, for each polarization."""
        az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
        el_c = np.clip(el, 0.0, np.pi / 2)
        k = 2 * np.pi * freq_hz / C_M_PER_S
        L = self.length_m
        ln = self.line(freq_hz)
        g, z0 = ln.gamma, ln.z0
        zf = self.receiver_load_ohm(freq_hz) + self.feed_rod_ohm
        zr = self.far_load_ohm(freq_hz)
        r_v, r_h = reflection_coefficients(self.ground, el_c, freq_hz)
        s = np.sin(el_c)
        dphi = az - self.bearing_rad
        c = np.cos(el_c) * np.cos(dphi)
        a_v, a_h, lead = self._excitation(k, el_c, s, dphi, r_v, r_h)
        jkc = 1j * k * c
        e2 = np.exp(-2 * g * L)
        eg = np.exp(-g * L)
        z_minus = jkc - g
        decay = np.exp(z_minus * L)                              # e^{(jkc - g) L}
        phase_l = decay / eg                                     # e^{jkcL}
        if g.real > 0:
            j_plus = (decay - 1.0) / z_minus                     # e^{-gL} int e^{jkcx} e^{g(L-x)} dx
        else:  # a lossless line (measured constants): z_minus can vanish end-on
            j_plus = _safe_expint(z_minus, L)
        j_minus = (decay - e2) / (jkc + g)                       # e^{-gL} int e^{jkcx} e^{-g(L-x)} dx
        i_cosh, i_sinh = 0.5 * (j_plus + j_minus), 0.5 * (j_plus - j_minus)
        ch, sh = 0.5 * (1 + e2), 0.5 * (1 - e2)
        if self.needs_far_current:
            k_plus = (phase_l - eg) / (jkc + g)                  # e^{-gL} int e^{jkcx} e^{gx} dx
            k_minus = eg * j_plus                                # e^{-gL} int e^{jkcx} e^{-gx} dx
            k_cosh, k_sinh = 0.5 * (k_plus + k_minus), 0.5 * (k_plus - k_minus)
        out = {}
        for pol, amp, v_lead in (("v", a_v, lead), ("h", a_h, np.zeros_like(lead))):
            v_feed = v_lead
            v_far = v_lead * phase_l if self.has_far_lead else np.zeros_like(v_lead)
            if zr is None:
                denom = z0 * ch + zf * sh
                i_f = (amp * i_sinh + v_feed * sh) / denom
                i_r = None
            else:
                denom = z0 * (zf + zr) * ch + (z0**2 + zf * zr) * sh
                i_f = (amp * (z0 * i_cosh + zr * i_sinh) + v_feed * (z0 * ch + zr * sh) - v_far * z0 * eg) / denom
                i_r = None
                if self.needs_far_current:
                    i_r = (amp * (z0 * k_cosh + zf * k_sinh) + v_feed * z0 * eg - v_far * (z0 * ch + zf * sh)) / denom
            out[pol] = (i_f, i_r)
        return out, el

    def _excitation(self, k, el_c, s, dphi, r_v, r_h):
        """Field along the wire (per polarization) and the down-lead EMF, per unit incident field."""
        h = self.wire_height_m()
        up = np.exp(1j * k * h * s)
        down = np.conj(up)  # k h s is real
        a_h = -np.sin(dphi) * (up + r_h * down)
        a_v = -s * np.cos(dphi) * (up - r_v * down)
        if self.has_leads:
            # cos(Delta) * integral_0^h [e^{jkzs} + R_v e^{-jkzs}] dz; the two integrals are complex conjugates.
            lead_up = _safe_expint(1j * k * s, h)
            lead = np.cos(el_c) * (lead_up + r_v * np.conj(lead_up))
        else:
            lead = np.zeros_like(a_v)
        return a_v, a_h, lead

    def _port_response(self, freq_hz, currents, el):
        """Complex responses (vertical, horizontal) whose squared magnitudes are the realized partial gains."""
        lam = C_M_PER_S / freq_hz
        scale = np.sqrt(4 * np.pi / lam**2 * self.receiver_load_ohm(freq_hz) * ETA0_OHM)
        return tuple(np.where(above_horizon(el), scale * currents[pol][0], 0.0) for pol in ("v", "h"))

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        currents, el = self._currents(freq_hz, azimuth_rad, elevation_rad)
        return self._port_response(freq_hz, currents, el)

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        """Realized partial gains (vertical, horizontal) into the actual receiver load, linear."""
        ev, eh = self.complex_response(freq_hz, azimuth_rad, elevation_rad)
        return np.abs(ev) ** 2, np.abs(eh) ** 2

    def matched_partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        """Partial gains with a conjugate-matched receiver (realized gain over the mismatch factor)."""
        gv, gh = self.partial_gains(freq_hz, azimuth_rad, elevation_rad)
        m = self.mismatch(freq_hz)
        return gv / m, gh / m

    def describe(self):
        p = self.params
        return {**super().describe(), "length_m": self.length_m, "height_m": self.wire_height_m(),
                "bearing_deg": float(np.degrees(self.bearing_rad)), "wire_radius_m": p.radius_m,
                "ground": "perfect" if self.ground is None else self.ground.name}

    def design(self, freq_hz: float) -> dict:
        """Line constants, loads and matching at a frequency (SI units in the keys)."""
        ln = self.line(freq_hz)
        zin = self.feed_point_impedance(freq_hz)
        m = self.mismatch(freq_hz)
        term = self.termination_ohm(freq_hz)
        return {
            "line": ln.as_dict(),
            "termination_ohm": term,
            "feed_point_impedance_ohm": [float(zin.real), float(zin.imag)],
            "turns_ratio": self.turns_ratio(freq_hz),
            "impedance_ratio": self.turns_ratio(freq_hz) ** 2,
            "coax_ohm": self.params.coax,
            "mismatch_loss_db": float(-10 * np.log10(m)),
        }


@register("beverage", BeverageParams, "terminated long wire at a height, down-leads to ground rods at both ends")
class Beverage(LongWire):
    pass


@register("unterminated", UnterminatedParams, "long wire at a height with the far end open (receives both ways)")
class Unterminated(LongWire):
    terminated = False
    has_far_lead = False


@register("bog", BogParams, "insulated wire lying on (or just under) the ground, terminated")
class Bog(LongWire):
    has_leads = False
    has_far_lead = False

    def __init__(self, params: BogParams):
        super().__init__(params)
        if self.ground is None:
            raise ValueError("ground: a wire on the ground needs a real ground (conductivity and permittivity), "
                             "not 'perfect'")

    def wire_height_m(self) -> float:
        return self.params.height if self.params.depth == 0 else 0.0

    def _computed_line(self, freq_hz):
        p = self.params
        a = p.radius_m
        b = a + p.insulation_thickness
        if p.depth > 0:
            return lines.insulated_on_ground(freq_hz, radius_m=a, insulation_radius_m=b,
                                             insulation_permittivity=p.insulation_permittivity, ground=self.ground,
                                             depth_m=p.depth)
        return lines.insulated_on_ground(freq_hz, radius_m=a, insulation_radius_m=b,
                                         insulation_permittivity=p.insulation_permittivity, ground=self.ground,
                                         height_m=max(p.height, b))

    def check_frequency(self, freq_hz):
        lo, hi = FREQ_RANGE_HZ
        if not lo <= freq_hz <= hi:
            raise ValueError(f"frequency {freq_hz / 1e6:g} MHz lies outside the long-wire model's 0.1-30 MHz")

    def describe(self):
        return {**super().describe(), "depth_m": self.params.depth}


@register("two-wire", TwoWireParams, "terminated wire pair serving both directions (forward or reverse port)")
class TwoWire(LongWire):
    """Two-wire bidirectional long wire; see the module docstring."""

    @property
    def needs_far_current(self) -> bool:
        return self.params.port == "reverse"

    def _computed_line(self, freq_hz):
        p = self.params
        a_eq = np.sqrt(p.radius_m * p.spacing)
        return lines.overhead_wire(freq_hz, radius_m=a_eq, height_m=p.height, ground=self.ground)

    def termination_ohm(self, freq_hz):
        # The reflection transformer matches the common mode to the pair's differential line.
        return max(abs(self.line(freq_hz).z0) - self.params.far_ground, 0.0)

    def differential_loss(self, freq_hz) -> float:
        """Power ratio over the length for the differential mode returning to the feed [-]."""
        p = self.params
        z0d = 120.0 * np.arccosh(p.spacing / (2 * p.radius_m))
        alpha = np.real(lines.wire_internal_impedance(freq_hz, p.radius_m)) / z0d
        return float(np.exp(-2 * alpha * self.length_m))

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        currents, el = self._currents(freq_hz, azimuth_rad, elevation_rad)
        if self.params.port == "forward":
            return self._port_response(freq_hz, currents, el)
        lam = C_M_PER_S / freq_hz
        scale = np.sqrt(4 * np.pi / lam**2 * self.termination_ohm(freq_hz) * ETA0_OHM * self.differential_loss(freq_hz))
        return tuple(np.where(above_horizon(el), scale * currents[pol][1], 0.0) for pol in ("v", "h"))

    def mismatch(self, freq_hz):
        if self.params.port == "reverse":
            return 1.0  # the reflection and differential transformers are taken as matched
        return super().mismatch(freq_hz)

    def describe(self):
        return {**super().describe(), "spacing_m": self.params.spacing, "port": self.params.port}
