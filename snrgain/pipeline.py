"""evaluate(scenario) -> Results: the main job, as a short chain of named steps (``snrgain.evaluate``).

1. :func:`snrgain.scenario.load`: validate the file and resolve it into SI objects (antennas, chains, targets,
   noise settings, receiver);
2. :func:`snrgain.snr.antenna_gains`: every antenna's gains on the sky grid and toward every target;
3. :func:`snrgain.noise.build_skies`: the noise sky for every month and hour; :func:`steer_to_sky` sets the
   arrays steered for SNR and the combinations under that sky;
4. :func:`snrgain.snr.sky_temperatures`: each antenna's temperature from each component, a placed source's
   made antenna by antenna where it stands (:func:`snrgain.placed.apply`);
5. :func:`snrgain.spread.snr_spread`: how sure, over the ground, the noise levels and the hours;
6. :func:`antenna_results`: SNR gain over the reference, RDF, front-to-back, the noise budget through each
   antenna's chain (:func:`snrgain.chain.noise_budget`);
7. :func:`summary`: per target the candidates ranked by median SNR gain toward it, the station plan
   (:func:`snrgain.plan.station_plan`), the build sheets (:func:`snrgain.build.build_sheet`) and
   :func:`notices`.

Nothing is averaged over targets in dB except the plan's worth, which is the
weighted mean of the best-in-set gain toward each target (snrgain.plan).
"""

from __future__ import annotations

import numpy as np

from noisemodels import p372
from snrgain import chain as chainmod
from snrgain import noise as noisemod
from snrgain import placed, snr
from snrgain.build import build_sheet
from snrgain.plan import station_plan
from snrgain.receiver import power_dbm
from snrgain.results import AntennaResult, Notice, PatternCuts, Results, rank_for_target
from snrgain.scenario import Scenario, load
from snrgain.spread import SnrSpread, snr_spread


def evaluate(source, *, nside: int | None = None, p372_dir=None) -> Results:
    """Run a scenario (path, TOML text, dict, or a loaded Scenario) and return Results.

    ``p372_dir``: folder of the ITU-R P.372 coefficient files, used when
    neither the scenario key nor $SNRGAIN_P372_DIR names one.

    >>> r = evaluate("scenarios/marrow-fen.toml")
    >>> float(np.nanmax(abs(r.reference.snr_gain_db)))  # the reference against itself
    0.0
    """
    from noisemodels.sphere import upper_hemisphere

    sc = source if isinstance(source, Scenario) else load(source, nside=nside, p372_dir=p372_dir)
    grid = upper_hemisphere(sc.nside)
    gains = snr.antenna_gains(sc.antennas, sc.freq_hz, grid, sc.targets)
    skies = build_sky(sc, grid, gains)
    gains = steer_to_sky(sc, grid, skies, gains)
    temps = placed.apply(sc, sc.antennas, snr.sky_temperatures(gains, skies), skies)
    spread = snr_spread(sc, grid, skies, gains, temps)
    antennas = antenna_results(sc, gains, temps, skies, spread)
    az_cut, el_cut = snr.pattern_cuts(sc.antennas, sc.freq_hz, sc.targets)
    cuts = PatternCuts(
        snr.AZIMUTH_CUT_DEG,
        snr.ELEVATION_CUT_DEG,
        {a.name: c for a, c in zip(antennas, az_cut)},
        {a.name: c for a, c in zip(antennas, el_cut)},
    )
    return summary(sc, skies, antennas, cuts)


def build_sky(sc: Scenario, grid, gains: snr.Gains) -> noisemod.SkySeries:
    """The scenario's noise sky on ``grid`` for its months and hours; a local source read on the reference is
    placed with the reference's gains (``gains.caches[0]``) and chain."""
    return noisemod.build_skies(
        sc.noise,
        sc.place,
        months=sc.times.months,
        utc_hours=sc.times.utc_hours,
        grid=grid,
        reference_gain=gains.caches[0].gain_fn,
        reference_chain_gain_db=float(10 * np.log10(sc.chains[0].gain)),
    )


def nearest_target(sc: Scenario, bearing_rad: float) -> int:
    """Index of the target whose bearing lies nearest ``bearing_rad``."""
    off = [abs((t.bearing_rad - bearing_rad + np.pi) % (2 * np.pi) - np.pi) for t in sc.targets]
    return int(np.argmin(off))


