"""Sentences for the user, from the data the library returns (:class:`snrgain.model.results.Notice`).

The library records what happened as codes and numbers; this module, at the
edge, says it in words for the terminal, the report and the JSON warnings.
"""

from __future__ import annotations

import numpy as np

from snrgain.model.notices import Notice
from snrgain.physics.chain import SUGGESTED_PREAMP_NOISE_FIGURE_DB
from snrgain.units import length_text, number_text, per_m, s_units, signed_text, significant_text


def _upper_bound(v) -> str:
    """What a strong-signal level is for an antenna without a modelled feed load (a vertical, a small loop, a
    pattern table): the power available to a matched load, an upper bound on what its feed delivers."""
    if not v.get("upper_bound"):
        return ""
    return (
        " (an upper bound: the power this antenna makes available to a matched load; a short vertical or small loop "
        "delivers less into a 50 ohm input)"
    )


def _assumed(keys) -> str:
    if not keys:
        return ""
    return f" (its {', '.join(keys)} assumed: give them in [chain.preamp] or [receiver] from the datasheet)"


def _other_stages_text(v: dict, level_key: str, verb: str, against: str) -> str:
    """The chain's other active stages of a strong-signal notice (its ``stages``, in the chain's order), each with
    its level and where it stands against ``against``: "; the preamplifier ahead of it takes -14 dBm, 9 dB under
    its safe level"."""
    stages = v.get("stages") or []
    names = [x["stage"] for x in stages]
    if v["stage"] not in names:
        return ""
    at = names.index(v["stage"])
    said = []
    for i, x in enumerate(stages):
        if i == at:
            continue
        where = "ahead of it" if i < at else "after it"
        over = x["over_db"]
        stand = f"{over:.0f} dB above {against} as well" if over > 0 else f"{-over:.0f} dB below {against}"
        assumed = f" (its {', '.join(x['assumed'])} assumed)" if x["assumed"] else ""
        said.append(f"the {x['stage']} {where} {verb} {x[level_key]:+.0f} dBm, {stand}{assumed}")
    return "".join(f"; {s}" for s in said)


_TRAP_WHY = {
    "broadcast band": "it shares the medium-wave broadcast band with the frequency listened to, where a high- or "
    "low-pass would cut off that band as well",
    "close": "it lies too close to the frequency listened to for a high- or low-pass to turn over between them",
}


def _mhz(hz: float) -> str:
    return f"{hz / 1e6:g} MHz"


def _one_filter_text(f: dict, listen_hz: float) -> str:
    """One filter of a strong-signal-overload notice (snrgain.physics.strong.overload_filters) in words."""
    at = ", ".join(f"{name} at {_mhz(hz)}" for name, hz in zip(f["stations"], f["frequencies_hz"]))
    if f["kind"] == "none":
        apart = abs(f["frequencies_hz"][0] - listen_hz) / 1e3
        return (
            f"no filter takes out {f['stations'][0]} at {_mhz(f['frequencies_hz'][0])}: {apart:g} kHz from the "
            "frequency listened to, a trap deep enough would take the wanted signal with it; null it with the "
            f"antenna's pattern, or put an attenuator of at least {f['rejection_db']:.0f} dB before the first "
            "amplifier (it costs SNR only where the receiver's own noise comes near the antenna's)"
        )
    if f["kind"] == "trap":
        return f"a trap (notch) tuned to {_mhz(f['frequencies_hz'][0])} for {f['stations'][0]} ({_TRAP_WHY[f['why']]})"
    if f["kind"] == "high-pass":
        edge = f"between {_mhz(max(f['frequencies_hz']))} and the {_mhz(listen_hz)} listened to"
    else:
        edge = f"between the {_mhz(listen_hz)} listened to and {_mhz(min(f['frequencies_hz']))}"
    return f"a {f['kind']} filter turning over {edge} (for {at})"


def _overload_filters_text(v: dict) -> str:
    """The filters that cure a strong-signal-overload notice: their kind follows where each station lies."""
    usable = [f for f in v["filters"] if f["kind"] != "none"]
    parts = []
    if usable:
        n = sum(len(f["stations"]) for f in usable)
        each = "the station" if n == 1 else f"each of those {n} stations"
        said = " and ".join(_one_filter_text(f, v["listen_hz"]) for f in usable)
        parts.append(f"{said}, taking at least {v['filter_db']:.0f} dB off {each} before the first amplifier")
    parts += [_one_filter_text(f, v["listen_hz"]) for f in v["filters"] if f["kind"] == "none"]
    return "; " + "; ".join(parts) + (", cures it" if len(parts) == 1 and usable else "")


_DETUNE_CAUTION = (
    "; detune it while receiving: a relay opening its feed (or switching in a detuning reactance), rated for the "
    "transmitter's power and voltage and switched so that the transmitter can never key into it open, per "
    "licensed practice and the equipment's ratings"
)
_STRUCTURE_CAUTION = (
    "; a tower is climbed and worked on: never fasten a wire or its support to a guy wire, an anchor or the "
    "structure, keep wires where a climber, a dropped tool or an antenna being raised cannot catch them, and leave "
    "the guys, anchors and their radius as the structure's installation instructions and local codes set them"
)


