"""snrgain layout moves a switched antenna as one: every state where it stands (a reversed wire's other state at the
far end of the same wire), scored as the plan counts it (each target in its best state)."""

from __future__ import annotations

import json

import numpy as np
import pytest
from click.testing import CliRunner
from shapely.geometry import Polygon

from snrgain.cli.main import cli
from snrgain.model import pipeline
from snrgain.scenario import load, read_source
from snrgain.scenario.switched import switched_state
from snrgain.tools.layout import Problem, with_layout
from tests.conftest import REPO

SITE = REPO / "tests" / "data" / "layout-switched.toml"


@pytest.fixture(scope="module")
def solved():
    data, _, base = read_source(SITE)
    pr = Problem(load(data), data, base_dir=base)
    return pr, pr.search(keep=2)


def test_states_move_together_and_keep_the_rules(solved):
    pr, layouts = solved
    assert pr.names == ["flag pair", "reversible BOG"]
    lot = Polygon(pr.sc.site.lot_m)
    for lay in layouts:
        flag, bog = lay.designs
        assert flag.states == ("flag pair west (295 deg)", "flag pair east (115 deg)")
        west, east = pr.states_at(0, flag)
        assert west.params.position == (flag.east_m, flag.north_m)
        side = np.radians(115.0)  # one loop: the east state fed at the west state's resistor side, 6 m on
        assert east.params.position == pytest.approx((flag.east_m + 6 * np.sin(side), flag.north_m + 6 * np.cos(side)))
        fwd, rev = pr.states_at(1, bog)
        assert fwd.params.position == (bog.east_m, bog.north_m)
        b = np.radians(295.0)
        far = (bog.east_m + 50 * np.sin(b), bog.north_m + 50 * np.cos(b))
        assert rev.params.position == pytest.approx(far)
        assert lot.covers(pr.footprint(bog)) and pr.violation_m(bog, [flag]) == 0.0
        assert lay.targets == ("North America, Asia", "North America, Asia")


def test_worth_is_each_target_in_its_best_state_as_the_written_file_ranks_it(solved):
    pr, layouts = solved
    best = layouts[0]
    placed = with_layout(SITE.read_text(), best)
    sc, _, _, per = pipeline.nominal(load(placed))
    by = {a.name: a for a in per}
    targets = [t.name for t in sc.targets]
    for d, worth in zip(best.designs, best.snr_gain_db):
        # the layouts shown hear the TX vertical as the ranking does (each state beside it)
        rows = [by[name].snr_gain_nominal_db for name in d.states]
        each = np.max(rows, axis=0)  # each target in its best state
        assert len(each) == len(targets) == 2
        expected = 10 * np.log10(np.mean(10 ** (each / 10)))
        # the written file rounds the feed point to 0.1 m
        assert worth == pytest.approx(expected, abs=0.05), d.name


def test_layout_command_writes_the_switched_antennas_position(tmp_path):
    out = tmp_path / "placed.toml"
    runner = CliRunner()
    res = runner.invoke(cli, ["layout", str(SITE), "--write", str(out), "--format", "json"])
    assert res.exit_code == 0, res.output
    best = json.loads(res.stdout)["layouts"][0]
    data, _, _ = read_source(out)
    by = {c["name"]: c for c in data["candidate"]}
    for c in best["candidates"]:
        assert c["states"] and "place" not in by[c["name"]] and "bearing" not in by[c["name"]]
        assert by[c["name"]]["position"] == [f"{c['position_m'][0]:.1f} m", f"{c['position_m'][1]:.1f} m"]
        assert len(by[c["name"]]["directions"]) == 2
    sc = load(data)
    assert {switched_state(a).group for a in sc.candidates} == {"flag pair", "reversible BOG"}
    rank = runner.invoke(cli, ["rank", str(out)])
    assert rank.exit_code == 0 and "runs off the lot" not in rank.stderr
    text = runner.invoke(cli, ["layout", str(SITE)])
    assert text.exit_code == 0 and "switched" in text.stdout


@pytest.mark.parametrize("place", ['{ bearing = ["280 deg", "310 deg"] }', '{ length = ["40 m", "60 m"] }'])
def test_a_switched_place_takes_no_bearing_or_length_range(place, tmp_path):
    p = tmp_path / "s.toml"
    p.write_text(
        SITE.read_text().replace(
            'directions = ["295 deg", "115 deg"]\nplace = {}', f'directions = ["295 deg", "115 deg"]\nplace = {place}'
        )
    )
    res = CliRunner().invoke(cli, ["layout", str(p)])
    assert res.exit_code == 2 and "takes no bearing or length range" in res.stderr


def test_reused_products_count_a_level_measured_elsewhere_once():
    # products(known=...) reuses the reference's temperatures and takes each placed source's share anew; the
    # reference's own share is not 1 when the source's level was measured elsewhere (measured_at), and it used to be
    # applied twice: a vertical 11 m from a fence charger scored -13.2 dB in layout and -34.5 dB in rank.
    from snrgain.tools.layout import Design

    data, _, base = read_source(REPO / "tests" / "data" / "layout-vertical-and-bog.toml")
    pr = Problem(load(data), data, base_dir=base)
    for e, n in [(80.0, 40.0), (100.0, 25.0), (5.0, 80.0)]:
        ant = pr.base[0].at((e, n))
        fast = pr.snr_gain_db(Design("short vertical", e, n, None, None), 0) + pr.tx_costs_db([ant])[0]
        sub = pipeline.with_candidates(pr.sc, [ant], 1 + pr.index[0])
        p = pipeline.products(sub, sub.antennas, pr.grid, pr.skies)
        full = pipeline.target_statistic(sub, pipeline.snr_gains(sub, p))[1, pr.target[0][0]]
        assert fast == pytest.approx(full, abs=1e-9)
