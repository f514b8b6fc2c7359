"""Messages of inputs a hostile or careless user tried: each names the field (with the antenna, band or file it
belongs to), the value and what is allowed, once."""

import re

import numpy as np
import pytest

from snrgain.errors import ScenarioError
from snrgain.scenario import load
from tests.conftest import HAVE_P372, MINIMAL, P372_DIR, REPO


def _problems(text: str) -> list[tuple[str, str]]:
    with pytest.raises(ScenarioError) as err:
        load(text)
    return err.value.problems


PAIR = '\n[[candidate]]\nname = "pair"\nfamily = "phased-verticals"\nheight = "6 m"\nbearing = 45\n'
ARRAY = (
    '\n[[candidate]]\nname = "arr"\nfamily = "array"\nbearing = 45\n'
    'elements = [{{ family = "vertical", height = "6 m", position = [0, 0]{a} }}, '
    '{{ family = "vertical", height = "6 m", position = {p}{a} }}]\n'
)


@pytest.mark.parametrize(
    "candidate, field, words",
    [
        (PAIR + "positions = [[150, 150], [150, 150]]\n", 'candidate 2 ("pair").positions', "same point (150, 150)"),
        (
            PAIR + "positions = [[0, 0], [30, 0]]\nsteering = 'given'\ndelays = ['0 ns', '10 ns']\n"
            "amplitudes = [0, 0]\n",
            'candidate 2 ("pair").amplitudes',
            "every element's amplitude is zero",
        ),
        (ARRAY.format(p="[0, 0.001]", a=""), 'candidate 2 ("arr").elements', "same point (0, 0)"),
        (
            ARRAY.format(p="[20, 0]", a=", amplitude = 0").replace("bearing = 45", "bearing = 45\nsteering = 'given'"),
            'candidate 2 ("arr").amplitudes',
            "amplitude is zero",
        ),
    ],
)
def test_an_arrays_own_problems_name_the_candidate(candidate, field, words):
    problems = _problems(MINIMAL + candidate)
    assert [(p, m) for p, m in problems if words in m] and all(p == field for p, m in problems if words in m), problems


@pytest.mark.parametrize(
    "weight, field",
    [
        (", delay = '5 ns'", 'candidate 2 ("arr").elements 2'),
        (", amplitude = 500", 'candidate 2 ("arr").elements 2.amplitude'),
    ],
)
def test_an_array_elements_problem_names_the_candidate_and_the_element_once(weight, field):
    problems = _problems(MINIMAL + ARRAY.format(p="[20, 0]", a="").replace("[20, 0] }", f"[20, 0]{weight} }}"))
    assert [p for p, _ in problems] == [field] and "elements 2" not in problems[0][1], problems


@pytest.mark.parametrize(
    "old, new, field",
    [
        ('ground = "moist loam"', 'ground = "moist loam"\nlot = [[-40, nan], [210, -40], [210, 280]]', "site.lot 1"),
        ('height = "20 m"', 'height = "20 m"\nposition = [nan, 100]', "reference.position"),
        ('family = "isotropic"', 'family = "beverage"\nlength = nan\nheight = "2 m"', 'candidate 1 ("iso").length'),
        ('family = "isotropic"', 'family = "beverage"\nlength = inf\nheight = "2 m"', 'candidate 1 ("iso").length'),
        ("latitude = 40.0", "latitude = nan", "site.latitude"),
        ("bearing = 45", "bearing = nan", 'target 1 ("north-east").bearing'),
        ("bearing = 45", "bearing = 45\nweight = nan", 'target 1 ("north-east").weight'),
    ],
)
def test_nan_and_inf_are_refused_as_such_naming_the_field_and_value(old, new, field):
    problems = dict(_problems(MINIMAL.replace(old, new, 1)))
    msg = problems[field]
    said = "infinite number" if "inf" in new else "NaN (not a number)"
    assert f"{said} is not allowed" in msg and "ambiguous" not in msg and "within 10 km" not in msg, msg
    assert msg.endswith("nan" if "nan" in new else "inf") or "nan]" in msg or "nan, 100]" in msg, msg


