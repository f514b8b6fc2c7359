"""Feet in, feet out: a scenario written in feet gets its lengths back in feet in the terminal, the report's build
sheet, the notices, `check`, the layout table and the `layout --write` copy; the JSON stays in metres."""

from __future__ import annotations

import json
import re
import tomllib
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from snrgain.cli.main import cli
from snrgain.errors import ScenarioError
from snrgain.model.notices import Notice
from snrgain.model.pipeline import evaluate
from snrgain.outputs.messages import notice_text
from snrgain.outputs.output import build_lines
from snrgain.scenario import load
from snrgain.tools.layout import Design, Layout, with_layout
from snrgain.units import M_PER_FT, length_both_text, length_text, length_unit_of, lengths_text

SITE = Path(__file__).parent / "data" / "sites" / "sedge-bank-plan.toml"


def test_the_unit_a_file_uses():
    assert length_unit_of(
        {"site": {"lot": [["0 ft", "0 ft"], ["9 ft", "0 ft"]]}, "candidate": [{"length": "3 m"}]}
    ) == ("ft")
    # bare plan numbers are metres: two corners of bare numbers outvote one length in feet
    assert length_unit_of({"site": {"lot": [[0, 0], [5, 0]]}, "candidate": [{"length": "300 ft"}]}) == "m"
    assert length_unit_of({"site": {"units": "ft", "lot": [[0, 0], [5, 0]]}}) == "ft"
    assert length_unit_of({"candidate": [{"length": "1 m"}, {"height": "8 ft"}]}) == "m"  # a tie is metres
    # attenuations per 100 ft and frequencies are not lengths
    assert length_unit_of({"candidate": [{"chain": {"loss": "0.6 dB/100ft"}, "length": "200 m"}]}) == "m"
    assert length_unit_of(None) == "m"
    data = tomllib.loads(SITE.read_text())
    data["site"]["units"] = "yd"
    with pytest.raises(ScenarioError) as err:
        load(data)
    assert any(p == "site.units" for p, _ in err.value.problems)


def test_the_formatter():
    assert length_text(8.8392, "ft", 0) == "29 ft"
    assert lengths_text([8.8392, 4.2672], "ft", 0) == "29 x 14 ft"
    assert length_both_text(29.0, "m", 1, 0) == "29.0 m (95 ft)"
    assert length_both_text(500 * M_PER_FT, "ft", 1, 0) == "500.0 ft (152 m)"
    with pytest.raises(ValueError, match="one of m, ft"):
        length_text(1.0, "yd")


@pytest.fixture(scope="module")
def feet_results():
    data = tomllib.loads(SITE.read_text())
    data["compute"] = {"nside": 8}
    data["uncertainty"] = {"samples": 40}
    return data, evaluate(load(data))


def test_feet_in_feet_out_build_sheet_and_notices(feet_results):
    data, r = feet_results
    assert r.site["length_unit"] == "ft"
    lines = dict(build_lines(r))
    # as written: 500 ft, 8 ft, a 26 x 13 ft flag, 20 ft whips; metres only in brackets
    assert lines["Beverage west"].startswith("500.0 ft (152 m); height 8.0 ft (2.44 m)")
    assert "rectangle 26.0 x 13.0 ft (7.92 x 3.96 m)" in lines["flag north-west"]
    assert "height 20.0 ft (6.10 m)" in lines["sense whip"]
    assert re.search(r"\d+ ns = \d+\.\d ft", lines["pair north-west"])
    text = " ".join(lines.values()) + " ".join(r.warnings)
    assert not re.search(r"\d m[ ;,)]", text.replace(" m)", ")"))  # no length shown first in metres
    assert "runs off the lot, up to 32 ft beyond its edge" in " ".join(r.warnings)
    assert "keep 100 ft" in " ".join(r.warnings)
    # the JSON stays SI
    d = r.to_dict()
    bev = next(c for c in d["candidates"] if c["name"] == "Beverage west")
    assert bev["parameters"]["length_m"] == pytest.approx(500 * M_PER_FT)
    assert d["site"]["length_unit"] == "ft" and "length_ft" not in json.dumps(d["site"])
    # the same file in metres answers in metres
    metric = dict(data, site=dict(data["site"], units="m"))
    rm = evaluate(load(metric))
    assert dict(build_lines(rm))["Beverage west"].startswith("152.4 m (500 ft)")
    assert "up to 10 m beyond its edge" in " ".join(rm.warnings)


