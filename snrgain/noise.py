"""The scenario's noise sky for one month and hour, from noisemodels' pieces.

Man-made noise (P.372 Table 1) arrives at low angles from every bearing or
weighted toward a sector; atmospheric noise (an Fa given by the user, or
P.372's numerical maps for the site, month and hour) arrives from the storm
directions of noisemodels.storms, or uniformly or from a sector in a band of
sky-wave elevations; galactic noise comes through
the ionosphere where the frequency exceeds its penetration frequency, with
the critical frequency switched by day and night at the site (sun above or
below the horizon); local sources sit at a bearing and elevation with an
angular spread.  A local source given as a received power (dBm or S-units)
is scaled so that the scenario's reference antenna receives that power in
the band's bandwidth.
"""

from __future__ import annotations

import numpy as np

from noisemodels import p372, sky, solar, storms
from noisemodels.sphere import Directions
from snrgain.receiver import power_dbm
from snrgain.snr import GainCache, antenna_temperature_k


def _sector_params(sector):
    if sector is None:
        return "uniform", {}
    return "sector", {"start_rad": sector.start, "stop_rad": sector.stop, "contrast_db": sector.contrast}


def static_components(scenario, grid: Directions, reference_cache: GainCache, *,
                      chain_gain_db: float = 0.0) -> list[sky.SkyComponent]:
    """Components that do not change with the hour: man-made and local sources.

    A local source's ``level`` is what the receiver reads on the reference antenna through the chain
    (gain ``chain_gain_db``), as an S-meter shows it.
    """
    noise = scenario.model.noise
    f = scenario.freq_hz
    out = []
    mm = noise.man_made
    if mm.environment != "none":
        az_shape, az_params = _sector_params(mm.sector)
        out.append(sky.diffuse_component(
            f"man-made ({mm.environment})", kind="man-made",
            level=p372.man_made(f, environment=mm.environment), directions=grid,
            elevation="low", elevation_params={"scale_rad": mm.elevation_scale},
            azimuth=az_shape, azimuth_params=az_params,
        ))
    for src in noise.local:
        if src.fa is not None:
            level = p372.NoiseLevel(src.fa, 0.0, 0.0)
            out.append(sky.compact_component(src.name, level=level, azimuth_rad=src.bearing,
                                             elevation_rad=src.elevation, spread_rad=src.spread))
        else:
            unit = sky.compact_component(src.name, level=p372.NoiseLevel(0.0, 0.0, 0.0), azimuth_rad=src.bearing,
                                         elevation_rad=src.elevation, spread_rad=src.spread)
            t_ref = float(antenna_temperature_k(reference_cache, [unit])[0])
            if not t_ref > 0:
                raise ValueError(
                    f"noise.local {src.name!r}: the reference antenna receives nothing from bearing "
                    f"{np.degrees(src.bearing):g} deg, elevation {np.degrees(src.elevation):g} deg, so a level "
                    "measured on it cannot be placed; give the level as fa instead"
                )
            have = float(power_dbm(t_ref, bandwidth_hz=scenario.bandwidth_hz)) + chain_gain_db
            out.append(unit.scaled(10.0 ** ((src.level - have) / 10.0)))
    return out


def is_daytime(scenario, *, month: int, utc_hour: float) -> bool:
    """Sun above the horizon at the site on the 15th of the month at the UTC hour."""
    site = scenario.model.site
    el = solar.solar_elevation_rad(np.radians(site.latitude), np.radians(site.longitude),
                                   day_of_year=solar.mid_month_day_of_year(month), utc_hour=utc_hour)
    return bool(el > 0.0)


def atmospheric_component(scenario, grid: Directions, *, month: int, utc_hour: float) -> sky.SkyComponent | None:
    """Atmospheric noise for the hour: its level (given, or P.372's maps) spread by the arrival model."""
    at = scenario.model.noise.atmospheric
    if at.model == "none":
        return None
    site = scenario.model.site
    f = scenario.freq_hz
    if at.model == "p372":
        level = p372.atmospheric(site.latitude, site.longitude, month=month, freq_hz=f, utc_hour=utc_hour,
                                 data_dir=scenario.p372_dir)
        name = "atmospheric (P.372)"
    else:
        level = p372.NoiseLevel(at.fa, at.upper_decile, at.lower_decile)
        name = "atmospheric (given)"
    arrival = at.arrival_model
    if arrival == "storms":
        return storms.storm_component(site.latitude, site.longitude, month=month, utc_hour=utc_hour, freq_hz=f,
                                      level=level, directions=grid, layer_height_m=at.layer_height,
                                      data_dir=scenario.p372_dir, name=name)
    az_shape, az_params = _sector_params(at.sector if arrival == "sector" else None)
    return sky.diffuse_component(
        name, kind="atmospheric", level=level, directions=grid,
        elevation="band", elevation_params={"center_rad": at.elevation_center, "width_rad": at.elevation_width},
        azimuth=az_shape, azimuth_params=az_params,
    )


def hourly_components(scenario, grid: Directions, *, month: int, utc_hour: float) -> list[sky.SkyComponent]:
    """Components that change with the hour: atmospheric noise, galactic noise (day or night ionosphere)."""
    out = []
    atmos = atmospheric_component(scenario, grid, month=month, utc_hour=utc_hour)
    if atmos is not None:
        out.append(atmos)
    gal = scenario.model.noise.galactic
    if gal.enabled:
        day = is_daytime(scenario, month=month, utc_hour=utc_hour)
        fc = gal.critical_frequency_day if day else gal.critical_frequency_night
        out.append(sky.galactic_component(scenario.freq_hz, directions=grid, critical_freq_hz=fc,
                                          layer_height_m=gal.layer_height))
    return out
