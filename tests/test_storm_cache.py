"""The storm sky computed once: the memoised, vectorised evaluation against straightforward reference ones.

The P.372 maps are evaluated per time block and place in one vectorised pass, and the storm model memoises its
geodesics, its P.372 block values and its HEALPix interpolation weights.  Each is checked here against a plain
evaluation that follows the published steps one place and one hour at a time (no cache, no vectorisation),
to 1e-9 relative: the two differ only by the order of floating-point sums.
"""

import math

import numpy as np
import pytest

from noisemodels import p372, p372_maps, sky, sphere, storms
from noisemodels.hops import EARTH_RADIUS_M
from tests.conftest import P372_DIR, needs_p372

pytestmark = needs_p372

RTOL = 1e-9


def _poly(coeffs, x):
    """Horner's rule, highest power first (the coefficient files' order, noisemodels.p372_maps)."""
    out = 0.0
    for a in coeffs:
        out = out * x + float(a)
    return out


def _reference_block(c, lat_deg, lon_deg, f_mhz, b):
    """(FaA, Du, Dl) [dB] at one place, frequency and time block: steps 1-4 of p372_maps' docstring, by hand."""
    q = (math.radians(lon_deg) % (2 * math.pi)) / 2.0
    p = math.radians(lat_deg) + math.pi / 2
    z = [sum(c.fakp[b, k, j] * math.sin((k + 1) * q) for k in range(15)) + c.fakp[b, 15, j] for j in range(29)]
    fam1 = sum(z[j] * math.sin((j + 1) * p) for j in range(29)) + c.fakabp[b, 0] + c.fakabp[b, 1] * p
    t = b if lat_deg >= 0 else b + 6
    pz, px = c.fam[t, 0:7], c.fam[t, 7:14]
    cz = fam1 * (2.0 - _poly(pz, -0.75)) - _poly(px, -0.75)
    u = (8.0 * 2.0 ** math.log10(f_mhz) - 11.0) / 4.0
    x = math.log10(min(f_mhz, 20.0))
    return cz * _poly(pz, u) + _poly(px, u), _poly(c.dud[0, t], x), _poly(c.dud[1, t], x)


def _reference_hour(c, lat_deg, lon_deg, f_mhz, utc_hour):
    """The smooth value at a UTC hour: linear in power between block centres at local mean time."""
    s = (((utc_hour + lon_deg / 15.0) % 24.0) - 2.0) / 4.0
    lo = math.floor(s) % 6
    w = s - math.floor(s)
    a = _reference_block(c, lat_deg, lon_deg, f_mhz, lo)
    b = _reference_block(c, lat_deg, lon_deg, f_mhz, (lo + 1) % 6)
    fa = 10 * math.log10((1 - w) * 10 ** (a[0] / 10) + w * 10 ** (b[0] / 10))
    return fa, (1 - w) * a[1] + w * b[1], (1 - w) * a[2] + w * b[2]


PLACES = [(41.6, -72.35), (-33.9, 151.2), (5.0, 20.0), (-60.0, -170.0), (78.0, 15.0)]


@pytest.mark.parametrize("month", [1, 7])
def test_vectorised_p372_maps_match_a_plain_evaluation(month):
    c = p372_maps.load_month(month, P372_DIR)
    lat = np.array([p[0] for p in PLACES])
    lon = np.array([p[1] for p in PLACES])
    for f_mhz in (0.5, 1.83, 7.1, 25.0):
        for b in range(6):
            got = p372.atmospheric(lat, lon, month=month, freq_hz=f_mhz * 1e6, time_block=b, data_dir=P372_DIR)
            want = np.array([_reference_block(c, la, lo, f_mhz, b) for la, lo in PLACES])
            for k, key in enumerate(("fa_db", "du_db", "dl_db")):
                np.testing.assert_allclose(getattr(got, key), want[:, k], rtol=RTOL, err_msg=key)
        # Blocks broadcast against places (the per-block table of a month) and the hours' blend.
        hours = np.array([0.0, 3.5, 9.0, 17.25, 23.9])
        got = p372.atmospheric(lat, lon, month=month, freq_hz=f_mhz * 1e6, utc_hour=hours, data_dir=P372_DIR)
        want = np.array([_reference_hour(c, la, lo, f_mhz, h) for (la, lo), h in zip(PLACES, hours)])
        for k, key in enumerate(("fa_db", "du_db", "dl_db")):
            np.testing.assert_allclose(getattr(got, key), want[:, k], rtol=RTOL, err_msg=key)


