"""snrgain layout: placements on the lot (shapely checks), against random valid placements, and its command."""

import json
import tomllib

import numpy as np
import pytest
from click.testing import CliRunner
from shapely.geometry import Polygon

from snrgain.cli.main import cli
from snrgain.scenario import load, read_source
from snrgain.tools.layout import WIRE_SEPARATION_M, Problem
from tests.conftest import REPO

DATA = REPO / "tests" / "data"
FILES = ["layout-two-beverages.toml", "layout-vertical-and-bog.toml"]


def _problem(name):
    data, label, base = read_source(DATA / name)
    return Problem(load(data), data, base_dir=base)


@pytest.fixture(scope="module", params=FILES)
def solved(request):
    pr = _problem(request.param)
    return pr, pr.search(keep=3)


def test_every_layout_keeps_the_rules(solved):
    pr, layouts = solved
    sc = pr.sc
    lot = Polygon(sc.site.lot_m)
    keep = [Polygon(p) for _, p in sc.site.keep_out]
    for lay in layouts:
        shapes = [pr.footprint(d) for d in lay.designs]
        for d, shape in zip(lay.designs, shapes):
            assert lot.covers(shape), d
            assert not any(k.intersects(shape) for k in keep), d
            if pr.tx is not None and (pr.clearance_given or not pr.cost_computed[pr.names.index(d.name)]):
                # a given clearance, or an antenna whose coupling to the vertical is not computed (a score less its
                # computed cost otherwise: tests/test_tx_scatter.py)
                assert shape.distance(pr.tx) >= pr.clearance - 1e-6
        wires = [s for s in shapes if s.length > 0]
        for i, a in enumerate(wires):
            for b in wires[i + 1 :]:
                assert a.distance(b) >= WIRE_SEPARATION_M - 1e-6
        for d, pl in zip(lay.designs, pr.places):
            if pl.length is not None:
                assert pl.length[0] - 1e-6 <= d.length_m <= pl.length[1] + 1e-6


def test_the_best_layout_beats_random_valid_placements(solved):
    pr, layouts = solved
    rng = np.random.default_rng(7)
    randoms = [pr.random_valid(rng).worth_db for _ in range(25)]
    assert layouts[0].worth_db >= max(randoms)


def test_layout_is_reproducible():
    a = _problem(FILES[1]).search(keep=2)
    b = _problem(FILES[1]).search(keep=2)
    assert [lay.designs for lay in a] == [lay.designs for lay in b]


def test_layout_command_writes_a_scenario_and_a_plan(tmp_path):
    out, png = tmp_path / "placed.toml", tmp_path / "plan.png"
    runner = CliRunner()
    res = runner.invoke(
        cli, ["layout", str(DATA / FILES[0]), "--write", str(out), "--plot", str(png), "--format", "json"]
    )
    assert res.exit_code == 0, res.output
    best = json.loads(res.stdout)["layouts"][0]
    assert png.stat().st_size > 10_000
    data, _, _ = read_source(out)
    by = {c["name"]: c for c in data["candidate"]}
    for c in best["candidates"]:
        assert "place" not in by[c["name"]]
        assert by[c["name"]]["position"] == [f"{c['position_m'][0]:.1f} m", f"{c['position_m'][1]:.1f} m"]
    again = runner.invoke(cli, ["layout", str(DATA / FILES[0]), "--write", str(out)])
    assert again.exit_code == 2 and "--overwrite" in again.stderr
    rank = runner.invoke(cli, ["rank", str(out)])
    assert rank.exit_code == 0 and "runs off the lot" not in rank.stderr


def test_layout_does_not_write_its_copy_over_the_scenario_it_searches(tmp_path):
    # The copy drops the place ranges the search reads: written over the scenario (even with --overwrite) the search
    # could not be run again; refused before any work, the file kept byte for byte.
    src = tmp_path / "site.toml"
    src.write_bytes((DATA / FILES[0]).read_bytes())
    before = src.read_bytes()
    res = CliRunner().invoke(cli, ["layout", str(src), "--write", str(src), "--overwrite"])
    assert res.exit_code == 2 and "drops the place ranges" in res.stderr and "another name" in res.stderr
    assert src.read_bytes() == before and "Traceback" not in res.output


