"""Long wires over and on the ground, from a transmission-line model.

Families: ``beverage`` (a terminated wire at a height, down-leads to ground
rods at both ends), ``unterminated`` (the same with the far end open and no
far down-lead), ``bog`` (an insulated wire lying on the ground, terminated,
no down-leads), ``two-wire`` (a terminated pair serving both directions).

Model (DESIGN.md, "Long wire over ground")
------------------------------------------
The wire and the earth form a lossy line (snrgain.physics.lines): Z0, gamma.  A plane
wave of unit field from compass bearing phi at elevation Delta has, at the
wire's height h, the field component along the wire (bearing b, unit vector
u from the feed toward the far end)

    E_x(x) = A exp(+j k x cos(Delta) cos(phi - b)),
    A_h = -sin(phi - b) [exp(+j k h s) + R_h exp(-j k h s)]          (horizontal polarization)
    A_v = -s cos(phi - b) [exp(+j k h s) - R_v exp(-j k h s)]        (vertical polarization)

with s = sin(Delta) and R_v, R_h the Fresnel coefficients (snrgain.physics.ground;
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
the far load (termination plus far ground rod; open for ``unterminated``),
each at the foot of its down-lead and seen from the wire up the lead: the
lead is a short line of the speed of light over its image (characteristic
impedance 60 (ln(4h/a) - 1), :func:`lead_impedance_ohm`), so it adds its
inductance and, with a high load at its foot, its capacitance's shunt (a 3 m
lead at 1.83 MHz: +60j ohm into a short, 500 ohm -> 500 + 4j ohm).  The
current in the receiver's load is the wire's feed current brought down the
feed lead.  The power delivered to the receiver, 0.5 |I|^2 Re(n^2 Z_coax), over the
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
up to 3 km, frequencies 0.1 to 30 MHz.  The down-leads are uniform lines
with the resistor and the transformer at their feet (the NEC decks' layout;
a resistor at the top of its lead sees only the lead's inductance, not
modelled apart); the ground's loss near a lead and the lines' end effects
(the wire's inductance and capacitance falling off near its ends, which
offset each other to first order) are left out.  Against NEC-2 over a
perfect ground (no junction to take out) the feed impedance of short
shorted wires is within 6 % (12-43 % with the leads neglected), of open
wires 10-60 m long within 3.4 % (22-40 %); against the
de-embedded references over 1-30 mS/m (tests/test_longwire.py)
front-to-back within 0.76 dB over 5-30 mS/m and 1.93 dB over 1 mS/m, feed
impedance within 9 % over 1 mS/m and 16 % over 5-30 mS/m.  NEC-2 (nec2c,
PyNEC) is the independent check in the tests.
"""

from __future__ import annotations

import math
from typing import Literal, NamedTuple

import numpy as np
from pydantic import Field, model_validator

from snrgain.antennas.base import Antenna, AntennaParams, TransformerFeed, above_horizon, register
from snrgain.antennas.geometry import direction_geometry
from snrgain.constants import FREQ_RANGE_HZ
from snrgain.fields import (
    Attenuation,
    Bearing,
    GroundConnection,
    GroundField,
    GroundRod,
    WireSize,
    make_ground,
    quantity,
)
from snrgain.memo import Memo
from snrgain.physics import lines
from snrgain.physics.ground import C_M_PER_S, ETA0_OHM, MU0_H_PER_M, reflection_coefficients, rod_resistance_ohm
from snrgain.records import record
from snrgain.units import bearing_deg, length_said

MAX_HEIGHT_WAVELENGTHS = 0.1


class WireParams(WireSize, AntennaParams):
    """Keys shared by the long-wire families."""

    length: quantity("length", ge=1.0, le=3000.0)
    bearing: Bearing = 0.0
    feed_ground: GroundConnection = 20.0
    """The feed end's connection to earth [ohm], or "rod" / { rod_length, rod_diameter } (Dwight's formula)."""
    coax: Literal[50, 75] = 75
    turns_ratio: float | Literal["auto"] = "auto"
    velocity_factor: float | None = Field(default=None, gt=0.0, le=1.0)
    attenuation: Attenuation | None = None
    """Measured attenuation [dB/100 m]."""
    z0: quantity("resistance", gt=0.0, le=2000.0) | None = None
    """Measured characteristic impedance [ohm]: "500 ohm" or a bare number of ohms."""
    ground: GroundField | None = None
    line_model: Literal["exact", "closed-form"] = "exact"
    """How the wire's line is solved: the full-wave modal equation (snrgain.physics.modal; for the BOG with its
    insulation as a coaxial layer, on the soil or buried) or the closed form (snrgain.physics.lines; faster, a few per
    cent off over poor ground at the higher bands; for the BOG snrgain's own shunt-path model)."""

    @model_validator(mode="after")
    def _wire(self):
        if isinstance(self.turns_ratio, float) and not 0.1 <= self.turns_ratio <= 20:
            raise ValueError(f"turns_ratio must be 'auto' or between 0.1 and 20; got {self.turns_ratio!r}")
        measured = [self.velocity_factor, self.attenuation, self.z0]
        if any(v is not None for v in measured) and not all(v is not None for v in measured):
            raise ValueError("measured line constants need all three: velocity_factor, attenuation (dB/100 m) and z0")
        return self


AutoFor = Literal["rdf", "front_to_back", "z0", "snr"]
AUTO_ELEVATION_RAD = np.radians(20.0)
"""The elevation toward which termination = "auto" rates resistors [rad] (the project's design elevation)."""
RESISTOR_SWEEP_OHM = np.geomspace(30.0, 5000.0, 45)
"""The coarse sweep of a best-resistor search [ohm] (12 % steps, then refined)."""


GOLDEN = (np.sqrt(5.0) - 1.0) / 2.0


def golden_max(f, lo: float, hi: float, *, xtol: float, maxiter: int = 40) -> tuple[float, float]:
    """(x, f(x)) of the largest f found by golden-section search on [lo, hi] (a unimodal f: J. Kiefer, "Sequential
    minimax search for a maximum", Proc. AMS 4 (1953) 502), until the bracket is under ``xtol`` or ``maxiter``
    evaluations; numpy only (scipy.optimize is a slow import for one scalar search)."""
    a, b = float(lo), float(hi)
    c, d = b - GOLDEN * (b - a), a + GOLDEN * (b - a)
    fc, fd = f(c), f(d)
    for _ in range(maxiter):
        if b - a <= xtol:
            break
        if fc >= fd:
            b, d, fd = d, c, fc
            c = b - GOLDEN * (b - a)
            fc = f(c)
        else:
            a, c, fc = c, d, fd
            d = a + GOLDEN * (b - a)
            fd = f(d)
    return (c, fc) if fc >= fd else (d, fd)


