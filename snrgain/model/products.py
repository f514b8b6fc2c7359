"""The pipeline's middle stages: each antenna's gains and temperatures under the sky (:func:`products`, placed
sources heard where each antenna stands, what earlier products hold taken from them), the SNR gain over the
reference and the one statistic every decision uses (:func:`target_statistic`), and the per-antenna figures
(:func:`antenna_results`).  Composed by :mod:`snrgain.model.pipeline`."""

from __future__ import annotations

import functools
from dataclasses import field

import numpy as np

from snrgain.decide.build import build_sheet
from snrgain.model import feedline, placed, snr
from snrgain.model.results import AntennaResult
from snrgain.model.spread import SnrSpread, over_hours_rows
from snrgain.physics import chain as chainmod
from snrgain.physics.receiver import power_dbm
from snrgain.records import record
from snrgain.scenario import Scenario
from snrgain.scenario.switched import switched_state
from snrgain.sky import noise as noisemod


@record
class Products:
    """The nominal products of a set of antennas under one sky: the antennas ([reference, *candidates]), their
    gains, their temperatures from every component, the powers they take from each placed source (name -> array)
    and the ground those powers were worked on (None: the site's)."""

    antennas: tuple
    gains: snr.Gains
    temps: snr.Temperatures
    powers: dict = field(default_factory=dict)
    ground: object = None
    feed_lines: object = None
    """What the antennas' feed lines add (snrgain.model.feedline.FeedLineTemps), None without feed lines."""


def products(sc: Scenario, antennas, grid, skies, *, ground=None, strength_db=None, known=None) -> Products:
    """Gains and temperatures of ``antennas`` (the reference first) under ``skies``; ``ground``: the soil under a
    placed source's field (default: the site's); ``strength_db``: see :func:`snrgain.model.snr.sky_temperatures`.

    ``known``: products already made under the same sky.  What they hold is taken from them, not worked again: the
    gains of the same antennas or of the same antenna at another place (a sweep's reference, a spread's antennas
    that keep their ground, a design placed around the lot), the power the same antennas take from a placed source
    on the same ground, and, when every antenna is known and the reference is the same, the temperatures (only a
    placed source's share is worked anew)."""
    antennas = tuple(antennas)
    rows = _known_rows(antennas, known)
    gains = _gains(sc, antennas, grid, known, rows)
    same = known is not None and ground is known.ground
    have = None
    if same and known.powers:
        same_obj = [j if j is not None and known.antennas[j] is a else None for a, j in zip(antennas, rows)]
        have = {n: np.array([p[j] if j is not None else np.nan for j in same_obj]) for n, p in known.powers.items()}
    shares, powers = placed.pickup(sc, antennas, ground=ground, powers=have)
    fl = feedline.prepare(sc, antennas, powers, ground=ground)
    shares = feedline.shares_with(fl, shares)
    reuse = same and strength_db is None and None not in rows and antennas[0] is known.antennas[0] and rows[0] == 0
    if fl is None and reuse:  # feed lines move with their antennas: their part is worked anew
        by = known.temps.by_component[:, rows].copy()  # the sky rows are the gains' alone
        for name, share in shares.items():
            # the reference's temperature from the source already holds the reference's own share (not 1 for a
            # source measured elsewhere: pickup's measured_at scale): each antenna takes it times share / share[0]
            r = skies.names.index(name)
            by[r] = known.temps.by_component[r, 0][None] * (share / share[0])[:, None, None]
        temps = snr.Temperatures(by, by.sum(axis=0))
    else:
        temps = snr.sky_temperatures(gains, skies, pickup=shares, strength_db=strength_db)
    part = None
    if fl is not None:  # each feed line's sky part, through its own "gain" (snrgain.model.feedline.gains)
        part = snr.sky_temperatures(
            feedline.gains(fl, sc, gains), skies, pickup=feedline.no_pickup(fl), strength_db=strength_db
        )
    temps, fl_temps = feedline.added(fl, temps, part, skies)
    return Products(antennas, gains, temps, powers, ground, fl_temps)


