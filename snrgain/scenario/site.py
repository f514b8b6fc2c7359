"""[site]: where the station is, its ground, its lot and the areas no antenna may enter; the resolved Site."""

from __future__ import annotations

import copy
import re
from typing import Annotated, Literal

import numpy as np
from pydantic import BeforeValidator, Discriminator, Field, Tag, TypeAdapter, ValidationError, model_validator

from snrgain.fields import (
    GroundField,
    Latitude,
    Longitude,
    Name,
    PlanPoint,
    StrictModel,
    ground_spread,
    make_ground,
    quantity,
)
from snrgain.physics.ground import Ground, GroundSpread
from snrgain.problems import toml_repr
from snrgain.records import record
from snrgain.scenario.structures import Structure, check_detuning


def _latlon_checked(value):
    return latlon_pair(value)


LatLonPair = Annotated[tuple[float, float], BeforeValidator(_latlon_checked)]
"""A WGS-84 point: [latitude, longitude] in degrees (north and east positive) or "51.2345 N, 0.5678 W"."""


class LatLonPoints(StrictModel):
    """An outline by latitude and longitude, ``{ latlon = [[lat, lon], ...] }``: plan points (:func:`plan_point_of`)."""

    latlon: list[LatLonPair] = Field(min_length=3, max_length=1000)


def _outline_form(value) -> str:
    return "latlon" if isinstance(value, (dict, LatLonPoints)) else "plan"


Outline = Annotated[
    Annotated[list[PlanPoint], Tag("plan")] | Annotated[LatLonPoints, Tag("latlon")], Discriminator(_outline_form)
]
"""An outline's corners in order around the edge: [east, north] plan points, or { latlon = [[lat, lon], ...] }."""


class KeepOut(StrictModel):
    name: Name
    outline: Outline
    """Corners [east, north] on the site plan (or { latlon = [...] }), in order around the edge."""


class SiteSection(StrictModel):
    name: Name = "unnamed site"
    latitude: Latitude
    longitude: Longitude
    ground: GroundField = "moist loam"
    lot: Outline | None = None
    """The lot's outline: [east, north] corners or { latlon = [...] } (plan view, placement checks, layout)."""
    keep_out: list[KeepOut] = Field(default_factory=list, max_length=64)
    """Areas no antenna may enter: the house, a road, the transmitting vertical's radial field."""
    transmitting: str | None = Field(default=None, min_length=1, max_length=120)
    """The antenna that is the station's TX vertical (default: the reference if a vertical; "none": off the plan)."""
    tx_clearance: quantity("length", ge=0.0, le=2000.0) | None = None
    """How far receiving antennas must stay from the TX vertical [m], when given (else snrgain.model.scatter)."""
    tx_state: Literal["resonant", "detuned"] = "resonant"
    """The TX vertical while receiving: on its feed, or detuned (relay open, or tx_detune_reactance)."""
    tx_detune_reactance: quantity("resistance", ge=-100000.0, le=100000.0) | None = None
    """The detuning reactance across the vertical's base when detuned [ohm] (None: the feed open)."""
    structures: list[Structure] = Field(default_factory=list, max_length=16)
    """Nearby structures that re-radiate: towers, other verticals."""
    station_ground: quantity("resistance", gt=0.0, le=10000.0) = 25.0  # to earth; feed lines' shields end there
    units: Literal["m", "ft"] | None = None
    """The unit lengths are shown in (terminal, report, build sheet, layout); default: the unit the file's lengths
    mostly use (snrgain.units.length_unit_of).  Inside, and in JSON, lengths stay in metres."""

    @model_validator(mode="after")
    def _outlines(self):
        from snrgain.decide.lot import polygon

        check_detuning(self.tx_state, self.tx_detune_reactance)
        if self.lot is not None:
            polygon(self.plan_outline(self.lot, "lot"), "lot")
        for k in self.keep_out:
            polygon(self.plan_outline(k.outline, f"keep_out {k.name!r}"), f"keep_out {k.name!r}")
        return self

    def plan_outline(self, outline, what: str = "outline") -> tuple[tuple[float, float], ...]:
        """An outline's corners on the plan [m east, m north]: as written, or from latitude and longitude;
        ValueError naming ``what`` when it has too few corners or lies too far from the site."""
        if isinstance(outline, LatLonPoints):
            pts = [plan_point_of(lat, lon, self.latitude, self.longitude) for lat, lon in outline.latlon]
            far = max(float(np.hypot(*p)) for p in pts)
            if far > MAX_LATLON_DISTANCE_M:
                raise ValueError(
                    f"{what}: a corner lies {far / 1e3:.1f} km from the site's latitude and longitude; a place on "
                    f"the plan lies within {MAX_LATLON_DISTANCE_M / 1e3:g} km of it"
                )
            return tuple(pts)
        if len(outline) < 3:
            raise ValueError(f"{what}: an outline needs at least 3 corners; got {len(outline)}")
        return tuple(outline)


