"""Switched antennas: a candidate with ``directions`` is one antenna to build with one state per bearing.

Each state must rank exactly as the same antenna written once per bearing (the expansion adds no physics of its own,
so the tolerance 0.01 dB is the issue's, and the numbers agree to rounding); the station plan must count the build
once; the build sheet must list the states and their switching; bad tables are refused naming the field.
"""

from __future__ import annotations

import copy
import json

import numpy as np
import pytest

from snrgain.decide.build import gray_code, switching
from snrgain.decide.plan import station_plan
from snrgain.errors import ScenarioError
from snrgain.model import pipeline
from snrgain.scenario import load
from snrgain.scenario.switched import state_label, switched_state

BEARINGS = [45, 135, 225, 315]

BASE = {
    "site": {"name": "Test lot", "latitude": 44.0, "longitude": -97.8, "ground": "moist clay"},
    "band": {"frequency": "1.83 MHz", "bandwidth": "2.4 kHz"},
    "time": {"months": [12], "utc_hours": [2, 6]},
    "noise": {
        "man_made": {"environment": "quiet rural"},
        "atmospheric": {
            "model": "given",
            "fa": "60 dB",
            "upper_decile": "9 dB",
            "lower_decile": "7 dB",
            "sector": {"from": 180, "to": 270, "contrast": "10 dB"},
        },
    },
    "target": [
        {"name": "Europe", "bearing": 45, "elevation": [5, 25]},
        {"name": "South America", "bearing": 150, "elevation": [5, 25]},
    ],
    "compute": {"nside": 8},
    "uncertainty": {"ground": False, "noise_deciles": False, "local_sources": False, "hours": False},
    "reference": {"name": "tx vertical", "family": "vertical", "height": "40 m"},
}

FOUR_SQUARE = {
    "name": "four-square",
    "family": "phased-verticals",
    "positions": [[0, 0], ["20 m", 0], [0, "20 m"], ["20 m", "20 m"]],
    "height": "6 m",
    "ground_loss": "30 ohm",
}


def scenario(*candidates, **more) -> dict:
    out = copy.deepcopy(BASE)
    out["candidate"] = [copy.deepcopy(c) for c in candidates]
    out.update(more)
    return out


@pytest.fixture(scope="module")
def switched_and_written():
    """The four-square switched to four bearings, and the same array written four times with those bearings."""
    switched = pipeline.evaluate(scenario({**FOUR_SQUARE, "directions": [f"{b} deg" for b in BEARINGS]}))
    written = pipeline.evaluate(
        scenario(*({**FOUR_SQUARE, "name": f"four-square {b}", "bearing": f"{b} deg"} for b in BEARINGS))
    )
    return switched, written


def test_each_state_ranks_like_the_array_written_once_per_bearing(switched_and_written):
    switched, written = switched_and_written
    assert [c.name for c in switched.candidates] == [f"four-square {state_label(b)}" for b in BEARINGS]
    for b, state, alone in zip(BEARINGS, switched.candidates, written.candidates):
        assert state.group == "four-square" and state.state == state_label(b)
        for key in ("snr_gain_median_db", "snr_gain_nominal_db", "rdf_db", "front_to_back_db", "gain_dbi"):
            np.testing.assert_allclose(getattr(state, key), getattr(alone, key), atol=0.01, err_msg=f"{b} deg {key}")
        assert state.build["delays_ns"] == pytest.approx(alone.build["delays_ns"], abs=0.01)
    # The states differ: each favours its own bearing (the array is steered per state, not copied).
    europe = [c.snr_gain_median_db[0] for c in switched.candidates]
    assert int(np.argmax(europe)) == 0 and europe[0] - europe[2] > 10.0


