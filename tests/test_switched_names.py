"""Named states of a switched antenna: ``directions = [{name = "front", bearing = "45 deg"}, ...]``.

A name only labels a state: the numbers are those of the same antenna with bare bearings; the tables, the plan and
the build sheet say the names; bad names are refused naming the field.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from snrgain.model import pipeline
from snrgain.scenario import load
from snrgain.scenario.switched import named_label, switched_state
from tests.test_switched import FOUR_SQUARE, problems_of, scenario

FLAG = {
    "name": "flag pair",
    "family": "terminated-loop",
    "width": "8 m",
    "loop_height": "4 m",
    "height": "1.5 m",
    "termination": "900 ohm",
}
NAMED = [{"name": "front", "bearing": "45 deg"}, {"name": "back", "bearing": "225 deg"}]


@pytest.fixture(scope="module")
def named_and_bare():
    named = pipeline.evaluate(scenario({**FLAG, "directions": NAMED}))
    bare = pipeline.evaluate(scenario({**FLAG, "directions": ["45 deg", "225 deg"]}))
    return named, bare


def test_names_label_the_states_and_change_no_number(named_and_bare):
    named, bare = named_and_bare
    assert [c.name for c in named.candidates] == ["flag pair front (45 deg)", "flag pair back (225 deg)"]
    assert [c.name for c in bare.candidates] == ["flag pair NE (45 deg)", "flag pair SW (225 deg)"]
    for a, b in zip(named.candidates, bare.candidates):
        np.testing.assert_allclose(a.snr_gain_db, b.snr_gain_db, atol=1e-9)
        assert a.group == b.group == "flag pair"
    assert [c.state for c in named.candidates] == ["front (45 deg)", "back (225 deg)"]


def test_plan_and_build_sheet_say_the_names(named_and_bare):
    from snrgain.outputs.output import build_lines, plan_text

    r, _ = named_and_bare
    served = {r.targets[t]["name"]: rows[0].antenna for t, rows in r.plan.by_target.items()}
    assert served["Europe"] == "flag pair front (45 deg)"
    text = plan_text(r).plain
    assert r.plan.states == {"flag pair": ["flag pair front (45 deg)"]}  # the back serves no target here
    assert "flag pair (only its front (45 deg) state serves a target: it may be built one way)" in text
    lines = dict(build_lines(r))
    assert lines["flag pair"].startswith("one antenna switched between 2 states")
    assert "front (45 deg) all off" in lines["flag pair"] and "back (225 deg) on 1" in lines["flag pair"]
    d = json.loads(json.dumps(r.to_dict()))
    assert [s["state"] for s in d["switched"]["flag pair"]["states"]] == ["front (45 deg)", "back (225 deg)"]


def test_names_and_bare_bearings_mix_and_a_wire_takes_names():
    sc = load(scenario({**FOUR_SQUARE, "directions": [{"name": "Europe", "bearing": 45}, "150 deg", "270 deg"]}))
    assert [switched_state(a).state for a in sc.candidates] == ["Europe (45 deg)", "SSE (150 deg)", "W (270 deg)"]
    bev = {"name": "bev", "family": "beverage", "length": "250 m", "height": "2.5 m"}
    sc = load(scenario({**bev, "directions": [{"name": "north-east", "bearing": 45}, {"name": "sw", "bearing": 225}]}))
    fwd, rev = sc.candidates
    assert (fwd.name, rev.name) == ("bev north-east (45 deg)", "bev sw (225 deg)")
    assert switched_state(rev).how == "ends"
    assert named_label("  spaced  ".strip(), 359.96) == "spaced (0 deg)"


@pytest.mark.parametrize(
    "directions, field, words",
    [
        (
            [{"name": "front", "azimuth": 45}, 225],
            "directions.1",
            "unknown 'azimuth' (a state's direction is its bearing",
        ),
        ([{"name": "front"}, 225], "directions.1", "needs bearing"),
        ([{"bearing": 45}, 225], "directions.1", "needs name"),
        (
            [{"name": "front", "bearing": 45}, {"name": "FRONT ", "bearing": 225}],
            "directions.2.name",
            "names direction 1",
        ),
        ([{"name": " ", "bearing": 45}, 225], "directions.1.name", "at least one character"),
        ([{"name": 7, "bearing": 45}, 225], "directions.1.name", "is text"),
        ([{"name": "x" * 25, "bearing": 45}, 225], "directions.1.name", "at most 24 characters"),
        ([{"name": "a\nb", "bearing": 45}, 225], "directions.1.name", "one line"),
        ([{"name": "front", "bearing": "4x5 deg"}, 225], "directions.1.bearing", 'cannot read "4x5 deg"'),
        ([{"name": "front", "bearing": 45}, {"name": "b", "bearing": "45.03 deg"}], "directions.2", "same bearing"),
        ("front", "directions", "bearings or named states"),
    ],
)
def test_bad_named_states_are_named(directions, field, words):
    probs = problems_of(scenario({**FOUR_SQUARE, "directions": directions}))
    key = f'candidate 1 ("four-square").{field}'
    assert key in probs, probs
    assert words in probs[key]
