"""The command line through click's CliRunner: exit codes, JSON, files, messages."""

import json

import pytest
from click.testing import CliRunner

from snrgain.cli.main import cli
from snrgain.model.results import SCHEMA_VERSION
from tests.conftest import SCENARIOS


@pytest.fixture
def runner():
    return CliRunner()


def test_rank_table(runner, demo_path):
    res = runner.invoke(cli, ["rank", str(demo_path)])
    assert res.exit_code == 0, res.output
    assert "SNR gain over TX vertical" in res.stdout
    assert "cardioid pair toward Europe" in res.stdout


def test_rank_json_schema_and_units(runner, demo_path):
    res = runner.invoke(cli, ["rank", str(demo_path), "--format", "json"])
    assert res.exit_code == 0, res.stderr
    data = json.loads(res.stdout)
    assert data["schema_version"] == SCHEMA_VERSION
    assert data["frequency_hz"] == 1.83e6
    first = data["candidates"][0]
    assert {"snr_gain_median_db", "rdf_db", "front_to_back_db", "noise_dbm", "margin_db"} <= set(first)
    assert len(first["snr_gain_db"]["values"]) == len(data["targets"])
    for t in data["targets"]:  # per target: ranked by median, best first, the best named
        medians = [row["snr_gain_db"]["median"] for row in t["ranking"]]
        assert medians == sorted(medians, reverse=True) and t["best"]["name"] == t["ranking"][0]["name"]
        assert {"p10", "p90", "nominal"} <= set(t["ranking"][0]["snr_gain_db"])
    assert set(data["plan"]) >= {"antennas", "added_db", "gain_db", "by_target"}
    assert set(data["build"]) == {c["name"] for c in data["candidates"]}


def test_json_matches_results_to_dict(runner, demo_path):
    import snrgain

    res = runner.invoke(cli, ["rank", str(demo_path), "--format", "json"])
    assert json.loads(res.stdout) == json.loads(json.dumps(snrgain.evaluate(demo_path).to_dict()))


def test_rank_csv(runner, demo_path):
    res = runner.invoke(cli, ["rank", str(demo_path), "--format", "csv"])
    assert res.exit_code == 0
    lines = res.stdout.strip().splitlines()
    assert lines[0].startswith("target,rank_for_target,antenna,family,month,utc_hour,snr_gain_db")
    assert len(lines) == 1 + 2 * 6 * 2 * 8  # header + targets x antennas x months x hours (all listened)


def test_output_file_not_overwritten_without_flag(runner, demo_path, tmp_path):
    out = tmp_path / "r.json"
    res = runner.invoke(cli, ["rank", str(demo_path), "--format", "json", "-o", str(out)])
    assert res.exit_code == 0 and json.loads(out.read_text())["schema_version"] == SCHEMA_VERSION
    out.write_text("keep me")
    res = runner.invoke(cli, ["rank", str(demo_path), "--format", "json", "-o", str(out)])
    assert res.exit_code == 2
    assert "--overwrite" in res.stderr
    assert out.read_text() == "keep me"
    res = runner.invoke(cli, ["rank", str(demo_path), "--format", "json", "-o", str(out), "--overwrite"])
    assert res.exit_code == 0 and out.read_text() != "keep me"


def test_table_to_file(runner, demo_path, tmp_path):
    out = tmp_path / "r.txt"
    res = runner.invoke(cli, ["rank", str(demo_path), "-o", str(out)])
    assert res.exit_code == 0
    assert "cardioid pair toward Europe" in out.read_text()


