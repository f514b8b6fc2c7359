"""The pipeline's last stage: the Results of a scenario from its per-antenna figures (per target the candidates
ranked by the median SNR gain toward it, the station plan on the same statistic) and the notices a user should
read.  Composed by :mod:`snrgain.model.pipeline`."""

from __future__ import annotations

import numpy as np

from noisemodels import p372
from snrgain.decide.plan import station_plan
from snrgain.model.results import AntennaResult, Named, Notice, PatternCuts, Preview, Results, rank_for_target
from snrgain.physics import chain as chainmod
from snrgain.scenario import Scenario
from snrgain.sky import noise as noisemod
from snrgain.units import bearing_deg

LOBE_ELEVATION_DEG = 15.0
"""Elevation at which an array's main lobe is compared with its bearing [deg] (a typical low-band arrival)."""


def main_lobe_deg(antenna, freq_hz: float) -> float | None:
    """Bearing [deg] of an array's main lobe at LOBE_ELEVATION_DEG (snrgain.antennas.array.main_lobe_rad: of equal
    lobes the one nearest its bearing), for the families steered by phases or delays (``phased``); None for the
    others."""
    from snrgain.antennas.array import main_lobe_rad

    if not antenna.phased:
        return None
    az = np.arange(0.0, 360.0, 1.0)
    g = antenna.gain_linear(freq_hz, np.radians(az), np.full(az.shape, np.radians(LOBE_ELEVATION_DEG)))
    return float(np.degrees(main_lobe_rad(np.radians(az), g, float(antenna.params.bearing))))


LOBE_AWAY_DEG = 90.0
"""An array whose main lobe lies more than this from its bearing is said to point away (a sign to check)."""


def lobe_away(antenna, freq_hz: float) -> dict | None:
    """{bearing_deg, lobe_deg, off_deg, steering[, auto_for]} of an array whose main lobe (:func:`main_lobe_deg`) lies
    more than LOBE_AWAY_DEG from its bearing: the ``lobe-away-from-bearing`` notice's values; None otherwise.
    ``steering`` says how its phases were set: "given" (the user's phasing or delays, whose sign is to be checked) or
    "auto", with ``auto_for`` ("snr": under the site's noise, where the steering may turn the lobe away to null what
    it hears; "rdf", ...)."""
    lobe = main_lobe_deg(antenna, freq_hz)
    if lobe is None:
        return None
    bearing = float(np.degrees(antenna.params.bearing)) % 360.0
    off = abs((lobe - bearing + 180.0) % 360.0 - 180.0)
    if off <= LOBE_AWAY_DEG:
        return None
    given = str(getattr(antenna, "steering_label", "given")) == "given"
    how = {"steering": "given"} if given else {"steering": "auto", "auto_for": str(antenna.auto_for)}
    return {"bearing_deg": bearing, "lobe_deg": lobe, "off_deg": off, **how}


def _best_effort_values(r: AntennaResult) -> dict:
    """A receiver-limited antenna's best-effort preamplifier (where no gain reaches the margin target at some hour):
    its gain, where it goes and the worst hour's SNR loss with it, for the notice; {} where a gain reaches it."""
    b = r.preamp_best_effort
    if b is None:
        return {}
    return {
        "best_gain_db": float(b["gain_db"]),
        "best_position": b["position"],
        "best_max_snr_loss_db": float(np.max(b["snr_loss_db"])),
    }


