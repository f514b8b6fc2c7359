"""The tools that measure after building, on a switched antenna: a reading or a log names what was connected, one
state of it (as rank names it, or by the antenna's name and the state's shorter label); the switched antenna's own
name is refused with its states listed, exit 2 and no traceback (snrgain.scenario.connected)."""

from __future__ import annotations

import json
import tomllib

import pytest
from click.testing import CliRunner

from snrgain.cli.main import cli
from snrgain.scenario import connected, load
from snrgain.scenario.connected import antenna_names

# A small site with its own noise (no P.372 files): the atmospheric noise given, stronger from the south-west, so that
# a reversible Beverage's two states hear different noise and a reading on one is not a reading on the other.
SITE = """\
[site]
name = "Test plot"
latitude = 50.0
longitude = 10.0
ground = "moist clay"

[band]
frequency = "1.83 MHz"
bandwidth = "500 Hz"

[time]
months = [12]
utc_hours = [0]

[receiver]
noise_figure = "12 dB"

[noise.man_made]
environment = "rural"

[noise.atmospheric]
model = "given"
fa = "60 dB"
upper_decile = "9 dB"
lower_decile = "7 dB"
sector = { from = 180, to = 270, contrast = "10 dB" }

[noise.galactic]
enabled = false

[compute]
nside = 8

[uncertainty]
ground = false
noise_deciles = false
local_sources = false
hours = false

[[target]]
name = "Europe"
bearing = 45
elevation = [5, 25]

[[target]]
name = "Africa"
bearing = 200
elevation = [5, 25]

[reference]
name = "short vertical"
family = "vertical"
height = "3 m"
position = [0, 0]

[[candidate]]
name = "bev"
family = "beverage"
length = "200 m"
height = "2.5 m"
position = [30, 30]
directions = ["45 deg", "225 deg"]

[[candidate]]
name = "flag pair"
family = "terminated-loop"
width = "8 m"
loop_height = "4 m"
height = "1.5 m"
termination = "900 ohm"
position = [-40, 0]
directions = [{ name = "front", bearing = "45 deg" }, { name = "back", bearing = "225 deg" }]
"""


@pytest.fixture
def site(tmp_path):
    path = tmp_path / "site.toml"
    path.write_text(SITE)
    return path


def test_a_state_is_named_as_rank_names_it_or_shorter():
    data = tomllib.loads(SITE)
    loaded = [a.name for a in load(data).antennas]
    # every name loading gives an antenna is one the tools take, and names it
    assert [n for n in antenna_names(data) if n != "reference"] == loaded
    for name in loaded[1:]:
        assert connected(data, name).name == name
    assert connected(data, "bev SW (225 deg)") == connected(data, "bev SW")
    c = connected(data, "bev SW")
    assert (c.table, c.name, c.group) == ("bev", "bev SW (225 deg)", "bev")
    assert connected(data, "flag pair back").name == "flag pair back (225 deg)"  # a named state by its name
    assert connected(data, "reference").table == connected(data, "short vertical").table == "short vertical"
    with pytest.raises(ValueError) as exc:
        connected(data, "bev")
    assert str(exc.value) == (
        "'bev' is a switched antenna of 2 states ('bev NE (45 deg)', 'bev SW (225 deg)'): name the state that was "
        "switched in, e.g. 'bev NE (45 deg)'"
    )
    with pytest.raises(ValueError, match="'bev N' is not in the scenario; its antennas are: short vertical, "):
        connected(data, "bev N")


def test_a_shorter_name_two_states_share_is_refused_and_a_whole_name_wins():
    data = tomllib.loads(SITE)
    data["candidate"].append(
        {
            "name": "four-square",
            "family": "phased-verticals",
            "positions": [[100, 0], [115, 0], [100, 15], [115, 15]],
            "height": "6 m",
            "directions": ["40 deg", "50 deg", "225 deg"],
        }
    )
    with pytest.raises(ValueError, match=r"'four-square NE' names 2 states \('four-square NE \(40 deg\)', "):
        connected(data, "four-square NE")
    assert connected(data, "four-square SW").name == "four-square SW (225 deg)"
    # a candidate named like a state's shorter name: the name stands for two antennas (loading refuses such a
    # scenario; the tools that read the tables first refuse the name, naming both); the state's whole name wins
    data["candidate"].append({"name": "bev NE", "family": "vertical", "height": "5 m", "position": [0, 100]})
    with pytest.raises(ValueError, match=r"'bev NE' names both the antenna 'bev NE' and 'bev NE \(45 deg\)', a state"):
        connected(data, "bev NE")
    assert connected(data, "bev NE (45 deg)").group == "bev"


def _readings(antenna: str) -> str:
    return (
        f'[[reading]]\ntime = 2026-12-02T00:20:00Z\nantenna = "{antenna}"\nfrequency = "1.83 MHz"\n'
        'bandwidth = "2.4 kHz"\nantenna_db = -101.0\nload_db = -110.0\n'
    )


