"""The reciprocity integral of a long wire in an incident field: its feed current from the field along it.

The line model's distributed series EMF is the incident field's component along the wire at its height, and each
down-lead's EMF the integral of the vertical field up it; the feed current follows through the line's transfer
functions to the feed (the same line and loads as the wire's own plane-wave response, snrgain.antennas.longwire, of
which a plane wave gives back exactly the currents: a test).  Used for placed noise sources
(snrgain.model.placed), the transmitting vertical's field (snrgain.physics.scatter) and feed lines."""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from snrgain.memo import Memo
from snrgain.physics.ground import C_M_PER_S
from snrgain.physics.quadrature import gauss_legendre, samples_rule

LEAD_POINTS = 6
"""Gauss-Legendre points up a long wire's down-lead for the integral of the vertical field."""

STEPS_PER_WAVELENGTH = 60
"""Steps along a wire or a feed-line run per free-space wavelength."""
STEPS_PER_LINE_WAVELENGTH = 40
"""Steps per the line's own wavelength 2 pi / |gamma|: a wire on or in the soil is a slow, lossy line whose transfer
functions turn faster than the incident field.  An overhead wire's line (|gamma| within 1.5 k) leaves the free
space's step in charge, so its samples, and the points the field is asked at, are the same over every ground of a
spread (the near field's geometry is then worked once: noisemodels.halfspace)."""
STEPS_PER_CLOSEST = 24
"""Steps along a wire per closest approach of a source to it (the near field changes on that scale; and the near
field's tables, piecewise cubic in asinh(distance), have their nodes a fortieth of the distance apart, whose kinks a
coarse step samples: 12 moved test_near_wire's rear-null case, a horizontal source 30 m behind the low wire, by
0.014 dB, 24 by 0.007 dB)."""
LEAST_STEPS = 16
"""The fewest steps along a wire or a run."""


def sample_steps(length_m: float, freq_hz: float, closest_m: float, line_gamma=None, most: int = 40_000) -> int:
    """How many even steps a wire or feed-line run of ``length_m`` takes for the reciprocity integral of a placed
    source's field (Simpson's rule, snrgain.physics.quadrature.samples_rule): a step no longer than a
    :data:`STEPS_PER_WAVELENGTH`-th of free space's wavelength, a :data:`STEPS_PER_LINE_WAVELENGTH`-th of the line's
    own (2 pi / |gamma|, ``line_gamma`` [1/m] when given) and a :data:`STEPS_PER_CLOSEST`-th of the source's closest
    approach ``closest_m`` (its height above or below the wire included), at least :data:`LEAST_STEPS`, at most
    ``most``.

    Chosen by convergence against a fine reference (400 steps per wavelength, 40 per closest approach, 4000 at
    least) over 360 random wires, runs and sources (1.8-7.1 MHz, five grounds from very dry to sea water; beverages,
    unterminated wires and BOGs; overhead and buried runs; sources 1-300 m beside and 0-12 m up, both dipoles):
    over land the feed currents within 0.001 dB of the reference on wires and 0.002 dB on runs (graded samples,
    :func:`graded_samples`), where the 400 and 200 steps at least before reached 0.033 and 0.027 dB; at the 95th
    percentile within 0.003 dB over every ground.  Not resolved, by this rule or the old one: a horizontal source
    lying on sea water (0-1 m up), whose field along the wire is what is left of the source and its image
    cancelling, so the near field's own interpolation error (1e-3 of each term, noisemodels.halfspace) sets the
    sum: there the feed currents moved by up to 10 dB (runs 0.5 dB) with the samples, the old rule's by 0.5 dB."""
    k = 2 * np.pi * freq_hz / C_M_PER_S
    step = 2 * np.pi / k / STEPS_PER_WAVELENGTH
    if line_gamma is not None:
        step = min(step, 2 * np.pi / abs(complex(line_gamma)) / STEPS_PER_LINE_WAVELENGTH)
    step = min(step, max(closest_m, 0.05) / STEPS_PER_CLOSEST)
    return int(np.clip(np.ceil(length_m / step), LEAST_STEPS, most))


