"""What the site plan draws, from a resolved scenario: one plan for ``snrgain figures``, the report and
``snrgain layout --plot``.

:func:`plan_of` returns a JSON-like dict (plan coordinates [m east, m north] inside; the unit to show them in at
the edge): the lot, the keep-out areas, the transmitting vertical and its clearance, the placed noise sources, the
feed lines' runs, the structures that re-radiate (``[site] structures``), every antenna as built (a wire from its
feed point, an array's elements, a combination drawn between its members and joined to each) with the bearings it
favours, the lengths of wire off the lot and the points where wires cross.  :func:`beyond_plan` tells which placed
sources lie so far off the site that the plan marks them at its edge instead.
``snrgain layout`` passes the placed designs, which replace those candidates' positions.

The unit is the scenario's (:func:`snrgain.units.length_unit_of`: ``[site] units``, else the unit its lengths mostly
use), feet or metres (the plan says which).
"""

from __future__ import annotations

import re

import numpy as np

from snrgain.decide.lot import OFF_LOT_TOLERANCE_M, clearance_applies, footprint, polygon, tx_clearance_m
from snrgain.units import FT_PER_M, length_unit_of


def plan_unit(data: dict | None) -> str:
    """The unit the scenario's raw tables ``data`` are written in (:func:`snrgain.units.length_unit_of`)."""
    return length_unit_of(data)


def _part(kind: str, coords) -> dict:
    return {"kind": kind, "coords": [(float(e), float(n)) for e, n in coords]}


def _antenna_parts(ant, design=None) -> list[dict]:
    """The antenna on the plan: a wire (feed point first), points (a compact antenna, an array's elements)."""
    if design is not None:
        e, n = design.east_m, design.north_m
        if design.length_m is not None and design.bearing_rad is not None:
            b = design.bearing_rad
            return [_part("wire", [(e, n), (e + design.length_m * np.sin(b), n + design.length_m * np.cos(b))])]
        return [_part("point", [(e, n)])]
    shape = footprint(ant)
    if shape is None:
        return []
    if shape.geom_type == "LineString":
        return [_part("wire", shape.coords)]
    if shape.geom_type == "MultiPoint":
        return [_part("elements", [p.coords[0] for p in shape.geoms])]
    return [_part("point", shape.coords)]


def _favoured(ant) -> list[float]:
    """The bearing an antenna is built to favour [deg, 0..360), as a list (empty for one with no bearing: a vertical,
    a table of gains, wires modelled as written)."""
    b = getattr(getattr(ant, "params", None), "bearing", None)
    return [] if b is None else [round(float(np.degrees(b)) % 360.0, 6)]


def _fold_switched(ants, entries) -> None:
    """The states of one switched antenna that stand as one on the plan (the same elements or point: an array
    steered to each bearing, a loop turned) drawn once: the first state's entry takes ``shown_as``, the antenna's
    own name and its states, and the others lose their parts (their entries stay, so each keeps its look).  A
    wire's states keep their own arrows (the favoured direction differs)."""
    from snrgain.scenario.switched import switched_state

    groups: dict = {}
    for ant, e in zip(ants, entries):
        st = switched_state(ant)
        if st is not None and e["parts"] and all(p["kind"] != "wire" for p in e["parts"]):
            groups.setdefault(st.group, (st, []))[1].append(e)
    for group, (st, es) in groups.items():
        if len(es) < 2 or any(e["parts"] != es[0]["parts"] for e in es[1:]):
            continue
        short = [re.sub(r" \([-\d.]+ deg\)$", "", label) for label in st.states]  # "NE (45 deg)": "NE"
        es[0]["shown_as"] = f"{group} (switched: {', '.join(short)})"
        es[0]["bearings"] = [b for e in es for b in e["bearings"]]  # each state's favoured bearing
        for e in es[1:]:
            e["parts"] = []


