"""A candidate's ``feed_line`` table: its coax's run from the antenna to the station and how its shield is isolated.

    feed_line = { to = [east, north], height = "1 m", cable = "RG-6", choke = "5000 ohm" }

``to``: the station entry on the site plan (the scenario's length unit); the run goes straight there from the
antenna's feed point.  ``height``: the run's height above the soil, or "buried" (``depth``, default 0.15 m).
``cable``: the coax (its braid and jacket sizes; snrgain.physics.feedline.CABLES).  ``choke``: a common-mode
choke's resistance at the antenna end [ohm], leave it out for none.  ``isolation``: "shared-ground" (the shield
joins the antenna's ground, the default) or "transformer" (separate windings; ``interwinding_pf``, the capacitance
between them, default 20 pF).  The shield ends at ``[site] station_ground``.  The physics: snrgain.physics.feedline.
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field, ValidationError, model_validator

from snrgain.antennas.base import pydantic_problems
from snrgain.fields import PlanPoint, StrictModel, quantity
from snrgain.physics import feedline as phys

FEED_LINE_KEY = "feed_line"


class FeedLineSection(StrictModel):
    to: PlanPoint
    """The station entry [east, north] on the site plan."""
    height: quantity("length", ge=0.05, le=10.0) | Literal["buried"]
    """The run's height above the soil, or "buried"."""
    depth: quantity("length", ge=0.02, le=1.0) | None = None
    """A buried run's depth (default 0.15 m)."""
    cable: Literal[tuple(phys.CABLES)] = "RG-6"
    choke: quantity("resistance", gt=0.0, le=1e6) | None = None
    """A common-mode choke's resistance at the antenna end [ohm]; leave it out for none."""
    isolation: Literal[phys.ISOLATIONS] = "shared-ground"
    interwinding_pf: float | None = Field(default=None, gt=0.0, le=1000.0)
    """An isolation transformer's interwinding capacitance [pF] (default 20 pF)."""

    @model_validator(mode="after")
    def _consistent(self):
        if self.depth is not None and self.height != "buried":
            raise ValueError(f"depth is for a buried run (height = 'buried'); got height {self.height!r} m")
        if self.interwinding_pf is not None and self.isolation != "transformer":
            raise ValueError("interwinding_pf is for isolation = 'transformer'")
        return self

    def resolved(self, start_m, station_ground_ohm: float) -> phys.FeedLine:
        """The SI feed line from ``start_m`` (the antenna's feed point)."""
        braid, jacket = phys.CABLES[self.cable]
        return phys.FeedLine(
            start_m=(float(start_m[0]), float(start_m[1])),
            end_m=(float(self.to[0]), float(self.to[1])),
            height_m=None if self.height == "buried" else float(self.height),
            braid_radius_m=braid / 2,
            jacket_radius_m=jacket / 2,
            station_ground_ohm=float(station_ground_ohm),
            choke_ohm=self.choke,
            isolation=self.isolation,
            interwinding_f=phys.INTERWINDING_F if self.interwinding_pf is None else self.interwinding_pf * 1e-12,
            depth_m=phys.BURIED_DEPTH_M if self.depth is None else float(self.depth),
        )


def take_feed_line(spec, where: str):
    """(the antenna's table without its ``feed_line``, the FeedLineSection or None, problems)."""
    if not isinstance(spec, dict) or FEED_LINE_KEY not in spec:
        return spec, None, []
    spec = dict(spec)
    raw = spec.pop(FEED_LINE_KEY)
    if where == "reference":
        return (
            spec,
            None,
            [
                (
                    f"reference.{FEED_LINE_KEY}",
                    "the site's noise is read on the reference as it stands; give feed lines to candidates",
                )
            ],
        )
    try:
        return spec, FeedLineSection.model_validate(raw), []
    except ValidationError as exc:
        return spec, None, pydantic_problems(exc, f"{where}.{FEED_LINE_KEY}", raw)


def resolve_feed_lines(
    sections: dict, antennas, wheres, site, reference_m, freq_hz: float, station_ground_ohm: float, placeable=()
) -> tuple[dict, list]:
    """name -> snrgain.physics.feedline.FeedLine for each antenna whose table gave a feed line (``sections``: where
    -> FeedLineSection), ending at the station ground ([site] station_ground), and the problems: an antenna that
    takes no feed line (snrgain.model.feedline.end_kind: what its end is, not worked out here), one without a
    position, a run shorter than 1 m, a run that leaves the lot (``site.lot_m``, a resolved Site).  ``freq_hz``: the
    band's (the ends themselves are worked out at it later); ``placeable``: the names of the candidates with a place
    table (said in the missing position's problem)."""
    from snrgain.model.feedline import end_kind, feed_point

    out, problems = {}, []
    for ant, where in zip(antennas, wheres):
        sec = sections.get(where)
        if sec is None:
            continue
        field = f"{where}.{FEED_LINE_KEY}"
        try:
            start = feed_point(ant, reference_m)
        except ValueError as exc:
            text = str(exc).removeprefix("position: ")
            if ant.name in placeable:  # 'snrgain layout' moves it, but rank and the plan need a start
                text += " (with a place table too: where it stands until 'snrgain layout' places it)"
            problems.append((f"{where}.position", text))
            continue
        try:
            end_kind(ant)
            fl = sec.resolved(start, station_ground_ohm)
        except ValueError as exc:
            problems.append((field, str(exc)))
            continue
        if site.lot_m is not None:
            problem = _leaves_lot(fl, site.lot_m, site.length_unit)
            if problem:
                problems.append((f"{field}.to", problem))
                continue
        out[ant.name] = fl
    return out, problems


def _leaves_lot(fl: phys.FeedLine, lot_m, unit: str) -> str | None:
    from shapely.geometry import LineString, Polygon

    from snrgain.units import length_text

    lot = Polygon(lot_m)
    run = LineString([fl.start_m, fl.end_m])
    if lot.buffer(1e-6).covers(run):
        return None
    outside = run.difference(lot).length
    a, b = fl.start_m, fl.end_m
    return (
        f"the run from the antenna ({length_text(a[0], unit, 1)}, {length_text(a[1], unit, 1)}) to the station "
        f"entry ({length_text(b[0], unit, 1)}, {length_text(b[1], unit, 1)}) leaves the lot for "
        f"{length_text(outside, unit, 1)}; a feed line runs on the lot"
    )
