"""Figures a builder reads together (issue 26): checked on the artists, not the pixels.

The site (tests/data/sites/sedge-bank-plan.toml, invented) has eight antennas (the reference and seven candidates
of six families, two of them verticals), three targets (one listened 22-0 UTC, across midnight), two keep-out
areas, a placed noise source, a two-element array, a combination of the reference and a whip, a wire that runs off
the lot and two wires that cross; it is written in feet.
"""

from pathlib import Path

import matplotlib.colors as mcolors
import numpy as np
import pytest
from matplotlib.collections import LineCollection, PolyCollection
from matplotlib.patches import Circle, Polygon

import snrgain
from snrgain.outputs import plots, report
from snrgain.outputs.siteplan import plan_of, plan_unit
from snrgain.outputs.style import ANTENNA_COLORS, listening_order, looks_of
from snrgain.scenario import load, read_source
from snrgain.units import FT_PER_M

SITE = Path(__file__).parent / "data" / "sites" / "sedge-bank-plan.toml"


@pytest.fixture(scope="module")
def drawn():
    data, label, base_dir = read_source(SITE)
    sc = load(data, base_dir=base_dir, label=label)
    return snrgain.evaluate(sc), plan_of(sc, data=data), sc


def _hex(c):
    return mcolors.to_hex(c).lower()


def _line_colours(ax):
    """Colour of each labelled line, by the antenna name its label starts with."""
    return {ln.get_label(): _hex(ln.get_color()) for ln in ax.get_lines() if not ln.get_label().startswith("_")}


def _by_antenna(labels_to_colour, names):
    out = {}
    for label, col in labels_to_colour.items():
        for n in sorted(names, key=len, reverse=True):  # "TX vertical + sense whip" before "TX vertical"
            if label.startswith(n):
                out.setdefault(n, set()).add(col)
                break
    return out


def test_the_site_is_the_one_the_issue_asks_for(drawn):
    r, plan, sc = drawn
    assert len(r.antennas) >= 8 and len(r.targets) >= 3
    assert len(plan["keep_out"]) >= 2 and plan["sources"]
    kinds = {p["kind"] for a in plan["antennas"] for p in a["parts"]}
    assert {"wire", "point", "elements", "unit"} <= kinds


def test_each_antenna_has_one_colour_in_every_figure(drawn):
    r, plan, _ = drawn
    names = [a.name for a in r.antennas]
    expected = {n: _hex(lk.color) for n, lk in looks_of(r).items()}
    assert len(set(expected.values())) == len(names)  # eight antennas, eight colours
    assert expected[r.reference.name] == "#000000"
    seen = {}
    figs = {
        "azimuth": plots.azimuth_pattern(r, target_index=1),
        "elevation": plots.elevation_pattern(r, target_index=2),
        "plan": plots.site_plan(r, plan=plan),
        "layout": plots.layout_plan(plan),
    }
    for what, fig in figs.items():
        seen[what] = _by_antenna(_line_colours(fig.axes[0]), names)
    hours = plots.snr_over_hours(r)
    for i, ax in enumerate(hours.axes):
        seen[f"hours {i}"] = _by_antenna(_line_colours(ax), names)
    for what, by in seen.items():
        assert set(by) == set(names), (what, set(names) - set(by))
        for n, cols in by.items():
            assert cols == {expected[n]}, (what, n, cols)
    # the ranking chart: every bar of a candidate (per target, SNR gain and RDF) in the candidate's colour
    fig = plots.ranking_chart(r)
    ticks = [t.get_text() for t in fig.axes[0].get_yticklabels()]
    for ax in fig.axes[:3]:
        bars = [b for b in ax.patches if b.get_height() > 0 and b.get_width() != 0]
        assert bars
        for b in bars:
            y = b.get_y() + b.get_height() / 2
            name = ticks[int(round(y))]
            assert _hex(b.get_facecolor()) == expected[name], (name, ax.get_title())


