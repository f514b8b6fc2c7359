"""Where on the lot: the positions, bearings and lengths that give the placeable candidates their best SNR.

A candidate with a ``place`` table (``place = { bearing = ["20 deg", "70 deg"],
length = ["150 m", "300 m"] }``) may stand anywhere on the lot (``[site]
lot``) outside the keep-out areas and clear of the transmitting vertical
(``[site] tx_clearance`` when given, a hard rule; without it a two-wire line's
reversed port and pattern tables keep half a wavelength and every other
antenna's score carries what the vertical,
in ``[site] tx_state``, costs its RDF where it stands: snrgain.model.scatter),
at least 10 m from any other wire and from the antennas that stay where written, the
transmitting vertical among them (common practice: closer, wires couple; the vertical's
computed cost is checked against NEC-2 from 10 m), outside each ``[site] structures``
entry's clearance (snrgain.decide.lot.structure_clearance_m: its ``clearance``, else its
height; here never under 10 m, as from an antenna that stays), with its bearing
and length inside the ranges given (fixed where none is given), and its feed
line's run, if it has one, on the lot and at least 1 m long
(snrgain.physics.feedline.LEAST_RUN_M), as rank wants it of the written layout.

Its worth is its nominal SNR gain over the reference toward the target
nearest its bearing range's middle (the scenario's months and hours for that
target, no spreads), with the placed noise sources heard where it stands
(snrgain.model.placed) and its ``feed_line``, if it has one, run from where it
stands to its station entry (snrgain.model.feedline: the shield's pickup of the
sky and of the placed sources), as rank of the written layout scores it.  Only
the placed sources and the feed line depend on the position, so each (bearing,
length) pair costs one pattern and one set of sky temperatures, and every
position after that only its pickup of the placed sources and its feed line's
(the antenna's own amplitudes, which the line's add to, from the same batch).

The search (deterministic, so reproducible):

1. a grid per candidate: bearings every 5 deg or less over the range, five
   lengths over the range, feed points on a square grid over the lot (about
   150 inside it); the feasible designs kept, the best few per candidate;
2. the best combination of those that do not cross one another;
3. a local refinement from it (:meth:`Problem.polish`: a compass search of
   each candidate's feed point, bearing and length beside the others, the
   feed points around each trial scored as one batch), kept only if it
   keeps every rule and is better.

The next-best combinations are reported too, so a builder can weigh a
layout that is nearly as good and easier to build.

A switched antenna (``directions``) with a ``place`` table moves as one: every state stands where it stands (a
reversed wire's other state at the far end of the same wire), its bearings its directions and its length as
written.  Its worth is, over the targets nearest its states' bearings, each target's SNR gain in its best state
(as the station plan counts it), averaged as power ratios like a layout's.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from snrgain.decide.lot import footprint, polygon, structure_clearance_m, tx_clearance_m
from snrgain.model.placed import tabled
from snrgain.processes import elsewhere, spare_core
from snrgain.records import record
from snrgain.scenario.switched import switched_state
from snrgain.units import length_text, length_unit_of

BEARING_STEP_RAD = float(np.radians(5.0))
LENGTHS_PER_RANGE = 5
POSITIONS_ON_LOT = 150
TOP_PER_CANDIDATE = 40
MAX_COMBINATIONS = 100_000
EDGE_MARGIN_M = 1.0
"""Placed antennas keep this far inside the lot's outline [m]."""
REFINE_LEAST_STEP_M = 0.5
"""The refinement (:meth:`Problem.polish`) stops when its feed-point step is down to this [m] ..."""
REFINE_LEAST_BEARING_RAD = float(np.radians(0.2))
"""... its bearing step below this [rad] ..."""
REFINE_LEAST_LENGTH_M = 1.0
"""... and its length step below this [m]."""
REFINE_LEAST_GAIN_DB = 1e-3
"""A move must gain more than this [dB] to be taken."""
REFINE_FIRST_STEP = 0.25
"""The refinement's first steps, as a share of the grid's spacing (its longest steps half of it)."""
REFINE_MOST_ROUNDS = 100
"""The most stencils the refinement tries per candidate (a bound; it stops well before on the scenarios seen)."""
WIRE_SEPARATION_M = 10.0
"""Placed wires keep at least this far from other wires (common practice: closer, they couple)."""


@record
class Design:
    """One candidate's place: feed point [m east, m north], bearing [rad] (None: the family has none), wire length
    [m] (None: not a wire)."""

    name: str
    east_m: float
    north_m: float
    bearing_rad: float | None
    length_m: float | None
    states: tuple[str, ...] = ()
    """A switched antenna's states (their names), moved as one; empty for an antenna that is not switched."""


@record
class Layout:
    """A set of designs, one per placeable candidate, and the SNR gain each reaches toward its target [dB]."""

    designs: tuple[Design, ...]
    snr_gain_db: tuple[float, ...]
    targets: tuple[str, ...]

    @property
    def worth_db(self) -> float:
        """The layout's worth [dB]: the mean over its candidates of each one's SNR gain toward its target as a power
        ratio (as the station plan weighs targets; dB are never added or averaged over targets)."""
        return float(10 * np.log10(np.mean(10 ** (np.asarray(self.snr_gain_db) / 10))))


