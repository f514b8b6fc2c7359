"""Placed noise sources: each antenna hears a source on the lot from where it stands.

A source given by its place (``[[noise.local]] position`` or latitude and
longitude) radiates as a short vertical or horizontal dipole (a horizontal
one along its ``orientation``) at its height; its field at any point and
height follows :func:`noisemodels.nearground.field` (direct wave, the
image's quasi-static and reflected waves, Norton's surface wave).  "both"
is a vertical and a horizontal dipole radiating independently, half the
power each (their powers add).  The sky carries the source as a compact
component seen from the reference antenna (its level read there, or on
another antenna ``read_on``, its strength then the one that gives that
antenna the reading through the ratio below; or its Fa at ``measured_at``);
every other antenna's share is scaled by how much more or less it picks up
of the same source:

    T_A = T_ref x P_A / P_ref,

P the power an antenna delivers from the source's field, in units where a
plane wave of unit field delivers the antenna's realized gain:

- a compact antenna standing where it was put (a ``position``, or an
  array's elements) whose family exposes its transmit currents on segments
  (``transmit_segments(freq_hz)``: points, directions, current times length;
  verticals, small and terminated loops, arrays of them) is read by
  reciprocity: the open-circuit voltage is the source's whole field along
  the segments times their currents, scaled to its complex response by the
  voltage a plane wave from the source's direction gives
  (:func:`_through_currents`), so far away it is the pattern again (a test)
  and close in the field where each part of the antenna stands counts;
- any other compact antenna (a pattern table, or one without a position,
  which stands at the reference's place and keeps the direction-only
  reading): P = G_v(d) |E_v|^2 + G_h(d) |E_h|^2, d the direction from the
  antenna toward the source at the source's arrival elevation, E_v the
  vertical field at the soil over cos(el) (1 + R_v(el)) (the plane wave that
  has that field there), E_h the incident horizontal field across the line
  of sight (an array at the centroid of its elements);
- a long wire (beverage, unterminated, bog): reciprocity on its line model:
  the distributed series EMF is the source's whole field along the wire at
  its height, and each down-lead's the vertical field integrated up it
  (:func:`wire_feed_current`), summed through the line's transfer
  functions.  Far away this gives back the wire's pattern over a compact
  antenna's (a test).

Antennas without a position stand at the reference's.

Many places at once (layout's grid, a sweep's copies of one design): a long wire's field along it is read from
tables of the source's field against distance at each height asked (:class:`_FieldTable`: flat ground is the same
all round the source's foot; polynomials in ln(distance) kept only where they meet the field to TABLE_TOLERANCE,
the rest worked directly), so the feed currents equal the place-by-place ones to about 1e-5 (a test); a compact
antenna's transmit currents are the same at every place, so the field at every segment of every place is one call.
One
place at a time works the field directly, point by point, as ``rank`` does (inside :func:`tabled`, layout's own
search reads the tables there too); the EMFs along a wire at one place are kept for the next wire standing there
(the loads do not enter them), the wires of a run worked one call of the field per source and ground
(:func:`_prefetch_wire_emfs`; a ground spread's grounds in one call per source, :func:`fields_ahead`), and each
antenna's amplitudes kept by the antenna object for its feed line (:data:`_AMPLITUDES`, read by
snrgain.model.feedline).
"""

from __future__ import annotations

from contextlib import contextmanager

import numpy as np

from noisemodels import nearground
from snrgain.memo import Memo
from snrgain.physics.ground import C_M_PER_S
from snrgain.physics.quadrature import even_samples
from snrgain.physics.reciprocity import LEAD_POINTS, sample_steps, through_lines, wire_currents_in_field  # noqa: F401 (the module's API)
from snrgain.physics.reciprocity import lead_rule as _lead_rule
from snrgain.physics.reciprocity import through_line as _through_line
from snrgain.physics.reciprocity import through_line_grids as _through_line_grids
from snrgain.physics.reciprocity import wire_emfs as _emfs
from snrgain.records import is_frozen

POLARISATION_SHARE = {"vertical": (1.0, 0.0), "horizontal": (0.0, 1.0), "both": (0.5, 0.5)}
"""The share of a placed source's power radiated as a vertical and as a horizontal small dipole."""


def dipoles(src) -> list[tuple[str, float]]:
    """The small dipoles a placed source is made of: (kind, share of its power); "both" is a vertical and a
    horizontal dipole radiating independently (their powers add)."""
    share = POLARISATION_SHARE[src.polarisation]
    return [(kind, w) for kind, w in zip(("vertical", "horizontal"), share) if w > 0]


def source_field(src, points_m, freq_hz: float, ground, *, kind: str | None = None) -> tuple[np.ndarray, np.ndarray]:
    """(E_v, E_h) of one of a placed source's dipoles (``kind``; default its only one) at plan points (N, 2) [m],
    scaled by the square root of that dipole's share, relative to a vertical dipole's far field over a perfect
    ground at 1 m.

    E_v is the vertical field at the soil (:func:`noisemodels.nearground.field`: direct, image and surface wave,
    both heights) over cos(el) (1 + R_v(el)) (:func:`grazing_factor`): the plane wave at the source's elevation
    el that has that vertical field at the soil, which a pattern over ground (holding the ground's reflection)
    is read with.  A long wire, driven by the field itself (:func:`field_vector`), then gives a source far away
    the same ratio to a compact antenna as their patterns at low elevation (a test);
    E_h is the free-space field across the line of sight, the incident horizontal
    wave whose ground reflection the pattern holds (a horizontal dipole's horizontal field at the soil itself
    all but vanishes)."""
    parts = dipoles(src)
    if kind is None:
        if len(parts) != 1:
            raise ValueError("a source radiating both polarisations: ask for each dipole's field (kind=)")
        kind = parts[0][0]
    share = dict(parts).get(kind, 0.0)
    p = np.atleast_2d(np.asarray(points_m, dtype=float))
    rel = np.column_stack([p[:, 0] - src.position_m[0], p[:, 1] - src.position_m[1], np.zeros(len(p))])
    axis = orientation_rad(src) if kind == "horizontal" else 0.0
    kw = {"source_height_m": src.height_m, "kind": kind, "axis_rad": axis}
    eps = None if ground is None else ground.permittivity
    sig = None if ground is None else ground.conductivity_s_per_m
    e = nearground.field(freq_hz, rel, permittivity=eps, conductivity_s_per_m=sig, **kw)
    ev = e[:, 2] / grazing_factor(src, freq_hz, ground)
    d = nearground.direct_field(freq_hz, rel, **kw)
    rho = np.maximum(np.hypot(rel[:, 0], rel[:, 1]), 1e-9)
    across = np.column_stack([-rel[:, 1] / rho, rel[:, 0] / rho])  # horizontal, across the line of sight
    eh = d[:, 0] * across[:, 0] + d[:, 1] * across[:, 1]
    return np.sqrt(share) * ev, np.sqrt(share) * eh


def grazing_factor(src, freq_hz: float, ground) -> complex:
    """cos(el) (1 + R_v(el)) at the source's elevation el: the vertical field at the soil of a unit plane wave
    (2 over a perfect ground)."""
    from snrgain.physics.ground import reflection_coefficients

    el = float(src.elevation_rad)
    r_v = reflection_coefficients(ground, np.array([el]), freq_hz)[0][0]
    return complex(np.cos(el) * (1 + r_v))


def orientation_rad(src) -> float:
    """A horizontal source's axis [rad, compass bearing]; ValueError naming the field when it is not given."""
    o = getattr(src, "orientation_rad", None)
    if o is None:
        raise ValueError(
            f"noise.local {src.name!r}.orientation: a {src.polarisation} source needs its axis's compass bearing "
            "(orientation = '0 deg' .. '180 deg') for its horizontal dipole"
        )
    return float(o)


def bearing_to(src, points_m) -> np.ndarray:
    """Compass bearing [rad] from each plan point toward the source."""
    p = np.atleast_2d(np.asarray(points_m, dtype=float))
    return np.mod(np.arctan2(src.position_m[0] - p[:, 0], src.position_m[1] - p[:, 1]), 2 * np.pi)


def antenna_point(antenna, reference_m) -> np.ndarray:
    """Where an antenna hears from: its position (an array's element centroid), else the reference's [m]."""
    pos = getattr(antenna, "positions", None)
    if pos is not None and len(pos):
        return np.asarray(pos, dtype=float).mean(axis=0)
    p = antenna.params.position
    return np.asarray(reference_m if p is None else p, dtype=float)


def wire_samples(length_m: float, freq_hz: float, closest_m: float, line_gamma=None) -> np.ndarray:
    """Sample distances along a wire [m]: even steps as many as :func:`snrgain.physics.reciprocity.sample_steps`
    gives (no step longer than its STEPS_PER_WAVELENGTH-th of free space's wavelength, STEPS_PER_LINE_WAVELENGTH-th
    of the line's own, ``line_gamma``, and STEPS_PER_CLOSEST-th of the closest approach to the source), an even
    number of them (Simpson's rule,
    snrgain.physics.quadrature.samples_rule).  A read-only array, shared by the calls that ask for the same."""
    return even_samples(length_m, sample_steps(length_m, freq_hz, closest_m, line_gamma))


def wire_grid(wire, src, freq_hz: float, closest_m: float) -> np.ndarray:
    """:func:`wire_samples` of a long wire whose closest approach to a placed source is ``closest_m`` in the plan:
    the source's height above or below the wire and the wire's own line counted."""
    closest = float(np.hypot(closest_m, src.height_m - wire.wire_height_m()))
    return wire_samples(wire.length_m, freq_hz, closest, wire.line(freq_hz).gamma)


def wire_feed_current(wire, src, freq_hz: float, feed_m, ground, *, x_m=None, kind=None) -> complex:
    """The feed current [A] of a long wire driven by a placed source's field (module docstring), for unit field
    at 1 m in the source's far field; ``x_m`` overrides the sample points along the wire (samples_rule)."""
    return complex(wire_feed_currents(wire, src, freq_hz, np.atleast_2d(feed_m), ground, x_m=x_m, kind=kind)[0])


def wire_feed_currents(wire, src, freq_hz: float, feeds_m, ground, *, x_m=None, kind=None) -> np.ndarray:
    """:func:`wire_feed_current` for the same wire with its feed at each of ``feeds_m`` (N, 2) [m]: (N,) complex.

    Feeds whose sample grids along the wire are the same (:func:`wire_samples`, set by the closest approach)
    are summed together in one array expression (a layout trying a design at many places)."""
    feeds = np.atleast_2d(np.asarray(feeds_m, dtype=float))
    b = wire.bearing_rad
    u = np.array([np.sin(b), np.cos(b)])
    L = wire.length_m
    if x_m is not None:
        grids = {None: (np.asarray(x_m, dtype=float), np.arange(len(feeds)))}
    else:
        to_src = np.asarray(src.position_m)[None, :] - feeds
        along = np.clip(to_src @ u, 0.0, L)
        closest = np.hypot(*(to_src - along[:, None] * u[None, :]).T)
        steps = wire_steps(wire, src, freq_hz, closest)
        grids = {}
        for k, n in enumerate(steps.tolist()):
            grids.setdefault(n, (None, []))[1].append(k)
        grids = {n: (even_samples(L, n), which) for n, (_, which) in grids.items()}
    if len(grids) > 1:  # several sample grids: the field along all of them asked for at once
        return _currents_on_grids(wire, src, freq_hz, feeds, ground, list(grids.values()), u, kind)
    out = np.zeros(len(feeds), dtype=complex)
    for x, which in grids.values():
        which = np.asarray(which)
        out[which] = _currents_on(wire, src, freq_hz, feeds[which], ground, x, u, kind)
    return out


