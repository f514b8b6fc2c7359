"""The station plan across several bands: one set of antennas to build for every band listened on.

The same plan and statistic as one band's (:func:`snrgain.decide.plan.station_plan`), over columns that are
(band, target) pairs: an antenna's column is its median SNR gain over the reference toward that target on that
band, 0 dB (the reference's) where it is not a candidate of the band.  Each band counts alike: a band's target
weights are scaled to sum to 1 / (number of bands).  An antenna listed in several bands is one antenna to build
(the same name); the plan says which band, target and hours each serves.  Two antennas that stand in one place on
any band's plan (:attr:`snrgain.decide.plan.Plan.alternatives`) are not both built.
"""

from __future__ import annotations

import numpy as np

from snrgain.antennas import FAMILIES
from snrgain.decide.build import nearest_standard_ohm
from snrgain.decide.decisions import trades_front_to_back
from snrgain.decide.plan import Plan, station_plan
from snrgain.model.notices import Notice

SAFER_WORST_FRONT_TO_BACK_DB = 3.0
"""How much deeper |Z0|'s rear null must be on its worst band than the common resistor's on its worst before it is
offered as the safer build across bands (a reviewer: offered where it gave 16 dB against 21 dB on one band)."""
RESISTOR_SPREAD = 1.25
"""Resistors of one antenna that differ by more than this ratio between the bands it serves are said
(:func:`resistor_notices`): the antenna is built once, with one resistor, unless it is switched per band."""


def plan_across_bands(bands) -> tuple[Plan, tuple[tuple[str, str], ...]]:
    """(plan, columns) for ``bands`` = [(band name, Results), ...]; columns are (band, target name) pairs."""
    names: list[str] = [bands[0][1].reference.name]
    families: dict[str, str] = {}
    groups: dict[str, str | None] = {}
    for _, r in bands:
        for a in r.candidates:
            if a.name not in names and a.name != r.reference.name:
                names.append(a.name)
            families.setdefault(a.name, a.family)
            groups.setdefault(a.name, getattr(a, "group", None))  # a switched antenna's states: one to build
    columns, weights, times, gains = [], [], [], []
    for band, r in bands:
        w = np.array([float(t["weight"]) for t in r.targets])
        w = w / w.sum() / len(bands)
        by_name = {a.name: a for a in r.candidates}
        for t_idx, t in enumerate(r.targets):
            columns.append((band, t["name"]))
            weights.append(w[t_idx])
            times.append((list(t["months"]), list(t["utc_hours"])))
            gains.append(
                [0.0] + [float(by_name[n].snr_gain_median_db[t_idx]) if n in by_name else 0.0 for n in names[1:]]
            )
    buildable = [True] + [FAMILIES[families[n]].build.buildable for n in names[1:]]
    max_antennas = bands[0][1].plan.max_antennas if bands[0][1].plan is not None else None
    index = {n: k for k, n in enumerate(names)}
    pairs = [pair for _, r in bands if r.plan is not None for pair in getattr(r.plan, "alternatives", ())]
    unfit = {  # where a band's plan finds an antenna cannot be built where it stands (the same place on every band)
        index[n]: why for _, r in bands if r.plan is not None for n, why in r.plan.unfit.items() if n in index
    }
    parts_of = {a.name: a.parts for _, r in bands for a in r.candidates}  # a phasing unit's own antennas
    plan = station_plan(
        names,
        np.array(gains).T,
        np.array(weights),
        max_antennas=max_antennas,
        buildable=buildable,
        target_times=times,
        groups=[None] + [groups[n] for n in names[1:]],
        alternatives=sorted(
            {(index[a], index[b]) for a, b in pairs if a in index and b in index}  # of one band or another
        ),
        parts=[()] + [tuple(index[p] for p in parts_of.get(n, ()) if index.get(p, 0) > 0) for n in names[1:]],
        unfit=unfit,
    )
    return plan, tuple(columns)


def served_bands(plan: Plan, columns) -> dict[str, set[str]]:
    """Each antenna of the plan across bands -> the bands on which it serves a target."""
    served: dict[str, set[str]] = {}
    for c, services in plan.by_target.items():
        for sv in services:
            served.setdefault(sv.antenna, set()).add(columns[c][0])
    return served


def across_bands(bands, plan: Plan, columns) -> tuple[list, list[Notice]]:
    """(bands, notices): what holds across the bands (:func:`resistor_notices`), and each band's Results without the
    warnings the plan across bands answers instead.  A wire built once for several bands gets one weighed answer for
    its resistor, not a band's own fragile-resistor warning naming another resistor for each band; and it is told to
    be shorter only where every band it serves says so (a wire shortened for 40 m lost 1.4 dB on the 80 m it served
    too)."""
    from dataclasses import replace

    across = resistor_notices(bands, plan, columns)
    once = {n.antenna for n in across}
    across = across + level_notices(bands)
    served = served_bands(plan, columns)
    too_long = {
        (band, n.antenna) for band, r in bands for n in r.notices if n.code == "wire-too-long" and n.antenna in served
    }
    partly = {a for _, a in too_long if not all((b, a) in too_long for b in served[a])}

    def kept(n):
        return not (
            (n.code == "termination-fragile" and n.antenna in once)
            or (n.code == "wire-too-long" and n.antenna in partly)
        )

    if once or partly:
        bands = [(band, replace(r, notices=[n for n in r.notices if kept(n)])) for band, r in bands]
    return list(bands), across


