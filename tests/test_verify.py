"""snrgain verify: locators, log reading, pairing, the bootstrap median, the round trip, the command line."""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from snrgain.cli.main import cli
from snrgain.tools import logs
from snrgain.tools import verify as vf
from snrgain.tools.locator import from_latlon, is_locator, to_latlon

DATA = Path(__file__).parent / "data" / "verify"
WREN = "scenarios/wren-corner.toml"  # site 44.21 N, 71.32 W; targets Europe (45 deg) and Pacific (300 deg)


# ---- Maidenhead locators: cell centres computed by hand from the convention's cell sizes
# (field 20 x 10 deg, square 2 x 1 deg, subsquare 5' x 2.5', extended 30" x 15", from 180 W and 90 S).


@pytest.mark.parametrize(
    "loc, lat, lon",
    [
        ("FN42", 42.5, -71.0),  # F=5: -180+100=-80, +4*2 -> -72, +1 centre; N=13: -90+130=40, +2, +0.5
        ("AA00", -89.5, -179.0),
        ("RR99", 89.5, 179.0),
        ("JO", 55.0, 10.0),  # field only: J=9 -> 0 deg + 10; O=14 -> 50 + 5
        ("FN42hn", 42.5625, -71.375),  # h=7: -72 + 7/12 + 1/24; n=13: 42 + 13/24 + 1/48
        ("IO91wm", 51.520833333, -0.125),  # w=22: -2 + 22/12 + 1/24; m=12: 51 + 12/24 + 1/48
        ("FN42hn55", 42.564583333, -71.370833333),  # + 5/120 + 1/240 lon, + 5/240 + 1/480 lat
        ("fn42HN", 42.5625, -71.375),  # case does not matter
    ],
)
def test_locator_centres_by_hand(loc, lat, lon):
    got = to_latlon(loc)
    assert got == pytest.approx((lat, lon), abs=1e-9)


@pytest.mark.parametrize("bad", ["SS00", "FN4", "ZZ99", "FN42yy", "FN42hn5", "", "F N42", "4FN2"])
def test_locator_bad_ones_named(bad):
    assert not is_locator(bad)
    with pytest.raises(ValueError, match="not a Maidenhead locator"):
        to_latlon(bad)


def test_locator_round_trip():
    rng = np.random.default_rng(3)
    for lat, lon in zip(rng.uniform(-89.9, 89.9, 200), rng.uniform(-179.9, 179.9, 200)):
        loc = from_latlon(lat, lon, chars=8)
        clat, clon = to_latlon(loc)
        assert abs(clat - lat) <= 1 / 480 + 1e-9 and abs(clon - lon) <= 1 / 240 + 1e-9
        assert from_latlon(clat, clon, chars=8) == loc


@pytest.mark.parametrize(
    "msg, call, loc, bad",
    [
        ("CQ Q1ABC FN42", "Q1ABC", "FN42", None),
        ("CQ DX Q1ABC FN42", "Q1ABC", "FN42", None),
        ("Q2XYZ Q1ABC FN42", "Q1ABC", "FN42", None),
        ("Q2XYZ Q1ABC R-07", "Q1ABC", None, None),
        ("Q2XYZ Q1ABC RR73", "Q1ABC", None, None),  # RR73 has a locator's shape: a sign-off
        ("Q2XYZ <Q1ABC> 73", "Q1ABC", None, None),
        ("CQ Q5MNO ZZ99", "Q5MNO", None, "ZZ99"),
        ("TNX FER QSO", None, None, None),
        ("CQ", None, None, None),
    ],
)
def test_sender_of(msg, call, loc, bad):
    s = logs.sender_of(msg)
    assert (s.call, s.locator, s.bad_locator) == (call, loc, bad)


# ---- the median of whole-dB data and its bootstrap interval


