"""Several bands in one scenario ([[band]]): each band answered as a file of it alone, one plan for all."""

import json
import re

import pytest
from click.testing import CliRunner

import snrgain
from snrgain.cli.main import cli
from snrgain.errors import ScenarioError
from snrgain.model.pipeline import evaluate_bands
from tests.conftest import REPO

SITE = REPO / "tests" / "data" / "sites" / "three-bands.toml"


def _single_band_text(name: str, frequency: str, hours: str | None, targets: tuple[str, ...]) -> str:
    """The three-band file rewritten by hand as a file of one band: its [band] table, its hours in [time], only
    its targets."""
    text = SITE.read_text()
    text = re.sub(
        r"\[\[band\]\].*?(?=\n\[time\])", f'[band]\nfrequency = "{frequency}"\nbandwidth = "500 Hz"\n', text, flags=re.S
    )
    if hours:
        text = text.replace("utc_hours = [0, 2, 4, 6]", f"utc_hours = {hours}")
    if "Japan" not in targets:
        text = re.sub(r"\[\[target\]\]\nname = \"Japan\".*?(?=\n\[reference\])", "", text, flags=re.S)
    return text.replace('bands = ["80 m", "40 m"]\n', "")


@pytest.fixture(scope="module")
def bands():
    return evaluate_bands(SITE)


@pytest.mark.parametrize(
    "name, frequency, hours, targets",
    [
        ("160 m", "1.83 MHz", None, ("Europe",)),
        ("80 m", "3.55 MHz", None, ("Europe", "Japan")),
        ("40 m", "7.03 MHz", "[22, 0, 2, 4]", ("Europe", "Japan")),
    ],
)
def test_each_band_equals_a_file_of_that_band_alone(bands, name, frequency, hours, targets):
    alone = snrgain.evaluate(_single_band_text(name, frequency, hours, targets))
    r = bands.band(name)
    assert r.freq_hz == alone.freq_hz and [t["name"] for t in r.targets] == list(targets)
    for a, b in zip(r.antennas, alone.antennas):
        assert a.name == b.name
        for key in ("snr_gain_median_db", "snr_gain_p10_db", "snr_gain_p90_db", "rdf_db", "front_to_back_db"):
            assert getattr(a, key) == pytest.approx(getattr(b, key), abs=0.01), (name, a.name, key)
    # and --band NAME loads the same single-band scenario
    assert snrgain.evaluate(snrgain.scenario.load(SITE, band=name)).candidates[0].snr_gain_median_db == (
        pytest.approx(r.candidates[0].snr_gain_median_db, abs=1e-9)
    )


def test_the_plan_across_bands_builds_each_antenna_once_and_uses_the_bands_statistic(bands):
    p = bands.plan
    assert len(p.antennas) == len(set(p.antennas)) and p.antennas
    assert set(bands.columns) == {
        ("160 m", "Europe"),
        ("80 m", "Europe"),
        ("80 m", "Japan"),
        ("40 m", "Europe"),
        ("40 m", "Japan"),
    }
    for c, rows in p.by_target.items():
        band, target = bands.columns[c]
        r = bands.band(band)
        t = [x["name"] for x in r.targets].index(target)
        for s in rows:
            served = r.reference if s.antenna == r.reference.name else r.antenna(s.antenna)
            # the same number the band's own ranking shows for that target (the reference's is 0)
            expected = 0.0 if served is r.reference else served.snr_gain_median_db[t]
            assert s.snr_gain_db == pytest.approx(expected, abs=1e-9)
    # the bands' weights: every band counts alike, so the plan's worth lies within the bands' own worths' range
    worths = [r.plan.gain_db for _, r in bands.bands]
    assert min(worths) - 1e-9 <= p.gain_db <= max(worths) + 1.0


def test_several_bands_on_the_command_line(tmp_path):
    runner = CliRunner()
    res = runner.invoke(cli, ["rank", str(SITE), "--format", "json"])
    assert res.exit_code == 0, res.output
    d = json.loads(res.stdout)
    assert [b["band"] for b in d["bands"]] == ["160 m", "80 m", "40 m"]
    assert d["bands"][1]["frequency_hz"] == 3.55e6 and d["station_plan"]["antennas"]
    res = runner.invoke(cli, ["rank", str(SITE), "--format", "csv"])
    lines = res.stdout.splitlines()
    assert lines[0].startswith("band,") and {ln.split(",")[0] for ln in lines[1:]} == {"160 m", "80 m", "40 m"}
    res = runner.invoke(cli, ["rank", str(SITE)])
    assert "Station plan for every band" in res.stdout and "80 m: 3.55 MHz" in res.stdout
    res = runner.invoke(cli, ["report", str(SITE), "-o", str(tmp_path / "r.html")])
    assert res.exit_code == 2 and "--band NAME" in res.output
    res = runner.invoke(cli, ["report", str(SITE), "-o", str(tmp_path / "r.html"), "--band", "40 m"])
    assert res.exit_code == 0, res.output
    res = runner.invoke(cli, ["check", str(SITE)])
    assert res.exit_code == 0 and res.stdout.count("valid") == 3


def test_bad_band_tables_are_named():
    text = SITE.read_text()
    with pytest.raises(ScenarioError, match=r"target 2.bands: no band named \['20 m'\]"):
        evaluate_bands(text.replace('bands = ["80 m", "40 m"]', 'bands = ["20 m"]'))
    with pytest.raises(ScenarioError, match=r"band 2.name: '160 m' is already used by band 1"):
        evaluate_bands(text.replace('name = "80 m"', 'name = "160 m"'))
    with pytest.raises(ScenarioError, match=r'band "40 m": band.frequency'):
        evaluate_bands(text.replace('frequency = "7.03 MHz"', 'frequency = "70 MHz"'))
    with pytest.raises(ScenarioError, match=r"--band: no band named '20 m'"):
        snrgain.scenario.load(SITE, band="20 m")
    with pytest.raises(ScenarioError, match=r"this scenario has 3 bands"):
        snrgain.scenario.load(SITE)


def test_three_bands_with_switched_antennas_build_each_antenna_once():
    # 160/80/40 m with a four-square switched to four bearings, a reversible two-wire Beverage, a BOG and a flag
    # pair switched front and back: each band equals a run of that band alone (--band) to 0.01 dB, and the plan
    # across the bands names each antenna to build once, with the state that serves each band and target.
    path = REPO / "tests" / "data" / "sites" / "three-bands-switched.toml"
    br = evaluate_bands(path)
    for name, r in br.bands:
        alone = snrgain.evaluate(snrgain.scenario.load(path, band=name))
        for a, b in zip(r.antennas, alone.antennas):
            assert a.name == b.name
            assert a.snr_gain_median_db == pytest.approx(b.snr_gain_median_db, abs=0.01)
    p = br.plan
    assert len(p.antennas) == len(set(p.antennas))
    groups = {a.group for _, r in br.bands for a in r.candidates if a.group}
    assert groups == {"four-square", "two-wire Beverage", "flag pair"}
    for rows in p.by_target.values():
        for s in rows:
            assert s.group is None or s.group in p.antennas  # a state serves only if its antenna is built
    text = CliRunner().invoke(cli, ["rank", str(path)]).stdout
    assert "two-wire Beverage: adds" in text and "serves 160 m, 80 m, 40 m" in text
