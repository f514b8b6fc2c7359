"""The scenario's noise sky for one month and hour, from noisemodels' pieces.

Man-made noise (P.372 Table 1) arrives at low angles from every bearing or
weighted toward a sector; atmospheric noise (an Fa given by the user, for
now) arrives in a band of sky-wave elevations; galactic noise comes through
the ionosphere where the frequency exceeds its penetration frequency, with
the critical frequency switched by day and night at the site (sun above or
below the horizon); local sources sit at a bearing and elevation with an
angular spread.  A local source given as a received power (dBm or S-units)
is scaled so that the scenario's reference antenna receives that power in
the band's bandwidth.
"""

from __future__ import annotations

import numpy as np

from noisemodels import p372, sky, solar
from noisemodels.sphere import Directions
from snrgain.receiver import power_dbm
from snrgain.snr import GainCache, antenna_temperature_k


def _sector_params(sector):
    if sector is None:
        return "uniform", {}
    return "sector", {"start_rad": sector.start, "stop_rad": sector.stop, "contrast_db": sector.contrast}


def static_components(scenario, grid: Directions, reference_cache: GainCache) -> list[sky.SkyComponent]:
    """Components that do not change with the hour: man-made, given atmospheric, local."""
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
    at = noise.atmospheric
    if at.model == "given":
        az_shape, az_params = _sector_params(at.sector)
        out.append(sky.diffuse_component(
            "atmospheric (given)", kind="atmospheric",
            level=p372.NoiseLevel(at.fa, at.upper_decile, at.lower_decile), directions=grid,
            elevation="band", elevation_params={"center_rad": at.elevation_center, "width_rad": at.elevation_width},
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
            have = float(power_dbm(t_ref, bandwidth_hz=scenario.bandwidth_hz))
            out.append(unit.scaled(10.0 ** ((src.level - have) / 10.0)))
    return out


def is_daytime(scenario, *, month: int, utc_hour: float) -> bool:
    """Sun above the horizon at the site on the 15th of the month at the UTC hour."""
    site = scenario.model.site
    el = solar.solar_elevation_rad(np.radians(site.latitude), np.radians(site.longitude),
                                   day_of_year=solar.mid_month_day_of_year(month), utc_hour=utc_hour)
    return bool(el > 0.0)


def hourly_components(scenario, grid: Directions, *, month: int, utc_hour: float) -> list[sky.SkyComponent]:
    """Components that change with the hour: galactic noise (day or night ionosphere)."""
    gal = scenario.model.noise.galactic
    if not gal.enabled:
        return []
    day = is_daytime(scenario, month=month, utc_hour=utc_hour)
    fc = gal.critical_frequency_day if day else gal.critical_frequency_night
    return [sky.galactic_component(scenario.freq_hz, directions=grid, critical_freq_hz=fc,
                                   layer_height_m=gal.layer_height)]