def plan_of(sc, *, data: dict | None = None, designs=(), gains: dict | None = None) -> dict:
    """The site plan of a resolved scenario ``sc`` (its raw tables ``data`` give the unit).

    ``designs``: :class:`snrgain.tools.layout.Design` objects placing candidates (layout); ``gains``: a label per
    antenna name to add to its legend entry (the layout's SNR gain and target)."""
    from shapely.geometry import LineString, Point

    site = sc.site
    placed = {d.name: d for d in designs}
    gains = gains or {}
    antennas = []
    for k, ant in enumerate(sc.antennas):
        entry = {
            "name": ant.name,
            "family": ant.family,
            "reference": k == 0,
            "placed": ant.name in placed,
            "note": gains.get(ant.name),
            "parts": _antenna_parts(ant, placed.get(ant.name)),
            "members": [],
            # the bearing it favours (a placed design's where layout turns it), and whether it hears both ways
            "bearings": _favoured(ant)
            if ant.name not in placed or placed[ant.name].bearing_rad is None
            else [round(float(np.degrees(placed[ant.name].bearing_rad)) % 360.0, 6)],
            "both_ways": bool(getattr(ant, "both_ways", False)),
        }
        if ant.composite:
            entry["members"] = [p.name for p in getattr(ant, "elements", None) or ()]
        antennas.append(entry)
    _fold_switched(sc.antennas, antennas)
    where = {a["name"]: a for a in antennas}
    for a in antennas:  # a combination: drawn between its members' feed points, joined to each
        if a["members"]:
            pts = [where[m]["parts"][0]["coords"][0] for m in a["members"] if m in where and where[m]["parts"]]
            if pts:
                a["parts"] = [_part("unit", [tuple(np.mean(pts, axis=0))])]
                a["member_feeds"] = pts
    from snrgain.model.scatter import tx_antenna

    ref = tx_antenna(sc)
    tx = None if ref is None else tuple(float(v) for v in (ref.params.position or (0.0, 0.0)))
    lot = None if site.lot_m is None else polygon(site.lot_m, "site.lot")
    off_lot = [] if lot is None else _off_lot(antennas, lot)
    wires = [(a["name"], LineString(p["coords"])) for a in antennas for p in a["parts"] if p["kind"] == "wire"]
    crossings = []
    for i, (na, wa) in enumerate(wires):  # as the lot checks count them (snrgain.decide.lot): touching is not crossing
        for nb, wb in wires[i + 1 :]:
            if not (wa.crosses(wb) or (wa.intersects(wb) and not wa.touches(wb))):
                continue
            hit = wa.intersection(wb)
            for g in getattr(hit, "geoms", [hit]):
                if isinstance(g, Point):
                    crossings.append({"antennas": [na, nb], "at": (float(g.x), float(g.y))})
    unit = plan_unit(data) if data is not None else getattr(site, "length_unit", "m")
    return {
        "site": site.name,
        "unit": unit,
        "per_m": FT_PER_M if unit == "ft" else 1.0,
        "lot": None if site.lot_m is None else [tuple(map(float, p)) for p in site.lot_m],
        "keep_out": [(n, [tuple(map(float, p)) for p in pts]) for n, pts in site.keep_out],
        "tx": tx,
        "tx_name": ref.name if ref is not None else sc.reference.name,
        # the circle only where the rule applies: a clearance given, or an antenna on the plan whose coupling to the
        # vertical is not computed (the others' cost is in their figures: snrgain.decide.lot)
        "clearance_m": tx_clearance_m(site, sc.freq_hz)
        if tx is not None
        and any(clearance_applies(sc, a) for a in sc.candidates if a is not ref and footprint(a) is not None)
        else None,
        "clearance_given": getattr(site, "tx_clearance_m", None) is not None,
        "sources": [(s.name, tuple(map(float, s.position_m))) for s in sc.noise.local if s.position_m is not None],
        # (name, foot [m east, m north], height [m]) of each structure that re-radiates
        "structures": [
            (st.name, tuple(map(float, st.position)), float(st.height)) for st in getattr(site, "structures", ())
        ],
        "feed_lines": [  # the coax runs (a candidate's feed_line), from where the antenna stands to the station entry
            (n, [(placed[n].east_m, placed[n].north_m) if n in placed else fl.start_m, fl.end_m])
            for n, fl in getattr(sc, "feed_lines", {}).items()
        ],
        "antennas": antennas,
        "off_lot": off_lot,
        "crossings": crossings,
    }


def _off_lot(antennas, lot) -> list[dict]:
    """The stretches of wire and the points (feed points, elements) that lie off the lot by more than the lot checks'
    tolerance (snrgain.decide.lot.OFF_LOT_TOLERANCE_M)."""
    from shapely.geometry import LineString, Point

    out = []
    for a in antennas:
        for p in a["parts"]:
            if p["kind"] == "wire":
                outside = LineString(p["coords"]).difference(lot)
                if outside.length > OFF_LOT_TOLERANCE_M:
                    for g in getattr(outside, "geoms", [outside]):
                        out.append({"antenna": a["name"], "coords": [tuple(map(float, c)) for c in g.coords]})
            elif p["kind"] in ("point", "elements"):
                for c in p["coords"]:
                    if lot.exterior.distance(Point(c)) > OFF_LOT_TOLERANCE_M and not lot.covers(Point(c)):
                        out.append({"antenna": a["name"], "coords": [tuple(map(float, c))]})
    return out