def test_grouped_median_by_hand():
    rng = np.random.default_rng(0)
    # classes 0 (2), 1 (3), 2 (1); n/2 = 3 falls in class 1 = [0.5, 1.5): 0.5 + (3 - 2) / 3
    assert vf.median_interval([0, 0, 1, 1, 1, 2], rng=rng)[0] == pytest.approx(0.5 + 1 / 3)
    # not whole numbers: the plain median
    assert vf.median_interval([0.1, 0.2, 0.4, 0.7], rng=rng)[0] == pytest.approx(0.3)
    m, lo, hi = vf.median_interval(np.round(np.random.default_rng(1).normal(3.3, 3.0, 4000)), rng=rng)
    assert lo < m < hi and abs(m - 3.3) < 0.25 and hi - lo < 0.5


def test_bootstrap_is_seeded():
    x = np.round(np.random.default_rng(2).normal(1.0, 4.0, 300))
    a = vf.median_interval(x, rng=np.random.default_rng(7))
    b = vf.median_interval(x, rng=np.random.default_rng(7))
    assert a == b


def test_the_same_pairs_get_the_same_interval_and_verdict_in_every_row():
    # every pair at one hour: the all-hours row and that hour's row hold the same pairs, so they must show one
    # interval and one verdict (one generator for all the groups drew different resamples for each row)
    import pandas as pd

    diffs = np.round(np.random.default_rng(3).normal(1.7, 0.8, 60))
    placed = pd.DataFrame({"target": "east", "hour": 2, "diff_db": diffs})
    for seed in range(1, 6):
        pooled, hourly = vf.summarise(placed, ["east"], None, n_boot=400, seed=seed)
        assert (pooled.hour, hourly.hour) == (None, 2)
        assert (pooled.median_db, pooled.low_db, pooled.high_db) == (hourly.median_db, hourly.low_db, hourly.high_db)
    # the pairs in another order are the same set of pairs; other pairs draw from another stream
    assert vf.pairs_generator(diffs[::-1], 4).random() == vf.pairs_generator(diffs, 4).random()
    assert vf.pairs_generator(diffs + 1.0, 4).random() != vf.pairs_generator(diffs, 4).random()
    assert vf.pairs_generator(diffs, 5).random() != vf.pairs_generator(diffs, 4).random()


@pytest.mark.parametrize(
    ("low", "high", "p10", "p90", "expected"),
    [
        (1.400, 1.9, -0.4, 1.388, "agrees"),  # shown as +1.4 against a band top of +1.4: not above it
        (1.46, 1.9, -0.4, 1.388, "measured better"),  # +1.5 against +1.4
        (-2.0, -1.04, -0.96, 1.0, "agrees"),  # shown as -1.0 against a band bottom of -1.0: not below it
        (-2.0, -1.06, -0.96, 1.0, "measured worse"),  # -1.1 against -1.0
    ],
)
def test_a_verdict_rests_on_the_numbers_as_shown(low, high, p10, p90, expected):
    g = vf.Group("east", None, 60, 0.5 * (low + high), low, high, 0.5, 0.5 * (p10 + p90), p10, p90)
    got, _ = vf.verdict(g, 20)
    assert got == expected
    r = vf.VerifyResult("A", "B", "160m", [12], [2], "rule", None, [g], None)
    sentence = vf.verdict_sentence(r, vf.Group(**{**g.__dict__, "verdict": got}))
    shown = [float(x) for x in re.findall(r"[-+]\d+\.\d", sentence)]
    # measured median (low to high), predicted median (p10 to p90), as printed
    if got == "measured better":
        assert shown[1] > shown[5]
    elif got == "measured worse":
        assert shown[2] < shown[4]
    else:
        assert shown[1] <= shown[5] and shown[2] >= shown[4]


# ---- the hand-made log pair: every problem counted and named by line


