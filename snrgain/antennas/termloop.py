"""Small terminated loops in a vertical plane: flag, pennant, delta, diamond, with a resistor opposite the feed.

Model (snrgain's own)
---------------------
The loop is cut in two at the feed and at the termination: an upper and a
lower conductor, which form a short balanced line of length w (the loop's
width, from the feed side to the terminated side) closed at both ends by the
feed and the resistor.  This is the structure of a terminated long wire over
ground (snrgain.antennas.longwire) with the ground replaced by the lower
half, so the same closed-form line solution serves:

- line constants from the loop's own geometry, not from a two-wire line of
  its spacing: the series inductance is the whole loop's (Neumann's formula
  over the polygon, thin wire; for a rectangle it equals Grover's closed form,
  F. W. Grover, Inductance Calculations, 1946), the shunt capacitance the
  differential capacitance between the two halves, sides included, over the
  ground's quasi-static image (a thin-wire moment solution of the
  electrostatic problem); both spread over the width.  The sides carry a
  third of the inductance and a third of the capacitance of a flag, which a
  two-wire line of the loop's spacing leaves out;
- the series resistance is the whole loop's skin-effect loss spread over the
  width;
- distributed source: the difference of the fields along the top and bottom
  of the rectangle of the same width and area, centred at the polygon's
  centroid (incident plus Fresnel-reflected, both polarizations);
- end sources: the EMF of each side, the integral of E_z from the bottom to
  the top of that rectangle.  Their difference with the distributed source is
  Faraday's law (the magnetic response); their common part, the electric
  response, drives the charge the two halves hold, whose moment lies lower
  than the rectangle's spacing (the sides hold part of it): that part is
  scaled by the height of the charge moment over the spacing (about 0.8 for a
  flag);
- loads: the feed (transformer to the coax) at one side, the termination at
  the other.

With these three terms the feed impedance, forward gain, RDF and
front-to-back agree with NEC-2 (tests/nec/termloops.json); the two-wire line
of the spacing read the gain 1-1.5 dB low and put the deepest null near
1,100 ohm where NEC puts it near 800 ohm.

The shapes (``width`` along the bearing, ``loop_height`` from the lowest to
the highest point, the lowest point at ``height``):

- rectangle (flag): fed in the middle of one vertical side, terminated in the
  middle of the other;
- triangle (pennant): a vertical side fed in its middle, the apex opposite at
  mid height, terminated there;
- delta: a horizontal base, the apex above its middle; fed at one base corner,
  terminated at the other;
- diamond: vertices at mid height at both ends (fed at one, terminated at the
  other), the top and bottom vertices in the middle.

With the termination near the line's Z0 the sides' EMFs dominate: a wave from
the terminated side reaches the far side first, and its EMF, carried back
along the matched line, meets the near side's opposite EMF at the same
instant and cancels it.  So the cardioid's null points toward the
termination and its maximum toward the feed side: ``bearing`` is that
favoured direction (termination opposite it).  Shorted, the loop becomes a
figure-eight.  ``termination = "auto"`` picks the resistor of highest SNR
gain under the scenario's sky (``auto_for = "snr"``, the default; the RDF
where there is no sky), of highest RDF (``"rdf"``) or front-to-back
(``"front_to_back"``) toward the bearing at ``auto_elevation`` (20 deg).
"""

from __future__ import annotations

import functools
from typing import Literal

import numpy as np

from snrgain.antennas.base import Antenna, AntennaParams, TransformerFeed, register
from snrgain.antennas.longwire import (
    SkyTermination,
    best_resistor,
    field_along_wire,
    line_currents,
    line_integrals,
    plane_wave,
    port_response,
    termination_figure,
    vertical_emf,
)
from snrgain.fields import Bearing, GroundField, WireSize, make_ground, quantity
from snrgain.physics import lines
from snrgain.physics.ground import C_M_PER_S, EPS0_F_PER_M, ETA0_OHM, MU0_H_PER_M
from snrgain.physics.quadrature import gauss_legendre
from snrgain.units import bearing_deg

AUTO_TERMINATIONS_OHM = np.geomspace(100.0, 5000.0, 41)
"""Resistors tried by termination = "auto" [ohm]."""


