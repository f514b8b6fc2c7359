"""The lot: where each antenna lies on the plan, and what it runs into (shapely geometry).

Footprints on the site plan [m east, m north]:

- long wires (beverage, unterminated, bog, two-wire): the line from the feed
  point (``position``) along the bearing for the wire's length;
- arrays: their elements' positions; loops and verticals: their position;
- antennas without a position, and combinations (their parts are checked),
  have none.

Checks, each a :class:`snrgain.model.results.Notice` (a warning, not an error: a
builder may know better): an antenna leaving the lot, one entering a
keep-out area (the house, a road, the transmitting vertical's radial
field), two wires crossing, a receiving antenna within ``tx_clearance`` of
the transmitting vertical (the reference, when it is a vertical, at its
position or else at the plan's origin when the site has a lot: the user's
clearance for every antenna; without one, half a wavelength only for the
antennas whose coupling to the vertical is not computed, the others' cost
being computed by snrgain.model.scatter), a receiving antenna within the
clearance of a ``[site] structures`` entry (:func:`structure_clearance_m`: its
``clearance``, else its height and at least 10 m: guy anchors), a candidate's feed line whose run
passes within the clearance the user gives (while transmitting its shield
sits in the vertical's strongest field), and a
placed noise source inside a keep-out area (a house is where sources often
are: it is said, not refused), and plan points that look like a latitude and
longitude written as metres (``[51.4012, -0.1203]`` at a site at 51.40 N,
0.12 W: a corner of an outline, or an antenna's position, within
:data:`LATLON_LIKE_DEG` of the site's latitude and longitude, either way round,
with decimals, or every corner of an outline so: a real plan's corners do not
all fit in a metre).  A lot or keep-out outline that crosses
itself is an input error.

An antenna within 10 m on the plan of a placed noise source 5 m or more up (which may be an overhead power
line) is told the caution of the trade below (``near-raised-source``).

Cautions of the trade: keep wires well clear of power lines (never run a
wire where it could fall onto one, or one onto it); call the utilities'
locating service before driving ground rods; a wire on or near the ground is
a trip hazard to people and animals: mark it.  Follow local codes and
licensed practice for anything that connects to mains or lightning
protection.  A tower is guyed, climbed and worked on: keep wires off its guys
and anchors and out of a climber's way, as the tower's installation
instructions and local codes set them.
"""

from __future__ import annotations

import functools
import re

import numpy as np

from snrgain.model.notices import Notice
from snrgain.physics.ground import C_M_PER_S

OFF_LOT_TOLERANCE_M = 0.1
"""Beyond the lot by less than this [m] is on it (positions written to 0.1 m)."""
DEFAULT_TX_CLEARANCE_WAVELENGTHS = 0.5
"""Default distance to keep receiving antennas from a resonant transmitting vertical: half a wavelength (common
practice; closer, detune the vertical while receiving)."""


STRUCTURE_CLEARANCE_HEIGHTS = 1.0
"""Default distance to keep every antenna from a structure's foot, in the structure's heights: a guyed tower's anchors
commonly stand 60-80 % of its height from its foot (common practice), so an antenna a height away stands beyond
its guys and anchors."""
LEAST_STRUCTURE_CLEARANCE_M = 10.0
"""The default clearance from a structure is never less than this [m]: a structure's computed re-radiation
(snrgain.model.scatter) is checked against NEC-2 from 10 m out, not closer."""


LATLON_LIKE_DEG = 0.5
"""A plan point [m] within this of the site's (latitude, longitude) [deg], either way round, looks like one."""


def _latlon_like(points, site) -> tuple[float, float] | None:
    """The first point (east, north) [m] that looks like the site's (latitude, longitude), or (longitude, latitude),
    written as metres: within :data:`LATLON_LIKE_DEG` of it, and either every point of the outline does, or that
    point is not whole numbers (GPS numbers carry decimals; a plan corner at [51, 0] may be meant); None if none."""
    pts = np.asarray(points, dtype=float).reshape(-1, 2)
    lat, lon = float(site.latitude_deg), float(site.longitude_deg)
    for order in ((lat, lon), (lon, lat)):
        near = np.all(np.abs(pts - np.array(order)) <= LATLON_LIKE_DEG, axis=1)
        whole = np.all(pts == np.round(pts), axis=1)
        if near.all():
            return tuple(float(x) for x in pts[0])
        odd = near & ~whole
        if odd.any():
            return tuple(float(x) for x in pts[np.flatnonzero(odd)[0]])
    return None