def test_the_plan_builds_the_switched_antenna_once(switched_and_written):
    switched, written = switched_and_written
    p = switched.plan
    assert p.antennas == ["four-square"], "one antenna to build, named by its group"
    served = {switched.targets[t]["name"]: rows[0] for t, rows in p.by_target.items()}
    assert served["Europe"].antenna == "four-square NE (45 deg)"
    assert served["South America"].antenna == "four-square SE (135 deg)"
    assert {s.group for s in served.values()} == {"four-square"}
    assert p.states == {"four-square": ["four-square NE (45 deg)", "four-square SE (135 deg)"]}
    # Written four times at one place, the four are alternatives of which one can be built (the plan builds no two
    # antennas in one place): one direction served; switched, the one antenna serves both, worth more.
    assert len(written.plan.antennas) == 1 and written.plan.alternatives
    assert p.gain_db > written.plan.gain_db + 0.5
    # Limited to one antenna, the switched one still serves both targets (the written ones cannot).
    capped = station_plan(
        [switched.reference.name, *(c.name for c in switched.candidates)],
        np.array([a.snr_gain_median_db for a in switched.antennas]),
        np.array([t["weight"] for t in switched.targets]),
        max_antennas=1,
        groups=[None, *(c.group for c in switched.candidates)],
    )
    assert capped.antennas == ["four-square"] and not capped.not_best


def test_plan_text_json_and_labels_say_the_group(switched_and_written):
    from snrgain.outputs.output import build_lines, plan_text

    r, _ = switched_and_written
    text = plan_text(r).plain
    assert "1. four-square (one antenna, switched to NE (45 deg), SE (135 deg))" in text
    assert "South America: four-square SE (135 deg)" in text
    d = json.loads(json.dumps(r.to_dict()))
    assert [c["group"] for c in d["candidates"]] == ["four-square"] * 4
    assert d["plan"]["by_target"][0]["served_by"][0]["group"] == "four-square"
    assert d["plan"]["states"] == {"four-square": ["four-square NE (45 deg)", "four-square SE (135 deg)"]}
    sw = d["switched"]["four-square"]
    assert [s["state"] for s in sw["states"]] == [state_label(b) for b in BEARINGS]
    assert sw["relays"] == 2 and [s["relays_on"] for s in sw["states"]] == [[], [2], [1, 2], [1]]
    ds = r.to_xarray()
    assert list(ds["group"].values) == ["tx vertical", *["four-square"] * 4]
    assert list(ds["state"].values) == ["", *(state_label(b) for b in BEARINGS)]
    lines = dict(build_lines(r))
    assert lines["four-square"].startswith("one antenna switched between 4 states")
    assert "NE (45 deg) all off" in lines["four-square"] and "SE (135 deg) on 2" in lines["four-square"]
    assert "toward 135 deg" in lines["four-square SE (135 deg)"]


def test_a_switched_four_square_takes_three_lines(switched_and_written):
    """A 20 m square steered for RDF to its four diagonals: every state the same phasing turned by the square's
    symmetry, so one set of lines serves them all (no line, the two middle elements' lag and the back element's:
    three lengths); the states' lines chosen alike (array.shortest_lags), not four lengths as before."""
    r, _ = switched_and_written
    sw = switching(r.groups()["four-square"])
    assert len(sw["lines_ns"]) == 3 and sw["lines_ns"][0] < 0.5  # (a lag of 1e-5 ns: no line)
    for st in sw["states"]:
        assert sorted(st["element_lines"]) == [1, 1, 2, 3]  # two elements without a line, as the square's symmetry


def test_switching_lines_follow_the_states_delays(switched_and_written):
    """Every element of every state is given the phasing line of its own delay (to the line tolerance)."""
    r, _ = switched_and_written
    sw = switching(r.groups()["four-square"])
    for st, state in zip(sw["states"], r.candidates):
        got = [sw["lines_ns"][j - 1] for j in st["element_lines"]]
        assert got == pytest.approx(state.build["delays_ns"], abs=0.5)
    assert [gray_code(i, 3) for i in range(8)] == [
        [0, 0, 0],
        [0, 0, 1],
        [0, 1, 1],
        [0, 1, 0],
        [1, 1, 0],
        [1, 1, 1],
        [1, 0, 1],
        [1, 0, 0],
    ]  # the reflected binary code: one relay moves per step