def best_resistor(figure, values_ohm=RESISTOR_SWEEP_OHM) -> float:
    """The resistor [ohm] that maximises ``figure(r)``: the best of a coarse sweep, refined by a golden-section
    search in log R between its neighbours (to about 0.5 %).  Where the figure still rises at an end of the sweep
    that end itself is returned (:func:`search_bound` tells it apart from an optimum)."""
    if getattr(figure, "vectorised", False):  # the whole sweep in one call
        values = [float(v) for v in figure(np.asarray(values_ohm, dtype=float))]
    else:
        values = [float(figure(r)) for r in values_ohm]
    i = int(np.argmax(values))
    lo, hi = values_ohm[max(i - 1, 0)], values_ohm[min(i + 1, len(values_ohm) - 1)]
    x, fx = golden_max(lambda x: float(figure(np.exp(x))), np.log(lo), np.log(hi), xtol=0.005)
    return float(np.exp(x)) if fx >= values[i] else float(values_ohm[i])


def search_bound(best_ohm: float, values_ohm) -> str | None:
    """ "low" ("high") when the best resistor a search found is the lowest (highest) it tried: the figure still
    rises beyond the range searched, so the resistor is the range's end, not an optimum; None for an optimum
    inside the range."""
    if best_ohm <= float(np.min(values_ohm)):
        return "low"
    if best_ohm >= float(np.max(values_ohm)):
        return "high"
    return None


def termination_figure(pattern, bearing_rad: float, elevation_rad: float, metric: str):
    """figure(r) for :func:`best_resistor`: RDF (gain toward the bearing over the mean over the whole sphere, 0
    below the horizon: the trade's scale, snrgain.model.snr; on a coarse HEALPix grid) or front-to-back at
    ``elevation_rad``, from ``pattern(az, el, r)``, a power pattern of any scale (one port: the feed load does not
    change its shape)."""
    from noisemodels.sphere import upper_hemisphere

    grid = upper_hemisphere(8)
    el = np.array([elevation_rad])
    fwd = np.array([bearing_rad])

    vectorised = getattr(pattern, "vectorised", False)  # pattern(az, el, r) takes an array of r

    def figure(r):
        r = np.asarray(r, dtype=float) if vectorised else float(r)
        f = pattern(fwd, el, r)[..., 0]
        if metric == "rdf":
            return f / (np.dot(pattern(grid.azimuth_rad, grid.elevation_rad, r), grid.solid_angle_sr) / (4 * np.pi))
        return f / np.maximum(pattern(fwd + np.pi, el, r)[..., 0], 1e-300)

    figure.vectorised = vectorised
    return figure


SKY_SWEEP = np.geomspace(0.15, 3.0, 12)
"""The resistors an "snr" termination tries under the sky, in units of |Z0| (then refined between neighbours)."""
SKY_REFINE = (6, 4)
"""Points of each finer grid between the best resistor's neighbours (log R), the second around the first's best."""
SKY_WIDEN = 4
"""Points added beyond an end of SKY_SWEEP where the statistic is best, out to the end of the family's own range."""


class SkyTermination:
    """Terminated antennas whose ``termination = "auto"`` with ``auto_for = "snr"`` is chosen under the scenario's
    own noise sky by the pipeline's steering stage (snrgain.model.steering), by the ranking's statistic toward the
    target nearest the bearing; without a sky (``snrgain wire``, a lone antenna) "snr" falls back to "rdf".

    The antenna set under the sky is a new one with the chosen resistor fixed, holding ``sky_termination``: the
    criterion, the target, and the resistors tried with their statistic, which the build sheet reads."""

    sky_order = 0
    sky_termination: dict | None = None
    auto_terminations_ohm = RESISTOR_SWEEP_OHM
    """The resistors [ohm] a search for termination = "auto" sweeps (its ends: the range searched)."""

    @property
    def uses_sky(self) -> bool:
        return getattr(self.params, "termination", None) == "auto" and getattr(self.params, "auto_for", None) == "snr"

    def termination_under_sky(self, freq_hz: float, score, target: str):
        """The antenna with the resistor of highest score [dB] fixed: a sweep over SKY_SWEEP x |Z0| and |Z0| itself,
        refined between the best point's neighbours by two finer grids in log R (SKY_REFINE points each, the second
        around the best of the first), each grid scored in one call of ``score(variants)`` (the score of each of a
        list of variants): three passes of the ranking's products in all, to about 2 % in R.  Where the sweep's
        best is one of its ends, one more pass first widens it out to that end of ``auto_terminations_ohm``
        (SKY_WIDEN points); a best still at an end is that end of the range (longwire.search_bound)."""
        from snrgain.antennas.base import variant

        matched = max(self.matched_termination_ohm(freq_hz), 1.0)
        tried: dict[float, float] = {}

        def run(values):
            values = [float(r) for r in values if float(r) not in tried]
            if values:
                tried.update(zip(values, (float(s) for s in score([variant(self, termination=r) for r in values]))))

        run(sorted({*(matched * SKY_SWEEP), matched}))
        values = sorted(tried)
        i = int(np.argmax([tried[r] for r in values]))
        floor, top = float(self.auto_terminations_ohm[0]), float(self.auto_terminations_ohm[-1])
        if i == 0 and values[0] > floor * 1.01:
            run(np.geomspace(floor, values[0], SKY_WIDEN + 1)[:-1])
        elif i == len(values) - 1 and values[-1] < top / 1.01:
            run(np.geomspace(values[-1], top, SKY_WIDEN + 1)[1:])
        values = sorted(tried)
        i = int(np.argmax([tried[r] for r in values]))
        lo, hi = np.log(values[max(i - 1, 0)]), np.log(values[min(i + 1, len(values) - 1)])
        for n in SKY_REFINE:
            step = (hi - lo) / (n + 1)
            run(np.exp(lo + step * np.arange(1, n + 1)))
            best = np.log(max(tried, key=tried.get))  # the next grid about it, within the range searched
            lo, hi = max(best - step, np.log(min(tried))), min(best + step, np.log(max(tried)))
        best = max(tried, key=tried.get)
        out = variant(self, termination=best)
        rs = sorted(tried)
        out.sky_termination = {
            "criterion": "snr",
            "target": target,
            "values_ohm": rs,
            "figure_db": [tried[r] for r in rs],
            "matched_ohm": float(self.matched_termination_ohm(freq_hz)),
        }
        return out


class BeverageParams(WireParams):
    family: Literal["beverage"]
    height: quantity("length", gt=0.05, le=30.0)
    termination: quantity("resistance", ge=0.0, le=5000.0) | Literal["auto"] = "auto"
    auto_for: AutoFor = "snr"
    """What termination = "auto" gives: the resistor of highest RDF or front-to-back along the wire at 20 deg;
    "z0", |Z0| less the far ground (the trade's rule for a flat SWR, common practice); or "snr", the resistor of
    highest SNR gain (the ranking's statistic) toward the target nearest the bearing under the site's noise."""
    far_ground: GroundConnection = 20.0


class UnterminatedParams(WireParams):
    family: Literal["unterminated"]
    height: quantity("length", gt=0.05, le=30.0)

    @model_validator(mode="before")
    @classmethod
    def _no_termination(cls, data):
        if isinstance(data, dict):
            for key in ("termination", "far_ground"):
                if key in data:
                    raise ValueError(
                        f"{key}: an unterminated wire has no far-end termination or ground rod; "
                        "use family 'beverage' for a terminated wire"
                    )
        return data


