"""A placed source heard by one wire design at many places at once (the layout's grid) equals each place alone.

Many places read the source's field from its tables against distance (snrgain.model.placed._FieldTable); one
place works it point by point.  The two must agree to the tables' tolerance (placed.TABLE_TOLERANCE), for a vertical
source and for a horizontal one (whose table leans on flat ground's symmetry about the source's foot)."""

from __future__ import annotations

import numpy as np
import pytest

from snrgain.antennas import from_si
from snrgain.model import placed
from snrgain.sky.noise import LocalSource

F_HZ = 1.83e6


def _feeds(n: int) -> np.ndarray:
    rng = np.random.default_rng(7)
    feeds = np.column_stack([rng.uniform(-40.0, 210.0, n), rng.uniform(-40.0, 280.0, n)])
    feeds[0] = (140.0, 50.0)  # the wire passes a few metres from the source
    return feeds


@pytest.mark.parametrize(
    "polarisation, orientation_deg",
    [("vertical", None), ("horizontal", 30.0), ("both", 115.0)],
)
def test_many_places_at_once_equal_each_place_alone(polarisation, orientation_deg):
    bev = from_si("beverage", length=180.0, height=2.0, bearing=np.radians(40.0), ground="moist loam")
    src = LocalSource(
        "supply",
        bearing_rad=0.0,
        position_m=(150.0, 60.0),
        height_m=3.0,
        polarisation=polarisation,
        orientation_rad=None if orientation_deg is None else np.radians(orientation_deg),
    )
    feeds = _feeds(45)
    for kind, _ in placed.dipoles(src):
        placed._TABLES.clear()
        x = placed.wire_samples(bev.length_m, F_HZ, 5.0)  # one grid for all, so the batch is one expression
        assert len(feeds) * len(x) >= placed.TABLE_MIN_POINTS  # the batch reads the tables, along the wire
        assert len(feeds) * 2 * placed.LEAD_POINTS >= placed.LEAD_TABLE_MIN  # and up its leads
        batch = placed.wire_feed_currents(bev, src, F_HZ, feeds, bev.ground, x_m=x, kind=kind)
        assert len(placed._TABLES) > 0
        alone = np.array([placed.wire_feed_current(bev, src, F_HZ, f, bev.ground, x_m=x, kind=kind) for f in feeds])
        # the tables hold the field to TABLE_TOLERANCE of each panel's largest value (1e-4; the field's own tables
        # in noisemodels.halfspace hold it to 3e-4): measured 1.7e-5 at worst on a current near a null
        assert np.max(np.abs(batch - alone) / np.abs(alone)) < 10 * placed.TABLE_TOLERANCE


def test_tabled_field_equals_the_field_point_by_point():
    # every component, at the wire's height and up a lead, near the foot (some closer than the tables go) and far
    g = from_si("beverage", length=100.0, height=2.0, bearing=0.0, ground="sandy soil").ground
    src = LocalSource(
        "lamp", 0.0, position_m=(10.0, -5.0), height_m=6.0, polarisation="horizontal", orientation_rad=np.radians(75.0)
    )
    rng = np.random.default_rng(3)
    pts = np.concatenate(
        [
            np.array(src.position_m) + rng.normal(0.0, 2.0, (300, 2)),
            np.array(src.position_m) + [[0.004, 0.0], [0.0, -0.002]],  # closer than TABLE_MIN_RHO_M
            rng.uniform(-600.0, 600.0, (3000, 2)),
        ]
    )
    z = rng.choice([0.5, 2.0, 4.0], len(pts))
    got = placed.tabled_field_vector(src, pts, z, 7.1e6, g, kind="horizontal", tables=True)
    want = placed.field_vector(src, pts, z, 7.1e6, g, kind="horizontal")
    err = np.linalg.norm(got - want, axis=1) / np.linalg.norm(want, axis=1)
    assert np.max(err) < placed.TABLE_TOLERANCE  # measured 2.4e-6
    u = np.array([np.sin(0.3), np.cos(0.3)])
    along = placed.tabled_field_along(src, pts, 2.0, u, 7.1e6, g, kind="horizontal")
    want = placed.field_vector(src, pts, 2.0, 7.1e6, g, kind="horizontal")[:, :2] @ u
    assert np.max(np.abs(along - want) / np.abs(want)) < 10 * placed.TABLE_TOLERANCE


def test_a_wire_kept_at_its_place_hears_as_a_fresh_one_with_other_loads():
    # The EMFs along a wire at one place are kept for the next wire there (a termination searched); the loads
    # still count: another termination gives what a fresh computation gives, not the first one's current.
    src = LocalSource("supply", bearing_rad=0.0, position_m=(60.0, 80.0), height_m=2.0)
    a = from_si("beverage", length=150.0, height=2.0, bearing=np.radians(20.0), ground="moist loam", termination=450.0)
    b = from_si("beverage", length=150.0, height=2.0, bearing=np.radians(20.0), ground="moist loam", termination=900.0)
    feed = np.array([5.0, -3.0])
    ia = placed.wire_feed_current(a, src, F_HZ, feed, a.ground)
    ib = placed.wire_feed_current(b, src, F_HZ, feed, b.ground)
    placed._EMFS.clear()
    assert placed.wire_feed_current(b, src, F_HZ, feed, b.ground) == ib
    assert abs(ia - ib) > 1e-6 * abs(ib)


