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
from tests.scenario_text import one_spot

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
    assert "one band at a time here" in res.output and "invalid scenario" not in res.output  # the file is valid
    res = runner.invoke(cli, ["report", str(SITE), "-o", str(tmp_path / "r.html"), "--band", "40 m"])
    assert res.exit_code == 0, res.output
    res = runner.invoke(cli, ["check", str(SITE)])
    assert res.exit_code == 0 and res.stdout.count("valid") == 3


def test_bad_band_tables_are_named():
    text = SITE.read_text()
    with pytest.raises(ScenarioError, match=r"target 2.bands: no band named \['20 m'\]"):
        evaluate_bands(text.replace('bands = ["80 m", "40 m"]', 'bands = ["20 m"]'))
    with pytest.raises(ScenarioError, match=r"target 2.bands: '80 m' named twice; name each once"):
        evaluate_bands(text.replace('bands = ["80 m", "40 m"]', 'bands = ["80 m", "40 m", "80 m"]'))
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


ONE_SPOT_TWO_BANDS = one_spot("4 m", bands={"80 m": ("3.55 MHz", ""), "40 m": ("7.03 MHz", "")})


def test_the_plan_across_bands_builds_one_of_two_antennas_in_one_place():
    # Two arrays on the same two spots, each the best toward one target on each band: the plan across the bands
    # builds one of them (it built both, as each band's plan did before it was told they stand in one place).
    from dataclasses import replace

    from snrgain.decide.bandplan import plan_across_bands

    br = evaluate_bands(ONE_SPOT_TWO_BANDS)
    p = br.plan
    assert p.alternatives == [("pair NE", "pair SW")]
    assert len(p.antennas) == 1 and {why["reason"] for why in p.not_best.values()} == {"alternative"}
    other = ({"pair NE", "pair SW"} - set(p.antennas)).pop()
    assert {why["best"] for why in p.not_best.values()} == {other}
    unplaced = [(band, replace(r, plan=replace(r.plan, alternatives=[]))) for band, r in br.bands]
    assert sorted(plan_across_bands(unplaced)[0].antennas) == ["pair NE", "pair SW"]
    assert (
        f"the plan builds {p.antennas[0]} in its place"
        in CliRunner().invoke(cli, ["rank", "-"], input=(ONE_SPOT_TWO_BANDS)).stdout
    )


TWO_BAND_BEVERAGE = """
[site]
name = "Hollin Bank (invented)"
latitude = 42.35
longitude = -71.95
ground = "moist loam"

[[band]]
name = "160 m"
frequency = "1.83 MHz"
bandwidth = "500 Hz"

[[band]]
name = "80 m"
frequency = "3.52 MHz"
bandwidth = "500 Hz"

[time]
months = [1]
utc_hours = [0, 4]

[noise.man_made]
environment = "residential"

[noise.atmospheric]
model = "none"

[[noise.local]]
name = "power line insulator"
position = [6, 26]
height = "9 m"
polarisation = "both"
orientation = 90
level = "S7"

[[target]]
name = "Europe"
bearing = 45
elevation = [5, 25]

[reference]
name = "TX vertical"
family = "vertical"
height = "18 m"
ground_loss = "15 ohm"
position = [0, 0]

[[candidate]]
name = "Beverage Europe"
family = "beverage"
length = "168 m"
height = "2 m"
bearing = 45
position = [-29, -38]
"""


