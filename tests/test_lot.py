"""The lot: placement warnings (shapely) and outlines that cannot be."""

import numpy as np
import pytest
from click.testing import CliRunner

import snrgain
from snrgain.cli.main import cli
from snrgain.errors import ScenarioError
from snrgain.scenario import load
from tests.conftest import SCENARIOS
from tests.scenario_text import one_spot

BASE = """
[site]
name = "test lot"
latitude = 44.2
longitude = -71.3
lot = [[-20, -20], [180, -20], [180, 180], [-20, 180]]
keep_out = [{{ name = "house", outline = [[60, 60], [90, 60], [90, 80], [60, 80]] }}]
{extra_site}

[band]
frequency = "1.83 MHz"

[time]
months = [1]
utc_hours = [4]

[uncertainty]
ground = false
noise_deciles = false
local_sources = false

[[noise.local]]
name = "tv"
position = [75, 70]
fa = 60

[[target]]
name = "Europe"
bearing = 45
elevation = [10, 25]

[reference]
family = "vertical"
height = "40 m"

[[candidate]]
name = "inside"
family = "beverage"
length = "150 m"
height = "2 m"
bearing = 0
position = [150, 0]

{candidates}
"""


def _codes(text):
    r = snrgain.evaluate(text)
    return {(n.code, n.antenna) for n in r.notices}


def test_a_wire_inside_the_lot_and_clear_of_everything_draws_no_warning():
    codes = _codes(BASE.format(extra_site="", candidates=""))
    assert not {c for c in codes if c[1] == "inside"}
    assert ("source-in-keep-out", None) in codes  # the TV is in the house: said, not refused
    from snrgain.outputs.messages import notice_text

    r = snrgain.evaluate(BASE.format(extra_site="", candidates=""))
    text = notice_text(next(n for n in r.notices if n.code == "source-in-keep-out"))
    assert "nothing to change" in text  # expected of a device in a house: not a fault (a tester read it as one)


@pytest.mark.parametrize(
    "cand, code",
    [
        ('position = [5, 0]\nbearing = 0\nlength = "250 m"', "off-lot"),  # 5 m from the vertical at the origin
        ('position = [50, 74]\nbearing = 90\nlength = "100 m"', "in-keep-out"),  # 4 m past the TV
        ('position = [100, 20]\nbearing = 90\nlength = "60 m"', "wires-cross"),
        # the inside wire again, 30 cm aside (an alternative with a choke, another height): said as such, not a cross
        ('position = [150.3, 0]\nbearing = 0\nlength = "150 m"', "wires-same-place"),
    ],
)
def test_placement_warnings(cand, code):
    c = f'[[candidate]]\nname = "x"\nfamily = "beverage"\nheight = "2 m"\n{cand}\n'
    r = snrgain.evaluate(BASE.format(extra_site="", candidates=c))
    assert any(n.code == code and "x" in (n.antenna, n.values.get("other")) for n in r.notices)
    if code == "wires-same-place":
        assert not [n for n in r.notices if n.code == "wires-cross"]


@pytest.mark.parametrize(
    "first, second, said",
    [
        ('family = "vertical"\nheight = "6 m"\nposition = [100, 100]', None, True),  # two whips on one spot
        ('family = "vertical"\nheight = "6 m"\nposition = [150.4, 60]', None, True),  # a whip 40 cm off the wire
        ('family = "vertical"\nheight = "6 m"\nposition = [150, 0]', None, True),  # on the wire's feed point
        ('family = "vertical"\nheight = "6 m"\nposition = [152, 60]', None, False),  # 2 m off: two antennas
        (
            'family = "phased-verticals"\nheight = "6 m"\npositions = [[100, 100], [110, 100]]\nbearing = 90',
            None,
            True,
        ),  # an array's element on the whip
    ],
)
def test_two_antennas_in_one_place_are_said_to_be_alternatives(first, second, said):
    # Two whips on one spot, a whip on a Beverage's wire or at its feed point, an array's element on a whip: the model
    # leaves their coupling out, so both cannot be built there; said as alternatives, as two wires in one place are.
    whip = '[[candidate]]\nname = "whip"\nfamily = "vertical"\nheight = "6 m"\nposition = [100, 100]\n'
    c = f'[[candidate]]\nname = "x"\n{first}\n'
    r = snrgain.evaluate(BASE.format(extra_site="", candidates=c + "\n" + whip))
    close = [n for n in r.notices if n.code == "antennas-same-place"]
    pairs = {frozenset((n.antenna, n.values["other"])) for n in close}
    assert (frozenset(("x", "inside")) in pairs or frozenset(("x", "whip")) in pairs) is said
    assert frozenset(("inside", "whip")) not in pairs
    if said:
        from snrgain.outputs.messages import notice_text

        assert "fine as alternatives to compare, but both cannot be built there" in notice_text(close[0])


