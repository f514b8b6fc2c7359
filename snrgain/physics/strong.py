"""Strong signals next door: the level a nearby transmitter puts at an antenna's terminals and at each active
stage of its chain, against that stage's limits.

**The field.**  A medium-wave (or other) station radiating ``P`` from a short vertical monopole over a perfect
ground makes 300 sqrt(P / 1 kW) mV/m at 1 km (the cymomotive force of 300 V of ITU-R P.368's curves; it follows
from the monopole's directivity of 3: E = sqrt(3 P eta0 / (4 pi)) / r).  Over the real ground it is that times
the dipole's ground-wave factor of :func:`noisemodels.groundwave.dipole_field` (near-field terms and Norton's
attenuation function; flat earth, which holds to a few tens of kilometres at these frequencies).  ``power`` is
therefore the power radiated by the station's vertical, what a licence's e.m.r.p. or a transmitter power times
a typical efficiency gives.

**The antenna's response to it.**  A ground wave is vertically polarised with the small forward tilt the soil's
surface impedance sets.  A plane wave arriving at a small elevation e makes, just above the soil, the same field
structure (vertical field E_inc cos(e) (1 + R_v), radial field in the ratio of the wave tilt; the Fresnel
coefficient R_v tends to -1 at grazing), so the power a matched load takes from a ground wave of vertical field
E at the surface is

    P = |E|^2 / eta0 * lambda^2 / (4 pi) * G(az, e) / |cos(e) (1 + R_v(e))|^2     (e -> 0),

with G the antenna's modelled gain over the same ground (transformer and ground losses included).  For a short
monopole over perfect ground (G = 3 cos^2 e, R_v = 1) this is |E|^2 lambda^2 / (640 pi^2), the textbook
available power of a short monopole, (E h_e)^2 / (4 R_rad) with R_rad = 160 pi^2 (h_e / lambda)^2.  The ratio
settles to 0.01 dB below e = 1 deg for every family (tested); :data:`GRAZING_RAD` is used.

What G stands for sets what P is.  Families that model their receiver load (long wires, terminated loops: the
realized gain into n^2 Z_coax through the transformer, with the antenna as built for its band,
:func:`snrgain.model.strong.as_built`) give the power delivered to the receiver, mismatch included; the others
(verticals, small loops, pattern tables) give the power available to a conjugate-matched load, an upper bound: a
short vertical's few thousand ohm of reactance would hand a 50 ohm input far less (tens of dB), so there a warning
errs on the side of the filter.

Checked against NEC-2 (tests/nec/offband.json, tests/test_strong_offband.py): a 150 m Beverage 2.5 m up, a flag
and a 6 m vertical over moist loam at 0.55-1.7 MHz under a plane wave at 0.5 and 2 deg, the power into the load
over the surface field's |E|^2 / (2 eta0) (the vertical through its open-circuit voltage).

**Every active stage.**  The level at the input of each active stage of the chain (the preamplifier, where there is
one, and the receiver) is the level at the terminals plus the gains in dB of the stages before it, a loss counting
negative (:func:`stage_inputs_dbm`): the transformer's loss, the feed line's matched loss at the station's frequency
(a cable given by type and length; a total loss as given) where it lies ahead, and the preamplifier's gain ahead of
the receiver (taken as at the frequency listened to: a broadband preamplifier's; one with its own band filter gains
less off band, so there the receiver's level is an upper bound).  This is the cascade of matched two-port stages
(D. M. Pozar, "Microwave Engineering", 4th ed., Wiley (2012), ch. 10 on noise and nonlinear distortion in cascaded
systems, from memory).  So a 20 dB preamplifier at the antenna hands the receiver its broadcaster 20 dB louder.
Each stage is held against its own limits (input-referred; a receiver's or preamplifier's defaults where none are
given): the 1 dB compression point (the total power of all strong signals; a warning when it comes within
:data:`COMPRESSION_MARGIN_DB`; :func:`stage_load`), and the second- and third-order intercepts for products of two
stations that land within :data:`IN_BAND_SPAN_HZ` of the listening frequency: P_IM2 = P1 + P2 - IIP2,
P_IM3 = 2 P1 + P2 - 2 IIP3 (dBm at that stage's input, the intercept definitions; with P1 = P2 = P the familiar
3 P - 2 IIP3; e.g. W. Hayward, R. Campbell and B. Larkin, "Experimental Methods in RF Design", ARRL (2003), ch. 2,
from memory), warned when the product rises above the external noise at that stage's input in the listening
bandwidth (the product made in the receiver from the preamplified stations, against the noise the preamplifier
hands it).  The warning names the stage that is worst off (the most dB over); the products of two stages can add,
up to 6 dB where they are equal and in phase (the cascaded intercept's worst case, Pozar ibid.), which snrgain does
not add.  The filter attenuation that cures it, ahead of the first amplifier (so at every stage alike), is the
excess over the limit for compression, half of it for a second-order product and a third for a third-order one
(each dB at both stations' frequencies lowers them by 2 or 3 dB).

**The filter against compression** (:func:`overload_filters`).  Its kind follows where each offending station lies
against the frequency listened to: below it a high-pass, above it a low-pass, each turning over between the
offender nearest the band and the band; a station within the same broadcast band (the medium-wave band of ITU
Radio Regulations Article 5, :data:`MW_BROADCAST_HZ`), or within :data:`CLOSE_FRACTION` of the frequency listened
to, a trap (a notch) tuned to it: there a high- or low-pass would cut off the band listened to as well, or would
have to turn over too steeply.  The offenders are the loudest stations down to where the rest together stay under
:data:`UNFILTERED_SHARE` of the safe level; each needs the same rejection, the one that brings the total to it.
"""

