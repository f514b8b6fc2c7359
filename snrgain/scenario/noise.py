"""[noise]: the man-made, atmospheric, galactic and local sections, and their resolution into snrgain.sky.noise's
settings (local sources placed on the plan and seen from the reference; the P.372 data folder found)."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, Literal

import numpy as np
from pydantic import Field, model_validator

from snrgain.constants import FREQ_RANGE_HZ, MAN_MADE_CHOICES
from snrgain.fields import (
    Bearing,
    Elevation,
    Latitude,
    Longitude,
    Name,
    NameRef,
    PlanPoint,
    PowerDbm,
    StrictModel,
    decibels,
    quantity,
)
from snrgain.physics import targets as targetmod
from snrgain.sky import noise as noisemod

from .files import MAX_ITEMS

if TYPE_CHECKING:
    from .site import SiteSection

_MM = noisemod.ManMadeNoise
_AT = noisemod.AtmosphericNoise
_GAL = noisemod.GalacticNoise
_SRC = noisemod.LocalSource

FA_RANGE_DB = (-20.0, 200.0)
"""Noise levels as Fa [dB above kT0b]: P.372's curves span about 0-180 dB from 10 kHz to 30 MHz."""
DECILE_RANGE_DB = (0.0, 30.0)
"""P.372 decile deviations [dB]: distances from the median, never negative (Section 8 tabulates up to about 20)."""
MIN_ARRIVAL_SHARE = 1e-3
"""The least share of an atmospheric arrival band's power that P.372's reference monopole must hear, against a
uniform sky (-30 dB): a band where it hears next to nothing (overhead) would need an absurdly bright sky to
give the Fa read on it."""


class Sector(StrictModel):
    start: Bearing = Field(alias="from")
    stop: Bearing = Field(alias="to")
    contrast: decibels(-60.0, 60.0) = 10.0

    @model_validator(mode="after")
    def _width(self):
        width = float(np.mod(self.stop - self.start, 2 * np.pi))
        if min(width, 2 * np.pi - width) < 1e-9:  # the same bearing (40 to 40) or a full turn (0 to 360)
            a, b = (float(np.degrees(x)) for x in (self.start, self.stop))
            what = "the same bearing, no width" if abs(a - b) < 1e-6 else "a full turn, the whole horizon"
            raise ValueError(
                f"a sector runs clockwise from 'from' to 'to' and needs a width > 0 and under 360 deg; got from "
                f"{a:g} deg to {b:g} deg, {what} (for noise as strong from every direction leave the sector out)"
            )
        return self


class ManMade(StrictModel):
    environment: Literal[MAN_MADE_CHOICES] = _MM.environment
    elevation_scale: quantity("angle", gt=0.0, le=np.pi / 2) = _MM.elevation_scale_rad
    sector: Sector | None = None
    offset: decibels(-40.0, 40.0) = _MM.offset_db
    """The site's level over the environment's P.372 curve [dB] (fitted by noise-readings or verify --write)."""


class Atmospheric(StrictModel):
    model: Literal["none", "given", "p372"] = "none"
    fa: decibels(*FA_RANGE_DB) | None = None
    upper_decile: decibels(*DECILE_RANGE_DB) = 0.0
    lower_decile: decibels(*DECILE_RANGE_DB) = 0.0
    arrival: Literal["storms", "uniform", "sector"] | None = None
    elevation_center: Elevation = _AT.elevation_center_rad
    elevation_width: quantity("angle", gt=0.0, le=np.pi / 2) = _AT.elevation_width_rad
    sector: Sector | None = None
    layer_height: quantity("length", ge=80e3, le=1000e3) = _AT.layer_height_m
    data_dir: str | None = None

    @model_validator(mode="after")
    def _consistent(self):
        if self.model == "given" and self.fa is None:
            raise ValueError("model = 'given' needs fa (the median Fa in dB above kT0b, e.g. fa = '45 dB')")
        if self.model != "given" and self.fa is not None:
            raise ValueError(f"fa is given but model is {self.model!r}; set model = 'given' to use it")
        if self.arrival == "sector" and self.sector is None:
            raise ValueError("arrival = 'sector' needs sector = { from = ..., to = ... }")
        if self.sector is not None and self.arrival not in (None, "sector"):
            raise ValueError(f"sector is used only with arrival = 'sector', not {self.arrival!r}")
        if self.model != "none" and self.arrival_model in ("uniform", "sector"):
            share = arrival_band_share(self.elevation_center, self.elevation_width)
            if share < MIN_ARRIVAL_SHARE:
                c, w = np.degrees(self.elevation_center), np.degrees(self.elevation_width)
                raise ValueError(
                    f"elevation_center {c:g} deg with elevation_width {w:g} deg puts the arrival band where P.372's "
                    f"reference monopole hears almost nothing (overhead: {10 * np.log10(max(share, 1e-300)):.0f} dB "
                    f"against a uniform sky, at least {10 * np.log10(MIN_ARRIVAL_SHARE):.0f} dB allowed); lower "
                    "elevation_center or widen the band"
                )
        return self

    @property
    def arrival_model(self) -> str:
        """The arrival model in force: as given, else storms for P.372, sector if a sector is given, else uniform."""
        if self.arrival is not None:
            return self.arrival
        if self.sector is not None:
            return "sector"
        return "storms" if self.model == "p372" else "uniform"

    @property
    def needs_data(self) -> bool:
        return self.model == "p372" or (self.model == "given" and self.arrival_model == "storms")


