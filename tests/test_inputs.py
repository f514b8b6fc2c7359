"""Inputs that cannot break it: each case a hostile or careless user tried ends in exit 0 or a one-line exit-2
message naming the file, the item and the field; never a traceback, a hang, or exit 1.  Then a property-based
fuzz test over scenarios and readings files."""

import os
import signal
import stat
import subprocess
import sys
import time
import tomllib

import pytest
from click.testing import CliRunner
from hypothesis import HealthCheck, given, seed, settings
from hypothesis import strategies as st

from snrgain.cli.main import cli
from tests.conftest import MINIMAL, REPO, SCENARIOS
from tests.test_pipeline import _toml

DEMO = SCENARIOS / "alder-hollow.toml"


def _check(tmp_path, text: str, *args, name="s.toml", command="check"):
    p = tmp_path / name
    p.write_bytes(text.encode("utf-8") if isinstance(text, str) else text)
    t0 = time.perf_counter()
    res = CliRunner().invoke(cli, [command, str(p), *args])
    assert time.perf_counter() - t0 < 10.0
    assert res.exit_code in (0, 2), (res.exit_code, res.output)
    assert "Traceback" not in res.output
    return res, p


CAND = MINIMAL.replace('name = "iso"\nfamily = "isotropic"', "{candidate}")


@pytest.mark.parametrize(
    "text, field",
    [
        (MINIMAL.replace('height = "20 m"', 'height = "9**9**9 m"'), "reference.height"),
        (
            CAND.format(
                candidate='name = "b"\nfamily = "bog"\nlength = "80 m"\nvelocity_factor = 0.7\nz0 = 300\n'
                'attenuation = "fast dB/100m"'
            ),
            "attenuation",
        ),
        (
            CAND.format(
                candidate='name = "a"\nfamily = "array"\nsteering = "given"\nelements = [{ family = '
                '"vertical", height = "3 m", phase = [90] }, { family = "vertical", height = "3 m" }]'
            ),
            "elements 1",
        ),
        (MINIMAL + '\n[noise.atmospheric]\nmodel = "given"\nfa = nan\n', "noise.atmospheric.fa"),
        (MINIMAL + '\n[[noise.local]]\nname = "n"\nbearing = 90\nfa = "inf"\n', 'noise.local 1 ("n").fa'),
        (MINIMAL.replace("bearing = 45", "bearing = 45\nweight = inf"), "weight"),
        (MINIMAL.replace("elevation = [10, 20]", "elevation = [0, 0]"), "elevation"),
        (MINIMAL + "\n[noise.man_made]\nsector = { from = 0, to = 90, contrast = 1e300 }\n", "contrast"),
        (
            MINIMAL.replace(
                "bearing = 45\nelevation = [10, 20]", 'latitude = 51\nlongitude = 0\nmin_elevation = "90 deg"'
            ),
            "min_elevation",
        ),
        (MINIMAL.replace('height = "20 m"', "height = " + "[" * 900 + "1" + "]" * 900), "nested"),
        (MINIMAL.replace("months = [1]", "months = [" + "9" * 5000 + "]"), "not valid TOML"),
        (CAND.format(candidate='name = "b"\nfamily = "beverage"\nlength = "1e-30 m"\nheight = "2 m"'), "length"),
        (MINIMAL.replace('height = "20 m"', 'height = "2,5 m"'), "reference.height"),
        (MINIMAL.replace('height = "20 m"', 'height = "8 10 ft"'), "reference.height"),
        (MINIMAL.replace('height = "20 m"', 'height = "180 furlongs"'), "unknown unit"),
        (MINIMAL.replace('frequency = "1.83 MHz"', 'frequency = "1.83 MHz 2"'), "band.frequency"),
    ],
)
def test_each_reported_case_is_a_named_exit_2(tmp_path, text, field):
    res, p = _check(tmp_path, text)
    assert res.exit_code == 2 and field in res.stderr and str(p) in res.stderr


