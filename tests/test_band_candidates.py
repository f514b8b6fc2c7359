"""A file of several bands where not every antenna serves every band: a candidate's ``bands`` (what it is built
for) and a band's own ``reference`` (where the file's reference does not serve that band: a transmitting vertical
too tall for 40 m) (snrgain.scenario.bands)."""

import pytest
from click.testing import CliRunner

import snrgain
from snrgain.cli.main import cli
from snrgain.errors import ScenarioError
from snrgain.model.pipeline import evaluate_bands
from tests.scenario_text import VERTICAL, scenario_text

CANDIDATES = """
[[candidate]]
name = "Beverage NE"
family = "beverage"
position = [50, -100]
length = "250 m"
height = "2.5 m"
bearing = 50
termination = "500 ohm"

[[candidate]]
name = "40 m pair"
family = "phased-verticals"
bands = ["40 m"]
positions = [[60, 60], [66, 66]]
height = "4 m"
bearing = 50
"""
TALL = VERTICAL.format(height="18 m", east=0, north=0) + 'top_loading = "12 m"\n'
OWN_REFERENCE = 'reference = { name = "40 m vertical", family = "vertical", height = "10 m", position = [0, 0] }'


def _station(band_reference: str = OWN_REFERENCE) -> str:
    return scenario_text(
        name="Quillon Hill",
        ground='"moist loam"',
        bands={"160 m": ("1.83 MHz", ""), "40 m": ("7.03 MHz", band_reference + "\n")},
        utc_hours=(0, 4),
        reference=TALL,
        candidates=CANDIDATES,
    )


def test_a_candidate_is_built_for_its_bands_and_a_band_ranks_against_its_own_reference(tmp_path):
    br = evaluate_bands(_station())
    r160, r40 = br.band("160 m"), br.band("40 m")
    assert [a.name for a in r160.candidates] == ["Beverage NE"]  # the 40 m pair is not built for 160 m
    assert {a.name for a in r40.candidates} == {"Beverage NE", "40 m pair"}
    assert r160.reference.name == "TX vertical" and r40.reference.name == "40 m vertical"
    # each band exactly as a file of that band alone (its own reference, its own candidates)
    alone = snrgain.evaluate(snrgain.scenario.load(_station(), band="40 m"))
    assert alone.reference.name == "40 m vertical"
    assert alone.antenna("40 m pair").snr_gain_median_db == pytest.approx(
        r40.antenna("40 m pair").snr_gain_median_db, abs=0.01
    )
    path = tmp_path / "station.toml"
    path.write_text(_station())
    text = " ".join(CliRunner().invoke(cli, ["rank", str(path)]).stdout.split())
    assert "over each band's reference (160 m: TX vertical; 40 m: 40 m vertical)" in text


def test_without_its_own_reference_the_band_the_file_reference_does_not_serve_is_refused():
    with pytest.raises(ScenarioError, match=r'band "40 m".*reference.*wavelength'):
        evaluate_bands(_station(""))


@pytest.mark.parametrize(
    "change, field, message",
    [
        ('bands = ["40 m"]\npositions', "candidate 2.bands", None),  # fine: the file as written
        ('bands = ["20 m"]\npositions', "candidate 2.bands", r"no band named \['20 m'\]; the bands are '160 m'"),
        ('bands = "40 m"\npositions', "candidate 2.bands", r"a list of band names"),
        ("bands = []\npositions", "candidate 2.bands", r"a list of band names"),
    ],
)
def test_a_candidates_bands_are_checked(change, field, message):
    text = _station().replace('bands = ["40 m"]\npositions', change)
    if message is None:
        snrgain.scenario.load(text, band="40 m")
        return
    with pytest.raises(ScenarioError) as exc:
        snrgain.scenario.load(text, band="40 m")
    assert any(where == field and __import__("re").search(message, why) for where, why in exc.value.problems)


def test_a_bands_reference_must_be_a_table():
    with pytest.raises(ScenarioError, match=r"a table of the band's own reference antenna"):
        snrgain.scenario.load(_station('reference = "40 m vertical"'), band="40 m")