def test_one_wire_built_for_two_bands_is_given_one_resistor_that_holds_on_both(tmp_path):
    # A reviewer's multi-band plan built a Beverage once for 160 and 80 m while its build lines gave 575 ohm on one
    # band and 3891 ohm on the other.  Now the plan says so and names the one resistor that loses least at worst,
    # each band's loss read off the resistors tried under its sky; the ranking run again with that resistor written
    # into the file gives each band's gain the notice foretold (within 0.15 dB: the sky's curve is interpolated in
    # log R between the resistors tried).
    path = tmp_path / "site.toml"
    path.write_text(TWO_BAND_BEVERAGE)
    r = evaluate_bands(path)
    (n,) = [n for n in r.notices if n.code == "resistor-per-band"]
    v = n.values
    best = {b: rr.antenna("Beverage Europe").snr_gain_median_db[0] for b, rr in r.bands}
    ohms = [b["termination_ohm"] for b in v["bands"]]
    assert max(ohms) / min(ohms) > 1.25 and min(ohms) < v["common_ohm"] < max(ohms)
    assert any("its best resistor differs between them" in w for w in r.warnings)
    # one weighed answer for the wire built once: no band's own fragile-resistor warning naming another resistor
    assert not [n for _, rr in r.bands for n in rr.notices if n.code == "termination-fragile"]
    # a reviewer: that resistor kept 10-11 dB of front-to-back where |Z0| less the far ground keeps 22-25 dB for
    # 0.1 dB less on 160 m: the notice offers it as the safer build, with its own costs (read off the same curves)
    safer = v["safer"]
    assert safer is not None and safer["words"] == "|Z0| less the far ground"
    fb = {b["band"]: b["front_to_back_db"] for b in v["bands"]}
    assert any(s["front_to_back_db"] - fb[s["band"]] >= 10.0 for s in safer["bands"])
    path.write_text(
        TWO_BAND_BEVERAGE.replace(
            "position = [-29, -38]", f'position = [-29, -38]\ntermination = "{v["common_ohm"]:.1f} ohm"'
        )
    )
    fixed = evaluate_bands(path)
    assert not [n for n in fixed.notices if n.code == "resistor-per-band"]
    for b in v["bands"]:
        got = fixed.band(b["band"]).antenna("Beverage Europe").snr_gain_median_db[0]
        assert got == pytest.approx(best[b["band"]] - b["loss_db"], abs=0.15)


def test_a_level_given_once_is_said_to_be_taken_on_every_band(tmp_path):
    # a reading is of one band; a file of two bands took its S7 on both without a word (a review)
    path = tmp_path / "site.toml"
    path.write_text(TWO_BAND_BEVERAGE)
    r = evaluate_bands(path)
    (n,) = [n for n in r.notices if n.code == "level-every-band"]
    assert n.values["source"] == "power line insulator" and n.values["level_dbm"] == pytest.approx(-85.0)
    assert n.values["bands"] == [band for band, _ in r.bands]
    (said,) = [w for w in r.warnings if "is taken on every band" in w]
    assert "its level (-85 dBm, S7)" in said and "--band" in said
    assert not [n for n in r.band(r.bands[0][0]).notices if n.code == "level-every-band"]  # a band alone: none


def test_one_resistor_that_costs_no_band_anything_is_simply_built():
    # a hostile-input run: "loses least at worst, 0.0 dB on 160 m and 0.0 dB on 80 m ...; or switch the resistor per
    # band (a relay at the far end)": a relay for nothing
    from snrgain.model.notices import Notice
    from snrgain.outputs.messages import notice_text

    def band(name, ohm, loss):
        return {"band": name, "termination_ohm": ohm, "criterion": "snr", "target": "Japan", "loss_db": loss}

    values = {
        "bands": [band("160 m", 300.0, 0.01) | {"front_to_back_db": 20.0}, band("80 m", 420.0, 0.02)],
        "common_ohm": 345.0,
        "common_standard_ohm": 330.0,
        "worst_db": 0.02,
        "worst_band": "80 m",
        "safer": None,
    }
    values["bands"][1]["front_to_back_db"] = 18.0
    text = notice_text(Notice("resistor-per-band", "BOG Japan", values))
    assert text.endswith("(front-to-back 18 dB): build that one") and "relay" not in text
    values["worst_db"] = values["bands"][1]["loss_db"] = 0.4
    assert "switch the resistor per band (a relay at the far end)" in notice_text(
        Notice("resistor-per-band", "BOG Japan", values)
    )