@pytest.mark.parametrize(
    "lot, why",
    [
        ("[[0, 0], [0, 0], [0, 0]]", "its 3 corners stand at only 1 point"),
        ("[[0, 0], [50, 0], [0, 0], [50, 0]]", "its 4 corners stand at only 2 points"),
        ("[[0, 0], [100, 0], [200, 0]]", "every corner lies on one line"),
        ("[[-40, -40], [210, 280], [210, -40], [-40, 280]]", "its edges cross or touch at (85, 120) m"),
    ],
)
def test_an_outline_that_is_no_polygon_is_said_in_the_plans_words(lot, why):
    problems = _problems(MINIMAL.replace('ground = "moist loam"', f'ground = "moist loam"\nlot = {lot}'))
    (path, msg), *_ = [(p, m) for p, m in problems if "lot" in m]
    assert f"lot: the outline is not a simple polygon ({why}); list at least three corners" in msg, msg
    assert "geometry" not in msg and "[0 0]" not in msg and "self-intersection" not in msg.lower(), msg


# -- outputs that cannot be written --------------------------------------------------------------------------


def _refusing(errno_, monkeypatch):
    """tempfile.mkstemp and mkdtemp failing as a folder that refuses new files does (sysfs, a root-owned mount)."""
    import os
    import tempfile

    def refuse(*args, prefix="", suffix="", dir=None, **kw):
        raise OSError(errno_, os.strerror(errno_), os.path.join(dir, f"{prefix}abc{suffix}"))

    monkeypatch.setattr(tempfile, "mkstemp", refuse)
    monkeypatch.setattr(tempfile, "mkdtemp", refuse)


@pytest.mark.parametrize("errno_, code", [(13, 2), (28, 1)])
def test_an_output_that_cannot_be_written_names_the_path_given_not_the_temporary(tmp_path, monkeypatch, errno_, code):
    import os

    from click.testing import CliRunner

    from snrgain.cli.main import cli

    scenario = tmp_path / "s.toml"
    scenario.write_text(MINIMAL, encoding="utf-8")
    out = tmp_path / "x.json"
    _refusing(errno_, monkeypatch)
    res = CliRunner().invoke(cli, ["rank", str(scenario), "--format", "json", "-o", str(out)])
    assert res.exit_code == code, res.output
    assert f"cannot write {out} ({os.strerror(errno_)})" in res.stderr, res.stderr
    assert ".snrgain-tmp" not in res.stderr and "Errno" not in res.stderr and "Traceback" not in res.output


def test_a_figure_set_that_cannot_be_written_names_the_folder(tmp_path, monkeypatch):
    from snrgain.files import OutputWriteError, write_set

    _refusing(13, monkeypatch)
    with pytest.raises(OutputWriteError, match=f"cannot write into the folder {tmp_path} \\(Permission denied\\)"):
        write_set(tmp_path, {"a.png": lambda p: p.write_bytes(b"x")})
    assert not list(tmp_path.iterdir())


# -- several bands ----------------------------------------------------------------------------------------------

BANDS = (REPO / "tests" / "data" / "sites" / "three-bands.toml").read_text()
MONTHS_13 = BANDS.replace('frequency = "1.83 MHz"', 'frequency = "1.83 MHz"\nmonths = [13]')


def _band_problems(text: str, command: str) -> list[tuple[str, str]]:
    from snrgain.scenario import load_bands

    with pytest.raises(ScenarioError) as err:
        if command == "load_bands":
            load_bands(text)
        else:
            load(text, band="80 m")
    return err.value.problems


def test_a_bands_months_are_said_once_as_the_bands():
    assert _band_problems(MONTHS_13, "load_bands") == [('band "160 m": band.months', "months must be 1..12; got [13]")]


def test_a_bands_own_problem_is_said_with_a_problem_across_the_bands():
    text = MONTHS_13.replace('bands = ["80 m", "40 m"]', 'bands = ["20 m"]')
    problems = _band_problems(text, "load_bands")
    assert [p for p, _ in problems] == ["target 2.bands", 'band "160 m": band.months'], problems
    assert _band_problems(text, "load") == problems  # --band asks for a band of a file that splits no more


def test_a_problem_of_every_band_is_said_once_without_a_band():
    text = MONTHS_13.replace('ground = "moist loam"', 'ground = "moist loam"\nlot = [[0, 0], [0, 0], [0, 0]]')
    problems = _band_problems(text, "load_bands")
    assert sorted(p for p, _ in problems) == ['band "160 m": band.months', "site"], problems