def test_a_phasing_unit_needs_its_antennas_on_its_bands():
    unit = (
        '\n[[candidate]]\nname = "unit"\nfamily = "combination"\nantennas = ["Beverage NE", "40 m pair"]\n'
        'bands = ["160 m", "40 m"]\n'
    )
    with pytest.raises(ScenarioError, match=r"'40 m pair' is not built for band '160 m'"):
        evaluate_bands(_station() + unit)
    fine = unit.replace('bands = ["160 m", "40 m"]', 'bands = ["40 m"]')
    br = evaluate_bands(_station() + fine)
    assert "unit" in {a.name for a in br.band("40 m").candidates}


def test_a_file_of_one_band_takes_a_candidates_bands_naming_that_band_only():
    one = scenario_text(frequency="7.03 MHz", candidates=CANDIDATES)  # [band] "7.03 MHz" with a 20 m vertical
    sc = snrgain.scenario.load(one.replace('bands = ["40 m"]', 'bands = ["7.03 MHz"]'))
    assert [a.name for a in sc.candidates] == ["Beverage NE", "40 m pair"]
    with pytest.raises(ScenarioError, match=r"no band named \['40 m'\]; the only band is '7.03 MHz'"):
        snrgain.scenario.load(one)


UNIT = (
    '\n[[candidate]]\nname = "unit"\nfamily = "combination"\nbands = ["40 m"]\n'
    'antennas = ["Beverage NE", "40 m pair"]\n'
)


def test_a_unit_built_for_one_band_builds_its_parts_on_every_band(tmp_path):
    # The plan for every band builds the unit (40 m) and so its Beverage, which serves 160 m alone: one antenna to
    # build, not two, and the Beverage's warnings on 160 m are about what gets built (said, not set apart).
    from dataclasses import replace

    noisy = '\n[receiver]\nnoise_figure = "25 dB"\n'  # a deaf receiver: the Beverage's floor is said on 40 m
    br = evaluate_bands(_station() + UNIT + noisy)
    assert br.plan.antennas == ["unit"]  # the Beverage comes with it (without the parts, both were built)
    assert {"unit", "Beverage NE", "40 m pair"} <= br.built_names()
    (floor,) = [n for n in br.band("40 m").notices if n.antenna == "Beverage NE"]
    on_160 = replace(br, bands=(("160 m", replace(br.band("160 m"), notices=[floor])), br.bands[1]))
    said, apart = on_160.warnings_apart()  # said of the Beverage on 160 m, where the unit is no candidate
    assert "Beverage NE" not in apart and any(w.startswith("[160 m") and "Beverage NE:" in w for w in said)
    path = tmp_path / "unit.toml"
    path.write_text(_station() + UNIT)
    text = CliRunner().invoke(cli, ["rank", str(path)]).stdout
    assert "1. unit: adds" in text and "(build Beverage NE and 40 m pair for it); serves 160 m, 40 m" in text


def test_problems_name_candidates_as_the_file_numbers_them():
    text = _station().replace('height = "2.5 m"', 'height = "-2 m"')  # the Beverage: candidate 1 of the file
    bad = text.replace('name = "Beverage NE"', 'name = "first"', 1)
    bad = bad.replace(
        '[[candidate]]\nname = "first"',
        '[[candidate]]\nname = "40 m only"\nbands = ["40 m"]\nfamily = '
        '"vertical"\nheight = "6 m"\nposition = [90, 0]\n\n[[candidate]]\nname = "first"',
        1,
    )
    with pytest.raises(ScenarioError) as exc:
        snrgain.scenario.load(bad, band="160 m")  # on 160 m it is the band's candidate 1, the file's 2
    assert [w for w, _ in exc.value.problems] == ['candidate 2 ("first").height']


