"""What the library tells the user, as data: :class:`Notice` (a code, the antenna it concerns, the numbers).

A module of its own so that the results (:mod:`snrgain.model.results`) and the sentences written from notices at the
edge (:mod:`snrgain.outputs.messages`) both import it and neither imports the other.
"""

from __future__ import annotations

from dataclasses import field
from typing import Any

from snrgain.records import record


@record
class Notice:
    """Something the user should know: a code, the antenna it concerns (or None), and the numbers behind it.

    Codes: ``receiver-limited`` (values: worst_margin_db, margin_target_db, max_snr_loss_db, preamp_gain_db,
    preamp_position; where no gain reaches the target, best_gain_db, best_position, best_max_snr_loss_db: the
    preamplifier that comes closest, snrgain.physics.chain.best_effort_preamp), ``man-made-extrapolated``
    (freq_hz, lowest_hz), ``target-near-vertical`` (target, distance_km, elevation_deg, bearing_deg: a target by place
    that arrives by one hop from nearly overhead, NVIS; snrgain.decide.arrival), ``lobe-away-from-bearing``
    (bearing_deg, lobe_deg, off_deg, steering, auto_for: an array whose main lobe points more than 90 deg away from its
    bearing; steering "given" or "auto", auto_for what the automatic steering sets it for, and with "snr" also
    composite and sources: the local sources it was set under),
    ``far-ground-too-high`` (far_ground_ohm, z0_ohm: an auto-terminated wire whose far ground exceeds 0.7 |Z0|),
    ``strong-signal-overload`` (stations, loudest, loudest_hz, stage, stage_input_dbm, p1db_dbm, margin_db, over_db,
    filter_db, assumed), ``strong-signal-product`` (order, freq_hz, stations, stage, level_dbm, noise_dbm, over_db,
    filter_db, assumed), ``feed-line-cost`` (cost_db, noise_share_db, choke_ohm, quiet_below_db: a feed line that
    costs more than 1 dB of SNR gain; snrgain.model.feedline), ``feed-line-ground-assumed`` (an antenna whose ground
    where its feed line's shield ends is snrgain's assumption: a phasing unit's; snrgain.model.feedline),
    ``feed-line-near-tx-vertical`` (distance_m, clearance_m: a feed line's run within the tx_clearance the user gives;
    snrgain.decide.lot), ``near-structure`` (structure, distance_m, clearance_m, given: an antenna within a ``[site]
    structures`` entry's clearance, the user's or the default from its height; snrgain.decide.lot),
    ``antennas-same-place`` (other, distance_m: two antennas, not both wires, within 1 m on the
    plan; snrgain.decide.lot), ``local-source-dominates`` (source, source_dbm, rest_dbm, over_db, reference: an
    antenna, the reference too, whose loudest local source is 6 dB or more above the rest of its noise;
    snrgain.decide.decisions), ``termination-fragile`` (termination_ohm, safer_ohm, safer: "matched" or "rdf",
    safer_words, over_safer_db, front_to_back_db, front_to_back_safer_db: a resistor chosen for SNR that beats the
    matched resistor or the one of best RDF by under 1 dB while giving up 10 dB of front-to-back per dB, at least
    3 dB; snrgain.decide.decisions),
    ``resistor-per-band`` (bands, common_ohm, common_standard_ohm, worst_db, worst_band: an antenna of a plan across
    bands whose best resistors differ by band; snrgain.decide.bandplan.resistor_notices),
    ``level-every-band`` (source, level_dbm, fa_db, bands: a local source's level or Fa given once in a file of
    several bands, and so taken on every band; snrgain.decide.bandplan.level_notices),
    ``wire-too-long`` (length_m, rule_m, rdf_db, best_length_m, best_rdf_db, target, velocity_factor: a wire past
    the maximum-effective-length rule that a shorter one beats on RDF; snrgain.decide.decisions),
    ``near-raised-source`` (source, distance_m, height_m, others: an antenna, the reference too, within 10 m on the
    plan of a placed noise source 5 m or more up, which may be a power line: the trade's caution; snrgain.decide.lot),
    ``reference-at-origin`` (where: a reference without a position whose place, the plan's origin, is off the lot,
    in a keep-out area or on a candidate; snrgain.decide.lot),
    ``feed-line-lengths-differ`` (chain_m, run_m: an antenna's chain cable length a quarter or more off its
    feed_line's straight run; snrgain.decide.decisions),
    ``termination-off-target`` (target, target_bearing_deg, bearing_deg, off_deg, below_db: a resistor to be chosen
    for SNR whose nearest target lies outside the antenna's main lobe, left at best RDF; snrgain.model.steering),
    ``phasing-tolerance`` (bearing_deg, elevation_deg, rdf_db, front_to_back_db, rdf_drawn_db and
    front_to_back_drawn_db: their 10, 50 and 90 % points with the phasing lines cut with a cable's usual errors,
    longest_delay_ns, longest_error_ns, velocity_factor_error, length_error_m, draws: an array whose figures rest on
    lines cut closer than that, a switched one once with state and states; snrgain.decide.tolerance),
    ``source-position`` (source, step_m, directions, low_db, high_db, share: a candidate whose noise and SNR gain
    move by 3 dB or more when a placed source moves step_m; with reference and read_on, the reference whose own
    noise moves that much; snrgain.decide.source_place).

    ``strong-signal-overload`` also holds listen_hz and filters (kind, stations, frequencies_hz, rejection_db, why:
    snrgain.physics.strong.overload_filters); its filter_db is their rejection.  Both strong-signal codes are said of
    the active stage worst off (``stage``: "preamplifier" or "receiver"; the most dB over) and hold ``stages``, each
    active stage of the chain in its order: the overload's stage, input_dbm, p1db_dbm, over_db, assumed; the
    product's stage, level_dbm, noise_dbm, over_db, assumed (over_db negative where that stage is within its limit).
    """

    code: str
    antenna: str | None = None
    values: dict[str, Any] = field(default_factory=dict)


__all__ = ["Notice"]