def _near_structure_text(n: Notice, unit: str) -> str:
    """A near-structure notice (snrgain.decide.lot.structure_notices) in words, lengths in ``unit``."""
    from snrgain.decide.lot import LEAST_STRUCTURE_CLEARANCE_M

    v = n.values
    least = length_text(LEAST_STRUCTURE_CLEARANCE_M, unit, 0)
    how = (
        "your clearance for it"
        if v.get("given", True)
        else f"its height, at least {least}: a guyed tower's anchors commonly stand 60-80 % of its height from its foot"
    )
    return (
        f"{n.antenna}: {place_phrase(n.code, v, unit, how=how, digits=1)}: closer, a wire or element runs among its "
        f"guy wires and anchors, and the structure's computed re-radiation is checked against NEC-2 only from {least} "
        "out; move the antenna clear of it" + _STRUCTURE_CAUTION
    )


def _either(words) -> str:
    """ "north, east or south"."""
    words = list(words)
    return words[0] if len(words) == 1 else f"{', '.join(words[:-1])} or {words[-1]}"


def _ns_text(x: float) -> str:
    """A small figure to two significant digits at most (0.39, 4.1, 10)."""
    return f"{x:.2g}" if x < 10 else f"{x:.0f}"


def criterion_words(criterion: str, target: str | None = None) -> str:
    """A termination criterion in words, toward its target where it has one (the one wording for the notices and
    the build lines)."""
    words = {"rdf": "RDF", "front_to_back": "front-to-back", "z0": "|Z0|", "snr": "SNR gain"}.get(criterion, criterion)
    return f"{words} toward {target}" if target else words


def _db(x: float, decimals: int = 0) -> str:
    """A figure in dB (front-to-back: often near 0) to ``decimals`` places, never "-0" (:func:`number_text`)."""
    return number_text(x, f"{{:.{decimals}f}}")


def choke_text(ohm: float) -> str:
    """A choke's suggested impedance to two significant figures, as the build sheet and the warnings say it (a
    choke's impedance is known to a few per cent at best): 45401 -> "about 45000 ohm", 5061 -> "about 5100 ohm"."""
    return f"about {significant_text(float(f'{float(ohm):.2g}'), 2)} ohm"


def apart_text(counts: dict[str, int], where: str, per_band: bool = False) -> str:
    """The one line that counts the warnings set apart (on candidates the station plan does not build:
    snrgain.model.results.Results.notices_apart; ``per_band``, a plan across bands: or does not use on the band of
    the warning), by antenna; ``where`` says where they are said in full.

    >>> apart_text({"flag pair": 3, "BOG Japan": 1}, "see below")
    '4 more warnings on candidates the station plan does not build (flag pair: 3, BOG Japan: 1); see below'
    """
    total = sum(counts.values())
    each = ", ".join(f"{name}: {k}" for name, k in counts.items())
    what = "warning" if total == 1 else "warnings"
    whose = "does not build or does not use on that band" if per_band else "does not build"
    return f"{total} more {what} on candidates the station plan {whose} ({each}); {where}"


def hops_text(hops) -> str:
    """A target by place's hop counts in words: '2-3 hops', or '1 hop from nearly overhead, NVIS'.

    >>> hops_text([1])
    '1 hop from nearly overhead, NVIS'
    """
    if len(hops) == 1:
        return "1 hop from nearly overhead, NVIS"
    return f"{hops[0]}-{hops[-1]} hops"


def _overhead_words(v: dict) -> str:
    """When a wave from overhead comes back at the target-near-vertical notice's frequency: the layer returns a wave
    arriving at elevation e below its critical frequency over sin(e) (the secant law; K. Davies, "Ionospheric Radio",
    Peter Peregrinus 1990, ch. 6, from memory), by day and by night at the critical frequencies the scenario takes."""
    f, day, night = v.get("freq_hz"), v.get("critical_day_hz"), v.get("critical_night_hz")
    if f is None or day is None or night is None:
        return "such a sky wave comes back only while the frequency lies below the layer's critical frequency"
    k = 1.0 / np.sin(np.radians(v["elevation_deg"]))
    back = [when for when, fc in (("by day", day), ("by night", night)) if f < fc * k]
    head = (
        f"at {f / 1e6:g} MHz, with the layer's critical frequency the scenario takes ({day / 1e6:g} MHz by day, "
        f"{night / 1e6:g} MHz by night), a wave this steep "
    )
    if not back:
        return head + "passes through the layer by day and by night: it may not come back at all"
    return head + ("comes back " + " and ".join(back) if len(back) == 2 else f"comes back only {back[0]}")


_SAID_ONCE = {
    _STRUCTURE_CAUTION: "; the tower's caution above applies",
    _DETUNE_CAUTION: "; detune it while receiving, as above",
}
"""Long cautions of the trade that a list of warnings says in full once: later warnings name them instead."""


def notice_texts(notices, unit: str = "m") -> list[str]:
    """:func:`notice_text` of each notice in turn, a long caution said once (:func:`said_once`)."""
    return said_once([notice_text(n, unit=unit) for n in notices])


def said_once(texts: list[str]) -> list[str]:
    """Warnings as a list says them: a long caution (:data:`_SAID_ONCE`) in full in the first that carries it, named
    in the later ones (a tower beside several antennas said it for each); each warning alone (JSON) keeps it whole."""
    out, said = [], set()
    for text in texts:
        for caution, short in _SAID_ONCE.items():
            if text.endswith(caution):
                if caution in said:
                    text = text[: -len(caution)] + short
                said.add(caution)
        out.append(text)
    return out