@pytest.mark.parametrize(
    "family, spec",
    [
        ("vertical", {"height": 6.0}),
        ("terminated-loop", {"width": 8.5, "loop_height": 4.3, "height": 1.5, "bearing": np.radians(70.0)}),
    ],
)
def test_a_compact_antenna_at_many_places_equals_each_place_alone(family, spec):
    # layout's grid places one compact design at many places; pickup hears them at once through their transmit
    # currents (placed._compact_powers): each the power received_power gives it alone.
    src = LocalSource(
        "charger", 0.0, position_m=(100.0, 20.0), height_m=1.0, polarisation="both", orientation_rad=np.radians(40.0)
    )
    base = from_si(family, ground="moist clay", **spec)
    ants = [base.at(tuple(f)) for f in _feeds(9)]
    p = np.full(len(ants), np.nan)
    placed._compact_powers(ants, src, 3.55e6, (0.0, 0.0), base.ground, p)
    alone = [placed.received_power(a, src, 3.55e6, (0.0, 0.0), base.ground) for a in ants]
    assert np.all(np.isfinite(p))
    np.testing.assert_allclose(p, alone, rtol=1e-9, atol=0)


@pytest.mark.parametrize("radius_m", [0.005, 0.3])  # 0.3 m: the table's nearest nodes clamped to 4 radii, equal
def test_the_verticals_tables_made_as_needed_read_as_made_whole(radius_m):
    # layout reads the TX vertical's field along many wires from its tables, made in blocks as distances need them
    # (snrgain.physics.scatter._field_table); the values read are np.interp's on the whole table.
    import snrgain.physics.scatter as ps

    v = from_si("vertical", height=30.0, ground="moist loam")
    tx = ps.TxVertical(v, (10.0, -5.0), complex(ps.RESONANT_LOAD_OHM), radius_m)
    rng = np.random.default_rng(5)
    pts = np.concatenate([[[10.0, -5.0], [10.5, -5.2], [11.2, -5.0]], rng.uniform(-290.0, 310.0, (400, 2))])
    pts = np.concatenate([pts, np.array(tx.position_m) + rng.uniform(-2.0, 2.0, (100, 2))])
    ps._TABLES.clear()
    near = np.hypot(*(pts - np.array(tx.position_m)).T) < 4 * radius_m  # first the points on the axis alone
    got = np.zeros((len(pts), 3), dtype=complex)
    for part in (near, ~near):
        got[part] = ps._field_along(tx, F_HZ, pts[part], np.full(int(part.sum()), 2.0))
    e_rho, e_z = ps._field_table(tx, F_HZ, 2.0)  # every block now
    assert np.all(np.isfinite(e_rho)) and np.all(np.isfinite(e_z))
    d = pts - np.array(tx.position_m)
    rho = np.maximum(np.hypot(d[:, 0], d[:, 1]), 4 * radius_m)
    lr, grid = np.log(rho), np.log(np.maximum(ps.TABLE_RHO_M, 4 * radius_m))
    k = 2 * np.pi * F_HZ / ps.C_M_PER_S
    er = (np.interp(lr, grid, e_rho.real) + 1j * np.interp(lr, grid, e_rho.imag)) * np.exp(-1j * k * rho)
    ez = (np.interp(lr, grid, e_z.real) + 1j * np.interp(lr, grid, e_z.imag)) * np.exp(-1j * k * rho)
    np.testing.assert_array_equal(got[:, 2], ez)
    np.testing.assert_array_equal(got[:, 0], er * d[:, 0] / rho)


def test_a_placed_copy_keeps_its_designs_gain_key():
    # Antenna.at hands the copy the key its design already has (the key leaves the position out): the key worked
    # afresh is the same, and a copy of a copy whose parameters were then replaced works its own
    from snrgain.antennas import from_si
    from snrgain.antennas.base import variant

    bev = from_si("beverage", length=200.0, height=2.0, bearing=0.5, ground="moist loam")
    key = bev.gain_key()
    moved = bev.at((30.0, -12.5))
    assert moved.params.position == (30.0, -12.5) and moved.gain_key() == key
    moved.__dict__.pop("_gain_key")
    assert moved.gain_key() == key  # worked afresh
    longer = variant(moved, length=210.0).at((1.0, 2.0))
    assert longer.gain_key() != key
    fresh = from_si("beverage", length=210.0, height=2.0, bearing=0.5, ground="moist loam")
    assert fresh.gain_key() == longer.gain_key()