class Problem:
    """A scenario's layout problem: the lot, the keep-outs, the placeable candidates and the shared sky."""

    def __init__(self, sc, data: dict, *, base_dir=None):
        from snrgain.model.pipeline import nearest_target

        if not sc.placeable:
            raise ValueError("layout: no candidate has a place table (place = { bearing = [...], length = [...] })")
        if sc.site.lot_m is None:
            raise ValueError("site.lot: layout needs the lot's outline to place antennas in")
        self.sc = sc
        self.data = data
        self.base_dir = base_dir
        unit = sc.site.length_unit
        outline = polygon(sc.site.lot_m, "site.lot")
        self.outline = outline.buffer(1e-6)
        """The lot itself (its feed lines' runs stay on it, as rank checks them: snrgain.scenario.feedline)."""
        inner = outline.buffer(
            -EDGE_MARGIN_M
        )  # a metre inside the boundary: fences, and rounding of the written values
        self.lot = inner if not inner.is_empty and inner.geom_type == "Polygon" else outline
        self.keep = [polygon(pts, f"site.keep_out {n!r}") for n, pts in sc.site.keep_out]
        members = list(dict.fromkeys(_member(a) for a in sc.candidates))
        self.names = [n for n in members if n in sc.placeable]
        self.places = [sc.placeable[n] for n in self.names]
        self.members = [[k for k, a in enumerate(sc.candidates) if _member(a) == n] for n in self.names]
        """Each placeable candidate's antennas (indices in sc.candidates): one, or a switched antenna's states."""
        self.switched = [switched_state(sc.candidates[ks[0]]) is not None for ks in self.members]
        self.state_names = [
            tuple(sc.candidates[k].name for k in ks) if sw else () for ks, sw in zip(self.members, self.switched)
        ]
        self.index = [ks[0] for ks in self.members]
        self.base = [sc.candidates[k] for k in self.index]
        minx, miny, maxx, maxy = outline.bounds
        self.extent_m = float(np.hypot(maxx - minx, maxy - miny))
        for n, pl in zip(self.names, self.places):
            if pl.length is not None and pl.length[0] > self.extent_m:
                raise ValueError(
                    f"candidate {n!r}.place.length: the shortest length, {length_text(pl.length[0], unit)}, cannot "
                    f"fit a lot {length_text(self.extent_m, unit, 0)} across at its widest"
                )
        from snrgain.model import pipeline

        # A placeable candidate's feed line is scored with it: the scenario's lines are found by the antenna's name,
        # which every design keeps, and each run starts where the design stands (snrgain.model.feedline), as rank
        # of the written layout runs it.
        moved = {sc.candidates[k].name for ks in self.members for k in ks}
        sc = self.sc = pipeline.resolve_sources(sc)
        self.grid = pipeline.sky_grid(sc)
        self.skies = pipeline.build_sky(sc, self.grid)
        self.ref = pipeline.products(sc, [sc.reference], self.grid, self.skies)
        self.placed = [s for s in sc.noise.local if s.position_m is not None]
        self.ref_m = sc.reference.params.position or (0.0, 0.0)
        self.target = []
        """The targets each placeable candidate is scored toward (indices): one, or a switched antenna's several."""
        for pl, ant, ks, sw in zip(self.places, self.base, self.members, self.switched):
            if sw:
                bearings = [np.radians(switched_state(sc.candidates[k]).bearing_deg) for k in ks]
                self.target.append(tuple(sorted({nearest_target(sc, b) for b in bearings})))
                continue
            b = _middle(pl.bearing) if pl.bearing is not None else (_bearing_of(ant) or 0.0)
            self.target.append((nearest_target(sc, b, getattr(ant, "both_ways", False)),))
        from snrgain.model.scatter import tx_antenna

        self.tx = None
        tx_ant = tx_antenna(sc)
        if tx_ant is not None:
            from shapely.geometry import Point

            self.tx = Point(*(tx_ant.params.position or (0.0, 0.0)))
        self.clearance = tx_clearance_m(sc.site, sc.freq_hz)
        self.clearance_given = getattr(sc.site, "tx_clearance_m", None) is not None
        from snrgain.model.scatter import modelled, structure_scatterers, tx_vertical

        self.scatterer = tx_vertical(sc) if self.tx is not None else None
        self.structures = structure_scatterers(sc)
        from shapely.geometry import Point

        self.structure_rules = [
            (
                f"{length_text(c, unit, 0)} from the structure {st.name!r}",
                Point(*(float(x) for x in st.position)),
                c,
            )
            for st in getattr(sc.site, "structures", ())
            for c in [max(structure_clearance_m(st), WIRE_SEPARATION_M)]
        ]
        """(rule, foot, clearance [m]) of each structure: its clearance (snrgain.decide.lot.structure_clearance_m), at
        least WIRE_SEPARATION_M as from the antennas that stay where written."""
        self.cost_computed = [modelled(a.at((0.0, 0.0))) for a in self.base]
        fixed = [(a.name, footprint(a)) for a in sc.candidates if a.name not in moved and a.long_wire]
        self.fixed_names = [n for n, w in fixed if w is not None]
        self.fixed_wires = [w for _, w in fixed if w is not None]
        # the antennas that stay where written and are not wires (an array's elements, a vertical, a loop): every
        # placed design keeps WIRE_SEPARATION_M from them (a wire through a four-square couples to its elements);
        # a switched antenna's states stand once
        spots: dict = {}
        for a in sc.candidates:
            if a.name in moved or a.long_wire:
                continue
            shape = footprint(a)
            if shape is not None and shape.length == 0 and not any(shape.equals(t) for t in spots.values()):
                st = switched_state(a)
                spots[st.group if st is not None else a.name] = shape
        if self.tx is not None and not any(self.tx.equals(t) for t in spots.values()):
            spots.setdefault(tx_ant.name, self.tx)  # the transmitting vertical stays where written too
        self.fixed_spots = list(spots.items())
        self.runs = {}
        """Each placeable candidate's feed lines by its name: (where the run starts less the design's feed point [m],
        the station entry [m]) of each of its antennas with one (a switched antenna's states: each its own)."""
        for i, name in enumerate(self.names):
            origin = Design(name, 0.0, 0.0, None, None)
            ants = self.states_at(i, origin) if self.switched[i] else [self.base[i].at((0.0, 0.0))]
            lines = [(a.params.position, sc.feed_lines[a.name]) for a in ants if a.name in sc.feed_lines]
            if lines:
                self.runs[name] = [(tuple(map(float, at)), fl.end_m) for at, fl in lines]
        self._sky: dict[tuple, tuple] = {}
        self._scored: dict[tuple, float] = {}
        self._points: list[tuple[float, float]] | None = None

    # -- one candidate ----------------------------------------------------------------------------------------

    def antenna(self, i: int, bearing_rad: float, length_m: float | None):
        """The i-th placeable candidate built with this bearing and length (SI), at no position."""
        from snrgain.scenario import antenna_from_table

        name = self.names[i]
        spec = dict(next(c for c in self.data.get("candidate", []) if c.get("name") == name))
        for key in ("place", "chain", "position", "feed_line"):  # its feed line: the scenario's, found by its name
            spec.pop(key, None)
        if bearing_rad is not None:
            spec["bearing"] = f"{np.degrees(bearing_rad):.6f} deg"
        if length_m is not None:
            spec["length"] = f"{length_m:.6f} m"
        site_ground = self.data.get("site", {}).get("ground", "moist loam")
        return antenna_from_table(
            spec, f"candidate {name!r}", site_ground=site_ground, base_dir=self.base_dir, freq_hz=self.sc.freq_hz
        )

    def design_products(self, i: int, bearing_rad: float, length_m: float | None, at_m=None):
        """(antenna, products of [reference, antenna]) for a (bearing, length) of candidate i, made once through the
        pipeline's stages; other positions reuse its gains (a placed antenna's far field does not move).  ``at_m``:
        where the antenna made stands (the first place it is scored at, so the placed sources' pickup it holds is
        of use there; default: no position, the reference's place)."""
        from snrgain.model import pipeline

        key = self._key(i, bearing_rad, length_m)
        hit = self._sky.get(key)
        if hit is None:
            ant = self.antenna(i, bearing_rad, length_m)
            if at_m is not None:
                ant = ant.at(at_m)
            sub = pipeline.with_candidates(self.sc, [ant], 1 + self.index[i])
            with tabled():
                p = pipeline.products(sub, sub.antennas, self.grid, self.skies, known=self.ref)
            hit = self._sky[key] = (ant, p)
        return hit

    def unheard_products(self, ant):
        """Products of [reference, ``ant``] with no placed source heard by ``ant`` yet (its powers NaN: worked where
        it stands, with its other places); :func:`snrgain.model.products.unheard`."""
        from snrgain.model.products import unheard

        return unheard(self.sc, ant, self.grid, self.skies, self.ref, [s.name for s in self.placed])

    @staticmethod
    def _key(i: int, bearing_rad: float | None, length_m: float | None) -> tuple:
        """The key of a (bearing, length) of candidate i in the designs already made."""
        return (
            i,
            None if bearing_rad is None else round(float(bearing_rad), 9),
            None if length_m is None else round(float(length_m), 6),
        )

    def snr_gains_db(self, designs: list[Design], i: int, *, exact: bool = False) -> np.ndarray:
        """Candidate i's SNR gain [dB] over the reference toward its target for designs sharing one bearing and
        length (one design at many places), each standing at its place: the ranking's statistic (the median over
        the target's hours), without the spreads, through the same stages at once.  The search takes what the
        vertical and the structures do as the RDF they cost (:meth:`tx_costs_db`, a design's far field reused at
        every place); ``exact``: as the ranking hears them, the antenna standing beside them
        (snrgain.model.scatter.beside), which the layouts shown are given."""
        from snrgain import pipeline

        if self.switched[i]:
            return self.switched_gains_db(designs, i, exact=exact)
        d0 = designs[0]
        key = self._key(i, d0.bearing_rad, d0.length_m)
        fresh = key not in self._sky
        if len(designs) == 1 and fresh:
            # One new design at one place (the refinement's steps): its products made once where it stands, not
            # first unplaced (a placed source's pickup worked for nothing) and then placed.
            ants = [self.antenna(i, d0.bearing_rad, d0.length_m).at((d0.east_m, d0.north_m))]
            known = self.ref
        elif fresh:
            # A new design at many places (the grid's, a refinement's stencil): its gains and sky temperatures made
            # once (:meth:`unheard_products`), the placed sources heard at every place in one batch, the first place
            # too (not on its own first); the products kept for the design's next places.
            ant0 = self.antenna(i, d0.bearing_rad, d0.length_m).at((d0.east_m, d0.north_m))
            ants = [ant0] + [ant0.at((d.east_m, d.north_m)) for d in designs[1:]]
            known = self.unheard_products(ant0)
        else:
            ant0, known = self.design_products(i, d0.bearing_rad, d0.length_m, at_m=(d0.east_m, d0.north_m))
            # the antenna the design's products were made with, where it stands: its pickup is taken from them
            ants = [
                ant0 if (d.east_m, d.north_m) == ant0.params.position else ant0.at((d.east_m, d.north_m))
                for d in designs
            ]
        if exact:
            return self.ranked_gains_db(ants, i)[:, self.target[i][0]]
        sub = pipeline.with_candidates(self.sc, ants, 1 + self.index[i])
        with tabled():  # the search's own scores: the source's field read from its tables at every place
            p = pipeline.products(sub, sub.antennas, self.grid, self.skies, known=known)
        if fresh and len(designs) > 1:  # kept for the design's next places: the reference and its first place
            from snrgain.model.products import first_two

            self._sky[key] = (ants[0], first_two(p))
        gains = _statistic(sub, pipeline.snr_gains(sub, p), self.target[i][0])[1:]
        return gains - self.tx_costs_db(ants)

    def ranked_gains_db(self, ants, i: int) -> np.ndarray:
        """(antennas, targets): the placed antennas' statistic through the ranking's own stages, each beside the
        site's scatterers and set under the sky (its resistor chosen there): what ``rank`` of the file with them
        placed gives."""
        from snrgain import pipeline

        sub, p = self.ranked_products(ants, i)
        return pipeline.target_statistic(sub, pipeline.snr_gains(sub, p))[1:, :]

    def ranked_products(self, ants, i: int) -> tuple:
        """(the scenario with ``ants`` in candidate i's place, beside the scatterers and set under the sky; their
        products, the reference first): :meth:`ranked_gains_db`'s stages."""
        from snrgain import pipeline

        sub = pipeline.with_candidates(self.sc, ants, 1 + self.index[i])
        sub = pipeline.steer(pipeline.with_structures(sub), self.grid, self.skies)
        return sub, pipeline.products(sub, sub.antennas, self.grid, self.skies, known=self.ref)

    def feed_line_costs(self, layout: Layout) -> list[tuple[str, float, str]]:
        """(candidate, dB, target) for each design of ``layout`` with a feed line: the SNR gain its line costs it where
        it stands toward its target (the worst of a switched antenna's states and targets), as rank's build sheet
        gives it (snrgain.model.feedline.summary)."""
        from snrgain.model.feedline import summary

        out = []
        for i, d in enumerate(layout.designs):
            if d.name not in self.runs:
                continue
            where = (d.east_m, d.north_m)
            ants = self.states_at(i, d) if d.states else [self.antenna(i, d.bearing_rad, d.length_m).at(where)]
            sub, p = self.ranked_products(ants, i)
            costs = [
                (float(sheet["snr_gain_cost_db"][t]), t)
                for k in range(1, len(sub.antennas))
                if (sheet := summary(sub, p, k)) is not None
                for t in self.target[i]
            ]
            if costs:
                cost, t = max(costs)
                out.append((d.name, cost, self.sc.targets[t].name))
        return out

    def states_at(self, i: int, d: Design) -> list:
        """Switched candidate i's states standing at design ``d``: each at its feed point, a reversed wire's other
        state at the far end of the same wire."""
        from snrgain.scenario.switched import far_end

        first = self.sc.candidates[self.members[i][0]]
        out = []
        for k in self.members[i]:
            a = self.sc.candidates[k]
            sw = switched_state(a)
            pos = (d.east_m, d.north_m)
            if sw.how == "ends" and sw.index == 1:
                pos = far_end(first, first.bearing_rad, pos)
            elif sw.index == 1 and not first.long_wire and hasattr(first, "line_bearing_rad"):  # a loop's other side
                pos = far_end(first, first.line_bearing_rad, pos)
            out.append(a.at(pos))
        return out

    def switched_gains_db(self, designs: list[Design], i: int, *, exact: bool = False) -> np.ndarray:
        """Switched candidate i's worth [dB] at each design: over its targets, each target's SNR gain (the ranking's
        statistic, less what the TX vertical costs that state where it stands) in its best state, averaged as power
        ratios."""
        from snrgain import pipeline

        key = ("switched", i)
        known = self._sky.get(key)
        if known is None:
            states = [self.sc.candidates[k] for k in self.members[i]]
            sub = pipeline.with_candidates(self.sc, states, 1 + self.index[i])
            with tabled():
                known = self._sky[key] = pipeline.products(sub, sub.antennas, self.grid, self.skies, known=self.ref)
        ants = [a for d in designs for a in self.states_at(i, d)]
        if exact:
            g = self.ranked_gains_db(ants, i)
        else:
            sub = pipeline.with_candidates(self.sc, ants, 1 + self.index[i])
            with tabled():
                p = pipeline.products(sub, sub.antennas, self.grid, self.skies, known=known)
            g = pipeline.target_statistic(sub, pipeline.snr_gains(sub, p))[1:, :] - self.tx_costs_db(ants)[:, None]
        best = g.reshape(len(designs), len(self.members[i]), -1)[:, :, list(self.target[i])].max(axis=1)
        return 10 * np.log10(np.mean(10 ** (best / 10), axis=1))

    def tx_costs_db(self, ants) -> np.ndarray:
        """What the transmitting vertical, in the site's tx_state, and the site's structures take from each placed
        antenna's RDF [dB] (the SNR gain's change under a uniform sky: snrgain.model.scatter; the scatterers one by
        one, summed), 0 where it is not computed (a two-wire reversed port, pattern tables: the clearance rule)."""
        from snrgain.model.scatter import tx_costs_db, wire_terms

        total = np.zeros(len(ants))
        for st in ([self.scatterer] if self.scatterer is not None else []) + [s for _, s, _ in self.structures]:
            if st is not None:  # a long wire's places at once, then every place's cost at once
                total += tx_costs_db(self.sc, ants, st, wire_terms(self.sc, ants, st))
        return total

    def snr_gain_db(self, d: Design, i: int, *, exact: bool = False) -> float:
        """:meth:`snr_gains_db` of one design, kept (the layouts shown share designs; so do the refinement's steps)."""
        key = (i, d, exact)
        if key not in self._scored:
            self._scored[key] = float(self.snr_gains_db([d], i, exact=exact)[0])
        return self._scored[key]

    # -- geometry -----------------------------------------------------------------------------------------------

    def footprint(self, d: Design):
        from shapely.geometry import LineString, Point

        if d.length_m is None:
            return Point(d.east_m, d.north_m)
        end = (d.east_m + d.length_m * np.sin(d.bearing_rad), d.north_m + d.length_m * np.cos(d.bearing_rad))
        return LineString([(d.east_m, d.north_m), end])

    def _near_rule(self, what: str, name: str) -> str:
        """The rule keeping a design WIRE_SEPARATION_M from the ``what`` ("wire", "antenna") named ``name``."""
        return f"{length_text(WIRE_SEPARATION_M, self.sc.site.length_unit, 0)} from the {what} {name!r}"

    def violations(self, d: Design, others=()) -> dict[str, float]:
        """How far a design breaks each rule [m], by the rule and what it names: outside the lot, inside a keep-out
        area, short of the TX clearance or a structure's, closer than WIRE_SEPARATION_M to another wire (10 m a
        crossing) or to an antenna that stays where written (an array's elements, a vertical, a loop); only the rules
        it breaks."""
        shape = self.footprint(d)
        out = {}
        v = (
            shape.difference(self.lot).length
            if shape.length > 0
            else (0.0 if self.lot.covers(shape) else 1.0 + self.lot.exterior.distance(shape))
        )
        out["the lot's outline"] = v
        for (name, _), k in zip(self.sc.site.keep_out, self.keep):
            inter = shape.intersection(k)
            out[f"keep-out area {name!r}"] = inter.length if shape.length > 0 else (1.0 if not inter.is_empty else 0.0)
        if self.tx is not None and (self.clearance_given or not self.cost_computed[self.names.index(d.name)]):
            # a given clearance is a hard rule; without one only the antennas whose coupling is not computed (a
            # two-wire reversed port, pattern tables) keep half a wavelength (the others' cost is in their score)
            out[f"{length_text(self.clearance, self.sc.site.length_unit, 0)} from the transmitting vertical"] = max(
                0.0, self.clearance - shape.distance(self.tx)
            )
        for rule, foot, clear in self.structure_rules:
            out[rule] = max(0.0, clear - shape.distance(foot))
        wires = list(zip(self.fixed_names, self.fixed_wires)) + [(o.name, self.footprint(o)) for o in others]
        for name, w in wires:
            if shape.length > 0 and w.length > 0:
                out[self._near_rule("wire", name)] = (
                    10.0 if shape.intersects(w) else max(0.0, WIRE_SEPARATION_M - shape.distance(w))
                )
        for name, spot in self.fixed_spots:
            out[self._near_rule("antenna", name)] = max(0.0, WIRE_SEPARATION_M - shape.distance(spot))
        for rule, v in self.feed_line_columns([d.name], np.array([d.east_m]), np.array([d.north_m])):
            out[rule] = v[0]
        return {k: float(x) for k, x in out.items() if x > 0}

    def violations_many(self, designs: list[Design], others=()) -> list[dict[str, float]]:
        """:meth:`violations` of many designs beside the placed designs ``others`` (default: standing alone), each
        rule worked on all of them at once by shapely's array functions (the same operations, in the same order of
        rules)."""
        columns = self.violation_columns(designs, others)
        return [{rule: float(v[j]) for rule, v in columns if v[j] > 0} for j in range(len(designs))]

    def keep_rules(self, designs: list[Design], others=(), *, alone: bool = False):
        """Whether each design keeps every rule beside ``others`` (:meth:`violations_many` empty), as an array;
        ``alone``: (whether each keeps the rules that do not name one of ``others``, that array), from one pass."""
        columns = self.violation_columns(designs, others, flags=True)
        theirs = {self._near_rule("wire", o.name) for o in others} if alone else set()
        kept = np.ones(len(designs), dtype=bool)
        by_itself = kept.copy()
        for rule, v in columns:
            kept &= v <= 0
            if rule not in theirs:
                by_itself &= v <= 0
        return (by_itself, kept) if alone else kept

    def violation_columns(
        self, designs: list[Design], others=(), *, flags: bool = False, wires=None
    ) -> list[tuple[str, np.ndarray]]:
        """(rule, how far each design breaks it [m]) of :meth:`violations_many`, rule by rule; ``flags``: only
        whether each breaks it counts (a footprint the lot does not cover has a part of some length outside it: 1
        stands for that length, not worked out).  ``wires``: (name, east, north, bearing, length) arrays of one
        candidate's wires in place of ``designs`` (the grid's, none of them made into a Design yet)."""
        import shapely

        if wires is not None or (designs and all(d.length_m is not None for d in designs)):
            if wires is None:  # wires: their footprints made at once
                e = np.array([d.east_m for d in designs])
                n = np.array([d.north_m for d in designs])
                b = np.array([d.bearing_rad for d in designs])
                ln = np.array([d.length_m for d in designs])
            else:
                _, e, n, b, ln = wires
            ends = np.stack([np.stack([e, n], axis=1), np.stack([e + ln * np.sin(b), n + ln * np.cos(b)], axis=1)], 1)
            shapes = shapely.linestrings(ends)
        else:
            shapes = np.array([self.footprint(d) for d in designs], dtype=object)
        line = shapely.length(shapes) > 0
        columns = []
        # the overlays worked only where they can be other than empty (a footprint the lot covers has nothing
        # outside it; one that misses a keep-out area has nothing inside it): the same values, most designs skipped
        for g in (self.lot, *self.keep):
            shapely.prepare(g)
        covered = shapely.covers(self.lot, shapes)
        lot = np.zeros(len(shapes))
        out = ~covered
        if flags:
            lot[out] = 1.0
        elif out.any():
            lot[out & line] = shapely.length(shapely.difference(shapes[out & line], self.lot))
            lot[out & ~line] = 1.0 + shapely.distance(self.lot.exterior, shapes[out & ~line])
        columns.append(("the lot's outline", lot))
        for (name, _), k in zip(self.sc.site.keep_out, self.keep):
            hit = shapely.intersects(shapes, k)
            inside = np.zeros(len(shapes))
            if hit.any():
                inter = shapely.intersection(shapes[hit], k)
                inside[hit] = np.where(line[hit], shapely.length(inter), np.where(shapely.is_empty(inter), 0.0, 1.0))
            columns.append((f"keep-out area {name!r}", inside))
        if self.tx is not None:
            named = [wires[0]] * len(shapes) if wires is not None else [d.name for d in designs]
            applies = np.array([self.clearance_given or not self.cost_computed[self.names.index(m)] for m in named])
            short = np.maximum(0.0, self.clearance - shapely.distance(shapes, self.tx))
            columns.append(
                (
                    f"{length_text(self.clearance, self.sc.site.length_unit, 0)} from the transmitting vertical",
                    np.where(applies, short, 0.0),
                )
            )
        for rule, foot, clear in self.structure_rules:
            columns.append((rule, np.maximum(0.0, clear - shapely.distance(shapes, foot))))
        # the fixed wires, then the other placed wires, as violations() takes them
        standing = [*zip(self.fixed_names, self.fixed_wires), *((o.name, self.footprint(o)) for o in others)]
        for name, w in standing:
            if w.length > 0:
                near = np.where(
                    shapely.intersects(shapes, w),
                    10.0,
                    np.maximum(0.0, WIRE_SEPARATION_M - shapely.distance(shapes, w)),
                )
                columns.append(
                    (
                        self._near_rule("wire", name),
                        np.where(line, near, 0.0),
                    )
                )
        for name, spot in self.fixed_spots:
            columns.append(
                (
                    self._near_rule("antenna", name),
                    np.maximum(0.0, WIRE_SEPARATION_M - shapely.distance(shapes, spot)),
                )
            )
        if wires is not None:
            columns += self.feed_line_columns([wires[0]] * len(shapes), e, n, flags=flags)
        else:
            at = np.array([(d.east_m, d.north_m) for d in designs], dtype=float).reshape(-1, 2)
            columns += self.feed_line_columns([d.name for d in designs], at[:, 0], at[:, 1], flags=flags)
        return columns

    def feed_line_columns(self, names, east_m, north_m, *, flags: bool = False) -> list[tuple[str, np.ndarray]]:
        """(rule, how far each design breaks it [m]) for the feed lines of designs of the candidates ``names`` with
        their feed points at (``east_m``, ``north_m``): each run from the antenna to its station entry at least
        LEAST_RUN_M long and on the lot, as rank of the written layout wants it (snrgain.scenario.feedline refuses a
        file otherwise); ``flags`` as in :meth:`violation_columns`.  None where no placeable candidate has a line."""
        import shapely

        from snrgain.physics.feedline import LEAST_RUN_M

        if not self.runs or not any(name in self.runs for name in set(names)):
            return []
        unit = self.sc.site.length_unit
        short, off = np.zeros(len(names)), np.zeros(len(names))
        for name in set(names):
            sel = np.array([m == name for m in names])
            for (dx, dy), to in self.runs.get(name, ()):
                start = np.stack([east_m[sel] + dx, north_m[sel] + dy], axis=1)
                run = np.hypot(to[0] - start[:, 0], to[1] - start[:, 1])
                short[sel] = np.maximum(short[sel], LEAST_RUN_M - run)
                lines = shapely.linestrings(np.stack([start, np.broadcast_to(to, start.shape)], axis=1))
                out = ~shapely.covers(self.outline, lines)
                part = np.zeros(len(start))
                if flags:
                    part[out] = 1.0
                elif out.any():
                    part[out] = shapely.length(shapely.difference(lines[out], self.outline))
                off[sel] = np.maximum(off[sel], part)
        return [
            (f"its feed line at least {length_text(LEAST_RUN_M, unit, 0)} long", np.maximum(short, 0.0)),
            ("its feed line on the lot", off),
        ]

    def violation_m(self, d: Design, others=()) -> float:
        """How far a design breaks the rules [m] (the sum of :meth:`violations`); 0 when it keeps them all."""
        return float(sum(self.violations(d, others).values()))

    def feasible(self, i: int) -> list[Design]:
        """Candidate i's designs on the grid that keep every rule, from geometry alone (no SNR worked out); a
        ValueError naming the rules that bind, most binding first, when there is none."""
        pairs, points = self.grid_designs(i)
        designs = [(e, n, b, ln) for b, ln in pairs for e, n in points]  # made into Designs where they keep the rules
        if not designs:  # a lot too narrow for the grid's spacing holds no place at all
            raise ValueError(
                f"candidate {self.names[i]!r}: no place of the search's grid lies on the lot (it is too narrow or "
                "too small to stand an antenna on); check [site] lot"
            )
        if all(ln is not None for _, ln in pairs):  # wires: the rules worked from arrays, no Design made first
            arrays = [np.array(c, dtype=float) for c in zip(*designs)]
            columns = self.violation_columns([], flags=True, wires=(self.names[i], *arrays))
        else:
            made = [Design(self.names[i], *d, self.state_names[i]) for d in designs]
            columns = self.violation_columns(made, flags=True)
        broken: dict[str, np.ndarray] = {}  # by rule (a name given twice: broken where either column is)
        for rule, v in columns:
            broken[rule] = broken.get(rule, np.zeros(len(designs), dtype=bool)) | (v > 0)
        ok = ~np.any(np.array(list(broken.values())), axis=0) if broken else np.ones(len(designs), dtype=bool)
        found = [Design(self.names[i], *d, self.state_names[i]) for d, keep in zip(designs, ok) if keep]
        if not found:
            blocked = {rule: int(np.count_nonzero(b)) for rule, b in broken.items() if b.any()}
            ranked = sorted(blocked.items(), key=lambda kv: -kv[1])
            rules = "; ".join(f"{rule} ({100 * n / len(designs):.0f} %)" for rule, n in ranked[:4])
            structure = {r for r, _, _ in self.structure_rules} & {rule for rule, _ in ranked[:4]}
            raise ValueError(
                f"candidate {self.names[i]!r}: none of the {len(designs)} places tried on the lot keeps every rule "
                f"with these bearing and length ranges; the share of places each rule rules out: {rules}. Loosen the "
                "rule that binds most (move or shorten that wire, narrow the ranges, or widen the lot)"
                + (
                    "; a structure's is its clearance in [site] structures (default its height), to be made "
                    "smaller only where its guys and anchors allow"
                    if structure
                    else ""
                )
            )
        return found

    # -- search -----------------------------------------------------------------------------------------------

    def grid_designs(self, i: int):
        """Every (bearing, length) of candidate i's grid, and the feed points on the lot."""
        pl, ant = self.places[i], self.base[i]
        if pl.bearing is not None:
            lo, hi = pl.bearing
            span = np.mod(hi - lo, 2 * np.pi) or 0.0
            n = max(2, int(np.ceil(span / BEARING_STEP_RAD)) + 1) if span > 0 else 1
            bearings = [float(np.mod(lo + span * t, 2 * np.pi)) for t in np.linspace(0, 1, n)]
        else:
            bearings = [_bearing_of(ant)]
        if ant.long_wire:
            lengths = (
                [float(x) for x in np.linspace(*pl.length, LENGTHS_PER_RANGE)]
                if pl.length is not None
                else [ant.length_m]
            )
        else:
            lengths = [None]
        return [(b, ln) for b in bearings for ln in lengths], self.lot_points()

    def lot_points(self) -> list[tuple[float, float]]:
        """Feed points on a square grid over the lot, about POSITIONS_ON_LOT of them inside it (made once)."""
        if self._points is None:
            import shapely

            minx, miny, maxx, maxy = self.lot.bounds
            step = self.lot_step()
            xs = np.arange(minx + step / 2, maxx, step)
            ys = np.arange(miny + step / 2, maxy, step)
            x, y = (a.ravel() for a in np.meshgrid(xs, ys, indexing="ij"))  # x outer, y inner, as listed before
            inside = shapely.covers(self.lot, shapely.points(x, y))
            self._points = [(float(a), float(b)) for a, b in zip(x[inside], y[inside])]
        return list(self._points)

    def search(self, *, progress=None, keep: int = 3) -> list[Layout]:
        """The best layouts, best first (module docstring); ``progress(done, total)`` is called as the grid runs."""
        per = []
        feasible = [self.feasible(i) for i in range(len(self.names))]  # geometry first: a dead end says so at once
        scores = self.grid_all(feasible, progress)
        for found in scores:
            found = sorted(found, key=lambda x: -x[0])
            top = max(2, int(MAX_COMBINATIONS ** (1.0 / len(feasible))))
            per.append(_distinct(found, min(TOP_PER_CANDIDATE, top)))
        # Every combination of the kept designs, best total first, until enough keep clear of one another.
        import itertools

        combos = list(itertools.product(*[range(len(p)) for p in per]))
        ranked = [combos[k] for k in np.argsort(-_worths_db(per, combos), kind="stable")]
        chosen = []
        for ix in ranked:
            designs = [per[i][j][1] for i, j in enumerate(ix)]
            if all(self.violation_m(d, designs[:j]) == 0.0 for j, d in enumerate(designs)):
                chosen.append(designs)
                if len(chosen) == keep:
                    break
        if not chosen:
            raise ValueError(
                f"layout: the placeable wires cannot all be placed without crossing or coming within "
                f"{length_text(WIRE_SEPARATION_M, self.sc.site.length_unit, 0)} of one another; widen the ranges or "
                "the lot"
            )
        for i, d in enumerate(chosen[0]):  # the refinement's start as the grid left it, also if scored elsewhere
            if self._key(i, d.bearing_rad, d.length_m) not in self._sky and not self.switched[i]:
                self.snr_gains_db(
                    [g for g in feasible[i] if (g.bearing_rad, g.length_m) == (d.bearing_rad, d.length_m)], i
                )
        # the refinement, with the layouts as the ranking scores them (its start's and the next-best ones') worked
        # beside it (:meth:`_polished`)
        designs, layouts = self._polished(list(chosen[0]), lambda: [self._layout(d) for d in chosen])
        layouts[0] = self._better(layouts[0], designs)
        layouts.sort(key=lambda lay: -lay.worth_db)
        return layouts

    def grid_scores(self, i: int, designs: list[Design], step=None) -> list[tuple[float, Design]]:
        """(score, design) of each of candidate i's feasible grid designs, a (bearing, length) at all its places in
        one call (:meth:`snr_gains_db`), in the grid's order; ``step(n)`` is called as n more are scored."""
        found = []
        for group in _design_groups(designs):
            found += list(zip((float(g) for g in self.snr_gains_db(group, i)), group))
            if step is not None:
                step(len(group))
        return found

    def grid_all(self, feasible: list[list[Design]], progress=None) -> list[list[tuple[float, Design]]]:
        """:meth:`grid_scores` of every candidate.  On a machine with two cores or more (and fork) the grid's
        groups (a design, a bearing and length, at all its places) are shared between this process and a forked
        one, each group whole, by their count of places (a group's cost is nearly a constant plus a share per
        place), after this one has scored each candidate's first group (the tables and kept values a candidate's
        first design makes, the placed sources' and the vertical's fields, the sky's groups, are then inherited by
        the other process, not made again there); else one after the other.  The scores are the same either way:
        a design's score at a place does not depend on what else was scored before it (tested); the groups scored
        in the other process leave no kept products here (the search makes again the one design of those its
        refinement starts from)."""
        total = sum(len(f) for f in feasible)
        done = [0]

        def step(n):
            done[0] += n
            if progress is not None:
                progress(done[0], total)

        groups = [_design_groups(f) for f in feasible]
        if sum(max(len(g) - 1, 0) for g in groups) < 2 or not spare_core():  # nothing worth sharing
            return [self.grid_scores(i, f, step) for i, f in enumerate(feasible)]
        scored = {(i, 0): self.grid_scores(i, g[0], step) for i, g in enumerate(groups) if g}
        rest = [(i, k) for i, g in enumerate(groups) for k in range(1, len(g))]
        here, there = _shared_out([GROUP_COST_PLACES + len(groups[i][k]) for i, k in rest])
        theirs_ix = [rest[j] for j in there]
        with elsewhere(lambda: [self.grid_scores(i, groups[i][k]) for i, k in theirs_ix]) as theirs:
            for j in here:
                i, k = rest[j]
                scored[(i, k)] = self.grid_scores(i, groups[i][k], step)
            got = theirs()
        if got is None:  # the other process failed: its groups scored here
            got = [self.grid_scores(i, groups[i][k]) for i, k in theirs_ix]
        scored.update(zip(theirs_ix, got))
        step(sum(len(groups[i][k]) for i, k in theirs_ix))
        return [[x for k in range(len(g)) for x in scored[(i, k)]] for i, g in enumerate(groups)]

    def _layout(self, designs) -> Layout:
        """The layout of ``designs`` with each one's SNR gain as the ranking gives it (``exact``)."""
        return Layout(
            tuple(designs),
            tuple(self.snr_gain_db(d, i, exact=True) for i, d in enumerate(designs)),
            tuple(", ".join(self.sc.targets[t].name for t in self.target[i]) for i in range(len(designs))),
        )

    def refine(self, start: Layout) -> Layout:
        """A local search from ``start`` (:meth:`polish`), each candidate in turn beside the others as they stand;
        the start is kept unless the layout found keeps every rule and is better (as the ranking scores it)."""
        return self._better(start, self._polished(list(start.designs))[0])

    def _better(self, start: Layout, designs: list[Design]) -> Layout:
        """The layout of ``designs`` where they differ from ``start``'s, keep every rule and do better; else start."""
        if designs != list(start.designs) and all(
            self.violation_m(d, designs[:j]) == 0.0 for j, d in enumerate(designs)
        ):
            cand = self._layout(designs)
            if cand.worth_db > start.worth_db:
                return cand
        return start

    def _polished(self, designs: list[Design], meanwhile=None) -> tuple[list[Design], object]:
        """(each candidate polished in turn (:meth:`polish`) beside the others as they stand: the ones before it
        polished, the ones after it as they started; what ``meanwhile()`` gives, or None).

        On a spare core the candidates from the second on are polished meanwhile in a forked process, beside the
        first as it started, which keeps every stencil's scores, while this one polishes the first and then runs
        ``meanwhile``; each is then polished here in its turn with those scores at hand, so only a stencil that
        process did not score (where the first's end, not its start, turns the search another way) is scored here:
        the same search, the same scores (a stencil is scored on the designs that keep the rules standing alone,
        whichever way the others stand).  With one candidate, ``meanwhile`` is what runs in the forked process."""
        seen: list = [None] * len(designs)
        first, extra = 0, None
        if spare_core() and (len(designs) > 1 or meanwhile is not None):
            first = 1
            if len(designs) > 1:

                def rest():
                    mine, out = list(designs), []
                    for i in range(1, len(mine)):
                        out.append({})
                        mine[i] = self.polish(i, mine[i], mine[:i] + mine[i + 1 :], scored=out[-1])
                    return out

                with elsewhere(rest) as theirs:
                    designs[0] = self.polish(0, designs[0], designs[1:])
                    extra = meanwhile() if meanwhile is not None else None
                    found = theirs()
                if found is not None:
                    seen[1:] = found
            else:
                with elsewhere(meanwhile) as theirs:
                    designs[0] = self.polish(0, designs[0])
                    extra = theirs()  # None where the other process failed: worked below
        for i in range(first, len(designs)):
            designs[i] = self.polish(i, designs[i], designs[:i] + designs[i + 1 :], scored=seen[i])
        if meanwhile is not None and extra is None:
            extra = meanwhile()
        return designs, extra

    def polish(self, i: int, start: Design, others=(), *, scored: dict | None = None) -> Design:
        """Candidate i's design near ``start`` with the best score (:meth:`snr_gains_db`) that keeps every rule
        beside ``others``: a compass search (a pattern search with a shrinking stencil: R. M. Lewis, V. Torczon and
        M. W. Trosset, "Direct search methods: then and now", J. Comput. Appl. Math. 124 (2000) 191-207) over the
        feed point, the bearing and the length within their ranges, whose steps are worked a stencil at a time.

        A design's far field does not move with it, so the feed point's stencil (the 8 neighbours on a square of
        side 2 x step) is one call; each step of the bearing or the length (a new pattern) is tried with the same
        stencil of feed points around the current one, following the ridges where a move of the wire must go with
        a move of its feed point (a placed source kept off the wire's response).  The first stencil that does
        better is taken (the one that did last tried first, its step doubled when it does better again, up to half the
        grid's spacing); when none does, every step is halved, down to REFINE_LEAST_*, and the search ends when a
        stencil of those least steps finds nothing better.  Steps start at REFINE_FIRST_STEP of the grid's spacing
        (the grid's best is within half of it of a better design).  ``scored``: the scores of the stencils scored
        before, by their designs, read from it and kept in it (:meth:`_polished`)."""
        pl = self.places[i]
        b0 = start.bearing_rad
        has_b = pl.bearing is not None and b0 is not None and not self.switched[i]
        has_l = pl.length is not None and start.length_m is not None and not self.switched[i]
        lo_b = pl.bearing[0] if has_b else 0.0
        span_b = float(np.mod(pl.bearing[1] - pl.bearing[0], 2 * np.pi)) if has_b else 0.0
        lo_l, hi_l = pl.length if has_l else (0.0, 0.0)
        pairs, _ = self.grid_designs(i)
        nb = len({b for b, _ in pairs})
        spacing = {  # the grid's: feed points, bearings, lengths
            "p": self.lot_step(),
            "b": span_b / max(nb - 1, 1) if has_b else 0.0,
            "l": (hi_l - lo_l) / (LENGTHS_PER_RANGE - 1) if has_l else 0.0,
        }
        cur = start
        best = None if scored is None else scored.get((cur,))
        if best is None:
            best = self.snr_gain_db(cur, i)
            if scored is not None:
                scored[(cur,)] = best
        ring = [(dx, dy) for dx in (-1, 0, 1) for dy in (-1, 0, 1) if dx or dy]
        least = {"p": REFINE_LEAST_STEP_M, "b": REFINE_LEAST_BEARING_RAD, "l": REFINE_LEAST_LENGTH_M}
        top = {k: v / 2 for k, v in spacing.items()}
        step = {k: v * REFINE_FIRST_STEP for k, v in spacing.items()}
        last = None
        for _ in range(REFINE_MOST_ROUNDS):
            moves = [("p", 0)]
            if has_b:
                moves += [("b", -1), ("b", 1)]
            if has_l:
                moves += [("l", -1), ("l", 1)]
            if last in moves:
                moves.remove(last)
                moves.insert(0, last)
            moved = False
            for kind, sign in moves:
                b, ln = cur.bearing_rad, cur.length_m
                if kind == "b":
                    t = float(np.mod(b - lo_b, 2 * np.pi))
                    if t > span_b:  # outside the range by rounding: the nearer end
                        t = 0.0 if 2 * np.pi - t < t - span_b else span_b
                    t2 = float(np.clip(t + sign * step["b"], 0.0, span_b))
                    if t2 == t:
                        continue
                    b = float(np.mod(lo_b + t2, 2 * np.pi))
                elif kind == "l":
                    l2 = float(np.clip(ln + sign * step["l"], lo_l, hi_l))
                    if l2 == ln:
                        continue
                    ln = l2
                sp = step["p"]
                offsets = ring if kind == "p" else [(0, 0), *ring]
                trial = [
                    replace(cur, east_m=cur.east_m + dx * sp, north_m=cur.north_m + dy * sp, bearing_rad=b, length_m=ln)
                    for dx, dy in offsets
                ]
                # scored: the designs that keep the rules standing alone (the same stencil beside the others as
                # they stand anywhere, :meth:`_polished`); chosen from: those that keep them beside the others too
                alone, kept = self.keep_rules(trial, others, alone=True)
                if not kept.any():
                    continue
                group = tuple(d for d, keep in zip(trial, alone) if keep)
                g = None if scored is None else scored.get(group)
                if g is None:
                    g = (
                        self.snr_gains_db(list(group), i)
                        if len(group) > 1
                        else np.array([self.snr_gain_db(group[0], i)])
                    )
                    if scored is not None:
                        scored[group] = g
                g = g[kept[alone]]
                ok = [d for d, keep in zip(trial, kept) if keep]
                k = int(np.argmax(g))
                if g[k] > best + REFINE_LEAST_GAIN_DB:
                    if last == (kind, sign):  # the same move again: a longer step (up to the first)
                        step[kind] = min(2 * step[kind], top[kind])
                    cur, best, last, moved = ok[k], float(g[k]), (kind, sign), True
                    break
            if not moved:
                if all(step[k] <= least[k] for k in step):
                    break
                step = {k: max(v / 2, least[k]) if v > least[k] else v for k, v in step.items()}
        return cur

    def lot_step(self) -> float:
        """The spacing of the grid of feed points on the lot [m] (:meth:`lot_points`)."""
        return max(float(np.sqrt(self.lot.area / POSITIONS_ON_LOT)), 0.5)

    def random_valid(self, rng, *, tries: int = 20000) -> Layout:
        """A layout drawn at random among the valid ones (for comparison): uniform positions on the lot's box,
        bearings and lengths in their ranges, redrawn until every rule holds."""
        minx, miny, maxx, maxy = self.lot.bounds
        for _ in range(tries):
            ds = []
            for i, ant in enumerate(self.base):
                pl = self.places[i]
                b = _bearing_of(ant)
                if pl.bearing is not None:
                    lo, hi = pl.bearing
                    b = float(np.mod(lo + rng.uniform() * (np.mod(hi - lo, 2 * np.pi)), 2 * np.pi))
                ln = None
                if ant.long_wire:
                    ln = float(rng.uniform(*pl.length)) if pl.length is not None else ant.length_m
                e, n = float(rng.uniform(minx, maxx)), float(rng.uniform(miny, maxy))
                ds.append(Design(self.names[i], e, n, b, ln, self.state_names[i]))
            if all(self.violation_m(d, ds[:j]) == 0.0 for j, d in enumerate(ds)):
                return self._layout(ds)
        raise ValueError("layout: no valid random placement found")