class TerminatedLoopParams(WireSize, AntennaParams):
    family: Literal["terminated-loop"]
    shape: Literal["rectangle", "triangle", "delta", "diamond"] = "rectangle"
    width: quantity("length", ge=0.05, le=60.0)
    loop_height: quantity("length", ge=0.05, le=30.0)
    height: quantity("length", ge=0.0, le=30.0) = 1.0
    """Height of the loop's lowest point above the ground [m]."""
    bearing: Bearing = 0.0
    termination: quantity("resistance", ge=0.0, le=20000.0) | Literal["auto"] = "auto"
    auto_for: Literal["rdf", "front_to_back", "snr"] = "snr"
    """What termination = "auto" maximises: RDF or front-to-back toward the bearing at auto_elevation, or the SNR
    gain toward the target nearest the bearing under the site's noise (longwire.SkyTermination)."""
    auto_elevation: quantity("angle", ge=0.0, le=np.pi / 2) = np.radians(20.0)
    coax: Literal[50, 75] = 75
    turns_ratio: float | Literal["auto"] = "auto"
    ground: GroundField | None = None


_GL_X, _GL_W = np.polynomial.legendre.leggauss(8)
_GL3_X, _GL3_W = np.polynomial.legendre.leggauss(3)
NEAR_LENGTHS = 4.0
FEED_GAP_M = 0.02
"""Half the gap at the feed and at the termination where the loop's two halves part [m] (the constants barely
depend on it: 0.01 or 0.1 m move the capacitance by under 2 %)."""
_PIECE_STEP_M = 0.5
"""About one Gauss-Legendre point per this length along each straight piece of the loop for the transmit currents
(:meth:`TerminatedLoop.transmit_segments`; 4 to 24 a piece)."""
_SEGMENTS = 400
"""Segments over the whole loop for the static solutions (about 5 cm on a flag)."""
_FIT_AZIMUTHS_DEG = np.arange(0.0, 360.0, 30.0)
_FIT_ELEVATIONS_DEG = np.array([5.0, 20.0, 40.0, 60.0])
"""Directions at which the transmit currents' electric part is fitted to the pattern
(:meth:`TerminatedLoop.transmit_segments`): every 30 deg round, 5-60 deg up (every 15 deg at six elevations 3-60 deg
moved the near-source readings of tests/nec/nearcompact.json by 0.13 dB at most, at three times the cost)."""
_FIT_FLOOR = 1e-3
"""Directions whose response is under this fraction of the largest (60 dB down: the bottom of a null) are left out
of that fit."""


def loop_polygon(shape: str, width_m: float, loop_height_m: float, bottom_m: float):
    """The loop's outline as (upper, lower) paths in the (x, z) plane, each from the feed (x = 0) to the
    termination (x = width): the two halves of the loop.  See the module docstring for the shapes."""
    w, z1, z2 = width_m, bottom_m, bottom_m + loop_height_m
    zm = 0.5 * (z1 + z2)
    if shape == "rectangle":
        return [(0, zm), (0, z2), (w, z2), (w, zm)], [(0, zm), (0, z1), (w, z1), (w, zm)]
    if shape == "triangle":
        return [(0, zm), (0, z2), (w, zm)], [(0, zm), (0, z1), (w, zm)]
    if shape == "delta":
        return [(0, z1), (0.5 * w, z2), (w, z1)], [(0, z1), (w, z1)]
    if shape == "diamond":
        return [(0, zm), (0.5 * w, z2), (w, zm)], [(0, zm), (0.5 * w, z1), (w, zm)]
    raise ValueError(f"shape: one of rectangle, triangle, delta, diamond; got {shape!r}")


def _segments(path, step_m: float, gap_m: float = 0.0):
    """Centres, vectors and lengths of segments of at most ``step_m`` along a polyline, less ``gap_m`` at
    both ends."""
    pts = np.asarray(path, dtype=float)
    d = np.diff(pts, axis=0)
    seg_len = np.hypot(d[:, 0], d[:, 1])
    total = seg_len.sum()
    n = max(4, int(np.ceil((total - 2 * gap_m) / step_m)))
    s = np.linspace(gap_m, total - gap_m, n + 1)
    cum = np.concatenate([[0.0], np.cumsum(seg_len)])

    def at(v):
        i = np.clip(np.searchsorted(cum, v, side="right") - 1, 0, len(seg_len) - 1)
        return pts[i] + d[i] * ((v - cum[i]) / seg_len[i])[:, None]

    # split at the corners so every segment is straight
    s = np.unique(np.concatenate([s, cum[(cum > gap_m) & (cum < total - gap_m)]]))
    a, b = at(s[:-1]), at(s[1:])
    keep = np.hypot(*(b - a).T) > 1e-9
    a, b = a[keep], b[keep]
    return 0.5 * (a + b), b - a, np.hypot(*(b - a).T)