def reference_at_origin_notices(sc) -> list[Notice]:
    """``reference-at-origin`` (where: "off the lot" or "in the keep-out area 'house'") where the reference has no
    position, so stands at the plan's origin, and that place is one no antenna could stand: off the lot or in a
    keep-out area (a plan drawn from a corner of the lot or the house, not from the vertical).  A plan whose origin
    is the vertical (every place written from it) is left alone; one with a candidate on it is an input error
    already (snrgain.scenario.antennas)."""
    from shapely.geometry import Point

    ref = sc.reference
    if ref.params.position is not None or getattr(ref, "positions", None) is not None and len(ref.positions) > 1:
        return []
    origin = Point(0.0, 0.0)
    lot, keep = lot_and_keep_outs(sc.site)
    where = None
    if lot is not None and not lot.covers(origin):
        where = "off the lot"
    for name, area in keep:
        if where is None and area.covers(origin):
            where = f"in the keep-out area {name!r}"
    return [] if where is None else [Notice("reference-at-origin", ref.name, {"where": where})]


def latlon_like_notices(sc) -> list[Notice]:
    """Plan points (the lot, keep-outs, antennas' positions and elements) that look like a latitude and longitude
    written as metres (code ``looks-like-latlon``: where, point, site_deg)."""
    site = sc.site
    if not hasattr(site, "latitude_deg"):
        return []
    outlines = [("the lot", site.lot_m)] if site.lot_m is not None else []
    outlines += [(f"keep-out area {name!r}", pts) for name, pts in getattr(site, "keep_out", ())]
    for ant in sc.antennas:
        pos = ant.params.position
        if pos is not None:
            outlines.append((f"{ant.name}'s position", [pos]))
        elif getattr(ant, "positions", None) is not None and len(ant.positions) > 1:
            outlines.append((f"{ant.name}'s elements", ant.positions))
    out = []
    for where, pts in outlines:
        first = _latlon_like(pts, site)
        if first is not None:
            out.append(
                Notice(
                    "looks-like-latlon",
                    None,
                    {"where": where, "point": first, "site_deg": (site.latitude_deg, site.longitude_deg)},
                )
            )
    return out


def polygon(points, what: str):
    """A valid shapely polygon from plan points, or ValueError naming ``what`` and why it is not one (the same
    outline's polygon made once: a sweep's designs check against it one by one)."""
    return _polygon(tuple((float(x), float(y)) for x, y in points), what)


@functools.lru_cache(maxsize=64)
def _polygon(points: tuple, what: str):
    from shapely.geometry import Polygon

    poly = Polygon(points) if len(set(points)) >= 3 else None
    if poly is None or not poly.is_valid or poly.area <= 0:
        raise ValueError(
            f"{what}: the outline is not a simple polygon ({_why_not_simple(points, poly)}); list at least three "
            "corners at different points, in order around the edge, its edges neither crossing nor touching"
        )
    return poly


def _why_not_simple(points: tuple, poly) -> str:
    """Why ``points`` make no simple polygon, in words of the plan (not the geometry library's)."""
    import shapely

    distinct = len(set(points))
    if distinct < 3:
        return f"its {len(points)} corners stand at only {distinct} point{'' if distinct == 1 else 's'}"
    d = np.asarray(points, dtype=float) - points[0]
    far = d[np.argmax(np.hypot(d[:, 0], d[:, 1]))]
    if np.all(np.abs(d[:, 0] * far[1] - d[:, 1] * far[0]) <= 1e-9 * far @ far):
        return "every corner lies on one line"
    at = re.search(r"\[(\S+) (\S+)\]", shapely.is_valid_reason(poly))  # where the edges meet, when they do
    return f"its edges cross or touch at ({float(at[1]):g}, {float(at[2]):g}) m" if at else "it encloses no area"


def footprint(antenna):
    """The antenna's shape on the plan (shapely), or None where it has no position."""
    from shapely.geometry import LineString, MultiPoint, Point

    if antenna.composite:  # made of other antennas of the scenario, drawn where they stand
        return None
    pos = getattr(antenna, "positions", None)
    if pos is not None and len(pos) > 1:
        return MultiPoint([tuple(p) for p in np.asarray(pos, dtype=float)])
    p = antenna.params.position
    if p is None:
        return None if pos is None or not len(pos) else Point(*np.asarray(pos, dtype=float)[0])
    if antenna.long_wire:
        b = antenna.bearing_rad
        end = (p[0] + antenna.length_m * np.sin(b), p[1] + antenna.length_m * np.cos(b))
        return LineString([tuple(p), end])
    return Point(*p)


