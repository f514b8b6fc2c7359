"""evaluate(scenario) -> Results: the main job, as one chain of pure stages (``snrgain.evaluate``).

Each stage is a function of the products before it and returns new objects; nothing changes an antenna, a
scenario or a result that a caller holds.  Every command (rank, report, figures, sweep, layout) and the tests
go through these functions:

1. :func:`snrgain.scenario.load`: validate the file and resolve it into SI objects;
2. :func:`resolve_sources`: every local level read on the reference antenna becomes the source's strength (its
   Fa), once, here;
3. :func:`build_sky`: the noise sky for every month and hour (:func:`snrgain.sky.noise.build_skies`);
4. :func:`steer`: the antennas set under that sky (arrays steered for SNR, phasing units), returned as new
   antennas;
5. :func:`products`: every antenna's gains (:func:`snrgain.model.snr.antenna_gains`) and temperatures from every
   component, placed sources heard where each antenna stands (:func:`snrgain.model.placed.pickup`, an input of
   :func:`snrgain.model.snr.sky_temperatures`);
6. :func:`snrgain.model.spread.snr_spread`: how sure, a map of :func:`products` over the variants (grounds) and of the
   noise draws;
7. :func:`antenna_results`: SNR gain over the reference, RDF, front-to-back, the noise budget through each
   antenna's chain (:func:`snrgain.physics.chain.noise_budget`) and the build sheet;
8. :func:`decide`: per target the candidates ranked by median SNR gain toward it, the station plan on the same
   statistic (:func:`snrgain.decide.plan.station_plan`) and :func:`notices`.

Nothing is summed or averaged in dB over targets.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field, replace

import numpy as np

from noisemodels import p372
from snrgain.decide.build import build_sheet
from snrgain.decide.plan import station_plan
from snrgain.model import placed, snr
from snrgain.model.results import AntennaResult, Notice, PatternCuts, Results, rank_for_target
from snrgain.model.spread import SnrSpread, over_hours, snr_spread
from snrgain.physics import chain as chainmod
from snrgain.physics.receiver import power_dbm
from snrgain.scenario import Scenario, load
from snrgain.sky import noise as noisemod


def evaluate(source, *, nside: int | None = None, p372_dir=None, allow_long: bool = False) -> Results:
    """Run a scenario (path, TOML text, dict, or a loaded Scenario) and return Results.

    ``p372_dir``: folder of the ITU-R P.372 coefficient files, used when
    neither the scenario key nor $SNRGAIN_P372_DIR names one.  A scenario whose
    estimated cost passes :data:`MAX_SECONDS` or :data:`MAX_MEMORY_BYTES` is
    refused before any work (:class:`snrgain.errors.TooLargeError`, with the
    estimate) unless ``allow_long``.

    >>> r = evaluate("scenarios/marrow-fen.toml")
    >>> float(np.nanmax(abs(r.reference.snr_gain_db)))  # the reference against itself
    0.0
    """
    sc = source if isinstance(source, Scenario) else load(source, nside=nside, p372_dir=p372_dir)
    check_size(sc, allow_long=allow_long)
    grid = sky_grid(sc)
    sc = resolve_sources(sc)
    skies = build_sky(sc, grid)
    sc = steer(sc, grid, skies)
    nominal = products(sc, sc.antennas, grid, skies)
    spread = snr_spread(sc, grid, skies, nominal)
    return decide(sc, skies, antenna_results(sc, nominal, skies, spread), pattern_cuts(sc))


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


def _chain_gain_db(sc: Scenario) -> float:
    return float(10 * np.log10(sc.chains[0].gain))


def resolve_sources(sc: Scenario) -> Scenario:
    """The scenario with each local level read on the reference turned into the source's strength (its Fa):
    the one place where a reading on the reference is converted (:func:`snrgain.sky.noise.resolve_local_levels`)."""
    if not any(s.level_dbm is not None and s.fa_db is None for s in sc.noise.local):
        return sc
    noise = noisemod.resolve_local_levels(sc.noise, sc.place, _reference_gain(sc), _chain_gain_db(sc))
    return replace(sc, noise=noise)


def strength_offsets_db(sc: Scenario, reference) -> dict[str, float]:
    """For a reference antenna changed by a variant (another ground): how many dB each source read on the
    reference must move so that this reference still receives what was read (name -> dB)."""
    out = {}
    for s in sc.noise.local:
        if s.level_dbm is not None and s.fa_db is not None:
            fa = noisemod.level_to_fa_db(s, sc.place, _reference_gain(sc, reference), _chain_gain_db(sc))
            out[s.name] = fa - s.fa_db
    return out


def build_sky(sc: Scenario, grid) -> noisemod.SkySeries:
    """The scenario's noise sky on ``grid`` for its months and hours (its local sources resolved first by
    :func:`resolve_sources`)."""
    return noisemod.build_skies(
        sc.noise,
        sc.place,
        months=sc.times.months,
        utc_hours=sc.times.utc_hours,
        grid=grid,
        reference_gain=_reference_gain(sc),
        reference_chain_gain_db=_chain_gain_db(sc),
    )


def nearest_target(sc: Scenario, bearing_rad: float) -> int:
    """Index of the target whose bearing lies nearest ``bearing_rad``."""
    off = [abs((t.bearing_rad - bearing_rad + np.pi) % (2 * np.pi) - np.pi) for t in sc.targets]
    return int(np.argmin(off))


@dataclass(frozen=True)
class Products:
    """The nominal products of a set of antennas under one sky: the antennas ([reference, *candidates]), their
    gains, their temperatures from every component, the powers they take from each placed source (name -> array)
    and the ground those powers were worked on (None: the site's)."""

    antennas: tuple
    gains: snr.Gains
    temps: snr.Temperatures
    powers: dict = field(default_factory=dict)
    ground: object = None


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
    if same and strength_db is None and None not in rows and antennas[0] is known.antennas[0] and rows[0] == 0:
        by = known.temps.by_component[:, rows].copy()  # the sky rows are the gains' alone
        for name, share in shares.items():
            r = skies.names.index(name)
            by[r] = known.temps.by_component[r, 0][None] * share[:, None, None]
        temps = snr.Temperatures(by, by.sum(axis=0))
    else:
        temps = snr.sky_temperatures(gains, skies, pickup=shares, strength_db=strength_db)
    return Products(antennas, gains, temps, powers, ground)


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
    """The one statistic of :func:`snr_gains` per antenna and target (snrgain.model.spread.over_hours): (antennas,
    targets) [dB]."""
    masks = target_masks(sc)
    return np.array([[over_hours(gt[m], sc.uncertainty.hours) for gt, m in zip(ga, masks)] for ga in g])


def nominal(sc: Scenario):
    """(scenario as set under its sky, skies, nominal products, per-antenna figures without spreads): the stages of
    :func:`evaluate` short of the spread and the decisions (sweeps, layout)."""
    grid = sky_grid(sc)
    sc = resolve_sources(sc)
    skies = build_sky(sc, grid)
    sc = steer(sc, grid, skies)
    p = products(sc, sc.antennas, grid, skies)
    return sc, skies, p, antenna_results(sc, p, skies)


def with_antennas(sc: Scenario, antennas) -> Scenario:
    """The scenario holding ``antennas`` ([reference, *candidates], as a stage returned them)."""
    antennas = list(antennas)
    return replace(sc, reference=antennas[0], candidates=tuple(antennas[1:]))


def repoint(antennas: list, old: list) -> list:
    """Composite antennas made over the antennas at the same places in ``antennas`` as their parts stood in
    ``old`` (a stage that returns new antennas keeps the phasing units over them)."""
    out = list(antennas)
    for k, ant in enumerate(out):
        if ant.composite and ant.elements:
            idx = [next(i for i, o in enumerate(old) if o is e) for e in ant.elements]
            out[k] = ant.with_parts([out[i] for i in idx])
    return out


def sky_forms(sc: Scenario, skies, ant, k: int):
    """(signal, noise, target index) quadratic forms of an antenna's element weights under the sky: the noise
    averaged over the scenario's months and hours plus the chain's noise on the combiner's normalisation, the
    signal toward the target nearest its bearing (snrgain.antennas.steering)."""
    from snrgain.antennas.steering import quadratic_form

    responses: dict[int, tuple] = {}
    noise = 0
    for comps in skies.maps.values():
        for c in comps:
            key = id(c.directions)
            if key not in responses:
                responses[key] = ant.element_responses(sc.freq_hz, c.directions.azimuth_rad, c.directions.elevation_rad)
            noise = noise + quadratic_form(*responses[key], c.weight_k_sr / (4 * np.pi))
    noise = noise / len(skies.maps) + sc.chains[k].temperature_k * ant.norm_matrix(sc.freq_hz)
    ti = nearest_target(sc, ant.params.bearing)
    t = sc.targets[ti]
    signal = quadratic_form(*ant.element_responses(sc.freq_hz, t.azimuth_rad, t.elevation_rad), t.weight)
    return signal, noise, ti


def steer(sc: Scenario, grid, skies) -> Scenario:
    """The scenario with every candidate that ``uses_sky`` (arrays steered for SNR, phasing units) set under its
    sky: new antennas, the scenario's own untouched.

    A phasing unit's automatic setting is the best, by the ranking's statistic (the median over its target's
    hours of the SNR gain over the reference), of the maximum-SNR setting and each of its two antennas alone, so
    it is never worse than the better of its parts toward its target.
    """
    old = list(sc.antennas)
    order = sorted((k for k, a in enumerate(old) if k > 0 and a.uses_sky), key=lambda k: old[k].sky_order)
    if not order or skies.maps is None:
        return sc
    ants = list(old)
    ref = None
    for k in order:
        ant = repoint(ants, old)[k]
        signal, noise, ti = sky_forms(sc, skies, ant, k)
        note = f"SNR toward {sc.targets[ti].name} under the site's noise"
        choices = [ant.under_sky(sc.freq_hz, signal=signal, noise=noise, note=note)]
        if ant.composite and ant.optimised:
            for i, part in enumerate(ant.elements):
                alone = ant.alone(sc.freq_hz, i, f"{part.name} alone: the better part toward {sc.targets[ti].name}")
                alone.setting_loss(sc.freq_hz, signal, noise)
                choices.append(alone)
            if ref is None:
                ref = products(sc, [ants[0]], grid, skies)
            ants[k] = max(choices, key=lambda a: _median_gain(sc, grid, skies, ref, a, k, ti))
        else:
            ants[k] = choices[0]
    return with_antennas(sc, repoint(ants, old))


def _median_gain(sc: Scenario, grid, skies, ref: Products, ant, k: int, ti: int) -> float:
    """Antenna ``ant``'s (candidate ``k``'s) statistic toward target ``ti`` without the spreads [dB]."""
    sub = replace(sc, candidates=(ant,), chains=(sc.chains[0], sc.chains[k]))
    p = products(sub, [ref.antennas[0], ant], grid, skies, known=ref)
    return float(target_statistic(sub, snr_gains(sub, p))[1, ti])


def pattern_cuts(sc: Scenario) -> PatternCuts:
    """Azimuth and elevation cuts of every antenna toward every target."""
    az_cut, el_cut = snr.pattern_cuts(sc.antennas, sc.freq_hz, sc.targets)
    return PatternCuts(
        snr.AZIMUTH_CUT_DEG,
        snr.ELEVATION_CUT_DEG,
        {a.name: c for a, c in zip(sc.antennas, az_cut)},
        {a.name: c for a, c in zip(sc.antennas, el_cut)},
    )


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
                snr_gain_nominal_db=median[k],
                snr_gain_median_db=median[k] if spread is None else spread.median_db[k],
                snr_gain_p10_db=median[k] if spread is None else spread.p10_db[k],
                snr_gain_p90_db=median[k] if spread is None else spread.p90_db[k],
                probability_beats=np.full(len(masks), np.nan) if spread is None else spread.probability[k],
                receiver_limited=bool(np.any(budget.margin_db < sc.receiver.margin_target_db)),
                chain=chainmod.describe(ch, bandwidth_hz=b),
                snr_gain_atmospheric_deciles_db=None if deciles[0] is None else np.stack([d[k] for d in deciles]),
                build={} if k == 0 else build_sheet(ant, sc.freq_hz, cable=ch.cable),
            )
        )
    return out