def test_hand_made_pair_every_problem_named():
    r = vf.verify(
        WREN,
        a_name="Beverage Europe",
        b_name="TX vertical",
        log_a=DATA / "a.txt",
        log_b=DATA / "b.txt",
        predict_too=False,
    )
    got = {k: v["lines"] for k, v in r.problems.as_dict().items()}
    expected = {
        "the station's own transmission (Tx), not a decode": ["A:5"],
        "too few fields (date time, frequency, mode, SNR, DT, audio offset, message)": ["A:16", "B:15"],
        "date and time not a UTC date and time (YYMMDD_HHMMSS or YYYY-MM-DD HH:MM:SS)": ["A:17"],
        "SNR not a number of dB": ["A:18"],
        "mode not one of FT8, FT4, JT65, JT9, Q65, FST4, WSPR": ["A:19"],
        "audio offset not a number of Hz from 0 to 6000": ["A:20"],
        "SNR outside -60 to +60 dB": ["A:34"],
        "band 80m, not the scenario's 160m": ["A:15", "A:32", "B:14", "B:26"],
        "band 20m, not the scenario's 160m": ["B:30"],
        "the same message twice in one slot (the first kept)": ["A:13"],
        "unpaired: the other antenna has no decode of this message in this slot": ["A:35", "B:5", "B:28", "B:29"],
        "unpaired: the same message's audio offsets differ by more than 5 Hz": ["A:28", "B:22"],
        "locator not valid (letters A-R, digits, letters A-X): the line's locator ignored": ["A:10", "B:10", "B:29"],
        "unplaceable: the message names no sending station": ["A:25"],
        "unplaceable: the sender gives no locator in either log and is not in the places file": ["A:9", "A:10", "A:27"],
    }
    assert got == expected
    by = {(g.target, g.hour): g for g in r.groups}
    # Europe: Q1ABC (JO08, 7 pairs of +6 dB) and Q2DEF (KO25, given only in log B: 2 of +5, 2 of +6)
    eu = by[("Europe", None)]
    assert eu.n == 11 and eu.median_db == pytest.approx(5.5 + 3.5 / 9)
    assert by[("Pacific", None)].n == 5 and by[("Pacific", None)].median_db == pytest.approx(-3.0)
    assert by[("sector 180 deg", None)].n == 1  # Q6PQR (FK47) lies south, in no target
    assert all(g.verdict == "too few pairs" for g in r.groups)
    assert set(r.pairs["call"]) == {"Q1ABC", "Q2DEF", "Q3GHI", "Q6PQR"}


def test_places_file_places_the_unlocated(tmp_path):
    places = tmp_path / "places.csv"
    places.write_text("call,latitude,longitude,locator\nQ4JKL,51.5,-0.1,\nQ5MNO,,,KO25\nQ6PQR,oops,,\n")
    r = vf.verify(
        WREN,
        a_name="Beverage Europe",
        b_name="TX vertical",
        log_a=DATA / "a.txt",
        log_b=DATA / "b.txt",
        places=places,
        predict_too=False,
    )
    assert r.problems.as_dict()["place not a latitude, longitude in degrees or a locator"]["lines"] == ["places:4"]
    assert "unplaceable: the sender gives no locator in either log and is not in the places file" not in (
        r.problems.by_reason
    )
    assert {("Q4JKL", "Europe"), ("Q5MNO", "Europe")} <= set(zip(r.pairs["call"], r.pairs["target"]))


def test_csv_decodes_read_like_the_log(tmp_path):
    p = logs.Problems()
    df = logs.parse_decode_csv(vf.EXAMPLES["csv"], "A", p)
    assert p.count() == 0 and list(df["band"]) == ["160m"] * 3 and list(df["snr_db"]) == [-12, -15, -4]
    p = logs.Problems()
    df = logs.parse_decode_text(vf.EXAMPLES["log"], "A", p)
    assert p.as_dict() == {"the station's own transmission (Tx), not a decode": {"count": 1, "lines": ["A:5"]}}
    assert len(df) == 4 and df["message"].iloc[-1] == "CQ DX Q3GHI JO20"


# ---- spots in alternating slots


def test_spots_pair_by_slot_parity():
    p = logs.Problems()
    sp = logs.parse_spots_csv(vf.EXAMPLES["spots"], "spots", p)
    pairs = logs.pair_spots(sp, p, a_slots="even")
    assert list(pairs.table["diff_db"]) == [-21 - -25, -19 - -24]
    pairs_odd = logs.pair_spots(sp, logs.Problems(), a_slots="odd")
    # odd slots on A: 00:02 pairs with 00:04; 00:00 (B) and 00:06 (A) are alone
    assert list(pairs_odd.table["diff_db"]) == [-25 - -19]


# ---- the round trip: a known difference recovered within the reported interval