def graded_samples(
    length_m: float, freq_hz: float, closest_m: float, at_m: float, line_gamma=None, most: int = 20_000
) -> np.ndarray:
    """Samples along a run [m] graded toward its point nearest a source (``at_m`` along it, ``closest_m`` away): pairs
    of equal steps (Simpson panels, :func:`pairs_rule`), each step no longer than :func:`sample_steps`' free-space
    and line steps nor a :data:`STEPS_PER_CLOSEST`-th of the distance from the source to the panel's near end (the
    near field changes on the scale of that distance, not of the closest approach all along the run).  A read-only
    array (at most ``most`` steps; beyond, the even samples of :func:`sample_steps`)."""
    k = 2 * np.pi * freq_hz / C_M_PER_S
    far = 2 * np.pi / k / STEPS_PER_WAVELENGTH
    # an overhead run's line leaves free space's step in charge: the same samples over every ground (kept once)
    if line_gamma is not None:
        far = min(far, 2 * np.pi / abs(complex(line_gamma)) / STEPS_PER_LINE_WAVELENGTH)
    return _graded(float(length_m), float(far), float(closest_m), float(at_m), int(most))


@lru_cache(maxsize=512)
def _graded(length_m, far, closest_m, at_m, most) -> np.ndarray:
    c = max(closest_m, 0.05)
    at = min(max(at_m, 0.0), length_m)
    sides = []
    for span in (at, length_m - at):  # toward the start, toward the end: panel edges as distances from ``at``
        edges = [0.0]
        while edges[-1] < span and len(edges) < most:
            edges.append(edges[-1] + 2 * min(far, np.hypot(c, edges[-1]) / STEPS_PER_CLOSEST))
        e = np.array(edges)
        sides.append(e * (span / e[-1]) if span > 0 else e[:1])  # the last panel's end on the run's end
    left, right = at - sides[0][::-1], at + sides[1][1:]
    edges = np.concatenate([left, right])
    if len(edges) < 2 or 2 * (len(edges) - 1) > most or 2 * (len(edges) - 1) < LEAST_STEPS:
        steps = int(np.clip(np.ceil(length_m / min(far, c / STEPS_PER_CLOSEST)), LEAST_STEPS, most))
        x = np.linspace(0.0, length_m, steps + steps % 2 + 1)  # sample_steps' even samples
    else:
        x = np.empty(2 * len(edges) - 1)
        x[0::2] = edges
        x[1::2] = 0.5 * (edges[:-1] + edges[1:])
        x[0], x[-1] = 0.0, length_m
    x.flags.writeable = False
    return x


def pairs_rule(x) -> np.ndarray:
    """Weights of Simpson's rule on panels of two equal steps each (:func:`graded_samples`; an even grid of an even
    number of steps is one such), else snrgain.physics.quadrature.samples_rule's.  Kept by the samples (a feed
    line's run takes the same samples from a source at every ground): a read-only array."""
    x = np.ascontiguousarray(x, dtype=float)
    return _RULES.get(x.tobytes(), lambda: _pairs_rule(x))


_RULES = Memo(256)
""":func:`pairs_rule`'s weights by the samples' bytes."""


def _pairs_rule(x: np.ndarray) -> np.ndarray:
    w = _pairs_weights(x)
    w.flags.writeable = False
    return w


def _pairs_weights(x: np.ndarray) -> np.ndarray:
    n = len(x)
    if n >= 3 and n % 2 == 1:
        d = np.diff(x)
        a, b = d[0::2], d[1::2]
        if np.all(a > 0) and np.all(np.abs(a - b) <= 1e-9 * (a + b)):
            w = np.zeros(n)
            h = (a + b) / 6.0  # a panel of width 2h: (h / 3) (1, 4, 1)
            w[0:-1:2] += h
            w[1::2] += 4 * h
            w[2::2] += h
            return w
    return samples_rule(x)