def notices(sc: Scenario, antennas: list[AntennaResult]) -> list[Notice]:
    """What the user should know about the results, as codes and numbers."""
    out = []
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
                    },
                )
            )
    for ant in sc.candidates:
        lobe = main_lobe_deg(ant, sc.freq_hz)
        if lobe is not None:
            bearing = float(np.degrees(ant.params.bearing)) % 360.0
            off = abs((lobe - bearing + 180.0) % 360.0 - 180.0)
            if off > 90.0:
                out.append(
                    Notice(
                        "lobe-away-from-bearing", ant.name, {"bearing_deg": bearing, "lobe_deg": lobe, "off_deg": off}
                    )
                )
        far = getattr(ant, "far_rod_ohm", None)
        if far and getattr(ant, "terminated", False) and getattr(ant.params, "termination", "auto") == "auto":
            z0 = abs(ant.line(sc.freq_hz).z0)
            if far > 0.7 * z0:
                out.append(Notice("far-ground-too-high", ant.name, {"far_ground_ohm": far, "z0_ohm": z0}))
    from snrgain.decide.lot import site_notices

    out.extend(site_notices(sc))
    lowest = p372.MAN_MADE_RANGE_HZ[0]
    if sc.freq_hz < lowest and sc.noise.man_made is not None:
        out.append(Notice("man-made-extrapolated", None, {"freq_hz": sc.freq_hz, "lowest_hz": lowest}))
    return out