def test_block_table_blends_like_the_hourly_call():
    # One place, many hours: the month's six blocks computed once give every hour's value (and its shape).
    blocks = p372.atmospheric_blocks(43.15, -89.6, month=12, freq_hz=1.83e6, data_dir=P372_DIR)
    assert blocks.fa_db.shape == (6,)
    hours = np.linspace(0.0, 23.5, 48).reshape(6, 8)
    got = blocks.at_utc_hour(hours)
    assert got.fa_db.shape == (6, 8)
    c = p372_maps.load_month(12, P372_DIR)
    want = np.array([_reference_hour(c, 43.15, -89.6, 1.83, h)[0] for h in hours.ravel()]).reshape(hours.shape)
    np.testing.assert_allclose(got.fa_db, want, rtol=RTOL)


def _reference_storm_weights(lat, lon, *, month, utc_hour, freq_hz, level, grid, layer_height_m=250e3):
    """The storm model's sky for one hour, computed from scratch (module docstring of noisemodels.storms):
    geodesics, P.372 map, hops, absorption and healpy's deposit, nothing memoised."""
    from pyproj import Geod

    from noisemodels import solar
    from noisemodels.hops import fewest_hops, hop_elevation_rad

    step_b, step_d = 3.0, 100e3
    b, d = np.meshgrid(np.arange(0.0, 360.0, step_b), np.arange(step_d, 12_000e3 + 1.0, step_d), indexing="ij")
    geod = Geod(ellps="WGS84")
    lon2, lat2, _ = geod.fwd(np.full(b.size, lon), np.full(b.size, lat), b.ravel(), d.ravel())
    fa = p372.atmospheric(
        lat2.reshape(b.shape), lon2.reshape(b.shape), month=month, freq_hz=freq_hz, utc_hour=utc_hour, data_dir=P372_DIR
    ).fa_db
    kw = dict(layer_height_m=layer_height_m, min_elevation_rad=storms.MIN_ELEVATION_RAD)
    n = fewest_hops(d, **kw)
    el = hop_elevation_rad(d, n, layer_height_m=layer_height_m)
    loss = storms.GROUND_LOSS_DB_PER_REFLECTION * (n - 1.0)
    doy = solar.mid_month_day_of_year(month)
    for i in range(1, int(n.max()) + 1):
        lo, la, _ = geod.fwd(
            np.full(b.size, lon), np.full(b.size, lat), b.ravel(), (d * (2 * i - 1) / (2.0 * n)).ravel()
        )
        chi = np.pi / 2 - solar.solar_elevation_rad(np.radians(la), np.radians(lo), day_of_year=doy, utc_hour=utc_hour)
        loss += np.where(n >= i, storms.hop_absorption_db(freq_hz / 1e6, el, chi.reshape(b.shape)), 0.0)
    power = 10 ** (fa / 10) / (EARTH_RADIUS_M * np.sin(d / EARTH_RADIUS_M)) * 10 ** (-loss / 10)
    power = power * np.radians(step_b) * step_d
    ns, nb = storms.SUB_DISTANCE, storms.SUB_BEARING
    d_sub = np.clip(d[..., None] + ((np.arange(ns) + 0.5) / ns - 0.5) * step_d, 1e3, None)
    el_sub = hop_elevation_rad(d_sub, fewest_hops(d_sub, **kw), layer_height_m=layer_height_m)
    az_sub = np.radians(b[..., None, None] + ((np.arange(nb) + 0.5) / nb - 0.5) * step_b)
    shape = d.shape + (ns, nb)
    samples = (
        np.broadcast_to(az_sub, shape).ravel(),
        np.broadcast_to(el_sub[..., None], shape).ravel(),
        np.broadcast_to((power / (ns * nb))[..., None, None], shape).ravel(),
    )
    # The deposit with healpy's own interpolation weights and pixel lookup (independent of sphere.py's).
    import healpy as hp

    pix, w = hp.get_interp_weights(grid.nside, *sphere.to_healpy_angles(samples[0], samples[1]))
    full = np.bincount(pix.ravel(), weights=(w * samples[2][None, :]).ravel(), minlength=hp.nside2npix(grid.nside))
    per_pixel = full[hp.ang2pix(grid.nside, *sphere.to_healpy_angles(grid.azimuth_rad, grid.elevation_rad))]
    return sky.normalised_component("ref", "atmospheric", grid, per_pixel / grid.solid_angle_sr, level).weight_k_sr


