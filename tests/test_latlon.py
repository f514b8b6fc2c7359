"""Places by latitude and longitude (WGS-84): a lot, keep-outs and antenna positions given as { latlon = ... } land on
the same plan as the metre plan they describe (to 0.1 m), give the same warnings and the same layout; bare numbers
that look like a latitude and longitude in a metre plan are warned about."""

from __future__ import annotations

import copy
import tomllib
from pathlib import Path

import numpy as np
import pytest

from snrgain.decide.lot import site_notices
from snrgain.errors import ScenarioError
from snrgain.outputs.messages import notice_text
from snrgain.scenario import load
from snrgain.scenario.site import latlon_pair, plan_point_of

DATA = Path(__file__).parent / "data"
WGS84_A = 6378137.0
WGS84_F = 1 / 298.257223563


def _latlon_of(e: float, n: float, lat0: float, lon0: float) -> list[float]:
    """The WGS-84 point e metres east and n metres north of (lat0, lon0), along the geodesic (pyproj's forward
    problem): how a builder's GPS would read the corner of a metre plan."""
    from pyproj import Geod

    lon, lat, _ = Geod(ellps="WGS84").fwd(lon0, lat0, np.degrees(np.arctan2(e, n)), float(np.hypot(e, n)))
    return [float(lat), float(lon)]


def test_plan_points_agree_with_the_local_radii_of_curvature():
    # Over a few hundred metres a point's east and north offsets are N cos(lat) dlon and M dlat, with M and N the
    # meridional and prime-vertical radii of curvature of the WGS-84 ellipsoid (e.g. Snyder, Map Projections: A
    # Working Manual, USGS PP 1395, 1987, eq. 4-18 and 4-20); to a few mm at 300 m (the curvature terms).
    lat0, lon0 = 44.2, -71.3
    e2 = WGS84_F * (2 - WGS84_F)
    s2 = np.sin(np.radians(lat0)) ** 2
    m = WGS84_A * (1 - e2) / (1 - e2 * s2) ** 1.5
    n_ = WGS84_A / np.sqrt(1 - e2 * s2)
    for dlat, dlon in [(0.002, 0.0), (0.0, 0.003), (-0.0015, 0.0025), (0.001, -0.002)]:
        e, n = plan_point_of(lat0 + dlat, lon0 + dlon, lat0, lon0)
        assert e == pytest.approx(n_ * np.cos(np.radians(lat0 + dlat / 2)) * np.radians(dlon), abs=0.01)
        assert n == pytest.approx(m * np.radians(dlat), abs=0.01)


def test_latitude_and_longitude_forms():
    assert latlon_pair([51.2345, -0.5678]) == (51.2345, -0.5678)
    assert latlon_pair("51.2345 N, 0.5678 W") == (51.2345, -0.5678)
    assert latlon_pair("33.5 S 151.25 E") == (-33.5, 151.25)
    assert latlon_pair("51.2345, -0.5678") == (51.2345, -0.5678)
    for bad in ("51.2 X, 0.5 W", [51.2], [True, 0.5], "north", [91, 0], {"lat": 1}):
        with pytest.raises(ValueError, match="latitude"):
            latlon_pair(bad)


def _metre_plan() -> dict:
    data = tomllib.loads((DATA / "layout-two-beverages.toml").read_text())
    data["reference"]["position"] = [3.0, 4.0]
    return data


def _in_latlon(data: dict) -> dict:
    """The same scenario with the lot, the keep-out and the reference's position given by latitude and longitude."""
    out = copy.deepcopy(data)
    site = out["site"]
    lat0, lon0 = site["latitude"], site["longitude"]
    site["lot"] = {"latlon": [_latlon_of(e, n, lat0, lon0) for e, n in data["site"]["lot"]]}
    for k in site["keep_out"]:
        k["outline"] = {"latlon": [_latlon_of(e, n, lat0, lon0) for e, n in k["outline"]]}
    lat, lon = _latlon_of(*data["reference"]["position"], lat0, lon0)
    out["reference"]["position"] = {"latlon": f"{lat:.8f} N, {-lon:.8f} W"}
    return out


