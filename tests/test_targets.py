"""Target directions: geodesic bearing and sky-wave hop geometry."""

import numpy as np
import pytest

from noisemodels import hops
from snrgain.physics import targets


def test_geodesic_quarter_equator():
    # WGS-84 equatorial circumference 40,075.017 km: (0,0) -> (0,90E) is a quarter of it, due east.
    bearing, dist = targets.geodesic(0.0, 0.0, 0.0, 90.0)
    assert np.degrees(bearing) == pytest.approx(90.0, abs=1e-9)
    assert dist / 1e3 == pytest.approx(40075.017 / 4, abs=0.01)


def test_geodesic_due_north():
    bearing, _ = targets.geodesic(10.0, 20.0, 50.0, 20.0)
    assert np.degrees(bearing) == pytest.approx(0.0, abs=1e-9)


@pytest.mark.parametrize("d_km, h_km", [(500, 250), (2000, 250), (3000, 300), (1000, 110)])
def test_hop_geometry_consistent_with_triangle(d_km, h_km):
    # Independent check: a ray leaving the ground at the computed elevation reaches radius R + h at
    # central angle theta = d / (2R) (law of sines in the triangle earth-centre, ground point, layer point).
    R = hops.EARTH_RADIUS_M
    h = h_km * 1e3
    el = float(hops.hop_elevation_rad(d_km * 1e3, 1, layer_height_m=h))
    theta = d_km * 1e3 / (2 * R)
    # Angle at the layer point: sin(beta) = R cos(el) / (R + h); triangle angles sum to pi.
    beta = np.arcsin(R * np.cos(el) / (R + h))
    assert (np.pi / 2 + el) + beta + theta == pytest.approx(np.pi, abs=1e-9)


def test_short_path_is_near_vertical_and_elevation_falls_with_distance():
    el = hops.hop_elevation_rad(np.array([10e3, 500e3, 2000e3]), 1, layer_height_m=250e3)
    assert np.degrees(el[0]) > 85
    assert np.all(np.diff(el) < 0)


def test_place_target_uses_fewest_hops_above_min_elevation():
    t = targets.from_place("far", site_lat_deg=40.0, site_lon_deg=-75.0, lat_deg=51.5, lon_deg=0.0)
    assert t.hops[0] >= 1 and t.hops[1] == t.hops[0] + 1
    assert np.degrees(t.elevation_rad.min()) >= 3.0 - 1e-9
    one_less = hops.hop_elevation_rad(t.distance_m, t.hops[0] - 1, layer_height_m=250e3) if t.hops[0] > 1 else None
    if one_less is not None:
        assert np.degrees(one_less) < 3.0
    assert t.weight.sum() == pytest.approx(1.0)


def test_bearing_target_samples_range():
    t = targets.from_bearing(
        "x", bearing_rad=np.radians(45), elevation_lo_rad=np.radians(5), elevation_hi_rad=np.radians(25)
    )
    assert np.degrees(t.elevation_rad[[0, -1]]) == pytest.approx([5, 25])
    assert np.all(np.diff(np.degrees(t.elevation_rad)) <= 1.0 + 1e-9)


def test_a_target_at_the_antipode_has_no_bearing():
    # Every great circle through the site meets at its antipode: a target there was given "bearing 0.0 deg"
    # without a word.  One 500 km short of it keeps its great-circle bearing.
    with pytest.raises(ValueError, match="about at the site's antipode"):
        targets.from_place("far", site_lat_deg=44.2, site_lon_deg=-71.3, lat_deg=-44.2, lon_deg=108.7)
    near = targets.from_place("near", site_lat_deg=44.2, site_lon_deg=-71.3, lat_deg=-40.0, lon_deg=108.7)
    assert near.distance_m < targets.NEAR_ANTIPODE_M
