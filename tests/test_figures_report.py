"""Figures and the HTML report: non-empty images with the expected axes and traces; valid, complete HTML."""

import io
import os
import shutil
import subprocess
from html.parser import HTMLParser

import matplotlib.pyplot as plt
import pytest
from click.testing import CliRunner

import snrgain
from snrgain.cli.main import cli
from snrgain.outputs import plots, report
from tests.conftest import HAVE_P372, P372_DIR, SCENARIOS


@pytest.fixture(scope="module")
def results():
    return snrgain.evaluate(SCENARIOS / "alder-hollow.toml")


@pytest.fixture(scope="module")
def summer(monkeypatch_module=None):
    import os

    if not HAVE_P372:
        pytest.skip(f"ITU-R P.372 data not found at {P372_DIR} (set SNRGAIN_P372_DIR to their folder)")
    old = os.environ.get("SNRGAIN_P372_DIR")
    os.environ["SNRGAIN_P372_DIR"] = str(P372_DIR)
    try:
        return snrgain.evaluate(SCENARIOS / "alder-hollow-summer.toml")
    finally:
        if old is None:
            del os.environ["SNRGAIN_P372_DIR"]
        else:
            os.environ["SNRGAIN_P372_DIR"] = old


def _png_size(fig, tmp_path, name):
    p = tmp_path / f"{name}.png"
    plots.save(fig, p)
    return p.stat().st_size


def _labelled_lines(ax):
    return [ln.get_label() for ln in ax.get_lines() if not ln.get_label().startswith("_")]


def test_azimuth_pattern(results, tmp_path):
    fig = plots.azimuth_pattern(results)
    assert len(fig.axes) == 1 and fig.axes[0].name == "polar"
    labels = _labelled_lines(fig.axes[0])
    n_ant = 1 + len(results.candidates)
    assert len(labels) == n_ant + len(results.targets) + len(results.local_sources)  # targets have their own marks
    assert any("reference" in lab for lab in labels)
    assert "dBi" in fig.axes[0].get_title()
    assert _png_size(fig, tmp_path, "az") > 10_000
    plt.close(fig)


def test_elevation_pattern(results, tmp_path):
    fig = plots.elevation_pattern(results, target_index=1)
    ax = fig.axes[0]
    assert "elevation" in ax.get_xlabel() and "dBi" in ax.get_ylabel()
    assert len(_labelled_lines(ax)) == 1 + len(results.candidates)
    assert _png_size(fig, tmp_path, "el") > 10_000
    plt.close(fig)


def test_noise_sky_panels(summer, tmp_path):
    fig = plots.noise_sky(summer, hour_index=2)
    diffuse = [c for c in summer.noise.maps[(0, 2)] if c.directions.nside is not None]
    # one panel per diffuse component, one for the total, and the colour bar
    assert len(fig.axes) == len(diffuse) + 2
    assert all("elevation" in ax.get_ylabel() for ax in fig.axes[:-1])
    assert "dB above 1 K" in fig.axes[-1].get_ylabel()
    assert _png_size(fig, tmp_path, "sky") > 20_000
    plt.close(fig)


def test_an_svg_holds_the_skys_cells_at_their_own_resolution(results):
    # drawing.save_figure: in an SVG an image drawn cell for cell (the sky's maps, interpolation "nearest") is
    # written as its own cells, marked for the viewer to draw them pixelated (matplotlib's interpolation "none"), not
    # resampled at the figure's dpi; the figure's images are left as they were, and a PNG resamples as before.
    import base64
    import re

    from snrgain.outputs import drawing

    fig = plots.noise_sky(results)
    images = [im for ax in fig.axes for im in ax.images]
    assert images and all(im.get_interpolation() == "nearest" for im in images)
    png = drawing.figure_bytes(fig, "png", **plots.SAVE_OPTIONS)
    svg = drawing.figure_bytes(fig, "svg", **report.SVG_OPTIONS).decode()
    tags = [tag for tag in re.findall(r"<image [^>]*>", svg) if "image-rendering:pixelated" in tag]
    assert len(tags) == len(images)  # (the colour bar is an image of its own, resampled)
    az_edges, el_edges = plots._sky_edges()
    for tag in tags:
        data = re.search(r'data:image/png;base64,\s*([A-Za-z0-9+/=\s]+)"', tag).group(1)
        assert _pixels(base64.b64decode(data)).shape[:2] == (el_edges.size - 1, az_edges.size - 1)
    assert all(im.get_interpolation() == "nearest" for im in images)
    assert drawing.figure_bytes(fig, "png", **plots.SAVE_OPTIONS) == png
    plt.close(fig)


def test_an_svg_leaves_other_image_kinds_as_they_are():
    # Only a plain image (imshow's) drawn cell for cell is written at its own resolution (drawing.save_figure); an
    # image of another kind (a NonUniformImage, which takes no "none") is written as matplotlib writes it, and every
    # image's interpolation is as it was after.
    import numpy as np
    from matplotlib.figure import Figure
    from matplotlib.image import NonUniformImage

    from snrgain.outputs import drawing

    fig = Figure(figsize=(4.0, 3.0))
    ax = fig.add_subplot()
    plain = ax.imshow(np.arange(12.0).reshape(3, 4), interpolation="nearest")
    other = NonUniformImage(ax, interpolation="nearest", extent=(0, 4, 0, 3))
    other.set_data(np.arange(4.0), np.arange(3.0), np.arange(12.0).reshape(3, 4))
    ax.add_image(other)
    svg = drawing.figure_bytes(fig, "svg", bbox_inches="tight").decode()
    assert svg.count("image-rendering:pixelated") == 1
    assert plain.get_interpolation() == "nearest" and other.get_interpolation() == "nearest"


