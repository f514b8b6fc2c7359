"""Noise at a site over 24 UTC hours, and where the atmospheric part comes from.

The library function behind ``snrgain noise``: P.372 atmospheric (numerical
maps), man-made and galactic levels on P.372's reference monopole for each
UTC hour, from the same sky builder the ranking uses
(:func:`snrgain.sky.noise.build_skies`), and the direction distribution of
atmospheric noise at one hour from the storm model (noisemodels.storms).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from snrgain.sky import noise as noisemod

if TYPE_CHECKING:
    from noisemodels.sky import SkyComponent

SECTOR_DEG = 30.0
ELEVATION_BANDS_DEG = (0, 10, 20, 30, 45, 60, 90)


def noise_over_day(
    lat_deg: float,
    lon_deg: float,
    *,
    month: int,
    freq_hz: float,
    environment: str = noisemod.ManMadeNoise.environment,
    galactic: bool = True,
    data_dir=None,
    hour: float = 4.0,
    nside: int = 32,
    atmospheric: bool = True,
) -> dict:
    """Components per UTC hour 0..23 and the atmospheric direction distribution at ``hour``.

    ``atmospheric=False`` leaves P.372's atmospheric noise out (it needs the coefficient files): the man-made and
    galactic components alone, their total, and ``directions`` None.  Returns a JSON-ready dict (units in the keys).
    """
    from noisemodels.sphere import upper_hemisphere

    settings = noisemod.NoiseSettings(
        man_made=None if environment == "none" else noisemod.ManMadeNoise(environment),
        atmospheric=noisemod.AtmosphericNoise(model="p372", arrival="storms") if atmospheric else None,
        galactic=noisemod.GalacticNoise() if galactic else None,
        p372_dir=data_dir,
    )
    place = noisemod.Place(lat_deg, lon_deg, freq_hz)
    grid = upper_hemisphere(nside)
    hours = np.arange(24.0)
    skies = noisemod.build_skies(settings, place, months=[month], utc_hours=hours, grid=grid, maps=False)
    comps = {
        ("atmospheric" if kind == "atmospheric" else name): {
            k: getattr(skies, k)[i, 0] for k in ("fa_db", "du_db", "dl_db")
        }
        for i, (name, kind) in enumerate(zip(skies.names, skies.kinds))
    }
    total = {"fa_db": skies.total_fa_db[0], "du_db": skies.total_du_db[0], "dl_db": skies.total_dl_db[0]}
    comp = noisemod.atmospheric_component(settings, place, grid, month=month, utc_hour=hour)  # None without it
    return {
        "latitude_deg": lat_deg,
        "longitude_deg": lon_deg,
        "month": month,
        "frequency_hz": freq_hz,
        "utc_hours": hours,
        "components": comps,
        "total": total,
        "median_power_sum_fa_db": skies.median_power_sum_fa_db[0],
        "directions": None if comp is None else direction_distribution(comp, utc_hour=hour),
    }


def direction_distribution(comp: SkyComponent, *, utc_hour: float) -> dict:
    """Shares of a component's power on the reference monopole by bearing sector and elevation band."""
    from noisemodels import sky

    p = comp.weight_k_sr * sky.reference_monopole_gain(comp.directions.elevation_rad)
    total = p.sum()
    az = np.degrees(comp.directions.azimuth_rad)
    el = np.degrees(comp.directions.elevation_rad)
    # Sectors centred on 0, 30, ... deg.
    idx = np.floor(np.mod(az + SECTOR_DEG / 2, 360.0) / SECTOR_DEG).astype(int)
    sectors = []
    for k in range(int(360 / SECTOR_DEG)):
        m = idx == k
        share = p[m].sum() / total
        sectors.append(
            {
                "bearing_deg": k * SECTOR_DEG,
                "share_percent": 100 * share,
                "mean_elevation_deg": float(np.sum(p[m] * el[m]) / p[m].sum()) if share > 0 else None,
            }
        )
    bands = []
    for lo, hi in zip(ELEVATION_BANDS_DEG[:-1], ELEVATION_BANDS_DEG[1:]):
        m = (el >= lo) & (el < hi) if hi < 90 else (el >= lo)
        bands.append({"from_deg": lo, "to_deg": hi, "share_percent": 100 * p[m].sum() / total})
    return {"utc_hour": utc_hour, "sector_width_deg": SECTOR_DEG, "sectors": sectors, "elevation_bands": bands}