def test_a_phasing_units_parts_may_stand_together():
    # A sense whip beside the Beverage it works with: a unit's parts are built together by design, not alternatives.
    c = (
        '[[candidate]]\nname = "sense"\nfamily = "vertical"\nheight = "6 m"\nposition = [150.5, 0]\n\n'
        '[[candidate]]\nname = "unit"\nfamily = "combination"\nantennas = ["inside", "sense"]\nbearing = 0\n'
    )
    r = snrgain.evaluate(BASE.format(extra_site="", candidates=c))
    assert not [n for n in r.notices if n.code == "antennas-same-place"]


def test_a_long_wire_near_the_vertical_is_computed_not_flagged_by_distance():
    """A Beverage whose feed stands 14 m from the resonant vertical: its cost is computed through its line model
    (snrgain.physics.scatter.wire_coupling, checked against NEC-2 in tests/test_tx_scatter.py: a few tenths of a dB
    of RDF for a Beverage) and stays under the 1 dB warning; a clearance the user gives still flags it, and a
    two-wire line's reversed port, which is not computed, keeps the half-wave rule."""
    c = '[[candidate]]\nname = "x"\nfamily = "beverage"\nheight = "2 m"\n'
    c += 'position = [10, 10]\nbearing = 45\nlength = "100 m"\n'
    codes = _codes(BASE.format(extra_site="", candidates=c))
    assert not {code for code, a in codes if a == "x" and "tx" in code}
    assert ("near-tx-vertical", "x") in _codes(BASE.format(extra_site='tx_clearance = "40 m"', candidates=c))
    rev = c.replace('"beverage"', '"two-wire"') + 'port = "reverse"\n'
    assert ("near-tx-vertical", "x") in _codes(BASE.format(extra_site="", candidates=rev))


def test_tx_clearance_is_the_users():
    # A compact antenna is not flagged by distance alone (its cost is computed: tests/test_tx_scatter.py); a
    # clearance the user gives is a hard rule for it too.
    c = '[[candidate]]\nname = "x"\nfamily = "vertical"\nheight = "6 m"\nposition = [30, 0]\n'
    assert ("near-tx-vertical", "x") not in _codes(BASE.format(extra_site="", candidates=c))
    assert ("near-tx-vertical", "x") in _codes(BASE.format(extra_site='tx_clearance = "40 m"', candidates=c))
    assert ("near-tx-vertical", "x") not in _codes(BASE.format(extra_site='tx_clearance = "20 m"', candidates=c))


def test_a_feed_line_through_the_users_clearance_is_said():
    """A Beverage's feed line run from its feed point 150 m out to a station entry 7 m from the transmitting vertical:
    inside a 40 m clearance the user gives it is said (a receive line in the vertical's strongest field while
    transmitting), with its distance; without a given clearance, or with one the run keeps, nothing is said."""
    text = BASE.replace("position = [150, 0]\n", 'position = [150, 0]\nfeed_line = {{ to = [5, 5], height = "1 m" }}\n')
    r = snrgain.evaluate(text.format(extra_site='tx_clearance = "40 m"', candidates=""))
    near = [n for n in r.notices if n.code == "feed-line-near-tx-vertical"]
    assert [n.antenna for n in near] == ["inside"]
    assert near[0].values["distance_m"] == pytest.approx(50**0.5, abs=1e-9)
    assert near[0].values["clearance_m"] == 40.0
    from snrgain.outputs.messages import notice_text

    words = notice_text(near[0])
    assert "inside: its feed line passes within 7 m" in words and "keep 40 m" in words
    for site in ("", 'tx_clearance = "5 m"'):
        r = snrgain.evaluate(text.format(extra_site=site, candidates=""))
        assert not [n for n in r.notices if n.code == "feed-line-near-tx-vertical"]


