"""evaluate(scenario) -> Results: the main job, as one chain of pure stages (``snrgain.evaluate``).

Each stage is a function of the products before it and returns new objects; nothing changes an antenna, a
scenario or a result that a caller holds.  Every command (rank, report, figures, sweep, layout) and the tests
go through these functions:

1. :func:`snrgain.scenario.load`: validate the file and resolve it into SI objects;
2. :func:`resolve_sources`: every local level read on the reference antenna becomes the source's strength (its
   Fa), once, here;
3. :func:`build_sky`: the noise sky for every month and hour (:func:`snrgain.sky.noise.build_skies`);
4. :func:`with_structures`: each compact candidate beside the transmitting vertical (in the site's tx_state)
   and the site's structures, their re-radiation in its response (snrgain.model.scatter); then :func:`steer`: the
   antennas set under that sky (arrays steered for SNR, phasing units), returned as new antennas;
5. :func:`products`: every antenna's gains (:func:`snrgain.model.snr.antenna_gains`) and temperatures from every
   component, placed sources heard where each antenna stands (:func:`snrgain.model.placed.pickup`, an input of
   :func:`snrgain.model.snr.sky_temperatures`);
6. :func:`snrgain.model.spread.snr_spread`: how sure, a map of :func:`products` over the variants (grounds) and of the
   noise draws;
7. :func:`antenna_results`: SNR gain over the reference, RDF, front-to-back, the noise budget through each
   antenna's chain (:func:`snrgain.physics.chain.noise_budget`) and the build sheet;
8. :func:`decide`: per target the candidates ranked by median SNR gain toward it, the station plan on the same
   statistic (:func:`snrgain.decide.plan.station_plan`) and :func:`notices`;
9. :func:`snrgain.model.strong.with_strong_signals`: nearby transmitters' levels at each active stage of each
   antenna's chain (its preamplifier, its receiver), and the antennas they would overload.

Nothing is summed or averaged in dB over targets.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from snrgain.decide.decisions import decide, main_lobe_deg, notices
from snrgain.model import snr
from snrgain.model.products import (
    Products,
    antenna_results,
    products,
    snr_gains,
    target_masks,
    target_statistic,
)
from snrgain.model.results import PatternCuts, Results
from snrgain.model.scatter import with_structures
from snrgain.model.spread import snr_spread
from snrgain.model.steering import nearest_target, repoint, sky_forms, steer, with_antennas, with_candidates
from snrgain.model.strong import with_strong_signals
from snrgain.scenario import Scenario, load
from snrgain.sky import noise as noisemod


def evaluate(source, *, nside: int | None = None, p372_dir=None, allow_long: bool = False, observe=None) -> Results:
    """Run a scenario (path, TOML text, dict, or a loaded Scenario) and return Results.

    ``p372_dir``: folder of the ITU-R P.372 coefficient files; it wins over
    the scenario key and $SNRGAIN_P372_DIR.  A scenario whose
    estimated cost passes :data:`MAX_SECONDS` or :data:`MAX_MEMORY_BYTES` is
    refused before any work (:class:`snrgain.errors.TooLargeError`, with the
    estimate) unless ``allow_long``.

    ``observe``: called with products of the stages as they are made, before the results, for what can start on
    them (the command line's figures: :func:`snrgain.decide.decisions.preview`): ``observe("sky", sc, skies)``
    once the noise sky is built, ``observe("cuts", sc, cuts)`` once the antennas are steered (``sc`` as steered,
    ``cuts`` its :func:`pattern_cuts`).  What it is given is the pipeline's own (frozen records): it must not
    change it, and what it returns is let go.

    >>> r = evaluate("scenarios/marrow-fen.toml")
    >>> float(np.nanmax(abs(r.reference.snr_gain_db)))  # the reference against itself
    0.0
    """
    sc = source if isinstance(source, Scenario) else load(source, nside=nside, p372_dir=p372_dir)
    check_size(sc, allow_long=allow_long)
    grid = sky_grid(sc)
    sc = resolve_sources(sc)
    skies = build_sky(sc, grid)
    if observe is not None:
        observe("sky", sc, skies)
    sc = steer(with_structures(sc), grid, skies)
    cuts = pattern_cuts(sc)
    if observe is not None:
        observe("cuts", sc, cuts)
    nominal = products(sc, sc.antennas, grid, skies)
    spread = snr_spread(sc, grid, skies, nominal)
    results = decide(sc, skies, antenna_results(sc, nominal, skies, spread), cuts)
    return with_strong_signals(sc, results)


def evaluate_bands(
    source, *, nside: int | None = None, p372_dir=None, allow_long: bool = False, reference: str | None = None
):
    """Run every band of a scenario (``[[band]]``, :mod:`snrgain.scenario.bands`) and plan across them.

    Each band is loaded and evaluated as a single-band file of it would be (:func:`evaluate`), so its answer is
    that file's; problems name their band.  Returns :class:`snrgain.model.bands.BandResults`.  A file of one band
    gives one entry, named by its frequency."""
    from snrgain.decide.bandplan import across_bands, plan_across_bands
    from snrgain.model.bands import BandResults
    from snrgain.scenario import load_bands

    loaded = load_bands(source, nside=nside, p372_dir=p372_dir, reference=reference)
    out = [(band, evaluate(sc, allow_long=allow_long)) for band, sc in loaded]
    plan, columns = plan_across_bands(out)
    out, across = across_bands(out, plan, columns)
    return BandResults(tuple(out), plan, columns, across)


MAX_SECONDS = 300.0
"""Estimated run time [s] above which :func:`evaluate` refuses a scenario unless asked (``allow_long``)."""
MAX_MEMORY_BYTES = 4 * 2**30
"""Estimated memory [B] above which :func:`evaluate` refuses a scenario unless asked (``allow_long``)."""


def check_size(sc: Scenario, *, allow_long: bool = False):
    """The scenario's estimated cost (:func:`snrgain.model.spread.size`); raises TooLargeError naming what sizes it and
    what would fit when it passes the limits and ``allow_long`` is not given."""
    from snrgain.errors import TooLargeError
    from snrgain.model.spread import size

    s = size(sc)
    if allow_long or (s.seconds <= MAX_SECONDS and s.memory_bytes <= MAX_MEMORY_BYTES):
        return s
    fit = max(20, int(sc.uncertainty.samples * min(MAX_SECONDS / s.seconds, MAX_MEMORY_BYTES / s.memory_bytes)))
    raise TooLargeError(
        f"this scenario would take about {s.seconds:.0f} s and {s.memory_bytes / 2**30:.1f} GB "
        f"({s.antennas} antennas x {s.grounds} grounds x {s.draws} noise draws x {s.components} noise components "
        f"x {s.cells} month-hours at nside {sc.nside}), above the limits of {MAX_SECONDS:.0f} s and "
        f"{MAX_MEMORY_BYTES / 2**30:.0f} GB; lower [uncertainty] samples (to {fit} or fewer), listen at fewer "
        "hours, or allow it (--allow-long)"
    )


def sky_grid(sc: Scenario):
    """The HEALPix upper hemisphere at the scenario's resolution."""
    from noisemodels.sphere import upper_hemisphere

    return upper_hemisphere(sc.nside)


def _reference_gain(sc: Scenario, reference=None):
    ref = sc.reference if reference is None else reference
    return lambda az, el: ref.gain_linear(sc.freq_hz, az, el)


def _chain_gain_db(sc: Scenario, k: int = 0) -> float:
    return float(10 * np.log10(sc.chains[k].gain))


def _reader(sc: Scenario, src, antennas=None) -> int:
    """The index of the antenna a source's level was read on (``read_on``, by name; None: the reference)."""
    names = [a.name for a in (sc.antennas if antennas is None else antennas)]
    return names.index(src.read_on) if src.read_on in names else 0


def _placed_elsewhere(s, k: int) -> bool:
    """A placed source whose level was read on antenna ``k`` other than the reference in force."""
    return k != 0 and s.position_m is not None


def _readings_fa_db(sc: Scenario, srcs, k: int, antennas, ground=None) -> list[float]:
    """The Fa of each of ``srcs``, levels read on antenna ``k`` of ``antennas`` ([reference, ...], as the products
    take them) through that antenna's chain.

    A source heard from a direction: as antenna ``k`` receives it through its own pattern.  A placed source (read on
    another antenna than the reference: :func:`_placed_elsewhere`): every antenna takes it as the reference does times
    P_A / P_ref (snrgain.model.placed), so the reading antenna receives T_ref P_k / P_ref; its Fa is the one that
    gives the reference the reading times P_ref / P_k, P its power from the source on ``ground`` (default the
    site's).  The reading antenna then receives what was read, and every antenna's noise is the one it has when the
    reading antenna is the reference: a level stays read on its antenna whichever antenna is ranked against."""
    placed_ = [s for s in srcs if _placed_elsewhere(s, k)]
    direct = [s for s in srcs if not _placed_elsewhere(s, k)]
    out = {}
    if direct:
        got = noisemod.levels_to_fa_db(direct, sc.place, _reference_gain(sc, antennas[k]), _chain_gain_db(sc, k))
        out.update({s.name: v for s, v in zip(direct, got)})
    if placed_:
        from snrgain.model import placed

        got = noisemod.levels_to_fa_db(placed_, sc.place, _reference_gain(sc, antennas[0]), _chain_gain_db(sc, k))
        alone = replace(sc, noise=replace(sc.noise, local=tuple(placed_)))
        _, powers = placed.pickup(alone, [antennas[0], antennas[k]], ground=ground)
        for s, v in zip(placed_, got):
            p_ref, p_k = powers[s.name]
            if not p_k > 0:
                raise ValueError(
                    f"noise.local {s.name!r}: {antennas[k].name!r}, which its level was read on, hears none of it"
                )
            out[s.name] = v - float(10 * np.log10(p_k / p_ref))
    return [out[s.name] for s in srcs]


def resolve_sources(sc: Scenario) -> Scenario:
    """The scenario with each local level turned into the source's strength (its Fa), as the antenna it was read
    on (``read_on``: the reference by default) receives it through its chain: the one place where a reading is
    converted (:func:`_readings_fa_db`, :func:`snrgain.sky.noise.level_to_fa_db`)."""
    todo = [s for s in sc.noise.local if s.level_dbm is not None and s.fa_db is None]
    if not todo:
        return sc
    readers = {id(s): _reader(sc, s) for s in todo}
    antennas = sc.antennas
    if any(_placed_elsewhere(s, readers[id(s)]) for s in todo):
        antennas = with_structures(sc).antennas  # a placed source's pickup, as the products take it
    local = tuple(
        replace(s, fa_db=_readings_fa_db(sc, [s], readers[id(s)], antennas)[0]) if id(s) in readers else s
        for s in sc.noise.local
    )
    return replace(sc, noise=replace(sc.noise, local=local))


def strength_offsets_db(sc: Scenario, antennas, ground=None) -> dict[str, float]:
    """For antennas changed by a variant (another ground, ``ground``: the soil under a placed source's field;
    ``antennas`` in the scenario's order, or the reference alone): how many dB each source's strength must move so
    that the antenna its level was read on still receives what was read (name -> dB)."""
    antennas = list(antennas) if isinstance(antennas, (list, tuple)) else [antennas]
    by_reader: dict[int, list] = {}  # the levels read on each antenna, read again together
    for s in sc.noise.local:
        if s.level_dbm is not None and s.fa_db is not None:
            by_reader.setdefault(_reader(sc, s, antennas) if len(antennas) > 1 else 0, []).append(s)
    fa = {}
    for k, srcs in by_reader.items():
        got = _readings_fa_db(sc, srcs, k, antennas, ground)
        fa.update({s.name: v - s.fa_db for s, v in zip(srcs, got)})
    return {s.name: fa[s.name] for s in sc.noise.local if s.name in fa}


def build_sky(sc: Scenario, grid) -> noisemod.SkySeries:
    """The scenario's noise sky on ``grid`` for its months and hours, its local sources' strengths from
    :func:`resolve_sources` (a no-op when they are resolved already)."""
    sc = resolve_sources(sc)
    return noisemod.build_skies(sc.noise, sc.place, months=sc.times.months, utc_hours=sc.times.utc_hours, grid=grid)


def nominal(sc: Scenario):
    """(scenario as set under its sky, skies, nominal products, per-antenna figures without spreads): the stages of
    :func:`evaluate` short of the spread and the decisions (sweeps, layout)."""
    grid = sky_grid(sc)
    sc = resolve_sources(sc)
    skies = build_sky(sc, grid)
    sc = steer(with_structures(sc), grid, skies)
    p = products(sc, sc.antennas, grid, skies)
    return sc, skies, p, antenna_results(sc, p, skies)


def pattern_cuts(sc: Scenario) -> PatternCuts:
    """Azimuth and elevation cuts of every antenna toward every target."""
    az_cut, el_cut = snr.pattern_cuts(sc.antennas, sc.freq_hz, sc.targets)
    return PatternCuts(
        snr.AZIMUTH_CUT_DEG,
        snr.ELEVATION_CUT_DEG,
        {a.name: c for a, c in zip(sc.antennas, az_cut)},
        {a.name: c for a, c in zip(sc.antennas, el_cut)},
    )


__all__ = [  # the stages, here or in the modules they live in (one import path for every command)
    "evaluate",
    "check_size",
    "sky_grid",
    "resolve_sources",
    "strength_offsets_db",
    "build_sky",
    "steer",
    "with_structures",
    "sky_forms",
    "nearest_target",
    "with_antennas",
    "with_candidates",
    "repoint",
    "products",
    "Products",
    "snr_gains",
    "target_statistic",
    "target_masks",
    "nominal",
    "antenna_results",
    "pattern_cuts",
    "decide",
    "notices",
    "evaluate_bands",
    "main_lobe_deg",
    "MAX_SECONDS",
    "MAX_MEMORY_BYTES",
]