def test_snr_over_hours_with_decile_bands(summer, tmp_path):
    fig = plots.snr_over_hours(summer)
    assert len(fig.axes) == len(summer.targets)  # one panel per target
    ax = fig.axes[0]
    assert len(_labelled_lines(ax)) == len(summer.candidates) + 1
    import numpy as np
    from matplotlib.collections import LineCollection, PolyCollection
    from matplotlib.colors import to_rgba

    from snrgain.outputs.style import looks_of

    # one decile band per candidate, and its bars on every point (one collection of each a panel)
    (bands,) = [c for c in ax.collections if isinstance(c, PolyCollection)]
    (bars,) = [c for c in ax.collections if isinstance(c, LineCollection)]
    looks = looks_of(summer)
    colours = {tuple(np.round(to_rgba(looks[a.name].color)[:3], 6)) for a in summer.candidates}
    assert {tuple(np.round(c[:3], 6)) for c in bands.get_facecolors()} == colours
    assert {tuple(np.round(c[:3], 6)) for c in bars.get_colors()} == colours
    assert len(bars.get_segments()) == len(summer.candidates) * len(plots.target_window(summer, 0)[0])
    assert "UTC" in fig.axes[-1].get_xlabel()
    assert _png_size(fig, tmp_path, "hours") > 10_000
    plt.close(fig)


def test_ranking_chart(results, tmp_path):
    fig = plots.ranking_chart(results)
    assert len(fig.axes) == 3
    assert [t.get_text() for t in fig.axes[0].get_yticklabels()][::-1] == [c.name for c in results.candidates]
    assert _png_size(fig, tmp_path, "rank") > 10_000
    plt.close(fig)


def test_site_plan(results, tmp_path):
    assert plots.has_site_plan(results)
    fig = plots.site_plan(results)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "east (m)" and ax.get_ylabel() == "north (m)"
    placed = [a for a in [results.reference, *results.candidates] if "position_m" in a.parameters]
    labels = _labelled_lines(ax)
    assert all(any(lab.startswith(a.name) for lab in labels) for a in placed)
    assert _png_size(fig, tmp_path, "plan") > 10_000
    plt.close(fig)


def test_site_plan_needs_a_lot_or_positions():
    r = snrgain.evaluate(SCENARIOS / "marrow-fen.toml")
    assert not plots.has_site_plan(r)
    with pytest.raises(ValueError, match="no lot outline"):
        plots.site_plan(r)


def test_save_refuses_to_overwrite_and_bad_suffix(results, tmp_path):
    fig = plots.ranking_chart(results)
    p = tmp_path / "x.svg"
    plots.save(fig, p)
    assert p.read_text().lstrip().startswith("<?xml") or "<svg" in p.read_text()[:500]
    with pytest.raises(FileExistsError):
        plots.save(fig, p)
    with pytest.raises(ValueError, match=".png or .svg"):
        plots.save(fig, tmp_path / "x.jpg")
    plt.close(fig)


class _Checker(HTMLParser):
    VOID = {"meta", "br", "img", "hr", "input", "link"}

    def __init__(self):
        super().__init__()
        self.stack, self.ids, self.errors, self.svgs, self.external = [], set(), [], 0, []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if "id" in a:
            self.ids.add(a["id"])
        if tag == "svg" and not any(t == "svg" for t in self.stack):
            self.svgs += 1
        for key in ("src", "href"):
            if a.get(key, "").startswith(("http:", "https:", "//")):
                self.external.append(a[key])
        if tag not in self.VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        a = dict(attrs)
        for key in ("src", "href"):
            if a.get(key, "").startswith(("http:", "https:", "//")):
                self.external.append(a[key])

    def handle_endtag(self, tag):
        if tag in self.VOID:
            return
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"unbalanced </{tag}> (open: {self.stack[-3:]})")
            if tag in self.stack:
                while self.stack and self.stack.pop() != tag:
                    pass
            return
        self.stack.pop()


def test_report_is_complete_html(results):
    text = report.render(results)
    assert text.startswith("<!DOCTYPE html>")
    chk = _Checker()
    chk.feed(text)
    assert not chk.errors, chk.errors[:5]
    assert {"summary", "ranked", "plan", "build", "figures", "models", "safety", "ranking"} <= chk.ids
    assert chk.svgs == len(report.figure_list(results))
    assert not chk.external  # opens without network access
    assert "<script" not in text
    for c in results.candidates:
        assert c.name in text
    assert "power lines" in text and "@media print" in text


def test_report_command(tmp_path):
    out = tmp_path / "r.html"
    runner = CliRunner()
    res = runner.invoke(cli, ["report", str(SCENARIOS / "marrow-fen.toml"), "-o", str(out)])
    assert res.exit_code == 0, res.output
    assert "The best antenna for each target" in out.read_text() and "Station plan" in out.read_text()
    res = runner.invoke(cli, ["report", str(SCENARIOS / "marrow-fen.toml"), "-o", str(out)])
    assert res.exit_code == 2 and "--overwrite" in res.stderr


def test_figures_command(tmp_path):
    runner = CliRunner()
    res = runner.invoke(
        cli, ["figures", str(SCENARIOS / "alder-hollow.toml"), "--dir", str(tmp_path), "--format", "svg"]
    )
    assert res.exit_code == 0, res.output
    names = sorted(p.name for p in tmp_path.iterdir())
    assert "plan.svg" in names and "ranking.svg" in names and "azimuth-south-america.svg" in names
    # each target's figures are named by the target (the demo's "South America"), not its number