def wire_steps(wire, src, freq_hz: float, closest_m) -> np.ndarray:
    """The number of steps of :func:`wire_grid` (its samples less one: even) for each of the closest approaches
    ``closest_m`` (N,) in the plan at once: :func:`snrgain.physics.reciprocity.sample_steps`' rule, element by
    element (a layout's places each have their own)."""
    from snrgain.physics.reciprocity import (
        LEAST_STEPS,
        STEPS_PER_CLOSEST,
        STEPS_PER_LINE_WAVELENGTH,
        STEPS_PER_WAVELENGTH,
    )

    closest = np.hypot(np.asarray(closest_m, dtype=float), src.height_m - wire.wire_height_m())
    step = 2 * np.pi / (2 * np.pi * freq_hz / C_M_PER_S) / STEPS_PER_WAVELENGTH  # as sample_steps works it
    gamma = wire.line(freq_hz).gamma
    if gamma is not None:
        step = min(step, 2 * np.pi / abs(complex(gamma)) / STEPS_PER_LINE_WAVELENGTH)
    step = np.minimum(step, np.maximum(closest, 0.05) / STEPS_PER_CLOSEST)
    n = np.clip(np.ceil(wire.length_m / step), LEAST_STEPS, 40_000).astype(np.int64)
    return n + n % 2


def _currents_on_grids(wire, src, freq_hz, feeds, ground, grids, u, kind=None) -> np.ndarray:
    """:func:`_currents_on` of the feeds of each of ``grids`` [(samples x, indices into ``feeds``)] in a placed
    source's field, the field asked for once for all of them: the points that :func:`_source_emfs` reads from the
    source's tables (along the wire; up the leads of a grid of many places) in one read of each table, and every
    point worked directly (along a wire of few points outside :func:`tabled`, up the leads of a grid of few places,
    and the points the tables do not hold) in one call of :func:`field_vector`.  Each grid's EMFs are those
    :func:`_source_emfs` gives it alone (the same points, each read the same way), so the currents are
    :func:`_currents_on`'s; the calls' own cost is paid once rather than per grid (a layout's places fall on a dozen
    grids, one per closest approach)."""
    kind = kind if kind is not None else dipoles(src)[0][0]
    least = table_min_points()
    h = wire.wire_height_m()
    has_leads = wire.has_leads and h > 0
    t, wq = _lead_rule()
    zs = (t + 1) * h / 2
    origin = np.asarray(src.position_m, dtype=float)[None, :]
    along_pts, along_tab, lead_ends, lead_tab = [], [], [], []
    for x, which in grids:
        f = feeds[np.asarray(which)]
        pts = (f[:, None, :] + x[None, :, None] * u[None, None, :]).reshape(-1, 2)
        along_pts.append(pts)
        along_tab.append(np.full(len(pts), len(pts) >= least))
        if has_leads:
            ends = np.concatenate([f, f + wire.length_m * u[None, :]])  # feed ends, then far ends
            lead_ends.append(ends)
            lead_tab.append(np.full(len(ends), len(f) > 1 and 2 * len(f) * LEAD_POINTS >= LEAD_TABLE_MIN))
    pts, tab = np.concatenate(along_pts), np.concatenate(along_tab)
    emf = np.empty(len(pts), dtype=complex)
    direct = ~tab
    if tab.any():  # along the wire from the table at its height (tabled_field_along), the misses worked directly
        sel = np.flatnonzero(tab)
        got, ok = _table(src, freq_hz, ground, kind, float(h)).field(pts[sel] - origin, along=u)
        emf[sel[ok]] = got
        direct[sel[~ok]] = True
    n_along = int(np.count_nonzero(direct))
    q, z = [pts[direct]], [np.full(n_along, h)]
    if has_leads:
        ends, ltab = np.concatenate(lead_ends), np.concatenate(lead_tab)
        lead = np.empty(len(ends), dtype=complex)
        up = ~ltab
        if ltab.any():  # up the leads from the lead table (tabled_lead_emfs), the misses worked directly
            sel = np.flatnonzero(ltab)
            d = ends[sel] - origin
            key = ("lead", field_vector, _source_key(src, kind), _ground_key(ground), float(freq_hz), float(h))
            table = _TABLES.get(key, lambda: _LeadTable(src, freq_hz, ground, kind, float(h)))
            rho = np.hypot(d[:, 0], d[:, 1])
            (vals,), ok = table.read(rho, ("L",))
            if kind == "horizontal":
                p = table.axis
                vals = vals * ((p[0] * d[ok, 0] + p[1] * d[ok, 1]) / rho[ok])
            lead[sel[ok]] = vals
            up[sel[~ok]] = True
        q.append(np.repeat(ends[up], LEAD_POINTS, axis=0))
        z.append(np.tile(zs, int(np.count_nonzero(up))))
    q, z = np.concatenate(q), np.concatenate(z)
    if len(q):
        e = field_vector(src, q, z, freq_hz, ground, kind=kind)
        emf[direct] = e[:n_along, 0] * u[0] + e[:n_along, 1] * u[1]
        if has_leads and up.any():
            lead[up] = (e[n_along:, 2].reshape(-1, LEAD_POINTS) @ wq) * h / 2
    out = np.zeros(len(feeds), dtype=complex)
    a0 = l0 = 0
    parts = []
    for x, which in grids:
        n = len(which)
        part = emf[a0 : a0 + n * len(x)].reshape(n, -1)
        a0 += n * len(x)
        lead_g = None
        if has_leads:
            lead_g = lead[l0 : l0 + 2 * n]
            l0 += 2 * n
        parts.append((x, part, lead_g))
    for (_, which), current in zip(grids, _through_line_grids(wire, freq_hz, parts)):  # the grids' lines at once
        out[np.asarray(which)] = current
    return out


def field_vector(src, points_m, height_m, freq_hz: float, ground, *, kind: str) -> np.ndarray:
    """The whole field (N, 3) [east, north, up] of one of a placed source's dipoles at plan points (N, 2) at
    ``height_m`` above the soil (a scalar or (N,)), normalised as :mod:`noisemodels.nearground` and scaled by the
    square root of the dipole's share.  Worked, not kept: each caller keeps what it makes of it (a wire's EMFs in
    :data:`_EMFS`, a feed line's in snrgain.model.feedline, the field at a compact antenna's segments through
    :func:`_kept_field`)."""
    share = dict(dipoles(src)).get(kind, 0.0)
    p = np.atleast_2d(np.asarray(points_m, dtype=float))
    z = np.broadcast_to(np.asarray(height_m, dtype=float), (len(p),))
    rel = np.column_stack([p[:, 0] - src.position_m[0], p[:, 1] - src.position_m[1], z])
    axis = orientation_rad(src) if kind == "horizontal" else 0.0
    eps = None if ground is None else ground.permittivity
    sig = None if ground is None else ground.conductivity_s_per_m
    e = nearground.field(
        freq_hz,
        rel,
        source_height_m=src.height_m,
        kind=kind,
        axis_rad=axis,
        permittivity=eps,
        conductivity_s_per_m=sig,
    )
    return e * np.sqrt(share)


def field_vector_grounds(src, points_m, height_m, freq_hz: float, grounds, *, kind: str) -> np.ndarray:
    """:func:`field_vector` over each of ``grounds`` (G, N, 3), what does not depend on the ground worked once
    (:func:`noisemodels.nearground.field_grounds`); each ground's values those :func:`field_vector` gives, to the
    bit."""
    share = dict(dipoles(src)).get(kind, 0.0)
    p = np.atleast_2d(np.asarray(points_m, dtype=float))
    z = np.broadcast_to(np.asarray(height_m, dtype=float), (len(p),))
    rel = np.column_stack([p[:, 0] - src.position_m[0], p[:, 1] - src.position_m[1], z])
    axis = orientation_rad(src) if kind == "horizontal" else 0.0
    soils = [None if g is None else (g.permittivity, g.conductivity_s_per_m) for g in grounds]
    e = nearground.field_grounds(freq_hz, rel, soils, source_height_m=src.height_m, kind=kind, axis_rad=axis)
    return e * np.sqrt(share)


_FIELD_VECTOR = field_vector
"""The module's own :func:`field_vector`: :func:`fields_ahead` works only through it (a test may put another in its
place, which the memos' keys then name)."""


def fields_ahead(sc, per_ground) -> None:
    """Work ahead, for several grounds at once, what :func:`pickup` works per ground in one call of the field per
    source (:func:`_prefetch_wire_emfs`: the long wires' EMFs and amplitudes, the compact antennas' field at their
    segments, the feed lines' routes): ``per_ground`` [(ground, antennas)], the antennas as they stand on each ground
    (a ground spread's nodes, snrgain.model.spread.variants), none of their powers known.  Grounds whose points are
    the same (the samples do not depend on the ground) share one call of :func:`field_vector_grounds`; what is kept
    is what :func:`pickup` would keep at each ground, to the bit, so it then finds it held.  Nothing is done when the
    memos could not hold every ground's parts at once (it would only be worked again)."""
    placed = [s for s in sc.noise.local if s.position_m is not None]
    if not placed or len(per_ground) < 2 or field_vector is not _FIELD_VECTOR:
        return
    from snrgain.model import feedline

    dipole_count = sum(len(dipoles(s)) for s in placed)
    first = per_ground[0][1]
    wires = sum(1 for a in first if a.integrates_near_sources and not a.composite)
    compact = sum(1 for a in first if not a.integrates_near_sources and not a.composite)
    held = len(per_ground) * dipole_count
    if held * wires > _EMFS.size // 2 or held * wires > _AMPLITUDES.size // 2 or held * compact > _FIELDS.size // 2:
        return
    if held * len(first) > feedline.MEMO_SIZE // 4:
        return
    f = sc.freq_hz
    for src in placed:
        for kind, _ in dipoles(src):
            same: list = []  # [(points, heights, plans)]: grounds whose points are the same, bit for bit
            for ground, antennas in per_ground:
                ref_m = antennas[0].params.position or (0.0, 0.0)
                p = _known_by_groups(antennas)
                routes = feedline.route_points_ahead(sc, antennas, src, kind, f, ground)
                plan = _prefetch_plan(antennas, src, f, ref_m, ground, kind, p, extra=routes)
                done = _ahead_key(antennas, src, kind, ground, f)
                _WORKED_AHEAD.get(done, lambda antennas=antennas: tuple(antennas))
                if plan is None:
                    continue
                q, z = plan.points()
                for q0, z0, plans in same:
                    if _same_bits(q0, q) and _same_bits(z0, z):
                        plans.append(plan)
                        break
                else:
                    same.append((q, z, [plan]))
            for q, z, plans in same:
                e = field_vector_grounds(src, q, z, f, [pl.ground for pl in plans], kind=kind)
                _prefetch_keep_grounds(plans, e)
    pairs = [(src, kind) for src in placed for kind, _ in dipoles(src)]
    for ground, antennas in per_ground:  # the compact antennas' amplitudes, every source at once
        _compact_amplitudes_ahead(antennas, pairs, f, antennas[0].params.position or (0.0, 0.0), ground)


def _compact_amplitudes_ahead(antennas, pairs, freq_hz: float, reference_m, ground) -> None:
    """Keep in :data:`_AMPLITUDES` what :func:`received_amplitudes` gives each compact antenna of ``antennas`` standing
    alone at its place and read through its transmit currents (:func:`_through_currents`), from every placed source's
    dipole of ``pairs`` [(source, kind)] at once (:func:`_through_currents_sources`: its response toward them all in
    one call): a spread's grounds each ask for the reference's from every source."""
    p = _known_by_groups(antennas)
    for k, a in enumerate(antennas):
        if np.isfinite(p[k]) or a.integrates_near_sources or a.composite or not has_place(a):
            continue
        keys = [_amplitudes_key(a, src, freq_hz, reference_m, ground, None, kind) for src, kind in pairs]
        if all(key in _AMPLITUDES for key in keys):
            continue
        segments = transmit_segments(a, freq_hz)
        if segments is None:
            continue
        at = antenna_point(a, reference_m)
        got = _through_currents_sources(a, pairs, freq_hz, at, ground, segments)
        for key, v in zip(keys, got):
            _AMPLITUDES.get(key, lambda a=a, v=v: (a, (complex(v), 0j)))