def plan_data(problem: Problem, layout: Layout) -> dict:
    """What :func:`snrgain.outputs.plots.layout_plan` draws: the site plan (:func:`snrgain.outputs.siteplan.plan_of`:
    the lot, keep-outs, the TX vertical and its clearance, the placed sources, every antenna as built) with the
    layout's designs in place of the placed candidates, each labelled with its SNR gain; and the layout itself."""
    from snrgain.outputs.siteplan import plan_of

    gains, designs = {}, []
    for i, (d, g, t) in enumerate(zip(layout.designs, layout.snr_gain_db, layout.targets)):
        note = f"{g:+.1f} dB toward {t} (placed by layout)"
        if not d.states:
            gains[d.name] = note
            designs.append(d)
            continue
        for a in problem.states_at(i, d):  # a switched antenna: each state drawn where it stands
            gains[a.name] = f"{note}, in its best state"
            e, n = a.params.position
            designs.append(Design(a.name, e, n, _bearing_of(a), getattr(a, "length_m", None) if a.long_wire else None))
    # every feed line drawn, the placed candidates' from where the layout puts them
    plan = plan_of(problem.sc, data=problem.data, designs=tuple(designs), gains=gains)
    plan["layout"] = as_dict([layout])["layouts"][0]
    return plan


def range_end_notes(problem: Problem, layout: Layout, unit: str = "m") -> list[str]:
    """For each design of ``layout`` whose bearing or length lies at an end of the range its place table allows (a
    bearing within 1 deg of it, a length within 1 %), a sentence: the best may lie beyond what was searched."""
    out = []
    for d, pl in zip(layout.designs, problem.places):
        ends = []
        if pl.bearing is not None and d.bearing_rad is not None and not d.states:
            lo, hi = (float(np.degrees(x)) % 360.0 for x in pl.bearing)
            b = float(np.degrees(d.bearing_rad)) % 360.0
            for end, at in (("the first", lo), ("the last", hi)):
                if (hi - lo) % 360.0 > 1.0 and abs((b - at + 180.0) % 360.0 - 180.0) < 1.0:
                    ends.append(f"its bearing, {b:.0f} deg, is {end} of the bearings allowed ({lo:.0f}-{hi:.0f} deg)")
        if pl.length is not None and d.length_m is not None:
            lo, hi = (float(x) for x in pl.length)
            for end, at in (("the shortest", lo), ("the longest", hi)):
                if hi > lo * 1.01 and abs(d.length_m - at) <= 0.01 * at:
                    ends.append(
                        f"its length, {length_text(d.length_m, unit, 0)}, is {end} allowed "
                        f"({length_text(lo, unit, 0)} to {length_text(hi, unit, 0)})"
                    )
        if ends:
            short = any("the shortest" in e for e in ends) and problem.placed
            out.append(
                f"{d.name}: " + " and ".join(ends) + "; the best may lie beyond what was searched: widen its place "
                "table's range to look"
                + (
                    " (a wire at its shortest may win by standing clear of a placed source rather than by its "
                    "pattern: compare its RDF with the reference's in rank)"
                    if short
                    else ""
                )
            )
    return out