def plan_from_results(results) -> dict:
    """The plan that Results give: the whole plan the pipeline made of the scenario (``results.site_plan``, in
    metres), or for Results made without one, the lot and the antennas with a position."""
    if getattr(results, "site_plan", None) is not None:
        return results.site_plan
    antennas = []
    for k, a in enumerate([results.reference, *results.candidates]):
        p = a.parameters
        parts = []
        if p.get("antennas"):
            pass
        elif p.get("positions_m") is not None and len(p["positions_m"]) > 1:
            parts = [_part("elements", p["positions_m"])]
        elif p.get("position_m") is not None:
            e, n = p["position_m"]
            length, bearing = p.get("length_m"), p.get("bearing_deg")
            if length is not None and bearing is not None:
                b = np.radians(bearing)
                parts = [_part("wire", [(e, n), (e + length * np.sin(b), n + length * np.cos(b))])]
            else:
                parts = [_part("point", [(e, n)])]
        antennas.append(
            {
                "name": a.name,
                "family": a.family,
                "reference": k == 0,
                "placed": False,
                "note": None,
                "parts": parts,
                "members": list(p.get("antennas") or []),
                "bearings": [] if p.get("bearing_deg") is None else [float(p["bearing_deg"]) % 360.0],
                "both_ways": bool((getattr(a, "build", None) or {}).get("both_ways", False)),
            }
        )
    where = {a["name"]: a for a in antennas}
    for a in antennas:
        pts = [where[m]["parts"][0]["coords"][0] for m in a["members"] if m in where and where[m]["parts"]]
        if pts:
            a["parts"] = [_part("unit", [tuple(np.mean(pts, axis=0))])]
            a["member_feeds"] = pts
    return {
        "site": results.site["name"],
        "unit": "m",
        "per_m": 1.0,
        "lot": None if not results.lot_m else [tuple(map(float, p)) for p in results.lot_m],
        "keep_out": [],
        "tx": None,
        "tx_name": results.reference.name,
        "clearance_m": None,
        "clearance_given": False,
        "sources": [],
        "structures": [],
        "antennas": antennas,
        "off_lot": [],
        "crossings": [],
    }


def has_plan(plan: dict) -> bool:
    """Whether there is anything to draw: a lot, or an antenna with a place on it (an array's element positions
    alone may be relative to the array, not places on a plan)."""
    return bool(plan.get("lot") or any(p["kind"] in ("wire", "point") for a in plan["antennas"] for p in a["parts"]))


FAR_SIDES = 0.5
"""A placed source lies beyond the plan when it stands farther from the site's box (:func:`site_box`) than this
many times the box's longer side (at least :data:`FAR_MIN_M`): drawn where it stands it would shrink the site into
a corner of the plan."""
FAR_MIN_M = 20.0
"""The least distance off the site's box [m] at which a placed source is drawn at the plan's edge."""


def site_box(plan: dict) -> tuple[float, float, float, float] | None:
    """(east min, north min, east max, north max) [m] of what the plan draws on the site: the lot, the keep-outs,
    the antennas, the feed lines, the structures and the transmitting vertical (not the placed noise sources);
    None where it holds none of them."""
    pts = [c for a in plan["antennas"] for p in a["parts"] for c in p["coords"]]
    pts += list(plan.get("lot") or []) + [c for _, cs in plan.get("keep_out", []) for c in cs]
    pts += [c for _, run in plan.get("feed_lines", []) for c in run]
    pts += [foot for _, foot, _ in plan.get("structures", [])]
    pts += [plan["tx"]] if plan.get("tx") is not None else []
    if not pts:
        return None
    arr = np.asarray(pts, dtype=float).reshape(-1, 2)
    return (*arr.min(axis=0), *arr.max(axis=0))


def beyond_plan(plan: dict) -> list[dict]:
    """The placed sources that lie far off the site (:data:`FAR_SIDES`), each ``{"name", "at" (its place [m]),
    "from" (the middle of the site's box [m]), "bearing_deg", "distance_m"}`` (bearing and distance from that
    middle): the plan is drawn to the site's extent and these at its edge, toward where they stand."""
    box = site_box(plan)
    if box is None:
        return []
    e0, n0, e1, n1 = box
    far = max(FAR_SIDES * max(e1 - e0, n1 - n0), FAR_MIN_M)
    mid = (0.5 * (e0 + e1), 0.5 * (n0 + n1))
    out = []
    for name, (e, n) in plan.get("sources", []):
        off = float(np.hypot(max(e0 - e, 0.0, e - e1), max(n0 - n, 0.0, n - n1)))  # from the box; 0 inside
        if off > far:
            de, dn = e - mid[0], n - mid[1]
            out.append(
                {
                    "name": name,
                    "at": (float(e), float(n)),
                    "from": mid,
                    "bearing_deg": float(np.degrees(np.arctan2(de, dn)) % 360.0),
                    "distance_m": float(np.hypot(de, dn)),
                }
            )
    return out