def _mean_inverse_distance(centres, vectors, radius_m, sources=None):
    """Mean over each source segment of 1 / distance from each centre (thin wire: the radius added in
    quadrature), by 8-point Gauss-Legendre within NEAR_LENGTHS segment lengths and 3-point beyond (where the
    3-point rule's error, of order 0.05 (length / 2 distance)^6, is under 2e-7 of the mean)."""
    src_c, src_v = (centres, vectors) if sources is None else sources
    cx, cz = centres[:, 0][:, None], centres[:, 1][:, None]
    lens = np.hypot(src_v[:, 0], src_v[:, 1])
    shape = (len(centres), len(src_c))
    out, dx, dz = np.zeros(shape), np.empty(shape), np.empty(shape)
    d2 = None
    for t, w in zip(_GL3_X, _GL3_W):  # in place: the same arithmetic as (0.5 w) / sqrt(dx^2 + dz^2 + a^2)
        px, pz = src_c[:, 0] + 0.5 * t * src_v[:, 0], src_c[:, 1] + 0.5 * t * src_v[:, 1]
        np.subtract(cx, px, out=dx)
        dx *= dx
        np.subtract(cz, pz, out=dz)
        dz *= dz
        dx += dz
        if t == 0.0:  # the middle point is the centre: its squared distance is the one the near test needs
            d2 = dx.copy()
        dx += radius_m**2
        np.sqrt(dx, out=dx)
        np.divide(0.5 * w, dx, out=dx)
        out += dx
    if d2 is None:  # pragma: no cover - the 3-point rule's middle point is 0
        d2 = (cx - src_c[:, 0]) ** 2 + (cz - src_c[:, 1]) ** 2
    if d2.min() >= (NEAR_LENGTHS * lens.max()) ** 2:  # no pair near (the image's matrix): no search
        return out
    ii, jj = np.nonzero(d2 < (NEAR_LENGTHS * lens[None, :]) ** 2)
    pts = src_c[jj][:, None, :] + (0.5 * _GL_X)[None, :, None] * src_v[jj][:, None, :]
    r = np.sqrt(np.sum((centres[ii][:, None, :] - pts) ** 2, axis=-1) + radius_m**2)
    out[ii, jj] = np.sum((0.5 * _GL_W) / r, axis=-1)
    return out


def loop_constants(upper, lower, radius_m: float, image: float = -1.0):
    """(L, C, h): the loop's inductance [H] (Neumann's formula), the differential capacitance between its two
    halves [F] and the height of their charge moment [m], over a ground whose static image has the factor
    ``image`` (-1 a perfect conductor).  Thin-wire moment solution: uniform charge (current) on each segment,
    potential matched at the centres (on the wire's surface).  The potential matrix is P0 + image P1 (the wire's
    own and its image's), so :func:`_loop_matrices` builds both once per outline and each ground only solves, once:
    the same outline over the same ground (every resistor tried, every ground of the spread) reuses the answer, and
    later runs read it back from the persistent cache (:func:`noisemodels.skycache.remembered`, kind "loopconst")."""
    return _loop_constants(_key(upper), _key(lower), float(radius_m), float(image))


LOOP_CONSTANTS_VERSION = 1
"""Part of the persistent cache's key of :func:`loop_constants`; bump it when what they hold changes in a way the key's
code digest (this module's and the ground module's sources) would not show."""


@functools.lru_cache(maxsize=256)
def _loop_constants(upper: tuple, lower: tuple, radius_m: float, image: float):
    from noisemodels import skycache
    from snrgain.physics import ground

    key = {
        "version": LOOP_CONSTANTS_VERSION,
        "code": skycache.code_digest(__file__, ground.__file__),
        "upper": upper,
        "lower": lower,
        "radius_m": radius_m,
        "image": image,
        "segments": _SEGMENTS,
    }
    kept = skycache.remembered(
        "loopconst", key, lambda: np.array(_solve_loop_constants(upper, lower, radius_m, image)), shapes=((3,),)
    )
    return float(kept[0]), float(kept[1]), float(kept[2])