def tx_clearance_m(site, freq_hz: float) -> float:
    """The distance to keep from the transmitting vertical [m]: as given, else half a wavelength (applied without a
    given clearance only to antennas whose coupling to the vertical is not computed)."""
    given = getattr(site, "tx_clearance_m", None)
    return float(given) if given is not None else DEFAULT_TX_CLEARANCE_WAVELENGTHS * C_M_PER_S / freq_hz


def clearance_applies(sc, antenna) -> bool:
    """Whether the TX vertical's clearance is a rule for ``antenna``: always when the site gives one, else only where
    its coupling to the vertical is not computed (snrgain.model.scatter.modelled)."""
    from snrgain.model.scatter import modelled

    return getattr(sc.site, "tx_clearance_m", None) is not None or not modelled(antenna)


def structure_clearance_m(structure) -> float:
    """The distance to keep every antenna from a ``[site] structures`` entry's foot [m]: its ``clearance`` as given
    (0: none), else :data:`STRUCTURE_CLEARANCE_HEIGHTS` of its height, at least :data:`LEAST_STRUCTURE_CLEARANCE_M`.

    >>> from types import SimpleNamespace as S
    >>> structure_clearance_m(S(clearance=None, height=20.0)), structure_clearance_m(S(clearance=None, height=6.0))
    (20.0, 10.0)
    >>> structure_clearance_m(S(clearance=4.0, height=20.0))
    4.0
    """
    given = getattr(structure, "clearance", None)
    if given is not None:
        return float(given)
    return max(STRUCTURE_CLEARANCE_HEIGHTS * float(structure.height), LEAST_STRUCTURE_CLEARANCE_M)


SAME_PLACE_M = 1.0
"""Two candidates' wires whose plan views lie within this of each other everywhere (Hausdorff distance) [m] stand in
one place: alternatives to compare (a choke or not, two heights), one of which can be built there."""


def _one_antenna(a, b) -> bool:
    """True where ``a`` and ``b`` are states of one switched antenna (snrgain.scenario.antennas.SwitchedState)."""
    from snrgain.scenario.switched import switched_state

    sa, sb = switched_state(a), switched_state(b)
    return sa is not None and sb is not None and sa.group == sb.group


def _unit_parts(sc) -> set[frozenset]:
    """The pairs of antennas a phasing unit combines (built together by design, side by side)."""
    out = set()
    for a in sc.antennas:
        parts = [getattr(p, "name", None) for p in getattr(a, "elements", ())] if a.composite else []
        out.update(frozenset((x, y)) for i, x in enumerate(parts) for y in parts[i + 1 :])
    return out


def _too_close(shapes, only, wire_names: set[str], unit_pairs: set[frozenset]) -> list[Notice]:
    """``antennas-same-place`` for two candidates, not both wires (those have their own warnings), whose plan views
    come within SAME_PLACE_M of each other: two whips on one spot, a whip on a Beverage's wire or at its feed point, an
    array's element on another's.  Alternatives to compare, not a build: the model leaves the coupling of two
    antennas that close out.  Not said of the states of one switched antenna, nor of a phasing unit's parts."""
    out = []
    for i, (a, s) in enumerate(shapes):
        for b, t in shapes[i + 1 :]:
            if s is None or t is None or (a.name in wire_names and b.name in wire_names) or _one_antenna(a, b):
                continue
            if (only is not None and a.name not in only and b.name not in only) or frozenset((a.name, b.name)) in (
                unit_pairs
            ):
                continue
            gap = float(s.distance(t))
            if gap < SAME_PLACE_M:
                out.append(Notice("antennas-same-place", a.name, {"other": b.name, "distance_m": gap}))
    return out


def lot_and_keep_outs(site):
    """The site's lot (a polygon, None without one) and its keep-out areas as (name, polygon) pairs."""
    lot = None if site.lot_m is None else polygon(site.lot_m, "site.lot")
    return lot, [(name, polygon(pts, f"site.keep_out {name!r}")) for name, pts in getattr(site, "keep_out", ())]