def placed_feed_line_notices(problem: Problem, layout: Layout) -> list:
    """The lot's feed-line notices (snrgain.decide.lot.feed_line_notices: a run within the user's tx_clearance) of the
    placed candidates' feed lines, each run from where ``layout`` puts its antenna to its station entry."""
    from snrgain.decide.lot import feed_line_notices

    lines = problem.sc.feed_lines
    runs = {d.name: ((d.east_m, d.north_m), lines[d.name].end_m) for d in layout.designs if d.name in lines}
    return feed_line_notices(problem.sc, runs)


def _statistic(sc, g: np.ndarray, t: int) -> np.ndarray:
    """The ranking's statistic (snrgain.model.products.target_statistic) toward target ``t`` of every antenna at
    once, from SNR gains (antennas, targets, months, hours): the median (or the mean) of each row over the target's
    months and hours (snrgain.model.spread.over_hours)."""
    from snrgain.model.products import target_masks
    from snrgain.model.spread import median  # np.median's value without loading numpy.ma

    v = g[:, t][:, target_masks(sc)[t]]  # (antennas, the target's month-hours)
    return median(v, axis=1) if sc.uncertainty.hours else np.mean(v, axis=1)


def _worths_db(per: list[list[tuple[float, Design]]], combos: list[tuple[int, ...]]) -> np.ndarray:
    """:attr:`Layout.worth_db` of each combination (one index into each candidate's (score, design) list), all at
    once in the same arithmetic (row by row)."""
    g = np.array([[per[i][j][0] for i, j in enumerate(ix)] for ix in combos], dtype=float).reshape(len(combos), -1)
    return 10 * np.log10(np.mean(10 ** (g / 10), axis=1))


