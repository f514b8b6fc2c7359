"""Scenario files: load, validate once, and hand SI values to the rest.

A scenario is a TOML file (format: README.md, "Scenario format").  Loading
validates everything: unknown keys, quantities and their units, ranges,
antenna parameters, the pattern files they name.  Every problem found is
reported in one :class:`ScenarioError` naming the file, the field path, the
value and what is allowed; nothing runs on an invalid scenario.
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Annotated, Any, Literal

import numpy as np
from pydantic import AfterValidator, Field, TypeAdapter, ValidationError, field_validator, model_validator

from snrgain import chain as chainmod
from snrgain import noise as noisemod
from snrgain import receiver as rx
from snrgain import targets as targetmod
from snrgain.antennas import FAMILIES, Antenna, SpecError
from snrgain.antennas.base import build as build_antenna
from snrgain.antennas.base import item_label, pydantic_problems
from snrgain.constants import FREQ_RANGE_HZ, MAN_MADE_CHOICES, placeable_families
from snrgain.errors import ScenarioError
from snrgain.fields import (
    Bearing,
    Elevation,
    GroundField,
    Latitude,
    Longitude,
    PlanPoint,
    PowerDbm,
    StrictModel,
    decibels,
    ground_spread,
    make_ground,
    quantity,
)
from snrgain.ground import C_M_PER_S, Ground, GroundSpread

_MM = noisemod.ManMadeNoise
_AT = noisemod.AtmosphericNoise
_GAL = noisemod.GalacticNoise
_SRC = noisemod.LocalSource


# -- the sections ------------------------------------------------------------


class PlaceSection(StrictModel):
    """What ``snrgain layout`` may change of a candidate: its position (always, within the lot), and its bearing
    and length within ranges."""

    bearing: list[Bearing] | None = Field(default=None, min_length=2, max_length=2)
    """[from, to] compass bearings, clockwise (e.g. ["20 deg", "70 deg"])."""
    length: list[quantity("length", ge=1.0, le=3000.0)] | None = Field(default=None, min_length=2, max_length=2)
    """[shortest, longest] wire length [m]."""

    @model_validator(mode="after")
    def _ranges(self):
        if self.length is not None and self.length[0] > self.length[1]:
            raise ValueError(f"length: the range runs backwards ({self.length[0]:g} m > {self.length[1]:g} m)")
        return self

    def problem_for(self, antenna) -> str | None:
        """Why this antenna cannot be placed as asked, or None."""
        if not antenna.placeable:  # one feed point, a bearing, and for wires a length (declared by the family)
            return f"snrgain layout places {', '.join(placeable_families())}; not {antenna.family!r}"
        if self.length is not None and not hasattr(antenna, "length_m"):
            return f"a {antenna.family} has no length to vary"
        if self.bearing is not None and not hasattr(antenna.params, "bearing"):
            return f"a {antenna.family} has no bearing to vary"
        return None


class KeepOut(StrictModel):
    name: str
    outline: list[PlanPoint] = Field(min_length=3)
    """Corners [east, north] on the site plan, in order around the edge."""


class SiteSection(StrictModel):
    name: str = "unnamed site"
    latitude: Latitude
    longitude: Longitude
    ground: GroundField = "moist loam"
    lot: list[PlanPoint] | None = Field(default=None, min_length=3)
    """The lot's outline on the site plan, [east, north] corners (the plan view, the placement checks, layout)."""
    keep_out: list[KeepOut] = Field(default_factory=list, max_length=64)
    """Areas no antenna may enter: the house, a road, the transmitting vertical's radial field."""
    tx_clearance: quantity("length", ge=0.0, le=2000.0) | None = None
    """How far receiving antennas should stay from the transmitting vertical [m] (default: half a wavelength)."""

    @model_validator(mode="after")
    def _outlines(self):
        from snrgain.lot import polygon

        if self.lot is not None:
            polygon(self.lot, "lot")
        for k in self.keep_out:
            polygon(k.outline, f"keep_out {k.name!r}")
        return self


class BandSection(StrictModel):
    frequency: quantity("frequency", ge=FREQ_RANGE_HZ[0], le=FREQ_RANGE_HZ[1])
    bandwidth: quantity("frequency", ge=10.0, le=100e3) = 500.0


def _check_months(v):
    if v is None:
        return v
    bad = [m for m in v if not 1 <= m <= 12]
    if bad:
        raise ValueError(f"months must be 1..12; got {bad}")
    if len(set(v)) != len(v):
        raise ValueError(f"months are listed twice: {v}")
    return v


def _check_hours(v):
    if v is None:
        return v
    bad = [h for h in v if not 0 <= h < 24]
    if bad:
        raise ValueError(f"UTC hours must be in [0, 24); got {bad}")
    if len(set(v)) != len(v):
        raise ValueError(f"hours are listed twice: {v}")
    return v


