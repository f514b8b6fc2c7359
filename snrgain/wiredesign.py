"""Design helpers for long wires: length, termination, transformer.

Pure functions over the long-wire families (snrgain.antennas.longwire):

- :func:`sweep_rdf`: RDF toward a target for many designs (length x
  termination x bearing), each a full pattern on the sky grid;
- :func:`best_length` and :func:`best_termination`: the values the model
  finds best for a target (RDF or front-to-back), beside the traditional
  rules (maximum-effective-length rule; termination = |Z0|);
- :func:`transformer`: the turns ratio that matches the feed-point impedance
  to 50 or 75 ohm coax and the mismatch loss of a chosen ratio.

RDF here is toward the target directions under a uniform sky (the antenna's
own directivity figure); the full noise sky is the ranking's business.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from noisemodels.sphere import Directions, upper_hemisphere
from snrgain import lines, snr
from snrgain.antennas import from_spec
from snrgain.ground import C_M_PER_S
from snrgain.targets import TargetDirections, from_bearing

PRACTICAL_TURNS = (1.0, 1.5, 2.0, 2.5, 3.0, 3.5, 4.0)
"""Turns ratios easy to wind on a small two-hole ferrite core (integer and half turns)."""


DEFAULT_ELEVATION_RAD = np.radians(20.0)
"""Elevation of the target along the wire when none is given [rad]: a typical low-band DX arrival angle
(common practice)."""


def along_wire_target(bearing_rad: float, elevation_rad: float = DEFAULT_ELEVATION_RAD) -> TargetDirections:
    """A target straight along a wire's bearing at one elevation."""
    return from_bearing("along the wire", bearing_rad=bearing_rad, elevation_lo_rad=elevation_rad,
                        elevation_hi_rad=elevation_rad)


def _target(target, bearing_rad) -> TargetDirections:
    return target if target is not None else along_wire_target(bearing_rad)


def rdf_db(antenna, freq_hz: float, target: TargetDirections, grid: Directions) -> float:
    g = antenna.gain_linear(freq_hz, grid.azimuth_rad, grid.elevation_rad)
    toward = snr.target_gain(lambda az, el: antenna.gain_linear(freq_hz, az, el), target)
    return snr.rdf_db(toward, snr.hemisphere_mean_gain(g, grid))


def front_to_back_db(antenna, freq_hz: float, target: TargetDirections) -> float:
    return snr.front_to_back_db(lambda az, el: antenna.gain_linear(freq_hz, az, el),
                                bearing_rad=target.bearing_rad, elevation_rad=target.mean_elevation_rad)


def _with(spec: dict, **changes) -> dict:
    out = dict(spec)
    out.update(changes)
    return out


def sweep_rdf(spec: dict, freq_hz: float, *, lengths_m, terminations_ohm, bearings_deg, target=None,
              nside: int = 32) -> np.ndarray:
    """RDF [dB] for every (length, termination, bearing) design; shape (lengths, terminations, bearings)."""
    grid = upper_hemisphere(nside)
    out = np.empty((len(lengths_m), len(terminations_ohm), len(bearings_deg)))
    for i, length in enumerate(lengths_m):
        for j, term in enumerate(terminations_ohm):
            for k, bearing in enumerate(bearings_deg):
                ant = from_spec(_with(spec, length=f"{length} m", termination=float(term), bearing=float(bearing)))
                tgt = _target(target, np.radians(bearing))
                out[i, j, k] = rdf_db(ant, freq_hz, tgt, grid)
    return out


@dataclass(frozen=True)
class LengthAdvice:
    """Lengths for a travelling-wave wire [m]."""

    rule_m: float
    """The maximum-effective-length rule, lambda / (4 (1/k - cos alpha))."""
    best_m: float
    """The length of highest RDF toward the target found by the model within the range searched."""
    best_rdf_db: float
    lengths_m: np.ndarray
    rdf_db: np.ndarray


def best_length(spec: dict, freq_hz: float, *, target=None, max_length_m: float | None = None,
                steps: int = 40, nside: int = 16) -> LengthAdvice:
    """The model's best length for RDF toward the target, beside the traditional rule."""
    ant = from_spec(spec)
    tgt = _target(target, ant.bearing_rad)
    lam = C_M_PER_S / freq_hz
    k = ant.line(freq_hz).velocity_factor
    rule = lines.max_effective_length_m(lam, velocity_factor=k, elevation_rad=tgt.mean_elevation_rad)
    top = max_length_m or min(3000.0, 3.0 * (rule if np.isfinite(rule) else 3 * lam))
    grid = upper_hemisphere(nside)
    lengths = np.linspace(0.1 * lam, top, steps)
    rdf = np.array([rdf_db(from_spec(_with(spec, length=f"{x} m")), freq_hz, tgt, grid) for x in lengths])
    i = int(np.argmax(rdf))
    return LengthAdvice(rule, float(lengths[i]), float(rdf[i]), lengths, rdf)


@dataclass(frozen=True)
class TerminationAdvice:
    """Termination resistors [ohm]."""

    textbook_ohm: float
    """|Z0| less the far ground rod's resistance: the resistor that matches the line."""
    best_ohm: float
    """The resistor of highest figure (RDF or front-to-back) found by the model."""
    metric: str
    best_value_db: float
    values_ohm: np.ndarray
    figure_db: np.ndarray


def best_termination(spec: dict, freq_hz: float, *, target=None, metric: str = "rdf", nside: int = 16,
                     values_ohm=None) -> TerminationAdvice:
    """The termination of highest RDF or front-to-back for the target, beside |Z0|."""
    if metric not in ("rdf", "front_to_back"):
        raise ValueError(f"metric must be 'rdf' or 'front_to_back', got {metric!r}")
    ant = from_spec(_with(spec, termination="auto"))
    textbook = ant.termination_ohm(freq_hz)
    tgt = _target(target, ant.bearing_rad)
    values = np.asarray(values_ohm if values_ohm is not None else np.geomspace(50.0, 3000.0, 61))
    grid = upper_hemisphere(nside)
    fig = []
    for r in values:
        a = from_spec(_with(spec, termination=float(r)))
        fig.append(rdf_db(a, freq_hz, tgt, grid) if metric == "rdf" else front_to_back_db(a, freq_hz, tgt))
    fig = np.array(fig)
    i = int(np.argmax(fig))
    return TerminationAdvice(float(textbook), float(values[i]), metric, float(fig[i]), values, fig)


@dataclass(frozen=True)
class TransformerAdvice:
    feed_point_impedance_ohm: complex
    coax_ohm: float
    exact_turns_ratio: float
    practical_turns_ratio: float
    practical_mismatch_loss_db: float
    chosen_turns_ratio: float
    chosen_mismatch_loss_db: float


def transformer(antenna, freq_hz: float) -> TransformerAdvice:
    """Turns ratio matching the feed point to the coax, and the mismatch loss of the practical and chosen ratios."""
    z = antenna.feed_point_impedance(freq_hz)
    zc = float(antenna.params.coax)
    exact = float(np.sqrt(abs(z) / zc))
    practical = min(PRACTICAL_TURNS, key=lambda n: abs(n - exact))

    def loss(n):
        return float(-10 * np.log10(lines.mismatch_factor(z, n * n * zc)))

    chosen = antenna.turns_ratio(freq_hz)
    return TransformerAdvice(z, zc, exact, practical, loss(practical), chosen, loss(chosen))