def site_notices(sc, only: set[str] | None = None) -> list[Notice]:
    """Warnings about the antennas' places: off the lot, in a keep-out, crossing wires, near the TX vertical.  With
    ``only`` (antenna names: a sweep's design) just those antennas' own, against the others as they stand; the plan's
    other warnings (plan points like a latitude, sources in a keep-out) are left out.

    A switched antenna's states that stand as one (the same wire or elements) are one place: what is said of it is
    said of every state, by the antenna's name where the place is all its states (check's and rank's warnings, said
    once), and of each state by its own name with ``only`` (a sweep's row of each state carries it)."""
    from shapely.geometry import Point

    site = sc.site
    lot, keep = lot_and_keep_outs(site)
    shapes, stands = places(sc)
    mine = None if only is None else {k for k, names in stands.items() if set(names) & set(only)}
    out = _place_notices(sc, shapes, mine, lot, keep)
    out = of_every_state(out, stands, {} if only is not None else whole_antennas(stands, sc))
    from snrgain.model.scatter import tx_antenna

    if tx_antenna(sc) is not None:
        runs = {n: (fl.start_m, fl.end_m) for n, fl in sc.feed_lines.items() if only is None or n in only}
        out.extend(feed_line_notices(sc, runs))
    if only is not None:
        return out
    ref = sc.reference
    if ref is not None and ref.params.position is not None:  # the reference is built too, or stands already
        out.extend(raised_source_notices(sc, [(ref, footprint(ref))]))
    for src in sc.noise.local:
        if src.position_m is not None:
            for name, area in keep:
                if area.covers(Point(*src.position_m)):
                    out.append(Notice("source-in-keep-out", None, {"source": src.name, "area": name}))
    out.extend(latlon_like_notices(sc))
    out.extend(reference_at_origin_notices(sc))
    return out


def places(sc) -> tuple[list, dict[str, list[str]]]:
    """Each place the candidates stand once: ([(the first antenna standing there, its footprint or None), ...], that
    antenna's name -> the names of every antenna standing there).  Only a switched antenna's states share a place
    (the same wire or elements: snrgain.scenario.switched); any other antenna has one of its own."""
    shapes, stands = [], {}
    for a in sc.candidates:
        shape = footprint(a)
        same = [
            b
            for b, t in shapes
            if shape is not None and t is not None and _one_antenna(a, b) and shape.hausdorff_distance(t) < 1e-6
        ]
        if same:
            stands[same[0].name].append(a.name)
        else:
            shapes.append((a, shape))
            stands[a.name] = [a.name]
    return shapes, stands


def whole_antennas(stands: dict[str, list[str]], sc) -> dict[str, str]:
    """The places (:func:`places`: the first state's name) where every state of a switched antenna stands -> that
    antenna's name."""
    from snrgain.scenario.switched import switched_state

    out = {}
    for a in sc.candidates:
        sw = switched_state(a)
        if sw is not None and a.name in stands and len(stands[a.name]) == len(sw.states) > 1:
            out[a.name] = sw.group
    return out


def of_every_state(notices: list[Notice], stands: dict[str, list[str]], whole: dict[str, str]) -> list[Notice]:
    """The notices said of a place's first state said of the place: by the switched antenna's name where ``whole``
    has it, else once for each state standing there (:func:`places`); the ``other`` antenna likewise."""
    out = []
    for n in notices:
        other = n.values.get("other")
        names = [whole[n.antenna]] if n.antenna in whole else stands.get(n.antenna, [n.antenna])
        others = [whole[other]] if other in whole else stands.get(other, [other])
        for name in names:
            for o in others if "other" in n.values else [other]:
                values = {**n.values, "other": o} if "other" in n.values else n.values
                out.append(n if (name, o) == (n.antenna, other) else Notice(n.code, name, dict(values)))
    return out


def _pair_notices(sc, shapes, only) -> list[Notice]:
    """Of two places: wires crossing (``wires-cross``) or laid alike (``wires-same-place``), antennas on one spot
    (``antennas-same-place``); ``shapes`` and ``only`` as :func:`_place_notices`'s."""
    out = []
    wires = [(a, s) for a, s in shapes if s is not None and s.geom_type == "LineString"]
    for i, (a, s) in enumerate(wires):
        for b, t in wires[i + 1 :]:
            if _one_antenna(a, b) or (only is not None and a.name not in only and b.name not in only):
                continue  # two states of one switched antenna are the same wire
            if s.hausdorff_distance(t) < SAME_PLACE_M:  # alternatives laid alike (choked or not, two heights)
                out.append(Notice("wires-same-place", a.name, {"other": b.name}))
            elif s.crosses(t) or (s.intersects(t) and not s.touches(t)):
                out.append(Notice("wires-cross", a.name, {"other": b.name}))
    out.extend(_too_close(shapes, only, {a.name for a, _ in wires}, _unit_parts(sc)))
    return out


