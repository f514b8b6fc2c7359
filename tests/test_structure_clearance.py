"""A structure's clearance ([site] structures ``clearance``): every antenna keeps it from the structure's foot.

A placed Beverage ran 3.6 m past a 20 m tower's foot and ``check`` said "geometry: no warnings": the TX vertical's
clearance was a rule, a tower's guys and anchors were none.  Now ``check`` and ``rank`` warn (``near-structure``),
``layout`` places no antenna there, and a clearance the user gives is a hard rule of the station plan.
"""

import copy

import numpy as np
import pytest
from click.testing import CliRunner
from shapely.geometry import Point

from snrgain.cli.main import cli
from snrgain.decide.lot import site_notices, structure_clearance_m, unfit
from snrgain.errors import ScenarioError
from snrgain.outputs.messages import notice_text, unfit_text
from snrgain.scenario import load, read_source
from tests.conftest import REPO

TOWER = '{ name = "tower", position = [40, 72], height = "20 m", top_loading = "3 m"EXTRA }'

SITE = """
[site]
name = "sloping yard"
latitude = 41.18
longitude = -77.46
lot = [[0, 0], [100, 0], [100, 81], [0, 81]]
keep_out = [{ name = "house", outline = [[55, 60], [75, 60], [75, 78], [55, 78]] }]
structures = [TOWER]

[band]
frequency = "1.83 MHz"
bandwidth = "500 Hz"

[time]
months = [1]
utc_hours = [8]

[uncertainty]
ground = false
noise_deciles = false

[[target]]
name = "Japan"
bearing = 332
elevation = [4, 8]

[reference]
name = "TX vertical"
family = "vertical"
height = "15 m"
position = [50, 15]

[[candidate]]
name = "Beverage Japan"
family = "beverage"
length = "86.0 m"
height = "2.5 m"
bearing = "335.6 deg"
position = ["68.2 m", "1.2 m"]
far_ground = "rod"
"""


def _text(extra: str = "", tower_at: str = "[40, 72]") -> str:
    """The review's hand-placed layout: the Beverage layout wrote, 3.6 m past the tower's foot."""
    return SITE.replace("TOWER", TOWER.replace("EXTRA", extra).replace("[40, 72]", tower_at))


def _check(tmp_path, text: str):
    path = tmp_path / "placed.toml"
    path.write_text(text, encoding="utf-8")
    return CliRunner().invoke(cli, ["check", str(path)])


def test_check_warns_of_an_antenna_within_a_towers_height_of_its_foot(tmp_path):
    res = _check(tmp_path, _text())
    assert res.exit_code == 0, res.output
    assert "geometry: no warnings" not in res.output
    said = [line for line in res.output.splitlines() if "structure 'tower'" in line]
    assert len(said) == 1
    head = "Beverage Japan: comes within 3.6 m of the structure 'tower' (keep 20 m, its height, at least 10 m"
    assert head in said[0]
    for caution in ("guy wire", "anchor", "climber", "local codes"):  # the trade's caution, where it is said
        assert caution in said[0]
    (n,) = [n for n in site_notices(load(_text())) if n.code == "near-structure"]
    assert n.antenna == "Beverage Japan" and n.values["structure"] == "tower" and not n.values["given"]
    assert n.values["distance_m"] == pytest.approx(3.6, abs=0.05) and n.values["clearance_m"] == 20.0


def test_a_structure_clear_of_every_antenna_gives_no_warning(tmp_path):
    far = _text(tower_at="[90, 50]")  # 40 m from the wire, 53 m from the vertical
    assert _check(tmp_path, far).output.count("geometry: no warnings (lot, keep-outs, crossings, clearance from") == 1
    assert not [n for n in site_notices(load(far)) if n.code == "near-structure"]
    # a self-supporting mast without guys: the user's clearance, smaller than the wire's 3.6 m, holds
    mast = _text(extra=', clearance = "3 m"')
    assert "geometry: no warnings" in _check(tmp_path, mast).output