@pytest.mark.parametrize(
    "bad, message",
    [
        ("lot = [[0, 0], [100, 100], [100, 0], [0, 100]]", "lot: the outline is not a simple polygon"),
        ('keep_out = [{ name = "road", outline = [[0, 0], [10, 10], [10, 0], [0, 10]] }]', "keep_out 'road'"),
        ("lot = [[0, 0], [10, 0], [20, 0]]", "lot: the outline is not a simple polygon"),
    ],
)
def test_outlines_that_cannot_be(bad, message, tmp_path):
    text = BASE.format(extra_site="", candidates="")
    key = bad.split(" =")[0]
    lines = [ln for ln in text.splitlines() if not ln.startswith(key + " =")]
    text = "\n".join(lines).replace('name = "test lot"', f'name = "test lot"\n{bad}')
    with pytest.raises(ScenarioError, match=message):
        snrgain.evaluate(text)
    p = tmp_path / "s.toml"
    p.write_text(text)
    res = CliRunner().invoke(cli, ["check", str(p)])
    assert res.exit_code == 2 and "Traceback" not in res.output


def test_no_plan_no_clearance_warning():
    # Without a lot and without the vertical's position there is no plan: an array's element positions may be
    # relative to itself, so its element at [0, 0] is not "at the vertical" (the Marrow Fen demo's case).
    r = snrgain.evaluate(SCENARIOS / "marrow-fen.toml")
    assert not any(n.code == "near-tx-vertical" for n in r.notices)


def test_a_local_source_that_is_most_of_a_candidates_noise_is_said():
    """``local-source-dominates``: the TV (fa 60 inside the house) read by a short vertical 10 m from it is most of
    its noise; the notice's numbers are the candidate's own noise by component (medians over the hours, in power),
    and it names a candidate exactly where the source lies 6 dB or more above the rest (the Beverage far from it is
    not named)."""
    import numpy as np

    c = '[[candidate]]\nname = "whip"\nfamily = "vertical"\nheight = "6 m"\nposition = [75, 55]\n'
    r = snrgain.evaluate(BASE.format(extra_site="", candidates=c))
    said = {n.antenna: n.values for n in r.notices if n.code == "local-source-dominates"}
    assert "whip" in said
    for a in r.candidates:
        watts = {k: 10 ** (np.asarray(v, dtype=float) / 10) for k, v in a.noise_by_component_dbm.items()}
        src = 10 * np.log10(np.median(watts["tv"]))
        rest = 10 * np.log10(np.median(sum(w for k, w in watts.items() if k != "tv")))
        assert (a.name in said) == (src - rest >= 6.0)
        if a.name in said:
            assert said[a.name]["source"] == "tv"
            assert said[a.name]["source_dbm"] == pytest.approx(src, abs=1e-9)
            assert said[a.name]["over_db"] == pytest.approx(src - rest, abs=1e-9)
    from snrgain.outputs.messages import notice_text

    text = notice_text(next(n for n in r.notices if n.code == "local-source-dominates" and n.antenna == "whip"))
    assert text.startswith("whip: the local source 'tv' is most of its noise (")


def test_a_reference_deafened_by_a_local_source_is_said():
    """The same notice of the reference: with the TV 10 dB louder, it is most of the reference's noise,
    so every gain over it is largely how much less of the TV a candidate hears (a tester's 80 m vertical heard a
    television at -79 dBm against -92 dBm of man-made noise, and every quiet antenna "won" without a word)."""
    import numpy as np

    from snrgain.outputs.messages import notice_text

    text = BASE.format(extra_site="", candidates="").replace("fa = 60", "fa = 70")
    assert "fa = 70" in text  # 10 dB more where the reference stands: 6 dB over the man-made noise there
    r = snrgain.evaluate(text)
    said = [n for n in r.notices if n.code == "local-source-dominates" and n.antenna == r.reference.name]
    assert len(said) == 1 and said[0].values["reference"] is True
    watts = {k: 10 ** (np.asarray(v, dtype=float) / 10) for k, v in r.reference.noise_by_component_dbm.items()}
    assert said[0].values["over_db"] == pytest.approx(
        10 * np.log10(np.median(watts["tv"]) / np.median(sum(w for k, w in watts.items() if k != "tv"))), abs=1e-9
    )
    assert "every SNR gain here is largely how much less of it a candidate hears" in notice_text(said[0])
    far = snrgain.evaluate(BASE.format(extra_site="", candidates=""))  # as written, 4 dB under the man-made: not said
    assert not [n for n in far.notices if n.code == "local-source-dominates" and n.antenna == far.reference.name]