from __future__ import annotations

from itertools import combinations

import numpy as np

from noisemodels.groundwave import dipole_field
from snrgain.physics.ground import C_M_PER_S, Ground, reflection_coefficients
from snrgain.records import record

CYMOMOTIVE_V_PER_SQRT_KW = 300.0
"""Field at 1 m (far-field form) of a short vertical monopole over perfect ground radiating 1 kW [V] (ITU-R
P.368's reference cymomotive force)."""
GRAZING_RAD = float(np.radians(0.5))
"""Elevation at which the antennas' plane-wave response stands for their ground-wave response [rad]."""
COMPRESSION_MARGIN_DB = 10.0
"""Warn when the strong signals' total power comes within this of the stage's 1 dB compression point (snrgain's
own choice: a safety margin for peaks of modulation and for blocking before compression)."""
IN_BAND_SPAN_HZ = 100e3
"""A product within this of the listening frequency counts as landing in the band listened to [Hz] (snrgain's own
choice: about the width of a low band's busy part)."""

MW_BROADCAST_HZ = (525e3, 1705e3)
"""The medium-wave broadcast band [Hz]: 526.5-1606.5 kHz in ITU Regions 1 and 3, 525-1705 kHz in Region 2 (ITU
Radio Regulations, Article 5); the union of the two."""
CLOSE_FRACTION = 0.15
"""A station within this fraction of the frequency listened to gets a trap rather than a high- or low-pass (snrgain's
own choice: a few-section LC high- or low-pass does not turn over from pass to tens of dB within 15 %)."""
UNFILTERED_SHARE = 0.25
"""Stations left out of the filter advice may together reach at most this share of the safe level, 6 dB under it
(snrgain's own choice: a reviewer's broadcaster 10 dB under the limit was given a high-pass of its own that bought
0.1 dB, the neighbour beside it being the whole trouble; the rejection asked of the others covers what is left)."""


@record
class StageLimits:
    """An active stage's large-signal limits, input-referred [dBm]; ``name`` is the stage's ("preamplifier",
    "receiver"), ``assumed`` names the values that are snrgain's defaults, not the user's."""

    name: str
    p1db_dbm: float
    iip3_dbm: float
    iip2_dbm: float
    assumed: tuple[str, ...] = ()

    @property
    def safe_dbm(self) -> float:
        """The most the stage takes safely [dBm]: its 1 dB compression point less COMPRESSION_MARGIN_DB."""
        return self.p1db_dbm - COMPRESSION_MARGIN_DB


PREAMP_DEFAULTS = {"p1db_dbm": 5.0, "iip3_dbm": 20.0, "iip2_dbm": 60.0}
"""Limits assumed for a preamplifier that gives none (input-referred dBm): typical of low-band receiving
preamplifiers with 10-15 dB gain, recalled from memory and not from a datasheet; give the real ones."""
RECEIVER_DEFAULTS = {"p1db_dbm": 5.0, "iip3_dbm": 20.0, "iip2_dbm": 60.0}
"""Limits assumed for a receiver that gives none (input-referred dBm), from memory; a direct-sampling receiver
clips near its converter's full scale, often 0 to +10 dBm: give the real ones."""


@record
class Station:
    """A strong nearby transmitter: its frequency [Hz], radiated power [W], distance [m] and bearing [rad] from
    the site."""

    name: str
    freq_hz: float
    power_w: float
    distance_m: float
    bearing_rad: float


