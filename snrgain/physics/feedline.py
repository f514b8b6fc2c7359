"""The feed line as an antenna: common-mode current on a coax shield and what of it reaches the receiver.

Model
-----
The outside of a coaxial cable's shield and the earth under it form a single-wire line over lossy
ground, the same line a Beverage is (DESIGN.md, "Long wire over ground"; snrgain.physics.lines: the wire-over-earth
series impedance with the complex penetration depth, Deri, Tevan, Semlyen and Castanheira, IEEE Trans. PAS-100
(1981), and the wire-over-image capacitance; the exact mode of snrgain.physics.modal where it settles). Skin
effect keeps the current on the outside of the braid apart from the signal inside at these frequencies (S.
Ramo, J. R. Whinnery and T. Van Duzer, "Fields and Waves in Communication Electronics", 3rd ed. (1994), chapter
5, cited from memory; the braid's transfer impedance is neglected: a braid of a few tens of mohm/m couples far less
than the ends do). So the shield is a wire of the jacket's outer radius (its field runs outside the jacket; the
braid's own radius for a buried cable, whose jacket is then the insulation of a wire in the soil,
snrgain.physics.lines.insulated_on_ground):

- at the antenna end (x = 0) it comes up from the transformer at the foot of the feed down-lead (a vertical
  lead of the run's height) and is loaded by Z_A = Z_iso + (Z_rod || Z_loop): the isolation in series
  (a common-mode choke's resistance; an isolation transformer's interwinding capacitance 1/(j w C); 0 for a
  shared ground), then the antenna's feed ground rod Z_rod in parallel with the antenna's own loop
  Z_loop = Z_in + Z_load (the antenna's line input impedance and the receiver's load through the transformer);
- at the station end (x = L) it comes down to the station's ground Z_S (a down-lead of the run's height);
- it is driven, like a Beverage, by the incident field along it and up and down its leads: a plane wave from
  the sky (snrgain.antennas.longwire's kernels, so the shield's sky pattern is a long wire's) or a placed
  source's near field sampled along the route (noisemodels.nearground, as snrgain.model.placed drives a long
  wire).

The common-mode current arriving at the antenna end, I_A, splits between the rod and the antenna's loop; the part
that runs through the receiver's load is the current divider I_load = I_A Z_rod / (Z_rod + Z_loop) (common-impedance
coupling: the rod's voltage I Z_rod is a series EMF in the antenna's loop; H. W. Ott, "Electromagnetic Compatibility
Engineering" (Wiley, 2009), the grounding chapter on common-impedance coupling and ground loops, cited from memory).
An isolation transformer's capacitance passes the current into the antenna's side, where it reaches earth the same
way; a choke only limits I_A. I_load, taken as the port response of :func:`snrgain.antennas.longwire.port_response`,
is the feed line's "gain" in the same units as the antenna's realized gain: what a unit plane wave (or a placed
source of unit strength) delivers to the receiver through the feed line.

I_A depends on Z_A only through Thevenin's theorem: I_A = V_oc / (Z_th + Z_A), with Z_th the shield line's input
impedance toward the station (its far end in Z_S) and V_oc the open-circuit voltage the field makes; V_oc and
Z_th do not depend on Z_A, so a choke scales every direction's pickup by the same |Z_th + Z_A0|^2 /
|Z_th + Z_A|^2 (:func:`choke_for_ratio` solves for the resistance that gives a wanted reduction).

A placed source drives the antenna and its feed line together: their currents in the load add as phasors
(:func:`field_current` keeps the antenna's sign).  Over the sky the feed line's noise adds to the antenna's in
power (a diffuse sky's directions are incoherent, and the two paths' relative phase turns from direction to
direction).  The signal the shield picks up toward a target is neglected (it reaches the load through the same
current divider; NEC gives it +0.1 to +0.6 dB).

Independent check (tests/nec/make_feedline.py: nec2c with the fbar() fix over eps_r 13, 5 mS/m at 1.83 MHz; a
200 m Beverage at 2 m, an RG-6 shield 60-150 m at 1 m to a 25 ohm station ground joining the feed lead 1 m up, a
small vertical source 10 m from the shield).  The shield's current at the antenna end is within 0.1-1.7 dB of
NEC's, and the phase of its share in the load within 11-37 deg.  The SNR the shield costs with the source alone,
model / NEC (dB): on a 100 ohm feed rod 4.9 / 7.0 (150 m) and -0.5 / +0.2 (60 m: the two paths nearly cancel); on
a 20 ohm rod 0.8 / 4.5, on a 50 ohm rod 1.8 / 5.4.  NEC's figure is not settled: it grows with the ground junction
the deck de-embeds at the feed lead's foot (DESIGN.md), 4.5, 7.1, 9.4 dB on the 20 ohm rod with the lead's bottom
metre in 1, 2, 4 segments (junction 123, 234, 496 ohm); carried back to no junction it reads 5.6, 1.5 and 1.1 dB
on the 100, 20 and 50 ohm rods, within 1 dB of the model.  A 5 kohm choke: 0.0 to -1.5 dB against NEC's -0.5 to
+0.5 dB.

Compact antennas (:class:`End`).  What the shield meets at the antenna, past its isolation, is the end's
common-mode impedance Z_cm and a current divider, the share of I_A through the receiver's load:

- a grounded feed (:func:`grounded_end`: a long wire's rod, a vertical's radial system, a phasing unit's ground):
  Z_cm = Z_rod || Z_loop and the divider Z_rod / (Z_rod + Z_loop), as above;
- a loop with no ground at its feed (:func:`floating_end`: a flag, a small loop): its two halves are conductors over
  the earth with a Maxwell capacitance matrix (charge per unit potential; the thin-wire moment solution of the
  electrostatic problem, R. F. Harrington, "Field Computation by Moment Methods" (1968), its first chapters, cited from
  memory), joined at the feed by the receiver's load and around the loop by its termination, inductance and wire
  loss.  The shield joins one half; the lumped circuit's nodal equations give Z_cm and the load's current.  A
  9 m by 4.5 m flag of 1 mm wire 1 m over 5 mS/m holds 171 pF to the earth (-j508 ohm at 1.83 MHz), so a choke
  must be several kohm before it changes Z_cm much.

Where the wiring fixes no sign between the two paths (a loop's terminals, a phasing unit's output), a placed
source's paths add in power (the mean over both ways of wiring; :attr:`End.coherent`).

Independent check of a compact case (tests/nec/make_feedline_compact.py: Debian's nec2c over the same ground; a 6 m
vertical on a 40 or 100 ohm ground, its RG-6 shield 60-150 m at 1 m to a 25 ohm station ground, a small vertical
source 10 m from the shield).  The SNR the shield costs with the source alone, model / NEC (dB): 5.5 / 8.1 (100 m,
40 ohm), 4.3 / -0.9 (60 m, 100 ohm: the paths partly cancel), 19.6 / 16.7 (150 m, the source near the station);
NEC's own spread (the ground junction split finer, 123 -> 234 ohm) moves its figures to 11.6, 2.6, 18.6 dB.  A 5
kohm choke: -1.0 to -0.2 dB against NEC's 0.4 to 0.6 dB.

Values from memory (not checked against a datasheet; snrgain's assumption): the cables' jacket and braid
diameters in :data:`CABLES`; an isolation transformer's interwinding capacitance of 20 pF
(:data:`INTERWINDING_F`; small two-winding transformers on ferrite cores, 5-30 pF); a choke's impedance taken as
a resistance (a ferrite choke near its self-resonance is mostly resistive: common practice).  The model neglects
the leads' own inductance, the shield's coupling to the antenna's own wire (it runs away from the antenna), and
any coupling at the station's end (the receiver's chassis grounded at the station ground carries the current to
earth without passing the input).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from snrgain.physics import lines
from snrgain.physics.ground import C_M_PER_S, ETA0_OHM, reflection_coefficients
from snrgain.physics.quadrature import even_samples, gauss_legendre
from snrgain.physics.reciprocity import LEAD_POINTS, graded_samples, pairs_rule, sample_steps
from snrgain.records import record
from snrgain.units import length_said

CABLES: dict[str, tuple[float, float]] = {
    # generic type: (braid outer diameter, jacket outer diameter) [m], recalled from typical catalogue values
    # (not checked against a datasheet: snrgain's assumption; a few per cent change Z0 by under 1 %)
    "RG-58": (3.6e-3, 4.95e-3),
    "RG-8X": (5.0e-3, 6.1e-3),
    "RG-213": (8.7e-3, 10.3e-3),
    "RG-59": (4.6e-3, 6.15e-3),
    "RG-6": (5.3e-3, 6.9e-3),
    "RG-11": (8.1e-3, 10.3e-3),
}
JACKET_PERMITTIVITY = 2.5
"""A PVC or polyethylene jacket's relative permittivity (from memory: PE 2.3, PVC 3-4 at HF)."""
INTERWINDING_F = 20e-12
"""An isolation transformer's interwinding capacitance [F] when none is given (from memory: 5-30 pF)."""
BURIED_DEPTH_M = 0.15
"""The depth of a buried feed line when none is given [m] (a spade's depth: common practice)."""
ISOLATIONS = ("shared-ground", "transformer")
LEAST_RUN_M = 1.0
"""The shortest run a feed line may have, from the antenna to the station [m]: a shorter one is refused."""
_LINES: dict = {}
"""Shield line constants already solved, by geometry, frequency and soil."""