Months = Annotated[list[int], Field(min_length=1, max_length=12), AfterValidator(_check_months)]
Hours = Annotated[list[float], Field(min_length=1, max_length=96), AfterValidator(_check_hours)]

FA_RANGE_DB = (-20.0, 200.0)
"""Noise levels as Fa [dB above kT0b]: P.372's curves span about 0-180 dB from 10 kHz to 30 MHz."""
DECILE_RANGE_DB = (0.0, 30.0)
"""P.372 decile deviations [dB]: distances from the median, never negative (Section 8 tabulates up to about 20)."""
MIN_ARRIVAL_SHARE = 1e-3
"""The least share of an atmospheric arrival band's power that P.372's reference monopole must hear, against a
uniform sky (-30 dB): a band where it hears next to nothing (overhead) would need an absurdly bright sky to
give the Fa read on it."""
MAX_ITEMS = 64
"""The most targets, candidates or local sources a scenario may hold."""
MIN_BAND_RAD = float(np.radians(1.0))
"""The narrowest band of target elevations [rad]."""
MAX_MIN_ELEVATION_RAD = float(np.radians(45.0))
"""The highest lowest-arrival angle of a target by place [rad]: higher, the hop geometry has no path."""
MAX_NESTING = 32
"""The deepest nesting of tables and arrays a scenario file may have."""


class Time(StrictModel):
    months: Months = Field(default_factory=lambda: [1])
    utc_hours: Hours = Field(default_factory=lambda: [0.0])


class Sector(StrictModel):
    start: Bearing = Field(alias="from")
    stop: Bearing = Field(alias="to")
    contrast: decibels(-60.0, 60.0) = 10.0


class ManMade(StrictModel):
    environment: Literal[MAN_MADE_CHOICES] = _MM.environment
    elevation_scale: quantity("angle", gt=0.0, le=np.pi / 2) = _MM.elevation_scale_rad
    sector: Sector | None = None


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
    name: str
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
    measured_at: PlanPoint | None = None
    """Where ``fa`` was measured [m east, m north] (placed sources; default: at the reference antenna)."""
    elevation: Elevation = _SRC.elevation_rad
    spread: quantity("angle", ge=0.0, le=np.radians(30.0)) = _SRC.spread_rad
    level: PowerDbm | None = None
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


class Target(StrictModel):
    name: str
    weight: float = Field(default=1.0, gt=0.0, le=1000.0)
    bearing: Bearing | None = None
    elevation: list[Elevation] | None = None
    latitude: Latitude | None = None
    longitude: Longitude | None = None
    layer_height: quantity("length", ge=80e3, le=1000e3) = targetmod.DEFAULT_LAYER_HEIGHT_M
    min_elevation: quantity("angle", ge=0.0, le=MAX_MIN_ELEVATION_RAD) = targetmod.DEFAULT_MIN_ELEVATION_RAD
    months: Months | None = None
    """The months this target is listened for (default: [time] months)."""
    utc_hours: Hours | None = None
    """The UTC hours this target is listened at (default: [time] utc_hours)."""

    @field_validator("elevation", mode="before")
    @classmethod
    def _range(cls, v):
        if v is None:
            return v
        if not isinstance(v, list) or len(v) != 2:
            raise ValueError(f"elevation is a range [low, high] in degrees, e.g. [5, 25]; got {v!r}")
        return v

    @model_validator(mode="after")
    def _one_way(self):
        by_bearing = self.bearing is not None
        by_place = self.latitude is not None or self.longitude is not None
        if by_bearing == by_place:
            raise ValueError("give either bearing (with elevation = [low, high]) or latitude and longitude")
        if by_place and (self.latitude is None or self.longitude is None):
            raise ValueError("a target place needs both latitude and longitude")
        if by_bearing and self.elevation is None:
            raise ValueError("a target by bearing needs elevation = [low, high] in degrees")
        if self.elevation is not None and self.elevation[1] < self.elevation[0]:
            raise ValueError("elevation range is reversed; write [low, high]")
        if self.elevation is not None and self.elevation[1] - self.elevation[0] < MIN_BAND_RAD * (1 - 1e-9):
            raise ValueError(
                f"elevation range {[round(float(np.degrees(x)), 3) for x in self.elevation]} deg has no "
                "width; give [low, high] at least 1 deg apart, e.g. [5, 25]"
            )
        return self


class Receiver(StrictModel):
    noise_figure: decibels(0.0, 40.0) | None = None
    noise_floor: PowerDbm | None = None
    margin_target: decibels(-20.0, 60.0) = rx.DEFAULT_MARGIN_TARGET_DB

    @model_validator(mode="after")
    def _one(self):
        if self.noise_figure is not None and self.noise_floor is not None:
            raise ValueError("give noise_figure or noise_floor (measured in the band's bandwidth), not both")
        return self


