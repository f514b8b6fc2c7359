"""Feed lines in the pipeline: what each antenna's feed line adds to its noise, and what choke would quiet it.

The physics is :mod:`snrgain.physics.feedline` (the shield as a wire over the ground, loaded by the choke and the
grounds, coupled through the antenna's feed ground).  Here it meets the integrator
(:func:`snrgain.model.products.products`):

- the sky: the feed line's "gain" into the receiver (:func:`snrgain.physics.feedline.sky_gain`) is integrated over
  each sky component as an antenna's gain is (:func:`snrgain.model.snr.sky_temperatures`), and added to the
  antenna's temperature from that component;
- a placed source: the feed line's amplitude from it adds as a phasor to the antenna's own (one source drives
  both), and what that changes of the antenna's power, in the units of :func:`snrgain.model.placed.pickup`, is
  added before the antenna's share of the source is taken (:func:`shares_with`).

Over the sky the two paths add in power (the physics module's docstring says why).  The feed line's share of the
noise (its own pickup over its own plus the antenna's), the SNR gain it costs (with and without it) and the choke
resistance that brings its own pickup 20 dB below the antenna's at the worst hour listened are read from the
products (:func:`summary`) into the antenna's build sheet, and a notice names an antenna whose feed line costs more
than :data:`COST_WARNING_DB`.  Only candidates take a feed line (the site's levels are read on the reference as it
stands): long wires, verticals, loops and arrays (:func:`antenna_end` says what the shield meets at each one's feed;
a ``feed-line-ground-assumed`` notice names an antenna whose ground there is snrgain's assumption).
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from snrgain.memo import Memo
from snrgain.physics import feedline as phys
from snrgain.records import record

COST_WARNING_DB = 1.0
"""A feed line that costs more SNR gain than this [dB] is named in a notice."""
QUIET_BELOW_DB = 20.0
"""How far below the antenna's own pickup the reported choke puts the feed line's [dB]."""
CAUTIONS = (
    "A feed line is a path for lightning and static into the house: ground its shield where it enters (a ground "
    "block at the entry, bonded to the station's and the electrical service's grounds as the local electrical code "
    "requires), and disconnect it when storms are near.",
    "Separate grounds (the antenna's rod, the station's) must be bonded as the local electrical code requires; a "
    "common-mode choke or an isolation transformer breaks the radio-frequency path, not the safety bond.",
    "A buried feed line: call before you dig (buried utilities), and use cable rated for burial.",
)


@record
class Prepared:
    """The feed lines of a set of antennas at one frequency: ``lines`` k -> (FeedLine, Coupling) for the antennas
    that have one; per placed source name -> (antennas,): ``powers`` the power each feed line delivers from it
    alone, ``effects`` what it changes of the antenna's power, |a + b|^2 - |a|^2 with a the antenna's own amplitude
    and b the feed line's (they add as phasors; negative where they cancel); ``reference_powers`` name -> the
    reference antenna's own power from it; and the ``ground`` they were worked on."""

    lines: dict
    powers: dict
    effects: dict
    reference_powers: dict
    ground: object


@record
class FeedLineTemps:
    """What the feed lines add (components, antennas, months, hours) [K], zero for antennas without one:
    ``by_component`` the feed line's own pickup (its share of the noise; what a choke lowers), ``effect`` what it
    changes of the antenna's temperature (the same over the sky; for a placed source the phasor sum's change)."""

    prepared: Prepared
    by_component: np.ndarray
    effect: np.ndarray


def antenna_loads(antenna, freq_hz: float) -> tuple[float, complex, float]:
    """(feed ground rod, the antenna's own loop Z_in + Z_load, the receiver's load through the transformer) [ohm];
    ValueError for an antenna without a feed ground."""
    rod = getattr(antenna, "feed_rod_ohm", None)
    if rod is None or not _has_loads(antenna):
        raise _no_loads(antenna)
    load = float(antenna.receiver_load_ohm(freq_hz))
    z_in = complex(antenna.feed_point_impedance(freq_hz)) - rod
    return float(rod), z_in + load, load


def _has_loads(antenna) -> bool:
    return hasattr(antenna, "feed_point_impedance") and hasattr(antenna, "receiver_load_ohm")


def _no_loads(antenna) -> ValueError:
    return ValueError(
        "the feed line's coupling is modelled through the antenna's feed ground rod and transformer (the long "
        f"wires); a {antenna.family} has neither"
    )


PHASING_UNIT_GROUND_OHM = 50.0
"""The ground a phasing unit's common stands on when the array gives none [ohm]: one short ground rod in average
soil (tens to a few hundred ohm: common practice; snrgain's assumption, said in a notice)."""
ARRAY_PORT_OHM = 75.0
"""A phasing unit's output port [ohm]: the coax it drives, the matched lossless combiner of snrgain.antennas.array."""