@record
class FeedLine:
    """A feed line's run and its connections, SI.

    start_m : the antenna end (the antenna's feed point) [m east, m north]; end_m : the station entry
    height_m : the run's height above the soil [m], None when buried (``depth_m`` then)
    braid_radius_m, jacket_radius_m : the cable's [m]
    choke_ohm : a common-mode choke's resistance at the antenna end [ohm], None for none
    isolation : "shared-ground" (the shield joins the antenna's ground) or "transformer" (separate windings)
    interwinding_f : an isolation transformer's interwinding capacitance [F]
    station_ground_ohm : the station ground's resistance to earth [ohm]
    """

    start_m: tuple[float, float]
    end_m: tuple[float, float]
    height_m: float | None
    braid_radius_m: float
    jacket_radius_m: float
    station_ground_ohm: float
    choke_ohm: float | None = None
    isolation: str = "shared-ground"
    interwinding_f: float = INTERWINDING_F
    depth_m: float = BURIED_DEPTH_M

    def __post_init__(self):
        if self.isolation not in ISOLATIONS:
            raise ValueError(f"isolation must be one of {ISOLATIONS}; got {self.isolation!r}")
        if self.choke_ohm is not None and not self.choke_ohm > 0:
            raise ValueError(f"choke must be > 0 ohm (leave it out for none); got {self.choke_ohm!r}")
        if not self.station_ground_ohm > 0:
            raise ValueError(f"station_ground must be > 0 ohm; got {self.station_ground_ohm!r}")
        if not self.length_m >= LEAST_RUN_M:
            raise ValueError(
                f"a feed line runs at least {length_said(LEAST_RUN_M)} from the antenna to the station; "
                f"got {length_said(self.length_m)}"
            )

    @property
    def length_m(self) -> float:
        return float(np.hypot(self.end_m[0] - self.start_m[0], self.end_m[1] - self.start_m[1]))

    @property
    def bearing_rad(self) -> float:
        """Compass bearing from the antenna end toward the station [rad]."""
        return float(np.mod(np.arctan2(self.end_m[0] - self.start_m[0], self.end_m[1] - self.start_m[1]), 2 * np.pi))

    @property
    def buried(self) -> bool:
        return self.height_m is None

    @property
    def wire_height_m(self) -> float:
        """The height the field drives the shield at [m] (0: at the surface, for a buried run)."""
        return 0.0 if self.height_m is None else float(self.height_m)

    def with_choke(self, choke_ohm: float | None) -> FeedLine:
        from dataclasses import replace

        return replace(self, choke_ohm=choke_ohm)

    def isolation_ohm(self, freq_hz: float, *, choke: bool = True) -> complex:
        """The series impedance between the shield and the antenna's ground [ohm]: the choke (if ``choke``) and an
        isolation transformer's interwinding capacitance."""
        z = 0j
        if choke and self.choke_ohm is not None:
            z += self.choke_ohm
        if self.isolation == "transformer":
            z += 1.0 / (2j * np.pi * freq_hz * self.interwinding_f)
        return z

    def line(self, freq_hz: float, ground) -> lines.LineConstants:
        """The shield's common-mode line over ``ground`` (memoised: the exact mode takes a root search)."""
        key = (
            self.buried,
            self.height_m,
            self.depth_m,
            self.braid_radius_m,
            self.jacket_radius_m,
            float(freq_hz),
            None if ground is None else (ground.conductivity_s_per_m, ground.permittivity),
        )
        hit = _LINES.get(key)
        if hit is None:
            if len(_LINES) > 1024:
                _LINES.clear()
            hit = _LINES[key] = self._line(freq_hz, ground)
        return hit

    def _line(self, freq_hz: float, ground) -> lines.LineConstants:
        if self.buried:
            if ground is None:
                raise ValueError("a buried feed line needs a real ground (conductivity and permittivity)")
            return lines.insulated_on_ground(
                freq_hz,
                radius_m=self.braid_radius_m,
                insulation_radius_m=self.jacket_radius_m,
                insulation_permittivity=JACKET_PERMITTIVITY,
                ground=ground,
                depth_m=max(self.depth_m, self.jacket_radius_m),
            )
        return lines.overhead_wire(freq_hz, radius_m=self.jacket_radius_m, height_m=self.height_m, ground=ground)