@pytest.mark.parametrize(
    "edit, message",
    [
        (('length = ["40 m", "80 m"]', 'length = ["200 m", "260 m"]'), "cannot fit a lot"),
        (("lot = [[0, 0], [120, 0], [120, 60], [60, 110], [0, 110]]", ""), "layout needs the lot"),
        (("place = {}", 'place = { length = ["1 m", "2 m"] }'), "has no length to vary"),
        (
            (
                "lot = [[0, 0], [120, 0], [120, 60], [60, 110], [0, 110]]",
                "lot = [[0, 0], [120, 110], [120, 0], [0, 110]]",
            ),
            "not a simple polygon",
        ),
    ],
)
def test_layout_bad_input(edit, message, tmp_path):
    text = (DATA / FILES[1]).read_text().replace(*edit)
    p = tmp_path / "s.toml"
    p.write_text(text)
    res = CliRunner().invoke(cli, ["layout", str(p)])
    assert res.exit_code == 2 and message in res.stderr and "Traceback" not in res.output


BLOCKED = """
[site]
name = "Narrow Strip"
latitude = 44.2
longitude = -71.3
ground = "moist loam"
lot = [[0, -12], [400, -12], [400, 12], [0, 12]]
tx_clearance = "5 m"

[band]
frequency = "1.83 MHz"

[time]
months = [1]
utc_hours = [4]

[[target]]
name = "East"
bearing = 90
elevation = [10, 25]

[reference]
name = "TX vertical"
family = "vertical"
height = "40 m"
position = [0, 0]

[[candidate]]
name = "old Beverage"
family = "beverage"
length = "300 m"
height = "2 m"
bearing = 90
position = ["50 m", "0 m"]

[[candidate]]
name = "new Beverage"
family = "beverage"
length = "200 m"
height = "2 m"
bearing = 90
place = { bearing = ["85 deg", "95 deg"], length = ["150 m", "200 m"] }
"""


def test_a_dead_end_is_found_from_geometry_and_names_the_wire_that_binds(monkeypatch):
    # A 24 m strip of lot with a fixed Beverage down its middle: no new wire can keep 10 m from it.  The search
    # says so before any SNR is worked out, and names that wire as the rule that binds.
    import tomllib

    data = tomllib.loads(BLOCKED)
    pr = Problem(load(data), data)
    monkeypatch.setattr(pr, "snr_gain_db", lambda *a: pytest.fail("scored a design before checking the geometry"))
    with pytest.raises(ValueError, match=r"rules out: 10 m from the wire 'old Beverage' \(\d+ %\); the lot"):
        pr.search()


def test_layout_plot_with_a_phased_array_on_the_lot(tmp_path):
    # Issue 28: `layout --plot` crashed on any scenario with a phased-vertical array (its footprint is several
    # points).  The plan now draws each element.
    from snrgain.tools.layout import plan_data

    text = (DATA / FILES[0]).read_text() + (
        '\n[[candidate]]\nname = "pair"\nfamily = "phased-verticals"\n'
        'positions = [["100 m", "100 m"], ["100 m", "120 m"]]\nheight = "6 m"\nbearing = 0\n'
    )
    import tomllib

    data = tomllib.loads(text)
    pr = Problem(load(data), data)
    layouts = pr.search(keep=1)
    drawn = {a["name"]: a for a in plan_data(pr, layouts[0])["antennas"]}
    assert [p["kind"] for p in drawn["pair"]["parts"]] == ["elements"]
    assert len(drawn["pair"]["parts"][0]["coords"]) == 2
    path = tmp_path / "t.toml"
    path.write_text(text, encoding="utf-8")
    res = CliRunner().invoke(cli, ["layout", str(path), "--plot", str(tmp_path / "plan.png")])
    assert res.exit_code == 0, res.output
    assert (tmp_path / "plan.png").stat().st_size > 10_000


