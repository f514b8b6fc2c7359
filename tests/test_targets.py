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


# A target by place near the site: within the ground-wave range it is heard along the ground and refused (a
# target 1.1 km away came out as a sky wave from 89.9 deg, "1-2 hops", and a Beverage beat the vertical by 51.5 dB
# there); farther, a one-hop arrival at 60 deg or higher is near-vertical incidence, taken as that one hop alone.


def _ground(name):
    from snrgain.physics.ground import GROUND_TYPES

    return GROUND_TYPES[name]


@pytest.mark.parametrize(
    "freq_hz, ground, km",
    [(1.83e6, "moist loam", 28), (3.6e6, "moist loam", 14), (7.1e6, "moist loam", 8), (1.83e6, "sandy soil", 13)],
)
def test_ground_wave_range_where_the_ground_wave_meets_the_sky_wave_overhead(freq_hz, ground, km):
    from noisemodels.groundwave import dipole_field

    g = _ground(ground)
    near = targets.ground_wave(freq_hz, g)
    assert near.range_m / 1e3 == pytest.approx(km, abs=0.5)
    # At the range, the ground wave (Norton, over the ground) equals the lossless sky wave spread over the slant
    # path to a layer 250 km up and back (law of cosines in the triangle earth centre, ground point, layer point).
    R, top = hops.EARTH_RADIUS_M, hops.EARTH_RADIUS_M + 250e3
    slant = 2 * np.sqrt(R**2 + top**2 - 2 * R * top * np.cos(near.range_m / (2 * R)))
    along = abs(
        dipole_field(near.range_m, freq_hz, permittivity=g.permittivity, conductivity_s_per_m=g.conductivity_s_per_m)
    )
    assert along * slant == pytest.approx(1.0, rel=1e-6)
    assert f"{km} km at {freq_hz / 1e6:g} MHz over {ground}" in near.words()


def test_ground_wave_range_over_perfect_ground_reaches_the_flat_earths_reach():
    near = targets.ground_wave(1.83e6, None)
    assert near.range_m == targets.GROUND_WAVE_REACH_M
    assert near.words() == "at least 30 km at 1.83 MHz over perfect ground"
    assert targets.ground_wave(1.83e6, _ground("sea water")).range_m == targets.GROUND_WAVE_REACH_M


def test_a_place_within_the_ground_wave_range_is_refused_with_its_bearing():
    near = targets.ground_wave(1.83e6, _ground("moist loam"))
    with pytest.raises(ValueError) as info:
        targets.from_place(
            "next door", site_lat_deg=45.0, site_lon_deg=-75.0, lat_deg=45.0099, lon_deg=-75.0, near=near
        )
    text = str(info.value)
    assert "lies 1.1 km from the site, within the ground-wave range, 28 km at 1.83 MHz over moist loam" in text
    assert "bearing = 0, elevation = [1, 3]" in text
    with pytest.raises(ValueError, match="lies 22.2 km"):  # 0.2 deg north: inside 28 km
        targets.from_place("town", site_lat_deg=45.0, site_lon_deg=-75.0, lat_deg=45.2, lon_deg=-75.0, near=near)
    # on 80 m the ground wave's range is 14 km: the same town is a sky-wave target there
    t = targets.from_place(
        "town",
        site_lat_deg=45.0,
        site_lon_deg=-75.0,
        lat_deg=45.2,
        lon_deg=-75.0,
        near=targets.ground_wave(3.6e6, _ground("moist loam")),
    )
    assert t.near_vertical


def test_a_near_vertical_place_takes_its_one_hop():
    near = targets.ground_wave(1.83e6, _ground("moist loam"))
    t = targets.from_place("NVIS", site_lat_deg=45.0, site_lon_deg=-75.0, lat_deg=45.45, lon_deg=-75.0, near=near)
    assert t.hops == (1,) and t.near_vertical
    assert t.distance_m / 1e3 == pytest.approx(50.0, abs=0.1)
    expected = float(np.degrees(hops.hop_elevation_rad(t.distance_m, 1, layer_height_m=250e3)))
    assert np.degrees(t.elevation_rad) == pytest.approx([expected]) and expected == pytest.approx(84.1, abs=0.1)
    # 289 km away one hop arrives at 58.8 deg, under 60: the fewest hops and one more, as far targets
    far = targets.from_place("far", site_lat_deg=45.0, site_lon_deg=-75.0, lat_deg=47.6, lon_deg=-75.0, near=near)
    assert far.hops == (1, 2) and not far.near_vertical
    assert np.degrees(far.elevation_rad[[0, -1]]) == pytest.approx([58.8, 73.3], abs=0.1)


PLACE_TARGET = """
[[target]]
name = "far south"
latitude = {latitude}
longitude = -75.0
"""


def _place_scenario(latitude):
    from tests.scenario_text import scenario_text

    one = '[[candidate]]\nname = "yardstick"\nfamily = "isotropic"\n'
    text = scenario_text(latitude=45.0, longitude=-75.0, ground='"moist loam"', candidates=one)
    return text + PLACE_TARGET.format(latitude=latitude)


def test_a_scenario_refuses_a_target_next_door_and_check_says_so(tmp_path):
    from click.testing import CliRunner

    from snrgain.cli.main import cli
    from snrgain.errors import ScenarioError
    from snrgain.scenario import load

    with pytest.raises(ScenarioError, match="within the ground-wave range, 28 km at 1.83 MHz over moist loam"):
        load(_place_scenario(45.0099))
    path = tmp_path / "near.toml"
    path.write_text(_place_scenario(45.0099))
    res = CliRunner().invoke(cli, ["check", str(path)])
    assert res.exit_code == 2 and "Traceback" not in res.output
    assert 'target 2 ("far south")' in res.output and "bearing = 0, elevation = [1, 3]" in res.output


def test_check_and_rank_say_a_near_vertical_target(tmp_path):
    from click.testing import CliRunner

    from snrgain.cli.main import cli
    from snrgain.decide.arrival import target_notices
    from snrgain.outputs.messages import notice_text
    from snrgain.scenario import load

    sc = load(_place_scenario(45.45))
    (n,) = target_notices(sc)
    assert n.code == "target-near-vertical" and n.values["target"] == "far south"
    assert n.values["distance_km"] == pytest.approx(50.0, abs=0.1)
    assert "at 84 deg elevation (near-vertical incidence, NVIS)" in notice_text(n)
    path = tmp_path / "nvis.toml"
    path.write_text(_place_scenario(45.45))
    res = CliRunner().invoke(cli, ["check", str(path)])
    assert res.exit_code == 0, res.output
    assert "elevation 84.1 deg, 50 km, 1 hop from nearly overhead, NVIS" in res.output
    assert "rank would warn: target 'far south', 50 km away, arrives by one hop from nearly overhead" in res.output
    assert target_notices(load(_place_scenario(47.6))) == []  # 289 km: 1-2 hops, no notice