def _member(antenna) -> str:
    """The candidate an antenna belongs to: its own name, or the switched antenna it is a state of."""
    sw = switched_state(antenna)
    return antenna.name if sw is None else sw.group


def _bearing_of(antenna) -> float | None:
    b = getattr(antenna.params, "bearing", None)
    return None if b is None else float(b)


def _middle(rng) -> float:
    lo, hi = rng
    return float(np.mod(lo + 0.5 * np.mod(hi - lo, 2 * np.pi), 2 * np.pi))


def _distinct(found, k):
    """The k best designs, skipping those within 10 m and 5 deg of one already taken (a layout's neighbours)."""
    out = []
    for v, d in found:
        if all(
            np.hypot(d.east_m - o.east_m, d.north_m - o.north_m) > 10.0
            or (d.bearing_rad is not None and abs(d.bearing_rad - o.bearing_rad) > 0.09)
            for _, o in out
        ):
            out.append((v, d))
        if len(out) == k:
            break
    return out


def as_dict(layouts: list[Layout]) -> dict:
    """JSON-ready layouts (SI units in the keys, bearings in degrees)."""
    return {
        "layouts": [
            {
                "worth_db": lay.worth_db,
                "candidates": [
                    {
                        "name": d.name,
                        "position_m": [d.east_m, d.north_m],
                        "bearing_deg": None if d.bearing_rad is None else float(np.degrees(d.bearing_rad)),
                        "length_m": d.length_m,
                        **({"states": list(d.states)} if d.states else {}),
                        "target": t,
                        "snr_gain_db": g,
                    }
                    for d, g, t in zip(lay.designs, lay.snr_gain_db, lay.targets)
                ],
            }
            for lay in layouts
        ]
    }