def ground_wave_field_v_per_m(station: Station, ground: Ground | None) -> float:
    """RMS vertical field of the station's ground wave at the site [V/m] (module docstring)."""
    if ground is None:
        rel = dipole_field(station.distance_m, station.freq_hz, permittivity=None, conductivity_s_per_m=None)
    else:
        rel = dipole_field(
            station.distance_m,
            station.freq_hz,
            permittivity=ground.permittivity,
            conductivity_s_per_m=ground.conductivity_s_per_m,
        )
    return float(CYMOMOTIVE_V_PER_SQRT_KW * np.sqrt(station.power_w / 1e3) * np.abs(rel))


def ground_wave_aperture_m2(antenna, freq_hz: float, bearing_rad: float, ground: Ground | None) -> float:
    """lambda^2 / (4 pi) G / |cos e (1 + R_v)|^2 at e = GRAZING_RAD: the area that, times the ground wave's
    |E|^2 / eta0, is the power the antenna delivers to a matched load [m^2]."""
    e = np.array([GRAZING_RAD])
    g = float(antenna.gain_linear(freq_hz, np.array([bearing_rad]), e)[0])
    rv, _ = reflection_coefficients(ground, e, freq_hz)
    lam = C_M_PER_S / freq_hz
    return lam**2 / (4 * np.pi) * g / float(np.abs(np.cos(e[0]) * (1.0 + rv[0])) ** 2)


def dbm(watts: float) -> float:
    return float(10.0 * np.log10(max(watts, 1e-30) / 1e-3))


def stage_inputs_dbm(terminal_dbm: float, gains_db, active) -> tuple[float, ...]:
    """The level at the input of each active stage [dBm]: the terminals' level plus the gains [dB] of every stage
    before it, a loss counting negative, P_k = P_0 + G_0 + ... + G_(k-1) (the cascade of matched stages: module
    docstring).  ``gains_db``: every stage's gain at the station's frequency in the chain's order; ``active``: the
    indexes of the stages asked for.

    >>> levels = stage_inputs_dbm(-13.6, [0.0, 20.0, -1.5, 0.0], [1, 3])  # transformer, preamp, line, receiver
    >>> [round(x, 6) for x in levels]
    [-13.6, 4.9]
    """
    before = np.concatenate(([0.0], np.cumsum(np.asarray(gains_db, dtype=float))))
    return tuple(float(terminal_dbm + before[k]) for k in active)


@record
class StageLoad:
    """The strong signals at one active stage's input: its ``limits``, each station's level there (``levels_dbm``:
    name -> (freq [Hz], level [dBm])), their total power [dBm], and how far that total stands above the stage's
    safe level, its 1 dB compression point less COMPRESSION_MARGIN_DB (``over_db``; negative: under it) [dB]."""

    limits: StageLimits
    levels_dbm: dict
    total_dbm: float
    over_db: float


def stage_load(limits: StageLimits, levels_dbm: dict[str, tuple[float, float]]) -> StageLoad:
    """The stations' total power at a stage's input (name -> (freq [Hz], level [dBm])) against its compression
    point (module docstring): overloaded where ``over_db`` > 0."""
    total = dbm(sum(10.0 ** (p / 10.0) * 1e-3 for _, p in levels_dbm.values()))
    return StageLoad(limits, dict(levels_dbm), total, total - limits.safe_dbm)


def worst_stage(loads):
    """The stage the strong signals overload most (largest ``over_db``; the earlier of a tie), or None where none
    is overloaded."""
    over = [x for x in loads if x.over_db > 0.0]
    return max(over, key=lambda x: x.over_db) if over else None


@record
class Product:
    """An intermodulation product of two stations at a stage's input."""

    order: int
    freq_hz: float
    stations: tuple[str, str]
    level_dbm: float


def products_in_band(levels_dbm: dict[str, tuple[float, float]], limits: StageLimits, listen_hz: float):
    """Second- and third-order products of every pair of stations (name -> (freq [Hz], level at the stage's
    input [dBm])) that land within IN_BAND_SPAN_HZ of ``listen_hz``."""
    out = []
    for (n1, (f1, p1)), (n2, (f2, p2)) in combinations(levels_dbm.items(), 2):
        for order, f, level in (
            (2, f1 + f2, p1 + p2 - limits.iip2_dbm),
            (2, abs(f1 - f2), p1 + p2 - limits.iip2_dbm),
            (3, 2 * f1 - f2, 2 * p1 + p2 - 2 * limits.iip3_dbm),
            (3, 2 * f2 - f1, 2 * p2 + p1 - 2 * limits.iip3_dbm),
        ):
            if abs(f - listen_hz) <= IN_BAND_SPAN_HZ:
                out.append(Product(order, float(f), (n1, n2), float(level)))
    return out