@record
class End:
    """What the shield meets at the antenna end, past its isolation: ``z_cm`` the antenna end's common-mode
    impedance to earth [ohm], ``divider`` the share of the shield's current I_A that runs through the receiver's
    load (complex, with the sign of :func:`field_current`), ``load_ohm`` that load's resistance [ohm] (the port
    response's), and ``ground_ohm`` the ground at the feed the shield meets (None: none, a floating loop)."""

    z_cm: complex
    divider: complex
    load_ohm: float
    ground_ohm: float | None = None
    coherent: bool = True
    """Whether the wiring fixes the sign between the feed line's current in the load and the antenna's own (a
    grounded feed: yes; a loop's terminals or a phasing unit's output: either way round)."""


def replace_end(end: End, **changes) -> End:
    """``end`` with ``changes`` (dataclasses.replace)."""
    from dataclasses import replace

    return replace(end, **changes)


def grounded_end(*, rod_ohm: float, loop_ohm: complex, load_ohm: float) -> End:
    """A feed grounded through a rod (or a radial system) with the antenna's own loop across it (the long wires,
    a vertical, a phasing unit's output): Z_cm = Z_rod || Z_loop, the current divider Z_rod / (Z_rod + Z_loop)
    (module docstring)."""
    rod = complex(rod_ohm)
    par = rod * loop_ohm / (rod + loop_ohm) if rod != 0 else 0j
    return End(complex(par), complex(rod / (rod + loop_ohm)), float(load_ohm), float(rod_ohm))