@pytest.mark.parametrize(
    "site, month, freq_hz", [((43.15, -89.6), 12, 1.83e6), ((-33.9, 151.2), 1, 3.6e6), ((60.0, 10.0), 3, 7.1e6)]
)
def test_memoised_storm_sky_matches_a_from_scratch_evaluation(site, month, freq_hz):
    grid = sphere.upper_hemisphere(16)
    level = p372.NoiseLevel(55.0, 8.0, 6.0)
    for hour in (2.0, 13.5, 2.0):  # the last one from a warm cache
        got = storms.storm_component(
            *site, month=month, utc_hour=hour, freq_hz=freq_hz, level=level, directions=grid, data_dir=P372_DIR
        ).weight_k_sr
        want = _reference_storm_weights(*site, month=month, utc_hour=hour, freq_hz=freq_hz, level=level, grid=grid)
        np.testing.assert_allclose(got, want, rtol=RTOL, atol=RTOL * want.max())


def test_memo_is_keyed_by_its_inputs():
    g1 = storms.path_geometry(43.15, -89.6, 250e3, 3.0, 100e3, 12_000e3)
    assert storms.path_geometry(43.15, -89.6, 250e3, 3.0, 100e3, 12_000e3) is g1
    g2 = storms.path_geometry(43.15, -89.6, 300e3, 3.0, 100e3, 12_000e3)
    assert g2 is not g1 and not np.array_equal(g2.elevation_rad, g1.elevation_rad)
    # Another month or frequency gives other block values; the cached arrays cannot be written to.
    a = storms.p372_blocks(g1, month=1, freq_hz=1.83e6, data_dir=P372_DIR)
    assert storms.p372_blocks(g1, month=1, freq_hz=1.83e6, data_dir=P372_DIR) is a
    assert not np.allclose(storms.p372_blocks(g1, month=7, freq_hz=1.83e6, data_dir=P372_DIR).fa_db, a.fa_db)
    with pytest.raises(ValueError):
        g1.elevation_rad[0, 0] = 1.0


def test_missing_data_still_fails_clearly(tmp_path, monkeypatch):
    monkeypatch.delenv(p372_maps.ENV_VAR, raising=False)
    grid = sphere.upper_hemisphere(8)
    with pytest.raises(p372_maps.P372DataError, match="COEFF02W.txt"):
        storms.storm_component(
            10.0,
            10.0,
            month=2,
            utc_hour=1.0,
            freq_hz=1.83e6,
            level=p372.NoiseLevel(50.0, 0, 0),
            directions=grid,
            data_dir=tmp_path,
        )


