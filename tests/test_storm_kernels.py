"""The storm sky's kernels against their plain forms: the direct geodesic against pyproj (Karney's algorithm), the
P.372 block values of one frequency against the per-place polynomials, the blend of block powers against the blend
in dB, the hour's absorption against the law evaluated everywhere, and the deposit's merge against np.unique."""

from __future__ import annotations

import numpy as np
import pytest

from noisemodels import p372_maps, storms
from tests.conftest import P372_DIR, needs_p372


def test_geodesic_forward_matches_pyproj_to_a_tenth_of_a_millimetre():
    pyproj = pytest.importorskip("pyproj")
    geod = pyproj.Geod(ellps="WGS84")
    rng = np.random.default_rng(3)
    for lat0, lon0 in [(43.15, -89.6), (0.0, 0.0), (-60.0, 170.0), (89.5, 10.0), (-89.9, -170.0)]:
        az, d = rng.uniform(0.0, 360.0, 2000), rng.uniform(1e3, 12_000e3, 2000)
        lat, lon = storms.geodesic_forward(lat0, lon0, az, d)
        lon2, lat2, _ = geod.fwd(np.full(az.size, lon0), np.full(az.size, lat0), az, d)
        _, _, miss = geod.inv(lon, lat, lon2, lat2)
        assert np.max(miss) < 1e-4  # m
        assert np.all((lon >= -180.0) & (lon < 180.0))


def _coefficients(rng):
    """Coefficient arrays of a P.372 file's shapes (random: the algebra, not the data, is under test)."""
    return p372_maps.AtmosphericCoefficients(
        1,
        None,
        rng.normal(0.0, 1.0, (6, 16, 29)),
        rng.normal(0.0, 1.0, (6, 2)),
        rng.normal(0.0, 0.1, (2, 12, 5)),
        rng.normal(0.0, 0.1, (12, 14)),
    )


def test_one_frequency_block_values_equal_the_per_place_polynomials():
    rng = np.random.default_rng(5)
    c = _coefficients(rng)
    lat = rng.uniform(-1.5, 1.5, (1, 7, 9))
    lon = rng.uniform(-3.0, 3.0, (1, 7, 9))
    blocks = np.arange(6).reshape(6, 1, 1)
    for f_mhz in (0.1, 1.83, 7.1, 30.0):
        fast = p372_maps.block_values(c, lat, lon, f_mhz, blocks)
        # a frequency array that is not uniform takes the per-place path: its first half is the same frequency
        f = np.concatenate([np.full((6, 7, 9), f_mhz), np.full((6, 7, 9), 2.0 * f_mhz)])
        slow = p372_maps.block_values(
            c, np.concatenate([lat] * 12), np.concatenate([lon] * 12), f, np.tile(blocks, (2, 1, 1))
        )
        for a, b in zip(fast, slow):
            assert a.shape == (6, 7, 9)
            np.testing.assert_array_equal(a, b[:6])


def test_fam_1mhz_on_a_few_blocks_and_places_equals_each_place_alone():
    rng = np.random.default_rng(6)
    c = _coefficients(rng)
    lat, lon = rng.uniform(-1.5, 1.5, 40), rng.uniform(-3.0, 3.0, 40)
    blocks = rng.integers(0, 6, (3, 40))
    got = p372_maps.fam_1mhz(c, lat, lon, blocks)
    for i in range(3):
        for j in range(0, 40, 7):
            assert got[i, j] == pytest.approx(float(p372_maps.fam_1mhz(c, lat[j], lon[j], blocks[i, j])), abs=1e-12)


def test_blend_of_block_powers_is_the_blend_in_db():
    rng = np.random.default_rng(7)
    fa = rng.uniform(20.0, 120.0, (6, 50))
    du, dl = rng.uniform(1.0, 10.0, (2, 6, 50))
    lmt = rng.uniform(0.0, 24.0, 50)
    want = 10.0 ** (p372_maps.interpolate_blocks(lmt, (fa, du, dl))[0] / 10.0)
    got = p372_maps.blend_block_powers(lmt, 10.0 ** (fa / 10.0))
    np.testing.assert_allclose(got, want, rtol=1e-13)