BOG_DEFAULT_HEIGHT_M = 0.02
"""A BOG's axis above the soil when neither height nor depth is given [m]: a wire laid in grass."""


class BogParams(WireParams):
    family: Literal["bog"]
    height: quantity("length", gt=0.0, le=0.3) | Literal["on soil"] | None = None
    """The wire's axis above the soil [m]: "on soil" for a wire resting on bare soil (the axis at the insulation's
    radius); not given, :data:`BOG_DEFAULT_HEIGHT_M` stands for a wire laid in grass, which holds it up (Bog's
    docstring).  A buried wire (``depth``) takes no height."""
    depth: quantity("length", ge=0.0, le=0.5) = 0.0
    insulation_thickness: quantity("length", ge=1e-5, le=0.02) = 0.8e-3
    insulation_permittivity: float = Field(default=3.0, ge=1.0, le=20.0)
    termination: quantity("resistance", ge=0.0, le=5000.0) | Literal["auto"] = "auto"
    auto_for: AutoFor = "snr"
    """As for a Beverage."""
    far_ground: GroundConnection = 20.0

    @model_validator(mode="after")
    def _buried(self):
        if self.depth > 0 and self.height is not None:
            raise ValueError(
                "give height (the axis above the soil, or 'on soil') or depth (the axis below the surface of a "
                f"buried wire), not both; got height {length_said(self.height)} and depth {length_said(self.depth)}"
            )
        b = self.radius_m + self.insulation_thickness
        if 0 < self.depth < b:
            raise ValueError(
                f"depth: a buried wire's axis must lie at least its insulation radius ({1000 * b:.2f} mm) below the "
                f"surface; got {1000 * self.depth:.2f} mm (give 0 for a wire on the surface)"
            )
        return self


class TwoWireParams(WireParams):
    family: Literal["two-wire"]
    height: quantity("length", gt=0.05, le=30.0)
    spacing: quantity("length", ge=0.01, le=2.0) = 0.3
    port: Literal["forward", "reverse"] = "forward"
    far_ground: GroundConnection = 20.0

    @model_validator(mode="after")
    def _spacing(self):
        if self.spacing <= 4 * self.radius_m:
            raise ValueError(f"spacing must exceed four wire radii ({4 * self.radius_m:g} m)")
        return self


def straight_wire_inductance_h(length_m: float, radius_m: float) -> float:
    """Partial self-inductance of a straight round wire [H] with its current on the surface (the high-frequency
    limit): the mutual inductance of two parallel filaments of that length a radius apart (F. W. Grover,
    "Inductance Calculations", 1946, the geometric-mean-distance method; E. B. Rosa, "The self and mutual
    inductances of linear conductors", Bull. Bureau of Standards 4 (1908) 301), (mu0 / 2 pi) [l asinh(l / a) -
    sqrt(l^2 + a^2) + a], which tends to (mu0 l / 2 pi) (ln(2 l / a) - 1) for l >> a (the forms from memory)."""
    length, a = float(length_m), float(radius_m)
    return MU0_H_PER_M / (2 * np.pi) * (length * np.arcsinh(length / a) - np.hypot(length, a) + a)


def lead_impedance_ohm(height_m: float, radius_m: float) -> float:
    """Characteristic impedance [ohm] of a vertical down-lead of height h and radius a over the ground taken as
    one uniform line, the lead and its image as one conductor: (eta0 / 2 pi) (ln(4h / a) - 1), about 60 (ln(4h / a)
    - 1) ohm (the surge impedance of a vertical conductor of C. A. Jordan, General Electric Review 37 (1934), as the
    lightning literature quotes it; from memory).  It is the partial inductance per metre that the lead and its
    image share, half of a 2h wire's (:func:`straight_wire_inductance_h`, Grover), times the speed of light: the
    same inductance, and the capacitance that goes with it on a line at the speed of light."""
    h = float(height_m)
    return ETA0_OHM / (2 * math.pi) * (math.log(4 * h / float(radius_m)) - 1.0)


def up_the_lead(z_bottom, freq_hz: float, height_m: float, z_lead: float):
    """The impedance [ohm] a lossless line of length ``height_m``, characteristic impedance ``z_lead`` and the
    speed of light presents at one end with ``z_bottom`` at the other (the standard transmission-line result),
    elementwise: a down-lead with its load (resistor or transformer, and ground rod) at its foot."""
    t = math.tan(2 * math.pi * float(freq_hz) / C_M_PER_S * float(height_m))
    z_lead = float(z_lead)
    if not isinstance(z_bottom, np.ndarray):  # one load: Python's complex arithmetic (a pattern's loads, per call)
        z_bottom = complex(z_bottom)
    return z_lead * (z_bottom + 1j * z_lead * t) / (z_lead + 1j * z_bottom * t)


def lead_current_ratio(z_bottom, freq_hz: float, height_m: float, z_lead: float) -> complex:
    """The current at the foot of that line over the current entering its top [-]: 1 / (cos kh + j (Z_b / Z_lead)
    sin kh) (the same line's voltage and current relations); 1 for h = 0."""
    kh = 2 * math.pi * float(freq_hz) / C_M_PER_S * float(height_m)
    return 1.0 / (math.cos(kh) + 1j * (complex(z_bottom) / z_lead) * math.sin(kh))


# -- pure kernels: the incident wave, the line's response ----------------------------------------------------


def safe_expint(z, length):
    """(exp(z L) - 1) / z, with the limit L (1 + z L / 2) where |z L| is tiny."""
    z = np.asarray(z, dtype=complex)
    zl = z * length
    out = np.expm1(zl)
    small = np.abs(zl) < 1e-8
    if np.any(small):
        z = np.where(small, 1.0, z)
        out = np.where(small, zl * (1 + 0.5 * zl), out)
    return out / z


@record
class PlaneWave:
    """A unit plane wave from (azimuth, elevation) seen by a wire of bearing b over a ground.

    What depends on the elevation alone is held once per distinct elevation (a pattern grid has few of them)
    and spread to the directions with ``inv``:

    el : elevation as asked, per direction [rad] (negative below the horizon)
    el_u : the distinct elevations, clipped to [0, pi/2] [rad]; inv : index into el_u of each direction
    s_u, c_u : sin and cos of el_u; r_v, r_h : Fresnel coefficients at el_u
    cos_dphi, sin_dphi : of azimuth - b, per direction; along : cos(el) cos(dphi), the wave's slowness along
        the wire, per direction; k : free-space wavenumber [1/m]
    """

    k: float
    el: np.ndarray
    el_u: np.ndarray
    inv: np.ndarray
    s_u: np.ndarray
    c_u: np.ndarray
    r_v: np.ndarray
    r_h: np.ndarray
    cos_dphi: np.ndarray
    sin_dphi: np.ndarray
    along: np.ndarray