def notice_text(n: Notice, unit: str = "m") -> str:
    """One notice as a sentence (prefixed by the antenna's name where it concerns one); lengths in ``unit`` (the
    scenario's: "m" or "ft")."""
    v = n.values
    if v.get("shown_state"):  # the states of one switched antenna said once (snrgain.decide.decisions.notices)
        n = Notice(n.code, f"{n.antenna} (in {v['states']} of its states; {v['shown_state']} shown)", v)
    if n.code == "receiver-limited":
        margin = v["worst_margin_db"]
        where = (
            f"only {margin:.1f} dB above the receiver floor"
            if round(margin, 1) > 0
            else f"{-margin:.1f} dB below the receiver floor"
            if round(margin, 1) < 0
            else "at the receiver floor"
        )
        return (
            f"{n.antenna}: external noise is {where} "
            f"at worst (target {v['margin_target_db']:g} dB); receiver noise costs up to "
            f"{v['max_snr_loss_db']:.1f} dB of SNR. "
            + preamp_advice_text(v["preamp_gain_db"], v["preamp_position"])
            + best_effort_text(v)
        )
    if n.code == "given-phasing-short":
        lags = ", ".join(f"{x:g}" for x in v["best_lags_deg"])
        return (
            f"{n.antenna}: its given phasing gives an RDF of {v['rdf_db']:.1f} dB toward {v['bearing_deg']:.0f} deg "
            f"(front-to-back {_db(v['front_to_back_db'])} dB); the same array phased for RDF there gives "
            f"{v['rdf_best_db']:.1f} dB (front-to-back {_db(v['front_to_back_best_db'])} dB), with phase lags of "
            f"{lags} deg element by element: check the phasing (a close pair wants nearly 180 deg less its "
            "spacing in degrees, common practice), or write steering = 'auto'"
        )
    if n.code == "reference-not-set-under-noise":
        return (
            f"{n.antenna} (the reference): its {v['what']} is set for the best RDF toward its bearing, not for the "
            "SNR under the site's noise as when it is ranked as a candidate (a reference is not set under the noise: "
            "every antenna's noise from a placed source is counted through it), so its figures here differ from its "
            "row in a ranking over another antenna; rank it as a candidate to see it set for the SNR"
        )
    if n.code == "lobe-away-from-bearing":
        return _lobe_away_text(n)
    if n.code == "level-every-band":
        dbm = v.get("level_dbm")
        given = f"level ({dbm:.0f} dBm, {s_units(dbm)})" if dbm is not None else f"Fa ({v['fa_db']:.1f} dB)"
        return (
            f"noise source {v['source']!r}: its {given} is taken on every band ({', '.join(map(repr, v['bands']))}): a "
            f"{'reading' if dbm is not None else 'measured Fa'} holds on the band it was made on (a source's noise, "
            "and man-made noise in general, changes from band to band); where it was measured on one band only, rank "
            "that band alone (--band), or run a file per band with its own value"
        )
    if n.code == "resistor-per-band":
        bands = v["bands"]

        def own(b):
            end = {"low": " (the lowest searched)", "high": " (the highest searched)"}.get(b.get("at_search_bound"), "")
            return f"{b['termination_ohm']:.0f} ohm{end} on {b['band']}"

        whys = {(b["criterion"], b["target"]) for b in bands}
        if len(whys) == 1:
            crit, target = next(iter(whys))
            why = f" (each for the best {criterion_words(crit, target)} there)"
        else:
            why = " (" + "; ".join(f"{b['band']}: {criterion_words(b['criterion'], b['target'])}" for b in bands) + ")"
        served = " and ".join(b["band"] for b in bands)
        costs = " and ".join(
            f"{b['loss_db']:.1f} dB on {b['band']} (front-to-back {_db(b['front_to_back_db'])} dB)" for b in bands
        )
        text = (
            f"{n.antenna} serves {served} but its best resistor differs between them: "
            f"{', '.join(own(b) for b in bands)}{why}. Built once, it takes one resistor: {v['common_ohm']:.0f} ohm "
            f"(nearest E12 value {v['common_standard_ohm']:.0f} ohm) loses least at worst, {costs}"
        )
        safer = v.get("safer")
        if safer:
            alt = " and ".join(
                f"{b['loss_db']:.1f} dB on {b['band']} (front-to-back {_db(b['front_to_back_db'])} dB)"
                for b in safer["bands"]
            )
            text += (
                f"; but that gives up the rear null for little: {safer['words']}, {safer['ohm']:.0f} ohm (nearest E12 "
                f"value {safer['standard_ohm']:.0f} ohm), loses {alt}, and is the safer build unless you trust the "
                "noise as modelled"
            )
        if v["worst_db"] < 0.05:  # no band gives up anything to speak of: nothing to switch
            return text + ("; otherwise build that one" if safer else ": build that one")
        return text + "; or switch the resistor per band (a relay at the far end) to keep each band's own"
    if n.code == "wire-too-long":
        return (
            f"{n.antenna}: at {length_text(v['length_m'], unit, 0)} it is {v['length_m'] / v['rule_m']:.1f} times the "
            f"maximum-effective-length rule ({length_text(v['rule_m'], unit, 0)} at velocity factor "
            f"{v['velocity_factor']:.2f}; common practice), and its RDF toward {v['target']} is {v['rdf_db']:.1f} dB "
            f"where {length_text(v['best_length_m'], unit, 0)} of the same wire gives {v['best_rdf_db']:.1f} dB"
            + (" (each length with its own resistor of best RDF)" if v.get("resistor") == "rdf" else "")
            + ": past "
            "the rule the wave on the wire slips out of step with the arriving wave and the RDF rises and falls with "
            "length; a shorter wire would do better ('snrgain wire' gives the whole length curve)"
        )
    if n.code == "feed-line-lengths-differ":
        shorter = v["chain_m"] < v["run_m"]
        return (
            f"{n.antenna}: the feed line its chain counts (chain.feedline length) is "
            f"{length_text(v['chain_m'], unit, 0)} long but its run on the plan (feed_line) is "
            f"{length_text(v['run_m'], unit, 0)} straight from the antenna "
            "to the station entry; they are one cable, "
            "whose loss the chain counts and whose shield's pickup the run models: "
            + (
                "a cable shorter than the straight run cannot reach, so one of the two is wrong"
                if shorter
                else "where the cable does not run straight the chain's length is its real one, else make them agree"
            )
        )
    if n.code == "termination-off-target":
        return (
            f"{n.antenna}: its nearest target, {v['target']} at {v['target_bearing_deg']:.0f} deg, "
            f"{v['off_deg']:.0f} deg off its bearing {v['bearing_deg']:.0f} deg, lies {v['below_db']:.0f} dB under "
            "the peak of its pattern there, so its resistor is the one of best RDF toward its bearing, not one "
            "tuned toward a target it hardly hears"
        )
    if n.code == "far-ground-too-high":
        resistor = v["z0_ohm"] - v["far_ground_ohm"]
        head = f"{n.antenna}: its far ground ({v['far_ground_ohm']:.0f} ohm) "
        head += (
            f"exceeds the wire's |Z0| ({v['z0_ohm']:.0f} ohm), so no resistor can terminate it"
            if resistor <= 0
            else f"takes up most of the wire's |Z0| ({v['z0_ohm']:.0f} ohm), leaving a {resistor:.0f} ohm resistor"
        )
        return (
            head + "; a rod's resistance drifts with soil moisture and the rear null with it: lower the far ground "
            "(longer or more rods, or a few short radials) until the resistor carries most of |Z0|"
        )
    if n.code in ("off-lot", "in-keep-out"):
        return f"{n.antenna}: {place_phrase(n.code, v, unit)}"
    if n.code == "wires-same-place":
        return (
            f"{n.antenna}: lies where {v['other']} lies; fine as alternatives to compare, but only one can be "
            "built there (built side by side, close wires couple and each changes the other's pattern)"
        )
    if n.code == "antennas-same-place":
        where = (
            f"touches {v['other']}"
            if v["distance_m"] < 0.05
            else f"stands {length_text(v['distance_m'], unit, 1)} from {v['other']}"
        )
        return (
            f"{n.antenna}: {where}; fine as alternatives to compare, but both cannot be built there: antennas that "
            "close couple, which the model leaves out, and each changes the other's pattern"
        )
    if n.code == "wires-cross":
        return f"{n.antenna}: crosses {v['other']}; wires that cross couple, and one pattern spoils the other"
    if n.code == "near-tx-vertical":
        how = (
            "your tx_clearance"
            if v.get("given", True)
            else "half a wavelength: its coupling is not computed for this antenna"
        )
        return (
            f"{n.antenna}: {place_phrase(n.code, v, unit, how=how)}: a resonant vertical nearby re-radiates what "
            "it receives and distorts the pattern; detuning it while receiving (opening its feed, or a detuning "
            "network) is the usual cure" + (_DETUNE_CAUTION if not v.get("given", True) else "")
        )
    if n.code == "near-structure":
        return _near_structure_text(n, unit)
    if n.code == "tx-vertical-cost":
        st = v["state"]
        other = "detuned" if st == "resonant" else "resonant"
        return (
            f"{n.antenna}: the transmitting vertical {length_text(v['distance_m'], unit, 0)} away, {st}, costs "
            f"{v['cost_db']:.1f} dB of RDF (the SNR gain under a uniform sky); front-to-back "
            f"{_db(v[f'{st}_front_to_back_db'])} dB against {_db(v['front_to_back_alone_db'])} dB without it, forward "
            f"gain {signed_text(v[st + '_forward_gain_change_db'])} dB. {other.capitalize()}: RDF "
            f"{signed_text(v[other + '_rdf_change_db'])} dB, front-to-back {_db(v[f'{other}_front_to_back_db'])} dB"
            + (_DETUNE_CAUTION if st == "resonant" else "; check the detuning (an open relay, or the reactance given)")
        )
    if n.code == "feed-line-ground-assumed":
        return (
            f"{n.antenna}: its feed line's shield is taken to meet {v['antenna_end']} ({v['ground_ohm']:g} ohm to "
            "earth: snrgain's assumption, one short rod); a better ground there lowers the feed line's share"
        )
    if n.code == "feed-line-near-tx-vertical":
        return (
            f"{n.antenna}: its feed line passes within {length_text(v['distance_m'], unit, 0)} of the transmitting "
            f"vertical (keep {length_text(v['clearance_m'], unit, 0)}, your tx_clearance): while you transmit its "
            "shield sits in the vertical's strongest field and carries it to the receiver; route it further away, "
            "or protect the receiver's input while transmitting (a relay that opens and grounds the receive line, "
            "sequenced so it switches before the transmitter keys, is common practice; follow the equipment's ratings)"
        )
    if n.code == "termination-fragile":
        safer = f"{v['safer_ohm']:.0f} ohm"
        how = f'(termination = "{safer}")' if v["safer"] == "matched" else f'(auto_for = "{v["safer"]}")'
        e12 = ""
        if "standard_ohm" in v:
            e12 = (
                f" (built with their E12 values, {v['standard_ohm']:g} and {v['safer_standard_ohm']:g} ohm; toward its "
                f"bearing at {v['elevation_deg']:.0f} deg)"
            )
        over = v["over_safer_db"]
        by = f"by only {over:.2f} dB" if over >= 0.005 else "by nothing to speak of"
        return (
            f"{n.antenna}: its resistor of best SNR gain, {v['termination_ohm']:.0f} ohm, beats {v['safer_words']} "
            f"({safer}) {by}, yet gives a front-to-back of "
            f"{_db(v['front_to_back_db'], 1)} dB against {_db(v['front_to_back_safer_db'], 1)} dB at {safer}{e12}: "
            "what it adds rests on the noise as modelled "
            "(its sources' bearings and levels, the storms' directions), the rear null it gives up does not; unless "
            f"you trust that model, {safer} is the safer build {how}"
        )
    if n.code == "phasing-tolerance":
        from snrgain.decide import tolerance

        rdf, fb = v["rdf_drawn_db"], v["front_to_back_drawn_db"]
        cap = "over " if v["front_to_back_db"] >= 40.0 else ""
        text = (
            f"{n.antenna}: its phasing asks for precision: with the lines cut by a velocity factor typically "
            f"{100 * v['velocity_factor_error']:.0f} % off and each line typically "
            f"{length_text(v['length_error_m'], unit, 1)} off (one standard deviation; the longest line, "
            f"{v['longest_delay_ns']:.0f} ns, then off by about {_ns_text(v['longest_error_ns'])} ns, "
            f"{_ns_text(v['longest_error_ns'] * 1e-9 * v['freq_hz'] * 360.0)} deg at the operating frequency), "
            f"its RDF toward {v['bearing_deg']:.0f} deg at {v['elevation_deg']:.0f} deg elevation, {v['rdf_db']:.1f} "
            f"dB, becomes {rdf[0]:.1f} to {rdf[2]:.1f} dB (median {rdf[1]:.1f}) and its "
            f"front-to-back of {cap}{_db(v['front_to_back_db'])} dB becomes {_db(fb[0])} to {_db(fb[2])} dB (median "
            f"{_db(fb[1])}; 10-90 % of {v['draws']} draws: one build in ten does worse than the first figure; said "
            f"where that build loses {tolerance.RDF_LOSS_DB:g} dB of RDF, or {tolerance.FRONT_TO_BACK_LOSS_DB:g} dB of "
            f"front-to-back down to under {tolerance.FRONT_TO_BACK_KEPT_DB:g} dB)."
        )
        rev = v.get("reversed")
        if rev is not None:
            keeps = "keeps" if v.get("reversed_keeps") else "still gives"
            text += (
                f" Built with phase-reversing transformers giving elements their 180 deg (the lines then at most "
                f"{rev['longest_delay_ns']:.0f} ns), one build in ten {keeps} RDF "
                f"{rev['rdf_drawn_db'][0]:.1f} dB and front-to-back {_db(rev['front_to_back_drawn_db'][0])} dB: the "
                "usual way to build it (common practice)."
            )
        return text + (
            " Trim each phasing line to its delay measured at the operating frequency, not to a length from the "
            "printed velocity factor (common practice)"
        )
    if n.code == "source-position":
        moved = f"moved {length_text(v['step_m'], unit, 0)} {_either(v['directions'])}"
        if v.get("reference"):
            where = f"read on {v['read_on']!r}" if v.get("read_on") else "given as its Fa where it was measured"
            return (
                f"{n.antenna} (the reference): every SNR gain over it rests on exactly where {v['source']!r} stands: "
                f"{moved}, with its level {where}, the reference's own noise changes by {signed_text(v['low_db'])} to "
                f"{signed_text(v['high_db'])} dB, and every antenna's gain over it with that. Place the source where "
                "it radiates from, or read its level on an antenna that hears it well (not in a null)"
            )
        held = (
            "with the unit set again on it where it then stands (as by ear)"
            if v.get("reset")
            else "with this antenna's resistor and phasing as chosen now"
        )
        return (
            f"{n.antenna}: its SNR gain rests on exactly where {v['source']!r} stands: {moved}, {held}, "
            f"the gain changes by {signed_text(v['low_db'])} to "
            f"{signed_text(v['high_db'])} dB (that source is {100 * v['share']:.0f} % of its noise where it stands "
            "now). Place the source where it radiates from (its wiring, not the building's middle), or take this "
            "antenna's figure as that uncertain"
        )
    if n.code == "local-source-dominates":
        rest = (
            f"against {v['rest_dbm']:.1f} dBm from the sky and the other sources"
            if np.isfinite(v["rest_dbm"])
            else "and nothing else is heard"
        )
        head = (
            f"{n.antenna}: the local source {v['source']!r} is most of its noise ({v['source_dbm']:.1f} dBm {rest}, "
            "medians over the hours): "
        )
        if v.get("reference"):
            return head + (
                "the reference hears it above the sky, so every SNR gain here is largely how much less of it a "
                "candidate hears, not how much better it hears the sky; quieting the source (or moving the reference "
                "away from it) changes every gain, and a candidate's RDF says more about the sky than its gain does"
            )
        return head + (
            "its SNR gain rests on how it hears that source, not on its directivity toward the sky; a null toward the "
            "source, another place, or quieting the source gains more than a sharper pattern"
        )
    if n.code == "feed-line-cost":
        choke = (
            f"a common-mode choke of {choke_text(v['choke_ohm'])} at the antenna puts it {v['quiet_below_db']:g} dB "
            "below the antenna's own pickup"
            if v["choke_ohm"] > 0
            else "it is already 20 dB below the antenna's own pickup at its worst hour"
        )
        return (
            f"{n.antenna}: its feed line's shield picks up noise and costs {v['cost_db']:.1f} dB of SNR gain (its "
            f"share of the noise {signed_text(v['noise_share_db'])} dB); {choke}, or an isolation transformer with a "
            "choke; bond the separate grounds as the local electrical code requires, and ground the shield where it "
            "enters the house against lightning"
        )
    if n.code == "structure-cost":
        return (
            f"{n.antenna}: the structure {v['structure']!r} {length_text(v['distance_m'], unit, 0)} away costs "
            f"{v['cost_db']:.1f} dB of RDF (the SNR gain under a uniform sky); front-to-back "
            f"{_db(v['front_to_back_db'])} dB against {_db(v['front_to_back_alone_db'])} dB without it, forward gain "
            f"{signed_text(v['forward_gain_change_db'])} dB: move the antenna, or break the structure's resonance "
            "(insulate its foot or change what loads it) where that is safe and its lightning protection allows"
        )
    if n.code == "structure-not-computed":
        return (
            f"the structure {v['structure']!r} is {v['height_wavelengths']:.2f} wavelengths tall: its re-radiation is "
            "modelled up to 0.3 wavelength, so what it does to the antennas is not computed"
        )
    if n.code == "strong-signal-overload":
        return (
            f"{n.antenna}: nearby transmitters put {v['stage_input_dbm']:+.0f} dBm into the {v['stage']} "
            f"(loudest: {v['loudest']}, {v['loudest_hz'] / 1e6:g} MHz), {v['over_db']:.0f} dB more than it takes "
            f"safely (its 1 dB compression point {v['p1db_dbm']:+g} dBm less {v['margin_db']:g} dB)"
            + _assumed(v["assumed"])
            + _upper_bound(v)
            + _other_stages_text(v, "input_dbm", "takes", "its safe level")
            + _overload_filters_text(v)
        )
    if n.code == "strong-signal-product":
        kind = "second" if v["order"] == 2 else "third"
        return (
            f"{n.antenna}: {v['stations'][0]} and {v['stations'][1]} mix in the {v['stage']} into a {kind}-order "
            f"product at {v['freq_hz'] / 1e6:.3f} MHz of {v['level_dbm']:+.0f} dBm, {v['over_db']:.0f} dB above the "
            f"quietest hour's noise there"
            + _assumed(v["assumed"])
            + _upper_bound(v)
            + _other_stages_text(v, "level_dbm", "makes it at", "the noise at its input")
            + f"; {v['filter_db']:.0f} dB of filtering at "
            "both stations' frequencies before the first amplifier brings it down to the noise"
        )
    if n.code == "near-raised-source":
        also = "".join(f" (and {o!r})" for o in v.get("others", ()))
        d = v["distance_m"]
        where = f"comes within {length_text(d, unit, 0)} on the plan of" if d * per_m(unit) >= 0.5 else "passes under"
        return (
            f"{n.antenna}: {where} noise source {v['source']!r}{also}, {length_text(v['height_m'], unit, 0)} up, "
            "which may be an overhead power line: "
            "keep every wire, mast and support well clear of power lines, never where a falling wire or support "
            "could touch one; follow local codes and the utility's clearances"
        )
    if n.code == "source-in-keep-out":
        return (
            f"noise source {v['source']!r} lies inside the keep-out area {v['area']!r} (expected of a device in a "
            "building or a line in its corridor there: nothing to change; said in case its position was meant to be "
            "elsewhere)"
        )
    if n.code == "level-on-directional":
        return (
            f"{n.antenna}: the level of noise source {v['source']!r} was read on it, a directional antenna (its gain "
            f"varies by {v['ripple_db']:.0f} dB around the compass; {v['gain_toward_dbi']:.1f} dBi toward the "
            "source): an S-meter level on a directional antenna depends on its pattern toward the source, so the "
            "source's strength is only as good as that pattern and the source's bearing and elevation; a reading on "
            "a vertical does not depend on the bearing (name it with read_on), or give fa"
        )
    if n.code == "reference-at-origin":
        return (
            f"{n.antenna} (the reference) has no position, so it stands at the plan's origin, [0, 0], which is "
            f"{v['where']}: what a placed source gives it, its distance to the wires and what it does to the antennas "
            "near it rest on that place; give [reference] position"
        )
    if n.code == "looks-like-latlon":
        e, north = v["point"]
        lat, lon = v["site_deg"]
        return (
            f"{v['where']}: [{e:g}, {north:g}] looks like a latitude and longitude (the site is at {lat:g}, {lon:g}), "
            "but plan points are metres east and north of the plan's origin (or lengths with their unit); give "
            "places by latitude and longitude as { latlon = [[lat, lon], ...] } (a position: { latlon = [lat, lon] }) "
            "or as distances from the origin"
        )
    if n.code == "target-near-vertical":
        return (
            f"target {v['target']!r}, {v['distance_km']:.0f} km away, arrives by one hop from nearly overhead, at "
            f"{v['elevation_deg']:.0f} deg elevation (near-vertical incidence, NVIS): its SNR gains rest on how each "
            f"antenna hears from near the zenith, where a vertical has its null; {_overhead_words(v)}, and at this "
            "range the station's ground wave may be heard as well; if you hear it along the ground, give it by "
            f"bearing = {v['bearing_deg']:.0f} with elevation = [1, 3]"
        )
    if n.code == "man-made-extrapolated":
        return (
            f"P.372 gives man-made noise from {v['lowest_hz'] / 1e6:g} MHz; at {v['freq_hz'] / 1e6:g} MHz its line "
            "is extrapolated"
        )
    detail = ", ".join(f"{k} = {val}" for k, val in sorted(v.items()))
    return f"{n.antenna + ': ' if n.antenna else ''}{n.code}" + (f" ({detail})" if detail else "")