@pytest.mark.parametrize("name", FILES)
def test_the_rules_worked_on_many_designs_at_once_match_one_by_one(name):
    # violations_many (shapely's array functions) against violations (one design at a time) on a candidate's whole
    # grid, with a fixed wire and a given TX clearance added so that every rule has designs that break it.
    import copy

    from snrgain.tools.layout import Design

    data, _, base = read_source(DATA / name)
    data = copy.deepcopy(data)
    data["candidate"].append(
        {
            "name": "fixed wire",
            "family": "beverage",
            "length": "150 m",
            "height": "2 m",
            "bearing": 100,
            "position": [0, 150],
        }
    )
    data["candidate"].append(  # an array that stays where written: every design keeps 10 m from its elements
        {
            "name": "fixed pair",
            "family": "phased-verticals",
            "positions": [[60, 40], [60, 55]],
            "height": "6 m",
            "bearing": 0,
        }
    )
    data["site"]["tx_clearance"] = "30 m"
    pb = Problem(load(data), data, base_dir=base)
    assert [name for name, _ in pb.fixed_spots] == ["fixed pair", data["reference"]["name"]]  # the TX vertical too
    for i in range(len(pb.names)):
        pairs, points = pb.grid_designs(i)
        designs = [Design(pb.names[i], e, n, b, ln) for b, ln in pairs[::3] for e, n in points]
        one = [pb.violations(d) for d in designs]
        assert pb.violations_many(designs) == one
        assert any(one) and not all(one)
        assert any("from the antenna 'fixed pair'" in rule for v in one for rule in v)
        # the flags alone (the grid's feasibility, the refinement's trials): broken exactly where a value is > 0
        assert list(pb.keep_rules(designs)) == [not v for v in one]
        flags = pb.violation_columns(designs, flags=True)
        full = pb.violation_columns(designs)
        assert [r for r, _ in flags] == [r for r, _ in full]
        assert all(np.array_equal(a > 0, b > 0) for (_, a), (_, b) in zip(flags, full))


def test_a_design_scored_through_its_unplaced_products_equals_a_fresh_evaluation():
    # The fence charger of layout-vertical-and-bog.toml is measured away from the reference (measured_at), so the
    # reference's own share of it is not 1: the temperatures reused from the unplaced design (products' known=)
    # must carry each antenna's share relative to the reference's, as a fresh evaluation does.
    from snrgain import pipeline
    from snrgain.tools.layout import Design

    pb = _problem(FILES[1])
    assert any(s.measured_at_m is not None for s in pb.placed)
    for i, pl in enumerate(pb.places):
        b = np.radians(290.0) if pl.bearing is not None else None
        ln = 70.0 if pl.length is not None else None
        d = Design(pb.names[i], 80.0, 70.0, b, ln)
        pb.design_products(i, b, ln)  # the unplaced design made first: the group path
        via_known = pb.snr_gains_db([d], i)
        ant = pb.antenna(i, b, ln).at((80.0, 70.0))
        sub = pipeline.with_candidates(pb.sc, [ant], 1 + pb.index[i])
        fresh = pipeline.products(sub, sub.antennas, pb.grid, pb.skies)
        expected = pipeline.target_statistic(sub, pipeline.snr_gains(sub, fresh))[1, pb.target[i]]
        # the search reads a placed source's field from tables held to 1e-4 (placed.TABLE_TOLERANCE)
        assert via_known[0] == pytest.approx(expected - pb.tx_costs_db([ant])[0], abs=1e-3)


@pytest.mark.parametrize("name", FILES)
def test_a_new_design_at_many_places_scored_at_once_equals_it_made_at_its_first_place(name):
    # A new design at many places (the grid, a refinement's stencil) takes its gains and sky temperatures from
    # unheard_products and hears the placed sources at every place in one batch, the first place too; the path of
    # design_products makes the design at its first place (its pickup worked there alone) and then the rest.  Both
    # give the same scores: the other places to round-off, the first to the pickup tables' tolerance.  One file's
    # source is measured away from the reference (its share not 1 there).
    from snrgain.tools.layout import Design

    fast, slow = _problem(name), _problem(name)
    for i, pl in enumerate(fast.places):
        b = _middle_of(pl.bearing) if pl.bearing is not None else None
        ln = float(np.mean(pl.length)) if pl.length is not None else None
        designs = [Design(fast.names[i], e, n, b, ln) for e, n in fast.lot_points()[::9]]
        got = fast.snr_gains_db(designs, i)
        slow.design_products(i, b, ln, at_m=(designs[0].east_m, designs[0].north_m))
        want = slow.snr_gains_db(designs, i)
        np.testing.assert_allclose(got[1:], want[1:], rtol=0, atol=1e-9)
        assert got[0] == pytest.approx(want[0], abs=1e-3)
        # and the design's next places read what the batch kept
        again = [Design(fast.names[i], d.east_m + 1.0, d.north_m, b, ln) for d in designs[:3]]
        np.testing.assert_allclose(fast.snr_gains_db(again, i), slow.snr_gains_db(again, i), rtol=0, atol=1e-9)


