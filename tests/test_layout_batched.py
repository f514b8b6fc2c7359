"""The layout's batched pickup equals its per-grid, per-place pieces.

A design at many places falls on several sample grids along the wire (one per closest approach of the source:
placed.wire_steps); placed.wire_feed_currents reads the source's field for all of them at once
(placed._currents_on_grids).  Each place must get what the grid it falls on gives alone (placed._currents_on, the
path a single grid takes), read the same way (tables along the wire, tables or the direct field up the leads as the
grid's size says), so the layout's scores do not move."""

from __future__ import annotations

import numpy as np
import pytest

from snrgain.antennas import from_si
from snrgain.model import placed
from snrgain.sky.noise import LocalSource

F_HZ = 1.83e6


def _feeds() -> np.ndarray:
    # a cloud of places far from the source (few grids, many places each: their leads read from the lead table)
    # and a line of places walking up to it (a grid each: leads worked directly), some within a metre
    rng = np.random.default_rng(11)
    far = np.column_stack([rng.uniform(-300.0, -150.0, 40), rng.uniform(-300.0, -150.0, 40)])
    near = np.column_stack([np.linspace(60.0, 139.5, 12), np.full(12, 58.0)])
    return np.concatenate([far, near, [[140.0, 59.6]]])


def _source(polarisation: str) -> LocalSource:
    return LocalSource(
        "supply",
        bearing_rad=0.0,
        position_m=(150.0, 60.0),
        height_m=3.0,
        polarisation=polarisation,
        orientation_rad=np.radians(35.0) if polarisation != "vertical" else None,
    )


def test_the_step_counts_at_once_are_each_place_alone():
    bev = from_si("beverage", length=180.0, height=2.0, bearing=np.radians(40.0), ground="moist loam")
    src = _source("vertical")
    closest = np.concatenate([[0.0, 1e-3, 0.05, 0.3], np.geomspace(0.5, 400.0, 60)])
    steps = placed.wire_steps(bev, src, F_HZ, closest)
    alone = [len(placed.wire_grid(bev, src, F_HZ, float(c))) - 1 for c in closest]
    np.testing.assert_array_equal(steps, alone)
    assert len(set(alone)) > 5  # the closest approach does set the grid


@pytest.mark.parametrize("polarisation", ["vertical", "horizontal"])
@pytest.mark.parametrize("in_search", [True, False])
def test_many_places_on_many_grids_at_once_equal_each_grid_alone(polarisation, in_search):
    bev = from_si("beverage", length=180.0, height=2.0, bearing=np.radians(40.0), ground="moist loam")
    src = _source(polarisation)
    feeds = _feeds()
    b = bev.bearing_rad
    u = np.array([np.sin(b), np.cos(b)])
    to_src = np.asarray(src.position_m)[None, :] - feeds
    along = np.clip(to_src @ u, 0.0, bev.length_m)
    steps = placed.wire_steps(bev, src, F_HZ, np.hypot(*(to_src - along[:, None] * u[None, :]).T))
    sizes = {int(n): int(np.count_nonzero(steps == n)) for n in np.unique(steps)}
    assert len(sizes) > 5 and max(sizes.values()) * 2 * placed.LEAD_POINTS >= placed.LEAD_TABLE_MIN
    assert min(sizes.values()) == 1  # both ways up the leads, and a grid of one place
    kind = placed.dipoles(src)[0][0]
    with placed.tabled(0 if in_search else placed.TABLE_MIN_POINTS):
        batch = placed.wire_feed_currents(bev, src, F_HZ, feeds, bev.ground, kind=kind)
        alone = np.zeros(len(feeds), dtype=complex)
        for n in sizes:  # each grid on its own, as the path of a single grid works it
            which = np.flatnonzero(steps == n)
            x = placed.even_samples(bev.length_m, n)
            placed._EMFS.clear()
            alone[which] = placed._currents_on(bev, src, F_HZ, feeds[which], bev.ground, x, u, kind)
    np.testing.assert_allclose(batch, alone, rtol=1e-12, atol=0)


def test_the_geometry_stores_count_the_bytes_they_hold():
    from noisemodels import halfspace as hs

    store = hs._Kept()
    rng = np.random.default_rng(2)
    for k in range(3 * hs._GEOMETRY_KEPT):
        n = int(rng.integers(1, 400))
        hs._keep(store, k % (2 * hs._GEOMETRY_KEPT), ("points", rng.normal(size=(n, 4)), (rng.normal(size=n),)))
        assert store.nbytes == hs._bytes_held(store)
        assert len(store) <= hs._GEOMETRY_KEPT
    store.clear()
    assert store.nbytes == 0 == hs._bytes_held(store)