def antenna_end(antenna, freq_hz: float, ground) -> tuple[phys.End, str, bool]:
    """(what the shield meets at the antenna's feed, in words, whether that ground is snrgain's assumption) for each
    family that takes a feed line (read from what it exposes, never its name); ValueError for one that takes none.

    - a long wire: its feed ground rod with its own loop across it (:func:`antenna_loads`);
    - a vertical: its radial system or rod, the ``ground_loss`` its pattern is worked with, with the vertical's
      own loop across it: its radiation resistance and the receiver's load, the conjugate match its realized gain
      assumes (the reactances cancel: loop 2 R_rad + R_ground, load R_rad + R_ground).  The shield's share through
      the load is then a series EMF I_A (R_ground || loop) in the antenna's loop, as for the long wires;
    - a terminated loop (flag) or a small loop: no ground at the feed (:func:`snrgain.physics.feedline.floating_end`):
      the loop's two halves over the earth (their capacitance matrix by the thin-wire moment solution of
      :func:`snrgain.antennas.termloop.halves_capacitance`), the shield on the lower half's terminal of a flag, on
      one terminal at the bottom middle of a small loop; the flag's halves joined around by its termination, the
      loop's inductance and wire loss, the small loop's by its own wire, the load as the family's gain takes it (a
      flag's transformer load, the small loop's conjugate match; a loop of several turns: the capacitance of one,
      the inductance times the turns squared);
    - an array: the phasing unit's output at its place, a series EMF in a port of :data:`ARRAY_PORT_OHM` (the
      matched combiner), its common grounded by :data:`PHASING_UNIT_GROUND_OHM` (assumed: the arrays give none).
    Where the wiring fixes no sign between the feed line's path and the antenna's own (a loop's terminals, a phasing
    unit's), the two add in power for a placed source (the mean over the two ways of wiring it)."""
    f = float(freq_hz)
    kind = end_kind(antenna)
    if kind == "rod":
        rod, loop, load = antenna_loads(antenna, f)
        end = phys.grounded_end(rod_ohm=rod, loop_ohm=loop, load_ohm=load)
        return end, f"its feed ground rod ({rod:.3g} ohm)", False
    if kind == "phasing unit":
        end = phys.grounded_end(rod_ohm=PHASING_UNIT_GROUND_OHM, loop_ohm=2 * ARRAY_PORT_OHM, load_ohm=ARRAY_PORT_OHM)
        return (
            phys.replace_end(end, coherent=False),
            f"the phasing unit's ground (assumed {PHASING_UNIT_GROUND_OHM:g} ohm)",
            True,
        )
    if kind == "radials":
        r_rad, r_g = float(antenna.radiation_resistance_ohm(f)), float(antenna.ground_loss_ohm)
        end = phys.grounded_end(rod_ohm=r_g, loop_ohm=2 * r_rad + r_g, load_ohm=r_rad + r_g)
        return end, f"its radial system or rod (ground_loss {r_g:g} ohm)", False
    if kind == "flag":
        return _flag_end(antenna, f), "the loop itself, over the earth (no ground at its feed)", False
    return _small_loop_end(antenna, f), "the loop itself, over the earth (no ground at its feed)", False


def end_kind(antenna) -> str:
    """Which of :func:`antenna_end`'s ends an antenna's feed line meets ("rod", "phasing unit", "radials", "flag",
    "small loop"), read from what the antenna exposes without working the end out (its loads, a loop's capacitance):
    what a scenario's check needs; ValueError, as :func:`antenna_end` raises it, for one that takes no feed line."""
    if antenna.composite:
        raise ValueError(
            f"a feed line belongs to one of the antennas a {antenna.family} combines, not to the combination"
        )
    if getattr(antenna, "feed_rod_ohm", None) is not None:
        if not _has_loads(antenna):
            raise _no_loads(antenna)
        return "rod"
    if antenna.phased and getattr(antenna, "elements", None):
        return "phasing unit"
    if hasattr(antenna, "radiation_resistance_ohm") and hasattr(antenna, "ground_loss_ohm"):
        return "radials"
    if hasattr(antenna, "termination_ohm") and hasattr(antenna, "statics"):
        return "flag"
    if hasattr(antenna, "input_resistance_ohm") and hasattr(antenna, "area_m2"):
        return "small loop"
    raise ValueError(
        "a feed line is modelled on the long wires, verticals, loops and arrays (through the feed's ground or the "
        f"loop's capacitance to the earth); a {antenna.family} has neither"
    )


def _halves_capacitance(upper, lower, radius_m: float, image: float) -> np.ndarray:
    """:func:`snrgain.antennas.termloop.halves_capacitance`, kept by the outline, wire and ground (a moment solution:
    the same loop over the same ground for every products of a run, a termination tried or a spread's ground)."""
    from snrgain.antennas.termloop import halves_capacitance

    def outline(points):
        return tuple(tuple(float(v) for v in p) for p in points)

    key = ("halves", outline(upper), outline(lower), float(radius_m), float(image))
    return _memo(key, lambda: halves_capacitance(upper, lower, radius_m, image)).copy()


def _flag_end(antenna, f: float) -> phys.End:
    from snrgain.antennas.termloop import static_image_factor
    from snrgain.physics import lines

    c = _halves_capacitance(
        antenna.upper, antenna.lower, antenna.params.radius_m, static_image_factor(antenna.ground, f)
    )
    c = c[::-1, ::-1]  # the shield on the lower half's terminal: P = lower, Q = upper
    inductance = antenna.statics(f)[0]
    skin = float(np.real(lines.wire_internal_impedance(f, antenna.params.radius_m))) * antenna.perimeter_m
    other = antenna.termination_ohm(f) + skin + 2j * np.pi * f * inductance
    return phys.floating_end(f, c, other_ohm=other, load_ohm=antenna.receiver_load_ohm(f))


