"""layout's refinement (snrgain.tools.layout.Problem.polish): a compass search that finds the best of a known
objective along a narrow ridge, keeps the rules, and ends where no stencil at its last steps does better."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from snrgain.scenario import load, read_source
from snrgain.tools import layout as lay
from snrgain.tools.layout import Design, Problem
from tests.conftest import REPO

DATA = REPO / "tests" / "data"


def _problem(name="layout-two-beverages.toml"):
    data, _, base = read_source(DATA / name)
    return Problem(load(data), data, base_dir=base)


@pytest.fixture(scope="module")
def demo():
    return _problem()


# The best of the bowl below: a feed point, bearing and length inside the Pacific Beverage's ranges, on the lot.
BEST = (158.0, -22.0, 303.0, 226.0)


def _bowl(d: Design) -> float:
    """A smooth objective [dB] whose best is BEST, with a narrow ridge: across it a move of the feed point must go
    with a turn of the wire (3 m per degree), as a placed source kept in the wire's null makes it."""
    e0, n0, b0, l0 = BEST
    b = np.degrees(d.bearing_rad) - b0
    u = ((d.east_m - e0) + (d.north_m - n0)) / np.sqrt(2)  # along the ridge
    v = ((d.east_m - e0) - (d.north_m - n0)) / np.sqrt(2) - 3.0 * b  # across it
    return float(12.0 - u**2 / 200 - v**2 / 2 - b**2 / 8 - ((d.length_m - l0) / 20) ** 2)


def test_the_compass_search_finds_the_best_of_a_known_ridge(demo, monkeypatch):
    monkeypatch.setattr(demo, "snr_gains_db", lambda ds, i, exact=False: np.array([_bowl(d) for d in ds]))
    monkeypatch.setattr(demo, "snr_gain_db", lambda d, i, exact=False: _bowl(d))
    i = demo.names.index("Beverage Pacific")
    start = Design("Beverage Pacific", 150.0, -27.0, float(np.radians(306.43)), 217.5)
    got = demo.polish(i, start)
    e0, n0, b0, l0 = BEST
    assert _bowl(got) > _bowl(start) + 0.5
    assert _bowl(got) > 12.0 - 2e-3  # the best is 12 dB
    assert np.hypot(got.east_m - e0, got.north_m - n0) < 2.0
    assert abs(np.degrees(got.bearing_rad) - b0) < 0.5
    assert abs(got.length_m - l0) < 2.0


def test_the_search_stops_at_a_range_and_keeps_the_rules(demo, monkeypatch):
    # An objective that pulls the wire longer than its range allows and its feed point off the lot to the east:
    # the search stops on the range's end and keeps the wire on the lot.
    def pull(d):
        return float(d.length_m / 10 + d.east_m / 5)

    monkeypatch.setattr(demo, "snr_gains_db", lambda ds, i, exact=False: np.array([pull(d) for d in ds]))
    monkeypatch.setattr(demo, "snr_gain_db", lambda d, i, exact=False: pull(d))
    i = demo.names.index("Beverage Pacific")
    start = Design("Beverage Pacific", 150.0, -27.0, float(np.radians(306.43)), 217.5)
    got = demo.polish(i, start)
    assert got.length_m == pytest.approx(demo.places[i].length[1])
    assert demo.violation_m(got) == 0.0
    assert got.east_m > 200.0  # the lot ends at 209 m east less the 1 m margin; the wire runs west from its feed


def test_polish_ends_where_no_last_stencil_does_better(demo):
    # On the real scores: from the grid's design the search ends where no stencil at its last steps (feed point,
    # bearing and length) scores better by more than REFINE_LEAST_GAIN_DB, and no worse than where it began.
    i = demo.names.index("Beverage Pacific")
    start = Design("Beverage Pacific", 155.90038481234458, -27.53527148162679, float(np.radians(306.4285714)), 217.5)
    got = demo.polish(i, start)
    best = demo.snr_gain_db(got, i)
    assert best >= demo.snr_gain_db(start, i)
    sp, sb, sl = lay.REFINE_LEAST_STEP_M, lay.REFINE_LEAST_BEARING_RAD, lay.REFINE_LEAST_LENGTH_M
    ring = [(dx, dy) for dx in (-1, 0, 1) for dy in (-1, 0, 1)]
    trials = []
    for db, dl in ((0, 0), (-sb, 0), (sb, 0), (0, -sl), (0, sl)):
        for dx, dy in ring:
            trials.append(
                Design(
                    got.name,
                    got.east_m + dx * sp,
                    got.north_m + dy * sp,
                    got.bearing_rad + db,
                    min(max(got.length_m + dl, demo.places[i].length[0]), demo.places[i].length[1]),
                )
            )
    ok = [d for d in trials if demo.violation_m(d) == 0.0]
    scores = [demo.snr_gains_db([d], i)[0] for d in ok]
    assert max(scores) <= best + lay.REFINE_LEAST_GAIN_DB + 1e-9