def _lobe_away_text(n: Notice) -> str:
    """The lobe-away-from-bearing notice in words: a given phasing's sign to check; an array (or a phasing unit) set
    for SNR under the site's noise turned away to null what it hears; an automatic steering for another figure that
    leaves the lobe there."""
    v = n.values
    head = (
        f"{n.antenna}: its main lobe points to {v['lobe_deg']:.0f} deg, {v['off_deg']:.0f} deg away from its "
        f"bearing {v['bearing_deg']:.0f} deg"
    )
    auto_for = v.get("auto_for") if v.get("steering") == "auto" else None
    beam = f"the build sheet's 'toward {v['bearing_deg']:.0f} deg' is its bearing, not its beam"
    if auto_for == "snr":
        sources = v.get("sources") or []
        heard = (
            f"e.g. the local source{'s' if len(sources) > 1 else ''} {_either(repr(s) for s in sources)}"
            if sources
            else "e.g. the storms' directions"
        )
        if v.get("composite"):
            how, keep = "its setting for SNR under the site's noise (setting = 'auto')", "give its setting instead"
        else:
            how, keep = "its steering for SNR under the site's noise (auto_for = 'snr')", "write auto_for = 'rdf'"
        return (
            f"{head}: {how} turned it there to null what it hears ({heard}); {beam}. To keep the lobe on its "
            f"bearing, {keep}; or accept the null, and the lobe at {v['lobe_deg']:.0f} deg with it"
        )
    if auto_for is not None:
        return (
            f"{head} under its automatic steering (auto_for = '{auto_for}': no phases of yours to check): its "
            f"elements' places or a structure's re-radiation leave it no stronger lobe nearer its bearing; {beam}"
        )
    return (
        f"{head}; check the sign of its phases (phase_sense = 'lag' delays an element's signal by its phase) or its "
        "delays (positive: the signal comes later)"
    )


