"""The command line's figures kept in the persistent cache (snrgain.outputs.drawing.job_bytes): read back when a
later run draws the same figure from the same data under the same settings, drawn again when anything that enters
it changes, never kept where the cache or the figures' cache is off."""

from __future__ import annotations

from functools import partial

import matplotlib as mpl
import pytest
from click.testing import CliRunner

import snrgain
from noisemodels import skycache
from snrgain import processes
from snrgain.cli.main import cli
from snrgain.outputs import drawing, plots
from tests.conftest import SCENARIOS

ALDER = SCENARIOS / "alder-hollow.toml"


@pytest.fixture(scope="module")
def results():
    return snrgain.evaluate(ALDER)


@pytest.fixture
def kept(tmp_path, monkeypatch):
    """A cache folder of the test's own, the figures kept, drawn in this process; the figures drawn, counted."""
    monkeypatch.setenv(skycache.ENV_DIR, str(tmp_path))
    monkeypatch.delenv(drawing.ENV_NO_FIGURES, raising=False)
    monkeypatch.setenv(processes.ENV_WORKERS, "1")
    drawn = []
    real = drawing.figure_bytes
    monkeypatch.setattr(drawing, "figure_bytes", lambda fig, fmt, **kw: drawn.append(fmt) or real(fig, fmt, **kw))
    return tmp_path, drawn


def _entries(folder):
    return sorted(p.name for p in folder.rglob(f"{drawing.FIGURES_KIND}-*"))


def test_a_figure_drawn_once_is_read_back_the_same(results, kept, monkeypatch):
    folder, drawn = kept
    monkeypatch.setitem(mpl.rcParams, "svg.hashsalt", "fixed")  # SVG ids from a fixed salt: two draws compare
    jobs = [
        (partial(plots.elevation_pattern, results, target_index=0), "png", plots.SAVE_OPTIONS),
        (
            partial(plots.ranking_chart, results),
            "svg",
            {"bbox_inches": "tight", "svg_text": True, "metadata": {"Date": None}},
        ),
    ]
    first = drawing.draw_all(jobs, keep=True)
    assert len(drawn) == 2 and len(_entries(folder)) == 2
    again = drawing.draw_all(jobs, keep=True)
    assert again == first and len(drawn) == 2  # read back, not drawn
    assert drawing.draw_all(jobs) == first and len(drawn) == 4  # not asked to keep: drawn, nothing read


def test_anything_that_enters_a_figure_draws_it_again(results, kept):
    from dataclasses import replace

    folder, drawn = kept
    job = (partial(plots.elevation_pattern, results, target_index=0), "png", plots.SAVE_OPTIONS)
    base = drawing.draw_all([job], keep=True)
    changed = [
        (partial(plots.elevation_pattern, results, target_index=1), "png", plots.SAVE_OPTIONS),  # a keyword
        (partial(plots.azimuth_pattern, results, target_index=0), "png", plots.SAVE_OPTIONS),  # the figure
        (job[0], "svg", {"bbox_inches": "tight"}),  # the format
        (job[0], "png", {**plots.SAVE_OPTIONS, "dpi": 72}),  # savefig's keywords
        (
            partial(plots.elevation_pattern, replace(results, freq_hz=results.freq_hz * 1.01), target_index=0),
            "png",
            plots.SAVE_OPTIONS,
        ),  # the data
    ]
    for k, other in enumerate(changed):
        drawing.draw_all([other], keep=True)
        assert len(drawn) == k + 2, k
    with mpl.rc_context({"axes.facecolor": "0.9"}):  # matplotlib's settings
        assert drawing.draw_all([job], keep=True) != base
    assert len(drawn) == len(changed) + 2
    assert drawing.draw_all([job], keep=True) == base and len(drawn) == len(changed) + 2  # as before: read back
    n = len(_entries(folder))
    for env in (drawing.ENV_NO_FIGURES, skycache.ENV_OFF):  # either opt-out: drawn, nothing read or kept
        with pytest.MonkeyPatch.context() as mp:
            mp.setenv(env, "1")
            assert drawing.draw_all([job], keep=True) == base
    assert len(drawn) == len(changed) + 4 and len(_entries(folder)) == n


def test_an_entry_that_is_not_a_whole_figure_is_drawn_again(results, kept):
    folder, drawn = kept
    job = (partial(plots.elevation_pattern, results, target_index=0), "png", plots.SAVE_OPTIONS)
    base = drawing.draw_all([job], keep=True)
    (entry,) = folder.rglob(f"{drawing.FIGURES_KIND}-*")
    entry.write_bytes(entry.read_bytes()[:100])  # cut short (a full disk, a killed writer)
    assert drawing.draw_all([job], keep=True) == base and len(drawn) == 2


def test_the_report_run_again_reads_its_figures_back(tmp_path, monkeypatch):
    monkeypatch.setenv(skycache.ENV_DIR, str(tmp_path / "cache"))
    monkeypatch.delenv(drawing.ENV_NO_FIGURES, raising=False)
    runner = CliRunner()
    first, second = tmp_path / "a.html", tmp_path / "b.html"
    assert runner.invoke(cli, ["report", str(ALDER), "-o", str(first)]).exit_code == 0
    kept = _entries(tmp_path / "cache")
    n_targets = len(snrgain.evaluate(ALDER).targets)
    assert len(kept) == 2 * n_targets + 4  # every figure of the report
    assert runner.invoke(cli, ["report", str(ALDER), "-o", str(second)]).exit_code == 0
    assert _entries(tmp_path / "cache") == kept  # nothing new: every figure read back
    from tests.test_drawn_ahead import _page

    assert _page(first.read_text()) == _page(second.read_text())