def _middle_of(rng):
    lo, hi = rng
    return float(np.mod(lo + 0.5 * np.mod(hi - lo, 2 * np.pi), 2 * np.pi))


def test_the_grid_scored_in_two_processes_equals_it_scored_in_one(monkeypatch):
    # grid_all shares the grid's groups with a forked process (two cores or more): every score the same as scored
    # one after the other here, to the bit, and the search's layouts the same.
    import snrgain.tools.layout as layout

    monkeypatch.setattr(layout, "spare_core", lambda: False)
    one = _problem(FILES[1])
    feasible = [one.feasible(i) for i in range(len(one.names))]
    assert len(feasible) > 1
    alone = one.grid_all(feasible)
    monkeypatch.setattr(layout, "spare_core", lambda: True)
    two = _problem(FILES[1])
    seen = []
    shared = two.grid_all(feasible, progress=lambda done, total: seen.append((done, total)))
    assert shared == alone
    assert seen[-1] == (sum(map(len, feasible)),) * 2
    # a group scored in the other process leaves no products here (the search makes its start again); each
    # candidate's first group is scored here, before the other process starts
    assert {k[0] for k in two._sky} == set(range(len(feasible)))
    assert len(two._sky) < len(one._sky)
    monkeypatch.setattr(layout, "spare_core", lambda: False)
    want = one.search(keep=2)
    monkeypatch.setattr(layout, "spare_core", lambda: True)
    got = _problem(FILES[1]).search(keep=2)
    assert [lay.designs for lay in got] == [lay.designs for lay in want]
    assert [lay.snr_gain_db for lay in got] == [lay.snr_gain_db for lay in want]


def test_a_placeable_antenna_with_a_feed_line_is_laid_out_and_ranked_as_laid(tmp_path):
    # a feed line on a placeable candidate: the layout scores the antenna with it, its run starting where each design
    # stands, and says what it costs there; the written layout ranks each antenna as layout reported it, the one with
    # the line too (tests/test_layout_feedline.py: a place the line ruins is not chosen)
    text = (DATA / FILES[0]).read_text(encoding="utf-8")
    marker = 'place = { bearing = ["30 deg", "60 deg"]'
    assert marker in text
    fed = 'position = [0, 100]\nfeed_line = { to = [30, 12], height = "buried" }\n'  # where it stood before
    text = text.replace(marker, fed + marker, 1)
    src, out = tmp_path / "fed.toml", tmp_path / "placed.toml"
    src.write_text(text, encoding="utf-8")
    runner = CliRunner()
    res = runner.invoke(cli, ["layout", str(src), "--write", str(out), "--format", "json"])
    assert res.exit_code == 0, res.output
    got = json.loads(res.stdout)
    assert got["notes"][0].startswith("layout 1: Beverage Europe: scored with its feed line, run from where it stands")
    assert not any("Pacific" in n and "feed line" in n for n in got["notes"])
    # the plan draws the line, from where the layout puts the antenna to the station entry
    from snrgain.tools.layout import plan_data

    data, _, base = read_source(src)
    problem = Problem(load(data, base_dir=base), data, base_dir=base)
    plan = plan_data(problem, problem.search(keep=1)[0])
    runs = dict(plan["feed_lines"])
    placed = {c["name"]: c["position_m"] for c in plan["layout"]["candidates"]}
    assert runs["Beverage Europe"] == [pytest.approx(tuple(placed["Beverage Europe"])), (30.0, 12.0)]
    best = {c["name"]: c for c in got["layouts"][0]["candidates"]}
    assert placed == {n: c["position_m"] for n, c in best.items()}
    rank = runner.invoke(cli, ["rank", str(out), "--format", "json"])
    assert rank.exit_code == 0, rank.output
    ranked = json.loads(rank.stdout)
    assert "feed_line" in ranked["build"]["Beverage Europe"]
    nominal = {(r["name"], t["name"]): r["snr_gain_db"]["nominal"] for t in ranked["targets"] for r in t["ranking"]}
    # (the written file rounds places to 0.1 m and bearings to 0.1 deg)
    for name, c in best.items():
        assert nominal[(name, c["target"])] == pytest.approx(c["snr_gain_db"], abs=0.01), name