def best_effort_text(v: dict) -> str:
    """Where no preamplifier reaches the margin target, what one still recovers (a receiver-limited notice's values
    best_gain_db, best_position, best_max_snr_loss_db), in words; "" where one reaches it."""
    if "best_gain_db" not in v:
        return ""
    if v["best_position"] == "as placed":
        which = "the chain's preamplifier"
    else:
        where = "before the receiver" if v["best_position"] == "receiver" else "at the antenna (after the transformer)"
        which = f"a preamplifier of {SUGGESTED_PREAMP_NOISE_FIGURE_DB:g} dB noise figure {where}"
    return (
        f" Still, {which}, with about {v['best_gain_db']:.0f} dB of gain (within 0.5 dB of the best any gain gives), "
        f"cuts the receiver's cost from up to {v['max_snr_loss_db']:.1f} dB to up to "
        f"{v['best_max_snr_loss_db']:.1f} dB of SNR."
    )


def preamp_gain_said(gain_db: float) -> str:
    """A preamplifier gain needed, in whole dB as the table and the warning say it; a gain under 0.5 dB (a margin a
    few hundredths of a dB short) said as 1 dB, the least that reaches the target, never as 0 dB."""
    return f"{max(float(gain_db), 1.0) if gain_db > 0 else 0.0:.0f}"


