"""What a newcomer met following the README: check and rank agreeing, keys with units, unknown keys, the noise
command without the P.372 data, messages that show the value, the README's own figures and examples."""

import json
import os
import re
import shutil
import subprocess
import sys

import pytest
from click.testing import CliRunner

from snrgain.cli.main import cli
from tests.conftest import REPO, SCENARIOS

NEIGHBOUR_BY_BEARING = 'bearing = "270 deg"\n'
NEIGHBOUR_PLACED = 'position = [-60, 20]\nheight = "2 m"\npolarisation = "vertical"\n'


@pytest.fixture
def runner():
    return CliRunner()


@pytest.fixture
def demo_copy(tmp_path):
    """alder-hollow.toml copied with its patterns/ folder beside it; returns a function writing a changed copy."""
    shutil.copytree(SCENARIOS / "patterns", tmp_path / "patterns")
    text = (SCENARIOS / "alder-hollow.toml").read_text(encoding="utf-8")

    def write(old=None, new=None, extra="", name="a.toml"):
        out = text if old is None else text.replace(old, new)
        assert old is None or out != text
        path = tmp_path / name
        path.write_text(out + extra, encoding="utf-8")
        return path

    return write


def _problems(res) -> str:
    assert res.exit_code == 2, res.output
    assert "Traceback" not in res.output
    return res.output


# -- 1. a placed source and a pattern table of total gain only ------------------------------------------------


def test_a_total_gain_table_beside_a_placed_source_is_refused_by_check_and_rank_alike(runner, demo_copy):
    # check said valid and rank stopped on "the table gives total gain only": a placed source's field has a
    # polarisation, read through the partial gains, which a gain_dbi table does not give.
    path = demo_copy(NEIGHBOUR_BY_BEARING, NEIGHBOUR_PLACED)
    said = []
    for command in ("check", "rank"):
        out = _problems(runner.invoke(cli, [command, str(path)]))
        assert 'candidate 4 ("cardioid pair toward Europe").file' in out
        assert "cardioid-pair.csv" in out and "total gain only" in out
        assert "gain_v_dbi and gain_h_dbi" in out and "by its bearing" in out
        said.append(out.split("cardioid pair toward Europe", 1)[1])
    assert said[0] == said[1]


def test_a_table_with_both_partial_gains_reads_a_placed_source(runner, demo_copy, tmp_path):
    # The refusal is about the missing columns, not pattern tables: the same pattern given as partial gains passes.
    src = (tmp_path / "patterns" / "cardioid-pair.csv").read_text(encoding="utf-8").splitlines()
    rows = [ln for ln in src if ln and not ln.startswith("#")]
    assert rows[0] == "azimuth_deg,elevation_deg,gain_dbi"
    table = ["azimuth_deg,elevation_deg,gain_v_dbi,gain_h_dbi"] + [f"{r},-100" for r in rows[1:]]
    (tmp_path / "patterns" / "cardioid-pair.csv").write_text("\n".join(table) + "\n", encoding="utf-8")
    res = runner.invoke(cli, ["check", str(demo_copy(NEIGHBOUR_BY_BEARING, NEIGHBOUR_PLACED))])
    assert res.exit_code == 0, res.output


# -- 2. z0 with its unit ------------------------------------------------------------------------------------------

MEASURED = """
[[candidate]]
name = "Bev measured"
family = "beverage"
position = [0, -100]
length = "250 m"
height = "2 m"
bearing = 45
velocity_factor = 0.9
attenuation = "2 dB/100m"
z0 = {z0}
"""