def steer_to_sky(sc: Scenario, grid, skies: noisemod.SkySeries, gains: snr.Gains) -> snr.Gains:
    """Set every candidate that ``uses_sky`` (arrays steered for SNR, combinations) under this scenario's sky, and
    return the gains with theirs evaluated afresh.

    The noise form is the sky's, averaged over the scenario's months and hours (one setting serves them all), plus
    the antenna's chain noise (its receiver referred to the antenna) on the combiner's normalisation; the signal
    form is the target nearest the array's bearing (snrgain.antennas.steering).
    """
    from snrgain.antennas.steering import quadratic_form

    steered = [k for k, a in enumerate(sc.antennas) if k > 0 and getattr(a, "uses_sky", False)]
    steered.sort(key=lambda k: sc.antennas[k].sky_order)  # a combination's parts are set first
    if not steered or skies.maps is None:
        return gains
    for k in steered:
        ant = sc.antennas[k]
        responses: dict[int, tuple] = {}
        noise = 0
        for comps in skies.maps.values():
            for c in comps:
                key = id(c.directions)
                if key not in responses:
                    responses[key] = ant.element_responses(
                        sc.freq_hz, c.directions.azimuth_rad, c.directions.elevation_rad
                    )
                noise = noise + quadratic_form(*responses[key], c.weight_k_sr / (4 * np.pi))
        noise = noise / len(skies.maps) + sc.chains[k].temperature_k * ant.norm_matrix(sc.freq_hz)
        t = sc.targets[nearest_target(sc, ant.params.bearing)]
        signal = quadratic_form(*ant.element_responses(sc.freq_hz, t.azimuth_rad, t.elevation_rad), t.weight)
        ant.set_under_sky(sc.freq_hz, signal=signal, noise=noise, note=f"SNR toward {t.name} under the site's noise")
    fresh = snr.antenna_gains([sc.antennas[k] for k in steered], sc.freq_hz, grid, sc.targets)
    caches, toward, mean = list(gains.caches), gains.toward.copy(), gains.mean.copy()
    for i, k in enumerate(steered):
        caches[k], toward[k], mean[k] = fresh.caches[i], fresh.toward[i], fresh.mean[i]
    return snr.Gains(caches, toward, mean)


def antenna_results(
    sc: Scenario,
    gains: snr.Gains,
    temps: snr.Temperatures,
    skies: noisemod.SkySeries,
    spread: SnrSpread | None = None,
) -> list[AntennaResult]:
    """Per-antenna figures ([reference, *candidates], unranked) from gains, sky temperatures and the spread.

    Without ``spread`` the figures are nominal: the median and both deciles are the nominal SNR gain, and the
    probability of beating the reference is NaN (not computed).
    """
    b = sc.bandwidth_hz
    t_chain = np.array([c.temperature_k for c in sc.chains])
    masks = target_masks(sc)
    snr_gain = np.where(masks, snr.snr_gain_over_reference(gains.toward, temps.total + t_chain[:, None, None]), np.nan)
    nominal = np.array([[np.mean(gt[m]) for gt, m in zip(g, masks)] for g in snr_gain])  # (antennas, targets)
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
                snr_gain_nominal_db=nominal[k],
                snr_gain_median_db=nominal[k] if spread is None else spread.median_db[k],
                snr_gain_p10_db=nominal[k] if spread is None else spread.p10_db[k],
                snr_gain_p90_db=nominal[k] if spread is None else spread.p90_db[k],
                probability_beats=np.full(len(masks), np.nan) if spread is None else spread.probability[k],
                receiver_limited=bool(np.any(budget.margin_db < sc.receiver.margin_target_db)),
                chain=chainmod.describe(ch, bandwidth_hz=b),
                snr_gain_atmospheric_deciles_db=None if deciles[0] is None else np.stack([d[k] for d in deciles]),
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
    from snrgain.lot import site_notices

    out.extend(site_notices(sc))
    lowest = p372.MAN_MADE_RANGE_HZ[0]
    if sc.freq_hz < lowest and sc.noise.man_made is not None:
        out.append(Notice("man-made-extrapolated", None, {"freq_hz": sc.freq_hz, "lowest_hz": lowest}))
    return out


def target_masks(sc: Scenario) -> np.ndarray:
    """Which (month, hour) cells of the scenario's grid each target is listened at, shape (targets, months, hours)."""
    return np.array([t.mask(sc.times) for t in sc.target_times])


LOBE_ELEVATION_DEG = 15.0
"""Elevation at which an array's main lobe is compared with its bearing [deg] (a typical low-band arrival)."""


def main_lobe_deg(antenna, freq_hz: float) -> float | None:
    """Bearing [deg] of an array's azimuth maximum at LOBE_ELEVATION_DEG, for the families steered by phases or
    delays (array, phased-verticals); None for the others."""
    if antenna.family not in ("array", "phased-verticals"):
        return None
    az = np.arange(0.0, 360.0, 1.0)
    g = antenna.gain_dbi(freq_hz, az, LOBE_ELEVATION_DEG)
    return float(az[int(np.argmax(g))])


def summary(sc: Scenario, skies: noisemod.SkySeries, antennas: list[AntennaResult], cuts: PatternCuts) -> Results:
    """The Results of a scenario from its per-antenna figures: rankings per target, the plan, the build sheets."""
    ground = sc.site.ground
    reference, candidates = antennas[0], antennas[1:]
    for a, ant, ch in zip(candidates, sc.candidates, sc.chains[1:]):
        a.build = build_sheet(ant, sc.freq_hz, cable=ch.cable)
    targets = [_target_dict(t, w, tt) for t, w, tt in zip(sc.targets, sc.target_weights, sc.target_times)]
    plan = station_plan(
        [a.name for a in antennas],
        np.nan_to_num(np.array([a.snr_gain_db for a in antennas]), nan=0.0),
        target_masks(sc),
        sc.target_weights,
        max_antennas=sc.max_antennas,
        months=sc.times.months,
        utc_hours=sc.times.utc_hours,
        buildable=[a.family != "isotropic" for a in antennas],
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


__all__ = ["evaluate", "steer_to_sky", "antenna_results", "notices", "summary"]