def _through_currents_sources(antenna, pairs, freq_hz: float, at, ground, segments) -> np.ndarray:
    """:func:`_through_currents` of one antenna at ``at`` from each placed source's dipole of ``pairs`` [(source,
    kind)]: (S,) complex, its response toward every source in one call and the unit plane waves from every
    direction at once (as :func:`_through_currents_many` does for one source at many places; equal to rounding)."""
    from snrgain.physics.ground import reflection_coefficients

    pts, dirs, cur = segments
    pts, dirs, cur = np.asarray(pts, dtype=float), np.asarray(dirs, dtype=float), np.asarray(cur, dtype=complex)
    where = at[None, :] + pts[:, :2]
    v_src = np.array(
        [
            np.einsum("ni,ni,n->", _kept_field(src, where, pts[:, 2], freq_hz, ground, kind=kind), dirs, cur)
            for src, kind in pairs
        ]
    )
    az = np.array([float(bearing_to(src, at[None, :])[0]) for src, _ in pairs])
    el = np.array([float(src.elevation_rad) for src, _ in pairs])
    r_v, r_h = reflection_coefficients(ground, el, freq_hz)
    if getattr(antenna, "scatterers", None):  # beside the site's scatterers: their share read apart
        ref_pts = _from_scatter_point(antenna, pts, at)
        own = antenna.bare_antenna.complex_response(freq_hz, az, el)
        out = _scaled_by_plane_waves(v_src, own, (ref_pts, dirs, cur), freq_hz, az, el, r_v, r_h)
        for k, (src, kind) in enumerate(pairs):
            out[k] += _scattered_share(antenna, src, freq_hz, ground, kind, az[k], el[k])
        return out
    rv, rh = antenna.complex_response(freq_hz, az, el)
    return _scaled_by_plane_waves(v_src, (rv, rh), (pts, dirs, cur), freq_hz, az, el, r_v, r_h)


def _from_scatter_point(antenna, pts: np.ndarray, at: np.ndarray) -> np.ndarray:
    """Segment points (N, 3) given from ``at`` moved to be from the point an antenna beside scatterers takes its
    response's phase from (``scatter_point``: its position, or the plan's origin for an array's elements), so that
    its own share and the scatterers' add in one phase."""
    out = np.array(pts, dtype=float)
    out[:, :2] += np.asarray(at, dtype=float) - antenna.scatter_point
    return out


def _scattered_share(antenna, src, freq_hz: float, ground, kind: str, az: float, el: float) -> complex:
    """What an antenna beside the site's scatterers (snrgain.model.scatter.beside) hears of a placed source through
    them: each scatterer's re-radiation toward the antenna for a unit plane wave from the source's direction
    (physics.scatter.scattered, phase from the antenna's ``scatter_point``) times the source's own field on the
    scatterer over that plane wave's, each read through the scatterer's transmit currents (reciprocity, as
    :func:`_through_currents` reads the antenna).  The scatterer hears the source in its own near field: scaling its
    share by the antenna's near-over-far reading instead blew up where the antenna's pattern has a null toward the
    source (a four-square read a source 40 m off in its null 30 dB louder than its elements together)."""
    from snrgain.physics import scatter as phys

    total = 0j
    sp = np.asarray(antenna.scatter_point, dtype=float)
    for i, tx in enumerate(antenna.scatterers):
        if tx.load_ohm is None:
            continue
        segments = transmit_segments(tx.vertical, freq_hz)
        if segments is None:
            continue
        pts, dirs, cur = (np.asarray(a) for a in segments)
        where = np.asarray(tx.position_m, dtype=float)
        e = _kept_field(src, where[None, :] + pts[:, :2], pts[:, 2], freq_hz, ground, kind=kind)
        v_src = np.einsum("ni,ni,n->", e, dirs, cur)
        shifted = np.array(pts, dtype=float)
        shifted[:, :2] += where - sp
        (wave,) = plane_wave_fields(freq_hz, shifted, az, el, ground, pols=("v",))
        v_pw = np.einsum("ni,ni,n->", wave, dirs, cur)
        if abs(v_pw) == 0:
            continue
        s = phys.scattered(
            antenna.bare_antenna,
            tx,
            freq_hz,
            np.array([az]),
            np.array([el]),
            at_m=sp,
            terms=antenna._scatter_terms(freq_hz, i),
        )
        total += complex(s[0]) * v_src / v_pw
    return total


def _scaled_by_plane_waves(v_src, response, segments, freq_hz: float, az, el, r_v, r_h) -> np.ndarray:
    """Each received EMF ``v_src`` (K,) over the same currents' EMF from a unit plane wave from (``az``, ``el``)
    (K,) [rad] in the polarisation the antenna's ``response`` (rv, rh) holds more of, times that response: what
    :func:`_through_currents` gives, for K directions at once (plane_wave_field, every direction together).
    ``segments``: (points, directions, currents) as arrays; ``r_v``, ``r_h``: the ground's reflection
    coefficients at ``el`` (K,) or one pair for all."""
    rv, rh = response
    pts, dirs, cur = segments
    k = 2 * np.pi * freq_hz / C_M_PER_S
    ca, sa, ce, se = np.cos(az), np.sin(az), np.cos(el), np.sin(el)
    toward = np.stack([ce * sa, ce * ca, se], axis=1)  # (K, 3)
    mirror = toward * np.array([1.0, 1.0, -1.0])
    direct = np.exp(1j * k * pts @ toward.T)  # (N, K)
    reflected = np.exp(1j * k * pts @ mirror.T)
    dc = dirs * cur[:, None]  # (N, 3)
    pol_v = (direct * (dc[:, :1] * (-se * sa) + dc[:, 1:2] * (-se * ca) + dc[:, 2:] * ce)).sum(axis=0) + r_v * (
        reflected * (dc[:, :1] * (se * sa) + dc[:, 1:2] * (se * ca) + dc[:, 2:] * ce)
    ).sum(axis=0)
    pol_h = ((direct + r_h * reflected) * (dc[:, :1] * ca - dc[:, 1:2] * sa)).sum(axis=0)
    out = np.zeros(len(v_src), dtype=complex)
    for j in range(len(v_src)):
        best = None
        for r, v_pw in ((complex(rv[j]), pol_v[j]), (complex(rh[j]), pol_h[j])):
            if abs(v_pw) > 0 and (best is None or abs(r) > abs(best[0])):
                best = (r, v_pw)
        if best is not None and best[0] != 0:
            out[j] = v_src[j] * best[0] / best[1]
    return out


def _same_bits(a: np.ndarray, b: np.ndarray) -> bool:
    """Whether two float arrays hold the same values bit for bit (as their bytes compare; without hashing them)."""
    if a is b:
        return True
    if a.shape != b.shape:
        return False
    return bool(np.array_equal(np.ascontiguousarray(a).view(np.int64), np.ascontiguousarray(b).view(np.int64)))


_WORKED_AHEAD = Memo(256)
"""What :func:`fields_ahead` worked ahead (:func:`_ahead_key`), held with the antennas so their ids stay their own:
:func:`pickup` then skips its own prefetch for them (its memos hold what it would work)."""


def _ahead_key(antennas, src, kind: str, ground, freq_hz: float) -> tuple:
    return (tuple(id(a) for a in antennas), _source_key(src, kind), _ground_key(ground), float(freq_hz))


def _known_by_groups(antennas) -> np.ndarray:
    """NaN for each antenna :func:`pickup` takes through :func:`_prefetch_wire_emfs`, 0 for those it fills first as
    the same design at several places (:func:`_wire_powers`, :func:`_compact_powers`): what :func:`fields_ahead`
    leaves to :func:`pickup`."""
    p = np.full(len(antennas), np.nan)
    groups: dict = {}
    for k, a in enumerate(antennas):
        if a.composite or a.gain_key() is None:
            continue
        if a.integrates_near_sources or (has_place(a) and getattr(a, "transmit_segments", None) is not None):
            groups.setdefault((bool(a.integrates_near_sources), a.gain_key()), []).append(k)
    for ks in groups.values():
        if len(ks) > 1:
            p[ks] = 0.0
    return p


def _kept_field(src, points_m, height_m, freq_hz: float, ground, *, kind: str) -> np.ndarray:
    """:func:`field_vector` kept in :data:`_FIELDS` by the points asked (a compact antenna that does not move is asked
    at its segments again for every resistor a termination search tries)."""
    p = np.ascontiguousarray(np.atleast_2d(np.asarray(points_m, dtype=float)))
    z = np.ascontiguousarray(np.broadcast_to(np.asarray(height_m, dtype=float), (len(p),)))
    if p.size > 2 * FIELD_MEMO_POINTS:
        return field_vector(src, p, z, freq_hz, ground, kind=kind)
    key = _field_key(src, p, z, freq_hz, ground, kind)
    return _FIELDS.get(key, lambda: field_vector(src, p, z, freq_hz, ground, kind=kind))


def _field_key(src, p: np.ndarray, z: np.ndarray, freq_hz: float, ground, kind: str) -> tuple:
    """:data:`_FIELDS`' key of a source's field at points ``p`` (N, 2) and heights ``z`` (N,), both contiguous."""
    return (
        field_vector,  # the function itself (a test may put another in its place)
        _source_key(src, kind),
        float(dict(dipoles(src)).get(kind, 0.0)),
        _ground_key(ground),
        float(freq_hz),
        p.tobytes(),
        z.tobytes(),
    )


_FIELDS = Memo(512, max_bytes=64 * 2**20)
"""A placed source's field at a compact antenna's segments (:func:`_kept_field`); what else is made of the field is
kept whole where it is made: a long wire's EMFs in :data:`_EMFS`, a feed line's in snrgain.model.feedline, an
antenna's amplitudes in :data:`_AMPLITUDES`.  Room for a spread's nine grounds' worth of five sources at four
compact antennas and the reference (:func:`fields_ahead` works ahead only when the memos can hold every ground's
parts; the bytes stay bounded)."""
FIELD_MEMO_POINTS = 20_000
"""Larger requests (a layout's many places at once) are worked afresh rather than kept."""


def _currents_on(wire, src, freq_hz, feeds, ground, x, u, kind=None, *, field=None) -> np.ndarray:
    """The feed currents of a long wire driven by a placed source's whole field (reciprocity: the line model's
    distributed series EMF is the field along the wire at its height, direct, reflected and surface wave, and each
    down-lead's EMF the integral of the vertical field up it).  ``field(points (N, 2), heights (N,))`` -> (N, 3):
    another incident field instead of the source's (the transmitting vertical's: snrgain.physics.scatter).

    The EMFs depend on where the wire stands, not on its loads: a placed source's are kept for the next wire of the
    same geometry at one place (a termination searched under the sky), and many places at once read the source's
    field from its tables against distance (:func:`tabled_field_vector`)."""
    if field is None:
        kind = kind if kind is not None else dipoles(src)[0][0]
        emf, lead = _source_emfs(wire, src, freq_hz, feeds, ground, x, u, kind)
    else:
        emf, lead = _emfs(wire, feeds, x, u, field)
    return _through_line(wire, freq_hz, x, emf, lead)


_EMFS = Memo(1024, max_bytes=64 * 2**20)
"""A placed source's EMFs along a wire standing at one place (:func:`_source_emfs`), by everything they depend on."""