def test_a_lot_by_latitude_and_longitude_is_its_metre_plan():
    metres = _metre_plan()
    degrees = _in_latlon(metres)
    a, b = load(metres), load(degrees)
    np.testing.assert_allclose(np.array(b.site.lot_m), np.array(a.site.lot_m), atol=0.1)
    for (na, pa), (nb, pb) in zip(a.site.keep_out, b.site.keep_out):
        assert na == nb
        np.testing.assert_allclose(np.array(pb), np.array(pa), atol=0.1)
    np.testing.assert_allclose(b.reference.params.position, a.reference.params.position, atol=0.1)


def test_same_warnings_and_same_layout_from_latitude_and_longitude():
    from snrgain.tools.layout import Problem

    metres = _metre_plan()
    metres["compute"] = {"nside": 8}
    metres["candidate"][0]["position"] = ["-35 m", "270 m"]  # near a corner: runs off the lot, crosses the other
    metres["candidate"][1]["position"] = ["30 m", "0 m"]  # in the house, near the TX vertical
    degrees = _in_latlon(metres)
    a, b = load(metres), load(degrees)
    texts_a = [notice_text(n) for n in site_notices(a)]
    texts_b = [notice_text(n) for n in site_notices(b)]
    assert texts_a and texts_a == texts_b
    best_a = Problem(a, metres).search(keep=1)[0]
    best_b = Problem(b, degrees).search(keep=1)[0]
    for da, db in zip(best_a.designs, best_b.designs):
        assert da.name == db.name
        assert np.hypot(da.east_m - db.east_m, da.north_m - db.north_m) < 0.1
        assert db.length_m == pytest.approx(da.length_m, abs=0.1)
        assert db.bearing_rad == pytest.approx(da.bearing_rad, abs=1e-3)
    assert best_b.snr_gain_db == pytest.approx(best_a.snr_gain_db, abs=0.01)


def test_bad_places_name_the_field():
    data = _metre_plan()
    data["site"]["lot"] = {"latlon": [[44.2, -71.3], [44.2, -71.297], "nowhere", [44.202, -71.3]]}
    with pytest.raises(ScenarioError) as err:
        load(data)
    assert any(p == "site.lot.latlon 3" and "nowhere" in m for p, m in err.value.problems)
    data = _metre_plan()
    data["reference"]["position"] = {"latlon": [45.2, -71.3]}  # 111 km away
    with pytest.raises(ScenarioError) as err:
        load(data)
    assert any(p == "reference.position.latlon" and "km from the site" in m for p, m in err.value.problems)


def test_bare_gps_numbers_in_a_metre_plan_are_warned():
    data = _metre_plan()
    lat0, lon0 = data["site"]["latitude"], data["site"]["longitude"]
    fine = load(data)
    assert not [n for n in site_notices(fine) if n.code == "looks-like-latlon"]
    # a builder pastes GPS corners as if they were metres: a lot a fraction of a metre across, at (lat, lon)
    data["site"]["lot"] = [
        [lat0 + 0.0001, lon0 - 0.0001],
        [lat0 + 0.0021, lon0 - 0.0001],
        [lat0 + 0.0021, lon0 + 0.003],
        [lat0 + 0.0001, lon0 + 0.003],
    ]
    data["candidate"][0]["position"] = [lon0 + 0.001, lat0 + 0.001]  # the other way round
    sc = load(data)
    found = [n for n in site_notices(sc) if n.code == "looks-like-latlon"]
    assert {n.values["where"] for n in found} == {"the lot", "Beverage Europe's position"}
    assert "latlon" in notice_text(found[0]) and "latitude and longitude" in notice_text(found[0])
    # one GPS corner pasted into a lot otherwise tens of metres is found too; a whole-metre corner there is not
    data = _metre_plan()
    data["site"]["lot"] = [[-100, -100], [210, -100], [210, 280], [-100, 280], [lat0 + 0.00012, lon0 - 0.00034]]
    (n,) = [n for n in site_notices(load(data)) if n.code == "looks-like-latlon"]
    assert n.values["where"] == "the lot" and n.values["point"] == pytest.approx((lat0 + 0.00012, lon0 - 0.00034))
    data["site"]["lot"] = [[-100, -100], [210, -100], [210, 280], [-100, 280], [44, -71]]
    assert not [n for n in site_notices(load(data)) if n.code == "looks-like-latlon"]