def plane_wave(freq_hz: float, azimuth_rad, elevation_rad, *, bearing_rad: float, ground, geo=None) -> PlaneWave:
    """The incident-wave quantities every line-model family needs (see :class:`PlaneWave`); ``geo`` the directions'
    :func:`direction_geometry` where the caller has it already."""
    az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
    if geo is None:
        geo = direction_geometry(az, el)
    r_v, r_h = reflection_coefficients(ground, geo.el_u, freq_hz)
    cb, sb = np.cos(bearing_rad), np.sin(bearing_rad)
    cos_dphi = geo.cos_az * cb + geo.sin_az * sb  # cos(az - b)
    sin_dphi = geo.sin_az * cb - geo.cos_az * sb  # sin(az - b)
    return PlaneWave(
        2 * np.pi * freq_hz / C_M_PER_S,
        el,
        geo.el_u,
        geo.inv,
        geo.s_u,
        geo.c_u,
        r_v,
        r_h,
        cos_dphi,
        sin_dphi,
        geo.ce * cos_dphi,
    )


def field_along_wire(w: PlaneWave, height_m: float) -> tuple[np.ndarray, np.ndarray]:
    """Field along a horizontal wire at a height, incident plus reflected, as (f_v, f_h) per distinct elevation:
    the components along the wire are ``-cos(dphi) * f_v[inv]`` (vertical polarization) and
    ``-sin(dphi) * f_h[inv]`` (horizontal)."""
    up = np.exp(1j * w.k * height_m * w.s_u)
    down = np.conj(up)  # k h s is real
    return w.s_u * (up - w.r_v * down), up + w.r_h * down


def vertical_emf(w: PlaneWave, z_low_m: float, z_high_m: float) -> np.ndarray:
    """EMF of a vertical conductor from z_low to z_high, per distinct elevation:
    cos(Delta) integral [e^{jkzs} + R_v e^{-jkzs}] dz."""
    seg = safe_expint(1j * w.k * w.s_u, z_high_m)
    if z_low_m != 0.0:
        seg = seg - safe_expint(1j * w.k * w.s_u, z_low_m)
    return w.c_u * (seg + w.r_v * np.conj(seg))


def line_integrals(w: PlaneWave, g: complex, L: float, *, phase=None):
    """The line's integrals of the distributed EMF (module docstring), shared by :func:`line_currents` and
    :func:`feed_current_forms`: (jkc, e^{-2gL}, e^{-gL}, cosh and sinh scaled by e^{-gL}, e^{jkcL}, J+, J-).
    ``phase``: (jkc, e^{jkcL}) where the caller keeps them (they depend on the directions and L alone: a feed line's
    run over every ground, snrgain.physics.feedline.sky_phase)."""
    e2 = np.exp(-2 * g * L)
    eg = np.exp(-g * L)
    ch, sh = 0.5 * (1 + e2), 0.5 * (1 - e2)
    if phase is None:
        jkc = 1j * w.k * w.along
        phase_l = np.exp((1j * w.k * L) * w.along)  # e^{jkcL}: the one transcendental per direction
    else:
        jkc, phase_l = phase
    decay = phase_l * eg  # e^{(jkc - g) L}
    if g.real > 0:
        j_plus = (decay - 1.0) / (jkc - g)  # e^{-gL} int e^{jkcx} e^{g(L-x)} dx
    else:  # a lossless line (measured constants): jkc - g can vanish end-on
        j_plus = safe_expint(jkc - g, L)
    j_minus = (decay - e2) / (jkc + g)  # e^{-gL} int e^{jkcx} e^{-g(L-x)} dx
    return jkc, e2, eg, ch, sh, phase_l, j_plus, j_minus


def line_denominator(line: lines.LineConstants, length_m: float, z_feed: complex) -> tuple[complex, complex]:
    """(D0, D1) of :func:`feed_current_forms` (scaled by e^{-gL} like the numerators): the only part of the feed
    current that depends on the feed load, one number each."""
    g, z0 = line.gamma, line.z0
    e2 = np.exp(-2 * g * length_m)
    ch, sh = 0.5 * (1 + e2), 0.5 * (1 - e2)
    return z0 * z_feed * ch + z0**2 * sh, z0 * ch + z_feed * sh


def feed_current_forms(
    w: PlaneWave, *, line: lines.LineConstants, length_m: float, z_feed: complex, drive_v, drive_h, v_end
):
    """The feed currents of :func:`line_currents` as functions of the far load Z: I_F = (A + Z B) / (D0 + Z D1), per
    polarization, with A and B per direction and D0, D1 one number each (the line's denominator is linear in Z, and
    so are the numerators).  Returns ((A_v, B_v), (A_h, B_h), (D0, D1)), for a search over the termination that
    forms the wave once."""
    g, z0, L = line.gamma, line.z0, length_m
    _, _, eg, ch, sh, phase_l, j_plus, j_minus = line_integrals(w, g, L)
    d0, d1 = line_denominator(line, L, z_feed)
    q0, q1 = 0.5 * z0 * (j_plus + j_minus), 0.5 * (j_plus - j_minus)
    forms_h = (drive_h * q0, drive_h * q1)
    if np.isscalar(v_end) and v_end == 0:  # no lumped EMF at the ends (a wire without down-leads)
        return (drive_v * q0, drive_v * q1), forms_h, (d0, d1)
    e0, e1 = v_end * (z0 * ch - z0 * eg * phase_l), v_end * sh
    return (drive_v * q0 + e0, drive_v * q1 + e1), forms_h, (d0, d1)


def line_currents(
    w: PlaneWave,
    *,
    line: lines.LineConstants,
    length_m: float,
    z_feed: complex,
    z_far: complex | None,
    drive_v,
    drive_h,
    v_end,
    far_current: bool = False,
    v_far=None,
    integrals=None,
):
    """Feed and far-end currents [A] of a line driven by a plane wave (module docstring), both polarizations.

    The distributed EMF per metre is ``drive * exp(+j k along x)`` (``drive_v`` and ``drive_h`` per direction);
    the vertical polarization also drives lumped EMFs ``v_end`` at both ends (per direction; the same vertical
    EMF, counted around one loop: up at the feed, down at the far end, where it arrives with the wave's phase
    along the wire), or ``v_end`` at the feed and ``v_far`` at the far end where they differ (a loop's sides).
    ``z_far`` None is an open far end (no far lead).  The line's integrals (:func:`line_integrals`, or
    ``integrals`` where the caller has formed them) serve both polarizations.  Returns ((I_F v, I_F h), (I_R v,
    I_R h) or None).
    """
    g, z0, L = line.gamma, line.z0, length_m
    jkc, e2, eg, ch, sh, phase_l, j_plus, j_minus = line_integrals(w, g, L) if integrals is None else integrals
    if z_far is None:
        denom = z0 * ch + z_feed * sh
        q = (0.5 / denom) * (j_plus - j_minus)  # i_sinh / denom
        return (drive_v * q + v_end * (sh / denom), drive_h * q), None
    denom = z0 * (z_feed + z_far) * ch + (z0**2 + z_feed * z_far) * sh
    # (z0 i_cosh + z_far i_sinh) / denom, i_cosh and i_sinh the half sum and difference of j_plus and j_minus
    q = (0.5 * (z0 + z_far) / denom) * j_plus + (0.5 * (z0 - z_far) / denom) * j_minus
    if v_far is None:
        ends = v_end * ((z0 * ch + z_far * sh) / denom - (z0 * eg / denom) * phase_l)
    else:
        ends = v_end * ((z0 * ch + z_far * sh) / denom) + v_far * (z0 * eg / denom)
    i_f = (drive_v * q + ends, drive_h * q)
    if not far_current:
        return i_f, None
    k_plus = (phase_l - eg) / (jkc + g)  # e^{-gL} int e^{jkcx} e^{gx} dx
    k_minus = eg * j_plus  # e^{-gL} int e^{jkcx} e^{-gx} dx
    qr = (0.5 * (z0 + z_feed) / denom) * k_plus + (0.5 * (z0 - z_feed) / denom) * k_minus
    if v_far is None:
        ends_r = v_end * ((z0 * eg) / denom - ((z0 * ch + z_feed * sh) / denom) * phase_l)
    else:
        ends_r = v_end * ((z0 * eg) / denom) + v_far * ((z0 * ch + z_feed * sh) / denom)
    return i_f, (drive_v * qr + ends_r, drive_h * qr)