def test_the_default_comes_from_the_height_at_least_10_m_and_a_given_one_is_a_hard_rule():
    low = load(_text().replace('height = "20 m"', 'height = "6 m"', 1))
    assert structure_clearance_m(low.site.structures[0]) == 10.0  # 6 m high: the 10 m the scatter is checked from
    assert unfit(load(_text())) == {}  # the default warns; it does not take the antenna out of the plan
    sc = load(_text(extra=', clearance = "5 m"'))
    why = unfit(sc)["Beverage Japan"]
    assert why["code"] == "near-structure" and why["values"]["clearance_m"] == 5.0
    assert unfit_text(why) == "it comes within 4 m of the structure 'tower' (keep 5 m, your clearance for it)"
    (n,) = [n for n in site_notices(sc) if n.code == "near-structure"]
    assert "(keep 5 m, your clearance for it)" in notice_text(n)
    # said in the scenario's unit
    assert "(keep 16 ft, your clearance for it)" in notice_text(n, unit="ft")


def test_a_loop_and_an_arrays_elements_keep_it_too_and_a_sweep_row_carries_it():
    from snrgain.tools.sweep import placement_warnings

    more = (
        '\n[[candidate]]\nname = "flag"\nfamily = "terminated-loop"\nwidth = "8 m"\nloop_height = "4 m"\n'
        "bearing = 330\nposition = [15, 45]\n"
        '\n[[candidate]]\nname = "pair"\nfamily = "phased-verticals"\npositions = [[5, 20], [5, 70]]\n'
        'height = "6 m"\nbearing = 0\n'
    )
    sc = load(_text(tower_at="[15, 30]") + more)
    near = {n.antenna: n.values for n in site_notices(sc) if n.code == "near-structure"}
    assert set(near) == {"flag", "pair"}  # the Beverage runs 37 m from (15, 30): clear
    assert near["flag"]["distance_m"] == pytest.approx(15.0)
    assert near["pair"]["distance_m"] == pytest.approx(np.hypot(10, 10))  # its southern element
    assert placement_warnings(sc, {"flag"}) == {"flag": "near-structure"}


@pytest.mark.parametrize(
    "value, said",
    [
        ('"-2 m"', 'site.structures 1 ("tower").clearance: must be between 0 m and 2000 m; got "-2 m"'),
        ('"2 km 3"', 'site.structures 1 ("tower").clearance: cannot read "2 km 3" as length: write a number and one'),
        ('"3 ohm"', "clearance: 'ohm' is a unit of resistance, not of length; use one of m,"),
        ("true", "site.structures 1 (\"tower\").clearance: expected length such as '40 m' or '130 ft', got true"),
    ],
)
def test_a_bad_clearance_is_an_input_error_naming_the_key_and_what_it_takes(value, said, tmp_path):
    res = _check(tmp_path, _text(extra=f", clearance = {value}"))
    assert res.exit_code == 2 and "Traceback" not in res.output
    assert said in res.output
    with pytest.raises(ScenarioError) as err:
        load(_text(extra=f", clearance = {value}"))
    ((path, message),) = err.value.problems
    assert path == 'site.structures 1 ("tower").clearance' and said in f"{path}: {message}"


# -- layout ---------------------------------------------------------------------------------------------------------


PLACE = 'place = { bearing = ["300 deg", "360 deg"], length = ["80 m", "250 m"] }\n'


def test_layout_keeps_the_reviews_wire_out_of_the_towers_clearance(tmp_path):
    """The review's Beverage with its place table: the design layout wrote (3.6 m past the tower's foot; 2 m on this
    lot) breaks the tower's rule, one by one and on the grid at once; layout now places the wire 20 m or more from
    the foot, and check of the file it writes has nothing to say."""
    from snrgain.tools.layout import Design, Problem

    path, out = tmp_path / "s2.toml", tmp_path / "s2_placed.toml"
    path.write_text(_text() + PLACE, encoding="utf-8")
    data, _, base = read_source(path)
    pb = Problem(load(data), data, base_dir=base)
    rule = "20 m from the structure 'tower'"
    wrote = Design("Beverage Japan", 68.2, 1.2, np.radians(335.6), 86.0)
    assert pb.violations(wrote)[rule] == pytest.approx(20.0 - 3.6, abs=0.05)
    assert pb.violations_many([wrote]) == [pb.violations(wrote)]
    res = CliRunner().invoke(cli, ["layout", str(path), "--write", str(out)])
    assert res.exit_code == 0, res.output
    placed = load(read_source(out)[0])
    (bev,) = [a for a in placed.candidates if a.name == "Beverage Japan"]
    from snrgain.decide.lot import footprint

    assert footprint(bev).distance(Point(40, 72)) >= 20.0 - 0.1  # the written place is rounded to 0.1 m
    assert "geometry: no warnings" in CliRunner().invoke(cli, ["check", str(out)]).output