def test_notices_in_the_unit():
    n = Notice("near-tx-vertical", "whip", {"distance_m": 25.908, "clearance_m": 30.48})
    assert "within 85 ft" in notice_text(n, unit="ft") and "keep 100 ft" in notice_text(n, unit="ft")
    assert "within 26 m" in notice_text(n) and "keep 30 m" in notice_text(n)


def test_check_says_what_rank_would_warn_in_feet():
    res = CliRunner().invoke(cli, ["check", str(SITE)])
    assert res.exit_code == 0, res.output
    assert "660 ft east-west by 500 ft north-south" in res.output
    assert "rank would warn: wire north: runs off the lot, up to 32 ft beyond its edge" in res.output
    assert "rank would warn: Beverage west: crosses BOG south-west" in res.output


def test_the_layout_copy_is_written_in_feet():
    text = SITE.read_text().replace(
        'position = ["525 ft", "200 ft"]',
        'position = ["525 ft", "200 ft"]\nplace = { bearing = ["270 deg", "300 deg"], length = ["400 ft", "600 ft"] }',
    )
    best = Layout((Design("Beverage west", 150.0, 60.0, 4.9, 160.0),), (8.0,), ("North America",))
    out = with_layout(text, best)
    assert re.search(r'position = \["492\.1 ft", "196\.9 ft"\]', out) and 'length = "524.9 ft"' in out
    sc = load(tomllib.loads(out))  # and it reads back to the same place (0.05 ft rounding)
    bev = next(a for a in sc.candidates if a.name == "Beverage west")
    assert bev.params.position == pytest.approx((150.0, 60.0), abs=0.02)
    assert bev.length_m == pytest.approx(160.0, abs=0.02)
    metric = with_layout(text, best, "m")
    assert 'position = ["150.0 m", "60.0 m"]' in metric


def test_layout_command_prints_and_writes_feet(tmp_path):
    text = SITE.read_text().replace(
        'position = ["525 ft", "200 ft"]',
        'position = ["525 ft", "200 ft"]\nplace = { bearing = ["270 deg", "300 deg"], length = ["400 ft", "600 ft"] }',
    )
    text += "\n[compute]\nnside = 8\n"
    src = tmp_path / "site.toml"
    src.write_text(text)
    copy = tmp_path / "placed.toml"
    res = CliRunner().invoke(cli, ["layout", str(src), "--keep", "1", "--write", str(copy)], env={"COLUMNS": "200"})
    assert res.exit_code == 0, res.output
    assert re.search(r"-?\d+ ft, -?\d+ ft", res.output) and re.search(r"\d+ ft \(\d+ m\)", res.output)
    written = copy.read_text()
    assert re.search(r'position = \["-?\d+\.\d ft", "-?\d+\.\d ft"\]   # placed by snrgain layout', written)
    res = CliRunner().invoke(cli, ["layout", str(src), "--keep", "1", "--format", "json"])
    out = json.loads(res.stdout)
    assert "position_m" in out["layouts"][0]["candidates"][0]  # JSON in metres


def test_a_value_that_rounds_to_zero_reads_without_a_minus_sign():
    # the demo's short receive vertical beside the TX vertical: an SNR gain of -0.004 dB read "-0.0 (-0.0 to -0.0)"
    from snrgain.outputs.output import _f

    assert [_f(x) for x in (-0.004, -0.049, 0.0, 0.04)] == ["+0.0"] * 4
    assert (_f(-0.05), _f(-1.26), _f(0.06)) == ("-0.1", "-1.3", "+0.1")
    assert _f(-0.004, "{:.1f}") == "0.0" and _f(float("nan")) == "-"