def floating_end(freq_hz: float, capacitance_f, *, other_ohm: complex, load_ohm: complex) -> End:
    """A loop with no ground at its feed (a flag, a small loop): the shield joins one terminal of the loop's feed,
    the near half P; the loop's two halves are conductors over the earth with the Maxwell capacitance matrix
    ``capacitance_f`` [[C_PP, C_PQ], [C_QP, C_QQ]] [F] (near half first), joined at the feed by the receiver's
    load Z_L (``load_ohm``, complex) and around the loop by ``other_ohm`` (the termination and the loop's own
    inductance and loss; the loop's wire alone for an unterminated loop).  Nodal analysis of that lumped circuit
    with I_A injected into P: Y V = (I_A, 0) with Y = j w C + (1 / Z_pq) [[1, -1], [-1, 1]], Z_pq = Z_L || Z_other;
    Z_cm = V_P / I_A and the load's current (V_P - V_Q) / Z_L, taken with the sign of the grounded case's divider
    (from the shield's half toward the other through the load).  ``load_ohm``'s real part is the port's."""
    c = np.asarray(capacitance_f, dtype=complex)
    w = 2 * np.pi * freq_hz
    z_l, z_o = complex(load_ohm), complex(other_ohm)
    y_pq = 1.0 / z_l + 1.0 / z_o
    y = 1j * w * c + y_pq * np.array([[1.0, -1.0], [-1.0, 1.0]])
    v = np.linalg.solve(y, np.array([1.0, 0.0], dtype=complex))
    return End(complex(v[0]), complex((v[0] - v[1]) / z_l), float(np.real(z_l)), None, coherent=False)


@record
class Coupling:
    """The circuit at the antenna end at one frequency: the shield's line, Z_th (its input impedance toward the
    station), Z_A (the antenna end's load: the isolation in series with the end's Z_cm), the share of I_A through
    the receiver's load, and that load [ohm]."""

    line: lines.LineConstants
    z_th: complex
    z_end: complex
    divider: complex
    load_ohm: float

    @property
    def choke_factor(self) -> float:
        """|Z_th + Z_A|^2: the power of I_A goes as its inverse."""
        return float(abs(self.z_th + self.z_end) ** 2)


def coupling(fl: FeedLine, freq_hz: float, ground, *, rod_ohm: float, loop_ohm: complex, load_ohm: float) -> Coupling:
    """The antenna end's circuit (module docstring): ``rod_ohm`` the antenna's feed ground, ``loop_ohm`` its own
    loop (line input impedance plus receiver load), ``load_ohm`` the receiver's load through the transformer."""
    return coupling_at(fl, freq_hz, ground, grounded_end(rod_ohm=rod_ohm, loop_ohm=loop_ohm, load_ohm=load_ohm))


def coupling_at(fl: FeedLine, freq_hz: float, ground, end: End, *, z_th: complex | None = None) -> Coupling:
    """The antenna end's circuit for any :class:`End` (:func:`grounded_end`, :func:`floating_end`); ``z_th`` the
    route's own Z_th where the caller has it (:func:`thevenin_impedance`: the same for every end on the route)."""
    ln = fl.line(freq_hz, ground)
    if z_th is None:
        z_th = thevenin_impedance(fl, freq_hz, ground)
    z_end = fl.isolation_ohm(freq_hz) + end.z_cm
    return Coupling(ln, complex(z_th), complex(z_end), complex(end.divider), float(end.load_ohm))


def thevenin_impedance(fl: FeedLine, freq_hz: float, ground) -> complex:
    """Z_th: the shield line's input impedance toward the station (its far end in the station ground) [ohm]."""
    return complex(
        lines.input_impedance(fl.line(freq_hz, ground), length_m=fl.length_m, load_ohm=fl.station_ground_ohm)
    )


def choke_for_ratio(fl: FeedLine, c: Coupling, freq_hz: float, reduction: float) -> float:
    """The choke resistance [ohm] that lowers the feed line's pickup by the power ratio ``reduction`` (>= 1)
    from what ``c`` (worked with ``fl``'s own choke) gives: |Z_th + Z_A(R)|^2 = reduction |Z_th + Z_A|^2.  0 when
    no choke is needed (``reduction`` <= 1)."""
    if reduction <= 1.0:
        return 0.0
    base = c.z_th + c.z_end - (fl.choke_ohm or 0.0)  # without the choke
    want = reduction * c.choke_factor
    rest = want - base.imag**2
    r = -base.real + np.sqrt(max(rest, 0.0))
    return float(max(r, 0.0))


def sky_response(fl: FeedLine, c: Coupling, freq_hz: float, azimuth_rad, elevation_rad, ground):
    """(e_v, e_h): the complex port response into the receiver's load through the feed line, for unit plane waves
    of each polarization from (azimuth, elevation); |e|^2 in the units of a realized gain."""
    from snrgain.antennas.longwire import port_response

    w, currents = _sky_currents(fl, c, freq_hz, azimuth_rad, elevation_rad, ground)
    return tuple(port_response(freq_hz, -i * c.divider, load_ohm=c.load_ohm, elevation_rad=w.el) for i in currents)


