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
own directivity figure, on the trade's whole-sphere scale, snrgain.model.snr); the
full noise sky is the ranking's business.
"""

from __future__ import annotations

import numpy as np

from noisemodels.sphere import Directions, upper_hemisphere
from snrgain.antennas import FAMILIES, from_spec
from snrgain.antennas.base import variant
from snrgain.constants import wire_families
from snrgain.model import snr
from snrgain.physics import lines
from snrgain.physics.ground import C_M_PER_S
from snrgain.physics.targets import TargetDirections, from_bearing
from snrgain.records import record
from snrgain.units import number_text

PRACTICAL_TURNS = (1.0, 1.5, 2.0, 2.5, 3.0, 3.5, 4.0)
"""Turns ratios easy to wind on a small two-hole ferrite core (integer and half turns)."""


DEFAULT_HEIGHT = "2.5 m"
"""Height of a wire in the air when none is given (a family with its own default, the BOG, keeps it)."""

DEFAULT_GROUND = "moist loam"
"""The ground under the wire when neither a named ground nor its constants are given (the scenarios' own default)."""

DEFAULT_ELEVATION_RAD = np.radians(20.0)
"""Elevation of the target along the wire when none is given [rad]: a typical low-band DX arrival angle
(common practice)."""


def along_wire_target(bearing_rad: float, elevation_rad: float = DEFAULT_ELEVATION_RAD) -> TargetDirections:
    """A target straight along a wire's bearing at one elevation."""
    return from_bearing(
        "along the wire", bearing_rad=bearing_rad, elevation_lo_rad=elevation_rad, elevation_hi_rad=elevation_rad
    )


def _target(target, bearing_rad) -> TargetDirections:
    return target if target is not None else along_wire_target(bearing_rad)


def rdf_db(antenna, freq_hz: float, target: TargetDirections, grid: Directions) -> float:
    g = antenna.gain_linear(freq_hz, grid.azimuth_rad, grid.elevation_rad)
    toward = snr.target_gain(lambda az, el: antenna.gain_linear(freq_hz, az, el), target)
    return snr.rdf_db(toward, snr.sphere_mean_gain(g, grid))


def front_to_back_db(antenna, freq_hz: float, target: TargetDirections) -> float:
    return snr.front_to_back_db(
        lambda az, el: antenna.gain_linear(freq_hz, az, el),
        bearing_rad=target.bearing_rad,
        elevation_rad=target.mean_elevation_rad,
    )


def sweep_rdf(
    spec: dict, freq_hz: float, *, lengths_m, terminations_ohm, bearings_deg, target=None, nside: int = 32
) -> np.ndarray:
    """RDF [dB] for every (length, termination, bearing) design; shape (lengths, terminations, bearings)."""
    grid = upper_hemisphere(nside)
    base = from_spec(spec)
    out = np.empty((len(lengths_m), len(terminations_ohm), len(bearings_deg)))
    for i, length in enumerate(lengths_m):
        for j, term in enumerate(terminations_ohm):
            for k, bearing in enumerate(bearings_deg):
                ant = variant(base, length=float(length), termination=float(term), bearing=float(np.radians(bearing)))
                tgt = _target(target, np.radians(bearing))
                out[i, j, k] = rdf_db(ant, freq_hz, tgt, grid)
    return out


@record
class LengthAdvice:
    """Lengths for a travelling-wave wire [m]."""

    rule_m: float
    """The maximum-effective-length rule, lambda / (4 (1/k - cos alpha))."""
    best_m: float
    """The length of highest RDF toward the target found by the model within the range searched."""
    best_rdf_db: float
    lengths_m: np.ndarray
    rdf_db: np.ndarray


def best_length(
    spec: dict, freq_hz: float, *, target=None, max_length_m: float | None = None, steps: int = 40, nside: int = 16
) -> LengthAdvice:
    """The model's best length for RDF toward the target, beside the traditional rule."""
    ant = from_spec(spec)
    tgt = _target(target, ant.bearing_rad)
    lam = C_M_PER_S / freq_hz
    k = ant.line(freq_hz).velocity_factor
    rule = lines.max_effective_length_m(lam, velocity_factor=k, elevation_rad=tgt.mean_elevation_rad)
    top = max_length_m or min(3000.0, 3.0 * (rule if np.isfinite(rule) else 3 * lam))
    grid = upper_hemisphere(nside)
    lo = max(0.1 * lam, 1.0)  # from a tenth of a wavelength, but not under the long wires' least length (1 m)
    lengths = np.linspace(lo, max(top, lo), steps)
    rdf = np.array([rdf_db(variant(ant, length=float(x)), freq_hz, tgt, grid) for x in lengths])
    i = int(np.argmax(rdf))
    return LengthAdvice(rule, float(lengths[i]), float(rdf[i]), lengths, rdf)


@record
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


def best_termination(
    spec: dict, freq_hz: float, *, target=None, metric: str = "rdf", nside: int = 16, values_ohm=None
) -> TerminationAdvice:
    """The termination of highest RDF or front-to-back for the target, beside |Z0|."""
    if metric not in ("rdf", "front_to_back"):
        raise ValueError(f"metric must be 'rdf' or 'front_to_back', got {metric!r}")
    ant = from_spec(spec)
    textbook = ant.matched_termination_ohm(freq_hz)
    tgt = _target(target, ant.bearing_rad)
    values = np.asarray(values_ohm if values_ohm is not None else np.geomspace(50.0, 3000.0, 61))
    grid = upper_hemisphere(nside)
    fig = []
    for r in values:
        a = variant(ant, termination=float(r))
        fig.append(rdf_db(a, freq_hz, tgt, grid) if metric == "rdf" else front_to_back_db(a, freq_hz, tgt))
    fig = np.array(fig)
    i = int(np.argmax(fig))
    return TerminationAdvice(float(textbook), float(values[i]), metric, float(fig[i]), values, fig)


RESISTOR_CAUTION = (
    "Resistor: a non-inductive type (carbon or metal film, not wire-wound), rated 2 W or more: static from "
    "wind and snow and energy from a nearby transmitter (your own, when the wire runs near its antenna) "
    "burn out small ones, and a burnt-out termination leaves the antenna bidirectional. A gas discharge "
    "tube or a bleed resistor (some 10-100 kohm) from the wire to the ground rod drains static and is common "
    "practice; ground and disconnect the feed line when storms are near. Follow local codes."
)

RESISTOR_CAUTION_SHORT = (
    "non-inductive, 2 W or more (static, a nearby transmitter); a gas discharge tube or bleed resistor to the ground "
    "rod is common practice"
)


@record
class TerminationAnswer:
    """The one resistor the tool recommends for a terminated antenna, for one criterion, with its context."""

    criterion: str
    """"rdf" or "front_to_back" (toward the antenna's bearing at 20 deg, its auto_elevation for a loop), or "z0"
    (|Z0|: the trade's rule for a flat SWR)."""
    best_ohm: float
    """The resistor that maximises the criterion; what termination = "auto" with this criterion gives [ohm]."""
    standard_ohm: float
    """The nearest E12 value [ohm]."""
    matched_ohm: float
    """|Z0| (less the far ground rod for a wire) [ohm]."""
    best_db: float
    """The criterion at the best resistor [dB]."""
    over_matched_db: float
    """The criterion at the best resistor over that at |Z0| [dB]."""
    standard_loss_db: float
    """What the E12 value loses against the best [dB]."""
    loss_at_0p7_db: float
    """What 0.7 x the best loses [dB]: how flat the optimum is below it."""
    loss_at_1p4_db: float
    """What 1.4 x the best loses [dB]."""
    target: str | None = None
    """The target the statistic is taken toward ("snr")."""
    at_bound: str | None = None
    """"low" ("high") when the best is the lowest (highest) resistor searched, the criterion still rising beyond
    the range: that end of the range, not an optimum (longwire.search_bound); None for an optimum."""
    search_ohm: tuple[float, float] | None = None
    """The range of resistors searched [ohm] (None for "z0", which is not searched)."""
    matched_words: str = "|Z0|"
    """What ``matched_ohm`` is, in words: the antenna's own (a wire's |Z0| less the far ground, a loop's |Z0|)."""
    curve: tuple[tuple[float, ...], tuple[float, ...], tuple[float, ...]] | None = None
    """(resistors [ohm], the criterion at each [dB], the front-to-back at each [dB], toward the bearing at the
    antenna's auto elevation): the resistors tried under the sky ("snr"), else the range searched; what one resistor
    for several bands is weighed on (snrgain.decide.bandplan)."""

    def to_dict(self) -> dict:
        return {
            "criterion": self.criterion,
            "termination_ohm": self.best_ohm,
            "standard_ohm": self.standard_ohm,
            "matched_ohm": self.matched_ohm,
            "figure_db": self.best_db,
            "over_matched_db": self.over_matched_db,
            "standard_loss_db": self.standard_loss_db,
            "loss_at_0p7_db": self.loss_at_0p7_db,
            "loss_at_1p4_db": self.loss_at_1p4_db,
            "caution": RESISTOR_CAUTION,
            "caution_short": RESISTOR_CAUTION_SHORT,
            "target": self.target,
            "at_search_bound": self.at_bound,
            "search_ohm": None if self.search_ohm is None else list(self.search_ohm),
            "matched_words": self.matched_words,
            "curve": None
            if self.curve is None
            else {
                "ohm": list(self.curve[0]),
                "figure_db": list(self.curve[1]),
                "front_to_back_db": list(self.curve[2]),
            },
        }


def termination_answer(
    antenna, freq_hz: float, criterion: str | None = None, *, curve: bool = False
) -> TerminationAnswer | None:
    """The resistor the antenna's own termination = "auto" gives for ``criterion`` ("rdf", "front_to_back";
    None: the antenna's ``auto_for``), with |Z0|, the E12 value and the figure's flatness around it; None for an
    antenna without a resistor to choose.  The same function serves `wire`, the build sheet and the report.
    ``curve``: with the criterion and the front-to-back over the resistors (the build sheet's, for a plan across
    bands; :attr:`TerminationAnswer.curve`)."""
    from snrgain.antennas.longwire import search_bound
    from snrgain.decide.build import nearest_standard_ohm

    if not hasattr(antenna, "termination_pattern") or "termination" not in type(antenna.params).model_fields:
        return None
    pattern = antenna.termination_pattern(freq_hz)
    if pattern is None:
        return None
    sky = antenna.sky_termination
    if sky is not None and criterion in (None, "snr"):  # chosen under the site's noise (longwire.SkyTermination)
        return _sky_answer(antenna, freq_hz, sky, curve=curve)
    criterion = criterion or getattr(antenna.params, "auto_for", "rdf")
    if criterion == "snr":  # no sky here: the antenna alone is rated on RDF
        criterion = "rdf"
    best = variant(antenna, termination="auto", auto_for=criterion).termination_ohm(freq_hz)
    matched = antenna.matched_termination_ohm(freq_hz)
    metric = "rdf" if criterion == "z0" else criterion  # |Z0| is rated on RDF
    figure = _rated(antenna, pattern, metric)

    def db(r):
        return float(10 * np.log10(figure(max(r, 1e-3))))

    at_best, standard = db(best), nearest_standard_ohm(best)
    searched = None if criterion == "z0" else antenna.auto_terminations_ohm
    return TerminationAnswer(
        criterion,
        float(best),
        standard,
        float(matched),
        at_best,
        at_best - db(matched),
        at_best - db(standard),
        at_best - db(0.7 * best),
        at_best - db(1.4 * best),
        at_bound=None if searched is None else search_bound(best, searched),
        search_ohm=None if searched is None else (float(np.min(searched)), float(np.max(searched))),
        matched_words=getattr(antenna, "matched_words", "|Z0|"),
        curve=_curve(antenna, freq_hz, antenna.auto_terminations_ohm, figure) if curve else None,
    )


def resistor_figures_db(antenna, freq_hz: float, ohm: float) -> dict[str, float]:
    """RDF and front-to-back [dB] of ``antenna`` with the resistor ``ohm``, toward its bearing at the auto elevation
    (20 deg), as :func:`termination_answer` rates its resistors: a resistor given beside the answers' own."""
    pattern = antenna.termination_pattern(freq_hz)
    return {
        f"{metric}_db": float(10 * np.log10(_rated(antenna, pattern, metric)(max(ohm, 1e-3))))
        for metric in ("rdf", "front_to_back")
    }


def _rated(antenna, pattern, metric: str):
    """``metric``'s figure(r) of a resistor r (longwire.termination_figure) toward the antenna's bearing at its auto
    elevation (20 deg): how every resistor of this module is rated."""
    from snrgain.antennas.longwire import AUTO_ELEVATION_RAD, termination_figure

    elevation = getattr(antenna.params, "auto_elevation", AUTO_ELEVATION_RAD)
    bearing = getattr(antenna, "bearing_rad", getattr(antenna.params, "bearing", 0.0))
    return termination_figure(pattern, bearing, elevation, metric)


def _curve(antenna, freq_hz: float, values_ohm, figure) -> tuple[tuple[float, ...], ...]:
    """(resistors, the criterion, the front-to-back toward the bearing at the auto elevation) at ``values_ohm``;
    ``figure`` the criterion's figure(r) (longwire.termination_figure), or its values [dB] at ``values_ohm``."""
    fb = _rated(antenna, antenna.termination_pattern(freq_hz), "front_to_back")
    rs = np.maximum(np.asarray(values_ohm, dtype=float), 1e-3)

    def at(f):  # every resistor at once where the pattern takes an array of them
        values = f(rs) if getattr(f, "vectorised", False) else np.array([f(r) for r in rs])
        return tuple(float(x) for x in 10 * np.log10(np.maximum(np.asarray(values, dtype=float), 1e-30)))

    criterion = at(figure) if callable(figure) else tuple(float(x) for x in figure)
    return tuple(float(r) for r in values_ohm), criterion, at(fb)


FIGURE_FORMAT = "{:.1f}"
"""A resistor's figure (RDF or front-to-back) [dB] as printed (through number_text: never "-0.0")."""


def bound_text(answer: dict, figure: str) -> str | None:
    """What an answer (:meth:`TerminationAnswer.to_dict`) at an end of the range searched says in place of "best
    at": the range, the end where ``figure`` (its name) is highest and how much more it gives beyond (where known),
    and that the end is not an optimum; None for an optimum inside the range.  `wire` and the build lines print it."""
    side = answer.get("at_search_bound")
    if side is None:
        return None
    lo, hi = answer["search_ohm"]
    if side == "low":
        end, factor, beyond, way, which = lo, 0.7, -answer["loss_at_0p7_db"], "below", "lower"
    else:
        end, factor, beyond, way, which = hi, 1.4, -answer["loss_at_1p4_db"], "above", "upper"
    rises = f", and still rises {way} it: {beyond:.2f} dB more at {factor * end:.0f} ohm" if beyond >= 0.005 else ""
    return (
        f"no optimum of {figure} within the {lo:.0f}-{hi:.0f} ohm searched (it is highest at the range's {which} "
        f"end, {end:.0f} ohm, {number_text(answer['figure_db'], FIGURE_FORMAT)} dB{rises}), so that end is given, "
        "not an optimum"
    )


def _sky_answer(antenna, freq_hz: float, sky: dict, *, curve: bool = False) -> TerminationAnswer:
    """The answer of a resistor chosen under the sky: its statistic read off the resistors tried (interpolated in
    log R for 0.7x, 1.4x and the E12 value; nothing is known beyond them, so there the loss reads 0)."""
    from snrgain.antennas.longwire import search_bound
    from snrgain.decide.build import nearest_standard_ohm

    best = float(antenna.params.termination)

    def db(r):
        return sky_figure_db(sky, r)

    top, standard = float(np.max(sky["figure_db"])), nearest_standard_ohm(best)
    return TerminationAnswer(
        "snr",
        best,
        standard,
        sky["matched_ohm"],
        top,
        top - db(max(sky["matched_ohm"], sky["values_ohm"][0])),  # |Z0| less the rod may be 0: the lowest tried
        top - db(standard),
        top - db(0.7 * best),
        top - db(1.4 * best),
        sky["target"],
        at_bound=search_bound(best, sky["values_ohm"]),
        search_ohm=(float(min(sky["values_ohm"])), float(max(sky["values_ohm"]))),
        matched_words=getattr(antenna, "matched_words", "|Z0|"),
        curve=_curve(antenna, freq_hz, sky["values_ohm"], sky["figure_db"]) if curve else None,
    )


def sky_figure_db(sky: dict, ohm: float) -> float:
    """The statistic [dB] a resistor chosen under the sky (``sky_termination``) gives at ``ohm``: read off the
    resistors tried, interpolated in log R (held at the ends beyond them: nothing is known there)."""
    return float(np.interp(np.log(ohm), np.log(sky["values_ohm"]), np.asarray(sky["figure_db"])))


@record
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


SAFETY = (
    "Safety: keep the wire and its supports well clear of power lines; ground and disconnect the feed line "
    "when storms are near; have buried utilities located before driving ground rods; mark or bury wires "
    "on the ground where people walk. Follow local codes."
)


def wire_spec(
    family: str,
    *,
    length,
    height=None,
    termination="auto",
    feed_ground="20 ohm",
    far_ground="20 ohm",
    gauge: int | None = None,
    diameter=None,
    ground=None,
    conductivity=None,
    permittivity=None,
    coax: int = 75,
    depth=None,
    insulation_thickness=None,
    insulation_permittivity: float | None = None,
) -> dict:
    """An antenna spec for a long wire from design options (units as in scenario files).

    Each key goes only to the families whose table takes it (their parameter model says which): the far-end
    keys, ``depth`` (a wire on the ground may be buried), ``termination``.  ``height`` defaults to the family's
    own default where it has one (a BOG's axis 2 cm above the soil; "on soil" rests it on the soil), else to
    :data:`DEFAULT_HEIGHT`; ``conductivity`` with ``permittivity`` give the ground in place of a named ``ground``
    (:data:`DEFAULT_GROUND` where neither is given; both, refused); the insulation's
    thickness and relative permittivity go to a family that takes them (the BOG's).
    """
    if family not in wire_families():
        raise ValueError(f"family must be one of {', '.join(wire_families())}; got {family!r}")
    takes = FAMILIES[family].params.model_fields
    spec = {"family": family, "length": length, "coax": int(coax), "feed_ground": feed_ground}
    if height is not None or takes["height"].is_required():
        spec["height"] = DEFAULT_HEIGHT if height is None else height
    if depth is not None:
        if "depth" not in takes:
            raise ValueError(f"depth: only a bog (a wire on the ground) can be buried, not a {family}")
        if height is not None:
            raise ValueError("depth: a buried wire has no height above the soil; give one or the other")
        spec.pop("height", None)  # a buried BOG takes no height (the family refuses the pair)
        spec["depth"] = depth
    if "far_ground" in takes:
        spec["far_ground"] = far_ground
    if "termination" in takes:
        spec["termination"] = termination
    elif termination != "auto":
        raise ValueError(f"termination: the {family} family sets its own far end; leave the termination out")
    for key, value in (
        ("insulation_thickness", insulation_thickness),
        ("insulation_permittivity", insulation_permittivity),
    ):
        if value is not None:
            if key not in takes:
                raise ValueError(f"{key}: only a wire on the ground (bog) is insulated in the model, not a {family}")
            spec[key] = value
    if gauge is not None:
        spec["gauge"] = gauge
    if diameter is not None:
        spec["diameter"] = diameter
    if conductivity is not None or permittivity is not None:
        if ground is not None:  # one ground: a named one was dropped without a word
            raise ValueError(f"give --ground or --conductivity and --permittivity, not both; got --ground {ground!r}")
        if conductivity is None or permittivity is None:
            raise ValueError("conductivity and permittivity go together")
        spec["ground"] = {"conductivity": conductivity, "permittivity": permittivity}
    else:
        spec["ground"] = DEFAULT_GROUND if ground is None else ground
    return spec


def wire_report(spec: dict, freq_hz: float, *, elevation_rad: float = DEFAULT_ELEVATION_RAD) -> dict:
    """Design figures for a long wire at one frequency (JSON-ready, SI units in the keys).

    The line's constants; the traditional length rule beside the model's best length for RDF along the wire at
    ``elevation_rad``; this wire's RDF, front-to-back and forward gain; the textbook termination (|Z0|) beside
    those of best RDF and best front-to-back; the transformer that matches the feed to the coax.
    """
    ant = from_spec(spec)
    ant.check_frequency(freq_hz)
    target = along_wire_target(0.0, elevation_rad)
    length_adv = best_length(spec, freq_hz, target=target)
    out = {
        "antenna": ant.describe(),
        **ant.design(freq_hz),
        "target_elevation_deg": float(np.degrees(elevation_rad)),
        "length_rule_m": length_adv.rule_m,
        "best_length_m": length_adv.best_m,
        "best_length_rdf_db": length_adv.best_rdf_db,
        "rdf_db": rdf_db(ant, freq_hz, target, upper_hemisphere(32)),
        "front_to_back_db": front_to_back_db(ant, freq_hz, target),
        "forward_gain_dbi": float(ant.gain_dbi(freq_hz, 0.0, np.degrees(elevation_rad))),
        "safety": SAFETY,
    }
    if "termination" in type(ant.params).model_fields:  # a resistor the builder chooses
        # The one answer (termination_answer): the resistor the antenna's termination = "auto" gives, which the
        # ranking, the build sheet and the report use too; RDF and front-to-back along the wire at 20 deg.
        answers = {c: termination_answer(ant, freq_hz, c) for c in ("rdf", "front_to_back")}
        t_rdf = best_termination(spec, freq_hz, target=target, metric="rdf")
        t_fb = best_termination(spec, freq_hz, target=target, metric="front_to_back")
        out.update(
            textbook_termination_ohm=float(ant.matched_termination_ohm(freq_hz)),
            far_ground_ohm=float(ant.far_rod_ohm),
            best_rdf_termination_ohm=answers["rdf"].best_ohm,
            best_front_to_back_termination_ohm=answers["front_to_back"].best_ohm,
            termination_answers={c: a.to_dict() for c, a in answers.items()},
            termination_criterion=getattr(ant.params, "auto_for", "rdf"),
            # How much the choice matters: each figure's range over the resistors searched (50-3000 ohm).
            termination_rdf_span_db=float(np.ptp(t_rdf.figure_db)),
            termination_front_to_back_span_db=float(np.ptp(t_fb.figure_db)),
            termination_search_ohm=[float(t_rdf.values_ohm[0]), float(t_rdf.values_ohm[-1])],
        )
        if spec.get("termination", "auto") != "auto":  # the resistor given, rated as the answers are (20 deg)
            given = float(ant.termination_ohm(freq_hz))
            out["given_termination"] = {"ohm": given, **resistor_figures_db(ant, freq_hz, given)}
    tr = transformer(ant, freq_hz)
    out.update(
        exact_turns_ratio=tr.exact_turns_ratio,
        practical_turns_ratio=tr.practical_turns_ratio,
        practical_mismatch_loss_db=tr.practical_mismatch_loss_db,
    )
    return out