def test_a_wire_serving_several_bands_is_told_to_shrink_only_where_every_band_agrees(bands):
    # A reviewer: the 40 m band told BOG Japan, which the plan builds for 80 m too, to shrink from 90 m to 47 m; at
    # 47 m its 80 m gain fell from 6.5 to 5.1 dB.  A file of the 40 m band alone still says it (there the wire serves
    # 40 m only); the plan across bands, where it serves 80 m too, does not.
    alone = snrgain.evaluate(_single_band_text("40 m", "7.03 MHz", "[22, 0, 2, 4]", ("Europe", "Japan")))
    assert [n for n in alone.notices if n.code == "wire-too-long" and n.antenna == "BOG Japan"]
    served = {sv.antenna for services in bands.plan.by_target.values() for sv in services}
    assert "BOG Japan" in served
    assert not [n for _, r in bands.bands for n in r.notices if n.code == "wire-too-long" and n.antenna == "BOG Japan"]


def test_check_says_each_geometry_warning_once_with_its_bands():
    # A reviewer saw check print every geometry warning once per band (three times on three bands); rank says a
    # warning of several bands once, marked with them.  Check says it so too, after the bands' summaries.
    from tests.conftest import MINIMAL

    one = '[band]\nfrequency = "1.83 MHz"\nbandwidth = "500 Hz"\n'
    two = '[[band]]\nname = "160 m"\nfrequency = "1.83 MHz"\nbandwidth = "500 Hz"\n\n[[band]]\nname = "80 m"\n'
    text = MINIMAL.replace(one, two + 'frequency = "3.55 MHz"\nbandwidth = "500 Hz"\n').replace(
        'ground = "moist loam"\n', 'ground = "moist loam"\nlot = [[-50, -50], [50, -50], [50, 50], [-50, 50]]\n'
    )
    text += '\n[[candidate]]\nname = "bev"\nfamily = "beverage"\nlength = "200 m"\nheight = "2 m"\nbearing = 0\n'
    text += "position = [-40, -40]\n"
    res = CliRunner().invoke(cli, ["check", "-"], input=text)
    assert res.exit_code == 0, res.output
    assert res.stdout.count("<standard input>: valid") == 2
    warned = [ln for ln in res.stdout.splitlines() if "rank would warn" in ln]
    assert len(warned) == 1 and "[160 m, 80 m] bev: runs off the lot" in warned[0]
    assert res.stdout.index(warned[0]) > res.stdout.index("band '80 m':")  # said after both bands
    rank = CliRunner().invoke(cli, ["rank", "-"], input=text)
    assert "[160 m, 80 m] bev: runs off the lot" in rank.stderr  # as rank says it


def test_a_caution_of_several_bands_is_merged_first_then_said_once(tmp_path):
    # A review: the tower's caution was shortened band by band before a warning of several bands was merged, so one
    # warning read two ways and was said twice, the caution in full twice.  Merged first, then said once.
    from click.testing import CliRunner

    from snrgain.cli.main import cli

    text = SITE.read_text().replace(
        'ground = "moist loam"\n',
        'ground = "moist loam"\nstructures = [{ name = "tower", position = [20, 0], height = "30 m" }]\n',
        1,
    )
    head, cands = text.split("[[candidate]]", 1)  # the candidates' bearings, not the targets'
    cands = cands.replace(
        'bearing = "50 deg"\n', 'bearing = "50 deg"\nposition = [10, 5]\nbands = ["160 m", "80 m"]\n', 1
    )
    cands = cands.replace(
        'bearing = "330 deg"\n', 'bearing = "330 deg"\nposition = [30, 5]\nbands = ["80 m", "40 m"]\n', 1
    )
    text = head + "[[candidate]]" + cands
    path = tmp_path / "tower.toml"
    path.write_text(text)
    runner = CliRunner()
    for args in (["check", str(path)], ["rank", str(path)], ["rank", str(path), "--all-warnings"]):
        res = runner.invoke(cli, args)
        assert res.exit_code == 0, res.output
        near = [ln for ln in res.output.splitlines() if "of the structure 'tower'" in ln]
        assert len(near) == 2 and any("[160 m, 80 m] Beverage Europe" in ln for ln in near), (args, near)
        assert any("[80 m, 40 m] BOG Japan" in ln for ln in near), (args, near)
        assert res.output.count("a tower is climbed") == 1, args