@pytest.mark.parametrize("table", ["[band]", "[[band]]"])
def test_a_bands_own_months_and_hours_win_over_the_time_tables(table):
    text = MINIMAL.replace('bandwidth = "500 Hz"', 'bandwidth = "500 Hz"\nmonths = [7, 8]\nutc_hours = [22]')
    if table == "[[band]]":
        text = text.replace("[band]", '[[band]]\nname = "x"')
    sc = load(text, band="x" if table == "[[band]]" else None)
    assert sc.times.months == (7, 8) and sc.times.utc_hours == (22.0,)


def test_a_copy_for_logged_times_takes_the_logs_times_not_the_bands():
    import tomllib

    from snrgain.tools.verify import scenario_copy

    data = tomllib.loads(MINIMAL.replace('bandwidth = "500 Hz"', 'bandwidth = "500 Hz"\nmonths = [7]\nutc_hours = [9]'))
    sc = load(scenario_copy(data, "reference", "iso", [3], [5.0]))
    assert sc.times.months == (3,) and sc.times.utc_hours == (5.0,)


# -- snrgain noise below P.372's man-made range ----------------------------------------------------------------


@pytest.mark.parametrize("freq, environment, warned", [("0.1 MHz", "residential", True), ("0.5 MHz", "rural", False)])
@pytest.mark.skipif(not HAVE_P372, reason="needs the ITU-R P.372 coefficient files (SNRGAIN_P372_DIR)")
def test_noise_warns_as_rank_does_where_the_man_made_line_is_extrapolated(freq, environment, warned):
    import json

    from click.testing import CliRunner

    from snrgain.cli.main import cli
    from snrgain.decide.decisions import man_made_extrapolated
    from snrgain.outputs.messages import notice_text

    args = ["noise", "--lat", "41.6", "--lon", "-72.35", "--month", "7", "--frequency", freq]
    args += ["--p372-dir", str(P372_DIR)]
    res = CliRunner().invoke(cli, [*args, "--environment", environment, "--format", "json", "--no-galactic"])
    assert res.exit_code == 0, res.output
    said = [notice_text(n) for n in man_made_extrapolated(float(freq.split()[0]) * 1e6, True)]
    if warned:
        assert said and said[0].endswith(f"at {freq} its line is extrapolated")  # rank's own sentence
        assert f"warning: {said[0]}" in res.stderr and json.loads(res.stdout)["warnings"] == said
    else:
        assert "warning" not in res.stderr and json.loads(res.stdout)["warnings"] == []


# -- pattern tables ----------------------------------------------------------------------------------------------


def _table(path, columns: str) -> str:
    rows = [f"{az},{el}" + ",-3" * (columns.count(",") - 1) for az in range(0, 360, 90) for el in (0, 45, 90)]
    path.write_text("\n".join([columns, *rows]) + "\n")
    return str(path)


@pytest.mark.parametrize(
    "columns, words",
    [
        ("azimuth_deg,elevation_deg,gain_dbi,gain_v_dbi", "columns 'gain_dbi' and 'gain_v_dbi' together"),
        ("azimuth_deg,elevation_deg,gain_h_dbi,gain_dbi", "columns 'gain_dbi' and 'gain_h_dbi' together"),
        ("azimuth_deg,elevation_deg,gain_dbi,gain_dbi", "column(s) ['gain_dbi'] named twice"),
    ],
)
def test_a_pattern_table_whose_columns_would_leave_one_unread_is_refused(tmp_path, columns, words):
    from snrgain.antennas import from_spec
    from snrgain.errors import SpecError

    path = _table(tmp_path / "p.csv", columns)
    with pytest.raises(SpecError) as err:
        from_spec({"family": "tabulated", "file": path})
    assert f"{path}, line 1: {words}" in str(err.value), err.value


@pytest.mark.parametrize(
    "columns", ["azimuth_deg,elevation_deg,gain_dbi", "azimuth_deg,elevation_deg,gain_v_dbi,gain_h_dbi,gain_dbi"]
)
def test_the_total_alone_or_with_both_partials_is_read(tmp_path, columns):
    from snrgain.antennas import from_spec

    a = from_spec({"family": "tabulated", "file": _table(tmp_path / "p.csv", columns)})
    total = -3 if columns.count(",") == 2 else -3 + 10 * np.log10(2)
    assert a.gain_dbi(1.83e6, 45.0, 30.0) == pytest.approx(total, abs=1e-9)