def test_a_reversible_wire_is_one_wire_fed_from_either_end():
    bev = {
        "name": "reversible beverage",
        "family": "beverage",
        "length": "250 m",
        "height": "2.5 m",
        "position": ["30 m", "40 m"],
        "directions": ["45 deg", "225 deg"],
    }
    sc = load(scenario(bev))
    fwd, rev = sc.candidates
    assert switched_state(fwd).how == switched_state(rev).how == "ends"
    far = (30 + 250 * np.sin(np.radians(45)), 40 + 250 * np.cos(np.radians(45)))
    assert rev.params.position == pytest.approx(far) and np.degrees(rev.bearing_rad) == pytest.approx(225.0)
    # Reversed about its own middle, the wire's pattern turns by 180 deg.
    az = np.array([10.0, 45.0, 100.0])
    np.testing.assert_allclose(rev.gain_dbi(1.83e6, az + 180.0, 20.0), fwd.gain_dbi(1.83e6, az, 20.0), atol=1e-9)
    from snrgain.decide.lot import site_notices

    assert not [n for n in site_notices(sc) if n.code == "wires-cross"], "two states of one wire do not cross"
    data = scenario({k: v for k, v in bev.items() if k != "position"})
    data["reference"]["position"] = [10, -20]  # a wire without a position stands where the reference does
    fwd, rev = load(data).candidates
    assert fwd.params.position == (10.0, -20.0)
    assert rev.params.position == pytest.approx((10 + 250 * np.sin(np.radians(45)), -20 + 250 * np.cos(np.radians(45))))
    two = {**bev, "name": "two-wire", "family": "two-wire", "spacing": "30 cm", "directions": [160, 340]}
    a, b = load(scenario(two)).candidates
    assert (a.params.port, b.params.port) == ("forward", "reverse")
    assert a.params.bearing == pytest.approx(b.params.bearing) == pytest.approx(np.radians(160))


def problems_of(data) -> dict[str, str]:
    with pytest.raises(ScenarioError) as exc:
        load(data)
    return dict(exc.value.problems)


@pytest.mark.parametrize(
    "change, field, words",
    [
        ({"directions": ["45 deg"]}, 'candidate 1 ("four-square").directions', "2 to 8 directions"),
        ({"directions": list(range(0, 360, 40))}, 'candidate 1 ("four-square").directions', "got 9"),
        ({"directions": [45, "45.04 deg"]}, 'candidate 1 ("four-square").directions.2', "same bearing"),
        ({"directions": [45, "north"]}, 'candidate 1 ("four-square").directions.2', 'cannot read "north"'),
        ({"directions": "45 deg"}, 'candidate 1 ("four-square").directions', "a list of 2 to 8 bearings"),
        ({"directions": [45, 225], "bearing": 45}, 'candidate 1 ("four-square").directions', "one or the other"),
        ({"directions": [45, 225], "auto_for": "snr"}, 'candidate 1 ("four-square").directions', "auto_for = 'snr'"),
        (
            {"directions": [45, 225], "steering": "given", "delays": ["0 ns"] * 4},
            'candidate 1 ("four-square").directions',
            "steering = 'auto'",
        ),
        (
            {"directions": [45, 225], "place": {"bearing": [0, 90]}},
            'candidate 1 ("four-square").place',
            "takes no bearing or length range",
        ),
    ],
)
def test_bad_directions_are_named(change, field, words):
    probs = problems_of(scenario({**FOUR_SQUARE, **change}))
    keys = [k for k in probs if k.startswith(field)]
    assert keys, probs
    assert words in probs[keys[0]]