def with_layout(text: str, layout: Layout, unit: str | None = None) -> str:
    """The scenario text with each placed candidate's position, bearing and length written in (its place table
    dropped), in ``unit`` ("m" or "ft"; default the unit the text's lengths use, snrgain.units.length_unit_of);
    other lines are kept as written."""
    from snrgain.tools.tomltext import rewrite_table
    from snrgain.units import length_literal

    if unit is None:
        import tomllib

        unit = length_unit_of(tomllib.loads(text))
    for d in layout.designs:
        pos = f"[{length_literal(d.east_m, unit)}, {length_literal(d.north_m, unit)}]"
        add = [f"position = {pos}   # placed by snrgain layout\n"]
        if d.states:  # a switched antenna: its bearings are its directions, its length as written
            text = rewrite_table(text, "[[candidate]]", d.name, drop={"position", "place"}, add=add)
            continue
        if d.bearing_rad is not None:
            add.append(f'bearing = "{np.degrees(d.bearing_rad):.1f} deg"\n')
        if d.length_m is not None:
            add.append(f"length = {length_literal(d.length_m, unit)}\n")
        text = rewrite_table(text, "[[candidate]]", d.name, drop={"position", "bearing", "length", "place"}, add=add)
    return text


GROUP_COST_PLACES = 50
"""A grid group's cost in places: scoring a design at n places costs about as much as n + GROUP_COST_PLACES places
would at the margin (measured on the 20-acre demo: 4 ms for a handful of places, 8-10 ms for 70)."""


def _design_groups(designs: list[Design]) -> list[list[Design]]:
    """``designs`` in groups of one (bearing, length), in order of each group's first design."""
    same: dict[tuple, list[Design]] = {}
    for d in designs:
        same.setdefault((d.bearing_rad, d.length_m), []).append(d)
    return list(same.values())


def _shared_out(costs: list[float]) -> tuple[list[int], list[int]]:
    """The indices of ``costs`` shared between two processes, (here, there), each in order: greatest first, each
    to the side with less so far (the longest-processing-time rule: within 4/3 of the best split, R. L. Graham,
    "Bounds on multiprocessing timing anomalies", SIAM J. Appl. Math. 17 (1969) 416-429)."""
    load = [0.0, 0.0]
    sides: list[list[int]] = [[], []]
    for j in sorted(range(len(costs)), key=lambda j: -costs[j]):
        side = 0 if load[0] <= load[1] else 1
        sides[side].append(j)
        load[side] += costs[j]
    return sorted(sides[0]), sorted(sides[1])
