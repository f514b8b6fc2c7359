"""Vincenty's inverse geodesic (snrgain.physics.geodesy) against Karney's algorithm in pyproj.Geod (an independent
implementation, exact to nanometres), and the target bearing that uses it."""

import numpy as np
import pytest
from pyproj import Geod

from snrgain.physics.geodesy import inverse
from snrgain.physics.targets import geodesic

GEOD = Geod(ellps="WGS84")


def test_matches_karney_on_random_pairs():
    rng = np.random.default_rng(7)
    lat = rng.uniform(-89.9, 89.9, (3000, 2))
    lon = rng.uniform(-180.0, 180.0, (3000, 2))
    worst_az = worst_m = 0.0
    for (la1, la2), (lo1, lo2) in zip(lat, lon):
        found = inverse(la1, lo1, la2, lo2)
        az, _, dist = GEOD.inv(lo1, la1, lo2, la2)
        assert found is not None
        worst_az = max(worst_az, abs((found[0] - az + 180.0) % 360.0 - 180.0))
        worst_m = max(worst_m, abs(found[1] - dist))
    assert worst_az < 1e-7 and worst_m < 1e-3


def test_nearly_antipodal_points_fall_back_to_pyproj():
    # Vincenty's iteration does not converge here (his paper's known limit); the target bearing still comes out.
    assert inverse(0.0, 0.0, 0.5, 179.7) is None
    bearing, dist = geodesic(0.0, 0.0, 0.5, 179.7)
    az, _, d = GEOD.inv(0.0, 0.0, 179.7, 0.5)
    assert np.degrees(bearing) == pytest.approx(az % 360.0, abs=1e-9) and dist == pytest.approx(d, abs=1e-6)


def test_same_point_and_a_known_case():
    assert inverse(10.0, 20.0, 10.0, 20.0) == (0.0, 0.0)
    # Due east along the equator a quarter of the way round: bearing 90 deg, a quarter of the equator's length.
    az, dist = inverse(0.0, 0.0, 0.0, 90.0)
    assert az == pytest.approx(90.0, abs=1e-12) and dist == pytest.approx(0.5 * np.pi * 6378137.0, abs=1e-4)