def notices(sc: Scenario, antennas: list[AntennaResult], plan=None, skies=None) -> list[Notice]:
    """What the user should know about the results, as codes and numbers (``plan``: the station plan, whose
    switched antennas' states a notice on one of them prefers; ``skies``: the noise sky, with which a phasing unit
    set automatically is set again on a placed source moved, snrgain.decide.source_place)."""
    out = reference_setting_notices(sc)
    for r in antennas:
        if r.receiver_limited:
            needed = r.preamp_gain_needed_db
            out.append(
                Notice(
                    "receiver-limited",
                    r.name,
                    {
                        "worst_margin_db": float(np.min(r.margin_db)),
                        "margin_target_db": sc.receiver.margin_target_db,
                        "max_snr_loss_db": float(np.max(r.receiver_snr_loss_db)),
                        "preamp_gain_db": float("nan") if np.any(np.isnan(needed)) else float(np.max(needed)),
                        "preamp_position": r.preamp_position,
                        **_best_effort_values(r),
                    },
                )
            )
    for ant in sc.candidates:
        away = lobe_away(ant, sc.freq_hz)
        if away is not None:
            if away.get("auto_for") == "snr":  # set under the noise, which these sources are part of
                away |= {"composite": bool(ant.composite), "sources": [s.name for s in sc.noise.local]}
            out.append(Notice("lobe-away-from-bearing", ant.name, away))
        far = getattr(ant, "far_rod_ohm", None)
        auto = getattr(ant.params, "termination", "auto") == "auto" or getattr(ant, "sky_termination", None)
        if far and getattr(ant, "terminated", False) and auto:  # "auto", or chosen under the sky (steering)
            z0 = abs(ant.line(sc.freq_hz).z0)
            if far > 0.7 * z0:
                out.append(Notice("far-ground-too-high", ant.name, {"far_ground_ohm": far, "z0_ohm": z0}))
    out.extend(local_source_notices(sc, antennas))
    out.extend(fragile_termination_notices(sc))
    out.extend(off_target_termination_notices(sc))
    out.extend(wire_too_long_notices(sc))
    out.extend(feed_line_length_notices(sc))
    from snrgain.decide.tolerance import phasing_tolerance_notices

    out.extend(phasing_tolerance_notices(sc))
    from snrgain.decide.given_phasing import given_phasing_notices

    out.extend(given_phasing_notices(sc))
    from snrgain.decide.source_place import source_position_notices

    out.extend(source_position_notices(sc, antennas, skies))
    from snrgain.decide.lot import site_notices
    from snrgain.decide.reading import reading_notices
    from snrgain.model.feedline import notices as feed_line_notices
    from snrgain.model.scatter import tx_notices

    out.extend(site_notices(sc))
    out.extend(tx_notices(sc))
    out.extend(reading_notices(sc))
    out.extend(feed_line_notices(antennas))
    out.extend(man_made_extrapolated(sc.freq_hz, sc.noise.man_made is not None))
    from snrgain.decide.arrival import target_notices

    out.extend(target_notices(sc))
    return by_switched_antenna(sc, out, None if plan is None else plan.states)


def man_made_extrapolated(freq_hz: float, man_made: bool) -> list[Notice]:
    """The notice that P.372's man-made line is extrapolated below the frequencies it is given from, where man-made
    noise is heard there (rank's and ``snrgain noise``'s alike)."""
    lowest = p372.MAN_MADE_RANGE_HZ[0]
    if freq_hz < lowest and man_made:
        return [Notice("man-made-extrapolated", None, {"freq_hz": freq_hz, "lowest_hz": lowest})]
    return []


def by_switched_antenna(sc: Scenario, out: list[Notice], planned: dict | None = None) -> list[Notice]:
    """The notices with those of one code on several states of one switched antenna said once, where the first of
    them stood: on the antenna (its group name), its values the state's the station plan uses (``planned``: the
    plan's states by group) or else the first's (:func:`shown_by_code`: for some codes the state that asks most),
    with ``shown_state`` and ``states`` (how many of its states the notice concerns).  A notice already said once per
    antenna (it has ``shown_state``) and one on a single state stay as they are."""
    from snrgain.scenario.switched import switched_state

    states = {a.name: switched_state(a) for a in sc.candidates}

    def key(n: Notice):
        sw = states.get(n.antenna)
        if sw is None or "shown_state" in n.values:
            return None
        return (n.code, sw.group, *(str(n.values.get(k)) for k in DISTINCT_KEYS))

    groups: dict[tuple, list[Notice]] = {}
    for n in out:
        if key(n) is not None:
            groups.setdefault(key(n), []).append(n)
    result = []
    for n in out:
        same = groups.get(key(n)) if key(n) is not None else None
        if same is None or len({m.antenna for m in same}) == 1:
            result.append(n)
        elif n is same[0]:
            group = states[n.antenna].group
            in_plan, worst = shown_by_code().get(n.code, (True, None))
            used = [m for m in same if m.antenna in (planned or {}).get(group, ())] if in_plan else []
            pick = max(used or same, key=lambda m: worst(m.values)) if worst else (used or same)[0]
            count = len({m.antenna for m in same})
            values = {**pick.values, "shown_state": states[pick.antenna].state, "states": count}
            result.append(Notice(n.code, group, values))
    return result