def test_families_share_a_line_style_and_targets_never_take_an_antenna_colour(drawn):
    r, _, _ = drawn
    looks = looks_of(r)
    fam = {a.name: a.family for a in r.antennas}
    for a in r.antennas:
        for b in r.antennas:
            same = (looks[a.name].linestyle, looks[a.name].marker) == (looks[b.name].linestyle, looks[b.name].marker)
            assert same == (fam[a.name] == fam[b.name]), (a.name, b.name)
    antenna_colours = {_hex(c) for c in ANTENNA_COLORS} | {"#000000"}
    fig = plots.ranking_chart(r)
    handles, labels = fig.axes[0].get_legend_handles_labels()
    swatches = [h.patches[0] for h, lab in zip(handles, labels) if lab in {t["name"] for t in r.targets}]
    hatches = {p.get_hatch() for p in swatches}
    assert len(hatches) == len(r.targets) and all(hatches)  # one hatch per target
    assert all(_hex(p.get_facecolor()) not in antenna_colours - {"#000000"} for p in swatches)
    az = plots.azimuth_pattern(r)
    marks = [ln for ln in az.axes[0].get_lines() if ln.get_label().startswith("target: ")]
    assert len(marks) == len(r.targets)
    assert all(_hex(ln.get_markerfacecolor()) == "#ffffff" for ln in marks)


def test_a_window_across_midnight_is_one_line_in_its_order(drawn):
    r, _, _ = drawn
    fig = plots.snr_over_hours(r)
    want = {t["name"]: [float(h) for h in listening_order(t["utc_hours"], 24)] for t in r.targets}
    assert want["Japan"] == [22.0, 23.0, 0.0]
    n_cand = len(r.candidates)
    for ax, t in zip(fig.axes, r.targets):
        hours = want[t["name"]]
        assert [tl.get_text() for tl in ax.get_xticklabels()] == [f"{h:g}" for h in hours]
        lines = [ln for ln in ax.get_lines() if ln.get_label() in {c.name for c in r.candidates}]
        assert len(lines) == n_cand  # one line per candidate: the night is not split
        for ln in lines:
            x = np.asarray(ln.get_xdata(), dtype=float)
            assert np.all(np.diff(x) > 0) and not np.any(np.isnan(np.asarray(ln.get_ydata(), dtype=float)))
            assert np.allclose(np.mod(x, 24), hours)
        bars = [c for c in ax.collections if isinstance(c, LineCollection)]
        bands = [c for c in ax.collections if isinstance(c, PolyCollection)]
        assert len(bars) == len(bands) == 1  # one collection of each a panel
        assert len(bars[0].get_segments()) == n_cand * len(hours)  # the decile bar on every point
        assert len({tuple(c) for c in bars[0].get_colors()}) == n_cand  # in each candidate's colour


def test_the_plan_holds_the_whole_site(drawn):
    r, plan, sc = drawn
    assert plan["unit"] == "ft"
    fig = plots.site_plan(r, plan=plan)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "east (ft)" and ax.get_ylabel() == "north (ft)"
    polys = [p for p in ax.patches if isinstance(p, Polygon)]
    texts = {t.get_text() for t in ax.texts}
    for name, pts in sc.site.keep_out:
        assert name in texts
        corners = np.asarray(pts) * FT_PER_M
        assert any(all(np.min(np.hypot(*(p.get_xy() - c).T)) < 1e-6 for c in corners) for p in polys), (
            f"keep-out {name} not drawn"
        )
    circles = [p for p in ax.patches if isinstance(p, Circle)]
    assert len(circles) == 1 and circles[0].get_radius() == pytest.approx(100.0)
    assert circles[0].center == pytest.approx((0.0, 0.0))

    def drawn_at(e_ft, n_ft):
        return any(
            np.any(np.hypot(np.asarray(ln.get_xdata(), float) - e_ft, np.asarray(ln.get_ydata(), float) - n_ft) < 0.01)
            for ln in ax.get_lines()
        )

    for s in sc.noise.local:
        assert drawn_at(*(np.asarray(s.position_m) * FT_PER_M)), s.name
    pair = next(a for a in sc.antennas if a.name == "pair north-west")
    for e, n in pair.positions:
        assert drawn_at(e * FT_PER_M, n * FT_PER_M)  # every element of the array
    combo = next(a for a in sc.antennas if a.composite)
    for part in combo.elements:  # the combination joined to each member's place
        assert drawn_at(*(np.asarray(part.params.position) * FT_PER_M))
    labels = {ln.get_label() for ln in ax.get_lines()}
    assert "off the lot" in labels and "wires cross" in labels
    assert any(lab.startswith("Beverage west: 500 ft toward 285 deg") for lab in labels)
    assert {c["antennas"][0] for c in plan["crossings"]} | {c["antennas"][1] for c in plan["crossings"]} == {
        "Beverage west",
        "BOG south-west",
    }
    assert {o["antenna"] for o in plan["off_lot"]} == {"wire north"}