@pytest.mark.parametrize(
    "cand, field",
    [
        ('family = "beverage"\nheight = "2 m"\nposition = [0, 0]\nbearing = 45\nlength = "150 m"', "position"),
        ('family = "beverage"\nheight = "2 m"\nposition = [-5, -5]\nbearing = 45\nlength = "150 m"', "position"),
        ('family = "vertical"\nheight = "6 m"\nposition = [0.2, 0]', "position"),
        ('family = "phased-verticals"\nheight = "6 m"\npositions = [[0.5, 0], [0.5, 20]]', "positions"),
    ],
)
def test_an_antenna_on_the_transmitting_vertical_is_an_input_error(cand, field):
    # The vertical stands at the plan's origin (the site has a lot).  A Beverage fed at its base read 56 dB louder than
    # the vertical itself (S9+40) and a whip 0.2 m off drew no word; a wire through its base was said to lie 7 m away.
    c = f'[[candidate]]\nname = "x"\n{cand}\n'
    with pytest.raises(ScenarioError) as err:
        load(BASE.format(extra_site="", candidates=c))
    (path, message), *_ = [(p, m) for p, m in err.value.problems if "transmitting vertical" in m]
    assert path == f'candidate 2 ("x").{field}' and "at least 1 m away" in message


def test_structures_in_one_place_or_named_twice_are_input_errors():
    at_tx = 'structures = [{ name = "tower", position = [0.5, 0], height = "18 m" }]'
    with pytest.raises(ScenarioError, match=r'site.structures 1 \("tower"\).position: it stands 0.50 m from the '):
        load(BASE.format(extra_site=at_tx, candidates=""))
    twice = (
        'structures = [{ name = "t", position = [30, 40], height = "18 m" }, '
        '{ name = "t", position = [60, 40], height = "9 m" }]'
    )
    with pytest.raises(ScenarioError, match=r"name 't' is used twice"):
        load(BASE.format(extra_site=twice, candidates=""))


def test_a_layout_bearing_range_runs_clockwise_and_no_more_than_half_round():
    # ["60 deg", "30 deg"] was read as the 330 deg from 60 clockwise through north, and layout pointed a Beverage
    # meant for 30-60 deg at 295 deg without a word.  A range through north of less than half a turn still holds.
    from tests.conftest import REPO

    text = (REPO / "tests" / "data" / "layout-two-beverages.toml").read_text(encoding="utf-8")
    assert 'bearing = ["30 deg", "60 deg"]' in text
    with pytest.raises(ScenarioError, match=r"from 60 deg clockwise to 30 deg spans 330 deg.*write \[30, 60\]"):
        load(text.replace('bearing = ["30 deg", "60 deg"]', 'bearing = ["60 deg", "30 deg"]'))
    sc = load(text.replace('bearing = ["30 deg", "60 deg"]', 'bearing = ["330 deg", "30 deg"]'))
    assert sc.candidates


def test_the_vertical_is_not_near_itself_under_another_reference():
    # Under --reference the transmitting vertical is a candidate: it was warned of standing "within 0 m of the
    # transmitting vertical".
    c = '[[candidate]]\nname = "x"\nfamily = "vertical"\nheight = "6 m"\nposition = [30, 0]\n'
    c += '[[candidate]]\nname = "y"\nfamily = "vertical"\nheight = "6 m"\nposition = [20, 0]\n'
    text = BASE.format(extra_site='tx_clearance = "40 m"', candidates=c)
    text = text.replace('height = "40 m"\n', 'height = "40 m"\nposition = [0, 0]\n', 1)  # the vertical on the plan
    r = snrgain.evaluate(load(text, reference="x"))
    near = {n.antenna for n in r.notices if n.code == "near-tx-vertical"}
    assert "y" in near and "vertical" not in near  # the file's reference, the vertical, is a candidate here


