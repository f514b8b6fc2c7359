"""Names and legends on the figures stay clear of each other: measured as drawn (the renderer's window extents)."""

import dataclasses
import itertools

import numpy as np
import pytest

import snrgain
from snrgain.outputs import plots
from tests.conftest import SCENARIOS


@pytest.fixture(scope="module")
def results():
    return snrgain.evaluate(SCENARIOS / "alder-hollow.toml")


def _crowded(results):
    """The results with every target moved next to the placed source, at its elevation: names that would overlap
    where each were written at its usual place."""
    comp = next(c for c in results.noise.maps[plots.sky_moment(results)] if c.directions.nside is None)
    az = float(np.degrees(np.average(comp.directions.azimuth_rad, weights=comp.weight_k_sr)))
    el = float(np.degrees(np.average(comp.directions.elevation_rad, weights=comp.weight_k_sr)))
    targets = [
        {**t, "bearing_deg": az - 12.0 + 9.0 * k, "elevation_min_deg": max(el - 4.0, 0.5), "elevation_max_deg": el + 2}
        for k, t in enumerate(results.targets)
    ]
    crowded = dataclasses.replace(results, targets=targets)
    return crowded


def _boxes(fig, texts):
    renderer = fig.canvas.get_renderer()
    return [t.get_window_extent(renderer) for t in texts]


def _overlap(a, b) -> float:
    w = min(a.x1, b.x1) - max(a.x0, b.x0)
    h = min(a.y1, b.y1) - max(a.y0, b.y0)
    return w * h if w > 0 and h > 0 else 0.0


@pytest.mark.parametrize("crowd", [False, True])
def test_sky_names_do_not_overlap_each_other_or_the_marks(results, crowd):
    r = _crowded(results) if crowd else results
    names = {t["name"] for t in r.targets} | {"neighbour's power supply"}
    fig = plots.noise_sky(r)
    renderer = fig.canvas.get_renderer()
    for ax in fig.axes[:-1]:  # the panels; the last axes is the colour bar
        texts = [t for t in ax.texts if t.get_text() in names]
        assert {t.get_text() for t in texts} == names
        boxes = _boxes(fig, texts)
        for a, b in itertools.combinations(boxes, 2):
            assert _overlap(a, b) == 0.0
        marks = [ln for ln in ax.get_lines() if ln.get_marker() not in (None, "None", "")]
        frame = ax.get_window_extent(renderer)
        for text, box in zip(texts, boxes):
            for mark in marks:
                assert _overlap(box, mark.get_window_extent(renderer)) == 0.0, text.get_text()
            assert frame.x0 <= box.x0 and box.x1 <= frame.x1 and frame.y0 <= box.y0 and box.y1 <= frame.y1
            # next to its own mark: within two of its lines
            mx, my = ax.transData.transform(text.xy)
            dx = max(box.x0 - mx, mx - box.x1, 0.0)
            dy = max(box.y0 - my, my - box.y1, 0.0)
            assert np.hypot(dx, dy) <= 2 * box.height + 10 * fig.dpi / 72


def test_crowded_names_would_overlap_at_their_usual_places(results):
    # the crafted case is one that needs the spreading: the names written at their first places overlap
    r = _crowded(results)
    fig = plots.noise_sky(r, total_only=True)
    ax = fig.axes[0]
    texts = [t for t in ax.texts if t.get_text() in {x["name"] for x in r.targets} | {"neighbour's power supply"}]
    renderer = fig.canvas.get_renderer()
    firsts = []
    for t in texts:
        t.set_position((6.0, 0.0))  # right of the mark, level: where each would go alone
        firsts.append(t.get_window_extent(renderer))
    assert any(_overlap(a, b) > 0 for a, b in itertools.combinations(firsts, 2))


def test_spread_labels_keeps_boxes_apart_and_in_the_frame():
    rng = np.random.default_rng(3)
    points = [(float(x), float(y)) for x, y in rng.uniform([20, 10], [120, 40], size=(6, 2))]
    sizes = [(float(w), 9.0) for w in rng.uniform(20, 70, size=6)]
    obstacles = [(x - 6, y - 6, x + 6, y + 6) for x, y in points]
    frame = (0.0, 0.0, 400.0, 200.0)
    offsets = plots.spread_labels(points, sizes, [k % 2 == 0 for k in range(6)], obstacles, frame)
    boxes = [(x + dx, y + dy, x + dx + w, y + dy + h) for (x, y), (dx, dy), (w, h) in zip(points, offsets, sizes)]
    for a, b in itertools.combinations(boxes, 2):
        assert min(a[2], b[2]) <= max(a[0], b[0]) or min(a[3], b[3]) <= max(a[1], b[1])
    for box in boxes:
        assert frame[0] <= box[0] and box[2] <= frame[2] and frame[1] <= box[1] and box[3] <= frame[3]
        for ob in obstacles:
            assert min(box[2], ob[2]) <= max(box[0], ob[0]) or min(box[3], ob[3]) <= max(box[1], ob[1])