def _small_loop_end(antenna, f: float) -> phys.End:
    from snrgain.antennas.termloop import loop_constants, static_image_factor

    p = antenna.params
    z1, z2, w = p.height - p.loop_height / 2, p.height + p.loop_height / 2, p.width
    a = [(w / 2, z1), (0.0, z1), (0.0, z2), (w / 2, z2)]  # the halves, from the feed at the bottom middle
    b = [(w / 2, z1), (w, z1), (w, z2), (w / 2, z2)]
    image = static_image_factor(antenna.ground, f)
    c = _halves_capacitance(a, b, p.radius_m, image)
    inductance = loop_constants(a, b, p.radius_m, image)[0] * p.turns**2
    r_rad, r_loss = antenna.input_resistance_ohm(f)
    z_in = complex(r_rad + r_loss, 2 * np.pi * f * inductance)
    return phys.floating_end(f, c, other_ohm=z_in, load_ohm=np.conj(z_in))


def feed_point(antenna, reference_m=None) -> tuple[float, float]:
    """Where an antenna's feed line starts [m east, m north]: its ``position`` (an array's phasing unit: its
    ``position`` when given, else the centre of its elements); ValueError naming ``position`` for one that stands
    nowhere on the plan."""
    pos = getattr(antenna, "positions", None)
    if antenna.params.position is not None:
        return float(antenna.params.position[0]), float(antenna.params.position[1])
    if pos is not None and len(pos):
        c = np.asarray(pos, dtype=float).mean(axis=0)
        return float(c[0]), float(c[1])
    raise ValueError(
        "position: a feed line runs from the antenna's feed point to the station; give the antenna a position "
        "[east, north] on the site plan"
    )


def prepare(sc, antennas, powers: dict, *, ground=None, own: dict | None = None) -> Prepared | None:
    """The couplings of every antenna with a feed line (``sc.feed_lines``, by name, its route starting where the
    antenna stands) and their pickup of each placed source; ``powers``: the antennas' own (snrgain.model.placed.pickup),
    whose reference entry scales the feed lines'.  ``own``: (source name, kind) -> (antennas,) complex, the antennas'
    own (vertical) amplitudes from each placed source's dipole where the caller has them (a termination search's
    resistors, from its form), else snrgain.model.placed.received_amplitudes' (kept there).  None when no antenna has
    one."""
    from snrgain.model import placed

    feeds = getattr(sc, "feed_lines", None) or {}
    if not any(a.name in feeds for a in antennas):
        return None
    ground = sc.site.ground if ground is None else ground
    f = sc.freq_hz
    ref_m = antennas[0].params.position or (0.0, 0.0)
    out, z_th = {}, {}
    for k, fl in _routes(sc, antennas).items():
        a = antennas[k]
        end, _, _ = antenna_end(a, f, ground)
        route = _route_key(fl)  # a termination search's resistors: one route, its Z_th worked once
        if route not in z_th:
            z_th[route] = phys.thevenin_impedance(fl, f, ground)
        out[k] = (fl, phys.coupling_at(fl, f, ground, end, z_th=z_th[route]), end.coherent)
    fl_powers, effects = {}, {}
    ks = list(out)
    at = np.array(ks, dtype=int)
    loads = np.array([out[k][1].load_ohm for k in ks])
    coherent = np.array([out[k][2] for k in ks], dtype=bool)
    routes, pairs = [fl for fl, _, _ in out.values()], [out[k][:2] for k in ks]
    for src in (s for s in sc.noise.local if s.position_m is not None):
        p, d = np.zeros(len(antennas)), np.zeros(len(antennas))
        for kind, _ in placed.dipoles(src):
            _prefetch_route_emfs(routes, src, kind, f, ground)
            # every feed line's amplitude in one port response (a termination search's resistors share one route)
            b = port_amplitudes(f, _route_currents(pairs, src, kind, f, ground), loads)
            power = np.abs(b) ** 2
            p[at] += power
            # coherent: one source drives both, their currents in the load add as phasors; the antenna's own as
            # snrgain.model.placed.pickup worked it out (kept there), or the caller's
            if own is not None:
                a = own[src.name, kind][at]
            else:
                a = np.zeros(len(ks), dtype=complex)
                if coherent.any():
                    got = placed.received_amplitudes_of(
                        [antennas[ks[j]] for j in np.flatnonzero(coherent)], src, f, ref_m, ground, kind=kind
                    )
                    a[coherent] = [v for v, _ in got]
            d[at] += np.where(coherent, np.abs(a + b) ** 2 - np.abs(a) ** 2, power)
        fl_powers[src.name], effects[src.name] = p, d
    lines_ = {k: (fl, c) for k, (fl, c, _) in out.items()}
    return Prepared(lines_, fl_powers, effects, {n: float(p[0]) for n, p in powers.items()}, ground)


MEMO_SIZE = 2048
_MEMO = Memo(MEMO_SIZE)
"""What does not change between calls on the same feed line (a termination search, the spreads): the EMFs along a
route from a source and the current they drive through a unit coupling, a route's sky pattern.  The least recently
used go past MEMO_SIZE.  The antenna's own amplitude from a source is snrgain.model.placed's (kept there)."""


def _memo(key, make):
    return _MEMO.get(key, make)