def test_figures_already_there_are_refused_before_the_evaluation(tmp_path, monkeypatch):
    # The files a run would write are known from the scenario: one already there is refused at once (exit 2, naming
    # it), not after a whole evaluation (which could take minutes on a large site).
    import snrgain.cli.report as cli_report

    def never(*_a, **_k):
        raise AssertionError("evaluated before refusing")

    monkeypatch.setattr(cli_report, "_evaluated", never)
    (tmp_path / "azimuth-south-america.png").write_bytes(b"mine")
    res = CliRunner().invoke(cli, ["figures", str(SCENARIOS / "alder-hollow.toml"), "--dir", str(tmp_path)])
    assert res.exit_code == 2, res.output
    assert "azimuth-south-america.png" in res.stderr and "--overwrite" in res.stderr
    assert (tmp_path / "azimuth-south-america.png").read_bytes() == b"mine"
    # --only plan on a file with no lot and no positions: refused before the evaluation too
    bare = SCENARIOS / "marrow-fen.toml"  # no lot, no antenna positions
    res = CliRunner().invoke(cli, ["figures", str(bare), "--only", "plan", "--dir", str(tmp_path)])
    assert res.exit_code == 2 and "--only plan" in res.stderr, res.output


def test_figures_says_a_long_drawing_before_it_starts(tmp_path, monkeypatch):
    # the report's per-figure costs (snrgain.outputs.reportsize) for the figures asked for only, said on stderr before
    # any work when they pass NOTE_SECONDS (here lowered to catch the demo's)
    import snrgain.cli.report as cli_report
    import snrgain.outputs.reportsize as rs

    assert rs.drawing_seconds({"plan": 1}, 64, 65) < rs.NOTE_SECONDS < rs.report_size(64, 65, True).seconds
    assert rs.drawing_seconds({"azimuth": 2}, 3, 5) == pytest.approx(2 * rs.drawing_seconds({"azimuth": 1}, 3, 5))

    def stop(*_a, **_k):
        raise ValueError("stopped before the evaluation")

    monkeypatch.setattr(cli_report, "_evaluated", stop)
    monkeypatch.setattr(rs, "NOTE_SECONDS", 0.0)
    args = ["figures", str(SCENARIOS / "alder-hollow.toml"), "--dir", str(tmp_path), "--only", "ranking"]
    res = CliRunner().invoke(cli, args)
    assert "stopped before the evaluation" in res.stderr, res.output
    assert "figures: 1 figure to draw, about" in res.stderr


def _chromium():
    for name in ("chromium", "chromium-browser"):
        path = shutil.which(name)
        if path:
            return path
    return None