@record
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
    """How far receiving antennas must stay from the TX vertical [m]; None: the cost computed (model.scatter)."""
    length_unit: str = "m"
    """The unit the scenario's lengths are shown in ("m" or "ft"): the file's (snrgain.units.length_unit_of)."""
    tx_state: str = "resonant"
    tx_detune_reactance_ohm: float | None = None
    """The TX vertical while receiving ("resonant" or "detuned") and its detuning reactance [ohm] (None: open)."""
    structures: tuple = ()
    """Nearby structures that re-radiate (validated [site] structures entries, SI)."""

    @classmethod
    def of(cls, site: SiteSection, length_unit: str | None = None) -> Site:
        """The resolved site of a [site] section (``length_unit``: the file's, else the section's or metres)."""
        return cls(
            site.name,
            site.latitude,
            site.longitude,
            make_ground(site.ground),
            None if site.lot is None else site.plan_outline(site.lot),
            ground_spread(site.ground),
            tuple((k.name, site.plan_outline(k.outline)) for k in site.keep_out),
            site.tx_clearance,
            length_unit or site.units or "m",
            site.tx_state,
            site.tx_detune_reactance,
            tuple(site.structures),
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


# ---- places given by latitude and longitude ----------------------------------------------------------------------

LATLON_KEY = "latlon"
"""``lot = { latlon = [[lat, lon], ...] }``, ``outline = { latlon = [...] }``, ``position = { latlon = [lat, lon] }``,
``positions = { latlon = [[lat, lon], ...] }``: WGS-84 degrees, north and east positive, or strings such as
"51.2345 N, 0.5678 W"; turned into metres east and north of the site's latitude and longitude."""
_HEMISPHERE = re.compile(
    r"^\s*([0-9]+(?:\.[0-9]*)?)\s*(?:deg|\u00b0)?\s*([NSns])\s*[,;]?\s*([0-9]+(?:\.[0-9]*)?)\s*(?:deg|\u00b0)?\s*([EWew])\s*$"
)
_SIGNED = re.compile(r"^\s*([-+]?[0-9]+(?:\.[0-9]*)?)\s*[,;]\s*([-+]?[0-9]+(?:\.[0-9]*)?)\s*$")
LATLON_EXAMPLE = '[51.2345, -0.5678] or "51.2345 N, 0.5678 W"'


def latlon_pair(value) -> tuple[float, float]:
    """(latitude, longitude) [deg] of ``[lat, lon]`` or a string "51.2345 N, 0.5678 W" / "51.2345, -0.5678";
    ValueError naming what is allowed."""
    from snrgain.units import QuantityError, normalise_text

    lat = lon = None
    if isinstance(value, str):
        try:
            text = normalise_text(value, "a latitude and longitude")
        except QuantityError as exc:
            raise ValueError(str(exc)) from None
        m = _HEMISPHERE.match(text)
        if m:
            lat = float(m.group(1)) * (1 if m.group(2).upper() == "N" else -1)
            lon = float(m.group(3)) * (1 if m.group(4).upper() == "E" else -1)
        else:
            m = _SIGNED.match(text)
            if m:
                lat, lon = float(m.group(1)), float(m.group(2))
    elif isinstance(value, (list, tuple)) and len(value) == 2:
        if all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in value):
            lat, lon = float(value[0]), float(value[1])
    if lat is None or lon is None or lat != lat or lon != lon:
        raise ValueError(f"expected a latitude and longitude such as {LATLON_EXAMPLE}; got {toml_repr(value)}")
    if not (-90.0 <= lat <= 90.0 and -180.0 <= lon <= 360.0):
        raise ValueError(f"latitude must lie within -90..90 and longitude -180..360 degrees; got {toml_repr(value)}")
    return lat, lon