def arrival_band_share(center_rad: float, width_rad: float) -> float:
    """How well P.372's reference monopole (gain as cos^2 of the elevation) hears a Gaussian band of arrival
    elevations (noisemodels.sky.elevation_band), against a uniform sky: the band-weighted mean of cos^2 over
    its uniform-sky mean (2/3).  1 for a band at the horizon's mean, 0 for one straight overhead."""
    el = np.linspace(0.0, np.pi / 2, 9001)
    band = np.exp(-0.5 * ((el - center_rad) / width_rad) ** 2) * np.cos(el)  # power per elevation, solid angle
    total = float(band.sum())
    if not total > 0:
        return 0.0
    return float((band * np.cos(el) ** 2).sum() / total / (2.0 / 3.0))


class Galactic(StrictModel):
    enabled: bool = True
    critical_frequency_day: quantity("frequency", gt=0.0, le=FREQ_RANGE_HZ[1]) = _GAL.critical_frequency_day_hz
    critical_frequency_night: quantity("frequency", gt=0.0, le=FREQ_RANGE_HZ[1]) = _GAL.critical_frequency_night_hz
    layer_height: quantity("length", ge=80e3, le=1000e3) = _GAL.layer_height_m


class LocalSource(StrictModel):
    name: Name
    bearing: Bearing | None = None
    """Where a distant-in-effect source lies, seen from the station; or give its place (position or latitude and
    longitude) and each antenna sees it from where it stands."""
    position: PlanPoint | None = None
    """The source's place on the site plan [m east, m north]."""
    latitude: Latitude | None = None
    longitude: Longitude | None = None
    height: quantity("length", ge=0.0, le=100.0) = _SRC.height_m
    """The source's height above the soil [m] (placed sources)."""
    polarisation: Literal["vertical", "horizontal", "both"] = "vertical"
    """What the placed source radiates: a vertical or horizontal small dipole, or both with equal power."""
    orientation: Bearing | None = None
    """A placed horizontal (or "both") source's axis, as a compass bearing (a wire, a fence, a panel row's cables);
    needed by every source that radiates horizontally."""
    measured_at: PlanPoint | None = None
    """Where ``fa`` was measured [m east, m north] (placed sources; default: at the reference antenna)."""
    elevation: Elevation = _SRC.elevation_rad
    spread: quantity("angle", ge=0.0, le=np.radians(30.0)) = _SRC.spread_rad
    level: PowerDbm | None = None
    read_on: NameRef | None = None
    """The antenna ``level`` was read on, by name ("reference": the file's reference); default the file's
    reference, so that ranking against another reference (``rank --reference``) leaves the noise as it is."""
    fa: decibels(*FA_RANGE_DB) | None = None
    uncertainty: decibels(0.0, 30.0) = 0.0
    """How uncertain the level is: the 10-90 % half-width, like a P.372 decile deviation [dB]."""

    @model_validator(mode="after")
    def _one_level(self):
        if (self.level is None) == (self.fa is None):
            raise ValueError(
                "give exactly one of level (received on the reference antenna: '-95 dBm', 'S7') "
                "or fa (dB above kT0b on P.372's reference monopole)"
            )
        places = [self.bearing is not None, self.position is not None, self.latitude is not None]
        if (self.latitude is None) != (self.longitude is None):
            raise ValueError("a source's place needs both latitude and longitude")
        if sum(places) != 1:
            raise ValueError(
                "give exactly one of bearing (a direction from the station), position = [east, north] on the "
                "site plan, or latitude and longitude"
            )
        if self.read_on is not None and self.level is None:
            raise ValueError("read_on names the antenna a level was read on; it goes with level, not with fa")
        if self.placed and self.polarisation in ("horizontal", "both") and self.orientation is None:
            raise ValueError(
                f"orientation: a {self.polarisation} source needs the compass bearing of its axis "
                "(orientation = '30 deg'; 0 to 180 deg, either end)"
            )
        if self.orientation is not None and not self.placed:
            raise ValueError("orientation goes with a placed source (position or latitude and longitude)")
        if "height" in self.model_fields_set and not self.placed:
            raise ValueError(
                "height goes with a placed source (position or latitude and longitude): a source given by bearing "
                "is heard from that bearing, at its elevation, by every antenna"
            )
        if self.measured_at is not None and (self.fa is None or self.bearing is not None):
            raise ValueError("measured_at goes with fa on a placed source (a level is read on the reference antenna)")
        return self

    @property
    def placed(self) -> bool:
        return self.bearing is None