def test_the_transmitting_vertical_stands_where_written_and_keeps_its_10_m():
    # without a given clearance a design may stand where the vertical's computed cost allows, but never within
    # WIRE_SEPARATION_M of the vertical itself: the model of that cost is checked against NEC-2 from 10 m, and a wire
    # on the ground over the vertical's radials is no place for a receiving antenna; the same rule as for any
    # antenna that stays where written, in violations() and its array form alike
    from snrgain.tools.layout import Design

    text = (DATA / FILES[1]).read_text(encoding="utf-8").replace('tx_clearance = "30 m"\n', "", 1)
    data = tomllib.loads(text)
    problem = Problem(load(data), data)
    rule = "10 m from the antenna '80 m vertical'"
    near = Design("BOG west", 31.0, 58.0, np.radians(100.0), 40.0)  # its feed 6.3 m from the vertical at (25, 60)
    assert problem.violations(near)[rule] == pytest.approx(10.0 - np.hypot(6.0, 2.0))
    assert problem.violations_many([near])[0] == problem.violations(near)
    assert rule not in problem.violations(Design("BOG west", 45.0, 60.0, np.radians(100.0), 40.0))
    for lay in problem.search(keep=3):
        for d in lay.designs:
            assert problem.footprint(d).distance(problem.tx) >= 10.0 - 1e-9


def test_a_placeable_antenna_with_a_feed_line_needs_a_start_and_is_told_why(tmp_path):
    text = (DATA / FILES[0]).read_text(encoding="utf-8")
    marker = 'place = { bearing = ["30 deg", "60 deg"]'
    src = tmp_path / "fed.toml"
    src.write_text(text.replace(marker, 'feed_line = { to = [5, 5], height = "1 m" }\n' + marker, 1), encoding="utf-8")
    res = CliRunner().invoke(cli, ["layout", str(src)])
    assert res.exit_code == 2
    assert '("Beverage Europe").position: a feed line runs from the antenna\'s feed point' in res.output
    assert "(with a place table too: where it stands until 'snrgain layout' places it)" in res.output


def test_a_placed_feed_line_through_the_users_clearance_is_said_as_rank_says_it(tmp_path):
    # the placed Beverage's feed line runs from where the layout puts it to a station entry 7 m from the transmitting
    # vertical, inside the 20 m clearance the file gives: layout says so for its best layout, and rank of the written
    # layout gives the same notice with the same distance
    text = (DATA / FILES[0]).read_text(encoding="utf-8")
    marker, lot = 'place = { bearing = ["30 deg", "60 deg"]', "lot = [[-40, -40], [210, -40], [210, 280], [-40, 280]]"
    assert marker in text and lot in text
    text = text.replace(marker, 'position = [0, 100]\nfeed_line = { to = [5, 5], height = "1 m" }\n' + marker, 1)
    src, out = tmp_path / "fed.toml", tmp_path / "placed.toml"
    src.write_text(text.replace(lot, lot + '\ntx_clearance = "20 m"', 1), encoding="utf-8")
    runner = CliRunner()
    res = runner.invoke(cli, ["layout", str(src), "--write", str(out), "--format", "json"])
    assert res.exit_code == 0, res.output
    said = [n for n in json.loads(res.stdout)["notes"] if "passes within" in n]
    assert len(said) == 1 and said[0].startswith("layout 1: Beverage Europe: its feed line passes within 7 m")
    rank = runner.invoke(cli, ["rank", str(out), "--format", "json"])
    assert rank.exit_code == 0, rank.output
    near = [w for w in json.loads(rank.stdout)["warnings"] if "passes within" in w]
    assert near == [said[0].removeprefix("layout 1: ")]  # the written place is rounded to 0.1 m: the same 7 m