def preamp_advice_text(gain_db: float, position: str | None) -> str:
    """What preamplifier would meet the margin target, in words (NaN gain: none would)."""
    if gain_db is None or not np.isfinite(gain_db):
        return (
            "No preamplifier gain reaches the target at every hour; a quieter preamplifier, a shorter or "
            "lower-loss feed line, or a quieter receiver would."
        )
    if position == "as placed":
        which = "the chain's preamplifier"
    else:
        where = "before the receiver" if position == "receiver" else "at the antenna, after the transformer"
        which = f"a preamplifier of {SUGGESTED_PREAMP_NOISE_FIGURE_DB:g} dB noise figure {where}"
    return f"About {preamp_gain_said(gain_db)} dB of gain from {which} would reach the target."


PLAN_WORTH = (
    "each target's median SNR gain on the antenna that serves it, averaged over the targets by weight as power ratios"
)
"""What the station plan's worth is, in words (snrgain.decide.plan)."""


def plan_not_best_text(target: str, why: dict, unit: str = "m") -> str:
    """Why the plan serves a target with another antenna than the target's best, in words (lengths in ``unit``)."""
    from snrgain.decide.plan import MIN_ADDED_DB

    if why["best_db"] - why["served_db"] < 0.05:  # the same gain as printed: no antenna to add for it
        return (
            f"{target}: {why['served_by']} serves it ({signed_text(why['served_db'])} dB), within 0.05 dB of the best, "
            f"{why['best']}, which the plan does not build for it."
        )
    if why["reason"] == "alternative":
        return _alternative_text(target, why)
    if why["reason"] == "unfit":
        return (
            f"{target}: the best, {why['best']} ({signed_text(why['best_db'])} dB), is not in the plan because it "
            f"cannot be built where the file places it ({unfit_text(why['where'], unit)}); {why['served_by']} "
            f"serves it ({signed_text(why['served_db'])} dB). Move it (snrgain layout looks for a place that fits) "
            "and rank again."
        )
    if why["reason"] == "max_antennas":
        reason, then = "the plan holds no more antennas ([plan] max_antennas)", ""
    else:
        adds = why.get("adds_db")
        share = why.get("weight")
        reason = (
            f"building it adds less than {MIN_ADDED_DB:g} dB to the plan as a whole"
            + (f" ({adds:.2f} dB" if adds is not None else " (")
            + (f"; {target} weighs {share * 100:.0f} % of it" if share is not None else "")
            + ", the targets taken as power ratios)"
        )
        then = f" Build it too if {target} counts on its own."
    return (
        f"{target}: the best, {why['best']} ({signed_text(why['best_db'])} dB), is not in the plan because {reason}; "
        f"{why['served_by']} serves it ({signed_text(why['served_db'])} dB).{then}"
    )