def shown_by_code() -> dict:
    """How :func:`by_switched_antenna` picks the state a notice on several states shows, by code: (among the states
    the plan builds first?, the measure whose largest is shown); other codes, the plan's state, else the first."""
    from snrgain.decide import source_place, tolerance

    return {"phasing-tolerance": (True, tolerance.severity), "source-position": (False, source_place.severity)}


DISTINCT_KEYS = ("structure", "source", "other", "area", "scatterer")
"""Values that tell notices of one code on one antenna apart (which structure, source, other antenna or area):
notices on a switched antenna's states are said once only where these agree (:func:`by_switched_antenna`)."""


LOCAL_DOMINATES_DB = 6.0
"""A local source this far above the rest of an antenna's noise (the median over the listening hours) is most of it:
said in a notice (snrgain's threshold: four times the rest's power, 80 % of the noise; at 3 dB every demo's wires
were named, an explanation more than a warning)."""


def _part_indices(sc: Scenario, ant) -> tuple[int, ...]:
    """The indices among the scenario's antennas of a phasing unit's own antennas (the station plan builds them
    with it); () for any other antenna."""
    if not ant.composite:
        return ()
    return tuple(k for k, a in enumerate(sc.antennas) if any(a is e for e in ant.elements) and k > 0)


def _unfit_indices(sc: Scenario) -> dict[int, dict]:
    """The candidates that cannot be built where the file places them (snrgain.decide.lot.unfit), by their index
    among the scenario's antennas."""
    from snrgain.decide.lot import unfit

    found = unfit(sc)
    return {k: found[a.name] for k, a in enumerate(sc.antennas) if k > 0 and a.name in found}


def _alternative_indices(sc: Scenario) -> list[tuple[int, int]]:
    """The pairs of candidates (indices among the scenario's antennas) that stand in one place, of which the station
    plan builds one at most (snrgain.decide.lot.alternatives)."""
    from snrgain.decide.lot import alternatives

    index = {a.name: k for k, a in enumerate(sc.antennas)}
    return [(index[a], index[b]) for a, b in alternatives(sc)]


def reference_setting_notices(sc: Scenario) -> list[Notice]:
    """``reference-not-set-under-noise``: a reference that would be set under the site's noise as a candidate (an
    array steered for SNR, a phasing unit set automatically, a resistor chosen for SNR) is set for RDF toward its
    bearing instead (the placed sources' noise is counted through the reference, so its setting cannot follow
    it); values ``what``: "resistor", "phasing" or (a phasing unit) "phase and amplitude setting"."""
    ref = sc.antennas[0]
    if not getattr(ref, "uses_sky", False) or not getattr(ref, "optimised", True):
        return []
    what = "resistor" if hasattr(ref, "termination_under_sky") else None
    if what is None and hasattr(ref, "under_sky"):
        what = "phase and amplitude setting" if ref.composite else "phasing"
    return [] if what is None else [Notice("reference-not-set-under-noise", ref.name, {"what": what})]