def test_layout_says_the_towers_clearance_binds_where_no_place_keeps_it(tmp_path):
    """With the review's four-square and septic field too, no place on the lot holds an 80-250 m wire toward Japan
    clear of the tower: layout says so, naming the rule and the key that sets it, and writes nothing."""
    text = _text().replace(
        'keep_out = [{ name = "house", outline = [[55, 60], [75, 60], [75, 78], [55, 78]] }]',
        'keep_out = [\n  { name = "house", outline = [[55, 60], [75, 60], [75, 78], [55, 78]] },\n'
        '  { name = "septic field", outline = [[75, 5], [98, 5], [98, 25], [75, 25]] },\n]',
    )
    text += PLACE + (
        '\n[[candidate]]\nname = "four-square"\nfamily = "phased-verticals"\n'
        'positions = [[6, 40], [24, 40], [6, 58], [24, 58]]\nheight = "7 m"\nbearing = 45\n'
    )
    assert "septic field" in text
    path, out = tmp_path / "s2.toml", tmp_path / "s2_placed.toml"
    path.write_text(text, encoding="utf-8")
    res = CliRunner().invoke(cli, ["layout", str(path), "--write", str(out)])
    assert res.exit_code == 2 and "Traceback" not in res.output
    assert "20 m from the structure 'tower' (" in res.stderr
    assert "its clearance in [site] structures (default its height)" in res.stderr
    assert not out.exists()


def test_layout_places_a_wire_clear_of_a_tower_on_its_best_path():
    """A 15 m tower where the best Beverage toward Europe of layout-two-beverages.toml runs (the search put the wire
    0.6 m from its foot): every layout found keeps 15 m from it, each rule worked one by one as on the grid."""
    from snrgain.tools.layout import Problem

    data, _, base = read_source(REPO / "tests" / "data" / "layout-two-beverages.toml")
    data = copy.deepcopy(data)
    data["site"]["structures"] = [{"name": "tower", "position": [100, 185], "height": "15 m"}]
    pb = Problem(load(data), data, base_dir=base)
    foot = Point(100, 185)
    assert [(r, c) for r, _, c in pb.structure_rules] == [("15 m from the structure 'tower'", 15.0)]
    layouts = pb.search(keep=2)
    for lay in layouts:
        for d in lay.designs:
            assert pb.footprint(d).distance(foot) >= 15.0 - 1e-9, d
    pairs, points = pb.grid_designs(0)
    from snrgain.tools.layout import Design

    designs = [Design(pb.names[0], e, n, b, ln) for b, ln in pairs[::4] for e, n in points]
    one = [pb.violations(d) for d in designs]
    assert pb.violations_many(designs) == one
    assert any("15 m from the structure 'tower'" in v for v in one)


def test_layout_keeps_10_m_from_a_structure_whose_given_clearance_is_less():
    from snrgain.tools.layout import WIRE_SEPARATION_M, Problem

    data, _, base = read_source(REPO / "tests" / "data" / "layout-two-beverages.toml")
    data = copy.deepcopy(data)
    data["site"]["structures"] = [{"name": "mast", "position": [100, 185], "height": "12 m", "clearance": "2 m"}]
    pb = Problem(load(data), data, base_dir=base)
    assert [c for _, _, c in pb.structure_rules] == [WIRE_SEPARATION_M]
