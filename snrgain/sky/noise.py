"""The noise sky of a site, per month and hour: the one sky builder of snrgain.

Man-made noise (P.372 Table 1) arrives at low angles from every bearing or
weighted toward a sector; atmospheric noise (an Fa given by the user, or
P.372's numerical maps for the site, month and hour) arrives from the storm
directions of noisemodels.storms, or uniformly or from a sector in a band of
sky-wave elevations; galactic noise comes through the ionosphere where the
frequency exceeds its penetration frequency, with the critical frequency
switched by day and night at the site (sun above or below the horizon);
local sources sit at a bearing and elevation with an angular spread.  A local
source given as a received power (dBm or S-units) is scaled so that the
reference antenna receives that power in the band's bandwidth through its
chain.

The settings are plain dataclasses in SI units (:class:`NoiseSettings`);
:func:`build_skies` turns them into a :class:`SkySeries` for a set of months
and UTC hours.  ``snrgain rank``, ``report`` and ``noise`` all use it.
"""

from __future__ import annotations

from dataclasses import field
from pathlib import Path
from typing import TYPE_CHECKING, Literal

import numpy as np

from noisemodels import p372, solar
from snrgain.memo import Memo
from snrgain.records import record

if TYPE_CHECKING:  # the sky machinery (healpy) is imported where it is used
    from noisemodels.sky import SkyComponent
    from noisemodels.sphere import Directions


# -- settings ---------------------------------------------------------------------------------------------------


@record
class Sector:
    """Brightness ``contrast_db`` higher from ``start_rad`` clockwise to ``stop_rad`` (compass bearings) [rad, dB]."""

    start_rad: float
    stop_rad: float
    contrast_db: float = 10.0


@record
class ManMadeNoise:
    """P.372 man-made noise of an environment (Table 1 category), at low angles."""

    environment: str = "residential"
    elevation_scale_rad: float = float(np.radians(10.0))
    """Brightness falls off from the horizon as exp(-elevation / scale) (snrgain's assumption)."""
    sector: Sector | None = None
    offset_db: float = 0.0
    """The site's level over the environment's P.372 median curve [dB] (a level fitted from readings)."""


@record
class AtmosphericNoise:
    """Atmospheric noise: P.372's maps for the site, or an Fa given by the user; and where it arrives from."""

    model: Literal["p372", "given"] = "p372"
    fa_db: float | None = None
    """Median Fa for ``model = "given"`` [dB above kT0b]."""
    upper_decile_db: float = 0.0
    lower_decile_db: float = 0.0
    arrival: Literal["storms", "uniform", "sector"] = "storms"
    elevation_center_rad: float = float(np.radians(20.0))
    elevation_width_rad: float = float(np.radians(10.0))
    sector: Sector | None = None
    layer_height_m: float = 250e3
    """Reflecting layer of the storm model's sky-wave hops [m]."""


@record
class GalacticNoise:
    """Galactic noise (P.372 Section 6) through the ionosphere's day or night critical frequency."""

    critical_frequency_day_hz: float = 6e6
    critical_frequency_night_hz: float = 3e6
    layer_height_m: float = 300e3


@record
class LocalSource:
    """A local noise source at a bearing and elevation with an angular spread; level as Fa or as received."""

    name: str
    bearing_rad: float
    elevation_rad: float = float(np.radians(5.0))
    spread_rad: float = float(np.radians(10.0))
    fa_db: float | None = None
    """Level on P.372's reference monopole [dB above kT0b]."""
    level_dbm: float | None = None
    """Level received on the reference antenna through its chain in the band's bandwidth [dBm]."""
    uncertainty_db: float = 0.0
    """How uncertain the level is: the 10-90 % half-width, treated like a P.372 decile deviation [dB]."""
    position_m: tuple[float, float] | None = None
    """A placed source's place on the site plan [m east, m north]; None: a source known by its bearing only.
    A placed source's ``bearing_rad`` is its bearing from the reference antenna (snrgain.model.placed)."""
    height_m: float = 2.0
    """A placed source's height above the soil [m]."""
    polarisation: str = "vertical"
    """What a placed source radiates: "vertical", "horizontal" or "both"."""
    orientation_rad: float | None = None
    """A placed source's horizontal dipole's axis [rad, compass bearing]; needed unless it is "vertical"."""
    measured_at_m: tuple[float, float] | None = None
    """Where a placed source's ``fa_db`` was measured [m east, m north]; None: at the reference antenna."""
    read_on: str | None = None
    """The name of the antenna ``level_dbm`` was read on; None: the reference."""