def local_source_notices(sc: Scenario, candidates: list[AntennaResult]) -> list[Notice]:
    """``local-source-dominates`` (source, source_dbm, rest_dbm, over_db, reference) for each antenna whose loudest
    local source lies LOCAL_DOMINATES_DB or more above the rest of the noise it hears (the sky and the other
    sources; the receiving chain's own noise apart), both at the receiver input and as medians
    over the scenario's months and hours: a candidate's SNR gain then rests on how it hears that source, not on its
    directivity toward the sky; the reference's (``reference`` True), every candidate's gain over it does."""
    from snrgain.model.spread import median  # np.median's value without loading numpy.ma

    names = [s.name for s in sc.noise.local]
    out = []
    for r in candidates:
        comps = {k: np.asarray(v, dtype=float) for k, v in (r.noise_by_component_dbm or {}).items() if v is not None}
        local = [n for n in names if n in comps]
        if not local:
            continue
        watts = {k: np.where(np.isfinite(v), 10 ** (v / 10), 0.0) for k, v in comps.items()}
        loudest = max(local, key=lambda n: float(median(watts[n])))
        rest = sum((w for k, w in watts.items() if k != loudest), np.zeros_like(watts[loudest]))
        src_dbm = float(10 * np.log10(max(float(median(watts[loudest])), 1e-300)))
        rest_w = float(median(rest))
        rest_dbm = float(10 * np.log10(rest_w)) if rest_w > 0 else float("-inf")
        if src_dbm - rest_dbm >= LOCAL_DOMINATES_DB:
            out.append(
                Notice(
                    "local-source-dominates",
                    r.name,
                    {
                        "source": loudest,
                        "source_dbm": src_dbm,
                        "rest_dbm": rest_dbm,
                        "over_db": src_dbm - rest_dbm,
                        "reference": r.name == sc.antennas[0].name,
                    },
                )
            )
    return out


FRAGILE_QUIET_FRONT_TO_BACK_DB = 20.0
"""A resistor of best SNR gain that keeps this much front-to-back as built (its E12 value) is not said to be
fragile: its rear null is a null of its own, whatever a deeper one elsewhere gives (snrgain's choice: a null 20 dB
down already leaves the noise from behind under the sky's from the front on most sites)."""
FRAGILE_OVER_DB = 1.0
"""A resistor chosen for SNR under the site's noise that beats |Z0| by less than this [dB] ..."""
FRAGILE_FRONT_TO_BACK_DB = 10.0
"""... while giving up this much front-to-back against |Z0| per dB it gains, and at least
FRAGILE_FRONT_TO_BACK_FLOOR_DB, is said to rest on the noise as modelled (snrgain's thresholds: a tenth of the
front-to-back's power traded for 1 dB; a tester's BOG took 998 ohm for 0.09 dB over 325 ohm, giving up 4.4 dB)."""
FRAGILE_FRONT_TO_BACK_FLOOR_DB = 3.0


def trades_front_to_back(over_matched_db: float, given_up_db: float) -> bool:
    """Whether a resistor that beats |Z0| by ``over_matched_db`` of SNR gain while giving up ``given_up_db`` of
    front-to-back against it trades too much of the rear null for what it adds (the thresholds above)."""
    return over_matched_db < FRAGILE_OVER_DB and given_up_db >= max(
        FRAGILE_FRONT_TO_BACK_FLOOR_DB, FRAGILE_FRONT_TO_BACK_DB * over_matched_db
    )