def _solve_loop_constants(upper: tuple, lower: tuple, radius_m: float, image: float):
    """(L, C, h) of :func:`loop_constants`, solved."""
    inductance, p_own, p_image, heights, nu = _loop_matrices(upper, lower, radius_m)
    p = (p_own + image * p_image) / (4 * np.pi * EPS0_F_PER_M)
    n = len(heights)
    unit = np.zeros((n, 2))
    unit[:nu, 0] = 1.0
    unit[nu:, 1] = 1.0
    q = np.linalg.solve(p, unit)  # charges for unit potential on each half
    cap = np.array([[q[:nu, 0].sum(), q[:nu, 1].sum()], [q[nu:, 0].sum(), q[nu:, 1].sum()]])
    pm = np.linalg.inv(cap)
    c_diff = 1.0 / (pm[0, 0] + pm[1, 1] - pm[0, 1] - pm[1, 0])
    charge = q @ np.linalg.solve(cap, [1.0, -1.0])  # +1 C on the upper half, -1 C on the lower
    moment = float(np.sum(charge * heights))
    return inductance, float(c_diff), moment


def halves_capacitance(upper, lower, radius_m: float, image: float = -1.0) -> np.ndarray:
    """The Maxwell capacitance matrix [F] of the loop's two halves over a ground of static image factor ``image``:
    [[upper, upper-lower], [lower-upper, lower]], the charge on each for unit potential on each (the moment solution
    of :func:`loop_constants`; the common-mode capacitance to earth is the sum of its entries)."""
    _, p_own, p_image, heights, nu = _loop_matrices(_key(upper), _key(lower), float(radius_m))
    # The charges for unit potential on each half (two right-hand sides: the whole inverse is not needed)
    ones = np.zeros((len(heights), 2))
    ones[:nu, 0] = 1.0
    ones[nu:, 1] = 1.0
    q = np.linalg.solve((p_own + image * p_image) / (4 * np.pi * EPS0_F_PER_M), ones)
    return np.array([[q[:nu, 0].sum(), q[:nu, 1].sum()], [q[nu:, 0].sum(), q[nu:, 1].sum()]])


def _key(points) -> tuple:
    return tuple(tuple(float(x) for x in p) for p in points)


@functools.lru_cache(maxsize=64)
def _loop_matrices(upper, lower, radius_m: float):
    """(L [H], P0, P1, segment heights [m], segments on the upper half) of an outline: Neumann's inductance and the
    potential matrices of the wire and of its image (unscaled by 1 / (4 pi eps0)); the costly part of
    :func:`loop_constants`, the same for every ground."""
    perimeter = sum(float(np.sum(np.hypot(*np.diff(np.asarray(p, float), axis=0).T))) for p in (upper, lower))
    step = perimeter / _SEGMENTS
    cu, vu, lu = _segments(upper, step, FEED_GAP_M)
    cl, vl, ll = _segments(lower, step, FEED_GAP_M)
    c, v, lengths = np.vstack([cu, cl]), np.vstack([vu, vl]), np.concatenate([lu, ll])
    idx = np.arange(len(lengths))
    p_own = _mean_inverse_distance(c, v, radius_m)
    p_own[idx, idx] = 2 * np.arcsinh(lengths / (2 * radius_m)) / lengths  # exact mean of 1/r on its own centre
    p_image = _mean_inverse_distance(c, v, radius_m, (c * [1.0, -1.0], v * [1.0, -1.0]))
    # Neumann: the closed loop, upper path out and lower path back: L = mu0 / 4 pi sum_ij M_ij (t_i . t_j), M_ij the
    # mean inverse distance between segments i and j, t their vectors along the loop.  Those segments are the
    # halves' with the lower half reversed (its vectors negated), and a segment's mean inverse distance does not
    # depend on its direction, so M is P0 (its diagonal, the exact self term, times |t_i|^2 = l_i^2 is Neumann's
    # 2 l asinh(l / 2a) too) and the double sum is two quadratic forms of P0.
    along = v * np.where(idx < len(lu), 1.0, -1.0)[:, None]
    inductance = MU0_H_PER_M / (4 * np.pi) * float(np.sum(along * (p_own @ along)))
    return inductance, p_own, p_image, c[:, 1].copy(), len(lu)


@functools.lru_cache(maxsize=256)
def _loop_constants_cached(upper, lower, radius_m, image):
    """:func:`loop_constants` kept per outline (a layout or sweep moves and turns the same loop many times)."""
    return loop_constants(upper, lower, radius_m, image)


def static_image_factor(ground, freq_hz: float) -> float:
    """The quasi-static image factor -(eps_c - 1) / (eps_c + 1) of a ground (real part; -1 perfect)."""
    if ground is None:
        return -1.0
    eps = ground.complex_permittivity(freq_hz)
    return float(-np.real((eps - 1) / (eps + 1)))