def test_the_clearance_circle_is_drawn_only_where_the_rule_applies():
    # Without a given clearance, half a wavelength is a rule only for an antenna whose coupling to the TX vertical
    # is not computed (snrgain.decide.lot): on this site every placed antenna's is, so no circle; a two-wire line's
    # reversed port is not computed, so placing one brings the circle back (164 m at 1.83 MHz, 537 ft).
    import tomllib

    text = SITE.read_text().replace('tx_clearance = "100 ft"\n', "")
    data = tomllib.loads(text)
    plan = plan_of(load(data), data=data)
    assert plan["clearance_m"] is None
    assert not [p for p in plots.layout_plan(plan).axes[0].patches if isinstance(p, Circle)]
    # a TX vertical with no position of its own stands at the plan's origin, and is marked there
    unplaced = {**data, "reference": {k: v for k, v in data["reference"].items() if k != "position"}}
    plan = plan_of(load(unplaced), data=unplaced)
    (mark,) = [ln for ln in plots.layout_plan(plan).axes[0].lines if "at the plan's origin" in ln.get_label()]
    assert mark.get_label().startswith(plan["tx_name"]) and list(mark.get_xydata()[0]) == [0.0, 0.0]
    reversed_port = {
        "name": "two-wire south-east port",
        "family": "two-wire",
        "length": "250 m",
        "height": "2.5 m",
        "spacing": "30 cm",
        "bearing": 320,
        "port": "reverse",
        "position": ["-100 ft", "-300 ft"],
    }
    data["candidate"].append(reversed_port)
    sc = load(data)
    plan = plan_of(sc, data=data)
    assert plan["clearance_m"] == pytest.approx(0.5 * 299_792_458.0 / sc.freq_hz)
    circles = [p for p in plots.layout_plan(plan).axes[0].patches if isinstance(p, Circle)]
    assert len(circles) == 1 and circles[0].get_radius() == pytest.approx(plan["clearance_m"] * FT_PER_M)


def test_the_plan_unit_is_the_scenarios():
    assert plan_unit({"site": {"lot": [["0 ft", "0 ft"]]}, "candidate": [{"length": "300 ft"}]}) == "ft"
    assert plan_unit({"site": {"lot": [[0, 0]]}, "candidate": [{"length": "300 ft", "position": ["3 m", "0 m"]}]}) == (
        "m"
    )
    assert plan_unit({"site": {"lot": [[0, 0]]}}) == "m"
    assert plan_unit(None) == "m"