def fragile_termination_notices(sc: Scenario) -> list[Notice]:
    """``termination-fragile`` (termination_ohm, safer_ohm, safer: "matched", "rdf" or "front_to_back", safer_words,
    over_safer_db,
    front_to_back_db, front_to_back_safer_db) for each candidate whose resistor, chosen for SNR gain under the site's
    noise (termination = "auto", auto_for = "snr"), beats a resistor that rests on the antenna alone by less than
    FRAGILE_OVER_DB while its front-to-back toward the bearing lies FRAGILE_FRONT_TO_BACK_DB per dB gained (at least
    FRAGILE_FRONT_TO_BACK_FLOOR_DB) below that one's: a null placed on the noise as modelled (a source's bearing and
    level, the storms' directions), which a real site may not hold to.  The resistors weighed: the matched one (a
    wire's |Z0| less the far ground, a loop's |Z0|), the one of best RDF (a uniform sky's) and the one of best
    front-to-back (a reviewer's 150 m Beverage: 66 ohm for SNR, 1.5 dB over |Z0| but 0.7 dB over 291 ohm, which kept
    18 dB of front-to-back against 9); of those the warning
    holds for, the one of higher front-to-back is named (a short Beverage's best RDF at 215 ohm kept 17 dB where its
    514 ohm |Z0| kept 6 dB)."""
    from snrgain.antennas.longwire import AUTO_ELEVATION_RAD, termination_figure
    from snrgain.decide.build import nearest_standard_ohm
    from snrgain.tools.wiredesign import sky_figure_db, termination_answer

    out = []
    for ant in sc.candidates:
        sky = getattr(ant, "sky_termination", None)
        if sky is None:
            continue
        ans = termination_answer(ant, sc.freq_hz)
        if ans is None:
            continue
        bearing = getattr(ant, "bearing_rad", getattr(ant.params, "bearing", 0.0))
        elevation = getattr(ant.params, "auto_elevation", AUTO_ELEVATION_RAD)
        fb = termination_figure(ant.termination_pattern(sc.freq_hz), bearing, elevation, "front_to_back")

        def fb_db(r, fb=fb):
            return float(10 * np.log10(max(fb(max(r, 1e-3)), 1e-30)))

        # as built: each resistor's nearest E12 value (a sharp null at one exact value is not what a builder solders)
        built = nearest_standard_ohm(ans.best_ohm)
        at_best = fb_db(built)
        if at_best >= FRAGILE_QUIET_FRONT_TO_BACK_DB:
            continue  # the resistor as built keeps a rear null of its own
        weighed = [("matched", ans.matched_ohm, ans.over_matched_db, ans.matched_words)]
        for criterion, words in (
            ("rdf", "the resistor of best RDF"),
            ("front_to_back", "the resistor of best front-to-back"),
        ):
            other = termination_answer(ant, sc.freq_hz, criterion)
            if other is None or any(abs(np.log(other.best_ohm / max(w[1], 1e-3))) <= 0.05 for w in weighed):
                continue  # the same resistor as one weighed already
            weighed.append((criterion, other.best_ohm, ans.best_db - sky_figure_db(sky, other.best_ohm), words))
        said = [
            (fb_db(nearest_standard_ohm(ohm)), which, ohm, over, words)
            for which, ohm, over, words in weighed
            if nearest_standard_ohm(ohm) != built
            and trades_front_to_back(over, fb_db(nearest_standard_ohm(ohm)) - at_best)
        ]
        if not said:
            continue
        safer_fb, which, ohm, over, words = max(said)
        out.append(
            Notice(
                "termination-fragile",
                ant.name,
                {
                    "termination_ohm": ans.best_ohm,
                    "safer_ohm": float(ohm),
                    "safer": which,
                    "safer_words": words,
                    "over_safer_db": float(over),
                    "front_to_back_db": at_best,
                    "front_to_back_safer_db": safer_fb,
                    "standard_ohm": built,
                    "safer_standard_ohm": nearest_standard_ohm(ohm),
                    "elevation_deg": float(np.degrees(elevation)),
                },
            )
        )
    return out


def off_target_termination_notices(sc: Scenario) -> list[Notice]:
    """``termination-off-target`` (target, target_bearing_deg, bearing_deg, off_deg, below_db) for each candidate
    whose resistor was to be chosen for SNR gain under the site's noise (termination = "auto", auto_for = "snr") but
    whose nearest target lies outside its main lobe (snrgain.model.steering.target_outside_lobe): the steering left
    it the resistor of best RDF, and the user is told why."""
    from snrgain.model.steering import nearest_target, target_outside_lobe

    out = []
    for ant in sc.candidates:
        if not hasattr(ant, "termination_under_sky") or not getattr(ant, "uses_sky", False):
            continue
        if getattr(ant, "sky_termination", None) is not None:
            continue
        off = target_outside_lobe(sc, ant, nearest_target(sc, ant.params.bearing))
        if off is not None:
            out.append(Notice("termination-off-target", ant.name, off))
    return out