def test_a_placed_source_keeps_its_distance_from_a_structure_and_an_array_placed_by_its_elements_from_the_vertical():
    # A source 1 cm from a tower's foot read at +8.7 dBm on a whip (the tower's currents in the source's field without
    # bound); an array placed by its elements' positions stood 0.3 m from the vertical unchecked.
    site = 'structures = [{ name = "tower", position = [40, 40], height = "18 m" }]'
    text = BASE.format(extra_site=site, candidates="").replace("position = [75, 70]", "position = [40, 40.3]")
    with pytest.raises(ScenarioError, match=r"the source stands 0.30 m from the structure 'tower'"):
        load(text)
    arr = (
        '[[candidate]]\nname = "arr"\nfamily = "array"\n'
        'elements = [{ family = "vertical", height = "6 m", position = [0.3, 0] }, '
        '{ family = "vertical", height = "6 m", position = [0.3, 20] }]\n'
    )
    with pytest.raises(ScenarioError) as err:
        load(BASE.format(extra_site="", candidates=arr))
    assert any(
        p == 'candidate 2 ("arr").elements' and "0.30 m from the transmitting vertical" in m
        for p, m in err.value.problems
    )


def test_the_header_gives_a_level_read_on_an_antenna_as_written():
    """A source's level read on an antenna is shown as written beside its Fa on P.372's reference monopole: a
    tester's "S8" on the reference read "Fa 68.9 dB", which on the monopole is about S9, and looked like a mistake."""
    import html

    from snrgain.outputs.output import _header
    from snrgain.outputs.report import render

    text = BASE.format(extra_site="", candidates="").replace("fa = 60", 'level = "S8"')
    r = snrgain.evaluate(text)
    src = next(s for s in r.local_sources if s["name"] == "tv")
    assert src["level_dbm"] == pytest.approx(-79.0) and src["read_on"] == r.reference.name
    said = f"tv: Fa {float(r.noise.components['tv']['fa_db'].ravel()[0]):.1f} dB (read S8, -79.0 dBm, on "
    assert said + f"{r.reference.name})" in str(_header(r))
    assert f"tv (read S8, -79.0 dBm, on {r.reference.name})" in html.unescape(render(r))


@pytest.mark.parametrize(
    "lag, said",
    [
        (318.0, "leading 42 deg"),
        (123.0, "lagging 123 deg"),
        (180.0, "lagging 180 deg"),
        (180.3, "lagging 180 deg"),
        (359.7, "in phase"),
        (0.3, "in phase"),
    ],
)
def test_a_units_setting_reads_as_its_dial_within_180_deg(lag, said):
    """A phasing unit's phase reads within 180 deg either way, as its dial does: "sense whip lagging 318 deg" was
    a 42 deg lead to the builder."""
    from snrgain.outputs.output import build_lines

    c = (
        '[[candidate]]\nname = "sense"\nfamily = "vertical"\nheight = "6 m"\nposition = [150, -10]\n\n'
        f'[[candidate]]\nname = "unit"\nfamily = "combination"\nantennas = ["inside", "sense"]\nbearing = 0\n'
        f'setting = {{ phase = {lag}, amplitude = -3, phase_sense = "lag" }}\n'
    )
    r = snrgain.evaluate(BASE.format(extra_site="", candidates=c))
    line = dict(build_lines(r))["unit"]
    assert f"sense {said}" in line and "at -3.0 dB" in line


def test_the_ranking_figure_says_a_best_below_the_reference_so():
    """The ranking figure's "best" beside a target's best bar says when even that one does not beat the reference, as
    the text's verdict does ("-11.0 best" stood beside "no candidate beats the reference"): a second target behind
    the Beverage, which it serves worse than the vertical."""
    import matplotlib

    matplotlib.use("Agg")
    from snrgain.outputs.plots import ranking_chart

    back = '[[target]]\nname = "behind"\nbearing = 180\nelevation = [10, 25]\n\n[reference]'
    r = snrgain.evaluate(BASE.format(extra_site="", candidates="").replace("[reference]", back, 1))
    best = [float(r.antenna(t.best).snr_gain_median_db[i]) for i, t in enumerate(r.target_results)]
    assert min(best) <= 0 < max(best)  # one target served, one not
    fig = ranking_chart(r)
    texts = [t.get_text() for ax in fig.axes for t in ax.texts]
    assert sum(x.endswith("  best, below the reference") for x in texts) == sum(b <= 0 for b in best)
    assert sum(x.endswith("  best") for x in texts) == sum(b > 0 for b in best)