def _source_key(src, kind, freq_hz, ground):
    g = None if ground is None else (ground.conductivity_s_per_m, ground.permittivity)
    where = (src.position_m, src.height_m, src.polarisation, getattr(src, "orientation_rad", None))
    return (where, kind, float(freq_hz), g)


def _route_emf(fl, src, kind, freq_hz, ground):
    """:func:`snrgain.physics.feedline.route_emf` of a placed source's dipole (its run and leads in one call of the
    field), memoised by route and source: the route's own field, worked once per route, source and ground."""
    key = _route_emf_key(fl, src, kind, freq_hz, ground)

    def field(pts, heights):
        return placed_field(src, pts, heights, freq_hz, ground, kind)

    return _memo(
        key,
        lambda: phys.route_emf(
            fl,
            freq_hz,
            field,
            closest_m=_closest(fl, src),
            line_gamma=_gamma(fl, freq_hz, ground),
            closest_at_m=_closest_at(fl, src),
        ),
    )


def _gamma(fl, freq_hz, ground) -> complex:
    """The shield's own propagation constant over ``ground`` (its samples resolve the line's wavelength too)."""
    return fl.line(freq_hz, ground).gamma


def _route_emf_key(fl, src, kind, freq_hz, ground) -> tuple:
    # the cable too: the run's samples follow its shield's line constant (a slow or buried run is sampled finer)
    return ("route", *_route_key(fl), _source_key(src, kind, freq_hz, ground))


def _routes(sc, antennas) -> dict:
    """k -> the FeedLine of each candidate of ``antennas`` that has one (``sc.feed_lines`` by name), its route starting
    where the antenna stands (:func:`feed_point`)."""
    feeds = getattr(sc, "feed_lines", None) or {}
    ref_m = antennas[0].params.position or (0.0, 0.0)
    out = {}
    for k, a in enumerate(antennas):
        fl = feeds.get(a.name)
        if fl is None or k == 0:
            continue
        start = feed_point(a, ref_m)
        if fl.start_m != start:
            fl = _MOVED.get((id(fl), start), lambda fl=fl, start=start: (fl, replace(fl, start_m=start)))[1]
        out[k] = fl
    return out


_MOVED = Memo(256)
""":func:`_routes`' lines moved to start where their antennas stand, by the scenario's line object and the start (held
with it, so its id stays its own): every pass of the products asks for the same again."""


def route_points_ahead(sc, antennas, src, kind, freq_hz, ground) -> list:
    """[(points (N, 2), heights (N,), keep(field (N, 3)))] of the feed-line routes of ``antennas`` whose EMFs from a
    placed source's dipole are not held: snrgain.model.placed.pickup works their field in its one call of the field
    per source and hands each part to ``keep``, which puts the route's EMFs where :func:`prepare` reads them (one call
    of the field fewer per source and ground).  Empty when an antenna's route cannot be made here (prepare says
    why)."""
    try:
        routes = list(_routes(sc, antennas).values())
    except ValueError:
        return []
    todo = _routes_not_held(routes, src, kind, freq_hz, ground)
    where = _source_key(src, kind, freq_hz, ground)
    return [(q, z, RouteKeep(key, fl, x, where, ground)) for (key, fl, x), q, z in zip(todo, *_points_of(todo))]


class RouteKeep:
    """:func:`route_points_ahead`'s ``keep`` of one route, a placed source's dipole and a ground: called with the
    field at the route's points, it puts the route's EMFs in the memo; :func:`keep_routes_grounds` keeps one route
    over a spread's grounds together."""

    __slots__ = ("key", "fl", "x", "where", "ground")

    def __init__(self, key, fl, x, where, ground):
        self.key, self.fl, self.x, self.where, self.ground = key, fl, x, where, ground

    def __call__(self, part) -> None:
        _memo(self.key, lambda: phys.route_emf_from(self.fl, self.x, part))


def keep_routes_grounds(keeps, e: np.ndarray, freq_hz: float) -> None:
    """Each of ``keeps`` (:class:`RouteKeep`: one route from one source's dipole over each of a spread's grounds, the
    same samples) from its ground's field ``e`` (G, N, 3) at the route's points: the route's EMFs on each ground and
    its current through the route's canonical coupling (:func:`canonical_coupling`; :func:`_route_current` scales
    it to each antenna end), both worked over the grounds in one array expression
    (snrgain.physics.feedline.run_emf_grounds, emf_currents_grounds) rather than ground by ground in
    :func:`prepare`."""
    first = keeps[0]
    route = _route_key(first.fl)
    if not all(isinstance(k, RouteKeep) for k in keeps) or any(
        _route_key(k.fl) != route or not (k.x is first.x or np.array_equal(k.x, first.x)) for k in keeps
    ):
        for keep, part in zip(keeps, e):
            keep(part)
        return
    fl, x = first.fl, first.x
    emf, lead = phys.run_emf_grounds(fl, x, e)
    for g, keep in enumerate(keeps):
        _memo(keep.key, lambda g=g: (x, emf[g], lead[g]))
    todo = [g for g, k in enumerate(keeps) if _unit_key(route, k.where) not in _MEMO]
    if not todo:
        return
    units = [_canonical_unit(fl, route, freq_hz, keeps[g].ground) for g in todo]
    currents = phys.emf_currents_grounds(fl, units, x, emf[todo], lead[todo])
    for g, unit, current in zip(todo, units, currents):
        _memo(_unit_key(route, keeps[g].where), lambda unit=unit, current=current: (unit, complex(current)))