def unheard(sc: Scenario, ant, grid, skies, ref: Products, placed_names) -> Products:
    """Products of [reference, ``ant``] with no placed source heard by ``ant`` (its powers NaN, to be worked where it
    stands, with its other places): its gains and its sky temperatures (the placed sources' rows through the
    reference's pattern, each antenna's share of them set by :func:`products` from the powers), the reference's as
    ``ref`` (products of the reference alone or with others, the reference first) holds them.  What
    ``products(known=...)`` of one design at many places takes from them, so a first place's pickup is not worked
    on its own (snrgain.tools.layout)."""
    g = snr.antenna_gains([ant], sc.freq_hz, grid, sc.targets)
    gains = snr.Gains(
        [ref.gains.caches[0], g.caches[0]],
        np.concatenate([ref.gains.toward[:1], g.toward]),
        np.concatenate([ref.gains.mean[:1], g.mean]),
    )
    names = list(placed_names)
    temps = snr.sky_temperatures(gains, skies, pickup={n: np.ones(2) for n in names})
    by = temps.by_component.copy()
    by[:, 0] = ref.temps.by_component[:, 0]  # the placed sources' rows with the reference's own share
    powers = {n: np.array([ref.powers[n][0], np.nan]) for n in names}
    return Products((ref.antennas[0], ant), gains, snr.Temperatures(by, by.sum(axis=0)), powers, ref.ground)


def first_two(p: Products) -> Products:
    """Products of the reference and the first antenna of ``p`` alone (what one design's next places take from its
    products at many places: snrgain.tools.layout); ``p`` itself where feed lines are in it."""
    if p.feed_lines is not None:
        return p
    g, t = p.gains, p.temps
    gains = snr.Gains(g.caches[:2], g.toward[:2], g.mean[:2])
    temps = snr.Temperatures(t.by_component[:, :2], t.total[:2])
    powers = {n: v[:2] for n, v in p.powers.items()}
    return Products(p.antennas[:2], gains, temps, powers, p.ground)


def _known_rows(antennas: tuple, known: Products | None) -> list:
    """For each antenna, the row of ``known`` holding it (the same object, or the same antenna at another place:
    ``gain_key``), or None."""
    if known is None:
        return [None] * len(antennas)
    rows = {id(a): j for j, a in enumerate(known.antennas)}
    for j, a in enumerate(known.antennas):
        key = a.gain_key()
        if key is not None:
            rows.setdefault(key, j)
    out = []
    for a in antennas:
        j = rows.get(id(a))
        out.append(rows.get(a.gain_key()) if j is None else j)
    return out


def _gains(sc: Scenario, antennas: tuple, grid, known: Products | None, rows: list) -> snr.Gains:
    if known is None:
        return snr.antenna_gains(antennas, sc.freq_hz, grid, sc.targets)
    new = [a for a, j in zip(antennas, rows) if j is None]
    fresh = snr.antenna_gains(new, sc.freq_hz, grid, sc.targets) if new else None
    caches, toward, mean, i = [], [], [], 0
    for j in rows:
        if j is None:
            caches.append(fresh.caches[i])
            toward.append(fresh.toward[i])
            mean.append(fresh.mean[i])
            i += 1
        else:
            caches.append(known.gains.caches[j])
            toward.append(known.gains.toward[j])
            mean.append(known.gains.mean[j])
    return snr.Gains(caches, np.array(toward).reshape(len(antennas), len(sc.targets)), np.array(mean))


def snr_gains(sc: Scenario, p: Products) -> np.ndarray:
    """SNR gain [dB] of every antenna of ``p`` over the first (the reference), through each antenna's chain, per
    target, month and hour: (antennas, targets, months, hours), NaN where a target is not listened."""
    t_chain = np.array([c.temperature_k for c in sc.chains])
    g = snr.snr_gain_over_reference(p.gains.toward, p.temps.total + t_chain[:, None, None])
    return np.where(target_masks(sc)[None], g, np.nan)


def target_statistic(sc: Scenario, g: np.ndarray) -> np.ndarray:
    """The one statistic of :func:`snr_gains` per antenna and target (snrgain.model.spread.over_hours, every antenna
    at once: over_hours_rows): (antennas, targets) [dB]."""
    return over_hours_rows(g, target_masks(sc), sc.uncertainty.hours).reshape(len(g), len(sc.targets))


def target_masks(sc: Scenario) -> np.ndarray:
    """Which (month, hour) cells of the scenario's grid each target is listened at, shape (targets, months, hours)
    (read-only: shared by every call for the same times)."""
    return _masks(sc.times, tuple(sc.target_times))