def test_the_sky_is_interpolated_and_the_report_names_its_hour(drawn):
    r, plan, _ = drawn
    mi, hi = plots.sky_moment(r)
    assert r.months[mi] == 12 and r.utc_hours[hi] == 2.0  # the middle of 11, 12, 1 and of 22, 23, 0, 2, 4, 6
    fig = plots.noise_sky(r)
    assert "month 12, 2 UTC" in fig.texts[0].get_text()
    panels = {ax.get_title(loc="left"): ax for ax in fig.axes[:-1]}
    maps = {c.name: c for c in r.noise.maps[(mi, hi)] if c.directions.nside is not None}
    for name, comp in maps.items():
        # each component's grid drawn as an image of its cells (or, before, a mesh)
        shown = [*panels[name].images, *panels[name].collections]
        meshes = [m for m in shown if m.get_array() is not None and np.ma.asarray(m.get_array()).size]
        if not np.any(comp.weight_k_sr > 0):
            assert not meshes  # screened: said in words, no colour
            continue
        grid = np.ma.asarray(meshes[0].get_array()).reshape(-1, 360)
        assert not np.ma.getmaskarray(grid).any()  # noise reaches every cell here: no blank rows
        px = 10 * np.log10(comp.weight_k_sr / comp.directions.solid_angle_sr)
        # interpolated, so inside the pixels' range, and smooth: a nearest-pixel lookup steps by a whole ring's
        # change (rings 1.2 deg apart) between two rows; interpolated rows 0.5 deg apart step by about 0.42 of it
        assert grid.min() >= px.min() - 1e-6 and grid.max() <= px.max() + 1e-6
        el = np.degrees(comp.directions.elevation_rad)
        rings = np.unique(np.round(el[el < 12], 6))
        ring_db = np.array([px[np.isclose(el, e, atol=1e-6)].mean() for e in rings])
        row_step = np.max(np.abs(np.diff(np.asarray(grid)[:20], axis=0)))
        assert row_step < 0.6 * np.max(np.abs(np.diff(ring_db))), name
    figs = report.figure_list(r, plan=plan)
    caption = next(c for t, _, c in figs if t == "Noise sky")
    assert "2 UTC in month 12" in caption
    text = report.render(r, plan=plan)
    assert "<td class='name'>11, 12, 1</td>" in text and "<td class='name'>22, 23, 0, 2, 4, 6</td>" in text
    assert "months 11, 12, 1;" in text


def test_the_report_marks_each_antenna_with_its_figure_colour(drawn):
    r, plan, _ = drawn
    text = report.render(r, plan=plan)
    ranked = text[text.index("id='ranked'") : text.index("id='plan'")]
    for name, lk in looks_of(r).items():
        # the ranking tables: each antenna's row starts with its colour, once per target
        row = f"<span class='swatch' style='background:{lk.color}'></span>{name}</td>"
        assert ranked.count(row) == len(r.targets), name
    served = text[text.index("id='plan'") : text.index("id='build'")]
    for name in r.plan.antennas:
        assert f"<span class='swatch' style='background:{looks_of(r)[name].color}'></span>{name}" in served


def test_the_build_line_gives_a_loop_in_both_units_rounded(drawn):
    # 26 x 13 ft as written: 7.9248 x 3.9624 m, which the build line printed to every digit; a file in feet gets
    # feet first (its unit), metres in brackets
    from snrgain.outputs.output import build_lines

    r, _, _ = drawn
    line = dict(build_lines(r))["flag north-west"]
    assert "rectangle 26.0 x 13.0 ft (7.92 x 3.96 m)" in line


def test_the_layout_plot_is_the_site_plan_with_the_placed_antenna(tmp_path):
    import re
    import tomllib

    from click.testing import CliRunner

    from snrgain.cli.main import cli
    from snrgain.tools.layout import Problem, plan_data

    text = SITE.read_text().replace(
        'position = ["525 ft", "200 ft"]',
        'position = ["525 ft", "200 ft"]\nplace = { bearing = ["270 deg", "300 deg"], length = ["400 ft", "600 ft"] }',
    )
    data = tomllib.loads(text)
    sc = load(data)
    problem = Problem(sc, data)
    best = problem.search(keep=1)[0]
    plan = plan_data(problem, best)
    site = plan_of(sc, data=data)
    # everything the site plan holds, and the placed Beverage where the layout puts it
    assert plan["keep_out"] == site["keep_out"] and plan["sources"] == site["sources"]
    assert plan["tx"] == site["tx"] and plan["clearance_m"] == site["clearance_m"] and plan["unit"] == "ft"
    drawn = {a["name"]: a for a in plan["antennas"]}
    assert set(drawn) == {a["name"] for a in site["antennas"]}
    (d,) = best.designs
    assert drawn[d.name]["placed"] and drawn[d.name]["parts"][0]["coords"][0] == pytest.approx((d.east_m, d.north_m))
    fig = plots.layout_plan(plan)
    assert any(ln.get_label().startswith(f"{d.name}: ") and "ft toward" in ln.get_label() for ln in fig.axes[0].lines)
    path = tmp_path / "site.toml"
    path.write_text(text, encoding="utf-8")
    args = ["layout", str(path), "--keep", "1", "--plot", str(tmp_path / "layout.png")]
    res = CliRunner().invoke(cli, args, env={"COLUMNS": "200"})  # wide enough that rich does not wrap a cell
    assert res.exit_code == 0, res.output
    assert re.search(r"-?\d+ ft, -?\d+ ft", res.output)  # the feed point in the scenario's unit
    assert (tmp_path / "layout.png").stat().st_size > 20_000