def test_round_trip_recovers_known_differences(tmp_path):
    from snrgain.scenario import load

    sc = load(WREN)
    hits, total, widths = 0, 0, []
    for seed in range(30):
        rng = np.random.default_rng(1000 + seed)
        truth = {"Europe": float(rng.uniform(-2, 10)), "Pacific": float(rng.uniform(-6, 4))}
        a, b = vf.synthesise(
            site_lat=44.21,
            site_lon=-71.32,
            targets=[(45, truth["Europe"]), (300, truth["Pacific"])],
            hours=1,
            stations_per_target=3,
            seed=seed,
        )
        (tmp_path / "a.txt").write_text(a)
        (tmp_path / "b.txt").write_text(b)
        r = vf.verify(
            sc,
            a_name="A",
            b_name="B",
            log_a=tmp_path / "a.txt",
            log_b=tmp_path / "b.txt",
            predict_too=False,
            n_boot=1000,
            seed=seed,
        )
        assert r.problems.count("unpaired: the other antenna has no decode of this message in this slot") > 0
        for g in r.groups:
            if g.hour is None and g.target in truth:
                total += 1
                hits += g.low_db <= truth[g.target] <= g.high_db
                widths.append(g.high_db - g.low_db)
    # A 90 % interval covers the truth in about 90 % of trials; with 60 intervals the count has a standard
    # deviation of 3.9 %, so 80 % is the 2.6-sigma floor.  Intervals must also be narrow enough to mean something.
    assert hits / total >= 0.80, hits / total
    assert hits / total < 1.0 or np.median(widths) < 0.5
    assert np.median(widths) < 1.0


# ---- through the pipeline, and the command line


def test_prediction_through_the_pipeline():
    from snrgain.model.pipeline import evaluate
    from snrgain.scenario import load, read_source

    names, pred, _, notes = vf.predict(WREN, "Beverage Europe", "TX vertical", [12], [0])
    assert names == ["Europe", "Pacific"] and not notes
    data, label, base = read_source(Path(WREN))
    d = vf._scenario_copy(data, "Beverage Europe", "TX vertical", [12], [0.5])
    res = evaluate(load(d, base_dir=base, label=label))
    bev = next(c for c in res.candidates if c.name == "Beverage Europe")
    assert pred[("Europe", 0)] == pytest.approx(
        (bev.snr_gain_median_db[0], bev.snr_gain_p10_db[0], bev.snr_gain_p90_db[0])
    )
    # swapping the antennas mirrors the difference and its band
    _, back, _, _ = vf.predict(WREN, "TX vertical", "Beverage Europe", [12], [0])
    m, lo, hi = pred[("Europe", 0)]
    assert back[("Europe", 0)] == pytest.approx((-m, -hi, -lo))
    # two candidates: the medians subtract; the band holds the median and is wider than either antenna's own
    _, both, _, notes = vf.predict(WREN, "Beverage Pacific", "Beverage Europe", [12], [0])
    _, pac, _, _ = vf.predict(WREN, "Beverage Pacific", "TX vertical", [12], [0])
    mp, lop, hip = pac[("Europe", 0)]
    mb, lob, hib = both[("Europe", 0)]
    assert mb == pytest.approx(mp - m) and lob < mb < hib
    assert hib - lob >= max(hip - lop, hi - lo) and "as if they were independent" in notes[0]


def test_cli_verdicts_json_and_figure(tmp_path):
    a, b = vf.synthesise(
        site_lat=44.21, site_lon=-71.32, targets=[(45, 25.0), (300, -3.0)], hours=1, stations_per_target=4, seed=5
    )
    (tmp_path / "a.txt").write_text(a)
    (tmp_path / "b.txt").write_text(b)
    args = [
        "verify",
        WREN,
        "--a",
        "Beverage Europe",
        "--b",
        "TX vertical",
        "--log-a",
        str(tmp_path / "a.txt"),
        "--log-b",
        str(tmp_path / "b.txt"),
    ]
    out = CliRunner().invoke(cli, [*args, "--format", "json", "--plot", str(tmp_path / "v.png")])
    assert out.exit_code == 0, out.output
    data = json.loads(out.stdout)
    by = {(g["target"], g["utc_hour"]): g for g in data["groups"]}
    assert by[("Europe", None)]["verdict"] == "measured better"  # 25 dB is far above any Beverage's gain
    assert by[("Europe", None)]["n_pairs"] >= 20
    assert (tmp_path / "v.png").stat().st_size > 1000
    again = CliRunner().invoke(cli, [*args, "--plot", str(tmp_path / "v.png")])
    assert again.exit_code == 2 and "--overwrite" in again.output
    text = CliRunner().invoke(cli, args)
    assert text.exit_code == 0 and "measured better" in text.output and "90 % interval" in text.output
    assert "Europe: Beverage Europe does better against TX vertical than predicted" in text.output
    assert any(v.startswith("Europe: Beverage Europe does better") for v in data["verdicts"])