def _sky_currents(
    fl: FeedLine, c: Coupling, freq_hz: float, azimuth_rad, elevation_rad, ground, phase=None, *, wave=None
):
    """(the plane wave, (I_v, I_h)): the shield's currents at the antenna's end for unit plane waves of each
    polarization, the run a line over the ground between its ends' loads, driven along its length and up its
    lead (none when buried); ``phase`` the run's :func:`sky_phase` where the caller keeps it, ``wave`` the plane
    wave where the caller has formed it."""
    from snrgain.antennas.longwire import field_along_wire, line_currents, line_integrals, plane_wave, vertical_emf

    w = wave
    if w is None:
        w = plane_wave(freq_hz, azimuth_rad, elevation_rad, bearing_rad=fl.bearing_rad, ground=ground)
    f_v, f_h = field_along_wire(w, fl.wire_height_m)
    lead = 0.0 if fl.buried else vertical_emf(w, 0.0, fl.wire_height_m)[w.inv]
    integrals = None if phase is None else line_integrals(w, c.line.gamma, fl.length_m, phase=phase)
    currents, _ = line_currents(
        w,
        line=c.line,
        length_m=fl.length_m,
        z_feed=c.z_end,
        z_far=fl.station_ground_ohm,
        drive_v=-w.cos_dphi * f_v[w.inv],
        drive_h=-w.sin_dphi * f_h[w.inv],
        v_end=lead,
        integrals=integrals,
    )
    return w, currents


def current_scale(ref: Coupling, c: Coupling) -> complex:
    """The factor that turns the current in the receiver's load worked with coupling ``ref`` into the one with
    ``c`` on the same route and ground: I_A = V_oc / (Z_th + Z_A) with V_oc and Z_th the route's alone (module
    docstring), so I(c) = I(ref) (Z_th + Z_A,ref) / (Z_th + Z_A) (divider / divider_ref); ``ref`` must have a
    nonzero divider (a unit one: :func:`unit_coupling`)."""
    return complex((ref.z_th + ref.z_end) / (c.z_th + c.z_end) * (c.divider / ref.divider))


def thevenin_scale(ref: Coupling, c: Coupling) -> complex:
    """:func:`current_scale` for a port response (:func:`sky_response`), whose load enters as its square root."""
    return current_scale(ref, c) * complex(np.sqrt(c.load_ohm / ref.load_ohm))


def unit_coupling(c: Coupling) -> Coupling:
    """``c`` with a unit divider and a 1 ohm load (what :func:`thevenin_scale` scales from)."""
    return Coupling(c.line, c.z_th, c.z_end, 1.0 + 0j, 1.0)


def sky_gain(
    fl: FeedLine, c: Coupling, freq_hz: float, azimuth_rad, elevation_rad, ground, *, phase=None, wave=None
) -> np.ndarray:
    """|e_v|^2 + |e_h|^2 of :func:`sky_response`: the feed line's "gain" into the receiver, 0 below the horizon.
    ``phase``: the run's :func:`sky_phase` on these directions where the caller keeps it (it does not depend on the
    ground or the line: a ground spread's nodes take one); ``wave``: the plane wave on these directions with the
    run's bearing at this frequency over any ground (snrgain.antennas.longwire.plane_wave), kept by the caller for
    what does not depend on the ground, its reflection coefficients worked here for ``ground``.  A lossy shield
    line (every line over real soil) is worked by :func:`_sky_gain_lossy`, the same currents in fewer array
    operations; a lossless one through :func:`_sky_currents`, their powers then taken without the complex responses
    (equal to rounding)."""
    from snrgain.antennas.longwire import above_horizon, plane_wave

    if wave is None:
        w = plane_wave(freq_hz, azimuth_rad, elevation_rad, bearing_rad=fl.bearing_rad, ground=ground)
    else:
        w = replace(wave, **dict(zip(("r_v", "r_h"), reflection_coefficients(ground, wave.el_u, freq_hz))))
    # the port response's |scale (-I divider)|^2 for both polarisations (snrgain.antennas.longwire.port_response)
    lam = C_M_PER_S / freq_hz
    scale2 = 4 * np.pi / lam**2 * c.load_ohm * ETA0_OHM * abs(c.divider) ** 2
    if c.line.gamma.real > 0:
        p = _sky_gain_lossy(fl, c, freq_hz, w, sky_phase(fl, freq_hz, w) if phase is None else phase)
        p *= scale2
        p[w.el < 0.0] = 0.0
        return p
    w, (i_v, i_h) = _sky_currents(fl, c, freq_hz, azimuth_rad, elevation_rad, ground, phase, wave=w)
    return np.where(above_horizon(w.el), scale2 * (i_v.real**2 + i_v.imag**2 + i_h.real**2 + i_h.imag**2), 0.0)