@pytest.mark.parametrize(
    "text, said",
    [
        (
            CAND.format(candidate='name = "pv"\nfamily = "phased-verticals"\npositions = [[0, 0]]\nheight = "5 m"'),
            'candidate 1 ("pv").positions: an array needs at least two elements (at most 64); got 1 position',
        ),
        (
            CAND.format(
                candidate='name = "ar"\nfamily = "array"\nelements = [{ family = "vertical", height = "3 m" }]'
            ),
            'candidate 1 ("ar").elements: an array needs at least two elements (at most 64); got 1 element',
        ),
        (
            MINIMAL + "\n[noise.man_made]\nsector = { from = 40, to = 40 }\n",
            "noise.man_made.sector: a sector runs clockwise from 'from' to 'to' and needs a width > 0 and under "
            "360 deg; got from 40 deg to 40 deg, the same bearing",
        ),
        (
            MINIMAL + "\n[noise.man_made]\nsector = { from = 0, to = 360 }\n",
            "noise.man_made.sector: a sector runs clockwise from 'from' to 'to' and needs a width > 0 and under "
            "360 deg; got from 0 deg to 360 deg, a full turn",
        ),
        (
            MINIMAL + '\n[noise.atmospheric]\nmodel = "given"\nfa = 50\narrival = "sector"\n'
            'sector = { from = "40 deg", to = "40 deg" }\n',
            "noise.atmospheric.sector: a sector runs clockwise",
        ),
    ],
    ids=["phased-verticals of one", "array of one", "sector of no width", "sector of a full turn", "atmospheric"],
)
def test_an_array_of_one_and_a_sector_of_no_width_are_refused(tmp_path, text, said):
    res, p = _check(tmp_path, text)
    assert res.exit_code == 2 and said in " ".join(res.stderr.split()), res.stderr


def test_a_sector_of_some_width_and_a_pair_pass(tmp_path):
    text = CAND.format(
        candidate='name = "pv"\nfamily = "phased-verticals"\npositions = [[0, 0], [0, 40]]\nheight = "5 m"'
    )
    res, _ = _check(tmp_path, text + "\n[noise.man_made]\nsector = { from = 350, to = 10 }\n")
    assert res.exit_code == 0, res.stderr


def test_names_are_shown_literally(tmp_path):
    text = CAND.format(
        candidate='name = "loop [/]"\nfamily = "isotropic"\n\n[[candidate]]\n'
        'name = "BOG [dim]south"\nfamily = "isotropic"'
    )
    p = tmp_path / "s.toml"
    p.write_text(text)
    res = CliRunner().invoke(cli, ["rank", str(p)])
    assert res.exit_code == 0, res.output
    out = " ".join(res.stdout.split())
    assert "loop [/]" in out and "BOG [dim]south" in out
    html = tmp_path / "r.html"
    assert CliRunner().invoke(cli, ["report", str(p), "-o", str(html)]).exit_code == 0
    assert "loop [/]" in html.read_text() and "<dim>" not in html.read_text()


def test_bytes_that_are_not_utf8_name_the_line(tmp_path):
    raw = MINIMAL.encode("utf-8").replace(b'name = "test site"', b'name = "t\xe9st site"')
    res, p = _check(tmp_path, raw)
    assert res.exit_code == 2 and "line 3" in res.stderr and "UTF-8" in res.stderr


@pytest.mark.parametrize(
    "command, text, field",
    [
        (
            "calibrate",
            '[wire]\nfamily = "vertical"\nheight = "10 m"\n[[resonance]]\nfrequency = "1 MHz"\n',
            "wire.family",
        ),
        (
            "calibrate",
            '[wire]\nlength = "80 m"\n[[open_short]]\nfrequency = "1.83 MHz"\nopen = 5\nshort = [1, 2]\n',
            "open_short 1.open",
        ),
        (
            "locate",
            'frequency = "1.83 MHz"\nbandwidth = "500 Hz"\nantenna = "loop"\n[[reading]]\nantenna = "loop"\n'
            'level = "S7"\n',
            "antenna",
        ),
        (
            "locate",
            'frequency = "1.83 MHz"\nbandwidth = "500 Hz"\nantenna = [1, 2]\n[[reading]]\nantenna = "loop"\n'
            'level = "S7"\n',
            "antenna",
        ),
        (
            "locate",
            'frequency = "1.83 MHz"\nbandwidth = "500 Hz"\n[antenna.v]\nfamily = "vertical"\nheight = "9 m"\n'
            '[[reading]]\nantenna = "w"\nlevel = "S7"\n[[reading]]\nantenna = "v"\nlevel = "loud"\n',
            "reading 1.antenna",
        ),
    ],
)
def test_readings_problems_are_named_exit_2(tmp_path, command, text, field):
    res, p = _check(tmp_path, text, command=command)
    assert res.exit_code == 2 and field in res.stderr and str(p) in res.stderr