def test_z0_takes_ohms_with_the_unit_or_as_a_bare_number(runner, demo_copy):
    from snrgain.antennas import from_spec

    for z0 in ('"500 ohm"', "500"):
        res = runner.invoke(cli, ["check", str(demo_copy(extra=MEASURED.format(z0=z0)))])
        assert res.exit_code == 0, res.output
    spec = {"family": "beverage", "length": "250 m", "height": "2 m", "velocity_factor": 0.9, "attenuation": 2.0}
    with_unit, bare = (from_spec({**spec, "z0": z}) for z in ("500 ohm", 500))
    assert with_unit.params.z0 == bare.params.z0 == 500.0
    out = _problems(runner.invoke(cli, ["check", str(demo_copy(extra=MEASURED.format(z0='"5000 ohm"')))]))
    assert 'candidate 6 ("Bev measured").z0: must be > 0 ohm and <= 2000 ohm; got "5000 ohm"' in out


# -- 3. unknown keys ----------------------------------------------------------------------------------------------


def test_unknown_keys_are_answered_from_the_table_read_and_named_with_their_section(runner, demo_copy):
    # "did you mean" offered keys of other sections and looped: elevation -> min_elevation -> elevation.
    path = demo_copy(
        "[noise.galactic]\n",
        "[noise.galactic]\nelevation = 5\n",
        extra='[plan]\nmax_antennas = 2\n[compute]\nmin_elevation = 3\n[[candidate]]\nname = "x"\n'
        'family = "beverage"\nlength = "100 m"\nheight = "2 m"\nlenght = 3\n',
    )
    text = path.read_text(encoding="utf-8").replace("[receiver]\n", "[receiver]\nmax_antennas = 2\nnoise_figur = 3\n")
    path.write_text(text, encoding="utf-8")
    out = _problems(runner.invoke(cli, ["check", str(path)]))
    assert "noise.galactic.elevation: unknown key here: 'elevation' is a key of [[noise.local]] and [[target]]" in out
    assert "receiver.max_antennas: unknown key here: 'max_antennas' is a key of [plan], not of this table" in out
    assert "compute.min_elevation: unknown key here: 'min_elevation' is a key of [[target]]" in out
    assert "receiver.noise_figur: unknown key (did you mean 'noise_figure'?)" in out
    assert "lenght: unknown key (did you mean 'length'?)" in out
    assert "did you mean 'min_elevation'" not in out and "did you mean 'antennas'" not in out


def test_a_near_key_is_offered_only_from_the_table_read():
    from snrgain.unknown_keys import unknown_key_message

    # [noise.galactic] has no key near "min_elevation": nothing is offered from [[target]]'s keys as a spelling.
    msg = unknown_key_message("ScenarioModel", ("noise", "galactic", "min_elevation"))
    assert "did you mean" not in msg and "[[target]]" in msg
    assert unknown_key_message("ScenarioModel", ("noise", "galactic", "enabeld")) == (
        "unknown key (did you mean 'enabled'?)"
    )
    assert unknown_key_message("ScenarioModel", ("recever",)) == "unknown key (did you mean 'receiver'?)"


# -- 4. the noise command without the P.372 data ------------------------------------------------------------------


def test_noise_without_the_p372_data_shows_the_other_rows_and_says_what_the_atmospheric_row_needs(monkeypatch):
    monkeypatch.delenv("SNRGAIN_P372_DIR", raising=False)
    args = ["noise", "--lat", "41.6", "--lon", "-72.35", "--month", "1", "--frequency", "1.83 MHz"]
    res = CliRunner().invoke(cli, args)
    assert res.exit_code == 0, res.output
    assert "man-made (residential)" in res.stdout and "galactic" in res.stdout
    assert "total, no atmospheric" in res.stdout and "Atmospheric noise arrival" not in res.stdout
    assert "--p372-dir" in res.stderr and "SNRGAIN_P372_DIR" in res.stderr and "atmospheric row" in res.stderr
    assert "data_dir" not in res.stderr and "given" not in res.stderr  # scenario keys the command has not
    data = json.loads(CliRunner().invoke(cli, [*args, "--format", "json"]).stdout)
    assert set(data["components"]) == {"man-made (residential)", "galactic"} and data["directions"] is None
    assert any("--p372-dir" in w for w in data["warnings"])
    nothing = CliRunner().invoke(cli, [*args, "--environment", "none", "--no-galactic"])
    assert nothing.exit_code == 2 and "leaves nothing to show" in nothing.output