def test_a_band_without_a_candidate_or_with_a_lone_reference_is_said_in_words():
    none_on_160 = _station().replace('termination = "500 ohm"', 'termination = "500 ohm"\nbands = ["40 m"]')
    with pytest.raises(ScenarioError, match=r'band "160 m": no candidate is built for this band'):
        evaluate_bands(none_on_160)
    one = scenario_text(candidates=CANDIDATES.replace('bands = ["40 m"]\n', "")).replace(
        '[band]\nfrequency = "1.83 MHz"\nbandwidth = "500 Hz"\n', f'[band]\nfrequency = "1.83 MHz"\n{OWN_REFERENCE}\n'
    )
    with pytest.raises(ScenarioError, match=r"band.reference: a band's own reference is for a file of several"):
        snrgain.scenario.load(one)


def test_the_band_reference_takes_the_transmitting_verticals_place_there():
    named = _station().replace('ground = "moist loam"\n', 'ground = "moist loam"\ntransmitting = "TX vertical"\n')
    assert snrgain.scenario.load(named, band="40 m").transmitting == "40 m vertical"
    assert snrgain.scenario.load(named, band="160 m").transmitting == "TX vertical"


def test_a_unit_over_a_switched_state_is_on_the_bands_of_its_antenna():
    switched = _station().replace("bearing = 50\ntermination", 'directions = ["50 deg", "230 deg"]\ntermination', 1)
    unit = (
        '\n[[candidate]]\nname = "unit"\nfamily = "combination"\n'
        'antennas = ["Beverage NE NE (50 deg)", "short whip"]\n\n'
        '[[candidate]]\nname = "short whip"\nfamily = "vertical"\nheight = "6 m"\nposition = [80, 0]\n'
    )
    br = evaluate_bands(switched + unit)
    assert "unit" in {a.name for a in br.band("160 m").candidates}


def test_a_sweep_varies_a_candidate_on_its_own_bands_only(tmp_path):
    import csv

    path, out = tmp_path / "station.toml", tmp_path / "sweep.csv"
    path.write_text(_station())
    res = CliRunner().invoke(cli, ["sweep", str(path), "--vary", "40 m pair: height = 3 m, 4 m", "-o", str(out)])
    assert res.exit_code == 0, res.output
    rows = list(csv.DictReader(out.open()))
    assert {row["band"] for row in rows} == {"40 m"} and {row["antenna"] for row in rows} == {"40 m pair"}
    one = tmp_path / "one.toml"  # a file of one band whose candidate names it: the sweep's quick path takes it
    one.write_text(scenario_text(frequency="7.03 MHz", candidates=CANDIDATES).replace('["40 m"]', '["7.03 MHz"]'))
    args = ["sweep", str(one), "--vary", "Beverage NE: length = 200 m, 250 m", "-o", str(out), "--overwrite"]
    res = CliRunner().invoke(cli, args)
    assert res.exit_code == 0, res.output  # it once stopped on the candidate's bands as an unknown key


def test_a_built_antennas_warnings_on_a_band_it_does_not_serve_are_set_apart():
    # The plan builds the Beverage for 160 m and the pair for 40 m: on 40 m the Beverage is built but not used, so
    # what its 40 m figures ask (a preamplifier there, say) is set apart, and said on 160 m where it serves.
    from dataclasses import replace

    from snrgain.decide.plan import Service
    from snrgain.model.results import Notice

    br = evaluate_bands(_station())
    columns = list(br.columns)
    by_target = {
        columns.index(("160 m", "Europe")): [Service("Beverage NE", [1], [0.0], 7.0)],
        columns.index(("40 m", "Europe")): [Service("40 m pair", [1], [0.0], 9.0)],
    }
    plan = replace(br.plan, antennas=["Beverage NE", "40 m pair"], added_db=[5.0, 2.0], by_target=by_target)
    limited = Notice("wire-too-long", "Beverage NE", {})
    bands = tuple((name, replace(r, notices=[limited])) for name, r in br.bands)
    marked = replace(br, plan=plan, bands=bands)
    assert "Beverage NE" in marked.built_names("160 m") and "Beverage NE" not in marked.built_names("40 m")
    said_160, apart_160 = marked.band("160 m").notices_apart(marked.built_names("160 m"))
    said_40, apart_40 = marked.band("40 m").notices_apart(marked.built_names("40 m"))
    assert said_160 == [limited] and apart_40 == [limited]