@pytest.mark.parametrize("elevation, said", [("[19.5, 20.5]", "19.5-20.5 deg elevation"), ("[5, 25]", "5-25 deg")])
def test_a_narrow_elevation_range_keeps_its_decimal(elevation, said):
    """A target's elevations of 19.5-20.5 deg read "20-20 deg elevation" in its table's heading."""
    import io

    from rich.console import Console

    from snrgain.outputs.output import ranking_table

    text = BASE.format(extra_site="", candidates="").replace("elevation = [10, 25]", f"elevation = {elevation}", 1)
    assert f"elevation = {elevation}" in text
    console = Console(width=200, record=True, file=io.StringIO())
    console.print(ranking_table(snrgain.evaluate(text)))
    assert said in console.export_text()


@pytest.mark.parametrize(
    "edit, where",
    [
        (None, None),
        (("[[-20, -20], [180, -20], [180, 180], [-20, 180]]", "[[10, 10], [180, 10], [180, 180], [10, 180]]"), "off"),
        (("[[60, 60], [90, 60], [90, 80], [60, 80]]", "[[-10, -10], [10, -10], [10, 10], [-10, 10]]"), "house"),
    ],
)
def test_a_reference_without_a_position_at_an_origin_no_antenna_could_take_is_said(edit, where):
    # A reference with no position stands at the plan's origin, silently; on a plan drawn from a corner of the lot
    # that put the transmitting vertical off the lot or in the house.  Said there; a plan whose origin is the vertical
    # (the lot around it, nothing on it) is left alone.
    from snrgain.decide.lot import site_notices
    from snrgain.outputs.messages import notice_text

    text = BASE.format(extra_site="", candidates="")
    if edit is not None:
        text = text.replace(*edit)
    said = [n for n in site_notices(load(text)) if n.code == "reference-at-origin"]
    if where is None:
        assert not said
        return
    (n,) = said
    expected = {"off": "off the lot", "house": "in the keep-out area 'house'"}[where]
    assert n.values["where"] == expected
    assert f"stands at the plan's origin, [0, 0], which is {expected}" in notice_text(n)


ONE_SPOT = one_spot("5 m", frequency="3.55 MHz")


def test_the_plan_builds_one_of_two_antennas_in_one_place():
    # A reviewer's plan said "build 2 ... 1. pair NE auto ... 2. pair NE given" while a warning said the two touch and
    # both cannot be built there.  Two arrays on the same two spots, each the best toward one target: the plan builds
    # the better of them, serves each target with the best of what it builds, and says why the other's target is not
    # served by its best.
    from snrgain.decide.plan import station_plan, worth
    from snrgain.outputs.messages import plan_not_best_text

    r = snrgain.evaluate(ONE_SPOT)
    assert {frozenset((n.antenna, n.values["other"])) for n in r.notices if n.code == "antennas-same-place"} == {
        frozenset(("pair NE", "pair SW"))
    }
    names = [a.name for a in r.antennas]
    g = np.array([a.snr_gain_median_db for a in r.antennas])
    w = np.array([t["weight"] for t in r.targets])
    assert sorted(station_plan(names, g, w).antennas) == ["pair NE", "pair SW"]  # without the places: both (as was)
    p = r.plan
    assert len(p.antennas) == 1 and p.alternatives == [("pair NE", "pair SW")]
    (built,) = p.antennas
    other = "pair SW" if built == "pair NE" else "pair NE"
    assert p.gain_db == pytest.approx(max(worth(g, w, [1]), worth(g, w, [2])))
    (t,) = [t for t in p.not_best]
    why = p.not_best[t]
    assert why["reason"] == "alternative" and why["best"] == other and why["instead"] == [built]
    assert why["swap_db"] == pytest.approx(worth(g, w, [names.index(other)]) - p.gain_db) and why["swap_db"] <= 0
    text = plan_not_best_text(r.targets[t]["name"], why)
    assert f"is not in the plan because the plan builds {built} in its place (the two stand in one place" in text
    assert "dB less as a whole" in text
    assert r.to_dict()["plan"]["alternatives"] == [["pair NE", "pair SW"]]