@record
class NoiseSettings:
    """Every noise component of a site; a component set to None is absent."""

    man_made: ManMadeNoise | None = field(default_factory=ManMadeNoise)
    atmospheric: AtmosphericNoise | None = None
    galactic: GalacticNoise | None = field(default_factory=GalacticNoise)
    local: tuple[LocalSource, ...] = ()
    p372_dir: Path | None = None
    """Folder of the ITU-R P.372 coefficient files (needed by P.372 atmospheric noise and the storm model)."""


@record
class Place:
    """Where and at what frequency the sky is wanted."""

    latitude_deg: float
    longitude_deg: float
    freq_hz: float
    bandwidth_hz: float = 500.0


# -- the components -----------------------------------------------------------------------------------------------


def _sector_params(sector: Sector | None):
    if sector is None:
        return "uniform", {}
    return "sector", {"start_rad": sector.start_rad, "stop_rad": sector.stop_rad, "contrast_db": sector.contrast_db}


def is_daytime(place: Place, *, month: int, utc_hour: float) -> bool:
    """Sun above the horizon at the site on the 15th of the month at the UTC hour."""
    el = solar.solar_elevation_rad(
        np.radians(place.latitude_deg),
        np.radians(place.longitude_deg),
        day_of_year=solar.mid_month_day_of_year(month),
        utc_hour=utc_hour,
    )
    return bool(el > 0.0)


def static_components(
    settings: NoiseSettings,
    place: Place,
    grid: Directions,
    *,
    reference_gain=None,
    reference_chain_gain_db: float = 0.0,
) -> list[SkyComponent]:
    """Components that do not change with the hour: man-made and local sources.

    ``reference_gain(azimuth_rad, elevation_rad) -> linear gain`` is the antenna a local source's ``level_dbm``
    was read on, through a chain of gain ``reference_chain_gain_db``, as an S-meter shows it.
    """
    from noisemodels import sky

    out = []
    mm = settings.man_made
    if mm is not None:
        az_shape, az_params = _sector_params(mm.sector)
        level = p372.man_made(place.freq_hz, environment=mm.environment)
        if mm.offset_db:
            level = p372.NoiseLevel(level.fa_db + mm.offset_db, level.du_db, level.dl_db)
        out.append(
            sky.diffuse_component(
                f"man-made ({mm.environment})",
                kind="man-made",
                level=level,
                directions=grid,
                elevation="low",
                elevation_params={"scale_rad": mm.elevation_scale_rad},
                azimuth=az_shape,
                azimuth_params=az_params,
            )
        )
    for src in settings.local:
        if src.fa_db is not None:
            fa = src.fa_db
        elif reference_gain is None:
            raise ValueError(f"local source {src.name!r}: a level read on the reference antenna needs that antenna")
        else:
            fa = level_to_fa_db(src, place, reference_gain, reference_chain_gain_db)
        spread = float(getattr(src, "uncertainty_db", 0.0))  # its stated 10-90 % half-width, as the spreads take it
        out.append(
            sky.compact_component(
                src.name,
                level=p372.NoiseLevel(fa, spread, spread),
                azimuth_rad=src.bearing_rad,
                elevation_rad=src.elevation_rad,
                spread_rad=src.spread_rad,
            )
        )
    return out


def level_to_fa_db(src: LocalSource, place: Place, reference_gain, chain_gain_db: float = 0.0) -> float:
    """The Fa [dB above kT0b] that makes the reference antenna (``reference_gain(azimuth_rad, elevation_rad) ->
    linear``), through a chain of gain ``chain_gain_db``, receive a local source's ``level_dbm`` in the band's
    bandwidth, as an S-meter shows it."""
    return levels_to_fa_db([src], place, reference_gain, chain_gain_db)[0]


def levels_to_fa_db(srcs, place: Place, reference_gain, chain_gain_db: float = 0.0) -> list[float]:
    """:func:`level_to_fa_db` of each of ``srcs`` read on one reference, its gain asked once on all their unit
    components' directions (each ground of a spread reads every level again)."""
    from noisemodels import sky
    from snrgain.physics.receiver import power_dbm

    units = [_unit_component(src) for src in srcs]
    az = np.concatenate([u.directions.azimuth_rad for u in units])
    el = np.concatenate([u.directions.elevation_rad for u in units])
    gains = np.split(reference_gain(az, el), np.cumsum([len(u.directions.azimuth_rad) for u in units])[:-1])
    out = []
    for src, unit, gain in zip(srcs, units, gains):
        t_ref = sky.weighted_temperature_k(gain, unit.weight_k_sr)
        if not t_ref > 0:
            raise ValueError(
                f"noise.local {src.name!r}: the reference antenna receives nothing from bearing "
                f"{np.degrees(src.bearing_rad):g} deg, elevation {np.degrees(src.elevation_rad):g} deg, so a level "
                "measured on it cannot be placed; give the level as fa instead"
            )
        have = float(power_dbm(t_ref, bandwidth_hz=place.bandwidth_hz)) + chain_gain_db
        out.append(float(src.level_dbm - have))
    return out