SAME_PLACE_CODES = ("wires-same-place", "antennas-same-place")
"""The notices of two candidates that stand in one place: alternatives, one of which can be built there."""


def alternatives(sc) -> list[tuple[str, str]]:
    """The pairs of candidates (by name; each state of a switched antenna by its own) that stand in one place, so
    that one of the two can be built there: the pairs the ``wires-same-place`` and ``antennas-same-place`` notices
    name, with their exceptions (the states of one switched antenna, a phasing unit's own parts).  The station plan
    builds at most one of each pair (snrgain.decide.plan.station_plan's ``alternatives``)."""
    shapes, stands = places(sc)
    found = [n for n in _pair_notices(sc, shapes, None) if n.code in SAME_PLACE_CODES]
    return [(n.antenna, n.values["other"]) for n in of_every_state(found, stands, {})]


UNFIT_CODES = ("off-lot", "in-keep-out", "near-tx-vertical", "near-structure")
"""The place notices of an antenna that cannot be built where the file places it (a clearance from the transmitting
vertical or a structure only where the user gives one: a hard rule)."""


def unfit(sc) -> dict[str, dict]:
    """The candidates (by name; each state of a switched antenna by its own) that cannot be built where the file
    places them -> {code, values} of the first such notice: off the lot (beyond OFF_LOT_TOLERANCE_M), in a keep-out
    area, or within a ``tx_clearance`` the user gives of the transmitting vertical or a ``clearance`` the user gives
    of a structure.  The station plan leaves them out (snrgain.decide.plan.station_plan's ``unfit``); ``snrgain
    layout`` looks for a place that fits."""
    site = sc.site
    given = getattr(site, "tx_clearance_m", None) is not None or any(
        getattr(st, "clearance", None) is not None for st in getattr(site, "structures", ())
    )
    if site.lot_m is None and not getattr(site, "keep_out", ()) and not given:
        return {}
    lot, keep = lot_and_keep_outs(site)
    shapes, stands = places(sc)
    found = [
        n
        for n in _place_notices(sc, shapes, None, lot, keep)
        if n.code in UNFIT_CODES and (n.code not in ("near-tx-vertical", "near-structure") or n.values.get("given"))
    ]
    candidates = {a.name for a in sc.candidates}
    out: dict[str, dict] = {}
    for n in of_every_state(found, stands, {}):
        if n.antenna in candidates:
            out.setdefault(n.antenna, {"code": n.code, "values": dict(n.values)})
    return out


def _place_notices(sc, shapes, only, lot, keep) -> list[Notice]:
    """Off the lot, in a keep-out, wires crossing or laid alike, antennas on one spot, near the TX vertical or a
    structure: of each place once (``shapes``: :func:`places`; ``only``: the places of a sweep's design, or None)."""
    from shapely.geometry import Point

    out = []
    mine = [(a, s) for a, s in shapes if only is None or a.name in only]
    for ant, shape in mine:
        if shape is None:
            continue
        if lot is not None and not lot.covers(shape):
            outside = shape.difference(lot)
            far = max((lot.exterior.distance(Point(c)) for c in _coords(outside)), default=0.0)
            if far > OFF_LOT_TOLERANCE_M:
                out.append(Notice("off-lot", ant.name, {"outside_m": float(far)}))
        for name, area in keep:
            if shape.intersects(area):
                out.append(Notice("in-keep-out", ant.name, {"area": name}))
    out.extend(_pair_notices(sc, shapes, only))
    out.extend(raised_source_notices(sc, mine))
    from snrgain.model.scatter import tx_antenna

    ref = tx_antenna(sc)
    # Where the TX vertical stands: its position, or the plan's origin when the site has a lot; with neither there
    # is no plan to place it on (element positions of an array may then be relative), so nothing is said.  A
    # clearance the user gives is a hard rule for every antenna; without one, an antenna whose coupling to the
    # vertical is computed (snrgain.model.scatter: tx-vertical-cost, in the decisions) is not flagged by distance,
    # and the others (a two-wire line's reversed port, pattern tables) keep the half-wave rule.
    if ref is not None:
        tx = Point(*(ref.params.position or (0.0, 0.0)))
        clear = tx_clearance_m(sc.site, sc.freq_hz)
        given = getattr(sc.site, "tx_clearance_m", None) is not None
        for ant, shape in mine:  # the vertical itself too is a candidate under another reference: not near itself
            if shape is not None and ant.name != ref.name and clearance_applies(sc, ant):
                d = float(shape.distance(tx))
                if d < clear:
                    out.append(
                        Notice("near-tx-vertical", ant.name, {"distance_m": d, "clearance_m": clear, "given": given})
                    )
    out.extend(structure_notices(sc, mine, None if ref is None else ref.name))
    return out