def test_summed_by_key_is_unique_and_bincount():
    rng = np.random.default_rng(8)
    for n, top in ((1, 5), (1000, 50), (200_000, 10**9)):
        keys = rng.integers(0, top, n)
        w = rng.uniform(0.0, 1.0, n)
        pair, weight = storms._summed_by_key(keys, w)
        want, inverse = np.unique(keys, return_inverse=True)
        np.testing.assert_array_equal(pair, want)
        np.testing.assert_allclose(weight, np.bincount(inverse.ravel(), weights=w), rtol=1e-12)


def test_summed_per_row_is_each_rows_unique_and_bincount():
    """storms._summed_per_row against numpy's unique and bincount row by row: short rows of pixels (the storm
    deposit's), one row, and keys too wide to pack (the one-run fallback)."""
    rng = np.random.default_rng(9)
    for rows, width, top in ((300, 64, 12_288), (1, 7, 3), (40, 16, 2**60)):
        keys = rng.integers(0, top, (rows, width))
        w = rng.uniform(0.0, 1.0, (rows, width))
        key, row, weight = storms._summed_per_row(keys, w)
        for r in range(rows):
            want, inverse = np.unique(keys[r], return_inverse=True)
            mine = row == r
            np.testing.assert_array_equal(key[mine], want)
            np.testing.assert_allclose(weight[mine], np.bincount(inverse.ravel(), weights=w[r]), rtol=1e-12)
        assert np.all(np.diff(row) >= 0)


@needs_p372
def test_cell_power_at_night_and_by_day_equals_the_law_evaluated_everywhere():
    geom = storms._geometry(43.15, -89.6, 250e3, 3.0, 100e3, 12_000e3)
    blocks = storms.p372_blocks(geom, month=12, freq_hz=1.83e6, data_dir=P372_DIR)
    from noisemodels import solar

    for hour in (3.0, 18.0):
        got = storms.cell_power(geom, month=12, utc_hour=hour, freq_hz=1.83e6, data_dir=P372_DIR)
        # the plain form: the level blended in dB, every reflection point through the absorption law
        density = 10.0 ** (blocks.at_utc_hour(hour).fa_db / 10.0)
        sin_d, cos_d, cos_c, sin_c = solar.hour_terms(day_of_year=solar.mid_month_day_of_year(12), utc_hour=hour)
        loss = np.zeros(geom.hops.size)
        for cells, la, lo in zip(geom.reflection_cells, geom.reflection_lat_rad, geom.reflection_lon_rad):
            cos_chi = np.sin(la) * sin_d + np.cos(la) * cos_d * (np.cos(lo) * cos_c - np.sin(lo) * sin_c)
            loss[cells] += storms.hop_absorption_db(
                1.83, geom.elevation_rad.ravel()[cells], np.arccos(np.clip(cos_chi, -1, 1))
            )
        loss = loss.reshape(geom.hops.shape) + storms.GROUND_LOSS_DB_PER_REFLECTION * (geom.hops - 1)
        want = density * geom.spreading_per_m * 10.0 ** (-loss / 10.0) * np.radians(3.0) * 100e3
        np.testing.assert_allclose(got, want, rtol=1e-12)


def test_a_small_call_kept_by_its_arguments_returns_fresh_copies():
    rng = np.random.default_rng(9)
    c = _coefficients(rng)
    lat, lon, blocks = np.radians(43.0), np.radians(-89.0), np.arange(6)
    first = p372_maps.block_values(c, lat, lon, 1.83, blocks)
    want = [v.copy() for v in first]
    first[0][:] = 0.0  # the caller's copy: the kept values do not change
    again = p372_maps.block_values(c, lat, lon, 1.83, blocks)
    for a, b in zip(again, want):
        np.testing.assert_array_equal(a, b)
    other = _coefficients(np.random.default_rng(10))  # other coefficients: not the kept values
    assert not np.array_equal(p372_maps.block_values(other, lat, lon, 1.83, blocks)[0], want[0])