def _sky_gain_lossy(fl: FeedLine, c: Coupling, freq_hz: float, w, phase) -> np.ndarray:
    """|I_v|^2 + |I_h|^2 of :func:`_sky_currents` on a lossy line (Re gamma > 0), for the plane wave ``w`` and the
    run's :func:`sky_phase`: the line's two integrals (snrgain.antennas.longwire.line_integrals) over one division,
    a (d - 1) / (jkc - g) + b (d - e^{-2gL}) / (jkc + g) = (d A1 - A0) / ((jkc)^2 - g^2) with d = e^{(jkc - g) L},
    A1 = (a + b) jkc + (a - b) g, A0 = (a + b e^{-2gL}) jkc + (a - b e^{-2gL}) g; the horizontal polarisation's
    power from |q|^2 without its complex current; the same currents as snrgain.antennas.longwire.line_currents'
    to rounding."""
    from snrgain.antennas.longwire import field_along_wire, vertical_emf

    jkc, phase_l, *kept = phase
    if not kept:  # what of the sums depends on the directions alone (sky_terms), worked here
        kept = sky_terms(fl, freq_hz, w, phase=(jkc, phase_l))[2:]
    p1, j2, across, sin2 = kept
    g, z0, L = c.line.gamma, c.line.z0, fl.length_m
    z_a, z_s = c.z_end, fl.station_ground_ohm
    f_v, f_h = field_along_wire(w, fl.wire_height_m)
    e2, eg = np.exp(-2 * g * L), np.exp(-g * L)
    ch, sh = 0.5 * (1 + e2), 0.5 * (1 - e2)
    denom = z0 * (z_a + z_s) * ch + (z0**2 + z_a * z_s) * sh
    a, b = 0.5 * (z0 + z_s) / denom, 0.5 * (z0 - z_s) / denom
    # the distributed drive's factor (line_currents' q), per direction: d A1 - A0 from the kept jkc e^{jkcL}, e^{jkcL}
    # and jkc, over (jkc)^2 - g^2
    q = p1 * ((a + b) * eg)
    q += phase_l * ((a - b) * g * eg)
    q -= jkc * (a + b * e2)
    q -= (a - b * e2) * g
    # over (jkc)^2 - g^2 = -(X + jY), X = (kc)^2 + Re g^2 per direction and Y = Im g^2: times -(X - jY) / (X^2 + Y^2),
    # the reciprocal in real arithmetic (jkc is imaginary: (jkc)^2 = -(kc)^2, kept as j2's real part)
    g2 = g * g
    x = j2.real - g2.real  # -X
    r = x * x
    r += g2.imag * g2.imag
    np.reciprocal(r, out=r)
    inv = np.empty(len(x), dtype=complex)
    np.multiply(x, r, out=inv.real)
    np.multiply(r, g2.imag, out=inv.imag)
    q *= inv
    spread = _spreader(w.inv)
    i_v = spread(f_v)
    i_v *= across
    i_v *= q
    if not fl.buried:  # the leads' EMF, up at the antenna end and down at the station's
        ends = phase_l * (z0 * eg / denom)
        np.subtract((z0 * ch + z_s * sh) / denom, ends, out=ends)
        ends *= spread(vertical_emf(w, 0.0, fl.wire_height_m))
        i_v += ends
    p = _power(q)
    p *= spread(f_h.real**2 + f_h.imag**2)
    p *= sin2
    p += _power(i_v)
    return p


def _spreader(inv: np.ndarray):
    """values per distinct elevation -> values[inv] per direction: where ``inv`` runs in order (a sky's directions,
    ring by ring) a repeat of each value its count of times, which is the same array made with less work; kept for
    the last few ``inv`` (held, so their ids stay their own)."""
    held = _SPREADS.get(id(inv))
    if held is None or held[0] is not inv:
        counts = None
        if inv.ndim == 1 and inv.size and bool(np.all(inv[1:] >= inv[:-1])):
            counts = np.bincount(inv)
        if len(_SPREADS) >= 8:
            _SPREADS.clear()
        held = _SPREADS[id(inv)] = (inv, counts)
    counts = held[1]
    if counts is None:
        return lambda values: np.take(values, inv)
    return lambda values: np.repeat(values, counts) if len(values) == len(counts) else np.take(values, inv)


_SPREADS: dict = {}


def _power(z: np.ndarray) -> np.ndarray:
    """|z|^2 of a contiguous complex array, its parts squared as one real array."""
    v = z.view(np.float64)
    v = v * v
    return np.add(v[0::2], v[1::2])


def sky_phase(fl: FeedLine, freq_hz: float, wave) -> tuple[np.ndarray, np.ndarray]:
    """(j k c, e^{j k c L}) of the run on a plane wave's directions (``wave``: snrgain.antennas.longwire.plane_wave
    with the run's bearing; c the wave's slowness along the run): the one transcendental per direction of the
    line's integrals, the same over every ground and line (:func:`sky_gain` takes it kept)."""
    jkc = 1j * wave.k * wave.along
    return jkc, np.exp((1j * wave.k * fl.length_m) * wave.along)


def sky_terms(fl: FeedLine, freq_hz: float, wave, *, phase=None) -> tuple:
    """(j k c, e^{j k c L}: :func:`sky_phase` (or ``phase`` where the caller has it); then what of a lossy line's sums
    (:func:`_sky_gain_lossy`) depends on the directions alone: jkc e^{jkcL}, (jkc)^2, -cos(dphi) (complex) and
    sin(dphi)^2 per direction).  The same over every ground and cable: :func:`sky_gain` takes it as ``phase`` where
    the caller keeps it (a spread's grounds)."""
    jkc, phase_l = sky_phase(fl, freq_hz, wave) if phase is None else phase
    return jkc, phase_l, jkc * phase_l, jkc * jkc, -wave.cos_dphi + 0j, wave.sin_dphi * wave.sin_dphi