@functools.lru_cache(maxsize=64)
def _masks(times, target_times) -> np.ndarray:
    out = np.array([t.mask(times) for t in target_times])
    out.flags.writeable = False
    return out


def antenna_results(sc: Scenario, nominal: Products, skies: noisemod.SkySeries, spread: SnrSpread | None = None):
    """Per-antenna figures ([reference, *candidates], unranked) from the nominal products and the spread, each with
    its build sheet (``sc`` holds the antennas as set under the sky).

    Without ``spread`` the figures are nominal: the median and both deciles are the nominal SNR gain (the median
    over the target's hours), and the probability of beating the reference is NaN (not computed).
    """
    gains, temps = nominal.gains, nominal.temps
    b = sc.bandwidth_hz
    t_chain = np.array([c.temperature_k for c in sc.chains])
    masks = target_masks(sc)
    snr_gain = snr_gains(sc, nominal)
    median = target_statistic(sc, snr_gain)
    deciles = [
        snr.snr_gain_with_scaled_kind(gains.toward, temps, t_chain, skies, kind="atmospheric", deviation=d)
        for d in ("upper", "lower")
    ]
    deciles = [None if d is None else np.where(masks, d, np.nan) for d in deciles]
    fb = snr.front_to_back_toward(gains, sc.targets)
    with np.errstate(divide="ignore"):
        gain_dbi = 10.0 * np.log10(gains.toward)
        rdf = 10.0 * np.log10(gains.toward / gains.mean[:, None])
    out = []
    for k, (ant, ch) in enumerate(zip(sc.antennas, sc.chains)):
        budget = chainmod.noise_budget(
            ch, temps.total[k], bandwidth_hz=b, margin_target_db=sc.receiver.margin_target_db
        )
        chain_gain_db = 10.0 * np.log10(ch.gain)
        by_comp = {
            n: power_dbm(temps.by_component[i, k], bandwidth_hz=b) + chain_gain_db for i, n in enumerate(skies.names)
        }
        g = snr_gain[k]
        out.append(
            AntennaResult(
                name=ant.name,
                family=ant.family,
                parameters=ant.describe(),
                gain_dbi=gain_dbi[k],
                mean_gain_dbi=float(10.0 * np.log10(gains.mean[k])),
                rdf_db=rdf[k],
                front_to_back_db=fb[k],
                snr_gain_db=g,
                noise_dbm=budget.noise_dbm,
                noise_by_component_dbm=by_comp,
                margin_db=budget.margin_db,
                receiver_snr_loss_db=budget.receiver_snr_loss_db,
                preamp_gain_needed_db=budget.preamp_gain_needed_db,
                preamp_position=budget.preamp_position,
                preamp_best_effort=None
                if budget.best_effort is None
                else {
                    "gain_db": budget.best_effort.gain_db,
                    "position": budget.best_effort.position,
                    "snr_loss_db": budget.best_effort.snr_loss_db,
                },
                snr_gain_nominal_db=median[k],
                snr_gain_median_db=median[k] if spread is None else spread.median_db[k],
                snr_gain_p10_db=median[k] if spread is None else spread.p10_db[k],
                snr_gain_p90_db=median[k] if spread is None else spread.p90_db[k],
                probability_beats=np.full(len(masks), np.nan) if spread is None else spread.probability[k],
                receiver_limited=bool(np.any(chainmod.short_of_target(budget.margin_db, sc.receiver.margin_target_db))),
                chain=chainmod.describe(ch, bandwidth_hz=b),
                snr_gain_atmospheric_deciles_db=None if deciles[0] is None else np.stack([d[k] for d in deciles]),
                build={} if k == 0 else _with_feed_line(build_sheet(ant, sc.freq_hz, cable=ch.cable), sc, nominal, k),
                group=None if switched_state(ant) is None else switched_state(ant).group,
                state=None if switched_state(ant) is None else switched_state(ant).state,
                parts=tuple(e.name for e in ant.elements) if ant.composite else (),
            )
        )
    return out


def _with_feed_line(sheet: dict, sc: Scenario, nominal: Products, k: int) -> dict:
    """The build sheet with the antenna's feed line (snrgain.model.feedline.summary) when it has one."""
    fl = feedline.summary(sc, nominal, k)
    return sheet if fl is None else {**sheet, "feed_line": fl}