def _points_of(todo) -> tuple[list, list]:
    """([points], [heights]) of each route of ``todo`` (:func:`_routes_not_held`), worked together
    (snrgain.physics.feedline.runs_points); read-only, kept by the routes and their samples (the same at every
    ground of a spread where the shield's line does not set the samples, :data:`_POINTS`)."""
    if not todo:
        return [], []
    key = tuple((_route_key(t[1]), id(t[2])) for t in todo)
    # the samples are held with their points: no other array can take their ids while the entry stands
    _, q, z = _POINTS.get(key, lambda: (tuple(t[2] for t in todo), *_points_worked(todo)))
    return q, z


def _points_worked(todo) -> tuple[list, list]:
    q, z = phys.runs_points([t[1] for t in todo], [t[2] for t in todo])
    q.flags.writeable = z.flags.writeable = False
    cut = np.cumsum([len(t[2]) + (0 if t[1].buried else 2 * phys.LEAD_POINTS) for t in todo])[:-1]
    return np.split(q, cut), np.split(z, cut)


_POINTS = Memo(64, max_bytes=32 * 2**20)
""":func:`_points_of`' points and heights, by the routes and the ids of their samples (held with them, so the ids
stay their own)."""


def _routes_not_held(routes, src, kind, freq_hz, ground) -> list:
    """[(memo key, route, samples)] of the distinct routes of ``routes`` whose EMFs from a placed source's dipole are
    not in the memo yet."""
    todo, seen = [], set()
    for fl in routes:
        key = _route_emf_key(fl, src, kind, freq_hz, ground)
        if key in _MEMO or key in seen:
            continue
        seen.add(key)
        x = phys.route_samples(fl, freq_hz, _closest(fl, src), _gamma(fl, freq_hz, ground), _closest_at(fl, src))
        todo.append((key, fl, x))
    return todo


def _prefetch_route_emfs(routes, src, kind, freq_hz, ground) -> None:
    """Put the :func:`_route_emf` of every route of ``routes`` not held yet in the memo, the source's field at all of
    their points worked in one call (the routes of a run one source at a time: a call's own cost is that of a few
    hundred points)."""
    todo = _routes_not_held(routes, src, kind, freq_hz, ground)
    if len(todo) < 2:
        return
    fls, xs = [t[1] for t in todo], [t[2] for t in todo]
    e = placed_field(src, *phys.runs_points(fls, xs), freq_hz, ground, kind)
    # route_emf takes the field once, at route_points of the same samples: each route's part, worked together
    for (key, _, _), emfs in zip(todo, phys.runs_emf_from(fls, xs, e)):
        _memo(key, lambda emfs=emfs: emfs)


def _canonical_unit(fl, route: tuple, freq_hz: float, ground) -> phys.Coupling:
    """The route's canonical coupling on ``ground`` (:func:`canonical_coupling`: its line and Z_th, the antenna end
    shorted), kept by route, ground and frequency (every placed source asks for it again)."""
    g = None if ground is None else (ground.conductivity_s_per_m, ground.permittivity)

    def make():
        return phys.Coupling(fl.line(freq_hz, ground), phys.thevenin_impedance(fl, freq_hz, ground), 0j, 1.0 + 0j, 1.0)

    return _memo(("canonical", route, g, float(freq_hz)), make)


def _route_current(fl, c, src, kind, freq_hz, ground) -> complex:
    """:func:`snrgain.physics.feedline.emf_current` of a placed source's dipole with coupling ``c``: worked once per
    route and source with a unit coupling and scaled to ``c`` by Thevenin's theorem (a termination tried, a choke,
    another antenna end on the same route cost one product; :func:`snrgain.physics.feedline.current_scale`)."""
    unit, current = _route_unit(fl, c, src, kind, freq_hz, ground)
    return complex(current * phys.current_scale(unit, c))


def _route_key(fl) -> tuple:
    """What a route's current through a unit coupling depends on besides the source: the run, its cable (the
    shield's line) and the station's ground."""
    return (fl.start_m, fl.end_m, fl.height_m, fl.depth_m, fl.braid_radius_m, fl.jacket_radius_m, fl.station_ground_ohm)


def _unit_key(route: tuple, where: tuple) -> tuple:
    """The memo's key of a route's (:func:`_route_key`) current through a unit coupling from a placed source's
    dipole (``where``: :func:`_source_key`)."""
    return ("route-current", route, where)


def _route_unit(fl, c, src, kind, freq_hz, ground) -> tuple:
    """(the unit coupling, the current through it) of a route and a placed source's dipole, kept: what
    :func:`_route_current` scales to each coupling."""
    key = _unit_key(_route_key(fl), _source_key(src, kind, freq_hz, ground))

    def make():
        unit = phys.unit_coupling(c)
        return unit, phys.emf_current(fl, unit, *_route_emf(fl, src, kind, freq_hz, ground))

    return _memo(key, make)