class WaveForms(NamedTuple):
    """What a plane wave drives on a wire, kept so that the feed current for any far load Z is a few products:
    the line's integrals J+ and J- (:func:`line_integrals`), e^{jkcL}, the distributed drives per direction, the
    leads' EMF and the line's constants.  :meth:`currents` gives A + Z B of :func:`feed_current_forms` (a zero feed
    load) in the same number of operations as the pattern with its resistor known."""

    j_plus: np.ndarray
    j_minus: np.ndarray
    phase_l: np.ndarray
    drive_v: np.ndarray
    drive_h: np.ndarray
    v_end: np.ndarray | float
    z0: complex
    ch: complex
    sh: complex
    eg: complex
    el: np.ndarray
    all_up: bool

    @classmethod
    def of(
        cls, w: PlaneWave, *, line: lines.LineConstants, length_m: float, drive_v, drive_h, v_end, all_up: bool
    ) -> WaveForms:
        _, _, eg, ch, sh, phase_l, j_plus, j_minus = line_integrals(w, line.gamma, length_m)
        return cls(j_plus, j_minus, phase_l, drive_v, drive_h, v_end, line.z0, ch, sh, eg, w.el, all_up)

    def currents(self, z_far) -> tuple[np.ndarray, np.ndarray]:
        """(vertical, horizontal) feed currents times the line's denominator D0 + Z D1 with far load ``z_far`` (a
        number, or an array broadcasting against the directions: several resistors at once)."""
        z0 = self.z0
        q = (0.5 * (z0 + z_far)) * self.j_plus + (0.5 * (z0 - z_far)) * self.j_minus
        i_v = self.drive_v * q
        if not (np.isscalar(self.v_end) and self.v_end == 0):  # the leads' EMF at both ends
            i_v += self.v_end * ((z0 * self.ch + z_far * self.sh) - (z0 * self.eg) * self.phase_l)
        return i_v, self.drive_h * q


def _power(e):
    """|e|^2 without the square root that abs() takes."""
    return e.real * e.real + e.imag * e.imag


def port_response(freq_hz: float, current, *, load_ohm: float, elevation_rad, power_factor: float = 1.0):
    """Complex response whose squared magnitude is the realized gain into a resistive load [-].

    Power 0.5 |I|^2 R into the load over the incident density |E|^2 / (2 eta0) is the effective area;
    gain = 4 pi A / lambda^2.  0 below the horizon.
    """
    lam = C_M_PER_S / freq_hz
    scale = np.sqrt(4 * np.pi / lam**2 * load_ohm * ETA0_OHM * power_factor)
    return np.where(above_horizon(elevation_rad), scale * current, 0.0)


_FORM_BYTES_KEY_SIZE = 512
"""Up to this many directions a wire's forms are kept by the directions' values, beyond by their geometry object."""
_FORMS = Memo(48)
"""A wire's response forms on a set of directions (:meth:`LongWire._response_forms`), by everything but its
resistor."""