@pytest.mark.skipif(_chromium() is None, reason="headless Chromium (Debian package 'chromium') not installed")
def test_report_renders_in_headless_chromium(results, tmp_path):
    page = tmp_path / "report.html"
    page.write_text(report.render(results))
    args = [
        _chromium(),
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        f"--user-data-dir={tmp_path / 'profile'}",
    ]
    dom = subprocess.run(args + ["--dump-dom", page.as_uri()], capture_output=True, text=True, timeout=120)
    assert dom.returncode == 0, dom.stderr[-2000:]
    assert 'id="ranking"' in dom.stdout and results.candidates[0].name in dom.stdout
    shot = tmp_path / "shot.png"
    subprocess.run(
        args + [f"--screenshot={shot}", "--window-size=1200,2000", page.as_uri()],
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert shot.exists() and shot.stat().st_size > 20_000


def test_report_escapes_the_s_meter_reading_below_s1():
    # "<S1" must reach the page as text, not as a tag (a flag's output sits below S1 on quiet sites).
    from dataclasses import replace

    r = snrgain.evaluate(SCENARIOS / "marrow-fen.toml")
    quiet = [replace(a, noise_dbm=a.noise_dbm - 60.0) for a in r.antennas]  # every antenna far below S1
    html = report.render(replace(r, reference=quiet[0], candidates=quiet[1:]))
    assert "&lt;S1" in html and "<S1" not in html


def test_figures_drawn_by_workers_are_the_bytes_drawn_in_this_process(results, monkeypatch):
    # outputs.drawing shares the figures among forked workers; the PNGs must be byte for byte what drawing them
    # one after the other here gives, in the jobs' order.
    from functools import partial

    from snrgain import processes
    from snrgain.outputs import drawing

    jobs = [
        (partial(plots.azimuth_pattern, results, target_index=0), "png", plots.SAVE_OPTIONS),
        (partial(plots.ranking_chart, results), "png", plots.SAVE_OPTIONS),
        (partial(plots.elevation_pattern, results, target_index=0), "png", plots.SAVE_OPTIONS),
    ]
    monkeypatch.setenv(processes.ENV_WORKERS, "1")
    alone = drawing.draw_all(jobs)
    monkeypatch.setenv(processes.ENV_WORKERS, "2")
    if processes.workers(len(jobs)) < 2:
        pytest.skip("one core or no fork here: only the serial path can run")
    counted = []
    shared = drawing.draw_all(jobs, done=lambda: counted.append(1))
    assert shared == alone and len(counted) == len(jobs)
    assert all(b.startswith(b"\x89PNG") for b in shared)


def _drawn_by(pids_file, label):
    """A small figure, its maker's process id written to ``pids_file`` (which process drew it)."""
    from matplotlib.figure import Figure

    with open(pids_file, "a") as f:
        f.write(f"{os.getpid()}\n")
    fig = Figure(figsize=(2.0, 1.5), dpi=72)
    fig.add_subplot().set_title(label)
    return fig


def test_this_process_draws_beside_its_workers_and_raises_their_errors(tmp_path, monkeypatch):
    # draw_all with two processes forks one worker and draws too, both taking jobs from one list: each job drawn
    # once, some here and some in the worker, in the jobs' order and as drawn alone; a job that fails raises its
    # error here.
    from functools import partial

    from snrgain import processes
    from snrgain.outputs import drawing

    pids = tmp_path / "pids"
    jobs = [(partial(_drawn_by, pids, f"figure {k}"), "png", {"dpi": 72, "bbox_inches": "tight"}) for k in range(8)]
    monkeypatch.setenv(processes.ENV_WORKERS, "1")
    alone = drawing.draw_all(jobs)
    pids.unlink()
    monkeypatch.setenv(processes.ENV_WORKERS, "2")
    if processes.workers(len(jobs)) < 2:
        pytest.skip("one core or no fork here: only the serial path can run")
    counted = []
    assert drawing.draw_all(jobs, done=lambda: counted.append(1), cost=list(range(8))) == alone
    drawers = pids.read_text().split()
    assert len(drawers) == len(jobs) == len(counted)
    assert str(os.getpid()) in drawers and len(set(drawers)) == 2  # this process and one worker

    def broken():
        raise RuntimeError("no such figure")

    with pytest.raises(RuntimeError, match="no such figure"):
        drawing.draw_all([*jobs[:3], (broken, "png", {}), *jobs[3:]])


def test_saving_an_svg_with_one_draw_writes_the_picture_savefig_writes(results, monkeypatch):
    # drawing.save_figure draws an SVG once, widened by a margin, and sets its view box to the artists' box measured
    # by the renderer that drew them; savefig(bbox_inches="tight") measures first and draws again.  The files must
    # hold the same picture: the same size to the printed digit, the same elements, each drawing the same (the
    # coordinates counted from another corner); else, as for another figure, savefig's own bytes.
    import re

    import matplotlib as mpl
    from matplotlib.figure import Figure

    from snrgain.outputs import drawing

    monkeypatch.setitem(mpl.rcParams, "svg.hashsalt", "fixed")  # SVG ids from a fixed salt, so two files compare
    opts = {"bbox_inches": "tight", "metadata": {"Date": None}}
    draws = []
    real_draw = Figure.draw
    monkeypatch.setattr(Figure, "draw", lambda fig, renderer: draws.append(1) or real_draw(fig, renderer))
    size = re.compile(r'<svg[^>]* width="([^"]*)" height="([^"]*)" viewBox="([^"]*)"')
    # a polar plot, an equal-aspect plan, a colour bar and a rasterized mesh, legends outside the axes
    for make in (plots.azimuth_pattern, plots.site_plan, plots.noise_sky, plots.ranking_chart):
        fig = make(results)
        own = io.BytesIO()
        del draws[:]
        drawing.save_figure(fig, own, "svg", **opts)
        assert len(draws) == 1, make.__name__
        theirs = io.BytesIO()
        fig.savefig(theirs, format="svg", **opts)
        assert len(draws) == 3  # savefig's own way draws twice
        a, b = own.getvalue().decode(), theirs.getvalue().decode()
        (wa, ha, view_a), (wb, hb, view_b) = size.search(a).groups(), size.search(b).groups()
        assert (wa, ha) == (wb, hb), make.__name__
        assert view_a.split()[2:] == view_b.split()[2:] and view_b.startswith("0 0 ")
        assert re.findall(r"<(\w+)", a) == re.findall(r"<(\w+)", b), make.__name__  # the same elements in order
        glyphs = re.compile(r'<path id="[^"]*" d="[^"]*"')  # the glyphs' and markers' own shapes, not placed
        assert glyphs.findall(a) == glyphs.findall(b), make.__name__
    # Another canvas than the figure's own (a figure made elsewhere): savefig's own bytes.
    from matplotlib.backends.backend_svg import FigureCanvasSVG

    fig = plots.elevation_pattern(results)
    FigureCanvasSVG(fig)
    own, theirs = io.BytesIO(), io.BytesIO()
    drawing.save_figure(fig, own, "svg", **opts)
    fig.savefig(theirs, format="svg", **opts)
    assert own.getvalue() == theirs.getvalue()


def _pixels(png: bytes):
    import numpy as np
    from PIL import Image

    return np.asarray(Image.open(io.BytesIO(png)).convert("RGB")).astype(int)


def test_saving_a_png_with_one_draw_shows_what_savefig_shows(results, monkeypatch):
    # A PNG is drawn once, on a canvas with a margin, and cut to what was drawn there (drawing._png_one_draw);
    # savefig(bbox_inches="tight") measures first and draws again, cut to the artists' boxes at a fraction of a pixel
    # elsewhere.  The two pictures must agree: the same size within a few pixels (nothing cut off, no more room),
    # and, at the best whole-pixel shift, the same pixels but for the edges of text and lines (anti-aliasing).
    import numpy as np
    from matplotlib.figure import Figure

    from snrgain.outputs import drawing

    draws = []
    real_draw = Figure.draw
    monkeypatch.setattr(Figure, "draw", lambda fig, renderer: draws.append(1) or real_draw(fig, renderer))
    makers = (plots.azimuth_pattern, plots.site_plan, plots.noise_sky, plots.ranking_chart, plots.snr_over_hours)
    for make in makers:
        fig = make(results)
        own = io.BytesIO()
        del draws[:]
        drawing.save_figure(fig, own, "png", **plots.SAVE_OPTIONS)
        assert len(draws) == 1, make.__name__
        theirs = io.BytesIO()
        fig.savefig(theirs, format="png", **plots.SAVE_OPTIONS)
        a, b = _pixels(own.getvalue()), _pixels(theirs.getvalue())
        assert np.all(np.abs(np.subtract(a.shape, b.shape)) <= 8), (make.__name__, a.shape, b.shape)
        h, w = min(a.shape[0], b.shape[0]) - 8, min(a.shape[1], b.shape[1]) - 8
        diffs = [
            np.abs(a[4 + dy : 4 + dy + h, 4 + dx : 4 + dx + w] - b[4 : 4 + h, 4 : 4 + w]).max(axis=2)
            for dy in range(-4, 5)
            for dx in range(-4, 5)
        ]
        best = min(diffs, key=lambda d: d.mean())
        assert best.mean() < 5 and np.mean(best > 96) < 0.03, (make.__name__, best.mean(), np.mean(best > 96))
    # At another resolution than the figure's the one draw does not apply: savefig's own file, byte for byte.
    fig = plots.elevation_pattern(results)
    own, theirs = io.BytesIO(), io.BytesIO()
    drawing.save_figure(fig, own, "png", **{**plots.SAVE_OPTIONS, "dpi": 72})
    fig.savefig(theirs, format="png", **{**plots.SAVE_OPTIONS, "dpi": 72})
    assert own.getvalue() == theirs.getvalue()


def test_the_figures_process_started_first_draws_the_same_bytes_and_ends_with_its_block(results, monkeypatch):
    # The command starts drawing.Drawer before it evaluates; the jobs reach it pickled, its workers draw them: the
    # bytes must be those drawn one after the other here, in the jobs' order, and the process must end with the block.
    import multiprocessing
    from functools import partial

    import matplotlib as mpl

    from snrgain import processes
    from snrgain.outputs import drawing

    monkeypatch.setitem(mpl.rcParams, "svg.hashsalt", "fixed")
    jobs = [
        (partial(plots.elevation_pattern, results, target_index=0), "png", plots.SAVE_OPTIONS),
        (partial(plots.ranking_chart, results), "svg", {"bbox_inches": "tight", "metadata": {"Date": None}}),
        (partial(plots.site_plan, results), "png", plots.SAVE_OPTIONS),
    ]
    monkeypatch.setenv(processes.ENV_WORKERS, "1")
    here = drawing.draw_all(jobs)
    monkeypatch.setenv(processes.ENV_WORKERS, "2")
    if processes.workers(len(jobs)) < 2:
        pytest.skip("one core or no fork here: no figures process is started")
    counted = []
    with drawing.Drawer("png", modules=["snrgain.outputs.report"]) as drawer:
        assert len(multiprocessing.active_children()) == 1  # started before there is anything to draw
        there = drawer.draw(jobs, done=lambda: counted.append(1), cost=[1.0, 2.0, 1.5])
    assert there == here and len(counted) == len(jobs)
    assert not multiprocessing.active_children()
    # The site plan handed over before the results (Drawer.ahead: the scenario's plan alone, with its antennas'
    # looks, which are the results'): its bytes are taken for the job named, which is not drawn again (here a job
    # that would fail); one the helper could not draw is drawn with the others.
    from snrgain.outputs.siteplan import plan_of
    from snrgain.scenario import load

    plan = plan_of(load(SCENARIOS / "alder-hollow.toml"))
    assert plots.plan_looks(plan) == plots.looks_of(results)
    ahead_job = (partial(plots.scenario_plan, plan), "png", plots.SAVE_OPTIONS)
    planned = drawing.draw_all([(partial(plots.site_plan, results, plan=plan), "png", plots.SAVE_OPTIONS)])
    failing = (partial(plots.azimuth_pattern, results, target_index=99), "png", plots.SAVE_OPTIONS)
    counted = []
    with drawing.Drawer("png") as drawer:
        drawer.ahead("plan", ahead_job)
        drawer.ahead("broken", failing)
        there = drawer.draw([jobs[0], failing, jobs[2]], ahead={1: "plan", 2: "broken"}, done=lambda: counted.append(1))
    assert there == [here[0], planned[0], here[2]] and len(counted) == 3
    assert not multiprocessing.active_children()
    # A figure that fails: its error is the command's; an evaluation that fails: the process ends with the block.
    with pytest.raises(IndexError):
        with drawing.Drawer("png") as drawer:
            drawer.draw([(partial(plots.azimuth_pattern, results, target_index=99), "png", plots.SAVE_OPTIONS)])
    assert not multiprocessing.active_children()
    with pytest.raises(ValueError, match="bad scenario"):
        with drawing.Drawer("svg"):
            raise ValueError("bad scenario")
    assert not multiprocessing.active_children()


def test_figures_drawn_on_blanks_made_ahead_are_the_figures_made_then(results, monkeypatch):
    # plots.prepare_blanks makes the figures' empty axes before the results (in the figures' process, while the
    # command evaluates); a figure drawn on one must be the figure drawn on axes made when it is drawn, byte for
    # byte, and each blank is taken once (the kinds a scenario draws whatever its results: blank_kinds).
    from snrgain.outputs import drawing

    monkeypatch.setattr(plots, "_BLANKS", {})
    makers = [
        lambda: plots.azimuth_pattern(results, target_index=0),
        lambda: plots.elevation_pattern(results, target_index=0),
        lambda: plots.snr_over_hours(results),
        lambda: plots.ranking_chart(results),
    ]
    fresh = [drawing.figure_bytes(make(), "png", **plots.SAVE_OPTIONS) for make in makers]
    # blanks carry their ticks made ahead (plots.TICKS_AHEAD): the figures draw only those they have places for
    plots.prepare_blanks(plots.blank_kinds(len(results.targets), len(results.candidates)))
    made = sum(len(v) for v in plots._BLANKS.values())
    assert made == 2 * len(results.targets) + 2
    blanks = [fig for kind in plots._BLANKS.values() for fig, _ in kind]
    drawn = [make() for make in makers]
    assert all(fig in blanks for fig in drawn)  # each drawn on a blank made ahead
    assert sum(len(v) for v in plots._BLANKS.values()) == made - len(makers)
    assert [drawing.figure_bytes(fig, "png", **plots.SAVE_OPTIONS) for fig in drawn] == fresh
    # and as SVG (its ids from a fixed salt and no date, so two files compare)
    import matplotlib as mpl

    monkeypatch.setitem(mpl.rcParams, "svg.hashsalt", "fixed")
    fresh_svg = [drawing.figure_bytes(make(), "svg", bbox_inches="tight", metadata={"Date": None}) for make in makers]
    plots._BLANKS.clear()
    plots.prepare_blanks(plots.blank_kinds(len(results.targets), len(results.candidates)))
    assert [
        drawing.figure_bytes(make(), "svg", bbox_inches="tight", metadata={"Date": None}) for make in makers
    ] == fresh_svg


def test_png_written_here_reads_back_as_drawn():
    # drawing.png_bytes writes the figures' PNG files itself (rows unfiltered, one zlib stream); read back with
    # Pillow's decoder, an independent reader of the PNG standard, it must give the same pixels, dpi and text.
    import numpy as np
    from PIL import Image

    from snrgain.outputs import drawing

    rng = np.random.default_rng(7)
    for channels in (3, 4):
        pixels = rng.integers(0, 256, size=(37, 53, channels), dtype=np.uint8)
        pixels[5:20, 10:40] = 255  # a flat patch, as a figure's face
        data = drawing.png_bytes(pixels, 110, {"Software": "a note"}, 3)
        image = Image.open(io.BytesIO(data))
        image.load()
        assert image.mode == ("RGB" if channels == 3 else "RGBA")
        assert np.array_equal(np.asarray(image), pixels)
        assert image.info["Software"] == "a note"
        assert np.allclose(image.info["dpi"], 110, atol=0.01)
    with pytest.raises(ValueError, match="8-bit RGB or RGBA"):
        drawing.png_bytes(np.zeros((4, 4, 2), dtype=np.uint8), 110, {})


@pytest.mark.parametrize("widths", [[4.5, -2.0, 0.0, 7.25], [4.5, 2.0, 0.5, 7.25]])
def test_bars_drawn_as_barh_draws_them(widths):
    # plots._barh adds the ranking chart's bars with their data limits set once; the picture, the limits (bars all
    # of one sign: the axis starts at 0) and the legend's "best" place must be barh's.
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    from snrgain.outputs import drawing

    y = [0.0, 1.0, 2.0, 3.0]
    colors = ["#332288", "#DDCC77", "#44AA99", "#CC6677"]

    def chart(own: bool):
        fig = Figure(figsize=(5, 3), dpi=plots.SAVE_OPTIONS["dpi"])
        FigureCanvasAgg(fig)
        ax = fig.add_subplot()
        kw = {"height": 0.35, "lw": 0.6, "hatch": "//", "alpha": 0.85}
        if own:
            plots._barh(ax, y, widths, colors=colors, edgecolors=["black", "none", "black", "none"], **kw)
        else:
            ax.barh(y, widths, color=colors, edgecolor=["black", "none", "black", "none"], **kw)
        ax.plot([], [], color="black", label="a target")  # no data: the limits are the bars' alone
        ax.legend(loc="best")
        return fig, ax

    (f1, a1), (f2, a2) = chart(False), chart(True)
    assert a1.get_xlim() == a2.get_xlim() and a1.get_ylim() == a2.get_ylim()
    png = [drawing.figure_bytes(f, "png", **plots.SAVE_OPTIONS) for f in (f1, f2)]
    assert png[0] == png[1]


def test_the_results_sent_to_the_figures_process_draw_the_same_figures(results):
    # plots.for_drawing keeps of the results what the figures draw (the sky at the moment noise_sky shows): every
    # figure drawn from it is the figure drawn from the whole results, byte for byte, and it pickles far smaller.
    import pickle

    from snrgain.outputs import drawing

    light = plots.for_drawing(results)
    assert list(light.noise.maps) == [plots.sky_moment(results)]
    assert len(pickle.dumps(light)) < 0.5 * len(pickle.dumps(results))
    for name, fn in plots.FIGURES.items():
        if name == "plan" and not plots.has_site_plan(results):
            continue
        kw = {"target_index": len(results.targets) - 1} if name in ("azimuth", "elevation") else {}
        whole = drawing.figure_bytes(fn(results, **kw), "png", **plots.SAVE_OPTIONS)
        assert drawing.figure_bytes(fn(light, **kw), "png", **plots.SAVE_OPTIONS) == whole, name
    assert plots.for_drawing(light).noise.maps == light.noise.maps  # idempotent


def test_the_remembering_canvas_draws_what_matplotlibs_draws(results):
    # snrgain.outputs.canvas keeps each text's measure for the process (the command line's figures' processes) and
    # draws each text from one picture of it: the figures drawn so, one after the other (the second azimuth pattern
    # reading what the first found), are matplotlib's own SVG files, and PNGs of the same size (within the pixel a
    # text may move, the file cut to what is drawn) and the same ink, with the default settings and with the
    # figures' own; matplotlib's SVG writer is left as it is (the remembering one is handed to savefig by its backend
    # keyword).  A figure drawn again from the pictures kept is the figure drawn when they were made.
    from functools import partial

    import matplotlib as mpl

    from snrgain.outputs import canvas, drawing

    makers = [
        partial(plots.azimuth_pattern, results, target_index=0),
        partial(plots.ranking_chart, results),
        partial(plots.azimuth_pattern, results, target_index=0),
        partial(plots.elevation_pattern, results, target_index=0),
    ]
    from matplotlib.backends import backend_svg

    renderer_svg, canvas_svg = backend_svg.RendererSVG, backend_svg.FigureCanvasSVG
    svg = {"bbox_inches": "tight", "metadata": {"Date": None}}
    for rc in ({}, drawing.DRAWING_RC):
        with mpl.rc_context({**rc, "svg.hashsalt": "fixed"}):
            assert not canvas._REMEMBER
            plain = [_pixels(drawing.figure_bytes(make(), "png", **plots.SAVE_OPTIONS)) for make in makers]
            plain_svg = [drawing.figure_bytes(make(), "svg", **svg) for make in makers]
            was = canvas.remember_text(True)
            try:
                figs = [make() for make in makers]
                assert all(type(f.canvas) is canvas.RememberingCanvas for f in figs)
                drawn = [drawing.figure_bytes(f, "png", **plots.SAVE_OPTIONS) for f in figs]
                for ours, theirs in zip(map(_pixels, drawn), plain):
                    assert all(abs(a - b) <= 2 for a, b in zip(ours.shape, theirs.shape))
                    ink = [float((255 - p[..., :3].astype(float)).sum()) for p in (ours, theirs)]
                    assert ink[0] == pytest.approx(ink[1], rel=2e-3)
                assert drawn[2] == drawn[0]  # the second azimuth pattern: every text's picture read back
                assert canvas._MEASURED and canvas._PICTURES
                assert len(canvas._INKED) >= 20  # the figures' texts drawn from their pictures
                assert canvas.svg_backend() == canvas.SVG_BACKEND
                canvas.forget()
                assert not canvas._PICTURES
                assert [drawing.figure_bytes(make(), "svg", **svg) for make in makers] == plain_svg
                assert any(key[0] == "svg" for key in canvas._MEASURED)  # measured by the remembering SVG renderer
                assert backend_svg.RendererSVG is renderer_svg and backend_svg.FigureCanvasSVG is canvas_svg
            finally:
                canvas.remember_text(was)
        assert not canvas._MEASURED and type(makers[0]().canvas) is not canvas.RememberingCanvas
        assert canvas.svg_backend() is None


TEXTS = ["0", "-20", "\u221230", "SNR gain (dB)", "Beverage north-east (reference)", "Fa 45 dB, 10-90 %", "Wq\u00b0"]


@pytest.mark.parametrize("angle", [0.0, 90.0, 33.0])
@pytest.mark.parametrize("size", [7.0, 10.0, 14.0])
def test_a_text_drawn_from_its_picture_is_matplotlibs_text(angle, size):
    # A text of the remembering canvas is one picture of the whole text (the font's set_text, matplotlib's way up
    # to 3.10) put down at the nearest whole pixel by the renderer's draw_image, level or turned a quarter turn;
    # matplotlib 3.11 puts each glyph at its sub-pixel place.  Each text alone on a white canvas: the same measure
    # to the bit, the same ink (within 2 %, the glyphs' antialiased edges falling on other pixels), its inked box
    # within a pixel of matplotlib's on every side and the ink's centre within 1.3 pixels (the picture's corner
    # rounded to a whole pixel); turned otherwise (33 deg), matplotlib's own pixels; a picture read back draws the
    # same pixels as when it was made.
    import numpy as np
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.font_manager import FontProperties

    from snrgain.outputs import canvas

    def ink_of(canvas_type, text):
        fig = Figure(figsize=(4.0, 4.0), dpi=110)
        canvas_type(fig)
        fig.text(0.5, 0.5, text, fontsize=size, rotation=angle, ha="center", va="center")
        fig.canvas.draw()
        rgba = np.asarray(fig.canvas.buffer_rgba())
        return 255.0 - rgba[..., :3].mean(axis=2), fig.canvas.get_renderer()

    was = canvas.remember_text(True)
    try:
        for text in TEXTS:
            theirs, plain = ink_of(FigureCanvasAgg, text)
            ours, remembering = ink_of(canvas.RememberingCanvas, text)
            assert type(remembering) is canvas.RememberingRenderer
            prop = FontProperties(size=size)
            assert remembering.get_text_width_height_descent(text, prop, False) == (
                plain.get_text_width_height_descent(text, prop, False)
            )
            if angle % 90:
                assert np.array_equal(ours, theirs), text
            assert ours.sum() == pytest.approx(theirs.sum(), rel=0.02), text
            boxes = []
            for ink in (ours, theirs):
                rows, cols = np.nonzero(ink > 40)
                boxes.append(np.array([rows.min(), rows.max(), cols.min(), cols.max()]))
            assert np.all(np.abs(boxes[0] - boxes[1]) <= 1), (text, boxes)
            grid = np.indices(ours.shape)
            centres = [np.array([(g * ink).sum() / ink.sum() for g in grid]) for ink in (ours, theirs)]
            assert np.hypot(*(centres[0] - centres[1])) < 1.3, (text, centres)
            if angle % 90 == 0:  # drawn from its picture, turned as the text is
                assert any(key[0][0] == text and key[2] == round(angle / 90) % 4 for key in canvas._INKED), text
            else:
                assert not any(key[0][0] == text for key in canvas._INKED), text
            again, _ = ink_of(canvas.RememberingCanvas, text)  # from the picture kept
            assert np.array_equal(again, ours)
    finally:
        canvas.remember_text(was)


def test_a_text_its_font_cannot_draw_whole_is_matplotlibs_own():
    # A character the text's font lacks (matplotlib looks for it in its fallback fonts) and mathematics: the
    # remembering canvas leaves the text to matplotlib's draw_text, the same pixels as matplotlib's own canvas.
    import warnings

    import numpy as np
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    from snrgain.outputs import canvas

    def pixels(kind, text):
        fig = Figure(figsize=(3.0, 1.5), dpi=110)
        kind(fig)
        fig.text(0.1, 0.5, text, fontsize=11)
        fig.text(0.8, 0.1, text, fontsize=9, rotation=90)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # a glyph missing from every font: matplotlib's own warning
            fig.canvas.draw()
        return np.asarray(fig.canvas.buffer_rgba()).copy()

    was = canvas.remember_text(True)
    try:
        for text in ("Beverage \u6f22 north", "$\\alpha$ = 3 dB"):
            assert np.array_equal(pixels(canvas.RememberingCanvas, text), pixels(FigureCanvasAgg, text)), text
        assert any(value is None for value in canvas._PICTURES.values())  # the first: no picture kept
    finally:
        canvas.remember_text(was)


def test_the_remembering_renderers_lay_text_out_as_matplotlib_does():
    # snrgain.outputs.canvas measures each text once, through the font's public calls, as matplotlib's renderer
    # measures it: every text's box, one line or several, at several sizes, weights and dpi, is the box matplotlib
    # lays out with its own renderer, to the bit (the SVG files of the test above check the SVG renderer's answers).
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    from snrgain.outputs import canvas

    was = canvas.remember_text(True)
    try:
        for dpi in (72.0, 110.0):
            boxes = {}
            for kind in (FigureCanvasAgg, canvas.RememberingCanvas):
                fig = Figure(figsize=(4.0, 3.0), dpi=dpi)
                kind(fig)
                texts = [
                    fig.text(0.1, 0.1 * k, text, fontsize=size, weight=weight, linespacing=spacing)
                    for k, (text, size, weight, spacing) in enumerate(
                        [
                            ("SNR gain (dB)", 10, "normal", 1.2),
                            ("Ranking at Sorrel Bend\n(invented benchmark site)", 12, "bold", 1.2),
                            ("three\nlines\nhere", 8, "normal", 1.0),
                            ("one", 14, "normal", 1.5),
                        ]
                    )
                ]
                renderer = fig.canvas.get_renderer()
                boxes[kind] = [t.get_window_extent(renderer).bounds for t in texts]
            assert boxes[FigureCanvasAgg] == boxes[canvas.RememberingCanvas]
        assert canvas._MEASURED
        canvas.forget()
        assert not canvas._MEASURED and not canvas._PICTURES
    finally:
        canvas.remember_text(was)


def test_the_sky_weights_made_ahead_draw_the_same_sky(results, monkeypatch):
    # plots.prepare_sky makes the sky figure's interpolation weights before the results (the figures' process
    # does, while the command evaluates): the figure drawn with them is the figure drawn without, byte for byte.
    from snrgain.outputs import drawing

    monkeypatch.setattr(plots, "_SKY_WEIGHTS", {})
    without = drawing.figure_bytes(plots.noise_sky(results), "png", **plots.SAVE_OPTIONS)
    plots.prepare_sky(results.nside)
    assert list(plots._SKY_WEIGHTS) == [results.nside]
    assert drawing.figure_bytes(plots.noise_sky(results), "png", **plots.SAVE_OPTIONS) == without


def test_ticks_fixed_for_the_draw_draw_the_same_files(results, monkeypatch):
    # drawing.ticks_fixed fixes each plain axis' ticks and labels to those it shows (public locator and formatter
    # calls) for the one draw and the box measured after it: the same files as with the ticks found at every ask,
    # and every axis' locator and formatter as they were after.
    import contextlib

    import matplotlib as mpl

    from snrgain.outputs import drawing

    monkeypatch.setitem(mpl.rcParams, "svg.hashsalt", "fixed")
    svg = {"bbox_inches": "tight", "metadata": {"Date": None}}
    makers = (plots.noise_sky, plots.ranking_chart, plots.snr_over_hours, plots.elevation_pattern, plots.site_plan)
    fixed = [
        drawing.figure_bytes(make(results), fmt, **opts)
        for make in makers
        for fmt, opts in (("svg", svg), ("png", plots.SAVE_OPTIONS))
    ]
    fig = plots.snr_over_hours(results)
    before = [(a.get_major_locator(), a.get_major_formatter()) for ax in fig.axes for a in (ax.xaxis, ax.yaxis)]
    with drawing.ticks_fixed(fig):
        assert any(type(a.get_major_locator()).__name__ == "FixedLocator" for ax in fig.axes for a in (ax.xaxis,))
    assert [(a.get_major_locator(), a.get_major_formatter()) for ax in fig.axes for a in (ax.xaxis, ax.yaxis)] == before
    monkeypatch.setattr(drawing, "ticks_fixed", lambda fig: contextlib.nullcontext())
    found = [
        drawing.figure_bytes(make(results), fmt, **opts)
        for make in makers
        for fmt, opts in (("svg", svg), ("png", plots.SAVE_OPTIONS))
    ]
    assert fixed == found


def test_the_figures_process_imports_matplotlib_as_it_is():
    # drawing.warm_up (in the figures' helper, a process of its own) imports matplotlib whole, as it is (nothing
    # stood in for or left out), warning-free; its small figure is drawn only where asked (the figure drawn ahead
    # warms up).
    import sys

    code = (
        "import sys, warnings\n"
        "warnings.simplefilter('error')\n"
        "from snrgain.outputs import drawing\n"
        "drawing.warm_up('svg', ['snrgain.outputs.report'], draw=False)\n"
        "assert 'matplotlib.figure' in sys.modules and 'matplotlib.backends.backend_svg' in sys.modules\n"
        "assert all(m is not None for m in sys.modules.values())\n"
        "drawing.warm_up_figure('svg')\n"
        "from mpl_toolkits.mplot3d import Axes3D\n"
        "print('ok')\n"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert done.returncode == 0 and done.stdout.strip() == "ok", done.stderr[-2000:]


def test_a_site_plan_of_many_antennas_grows_to_hold_its_legend(tmp_path):
    # 65 antennas' legend entries once left the plot no room: matplotlib refused the layout ("bottom cannot be >=
    # top"); the legend now takes four columns and the figure grows, the plot keeping its height.
    from click.testing import CliRunner

    from snrgain.cli.main import cli
    from tests.scenario_text import scenario_text

    whips = "".join(
        f'[[candidate]]\nname = "V{k:02d}"\nfamily = "vertical"\nheight = "{4 + k % 4} m"\n'
        f"position = [{100 + 15 * (k % 10)}, {100 + 15 * (k // 10)}]\n\n"
        for k in range(64)
    )
    path = tmp_path / "many.toml"
    path.write_text(scenario_text(name="Big Meadow", candidates=whips), encoding="utf-8")
    (tmp_path / "figs").mkdir()
    res = CliRunner().invoke(cli, ["figures", str(path), "--only", "plan", "--dir", str(tmp_path / "figs")])
    assert res.exit_code == 0, res.output
    assert (tmp_path / "figs" / "plan.png").stat().st_size > 10_000