def test_the_combinations_worths_at_once_equal_each_layouts():
    from snrgain.tools.layout import Design, Layout, _worths_db

    rng = np.random.default_rng(3)
    d = Design("a", 0.0, 0.0, None, None)
    for n in (1, 2, 3):
        per = [[(float(x), d) for x in rng.normal(10.0, 3.0, 7)] for _ in range(n)]
        combos = [tuple(int(k) for k in rng.integers(0, 7, n)) for _ in range(50)]
        want = [Layout((), tuple(per[i][j][0] for i, j in enumerate(ix)), ()).worth_db for ix in combos]
        assert list(_worths_db(per, combos)) == want  # to the bit: the ranking's order and ties as before


def test_a_lot_too_narrow_for_any_place_says_so():
    # a lot 0.5 m wide held no point of the search's grid: the arrays of places were empty and the rules' unpacking
    # failed ("not enough values to unpack"); it is an input problem named as such
    text = (DATA / FILES[0]).read_text(encoding="utf-8")
    lot = "lot = [[-40, -40], [210, -40], [210, 280], [-40, 280]]"
    assert lot in text
    data = tomllib.loads(text.replace(lot, "lot = [[-400, 0], [400, 0], [400, 0.5], [-400, 0.5]]", 1))
    problem = Problem(load(data), data)
    with pytest.raises(ValueError, match="no place of the search's grid lies on the lot"):
        problem.search(keep=1)


LOOP_SITE = """
[site]
name = "Plover Yard (invented)"
latitude = 42.4
longitude = -71.2
ground = "moist loam"
lot = [[-20, -10], [30, -10], [30, 70], [-20, 70]]

[band]
frequency = "3.55 MHz"
bandwidth = "2.4 kHz"

[time]
months = [1]
utc_hours = [2]

[noise.man_made]
environment = "residential"

[noise.atmospheric]
model = "none"

[[target]]
name = "Europe"
bearing = 45
elevation = [5, 25]

[[target]]
name = "Japan"
bearing = 335
elevation = [5, 15]

[reference]
name = "vertical"
family = "vertical"
height = "20 m"
position = [-10, 60]

[[candidate]]
name = "small loop"
family = "small-loop"
width = "1 m"
loop_height = "1 m"
height = "2 m"
bearing = 135
position = [20, 40]
place = {}
"""


def test_layout_scores_a_figure_eight_toward_the_target_nearest_either_lobe():
    # A small loop's plane along 135-315 deg hears 315 deg as well as 135 deg: Japan at 335 deg lies 20 deg off its
    # lobe, Europe at 45 deg broadside, in its null. The search scored it toward Europe (the target nearest 135 deg
    # alone) and the layout table named Europe; the ranking of the same loop serves Japan.
    import tomllib

    data = tomllib.loads(LOOP_SITE)
    pr = Problem(load(data), data, base_dir=REPO)
    assert [pr.sc.targets[t].name for t in pr.target[0]] == ["Japan"]


def test_a_layout_at_the_end_of_its_ranges_is_said():
    # A reviewer's 160 m lot: layout's best was a Beverage at the shortest length and the last bearing its place table
    # allowed, and nothing said the search had run into its own limits.  Now each end reached is named with the range
    # (and, with a placed source on the site, that a wire at its shortest may win by standing clear of it).
    from snrgain.tools.layout import Design, Layout, range_end_notes

    pr = _problem(FILES[0])  # Beverage Europe: bearing 30-60 deg, length 120-250 m; a placed source
    at_ends = Design("Beverage Europe", 0.0, 0.0, float(np.radians(60.0)), 120.0)
    inside = Design("Beverage Pacific", 100.0, 0.0, float(np.radians(300.0)), 200.0)
    (note,) = range_end_notes(pr, Layout((at_ends, inside), (5.0, 3.0), ("Europe", "Pacific")))
    assert note.startswith("Beverage Europe: its bearing, 60 deg, is the last of the bearings allowed (30-60 deg)")
    assert "its length, 120 m, is the shortest allowed (120 m to 250 m)" in note
    assert "standing clear of a placed source" in note
    long_end = Design("Beverage Europe", 0.0, 0.0, float(np.radians(45.0)), 250.0)
    (note,) = range_end_notes(pr, Layout((long_end, inside), (5.0, 3.0), ("Europe", "Pacific")))
    assert "is the longest allowed" in note and "placed source" not in note and "bearing" not in note
    assert range_end_notes(pr, Layout((inside, inside), (5.0, 3.0), ("Europe", "Pacific"))) == []