# -- sweep's --vary ----------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "values, expected",
    [
        ("[0, 40]", [[0, 40]]),
        ("[0, 40], [30.5, -40]", [[0, 40], [30.5, -40]]),
        ('["12 m", "-30 ft"], [1, 2]', [["12 m", "-30 ft"], [1, 2]]),
    ],
)
def test_vary_keeps_a_bracketed_value_whole(values, expected):
    from snrgain.tools import sweep

    assert sweep.parse_vary(f"whip: position = {values}").values == expected


@pytest.mark.parametrize(
    "values, words",
    [("[0, 40", "is not closed"), ("0, 40]", "closes no '['"), ("[12 m, 3 m]", "cannot read '[12 m, 3 m]' as a list")],
)
def test_vary_says_what_is_wrong_with_a_bracketed_value(values, words):
    from snrgain.tools import sweep

    with pytest.raises(sweep.VaryError, match=re.escape(words)):
        sweep.parse_vary(f"whip: position = {values}")


def test_a_vary_sweep_over_positions_runs_one_design_per_position(tmp_path):
    from click.testing import CliRunner

    from snrgain.cli.main import cli

    scenario = tmp_path / "s.toml"
    scenario.write_text(
        MINIMAL.replace('height = "20 m"', 'height = "20 m"\nposition = [0, 0]')
        + '\n[[candidate]]\nname = "whip"\nfamily = "vertical"\nheight = "6 m"\nposition = [50, 0]\n',
        encoding="utf-8",
    )
    out = tmp_path / "o.csv"
    vary = "whip: position = [0, 40], [30, 40]"
    res = CliRunner().invoke(cli, ["sweep", str(scenario), "--vary", vary, "-o", str(out)])
    assert res.exit_code == 0, res.output
    rows = [r for r in out.read_text().splitlines()[1:] if ",whip," in r]
    assert [r.split(",whip,")[0].split(",", 1)[1] for r in rows] == ['"[0, 40]"', '"[30, 40]"']


def test_a_fine_range_keeps_every_value_distinct_or_is_refused():
    from snrgain.tools import sweep

    v = sweep.parse_vary("Bev: length = 100 m to 100.5 m by 0.0001 m")
    assert len(v.values) == 5001 == len(set(v.values)) == len(set(v.column_values))
    assert v.values[1] == "100.0001 m" and v.values[-1] == "100.5 m"
    with pytest.raises(sweep.VaryError, match=r"the step 1e-13 m is finer than the values are kept at"):
        sweep.parse_vary("Bev: length = 0 m to 1e-9 m by 1e-13 m")


# -- verify's logs -----------------------------------------------------------------------------------------------

VERIFY_SCENARIO = MINIMAL.replace('family = "isotropic"', 'family = "vertical"\nheight = "6 m"')


@pytest.mark.parametrize(
    "content, words",
    [
        (bytes(range(256)) * 8, "not a text log (a NUL byte at character 1)"),
        (bytes(range(128, 256)) * 16 + b"\n", "not a text log (2,048 of its 2,049 characters not UTF-8)"),
        (b"hello world\nthis is no log\n", "none of its 2 lines reads as a decode (too few fields"),
        # an empty log gave "0 pairs placed", exit 0, every decode of the other log called unpaired
        (b"", "empty, not one decode"),
        (b"  \n\t\n", "only blank lines, not one decode"),
        (b"# a comment\n\n", "only blank lines and comments, not one decode"),
    ],
)
def test_verify_refuses_a_log_that_is_not_one_naming_the_file(tmp_path, content, words):
    from click.testing import CliRunner

    from snrgain.cli.main import cli

    scenario = tmp_path / "s.toml"
    scenario.write_text(VERIFY_SCENARIO, encoding="utf-8")
    good = tmp_path / "a.txt"
    good.write_text(CliRunner().invoke(cli, ["verify", "--example", "log"]).stdout, encoding="utf-8")
    bad = tmp_path / "b.bin"
    bad.write_bytes(content)
    args = ["verify", str(scenario), "--log-a", str(good), "--log-b", str(bad), "--a", "reference", "--b", "iso"]
    res = CliRunner().invoke(cli, args)
    assert res.exit_code == 2, res.output
    assert f"{bad} (log B): {words}" in res.stderr and "Traceback" not in res.output, res.stderr