def _unit_component(src: LocalSource) -> SkyComponent:
    """A source's compact component of unit level (:data:`_UNITS`)."""
    from noisemodels import sky

    where = (src.name, float(src.bearing_rad), float(src.elevation_rad), float(src.spread_rad))
    return _UNITS.get(
        where,
        lambda: sky.compact_component(
            src.name,
            level=p372.NoiseLevel(0.0, 0.0, 0.0),
            azimuth_rad=src.bearing_rad,
            elevation_rad=src.elevation_rad,
            spread_rad=src.spread_rad,
        ),
    )


_UNITS = Memo(64)
""":func:`levels_to_fa_db`' unit component of a source, by its name and direction: the same at every ground of a
spread, where each ground's reference reads the level again (snrgain.model.pipeline.strength_offsets_db)."""


def resolve_local_levels(
    settings: NoiseSettings, place: Place, reference_gain, chain_gain_db: float = 0.0
) -> NoiseSettings:
    """The settings with every local source's level read on the reference turned into its Fa (the source's
    strength), once; ``level_dbm`` stays, as the record of what was read.  Sources given as Fa are unchanged."""
    from dataclasses import replace

    local = tuple(
        replace(s, fa_db=level_to_fa_db(s, place, reference_gain, chain_gain_db)) if s.level_dbm is not None else s
        for s in settings.local
    )
    return replace(settings, local=local)


def atmospheric_level(settings: NoiseSettings, place: Place, *, month: int, utc_hour) -> tuple[str, p372.NoiseLevel]:
    """(component name, level) of atmospheric noise for the month and hour(s): P.372's maps, or as given."""
    at = settings.atmospheric
    if at is None:
        raise ValueError("the settings have no atmospheric noise")
    if at.model == "p372":
        return "atmospheric (P.372)", p372.atmospheric(
            place.latitude_deg,
            place.longitude_deg,
            month=month,
            freq_hz=place.freq_hz,
            utc_hour=utc_hour,
            data_dir=settings.p372_dir,
        )
    return "atmospheric (given)", p372.NoiseLevel(at.fa_db, at.upper_decile_db, at.lower_decile_db)


def atmospheric_component(
    settings: NoiseSettings, place: Place, grid: Directions, *, month: int, utc_hour: float
) -> SkyComponent | None:
    """Atmospheric noise for the hour: its level spread by the arrival model (None if there is none)."""
    at = settings.atmospheric
    if at is None:
        return None
    from noisemodels import sky, storms

    name, level = atmospheric_level(settings, place, month=month, utc_hour=utc_hour)
    if at.arrival == "storms":
        return storms.storm_component(
            place.latitude_deg,
            place.longitude_deg,
            month=month,
            utc_hour=utc_hour,
            freq_hz=place.freq_hz,
            level=level,
            directions=grid,
            layer_height_m=at.layer_height_m,
            data_dir=settings.p372_dir,
            name=name,
        )
    az_shape, az_params = _sector_params(at.sector if at.arrival == "sector" else None)
    return sky.diffuse_component(
        name,
        kind="atmospheric",
        level=level,
        directions=grid,
        elevation="band",
        elevation_params={"center_rad": at.elevation_center_rad, "width_rad": at.elevation_width_rad},
        azimuth=az_shape,
        azimuth_params=az_params,
    )


def galactic_component(
    settings: NoiseSettings, place: Place, grid: Directions, *, month: int, utc_hour: float
) -> SkyComponent | None:
    """Galactic noise through the day or night ionosphere at the site (None if there is none)."""
    gal = settings.galactic
    if gal is None:
        return None
    from noisemodels import sky

    day = is_daytime(place, month=month, utc_hour=utc_hour)
    fc = gal.critical_frequency_day_hz if day else gal.critical_frequency_night_hz
    return sky.galactic_component(
        place.freq_hz, directions=grid, critical_freq_hz=fc, layer_height_m=gal.layer_height_m
    )


def hourly_components(
    settings: NoiseSettings, place: Place, grid: Directions, *, month: int, utc_hour: float
) -> list[SkyComponent]:
    """Components that change with the hour: atmospheric noise, galactic noise (day or night ionosphere)."""
    comps = [
        atmospheric_component(settings, place, grid, month=month, utc_hour=utc_hour),
        galactic_component(settings, place, grid, month=month, utc_hour=utc_hour),
    ]
    return [c for c in comps if c is not None]


# -- the series -------------------------------------------------------------------------------------------------