def _route_currents(lines_, src, kind, freq_hz, ground) -> np.ndarray:
    """:func:`_route_current` of each (FeedLine, Coupling) of ``lines_``: (N,), each route's kept current looked up
    once however many couplings share it (a termination search's resistors)."""
    units: dict = {}
    todo = []  # the routes whose current is not kept: worked together (phys.emf_currents)
    where = _source_key(src, kind, freq_hz, ground)
    routes = [_route_key(fl) for fl, _ in lines_]
    for (fl, c), route in zip(lines_, routes):
        if route in units:
            continue
        key = _unit_key(route, where)
        if key in _MEMO:
            units[route] = _MEMO.get(key, None)
        else:
            units[route] = None
            todo.append((route, key, fl, phys.unit_coupling(c)))
    if todo:
        emfs = [_route_emf(fl, src, kind, freq_hz, ground) for _, _, fl, _ in todo]
        currents = phys.emf_currents([t[2] for t in todo], [t[3] for t in todo], emfs)
        for (route, key, _, unit), current in zip(todo, currents):
            units[route] = _memo(key, lambda unit=unit, current=current: (unit, complex(current)))
    out = np.empty(len(lines_), dtype=complex)
    for j, ((_, c), route) in enumerate(zip(lines_, routes)):
        unit, current = units[route]
        out[j] = current * phys.current_scale(unit, c)
    return out


def port_amplitudes(freq_hz: float, currents, loads_ohm) -> np.ndarray:
    """:func:`port_amplitude` of each current [A] (N,) in its load [ohm] (N,)."""
    from snrgain.antennas.longwire import port_response

    currents = np.asarray(currents, dtype=complex)
    return port_response(
        freq_hz, currents, load_ohm=np.asarray(loads_ohm, dtype=float), elevation_rad=np.zeros(len(currents))
    )


def placed_field(src, pts, heights, freq_hz, ground, kind):
    """A placed source's field at a route's points (snrgain.model.placed.field_vector; what is made of it is kept:
    :func:`_route_emf`)."""
    from snrgain.model import placed

    return placed.field_vector(src, pts, heights, freq_hz, ground, kind=kind)


def port_amplitude(freq_hz: float, current: complex, load_ohm: float) -> complex:
    """The amplitude a current [A] in the receiver's load delivers, in the units of a realized gain's square root
    (snrgain.antennas.longwire.port_response)."""
    from snrgain.antennas.longwire import port_response

    return complex(port_response(freq_hz, np.array([current]), load_ohm=load_ohm, elevation_rad=np.array([0.0]))[0])


def _nearest(fl: phys.FeedLine, src) -> tuple[float, float]:
    """(the fraction along the run of its point nearest a source's foot, the plan distance between them [m])."""
    (ax, ay), (bx, by) = fl.start_m, fl.end_m
    px, py = float(src.position_m[0]), float(src.position_m[1])
    dx, dy = bx - ax, by - ay
    t = min(max(((px - ax) * dx + (py - ay) * dy) / max(dx * dx + dy * dy, 1e-12), 0.0), 1.0)
    return t, math.hypot(px - (ax + t * dx), py - (ay + t * dy))


def _closest_at(fl: phys.FeedLine, src) -> float:
    """How far along the run [m] its point nearest a source lies (the samples grade from there)."""
    return float(_nearest(fl, src)[0] * fl.length_m)


def _closest(fl: phys.FeedLine, src) -> float:
    """The closest approach of a source to the run [m], its height included."""
    return float(math.hypot(_nearest(fl, src)[1], src.height_m - fl.wire_height_m))


def shares_with(prep: Prepared | None, shares: dict) -> dict:
    """Each placed source's shares (:func:`snrgain.model.placed.pickup`) with the feed lines' power added: the share
    is P / P_ref times the source's own scale, so what the feed line changes of P adds share_ref / P_ref times it."""
    if prep is None:
        return shares
    return {name: s + (s[0] / prep.reference_powers[name]) * prep.effects[name] for name, s in shares.items()}


def gains(prep: Prepared, sc, reference_gains):
    """The gains the integrator takes the feed lines' sky part through (snrgain.model.snr.Gains): the reference's
    first (it carries the placed sources, which :func:`shares_with` gives the feed lines instead), then each distinct
    route's "gain" into a canonical end (:func:`sky_rows`: the feed lines on one route, a termination search's
    resistors, differ only by a factor, which :func:`added` applies); with :func:`no_pickup` as the placed sources'
    shares."""
    from snrgain.model import snr

    f, ground = sc.freq_hz, prep.ground
    caches = [reference_gains.caches[0]]
    for fl, c in sky_rows(prep)[0]:
        caches.append(snr.GainCache(lambda az, el, fl=fl, c=c: _sky_canonical(fl, c, f, az, el, ground)))
    return snr.Gains(caches, np.zeros((len(caches), 0)), np.zeros(len(caches)))


def sky_rows(prep: Prepared) -> tuple[list, dict]:
    """([(FeedLine, canonical Coupling) of each distinct route], k -> (its route's row, the factor on its gain)) for
    the feed lines of ``prep``: the sky's temperature is linear in the gain, and a feed line's gain is its route's
    into the canonical end (:func:`canonical_coupling`) times |thevenin_scale|^2 (Thevenin's theorem).  Kept by the
    Prepared object (held with it, so its id stays its own): a pass of the products asks three or four times."""
    return _ROWS.get(id(prep), lambda: (prep, _sky_rows(prep)))[1]


_ROWS = Memo(32)