def lead_rule() -> tuple[np.ndarray, np.ndarray]:
    """The Gauss-Legendre rule up a down-lead (:data:`LEAD_POINTS` points on [-1, 1])."""
    return gauss_legendre(LEAD_POINTS)


def wire_emfs(wire, feeds, x, u, field, along=None, leads=None) -> tuple[np.ndarray, np.ndarray | None]:
    """(EMF per metre along the wire (N, len(x)), feed toward far end; the EMF up each down-lead (2N,): the feed
    ends, then the far ends, or None without leads) of a long wire with its feed at each of ``feeds`` (N, 2) in
    ``field(points, heights)``; ``along(points, height)``: the field along the wire at its height, and
    ``leads(ends, height)``: the EMF up a lead at each end, when quicker."""
    n, L = len(feeds), wire.length_m
    h = wire.wire_height_m()
    pts = (feeds[:, None, :] + x[None, :, None] * u[None, None, :]).reshape(-1, 2)
    if along is not None:
        emf = along(pts, h).reshape(n, -1)
    else:
        e = field(pts, np.full(len(pts), h))
        emf = (e[:, 0] * u[0] + e[:, 1] * u[1]).reshape(n, -1)
    lead = None
    if wire.has_leads and h > 0:
        t, wq = lead_rule()
        zs = (t + 1) * h / 2
        ends = np.concatenate([feeds, feeds + L * u[None, :]])  # (2n, 2): feed ends, then far ends
        if leads is not None:
            return emf, leads(ends, h)
        ez = field(np.repeat(ends, LEAD_POINTS, axis=0), np.tile(zs, 2 * n))
        lead = (ez[:, 2].reshape(2 * n, LEAD_POINTS) @ wq) * h / 2
    return emf, lead


def through_line(wire, freq_hz, x, emf, lead) -> np.ndarray:
    """The feed currents (N,) from the EMFs of :func:`wire_emfs`, through the line model's transfer functions and
    down the feed lead (the wire's loads, snrgain.antennas.longwire)."""
    n, L = len(emf), wire.length_m
    ln = wire.line(freq_hz)
    g, z0 = ln.gamma, ln.z0
    z_feed = wire.feed_load_ohm(freq_hz)
    z_far = wire.far_load_ohm(freq_hz)
    transfer, weights = _transfer(x, complex(g), complex(z0), float(L), complex(z_feed), z_far)
    current = emf @ (transfer * weights)  # one complex matrix-vector product (a complex-by-real one is 5x slower)
    if lead is not None:
        current = current + lead[:n] * transfer[0]  # up the feed lead
        if z_far is not None:
            current = current - lead[n:] * transfer[-1]  # down the far lead
    return current * wire.feed_current_ratio(freq_hz)  # the current in the receiver's load, at the feed lead's foot


_TRANSFERS = Memo(256)
"""The line's transfer function and the rule's weights at a wire's samples (:func:`_transfer`)."""


def _transfer(x, g: complex, z0: complex, L: float, z_feed: complex, z_far) -> tuple[np.ndarray, np.ndarray]:
    """(the line's transfer function to the feed at the samples ``x``, the samples' rule weights), kept by the line,
    loads and samples (every placed source heard on one wire at one ground takes the same, unless close in)."""
    x = np.asarray(x, dtype=float)
    return _TRANSFERS.get(_transfer_key(x, g, z0, L, z_feed, z_far), lambda: _make_transfer(x, g, z0, L, z_feed, z_far))


def _transfer_key(x: np.ndarray, g: complex, z0: complex, L: float, z_feed: complex, z_far) -> tuple:
    return (g, z0, L, z_feed, None if z_far is None else complex(z_far), x.tobytes())


def _make_transfer(x: np.ndarray, g: complex, z0: complex, L: float, z_feed: complex, z_far) -> tuple:
    return _transfers([x], g, z0, L, z_feed, z_far)[0]