def test_results_carry_the_whole_site_plan_for_python_use():
    # The pipeline keeps the site plan on the results (coordinates in metres, shown in the scenario's unit: this
    # file is written in feet), so a report or plan drawn from Python without the scenario shows keep-outs, sources
    # and elements too, not only the positioned antennas.
    r = snrgain.evaluate(SITE)
    plan = r.site_plan
    assert plan["unit"] == "ft" and plan["keep_out"] and plan["sources"]
    html = report.render(r)
    assert "placed noise sources and every antenna as built, to scale in feet" in html


def test_two_antennas_never_look_alike_below_32():
    """Two switched four-squares (eight states of one family) and more: every antenna's look (colour, line style,
    marker, width) is its own; with nine colours the tenth antenna of a family took the first's look, and a state at
    +6.0 dB could not be told from one at -21.7 dB on the hours figure."""
    from snrgain.outputs.style import antenna_looks

    for n in (10, 17, 31):
        names = [f"a{i}" for i in range(n)]
        families = ["vertical"] + ["phased-verticals"] * (n - 1)
        looks = antenna_looks(names, families)
        seen = {(lk.color, str(lk.linestyle), lk.marker, lk.linewidth) for lk in looks.values()}
        assert len(seen) == n


def _sedge(**edits):
    """The site's tables, edited (a TOML fragment's tables merged in), loaded: (data, scenario, plan)."""
    import tomllib

    data = tomllib.loads(SITE.read_text())
    for section, value in edits.items():
        if section == "candidate":
            data["candidate"] = value(data["candidate"])
        else:
            data[section] = {**data[section], **value}
    sc = load(data)
    return data, sc, plan_of(sc, data=data)


def test_the_plan_draws_each_structure_at_its_place_with_its_name():
    # [site] structures (a tower with a beam that costs an antenna RDF) were left off the plan: each is drawn at its
    # foot with its name, in a mark of its own (no antenna's family marker, not a source's cross), on the site plan
    # and on the layout plot
    from matplotlib.path import Path as MplPath

    from snrgain.outputs.style import FAMILY_MARKERS, STRUCTURE_COLOR
    from snrgain.tools.layout import Problem, plan_data

    mast = {"name": "mast", "position": ["450 ft", "300 ft"], "height": "60 ft", "top_loading": "10 ft"}

    def placed(cands):  # the Beverage given a place table, for the layout plot
        return [
            {**c, "place": {"bearing": ["270 deg", "300 deg"]}} if c["name"] == "Beverage west" else c for c in cands
        ]

    data, sc, plan = _sedge(site={"structures": [mast]}, candidate=placed)
    assert plan["structures"] == [
        ("mast", pytest.approx((450.0 / FT_PER_M, 300.0 / FT_PER_M)), pytest.approx(60.0 / FT_PER_M))
    ]
    layout = Problem(sc, data)
    for fig in (plots.scenario_plan(plan), plots.layout_plan(plan_data(layout, layout.search(keep=1)[0]))):
        ax = fig.axes[0]
        (line,) = [ln for ln in ax.get_lines() if ln.get_label().startswith("structure: mast")]
        assert line.get_label() == "structure: mast, 60 ft tall"
        assert list(line.get_xydata()[0]) == pytest.approx([450.0, 300.0])
        assert isinstance(line.get_marker(), MplPath) and line.get_marker() not in FAMILY_MARKERS + ("X",)
        assert _hex(line.get_markeredgecolor()) == _hex(STRUCTURE_COLOR) and line.get_markerfacecolor() == "none"
        (name,) = [t for t in ax.texts if t.get_text() == "mast"]
        assert name.xy == pytest.approx((450.0, 300.0))
    # the results carry them too (a plan drawn from Python without the scenario)
    assert snrgain.evaluate(sc).site_plan["structures"] == plan["structures"]


