"""evaluate(scenario) -> Results: the main job, as a thin chain of named steps.

1. load and validate the scenario (snrgain.scenario);
2. gains of every antenna on the sky grid and toward every target;
3. for each month and hour, the noise sky (snrgain.noise) and each antenna's
   temperature from it (snrgain.snr);
4. signal, noise with the receiver's own, SNR gain over the reference, RDF,
   front-to-back, output noise against the receiver floor;
5. a summary per candidate and the ranking.

Aggregation: a candidate's summary SNR gain is the mean, in dB, over every
target (weighted by the targets' weights) and every month and hour listed;
the worst case is the minimum over the same.  Candidates rank by the mean.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from noisemodels import p372
from noisemodels.sky import total_level
from noisemodels.sphere import upper_hemisphere
from snrgain import chain as chainmod
from snrgain import noise as noisemod
from snrgain import receiver as rx
from snrgain import scenario as scenariomod
from snrgain import snr

SCHEMA_VERSION = "1"


@dataclass
class AntennaResult:
    """Numbers for one antenna.  Array axes: [target, month, hour] or [month, hour].

    Attributes
    ----------
    name, family, parameters : what the antenna is (parameters with SI units in keys)
    gain_dbi : weighted total gain toward each target [dBi], shape (targets,)
    mean_gain_dbi : gain averaged over the upper hemisphere [dBi]
    rdf_db : receiving directivity factor per target [dB]
    front_to_back_db : per target, at the target's mean elevation [dB]
    snr_gain_db : SNR gain over the reference [dB], shape (targets, months, hours)
    noise_dbm : external noise delivered through the chain to the receiver input in the
        band's bandwidth [dBm], shape (months, hours)
    noise_by_component_dbm : the same per noise component [dBm]
    margin_db : noise_dbm minus the chain's noise floor at the receiver input [dB]
    receiver_snr_loss_db : SNR lost to the chain's noise, 10 log10((T_A + T_chain) / T_A) [dB]
    preamp_gain_needed_db : preamplifier gain that brings the margin to the target (the chain's own
        preamplifier, or a suggested one of 3 dB noise figure before the receiver); 0 if already met,
        NaN if no gain can [dB]
    preamp_position : where that preamplifier goes: "receiver" (before the receiver), "antenna" (after the
        transformer, where a lossy feed line follows), "as placed" (the chain's own), None if no gain helps
    summary_snr_gain_db : mean of snr_gain_db (weighted over targets) [dB]
    worst_snr_gain_db : minimum of snr_gain_db [dB]
    receiver_limited : True if margin_db falls below the margin target at any hour
    """

    name: str
    family: str
    parameters: dict[str, Any]
    gain_dbi: np.ndarray
    mean_gain_dbi: float
    rdf_db: np.ndarray
    front_to_back_db: np.ndarray
    snr_gain_db: np.ndarray
    noise_dbm: np.ndarray
    noise_by_component_dbm: dict[str, np.ndarray]
    margin_db: np.ndarray
    receiver_snr_loss_db: np.ndarray
    preamp_gain_needed_db: np.ndarray
    preamp_position: str | None
    summary_snr_gain_db: float
    worst_snr_gain_db: float
    receiver_limited: bool
    chain: dict[str, Any] = field(default_factory=dict)
    """This antenna's chain: noise_figure_db, gain_db, noise_floor_dbm (at the receiver input), stages."""


@dataclass
class NoiseResult:
    """The noise sky as P.372's reference monopole sees it, per month and hour.

    components : name -> {"kind", "fa_db", "du_db", "dl_db"}, arrays (months, hours) [dB]
    total_fa_db, total_du_db, total_dl_db : P.372 Section 8 combination [dB]
    median_power_sum_fa_db : power sum of the components' medians, what the SNR uses [dB]
    daytime : sun above the horizon at the site, (months, hours)
    """

    components: dict[str, dict[str, Any]]
    total_fa_db: np.ndarray
    total_du_db: np.ndarray
    total_dl_db: np.ndarray
    daytime: np.ndarray
    median_power_sum_fa_db: np.ndarray


@dataclass
class FigureData:
    """What the figures need beyond the numbers (not part of the JSON output).

    azimuth_deg, elevation_deg : the cut grids [deg]
    azimuth_cuts : antenna name -> (targets, azimuths) total gain [dBi] at each target's mean elevation
    elevation_cuts : antenna name -> (targets, elevations) total gain [dBi] toward each target's bearing
    sky : (month index, hour index) -> the noise sky components (noisemodels.sky.SkyComponent)
    lot_m : the lot outline [m east, m north], or None
    """

    azimuth_deg: np.ndarray
    elevation_deg: np.ndarray
    azimuth_cuts: dict[str, np.ndarray]
    elevation_cuts: dict[str, np.ndarray]
    sky: dict[tuple[int, int], list]
    lot_m: list[tuple[float, float]] | None


@dataclass
class Results:
    """Everything ``evaluate`` computed.  ``candidates`` are ranked, best first."""

    source: str
    site: dict[str, Any]
    freq_hz: float
    bandwidth_hz: float
    months: list[int]
    utc_hours: list[float]
    targets: list[dict[str, Any]]
    noise: NoiseResult
    reference: AntennaResult
    candidates: list[AntennaResult]
    receiver: dict[str, float]
    nside: int
    warnings: list[str] = field(default_factory=list)
    figures: FigureData | None = field(default=None, repr=False)
    local_sources: list[dict[str, Any]] = field(default_factory=list)

    def to_dict(self) -> dict[str, Any]:
        """A JSON-ready dict (numbers as floats and lists; units in the keys)."""
        return _jsonable({
            "schema_version": SCHEMA_VERSION,
            "scenario": self.source,
            "site": self.site,
            "frequency_hz": self.freq_hz,
            "bandwidth_hz": self.bandwidth_hz,
            "months": self.months,
            "utc_hours": self.utc_hours,
            "targets": self.targets,
            "noise": {
                "axes": ["month", "utc_hour"],
                "components": self.noise.components,
                "total_fa_db": self.noise.total_fa_db,
                "total_upper_decile_db": self.noise.total_du_db,
                "total_lower_decile_db": self.noise.total_dl_db,
                "median_power_sum_fa_db": self.noise.median_power_sum_fa_db,
                "daytime": self.noise.daytime,
            },
            "receiver": self.receiver,
            "nside": self.nside,
            "reference": _antenna_dict(self.reference),
            "ranking": [_antenna_dict(c) | {"rank": i + 1} for i, c in enumerate(self.candidates)],
            "local_sources": self.local_sources,
            "warnings": self.warnings,
        })


def _antenna_dict(a: AntennaResult) -> dict[str, Any]:
    return {
        "name": a.name,
        "family": a.family,
        "parameters": a.parameters,
        "summary_snr_gain_db": a.summary_snr_gain_db,
        "worst_snr_gain_db": a.worst_snr_gain_db,
        "snr_gain_db": {"axes": ["target", "month", "utc_hour"], "values": a.snr_gain_db},
        "gain_toward_target_dbi": a.gain_dbi,
        "mean_gain_dbi": a.mean_gain_dbi,
        "rdf_db": a.rdf_db,
        "front_to_back_db": a.front_to_back_db,
        "noise_dbm": {"axes": ["month", "utc_hour"], "values": a.noise_dbm},
        "noise_by_component_dbm": a.noise_by_component_dbm,
        "margin_db": {"axes": ["month", "utc_hour"], "values": a.margin_db},
        "receiver_snr_loss_db": {"axes": ["month", "utc_hour"], "values": a.receiver_snr_loss_db},
        "preamp_gain_needed_db": {"axes": ["month", "utc_hour"], "values": a.preamp_gain_needed_db},
        "preamp_position": a.preamp_position,
        "receiver_limited": a.receiver_limited,
        "chain": a.chain,
    }


def _jsonable(x):
    if isinstance(x, dict):
        return {str(k): _jsonable(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [_jsonable(v) for v in x]
    if isinstance(x, np.ndarray):
        return _jsonable(x.tolist())
    if isinstance(x, (np.bool_, bool)):
        return bool(x)
    if isinstance(x, (np.integer,)):
        return int(x)
    if isinstance(x, (float, np.floating)):
        v = float(x)
        return v if np.isfinite(v) else None
    return x


def evaluate(source, *, nside: int | None = None, p372_dir=None) -> Results:
    """Run a scenario (path, TOML text, dict, or a loaded Scenario) and return Results.

    ``p372_dir``: folder of the ITU-R P.372 coefficient files, used when
    neither the scenario key nor $SNRGAIN_P372_DIR names one.
    """
    sc = source if isinstance(source, scenariomod.Scenario) else scenariomod.load(source, nside=nside, p372_dir=p372_dir)
    m = sc.model
    grid = upper_hemisphere(nside or m.compute.nside)
    f, b = sc.freq_hz, sc.bandwidth_hz

    # Step 2: gains.
    antennas = [sc.reference, *sc.candidates]
    caches = [snr.GainCache(lambda az, el, a=a: a.gain_linear(f, az, el)) for a in antennas]
    toward = np.array([[snr.target_gain(c.gain_fn, t) for t in sc.targets] for c in caches])  # (ant, tgt)
    mean_gain = np.array([snr.hemisphere_mean_gain(c.on(grid), grid) for c in caches])

    # Receiver.
    if m.receiver.noise_floor is not None:
        nf_db = float(rx.noise_figure_from_floor_db(m.receiver.noise_floor, bandwidth_hz=b))
    else:
        nf_db = m.receiver.noise_figure if m.receiver.noise_figure is not None else scenariomod.DEFAULT_NOISE_FIGURE_DB
    chain = chainmod.from_scenario(m, freq_hz=f, receiver_noise_figure_db=nf_db)
    own = sc.antenna_chains or (None,) * len(antennas)
    chains = [chain if c is None else chainmod.from_section(c, freq_hz=f, receiver_noise_figure_db=nf_db) for c in own]
    # Each antenna's chain, referred to its terminals; gains and floors at the receiver input (k T0 b F G: what
    # the receiver shows with a matched load at T0 in place of the antenna).
    t_rx = np.array([c.temperature_k for c in chains])[:, None, None]
    gain_db = np.array([10.0 * np.log10(c.gain) for c in chains])
    floor_dbm = np.array([float(rx.noise_floor_dbm(10.0 * np.log10(c.noise_factor), bandwidth_hz=b)) for c in chains]) + gain_db
    chain_gain_db = float(10.0 * np.log10(chain.gain))
    scenario_floor_dbm = float(rx.noise_floor_dbm(10.0 * np.log10(chain.noise_factor), bandwidth_hz=b)) + chain_gain_db

    # Step 3: noise per month and hour.  A local source's level is read on the reference through its chain.
    static = noisemod.static_components(sc, grid, caches[0], chain_gain_db=float(gain_db[0]))
    nm, nh = len(m.time.months), len(m.time.utc_hours)
    t_ant = np.zeros((len(antennas), nm, nh))
    comp_t = {}
    comp_levels: dict[str, dict[str, Any]] = {}
    total = np.zeros((3, nm, nh))
    daytime = np.zeros((nm, nh), dtype=bool)
    skies = {}
    for i, month in enumerate(m.time.months):
        for j, hour in enumerate(m.time.utc_hours):
            comps = static + noisemod.hourly_components(sc, grid, month=month, utc_hour=hour)
            skies[(i, j)] = comps
            daytime[i, j] = noisemod.is_daytime(sc, month=month, utc_hour=hour)
            for k, cache in enumerate(caches):
                per = snr.antenna_temperature_k(cache, comps)
                t_ant[k, i, j] = per.sum()
                for c, t in zip(comps, per):
                    comp_t.setdefault(c.name, np.full((len(antennas), nm, nh), np.nan))[k, i, j] = t
            for c in comps:
                entry = comp_levels.setdefault(c.name, {"kind": c.kind, **{key: np.full((nm, nh), np.nan) for key in ("fa_db", "du_db", "dl_db")}})
                entry["fa_db"][i, j] = float(np.asarray(c.level.fa_db))
                entry["du_db"][i, j] = float(np.asarray(c.level.du_db))
                entry["dl_db"][i, j] = float(np.asarray(c.level.dl_db))
            tot = total_level(comps)
            total[:, i, j] = [float(np.asarray(v)) for v in (tot.fa_db, tot.du_db, tot.dl_db)]

    # Step 4: SNR and friends.
    noise_t = t_ant + t_rx  # (ant, month, hour)
    signal = toward[:, :, None, None]  # (ant, tgt, 1, 1)
    snr_gain = snr.snr_gain_db(signal, noise_t[:, None], signal[:1], noise_t[:1, None])  # (ant, tgt, m, h)
    with np.errstate(divide="ignore"):
        noise_dbm = rx.power_dbm(t_ant, bandwidth_hz=b) + gain_db[:, None, None]  # at the receiver input
        loss_db = 10.0 * np.log10(noise_t / t_ant)
    margin = noise_dbm - floor_dbm[:, None, None]
    advice = [[[chainmod.preamp_advice(ch, t, m.receiver.margin_target) for t in row] for row in ant_t]
              for ch, ant_t in zip(chains, t_ant)]
    preamp_needed = np.array([[[a[0] for a in row] for row in ant] for ant in advice])
    preamp_where = [sorted({a[1] for row in ant for a in row if a[1]}) for ant in advice]
    weights = sc.target_weights

    results = []
    for k, (ant, cache) in enumerate(zip(antennas, caches)):
        fb = np.array([snr.front_to_back_db(cache.gain_fn, bearing_rad=t.bearing_rad, elevation_rad=t.mean_elevation_rad)
                       for t in sc.targets])
        with np.errstate(divide="ignore"):
            gain_dbi = 10.0 * np.log10(toward[k])
            rdf = 10.0 * np.log10(toward[k] / mean_gain[k])
        g = snr_gain[k]
        results.append(AntennaResult(
            name=ant.name,
            family=ant.family,
            parameters=ant.describe(),
            gain_dbi=gain_dbi,
            mean_gain_dbi=float(10.0 * np.log10(mean_gain[k])),
            rdf_db=rdf,
            front_to_back_db=fb,
            snr_gain_db=g,
            noise_dbm=noise_dbm[k],
            noise_by_component_dbm={n: rx.power_dbm(v[k], bandwidth_hz=b) + gain_db[k] for n, v in comp_t.items()},
            margin_db=margin[k],
            receiver_snr_loss_db=loss_db[k],
            preamp_gain_needed_db=preamp_needed[k],
            preamp_position=preamp_where[k][-1] if preamp_where[k] else None,
            summary_snr_gain_db=float(np.sum(weights[:, None, None] * g) / (nm * nh)),
            worst_snr_gain_db=float(np.min(g)),
            receiver_limited=bool(np.any(margin[k] < m.receiver.margin_target)),
            chain=_chain_dict(chains[k], floor_dbm[k]),
        ))
    reference, candidates = results[0], results[1:]
    candidates.sort(key=lambda r: -r.summary_snr_gain_db)

    warnings = []
    for r in [reference, *candidates]:
        if r.receiver_limited:
            warnings.append(
                f"{r.name}: external noise is only {float(np.min(r.margin_db)):.1f} dB above the receiver floor "
                f"at worst (target {m.receiver.margin_target:g} dB); receiver noise costs up to "
                f"{float(np.max(r.receiver_snr_loss_db)):.1f} dB of SNR. "
                + _preamp_advice(r.preamp_gain_needed_db, r.preamp_position)
            )
    if f < p372.MAN_MADE_RANGE_HZ[0] and m.noise.man_made.environment != "none":
        warnings.append(f"P.372 gives man-made noise from 0.3 MHz; at {f / 1e6:g} MHz its line is extrapolated")

    az_cut = np.arange(0.0, 360.5, 1.0)
    el_cut = np.arange(0.0, 90.25, 0.5)
    with np.errstate(divide="ignore"):
        az_cuts = {a.name: np.array([a.gain_dbi(f, az_cut, np.degrees(t.mean_elevation_rad)) for t in sc.targets])
                   for a in antennas}
        el_cuts = {a.name: np.array([a.gain_dbi(f, np.degrees(t.bearing_rad), el_cut) for t in sc.targets])
                   for a in antennas}
    figures = FigureData(az_cut, el_cut, az_cuts, el_cuts, skies, m.site.lot)
    local = [{"name": s.name, "bearing_deg": float(np.degrees(s.bearing)), "elevation_deg": float(np.degrees(s.elevation)),
              "spread_deg": float(np.degrees(s.spread))} for s in m.noise.local]

    return Results(
        source=sc.source,
        site={"name": m.site.name, "latitude_deg": m.site.latitude, "longitude_deg": m.site.longitude,
              "ground": "perfect" if sc.ground is None else sc.ground.name,
              "ground_conductivity_s_per_m": None if sc.ground is None else sc.ground.conductivity_s_per_m,
              "ground_permittivity": None if sc.ground is None else sc.ground.permittivity},
        freq_hz=f,
        bandwidth_hz=b,
        months=list(m.time.months),
        utc_hours=list(m.time.utc_hours),
        targets=[_target_dict(t, w) for t, w in zip(sc.targets, weights)],
        noise=NoiseResult(comp_levels, total[0], total[1], total[2], daytime, _power_sum(comp_levels)),
        reference=reference,
        candidates=candidates,
        receiver={"noise_figure_db": nf_db, "noise_floor_dbm": scenario_floor_dbm,
                  "margin_target_db": m.receiver.margin_target,
                  "chain_noise_figure_db": float(10 * np.log10(chain.noise_factor)), "chain_gain_db": chain_gain_db,
                  "chain_stages": _chain_dict(chain, scenario_floor_dbm)["stages"]},
        nside=grid.nside,
        warnings=warnings,
        figures=figures,
        local_sources=local,
    )


def _chain_dict(ch, floor_dbm) -> dict[str, Any]:
    return {"noise_figure_db": float(10 * np.log10(ch.noise_factor)), "gain_db": float(10 * np.log10(ch.gain)),
            "noise_floor_dbm": float(floor_dbm),
            "stages": [{"name": st.name, "gain_db": float(10 * np.log10(st.gain)),
                        "noise_figure_db": float(10 * np.log10(st.noise_factor))} for st in ch.stages]}


def _preamp_advice(needed_db, position) -> str:
    if np.any(np.isnan(needed_db)):
        return ("No preamplifier gain reaches the target at every hour; a quieter preamplifier, a shorter or "
                "lower-loss feed line, or a quieter receiver would.")
    worst = float(np.max(needed_db))
    if position == "as placed":
        which = "the chain's preamplifier"
    else:
        where = "before the receiver" if position == "receiver" else "at the antenna, after the transformer"
        which = f"a preamplifier of {chainmod.SUGGESTED_PREAMP_NOISE_FIGURE_DB:g} dB noise figure {where}"
    return f"About {worst:.0f} dB of gain from {which} would reach the target."


def _power_sum(comp_levels) -> np.ndarray:
    with np.errstate(divide="ignore"):
        return 10.0 * np.log10(sum(10.0 ** (c["fa_db"] / 10.0) for c in comp_levels.values()))


def _target_dict(t, w) -> dict[str, Any]:
    return {
        "name": t.name,
        "weight": float(w),
        "bearing_deg": float(np.degrees(t.bearing_rad)),
        "elevation_min_deg": float(np.degrees(t.elevation_rad.min())),
        "elevation_max_deg": float(np.degrees(t.elevation_rad.max())),
        "distance_km": None if t.distance_m is None else t.distance_m / 1e3,
        "hops": None if t.hops is None else list(t.hops),
    }


__all__ = ["Results", "AntennaResult", "NoiseResult", "evaluate", "SCHEMA_VERSION"]