def test_locate_reports_every_problem_at_once(tmp_path):
    text = (
        'frequency = "1.83 MHz"\nbandwidth = "500 Hz"\n[antenna.v]\nfamily = "vertical"\nheight = "9 m"\n'
        '[[reading]]\nantenna = "w"\nlevel = "S7"\n[[reading]]\nantenna = "v"\nlevel = "loud"\n'
    )
    res, _ = _check(tmp_path, text, command="locate")
    assert "reading 2.level" in res.stderr and "2 problems" in res.stderr


# -- writing --------------------------------------------------------------------------------------------------


def test_write_targets_refuse_links_and_devices_and_keep_the_mode(tmp_path):
    real = tmp_path / "real.json"
    real.write_text("{}")
    link = tmp_path / "link.json"
    link.symlink_to(real)
    res = CliRunner().invoke(cli, ["rank", str(DEMO), "--format", "json", "-o", str(link), "--overwrite"])
    assert res.exit_code == 2 and "symbolic link" in res.stderr and real.read_text() == "{}"
    res = CliRunner().invoke(cli, ["rank", str(DEMO), "--format", "json", "-o", "/dev/null", "--overwrite"])
    assert res.exit_code == 2 and "not a regular file" in res.stderr
    os.chmod(real, 0o600)
    res = CliRunner().invoke(cli, ["rank", str(DEMO), "--format", "json", "-o", str(real), "--overwrite"])
    assert res.exit_code == 0 and stat.S_IMODE(real.stat().st_mode) == 0o600 and real.read_text() != "{}"


def test_a_folder_that_cannot_be_written_is_refused_before_any_work(tmp_path):
    if os.geteuid() == 0:
        pytest.skip("root writes everywhere")
    ro = tmp_path / "ro"
    ro.mkdir()
    os.chmod(ro, 0o500)
    res = CliRunner().invoke(cli, ["rank", str(DEMO), "--format", "json", "-o", str(ro / "x.json")])
    assert res.exit_code == 2 and "cannot be written" in res.stderr


def test_figures_interrupted_leave_no_temporary_files(tmp_path):
    out = tmp_path / "figs"
    out.mkdir()
    proc = subprocess.Popen(
        [sys.executable, "-m", "snrgain.cli.main", "figures", str(DEMO), "--dir", str(out)],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        cwd=REPO,
    )
    deadline = time.time() + 60
    while time.time() < deadline and not any(out.iterdir()):
        time.sleep(0.05)
    proc.send_signal(signal.SIGTERM)
    proc.wait(timeout=30)
    leftovers = [p.name for p in out.iterdir() if p.name.startswith(".")]
    assert leftovers == []


# -- fuzz ----------------------------------------------------------------------------------------------------

_BASE = tomllib.loads(DEMO.read_text())
_JUNK = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(min_value=-(10**6), max_value=10**6),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=12),
    st.sampled_from(
        [
            "",
            "-1 m",
            "1e999 m",
            "5 furlongs",
            "S9+99",
            "nan",
            "inf dB",
            "1,5",
            "[]",
            "auto",
            "9**9 m",
            "0 m",
            "-90 deg",
            "1 MHz",
            "3000 km",
            "{}",
            "moist loam",
            "bog",
            "vertical",
        ]
    ),
    st.lists(st.integers(min_value=-5, max_value=30), max_size=3),
    st.dictionaries(st.sampled_from(["a", "from", "to", "family"]), st.integers(), max_size=2),
)


def _paths(node, prefix=()):
    if isinstance(node, dict):
        for k, v in node.items():
            yield (*prefix, k)
            yield from _paths(v, (*prefix, k))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield (*prefix, i)
            yield from _paths(v, (*prefix, i))


_ALL_PATHS = list(_paths(_BASE))


def _mutate(data, path, action, junk):
    import copy

    out = copy.deepcopy(data)
    node = out
    for part in path[:-1]:
        node = node[part]
    last = path[-1]
    if action == "replace":
        node[last] = junk
    elif action == "delete":
        if isinstance(node, dict):
            node.pop(last, None)
        else:
            node.pop(last)
    elif action == "unknown" and isinstance(node, dict):
        node["colour"] = junk
    return out