def _source_emfs(wire, src, freq_hz, feeds, ground, x, u, kind) -> tuple[np.ndarray, np.ndarray | None]:
    """:func:`_emfs` in a placed source's field: read from its tables (:func:`tabled_field_vector`) from
    :func:`table_min_points` points on (many places at once, or every place inside :func:`tabled`), one place kept
    by its geometry for the next wire standing there (the loads do not enter)."""
    least = table_min_points()
    many = len(feeds) * len(x) >= least

    def field(pts, heights):  # up the leads: worked directly (a few points at each of LEAD_POINTS heights)
        return field_vector(src, pts, heights, freq_hz, ground, kind=kind)

    def along(pts, h):
        return tabled_field_along(src, pts, h, u, freq_hz, ground, kind=kind)

    def leads(ends, h):
        return tabled_lead_emfs(src, ends, h, freq_hz, ground, kind=kind)

    if len(feeds) > 1:
        up = leads if 2 * len(feeds) * LEAD_POINTS >= LEAD_TABLE_MIN else None
        return _emfs(wire, feeds, x, u, field, along if many else None, up)
    key = _emfs_key(wire, src, freq_hz, feeds, ground, x, u, kind, many, least)
    if many:
        return _EMFS.get(key, lambda: _emfs(wire, feeds, x, u, field, along))
    return _EMFS.get(key, lambda: _emfs_one_call(wire, src, freq_hz, feeds, ground, x, u, kind))


def _emfs_key(wire, src, freq_hz, feeds, ground, x, u, kind, many: bool, least: int) -> tuple:
    """What a placed source's EMFs along a wire at one place (``feeds`` (1, 2)) depend on: :data:`_EMFS`' key."""
    return (
        field_vector,  # the function itself (a test may put another in its place)
        many,
        least,
        _source_key(src, kind),
        _ground_key(ground),
        float(freq_hz),
        float(feeds[0, 0]),
        float(feeds[0, 1]),
        float(u[0]),
        float(u[1]),
        float(wire.length_m),
        float(wire.wire_height_m()),
        bool(wire.has_leads),
        np.asarray(x, dtype=float).tobytes(),
    )


def _emf_points(wire, feeds, x, u) -> tuple[np.ndarray, np.ndarray]:
    """(points (M, 2), heights (M,)) at which :func:`_emfs` takes the field of a wire at one place: along it at its
    height, then up its leads (feed end first, LEAD_POINTS each) when it has them."""
    h = wire.wire_height_m()
    pts = (feeds[:, None, :] + x[None, :, None] * u[None, None, :]).reshape(-1, 2)
    if not (wire.has_leads and h > 0):
        return pts, np.full(len(pts), h)
    t, _ = _lead_rule()
    ends = np.concatenate([feeds, feeds + wire.length_m * u[None, :]])
    pts = np.concatenate([pts, np.repeat(ends, LEAD_POINTS, axis=0)])
    return pts, np.concatenate([np.full(len(x) * len(feeds), h), np.tile((t + 1) * h / 2, len(ends))])


def _emfs_from(wire, feeds, x, u, e: np.ndarray) -> tuple[np.ndarray, np.ndarray | None]:
    """:func:`_emfs` of a wire at one place from the field ``e`` at :func:`_emf_points`' points (its arithmetic, without
    the points it would make for a field it is not given)."""
    h = wire.wire_height_m()
    n = len(x) * len(feeds)
    emf = (e[:n, 0] * u[0] + e[:n, 1] * u[1]).reshape(len(feeds), -1)  # the points along the wire: the first n
    if not (wire.has_leads and h > 0):
        return emf, None
    _, wq = _lead_rule()  # up each lead: LEAD_POINTS each, feed end first (as _emfs orders them)
    return emf, (e[n:, 2].reshape(-1, LEAD_POINTS) @ wq) * h / 2


def _emfs_one_call(wire, src, freq_hz, feeds, ground, x, u, kind) -> tuple[np.ndarray, np.ndarray | None]:
    """:func:`_emfs` of a wire at one place, the field along it and up its leads worked in one call of
    :func:`field_vector` (a call's own cost is that of a few hundred points) and not kept there (the EMFs are)."""
    e = field_vector(src, *_emf_points(wire, feeds, x, u), freq_hz, ground, kind=kind)
    return _emfs_from(wire, feeds, x, u, e)


def _prefetch_wire_emfs(
    antennas, src, freq_hz: float, reference_m, ground, kind: str, p: np.ndarray, *, extra=(), others=()
) -> None:
    """Put in :data:`_EMFS` the EMFs of every long wire of ``antennas`` standing alone at its place whose power is
    not known (NaN in ``p``) and whose EMFs are not held, the source's field at all of them worked in one call of
    :func:`field_vector` (the wires of a run one source at a time: a call's own cost is that of a few hundred
    points).  The keys are those :func:`wire_feed_current` asks for (the same samples); one it would not ask for
    is only work wasted, never a wrong EMF (the samples are in the key).  ``extra``: [(points, heights, keep)] also
    worked in that call, each part handed to ``keep`` (the feed lines' routes: snrgain.model.feedline); ``others``:
    long wires whose EMFs alone are worked in that call too (:func:`_others_ahead`)."""
    plan = _prefetch_plan(antennas, src, freq_hz, reference_m, ground, kind, p, extra=extra, others=others)
    if plan is None:
        return
    q, z = plan.points()
    _prefetch_keep(plan, field_vector(src, q, z, freq_hz, ground, kind=kind))


class _Plan:
    """What :func:`_prefetch_wire_emfs` works the source's field for at one ground: the wires (``todo``: key, wire,
    feeds, samples, unit vector, (points, heights)), the compact antennas' segments (``compact``: key, points,
    heights) and the ``extra`` parts (points, heights, keep), in the order of :meth:`points`."""

    def __init__(self, src, freq_hz, reference_m, ground, kind, todo, compact, extra):
        # todo: (key, wire, feeds, samples, unit vector, (points, heights), whether its amplitudes are kept)
        self.src, self.freq_hz, self.reference_m, self.ground, self.kind = src, freq_hz, reference_m, ground, kind
        self.todo, self.compact, self.extra = todo, compact, list(extra)
        self._points = None

    def parts(self) -> list:
        return [t[5] for t in self.todo] + [(q, z) for _, q, z in self.compact] + [(q, z) for q, z, _ in self.extra]

    def points(self) -> tuple[np.ndarray, np.ndarray]:
        """(points (N, 2), heights (N,)): every part's, concatenated."""
        if self._points is None:
            parts = self.parts()
            self._points = (np.concatenate([q for q, _ in parts]), np.concatenate([z for _, z in parts]))
        return self._points


def _prefetch_plan(
    antennas, src, freq_hz: float, reference_m, ground, kind: str, p: np.ndarray, *, extra=(), others=()
):
    """:func:`_prefetch_wire_emfs`' :class:`_Plan` at one ground, None when fewer than two parts are to be worked;
    ``others``: wires whose EMFs alone are worked (no amplitudes: not among the antennas asked for)."""
    least = table_min_points()
    todo, seen = [], set()
    own = len(antennas)
    for k, a in enumerate([*antennas, *others]):
        if k < own and (np.isfinite(p[k]) or not a.integrates_near_sources or a.composite):
            continue
        point = antenna_point(a, reference_m)
        # a termination search's resistors: one wire's EMFs (the loads do not enter them)
        geometry = (type(a), float(point[0]), float(point[1]), float(a.bearing_rad), float(a.length_m))
        geometry += (float(a.wire_height_m()), bool(a.has_leads), complex(a.line(freq_hz).gamma))
        if geometry in seen:
            continue
        seen.add(geometry)
        # the line enters the samples only where its own wavelength sets the step (a wire on the soil): an
        # overhead wire's place is the same over every ground of a spread
        place = (geometry[:-1], _line_step(geometry[-1], freq_hz), _source_key(src, kind), float(freq_hz))
        feeds, u, x = _PLACES.get(place, lambda a=a, point=point: _wire_place(a, point, src, freq_hz))
        if len(x) >= least:
            continue
        key = _emfs_key(a, src, freq_hz, feeds, ground, x, u, kind, False, least)
        if key in _EMFS or key in seen:
            continue
        seen.add(key)
        points = _POINTS.get(place, lambda a=a, feeds=feeds, x=x, u=u: _read_only(_emf_points(a, feeds, x, u)))
        todo.append((key, a, feeds, x, u, points, k < own))
    compact = _compact_points(antennas, src, freq_hz, reference_m, ground, kind, p, seen)
    if len(todo) + len(compact) + len(extra) < 2:
        return None
    return _Plan(src, freq_hz, reference_m, ground, kind, todo, compact, extra)


_PLACES = Memo(1024)
"""A long wire's place before a placed source (:func:`_wire_place`), by its geometry, the source and the frequency:
the same at every ground of a spread and for every resistor a termination search tries."""
_POINTS = Memo(1024)
"""A long wire's points before a placed source (:func:`_emf_points`), by :data:`_PLACES`' key: the same at every
ground of a spread where the line does not set the samples."""


def _read_only(arrays: tuple) -> tuple:
    for v in arrays:
        v.flags.writeable = False
    return arrays


def _line_step(gamma: complex, freq_hz: float):
    """What of a wire's line enters its samples (:func:`snrgain.physics.reciprocity.sample_steps`): its propagation
    constant where the line's own step is shorter than free space's, else None (the samples are free space's)."""
    from snrgain.physics.reciprocity import STEPS_PER_LINE_WAVELENGTH, STEPS_PER_WAVELENGTH

    free = 2 * np.pi / (2 * np.pi * freq_hz / C_M_PER_S) / STEPS_PER_WAVELENGTH  # as sample_steps works it
    return gamma if 2 * np.pi / abs(gamma) / STEPS_PER_LINE_WAVELENGTH < free else None