class Feedline(StrictModel):
    cable: str | None = None
    length: quantity("length", ge=0.0, le=10e3) | None = None
    loss: decibels(0.0, 40.0) | None = None

    @model_validator(mode="after")
    def _one(self):
        if self.loss is not None:
            if self.cable is not None or self.length is not None:
                raise ValueError("give the feed line's total loss, or its cable and length, not both")
        else:
            if self.cable is None or self.length is None:
                raise ValueError("a feed line needs cable and length (or its total loss)")
            chainmod.cable_by_name(self.cable)
        return self


class Preamp(StrictModel):
    gain: decibels(0.0, 50.0)
    noise_figure: decibels(0.0, 20.0)
    position: Literal["antenna", "receiver"] = "receiver"


class ChainSection(StrictModel):
    transformer_loss: decibels(0.0, 10.0) = 0.0
    feedline: Feedline | None = None
    preamp: Preamp | None = None


class Compute(StrictModel):
    nside: Literal[8, 16, 32, 64, 128] = 32


class UncertaintySection(StrictModel):
    ground: bool = True
    """Spread the ground over its class's documented spread or the ranges given in [site] ground."""
    noise_deciles: bool = True
    """Spread man-made, atmospheric and galactic noise over their P.372 decile deviations."""
    local_sources: bool = True
    """Spread local sources over the uncertainty given with each."""
    hours: bool = True
    """Count hour-to-hour variation (else the hours are averaged first)."""
    samples: int = Field(default=400, ge=20, le=20000)
    """Draws of the noise levels per ground (fixed seed: the same file gives the same numbers)."""
    seed: int = Field(default=1, ge=0, le=2**31 - 1)
    beat_by: decibels(0.0, 30.0) = 3.0
    """The margin over the reference whose probability is reported [dB]."""


class PlanSection(StrictModel):
    max_antennas: int | None = Field(default=None, ge=1, le=64)
    """The most receiving antennas to build beside the reference (default: as many as help)."""


class ScenarioModel(StrictModel):
    site: SiteSection
    band: BandSection
    time: Time = Time()
    noise: Noise = Noise()
    target: list[Target] = Field(min_length=1, max_length=MAX_ITEMS)
    reference: dict[str, Any] | None = None
    candidate: list[dict[str, Any]] = Field(min_length=1, max_length=MAX_ITEMS)
    receiver: Receiver = Receiver()
    chain: ChainSection = ChainSection()
    compute: Compute = Compute()
    uncertainty: UncertaintySection = UncertaintySection()
    plan: PlanSection = PlanSection()


# -- the resolved scenario --------------------------------------------------------


@dataclass(frozen=True)
class Site:
    """Where the station is: name, place [deg], ground (None: perfect) and how uncertain it is, lot outline
    [m east, m north]."""

    name: str
    latitude_deg: float
    longitude_deg: float
    ground: Ground | None
    lot_m: tuple[tuple[float, float], ...] | None = None
    ground_spread: GroundSpread | None = None
    keep_out: tuple[tuple[str, tuple[tuple[float, float], ...]], ...] = ()
    """Areas no antenna may enter: (name, outline [m east, m north])."""
    tx_clearance_m: float | None = None
    """How far receiving antennas should stay from the transmitting vertical [m]; None: half a wavelength."""


@dataclass(frozen=True)
class Band:
    """The frequency and the receiver's bandwidth [Hz]."""

    freq_hz: float
    bandwidth_hz: float


@dataclass(frozen=True)
class Times:
    """The months (1-12) and UTC hours [h] listened at."""

    months: tuple[int, ...]
    utc_hours: tuple[float, ...]

    def mask(self, grid: Times) -> np.ndarray:
        """Which cells of a (months, hours) grid these times cover, shape (months, hours)."""
        return np.isin(grid.months, self.months)[:, None] & np.isin(grid.utc_hours, self.utc_hours)[None, :]


@dataclass(frozen=True)
class Uncertainty:
    """Which spreads to count (see README, "How sure"), the draws and the margin whose probability is reported."""

    ground: bool = True
    noise_deciles: bool = True
    local_sources: bool = True
    hours: bool = True
    samples: int = 400
    seed: int = 1
    beat_by_db: float = 3.0