def _transfers(xs: list[np.ndarray], g: complex, z0: complex, L: float, z_feed: complex, z_far) -> list[tuple]:
    """:func:`_transfer`'s (transfer function, weights) of each of the sample grids ``xs``, the transfer functions
    worked on all of them at once (read-only arrays)."""
    x = np.concatenate(xs) if len(xs) > 1 else xs[0]
    if z_far is None:  # open far end: I_F = V sinh g(L - x) / (Z0 cosh gL + Z_F sinh gL)
        transfer = np.sinh(g * (L - x)) / (z0 * np.cosh(g * L) + z_feed * np.sinh(g * L))
    else:
        d = z0 * (z_feed + z_far) * np.cosh(g * L) + (z0**2 + z_feed * z_far) * np.sinh(g * L)
        transfer = (z0 * np.cosh(g * (L - x)) + z_far * np.sinh(g * (L - x))) / d
    out = []
    for part, xi in zip(np.split(transfer, np.cumsum([len(v) for v in xs[:-1]])), xs):
        weights = samples_rule(xi)
        part.flags.writeable = False
        weights.flags.writeable = False
        out.append((part, weights))
    return out


def through_line_grids(wire, freq_hz, parts) -> list[np.ndarray]:
    """:func:`through_line` of one wire on several sample grids at once: ``parts`` [(samples x, EMFs (N, len(x)),
    leads (2N,) or None)], each grid's feed currents as through_line gives them.  The line and its loads are asked
    for once and the transfer functions of the grids not yet kept are worked in one array expression (a layout's
    places along a wire fall on a dozen grids, one per closest approach of a placed source)."""
    ln = wire.line(freq_hz)
    g, z0, L = complex(ln.gamma), complex(ln.z0), float(wire.length_m)
    z_feed = complex(wire.feed_load_ohm(freq_hz))
    z_far = wire.far_load_ohm(freq_hz)
    ratio = wire.feed_current_ratio(freq_hz)
    xs = [np.asarray(x, dtype=float) for x, _, _ in parts]
    keys = [_transfer_key(x, g, z0, L, z_feed, z_far) for x in xs]
    todo = [k for k, key in enumerate(keys) if key not in _TRANSFERS]
    made = dict(zip(todo, _transfers([xs[k] for k in todo], g, z0, L, z_feed, z_far))) if todo else {}
    out = []
    for k, (x, emf, lead) in enumerate(parts):
        held = made.get(k)
        transfer, weights = _TRANSFERS.get(
            keys[k], lambda held=held, x=xs[k]: held or _make_transfer(x, g, z0, L, z_feed, z_far)
        )
        current = emf @ (transfer * weights)
        if lead is not None:
            n = len(emf)
            current = current + lead[:n] * transfer[0]
            if z_far is not None:
                current = current - lead[n:] * transfer[-1]
        out.append(current * ratio)
    return out