@pytest.mark.parametrize(
    "extra, message",
    [
        (["--a", "nothing here", "--b", "TX vertical"], "not in the scenario"),
        (["--a", "Beverage Europe"], "name both antennas"),
        # every difference would be 0 dB, and --write would fit the site's level to it (a tester's run "agreed")
        (["--a", "Beverage Europe", "--b", "Beverage Europe"], "--a and --b both name 'Beverage Europe'"),
        # "reference" is the reference's other name (it said "candidate: needs at least 1 item(s)")
        (["--a", "reference", "--b", "TX vertical"], "both name the reference ('TX vertical')"),
    ],
)
def test_cli_bad_input(extra, message):
    out = CliRunner().invoke(
        cli, ["verify", WREN, *extra, "--log-a", str(DATA / "a.txt"), "--log-b", str(DATA / "b.txt")]
    )
    assert out.exit_code == 2 and message in out.output
    assert "Traceback" not in out.output


def test_cli_one_log_for_both_antennas_is_refused():
    log = str(DATA / "a.txt")
    out = CliRunner().invoke(
        cli, ["verify", WREN, "--a", "Beverage Europe", "--b", "TX vertical", "--log-a", log, "--log-b", log]
    )
    assert out.exit_code == 2 and "--log-a and --log-b are the same file" in out.output


@pytest.mark.parametrize("kind", ["log", "csv", "spots", "places"])
def test_cli_examples(kind):
    out = CliRunner().invoke(cli, ["verify", "--example", kind])
    assert out.exit_code == 0 and out.output == vf.EXAMPLES[kind]


def test_cli_spots_and_listeners(tmp_path):
    spots = tmp_path / "spots.csv"
    spots.write_text(vf.EXAMPLES["spots"] + "2026-12-02 00:08:00,1.8366,WSPR,-20,Q1ABC,FN42,Q8XYZ\n")
    base = ["verify", WREN, "--a", "Beverage Europe", "--b", "TX vertical", "--spots", str(spots)]
    out = CliRunner().invoke(cli, base)
    assert out.exit_code == 2 and "2 listeners" in out.output and "--listener" in out.output
    out = CliRunner().invoke(cli, [*base, "--listener", "Q9XYZ", "--format", "json"])
    assert out.exit_code == 0, out.output
    data = json.loads(out.stdout)
    assert data["pairs"] == 2 and data["lines_not_used"]["another listener than Q9XYZ"]["lines"] == ["spots:8"]