def test_the_greedy_plan_and_a_units_parts_keep_to_one_of_two_in_one_place(monkeypatch):
    # The greedy search (beyond EXACT_LIMIT candidates) skips a set holding both too; and a phasing unit stands where
    # its parts stand, so a unit over 'whip' and a second whip on that spot are alternatives as well.
    from snrgain.decide import plan as planmod

    g = np.array([[0.0, 0.0], [6.0, 0.0], [0.0, 4.0]])
    w = np.array([0.5, 0.5])
    monkeypatch.setattr(planmod, "EXACT_LIMIT", 0)
    greedy = planmod.station_plan(["ref", "a", "b"], g, w, alternatives=[(1, 2)])
    assert greedy.method == "greedy" and greedy.antennas == ["a"] and greedy.not_best[1]["reason"] == "alternative"
    monkeypatch.undo()
    u = np.array([[0.0, 0.0], [5.0, 0.0], [0.0, 0.0], [9.0, 0.0], [0.0, 5.0]])  # 'unit' over 'bev' and 'whip'
    names = ["ref", "bev", "whip", "unit", "whip 2"]
    parts = [(), (), (), (1, 2), ()]
    assert planmod.station_plan(names, u, w, parts=parts).antennas == ["unit", "whip 2"]
    p = planmod.station_plan(names, u, w, parts=parts, alternatives=[(2, 4)])  # 'whip 2' on the unit's whip
    assert p.antennas == ["unit"] and ("unit", "whip 2") in p.alternatives
    assert p.not_best[1] | {"swap_db": None} == {
        "best": "whip 2",
        "best_db": 5.0,
        "served_by": "ref",
        "served_db": 0.0,
        "reason": "alternative",
        "instead": ["unit"],
        "weight": 0.5,
        "swap_db": None,
    }


RAISED = """
[[noise.local]]
name = "road line"
position = [153, 100]
height = "8 m"
polarisation = "horizontal"
orientation = 90
fa = 50

[[noise.local]]
name = "pole lamp"
position = [145, 60]
height = "6 m"
fa = 40

[[noise.local]]
name = "fence charger"
position = [40, 152]
height = "1 m"
fa = 40
"""


def test_an_antenna_near_a_raised_source_is_told_to_keep_clear_of_power_lines():
    # A source placed 5 m or more up may be an overhead power line: an antenna within 10 m of one on the plan is told
    # the trade's caution, once however many such sources it passes ("inside" passes two), whatever its family
    # (the loop, 8 m from the line); a low source (the fence charger, 1 m up, 2 m from "low"), a raised one beyond
    # 10 m ("far" loop, 11 m), say nothing.
    from snrgain.decide.lot import site_notices
    from snrgain.outputs.messages import notice_text

    loops = "".join(
        f'[[candidate]]\nname = "{name}"\nfamily = "small-loop"\nwidth = "1 m"\nloop_height = "1 m"\n'
        f'height = "2 m"\nposition = {pos}\n\n'
        for name, pos in (("loop", "[161, 100]"), ("far", "[153, 111]"), ("low", "[40, 150]"))
    )
    text = BASE.format(extra_site="", candidates=RAISED + loops)
    said = [n for n in site_notices(load(text)) if n.code == "near-raised-source"]
    assert sorted(n.antenna for n in said) == ["inside", "loop"]
    # a switched antenna's states stand as one: said once, of the antenna
    switched = (
        '[[candidate]]\nname = "four-square"\nfamily = "phased-verticals"\nheight = "6 m"\ndirections = [45, 225]\n'
        "positions = [[100, 20], [110, 20], [100, 30], [110, 30]]\n\n"
        '[[noise.local]]\nname = "yard light"\nposition = [105, 37]\nheight = "6 m"\nfa = 40\n'
    )
    both = [n for n in site_notices(load(text + switched)) if n.code == "near-raised-source"]
    assert sorted(n.antenna for n in both) == ["four-square", "inside", "loop"]
    inside = next(n for n in said if n.antenna == "inside")
    assert inside.values["source"] == "road line" and inside.values["distance_m"] == pytest.approx(3.0)
    assert inside.values["others"] == ["pole lamp"] and inside.values["height_m"] == 8.0
    sentence = notice_text(inside)
    assert sentence.startswith("inside: comes within 3 m on the plan of noise source 'road line' (and 'pole lamp')")
    assert "well clear of power lines, never where a falling wire or support could touch one" in sentence
    assert "the utility's clearances" in sentence
    res = CliRunner().invoke(cli, ["check", "-"], input=text)
    assert res.exit_code == 0 and res.stdout.count("may be an overhead power line") == 2
    ranked = snrgain.evaluate(text)
    assert sorted(n.antenna for n in ranked.notices if n.code == "near-raised-source") == ["inside", "loop"]
    assert sum("may be an overhead power line" in w for w in ranked.warnings) == 2