def test_directions_only_where_a_bearing_is_and_not_on_the_reference():
    vertical = {"name": "short vertical", "family": "vertical", "height": "7 m", "directions": [0, 180]}
    probs = problems_of(scenario(vertical))
    assert "no bearing of its own to switch" in probs['candidate 1 ("short vertical").directions']
    bev = {"name": "bev", "family": "beverage", "length": "250 m", "height": "2 m", "directions": [0, 90]}
    assert "180 deg apart" in problems_of(scenario(bev))['candidate 1 ("bev").directions']
    ref = {"name": "flag", "family": "terminated-loop", "width": "8 m", "loop_height": "4 m", "directions": [0, 180]}
    data = scenario({**FOUR_SQUARE, "directions": [45, 225]})
    data["reference"] = ref
    assert "the reference is one fixed antenna" in problems_of(data)["reference.directions"]
    nameless = {k: v for k, v in FOUR_SQUARE.items() if k != "name"}
    assert "needs a name" in problems_of(scenario({**nameless, "directions": [45, 225]}))["candidate 1.name"]
    twice = scenario({**FOUR_SQUARE, "directions": [45, 225]})
    twice["candidate"].append({"name": "four-square", "family": "vertical", "height": "7 m"})
    assert "used twice" in problems_of(twice)['candidate 2 ("four-square").name']


def test_a_state_is_not_a_reference():
    data = scenario({**FOUR_SQUARE, "directions": [45, 225]})
    with pytest.raises(ScenarioError) as exc:
        load(data, reference="four-square NE (45 deg)")
    assert "one state of the switched antenna 'four-square'" in dict(exc.value.problems)["--reference"]


def test_a_sweep_varies_every_state_of_a_switched_candidate(tmp_path):
    from snrgain.tools import sweep

    data = scenario(
        {**FOUR_SQUARE, "directions": [45, 225]}, {"name": "short vertical", "family": "vertical", "height": "7 m"}
    )
    study = sweep.Study(data, "test", None, [sweep.parse_vary("four-square: height = 5 m, 7 m")])
    rows = sweep.run_designs(study, list(enumerate(sweep.designs(study.varies))))
    names = sorted({r["antenna"] for r in rows})
    assert names == ["four-square NE (45 deg)", "four-square SW (225 deg)"]
    assert len(rows) == 2 * 2 * 2  # designs x states x targets
    col = study.varies[0].column
    by = {(r["design"], r["antenna"], r["target"]): r["snr_gain_db"] for r in rows}
    assert [r[col] for r in rows if r["design"] == 0][0] != [r[col] for r in rows if r["design"] == 1][0]
    assert abs(by[(0, "four-square NE (45 deg)", "Europe")] - by[(1, "four-square NE (45 deg)", "Europe")]) > 0.01


def test_the_states_of_one_wire_are_warned_about_once():
    from snrgain.decide.lot import site_notices

    data = scenario(
        {
            "name": "reversible beverage",
            "family": "beverage",
            "length": "200 m",
            "height": "2.5 m",
            "position": ["30 m", "30 m"],
            "directions": ["45 deg", "225 deg"],
        },
        {"name": "bog", "family": "bog", "length": "80 m", "bearing": 160, "position": [100, 200]},
    )
    data["reference"]["position"] = [0, 0]
    data["site"]["tx_clearance"] = "60 m"  # a long wire's coupling is computed: only a given clearance flags it
    notes = [(n.code, n.antenna) for n in site_notices(load(data))]
    # said once, of the wire (both its states), not of its first state alone
    assert notes.count(("wires-cross", "reversible beverage")) == 1
    assert not [n for n in notes if n[1].startswith("reversible beverage ")], notes
    assert ("near-tx-vertical", "reversible beverage") in notes


CROSSED = (
    {
        "name": "bev A",
        "family": "beverage",
        "length": "200 m",
        "height": "2.5 m",
        "position": [0, 0],
        "directions": ["45 deg", "225 deg"],
    },
    {
        "name": "bev B",
        "family": "beverage",
        "length": "200 m",
        "height": "2.5 m",
        "position": [200, 0],
        "directions": ["315 deg", "135 deg"],
    },
)
"""Two reversible wires that cross (A from the origin toward 45 deg, B from 200 m east toward 315 deg: they meet
141 m along each)."""