@pytest.mark.parametrize("nside", [1, 2, 8, 32, 128])
def test_interpolation_weights_are_healpys(nside):
    # The numpy bilinear weights against healpy's get_interp_weights: the same four pixels in the same order,
    # weights equal to rounding, over the whole sphere, at both poles, on the rings and at the pixel centres.
    hp = pytest.importorskip("healpy")
    rng = np.random.default_rng(nside)
    centre_theta, centre_phi = hp.pix2ang(nside, np.arange(hp.nside2npix(nside)))
    theta = np.concatenate(
        [rng.uniform(0, np.pi, 5000), np.arccos(rng.uniform(0.995, 1, 500)), np.arccos(-rng.uniform(0.995, 1, 500))]
        + [[0.0, np.pi, np.pi / 2], centre_theta]
    )
    phi = np.concatenate([rng.uniform(0, 2 * np.pi, 6000), [0.0, 1.0, 6.28], centre_phi])
    pix, w = sphere.interpolation_weights(nside, theta, phi)
    pix_hp, w_hp = hp.get_interp_weights(nside, theta, phi)
    np.testing.assert_array_equal(pix, pix_hp)
    np.testing.assert_allclose(w, w_hp, rtol=0, atol=1e-12)
    np.testing.assert_allclose(w.sum(axis=0), 1.0, atol=1e-12)


# -- the persistent cache ----------------------------------------------------------------------------------------


def _clear_memory():
    for f in (storms.path_geometry, storms._deposit_weights, storms._p372_blocks_cached, storms._noon_loss_db):
        f.cache_clear()


def _storm(hour=3.0, data_dir=P372_DIR):
    return storms.storm_component(
        43.15,
        -89.6,
        month=11,
        utc_hour=hour,
        freq_hz=1.83e6,
        level=p372.NoiseLevel(55.0, 8.0, 6.0),
        directions=sphere.upper_hemisphere(8),
        data_dir=data_dir,
    )


@pytest.fixture
def cache_dir(tmp_path, monkeypatch):
    from noisemodels import skycache

    monkeypatch.setenv(skycache.ENV_DIR, str(tmp_path))
    monkeypatch.delenv(skycache.ENV_OFF, raising=False)
    monkeypatch.delenv(skycache.ENV_MAX_MB, raising=False)
    _clear_memory()
    return skycache.folder()


def test_a_warm_disk_cache_gives_the_same_map_without_computing(cache_dir, monkeypatch):
    first = _storm().weight_k_sr
    files = sorted(cache_dir.glob("storms-*.npy"))
    assert len(files) == 1 and not list(cache_dir.glob(".tmp-*"))
    _clear_memory()

    def no_geometry(*a, **k):
        raise AssertionError("the storm geometry was recomputed")

    real = storms.path_geometry
    monkeypatch.setattr(storms, "path_geometry", no_geometry)
    np.testing.assert_array_equal(_storm().weight_k_sr, first)
    # Another hour is another entry (and is computed).
    monkeypatch.setattr(storms, "path_geometry", real)
    assert not np.array_equal(_storm(hour=15.0).weight_k_sr, first)
    assert len(list(cache_dir.glob("storms-*.npy"))) == 2


def test_cache_key_holds_the_data_file(cache_dir, tmp_path_factory):
    # A changed coefficient file (here: a copy elsewhere, then touched) is another key: no stale map.
    import os
    import shutil

    copy = tmp_path_factory.mktemp("p372")
    shutil.copy(P372_DIR / "COEFF11W.txt", copy / "COEFF11W.txt")
    _storm(data_dir=copy)
    st = (copy / "COEFF11W.txt").stat()
    os.utime(copy / "COEFF11W.txt", ns=(st.st_atime_ns, st.st_mtime_ns + 10**9))
    _storm(data_dir=copy)
    assert len(list(cache_dir.glob("storms-*.npy"))) == 2


def test_opt_out_and_damaged_entries(cache_dir, monkeypatch):
    from noisemodels import skycache

    monkeypatch.setenv(skycache.ENV_OFF, "1")
    off = _storm().weight_k_sr
    assert not cache_dir.exists() or not list(cache_dir.iterdir())
    monkeypatch.setenv(skycache.ENV_OFF, "0")
    _storm()
    (entry,) = cache_dir.glob("storms-*.npy")
    entry.write_bytes(b"\x93NUMPY garbage")  # a damaged entry is a miss, recomputed and replaced
    _clear_memory()
    np.testing.assert_array_equal(_storm().weight_k_sr, off)
    assert np.load(entry).shape == (sphere.upper_hemisphere(8).size,)