def route_samples(fl: FeedLine, freq_hz: float, closest_m: float, line_gamma=None, closest_at_m=None) -> np.ndarray:
    """Distances along the run [m]: even steps as many as :func:`snrgain.physics.reciprocity.sample_steps` gives
    for a source whose closest approach is ``closest_m`` (the shield's own line's ``line_gamma`` counted when given),
    at most 20,000, an even number of them; or, given where along the run that closest point is (``closest_at_m``),
    steps graded from it (:func:`snrgain.physics.reciprocity.graded_samples`: fine only near the source)."""
    if closest_at_m is not None:
        return graded_samples(fl.length_m, freq_hz, closest_m, closest_at_m, line_gamma, most=20_000)
    return even_samples(fl.length_m, sample_steps(fl.length_m, freq_hz, closest_m, line_gamma, most=20_000))


def route_points(fl: FeedLine, x) -> tuple[np.ndarray, np.ndarray]:
    """The points (N, 2) [m] and heights (N,) [m] :func:`route_emf` takes the field at: the run's samples ``x``,
    then (a raised run) :data:`LEAD_POINTS` Gauss-Legendre points up the antenna end's lead and the station's
    (:func:`runs_points` of one run)."""
    return runs_points([fl], [x])


def runs_points(fls, xs) -> tuple[np.ndarray, np.ndarray]:
    """The points [m] and heights [m] :func:`route_emf` takes the field at, for several runs (``xs`` their
    samples) concatenated in order: each run's samples, then (a raised run) :data:`LEAD_POINTS` Gauss-Legendre
    points up its antenna end's lead and the station's; (points (N, 2), heights (N,))."""
    t, _ = gauss_legendre(LEAD_POINTS)
    sizes = [len(x) + (0 if fl.buried else 2 * LEAD_POINTS) for fl, x in zip(fls, xs)]
    pts, heights = np.empty((sum(sizes), 2)), np.empty(sum(sizes))
    i = 0
    for fl, x, size in zip(fls, xs, sizes):
        b = fl.bearing_rad
        n = len(x)
        run = pts[i : i + n]
        np.multiply(np.asarray(x, dtype=float)[:, None], np.array([np.sin(b), np.cos(b)])[None, :], out=run)
        run += np.asarray(fl.start_m, dtype=float)[None, :]
        heights[i : i + n] = fl.wire_height_m
        if not fl.buried:
            zs = (t + 1) * fl.wire_height_m / 2
            pts[i + n : i + n + LEAD_POINTS] = run[0]
            pts[i + n + LEAD_POINTS : i + size] = run[-1]
            heights[i + n : i + n + LEAD_POINTS] = zs
            heights[i + n + LEAD_POINTS : i + size] = zs
        i += size
    return pts, heights


def runs_emf_from(fls, xs, e) -> list:
    """:func:`route_emf` of several runs from the field ``e`` (N, 3) already worked at :func:`runs_points`' points:
    [(x, the EMF per metre along the run, the EMFs up its two leads)] of each."""
    _, wq = gauss_legendre(LEAD_POINTS)
    out = []
    i = 0
    for fl, x in zip(fls, xs):
        b = fl.bearing_rad
        n = len(x)
        emf = e[i : i + n, 0] * np.sin(b) + e[i : i + n, 1] * np.cos(b)
        i += n
        if fl.buried:
            out.append((x, emf, np.zeros(2, dtype=complex)))
            continue
        lead = (e[i : i + 2 * LEAD_POINTS, 2].reshape(2, LEAD_POINTS) @ wq) * fl.wire_height_m / 2
        i += 2 * LEAD_POINTS
        out.append((x, emf, lead))
    return out


def run_emf_grounds(fl: FeedLine, x, e) -> tuple[np.ndarray, np.ndarray]:
    """:func:`runs_emf_from` of one run over several grounds at once: (the EMF per metre along it (G, len(x)), the
    EMFs up its two leads (G, 2)) from each ground's field ``e`` (G, N, 3) at :func:`route_points` of the samples
    ``x`` (each ground's values those :func:`route_emf_from` gives)."""
    b = fl.bearing_rad
    n = len(x)
    emf = e[:, :n, 0] * np.sin(b) + e[:, :n, 1] * np.cos(b)
    if fl.buried:
        return emf, np.zeros((len(e), 2), dtype=complex)
    _, wq = gauss_legendre(LEAD_POINTS)
    lead = (e[:, n : n + 2 * LEAD_POINTS, 2].reshape(len(e), 2, LEAD_POINTS) @ wq) * fl.wire_height_m / 2
    return emf, lead


def route_emf(fl: FeedLine, freq_hz: float, field, *, closest_m: float, line_gamma=None, closest_at_m=None):
    """(x, the EMF per metre along the run at x, the EMF up the antenna end's lead and down the station's) of an
    incident field ``field(points (N, 2), heights (N,)) -> (N, 3)`` [east, north, up] (a placed source's,
    :func:`snrgain.model.placed.field_vector`), on :func:`route_samples`; what does not depend on the loads.  The
    run and both leads in one call of the field (:func:`route_points`)."""
    x = route_samples(fl, freq_hz, closest_m, line_gamma, closest_at_m)
    return route_emf_from(fl, x, field(*route_points(fl, x)))


def route_emf_from(fl: FeedLine, x, e):
    """:func:`route_emf` from the field ``e`` (N, 3) already worked at :func:`route_points` of the samples ``x``
    (:func:`runs_emf_from` of one run)."""
    return runs_emf_from([fl], [x], e)[0]