def unfit_text(where: dict, unit: str = "m") -> str:
    """Why an antenna cannot be built where it is placed (snrgain.decide.lot.unfit: {code, values}), in words;
    lengths in ``unit``; a clearance there is always one the user gave."""
    who, code, v = "it", where["code"], where["values"]
    if code == "part-unfit":  # a phasing unit over such a part: the part's own problem
        who, code, v = f"its part {v['part']}", v["code"], v["values"]
    how = "your clearance for it" if code == "near-structure" else "your tx_clearance"
    return f"{who} {place_phrase(code, v, unit, how=how)}"


def place_phrase(code: str, v: dict, unit: str, *, how: str = "", digits: int = 0) -> str:
    """Where a place notice (off-lot, in-keep-out, near-tx-vertical, near-structure: snrgain.decide.lot) puts the
    antenna, as the warning and the plan's note both say it: "runs off the lot, up to 168 m beyond its edge";
    ``how``: where a clearance comes from; ``digits``: a structure's distance's decimals."""
    if code == "off-lot":
        far = "under 1 " + unit if v["outside_m"] * per_m(unit) < 1 else f"up to {length_text(v['outside_m'], unit, 0)}"
        return f"runs off the lot, {far} beyond its edge"
    if code == "in-keep-out":
        return f"enters the keep-out area {v['area']!r}"
    what = "the transmitting vertical" if code == "near-tx-vertical" else f"the structure {v['structure']!r}"
    return (
        f"comes within {length_text(v['distance_m'], unit, digits)} of {what} (keep "
        f"{length_text(v['clearance_m'], unit, 0)}, {how})"
    )


_PLACE_SHARED = {
    True: "the two stand in one place, and only one can be built there",
    False: "they stand where it stands, and it cannot be built beside them",
}


def _alternative_text(target: str, why: dict) -> str:
    """A target's best left out of the plan because another antenna of the plan stands in its place (reason
    "alternative": ``instead``, swap_db), in words."""
    instead = why["instead"]
    those = " and ".join(instead)
    one = len(instead) == 1
    swap = why.get("swap_db")
    if swap is None:
        change = ""
    elif swap < -0.005:
        change = f"; with {why['best']} there instead the plan would be worth {-swap:.2f} dB less as a whole"
    elif swap > 0.005:
        change = f"; with {why['best']} there instead the plan would be worth {swap:.2f} dB more as a whole"
    else:
        change = f"; with {why['best']} there instead the plan would be worth as much as a whole"
    return (
        f"{target}: the best, {why['best']} ({signed_text(why['best_db'])} dB), is not in the plan because the plan "
        f"builds {those} in its place ({_PLACE_SHARED[one]}){change}; {why['served_by']} serves it "
        f"({signed_text(why['served_db'])} dB)."
    )
