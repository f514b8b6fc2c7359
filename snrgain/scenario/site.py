"""[site]: where the station is, its ground, its lot and the areas no antenna may enter; the resolved Site."""

from __future__ import annotations

from dataclasses import dataclass

from pydantic import Field, TypeAdapter, ValidationError, model_validator

from snrgain.fields import (
    GroundField,
    Latitude,
    Longitude,
    PlanPoint,
    StrictModel,
    ground_spread,
    make_ground,
    quantity,
)
from snrgain.physics.ground import Ground, GroundSpread


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
        from snrgain.decide.lot import polygon

        if self.lot is not None:
            polygon(self.lot, "lot")
        for k in self.keep_out:
            polygon(k.outline, f"keep_out {k.name!r}")
        return self


@dataclass(frozen=True)
class Site:
    """Where the station is: name, place [deg], ground (None: perfect) and how uncertain it is, lot outline
    [m east, m north].

    Written by hand, not derived from :class:`SiteSection`: it resolves the section (one ``ground`` key becomes a
    Ground and its spread; outlines become tuples of plan points; keep-out tables become (name, outline) pairs)
    and names each value with its unit, as the lot checks, layout and the spreads read them."""

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

    @classmethod
    def of(cls, site: SiteSection) -> Site:
        """The resolved site of a validated [site] section."""
        return cls(
            site.name,
            site.latitude,
            site.longitude,
            make_ground(site.ground),
            None if site.lot is None else tuple(site.lot),
            ground_spread(site.ground),
            tuple((k.name, tuple(k.outline)) for k in site.keep_out),
            site.tx_clearance,
        )


def raw_ground(site) -> str | dict | None:
    """The site's ground as written, for antennas that give none; None if unusable (reported elsewhere)."""
    g = site.get("ground", "moist loam") if isinstance(site, dict) else "moist loam"
    if not isinstance(g, (str, dict)):
        return None
    try:  # a bad ground is reported once, under site.ground, not again for every antenna that inherits it
        TypeAdapter(GroundField).validate_python(g)
    except (ValidationError, ValueError):
        return None
    return g