@dataclass(frozen=True)
class Scenario:
    """A validated scenario resolved into SI objects: antennas built, chains cascaded, targets placed.

    ``chains[i]`` is the receiving chain of ``antennas[i]`` (its own, or the scenario's ``chain``).
    """

    source: str
    site: SiteSection
    band: BandSection
    times: Times
    noise: noisemod.NoiseSettings
    targets: tuple[targetmod.TargetDirections, ...]
    target_weights: np.ndarray
    """Targets' weights, adding to 1 [-]."""
    target_times: tuple[Times, ...]
    """When each target is listened for; ``times`` is their union, the grid the sky is built on."""
    reference: Antenna
    candidates: tuple[Antenna, ...]
    chains: tuple[chainmod.Chain, ...]
    chain: chainmod.Chain
    receiver: rx.Receiver
    nside: int
    uncertainty: Uncertainty = Uncertainty()
    max_antennas: int | None = None
    placeable: dict[str, Any] = field(default_factory=dict)
    """Candidates that ``snrgain layout`` may move: name -> PlaceSection (the ranges it may search)."""
    """The most receiving antennas the station plan may add to the reference (None: as many as help)."""

    @property
    def antennas(self) -> list[Antenna]:
        """The reference, then the candidates."""
        return [self.reference, *self.candidates]

    @property
    def freq_hz(self) -> float:
        return self.band.freq_hz

    @property
    def bandwidth_hz(self) -> float:
        return self.band.bandwidth_hz

    @property
    def place(self) -> noisemod.Place:
        """The site and band as the sky builder wants them."""
        return noisemod.Place(
            self.site.latitude_deg, self.site.longitude_deg, self.band.freq_hz, self.band.bandwidth_hz
        )


def chain_from_section(c, *, freq_hz: float, receiver_noise_figure_db: float):
    """The chain of a validated [chain] section (the scenario's, or an antenna's own ``chain`` table), built from
    its values by :func:`snrgain.chain.cascade`."""
    fl, amp = c.feedline, c.preamp
    return chainmod.cascade(
        freq_hz=freq_hz,
        receiver_noise_figure_db=receiver_noise_figure_db,
        transformer_loss_db=c.transformer_loss,
        feedline_loss_db=None if fl is None else fl.loss,
        cable=None if fl is None else fl.cable,
        feedline_length_m=None if fl is None else fl.length,
        preamp_gain_db=None if amp is None else amp.gain,
        preamp_noise_figure_db=None if amp is None else amp.noise_figure,
        preamp_at_antenna=amp is not None and amp.position == "antenna",
    )


def _inject_defaults(spec: dict, *, site_ground, base_dir: Path | None) -> dict:
    spec = dict(spec)
    name = spec.get("family")
    family = FAMILIES.get(name) if isinstance(name, str) else None
    if family is not None:
        fields = family.params.model_fields
        if "ground" in fields and "ground" not in spec and site_ground is not None:
            spec["ground"] = site_ground
        if "file" in fields and isinstance(spec.get("file"), str) and base_dir is not None:
            p = Path(spec["file"])
            spec["file"] = str(p if p.is_absolute() else base_dir / p)
    return spec


def _raw_ground(site) -> str | dict | None:
    """The site's ground as written, for antennas that give none; None if unusable (reported elsewhere)."""
    g = site.get("ground", "moist loam") if isinstance(site, dict) else "moist loam"
    if not isinstance(g, (str, dict)):
        return None
    try:  # a bad ground is reported once, under site.ground, not again for every antenna that inherits it
        TypeAdapter(GroundField).validate_python(g)
    except (ValidationError, ValueError):
        return None
    return g


def read_source(source: str | Path) -> tuple[dict, str, Path | None]:
    """A scenario file's (or TOML text's) raw tables, its label and the folder its relative paths start from."""
    text, label, base_dir = _read(source)
    return parse_toml(text, label), label, base_dir