MAX_LATLON_DISTANCE_M = 10_000.0
"""A place given by latitude and longitude lies within this of the site [m] (the plan's extent)."""


def plan_point_of(lat_deg: float, lon_deg: float, site_lat_deg: float, site_lon_deg: float) -> tuple[float, float]:
    """Metres east and north of the site of a WGS-84 point: its distance and initial bearing from the site along the
    geodesic (the same geodesic as placed noise sources and targets, snrgain.physics.targets.geodesic): an azimuthal
    equidistant plan about the site, which over a lot differs from any local map grid by far less than 0.1 m."""
    from snrgain.physics.targets import geodesic

    bearing, dist = geodesic(site_lat_deg, site_lon_deg, lat_deg, lon_deg)
    return float(dist * np.sin(bearing)), float(dist * np.cos(bearing))


def _site_place(data) -> tuple[float, float] | None:
    site = data.get("site") if isinstance(data, dict) else None
    if not isinstance(site, dict):
        return None
    try:
        return (
            TypeAdapter(Latitude).validate_python(site.get("latitude")),
            TypeAdapter(Longitude).validate_python(site.get("longitude")),
        )
    except (ValidationError, ValueError):
        return None  # reported under site.latitude / site.longitude


def _converted(value, where: str, site_ll, single: bool, problems: list):
    """A ``{ latlon = ... }`` value as plan points [m]; the value unchanged when it is not one."""
    if not (isinstance(value, dict) and LATLON_KEY in value):
        return value
    if set(value) != {LATLON_KEY}:
        problems.append((where, f"a place {{ {LATLON_KEY} = ... }} takes no other key; got {toml_repr(value)}"))
        return value
    raw = value[LATLON_KEY]
    items = [raw] if single else raw
    if not single and not isinstance(raw, list):
        problems.append((f"{where}.{LATLON_KEY}", f"expected a list of points such as [{LATLON_EXAMPLE}]"))
        return value
    out = []
    for i, item in enumerate(items):
        try:
            lat, lon = latlon_pair(item)
        except ValueError as exc:
            problems.append((f"{where}.{LATLON_KEY}" + ("" if single else f" {i + 1}"), str(exc)))
            continue
        e, n = plan_point_of(lat, lon, *site_ll)
        if max(abs(e), abs(n)) > MAX_LATLON_DISTANCE_M:
            problems.append(
                (
                    f"{where}.{LATLON_KEY}" + ("" if single else f" {i + 1}"),
                    f"({lat:g}, {lon:g}) lies {np.hypot(e, n) / 1e3:.1f} km from the site's latitude and longitude; "
                    f"a place on the plan lies within {MAX_LATLON_DISTANCE_M / 1e3:g} km of it",
                )
            )
            continue
        out.append([e, n])
    return out[0] if single and out else out if len(out) == len(items) else value


def plan_from_latlon(data) -> tuple[object, list[tuple[str, str]]]:
    """The raw scenario with the antennas' places given by latitude and longitude (``position = { latlon = [lat,
    lon] }``, ``positions = { latlon = [...] }``) turned into metres east and north of the site
    (:func:`plan_point_of`), and the problems found (the lot and keep-outs are [site]'s own: :class:`SiteSection`).
    A scenario with none is returned as it is (and nothing imports the geodesic)."""
    from snrgain.antennas.base import item_label

    def tables(d):
        cands = d.get("candidate")
        return [("reference", d.get("reference"))] + [
            (item_label("candidate", i, c), c) for i, c in enumerate(cands if isinstance(cands, list) else [])
        ]

    def by_latlon(t) -> bool:
        return isinstance(t, dict) and any(isinstance(t.get(k), dict) for k in ("position", "positions"))

    if not isinstance(data, dict) or not any(by_latlon(t) for _, t in tables(data)):
        return data, []
    site_ll = _site_place(data)
    if site_ll is None:
        return data, [("site", f"places given by {LATLON_KEY} need the site's latitude and longitude")]
    data = copy.deepcopy(data)
    problems: list = []
    for where, t in tables(data):
        if isinstance(t, dict):
            if "position" in t:
                t["position"] = _converted(t["position"], f"{where}.position", site_ll, True, problems)
            if "positions" in t:
                t["positions"] = _converted(t["positions"], f"{where}.positions", site_ll, False, problems)
    return data, problems