def _toml_safe(value):
    """Keep what TOML can hold (no None; dict keys as strings)."""
    if value is None:
        return ""
    if isinstance(value, dict):
        return {str(k): _toml_safe(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_toml_safe(v) for v in value]
    return value


@seed(20261202)
@settings(max_examples=1000, deadline=None, derandomize=True, suppress_health_check=list(HealthCheck))
@given(
    path=st.sampled_from(_ALL_PATHS),
    action=st.sampled_from(["replace", "replace", "delete", "unknown"]),
    junk=_JUNK,
)
def test_fuzz_scenarios(tmp_path_factory, path, action, junk):
    data = _mutate(_BASE, path, action, _toml_safe(junk))
    for c in data.get("candidate", []) if isinstance(data.get("candidate"), list) else []:
        if isinstance(c, dict) and isinstance(c.get("file"), str):
            c["file"] = str(SCENARIOS / c["file"])
    try:
        text = _toml(data)
        tomllib.loads(text)
    except Exception:
        return  # the writer cannot express this mutation as TOML; nothing to test
    tmp = tmp_path_factory.mktemp("fz")
    res, p = _check(tmp, text)
    if res.exit_code == 2:
        assert str(p) in res.stderr and ":" in res.stderr.split(str(p), 1)[1]


_READINGS = {
    "calibrate": '[wire]\nfamily = "bog"\nlength = "250 ft"\n[[open_short]]\nfrequency = "1.83 MHz"\n'
    'open = [95.0, -210.0]\nshort = [160.0, 240.0]\n[[resonance]]\nfrequency = "0.72 MHz"\n',
    "locate": 'frequency = "1.83 MHz"\nbandwidth = "500 Hz"\n[antenna.loop]\nfamily = "small-loop"\nwidth = "1 m"\n'
    'loop_height = "1 m"\nheight = "1.5 m"\n[antenna.vertical]\nfamily = "vertical"\nheight = "18 m"\n'
    '[[reading]]\nantenna = "loop"\nbearing = 0\nlevel = "-118.8 dBm"\n[[reading]]\nantenna = "loop"\n'
    'bearing = 60\nlevel = "-111.9 dBm"\n[[reading]]\nantenna = "vertical"\nlevel = "S7"\n',
}


@seed(20261202)
@settings(max_examples=1000, deadline=None, derandomize=True, suppress_health_check=list(HealthCheck))
@given(
    command=st.sampled_from(sorted(_READINGS)),
    which=st.integers(min_value=0, max_value=40),
    action=st.sampled_from(["replace", "replace", "delete", "unknown"]),
    junk=_JUNK,
)
def test_fuzz_readings(tmp_path_factory, command, which, action, junk):
    base = tomllib.loads(_READINGS[command])
    paths = list(_paths(base))
    data = _mutate(base, paths[which % len(paths)], action, _toml_safe(junk))
    try:
        text = _toml(data)
        tomllib.loads(text)
    except Exception:
        return
    tmp = tmp_path_factory.mktemp("fr")
    res, p = _check(tmp, text, command=command)
    if res.exit_code == 2:
        assert str(p) in res.stderr


def test_check_finds_what_rank_would(tmp_path):
    # A level read on the reference from where the reference receives nothing (a vertical's zenith null).
    text = MINIMAL + '\n[[noise.local]]\nname = "overhead"\nbearing = 0\nelevation = 90\nspread = 0\nlevel = "S7"\n'
    res, p = _check(tmp_path, text)
    assert res.exit_code == 2 and 'noise.local 1 ("overhead").level' in res.stderr


# -- fuzz of the command-line options, with Unicode lookalikes ---------------------------------------------------

_LOOKALIKES = [
    "\uff11.\uff18\uff13 \uff2d\uff28\uff5a",  # full-width "1.83 MHz"
    "1.83 \u041cHz",  # Cyrillic capital EM
    "1.83\u00a0MHz",  # no-break space
    "1.83\u200b MHz",  # zero-width space
    "\u221295 dBm",  # minus sign
    "\u0664\u0660 m",  # Arabic-Indic "40"
    "\u096a\u0966 ft",  # Devanagari "40"
    "\U0001d7d2\U0001d7ce m",  # mathematical bold "40"
    "5\u00b2 m",  # superscript two
    "\u00bd m",  # vulgar fraction one half
    "\u2167 m",  # Roman numeral eight
    "40 Mm",
    "10 mohm",
    "5 MS/m",
    "1.83 mhz",
    "8 \uff46\uff54",  # full-width "ft"
    "S\u0669+\u0661\u0660",  # S9+10 in Arabic-Indic digits
    "\u0663\u0660",  # Arabic-Indic "30"
    "\uff14\uff11.\uff16",  # full-width "41.6"
    "1e\u0663",
    "\u00b5S/m",
    "5 \u03bcS/m",
    "4\u2126",
    "nan",
    "inf",
    "-inf",
    "1e309",
    "-0",
    "",
    " ",
    "auto",
    "rod",
    "perfect",
    "on soil",
    "0",
    "-1",
    "1e-300",
    "999999999999999999999999",
]
_OPTION_VALUE = st.one_of(st.sampled_from(_LOOKALIKES), st.text(max_size=10))
_FAST = MINIMAL + "\n[compute]\nnside = 8\n\n[uncertainty]\nground = false\nnoise_deciles = false\nhours = false\n"
_COMMANDS = {
    "rank": (["--format", "json"], ["--format", "--nside"]),
    "wire": (
        ["--frequency", "1.83 MHz", "--length", "80 m", "--height", "2 m", "--format", "json"],
        [
            "--frequency",
            "--length",
            "--height",
            "--depth",
            "--family",
            "--gauge",
            "--diameter",
            "--ground",
            "--conductivity",
            "--permittivity",
            "--elevation",
            "--termination",
            "--feed-ground",
            "--far-ground",
            "--coax",
        ],
    ),
    "noise": (
        ["--lat", "41.6", "--lon", "-72.35", "--month", "7", "--frequency", "1.83 MHz", "--hour", "4"],
        ["--lat", "--lon", "--month", "--frequency", "--environment", "--hour", "--format"],
    ),
}


def _with_option(base: list[str], option: str, value: str) -> list[str]:
    args = list(base)
    if option in args:
        args[args.index(option) + 1] = value
    else:
        args += [option, value]
    return args


@seed(20261203)
@settings(max_examples=400, deadline=None, derandomize=True, suppress_health_check=list(HealthCheck))
@given(
    command=st.sampled_from(["rank", "wire", "wire", "noise", "noise"]),
    which=st.integers(min_value=0, max_value=40),
    value=_OPTION_VALUE,
)
def test_fuzz_options(tmp_path_factory, command, which, value):
    from tests.conftest import HAVE_P372, P372_DIR

    base, options = _COMMANDS[command]
    option = options[which % len(options)]
    args = _with_option(base, option, value)
    if command == "rank":
        scenario = tmp_path_factory.mktemp("fo") / "s.toml"
        scenario.write_text(_FAST, encoding="utf-8")
        args = [str(scenario), *args]
    if command == "noise" and HAVE_P372:
        args += ["--p372-dir", str(P372_DIR)]
    t0 = time.perf_counter()
    res = CliRunner().invoke(cli, [command, *args])
    assert time.perf_counter() - t0 < 10.0
    assert res.exit_code in (0, 2), (args, res.exit_code, res.output)
    assert "Traceback" not in res.output
    if res.exit_code == 2 and not (command == "noise" and not HAVE_P372 and "P.372" in res.output):
        # the message names the option (click) or the quantity it holds (the library)
        key = option.lstrip("-")
        assert key in res.output or key.replace("-", "_") in res.output or "Usage" in res.output, (args, res.output)


@seed(20261203)
@settings(max_examples=300, deadline=None, derandomize=True, suppress_health_check=list(HealthCheck))
@given(
    table=st.sampled_from(["iso", "reference", "site", "band", ""]),
    key=st.sampled_from(["length", "name", "ground", "frequency", "height", "a.b", "1x", ""]),
    values=st.lists(st.one_of(st.sampled_from(_LOOKALIKES), st.text(max_size=6)), max_size=4),
    ranged=st.booleans(),
)
def test_fuzz_vary(table, key, values, ranged):
    from snrgain.tools import sweep

    spec = " to ".join(values[:2]) + " by " + (values[2] if len(values) > 2 else "1") if ranged else ", ".join(values)
    try:
        v = sweep.parse_vary(f"{table}: {key} = {spec}")
    except sweep.VaryError as exc:
        assert str(exc)
        return
    assert v.values and all(x != "" for x in v.values)


def test_a_unit_over_an_antenna_that_fails_is_not_said_twice(tmp_path):
    # a part whose own table fails is said once: the unit over it no longer adds "no antenna named ..." for it;
    # a part that is nowhere in the file still is
    import snrgain
    from snrgain.errors import ScenarioError

    text = (SCENARIOS / "wren-corner.toml").read_text(encoding="utf-8")
    assert 'name = "sense whip"' in text and 'antennas = ["reference", "sense whip"]' in text
    i = text.index('name = "sense whip"')
    j = text.index('height = "', i)
    bad = text[:j] + 'height = "0 m"\n' + text[text.index("\n", j) + 1 :]
    with pytest.raises(ScenarioError) as err:
        snrgain.evaluate(bad)
    msgs = [m for _, m in err.value.problems]
    assert len(msgs) == 1 and "must be between 0.05 m and 300 m" in msgs[0]
    gone = text.replace('antennas = ["reference", "sense whip"]', 'antennas = ["reference", "nowhere"]')
    with pytest.raises(ScenarioError, match="no antenna named 'nowhere'"):
        snrgain.evaluate(gone)


def test_a_ground_that_is_free_space_is_an_input_error():
    import snrgain
    from snrgain.errors import ScenarioError

    text = (SCENARIOS / "wren-corner.toml").read_text(encoding="utf-8")
    site = text.index("[site]")
    vac = text[: site + 7] + 'ground = { conductivity = "0 mS/m", permittivity = 1 }\n' + text[site + 7 :]
    vac = vac.replace('ground = "moist loam"\n', "", 1) if vac.count("ground = ") > 1 else vac
    with pytest.raises(ScenarioError, match="is free space, not a ground"):
        snrgain.evaluate(vac)


def test_a_byte_order_mark_is_read_past_and_utf16_named(tmp_path):
    # a scenario saved with a byte-order mark (as some editors save UTF-8) failed "Invalid statement (line 1,
    # column 1)"; a CSV log with one did not find its time_utc column; UTF-16 files are named as such
    import snrgain
    from snrgain.errors import ScenarioError
    from snrgain.tools import logs

    text = (SCENARIOS / "wren-corner.toml").read_text(encoding="utf-8")
    bom = tmp_path / "bom.toml"
    bom.write_bytes(b"\xef\xbb\xbf" + text.encode("utf-8"))
    assert snrgain.scenario.load(bom).site.name == "Wren Corner"
    u16 = tmp_path / "u16.toml"
    u16.write_bytes(text.encode("utf-16"))
    with pytest.raises(ScenarioError, match="the file is UTF-16 text; save it as UTF-8"):
        snrgain.scenario.load(u16)
    log = tmp_path / "log.csv"
    log.write_bytes(b"\xef\xbb\xbftime_utc,band\n")
    assert logs.read_text(log).startswith("time_utc,")
    log.write_bytes("time_utc,band\n".encode("utf-16"))
    with pytest.raises(ValueError, match="is UTF-16 text; save it as UTF-8"):
        logs.read_text(log)


def test_names_of_every_script_pass():
    # the joiners inside a word or an emoji sequence, emoji newer than the interpreter's tables, CJK, apostrophes
    from snrgain.fields import check_name

    for name in (
        "\U0001f468\u200d\U0001f469\u200d\U0001f467 flag",
        "\u0645\u06cc\u200c\u062e\u0648\u0627\u0647\u0645",
        "\U0001fae8 loop",
        "\u65e5\u672c",
        "Tom's \u2019wire\u2019",
        "Caf\u00e9",
    ):
        assert check_name(name) == name


@pytest.mark.parametrize(
    "name, message",
    [
        ("B" * 81, "a name of at most 80 characters; this one has 81"),
        ("   ", "a name needs a letter or a digit, not only spaces"),
        ("bell\x07", "a name without control characters; this one holds U+0007"),
        # names that print alike were two rows of one look in the ranking (a hostile run's "Bev" and "Bev ", the
        # same with a zero-width space, "Café" composed and decomposed); a direction override turned a keep-out's
        # name round on the terminal
        ("sense whip ", "a name without spaces at its start or end"),
        ("sense\u200bwhip", "a name without invisible characters"),
        ("\u202ehouse", "this one holds U+202E"),
        ("Cafe\u0301", "a name in Unicode's composed form (NFC), which prints the same: write it as 'Café'"),
        ("\u212bngstr\u00f6m", "write it as 'Ångström'"),
    ],
)
def test_a_name_is_short_printable_text(name, message):
    # a 1 MB candidate name passed check and then ran figures for 45 s into matplotlib's image-size limit; a name of
    # spaces showed as a blank row; control characters reached the terminal and the report as they were
    import snrgain
    from snrgain.errors import ScenarioError

    text = (SCENARIOS / "wren-corner.toml").read_text(encoding="utf-8")
    assert 'name = "sense whip"' in text
    import json

    bad = text.replace('name = "sense whip"', f"name = {json.dumps(name)}", 1)
    with pytest.raises(ScenarioError) as err:
        snrgain.evaluate(bad)
    assert any(p.endswith(".name") and message in m for p, m in err.value.problems)


def test_a_switched_antennas_name_leaves_room_for_its_states_and_locate_writes_a_name_the_scenario_takes(tmp_path):
    import snrgain
    from snrgain.cli.main import cli
    from snrgain.errors import ScenarioError

    text = (REPO / "tests" / "data" / "layout-switched.toml").read_text(encoding="utf-8")
    assert 'name = "flag pair"' in text
    with pytest.raises(ScenarioError, match="a switched antenna's name of at most 65 characters here"):
        snrgain.evaluate(text.replace('name = "flag pair"', f'name = "{"F" * 78}"', 1))
    res = CliRunner().invoke(cli, ["locate", str(tmp_path / "none.toml"), "--name", " "])
    assert res.exit_code == 2 and "a name needs a letter or a digit" in res.output


def test_a_local_source_may_not_take_a_sky_components_name():
    # a source named "galactic" took the galactic component's place in the levels kept by name: the ranking changed
    # by 5 dB with no error
    import snrgain
    from snrgain.errors import ScenarioError

    text = (SCENARIOS / "wren-corner.toml").read_text(encoding="utf-8")
    old = 'name = "neighbour\'s supply"'
    assert old in text
    for name in ("galactic", "man-made (rural)", "atmospheric (P.372)"):
        with pytest.raises(ScenarioError, match="names one of the sky's own noise components"):
            snrgain.evaluate(text.replace(old, f'name = "{name}"', 1))


def test_a_pattern_gain_out_of_any_antennas_range_and_an_overflow_are_said(tmp_path, capsys):
    # a pattern gain of 1e308 dBi passed check and failed later ("array of sample points is empty"); -1e308 ranked
    # silently; a reading of 1e308 dB said "failed: (34, 'Numerical result out of range')"
    from snrgain.antennas import from_spec

    grid = [(az, el) for az in range(0, 360, 90) for el in (0, 45, 90)]
    for gain in (1e308, -1e308, 41.0):
        path = tmp_path / "p.csv"
        path.write_text(
            "azimuth_deg,elevation_deg,gain_dbi\n" + "".join(f"{a},{e},{gain if a == 90 else 0}\n" for a, e in grid)
        )
        with pytest.raises(Exception, match=r"gain_dbi must lie in \[-200, 40\] dBi"):
            from_spec({"family": "tabulated", "name": "t", "file": str(path)})
    from snrgain.cli.main import cli
    from snrgain.tools import noisereadings as nr

    readings = tmp_path / "r.toml"
    text = nr.EXAMPLE.replace("antenna_db = -73.0", "antenna_db = 1e308", 1)
    assert text != nr.EXAMPLE
    readings.write_text(text, encoding="utf-8")
    res = CliRunner().invoke(cli, ["noise-readings", str(SCENARIOS / "wren-corner.toml"), str(readings)])
    # the reading is refused for what it is now (a rise past what one receiver shows), before any computation
    assert res.exit_code == 2 and "reading[1]: antenna_db = 1e+308 and load_db = -120.0: a rise of" in res.output
    # and an overflow elsewhere is still said as such, not as "failed: (34, 'Numerical result out of range')"
    from snrgain.cli.options import handle_errors

    @handle_errors
    def overflowing():
        raise OverflowError(34, "Numerical result out of range")

    with pytest.raises(SystemExit) as stop:
        overflowing()
    assert stop.value.code == 2
    assert "too large to compute with (an overflow)" in capsys.readouterr().err
