"""The reciprocity integral of a long wire in an incident field: its feed current from the field along it.

The line model's distributed series EMF is the incident field's component along the wire at its height, and each
down-lead's EMF the integral of the vertical field up it; the feed current follows through the line's transfer
functions to the feed (the same line and loads as the wire's own plane-wave response, snrgain.antennas.longwire, of
which a plane wave gives back exactly the currents: a test).  Used for placed noise sources
(snrgain.model.placed), the transmitting vertical's field (snrgain.physics.scatter) and feed lines."""

from __future__ import annotations

import numpy as np

from snrgain.physics.quadrature import gauss_legendre, samples_rule

LEAD_POINTS = 6
"""Gauss-Legendre points up a long wire's down-lead for the integral of the vertical field."""


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
    if z_far is None:  # open far end: I_F = V sinh g(L - x) / (Z0 cosh gL + Z_F sinh gL)
        transfer = np.sinh(g * (L - x)) / (z0 * np.cosh(g * L) + z_feed * np.sinh(g * L))
    else:
        d = z0 * (z_feed + z_far) * np.cosh(g * L) + (z0**2 + z_feed * z_far) * np.sinh(g * L)
        transfer = (z0 * np.cosh(g * (L - x)) + z_far * np.sinh(g * (L - x))) / d
    current = (emf * transfer[None, :]) @ samples_rule(x)
    if lead is not None:
        current = current + lead[:n] * transfer[0]  # up the feed lead
        if z_far is not None:
            current = current - lead[n:] * transfer[-1]  # down the far lead
    return current * wire.feed_current_ratio(freq_hz)  # the current in the receiver's load, at the feed lead's foot


def wire_currents_in_field(wire, freq_hz: float, feeds_m, x_m, field) -> np.ndarray:
    """Feed currents [A] (N,) of a long wire with its feed at each of ``feeds_m`` (N, 2) [m], driven by the incident
    ``field(points (M, 2), heights (M,))`` -> (M, 3) [V/m] along it (samples ``x_m`` [m]) and up its leads."""
    b = wire.bearing_rad
    u = np.array([np.sin(b), np.cos(b)])
    feeds = np.atleast_2d(np.asarray(feeds_m, dtype=float))
    x = np.asarray(x_m, dtype=float)
    emf, lead = wire_emfs(wire, feeds, x, u, field)
    return through_line(wire, freq_hz, x, emf, lead)
