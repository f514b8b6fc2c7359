"""Warnings on candidates the station plan does not build are set apart: counted in one line by `rank` and
`report`, said in full with --all-warnings, in the JSON always (snrgain.model.results.Results.notices_apart)."""

import dataclasses
import json

import pytest
from click.testing import CliRunner

import snrgain
from snrgain.cli.main import cli
from snrgain.model.pipeline import evaluate_bands
from snrgain.model.results import ADVISORY_CODES, Notice
from tests.conftest import REPO, needs_p372

BANDS = REPO / "tests" / "data" / "sites" / "three-bands-switched.toml"
COMBO = REPO / "tests" / "data" / "combo-auto-terminated.toml"


@pytest.fixture(scope="module")
def three_bands():
    return evaluate_bands(BANDS)


@pytest.fixture(scope="module")
def combo():
    return snrgain.evaluate(COMBO)


def test_advisory_notices_on_unbuilt_candidates_are_set_apart_and_nothing_else(combo):
    r = combo
    unbuilt = frozenset()  # a plan that builds nothing: every candidate is unbuilt
    notices = [
        Notice("receiver-limited", "B", {}),  # advisory, on a candidate: apart
        Notice("wire-too-long", "A", {}),  # advisory: apart
        Notice("antennas-same-place", "A", {"other": "B", "distance_m": 0.5}),  # the lot's: said
        Notice("receiver-limited", r.reference.name, {}),  # the reference's own: said
        Notice("man-made-extrapolated", None, {}),  # the site's: said
    ]
    r = dataclasses.replace(r, notices=notices)
    said, apart = r.notices_apart(unbuilt)
    assert [n.code for n in apart] == ["receiver-limited", "wire-too-long"]
    assert [n.antenna for n in said] == ["A", r.reference.name, None]
    assert r.notices_apart(None) == (notices, [])  # no plan: nothing set apart
    assert r.notices_apart(frozenset({"A", "B"})) == (notices, [])  # both built: every notice said


def test_a_phasing_unit_in_the_plan_builds_its_parts(combo):
    # The plan builds "combo" (A and B through a phasing unit): the parts' own warnings (A's fragile resistor, B's
    # receiver noise) are about what gets built, so they are said.
    r = combo
    assert r.plan.antennas == ["combo"]
    assert {"combo", "A", "B"} <= r.built_names()
    assert r.antenna("combo").parts == ("A", "B")
    said, apart = r.notices_apart(r.built_names())
    assert apart == [] and {n.antenna for n in said} >= {"A", "B"}


@needs_p372
def test_three_bands_set_apart_what_the_plan_across_bands_does_not_build(three_bands):
    br = three_bands
    built_groups = set(br.plan.antennas)
    assert built_groups == {"two-wire Beverage", "four-square"}
    said, counts = br.warnings_apart()
    assert set(counts) == {"flag pair", "BOG Japan"}  # by antenna (a switched one by its own name)
    total_apart = 0
    for _, r in br.bands:
        built = r.built_names(br.plan.antennas)
        assert {c.name for c in r.candidates if c.group == "four-square"} <= built  # every state of a built one
        band_said, apart = r.notices_apart(built)
        assert all(n.code in ADVISORY_CODES and n.antenna not in built for n in apart)
        assert len(band_said) + len(apart) == len(r.notices)  # nothing dropped
        total_apart += len(apart)
    assert sum(counts.values()) == total_apart > 0
    # The BOG the 80 m plan alone would build is not built by the plan across the bands: its warnings go apart
    assert not any("BOG Japan" in w for w in said)
    assert any("BOG Japan" in w for w in br.warnings)


@needs_p372
def test_rank_counts_what_it_sets_apart_and_says_all_when_asked(tmp_path):
    runner = CliRunner()
    default = runner.invoke(cli, ["rank", str(BANDS)])
    assert default.exit_code == 0, default.output
    notes = [line for line in default.stderr.splitlines() if line.startswith("note: ")]
    assert len(notes) == 1 and "more warnings on candidates the station plan does not build" in notes[0]
    assert "flag pair: 5" in notes[0] and "--all-warnings says them" in notes[0]
    every = runner.invoke(cli, ["rank", str(BANDS), "--all-warnings"])
    assert every.exit_code == 0
    warned = [line for line in every.stderr.splitlines() if line.startswith("warning: ")]
    assert not any(line.startswith("note: ") for line in every.stderr.splitlines())
    shown = [line for line in default.stderr.splitlines() if line.startswith("warning: ")]
    assert len(warned) > len(shown) and set(shown) <= set(warned)
    # the JSON holds every warning either way
    out = tmp_path / "r.json"
    assert runner.invoke(cli, ["rank", str(BANDS), "--format", "json", "-o", str(out)]).exit_code == 0
    assert len(json.loads(out.read_text())["warnings"]) == len(warned)


@needs_p372
def test_bands_table_heads_each_bands_plan_as_its_own_and_explains_the_columns_once():
    text = CliRunner().invoke(cli, ["rank", str(BANDS)]).stdout
    for band in ("160 m", "80 m", "40 m"):
        assert f"Station plan for {band} alone:" in text
    assert "Station plan for every band:" in text
    assert text.count("RDF on the trade's scale") == 1
    assert text.index("Station plan for every band") < text.index("RDF on the trade's scale")


def test_report_lists_the_set_apart_warnings_folded_under_the_others(combo):
    from snrgain.outputs.report import render

    r = dataclasses.replace(combo, notices=[*combo.notices, Notice("receiver-limited", "elsewhere", _limited())])
    html = render(r, draw=lambda jobs, **kw: [b"<svg></svg>" for _ in jobs])
    assert "<details><summary>1 more warning on candidates the station plan does not build</summary>" in html
    assert html.index("its resistor of best SNR gain") < html.index("<details>")  # the built parts' said first


def _limited() -> dict:
    return {
        "worst_margin_db": 2.0,
        "margin_target_db": 10.0,
        "max_snr_loss_db": 2.1,
        "preamp_gain_db": 9.0,
        "preamp_position": "at the receiver",
    }
