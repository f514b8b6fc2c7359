"""Noise at a site over 24 UTC hours, and where the atmospheric part comes from.

Pure functions behind ``snrgain noise``: P.372 atmospheric (numerical maps),
man-made and galactic levels on P.372's reference monopole for each UTC hour,
their Section 8 combination, and the direction distribution of atmospheric
noise at one hour from the storm model (noisemodels.storms).
"""

from __future__ import annotations

import numpy as np

from noisemodels import p372, sky, solar, storms
from noisemodels.sphere import upper_hemisphere

SECTOR_DEG = 30.0
ELEVATION_BANDS_DEG = (0, 10, 20, 30, 45, 60, 90)


def noise_over_day(
    lat_deg: float,
    lon_deg: float,
    *,
    month: int,
    freq_hz: float,
    environment: str = "residential",
    galactic: bool = True,
    critical_frequency_day_hz: float = 6e6,
    critical_frequency_night_hz: float = 3e6,
    ionosphere_height_m: float = 300e3,
    data_dir=None,
    hour: float = 4.0,
    layer_height_m: float = 250e3,
    nside: int = 32,
) -> dict:
    """Components per UTC hour 0..23 and the atmospheric direction distribution at ``hour``.

    Returns a JSON-ready dict (units in the keys).
    """
    hours = np.arange(24.0)
    grid = upper_hemisphere(nside)
    atm = p372.atmospheric(lat_deg, lon_deg, month=month, freq_hz=freq_hz, utc_hour=hours, data_dir=data_dir)
    comps = {"atmospheric": {"fa_db": atm.fa_db, "du_db": atm.du_db, "dl_db": atm.dl_db}}
    if environment != "none":
        mm = p372.man_made(freq_hz, environment=environment)
        comps[f"man-made ({environment})"] = {k: np.full(24, float(getattr(mm, k))) for k in ("fa_db", "du_db", "dl_db")}
    if galactic:
        sun = solar.solar_elevation_rad(np.radians(lat_deg), np.radians(lon_deg),
                                        day_of_year=solar.mid_month_day_of_year(month), utc_hour=hours)
        fa = []
        for day in sun > 0:
            fc = critical_frequency_day_hz if day else critical_frequency_night_hz
            fa.append(float(sky.galactic_component(freq_hz, directions=grid, critical_freq_hz=fc,
                                                   layer_height_m=ionosphere_height_m).level.fa_db))
        g = p372.galactic(freq_hz)
        comps["galactic"] = {"fa_db": np.array(fa), "du_db": np.full(24, float(g.du_db)), "dl_db": np.full(24, float(g.dl_db))}
    total = {"fa_db": np.zeros(24), "du_db": np.zeros(24), "dl_db": np.zeros(24)}
    for i in range(24):
        levels = [p372.NoiseLevel(c["fa_db"][i], c["du_db"][i], c["dl_db"][i]) for c in comps.values()
                  if np.isfinite(c["fa_db"][i])]
        tot = p372.combine(levels)
        for k in total:
            total[k][i] = float(getattr(tot, k))
    with np.errstate(divide="ignore"):
        power_sum = 10 * np.log10(sum(10 ** (np.asarray(c["fa_db"]) / 10) for c in comps.values()))
    level = p372.atmospheric(lat_deg, lon_deg, month=month, freq_hz=freq_hz, utc_hour=hour, data_dir=data_dir)
    comp = storms.storm_component(lat_deg, lon_deg, month=month, utc_hour=hour, freq_hz=freq_hz, level=level,
                                  directions=grid, layer_height_m=layer_height_m, data_dir=data_dir)
    return {
        "latitude_deg": lat_deg, "longitude_deg": lon_deg, "month": month, "frequency_hz": freq_hz,
        "utc_hours": hours, "components": comps, "total": total, "median_power_sum_fa_db": power_sum,
        "directions": direction_distribution(comp, utc_hour=hour),
    }


def direction_distribution(comp: sky.SkyComponent, *, utc_hour: float) -> dict:
    """Shares of a component's power on the reference monopole by bearing sector and elevation band."""
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
        sectors.append({"bearing_deg": k * SECTOR_DEG, "share_percent": 100 * share,
                        "mean_elevation_deg": float(np.sum(p[m] * el[m]) / p[m].sum()) if share > 0 else None})
    bands = []
    for lo, hi in zip(ELEVATION_BANDS_DEG[:-1], ELEVATION_BANDS_DEG[1:]):
        m = (el >= lo) & (el < hi) if hi < 90 else (el >= lo)
        bands.append({"from_deg": lo, "to_deg": hi, "share_percent": 100 * p[m].sum() / total})
    return {"utc_hour": utc_hour, "sector_width_deg": SECTOR_DEG, "sectors": sectors, "elevation_bands": bands}
