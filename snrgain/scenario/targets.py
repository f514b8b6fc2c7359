"""[[target]]: the stations listened for, by bearing and elevations or by place, and their directions."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
from pydantic import Field, field_validator, model_validator

from snrgain.antennas.base import item_label
from snrgain.fields import Bearing, Elevation, Latitude, Longitude, Name, StrictModel, make_ground, quantity
from snrgain.physics import targets as targetmod
from snrgain.problems import toml_repr

from .times import Hours, Months

if TYPE_CHECKING:
    from .model import ScenarioModel
    from .site import SiteSection

MIN_BAND_RAD = float(np.radians(1.0))
"""The narrowest band of target elevations [rad]."""
MAX_MIN_ELEVATION_RAD = float(np.radians(45.0))
"""The highest lowest-arrival angle of a target by place [rad]: higher, the hop geometry has no path."""


class Target(StrictModel):
    name: Name
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
    bands: list[str] | None = Field(default=None, min_length=1, max_length=12)
    """The names of the bands this target is listened on (``[[band]]``; default: every band)."""

    @field_validator("elevation", mode="before")
    @classmethod
    def _range(cls, v):
        if v is None:
            return v
        if not isinstance(v, list) or len(v) != 2:
            raise ValueError(f"elevation is a range [low, high] in degrees, e.g. [5, 25]; got {toml_repr(v)}")
        return v

    @field_validator("elevation")
    @classmethod
    def _low_first(cls, v):
        if v is not None and v[1] < v[0]:
            hi, lo = (f"{np.degrees(x):.6g}" for x in v)
            raise ValueError(
                f"the range [{hi}, {lo}] deg is reversed (high end first); write [low, high]: [{lo}, {hi}]"
            )
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
        given = [k for k in ("layer_height", "min_elevation") if k in self.model_fields_set]
        if by_bearing and given:
            raise ValueError(
                f"{' and '.join(given)} {'go' if len(given) > 1 else 'goes'} with a target by latitude and longitude "
                "(its arrival angles worked from the path); a target by bearing gives them as elevation = [low, high]"
            )
        if by_place and self.elevation is not None:
            raise ValueError(
                "elevation goes with a target by bearing; a target by latitude and longitude has its arrival angles "
                "worked from the path (layer_height, min_elevation)"
            )
        if self.elevation is not None and self.elevation[1] - self.elevation[0] < MIN_BAND_RAD * (1 - 1e-9):
            raise ValueError(
                f"elevation range {[round(float(np.degrees(x)), 3) for x in self.elevation]} deg has no "
                "width; give [low, high] at least 1 deg apart, e.g. [5, 25]"
            )
        return self


def resolve_target(t: Target, site: SiteSection, freq_hz: float | None = None) -> targetmod.TargetDirections:
    """A target's directions; one by place within the ground-wave range at ``freq_hz`` over the site's ground (its
    middle) is refused (snrgain.physics.targets; without ``freq_hz``, within 1 km)."""
    if t.bearing is not None:
        return targetmod.from_bearing(
            t.name, bearing_rad=t.bearing, elevation_lo_rad=t.elevation[0], elevation_hi_rad=t.elevation[1]
        )
    near = None
    if freq_hz is not None:
        near = targetmod.ground_wave(freq_hz, make_ground(site.ground), t.layer_height)
    return targetmod.from_place(
        t.name,
        site_lat_deg=site.latitude,
        site_lon_deg=site.longitude,
        lat_deg=t.latitude,
        lon_deg=t.longitude,
        layer_height_m=t.layer_height,
        min_elevation_rad=t.min_elevation,
        near=near,
    )


def resolve_targets(model: ScenarioModel) -> tuple[list[targetmod.TargetDirections], list[tuple[str, str]]]:
    """Each target's directions, and the problems of those that have none (no hop path, ...)."""
    tgts, problems = [], []
    for i, t in enumerate(model.target):
        try:
            tgts.append(resolve_target(t, model.site, model.band.frequency))
        except ValueError as exc:
            problems.append((item_label("target", i, t.model_dump()), str(exc)))
    return tgts, problems