def test_mangled_logs_never_raise(tmp_path):
    """Seeded mutations of the hand-made logs (characters dropped, doubled, replaced, lines cut): every line is
    either used or counted, and nothing raises."""
    rng = np.random.default_rng(42)
    lines_a = (DATA / "a.txt").read_text().splitlines()
    lines_b = (DATA / "b.txt").read_text().splitlines()
    junk = list("0123456789:_-.~?<>/ ABCDEFGHIJKLMNOPQRSTUVWXYZ\t\u00e9\u2212")
    for trial in range(25):
        out = []
        for lines in (lines_a, lines_b):
            mangled = []
            for line in lines:
                if line and rng.random() < 0.3:
                    chars = list(line)
                    for _ in range(rng.integers(1, 4)):
                        i = int(rng.integers(0, len(chars)))
                        op = rng.integers(0, 4)
                        if op == 0:
                            del chars[i]
                        elif op == 1:
                            chars.insert(i, str(rng.choice(junk)))
                        elif op == 2:
                            chars[i] = str(rng.choice(junk))
                        else:
                            chars = chars[:i]
                        if not chars:
                            break
                    line = "".join(chars)
                mangled.append(line)
            out.append("\n".join(mangled) + "\n")
        (tmp_path / "a.txt").write_text(out[0])
        (tmp_path / "b.txt").write_text(out[1])
        r = vf.verify(
            WREN, a_name="A", b_name="B", log_a=tmp_path / "a.txt", log_b=tmp_path / "b.txt", predict_too=False
        )
        assert r.problems.count() > 0, trial
        # every line accounted for: used in a placed pair, or counted once under a reason (an invalid locator is a
        # note on a line that is still used; an unplaceable pair is counted on its A line)
        counted = {"A": 0, "B": 0}
        unplaceable = 0
        for reason, where in r.problems.by_reason.items():
            if reason.startswith("locator not valid"):
                continue
            for label, _ in where:
                counted[label] += 1
                unplaceable += reason.startswith("unplaceable")
        for label, text in (("A", out[0]), ("B", out[1])):
            n = sum(1 for ln in text.splitlines() if ln.split() and not ln.split()[0].startswith("#"))
            assert n == len(r.pairs) + counted[label] + (unplaceable if label == "B" else 0), (trial, label)


def test_an_hour_without_decodes_toward_a_target_is_left_out_not_warned():
    # toward "west" only hour 1 was decoded, toward "east" hours 1 and 2: west's table has no hour 2 row (it was
    # one warning per such hour: "only 0 pairs (fewer than 20)"), and a target with no decode at all says so once
    import pandas as pd

    rows = [("east", 1, 1.0)] * 25 + [("east", 2, 2.0)] * 25 + [("west", 1, -1.0)] * 25
    placed = pd.DataFrame(rows, columns=["target", "hour", "diff_db"])
    groups = vf.summarise(placed, ["east", "west", "north"], None, n_boot=50)
    keys = [(g.target, g.hour) for g in groups]
    assert keys == [("east", None), ("east", 1), ("east", 2), ("west", None), ("west", 1), ("north", None)]
    north = groups[-1]
    assert north.n == 0 and north.verdict == "too few pairs" and north.warnings == ("no pairs: no verdict",)
    assert not any("0 pairs" in w for g in groups for w in g.warnings)


def test_a_header_that_names_a_column_twice_is_an_input_error():
    from snrgain.tools import logs as lg

    text = "time_utc,band,band,mode,snr_db,tx_call,tx_locator,rx_call\n2026-12-02 00:00:00,1.8366,1.8366,WSPR,-21,"
    text += "Q1ABC,FN42,Q9XYZ\n"
    with pytest.raises(ValueError, match=r"spots: line 1: the header names 'band' more than once"):
        lg.parse_spots_csv(text, "spots", lg.Problems())


def test_a_lone_pair_and_the_header_read_as_words():
    # "only 1 pairs" and "months [12], UTC hours [0, 2]" (Python lists) in the report, as a review read them
    import pandas as pd

    rows = [("east", 1, 1.0)] * 25 + [("east", 2, 2.0)]
    groups = vf.summarise(pd.DataFrame(rows, columns=["target", "hour", "diff_db"]), ["east"], None, n_boot=50)
    lone = next(g for g in groups if g.hour == 2)
    assert lone.warnings == ("only 1 pair (fewer than 20): no verdict",)
    two = vf.summarise(pd.DataFrame(rows[:2], columns=["target", "hour", "diff_db"]), ["east"], None, n_boot=50)
    assert "only 2 pairs (fewer than 20): no verdict" in two[0].warnings


def test_the_reports_header_lists_months_and_hours_as_words(tmp_path):
    from tests.test_learn import WREN, A, B, _logs

    pa, pb = _logs(tmp_path, 0.0, seed=11, stations=3)
    r = vf.verify(WREN, a_name=A, b_name=B, log_a=pa, log_b=pb, n_boot=50, seed=1, predict_too=False)
    head = vf.report_lines(r)[0]
    from snrgain.outputs.output import hours_text

    assert "[" not in head and head.endswith(f"months {', '.join(map(str, r.months))}; {hours_text(r.hours)}")