class LongWire(SkyTermination, TransformerFeed, Antenna):
    """Shared machinery of the long-wire families: a line at a height, loads at both ends, down-leads."""

    matched_words = "|Z0| less the far ground"
    """What the resistor that matches the line is, in words (the build sheet, the warnings)."""

    placeable = True
    long_wire = True
    integrates_near_sources = True

    has_leads = True
    terminated = True

    def __init__(self, params: WireParams):
        super().__init__(params)
        self.ground = make_ground(params.ground)
        self.length_m = params.length
        self.bearing_rad = params.bearing
        self._cache: dict[float, lines.LineConstants] = {}
        self._auto_term: dict[tuple, float] = {}
        self._form_key: str | None = None
        self._lead_z: tuple | None = None
        self._loads: dict[tuple, object] = {}  # the end loads per (kind, frequency): a pattern asks for them per call

    # -- the line and its loads --------------------------------------------------------
    def _connection_ohm(self, value) -> float:
        if value == "rod":
            return rod_resistance_ohm(self.ground)
        if isinstance(value, GroundRod):
            return rod_resistance_ohm(self.ground, value.rod_length, value.rod_diameter)
        return float(value)

    @property
    def feed_rod_ohm(self) -> float:
        """Resistance of the feed end's ground connection [ohm] (in series with the feed load)."""
        return self._connection_ohm(self.params.feed_ground)

    @property
    def far_rod_ohm(self) -> float:
        """Resistance of the far end's ground connection [ohm] (in series with the termination); 0 if open."""
        return self._connection_ohm(getattr(self.params, "far_ground", 0.0))

    def lead_ohm(self) -> float | None:
        """Characteristic impedance of a down-lead [ohm] (:func:`lead_impedance_ohm`, the wire's height and radius);
        None for a wire without down-leads."""
        if self._lead_z is None:  # worked once: (the impedance or None,)
            leads = self.has_leads and self.wire_height_m() > 0
            self._lead_z = (lead_impedance_ohm(self.wire_height_m(), self.params.radius_m) if leads else None,)
        return self._lead_z[0]

    def up_lead(self, z_bottom, freq_hz: float):
        """What a load at the foot of a down-lead (resistor or transformer, with its ground rod) presents at the top,
        where the lead meets the wire [ohm] (:func:`up_the_lead`; elementwise); ``z_bottom`` itself without leads.
        The same transformation takes the wire's input impedance down the feed lead."""
        z_lead = self.lead_ohm()
        return z_bottom if z_lead is None else up_the_lead(z_bottom, freq_hz, self.wire_height_m(), z_lead)

    def lead_current_ratio(self, z_bottom, freq_hz: float) -> complex:
        """The current in a load ``z_bottom`` at the foot of a down-lead over the current the wire sends into the
        lead's top [-] (:func:`lead_current_ratio`); 1 without leads."""
        z_lead = self.lead_ohm()
        return 1.0 + 0j if z_lead is None else lead_current_ratio(z_bottom, freq_hz, self.wire_height_m(), z_lead)

    def _kept(self, kind: str, freq_hz: float, make):
        """A load of this antenna at a frequency, worked once (the antenna's parameters do not change)."""
        key = (kind, float(freq_hz))
        hit = self._loads.get(key)
        if hit is None and key not in self._loads:
            hit = self._loads[key] = make()
        return hit

    def feed_load_ohm(self, freq_hz: float) -> complex:
        """What the wire meets at its feed end [ohm]: the receiver's load through the transformer and the feed ground
        connection, in series at the foot of the feed down-lead, seen up the lead."""

        def make():
            return complex(self.up_lead(self.receiver_load_ohm(freq_hz) + self.feed_rod_ohm, freq_hz))

        return self._kept("feed", freq_hz, make)

    def feed_current_ratio(self, freq_hz: float) -> complex:
        """The current in the receiver's load over the wire's feed current (at the top of the feed lead) [-]."""

        def make():
            return complex(self.lead_current_ratio(self.receiver_load_ohm(freq_hz) + self.feed_rod_ohm, freq_hz))

        return self._kept("feed ratio", freq_hz, make)

    def wire_height_m(self) -> float:
        return self.params.height

    def line(self, freq_hz: float) -> lines.LineConstants:
        """The line's constants at a frequency (measured ones if given), cached."""
        hit = self._cache.get(freq_hz)
        if hit is None:
            p = self.params
            if p.velocity_factor is not None:
                hit = lines.measured_constants(
                    freq_hz, velocity_factor=p.velocity_factor, attenuation_db_per_100m=p.attenuation, z0_ohm=p.z0
                )
            else:
                hit = self.computed_line(freq_hz)
            self._cache[freq_hz] = hit
        return hit

    def computed_line(self, freq_hz: float, ground=None) -> lines.LineConstants:
        """The model's line constants at a frequency over this antenna's ground, or over ``ground`` if given
        (measured constants are ignored; nothing is cached)."""
        return lines.overhead_wire(
            freq_hz,
            radius_m=self.params.radius_m,
            height_m=self.wire_height_m(),
            ground=self.ground if ground is None else ground,
            model=self.params.line_model,
        )

    def termination_ohm(self, freq_hz: float) -> float | None:
        """Far-end resistor [ohm]: as given, or |Z0| less the far ground rod for 'auto'; None if open."""
        if not self.terminated:
            return None
        t = self.params.termination
        if t != "auto":
            return float(t)
        matched = max(abs(self.line(freq_hz).z0) - self.far_rod_ohm, 0.0)
        how = getattr(self.params, "auto_for", "z0")
        if how == "z0":
            return matched
        how = "rdf" if how == "snr" else how  # "snr" is chosen under the sky (SkyTermination); alone, best RDF
        key = (freq_hz, how)
        if key not in self._auto_term:
            if how == "rdf":
                figure = self.rdf_figure(freq_hz, self.bearing_rad, AUTO_ELEVATION_RAD)
            else:
                figure = termination_figure(
                    self.termination_pattern(freq_hz), self.bearing_rad, AUTO_ELEVATION_RAD, how
                )
            self._auto_term[key] = best_resistor(figure, self.auto_terminations_ohm)
        return self._auto_term[key]

    def termination_pattern(self, freq_hz: float):
        """pattern(az, el, r): the power pattern (any scale) with a far-end resistor r [ohm] (the feed load fixed:
        one port, its shape does not depend on it); None for an unterminated wire."""
        if not self.terminated:
            return None
        z_feed = self.up_lead(abs(self.line(freq_hz).z0) + self.feed_rod_ohm, freq_hz)
        d0, d1 = line_denominator(self.line(freq_hz), self.length_m, z_feed)
        far_rod = self.far_rod_ohm

        def pattern(az, el, r):
            forms = self._response_forms(freq_hz, az, el)  # the wave's part, kept per sky
            # several resistors at once: (resistors, directions); each with the far rod at the foot of the far lead
            z = self.up_lead(np.asarray(r, dtype=float)[..., None] + far_rod, freq_hz)
            i_v, i_h = forms.currents(z)
            p = (_power(i_v) + _power(i_h)) / _power(d0 + z * d1)
            return np.where(above_horizon(np.asarray(el, dtype=float)), p, 0.0)

        pattern.vectorised = True
        return pattern

    def rdf_figure(self, freq_hz: float, bearing_rad: float, elevation_rad: float):
        """:func:`termination_figure` of :meth:`termination_pattern` with metric "rdf", the same to rounding, each
        resistor in a few scalar operations: the feed currents are affine in the far load Z (I = A + Z B,
        :class:`WaveForms`), so a direction's power is |A|^2 + 2 Re(Z conj(A) B) + |Z|^2 |B|^2 and the sphere's
        mean is the same quadratic in Z with the three moments averaged once (the line's denominator |D0 + Z D1|^2
        is common to the forward direction and the mean, and cancels)."""
        from noisemodels.sphere import upper_hemisphere

        grid = upper_hemisphere(8)

        def moments(az, el, weights):
            f = self._response_forms(freq_hz, az, el)
            # q = A_q + Z B_q with the line's integrals; the leads' EMF adds to the vertical part
            a_q, b_q = (0.5 * f.z0) * (f.j_plus + f.j_minus), 0.5 * (f.j_plus - f.j_minus)
            a_v, b_v, a_h, b_h = f.drive_v * a_q, f.drive_v * b_q, f.drive_h * a_q, f.drive_h * b_q
            if not (np.isscalar(f.v_end) and f.v_end == 0):
                a_v = a_v + f.v_end * ((f.z0 * f.ch) - (f.z0 * f.eg) * f.phase_l)
                b_v = b_v + f.v_end * f.sh
            w = np.where(above_horizon(np.asarray(el, dtype=float)), weights, 0.0)
            return (
                float(np.dot(_power(a_v) + _power(a_h), w)),
                complex(np.dot(np.conj(a_v) * b_v + np.conj(a_h) * b_h, w)),
                float(np.dot(_power(b_v) + _power(b_h), w)),
            )

        fwd = moments(np.array([bearing_rad]), np.array([elevation_rad]), np.ones(1))
        mean = moments(grid.azimuth_rad, grid.elevation_rad, grid.solid_angle_sr / (4 * np.pi))
        far_rod = self.far_rod_ohm

        def figure(r):
            z = self.up_lead(np.asarray(r, dtype=float) + far_rod, freq_hz)
            zz = _power(np.asarray(z, dtype=complex))

            def p(m):
                return m[0] + 2.0 * np.real(z * m[1]) + zz * m[2]

            return p(fwd) / p(mean)

        figure.vectorised = True
        return figure

    def matched_termination_ohm(self, freq_hz: float) -> float | None:
        """|Z0| less the far ground rod [ohm]: the resistor that matches the line (None if open)."""
        if not self.terminated:
            return None
        return max(abs(self.line(freq_hz).z0) - self.far_rod_ohm, 0.0)

    def far_load_ohm(self, freq_hz: float):
        """What the wire meets at its far end [ohm]: the termination and the far ground connection in series at the
        foot of the far down-lead, seen up the lead; None if open."""

        def make():
            t = self.termination_ohm(freq_hz)
            return None if t is None else complex(self.up_lead(t + self.far_rod_ohm, freq_hz))

        return self._kept("far", freq_hz, make)

    def feed_point_impedance(self, freq_hz: float) -> complex:
        """Impedance the transformer's primary sees: the wire's input impedance down the feed lead, plus the feed
        ground rod [ohm]."""

        def make():
            z_line = lines.input_impedance(
                self.line(freq_hz), length_m=self.length_m, load_ohm=self.far_load_ohm(freq_hz)
            )
            return complex(self.up_lead(z_line, freq_hz)) + self.feed_rod_ohm

        return self._kept("feed point", freq_hz, make)

    def check_frequency(self, freq_hz):
        _check_band(freq_hz)
        h_wl = self.wire_height_m() * freq_hz / C_M_PER_S
        if h_wl > MAX_HEIGHT_WAVELENGTHS:
            raise ValueError(
                f"height: {length_said(self.wire_height_m())} is {h_wl:.3f} wavelengths at {freq_hz / 1e6:g} MHz; "
                f"the line model holds up to {MAX_HEIGHT_WAVELENGTHS} wavelengths"
            )

    # -- the response ---------------------------------------------------------------
    def _feed_currents(self, freq_hz, azimuth_rad, elevation_rad, z_feed, z_far):
        """Feed currents (vertical, horizontal) with given end loads, and the wave (a termination search's)."""
        w = plane_wave(freq_hz, azimuth_rad, elevation_rad, bearing_rad=self.bearing_rad, ground=self.ground)
        f_v, f_h = field_along_wire(w, self.wire_height_m())
        lead = vertical_emf(w, 0.0, self.wire_height_m())[w.inv] if self.has_leads else 0.0
        i_f, _ = line_currents(
            w,
            line=self.line(freq_hz),
            length_m=self.length_m,
            z_feed=z_feed,
            z_far=z_far,
            drive_v=w.cos_dphi * (-f_v)[w.inv],
            drive_h=w.sin_dphi * (-f_h)[w.inv],
            v_end=lead,
        )
        return i_f, w

    def currents(self, freq_hz, azimuth_rad, elevation_rad, *, far_current: bool = False):
        """The currents in the feed and far loads [A] per unit incident field, at the feet of the down-leads:
        {"v": (I_F, I_R), "h": (I_F, I_R)}, and the wave."""
        w = plane_wave(freq_hz, azimuth_rad, elevation_rad, bearing_rad=self.bearing_rad, ground=self.ground)
        f_v, f_h = field_along_wire(w, self.wire_height_m())
        lead = vertical_emf(w, 0.0, self.wire_height_m())[w.inv] if self.has_leads else 0.0
        i_f, i_r = line_currents(
            w,
            line=self.line(freq_hz),
            length_m=self.length_m,
            z_feed=self.feed_load_ohm(freq_hz),
            z_far=self.far_load_ohm(freq_hz),
            drive_v=w.cos_dphi * (-f_v)[w.inv],
            drive_h=w.sin_dphi * (-f_h)[w.inv],
            v_end=lead,
            far_current=far_current,
        )
        c_f = self.feed_current_ratio(freq_hz)
        c_r = (
            None if i_r is None else self.lead_current_ratio(self.termination_ohm(freq_hz) + self.far_rod_ohm, freq_hz)
        )
        return {pol: (c_f * i_f[n], None if i_r is None else c_r * i_r[n]) for n, pol in enumerate(("v", "h"))}, w

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        at = self._forms_at(freq_hz, azimuth_rad, elevation_rad)
        if at is None:
            load = self.receiver_load_ohm(freq_hz)
            currents, w = self.currents(freq_hz, azimuth_rad, elevation_rad)
            return tuple(
                port_response(freq_hz, currents[pol][0], load_ohm=load, elevation_rad=w.el) for pol in ("v", "h")
            )
        currents, den, load, el, _, shape = at
        return tuple(port_response(freq_hz, i / den, load_ohm=load, elevation_rad=el).reshape(shape) for i in currents)

    def _forms_at(self, freq_hz, azimuth_rad, elevation_rad):
        """((I_v, I_h) with the far load Z over D0 + Z D1 not yet divided, feed denominator D0 + Z D1 over the feed
        lead's current ratio, receiver load, elevations, every direction above the horizon, shape) of a terminated
        wire whose currents are the line model's (:meth:`_response_forms`); None for any other."""
        if not self.terminated or type(self).currents is not LongWire.currents:
            return None
        load = self.receiver_load_ohm(freq_hz)
        z_far = self.far_load_ohm(freq_hz)
        forms = self._response_forms(freq_hz, azimuth_rad, elevation_rad)
        d0, d1 = line_denominator(self.line(freq_hz), self.length_m, self.feed_load_ohm(freq_hz))
        shape = np.broadcast_shapes(np.shape(azimuth_rad), np.shape(elevation_rad))
        # the current in the receiver's load: the wire's feed current brought down the feed lead
        den = (d0 + z_far * d1) / self.feed_current_ratio(freq_hz)
        return forms.currents(z_far), den, load, forms.el, forms.all_up, shape

    def _response_forms(self, freq_hz, azimuth_rad, elevation_rad):
        """The wave's part of the feed currents on these directions (:class:`WaveForms`): for any far load Z and
        feed load they are ``currents(Z)`` / (D0 + Z D1) with :func:`line_denominator` (the A + Z B of
        :func:`feed_current_forms`), so they are kept for the same wire with another resistor or transformer (a
        termination searched under the sky tries many on the same sky; the result is the same to rounding as
        :meth:`currents`)."""
        az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
        az, el = np.ascontiguousarray(az), np.ascontiguousarray(el)
        if self._form_key is None:
            self._form_key = type(self).__name__ + self.params.model_dump_json(
                exclude={"position", "name", "termination", "feed_line"}
            )

        def make():
            w = plane_wave(freq_hz, az, el, bearing_rad=self.bearing_rad, ground=self.ground, geo=geo)
            f_v, f_h = field_along_wire(w, self.wire_height_m())
            lead = vertical_emf(w, 0.0, self.wire_height_m())[w.inv] if self.has_leads else 0.0
            forms = WaveForms.of(
                w,
                line=self.line(freq_hz),
                length_m=self.length_m,
                drive_v=w.cos_dphi * (-f_v)[w.inv],
                drive_h=w.sin_dphi * (-f_h)[w.inv],
                v_end=lead,
                all_up=geo.all_up if geo is not None else bool(np.all(el >= 0.0)),
            )
            return forms, geo

        if az.size <= _FORM_BYTES_KEY_SIZE:  # a few directions (a resistor's figure): their values are the key
            geo = None
            key = (self._form_key, float(freq_hz), az.shape, az.tobytes(), el.tobytes())
        else:
            # A grid by its geometry object (direction_geometry keeps one per set, checked value for value; hashing a
            # sky's values cost more than a vertical's pattern): the kept forms hold it, so no other object can take
            # its id while the key is kept.
            geo = direction_geometry(az, el)
            key = (self._form_key, float(freq_hz), id(geo))
        return _FORMS.get(key, make)[0]

    def _form_powers(self, freq_hz, azimuth_rad, elevation_rad):
        """(|I_v|^2, |I_h|^2) scaled to realized gain, from the response forms (a terminated wire whose currents
        are the line model's), or None: the powers straight from A + Z B, the feed denominator and the port's
        scale one number, without forming the complex responses."""
        if type(self).complex_response is not LongWire.complex_response:
            return None
        at = self._forms_at(freq_hz, azimuth_rad, elevation_rad)
        if at is None:
            return None
        currents, den, load, el, all_up, shape = at
        lam = C_M_PER_S / freq_hz
        scale2 = 4 * np.pi / lam**2 * load * ETA0_OHM / _power(den)
        if all_up:  # a grid of the upper hemisphere: no mask to apply
            return tuple((scale2 * _power(i)).reshape(shape) for i in currents)
        up = above_horizon(el)
        return tuple(np.where(up, scale2 * _power(i), 0.0).reshape(shape) for i in currents)

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        """Realized partial gains (vertical, horizontal) into the actual receiver load, linear."""
        powers = self._form_powers(freq_hz, azimuth_rad, elevation_rad)
        if powers is not None:
            return powers
        ev, eh = self.complex_response(freq_hz, azimuth_rad, elevation_rad)
        return _power(ev), _power(eh)

    def gain_linear(self, freq_hz, azimuth_rad, elevation_rad):
        gv, gh = self.partial_gains(freq_hz, azimuth_rad, elevation_rad)
        return gv + gh

    def matched_partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        """Partial gains with a conjugate-matched receiver (realized gain over the mismatch factor)."""
        gv, gh = self.partial_gains(freq_hz, azimuth_rad, elevation_rad)
        m = self.mismatch(freq_hz)
        return gv / m, gh / m

    def describe(self):
        p = self.params
        return {
            **super().describe(),
            "length_m": self.length_m,
            "height_m": self.wire_height_m(),
            "bearing_deg": bearing_deg(self.bearing_rad),
            "wire_radius_m": p.radius_m,
            "ground": "perfect" if self.ground is None else self.ground.name,
        }

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