def _arrows(ax):
    """(start [plan unit], bearing [deg], colour) of each arrow drawn from a place toward a bearing (an annotation
    without text whose arrow runs to an offset in points)."""
    out = []
    for t in ax.texts:
        if getattr(t, "arrow_patch", None) is None or t.get_text() or t.anncoords != "offset points":
            continue
        dx, dy = t.xyann
        out.append(
            (
                np.asarray(t.xy, dtype=float),
                float(np.degrees(np.arctan2(dx, dy)) % 360.0),
                _hex(t.arrow_patch.get_edgecolor()),
            )
        )
    return out


def _bearing_gap(a, b):
    return abs((a - b + 180.0) % 360.0 - 180.0)


def test_every_antenna_with_a_bearing_carries_its_arrowhead(drawn):
    # the plan's caption says "arrowhead: the favoured direction", but only wires carried one: the loop, the array
    # and the combination (each with a bearing) now carry theirs, in their colour, from where they stand; the
    # reference and the whip (verticals, no bearing) none
    r, plan, sc = drawn
    looks = looks_of(r)
    ax = plots.site_plan(r, plan=plan).axes[0]
    arrows = _arrows(ax)
    entries = {a["name"]: a for a in plan["antennas"]}
    assert entries["flag north-west"]["bearings"] == [320.0] and entries["sense whip"]["bearings"] == []
    for name, b in (("flag north-west", 320.0), ("pair north-west", 290.0), ("TX vertical + sense whip", 220.0)):
        ent = entries[name]
        pts = np.asarray(ent["parts"][0]["coords"], dtype=float) * FT_PER_M
        reach = np.max(np.hypot(*(pts - pts.mean(axis=0)).T)) + 1e-6
        mine = [
            (xy, d)
            for xy, d, c in arrows
            if c == _hex(looks[name].color) and np.hypot(*(xy - pts.mean(axis=0))) <= reach
        ]
        assert [d for _, d in mine] == [pytest.approx(b)], name
    for name in ("TX vertical", "sense whip"):
        assert not [c for _, _, c in arrows if c == _hex(looks[name].color)], name
    assert "arrowheads: the bearing each antenna favours" in ax.get_title()


def test_a_switched_antenna_carries_each_states_arrow_and_a_figure_eight_both_ways():
    def edit(cands):
        pair = next(c for c in cands if c["name"] == "pair north-west")
        del pair["bearing"]
        pair["directions"] = ["290 deg", "110 deg"]
        pair["auto_for"] = "rdf"
        loop = {"name": "loop", "family": "small-loop", "width": "3 ft", "loop_height": "3 ft", "height": "10 ft",
                "bearing": 45, "position": ["150 ft", "300 ft"]}  # fmt: skip
        return [*cands, loop]

    _, sc, plan = _sedge(candidate=edit)
    entries = {a.get("shown_as", a["name"]): a for a in plan["antennas"] if a["parts"]}
    pair = next(a for n, a in entries.items() if n.startswith("pair north-west (switched"))
    assert sorted(pair["bearings"]) == [110.0, 290.0] and entries["loop"]["both_ways"]
    from snrgain.outputs.plots import plan_looks

    looks = plan_looks(plan)
    arrows = _arrows(plots.scenario_plan(plan).axes[0])
    of = {n: sorted(d for _, d, c in arrows if c == _hex(looks[a["name"]].color)) for n, a in entries.items()}
    assert of[next(n for n in of if n.startswith("pair"))] == [pytest.approx(110.0), pytest.approx(290.0)]
    assert of["loop"] == [pytest.approx(45.0), pytest.approx(225.0)]  # heard both ways: both arrowheads