@record
class Filter:
    """One filter before the first amplifier: ``kind`` ("high-pass", "low-pass" or "trap"), the stations it is for
    and their frequencies [Hz], the rejection each of them needs [dB]; ``why`` for a trap: "broadcast band" (it
    shares the medium-wave broadcast band with the frequency listened to) or "close" (within CLOSE_FRACTION)."""

    kind: str
    stations: tuple[str, ...]
    freq_hz: tuple[float, ...]
    rejection_db: float
    why: str = ""


NO_FILTER_FRACTION = 0.01
"""A station within this fraction of the frequency listened to (or within the listening bandwidth) is one no filter
takes out without the wanted signal: a trap deep enough there is as wide as the separation (snrgain's own choice:
an LC trap's unloaded Q of about 100 at medium wave and the low bands, from memory)."""


def filter_kind(station_hz: float, listen_hz: float, bandwidth_hz: float = 0.0) -> tuple[str, str]:
    """(kind, why) of the filter that takes a station at ``station_hz`` out ahead of a receiver at ``listen_hz``
    listening ``bandwidth_hz`` wide; ("none", "") where none can (:data:`NO_FILTER_FRACTION`).

    >>> filter_kind(1.008e6, 1.83e6), filter_kind(0.88e6, 0.6e6), filter_kind(3.6e6, 1.83e6)
    (('high-pass', ''), ('trap', 'broadcast band'), ('low-pass', ''))
    >>> filter_kind(1.002e6, 1.0e6, 6e3)
    ('none', '')
    """
    if abs(station_hz - listen_hz) <= max(NO_FILTER_FRACTION * listen_hz, bandwidth_hz):
        return "none", ""
    lo, hi = MW_BROADCAST_HZ
    if lo <= station_hz <= hi and lo <= listen_hz <= hi:
        return "trap", "broadcast band"
    if abs(station_hz - listen_hz) <= CLOSE_FRACTION * listen_hz:
        return "trap", "close"
    return ("high-pass" if station_hz < listen_hz else "low-pass"), ""


def overload_filters(
    levels_dbm: dict[str, tuple[float, float]], listen_hz: float, safe_dbm: float, bandwidth_hz: float = 0.0
) -> list[Filter]:
    """The filters that bring the stations' total power (name -> (freq [Hz], level at the stage's input [dBm]))
    down to ``safe_dbm``: the loudest stations until the rest stay under UNFILTERED_SHARE of it, all given the
    rejection that brings the total to ``safe_dbm``; one high-pass for those below, one low-pass for those above, a
    trap for each one that needs it (:func:`filter_kind`).  Empty when the total is already safe."""
    mw = {n: 10.0 ** (p / 10.0) for n, (_, p) in levels_dbm.items()}
    safe = 10.0 ** (safe_dbm / 10.0)
    if sum(mw.values()) <= safe:
        return []
    order = sorted(mw, key=lambda n: -mw[n])
    k = next(k for k in range(1, len(order) + 1) if sum(mw[n] for n in order[k:]) <= UNFILTERED_SHARE * safe)
    rest = sum(mw[n] for n in order[k:])
    rejection = float(10.0 * np.log10(sum(mw[n] for n in order[:k]) / (safe - rest)))
    out: list[Filter] = []
    for n in sorted(order[:k], key=lambda n: levels_dbm[n][0]):  # by frequency
        f = float(levels_dbm[n][0])
        kind, why = filter_kind(f, listen_hz, bandwidth_hz)
        same = next((i for i, x in enumerate(out) if kind not in ("trap", "none") and x.kind == kind), None)
        if same is None:
            out.append(Filter(kind, (n,), (f,), rejection, why))
        else:  # one high-pass (or low-pass) takes all the stations on its side
            x = out[same]
            out[same] = Filter(kind, (*x.stations, n), (*x.freq_hz, f), rejection, why)
    return out


__all__ = [
    "CLOSE_FRACTION",
    "COMPRESSION_MARGIN_DB",
    "CYMOMOTIVE_V_PER_SQRT_KW",
    "Filter",
    "GRAZING_RAD",
    "IN_BAND_SPAN_HZ",
    "MW_BROADCAST_HZ",
    "NO_FILTER_FRACTION",
    "PREAMP_DEFAULTS",
    "Product",
    "RECEIVER_DEFAULTS",
    "StageLimits",
    "StageLoad",
    "Station",
    "UNFILTERED_SHARE",
    "dbm",
    "filter_kind",
    "ground_wave_aperture_m2",
    "ground_wave_field_v_per_m",
    "overload_filters",
    "products_in_band",
    "stage_inputs_dbm",
    "stage_load",
    "worst_stage",
]