def _sky_rows(prep: Prepared) -> tuple[list, dict]:
    routes: dict = {}
    rows, of = [], {}
    for k in sorted(prep.lines):
        fl, c = prep.lines[k]
        key = _route_key(fl)
        if key not in routes:
            routes[key] = len(rows)
            rows.append((fl, canonical_coupling(c)))
        r = routes[key]
        of[k] = (r, abs(phys.thevenin_scale(rows[r][1], c)) ** 2)
    return rows, of


def canonical_coupling(c: phys.Coupling) -> phys.Coupling:
    """``c`` with the antenna end shorted (Z_A = 0), a unit divider and a 1 ohm load: the route's own coupling, the
    same for every antenna end on it (what :func:`snrgain.physics.feedline.thevenin_scale` scales from)."""
    return phys.Coupling(c.line, c.z_th, 0j, 1.0 + 0j, 1.0)


def sky_gain(fl: phys.FeedLine, c: phys.Coupling, freq_hz: float, azimuth_rad, elevation_rad, ground) -> np.ndarray:
    """:func:`snrgain.physics.feedline.sky_gain`, its route's response into the canonical end memoised by route,
    ground and directions and scaled to each coupling by Thevenin's theorem
    (:func:`snrgain.physics.feedline.thevenin_scale`): a termination search, a choke or another antenna end on the
    same route costs one scaling of the pattern, not its evaluation."""
    unit = canonical_coupling(c)
    g_unit = _sky_canonical(fl, unit, freq_hz, azimuth_rad, elevation_rad, ground)
    return abs(phys.thevenin_scale(unit, c)) ** 2 * g_unit


def _sky_canonical(fl, unit, freq_hz: float, azimuth_rad, elevation_rad, ground) -> np.ndarray:
    """:func:`snrgain.physics.feedline.sky_gain` of a route into its canonical end ``unit``
    (:func:`canonical_coupling`), kept by route, ground and directions."""
    az, el = np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float)
    g = None if ground is None else (ground.conductivity_s_per_m, ground.permittivity)
    where = (float(freq_hz), *_directions_key(az, el))
    key = ("sky", _route_key(fl), g, *where)

    def make():
        terms, wave = _PHASES.get((fl.start_m, fl.end_m, *where), lambda: _sky_phase(fl, freq_hz, az, el, ground))
        return phys.sky_gain(fl, unit, freq_hz, az, el, ground, phase=terms, wave=wave)

    return _memo(key, make)


def _directions_key(az: np.ndarray, el: np.ndarray) -> tuple:
    """(shape, hash of the azimuths' bytes, of the elevations') of a set of directions: kept by the arrays themselves
    where they can not change (read-only arrays that own their data: a sky's directions, asked for again at every
    ground and pass), held with them so their ids stay their own."""

    def worked():
        return (az.shape, hash(az.tobytes()), hash(el.tobytes()))

    if any(a.flags.writeable or not a.flags.owndata for a in (az, el)):
        return worked()
    return _DIRECTIONS.get((id(az), id(el)), lambda: (az, el, worked()))[2]


_DIRECTIONS = Memo(64)


_PHASES = Memo(64, max_bytes=64 * 2**20)
"""A run's :func:`snrgain.physics.feedline.sky_terms` on a set of directions and the plane wave they were worked from
(what of it does not depend on the ground), by its ends, the frequency and the directions: the same over every
ground (a spread's nodes) and cable."""


def _sky_phase(fl, freq_hz, az, el, ground) -> tuple:
    """(the run's snrgain.physics.feedline.sky_terms, the plane wave) (:data:`_PHASES`)."""
    from snrgain.antennas.longwire import plane_wave

    wave = plane_wave(freq_hz, az, el, bearing_rad=fl.bearing_rad, ground=ground)
    return phys.sky_terms(fl, freq_hz, wave), wave


def no_pickup(prep: Prepared) -> dict:
    """Placed sources' shares for :func:`gains`: none (the feed lines take theirs through :func:`shares_with`)."""
    n = len(sky_rows(prep)[0])
    return {name: np.zeros(n + 1) for name in prep.powers}


def added(prep: Prepared | None, temps, part, skies):
    """(the antennas' temperatures with the feed lines' sky part added, FeedLineTemps or None).  ``temps`` come from
    the integrator with :func:`shares_with`'s shares (placed sources already hold the feed lines); ``part`` is the
    integrator's product of :func:`gains` (components, 1 + distinct routes, months, hours), each feed line's part its
    route's times its factor (:func:`sky_rows`)."""
    from snrgain.model import snr

    if prep is None:
        return temps, None
    by = np.zeros_like(temps.by_component)
    for k, (r, scale) in sky_rows(prep)[1].items():
        by[:, k] = scale * part.by_component[:, 1 + r]
    sky, effect = by.copy(), by.copy()
    for name in prep.powers:  # the placed rows: the reference's temperature times P_fl / P_ref
        r = skies.names.index(name)
        t_ref = temps.by_component[r, 0][None] / prep.reference_powers[name]
        by[r] = t_ref * prep.powers[name][:, None, None]
        effect[r] = t_ref * prep.effects[name][:, None, None]
    total = temps.by_component + sky
    return snr.Temperatures(total, total.sum(axis=0)), FeedLineTemps(prep, by, effect)