def test_a_crossing_of_one_wire_is_said_of_every_state():
    from snrgain.decide.lot import site_notices
    from snrgain.outputs.messages import notice_text

    sc = load(scenario(*CROSSED))
    crossing = [n for n in site_notices(sc) if n.code == "wires-cross"]
    assert [(n.antenna, n.values["other"]) for n in crossing] == [("bev A", "bev B")]
    assert notice_text(crossing[0]).startswith("bev A: crosses bev B;")
    # a sweep's design (only=): each state of either wire by its own name
    for names in ({"bev A NE (45 deg)", "bev A SW (225 deg)"}, {"bev B NW (315 deg)", "bev B SE (135 deg)"}):
        said = {
            x for n in site_notices(sc, only=names) if n.code == "wires-cross" for x in (n.antenna, n.values["other"])
        }
        assert names <= said, (names, said)


def test_a_sweeps_rows_of_every_state_of_a_crossing_wire_say_it():
    from snrgain.tools import sweep

    data = scenario(*CROSSED)
    for table, states in (("bev A", ("NE (45 deg)", "SW (225 deg)")), ("bev B", ("NW (315 deg)", "SE (135 deg)"))):
        study = sweep.Study(data, "test", None, [sweep.parse_vary(f"{table}: length = 100 m, 200 m")])
        rows = sweep.run_designs(study, list(enumerate(sweep.designs(study.varies))))
        said = {(r[study.varies[0].column], r["antenna"]): r["placement_warnings"] for r in rows}
        for state in states:
            assert said[(100.0, f"{table} {state}")] == "", said  # 100 m: short of the crossing
            assert said[(200.0, f"{table} {state}")] == "wires-cross", said
    # both wires varied in one sweep: the crossing is said in the rows of both, every state of each
    varies = [sweep.parse_vary("bev A: length = 200 m"), sweep.parse_vary("bev B: length = 200 m")]
    study = sweep.Study(data, "test", None, varies)
    rows = sweep.run_designs(study, list(enumerate(sweep.designs(study.varies))))
    assert {r["antenna"]: r["placement_warnings"] for r in rows} == {
        name: "wires-cross"
        for name in ("bev A NE (45 deg)", "bev A SW (225 deg)", "bev B NW (315 deg)", "bev B SE (135 deg)")
    }


def test_the_runner_up_is_another_antenna_not_another_state():
    r = pipeline.evaluate(
        scenario(
            {**FOUR_SQUARE, "directions": [45, 225]}, {"name": "short vertical", "family": "vertical", "height": "7 m"}
        )
    )
    europe = r.target_results[0]
    assert europe.best == "four-square NE (45 deg)" and europe.runner_up == "short vertical"
    gains = {a.name: a.snr_gain_median_db[0] for a in r.antennas}
    assert europe.margin_db == pytest.approx(gains["four-square NE (45 deg)"] - gains["short vertical"])


def test_end_fire_states_take_the_travel_time_delays_and_share_their_lines():
    """End-fire delays per state against the end-fire condition (a progressive delay d cos(angle) / c along the
    bearing; Kraus, Antennas, 2nd ed., ch. 4, arrays of point sources, the chapter cited from memory): on a 20 m
    square toward 45 deg the elements wait 0, 20/(sqrt 2 c), 20/(sqrt 2 c) and 20 sqrt 2 / c; toward 225 deg the
    order is reversed, so both states use the same three lines."""
    from snrgain.physics.ground import C_M_PER_S

    r = pipeline.evaluate(scenario({**FOUR_SQUARE, "auto_for": "end-fire", "directions": [45, 225]}))
    step = 20.0 / np.sqrt(2.0) / C_M_PER_S * 1e9  # [ns]
    ne, sw = r.candidates
    assert ne.build["delays_ns"] == pytest.approx([0.0, step, step, 2 * step], abs=1e-6)
    assert sw.build["delays_ns"] == pytest.approx([2 * step, step, step, 0.0], abs=1e-6)
    table = switching(r.groups()["four-square"])
    assert table["lines_ns"] == pytest.approx([0.0, step, 2 * step], abs=1e-6)
    assert [s["element_lines"] for s in table["states"]] == [[1, 2, 2, 3], [3, 2, 2, 1]]
    vf = ne.build["phasing_cable_velocity_factor"]
    assert table["lines_m"] == pytest.approx([t * 1e-9 * vf * C_M_PER_S for t in table["lines_ns"]])