FEED_LINE_LENGTHS_APART = 0.25
"""A chain's feed-line length and the feed_line's run (the same cable) further apart than this share of the run are
said (:func:`feed_line_length_notices`)."""


def feed_line_length_notices(sc: Scenario) -> list[Notice]:
    """``feed-line-lengths-differ`` (chain_m, run_m) for each candidate whose own chain gives its feed line a cable
    length more than FEED_LINE_LENGTHS_APART off its ``feed_line``'s run (straight from the feed point to the station
    entry): one cable, whose loss the chain counts and whose shield's pickup the run models.  A chain shorter than the
    straight run cannot be; a much longer one may be the cable's real route, or a slip."""
    out = []
    for k, ant in enumerate(sc.antennas):
        fl = sc.feed_lines.get(ant.name)
        length = getattr(sc.chains[k], "length_m", None)
        if fl is None or length is None:
            continue
        run = float(np.hypot(fl.end_m[0] - fl.start_m[0], fl.end_m[1] - fl.start_m[1]))
        if run > 0 and abs(length - run) > FEED_LINE_LENGTHS_APART * run:
            out.append(Notice("feed-line-lengths-differ", ant.name, {"chain_m": float(length), "run_m": run}))
    return out


LONG_WIRE_RULE_FACTOR = 1.5
"""A wire longer than this many times the maximum-effective-length rule (snrgain.physics.lines) has its RDF looked at
over shorter lengths (:func:`wire_too_long_notices`); shorter ones are not (a Beverage in the air rarely is)."""
SHORTER_BETTER_DB = 1.5
"""A shorter wire whose RDF beats the wire's own by this much [dB] is said."""


def wire_too_long_notices(sc: Scenario) -> list[Notice]:
    """``wire-too-long`` (length_m, rule_m, rdf_db, best_length_m, best_rdf_db, target, velocity_factor, resistor:
    "rdf" or "given") for each travelling-wave wire longer than LONG_WIRE_RULE_FACTOR times the maximum-effective-length
    rule toward its nearest target whose RDF toward it is beaten by SHORTER_BETTER_DB or more at a shorter length,
    each length with its own resistor of best RDF (a resistor the user gave kept as given) (twelve
    lengths from 0.3 of its own, on a coarse sky; the two figures said are worked on the scenario's own): a BOG,
    whose wave runs at a third of the speed of light, slips out of step with the arriving wave within a few tens of
    metres, and past that its RDF rises and falls with length."""
    from noisemodels.sphere import upper_hemisphere
    from snrgain.antennas.base import variant
    from snrgain.model.steering import nearest_target, target_outside_lobe
    from snrgain.physics.ground import C_M_PER_S
    from snrgain.physics.lines import max_effective_length_m
    from snrgain.tools.wiredesign import rdf_db

    out = []
    coarse = None
    for ant in sc.candidates:
        if not (getattr(ant, "long_wire", False) and hasattr(ant, "line") and hasattr(ant, "length_m")):
            continue
        if ant.composite or not hasattr(ant.params, "bearing"):
            continue
        ti = nearest_target(sc, ant.params.bearing)
        if target_outside_lobe(sc, ant, ti) is not None:
            continue  # judged toward a target it does not face, a shorter (less directional) wire would only "win"
        t = sc.targets[ti]
        vf = float(ant.line(sc.freq_hz).velocity_factor)
        rule = max_effective_length_m(C_M_PER_S / sc.freq_hz, velocity_factor=vf, elevation_rad=t.mean_elevation_rad)
        if not ant.length_m > LONG_WIRE_RULE_FACTOR * rule:
            continue
        coarse = upper_hemisphere(16) if coarse is None else coarse
        given = getattr(ant.params, "termination", "auto") != "auto" and getattr(ant, "sky_termination", None) is None
        by_rdf = "termination" in type(ant.params).model_fields and not given  # each length its own best resistor
        resistor = {"termination": "auto", "auto_for": "rdf"} if by_rdf else {}  # a user's resistor (or none) as given

        def trial(x, ant=ant, resistor=resistor):
            return variant(ant, length=float(x), **resistor)

        lengths = np.geomspace(0.3 * ant.length_m, ant.length_m, 12)
        rdf = [rdf_db(trial(x), sc.freq_hz, t, coarse) for x in lengths]
        k = int(np.argmax(rdf))
        if rdf[k] - rdf[-1] < SHORTER_BETTER_DB:
            continue
        grid = upper_hemisphere(sc.nside)
        own, best = (rdf_db(trial(x), sc.freq_hz, t, grid) for x in (ant.length_m, lengths[k]))
        if best - own < SHORTER_BETTER_DB:
            continue
        out.append(
            Notice(
                "wire-too-long",
                ant.name,
                {
                    "length_m": float(ant.length_m),
                    "rule_m": float(rule),
                    "rdf_db": float(own),
                    "best_length_m": float(lengths[k]),
                    "best_rdf_db": float(best),
                    "target": t.name,
                    "velocity_factor": vf,
                    "resistor": "rdf" if by_rdf else "given",
                },
            )
        )
    return out