def sky_cells(prep: Prepared, n_antennas: int, held: dict, part) -> np.ndarray:
    """(antennas, months x hours): what each antenna's feed line adds to its temperature from the sky, summed over the
    components, as :func:`added` adds it (its route's part times its factor, :func:`sky_rows`); zero for an antenna
    without one.  ``part()``: the integrator's product of :func:`gains` (components, 1 + distinct routes, months,
    hours; worked by the caller, a stage), asked only for a route not in ``held`` (each route's part, kept by the
    caller for the next call under the same sky, ground and reference: only the factors change).  What a termination
    search's resistors (one route, another antenna end each) take without a pass of the products each
    (snrgain.model.steering.TerminationScore)."""
    rows, of = sky_rows(prep)
    keys = [_route_key(fl) for fl, _ in rows]
    if any(key not in held for key in keys):
        by = part()
        for r, key in enumerate(keys):
            held.setdefault(key, by[:, 1 + r])
    out = np.zeros((n_antennas, held[keys[0]][0].size)) if keys else np.zeros((n_antennas, 0))
    for k, (r, scale) in of.items():
        out[k] = (scale * held[keys[r]]).sum(axis=0).ravel()
    return out


def summary(sc, nominal, k: int) -> dict | None:
    """The feed line of antenna ``k`` of ``nominal`` (snrgain.model.products.Products) for its build sheet: its
    share of the noise [dB] (median and worst over the hours listened), the SNR gain it costs per target [dB], the
    choke resistance [ohm] that brings it :data:`QUIET_BELOW_DB` below the antenna's own pickup, and the cautions;
    None without a feed line."""
    from snrgain.model.products import snr_gains, target_masks, target_statistic

    fl_t = getattr(nominal, "feed_lines", None)
    if fl_t is None or k not in fl_t.prepared.lines:
        return None
    fl, c = fl_t.prepared.lines[k]
    mine = fl_t.by_component[:, k].sum(axis=0)  # (months, hours): the feed line's own pickup
    total = nominal.temps.total[k]
    own = np.maximum(total - fl_t.effect[:, k].sum(axis=0), 1e-30)  # the antenna's own: without the feed line
    listened = np.any(target_masks(sc), axis=0)
    share_db = 10 * np.log10(np.maximum(mine, 1e-30) / (own + mine))
    t_chain = sc.chains[k].temperature_k
    g_with = snr_gains(sc, nominal)[k]
    g_without = g_with + 10 * np.log10((total + t_chain) / (own + t_chain))[None]
    cost = target_statistic(sc, g_without[None])[0] - target_statistic(sc, g_with[None])[0]
    ratio = float(np.max((mine / own)[listened])) if np.any(listened) else float(np.max(mine / own))
    choke = phys.choke_for_ratio(fl, c, sc.freq_hz, ratio * 10 ** (QUIET_BELOW_DB / 10))
    end_text, assumed = _end_words(sc, k)
    return {
        "antenna_end": end_text,
        "antenna_ground_assumed": assumed,
        "route_m": [list(fl.start_m), list(fl.end_m)],
        "length_m": fl.length_m,
        "height_m": fl.height_m,
        "buried": fl.buried,
        "choke_ohm": fl.choke_ohm,
        "isolation": fl.isolation,
        "station_ground_ohm": fl.station_ground_ohm,
        "shield_z0_ohm": float(abs(c.line.z0)),
        "noise_share_db": float(np.median(share_db[listened])) if np.any(listened) else float(np.median(share_db)),
        "noise_share_worst_db": float(np.max(share_db[listened])) if np.any(listened) else float(np.max(share_db)),
        "snr_gain_cost_db": [float(x) for x in cost],
        "choke_for_quiet_ohm": choke,
        "quiet_below_db": QUIET_BELOW_DB,
        "cautions": list(CAUTIONS),
    }


def _end_words(sc, k: int) -> tuple[str, bool]:
    """(what the shield meets at antenna ``k``'s feed, in words; whether its ground is snrgain's assumption)."""
    _, words, assumed = antenna_end(sc.antennas[k], sc.freq_hz, sc.site.ground)
    return words, assumed


def notices(results) -> list:
    """``feed-line-cost`` for each antenna whose feed line costs more than :data:`COST_WARNING_DB` of SNR gain
    toward some target (values: cost_db, the worst target's; noise_share_db; choke_ohm, the choke that quiets it),
    and ``feed-line-ground-assumed`` for each whose ground at the feed is snrgain's assumption (a phasing unit's:
    antenna_end, ground_ohm)."""
    from snrgain.model.notices import Notice

    out = []
    for r in results:
        fl = (r.build or {}).get("feed_line")
        if not fl:
            continue
        if fl.get("antenna_ground_assumed"):
            out.append(
                Notice(
                    "feed-line-ground-assumed",
                    r.name,
                    {"antenna_end": fl["antenna_end"], "ground_ohm": PHASING_UNIT_GROUND_OHM},
                )
            )
        costs = [c for c in fl["snr_gain_cost_db"] if np.isfinite(c)]
        if costs and max(costs) > COST_WARNING_DB:
            out.append(
                Notice(
                    "feed-line-cost",
                    r.name,
                    {
                        "cost_db": max(costs),
                        "noise_share_db": fl["noise_share_db"],
                        "choke_ohm": fl["choke_for_quiet_ohm"],
                        "quiet_below_db": fl["quiet_below_db"],
                    },
                )
            )
    return out
