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
