"""Figures drawn before the results: the pipeline hands out the sky and the pattern cuts as it makes them
(evaluate's ``observe``), a Preview of the results carries them (snrgain.decide.decisions.preview), and the
command line's figures' process draws the sky and the patterns from it while the scenario is still evaluated.
Each must be the figure the results draw, byte for byte, and is kept only where the results show the same."""

from __future__ import annotations

import re
from dataclasses import replace
from functools import partial

import pytest
from click.testing import CliRunner

import snrgain
from snrgain.cli.main import cli
from snrgain.decide.decisions import preview
from snrgain.outputs import drawing, plots
from snrgain.outputs.output import to_json
from snrgain.scenario import load
from tests.conftest import SCENARIOS

ALDER = SCENARIOS / "alder-hollow.toml"


@pytest.fixture(scope="module")
def observed():
    seen = []
    results = snrgain.evaluate(ALDER, observe=lambda stage, sc, made: seen.append((stage, sc, made)))
    return results, seen


def test_evaluate_hands_out_the_sky_and_the_cuts_it_answers_with(observed):
    results, seen = observed
    assert [stage for stage, _, _ in seen] == ["sky", "cuts"]
    assert seen[0][2] is results.noise and seen[1][2] is results.cuts  # the very objects the results hold
    assert [a.name for a in seen[1][1].antennas] == [a.name for a in results.antennas]
    assert to_json(results) == to_json(snrgain.evaluate(ALDER))  # watching changes nothing


def test_a_preview_draws_the_figures_the_results_draw(observed):
    results, seen = observed
    (_, sc, skies), (_, steered, cuts) = seen
    early_sky = plots.for_drawing(preview(sc, skies=skies))
    early_cuts = preview(steered, cuts=cuts)
    assert plots.drawn_alike(early_sky, results) and plots.drawn_alike(early_cuts, results)
    assert plots.looks_of(early_cuts) == plots.looks_of(results)
    light = plots.for_drawing(results)
    jobs, theirs = [], []
    for i in range(len(results.targets)):
        for fn in (plots.azimuth_pattern, plots.elevation_pattern):
            jobs.append((partial(fn, early_cuts, target_index=i), "png", plots.SAVE_OPTIONS))
            theirs.append((partial(fn, light, target_index=i), "png", plots.SAVE_OPTIONS))
    jobs.append((partial(plots.noise_sky, early_sky), "png", plots.SAVE_OPTIONS))
    theirs.append((partial(plots.noise_sky, light), "png", plots.SAVE_OPTIONS))
    assert drawing.draw_all(jobs) == drawing.draw_all(theirs)


def test_a_preview_that_shows_something_else_is_not_taken(observed):
    results, seen = observed
    (_, sc, skies), (_, steered, cuts) = seen
    early = preview(steered, skies=skies, cuts=cuts)
    assert plots.drawn_alike(early, results)
    renamed = [dict(t) for t in early.targets]
    renamed[0]["name"] += " (moved)"
    assert not plots.drawn_alike(replace(early, targets=renamed), results)
    assert not plots.drawn_alike(replace(early, candidates=early.candidates[::-1]), results)
    assert not plots.drawn_alike(replace(early, freq_hz=early.freq_hz * 1.01), results)
    name = results.reference.name
    other = {**cuts.azimuth, name: cuts.azimuth[name] + 0.01}
    assert not plots.drawn_alike(replace(early, cuts=replace(cuts, azimuth=other)), results)
    same = {k: v.copy() for k, v in cuts.azimuth.items()}  # equal arrays, not the very ones: the same figure
    assert plots.drawn_alike(replace(early, cuts=replace(cuts, azimuth=same)), results)
    moment = plots.sky_moment(results)
    copied = {m: tuple(c for c in comps) for m, comps in skies.maps.items()}  # the same components, new tuples
    assert copied[moment] is not skies.maps[moment]
    assert not plots.drawn_alike(replace(early, noise=replace(skies, maps=copied)), results)


def test_figures_handed_ahead_and_not_drawn_when_the_jobs_come_are_drawn_with_them(results_png_jobs):
    from snrgain import processes

    jobs, here = results_png_jobs
    if processes.workers(len(jobs)) < 2:
        pytest.skip("one core or no fork here: no figures process is started")
    with drawing.Drawer("png") as drawer:
        assert drawer.active
        for k, job in enumerate(jobs):
            drawer.ahead(f"early-{k}", job)  # most still queued when the jobs come (the helper is importing)
        there = drawer.draw(jobs, ahead={k: f"early-{k}" for k in range(len(jobs))})
    assert there == here


@pytest.fixture
def results_png_jobs(observed, monkeypatch):
    from snrgain import processes

    results, _ = observed
    jobs = [
        (partial(plots.azimuth_pattern, results, target_index=0), "png", plots.SAVE_OPTIONS),
        (partial(plots.elevation_pattern, results, target_index=1), "png", plots.SAVE_OPTIONS),
        (partial(plots.ranking_chart, results), "png", plots.SAVE_OPTIONS),
    ]
    monkeypatch.setenv(processes.ENV_WORKERS, "1")
    here = drawing.draw_all(jobs)
    monkeypatch.setenv(processes.ENV_WORKERS, "2")
    return jobs, here


def _page(text: str) -> str:
    """The report with what differs from run to run taken out: the time it was made, the SVG writer's random ids."""
    text = re.sub(r"made [0-9-]+ [0-9:]+ UTC", "", text)
    text = re.sub(r"<dc:date>[^<]*</dc:date>", "", text)
    ids: dict[str, str] = {}
    return re.sub(r"\b(?:[pmCh]|image)[0-9a-f]{10}\b", lambda m: ids.setdefault(m.group(0), f"id{len(ids)}"), text)


def test_the_report_with_figures_drawn_ahead_is_the_report_drawn_after(tmp_path, monkeypatch):
    from snrgain import processes
    from snrgain.cli import report as cli_report

    if processes.workers(2) < 2:
        pytest.skip("one core or no fork here: no figures process is started")
    matched = []
    real = cli_report._Ahead.matching
    monkeypatch.setattr(
        cli_report._Ahead, "matching", lambda self, *a: matched.append(dict(real(self, *a))) or dict(matched[-1])
    )
    runner = CliRunner()
    ahead, after = tmp_path / "ahead.html", tmp_path / "after.html"
    res = runner.invoke(cli, ["report", str(ALDER), "-o", str(ahead)])
    assert res.exit_code == 0, res.output
    n_targets = len(load(ALDER).targets)
    assert len(matched) == 1 and len(matched[0]) == 2 * n_targets + 1  # the patterns and the sky
    monkeypatch.setenv(processes.ENV_WORKERS, "1")  # drawn here, one after the other, from the results
    res = runner.invoke(cli, ["report", str(ALDER), "-o", str(after)])
    assert res.exit_code == 0, res.output
    page = ahead.read_text()
    assert _page(page) == _page(after.read_text())
    # the figures' letters are text the reader can search (the report's SVG options), not outlines
    names = [t["name"] for t in snrgain.evaluate(ALDER).targets]
    assert all(re.search(rf"<text[^>]*>[^<]*{re.escape(n)}", page) for n in names)
    assert page.count("<svg") == page.count("</svg>") == 2 * n_targets + 4