# -- 5. messages with the value -----------------------------------------------------------------------------------


def test_a_reversed_elevation_range_shows_the_range_given(runner, demo_copy):
    out = _problems(runner.invoke(cli, ["check", str(demo_copy("elevation = [5, 25]", "elevation = [25, 5]"))]))
    assert 'target 1 ("Europe").elevation: the range [25, 5] deg is reversed' in out and "[5, 25]" in out


@pytest.mark.parametrize("command", ["check", "rank", "layout"])
def test_a_folder_given_as_the_scenario_gets_the_tools_own_message(runner, tmp_path, command):
    (tmp_path / "figs").mkdir()
    out = _problems(runner.invoke(cli, [command, str(tmp_path / "figs")]))
    assert "is a folder, not a regular file; give a file" in out and "Usage:" not in out


# -- 6, 7, 8, 9. the README's figures and examples as written --------------------------------------------------------


def _wire(*extra):
    args = ["wire", "--family", "bog", "--diameter", "1.6 mm", "--length", "250 ft", "--depth", "5 cm"]
    out = []
    for f in ("1.83 MHz", "3.6 MHz"):
        res = CliRunner().invoke(cli, [*args, "--frequency", f, "--format", "json", *extra])
        assert res.exit_code == 0, res.output
        out.append(json.loads(res.stdout)["line"])
    return out


def test_the_readme_buried_bog_figures_come_from_wire_with_the_permittivity_it_states():
    readme = " ".join((REPO / "README.md").read_text(encoding="utf-8").split())
    assert "0.8 mm PVC of relative permittivity 3.5" in readme and "--insulation-permittivity 3.5" in readme
    said = re.search(r"buried 5 cm deep, (\S+)-(\S+), (\d+)-(\d+) dB/100 m and (\d+)-(\d+) ohm", readme).groups()
    vf, att, z0 = [tuple(float(x) for x in said[i : i + 2]) for i in (0, 2, 4)]
    lines = _wire("--insulation-permittivity", "3.5")
    assert (round(lines[0]["velocity_factor"], 2), round(lines[1]["velocity_factor"], 2)) == vf
    assert tuple(round(ln["attenuation_db_per_100m"]) for ln in lines) == att
    assert all(z0[0] <= abs(complex(*ln["z0_ohm"])) <= z0[1] for ln in lines)
    default = re.search(r"permittivity 3 the buried wire loses (\d+)-(\d+) dB/100 m", readme).groups()
    assert tuple(round(ln["attenuation_db_per_100m"]) for ln in _wire()) == tuple(int(x) for x in default)
    res = CliRunner().invoke(
        cli, ["wire", "--length", "80 m", "--frequency", "1.83 MHz", "--insulation-permittivity", "3"]
    )
    assert res.exit_code == 2 and "only a wire on the ground (bog)" in res.output


def test_the_readme_stdin_example_works_as_written():
    readme = (REPO / "README.md").read_text(encoding="utf-8")
    (folder, name) = re.search(r"`cd (\S+) && snrgain check - < (\S+)`", readme).groups()
    res = subprocess.run(
        [sys.executable, "-m", "snrgain.cli.main", "check", "-"],
        stdin=(REPO / folder / name).open("rb"),
        cwd=REPO / folder,
        capture_output=True,
        text=True,
        timeout=120,
        env={**os.environ, "PYTHONPATH": str(REPO)},
    )
    assert res.returncode == 0, res.stderr
    assert res.stdout.startswith("<standard input>: valid")


def test_bench_help_lists_its_modes_and_runs_nothing():
    res = subprocess.run(
        [sys.executable, str(REPO / "benchmarks" / "bench.py"), "--help"],
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert res.returncode == 0, res.stderr
    for mode in ("--site", "--bands", "--sweep", "--nec"):
        assert mode in res.stdout
    assert "cold start" not in res.stdout.lower()