def target_masks(sc: Scenario) -> np.ndarray:
    """Which (month, hour) cells of the scenario's grid each target is listened at, shape (targets, months, hours)
    (read-only: shared by every call for the same times)."""
    return _masks(sc.times, tuple(sc.target_times))


@functools.lru_cache(maxsize=64)
def _masks(times, target_times) -> np.ndarray:
    out = np.array([t.mask(times) for t in target_times])
    out.flags.writeable = False
    return out


LOBE_ELEVATION_DEG = 15.0
"""Elevation at which an array's main lobe is compared with its bearing [deg] (a typical low-band arrival)."""


def main_lobe_deg(antenna, freq_hz: float) -> float | None:
    """Bearing [deg] of an array's azimuth maximum at LOBE_ELEVATION_DEG, for the families steered by phases or
    delays (``phased``); None for the others."""
    if not antenna.phased:
        return None
    az = np.arange(0.0, 360.0, 1.0)
    g = antenna.gain_dbi(freq_hz, az, LOBE_ELEVATION_DEG)
    return float(az[int(np.argmax(g))])


def decide(sc: Scenario, skies: noisemod.SkySeries, antennas: list[AntennaResult], cuts: PatternCuts) -> Results:
    """The Results of a scenario from its per-antenna figures: per target the candidates ranked by the median SNR
    gain toward it, and the station plan on that same statistic (snrgain.decide.plan)."""
    ground = sc.site.ground
    reference, candidates = antennas[0], antennas[1:]
    targets = [_target_dict(t, w, tt) for t, w, tt in zip(sc.targets, sc.target_weights, sc.target_times)]
    plan = station_plan(
        [a.name for a in antennas],
        np.array([a.snr_gain_median_db for a in antennas]),
        sc.target_weights,
        max_antennas=sc.max_antennas,
        buildable=[ant.buildable for ant in sc.antennas],
        target_times=[(list(tt.months), list(tt.utc_hours)) for tt in sc.target_times],
    )
    return Results(
        source=sc.source,
        site={
            "name": sc.site.name,
            "latitude_deg": sc.site.latitude_deg,
            "longitude_deg": sc.site.longitude_deg,
            "ground": "perfect" if ground is None else ground.name,
            "ground_conductivity_s_per_m": None if ground is None else ground.conductivity_s_per_m,
            "ground_permittivity": None if ground is None else ground.permittivity,
        },
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
        notices=notices(sc, [reference, *candidates]),
        cuts=cuts,
        lot_m=None if sc.site.lot_m is None else list(sc.site.lot_m),
        local_sources=[
            {
                "name": s.name,
                "bearing_deg": float(np.degrees(s.bearing_rad)),
                "elevation_deg": float(np.degrees(s.elevation_rad)),
                "spread_deg": float(np.degrees(s.spread_rad)),
            }
            for s in sc.noise.local
        ],
    )


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


def _target_dict(t, w, times) -> dict:
    return {
        "name": t.name,
        "weight": float(w),
        "bearing_deg": float(np.degrees(t.bearing_rad)),
        "elevation_min_deg": float(np.degrees(t.elevation_rad.min())),
        "elevation_max_deg": float(np.degrees(t.elevation_rad.max())),
        "distance_km": None if t.distance_m is None else t.distance_m / 1e3,
        "hops": None if t.hops is None else list(t.hops),
        "months": list(times.months),
        "utc_hours": list(times.utc_hours),
    }


__all__ = [
    "evaluate",
    "resolve_sources",
    "build_sky",
    "steer",
    "products",
    "antenna_results",
    "decide",
    "notices",
    "Products",
]