def _tx_rows(sc: Scenario) -> list[dict]:
    """What the transmitting vertical and the structures do to each antenna (snrgain.model.scatter.tx_effects: the
    same computation the notices read, made once)."""
    from snrgain.model.scatter import tx_effects

    return tx_effects(sc)[0]


def decide(sc: Scenario, skies: noisemod.SkySeries, antennas: list[AntennaResult], cuts: PatternCuts) -> Results:
    """The Results of a scenario from its per-antenna figures: per target the candidates ranked by the median SNR
    gain toward it, and the station plan on that same statistic (snrgain.decide.plan)."""
    reference, candidates = antennas[0], antennas[1:]
    targets = _target_dicts(sc)
    plan = station_plan(
        [a.name for a in antennas],
        np.array([a.snr_gain_median_db for a in antennas]),
        sc.target_weights,
        max_antennas=sc.max_antennas,
        buildable=[ant.buildable for ant in sc.antennas],
        target_times=[(list(tt.months), list(tt.utc_hours)) for tt in sc.target_times],
        groups=[a.group for a in antennas],
        parts=[_part_indices(sc, ant) for ant in sc.antennas],
        alternatives=_alternative_indices(sc),
        unfit=_unfit_indices(sc),
    )
    return Results(
        source=sc.source,
        site=_site_dict(sc),
        freq_hz=sc.freq_hz,
        bandwidth_hz=sc.bandwidth_hz,
        months=list(sc.times.months),
        utc_hours=list(sc.times.utc_hours),
        targets=targets,
        noise=skies,
        reference=reference,
        candidates=candidates,
        receiver=_receiver_dict(sc),
        nside=sc.nside,
        target_results=[rank_for_target(candidates, i, t["name"], reference) for i, t in enumerate(targets)],
        plan=plan,
        uncertainty=_uncertainty_dict(sc),
        beat_by_db=sc.uncertainty.beat_by_db,
        notices=notices(sc, [reference, *candidates], plan, skies),
        tx_vertical=_tx_rows(sc),
        cuts=cuts,
        lot_m=None if sc.site.lot_m is None else list(sc.site.lot_m),
        local_sources=_local_source_dicts(sc),
        site_plan=_site_plan(sc),
    )


def _site_plan(sc: Scenario) -> dict | None:
    """The site to scale as the scenario places it (lot, keep-outs, clearance, sources, every antenna as built), in
    metres (the command line redraws it in the scenario's own unit); None where shapely cannot make it."""
    from snrgain.outputs.siteplan import plan_of  # geometry only: data for the figures, no drawing

    try:
        return plan_of(sc)
    except (ValueError, TypeError):  # a site with nothing placed: the figures fall back on the results alone
        return None