def test_a_bearing_range_across_north_is_searched_across_it(monkeypatch):
    # A range of 340..20 deg (across north): from 350 deg the search walks through 0 deg to the best at 8 deg, and
    # never leaves the range (the objective rises to 30 deg, past its end).
    pr = _problem()
    i = pr.names.index("Beverage Europe")
    pr.places[i] = pr.places[i].model_copy(update={"bearing": [float(np.radians(340.0)), float(np.radians(20.0))]})

    def turn(d):
        b = (np.degrees(d.bearing_rad) + 180.0) % 360.0 - 180.0  # -180..180
        return float(-((b - 8.0) ** 2) / 10 - ((d.east_m - 20.0) ** 2 + (d.north_m - 60.0) ** 2) / 50)

    def along(d):  # up to 30 deg, past the range's end
        b = (np.degrees(d.bearing_rad) + 180.0) % 360.0 - 180.0
        return float(b)

    start = Design("Beverage Europe", 20.0, 60.0, float(np.radians(350.0)), 200.0)
    for f, want in ((turn, 8.0), (along, 20.0)):
        monkeypatch.setattr(pr, "snr_gains_db", lambda ds, i, exact=False, f=f: np.array([f(d) for d in ds]))
        monkeypatch.setattr(pr, "snr_gain_db", lambda d, i, exact=False, f=f: f(d))
        got = pr.polish(i, start)
        b = (np.degrees(got.bearing_rad) + 180.0) % 360.0 - 180.0
        assert b == pytest.approx(want, abs=0.5)


def test_the_refinement_in_two_processes_is_the_refinement_in_one(monkeypatch):
    # The grid's best layout of the demo, each wire polished in turn: with a spare core the Pacific wire is polished
    # in a forked process beside the Europe wire as it started, while this one polishes the Europe wire; the Pacific
    # wire's search is then replayed here beside the Europe wire as it ended, reading the stencils that process
    # scored.  Beside the two Europe wires the rules keep other designs in some of its stencils (the wires pass
    # near each other), yet the designs found are the turn-by-turn search's, to the bit, and nothing is scored anew.
    start = [
        Design("Beverage Europe", 18.32364259186605, 87.1120137021053, 0.6981317007977317, 250.0),
        Design("Beverage Pacific", 155.90038481234458, -27.53527148162679, 5.348187493611196, 217.5),
    ]
    monkeypatch.setattr(lay, "spare_core", lambda: False)
    one = _problem()
    alone = one._polished(list(start))[0]
    monkeypatch.setattr(lay, "spare_core", lambda: True)
    two = _problem()
    calls = []
    scored = two.snr_gains_db
    monkeypatch.setattr(two, "snr_gains_db", lambda ds, i, exact=False: calls.append(i) or scored(ds, i, exact=exact))
    shared, extra = two._polished(list(start), lambda: "done meanwhile")
    assert shared == alone
    assert extra == "done meanwhile"
    assert 0 in calls and 1 not in calls  # the Pacific wire's stencils all read from the other process
    # the rules beside the Europe wire as it started and as it ended differ on some of the Pacific wire's designs
    near = [
        replace(alone[1], east_m=alone[1].east_m + dx, north_m=alone[1].north_m + dy)
        for dx in np.linspace(-40.0, 40.0, 9)
        for dy in np.linspace(-40.0, 40.0, 9)
    ]
    assert list(two.keep_rules(near, [start[0]])) != list(two.keep_rules(near, [alone[0]]))