def _check_band(freq_hz):
    """ValueError if ``freq_hz`` lies outside the band the long-wire line model covers."""
    lo, hi = FREQ_RANGE_HZ
    if not lo <= freq_hz <= hi:
        raise ValueError(
            f"frequency {freq_hz / 1e6:g} MHz lies outside the long-wire model's {lo / 1e6:g}-{hi / 1e6:g} MHz"
        )


@register("beverage", BeverageParams, "terminated long wire at a height, down-leads to ground rods at both ends")
class Beverage(LongWire):
    pass


@register("unterminated", UnterminatedParams, "long wire at a height with the far end open (receives both ways)")
class Unterminated(LongWire):
    terminated = False  # an open far end has no far down-lead


@register("bog", BogParams, "insulated wire lying on (or just under) the ground, terminated")
class Bog(LongWire):
    """An insulated wire on the ground.

    Where it lies decides its line: on bare wet soil (``height = "on soil"``, the axis at the insulation's
    radius) 1.6 mm wire in 0.8 mm PVC over moist loam has velocity factor 0.36-0.40 and |Z0| 190-205 ohm at
    1.83-3.6 MHz; held 2 cm up by grass (the default), 0.62-0.65 and 340 ohm; 5 cm up, 0.70-0.72 and 380 ohm
    (the exact mode, snrgain.physics.modal; PVC taken as eps_r 3.5).  Builders who lay insulated wire on lawns report
    0.65-0.77 (common practice), which this model reaches with the axis 3-10 cm up; the default of 2 cm sits at
    the low end of what grass holds a wire at.  Buried (``depth``, the axis below the surface) the same wire is
    slower and lossier still: VF 0.21 and 66 dB/100 m at 5 cm, |Z0| about 105 ohm (snrgain.physics.modal.wire_in_earth).
    Measure your wire (``snrgain calibrate``) and give its constants when you can.
    """

    has_leads = False

    def __init__(self, params: BogParams):
        super().__init__(params)
        if self.ground is None:
            raise ValueError(
                "ground: a wire on the ground needs a real ground (conductivity and permittivity), not 'perfect'"
            )

    def wire_height_m(self) -> float:
        p = self.params
        if p.depth > 0:
            return 0.0
        b = p.radius_m + p.insulation_thickness
        height = BOG_DEFAULT_HEIGHT_M if p.height is None else p.height
        return b if height == "on soil" else max(float(height), b)

    def computed_line(self, freq_hz, ground=None):
        p = self.params
        a = p.radius_m
        b = a + p.insulation_thickness
        where = {"depth_m": p.depth} if p.depth > 0 else {"height_m": self.wire_height_m()}
        return lines.insulated_on_ground(
            freq_hz,
            radius_m=a,
            insulation_radius_m=b,
            insulation_permittivity=p.insulation_permittivity,
            ground=self.ground if ground is None else ground,
            model=p.line_model,
            **where,
        )

    def check_frequency(self, freq_hz):
        _check_band(freq_hz)

    def describe(self):
        return {**super().describe(), "depth_m": self.params.depth}