def _receiver_dict(sc: Scenario) -> dict:
    ch = chainmod.describe(sc.chain, bandwidth_hz=sc.bandwidth_hz)
    return {
        "noise_figure_db": sc.receiver.noise_figure_db,
        "noise_floor_dbm": ch["noise_floor_dbm"],
        "margin_target_db": sc.receiver.margin_target_db,
        "chain_noise_figure_db": ch["noise_figure_db"],
        "chain_gain_db": ch["gain_db"],
        "chain_stages": ch["stages"],
    }


def _uncertainty_dict(sc: Scenario) -> dict:
    u = sc.uncertainty
    gs = sc.site.ground_spread if u.ground else None
    return {
        "ground": None
        if gs is None or gs.is_zero
        else {
            "conductivity_s_per_m": list(gs.conductivity_s_per_m),
            "permittivity": list(gs.permittivity),
            "source": gs.source,
        },
        "noise_deciles": u.noise_deciles,
        "local_sources_db": {s.name: s.uncertainty_db for s in sc.noise.local if s.uncertainty_db > 0}
        if u.local_sources
        else {},
        "hours": u.hours,
        "samples": u.samples,
        "seed": u.seed,
        "beat_by_db": u.beat_by_db,
    }


def preview(sc: Scenario, *, skies: noisemod.SkySeries | None = None, cuts: PatternCuts | None = None) -> Preview:
    """What the figures show of ``sc`` before its results (:class:`snrgain.model.results.Preview`): the fields
    :func:`decide` fills from the scenario, made by the same functions, with the noise sky and the pattern cuts as
    the stages make them (``sc`` as steered, for the cuts: :func:`snrgain.model.pipeline.evaluate`'s
    ``observe``)."""
    named = [Named(a.name, a.family) for a in sc.antennas]
    return Preview(
        site=_site_dict(sc),
        freq_hz=sc.freq_hz,
        months=list(sc.times.months),
        utc_hours=list(sc.times.utc_hours),
        targets=_target_dicts(sc),
        local_sources=_local_source_dicts(sc),
        reference=named[0],
        candidates=named[1:],
        noise=skies,
        cuts=cuts,
    )


def _site_dict(sc: Scenario) -> dict:
    ground = sc.site.ground
    return {
        "name": sc.site.name,
        "latitude_deg": sc.site.latitude_deg,
        "longitude_deg": sc.site.longitude_deg,
        "ground": "perfect" if ground is None else ground.name,
        "ground_conductivity_s_per_m": None if ground is None else ground.conductivity_s_per_m,
        "ground_permittivity": None if ground is None else ground.permittivity,
        "length_unit": sc.site.length_unit,
    }


def _local_source_dicts(sc: Scenario) -> list[dict]:
    return [
        {
            "name": s.name,
            "bearing_deg": bearing_deg(s.bearing_rad),
            "elevation_deg": float(np.degrees(s.elevation_rad)),
            "spread_deg": float(np.degrees(s.spread_rad)),
            "level_dbm": s.level_dbm,
            "fa_db": s.fa_db,
            "read_on": s.read_on if s.level_dbm is not None else None,
        }
        for s in sc.noise.local
    ]


def _target_dicts(sc: Scenario) -> list[dict]:
    return [_target_dict(t, w, tt) for t, w, tt in zip(sc.targets, sc.target_weights, sc.target_times)]


def _target_dict(t, w, times) -> dict:
    return {
        "name": t.name,
        "weight": float(w),
        "bearing_deg": bearing_deg(t.bearing_rad),
        "elevation_min_deg": float(np.degrees(t.elevation_rad.min())),
        "elevation_max_deg": float(np.degrees(t.elevation_rad.max())),
        "distance_km": None if t.distance_m is None else t.distance_m / 1e3,
        # (fewest, most) hops: one hop alone (near-vertical incidence) as [1, 1], the pair every reader takes
        "hops": None if t.hops is None else [int(t.hops[0]), int(t.hops[-1])],
        "months": list(times.months),
        "utc_hours": list(times.utc_hours),
    }