def test_size_bound_removes_the_least_recently_used(cache_dir, monkeypatch):
    import os

    from noisemodels import skycache

    monkeypatch.setenv(skycache.ENV_MAX_MB, "0.012")  # room for two entries of 640 pixels (5.2 kB each)
    paths = []
    for i in range(4):
        arr = np.full(640, float(i))
        skycache.store("test", {"i": i}, arr)
        paths.append(cache_dir / skycache.key_name("test", {"i": i}))
        os.utime(paths[-1], (1e9 + i, 1e9 + i))  # distinct times, oldest first
        if i == 1:
            assert skycache.load("test", {"i": 0}) is not None  # a hit makes entry 0 the most recent
            os.utime(paths[0], (1e9 + 10, 1e9 + 10))
    skycache.trim()
    left = sorted(p.name for p in cache_dir.glob("*.npy"))
    assert left == sorted([paths[0].name, paths[3].name])
    assert sum(p.stat().st_size for p in cache_dir.glob("*.npy")) <= 12_000
    np.testing.assert_array_equal(skycache.load("test", {"i": 3}), np.full(640, 3.0))
    assert skycache.load("test", {"i": 1}) is None


def test_stores_keep_the_bound_walking_the_folder_only_when_it_may_pass(cache_dir, monkeypatch):
    """A run writing many maps walks the cache folder once at its first store and again only when what it wrote since
    may pass the size bound (skycache._held_bytes); the folder stays within the bound after every store."""
    from noisemodels import skycache

    monkeypatch.setenv(skycache.ENV_MAX_MB, "0.03")  # room for five entries of 640 pixels (5.2 kB each)
    walks = []
    real = skycache.trim
    monkeypatch.setattr(skycache, "trim", lambda where=None: walks.append(1) or real(where))
    arr = np.zeros(640)
    for i in range(20):
        skycache.store("test", {"i": i}, arr + i)
        assert sum(p.stat().st_size for p in cache_dir.glob("*.npy")) <= 30_000
    assert 1 < len(walks) < 20
    assert (cache_dir / skycache.key_name("test", {"i": 19})).exists()
    held = sum(p.stat().st_size for p in cache_dir.glob("*.npy"))
    assert held == skycache._held_bytes[cache_dir] == real(cache_dir)


@pytest.mark.parametrize("nside", [1, 4, 32, 1024])
def test_direction_to_pixel_is_healpys_ang2pix(nside):
    # The numpy RING-scheme lookup against healpy's ang2pix, poles and horizon included; the upper hemisphere's
    # pixel centres are its first pixels in order (what the storm deposit relies on).
    hp = pytest.importorskip("healpy")
    rng = np.random.default_rng(nside)
    az = rng.uniform(0, 2 * np.pi, 20000)
    el = np.concatenate([np.arcsin(rng.uniform(-1, 1, 19000)), np.radians(90 - rng.uniform(0, 0.01, 1000))])
    el[:3] = [np.pi / 2, -np.pi / 2, 0.0]
    np.testing.assert_array_equal(
        sphere.direction_to_pixel(nside, az, el), hp.ang2pix(nside, *sphere.to_healpy_angles(az, el))
    )
    assert sphere.direction_to_pixel(nside, 0.3, 0.2) == hp.ang2pix(nside, *sphere.to_healpy_angles(0.3, 0.2))
    if nside <= 32:
        g = sphere.upper_hemisphere(nside)
        np.testing.assert_array_equal(
            sphere.direction_to_pixel(nside, g.azimuth_rad, g.elevation_rad), np.arange(g.size)
        )