def emf_current(fl: FeedLine, c: Coupling, x, emf, lead) -> complex:
    """The current [A] through the receiver's load from :func:`route_emf`'s EMFs (:func:`field_current`)."""
    L, g, z0 = fl.length_m, c.line.gamma, c.line.z0
    z_a, z_s = c.z_end, fl.station_ground_ohm
    d = z0 * (z_a + z_s) * np.cosh(g * L) + (z0**2 + z_a * z_s) * np.sinh(g * L)
    transfer = (z0 * np.cosh(g * (L - x)) + z_s * np.sinh(g * (L - x))) / d
    current = (emf * transfer) @ pairs_rule(x)
    current = current + lead[0] * transfer[0] - lead[1] * transfer[-1]  # up at the antenna, down at the station
    return complex(-current * c.divider)


def emf_currents(fls, cs, emfs) -> np.ndarray:
    """:func:`emf_current` of several runs at once (K,): ``fls`` their FeedLines, ``cs`` their couplings, ``emfs``
    their :func:`route_emf` (x, EMF, lead EMFs); every run's samples in one pass of the transfer function (its
    hyperbolic functions from one complex exponential per sample), each run's sum its own (equal to rounding)."""
    k = len(fls)
    if k == 1:
        return np.array([emf_current(fls[0], cs[0], *emfs[0])])
    sizes = np.array([len(x) for x, _, _ in emfs])
    starts = np.concatenate([[0], np.cumsum(sizes)[:-1]])
    length = np.array([fl.length_m for fl in fls])
    g = np.array([c.line.gamma for c in cs], dtype=complex)
    z0 = np.array([c.line.z0 for c in cs], dtype=complex)
    z_a = np.array([c.z_end for c in cs], dtype=complex)
    z_s = np.array([fl.station_ground_ohm for fl in fls], dtype=complex)
    d = z0 * (z_a + z_s) * np.cosh(g * length) + (z0**2 + z_a * z_s) * np.sinh(g * length)
    run = np.repeat(np.arange(k), sizes)
    arg = g[run] * (length[run] - np.concatenate([x for x, _, _ in emfs]))
    # (z0 cosh(a) + z_s sinh(a)) / d as ((z0 + z_s) e^a + (z0 - z_s) e^-a) / 2d: one exponential per sample
    grow = np.exp(arg)
    transfer = (0.5 * (z0 + z_s) / d)[run] * grow
    transfer += (0.5 * (z0 - z_s) / d)[run] / grow
    weights = np.concatenate([pairs_rule(x) for x, _, _ in emfs])
    current = np.add.reduceat(np.concatenate([e for _, e, _ in emfs]) * transfer * weights, starts)
    leads = np.array([lead for _, _, lead in emfs], dtype=complex).reshape(k, 2)
    current = current + leads[:, 0] * transfer[starts] - leads[:, 1] * transfer[starts + sizes - 1]
    return -current * np.array([c.divider for c in cs], dtype=complex)


def emf_currents_grounds(fl: FeedLine, cs, x, emf, lead) -> np.ndarray:
    """:func:`emf_current` of one run over several grounds (G,): ``cs`` its coupling on each (each its own line),
    the same samples ``x``, ``emf`` (G, len(x)) and ``lead`` (G, 2) each ground's EMFs (:func:`run_emf_grounds`);
    the transfer function over the grounds in one array expression, from one complex exponential per sample (as
    :func:`emf_currents`; equal to rounding)."""
    L, z_s = fl.length_m, fl.station_ground_ohm
    g = np.array([c.line.gamma for c in cs], dtype=complex)[:, None]
    z0 = np.array([c.line.z0 for c in cs], dtype=complex)[:, None]
    z_a = np.array([c.z_end for c in cs], dtype=complex)[:, None]
    d = z0 * (z_a + z_s) * np.cosh(g * L) + (z0**2 + z_a * z_s) * np.sinh(g * L)
    grow = np.exp(g * (L - np.asarray(x, dtype=float))[None, :])
    transfer = (0.5 * (z0 + z_s) / d) * grow
    transfer += (0.5 * (z0 - z_s) / d) / grow
    current = (emf * transfer) @ pairs_rule(x)
    current += lead[:, 0] * transfer[:, 0] - lead[:, 1] * transfer[:, -1]  # up at the antenna, down at the station
    return -current * np.array([c.divider for c in cs], dtype=complex)


def field_current(fl: FeedLine, c: Coupling, freq_hz: float, field, *, closest_m: float) -> complex:
    """The current [A] through the receiver's load from an incident field given as ``field(points (N, 2), heights
    (N,)) -> (N, 3)`` [east, north, up] (a placed source's, :func:`snrgain.model.placed.field_vector`): the EMF
    along the run (Simpson's rule on :func:`route_samples`' even samples) and up and down its leads, through the
    line's transfer function to the antenna end, times the current divider.

    Its sign is the antenna's own feed current's (snrgain.antennas.longwire: up the feed lead through the load):
    I_A leaves the junction up into the shield, so the share that comes through the antenna's loop runs down
    through the load, -I_A Z_rod / (Z_rod + Z_loop); the two add as phasors where one source drives both."""
    return emf_current(fl, c, *route_emf(fl, freq_hz, field, closest_m=closest_m, line_gamma=c.line.gamma))