def test_signed_values_in_sentences_and_figures_read_without_a_minus_zero():
    # the same rule for the dB in the plan's sentences, the report, the notices and the ranking chart's labels
    # (snrgain.units.signed_text): the demo's short receive vertical's -0.004 dB read "-0.0" on the chart
    from snrgain.units import signed_text

    assert [signed_text(x) for x in (-0.004, -0.049, 0.0, -0.0, 0.04)] == ["+0.0"] * 5
    assert (signed_text(-0.05), signed_text(-1.26), signed_text(0.06), signed_text(3.14159, 2)) == (
        "-0.1",
        "-1.3",
        "+0.1",
        "+3.14",
    )
    assert signed_text(-0.004, 0) == "+0" and signed_text(float("-inf")) == "-inf"


FEET_SITE = """
[site]
name = "Fernhill (invented)"
latitude = 42.0
longitude = -72.0
ground = "moist loam"

[band]
frequency = "1.83 MHz"
bandwidth = "500 Hz"

[time]
months = [12]
utc_hours = [2]

[noise.man_made]
environment = "rural"

[[target]]
name = "Europe"
bearing = 45
elevation = ["5 deg", "25 deg"]

[reference]
family = "vertical"
height = "24 ft"

[[candidate]]
name = "Beverage"
family = "beverage"
length = "550 ft"
height = "60 ft"
bearing = 45
position = ["100 ft", "0 ft"]

[[candidate]]
name = "loop"
family = "small-loop"
width = "6 ft"
loop_height = "6 ft"
height = "2 ft"
bearing = 45
position = ["60 ft", "-40 ft"]

[[candidate]]
name = "ranged"
family = "beverage"
length = "550 ft"
height = "7 ft"
bearing = 45
position = ["-100 ft", "0 ft"]
place = { bearing = ["30 deg", "60 deg"], length = ["600 ft", "200 ft"] }
"""


def _problems(text: str) -> dict[str, str]:
    with pytest.raises(ScenarioError) as err:
        load(tomllib.loads(text))
    return dict(err.value.problems)


def test_the_length_a_message_quotes():
    from snrgain.units import length_said, lengths_said_in, significant_text

    assert [significant_text(x) for x in (18.288, 60.0000001, 0.001, 1234.6, 0.0, -0.00001)] == [
        "18.29",
        "60",
        "0.001",
        "1235",
        "0",
        "-0.00001",
    ]
    assert length_said(18.288) == "18.29 m"
    assert length_said(18.288, "ft") == "60 ft (18.3 m)"
    assert length_said(0.5, "ft", decimals=2) == "1.64 ft (0.50 m)" and length_said(0.5, decimals=2) == "0.50 m"
    with lengths_said_in("ft"):
        assert length_said(7.3152) == "24 ft (7.32 m)"
        with lengths_said_in("m"):
            assert length_said(7.3152) == "7.315 m"
        assert length_said(7.3152) == "24 ft (7.32 m)"
    assert length_said(7.3152) == "7.315 m"  # metres again outside
    with pytest.raises(ValueError, match="one of m, ft"), lengths_said_in("yd"):
        pass