def test_noise_readings_on_a_state(site, tmp_path):
    runner = CliRunner()
    out = {}
    for name in ("bev", "bev SW", "bev SW (225 deg)", "bev NE (45 deg)"):
        (tmp_path / "r.toml").write_text(_readings(name))
        out[name] = runner.invoke(cli, ["noise-readings", str(site), str(tmp_path / "r.toml"), "--format", "json"])
    bare = out["bev"]
    assert bare.exit_code == 2 and "Traceback" not in bare.output, bare.output
    assert "reading[1].antenna: 'bev' is a switched antenna of 2 states ('bev NE (45 deg)', 'bev SW (225 deg)')" in (
        bare.stderr
    )
    assert str(tmp_path / "r.toml") in bare.stderr  # the readings' file
    rows = {}
    for name in ("bev SW", "bev SW (225 deg)", "bev NE (45 deg)"):
        assert out[name].exit_code == 0, out[name].output
        rows[name] = json.loads(out[name].stdout)["readings"][0]
    assert rows["bev SW"] == rows["bev SW (225 deg)"] and rows["bev SW"]["antenna"] == "bev SW (225 deg)"
    # the state's own modelled noise: the south-west state hears the stronger sector
    assert rows["bev SW"]["other_components_k"] > 1.5 * rows["bev NE (45 deg)"]["other_components_k"]


def test_verify_on_a_state(site, tmp_path):
    from snrgain.model.pipeline import evaluate
    from snrgain.scenario import read_source
    from snrgain.tools import verify as vf

    a, b = vf.synthesise(site_lat=50.0, site_lon=10.0, targets=[(45, 3.0)], hours=1, stations_per_target=4, seed=3)
    (tmp_path / "a.txt").write_text(a)
    (tmp_path / "b.txt").write_text(b)
    logs = ["--log-a", str(tmp_path / "a.txt"), "--log-b", str(tmp_path / "b.txt")]
    runner = CliRunner()
    bare = runner.invoke(cli, ["verify", str(site), "--a", "bev", "--b", "short vertical", *logs])
    assert bare.exit_code == 2 and "Traceback" not in bare.output, bare.output
    assert "--a: 'bev' is a switched antenna of 2 states ('bev NE (45 deg)', 'bev SW (225 deg)')" in bare.stderr
    assert "name the state that was switched in" in bare.stderr
    same = runner.invoke(cli, ["verify", str(site), "--a", "bev NE", "--b", "bev NE (45 deg)", *logs])
    assert same.exit_code == 2 and "both name 'bev NE (45 deg)'" in same.stderr
    out = {}
    for name in ("bev NE", "bev NE (45 deg)"):
        res = runner.invoke(cli, ["verify", str(site), "--a", name, "--b", "short vertical", *logs, "--format", "json"])
        assert res.exit_code == 0, res.output
        out[name] = json.loads(res.stdout)
    assert out["bev NE"] == out["bev NE (45 deg)"]
    # the prediction is the state's own SNR gain over the reference, as the scenario's copy ranks it
    _, pred, _, _ = vf.predict(site, "bev NE (45 deg)", "reference", [12], [0])
    _, back, _, _ = vf.predict(site, "bev SW (225 deg)", "reference", [12], [0])
    data, label, base = read_source(site)
    res = evaluate(load(vf.scenario_copy(data, "bev NE (45 deg)", "reference", [12], [0.5]), label=label))
    ne = next(c for c in res.candidates if c.name == "bev NE (45 deg)")
    assert pred[("Europe", 0)] == pytest.approx(
        (ne.snr_gain_median_db[0], ne.snr_gain_p10_db[0], ne.snr_gain_p90_db[0])
    )
    assert abs(pred[("Europe", 0)][0] - back[("Europe", 0)][0]) > 3.0  # the other state is another antenna


def test_calibrate_into_a_state_writes_its_wire(site, tmp_path):
    runner = CliRunner()
    (tmp_path / "r.toml").write_text(runner.invoke(cli, ["calibrate", "--example"]).stdout)
    args = ["calibrate", str(tmp_path / "r.toml"), "--scenario", str(site)]
    written = {}
    for k, into in enumerate(("bev", "bev SW", "bev NE (45 deg)")):
        out = tmp_path / f"o{k}.toml"
        res = runner.invoke(cli, [*args, "--write", str(out), "--into", into])
        assert res.exit_code == 0, res.output
        assert "the measured line into 'bev', one wire for its 2 states" in res.stdout
        written[into] = out.read_text()
    assert written["bev"] == written["bev SW"] == written["bev NE (45 deg)"]
    bev = next(c for c in tomllib.loads(written["bev"])["candidate"] if c["name"] == "bev")
    assert 0.5 < bev["velocity_factor"] < 1
    assert [a.name for a in load(tomllib.loads(written["bev"])).candidates][:2] == [
        "bev NE (45 deg)",
        "bev SW (225 deg)",
    ]
    bad = runner.invoke(cli, [*args, "--write", str(tmp_path / "x.toml"), "--into", "bev N"])
    assert bad.exit_code == 2 and "Traceback" not in bad.output
    assert "--into: the scenario has no candidate named 'bev N'; its candidates are 'bev', 'flag pair'" in bad.stderr


def test_a_sweep_of_a_state_is_refused_naming_its_antenna(site, tmp_path):
    res = CliRunner().invoke(
        cli, ["sweep", str(site), "--vary", "bev SW: length = 150 m, 200 m", "-o", str(tmp_path / "s.csv")]
    )
    assert res.exit_code == 2 and "Traceback" not in res.output
    assert "'bev SW' is one state of the switched antenna 'bev'" in res.stderr
    assert "write 'bev: length = ...'" in res.stderr
