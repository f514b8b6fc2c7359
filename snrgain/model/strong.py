"""The last stage: strong signals of nearby transmitters at each antenna's terminals and at each active stage of its
chain, its preamplifier and its receiver (:mod:`snrgain.physics.strong`), with a notice for each antenna that would
overload, naming the stage worst off, and the filter that cures it.

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
from snrgain.physics.chain import cable_by_name
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


FEED_LINE = "feed line"
"""The name physics.chain.cascade gives the feed line's stage."""


def active_stages(chain) -> list[int]:
    """The indexes of the chain's active stages in its order: its preamplifier where it has one, then the receiver
    (physics.chain.cascade puts the receiver last)."""
    return ([] if chain.preamp_index is None else [chain.preamp_index]) + [len(chain.stages) - 1]


def stage_gains_db(chain, listen_hz: float, freq_hz: float | None = None) -> list[float]:
    """Each stage's gain [dB] at ``freq_hz`` (default the listening frequency), a loss negative.  A feed line given
    by its cable and length has its loss at ``freq_hz`` (the cable's loss per length scales it; physics.chain.Cable);
    one given by its total loss keeps it; the transformer and the preamplifier keep theirs (physics.strong's
    docstring)."""
    gains = [float(10.0 * np.log10(x.gain)) for x in chain.stages]
    if chain.cable is None or freq_hz is None or freq_hz == listen_hz:
        return gains
    cable = cable_by_name(chain.cable)
    ratio = float(cable.loss_db_per_100ft(freq_hz) / cable.loss_db_per_100ft(listen_hz))
    return [g * ratio if x.name == FEED_LINE else g for g, x in zip(gains, chain.stages)]


def _station_rows(sc, antenna, built, chain, limits) -> tuple[list[dict], list[dict]]:
    """(the rows of ``antenna``'s strong signals, one per station; for each active stage, name -> (freq [Hz],
    level at its input [dBm]) of the stations computed)."""
    rows: list[dict] = []
    at_stages: list[dict] = [{} for _ in limits]
    active = active_stages(chain)
    for station in sc.strong_signals:
        field = st.ground_wave_field_v_per_m(station, sc.site.ground)
        try:
            ground = getattr(antenna, "ground", sc.site.ground)  # the soil under the antenna sets R_v
            area = st.ground_wave_aperture_m2(built, station.freq_hz, station.bearing_rad, ground)
        except ValueError as exc:  # a family that cannot be computed at that frequency says why
            rows.append({"antenna": antenna.name, "station": station.name, "not_computed": str(exc)})
            continue
        terminal_dbm = st.dbm(field**2 / ETA0_OHM * area)
        levels = st.stage_inputs_dbm(terminal_dbm, stage_gains_db(chain, sc.freq_hz, station.freq_hz), active)
        for at, level in zip(at_stages, levels):
            at[station.name] = (station.freq_hz, level)
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
                "stage": limits[0].name,  # the first active stage
                "stage_input_dbm": levels[0],
                "stages": [{"stage": lim.name, "input_dbm": x} for lim, x in zip(limits, levels)],
            }
        )
    return rows, at_stages


def _overload_notice(name: str, loads, sc, upper_bound: bool) -> Notice | None:
    """The strong-signal-overload notice of an antenna whose stages take ``loads`` (physics.strong.StageLoad, in
    the chain's order), naming the stage worst off and the filter that brings it to its safe level; None where no
    stage is overloaded."""
    worst = st.worst_stage(loads)
    if worst is None:
        return None
    at, lim = worst.levels_dbm, worst.limits
    loudest = max(at, key=lambda n: at[n][1])
    filters = st.overload_filters(at, sc.freq_hz, lim.safe_dbm, sc.bandwidth_hz)
    values = {
        "stations": sorted(at),
        "loudest": loudest,
        "loudest_hz": at[loudest][0],
        "stage": lim.name,
        "stage_input_dbm": worst.total_dbm,
        "p1db_dbm": lim.p1db_dbm,
        "margin_db": st.COMPRESSION_MARGIN_DB,
        "over_db": worst.over_db,
        "filter_db": max(f.rejection_db for f in filters),
        "listen_hz": sc.freq_hz,
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
        "assumed": [k for k in lim.assumed if k == "p1db"],
        "upper_bound": upper_bound,
        "stages": [
            {
                "stage": x.limits.name,
                "input_dbm": x.total_dbm,
                "p1db_dbm": x.limits.p1db_dbm,
                "over_db": x.over_db,
                "assumed": [k for k in x.limits.assumed if k == "p1db"],
            }
            for x in loads
        ],
    }
    return Notice("strong-signal-overload", name, values)


def _product_notices(name: str, loads, noise_at: list[float], listen_hz: float, upper_bound: bool) -> list[Notice]:
    """One strong-signal-product notice per product of two stations that some stage makes above the external
    noise at its input (``noise_at``, per stage [dBm]), naming the stage where it stands highest above it."""
    made: dict[tuple, list[dict]] = {}
    for load, noise in zip(loads, noise_at):
        for p in st.products_in_band(load.levels_dbm, load.limits, listen_hz):
            made.setdefault((p.order, p.freq_hz, p.stations), []).append(
                {
                    "stage": load.limits.name,
                    "level_dbm": p.level_dbm,
                    "noise_dbm": noise,
                    "over_db": p.level_dbm - noise,
                    "assumed": [k for k in load.limits.assumed if k == f"iip{p.order}"],
                }
            )
    out = []
    for (order, freq_hz, stations), stages in made.items():
        worst = max(stages, key=lambda x: x["over_db"])  # the earlier stage of a tie
        if worst["over_db"] <= 0.0:
            continue
        values = {"order": order, "freq_hz": freq_hz, "stations": list(stations), **worst}
        values.update(filter_db=worst["over_db"] / order, upper_bound=upper_bound, stages=stages)
        out.append(Notice("strong-signal-product", name, values))
    return out


def with_strong_signals(sc, results):
    """``results`` with the strong-signal rows and notices of ``sc.strong_signals`` (unchanged without any)."""
    if not sc.strong_signals:
        return results
    rows, notices = [], []
    by_name = {a.name: a for a in results.antennas}
    for antenna, chain, limits in zip(sc.antennas, sc.chains, sc.stage_limits):
        built = as_built(antenna, sc.freq_hz)
        antenna_rows, at_stages = _station_rows(sc, antenna, built, chain, limits)
        rows += antenna_rows
        if not at_stages[0]:
            continue
        upper_bound = not hasattr(built, "receiver_load_ohm")
        loads = [st.stage_load(lim, at) for lim, at in zip(limits, at_stages)]
        overload = _overload_notice(antenna.name, loads, sc, upper_bound)
        notices += [] if overload is None else [overload]
        result = by_name.get(antenna.name)
        if result is None:
            continue
        # the quietest hour's external noise at each stage's input: where a product is heard first
        at_terminals = float(np.min(result.noise_dbm)) - float(result.chain.get("gain_db", 0.0))
        before = st.stage_inputs_dbm(at_terminals, stage_gains_db(chain, sc.freq_hz), active_stages(chain))
        notices += _product_notices(antenna.name, loads, list(before), sc.freq_hz, upper_bound)
    return replace(results, strong_signals=rows, notices=[*results.notices, *notices])