def level_notices(bands) -> list[Notice]:
    """``level-every-band`` (source, level_dbm or fa_db, bands) for each local noise source of a file of several bands
    whose level is given once (a reading, or an Fa) and so taken on every band: a reading holds on the band it was
    made on (a source's noise and a receiver's S-meter differ from band to band)."""
    if len(bands) < 2:
        return []
    names = [band for band, _ in bands]
    out = []
    for src in bands[0][1].local_sources:
        if src.get("level_dbm") is None and src.get("fa_db") is None:
            continue
        values = {"source": src["name"], "level_dbm": src.get("level_dbm"), "fa_db": src.get("fa_db"), "bands": names}
        out.append(Notice("level-every-band", None, values))
    return out


def resistor_notices(bands, plan: Plan, columns) -> list[Notice]:
    """``resistor-per-band`` (bands: [{band, termination_ohm, criterion, target, at_search_bound, loss_db,
    front_to_back_db}], common_ohm, common_standard_ohm, worst_db, worst_band, safer: None or {ohm, standard_ohm,
    words, bands: [{band, loss_db, front_to_back_db}]}) for each antenna of the plan that serves targets on several
    bands with resistors more than RESISTOR_SPREAD apart: the plan builds it once, so the one resistor that loses
    least at worst over those bands (each band's criterion read off its curve, interpolated in log R within the range
    every band searched) is given with what it costs on each, beside each band's own; where it gives up the rear
    null for little on a band against |Z0| less the far ground (snrgain.decide.decisions.trades_front_to_back, the
    fragile resistor's test), that one is offered as the safer build with what it costs (``safer``)."""
    out = []
    for name, on in served_bands(plan, columns).items():
        answers = []
        for band, r in bands:
            if band not in on:
                continue
            a = next((x for x in r.candidates if x.name == name), None)
            ans = None if a is None else a.build.get("termination_answer")
            if ans is None or not ans.get("curve") or a.build.get("termination_given"):
                continue
            answers.append((band, ans))
        if len(answers) < 2:
            continue
        ohms = [float(ans["termination_ohm"]) for _, ans in answers]
        if max(ohms) / min(ohms) <= RESISTOR_SPREAD:
            continue
        lo = max(min(ans["curve"]["ohm"]) for _, ans in answers)
        hi = min(max(ans["curve"]["ohm"]) for _, ans in answers)
        if not hi > lo:
            continue
        trial = np.geomspace(lo, hi, 200)

        def at(rs, key, answers=answers):
            """Each band's curve ``key`` at the resistors ``rs`` (bands, resistors), interpolated in log R."""
            rs = np.atleast_1d(np.asarray(rs, dtype=float))
            return np.array([np.interp(np.log(rs), np.log(a["curve"]["ohm"]), a["curve"][key]) for _, a in answers])

        tops = np.array([max(a["curve"]["figure_db"]) for _, a in answers])[:, None]
        each = tops - at(trial, "figure_db")
        k = int(np.argmin(np.max(each, axis=0)))
        common = float(trial[k])
        worst = int(np.argmax(each[:, k]))
        fb_common = at(common, "front_to_back_db")[:, 0]
        matched = float(np.clip(np.median([a["matched_ohm"] for _, a in answers]), lo, hi))
        loss_matched = (tops - at(matched, "figure_db"))[:, 0]
        fb_matched = at(matched, "front_to_back_db")[:, 0]
        # |Z0| less the far ground is offered where the common resistor trades its rear null for little on a band
        # and the matched one keeps a deeper null where it is shallowest (its worst band 3 dB better at least)
        fragile = (
            any(
                trades_front_to_back(loss_matched[i] - each[i, k], fb_matched[i] - fb_common[i])
                for i in range(len(answers))
            )
            and float(np.min(fb_matched)) >= float(np.min(fb_common)) + SAFER_WORST_FRONT_TO_BACK_DB
        )
        out.append(
            Notice(
                "resistor-per-band",
                name,
                {
                    "bands": [
                        {
                            "band": band,
                            "termination_ohm": float(ans["termination_ohm"]),
                            "criterion": ans["criterion"],
                            "target": ans.get("target"),
                            "at_search_bound": ans.get("at_search_bound"),
                            "loss_db": float(each[i, k]),
                            "front_to_back_db": float(fb_common[i]),
                        }
                        for i, (band, ans) in enumerate(answers)
                    ],
                    "common_ohm": common,
                    "common_standard_ohm": nearest_standard_ohm(common),
                    "worst_db": float(each[worst, k]),
                    "worst_band": answers[worst][0],
                    "safer": None
                    if not fragile
                    else {
                        "ohm": matched,
                        "standard_ohm": nearest_standard_ohm(matched),
                        "words": answers[0][1].get("matched_words", "|Z0|"),
                        "bands": [
                            {"band": band, "loss_db": float(loss_matched[i]), "front_to_back_db": float(fb_matched[i])}
                            for i, (band, _) in enumerate(answers)
                        ],
                    },
                },
            )
        )
    return out