def loop_line(freq_hz: float, *, inductance_per_m: float, capacitance_per_m: float, resistance_per_m: float):
    """The loop's two halves as a line: Z' = R' + j w L', Y' = j w C' (per metre of width)."""
    omega = 2 * np.pi * freq_hz
    z = complex(resistance_per_m, omega * inductance_per_m)
    y = complex(0.0, omega * capacitance_per_m)
    gamma = np.sqrt(z * y)
    return lines.LineConstants(float(freq_hz), z, y, complex(gamma), complex(np.sqrt(z / y)))


def _plane_wave_voltages(freq_hz: float, pts, dirs, currents, azimuth_rad, elevation_rad, ground):
    """(vertical, horizontal) voltages sum E . direction x current over segments, each (K, M), for K sets of currents
    (K, N) and unit plane waves from each (azimuth, elevation) [rad] (arrays of M), incident plus Fresnel-reflected,
    phase 0 at the origin: the field :func:`snrgain.model.placed.plane_wave_field` gives one direction at a time,
    all directions and sets at once."""
    from snrgain.physics.ground import reflection_coefficients

    k = 2 * np.pi * freq_hz / C_M_PER_S
    currents = np.atleast_2d(currents)
    ca, sa = np.cos(azimuth_rad), np.sin(azimuth_rad)
    ce, se = np.cos(elevation_rad), np.sin(elevation_rad)
    toward = np.column_stack([ce * sa, ce * ca, se])  # (M, 3) toward where each wave comes from
    mirror = toward * [1.0, 1.0, -1.0]
    r_v, r_h = reflection_coefficients(ground, elevation_rad, freq_hz)
    moment = (dirs[:, :, None] * currents.T[:, None, :]).reshape(len(dirs), -1)  # (N, 3 K)
    shape = (len(toward), 3, len(currents))
    direct = (np.exp(1j * k * (toward @ pts.T)) @ moment).reshape(shape)  # sum of e^{jk r.d} times the moments
    reflected = (np.exp(1j * k * (mirror @ pts.T)) @ moment).reshape(shape)
    p_v = np.column_stack([-se * sa, -se * ca, ce])[:, :, None]
    p_v_image = np.column_stack([se * sa, se * ca, ce])[:, :, None]
    p_h = np.column_stack([ca, -sa, np.zeros_like(ca)])[:, :, None]
    v = np.sum(p_v * direct, axis=1) + r_v[:, None] * np.sum(p_v_image * reflected, axis=1)
    h = np.sum(p_h * direct, axis=1) + r_h[:, None] * np.sum(p_h * reflected, axis=1)
    return v.T, h.T