def test_a_source_far_off_the_lot_is_drawn_at_the_plans_edge_with_its_bearing_and_distance():
    # a power line 600 m off shrank the lot into a corner of the plan: the plan keeps the site's extent and marks
    # the source at its edge, on the line from the site's middle toward it, saying how far and which way
    from snrgain.outputs.siteplan import beyond_plan, site_box

    data, sc, plan = _sedge()
    assert beyond_plan(plan) == []  # the barn light, 100 ft off a 660 ft lot, is drawn where it stands
    far_at = (3000.0 / FT_PER_M, -1500.0 / FT_PER_M)
    plan = {**plan, "sources": [("power line", far_at)]}
    (far,) = beyond_plan(plan)
    e0, n0, e1, n1 = site_box(plan)
    mid = (0.5 * (e0 + e1), 0.5 * (n0 + n1))
    assert far["from"] == pytest.approx(mid)
    assert far["bearing_deg"] == pytest.approx(np.degrees(np.arctan2(far_at[0] - mid[0], far_at[1] - mid[1])) % 360)
    assert far["distance_m"] == pytest.approx(np.hypot(far_at[0] - mid[0], far_at[1] - mid[1]))
    ax = plots.scenario_plan(plan).axes[0]
    (x_lo, x_hi), (y_lo, y_hi) = ax.get_xlim(), ax.get_ylim()
    assert x_hi < 800.0 and y_lo > -300.0  # the lot's extent (to 560 ft east, -100 ft north) and a band, not 3000 ft
    said = f"power line, {far['distance_m'] * FT_PER_M:.0f} ft at {far['bearing_deg']:.0f} deg"
    (mark,) = [ln for ln in ax.get_lines() if ln.get_label().startswith("noise source beyond the plan: " + said)]
    mx, my = mark.get_xydata()[0]
    assert x_lo < mx < x_hi and y_lo < my < y_hi and mx > e1 * FT_PER_M  # inside the frame, beyond the site
    along = np.degrees(np.arctan2(mx - mid[0] * FT_PER_M, my - mid[1] * FT_PER_M)) % 360.0
    assert _bearing_gap(along, far["bearing_deg"]) < 0.01  # on the line toward it
    assert [t for t in ax.texts if t.get_text() == said]
    outward = [
        t for t in ax.texts if t.arrow_patch is not None and not t.get_text() and t.xyann == pytest.approx((mx, my))
    ]
    assert len(outward) == 1  # an arrow from the mark out to the frame
    tip = np.asarray(outward[0].xy)
    assert np.hypot(*(tip - (mx, my))) > 0 and _bearing_gap(np.degrees(np.arctan2(*(tip - (mx, my)))), along) < 0.01


def test_the_azimuth_pattern_draws_each_antenna_relative_to_its_own_peak(drawn):
    # in absolute dBi a four-square of short verticals 30 dB under the TX vertical collapsed into the centre: each
    # antenna is now drawn in dB under its own peak on the cut (0 dB at the rim), its peak gain in dBi in the legend,
    # the floor far enough down that a 20-30 dB front-to-back shows
    r, _, _ = drawn
    i = 0
    ax = plots.azimuth_pattern(r, target_index=i).axes[0]
    span = plots.AZIMUTH_SPAN_DB
    assert span >= 35.0
    lines = {ln.get_label(): ln for ln in ax.get_lines()}
    for a in r.antennas:
        cut = np.asarray(r.cuts.azimuth[a.name][i], dtype=float)
        peak = float(np.nanmax(cut))
        label = f"{a.name}{' (reference)' if a is r.reference else ''}: peak {peak:.1f} dBi"
        drawn_r = np.asarray(lines[label].get_ydata(), dtype=float)
        assert drawn_r.max() == pytest.approx(span)  # its own peak at the rim
        assert drawn_r == pytest.approx(np.clip(np.where(np.isfinite(cut), cut - peak, -span), -span, 0.0) + span)
    # the radial labels say dB relative to the peak: 0 at the rim
    ticks = dict(zip(ax.get_yticks(), [t.get_text() for t in ax.get_yticklabels()]))
    assert ticks[span] == "0" and ticks[span - 20] == "-20"
    assert "relative to each antenna's own peak" in ax.get_title()
    caption = next(c for t, _, c in report.figure_makers(r) if t.startswith("Azimuth pattern"))
    assert "relative to its own peak" in caption