def test_errors_of_a_file_in_feet_quote_its_feet():
    # they quoted the metres inside, to four decimals: "height: 18.288 m is 0.112 wavelengths", "(0.6096 m)",
    # "(182.88 m > 60.96 m)"
    got = _problems(FEET_SITE)
    assert got['candidate 1 ("Beverage")'].startswith("height: 60 ft (18.3 m) is 0.112 wavelengths at 1.83 MHz")
    assert got['candidate 2 ("loop")'] == (
        "height: the loop's centre at 2 ft (0.61 m) must be at least half the loop's height, 3 ft (0.914 m)"
    )
    assert got['candidate 3 ("ranged").place'] == "length: the range runs backwards: 600 ft (183 m) > 200 ft (61 m)"
    # a field's range in feet too, with the metres it is set in
    got = _problems(FEET_SITE.replace('height = "60 ft"', 'height = "600 ft"'))
    assert got['candidate 1 ("Beverage").height'] == 'must be > 0.164 ft (0.05 m) and <= 98.43 ft (30 m); got "600 ft"'
    # the same file in metres: metres, rounded
    metric = FEET_SITE.replace("[site]\n", '[site]\nunits = "m"\n')
    assert _problems(metric)['candidate 1 ("Beverage")'].startswith("height: 18.29 m is 0.112 wavelengths")
    every = " ".join(_problems(FEET_SITE).values())
    assert not re.search(r"\d\.\d{4}", every), every  # never the metres inside to four decimals


def test_a_front_to_back_near_zero_reads_without_a_minus_sign():
    # A reviewer's warning read "front-to-back -0 dB" (a given phasing's -0.3 dB): every front-to-back in the
    # notices, `wire` and the termination lines is rounded as the tables are, a negative zero never shown.
    from snrgain.tools.wiredesign import bound_text

    short = {"rdf_db": 6.2, "bearing_deg": 45.0, "front_to_back_db": -0.3, "rdf_best_db": 10.8}
    short |= {"front_to_back_best_db": 9.0, "best_lags_deg": [0, 164.6]}
    text = notice_text(Notice("given-phasing-short", "pair", short))
    assert "(front-to-back 0 dB)" in text and "-0 dB" not in text
    fragile = {"termination_ohm": 998.0, "safer_ohm": 325.0, "safer": "matched", "safer_words": "|Z0|"}
    fragile |= {"over_safer_db": 0.09, "front_to_back_db": -0.04, "front_to_back_safer_db": 4.4}
    assert "a front-to-back of 0.0 dB against 4.4 dB" in notice_text(Notice("termination-fragile", "bog", fragile))
    structure = {"structure": "tower", "distance_m": 10.0, "cost_db": 3.0, "front_to_back_db": -0.4}
    structure |= {"front_to_back_alone_db": -0.2, "forward_gain_change_db": -2.2}
    said = notice_text(Notice("structure-cost", "loop", structure))
    assert "front-to-back 0 dB against 0 dB without it" in said
    answer = {"at_search_bound": "high", "search_ohm": [100.0, 3000.0], "loss_at_1p4_db": 0.0, "figure_db": -0.03}
    assert "3000 ohm, 0.0 dB)" in bound_text(answer, "front-to-back")


def test_a_suggested_choke_is_said_alike_in_the_build_sheet_and_the_warning():
    # The build sheet said "a choke of 45401 ohm or more" while the warning said "about 45000 ohm": both now give it
    # to two significant figures, as a choke's impedance is known.
    from snrgain.outputs.messages import choke_text
    from snrgain.outputs.output import feed_line_text

    assert [choke_text(x) for x in (45401.0, 5061.0, 470.3, 4.54)] == [
        "about 45000 ohm",
        "about 5100 ohm",
        "about 470 ohm",
        "about 4.5 ohm",
    ]
    cost = {"cost_db": 10.1, "noise_share_db": -0.4, "choke_ohm": 45401.0, "quiet_below_db": 20.0}
    warning = notice_text(Notice("feed-line-cost", "pennant", cost))
    assert "a common-mode choke of about 45000 ohm at the antenna" in warning
    fl = {"buried": False, "height_m": 1.0, "antenna_end": "the loop itself", "isolation": "shared-ground"}
    fl |= {"choke_ohm": 0.0, "snr_gain_cost_db": [10.1], "choke_for_quiet_ohm": 45401.0, "quiet_below_db": 20.0}
    fl |= {"length_m": 17.0, "station_ground_ohm": 25.0, "noise_share_db": -0.4}
    sheet = feed_line_text(fl, "m")
    assert "a choke of about 45000 ohm or more puts it 20 dB below" in sheet and "45401" not in sheet


