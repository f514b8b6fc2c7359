"""The last stage: strong signals of nearby transmitters at each antenna's terminals and first active stage
(:mod:`snrgain.physics.strong`), with a notice for each antenna that would overload and the filter that cures it.

It reads the decided results (each antenna's noise at the receiver and its chain's gain) and returns new results
with ``strong_signals`` (one row per antenna and station) and the notices added; nothing else changes.

Each antenna is taken as built for the band listened to (:func:`as_built`): a termination or transformer ratio
left at "auto" is the one chosen at the listening frequency, not one chosen again at the station's frequency
(at 0.55 MHz a 150 m Beverage's "auto" would otherwise become a 30 ohm resistor and a 4.8:1 transformer, an
antenna nobody built).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from snrgain.antennas.base import variant
from snrgain.model.notices import Notice
from snrgain.physics import strong as st
from snrgain.physics.chain import cable_by_name, friis, passive
from snrgain.physics.ground import ETA0_OHM

TURNS_RATIO_RANGE = (0.1, 20.0)
"""The turns ratios a transformer may be given (the long-wire and loop families' own bounds)."""


def as_built(antenna, listen_hz: float):
    """``antenna`` with each setting left at "auto" (termination, turns ratio) fixed at the value it takes at the
    listening frequency [Hz]: the antenna as built, whose response at another frequency the strong signals need.
    Families without such settings, or that cannot be varied (arrays), are returned unchanged."""
    p = antenna.params
    fixed = {}
    if getattr(p, "termination", None) == "auto" and hasattr(antenna, "termination_ohm"):
        r = antenna.termination_ohm(listen_hz)
        if r is not None:
            fixed["termination"] = float(r)
    if getattr(p, "turns_ratio", None) == "auto" and hasattr(antenna, "turns_ratio"):
        fixed["turns_ratio"] = float(np.clip(antenna.turns_ratio(listen_hz), *TURNS_RATIO_RANGE))
    if not fixed:
        return antenna
    try:
        return variant(antenna, **fixed)
    except ValueError:  # a family that keeps its parts as written (variant says which): as it is
        return antenna


def _gain_before_db(chain, listen_hz: float, freq_hz: float | None = None) -> tuple[float, int]:
    """(gain [dB] from the terminals to the first active stage's input at ``freq_hz`` (default the listening
    frequency), that stage's index).  A feed line given by its cable and length has its loss at ``freq_hz`` (the
    cable's loss per length scales it; physics.chain.Cable); one given by its total loss keeps it."""
    idx = chain.preamp_index if chain.preamp_index is not None else len(chain.stages) - 1
    stages = list(chain.stages[:idx])
    if chain.cable is not None and freq_hz is not None and freq_hz != listen_hz:
        cable = cable_by_name(chain.cable)
        ratio = cable.loss_db_per_100ft(freq_hz) / cable.loss_db_per_100ft(listen_hz)
        stages = [passive(x.name, -10.0 * np.log10(x.gain) * ratio) if x.name == FEED_LINE else x for x in stages]
    return 10.0 * np.log10(friis(stages)[1]), idx


FEED_LINE = "feed line"
"""The name physics.chain.cascade gives the feed line's stage."""


def with_strong_signals(sc, results):
    """``results`` with the strong-signal rows and notices of ``sc.strong_signals`` (unchanged without any)."""
    if not sc.strong_signals:
        return results
    rows, notices = [], []
    listen_hz = sc.freq_hz
    by_name = {a.name: a for a in results.antennas}
    for antenna, chain, limits in zip(sc.antennas, sc.chains, sc.stage_limits):
        built = as_built(antenna, listen_hz)
        before_db, _ = _gain_before_db(chain, listen_hz)
        at_stage: dict[str, tuple[float, float]] = {}
        for station in sc.strong_signals:
            field = st.ground_wave_field_v_per_m(station, sc.site.ground)
            try:
                ground = getattr(antenna, "ground", sc.site.ground)  # the soil under the antenna sets R_v
                area = st.ground_wave_aperture_m2(built, station.freq_hz, station.bearing_rad, ground)
            except ValueError as exc:  # a family that cannot be computed at that frequency says why
                rows.append({"antenna": antenna.name, "station": station.name, "not_computed": str(exc)})
                continue
            terminal_dbm = st.dbm(field**2 / ETA0_OHM * area)
            stage_dbm = float(terminal_dbm + _gain_before_db(chain, listen_hz, station.freq_hz)[0])
            at_stage[station.name] = (station.freq_hz, stage_dbm)
            rows.append(
                {
                    "antenna": antenna.name,
                    "station": station.name,
                    "frequency_hz": station.freq_hz,
                    "field_v_per_m": field,
                    "terminal_dbm": terminal_dbm,
                    # what terminal_dbm is (physics.strong): delivered through the modelled transformer into the
                    # receiver, or available to a matched load (an upper bound) for families without a feed load
                    "terminal_power": "delivered" if hasattr(built, "receiver_load_ohm") else "available",
                    "terminal_v_rms_50_ohm": float(np.sqrt(10 ** (terminal_dbm / 10) * 1e-3 * 50.0)),
                    "stage": limits.name,
                    "stage_input_dbm": stage_dbm,
                }
            )
        if not at_stage:
            continue
        total_dbm = st.dbm(sum(10 ** (p / 10) * 1e-3 for _, p in at_stage.values()))
        headroom = limits.p1db_dbm - total_dbm
        if headroom < st.COMPRESSION_MARGIN_DB:
            loudest = max(at_stage, key=lambda n: at_stage[n][1])
            safe = limits.p1db_dbm - st.COMPRESSION_MARGIN_DB
            filters = st.overload_filters(at_stage, listen_hz, safe, sc.bandwidth_hz)
            notices.append(
                Notice(
                    "strong-signal-overload",
                    antenna.name,
                    {
                        "stations": sorted(at_stage),
                        "loudest": loudest,
                        "loudest_hz": at_stage[loudest][0],
                        "stage": limits.name,
                        "stage_input_dbm": total_dbm,
                        "p1db_dbm": limits.p1db_dbm,
                        "margin_db": st.COMPRESSION_MARGIN_DB,
                        "over_db": st.COMPRESSION_MARGIN_DB - headroom,
                        "filter_db": max(f.rejection_db for f in filters),
                        "listen_hz": listen_hz,
                        "filters": [
                            {
                                "kind": f.kind,
                                "stations": list(f.stations),
                                "frequencies_hz": list(f.freq_hz),
                                "rejection_db": f.rejection_db,
                                "why": f.why,
                            }
                            for f in filters
                        ],
                        "assumed": [k for k in limits.assumed if k == "p1db"],
                        "upper_bound": not hasattr(built, "receiver_load_ohm"),
                    },
                )
            )
        result = by_name.get(antenna.name)
        if result is None:
            continue
        # the quietest hour's external noise at the stage's input: where a product is heard first
        noise_stage_dbm = float(np.min(result.noise_dbm)) - float(result.chain.get("gain_db", 0.0)) + before_db
        for p in st.products_in_band(at_stage, limits, listen_hz):
            if p.level_dbm > noise_stage_dbm:
                excess = p.level_dbm - noise_stage_dbm
                notices.append(
                    Notice(
                        "strong-signal-product",
                        antenna.name,
                        {
                            "order": p.order,
                            "freq_hz": p.freq_hz,
                            "stations": list(p.stations),
                            "stage": limits.name,
                            "level_dbm": p.level_dbm,
                            "noise_dbm": noise_stage_dbm,
                            "over_db": excess,
                            "filter_db": excess / p.order,
                            "assumed": [k for k in limits.assumed if k == f"iip{p.order}"],
                            "upper_bound": not hasattr(built, "receiver_load_ohm"),
                        },
                    )
                )
    return replace(results, strong_signals=rows, notices=[*results.notices, *notices])