def structure_notices(sc, shapes, tx_name: str | None = None) -> list[Notice]:
    """``near-structure`` (structure, distance_m, clearance_m, given) for each place of ``shapes`` ((antenna,
    footprint) pairs: :func:`places`) whose feed point, wire or elements come within a structure's clearance
    (:func:`structure_clearance_m`; ``given``: the user's ``clearance``, else the default from its height); the
    transmitting vertical (``tx_name``) aside, as for its own clearance."""
    from shapely.geometry import Point

    out = []
    for st in getattr(sc.site, "structures", ()):
        clear = structure_clearance_m(st)
        foot = Point(*(float(x) for x in st.position))
        given = getattr(st, "clearance", None) is not None
        for ant, shape in shapes:
            if shape is None or ant.name == tx_name:
                continue
            d = float(shape.distance(foot))
            if d < clear:
                values = {"structure": st.name, "distance_m": d, "clearance_m": clear, "given": given}
                out.append(Notice("near-structure", ant.name, values))
    return out


RAISED_SOURCE_HEIGHT_M = 5.0
NEAR_RAISED_SOURCE_M = 10.0
"""A placed noise source this high or higher [m] may be an overhead power line: an antenna within NEAR_RAISED_SOURCE_M
of it on the plan [m] is told to keep clear of power lines (``near-raised-source``)."""


def raised_source_notices(sc, shapes) -> list[Notice]:
    """``near-raised-source`` (source, distance_m, height_m, others): each antenna of ``shapes`` ((antenna, footprint)
    pairs) within NEAR_RAISED_SOURCE_M on the plan of a placed noise source RAISED_SOURCE_HEIGHT_M or more up, once,
    naming the nearest such source.  snrgain cannot tell a power line from another raised source; a builder near one
    is told the trade's caution (keep clear of power lines, never where a falling wire or support could touch one)."""
    from shapely.geometry import Point

    raised = [s for s in sc.noise.local if s.position_m is not None and s.height_m >= RAISED_SOURCE_HEIGHT_M]
    out = []
    for ant, shape in shapes:
        if shape is None or not raised:
            continue
        near = sorted((float(shape.distance(Point(*s.position_m))), s) for s in raised)
        near = [(d, s) for d, s in near if d <= NEAR_RAISED_SOURCE_M]
        if near:
            (d, s), others = near[0], [o.name for _, o in near[1:]]
            values = {"source": s.name, "distance_m": d, "height_m": float(s.height_m), "others": others}
            out.append(Notice("near-raised-source", ant.name, values))
    return out


def feed_line_notices(sc, runs: dict) -> list[Notice]:
    """``feed-line-near-tx-vertical`` (distance_m, clearance_m) for each feed line whose run (``runs``: antenna name ->
    (start, end) [m east, m north], straight from the feed point to the station entry) passes within the clearance
    the user gives of the transmitting vertical; the vertical's own line aside, and nothing without a given
    clearance (a receive line's distance has no default of the trade to hold it to)."""
    from shapely.geometry import LineString, Point

    from snrgain.model.scatter import tx_antenna

    ref = tx_antenna(sc)
    given = getattr(sc.site, "tx_clearance_m", None)
    if ref is None or given is None:
        return []
    tx = Point(*(ref.params.position or (0.0, 0.0)))
    out = []
    for name, (start, end) in runs.items():
        if name in (ref.name, sc.transmitting):
            continue
        d = float(LineString([tuple(start), tuple(end)]).distance(tx))
        if d < given:
            out.append(Notice("feed-line-near-tx-vertical", name, {"distance_m": d, "clearance_m": float(given)}))
    return out


def _coords(geom):
    """Every vertex of a shapely geometry (collections included)."""
    if geom.is_empty:
        return []
    if hasattr(geom, "geoms"):
        return [c for g in geom.geoms for c in _coords(g)]
    if geom.geom_type == "Polygon":
        return list(geom.exterior.coords)
    return list(geom.coords)
