"""Unknown keys of antenna tables and the names the command line and the measuring tools match against a scenario:
what a hostile-input run found (an unknown key told of a section the file has no room for, a name offered and then
refused, a name that matched two antennas, a name that looked the same and was refused)."""

from __future__ import annotations

import pytest
from click.testing import CliRunner

from snrgain.cli.main import cli
from tests.conftest import MINIMAL

# A small site with its own noise (no P.372 files).
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

[noise.man_made]
environment = "rural"

[noise.atmospheric]
model = "given"
fa = "60 dB"

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

[reference]
name = "short vertical"
family = "vertical"
height = "3 m"
position = [0, 0]
"""
BEV = """
[[candidate]]
name = "bev"
family = "beverage"
length = "200 m"
height = "2.5 m"
position = [30, 30]
"""
FLAG = """
[[candidate]]
name = "flag pair"
family = "terminated-loop"
width = "8 m"
loop_height = "4 m"
height = "1.5 m"
termination = "900 ohm"
position = [-40, 0]
directions = [{ name = "west", bearing = "295 deg" }, { name = "east", bearing = "115 deg" }]
"""


def _run(*args) -> tuple[int, str]:
    res = CliRunner().invoke(cli, [str(a) for a in args])
    assert "Traceback" not in res.output, res.output
    return res.exit_code, res.stderr


def _write(tmp_path, text: str, name: str = "s.toml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


# -- 1. a key of another antenna family, or of a table the antenna holds -----------------------------------------


@pytest.mark.parametrize(
    "table, key, said",
    [
        ("[reference]\n", 'length = "20 m"', "'length' is a key of the beverage, unterminated, bog and two-wire "),
        ("[reference]\n", 'termination = "500 ohm"', "'termination' is a key of the beverage, bog and terminated-loop"),
        (BEV, 'spacing = "0.3 m"', "'spacing' is a key of the two-wire family, not of beverage"),
        (BEV, 'insulation_thickness = "1 mm"', "'insulation_thickness' is a key of the bog family, not of beverage"),
        (
            '\n[[candidate]]\nname = "whip"\nfamily = "vertical"\nheight = "5 m"\n',
            'loop_height = "1 m"',
            "'loop_height' is a key of the small-loop and terminated-loop families, not of vertical",
        ),
    ],
)
def test_a_key_of_another_family_is_said_with_its_families(tmp_path, table, key, said):
    # They were "check its spelling", or (length) "a key of [chain.feedline]": a cable's length, not the antenna's.
    text = SITE + BEV if table == "[reference]\n" else SITE + table
    text = text.replace(table, table + key + "\n", 1)
    code, err = _run("check", _write(tmp_path, text))
    assert code == 2 and said in err, err
    assert "[chain" not in err and "check its spelling" not in err


def test_a_readings_file_is_not_told_of_a_scenarios_sections(tmp_path):
    # locate's readings have no [chain.feedline]: the vertical's 'length' was said to belong there.
    readings = (
        'frequency = "1.83 MHz"\nbandwidth = "500 Hz"\nground = "moist loam"\n\n[antenna.vertical]\n'
        'family = "vertical"\nheight = "18 m"\nlength = "20 m"\n\n'
        '[[reading]]\nantenna = "vertical"\nlevel = "-82 dBm"\n'
    )
    code, err = _run("locate", _write(tmp_path, readings, "r.toml"))
    assert code == 2, err
    assert "antenna.vertical.length: unknown key here: 'length' is a key of the beverage, unterminated, bog and " in err
    assert "not of vertical" in err and "[chain" not in err


def test_a_key_of_a_table_the_candidate_holds_is_said_to_belong_there():
    from snrgain.scenario.antennas import table_keys
    from snrgain.unknown_keys import unknown_key_message

    cand, ref = table_keys("candidate 1"), table_keys("reference")
    said = unknown_key_message("BeverageParams", ("cable",), cand)
    assert said == (
        "unknown key here: 'cable' belongs in this candidate's chain.feedline or feed_line tables, not in the "
        "candidate itself"
    ), said
    said = unknown_key_message("VerticalParams", ("noise_figure",), ref)
    assert said == (
        "unknown key here: 'noise_figure' belongs in this reference's chain.preamp table, not in the reference itself"
    ), said
    # without the file's tables (a readings file, from_spec) no section is offered
    assert unknown_key_message("BeverageParams", ("cable",)) == "unknown key (check its spelling)"


def test_an_unknown_key_in_place_is_told_the_keys_place_takes(tmp_path):
    # place = { position = ... } was told [[site.structures]], [[noise.local]] and [chain.preamp].
    text = SITE + BEV.replace('height = "2.5 m"\n', 'height = "2.5 m"\nbearing = 45\nplace = { position = [0, 0] }\n')
    code, err = _run("check", _write(tmp_path, text))
    assert code == 2, err
    assert 'candidate 1 ("bev").place.position: unknown key: place takes only bearing and length' in err, err
    assert "structures" not in err and "noise.local" not in err and "preamp" not in err


# -- 2. "did you mean" from every key a candidate takes ------------------------------------------------------------


@pytest.mark.parametrize(
    "written, meant",
    [
        ('direction = ["45 deg", "225 deg"]', "directions"),
        ('directons = ["45 deg", "225 deg"]', "directions"),
        ("plce = {}", "place"),
        ('feed_lin = { to = [0, 0], height = "1 m" }', "feed_line"),
        ('chian = { transformer_loss = "1 dB" }', "chain"),
        ('nmae = "x"', "name"),
    ],
)
def test_a_misspelt_candidate_key_is_offered_the_key_meant(tmp_path, written, meant):
    code, err = _run("check", _write(tmp_path, SITE + BEV + written + "\n"))
    assert code == 2, err
    assert f"unknown key (did you mean {meant!r}?)" in err, err


def test_a_misspelt_family_is_said_beside_the_missing_family(tmp_path):
    code, err = _run("check", _write(tmp_path, SITE + BEV.replace("family =", "familly =")))
    assert code == 2, err
    assert 'candidate 1 ("bev").family: required key is missing' in err
    assert "candidate 1 (\"bev\").familly: unknown key (did you mean 'family'?)" in err, err
    # a key some family takes is not said unknown while the family is not known
    assert ".length" not in err and ".height" not in err


def test_a_misspelt_feed_line_is_also_offered_beside_the_chains_feedline(tmp_path):
    code, err = _run("check", _write(tmp_path, MINIMAL + 'feedline = { cable = "RG-6", length = "20 m" }\n'))
    assert code == 2, err
    assert "'feedline' belongs in this candidate's chain table, not in the candidate itself" in err, err
    assert "(or did you mean 'feed_line'?)" in err


# -- 3. --reference lists only what it takes, and says at once that a switched antenna cannot be it --------------

WHIP = '\n[[candidate]]\nname = "whip"\nfamily = "vertical"\nheight = "5 m"\nposition = [60, -30]\n'


@pytest.mark.parametrize(
    "name, what",
    [
        ("flag pair", "'flag pair' is the switched antenna 'flag pair' (2 states: 'flag pair west (295 deg)', "),
        ("flag pair west", "'flag pair west' is one state of the switched antenna 'flag pair'"),
        ("flag pair west (295 deg)", "'flag pair west (295 deg)' is one state of the switched antenna 'flag pair'"),
        ("nobody", "no antenna named 'nobody'"),
    ],
)
def test_the_reference_option_offers_only_the_antennas_it_takes(name, what):
    # 'flag pair' was "no antenna named 'flag pair'; the scenario has ... 'flag pair west (295 deg)', ...", and that
    # name was then refused as a state of a switched antenna.
    from snrgain.errors import ScenarioError
    from snrgain.scenario import load

    with pytest.raises(ScenarioError) as err:
        load(SITE + FLAG + WHIP, reference=name)
    said = dict(err.value.problems)["--reference"]
    assert said.startswith(what), said
    assert said.endswith("--reference takes 'whip' (or 'short vertical', the file's reference)"), said
    if name != "nobody":
        assert "a switched antenna cannot be the reference" in said


def test_rank_refuses_a_switched_reference_at_once(tmp_path):
    code, err = _run("rank", _write(tmp_path, SITE + FLAG + WHIP), "--reference", "flag pair east")
    assert code == 2 and "'flag pair east' is one state of the switched antenna 'flag pair'" in err, err
    assert "(295 deg)'" not in err.split("takes", 1)[1]


# -- 4. noise-readings says the scenario's own problems before the readings' names --------------------------------


def test_noise_readings_says_the_scenarios_problem_before_a_readings_name(tmp_path):
    # A refused 'directions' left the flag without states, and the reading on 'flag pair NE' was said to name no
    # antenna of the scenario, where verify and rank said the directions' problem.
    bad = FLAG.replace(
        'directions = [{ name = "west", bearing = "295 deg" }, { name = "east", bearing = "115 deg" }]',
        'directions = ["40 deg", "50 deg"]',
    )
    readings = _write(tmp_path, _reading("flag pair NE"), "r.toml")
    code, err = _run("noise-readings", _write(tmp_path, SITE + bad), readings)
    assert code == 2, err
    assert 'candidate 1 ("flag pair").directions: ["40 deg", "50 deg"]: a terminated-loop is one loop' in err, err
    assert "is not in the scenario" not in err and "reading[1]" not in err


def _reading(antenna: str) -> str:
    return (
        f'[[reading]]\ntime = 2026-12-02T00:20:00Z\nantenna = "{antenna}"\nfrequency = "1.83 MHz"\n'
        'bandwidth = "2.4 kHz"\nantenna_db = -101.0\nload_db = -110.0\n'
    )


# -- 5. a name typed in Unicode's decomposed form names the antenna that prints the same ---------------------------

COMPOSED, DECOMPOSED = "w\u00ebst", "we\u0308st"  # "wëst" with one character, and as "e" and a combining mark


def test_a_decomposed_name_names_the_state_that_prints_the_same(tmp_path):
    flag = FLAG.replace('name = "west"', f'name = "{COMPOSED}"')
    site = _write(tmp_path, SITE + flag)
    readings = _write(tmp_path, _reading(f"flag pair {DECOMPOSED}"), "r.toml")
    res = CliRunner().invoke(cli, ["noise-readings", str(site), str(readings), "--format", "json"])
    assert res.exit_code == 0, res.output
    assert '"antenna": "flag pair w\\u00ebst (295 deg)"' in res.stdout


def test_names_are_matched_in_composed_form_wherever_a_user_names_an_antenna(tmp_path):
    import tomllib

    from snrgain.scenario import connected, load
    from snrgain.tools.calibrate import into_table
    from snrgain.tools.sweep import parse_vary

    cafe, cafe_typed = "caf\u00e9 whip", "cafe\u0301 whip"
    text = SITE + FLAG.replace('name = "west"', f'name = "{COMPOSED}"') + WHIP.replace("whip", cafe) + BEV
    data = tomllib.loads(text)
    assert connected(data, f"flag pair {DECOMPOSED}").name == f"flag pair {COMPOSED} (295 deg)"
    assert connected(data, f"flag pair {DECOMPOSED} (295 deg)").name == f"flag pair {COMPOSED} (295 deg)"
    assert connected(data, cafe_typed).name == cafe
    assert load(text, reference=cafe_typed).reference.name == cafe  # --reference
    assert into_table(data, "bev") == "bev" and into_table(data, f"flag pair {DECOMPOSED}") == "flag pair"
    assert parse_vary(f"{cafe_typed}: height = 4 m, 6 m").table == cafe  # sweep --vary
    # read_on, in the file, typed decomposed
    local = f'\n[[noise.local]]\nname = "fence"\nbearing = 100\nlevel = "S5"\nread_on = "{cafe_typed}"\n'
    sc = load(text + local)
    assert sc.noise.local[0].read_on == cafe


def test_verify_takes_a_decomposed_name(tmp_path):
    from snrgain.tools import verify as vf

    a, b = vf.synthesise(site_lat=50.0, site_lon=10.0, targets=[(45, 3.0)], hours=1, stations_per_target=4, seed=3)
    (tmp_path / "a.txt").write_text(a)
    (tmp_path / "b.txt").write_text(b)
    site = _write(tmp_path, SITE + FLAG.replace('name = "west"', f'name = "{COMPOSED}"'))
    logs = ["--log-a", tmp_path / "a.txt", "--log-b", tmp_path / "b.txt"]
    code, err = _run("verify", site, "--a", f"flag pair {DECOMPOSED}", "--b", "short vertical", *logs)
    assert code == 0, err


# -- 6. a candidate named like a state's shorter name ---------------------------------------------------------------


@pytest.mark.parametrize(
    "extra, where",
    [
        (WHIP.replace('"whip"', '"flag pair west"'), 'candidate 2 ("flag pair west").name'),
        (BEV.replace('"bev"', '"flag pair east"'), 'candidate 2 ("flag pair east").name'),
    ],
)
def test_a_candidate_named_like_a_states_shorter_name_is_an_input_error(tmp_path, extra, where):
    # It passed check, and noise-readings, verify and calibrate --into then took the plain candidate for the name.
    code, err = _run("check", _write(tmp_path, SITE + FLAG + extra))
    assert code == 2, err
    name = where.split('"')[1]
    state = name.replace("west", "west (295 deg)").replace("east", "east (115 deg)")
    assert (
        f"{where}: {name!r} is also the shorter name of {state!r}, a state of the switched antenna 'flag pair'" in err
    )


def test_a_reference_named_like_a_states_shorter_name_is_an_input_error_and_the_tools_refuse_the_name(tmp_path):
    import tomllib

    from snrgain.scenario import connected
    from snrgain.scenario.connected import TwoAntennas

    text = SITE.replace('name = "short vertical"', 'name = "flag pair west"') + FLAG
    code, err = _run("check", _write(tmp_path, text))
    assert (
        code == 2 and "reference.name: 'flag pair west' is also the shorter name of 'flag pair west (295 deg)'" in err
    )
    # the tools that read the tables before loading them refuse the name too, naming both antennas
    with pytest.raises(TwoAntennas, match=r"names both the antenna 'flag pair west' and 'flag pair west \(295 deg\)'"):
        connected(tomllib.loads(text), "flag pair west")
    assert connected(tomllib.loads(text), "flag pair west (295 deg)").group == "flag pair"