@register(
    "terminated-loop",
    TerminatedLoopParams,
    "small loop in a vertical plane with a termination resistor (rectangle, triangle, diamond)",
)
class TerminatedLoop(SkyTermination, TransformerFeed, Antenna):
    """See the module docstring."""

    matched_words = "the loop's |Z0|"
    """What the resistor that matches the loop's line is, in words (a loop has no far ground)."""

    placeable = True
    auto_terminations_ohm = AUTO_TERMINATIONS_OHM

    def __init__(self, params: TerminatedLoopParams):
        super().__init__(params)
        self.ground = make_ground(params.ground)
        self.width_m = params.width
        self.upper, self.lower = loop_polygon(params.shape, params.width, params.loop_height, params.height)
        outline = np.asarray(self.upper + self.lower[::-1][1:-1], dtype=float)
        x, z = outline[:, 0], outline[:, 1]
        cross = x * np.roll(z, -1) - np.roll(x, -1) * z
        area = 0.5 * abs(cross.sum())
        centroid = float(np.sum((z + np.roll(z, -1)) * cross) / (6 * 0.5 * cross.sum()))
        self.area_m2 = area
        self.perimeter_m = float(np.sum(np.hypot(np.diff(x, append=x[0]), np.diff(z, append=z[0]))))
        self.spacing_m = area / params.width
        self.z_bottom = centroid - self.spacing_m / 2
        self.z_top = centroid + self.spacing_m / 2
        if self.spacing_m <= 4 * params.radius_m:
            raise ValueError("loop_height: the loop is too flat for its wire")
        self._lines: dict[float, lines.LineConstants] = {}
        self._statics: dict[float, tuple[float, float, float]] = {}
        self._auto_term: dict[float, float] = {}

    def statics(self, freq_hz: float) -> tuple[float, float, float]:
        """(L, C, h): inductance [H], differential capacitance [F] and charge-moment height [m] of the loop over
        its ground at a frequency (:func:`loop_constants`)."""
        image = static_image_factor(self.ground, freq_hz)
        key = round(image, 4)
        if key not in self._statics:
            outline = (tuple(map(tuple, self.upper)), tuple(map(tuple, self.lower)))
            self._statics[key] = _loop_constants_cached(*outline, float(self.params.radius_m), key)
        return self._statics[key]

    def electric_share(self, freq_hz: float) -> float:
        """The height of the charge moment over the equivalent rectangle's spacing [-] (module docstring)."""
        return self.statics(freq_hz)[2] / self.spacing_m

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
            inductance, capacitance, _ = self.statics(freq_hz)
            skin = np.real(lines.wire_internal_impedance(freq_hz, self.params.radius_m))
            self._lines[freq_hz] = loop_line(
                freq_hz,
                inductance_per_m=inductance / self.width_m,
                capacitance_per_m=capacitance / self.width_m,
                resistance_per_m=skin * self.perimeter_m / self.width_m,
            )
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
        """The resistor of highest RDF (or front-to-back) toward the bearing at auto_elevation
        (longwire.best_resistor: a coarse sweep, then a golden-section search)."""
        how = "rdf" if self.params.auto_for == "snr" else self.params.auto_for  # alone, "snr" falls back to RDF
        figure = termination_figure(
            self.termination_pattern(freq_hz), self.params.bearing, self.params.auto_elevation, how
        )
        return best_resistor(figure, self.auto_terminations_ohm)

    def termination_pattern(self, freq_hz: float):
        """pattern(az, el, r): the power pattern with a termination r [ohm] (see longwire.termination_figure); r may
        be an array of resistors (the result then (resistors, directions): every current formula is elementwise in
        the load, so one pass of the wave serves them all)."""

        def pattern(az, el, r):
            r = np.asarray(r, dtype=float)
            if r.ndim == 0:
                return self._gain(freq_hz, az, el, float(r))
            return self._gain(freq_hz, az, el, r.reshape(-1, 1))

        pattern.vectorised = True
        return pattern

    def matched_termination_ohm(self, freq_hz: float) -> float:
        """|Z0| of the loop's line, sqrt(L / C) of the whole loop [ohm] (the resistor that would match it)."""
        return float(abs(self.line(freq_hz).z0))

    def feed_point_impedance(self, freq_hz: float) -> complex:
        return self._feed_impedance(freq_hz, self.termination_ohm(freq_hz))

    def _feed_impedance(self, freq_hz: float, termination_ohm: float) -> complex:
        return lines.input_impedance(self.line(freq_hz), length_m=self.width_m, load_ohm=termination_ohm)

    def _load_ohm(self, freq_hz: float, termination_ohm: float) -> float:
        """The coax referred through the transformer, whose 'auto' ratio follows the termination tried [ohm]."""
        n = self.params.turns_ratio
        if n == "auto":  # (several resistors at once give several loads: termination_pattern)
            n = np.sqrt(np.abs(self._feed_impedance(freq_hz, termination_ohm)) / self.params.coax)
        n = np.asarray(n, dtype=float)
        return float(n) ** 2 * self.params.coax if n.ndim == 0 else n**2 * self.params.coax

    def _response(self, freq_hz, azimuth_rad, elevation_rad, termination_ohm: float):
        w = plane_wave(freq_hz, azimuth_rad, elevation_rad, bearing_rad=self.line_bearing_rad, ground=self.ground)
        top_v, top_h = field_along_wire(w, self.z_top)
        bottom_v, bottom_h = field_along_wire(w, self.z_bottom)
        side = vertical_emf(w, self.z_bottom, self.z_top)[w.inv]  # each side, bottom to top of the rectangle
        load = self._load_ohm(freq_hz, termination_ohm)
        line = self.line(freq_hz)
        integrals = line_integrals(w, line.gamma, self.width_m)  # formed once: the currents and the far side's phase
        # The sides' EMFs, up at the feed side and (with the wave's phase along the width, e^{jkcL}) at the far
        # side: their difference is the loop's magnetic response, kept whole; their common part, the electric
        # response, is scaled by the charge moment's height over the spacing.
        e_feed = side
        e_far = side * integrals[5]
        share = self.electric_share(freq_hz)
        mag, ele = 0.5 * (e_feed - e_far), 0.5 * share * (e_feed + e_far)
        (i_v, i_h), _ = line_currents(
            w,
            line=line,
            length_m=self.width_m,
            z_feed=load,
            z_far=termination_ohm,
            drive_v=-w.cos_dphi * (top_v - bottom_v)[w.inv],
            drive_h=-w.sin_dphi * (top_h - bottom_h)[w.inv],
            v_end=mag + ele,
            v_far=mag - ele,
            integrals=integrals,
        )
        return tuple(port_response(freq_hz, i, load_ohm=load, elevation_rad=w.el) for i in (i_v, i_h))

    def transmit_segments(self, freq_hz: float):
        """The loop's currents on segments (the hook :func:`snrgain.model.placed.received_amplitudes` reads a near
        source through): points (N, 3) [m east, north, up] from the loop's place (the feed side, in plan; heights
        above the soil), unit directions and current times length (N,).  Every shape alike.

        The line the model solves, carried along the loop's own two halves (:func:`loop_polygon`: each from the feed
        round its side of the outline to the termination) rather than along the equivalent rectangle.  By
        reciprocity the feed current a series EMF at s along the halves drives is the current the line carries there
        when driven at the feed, T(s) = [Z0 cosh g'(l - s) + R sinh g'(l - s)] / D, with the model's Z0, feed,
        termination R and D (module docstring) and its propagation constant spread over the halves' mean length l
        instead of the width w, g' = g w / l, each half's length mapped onto l (the line's inductance and
        capacitance are the whole loop's, sides included: the same electrical length, the current continuous round
        the corners as NEC-2's is); +T along the upper half and -T along the lower, on Gauss-Legendre points along
        each straight piece, times the port's scale (:func:`port_response`).

        That current is split into its mean over the line, T_m, the same all round the loop (the magnetic part: a
        closed current holds no charge) and the rest, T(s) - T_m (the part whose charges make the electric
        response); the rest is scaled by the complex factor that best makes the currents' plane-wave response the
        model's own complex response (:meth:`_electric_factor`).  Along the halves the line's charge balance is off
        by a few per cent: T matches NEC-2's currents to 1.6 % and 1.2 deg (pennant, delta), yet the rear null, a
        cancellation of the two parts, came 3.5-5.4 dB shallower than NEC-2's and a source behind read 4.6-8.3 dB
        low (the reading takes the pattern's value toward the source, placed._through_currents).  The factor is
        0.91-0.98 (flag 0.976, pennant 0.928 - 0.022j, delta 0.914, diamond 0.941 over loam at 1.83 MHz); it puts
        the charge moment within 0.5-3 % of the static solution's (:func:`loop_constants`), which the pattern's
        electric response uses.  Against NEC-2 (tests/nec/nearcompact.json) a near source 10-15 m from the loop's
        middle, 2-10 m up, vertical or horizontal, reads every shape within 1.55 dB (NEC-2's own currents through the
        same reading: within 0.3 dB in front and to the side, 1-2.2 dB low behind, the pattern's rear null); without
        the factor the rear cases missed by 4.6-8.3 dB, with the equivalent rectangle's currents (uniform sides, the
        former reading of the shapes but the flag) by up to 10.45 dB (the pennant)."""
        term = self.termination_ohm(freq_hz)
        load = self._load_ohm(freq_hz, term)
        key = (float(freq_hz), term, load, self.gain_key())  # what the loop is, less where it stands
        held = self.__dict__.setdefault("_halves_segments", {})
        if key in held:
            return held[key]
        if len(held) > 64:
            held.clear()
        line = self.line(freq_hz)
        g, z0, width = line.gamma, line.z0, self.width_m
        d = z0 * (load + term) * np.cosh(g * width) + (z0**2 + load * term) * np.sinh(g * width)
        t_mean = (z0 * np.sinh(g * width) + term * (np.cosh(g * width) - 1.0)) / (g * width * d)
        halves = [np.asarray(path, dtype=float) for path in (self.upper, self.lower)]
        lengths = [float(np.sum(np.hypot(*np.diff(h, axis=0).T))) for h in halves]
        mean = 0.5 * sum(lengths)
        g_path = g * width / mean
        lam = C_M_PER_S / freq_hz
        scale = np.sqrt(4 * np.pi / lam**2 * load * ETA0_OHM)
        b = self.line_bearing_rad
        u = np.array([np.sin(b), np.cos(b)])
        pts, dirs, closed, rest = [], [], [], []
        for path, total, sign in zip(halves, lengths, (1.0, -1.0)):
            walked = 0.0
            for p, q in zip(path[:-1], path[1:]):
                piece = float(np.hypot(*(q - p)))
                xq, wq = gauss_legendre(int(np.clip(np.ceil(piece / _PIECE_STEP_M), 4, 24)))
                t = 0.5 * (xq + 1.0)
                xz = p[None, :] + t[:, None] * (q - p)[None, :]
                s_path = (walked + t * piece) * mean / total  # along the line, the halves mapped onto its length
                t_s = (z0 * np.cosh(g_path * (mean - s_path)) + term * np.sinh(g_path * (mean - s_path))) / d
                pts.append(np.column_stack([xz[:, 0] * u[0], xz[:, 0] * u[1], xz[:, 1]]))
                v = (q - p) / piece
                dirs.append(np.tile([v[0] * u[0], v[0] * u[1], v[1]], (len(t), 1)))
                closed.append(np.full(len(t), sign * t_mean) * (0.5 * piece * wq))
                rest.append(sign * (t_s - t_mean) * (0.5 * piece * wq))
                walked += piece
        pts, dirs = np.vstack(pts), np.vstack(dirs)
        closed, rest = scale * np.concatenate(closed), scale * np.concatenate(rest)
        out = (pts, dirs, closed + self._electric_factor(freq_hz, pts, dirs, closed, rest) * rest)
        for v in out:
            v.flags.writeable = False
        held[key] = out
        return out

    def _electric_factor(self, freq_hz: float, pts, dirs, closed, rest) -> complex:
        """The complex factor k for which the currents closed + k rest (:meth:`transmit_segments`) give, for a unit
        plane wave, the model's complex response (:meth:`complex_response`) best: weighted least squares of the
        relative error, both polarizations, over _FIT_AZIMUTHS_DEG x _FIT_ELEVATIONS_DEG (directions more than 60 dB
        under the largest response left out).  The response is linear in k, so it is one division."""
        az = np.radians(np.tile(_FIT_AZIMUTHS_DEG, len(_FIT_ELEVATIONS_DEG)))
        el = np.radians(np.repeat(_FIT_ELEVATIONS_DEG, len(_FIT_AZIMUTHS_DEG)))
        # The loop's own response: beside a scatterer (snrgain.model.scatter.beside) the response holds the
        # scatterer's re-radiation too, which no current on the loop gives (and the kept segments are shared by
        # the loop's copies, so they must not depend on what stands beside it).
        rv, rh = getattr(self, "bare_antenna", self).complex_response(freq_hz, az, el)
        target = np.concatenate([rv, rh])
        v, h = _plane_wave_voltages(freq_hz, pts, dirs, np.vstack([closed, rest]), az, el, self.ground)
        a, b = np.concatenate([v[0], h[0]]), np.concatenate([v[1], h[1]])
        keep = np.abs(target) > _FIT_FLOOR * np.max(np.abs(target))
        w = 1.0 / np.abs(target[keep])
        a, b, target = a[keep] * w, b[keep] * w, target[keep] * w
        return complex(np.vdot(b, target - a) / np.vdot(b, b))

    def _gain(self, freq_hz, azimuth_rad, elevation_rad, termination_ohm):
        ev, eh = self._response(freq_hz, azimuth_rad, elevation_rad, termination_ohm)
        return ev.real**2 + ev.imag**2 + eh.real**2 + eh.imag**2

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        return self._response(freq_hz, azimuth_rad, elevation_rad, self.termination_ohm(freq_hz))

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        ev, eh = self.complex_response(freq_hz, azimuth_rad, elevation_rad)
        return ev.real**2 + ev.imag**2, eh.real**2 + eh.imag**2

    def gain_linear(self, freq_hz, azimuth_rad, elevation_rad):
        ev, eh = self.complex_response(freq_hz, azimuth_rad, elevation_rad)
        return ev.real**2 + ev.imag**2 + eh.real**2 + eh.imag**2

    def describe(self):
        p = self.params
        return {
            **super().describe(),
            "shape": p.shape,
            "width_m": p.width,
            "loop_height_m": p.loop_height,
            "height_m": p.height,
            "length_m": p.width,
            "bearing_deg": bearing_deg(p.bearing),
            "ground": "perfect" if self.ground is None else self.ground.name,
        }