def test_invalid_scenario_exit_2_and_nothing_written(runner, tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text((SCENARIOS / "alder-hollow.toml").read_text().replace('"1.83 MHz"', '"1.83 MHzz"'))
    out = tmp_path / "never.json"
    res = runner.invoke(cli, ["rank", str(bad), "--format", "json", "-o", str(out)])
    assert res.exit_code == 2
    assert "bad.toml: band.frequency" in res.stderr
    assert "Traceback" not in res.output
    assert not out.exists()


def test_check_valid_and_invalid(runner, demo_path, tmp_path):
    res = runner.invoke(cli, ["check", str(demo_path)])
    assert res.exit_code == 0 and "valid" in res.stdout and "South America" in res.stdout
    bad = tmp_path / "bad.toml"
    bad.write_text("[site]\nlatitude = 100\n")
    res = runner.invoke(cli, ["check", str(bad)])
    assert res.exit_code == 2
    assert "site.latitude" in res.stderr and "between -90 and 90" in res.stderr
    assert "band: required key is missing" in res.stderr


def test_a_scenario_from_standard_input(runner, demo_path, tmp_path):
    # "-" reads the scenario from standard input (it said "-: cannot read the file (No such file or directory)")
    from tests.conftest import MINIMAL, REPO

    res = runner.invoke(cli, ["check", "-"], input=MINIMAL)
    assert res.exit_code == 0, res.output
    assert res.stdout.startswith("<standard input>: valid") and "candidate: iso (isotropic)" in res.stdout
    res = runner.invoke(cli, ["rank", "-", "--format", "json"], input=MINIMAL)
    assert res.exit_code == 0 and json.loads(res.stdout)["targets"][0]["ranking"]
    # a file of several bands is read once and checked band by band
    bands = (REPO / "tests" / "data" / "sites" / "three-bands.toml").read_text(encoding="utf-8")
    res = runner.invoke(cli, ["check", "-"], input=bands)
    assert res.exit_code == 0 and res.stdout.count("<standard input>: valid") == 3
    # its problems name standard input; nothing piped is said, as is a copy that needs the file
    res = runner.invoke(cli, ["check", "-"], input="[site]\nlatitude = 100\n")
    assert res.exit_code == 2 and "<standard input>: site.latitude" in res.stderr
    res = runner.invoke(cli, ["check", "-"], input="")
    assert res.exit_code == 2 and "standard input is empty" in res.stderr
    readings = tmp_path / "readings.toml"
    readings.write_text(runner.invoke(cli, ["noise-readings", "--example"]).output, encoding="utf-8")
    site = (SCENARIOS / "wren-corner.toml").read_text(encoding="utf-8")
    res = runner.invoke(cli, ["noise-readings", "-", str(readings), "--write", str(tmp_path / "copy.toml")], input=site)
    assert res.exit_code == 2 and "a scenario copy is made from a file" in res.stderr


def test_standard_input_at_a_terminal_is_refused(monkeypatch):
    # Nothing piped: refused at once rather than waiting for the scenario to be typed.
    import io

    import pytest

    from snrgain.errors import ScenarioError
    from snrgain.scenario import load

    class Terminal(io.StringIO):
        def isatty(self):
            return True

    monkeypatch.setattr("sys.stdin", Terminal("[site]\n"))
    with pytest.raises(ScenarioError) as exc:
        load("-")
    assert "standard input is a terminal" in str(exc.value.problems)


def test_names_that_begin_like_a_formula_are_written_as_text_in_every_csv(runner, tmp_path):
    # An antenna "=1+2", a reference "-ref" and a target "@SUM(A1)" were written as they are, so a spreadsheet
    # computed them; behind an apostrophe they read as text.  Numbers (-3.197) stay numbers.
    import csv

    from tests.conftest import MINIMAL

    text = (
        MINIMAL.replace('name = "north-east"', 'name = "@SUM(A1)"')
        .replace('[reference]\nfamily = "vertical"', '[reference]\nname = "-ref"\nfamily = "vertical"')
        .replace('name = "iso"\nfamily = "isotropic"', 'name = "=1+2"\nfamily = "vertical"\nheight = "5 m"')
    )
    src = tmp_path / "s.toml"
    src.write_text(text, encoding="utf-8")
    res = runner.invoke(cli, ["rank", str(src), "--format", "csv"])
    assert res.exit_code == 0, res.output
    rows = list(csv.DictReader(res.stdout.splitlines()))
    assert {r["antenna"] for r in rows} == {"'-ref", "'=1+2"} and {r["target"] for r in rows} == {"'@SUM(A1)"}
    assert all(float(r["gain_toward_target_dbi"]) < 0 for r in rows)  # negative numbers, no apostrophe
    out = tmp_path / "sweep.csv"
    res = runner.invoke(cli, ["sweep", str(src), "--vary", "=1+2: height = 5 m, 6 m", "-o", str(out)])
    assert res.exit_code == 0, res.output
    rows = list(csv.DictReader(out.read_text(encoding="utf-8").splitlines()))
    assert "'=1+2: height [m]" in rows[0] and {r["antenna"] for r in rows} == {"'=1+2"}
    assert {r["target"] for r in rows} == {"'@SUM(A1)"} and float(rows[0]["gain_toward_target_dbi"]) < 0


def test_missing_scenario_file_exit_2(runner, tmp_path):
    res = runner.invoke(cli, ["rank", str(tmp_path / "nope.toml")])
    assert res.exit_code == 2
    assert "cannot read the file" in res.stderr


def test_usage_error_exit_2(runner, demo_path):
    res = runner.invoke(cli, ["rank", str(demo_path), "--format", "xml"])
    assert res.exit_code == 2


def test_new_writes_a_starter_that_runs(runner, tmp_path):
    path = tmp_path / "start.toml"
    res = runner.invoke(cli, ["new", str(path)])
    assert res.exit_code == 0
    assert "power lines" in path.read_text()
    assert runner.invoke(cli, ["check", str(path)]).exit_code == 0
    res = runner.invoke(cli, ["rank", str(path), "--format", "json"])
    assert res.exit_code == 0 and json.loads(res.stdout)["targets"][0]["ranking"]
    res = runner.invoke(cli, ["new", str(path)])
    assert res.exit_code == 2 and "--overwrite" in res.stderr


def test_help_texts(runner):
    for cmd in ([], ["rank"], ["check"], ["new"]):
        res = runner.invoke(cli, cmd + ["--help"])
        assert res.exit_code == 0 and "Usage" in res.output


def test_wire_command_beverage(runner):
    res = runner.invoke(cli, ["wire", "--frequency", "1.83 MHz", "--length", "250 m"])
    assert res.exit_code == 0, res.output
    assert "at 2.5 m over moist loam ground" in res.output
    assert "best front-to-back" in res.output and "Safety:" in res.output
    js = json.loads(
        runner.invoke(cli, ["wire", "--frequency", "1.83 MHz", "--length", "250 m", "--format", "json"]).output
    )
    assert js["termination_front_to_back_span_db"] > 10  # a long Beverage's rear null turns on its resistor
    assert js["termination_search_ohm"] == [50.0, 3000.0]


def test_wire_says_what_a_given_resistor_costs(runner):
    # --termination 160 ohm: the wire is built with it, and a line says what it costs against the best resistors,
    # all rated along the wire at 20 deg as the answers are (a review: at --elevation 5 the line set a 5 deg RDF
    # against the 20 deg best and called the 4.3 dB between the resistor's cost)
    args = ["wire", "--frequency", "1.83 MHz", "--length", "176 m", "--height", "2.4 m", "--ground", "moist clay"]
    lines = {}
    for elevation in ("20", "5"):
        res = runner.invoke(cli, [*args, "--termination", "160 ohm", "--elevation", elevation])
        assert res.exit_code == 0, res.output
        lines[elevation] = next(ln for ln in res.output.splitlines() if ln.strip().startswith("given:"))
    assert lines["20"] == lines["5"]
    js = json.loads(runner.invoke(cli, [*args, "--termination", "160 ohm", "--format", "json"]).output)
    best, given = js["termination_answers"]["rdf"], js["given_termination"]
    assert given["ohm"] == 160.0 and best["figure_db"] >= given["rdf_db"]
    assert (
        f"{best['figure_db'] - given['rdf_db']:.2f} dB below the best, {best['termination_ohm']:.0f} ohm" in lines["5"]
    )
    assert js["rdf_db"] == pytest.approx(given["rdf_db"], abs=0.05)  # at 20 deg this wire's own RDF is the same
    auto = json.loads(runner.invoke(cli, [*args, "--format", "json"]).output)
    assert "given_termination" not in auto and "given:" not in runner.invoke(cli, args).output


def test_wire_says_no_bound_where_the_length_rule_has_none(runner):
    # over a ground of nearly air's constants at 1 deg the wave on the wire keeps pace with the arriving one: the
    # rule of thumb has no bound, which was printed as "inf m (inf ft)"
    args = ["wire", "--frequency", "1.83 MHz", "--length", "800 ft", "--conductivity", "0.01 mS/m"]
    res = runner.invoke(cli, [*args, "--permittivity", "1", "--elevation", "1"])
    assert res.exit_code == 0, res.output
    assert "inf" not in res.output and "= no bound (the wave on the wire keeps pace" in res.output


def test_wire_command_bog_where_it_lies(runner):
    base = ["wire", "--family", "bog", "--frequency", "1.83 MHz", "--length", "60 m"]
    grass = runner.invoke(cli, base)
    soil = runner.invoke(cli, [*base, "--height", "on soil"])
    buried = runner.invoke(cli, [*base, "--depth", "10 cm"])
    assert "its axis 2 cm above moist loam" in grass.output
    assert "resting on moist loam" in soil.output
    assert "buried 10 cm deep in moist loam" in buried.output
    # 60 m buried loses about 35 dB one way: whatever the far end reflects never comes back.
    assert "termination: hardly matters on this wire" in buried.output
    assert "hardly matters" not in grass.output


@pytest.mark.parametrize(
    "args, match",
    [
        (["--depth", "10 cm"], "only a bog"),
        (["--family", "bog", "--depth", "1 mm"], "depth"),
        (["--family", "bog", "--depth", "10 cm", "--height", "2 cm"], "one or the other"),
    ],
)
def test_wire_command_refuses_a_depth_it_cannot_use(runner, args, match):
    res = runner.invoke(cli, ["wire", "--frequency", "1.83 MHz", "--length", "60 m", *args])
    assert res.exit_code == 2 and match in res.output


def test_rank_table_prints_names_as_written(runner, tmp_path, minimal_text):
    """A name with square brackets or colons is printed as written, not read as rich markup or an emoji code."""
    path = tmp_path / "s.toml"
    text = minimal_text.replace("[reference]\n", '[reference]\nname = "TX [bold]main[/bold] :star:"\n')
    path.write_text(text, encoding="utf-8")
    for args in ([], ["-o", str(tmp_path / "t.txt")]):
        res = runner.invoke(cli, ["rank", str(path), *args])
        assert res.exit_code == 0, res.output
        text = res.stdout if not args else (tmp_path / "t.txt").read_text(encoding="utf-8")
        assert "SNR gain over TX [bold]main[/bold] :star:" in text


def test_a_library_warning_is_one_line_and_a_missing_glyph_is_said_plainly():
    # snrgain.cli.main sets warnings.formatwarning for the command's processes (the figures' too): one line, no
    # source line; matplotlib's missing glyph (a name in a script the figures' font lacks) in the builder's words
    import warnings

    from snrgain.cli.main import _warning_line

    line = _warning_line(
        UserWarning("Glyph 28450 (\\N{CJK UNIFIED IDEOGRAPH-6F22}) missing from font(s) DejaVu Sans."),
        UserWarning,
        "/somewhere/canvas.py",
        120,
        "    found = ...",
    )
    assert line.startswith("warning: the figures' font (DejaVu Sans) has no letter '\u6f22' (U+6F22)")
    assert line.endswith("\n") and line.count("\n") == 1 and "canvas.py" not in line
    assert _warning_line(UserWarning("something odd"), UserWarning, "x.py", 1) == "warning: something odd\n"
    with warnings.catch_warnings():
        warnings.simplefilter("always")
        old = warnings.formatwarning
        try:
            warnings.formatwarning = _warning_line
            assert warnings.formatwarning("plain", UserWarning, "x.py", 3) == "warning: plain\n"
        finally:
            warnings.formatwarning = old


def test_wire_names_a_ground_given_as_numbers():
    args = ["wire", "--frequency", "1.83 MHz", "--length", "200 m", "--conductivity", "2 mS/m", "--permittivity", "8"]
    res = CliRunner().invoke(cli, args)
    assert res.exit_code == 0, res.output
    first = res.output.splitlines()[0]
    assert first == "beverage: 200.0 m (656 ft) at 2.5 m over a ground of 2 mS/m and relative permittivity 8, 1.83 MHz"
    # a named ground beside the numbers was dropped without a word; one ground is given one way, as gauge or diameter
    res = CliRunner().invoke(cli, [*args, "--ground", "sandy soil"])
    assert res.exit_code == 2 and "Traceback" not in res.output
    assert "give --ground or --conductivity and --permittivity, not both; got --ground 'sandy soil'" in res.stderr


def test_an_output_named_like_an_input_is_refused_and_the_input_kept(tmp_path):
    # `report x.toml -o x.toml --overwrite` would have replaced the scenario with the report; `noise-readings --write`
    # onto its own readings file likewise: each is refused when it comes to write, and the input stays as it was
    import shutil

    src = tmp_path / "site.toml"
    shutil.copy(SCENARIOS / "wren-corner.toml", src)
    before = src.read_bytes()
    for args in (
        ["report", str(src), "-o", str(src), "--overwrite"],
        ["rank", str(src), "-o", str(src), "--overwrite"],
    ):
        res = CliRunner().invoke(cli, args)
        assert res.exit_code == 2, res.output
        assert f"{src} is one of this command's inputs; give the output another name" in res.output
        assert src.read_bytes() == before
    readings = tmp_path / "readings.toml"
    readings.write_text(CliRunner().invoke(cli, ["noise-readings", "--example"]).output, encoding="utf-8")
    kept = readings.read_bytes()
    res = CliRunner().invoke(cli, ["noise-readings", str(src), str(readings), "--write", str(readings), "--overwrite"])
    assert res.exit_code == 2 and "is one of this command's inputs" in res.output and readings.read_bytes() == kept
    # another name is written as before; a scenario copy may update its scenario, but not go to standard output
    assert CliRunner().invoke(cli, ["rank", str(src), "-o", str(tmp_path / "r.json")]).exit_code == 0
    res = CliRunner().invoke(cli, ["noise-readings", str(src), str(readings), "--write", "-"])
    assert res.exit_code == 2 and "a scenario copy is written to a file" in res.output
    # calibrate's copy too (it was written into standard output, amid the JSON of --format json)
    wire = tmp_path / "wire.toml"
    wire.write_text(CliRunner().invoke(cli, ["calibrate", "--example"]).output, encoding="utf-8")
    res = CliRunner().invoke(cli, ["calibrate", str(wire), "--scenario", str(src), "--write", "-"])
    assert res.exit_code == 2 and "a scenario copy is written to a file" in res.output


def test_an_output_path_ending_in_a_slash_names_a_folder(tmp_path):
    res = CliRunner().invoke(cli, ["rank", str(SCENARIOS / "wren-corner.toml"), "-o", f"{tmp_path}/newdir/"])
    assert res.exit_code == 2 and f"{tmp_path}/newdir/ names a folder; give a file name" in res.output
    assert not (tmp_path / "newdir").exists()


def test_one_path_for_two_outputs_is_refused_before_any_work(tmp_path):
    # layout --write X --plot X wrote the PNG, then refused the scenario copy as existing (exit 2, a file left)
    out = tmp_path / "f.png"
    data = SCENARIOS.parent / "tests" / "data" / "layout-two-beverages.toml"
    res = CliRunner().invoke(cli, ["layout", str(data), "--write", str(out), "--plot", str(out)])
    assert res.exit_code == 2 and f"{out} is given for two outputs; give each its own file" in res.output
    assert not out.exists()


def test_wire_at_30_mhz_and_at_a_grazing_elevation():
    # at 30 MHz a tenth of a wavelength (0.9993 m) lay under the wires' least length: the length search failed with
    # "length: must be between 1 m and 3000 m; got 0.9993..." (not the user's length); and at 0 deg elevation every
    # figure was -inf or nan: the option starts at 1 deg
    res = CliRunner().invoke(cli, ["wire", "--frequency", "30 MHz", "--length", "200 m", "--height", "0.06 m"])
    assert res.exit_code == 0, res.output
    assert "model's best for RDF" in res.output
    res = CliRunner().invoke(cli, ["wire", "--frequency", "1.83 MHz", "--length", "200 m", "--elevation", "0"])
    assert res.exit_code == 2 and "0.0 is not in the range 1<=x<=90" in res.output


def test_dash_is_standard_output_and_a_figure_needs_its_suffix(tmp_path, monkeypatch):
    # `rank -o -` wrote a file named '-'; it prints as `new -` does.  --plot with another suffix than .png or .svg
    # is refused before any work (it failed after the layout's search)
    monkeypatch.chdir(tmp_path)
    res = CliRunner().invoke(cli, ["rank", str(SCENARIOS / "wren-corner.toml"), "-o", "-", "--format", "json"])
    assert res.exit_code == 0, res.output
    assert json.loads(res.stdout)["site"]["name"] == "Wren Corner" and not (tmp_path / "-").exists()
    data = SCENARIOS.parent / "tests" / "data" / "layout-two-beverages.toml"
    res = CliRunner().invoke(cli, ["layout", str(data), "--plot", "plan.txt"])
    assert res.exit_code == 2 and "a figure is written to a file named .png or .svg" in res.output


@pytest.mark.parametrize("command", ["calibrate", "locate"])
def test_a_scenario_copy_of_an_invalid_scenario_is_refused_before_any_work(tmp_path, command):
    # calibrate and locate wrote their copy of a scenario whose lot crosses itself; check then refused the copy
    text = (SCENARIOS / "wren-corner.toml").read_text(encoding="utf-8")
    bad = tmp_path / "bad.toml"
    lot = "lot = [[-40, -40], [210, -40], [210, 280], [-40, 280]]"
    assert lot in text
    bad.write_text(text.replace(lot, "lot = [[-40, -40], [210, 280], [210, -40], [-40, 280]]", 1))
    readings = tmp_path / "r.toml"
    readings.write_text(CliRunner().invoke(cli, [command, "--example"]).output, encoding="utf-8")
    out = tmp_path / "copy.toml"
    res = CliRunner().invoke(cli, [command, str(readings), "--scenario", str(bad), "--write", str(out)])
    assert res.exit_code == 2 and "site: lot: the outline is not a simple polygon" in res.output
    assert not out.exists()


@pytest.mark.parametrize(
    "args, says",
    [
        (["rank", "--format", "csv", "-o", "r.json"], "the name ends in .json, a json file's, but --format is csv"),
        (["rank", "--format", "table", "-o", "r.csv"], "the name ends in .csv, a csv file's, but --format is table"),
        (["rank", "--format", "csv", "--build"], "the build sheet goes with --format table"),
        (["report", "-o", "r.pdf"], "the report is one HTML page; name it .html"),
    ],
)
def test_an_output_named_for_another_format_is_refused_before_any_work(tmp_path, args, says):
    # rank wrote CSV into r.json, report HTML into r.pdf, and --build was dropped from a CSV without a word
    args = [str(tmp_path / a) if a.startswith("r.") else a for a in args]
    res = CliRunner().invoke(cli, [args[0], str(SCENARIOS / "wren-corner.toml"), *args[1:]])
    assert res.exit_code == 2 and says in res.output, res.output
    assert not any(tmp_path.iterdir())


def test_an_output_named_json_or_csv_takes_that_format_when_none_is_given(tmp_path):
    import json

    out = tmp_path / "r.json"
    res = CliRunner().invoke(cli, ["rank", str(SCENARIOS / "wren-corner.toml"), "-o", str(out)])
    assert res.exit_code == 0, res.output
    assert "targets" in json.loads(out.read_text(encoding="utf-8"))  # it was the table, written into r.json
    out = tmp_path / "r.csv"
    assert CliRunner().invoke(cli, ["rank", str(SCENARIOS / "wren-corner.toml"), "-o", str(out)]).exit_code == 0
    assert out.read_text(encoding="utf-8").startswith("target,")


def test_a_scenario_copy_in_another_folder_finds_the_scenarios_files(tmp_path):
    # The demo names its pattern table by a path from its own folder: a copy written elsewhere could not find it
    # (the next run of the copy stopped on "cannot read the pattern file").  The copy names it from its own folder.
    from snrgain.scenario import load

    wire = tmp_path / "wire.toml"
    wire.write_text(CliRunner().invoke(cli, ["calibrate", "--example"]).output, encoding="utf-8")
    out = tmp_path / "copy.toml"
    res = CliRunner().invoke(
        cli, ["calibrate", str(wire), "--scenario", str(SCENARIOS / "alder-hollow.toml"), "--write", str(out)]
    )
    assert res.exit_code == 0, res.output
    assert "the copy names 'patterns/cardioid-pair.csv' from its own folder" in res.output
    sc = load(out)
    assert any(a.family == "tabulated" for a in sc.candidates)


@pytest.mark.parametrize("width", [120, 100, 90])
def test_a_narrow_terminal_wraps_names_and_keeps_every_number(width):
    """Long antenna names (a switched antenna's states) wrap in their column; no number is cut ('+11...' was printed
    where the names took the room)."""
    import io

    from rich.console import Console

    import snrgain
    from snrgain.outputs.output import target_table
    from tests.conftest import MINIMAL

    long = "a reversible Beverage on the back field by the pond"
    r = snrgain.evaluate(MINIMAL.replace('name = "iso"', f'name = "{long}"'))
    out = io.StringIO()
    Console(width=width, file=out, force_terminal=False).print(target_table(r, 0))
    text = out.getvalue()
    assert "…" not in text
    from snrgain.units import number_text

    row = r.antenna(long)
    cells = [number_text(float(v[0]), "{:+.1f}") for v in (row.snr_gain_median_db, row.snr_gain_p10_db)]
    assert f"{cells[0]} ({cells[1]} to" in text  # the gain and its band whole
    assert " ref " in text and "(reference)" in text  # the '#' column kept


def test_a_yardstick_ranked_above_the_best_is_marked():
    """The isotropic yardstick is ranked but never the best (the verdict and the plan skip it): its row says so."""
    import io

    from rich.console import Console

    import snrgain
    from snrgain.outputs.output import target_table
    from tests.conftest import MINIMAL

    r = snrgain.evaluate(MINIMAL)
    out = io.StringIO()
    Console(width=140, file=out, force_terminal=False).print(target_table(r, 0))
    assert "iso (a yardstick, not to build)" in out.getvalue()


def test_s10_and_hour_25_are_named_plainly():
    """S10 is told the S-meter's range as S0 is (it got the generic power message); an hour of 25 is echoed as
    written, not as 25.0."""
    from snrgain.errors import ScenarioError
    from snrgain.scenario import load
    from snrgain.units import QuantityError, parse_power_dbm
    from tests.conftest import MINIMAL

    for bad in ("S10", "S0"):
        with pytest.raises(QuantityError, match=r"S-units run from S1 to S9, then S9\+N dB"):
            parse_power_dbm(bad)
    assert parse_power_dbm("S9+10") == pytest.approx(-63.0)
    import re

    text = re.sub(r"utc_hours = \[[^\]]*\]", "utc_hours = [25]", MINIMAL, count=1)
    with pytest.raises(ScenarioError, match=r"UTC hours must be in \[0, 24\); got \[25\]"):
        load(text)


def test_a_bearing_comes_back_as_written():
    """A switched Beverage's states at 60 and 240 deg: 60 and 240 in the JSON, not 59.99999999999999."""
    import json

    import snrgain
    from tests.conftest import MINIMAL

    wire = (
        '[[candidate]]\nname = "rev"\nfamily = "beverage"\nlength = "180 m"\nheight = "2.5 m"\n'
        'directions = ["60 deg", "240 deg"]\n\n'
    )
    r = snrgain.evaluate(MINIMAL.replace("[[candidate]]", wire + "[[candidate]]", 1))
    d = json.loads(json.dumps(r.to_dict()))
    assert [d["build"][n]["bearing_deg"] for n in ("rev ENE (60 deg)", "rev WSW (240 deg)")] == [60.0, 240.0]
    assert [d["build"][n]["switched"]["bearing_deg"] for n in ("rev ENE (60 deg)", "rev WSW (240 deg)")] == [60, 240]