def test_the_site_plan_draws_a_switched_array_once_and_a_reversible_wire_both_ways():
    # a four-square switched to four bearings stands once on the plan, under its own name with its states (its
    # elements joined once, one legend entry); a reversible wire keeps both states, each with its own arrow
    from snrgain.outputs.siteplan import plan_of

    bev = {"name": "rev", "family": "beverage", "length": "150 m", "height": "2 m", "position": [-90, -80]}
    data = scenario(
        {**FOUR_SQUARE, "directions": [f"{b} deg" for b in BEARINGS]}, {**bev, "directions": ["45 deg", "225 deg"]}
    )
    data["site"]["lot"] = [[-100, -100], [100, -100], [100, 100], [-100, 100]]
    data["reference"]["position"] = [-60, 60]  # not at the origin, where the lot would stand it: on an element
    plan = plan_of(load(data))
    fours = [a for a in plan["antennas"] if a["name"].startswith("four-square")]
    assert len(fours) == 4 and [bool(a["parts"]) for a in fours] == [True, False, False, False]
    assert fours[0]["shown_as"] == "four-square (switched: NE, SE, SW, NW)"
    wires = [a for a in plan["antennas"] if a["name"].startswith("rev")]
    assert [p["kind"] for a in wires for p in a["parts"]] == ["wire", "wire"]
    assert not any("shown_as" in a for a in wires)


def test_a_flag_switches_front_and_back_only():
    """A terminated loop is one loop whose feed and resistor swap sides: two bearings 180 deg apart; three bearings,
    or two not opposite, need other loops (relays cannot turn a loop's plane)."""
    flag = {"name": "flag", "family": "terminated-loop", "width": "8 m", "loop_height": "4 m"}
    for directions in (["45 deg", "150 deg", "330 deg"], [45, 135]):
        problems = problems_of(scenario({**flag, "directions": directions}))
        said = problems['candidate 1 ("flag").directions']
        assert "180 deg apart" in said and "feed and resistor swap" in said
    from snrgain.scenario import load

    sc = load(scenario({**flag, "directions": [45, 225]}))  # front and back: one loop
    assert [a.name for a in sc.candidates] == ["flag NE (45 deg)", "flag SW (225 deg)"]


def test_a_warning_on_several_states_is_said_once():
    """A notice of one code on several states of one switched antenna (the receiver's floor, a fragile resistor) is
    said once, on the antenna, naming how many states and the one shown (the plan's where it builds one)."""
    from snrgain.decide.decisions import by_switched_antenna
    from snrgain.model.results import Notice
    from snrgain.outputs.messages import notice_text
    from snrgain.scenario import load

    sc = load(scenario({**FOUR_SQUARE, "directions": [f"{b} deg" for b in BEARINGS]}))
    states = [a.name for a in sc.candidates]
    values = {
        "worst_margin_db": 8.0,
        "margin_target_db": 10.0,
        "max_snr_loss_db": 0.6,
        "preamp_gain_db": 2.0,
        "preamp_position": None,
    }
    notes = [Notice("receiver-limited", name, {**values, "worst_margin_db": 8.0 - i}) for i, name in enumerate(states)]
    notes.append(Notice("man-made-extrapolated", None, {"freq_hz": 1.8e5, "lowest_hz": 3e5}))
    once = by_switched_antenna(sc, notes, {FOUR_SQUARE["name"]: [states[2]]})
    assert [n.code for n in once] == ["receiver-limited", "man-made-extrapolated"]
    n = once[0]
    assert n.antenna == FOUR_SQUARE["name"] and n.values["states"] == len(states)
    assert n.values["worst_margin_db"] == 6.0  # the state the plan builds
    assert notice_text(n).startswith(f"{FOUR_SQUARE['name']} (in {len(states)} of its states; ")
    assert by_switched_antenna(sc, notes[:1]) == notes[:1]  # one state: as it was