def test_a_lone_label_takes_its_first_place():
    # nothing in the way: a source's name to the left of its cross, level; a target's to the right, raised
    ob = [(94.0, 44.0, 106.0, 56.0)]
    ((dx, dy),) = plots.spread_labels([(100.0, 50.0)], [(30.0, 8.0)], [True], ob, (0, 0, 300, 300))
    assert dx + 30.0 < -6.0 and dy == -4.0
    ((dx, dy),) = plots.spread_labels([(100.0, 50.0)], [(30.0, 8.0)], [False], ob, (0, 0, 300, 300))
    assert dx > 6.0 and dy == 0.0


def test_ranking_legends_stand_clear_of_the_bars_and_their_values(results):
    fig = plots.ranking_chart(results)
    renderer = fig.canvas.get_renderer()
    for ax in (fig.axes[0], fig.axes[2]):
        legend = ax.get_legend()
        box = legend.get_window_extent(renderer)
        frame = ax.get_window_extent(renderer)
        assert frame.x0 <= box.x0 and box.x1 <= frame.x1 and frame.y0 <= box.y0 and box.y1 <= frame.y1
        for t in ax.texts:
            value = t.get_window_extent(renderer)
            assert _overlap(box, value) == 0.0, t.get_text()
            assert frame.x0 <= value.x0 and value.x1 <= frame.x1, t.get_text()  # the values stay in their panel
        for p in ax.patches:
            if p.get_width() and p.get_height():
                assert _overlap(box, p.get_window_extent(renderer)) == 0.0


def test_a_keep_outs_name_moves_below_it_when_a_placed_source_sits_inside(results):
    # a source inside a keep-out (a roof inverter in the house) had its cross drawn on the keep-out's name at the
    # centre; the name then stands under the outline, and stays at the centre otherwise
    from matplotlib.text import Annotation

    from snrgain.outputs.siteplan import plan_from_results

    plan = plan_from_results(results)
    house = [(0.0, 0.0), (20.0, 0.0), (20.0, 15.0), (0.0, 15.0)]

    def name_of(sources):
        fig = plots.site_plan(results, plan={**plan, "keep_out": [("house", house)], "sources": sources})
        (note,) = [t for t in fig.axes[0].texts if isinstance(t, Annotation) and t.get_text() == "house"]
        return note

    clear = name_of([("inverter", (100.0, 100.0))])
    assert clear.xy == pytest.approx((10.0 * plan["per_m"], 7.5 * plan["per_m"])) and clear.get_va() == "center"
    inside = name_of([("inverter", (8.0, 7.0))])
    assert inside.xy == pytest.approx((10.0 * plan["per_m"], 0.0)) and inside.get_va() == "top"


def test_the_north_arrow_takes_a_free_corner():
    # the site plan's north arrow stands top right unless something is drawn there (a flag placed in that corner
    # of the lot sat under it), then in the next free corner
    from snrgain.outputs.plots import _north_corner

    xlim, ylim = (-170.0, 270.0), (-135.0, 195.0)  # the lot (-150..250 by -120..180) and its margins
    empty = np.zeros((0, 2))
    x, y = _north_corner(empty, xlim, ylim)
    assert x > 200 and y > 100  # top right
    x, y = _north_corner(np.array([[248.0, 176.0], [0.0, 0.0]]), xlim, ylim)
    assert x < -100 and y > 100  # top left
    crowded = np.array([[248.0, 176.0], [-140.0, 170.0], [-140.0, 150.0], [0.0, 0.0]])
    x, y = _north_corner(crowded, xlim, ylim)
    assert x > 200 and y < 0  # bottom right


def test_a_margin_value_below_the_target_stands_clear_of_the_target_line():
    # The margin panel writes each value at its bar's end; a value just below the target (8.2 against 10 dB, seen on
    # scenarios/marrow-fen.toml) ran over the target's dotted line: it now starts beyond the line, clear of it, while
    # a value well below it stays at its bar.
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(3.0, 2.0), dpi=110)
    FigureCanvasAgg(fig)
    ax = fig.add_subplot()
    ax.barh([0, 1], [8.2, 2.0])
    ax.set_xlim(0, 40)
    line = ax.axvline(10.0, ls=":")
    near, far = (ax.text(v, y, f" {v:.1f} !", va="center", fontsize=8) for y, v in ((0, 8.2), (1, 2.0)))
    fig.canvas.draw()
    line_x = ax.transData.transform((10.0, 0.0))[0]
    assert _boxes(fig, [near])[0].x1 > line_x  # as written, the label crosses the line
    plots._clear_of_line(fig, ax, [near, far], 10.0)
    fig.canvas.draw()
    boxes = _boxes(fig, [near, far])
    assert near.get_position()[0] == 10.0 and boxes[0].x0 >= line_x  # beyond the line
    assert far.get_position()[0] == 2.0 and boxes[1].x1 < line_x  # it fitted: left where it was
    assert line.get_xdata()[0] == 10.0