@register("two-wire", TwoWireParams, "terminated wire pair serving both directions (forward or reverse port)")
class TwoWire(LongWire):
    """Two-wire bidirectional long wire; see the module docstring."""

    integrates_near_sources = False  # its reverse port runs through the reflection transformer: it hears at its feed

    def computed_line(self, freq_hz, ground=None):
        p = self.params
        a_eq = np.sqrt(p.radius_m * p.spacing)
        return lines.overhead_wire(
            freq_hz,
            radius_m=a_eq,
            height_m=p.height,
            ground=self.ground if ground is None else ground,
            model=p.line_model,
        )

    def termination_ohm(self, freq_hz):
        # The reflection transformer matches the common mode to the pair's differential line.
        return max(abs(self.line(freq_hz).z0) - self.far_rod_ohm, 0.0)

    def differential_loss(self, freq_hz) -> float:
        """Power ratio over the length for the differential mode returning to the feed [-]."""
        p = self.params
        z0d = 120.0 * np.arccosh(p.spacing / (2 * p.radius_m))
        alpha = np.real(lines.wire_internal_impedance(freq_hz, p.radius_m)) / z0d
        return float(np.exp(-2 * alpha * self.length_m))

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        if self.params.port == "forward":
            return super().complex_response(freq_hz, azimuth_rad, elevation_rad)
        currents, w = self.currents(freq_hz, azimuth_rad, elevation_rad, far_current=True)
        load = self.termination_ohm(freq_hz)
        loss = self.differential_loss(freq_hz)
        return tuple(
            port_response(freq_hz, currents[pol][1], load_ohm=load, elevation_rad=w.el, power_factor=loss)
            for pol in ("v", "h")
        )

    def mismatch(self, freq_hz):
        if self.params.port == "reverse":
            return 1.0  # the reflection and differential transformers are taken as matched
        return super().mismatch(freq_hz)

    def describe(self):
        return {**super().describe(), "spacing_m": self.params.spacing, "port": self.params.port}