def through_line_grounds(wires, freq_hz, x, emf, lead) -> np.ndarray:
    """:func:`through_line` of one wire standing over several grounds (``wires``: one per ground, each with its own
    line and loads; one feed each, the same samples ``x``): (G,) feed currents from each ground's EMFs ``emf``
    (G, len(x)) and ``lead`` (G, 2) or None.  The transfer functions over the grounds in one array expression (the
    same values as :func:`through_line`'s), each ground's sum its own (equal to rounding)."""
    far = [w.far_load_ohm(freq_hz) for w in wires]
    if any(z is None for z in far) and not all(z is None for z in far):  # open on some grounds only: one by one
        leads = [None] * len(wires) if lead is None else lead
        return np.array([through_line(w, freq_hz, x, e[None], d) for w, e, d in zip(wires, emf, leads)]).reshape(-1)
    x = np.asarray(x, dtype=float)
    L = wires[0].length_m
    lines_ = [w.line(freq_hz) for w in wires]
    g = np.array([complex(ln.gamma) for ln in lines_])[:, None]
    z0 = np.array([complex(ln.z0) for ln in lines_])[:, None]
    z_feed = np.array([complex(w.feed_load_ohm(freq_hz)) for w in wires])[:, None]
    rest = g * (L - x)[None, :]
    if far[0] is None:  # open far end: I_F = V sinh g(L - x) / (Z0 cosh gL + Z_F sinh gL)
        transfer = np.sinh(rest) / (z0 * np.cosh(g * L) + z_feed * np.sinh(g * L))
    else:
        z_far = np.array([complex(z) for z in far])[:, None]
        d = z0 * (z_feed + z_far) * np.cosh(g * L) + (z0**2 + z_feed * z_far) * np.sinh(g * L)
        transfer = (z0 * np.cosh(rest) + z_far * np.sinh(rest)) / d
    current = np.einsum("gn,gn->g", emf, transfer * samples_rule(x)[None, :])
    if lead is not None:
        current += lead[:, 0] * transfer[:, 0]  # up the feed lead
        if far[0] is not None:
            current -= lead[:, 1] * transfer[:, -1]  # down the far lead
    return current * np.array([complex(w.feed_current_ratio(freq_hz)) for w in wires])


def through_lines(wires, freq_hz, x, emf, lead) -> np.ndarray:
    """:func:`through_line` of several wires at one place (one feed each) that share their line, length, samples
    and EMFs and differ only in their loads (a termination search's resistors, a transformer's ratio): (W,) feed
    currents.  The EMFs enter through two moments, int EMF cosh g(L - x) dx and int EMF sinh g(L - x) dx, worked
    once; each wire's loads then cost a few scalar operations (the transfer function is linear in them)."""
    L = wires[0].length_m
    ln = wires[0].line(freq_hz)
    g, z0 = ln.gamma, ln.z0
    emf = np.asarray(emf).reshape(-1)
    w = samples_rule(x)
    arg = g * (L - np.asarray(x))
    ch, sh = np.cosh(arg), np.sinh(arg)
    m_c, m_s = (emf * ch) @ w, (emf * sh) @ w
    c_l, s_l = np.cosh(g * L), np.sinh(g * L)
    out = np.empty(len(wires), dtype=complex)
    for j, wire in enumerate(wires):
        z_feed = wire.feed_load_ohm(freq_hz)  # the loads as the wire meets them, up its leads (as through_line)
        z_far = wire.far_load_ohm(freq_hz)
        if z_far is None:  # open far end
            den = z0 * c_l + z_feed * s_l
            current = m_s / den
            if lead is not None:
                current += lead[0] * sh[0] / den
        else:
            d = z0 * (z_feed + z_far) * c_l + (z0**2 + z_feed * z_far) * s_l
            current = (z0 * m_c + z_far * m_s) / d
            if lead is not None:  # up the feed lead (the transfer at the first sample), down the far lead (the last)
                current += lead[0] * (z0 * ch[0] + z_far * sh[0]) / d - lead[1] * (z0 * ch[-1] + z_far * sh[-1]) / d
        out[j] = current * wire.feed_current_ratio(freq_hz)  # in the receiver's load, at the feed lead's foot
    return out


def wire_currents_in_field(wire, freq_hz: float, feeds_m, x_m, field) -> np.ndarray:
    """Feed currents [A] (N,) of a long wire with its feed at each of ``feeds_m`` (N, 2) [m], driven by the incident
    ``field(points (M, 2), heights (M,))`` -> (M, 3) [V/m] along it (samples ``x_m`` [m]) and up its leads."""
    b = wire.bearing_rad
    u = np.array([np.sin(b), np.cos(b)])
    feeds = np.atleast_2d(np.asarray(feeds_m, dtype=float))
    x = np.asarray(x_m, dtype=float)
    emf, lead = wire_emfs(wire, feeds, x, u, field)
    return through_line(wire, freq_hz, x, emf, lead)