class Noise(StrictModel):
    man_made: ManMade = ManMade()
    atmospheric: Atmospheric = Atmospheric()
    galactic: Galactic = Galactic()
    local: list[LocalSource] = Field(default_factory=list, max_length=MAX_ITEMS)


def resolve_sector(sec: Sector | None) -> noisemod.Sector | None:
    """A validated sector as the sky builder's Sector (None stays None)."""
    return None if sec is None else noisemod.Sector(sec.start, sec.stop, sec.contrast)


def resolve_local_source(src: LocalSource, site: SiteSection, reference_m) -> noisemod.LocalSource:
    """A resolved local source: a placed one gets its plan position and its bearing from the reference."""
    if not src.placed:
        return noisemod.LocalSource(
            src.name, src.bearing, src.elevation, src.spread, src.fa, src.level, src.uncertainty, read_on=src.read_on
        )
    if src.position is not None:
        pos = (float(src.position[0]), float(src.position[1]))
    else:
        bearing, dist = targetmod.geodesic(site.latitude, site.longitude, src.latitude, src.longitude)
        pos = (dist * np.sin(bearing), dist * np.cos(bearing))
    de, dn = pos[0] - reference_m[0], pos[1] - reference_m[1]
    return noisemod.LocalSource(
        src.name,
        float(np.mod(np.arctan2(de, dn), 2 * np.pi)),
        src.elevation,
        src.spread,
        src.fa,
        src.level,
        src.uncertainty,
        position_m=pos,
        height_m=src.height,
        polarisation=src.polarisation,
        orientation_rad=src.orientation,
        measured_at_m=None if src.measured_at is None else tuple(float(x) for x in src.measured_at),
        read_on=src.read_on,
    )


def noise_settings(
    n: Noise, data_dir: Path | None, site: SiteSection | None = None, reference_m=(0.0, 0.0)
) -> noisemod.NoiseSettings:
    """The [noise] sections as snrgain.sky.noise's settings: components turned off are None, the atmospheric arrival
    model is the one in force, local sources are placed on the plan and seen from the reference at ``reference_m``."""
    mm, at, gal = n.man_made, n.atmospheric, n.galactic
    return noisemod.NoiseSettings(
        man_made=None
        if mm.environment == "none"
        else noisemod.ManMadeNoise(mm.environment, mm.elevation_scale, resolve_sector(mm.sector), mm.offset),
        atmospheric=None
        if at.model == "none"
        else noisemod.AtmosphericNoise(
            model=at.model,
            fa_db=at.fa,
            upper_decile_db=at.upper_decile,
            lower_decile_db=at.lower_decile,
            arrival=at.arrival_model,
            elevation_center_rad=at.elevation_center,
            elevation_width_rad=at.elevation_width,
            sector=resolve_sector(at.sector),
            layer_height_m=at.layer_height,
        ),
        galactic=None
        if not gal.enabled
        else noisemod.GalacticNoise(gal.critical_frequency_day, gal.critical_frequency_night, gal.layer_height),
        local=tuple(resolve_local_source(src, site, reference_m) for src in n.local),
        p372_dir=data_dir,
    )