def test_half_space_tables_are_kept_on_disk_and_read_back(cache_dir, monkeypatch):
    # A table of the ground's field (noisemodels.halfspace) is kept in the same cache: a later run (its in-memory
    # tables gone) reads it back bit for bit without integrating; another ground is another entry; opt-out reads
    # nothing.
    from noisemodels import halfspace, skycache

    n2 = complex(15.0, -98.2)
    rho, zeta = np.array([3.0, 40.0, 700.0]), np.array([2.0, 5.0, 1.0])
    monkeypatch.setattr(halfspace, "_TABLES", type(halfspace._TABLES)())
    first = halfspace.reflected(1.83e6, n2, rho, zeta, "vertical")
    (entry,) = cache_dir.glob("halfspace-*.npy")
    monkeypatch.setattr(halfspace, "_TABLES", type(halfspace._TABLES)())

    def no_integral(*a, **k):
        raise AssertionError("the table was integrated again")

    real = halfspace.remainder_grid
    monkeypatch.setattr(halfspace, "remainder_grid", no_integral)
    np.testing.assert_array_equal(halfspace.reflected(1.83e6, n2, rho, zeta, "vertical"), first)
    monkeypatch.setattr(halfspace, "remainder_grid", real)
    halfspace.reflected(1.83e6, complex(15.0, -99.0), rho, zeta, "vertical")
    assert len(list(cache_dir.glob("halfspace-*.npy"))) == 2
    # The key holds the module's source: a table from other code is not used.
    top = halfspace.ZETA_BLOCK_M * max(1, int(np.ceil(max(8.0, halfspace.ZETA_LEAST_M) / halfspace.ZETA_BLOCK_M)))
    key = halfspace._disk_key(1.83e6, n2, "vertical", 1000.0, top)  # the table reaches ZETA_LEAST_M at least
    assert entry.name == skycache.key_name("halfspace", key)
    assert skycache.key_name("halfspace", {**key, "source": "other"}) != entry.name
    monkeypatch.setenv(skycache.ENV_OFF, "1")
    monkeypatch.setattr(halfspace, "_TABLES", type(halfspace._TABLES)())
    monkeypatch.setattr(halfspace, "remainder_grid", no_integral)
    with pytest.raises(AssertionError, match="integrated again"):
        halfspace.reflected(1.83e6, n2, rho, zeta, "vertical")


def test_the_verticals_field_tables_are_kept_on_disk_and_read_back(cache_dir, monkeypatch):
    # The TX vertical's field against distance (snrgain.physics.scatter._field_table) is kept in the same cache: a
    # later run (its memo emptied) reads the blocks made before bit for bit without working them again, and works
    # only the blocks it newly needs.
    import snrgain.physics.scatter as ps
    from snrgain.antennas import from_si

    tx = ps.TxVertical(from_si("vertical", height=20.0, ground="moist loam"), (0.0, 0.0), 50.0 + 0j, 0.01)
    ps._TABLES.clear()
    e_rho, e_z = (a.copy() for a in ps._field_table(tx, 1.83e6, 2.0, 100, 300))
    (entry,) = cache_dir.glob("txfield-*.npy")
    ps._TABLES.clear()
    calls = []
    real = ps.field_vector_at
    monkeypatch.setattr(ps, "field_vector_at", lambda *a, **k: calls.append(len(a[2])) or real(*a, **k))
    again = ps._field_table(tx, 1.83e6, 2.0, 100, 300)
    assert calls == []
    np.testing.assert_array_equal(again[0][100:301], e_rho[100:301])
    np.testing.assert_array_equal(again[1][100:301], e_z[100:301])
    ps._field_table(tx, 1.83e6, 2.0, 600, 650)  # further out: two new blocks, worked and kept
    assert calls == [2 * ps.TABLE_BLOCK] and len(list(cache_dir.glob("txfield-*.npy"))) == 1
    ps._TABLES.clear()
    calls.clear()
    ps._field_table(tx, 1.83e6, 2.0, 100, 650)  # both ranges now from the disk... except the blocks between
    assert calls == [(600 // ps.TABLE_BLOCK - 300 // ps.TABLE_BLOCK - 1) * ps.TABLE_BLOCK]
    ps._TABLES.clear()
    calls.clear()
    ps._field_table(tx, 1.83e6, 3.0, 100, 300)  # another height is another table
    assert calls and len(list(cache_dir.glob("txfield-*.npy"))) == 2