def test_a_switched_flags_two_states_are_one_loop():
    """The reversed state of a flag is the same loop fed on its other side: its feed stands where the first state's
    resistor is, so both span the same 8 m on the plan (they were two loops, mirrored about the feed)."""
    from snrgain.scenario import load
    from snrgain.scenario.local import antenna_outline

    flag = {"name": "flag", "family": "terminated-loop", "width": "8 m", "loop_height": "4 m", "position": [50, 50]}
    fwd, rev = load(scenario({**flag, "directions": [45, 225]})).candidates
    (a,), (b,) = antenna_outline(fwd, (0, 0)), antenna_outline(rev, (0, 0))
    np.testing.assert_allclose(a, b[::-1], atol=1e-9)
    assert np.hypot(*(a[1] - a[0])) == pytest.approx(8.0)


def test_warnings_on_different_structures_stay_apart():
    """Notices of one code on a switched antenna's states are said once only where they concern the same thing: two
    towers stay two warnings, and the count is of states, not of notices."""
    from snrgain.decide.decisions import by_switched_antenna
    from snrgain.model.results import Notice
    from snrgain.scenario import load

    sc = load(scenario({**FOUR_SQUARE, "directions": [f"{b} deg" for b in BEARINGS]}))
    ne, se, sw = [a.name for a in sc.candidates][:3]
    notes = [
        Notice("structure-cost", ne, {"structure": "tower A", "cost_db": 1.5}),
        Notice("structure-cost", ne, {"structure": "tower B", "cost_db": 2.6}),
        Notice("structure-cost", se, {"structure": "tower B", "cost_db": 1.3}),
        Notice("structure-cost", sw, {"structure": "tower B", "cost_db": 2.9}),
    ]
    once = by_switched_antenna(sc, notes)
    assert [(n.antenna, n.values["structure"]) for n in once] == [(ne, "tower A"), (FOUR_SQUARE["name"], "tower B")]
    assert once[1].values["states"] == 3


def test_a_switched_flag_may_say_auto_for_snr():
    """auto_for = "snr" is a flag's default (its resistor set for SNR toward the target nearest each state's
    bearing): written out it is accepted as left out, not refused with the arrays' reason."""
    from snrgain.scenario import load

    flag = {"name": "flag", "family": "terminated-loop", "width": "8 m", "loop_height": "4 m", "directions": [45, 225]}
    assert len(load(scenario({**flag, "auto_for": "snr"})).candidates) == 2


def test_the_short_build_gives_the_same_phases():
    """The build with phase-reversing transformers (build.reversed_build): every element's phase, its short line's
    delay plus 180 deg where reversed, is the plain build's plus one common turn (any set of delays), and its
    longest line at most half the plain build's where it is given."""
    from snrgain.decide.build import reversed_build

    f = 3.525e6
    half = 0.5 / f
    rng = np.random.default_rng(11)
    given = 0
    for _ in range(300):
        d = rng.uniform(0.0, 2 * half, 4)
        d -= d.min()
        short = reversed_build(d, f, 0.83)
        if short is None:
            continue
        given += 1
        lines = np.array(short["delays_ns"]) * 1e-9
        assert lines.max() <= 0.5 * d.max() + 1e-15
        phase = 2 * np.pi * f * lines + np.pi * np.array(short["reversed"])
        turn = np.angle(np.exp(1j * (phase - 2 * np.pi * f * d)))
        assert np.ptp(np.unwrap(turn)) < 1e-9 or np.ptp(np.mod(turn, 2 * np.pi)) < 1e-9
        assert sum(short["reversed"]) <= 2
    assert given > 20


def test_a_switched_antenna_with_one_state_serving_may_be_built_one_way():
    from snrgain.outputs.output import plan_text

    one = scenario(
        {**FOUR_SQUARE, "directions": ["45 deg", "225 deg"]},
        target=[{"name": "Europe", "bearing": 45, "elevation": [5, 25]}],
    )
    r = pipeline.evaluate(one)
    assert r.plan.states == {"four-square": ["four-square NE (45 deg)"]}
    assert "four-square (only its NE (45 deg) state serves a target: it may be built one way)" in str(plan_text(r))