def parse_toml(text: str, label: str) -> dict:
    """TOML text as tables; ScenarioError for text that is not TOML, integers too long, nesting too deep."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ScenarioError(label, [("", f"not valid TOML: {exc}")]) from None
    except RecursionError:
        raise ScenarioError(
            label, [("", f"tables or arrays nested too deeply (at most {MAX_NESTING} levels)")]
        ) from None
    except ValueError as exc:  # e.g. an integer of thousands of digits
        raise ScenarioError(label, [("", f"not valid TOML: {exc}")]) from None
    path = _too_deep(data)
    if path is not None:
        raise ScenarioError(label, [(path, f"tables or arrays nested too deeply (at most {MAX_NESTING} levels)")])
    return data


def _too_deep(data) -> str | None:
    """The path of the first value nested deeper than MAX_NESTING, or None."""
    stack = [(data, 0, "")]
    while stack:
        node, depth, path = stack.pop()
        if depth > MAX_NESTING:
            return path
        if isinstance(node, dict):
            stack.extend((v, depth + 1, f"{path}.{k}" if path else str(k)) for k, v in node.items())
        elif isinstance(node, list):
            stack.extend((v, depth + 1, path) for v in node)
    return None


def antenna_from_table(spec: dict, where: str, *, site_ground, base_dir: Path | None, freq_hz: float) -> Antenna:
    """Build one antenna table as :func:`load` does (the site's ground filled in, pattern files found relative to
    the scenario); raises SpecError naming ``where``."""
    return build_antenna(_inject_defaults(spec, site_ground=site_ground, base_dir=base_dir), where, freq_hz=freq_hz)


def load(
    source: str | Path | dict,
    *,
    nside: int | None = None,
    p372_dir: str | Path | None = None,
    base_dir: Path | None = None,
    label: str | None = None,
) -> Scenario:
    """Load and validate a scenario from a path, TOML text or a dict.

    ``p372_dir`` is the folder of the ITU-R P.372 coefficient files given on
    the command line; the scenario key ``noise.atmospheric.data_dir`` and the
    environment variable SNRGAIN_P372_DIR take precedence over it, in that
    order.  A dict's relative paths start from ``base_dir``; ``label`` names it in messages.  Raises
    :class:`ScenarioError` listing every problem.
    """
    if isinstance(source, dict):
        data, label = source, label or "<dict>"
    else:
        data, label, base_dir = read_source(source)
    problems: list[tuple[str, str]] = []
    try:
        model = ScenarioModel.model_validate(data)
    except ValidationError as exc:
        problems.extend(pydantic_problems(exc, data=data))
        model = None
    if model is not None:
        problems.extend(_unique_names(model))
        n = model.noise
        quiet = n.man_made.environment == "none" and n.atmospheric.model == "none"
        if quiet and not n.galactic.enabled and not n.local:
            problems.append(
                (
                    "noise",
                    "every noise component is off (man-made environment 'none', atmospheric model 'none', galactic "
                    "disabled, no local sources): with no sky noise the SNR is the receiver's alone and the margins "
                    "are infinite; turn at least one on",
                )
            )

    # Antennas are validated by their own families (even when other sections failed).
    site_ground = _raw_ground(data.get("site", {})) if isinstance(data, dict) else "moist loam"
    ref_spec = data.get("reference") if isinstance(data, dict) else None
    freq = model.band.frequency if model else None
    if ref_spec is None:
        height = C_M_PER_S / freq / 4 if freq else 40.0
        ref_spec = {"family": "vertical", "name": "quarter-wave vertical", "height": f"{height:.3f} m"}
    elif isinstance(ref_spec, dict) and "family" not in ref_spec:
        ref_spec = {**ref_spec, "family": "vertical"}
    cand_specs = data.get("candidate", []) if isinstance(data, dict) else []
    specs = [("reference", ref_spec)] + [
        (item_label("candidate", i, s), s) for i, s in enumerate(cand_specs if isinstance(cand_specs, list) else [])
    ]
    antennas: list[Antenna] = []
    wheres: list[str] = []
    chains: list[ChainSection | None] = []
    names = set()
    ref_name = None
    placeable: dict[str, PlaceSection] = {}
    for where, spec in specs:
        own_chain = None
        own_place = None
        if isinstance(spec, dict) and "place" in spec:
            spec = dict(spec)
            raw_place = spec.pop("place")
            if where == "reference":
                problems.append(("reference.place", "the reference stands where it is; only candidates are placed"))
                continue
            try:
                own_place = PlaceSection.model_validate(raw_place)
            except ValidationError as exc:
                problems.extend(pydantic_problems(exc, f"{where}.place", raw_place))
                continue
        if isinstance(spec, dict) and "chain" in spec:
            spec = dict(spec)
            raw_chain = spec.pop("chain")
            try:
                own_chain = ChainSection.model_validate(raw_chain)
            except ValidationError as exc:
                problems.extend(pydantic_problems(exc, f"{where}.chain", raw_chain))
                continue
        try:
            spec2 = (
                _inject_defaults(spec, site_ground=site_ground, base_dir=base_dir) if isinstance(spec, dict) else spec
            )
            ant = build_antenna(spec2, where, freq_hz=freq)
        except SpecError as exc:
            problems.extend(exc.problems)
            continue
        params = ant.params
        if where == "reference" and getattr(params, "steering", None) == "auto" and params.auto_for == "snr":
            problems.append(
                (
                    "reference.auto_for",
                    "the reference cannot be steered for SNR: the site's noise is read on it; "
                    "use auto_for = 'rdf' or 'front_to_back'",
                )
            )
        if where == "reference":
            ref_name = ant.name
        else:
            if not params.name:
                problems.append((f"{where}.name", "every candidate needs a name"))
            elif params.name in names:
                problems.append((f"{where}.name", f"name {params.name!r} is used twice"))
            elif params.name == "reference" or params.name == ref_name:
                problems.append(
                    (
                        f"{where}.name",
                        f"name {params.name!r} is the reference's; give the candidate a name of its own",
                    )
                )
            names.add(params.name)
        antennas.append(ant)
        wheres.append(where)
        chains.append(own_chain)
        if own_place is not None:
            problem = own_place.problem_for(ant)
            if problem:
                problems.append((f"{where}.place", problem))
            placeable[ant.name] = own_place
    problems.extend(_attach_combinations(antennas, wheres))

    tgts = []
    if model is not None:
        for i, t in enumerate(model.target):
            try:
                tgts.append(_target(t, model.site))
            except ValueError as exc:
                problems.append((item_label("target", i, t.model_dump()), str(exc)))
    data_dir = None
    if model is not None and model.noise.atmospheric.needs_data:
        try:
            data_dir = _p372_dir(model, base_dir, p372_dir)
        except ValueError as exc:
            problems.append(("noise.atmospheric", str(exc)))
    receiver = chain = None
    if model is not None:
        try:
            receiver = _receiver(model.receiver, model.band.bandwidth)
            chain = chain_from_section(model.chain, freq_hz=freq, receiver_noise_figure_db=receiver.noise_figure_db)
        except ValueError as exc:
            problems.append(("receiver", str(exc)))
    if model is not None and antennas and not problems:
        problems.extend(_local_sources_clear(model.noise.local, antennas, wheres, model.site))
    if model is not None and antennas and not problems:
        problems.extend(_local_levels_readable(model.noise.local, antennas[0], freq, model.site))
    if problems:
        raise ScenarioError(label, problems)
    weights = np.array([t.weight for t in model.target])
    own = [
        chain_from_section(c, freq_hz=freq, receiver_noise_figure_db=receiver.noise_figure_db)
        if c is not None
        else chain
        for c in chains
    ]
    site = model.site
    default = Times(tuple(model.time.months), tuple(model.time.utc_hours))
    target_times = tuple(
        Times(tuple(t.months or default.months), tuple(t.utc_hours or default.utc_hours)) for t in model.target
    )
    union = Times(
        tuple(sorted({m for tt in target_times for m in tt.months})),
        tuple(sorted({h for tt in target_times for h in tt.utc_hours})),
    )
    u = model.uncertainty
    return Scenario(
        source=label,
        site=Site(
            site.name,
            site.latitude,
            site.longitude,
            make_ground(site.ground),
            None if site.lot is None else tuple(site.lot),
            ground_spread(site.ground),
            tuple((k.name, tuple(k.outline)) for k in site.keep_out),
            site.tx_clearance,
        ),
        band=Band(model.band.frequency, model.band.bandwidth),
        times=union,
        target_times=target_times,
        noise=_noise_settings(model.noise, data_dir, site, antennas[0].params.position or (0.0, 0.0)),
        targets=tuple(tgts),
        target_weights=weights / weights.sum(),
        reference=antennas[0],
        candidates=tuple(antennas[1:]),
        chains=tuple(own),
        chain=chain,
        receiver=receiver,
        nside=nside if nside is not None else model.compute.nside,
        uncertainty=Uncertainty(
            ground=u.ground,
            noise_deciles=u.noise_deciles,
            local_sources=u.local_sources,
            hours=u.hours,
            samples=u.samples,
            seed=u.seed,
            beat_by_db=u.beat_by,
        ),
        max_antennas=model.plan.max_antennas,
        placeable=placeable,
    )


MIN_READING_GAIN = 1e-6
"""Below this gain (-60 dBi) toward a local source, a level read on the reference cannot place the source."""


def _attach_combinations(antennas: list[Antenna], wheres: list[str]) -> list[tuple[str, str]]:
    """Give every combination its two antennas, named by ``antennas`` ("reference" or the reference's name names
    the reference); problems as (path, message)."""
    by_name = {a.name: a for a, w in zip(antennas, wheres) if w != "reference"}
    if antennas and wheres[0] == "reference":
        by_name["reference"] = antennas[0]
        by_name.setdefault(antennas[0].name, antennas[0])
    out = []
    for ant, where in zip(antennas, wheres):
        if not ant.composite:
            continue
        parts = []
        for i, name in enumerate(ant.params.antennas):
            if name not in by_name:
                known = ", ".join(repr(n) for n in by_name)
                out.append((f"{where}.antennas.{i + 1}", f"no antenna named {name!r}; the scenario has {known}"))
            else:
                parts.append(by_name[name])
        if len(parts) == 2:
            try:
                ant.attach(parts)
            except SpecError as exc:
                out.extend((f"{where}.{p}", m) for p, m in exc.problems)
    return out


def _local_levels_readable(
    local: list[LocalSource], reference: Antenna, freq_hz: float, site: SiteSection
) -> list[tuple[str, str]]:
    """A local source's level read on the reference antenna needs that antenna to receive from the source's
    directions (the check the sky builder would fail on later); a placed source must stand clear of it."""
    from noisemodels.sky import compact_source_directions

    out = []
    ref_m = reference.params.position or (0.0, 0.0)
    for i, raw in enumerate(local):
        where = f'noise.local {i + 1} ("{raw.name}")'
        src = _local_source(raw, site, ref_m)
        if raw.level is None:
            continue
        if src.position_m is not None:
            from snrgain import placed

            if not placed.hears(reference, src, freq_hz, ref_m):
                out.append(
                    (
                        f"{where}.level",
                        f"the reference antenna ({reference.family}) picks up nothing of a {src.polarisation} "
                        "source where it stands, so a level read on it cannot be placed; give the level as fa, "
                        "or the polarisation the reference hears",
                    )
                )
            continue
        d = compact_source_directions(src.bearing_rad, src.elevation_rad, src.spread_rad)
        if not np.any(reference.gain_linear(freq_hz, d.azimuth_rad, d.elevation_rad) > MIN_READING_GAIN):
            out.append(
                (
                    f"{where}.level",
                    f"the reference antenna receives nothing from bearing {np.degrees(src.bearing_rad):g} deg, "
                    f"elevation {np.degrees(src.elevation_rad):g} deg, so a level read on it cannot be placed; "
                    "give the level as fa instead",
                )
            )
    return out


MIN_SOURCE_GAP_M = 1.0
"""The least distance on the plan between a placed noise source and any antenna's feed point, wire or element [m]:
closer, its direction and field at the antenna are not defined."""


def _antenna_outline(antenna, reference_m) -> list[np.ndarray]:
    """Where an antenna stands on the plan: its points and, for a long wire, the segment of its wire [m]."""
    pos = getattr(antenna, "positions", None)
    if pos is not None and len(pos):
        pts = np.asarray(pos, dtype=float)
        return [p for p in pts] + [pts.mean(axis=0)]
    p = antenna.params.position
    p = np.asarray(reference_m if p is None else p, dtype=float)
    if antenna.long_wire:
        b = antenna.bearing_rad
        return [np.array([p, p + antenna.length_m * np.array([np.sin(b), np.cos(b)])])]
    return [p]


def _gap_m(point: np.ndarray, shape: np.ndarray) -> float:
    """Distance on the plan from a point to a point or a segment (2 x 2) [m]."""
    if shape.ndim == 1:
        return float(np.hypot(*(point - shape)))
    a, b = shape
    ab = b - a
    t = float(np.clip(np.dot(point - a, ab) / max(float(np.dot(ab, ab)), 1e-300), 0.0, 1.0))
    return float(np.hypot(*(point - (a + t * ab))))


def _local_sources_clear(local: list[LocalSource], antennas, wheres, site: SiteSection) -> list[tuple[str, str]]:
    """Every placed source stands at least :data:`MIN_SOURCE_GAP_M` from every antenna (feed point, wire, element):
    the field model needs a distance and the reading a direction."""
    out = []
    ref_m = antennas[0].params.position or (0.0, 0.0)
    for i, raw in enumerate(local):
        if raw.bearing is not None:
            continue
        src = _local_source(raw, site, ref_m)
        point = np.asarray(src.position_m, dtype=float)
        for ant, where in zip(antennas, wheres):
            if ant.composite:
                continue
            gaps = []
            for shape in _antenna_outline(ant, ref_m):
                gap = _gap_m(point, shape)
                if shape.ndim == 2 and hasattr(ant, "wire_height_m"):  # along a wire: the distance in space
                    gap = float(np.hypot(gap, ant.wire_height_m() - src.height_m))
                gaps.append(gap)
            gap = min(gaps)
            if gap < MIN_SOURCE_GAP_M:
                key = "position" if raw.position is not None else "latitude"
                out.append(
                    (
                        f'noise.local {i + 1} ("{raw.name}").{key}',
                        f"the source stands {gap:.2f} m from "
                        f"{where if where != 'reference' else f'the reference ({ant.name!r})'}; place it at least "
                        f"{MIN_SOURCE_GAP_M:g} m away from every antenna's feed point, wire and elements",
                    )
                )
                break
    return out


def _unique_names(model: ScenarioModel) -> list[tuple[str, str]]:
    """Targets, local sources and keep-out areas each need names of their own (results are labelled by them)."""
    out = []
    groups = [
        ("target", [t.name for t in model.target]),
        ("noise.local", [s.name for s in model.noise.local]),
        ("site.keep_out", [k.name for k in model.site.keep_out]),
    ]
    for key, names in groups:
        seen: dict[str, int] = {}
        for i, name in enumerate(names):
            if not name.strip():
                out.append((f"{key} {i + 1}.name", "a name must not be empty"))
            elif name in seen:
                out.append(
                    (
                        f'{key} {i + 1} ("{name}").name',
                        f"name {name!r} is already used by {key} {seen[name] + 1}; give each its own name",
                    )
                )
            else:
                seen[name] = i
    return out


def _receiver(r: Receiver, bandwidth_hz: float) -> rx.Receiver:
    if r.noise_floor is not None:
        nf = float(rx.noise_figure_from_floor_db(r.noise_floor, bandwidth_hz=bandwidth_hz))
    else:
        nf = r.noise_figure if r.noise_figure is not None else rx.DEFAULT_NOISE_FIGURE_DB
    return rx.Receiver(nf, r.margin_target)


def _sector(sec: Sector | None) -> noisemod.Sector | None:
    return None if sec is None else noisemod.Sector(sec.start, sec.stop, sec.contrast)


def _local_source(src: LocalSource, site: SiteSection, reference_m) -> noisemod.LocalSource:
    """A resolved local source: a placed one gets its plan position and its bearing from the reference."""
    if not src.placed:
        return noisemod.LocalSource(
            src.name, src.bearing, src.elevation, src.spread, src.fa, src.level, src.uncertainty
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
        measured_at_m=None if src.measured_at is None else tuple(float(x) for x in src.measured_at),
    )


def _noise_settings(
    n: Noise, data_dir: Path | None, site: SiteSection | None = None, reference_m=(0.0, 0.0)
) -> noisemod.NoiseSettings:
    mm, at, gal = n.man_made, n.atmospheric, n.galactic
    return noisemod.NoiseSettings(
        man_made=None
        if mm.environment == "none"
        else noisemod.ManMadeNoise(mm.environment, mm.elevation_scale, _sector(mm.sector)),
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
            sector=_sector(at.sector),
            layer_height_m=at.layer_height,
        ),
        galactic=None
        if not gal.enabled
        else noisemod.GalacticNoise(gal.critical_frequency_day, gal.critical_frequency_night, gal.layer_height),
        local=tuple(_local_source(src, site, reference_m) for src in n.local),
        p372_dir=data_dir,
    )


def _p372_dir(model: ScenarioModel, base_dir: Path | None, option) -> Path:
    """Resolve and check the P.372 data folder: scenario key, then $SNRGAIN_P372_DIR, then the option."""
    import os

    from noisemodels import p372_maps

    key = model.noise.atmospheric.data_dir
    if key is not None:
        p = Path(key).expanduser()
        chosen = p if p.is_absolute() or base_dir is None else base_dir / p
    elif os.environ.get(p372_maps.ENV_VAR):
        chosen = Path(os.environ[p372_maps.ENV_VAR])
    elif option is not None:
        chosen = Path(option)
    else:
        raise p372_maps.P372DataError(
            "P.372 atmospheric noise is asked for, but no data folder is set. " + p372_maps.HOW_TO_GET
        )
    for month in model.time.months:
        p372_maps.load_month(month, chosen)  # raises naming the file and section at fault
    return chosen


def _read(source) -> tuple[str, str, Path | None]:
    looks_like_path = (
        isinstance(source, str)
        and "\n" not in source
        and "=" not in source
        and (source.endswith(".toml") or Path(source).exists())
    )
    if isinstance(source, Path) or looks_like_path:
        path = Path(source)
        return read_text_file(path), str(path), path.resolve().parent
    if isinstance(source, str):
        return source, "<text>", None
    raise ScenarioError("<input>", [("", f"a scenario is a path, TOML text or a dict; got {type(source).__name__}")])


MAX_FILE_BYTES = 5_000_000
"""The largest scenario or readings file read [bytes]."""


def read_text_file(path: Path) -> str:
    """The UTF-8 text of a scenario or readings file; ScenarioError if unreadable, too large or not UTF-8."""
    from snrgain.files import InputFileError, read_limited

    try:
        raw = read_limited(path, limit_bytes=MAX_FILE_BYTES, what="file")
    except InputFileError as exc:
        raise ScenarioError(str(path), [("", str(exc).removeprefix(f"{path}: "))]) from None
    return decode_text(raw, str(path))


def decode_text(raw: bytes, label: str) -> str:
    """UTF-8 text of a file; ScenarioError naming the line and column of the first byte that is not UTF-8."""
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        col = exc.start - (raw.rfind(b"\n", 0, exc.start) + 1) + 1
        raise ScenarioError(
            label,
            [("", f"line {line}, column {col}: byte 0x{raw[exc.start]:02x} is not UTF-8 text; save the file as UTF-8")],
        ) from None


def _target(t: Target, site: SiteSection) -> targetmod.TargetDirections:
    if t.bearing is not None:
        return targetmod.from_bearing(
            t.name, bearing_rad=t.bearing, elevation_lo_rad=t.elevation[0], elevation_hi_rad=t.elevation[1]
        )
    return targetmod.from_place(
        t.name,
        site_lat_deg=site.latitude,
        site_lon_deg=site.longitude,
        lat_deg=t.latitude,
        lon_deg=t.longitude,
        layer_height_m=t.layer_height,
        min_elevation_rad=t.min_elevation,
    )