def test_the_noise_readings_column_and_the_preamp_column_are_named_plainly(feet_results):
    # "Fa mm" was cryptic; and the rank table's preamp column showed "none" with no legend entry.
    from snrgain.outputs.output import PREAMP_LEGEND, preamp_cell
    from snrgain.tools import noisereadings as nr

    row = {"reading": 1, "time_utc": "2026-11-10 23:00", "antenna": "v", "kind": "rise over load"}
    row |= {"antenna_temperature_k": 4e4, "offset_db": -3.0, "man_made_fa_db": 45.2, "note": ""}
    head, first = nr.fit_lines(nr.NoiseFit(0.0, -3.0, 0.5, 1.0, "quiet rural", 7.05e6, [row]))[:2]
    assert "man-made Fa" in head and "Fa mm" not in head
    assert head.index("man-made Fa") + len("man-made Fa") == first.index("45.2") + len("45.2")  # aligned
    nan = np.array([[np.nan]])
    assert (preamp_cell(False, nan), preamp_cell(True, nan), preamp_cell(True, nan, {"gain_db": 12.0})) == (
        "-",
        "none",
        "12*",
    )
    assert "'none': no preamplifier would help, see the antenna's warning" in PREAMP_LEGEND
    assert "'-': none needed" in PREAMP_LEGEND
    import html
    import io

    from rich.console import Console

    from snrgain.outputs.output import ranking_table
    from snrgain.outputs.report import _ranking

    console = Console(width=400, record=True, file=io.StringIO())
    console.print(ranking_table(feet_results[1]))
    assert PREAMP_LEGEND in console.export_text().replace("\n", " ")
    assert PREAMP_LEGEND in html.unescape(_ranking(feet_results[1]))


def test_a_long_caution_is_said_once_in_a_list_of_warnings():
    # a guyed tower beside three antennas: its 60-word caution in full on the first warning, named on the others
    from snrgain.outputs.messages import notice_text, notice_texts

    near = [
        Notice("near-structure", name, {"structure": "tower", "distance_m": d, "clearance_m": 30.0, "given": False})
        for name, d in (("bev", 14.6), ("flag", 20.0), ("loop", 25.0))
    ]
    texts = notice_texts(near)
    assert texts[0] == notice_text(near[0]) and "a tower is climbed" in texts[0]
    assert all("a tower is climbed" not in t and t.endswith("the tower's caution above applies") for t in texts[1:])
    assert [t.split(":")[0] for t in texts] == ["bev", "flag", "loop"]


def test_json_keeps_every_warning_whole_and_the_text_says_a_caution_once(tmp_path):
    from tests.scenario_text import scenario_text

    wires = "".join(
        f'[[candidate]]\nname = "B{k}"\nfamily = "beverage"\nlength = "150 m"\nheight = "2 m"\nbearing = 45\n'
        f"position = [{60 + 6 * k}, 0]\n\n"
        for k in range(3)
    )
    site = 'structures = [{ name = "tower", position = [70, 40], height = "30 m" }]\n'
    path = tmp_path / "tower.toml"
    path.write_text(scenario_text(site_extra=site, candidates=wires), encoding="utf-8")
    runner = CliRunner()
    text = runner.invoke(cli, ["rank", str(path), "--all-warnings"])
    assert text.exit_code == 0, text.output
    assert text.stderr.count("a tower is climbed") == 1 and "the tower's caution above applies" in text.stderr
    js = json.loads(runner.invoke(cli, ["rank", str(path), "--format", "json"]).stdout)
    whole = [w for w in js["warnings"] if "comes within" in w]
    assert len(whole) == 3 and all("a tower is climbed" in w for w in whole)