@record
class SkySeries:
    """The noise sky as P.372's reference monopole sees it, per month and hour.

    Arrays are indexed [component, month, hour] or [month, hour]; levels in dB above kT0b.

    names, kinds : each component's label and kind ("man-made", "atmospheric", "galactic", "local")
    fa_db, du_db, dl_db : median Fa and decile deviations per component (-inf where screened) [dB]
    total_fa_db, total_du_db, total_dl_db : the P.372 Section 8 combination [dB]
    median_power_sum_fa_db : power sum of the components' medians, what the SNR uses [dB]
    daytime : sun above the horizon at the site
    maps : (month index, hour index) -> the components on the sky, or None when built without maps
    """

    months: tuple[int, ...]
    utc_hours: tuple[float, ...]
    names: tuple[str, ...]
    kinds: tuple[str, ...]
    fa_db: np.ndarray
    du_db: np.ndarray
    dl_db: np.ndarray
    total_fa_db: np.ndarray
    total_du_db: np.ndarray
    total_dl_db: np.ndarray
    median_power_sum_fa_db: np.ndarray
    daytime: np.ndarray
    maps: dict[tuple[int, int], list] | None = field(default=None, repr=False)

    @property
    def components(self) -> dict[str, dict]:
        """name -> {"kind", "fa_db", "du_db", "dl_db"} with (month, hour) arrays."""
        return {
            n: {"kind": k, "fa_db": self.fa_db[i], "du_db": self.du_db[i], "dl_db": self.dl_db[i]}
            for i, (n, k) in enumerate(zip(self.names, self.kinds))
        }

    def index(self, kind: str) -> list[int]:
        """Indices of the components of a kind."""
        return [i for i, k in enumerate(self.kinds) if k == kind]


def build_skies(
    settings: NoiseSettings,
    place: Place,
    *,
    months,
    utc_hours,
    grid: Directions | None = None,
    nside: int = 32,
    maps: bool = True,
    reference_gain=None,
    reference_chain_gain_db: float = 0.0,
) -> SkySeries:
    """The noise sky for every month and UTC hour.

    ``maps=False`` keeps only the levels (the atmospheric storm map, the costly part, is not spread over the
    sky).  ``reference_gain`` and ``reference_chain_gain_db``: see :func:`static_components`.
    """
    from noisemodels.sphere import upper_hemisphere

    grid = upper_hemisphere(nside) if grid is None else grid
    months, utc_hours = tuple(int(m) for m in months), tuple(float(h) for h in utc_hours)
    static = static_components(
        settings, place, grid, reference_gain=reference_gain, reference_chain_gain_db=reference_chain_gain_db
    )
    nm, nh = len(months), len(utc_hours)
    names: list[str] = []
    kinds: list[str] = []
    levels: dict[str, np.ndarray] = {}
    total = np.full((3, nm, nh), np.nan)
    daytime = np.zeros((nm, nh), dtype=bool)
    sky_maps = {} if maps else None
    for i, month in enumerate(months):
        for j, hour in enumerate(utc_hours):
            if maps:
                comps = static + hourly_components(settings, place, grid, month=month, utc_hour=hour)
                sky_maps[(i, j)] = comps
                entries = [(c.name, c.kind, c.level) for c in comps]
            else:
                entries = [(c.name, c.kind, c.level) for c in static]
                if settings.atmospheric is not None:
                    name, level = atmospheric_level(settings, place, month=month, utc_hour=hour)
                    entries.append((name, "atmospheric", level))
                gal = galactic_component(settings, place, grid, month=month, utc_hour=hour)
                if gal is not None:
                    entries.append((gal.name, gal.kind, gal.level))
            daytime[i, j] = is_daytime(place, month=month, utc_hour=hour)
            for name, kind, level in entries:
                if name not in levels:
                    names.append(name)
                    kinds.append(kind)
                    levels[name] = np.full((3, nm, nh), np.nan)
                levels[name][:, i, j] = [float(np.asarray(v)) for v in (level.fa_db, level.du_db, level.dl_db)]
            tot = p372.combine_present([lv for _, _, lv in entries])
            total[:, i, j] = [float(np.asarray(v)) for v in (tot.fa_db, tot.du_db, tot.dl_db)]
    per = np.array([levels[n] for n in names]) if names else np.full((0, 3, nm, nh), np.nan)
    with np.errstate(divide="ignore"):
        power_sum = 10.0 * np.log10(np.nansum(10.0 ** (per[:, 0] / 10.0), axis=0))
    return SkySeries(
        months,
        utc_hours,
        tuple(names),
        tuple(kinds),
        per[:, 0],
        per[:, 1],
        per[:, 2],
        total[0],
        total[1],
        total[2],
        power_sum,
        daytime,
        sky_maps,
    )