def _wire_place(a, point, src, freq_hz: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(feeds (1, 2), unit vector along the wire, its samples :func:`wire_grid`) of a long wire standing at ``point``
    before a placed source (read-only arrays): a wire's own (:func:`_prefetch_plan`), or the first of the wires
    :func:`_load_variant_powers` hears together (the same for every resistor and ground)."""
    feeds = np.atleast_2d(np.asarray(point, dtype=float))
    b = a.bearing_rad
    u = np.array([np.sin(b), np.cos(b)])
    to_src = np.asarray(src.position_m)[None, :] - feeds
    along = np.clip(to_src @ u, 0.0, a.length_m)
    closest = np.hypot(*(to_src - along[:, None] * u[None, :]).T)
    x = wire_grid(a, src, freq_hz, float(closest[0]))
    for v in (feeds, u):
        v.flags.writeable = False
    return feeds, u, x


def _prefetch_keep(plan: _Plan, e: np.ndarray) -> None:
    """Hand each part of the field ``e`` at :meth:`_Plan.points` to where it is kept: a wire's EMFs and amplitudes,
    a compact antenna's field at its segments, a feed line's route (its ``keep``)."""
    from snrgain.antennas.longwire import port_response

    src, freq_hz, reference_m, ground, kind = plan.src, plan.freq_hz, plan.reference_m, plan.ground, plan.kind
    todo, compact = plan.todo, plan.compact
    parts = np.split(e, np.cumsum([len(q) for q, _ in plan.parts()])[:-1])
    el = np.array([src.elevation_rad])
    for (key, a, feeds, x, u, _, amplitudes), part in zip(todo, parts):
        emf, lead = _EMFS.get(key, lambda a=a, feeds=feeds, x=x, u=u, part=part: _emfs_from(a, feeds, x, u, part))
        if not amplitudes:
            continue
        # and its amplitudes, as received_amplitudes works them out for the wire standing alone (one call less each)
        i_f = complex(_through_line(a, freq_hz, x, emf, lead)[0])
        amp = port_response(freq_hz, np.array([i_f]), load_ohm=a.receiver_load_ohm(freq_hz), elevation_rad=el)
        held = _amplitudes_key(a, src, freq_hz, reference_m, ground, None, kind)
        _AMPLITUDES.get(held, lambda a=a, amp=amp: (a, (complex(amp[0]), 0j)))
    for (key, _, _), part in zip(compact, parts[len(todo) :]):
        _FIELDS.get(key, lambda part=part: part)
    for (_, _, keep), part in zip(plan.extra, parts[len(todo) + len(compact) :]):
        keep(part)


def _prefetch_keep_grounds(plans: list, e: np.ndarray) -> None:
    """:func:`_prefetch_keep` of each of ``plans`` (one per ground of a spread, their points the same bit for bit) from
    the field ``e`` (G, N, 3) over their grounds: each wire's EMFs, line transfer and port response
    (:func:`_wires_keep_grounds`) and each route's EMFs and current (snrgain.model.feedline.keep_routes_grounds)
    worked over the grounds in one array expression, not ground by ground; plans not made alike (other parts) are
    kept one by one."""
    first = plans[0]
    sizes = [len(q) for q, _ in first.parts()]
    if len(plans) < 2 or not all(_alike(first, plan, sizes) for plan in plans[1:]):
        for plan, part in zip(plans, e):
            _prefetch_keep(plan, part)
        return
    from snrgain.model import feedline

    at = np.concatenate([[0], np.cumsum(sizes)])
    for j in range(len(first.todo)):
        _wires_keep_grounds(plans, j, e[:, at[j] : at[j + 1]])
    c0 = len(first.todo)
    for j in range(len(first.compact)):
        for plan, part in zip(plans, e[:, at[c0 + j] : at[c0 + j + 1]]):
            _FIELDS.get(plan.compact[j][0], lambda part=part: part)
    x0 = c0 + len(first.compact)
    for j in range(len(first.extra)):
        keeps = [plan.extra[j][2] for plan in plans]
        feedline.keep_routes_grounds(keeps, e[:, at[x0 + j] : at[x0 + j + 1]], first.freq_hz)


def _alike(first: _Plan, plan: _Plan, sizes: list) -> bool:
    """Whether ``plan`` holds the same parts as ``first`` (another ground's): the same sizes, the same wires' samples
    and whether their amplitudes are kept."""
    if len(plan.todo) != len(first.todo) or len(plan.compact) != len(first.compact):
        return False
    if len(plan.extra) != len(first.extra) or [len(q) for q, _ in plan.parts()] != sizes:
        return False
    return all(
        a[6] == b[6] and (a[3] is b[3] or np.array_equal(a[3], b[3])) and len(a[2]) == len(b[2])
        for a, b in zip(first.todo, plan.todo)
    )


def _wires_keep_grounds(plans: list, j: int, e: np.ndarray) -> None:
    """The ``j``-th wire of each of ``plans`` (the same wire over each ground) from its ground's field ``e``
    (G, N, 3) at its points: its EMFs (as :func:`_emfs_from` makes them) and, where they are kept, its amplitudes
    (as :func:`_prefetch_keep`), each line's transfer over the grounds in one array expression
    (snrgain.physics.reciprocity.through_line_grounds)."""
    from snrgain.antennas.longwire import port_response
    from snrgain.physics.reciprocity import through_line_grounds

    entries = [plan.todo[j] for plan in plans]
    _, a0, feeds, x, u, _, amplitudes = entries[0]
    h = a0.wire_height_m()
    n = len(x) * len(feeds)
    emf = e[:, :n, 0] * u[0] + e[:, :n, 1] * u[1]  # the points along the wire: the first n
    lead = None
    if a0.has_leads and h > 0:
        _, wq = _lead_rule()  # up each lead: LEAD_POINTS each, feed end first
        lead = (e[:, n:, 2].reshape(len(e), -1, LEAD_POINTS) @ wq) * h / 2
    held = [
        _EMFS.get(key, lambda g=g: (emf[g].reshape(len(feeds), -1), None if lead is None else lead[g]))
        for g, (key, *_) in enumerate(entries)
    ]
    if not amplitudes:
        return
    plan = plans[0]
    src, freq_hz, reference_m, kind = plan.src, plan.freq_hz, plan.reference_m, plan.kind
    wires = [t[1] for t in entries]
    emfs = np.concatenate([v[0] for v in held])
    leads = None if lead is None else np.stack([v[1] for v in held])
    i_f = through_line_grounds(wires, freq_hz, x, emfs, leads)
    loads = np.array([w.receiver_load_ohm(freq_hz) for w in wires], dtype=float)
    amp = port_response(freq_hz, i_f, load_ohm=loads, elevation_rad=np.full(len(wires), src.elevation_rad))
    for a, plan, v in zip(wires, plans, amp):
        held_key = _amplitudes_key(a, src, freq_hz, reference_m, plan.ground, None, kind)
        _AMPLITUDES.get(held_key, lambda a=a, v=v: (a, (complex(v), 0j)))


def _compact_points(antennas, src, freq_hz: float, reference_m, ground, kind: str, p: np.ndarray, seen: set) -> list:
    """[(:func:`_kept_field`'s key, points, heights)] of the segments of every compact antenna of ``antennas`` read
    through its transmit currents whose power is not known and whose field there is not held: worked in
    :func:`_prefetch_wire_emfs`' one call of the field with the wires'."""
    out = []
    for k, a in enumerate(antennas):
        if np.isfinite(p[k]) or a.integrates_near_sources or a.composite or not has_place(a):
            continue
        segments = transmit_segments(a, freq_hz)
        if segments is None:
            continue
        pts = np.asarray(segments[0], dtype=float)
        q = np.ascontiguousarray(antenna_point(a, reference_m)[None, :] + pts[:, :2])
        z = np.ascontiguousarray(pts[:, 2])
        if q.size > 2 * FIELD_MEMO_POINTS:
            continue
        key = _field_key(src, q, z, freq_hz, ground, kind)
        if key in _FIELDS or key in seen:
            continue
        seen.add(key)
        out.append((key, q, z))
    return out


def _source_key(src, kind: str) -> tuple:
    """What a placed source's field depends on (its level aside): place, height, polarisation, axis; and the dipole
    (kept by the source object, which is frozen, and held with it so its id stays its own)."""
    if not is_frozen(src):  # a source that may change: worked afresh
        return _source_key_worked(src, kind)
    return _SOURCE_KEYS.get((id(src), kind), lambda: (src, _source_key_worked(src, kind)))[1]


_SOURCE_KEYS = Memo(256)


def _source_key_worked(src, kind: str) -> tuple:
    axis = getattr(src, "orientation_rad", None)
    return (
        tuple(float(c) for c in src.position_m),
        float(src.height_m),
        src.polarisation,
        None if axis is None else float(axis),
        kind,
    )


def _ground_key(ground) -> tuple | None:
    return None if ground is None else (float(ground.permittivity), float(ground.conductivity_s_per_m))


# -- a placed source's field read from tables against distance -------------------------------------------------

TABLE_MIN_POINTS = 4000
"""Points asked at once from which a placed source's field is read from its tables (:func:`tabled_field_vector`)
instead of worked point by point: fewer do not pay for the table's panels (unless inside :func:`tabled`)."""
LEAD_TABLE_MIN = 10 * 2 * LEAD_POINTS
"""Points up the leads (of 10 places) from which their EMFs too are read from a table (:class:`_LeadTable`)."""
_LEAST = [TABLE_MIN_POINTS]


def table_min_points() -> int:
    """The points asked at once from which a placed source's field is read from its tables (:func:`tabled`)."""
    return _LEAST[-1]


@contextmanager
def tabled(min_points: int = 0):
    """Within: a placed source's field read from its tables from ``min_points`` points on (a search that asks
    again and again near the same places: layout's refinement), not only for large batches."""
    _LEAST.append(int(min_points))
    try:
        yield
    finally:
        _LEAST.pop()


TABLE_PANEL = 0.125
"""Width of a table panel in ln(distance [m]) (13 % apart)."""
TABLE_DEGREE = 9
"""Degree of the polynomial on each panel (interpolating at TABLE_DEGREE + 1 Chebyshev points)."""
TABLE_TOLERANCE = 1e-4
"""A panel is kept only where its polynomial meets the field at its check points to this fraction of the panel's
largest value; a point on a panel that does not (or closer than TABLE_MIN_RHO_M) is worked directly.  The field's
own tables (noisemodels.halfspace, cubic in distance) hold it to 3e-4, so a tighter bound here only sends points
to the direct field (at 1e-11 it kept 47 of the 20-acre demo's 83 panels and 3 % of its points)."""
TABLE_MIN_RHO_M = 0.01
_TABLES = Memo(64)
"""A placed source's tables (:class:`_FieldTable`) by source, dipole, ground, frequency and height."""


class _FieldTable:
    """One of a placed source's dipoles, its field at one height above the soil against the horizontal distance
    rho from its foot, in panels of ln(rho) made as points ask for them.

    Flat ground is the same all round the source's foot, and the field is linear in the dipole's moment, so with
    rho_hat pointing away from the foot, phi_hat across (rho_hat turned 90 deg to the left) and z_hat up:

    - a vertical dipole: E = A(rho) rho_hat + C(rho) z_hat;
    - a horizontal dipole of axis p: E = (p . rho_hat) [A(rho) rho_hat + C(rho) z_hat] + (p . phi_hat) B(rho)
      phi_hat (the vertical plane through the axis and the point is a plane of symmetry of the moment along
      rho_hat, and of antisymmetry of the one along phi_hat);

    A and C are read along the dipole's axis, B across it (:func:`field_vector` at the panels' points).  Each is
    kept without its travelling phase (times exp(+j k rho)), a smooth function of ln(rho), as a polynomial of
    degree TABLE_DEGREE on each panel (interpolating at Chebyshev points), checked against the field between
    them."""

    COMPONENTS = {"vertical": ("A", "C"), "horizontal": ("A", "C", "B")}

    def __init__(self, src, freq_hz: float, ground, kind: str, z_m: float):
        self.src, self.freq_hz, self.ground, self.kind, self.z_m = src, float(freq_hz), ground, kind, float(z_m)
        self.k = 2 * np.pi * self.freq_hz / C_M_PER_S
        self.axis = _axis(src) if kind == "horizontal" else np.array([0.0, 1.0])
        self.names = self.COMPONENTS[kind]
        self.panels: dict[int, np.ndarray | None] = {}
        m = TABLE_DEGREE + 1
        self.nodes = np.cos(np.pi * (np.arange(m) + 0.5) / m)  # Chebyshev points on [-1, 1]
        self.checks = np.cos(np.pi * np.arange(m + 1) / m)  # between them, and the ends
        self.solve = np.linalg.inv(np.vander(self.nodes, m, increasing=True))  # node values -> monomial coefficients
        self.lo = 0
        self.dense = np.zeros((len(self.names), 2, m, 0))  # (component, real/imag, power, panel - lo)
        self.held = np.zeros(0, dtype=bool)

    def _values(self, rho: np.ndarray) -> np.ndarray:
        """(components, len(rho)) without their travelling phase."""
        p = self.axis
        src = np.asarray(self.src.position_m, dtype=float)
        along = field_vector(
            self.src, src + rho[:, None] * p[None, :], self.z_m, self.freq_hz, self.ground, kind=self.kind
        )
        out = [along[:, 0] * p[0] + along[:, 1] * p[1], along[:, 2]]
        if self.kind == "horizontal":
            side = np.array([p[1], -p[0]])  # phi_hat is p there
            across = field_vector(
                self.src, src + rho[:, None] * side[None, :], self.z_m, self.freq_hz, self.ground, kind=self.kind
            )
            out.append(across[:, 0] * p[0] + across[:, 1] * p[1])
        return np.array(out) * np.exp(1j * self.k * rho)[None, :]

    def _make(self, which: np.ndarray) -> None:
        """Fit the panels ``which`` (integers j: ln(rho) in [j, j + 1) TABLE_PANEL) from the field at their nodes,
        in one call, and keep those meeting :data:`TABLE_TOLERANCE` at their check points."""
        s = np.concatenate([self.nodes, self.checks])
        t = (which[:, None] + (s[None, :] + 1) / 2) * TABLE_PANEL
        v = self._values(np.exp(t).ravel()).reshape(-1, len(which), len(s))  # (components, panels, points)
        m = len(self.nodes)
        coef = np.einsum("kn,cpn->pck", self.solve, v[:, :, :m])  # (panels, components, power)
        got = _horner(coef[:, :, None, :], self.checks[None, None, :])
        scale = np.max(np.abs(v), axis=2).T
        err = np.max(np.abs(got - v[:, :, m:].transpose(1, 0, 2)), axis=2)
        good = np.all(err <= TABLE_TOLERANCE * np.maximum(scale, 1e-300), axis=1)
        for j, ok, c in zip(which, good, coef):
            self.panels[int(j)] = np.stack([c.real, c.imag], axis=1) if ok else None
        lo, hi = min(self.panels), max(self.panels)
        self.lo = lo
        self.dense = np.zeros((*self.dense.shape[:3], hi - lo + 1))
        self.held = np.zeros(hi - lo + 1, dtype=bool)
        for j, c in self.panels.items():
            if c is not None:
                self.dense[..., j - lo], self.held[j - lo] = c, True

    def read(self, rho: np.ndarray, names) -> tuple[list[np.ndarray], np.ndarray]:
        """([each component of ``names`` at the points it holds, with its travelling phase], which points it
        holds (bool, len(rho)): not those closer than TABLE_MIN_RHO_M or on a panel that missed the tolerance)."""
        ok = rho >= TABLE_MIN_RHO_M
        t = np.log(np.where(ok, rho, 1.0))
        t *= 1.0 / TABLE_PANEL
        j = np.floor(t).astype(np.int64)
        if ok.any():
            lo, hi = int(j[ok].min()), int(j[ok].max())
            seen = np.bincount(j[ok] - lo, minlength=hi - lo + 1) > 0
            new = np.array([w for w in np.flatnonzero(seen) + lo if int(w) not in self.panels], dtype=np.int64)
            if len(new):
                self._make(new)
        inside = ok & (j >= self.lo) & (j < self.lo + len(self.held))
        ok = inside.copy()
        ok[inside] = self.held[j[inside] - self.lo]
        if not ok.all():
            t, j, rho = t[ok], j[ok], rho[ok]
        idx = j - self.lo
        s = t - j
        s *= 2.0
        s -= 1.0
        kr = self.k * rho
        c, sn = np.cos(kr), np.sin(kr)
        out = []
        for name in names:
            real, imag = self.dense[self.names.index(name)]  # (power, panel - lo) each
            re, im = real[-1][idx], imag[-1][idx]
            for k in range(real.shape[0] - 2, -1, -1):
                re *= s
                re += real[k][idx]
                im *= s
                im += imag[k][idx]
            out.append((re * c + im * sn) + 1j * (im * c - re * sn))  # times exp(-j k rho)
        return out, ok

    def field(self, d: np.ndarray, along=None) -> tuple[np.ndarray, np.ndarray]:
        """(E (N, 3) [east, north, up], or E . along (N,) when ``along`` (a horizontal unit vector) is given, at the
        points it holds; which points it holds (N,) bool) at plan offsets ``d`` (N, 2) from the source's foot."""
        rho = np.hypot(d[:, 0], d[:, 1])
        vertical = self.kind != "horizontal"
        names = ("A",) if vertical else ("A", "B")
        if along is None:
            names = names + ("C",)
        vals, ok = self.read(rho, names)
        r = rho[ok]
        re, rn = d[ok, 0] / r, d[ok, 1] / r  # rho_hat; phi_hat = (-rn, re)
        if vertical:
            pr, pf = 1.0, 0.0
        else:
            p = self.axis
            pr, pf = p[0] * re + p[1] * rn, p[1] * re - p[0] * rn
        if along is not None:
            out = vals[0] * (pr * (re * along[0] + rn * along[1]))
            if not vertical:
                out = out + vals[1] * (pf * (re * along[1] - rn * along[0]))
            return out, ok
        e = np.zeros((len(r), 3), dtype=complex)
        a = vals[0] * pr
        e[:, 0], e[:, 1], e[:, 2] = a * re, a * rn, vals[-1] * pr
        if not vertical:
            b = vals[1] * pf
            e[:, 0] -= b * rn
            e[:, 1] += b * re
        return e, ok


class _LeadTable(_FieldTable):
    """The EMF up a vertical down-lead of height ``z_m`` standing at distance rho from a placed source's foot, L(rho):
    the Gauss-Legendre sum of :func:`_emfs` over the vertical field up it (C of :class:`_FieldTable` at each of the
    rule's heights), so E . z_hat summed up the lead is L(rho) for a vertical dipole and (p . rho_hat) L(rho) for a
    horizontal one; kept, like the field, without its travelling phase, one polynomial per panel."""

    COMPONENTS = {"vertical": ("L",), "horizontal": ("L",)}

    def _values(self, rho: np.ndarray) -> np.ndarray:
        p, h = self.axis, self.z_m
        t, wq = _lead_rule()
        zs = (t + 1) * h / 2
        src = np.asarray(self.src.position_m, dtype=float)
        pts = np.repeat(src + rho[:, None] * p[None, :], LEAD_POINTS, axis=0)
        ez = field_vector(self.src, pts, np.tile(zs, len(rho)), self.freq_hz, self.ground, kind=self.kind)[:, 2]
        lead = (ez.reshape(len(rho), LEAD_POINTS) @ wq) * h / 2
        return lead[None, :] * np.exp(1j * self.k * rho)[None, :]


def tabled_lead_emfs(src, ends_m, height_m: float, freq_hz: float, ground, *, kind: str) -> np.ndarray:
    """The EMF up a down-lead of ``height_m`` at each of the plan points ``ends_m`` (M, 2): what :func:`_emfs` sums up
    it from :func:`field_vector`, read from the source's lead table (:class:`_LeadTable`); worked directly where the
    table does not hold."""
    e = np.atleast_2d(np.asarray(ends_m, dtype=float))
    d = e - np.asarray(src.position_m, dtype=float)[None, :]
    key = ("lead", field_vector, _source_key(src, kind), _ground_key(ground), float(freq_hz), float(height_m))
    table = _TABLES.get(key, lambda: _LeadTable(src, freq_hz, ground, kind, float(height_m)))
    rho = np.hypot(d[:, 0], d[:, 1])
    (vals,), ok = table.read(rho, ("L",))
    out = np.empty(len(e), dtype=complex)
    if kind == "horizontal":
        p = table.axis
        vals = vals * ((p[0] * d[ok, 0] + p[1] * d[ok, 1]) / rho[ok])
    out[ok] = vals
    if not ok.all():
        t, wq = _lead_rule()
        zs = (t + 1) * height_m / 2
        m = int(np.count_nonzero(~ok))
        ez = field_vector(src, np.repeat(e[~ok], LEAD_POINTS, axis=0), np.tile(zs, m), freq_hz, ground, kind=kind)[:, 2]
        out[~ok] = (ez.reshape(m, LEAD_POINTS) @ wq) * height_m / 2
    return out


def _axis(src) -> np.ndarray:
    o = orientation_rad(src)
    return np.array([np.sin(o), np.cos(o)])


def _horner(coef: np.ndarray, s: np.ndarray) -> np.ndarray:
    """sum_k coef[..., k] s^k (coefficients lowest first)."""
    out = coef[..., -1]
    for k in range(coef.shape[-1] - 2, -1, -1):
        out = out * s + coef[..., k]
    return out


def _table(src, freq_hz: float, ground, kind: str, z_m: float) -> _FieldTable:
    key = (field_vector, _source_key(src, kind), _ground_key(ground), float(freq_hz), float(z_m))
    return _TABLES.get(key, lambda: _FieldTable(src, freq_hz, ground, kind, float(z_m)))


def tabled_field_vector(src, points_m, height_m, freq_hz: float, ground, *, kind: str, tables=None) -> np.ndarray:
    """:func:`field_vector` (N, 3), read from the source's tables against distance (:class:`_FieldTable`, one per
    height asked; within :data:`TABLE_TOLERANCE` of each panel's largest value) when ``tables`` (default: at least
    :func:`table_min_points` points), worked directly for the rest: a long wire at many places asks at a few
    heights only (its own and its leads' quadrature points)."""
    p = np.atleast_2d(np.asarray(points_m, dtype=float))
    z = np.broadcast_to(np.asarray(height_m, dtype=float), (len(p),))
    if not (len(p) >= table_min_points() if tables is None else tables):
        return field_vector(src, p, z, freq_hz, ground, kind=kind)
    out = np.zeros((len(p), 3), dtype=complex)
    left = np.ones(len(p), dtype=bool)
    d = p - np.asarray(src.position_m, dtype=float)[None, :]
    for zz in np.unique(z):
        sel = np.flatnonzero(z == zz)
        e, ok = _table(src, freq_hz, ground, kind, float(zz)).field(d[sel])
        out[sel[ok]] = e
        left[sel[ok]] = False
    if left.any():
        out[left] = field_vector(src, p[left], z[left], freq_hz, ground, kind=kind)
    return out


def tabled_field_along(src, points_m, height_m: float, along, freq_hz: float, ground, *, kind: str) -> np.ndarray:
    """The field along the horizontal unit vector ``along`` (N,) at plan points (N, 2) all at ``height_m``: what
    :func:`field_vector` gives, read from the source's table at that height (:func:`tabled_field_vector`)."""
    p = np.atleast_2d(np.asarray(points_m, dtype=float))
    d = p - np.asarray(src.position_m, dtype=float)[None, :]
    got, ok = _table(src, freq_hz, ground, kind, float(height_m)).field(d, along=along)
    if ok.all():
        return got
    out = np.empty(len(p), dtype=complex)
    out[ok] = got
    e = field_vector(src, p[~ok], float(height_m), freq_hz, ground, kind=kind)
    out[~ok] = e[:, 0] * along[0] + e[:, 1] * along[1]
    return out


def hears(antenna, src, freq_hz: float, reference_m) -> bool:
    """Whether an antenna takes any power from a placed source (received_power > 0), decided from its partial
    gains toward the source and the polarisations the source radiates, without the source's field (whose
    magnitude is never zero off the source): light enough for ``snrgain check``."""
    if antenna.integrates_near_sources or antenna.composite:
        return True
    at = antenna_point(antenna, reference_m)
    gv, gh = antenna.partial_gains(freq_hz, bearing_to(src, at[None, :]), np.array([src.elevation_rad]))
    share_v, share_h = POLARISATION_SHARE[src.polarisation]
    if share_h:  # a horizontal dipole: a vertical ground wave off its ends, a horizontal field broadside to it
        off_axis = float(bearing_to(src, at[None, :])[0]) - orientation_rad(src)
        ends, side = np.cos(off_axis) ** 2, np.sin(off_axis) ** 2
        heard = share_v * gv[0] + share_h * (ends * gv[0] + side * gh[0])
        # in the source's null to within NULL_DEPTH of what it hears of the source turned its best way: a reading
        # there would make the source as much louder everywhere else (a hair off broadside is as deaf as broadside)
        return bool(heard > NULL_DEPTH * (share_v + share_h) * max(gv[0], gh[0]))
    return bool(gv[0] > 0)  # a vertical dipole's field has no horizontal part across the line of sight


NULL_DEPTH = 1e-6
"""An antenna hears a placed source only above this share (-60 dB, as snrgain.scenario.local.MIN_READING_GAIN for a
source by bearing) of what it would hear of it turned its best way (:func:`hears`)."""


def received_power(antenna, src, freq_hz: float, reference_m, ground, *, at_m=None) -> float:
    """Power an antenna delivers from a placed source, in units where a unit plane wave delivers its realized gain;
    ``at_m`` puts the antenna (its feed point) there instead of at its position."""
    total = 0.0
    for kind, _ in dipoles(src):  # independent dipoles: their powers add
        a_v, a_h = received_amplitudes(antenna, src, freq_hz, reference_m, ground, at_m=at_m, kind=kind)
        total += abs(a_v) ** 2 + abs(a_h) ** 2
    return float(total)


def received_amplitudes(
    antenna, src, freq_hz: float, reference_m, ground, *, at_m=None, kind=None
) -> tuple[complex, complex]:
    """(vertical, horizontal) complex amplitudes an antenna delivers from a placed source, |a_v|^2 + |a_h|^2 its
    :func:`received_power`.  A long wire sums the field along its length (one amplitude, both polarisations in its
    current); a compact antenna takes its response toward the source times the field where it stands; a
    composite (a phasing unit) adds its parts' amplitudes through its weights, each part hearing the source where
    it stands, so a unit that passes one antenna alone hears exactly what that antenna hears.

    Kept in :data:`_AMPLITUDES` by the antenna object itself and the rest of what enters them: :func:`pickup` works
    them out, the antenna's feed line (snrgain.model.feedline) reads them."""
    key = _amplitudes_key(antenna, src, freq_hz, reference_m, ground, at_m, kind)
    held = _AMPLITUDES.get(
        key, lambda: (antenna, _received_amplitudes(antenna, src, freq_hz, reference_m, ground, at_m=at_m, kind=kind))
    )
    return held[1]


def received_amplitudes_of(antennas, src, freq_hz: float, reference_m, ground, *, kind) -> list:
    """:func:`received_amplitudes` of each of ``antennas`` from one of a placed source's dipoles (at their own
    places), the key's parts other than the antenna worked once (a pass of the products asks for every antenna's)."""
    tail = _amplitudes_tail(src, freq_hz, reference_m, ground, None, kind)
    return [
        _AMPLITUDES.get(
            (id(a), *tail),
            lambda a=a: (a, _received_amplitudes(a, src, freq_hz, reference_m, ground, at_m=None, kind=kind)),
        )[1]
        for a in antennas
    ]


def _amplitudes_key(antenna, src, freq_hz, reference_m, ground, at_m, kind) -> tuple:
    """:data:`_AMPLITUDES`' key: the antenna object and the rest of what enters its amplitudes."""
    return (id(antenna), *_amplitudes_tail(src, freq_hz, reference_m, ground, at_m, kind))


def _amplitudes_tail(src, freq_hz, reference_m, ground, at_m, kind) -> tuple:
    """:func:`_amplitudes_key` but the antenna."""
    return (
        field_vector,  # the function itself (a test may put another in its place)
        _source_key(src, kind),
        float(src.elevation_rad),
        _ground_key(ground),
        float(freq_hz),
        tuple(float(c) for c in reference_m),
        None if at_m is None else tuple(float(c) for c in at_m),
    )


_AMPLITUDES = Memo(2048)
"""An antenna's amplitudes from a placed source's dipole (:func:`received_amplitudes`), each held with the antenna
object it belongs to (so its id, in the key, is not given to another while held): what :func:`pickup` worked out
for an antenna is read again, not worked again, by its feed line and by a termination search's next products."""


def _received_amplitudes(antenna, src, freq_hz: float, reference_m, ground, *, at_m, kind) -> tuple[complex, complex]:
    from snrgain.antennas.base import Antenna
    from snrgain.antennas.longwire import port_response

    if antenna.composite:
        f = float(freq_hz)
        w = antenna.weights_at(f)
        norm = float(np.real(w.conj() @ antenna.norm_matrix(f) @ w))
        parts = [received_amplitudes(p, src, f, reference_m, ground, kind=kind) for p in antenna.elements]
        return tuple(complex(sum(wi * a[i] for wi, a in zip(w, parts)) / np.sqrt(norm)) for i in (0, 1))
    if antenna.integrates_near_sources:
        feed = antenna_point(antenna, reference_m) if at_m is None else np.asarray(at_m, dtype=float)
        i_f = wire_feed_current(antenna, src, freq_hz, feed, ground, kind=kind)
        load = antenna.receiver_load_ohm(freq_hz)
        e = port_response(freq_hz, np.array([i_f]), load_ohm=load, elevation_rad=np.array([src.elevation_rad]))
        return complex(e[0]), 0j
    at = antenna_point(antenna, reference_m) if at_m is None else np.asarray(at_m, dtype=float)
    segments = transmit_segments(antenna, freq_hz) if (at_m is not None or has_place(antenna)) else None
    if segments is not None:
        return _through_currents(antenna, src, freq_hz, at, ground, kind or dipoles(src)[0][0], segments), 0j
    ev, eh = source_field(src, at[None, :], freq_hz, ground, kind=kind)
    az = bearing_to(src, at[None, :])
    el = np.array([src.elevation_rad])
    if type(antenna).complex_response is Antenna.complex_response:  # no phase: the gains alone
        gv, gh = antenna.partial_gains(freq_hz, az, el)
        return complex(np.sqrt(gv[0]) * abs(ev[0])), complex(np.sqrt(gh[0]) * abs(eh[0]))
    rv, rh = antenna.complex_response(freq_hz, az, el)
    return complex(rv[0] * ev[0]), complex(rh[0] * eh[0])


def plane_wave_field(freq_hz: float, points_m, azimuth_rad: float, elevation_rad: float, ground, pol: str):
    """The field (N, 3) [east, north, up] at points (N, 3) of a unit plane wave arriving from (azimuth, elevation),
    incident plus ground-reflected (Fresnel coefficients), phase 0 at the origin: vertical polarisation ("v", its
    vertical part cos(el) [exp(+j k z sin el) + R_v exp(-j k z sin el)] as the families' patterns take it) or
    horizontal ("h")."""
    return plane_wave_fields(freq_hz, points_m, azimuth_rad, elevation_rad, ground, pols=(pol,))[0]


def plane_wave_fields(freq_hz: float, points_m, azimuth_rad: float, elevation_rad: float, ground, pols=("v", "h")):
    """:func:`plane_wave_field` of each polarisation of ``pols``, the incident and reflected phases at the points
    worked once for them all (the same values)."""
    from snrgain.physics.ground import reflection_coefficients

    k = 2 * np.pi * freq_hz / C_M_PER_S
    pts = np.atleast_2d(np.asarray(points_m, dtype=float))
    ca, sa = np.cos(azimuth_rad), np.sin(azimuth_rad)
    ce, se = np.cos(elevation_rad), np.sin(elevation_rad)
    toward = np.array([ce * sa, ce * ca, se])  # toward where the wave comes from
    mirror = np.array([ce * sa, ce * ca, -se])
    r_v, r_h = (complex(c[0]) for c in reflection_coefficients(ground, np.array([elevation_rad]), freq_hz))
    direct = np.exp(1j * k * pts @ toward)[:, None]
    reflected = np.exp(1j * k * pts @ mirror)[:, None]
    out = []
    for pol in pols:
        if pol == "v":
            out.append(direct * np.array([-se * sa, -se * ca, ce]) + r_v * reflected * np.array([se * sa, se * ca, ce]))
        else:
            out.append((direct + r_h * reflected) * np.array([ca, -sa, 0.0]))
    return out


def has_place(antenna) -> bool:
    """Whether an antenna stands where it was put (a ``position``, or elements at positions); one without stands at
    the reference's place and keeps the direction-only reading of a near source (its pattern toward the source)."""
    parts = getattr(antenna, "elements", None) or ()
    return antenna.params.position is not None or any(e.params.position is not None for e in parts)


def transmit_segments(antenna, freq_hz: float):
    """An antenna's transmit currents on segments (``antenna.transmit_segments``), or None where its family gives
    none (or gives None: an array of elements without them)."""
    fn = getattr(antenna, "transmit_segments", None)
    return None if fn is None else fn(freq_hz)


def _through_currents(antenna, src, freq_hz: float, at, ground, kind: str, segments=None) -> complex:
    """Reciprocity through an antenna's own transmit currents: the open-circuit voltage from a source is the sum of
    the incident field along each segment times the segment's current (``antenna.transmit_segments(freq_hz)``:
    points (N, 3) [m east, north, up] from the antenna's place, unit directions (N, 3), current times length
    (N,)); its amplitude is the antenna's complex response toward the source times V_source / V_plane, V_plane
    the voltage a unit plane wave from the source's direction at its elevation gives (the load's share of the
    voltage is the same for both, so it cancels)."""
    pts, dirs, cur = antenna.transmit_segments(freq_hz) if segments is None else segments
    pts, dirs, cur = np.asarray(pts, dtype=float), np.asarray(dirs, dtype=float), np.asarray(cur, dtype=complex)
    e = _kept_field(src, at[None, :] + pts[:, :2], pts[:, 2], freq_hz, ground, kind=kind)
    v_src = np.einsum("ni,ni,n->", e, dirs, cur)
    az = float(bearing_to(src, at[None, :])[0])
    el = float(src.elevation_rad)
    share = 0j
    if getattr(antenna, "scatterers", None):  # beside the site's scatterers: their share read apart
        share = _scattered_share(antenna, src, freq_hz, ground, kind, az, el)
        pts = _from_scatter_point(antenna, pts, at)
        antenna = antenna.bare_antenna
    rv, rh = antenna.complex_response(freq_hz, np.array([az]), np.array([el]))
    best = None
    waves = plane_wave_fields(freq_hz, pts, az, el, ground)  # both polarisations' fields from one pair of phases
    for wave, r in zip(waves, (complex(rv[0]), complex(rh[0]))):
        v_pw = np.einsum("ni,ni,n->", wave, dirs, cur)
        if abs(v_pw) > 0 and (best is None or abs(r) > abs(best[0])):
            best = (r, v_pw)
    if best is None or best[0] == 0:
        return share
    return complex(v_src * best[0] / best[1]) + share


def pickup(sc, antennas, *, ground=None, powers=None) -> tuple[dict[str, np.ndarray], dict[str, np.ndarray]]:
    """(shares, powers) of each placed source in each antenna: its share relative to the first antenna (the
    reference), P_A / P_ref (module docstring), with a source's Fa measured elsewhere (``measured_at``) carried to
    the reference by the field ratio; and the powers P themselves.  Each is name -> array (antennas,).  ``ground``:
    the soil under the source's field (default: the site's); ``powers``: name -> array with NaN where not known,
    the powers already worked out (an antenna that has not moved).  An input of the integrator
    (:func:`snrgain.model.snr.sky_temperatures`); empty when no source is placed."""
    placed = [s for s in sc.noise.local if s.position_m is not None]
    if not placed:
        return {}, {}
    ground = sc.site.ground if ground is None else ground
    ref_m = antennas[0].params.position or (0.0, 0.0)
    others = _others_ahead(sc, antennas, ground)
    keys = None  # _variant_keys, worked once for every source
    shares, out_powers = {}, {}
    fed = frozenset(getattr(sc, "feed_lines", None) or ())  # their amplitudes kept for their feed lines
    for src in placed:
        have = powers.get(src.name) if powers is not None else None
        p = np.full(len(antennas), np.nan) if have is None else np.array(have, dtype=float)
        _wire_powers(antennas, src, sc.freq_hz, ref_m, ground, p, fed)
        _compact_powers(antennas, src, sc.freq_hz, ref_m, ground, p, fed)
        for kind, _ in dipoles(src):
            from snrgain.model import feedline  # its routes' field worked in the same call (it reads placed's)

            if not others and _ahead_key(antennas, src, kind, ground, sc.freq_hz) in _WORKED_AHEAD:
                continue  # fields_ahead worked it (a spread's other grounds)
            ahead = others
            if others:  # once per source for the same other wires (a layout asking place after place)
                key = _ahead_key(others, src, kind, ground, sc.freq_hz)
                ahead = [] if key in _AHEAD else others
                _AHEAD.get(key, lambda: tuple(others))  # held with the wires, so their ids stay their own
            routes = feedline.route_points_ahead(sc, [*antennas, *ahead], src, kind, sc.freq_hz, ground)
            _prefetch_wire_emfs(antennas, src, sc.freq_hz, ref_m, ground, kind, p, extra=routes, others=ahead)
        if keys is None:
            keys = _variant_keys(antennas, sc.freq_hz, ref_m)
        _load_variant_powers(antennas, src, sc.freq_hz, ref_m, ground, p, keys)
        todo = np.flatnonzero(~np.isfinite(p))
        if len(todo):  # received_power of each, the dipoles' powers added
            p[todo] = 0.0
            for kind, _ in dipoles(src):
                got = received_amplitudes_of([antennas[k] for k in todo], src, sc.freq_hz, ref_m, ground, kind=kind)
                p[todo] += [abs(a_v) ** 2 + abs(a_h) ** 2 for a_v, a_h in got]
        if not p[0] > 0:
            raise ValueError(f"noise.local {src.name!r}: the reference antenna picks up nothing of it")
        scale = p / p[0]
        if src.measured_at_m is not None:  # Fa given where it was measured, not at the reference
            scale = (
                scale
                * field_power(src, ref_m, sc.freq_hz, ground)
                / field_power(src, src.measured_at_m, sc.freq_hz, ground)
            )
        shares[src.name], out_powers[src.name] = scale, p
    return shares, out_powers


_AHEAD = Memo(64)
"""The other wires (:func:`_others_ahead`) already worked ahead for a source, dipole, ground and frequency."""
OTHERS_AHEAD = 16
"""At most this many of a scenario's other long wires have their EMFs worked ahead (:func:`_others_ahead`)."""


def _others_ahead(sc, antennas, ground) -> list:
    """The scenario's long wires standing on the site's ground that ``antennas`` leave out (a termination search
    takes its reference's products first, then one candidate's resistors at a time): their EMFs from each placed
    source, and their feed lines' routes', are worked in the same call of the field as the antennas' own, one call
    per source for the run rather than one per candidate (the loads, which the resistors change, do not enter the
    EMFs).  Empty on another ground (a spread's, worked ahead by :func:`fields_ahead`), when every antenna of the
    scenario is asked, or past :data:`OTHERS_AHEAD`."""
    every = getattr(sc, "antennas", None)
    if ground is not sc.site.ground or not every or len(every) <= len(antennas):
        return []
    asked = {id(a) for a in antennas}
    out = [a for a in every if id(a) not in asked and a.integrates_near_sources and not a.composite]
    return out if len(out) <= OTHERS_AHEAD else []


def _wire_powers(antennas, src, freq_hz: float, reference_m, ground, p: np.ndarray, fed=frozenset()) -> None:
    """Fill ``p`` (NaN where not known) for the same long wire standing at several places at once
    (:func:`wire_feed_currents`): the powers :func:`received_power` gives each, in one array expression; the
    amplitudes of those named in ``fed`` (the antennas with a feed line) kept as :func:`received_amplitudes` keeps
    them (:func:`_keep_amplitudes`)."""
    from snrgain.antennas.longwire import port_response

    groups: dict[str, list[int]] = {}
    for k, a in enumerate(antennas):
        if not np.isfinite(p[k]) and a.integrates_near_sources and not a.composite and a.gain_key() is not None:
            groups.setdefault(a.gain_key(), []).append(k)
    for ks in (ks for ks in groups.values() if len(ks) > 1):
        wire = antennas[ks[0]]
        feeds = np.array([antenna_point(antennas[k], reference_m) for k in ks])
        el = np.full(len(ks), src.elevation_rad)
        total = np.zeros(len(ks))
        for kind, _ in dipoles(src):
            i_f = wire_feed_currents(wire, src, freq_hz, feeds, ground, kind=kind)
            e = port_response(freq_hz, i_f, load_ohm=wire.receiver_load_ohm(freq_hz), elevation_rad=el)
            total += np.abs(e) ** 2
            _keep_amplitudes([antennas[k] for k in ks], e, src, freq_hz, reference_m, ground, kind, fed)
        p[ks] = total


def _compact_powers(antennas, src, freq_hz: float, reference_m, ground, p: np.ndarray, fed=frozenset()) -> None:
    """Fill ``p`` (NaN where not known) for the same compact antenna standing at several places at once, read
    through its transmit currents (:func:`_through_currents`): its segments and currents are the same at every
    place, only the source's field at the shifted segments and its direction change, so the field at every
    segment of every place is one call and each reciprocity sum one einsum; :func:`received_power`'s powers."""
    groups: dict[str, list[int]] = {}
    for k, a in enumerate(antennas):
        if not np.isfinite(p[k]) and not a.integrates_near_sources and not a.composite and has_place(a):
            key = a.gain_key()
            if key is not None and getattr(a, "transmit_segments", None) is not None:
                groups.setdefault(key, []).append(k)
    for ks in (ks for ks in groups.values() if len(ks) > 1):
        ant = antennas[ks[0]]
        segments = transmit_segments(ant, freq_hz)
        last = transmit_segments(antennas[ks[-1]], freq_hz)
        if segments is None or not all(np.array_equal(a, b) for a, b in zip(segments, last)):
            continue  # not the same segments from each place: one by one
        at = np.array([antenna_point(antennas[k], reference_m) for k in ks])
        total = np.zeros(len(ks))
        for kind, _ in dipoles(src):
            v = _through_currents_many(ant, src, freq_hz, at, ground, kind, segments)
            total += np.abs(v) ** 2
            _keep_amplitudes([antennas[k] for k in ks], v, src, freq_hz, reference_m, ground, kind, fed)
        p[ks] = total


def _keep_amplitudes(antennas, amplitudes, src, freq_hz: float, reference_m, ground, kind: str, fed) -> None:
    """Put the (vertical) amplitudes from one of a placed source's dipoles, worked for the antennas at once, in
    :data:`_AMPLITUDES` for those of them named in ``fed`` (their feed lines add to them as phasors:
    snrgain.model.feedline.prepare reads them there rather than working each antenna again, one place at a time)."""
    if not fed:
        return
    tail = _amplitudes_tail(src, freq_hz, reference_m, ground, None, kind)
    for a, v in zip(antennas, amplitudes):
        if a.name in fed:
            _AMPLITUDES.get((id(a), *tail), lambda a=a, v=v: (a, (complex(v), 0j)))


def _through_currents_many(antenna, src, freq_hz: float, at, ground, kind: str, segments) -> np.ndarray:
    """:func:`_through_currents` of one antenna at each of the places ``at`` (K, 2): (K,) complex."""
    from snrgain.physics.ground import reflection_coefficients

    pts, dirs, cur = segments
    pts, dirs, cur = np.asarray(pts, dtype=float), np.asarray(dirs, dtype=float), np.asarray(cur, dtype=complex)
    n, m = len(at), len(pts)
    where = (at[:, None, :] + pts[None, :, :2]).reshape(-1, 2)
    e = _kept_field(src, where, np.tile(pts[:, 2], n), freq_hz, ground, kind=kind).reshape(n, m, 3)
    v_src = np.einsum("kni,ni,n->k", e, dirs, cur)
    az = bearing_to(src, at)
    el = float(src.elevation_rad)
    rv, rh = antenna.complex_response(freq_hz, az, np.full(n, el))
    r_v, r_h = (complex(c[0]) for c in reflection_coefficients(ground, np.array([el]), freq_hz))
    return _scaled_by_plane_waves(v_src, (rv, rh), (pts, dirs, cur), freq_hz, az, np.full(n, el), r_v, r_h)


def field_power(src, point_m, freq_hz: float, ground) -> float:
    """|E_v|^2 + |E_h|^2 of a placed source at one plan point, its dipoles' powers added (kept: a source measured
    elsewhere asks for the same two points at every pickup)."""
    key = (
        nearground.field,  # the function itself (a test may put another in its place)
        _source_key(src, src.polarisation),
        float(src.elevation_rad),
        _ground_key(ground),
        float(freq_hz),
        tuple(float(c) for c in point_m),
    )
    return _FIELD_POWERS.get(key, lambda: _field_power_worked(src, point_m, freq_hz, ground))


_FIELD_POWERS = Memo(64)


def _field_power_worked(src, point_m, freq_hz: float, ground) -> float:
    total = 0.0
    for kind, _ in dipoles(src):
        ev, eh = source_field(src, np.array([point_m], dtype=float), freq_hz, ground, kind=kind)
        total += float(np.abs(ev[0]) ** 2 + np.abs(eh[0]) ** 2)
    return total


def _variant_keys(antennas, freq_hz: float, reference_m) -> list:
    """Each antenna's place, geometry and line, by which :func:`_load_variant_powers` groups the long wires that
    differ only in their loads (None for the others)."""
    out = []
    for a in antennas:
        if not a.integrates_near_sources or a.composite:
            out.append(None)
            continue
        feed = antenna_point(a, reference_m)
        ln = a.line(freq_hz)
        out.append(
            (
                type(a),
                float(feed[0]),
                float(feed[1]),
                float(a.bearing_rad),
                float(a.length_m),
                float(a.wire_height_m()),
                bool(a.has_leads),
                complex(ln.gamma),
                complex(ln.z0),
            )
        )
    return out


def _load_variant_powers(antennas, src, freq_hz: float, reference_m, ground, p: np.ndarray, keys=None) -> None:
    """Fill ``p`` (NaN where not known) for long wires standing at one place with one geometry and line that differ
    only in their loads (a termination search's resistors): the EMFs along the wire once (:func:`_source_emfs`, kept),
    every wire's feed current from them in one pass (snrgain.physics.reciprocity.through_lines), each one's
    amplitudes kept as :func:`received_amplitudes` keeps them (its feed line reads them).  ``keys``:
    :func:`_variant_keys` of ``antennas`` where the caller has them (the same for every source)."""
    from snrgain.antennas.longwire import port_response

    keys = _variant_keys(antennas, freq_hz, reference_m) if keys is None else keys
    groups: dict[tuple, list[int]] = {}
    for k, key in enumerate(keys):
        if key is not None and not np.isfinite(p[k]):
            groups.setdefault(key, []).append(k)
    for group, ks in ((g, ks) for g, ks in groups.items() if len(ks) > 1):
        wires = [antennas[k] for k in ks]
        first = wires[0]
        where = ("variants", group, _source_key(src, None), float(freq_hz))
        feeds, u, x = _PLACES.get(
            where, lambda first=first: _wire_place(first, antenna_point(first, reference_m), src, freq_hz)
        )
        loads = np.array([w.receiver_load_ohm(freq_hz) for w in wires])
        el = np.full(len(wires), src.elevation_rad)
        total = np.zeros(len(wires))
        for kind, _ in dipoles(src):
            emf, lead = _source_emfs(first, src, freq_hz, feeds, ground, x, u, kind)
            e = port_response(freq_hz, through_lines(wires, freq_hz, x, emf, lead), load_ohm=loads, elevation_rad=el)
            for w, a in zip(wires, e):
                key = _amplitudes_key(w, src, freq_hz, reference_m, ground, None, kind)
                _AMPLITUDES.get(key, lambda w=w, a=a: (w, (complex(a), 0j)))
            total += np.abs(e) ** 2
        p[ks] = total
