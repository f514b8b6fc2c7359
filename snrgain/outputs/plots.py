"""Figures from a Results object (matplotlib; no computation of physics here).

Every function takes ``Results`` (from :func:`snrgain.evaluate`) and an
optional ``ax`` to draw into (a notebook's axes; figures with several panels
take a sequence of axes), and returns the matplotlib Figure.  Without ``ax``
it makes a new :class:`matplotlib.figure.Figure`, not attached to pyplot, so
nothing changes the user's backend or pyplot's list of open figures.
:func:`save` writes a figure whole or not at all as PNG or SVG.  The same
functions serve the command line and the report.

- :func:`azimuth_pattern`: polar gain at the target's elevation, targets and local sources marked;
- :func:`elevation_pattern`: gain against elevation toward the target's bearing;
- :func:`noise_sky`: brightness over azimuth and elevation, per component and total, interpolated on the sphere, at
  the middle of the listening months and hours (:func:`sky_moment`) unless told;
- :func:`snr_over_hours`: SNR gain over each target's listening window in order (a night across midnight one span),
  with the band of P.372 deciles on every point (from the labelled results);
- :func:`ranking_chart`: SNR gain bars with RDF and external-noise margin beside them;
- :func:`site_plan`: the site to scale (:mod:`snrgain.outputs.siteplan`), the same drawing as :func:`layout_plan`;
- :func:`located_sources`: the directions ``snrgain locate`` fitted.

Every antenna keeps one look (colour, line style and marker) and every target one hatch and hollow mark in all of
them (:mod:`snrgain.outputs.style`).
"""

from __future__ import annotations

import warnings
from collections.abc import Sequence
from pathlib import Path

import numpy as np

from snrgain.model.labelled import QUANTILES
from snrgain.outputs.style import (
    SOURCE_MARKER,
    antenna_looks,
    looks_of,
    structure_marker,
    target_looks,
    unwrapped,
)
from snrgain.physics.chain import short_of_target
from snrgain.units import signed_text

FLOOR_SPAN_DB = 40.0
"""The elevation pattern shows this many dB below the strongest trace (in dBi)."""
AZIMUTH_SPAN_DB = 40.0
"""The azimuth pattern's floor below each antenna's own peak [dB]: a front-to-back of 20-30 dB stands clear of it."""
AZIMUTH_FIGSIZE = (8.5, 7.0)
"""The azimuth pattern's size [in]: a circle 5 in across, the legend (names and peak gains) to its right."""
MARKS_ALONG = 12
"""Family markers drawn along a pattern trace (so a grey print still tells the families apart)."""


def _antennas(results):
    return results.antennas


def _label(a, results):
    return f"{a.name} (reference)" if a is results.reference else a.name


def _axes(
    ax,
    *,
    n: int = 1,
    polar: bool = False,
    figsize=(8.0, 5.0),
    columns: bool = False,
    width_ratios=None,
    sharex: bool = False,
    sharey: bool = False,
):
    """The figure and axes to draw on: those given (one Axes, or a sequence of n), or new ones on a new Figure
    (n panels in a column, or in a row with ``columns``): one made ready beforehand (:func:`prepare_blanks`) where
    there is one of that kind."""
    if ax is None:
        key = _blank_key(n, polar, figsize, columns, width_ratios, sharex, sharey)
        ready = _BLANKS.get(key)
        if ready:
            return ready.pop()
        return _new_axes(*key)
    axes = list(ax) if isinstance(ax, (Sequence, np.ndarray)) else [ax]
    if len(axes) != n:
        raise ValueError(f"ax: this figure draws {n} panel(s); got {len(axes)} axes")
    if polar and axes[0].name != "polar":
        raise ValueError("ax: this figure needs polar axes (projection='polar')")
    return axes[0].figure, axes


_BLANKS: dict[tuple, list] = {}
"""Figures with their empty axes, made ahead by kind (:func:`prepare_blanks`), each taken once by :func:`_axes`."""


def _blank_key(n, polar, figsize, columns, width_ratios, sharex, sharey) -> tuple:
    return (
        int(n),
        bool(polar),
        tuple(float(v) for v in figsize),
        bool(columns),
        None if width_ratios is None else tuple(float(v) for v in width_ratios),
        bool(sharex),
        bool(sharey),
    )


def _new_axes(n, polar, figsize, columns, width_ratios, sharex, sharey):
    from matplotlib.figure import Figure  # here, not at import: the report's text needs no matplotlib

    from snrgain.outputs.canvas import new_canvas

    # At the files' resolution, on an Agg canvas of its own: a PNG is then drawn once, at its size
    # (snrgain.outputs.drawing.save_figure); in the command line's figures' processes one that measures each text
    # once for all the figures (snrgain.outputs.canvas).
    fig = Figure(figsize=figsize, dpi=SAVE_OPTIONS["dpi"])
    new_canvas(fig)
    if polar:
        return fig, [fig.add_subplot(projection="polar")]
    shape = (1, n) if columns else (n, 1)
    grid = fig.subplots(
        *shape,
        squeeze=False,
        sharex=sharex,
        sharey=sharey,
        gridspec_kw={"width_ratios": list(width_ratios)} if width_ratios else None,
    )
    return fig, list(grid.ravel())


def blank_kinds(
    n_targets: int, n_candidates: int | None = None, n_diffuse: int | None = None
) -> list[tuple[dict, int]]:
    """The new figures' kinds (:func:`_axes`' keywords) that a scenario of ``n_targets`` targets draws whatever its
    results, with how many of each: an azimuth and an elevation pattern per target, the hours' panels; with
    ``n_candidates`` (the antennas besides the reference) the ranking chart's panels, with ``n_diffuse`` (the diffuse
    noise components the scenario asks for) the sky's.  A kind given wrong only leaves its blank unused."""
    kinds = [({"n": n_targets, "figsize": (8.5, 3.2 * n_targets + 1.0)}, 1)]
    if n_candidates:
        kinds.append((_ranking_kind(n_candidates, n_targets), 1))
    # Those that need the results first: the figures drawn ahead (the patterns and the sky, drawn_alike) may be drawn
    # before their blanks are made (the command line hands them over as the pipeline makes the sky and the cuts).
    kinds += [({"polar": True, "figsize": AZIMUTH_FIGSIZE}, n_targets), ({"figsize": (8.0, 4.8)}, n_targets)]
    if n_diffuse is not None:
        kinds.append((_sky_kind(n_diffuse + 1), 1))
    return kinds


def _sky_kind(n_panels: int) -> dict:
    """:func:`_axes`' keywords of the sky figure of ``n_panels`` panels."""
    return {"n": n_panels, "figsize": (9.0, 2.3 * n_panels + 1.0), "sharex": True}


def _ranking_kind(n_names: int, n_targets: int) -> dict:
    """:func:`_axes`' keywords of the ranking chart of ``n_names`` candidates and ``n_targets`` targets."""
    return {
        "n": 3,
        "columns": True,
        "figsize": (12, 0.6 * n_names * max(1, n_targets / 1.5) + 2.0),
        "sharey": True,
        "width_ratios": [2, 1.2, 1],
    }


TICKS_AHEAD = 10
"""Major ticks made ahead on each axis of a blank (:func:`blank_steps`): a figure that draws fewer leaves the rest
undrawn; one that draws more makes the others then."""


def prepare_blanks(kinds) -> None:
    """Make figures with their empty axes ahead, ``(keywords of _axes, count)`` each, for the figure functions to
    take: every step of :func:`blank_steps` at once."""
    for _ in blank_steps(kinds):
        pass


def blank_steps(kinds):
    """Make figures with their empty axes ahead, ``(keywords of _axes, count)`` each, for the figure functions to
    take, one step at a time (a generator): the figures' process takes steps while the command evaluates and stops
    when the results come (:meth:`snrgain.outputs.drawing.Drawer.prepare`).  Making the axes and their ticks is a
    good part of a figure's time.  A blank is the figure a function would make itself, so nothing drawn changes
    (tested).

    First every blank, each a step; then each blank's axes get :data:`TICKS_AHEAD` major ticks, an axis a step
    (matplotlib makes them as a draw first needs them, each a copy of the first tick's properties: a tenth of a
    figure's time).  A figure draws only as many as it has places for, each set up as on axes made then: the ticks'
    properties are set on every tick made so far."""
    made = []
    for kw, count in kinds:
        key = _blank_key(
            kw.get("n", 1),
            kw.get("polar", False),
            kw.get("figsize", (8.0, 5.0)),
            kw.get("columns", False),
            kw.get("width_ratios"),
            kw.get("sharex", False),
            kw.get("sharey", False),
        )
        for _ in range(count):
            blank = _new_axes(*key)
            _BLANKS.setdefault(key, []).append(blank)
            made.append(blank)
            yield
    for _, axes in made:
        for ax in axes:
            for axis in (ax.xaxis, ax.yaxis):
                axis.get_major_ticks(TICKS_AHEAD)
                yield  # an axis a step: the results, when they come, wait for one axis' ticks at most


def _place(fig, *, left: float, right: float, top: float, bottom: float, hgap: float = 0.0, wgap: float = 0.0):
    """Lay out a figure's panels at fixed margins and gaps [inches], in place of a measured layout (tight_layout
    measures every text of the figure in an extra pass).  The margins hold the tick labels and titles and may be
    generous: the files are cut to what is drawn (``bbox_inches="tight"``), and whatever runs past the figure's
    edge (an outside legend, a long name) is kept there too (:func:`snrgain.outputs.drawing.save_figure`)."""
    w, h = fig.get_size_inches()
    grid = fig.axes[0].get_subplotspec().get_gridspec() if fig.axes[0].get_subplotspec() else None
    rows, cols = grid.get_geometry() if grid is not None else (1, 1)
    ah = (h - top - bottom - (rows - 1) * hgap) / rows  # one panel's height and width
    aw = (w - left - right - (cols - 1) * wgap) / cols
    fig.subplots_adjust(
        left=left / w,
        right=1 - right / w,
        top=1 - top / h,
        bottom=bottom / h,
        hspace=hgap / ah if rows > 1 else None,
        wspace=wgap / aw if cols > 1 else None,
    )


def azimuth_pattern(results, *, target_index: int = 0, ax=None):
    """Polar azimuth pattern of every antenna at the target's mean elevation, each in dB below its own peak on that
    cut (0 dB at the rim, floored :data:`AZIMUTH_SPAN_DB` below it), its peak gain [dBi] in its legend entry: the
    patterns' shapes side by side, a four-square of short verticals beside a TX vertical 30 dB stronger (the SNR
    gain does not depend on the absolute gain; the elevation pattern draws it); ``ax`` polar."""
    own = ax is None
    fd = results.cuts
    tgt = results.targets[target_index]
    el = 0.5 * (tgt["elevation_min_deg"] + tgt["elevation_max_deg"])
    fig, (ax,) = _axes(ax, polar=True, figsize=AZIMUTH_FIGSIZE)
    ax.set_theta_zero_location("N")
    ax.set_theta_direction(-1)
    span = AZIMUTH_SPAN_DB
    theta = np.radians(fd.azimuth_deg)
    looks = looks_of(results)
    every = max(1, theta.size // MARKS_ALONG)
    for k, a in enumerate(_antennas(results)):
        rel, peak = own_peak(fd.azimuth[a.name][target_index])
        r = np.clip(np.where(np.isfinite(rel), rel, -span), -span, 0.0) + span  # no gain (-inf, NaN): the floor
        lk = looks[a.name]
        said = "no gain on this cut" if peak is None else f"peak {peak:.1f} dBi"
        ax.plot(
            theta,
            r,
            label=f"{_label(a, results)}: {said}",
            marker=lk.marker,
            ms=5,
            markevery=(k % every, every),
            **lk.line(),
        )
    ax.set_rlim(0, span + 2)
    ticks = np.arange(0, span + 1, 10)
    ax.set_rticks(ticks)
    ax.set_yticklabels([f"{t - span:.0f}" for t in ticks], fontsize=8)
    # the gain labels along the bearing farthest from every target and local source, where no arrow crosses them
    marked = [t["bearing_deg"] for t in results.targets] + [s["bearing_deg"] for s in results.local_sources]
    ax.set_rlabel_position(
        max(
            np.arange(22.5, 360.0, 45.0),
            key=lambda a: min((abs((a - b + 180.0) % 360.0 - 180.0) for b in marked), default=180.0),
        )
    )
    # A compass label where a target's name stands would lie under it: that name carries its own bearing instead.
    bearings = [t["bearing_deg"] % 360.0 for t in results.targets]
    compass = np.arange(0, 360, 45)
    ax.set_thetagrids(
        compass,
        ["" if any(abs((c - b + 180.0) % 360.0 - 180.0) < 12.0 for b in bearings) else f"{c:d}°" for c in compass],
    )
    for i, (t, tl) in enumerate(zip(results.targets, target_looks(len(results.targets)))):
        ax.annotate(
            "",
            xy=(np.radians(t["bearing_deg"]), span + 2),
            xytext=(0, 0),
            arrowprops={"arrowstyle": "->", "color": "black" if i == target_index else "0.6", "lw": 1.2},
        )
        ax.plot(
            [np.radians(t["bearing_deg"])],
            [span + 2],
            marker=tl.marker,
            ms=12,
            mfc="white",
            mec="black",
            ls="none",
            clip_on=False,
            label=f"target: {t['name']}",
        )
        ax.text(
            np.radians(t["bearing_deg"]),
            span + 6,
            f"{t['name']} {t['bearing_deg'] % 360.0:.0f}°",
            ha="center",
            va="center",
            fontsize=9,
            fontweight="bold" if i == target_index else "normal",
        )
    for s in results.local_sources:
        ax.plot([np.radians(s["bearing_deg"])], [span], ls="none", label=f"noise: {s['name']}", **SOURCE_MARKER)
    ax.set_title(
        f"Azimuth pattern at {el:.0f} deg elevation toward '{tgt['name']}'\n{results.site['name']}, "
        f"{results.freq_hz / 1e6:g} MHz\ndB relative to each antenna's own peak (the rim); its peak in dBi in the "
        "legend",
        pad=28,
        y=1.0,  # placed, not moved above the decorations at the draw (which measures them once more)
    )
    ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=8, frameon=False)
    if own:
        _place(fig, left=0.6, right=2.9, top=1.1, bottom=0.9)  # a circle 5 in across, the legend to its right
    return fig


def own_peak(cut) -> tuple[np.ndarray, float | None]:
    """(the cut in dB relative to its own peak, the peak [dBi]) of a pattern cut [dBi]; the peak None (and the cut
    all -inf) where no value is finite (no gain at all on it)."""
    cut = np.asarray(cut, dtype=float)
    finite = np.isfinite(cut)
    if not finite.any():
        return np.full(cut.shape, -np.inf), None
    peak = float(np.max(cut[finite]))
    return cut - peak, peak


def elevation_pattern(results, *, target_index: int = 0, ax=None):
    """Gain [dBi] against elevation toward the target's bearing, target elevations shaded."""
    own = ax is None
    fd = results.cuts
    tgt = results.targets[target_index]
    fig, (ax,) = _axes(ax, figsize=(8.0, 4.8))
    ax.axvspan(
        tgt["elevation_min_deg"],
        max(tgt["elevation_max_deg"], tgt["elevation_min_deg"] + 0.5),
        facecolor="none",
        edgecolor="0.72",
        hatch=target_looks(len(results.targets))[target_index].hatch,
        lw=0.0,
        label=f"arrivals from '{tgt['name']}'",
    )
    lows = []
    looks = looks_of(results)
    every = max(1, fd.elevation_deg.size // MARKS_ALONG)
    for k, a in enumerate(_antennas(results)):
        g = fd.elevation[a.name][target_index]
        lk = looks[a.name]
        ax.plot(
            fd.elevation_deg,
            g,
            label=_label(a, results),
            marker=lk.marker,
            ms=5,
            markevery=(k % every, every),
            **lk.line(),
        )
        finite = g[np.isfinite(g)]
        if finite.size:
            lows.append(finite.max())
    top = max(lows) if lows else 0.0
    ax.set_ylim(np.floor(top) - FLOOR_SPAN_DB, np.ceil(top) + 3)
    ax.set_xlim(0, 90)
    ax.set_xlabel("elevation (deg above the horizon)")
    ax.set_ylabel("total gain (dBi)")
    ax.set_title(
        f"Elevation pattern toward {tgt['bearing_deg']:.0f} deg ('{tgt['name']}'), {results.freq_hz / 1e6:g} MHz",
        y=1.0,
    )
    ax.grid(alpha=0.3)
    ax.legend(fontsize=8, loc="upper left", bbox_to_anchor=(1.01, 1.0), frameon=False)
    if own:
        _place(fig, left=0.8, right=2.4, top=0.45, bottom=0.65)
    return fig


def _sky_grid(comp, az_edges, el_edges, weights: dict | None = None):
    """Brightness temperature [K] of a diffuse component at the centres of a regular az/el grid, interpolated on the
    sphere (bilinear between the four nearest pixel centres, healpy's scheme in numpy: noisemodels.sphere), not
    looked up pixel by pixel.

    Pixels centred below the horizon hold no brightness; each takes the value of its mirror image above the
    horizon, so the interpolation just above 0 deg is not pulled toward zero (which drew a dotted row there).

    ``weights``: a dict kept between the components of one figure, holding the grid's interpolation pixels and
    weights by HEALPix resolution (the same for every component of that resolution)."""
    from noisemodels.sphere import direction_to_pixel, mirror_pixels

    d = comp.directions
    full = np.zeros(12 * d.nside * d.nside)
    full[direction_to_pixel(d.nside, d.azimuth_rad, d.elevation_rad)] = comp.weight_k_sr / d.solid_angle_sr
    below, mirror = mirror_pixels(d.nside)
    full[below] = full[mirror]  # the same bearing, elevation reflected
    shape = (el_edges.size - 1, az_edges.size - 1)
    weights = {} if weights is None else weights
    if d.nside not in weights:
        weights[d.nside] = _grid_weights(d.nside, az_edges, el_edges)
    pix, wgt = weights[d.nside]
    return np.sum(wgt * full[pix], axis=0).reshape(shape)


def _grid_weights(nside: int, az_edges, el_edges):
    """(pixels, weights) of the bilinear interpolation (noisemodels.sphere) at the centres of the az/el cells."""
    from noisemodels.sphere import interpolation_weights, to_healpy_angles

    az_c = 0.5 * (az_edges[1:] + az_edges[:-1])
    el_c = 0.5 * (el_edges[1:] + el_edges[:-1])
    A, E = np.meshgrid(np.radians(az_c), np.radians(el_c))
    return interpolation_weights(nside, *to_healpy_angles(A.ravel(), E.ravel()))


def _sky_edges() -> tuple[np.ndarray, np.ndarray]:
    """The azimuth and elevation edges [deg] of the cells :func:`noise_sky` draws."""
    return np.arange(0, 361, 1.0), np.arange(0, 90.1, 0.5)


_SKY_WEIGHTS: dict = {}
"""The interpolation pixels and weights of :func:`noise_sky`'s grid by HEALPix resolution, made ahead
(:func:`prepare_sky`)."""


def prepare_sky(nside: int) -> None:
    """Make the interpolation weights of :func:`noise_sky`'s grid at ``nside`` ahead (they need no results: the
    figures' process makes them while the command evaluates, :meth:`snrgain.outputs.drawing.Drawer.prepare`)."""
    if nside not in _SKY_WEIGHTS:
        _SKY_WEIGHTS[nside] = _grid_weights(nside, *_sky_edges())


def sky_moment(results) -> tuple[int, int]:
    """The month and hour the sky figure shows unless told (indices into ``results.months`` and
    ``results.utc_hours``): the middle of the listening months and of the listening hours, each in listening
    order (months 11, 12, 1: 12; hours 22, 0, 2, 4, 6: 2 UTC)."""
    from snrgain.outputs.style import listening_order

    months = listening_order(results.months, 12)
    hours = listening_order(results.utc_hours, 24)
    return results.months.index(months[(len(months) - 1) // 2]), results.utc_hours.index(hours[len(hours) // 2])


def noise_sky(
    results, *, month_index: int | None = None, hour_index: int | None = None, total_only: bool = False, ax=None
):
    """Brightness of each diffuse noise component and of their total over azimuth and elevation, interpolated on
    the sphere; at the month and hour given (indices), else at :func:`sky_moment` (the report's), named in the title.

    ``ax``: one Axes with ``total_only``, else a sequence of one Axes per diffuse component plus one.
    """
    from matplotlib.patches import Rectangle

    own = ax is None
    m0, h0 = sky_moment(results)
    month_index = m0 if month_index is None else month_index
    hour_index = h0 if hour_index is None else hour_index
    if results.noise.maps is None:
        raise ValueError("these results carry no sky maps")
    comps = results.noise.maps[(month_index, hour_index)]
    diffuse = [c for c in comps if c.directions.nside is not None]
    compact = [c for c in comps if c.directions.nside is None]
    az_edges, el_edges = _sky_edges()
    grid_weights: dict = dict(_SKY_WEIGHTS)  # those made ahead (prepare_sky), and this figure's own
    maps = [(c.name, _sky_grid(c, az_edges, el_edges, grid_weights)) for c in diffuse]
    total = sum(m for _, m in maps) if maps else np.zeros((el_edges.size - 1, az_edges.size - 1))
    panels = (
        [("total of the diffuse components", total)]
        if total_only
        else [*maps, ("total of the diffuse components", total)]
    )
    fig, axes = _axes(ax, **_sky_kind(len(panels)))
    sources = []  # the placed sources: (azimuth, elevation, name) of their centroid
    for c in compact:
        az = np.degrees(np.average(c.directions.azimuth_rad, weights=c.weight_k_sr))
        el = np.degrees(np.average(c.directions.elevation_rad, weights=c.weight_k_sr))
        sources.append((float(az), float(el), c.name))
    inks = []  # each panel's colours for the names: white on the colour map, black on grey (no noise from there)
    positive = [m[m > 0] for _, m in panels if np.any(m > 0)]
    vmax = 10 * np.log10(max(p.max() for p in positive)) if positive else 1.0
    vmin = vmax - 40
    mesh = None
    for ax, (name, m) in zip(axes, panels):
        with np.errstate(divide="ignore"):
            db = 10 * np.log10(m)
        if np.any(m > 0):
            # below the scale: its floor; no noise at all from there (the model sends none): grey, said in the title
            db = np.ma.masked_where(m <= 0, np.clip(db, vmin, None))
            ax.set_facecolor("0.82")
            # one cell a grid step, as a mesh of the grid's edges would draw it, as an image (a fraction of the time)
            mesh = ax.imshow(
                db,
                extent=(az_edges[0], az_edges[-1], el_edges[0], el_edges[-1]),
                origin="lower",
                aspect="auto",
                interpolation="nearest",
                vmin=vmin,
                vmax=vmax,
                cmap="magma",
            )
        else:
            ax.set_facecolor("0.9")
            ax.text(180, 45, "none reaches the ground (screened by the ionosphere)", ha="center", va="center")
        ax.set_ylabel("elevation (deg)")
        ax.set_title(name, fontsize=10, loc="left", y=1.0)
        for t, tl in zip(results.targets, target_looks(len(results.targets))):
            lo, hi = t["elevation_min_deg"], t["elevation_max_deg"]
            ax.add_patch(
                Rectangle(
                    (t["bearing_deg"] - 4, lo), 8, max(hi - lo, 0.5), fill=False, ec="white", hatch=tl.hatch, lw=1.2
                )
            )
            ax.plot([t["bearing_deg"]], [hi], marker=tl.marker, mfc="white", mec="black", ms=10, ls="none")
        for az, el, _ in sources:
            ax.plot([az], [el], ls="none", **SOURCE_MARKER)
        ax.set_xlim(az_edges[0], az_edges[-1])
        ax.set_ylim(0, 90)
    axes[-1].set_xlabel("azimuth (compass bearing, deg)")
    axes[-1].set_xticks(np.arange(0, 361, 45))
    month = results.months[month_index]
    hour = results.utc_hours[hour_index]
    title = (
        f"Noise sky at {results.site['name']}, month {month}, {hour:g} UTC, {results.freq_hz / 1e6:g} MHz\n"
        "(the middle of the listening months and hours unless chosen; brightness temperature, interpolated on the "
        "sphere;\ngrey: no noise arrives from there; crosses: local sources; hatched boxes: targets)"
    )
    if own:
        fig.suptitle(title, fontsize=11)
        _place(fig, left=0.8, right=1.05, top=1.05, bottom=0.65, hgap=0.4)
        if mesh is not None:
            fig.colorbar(mesh, cax=fig.add_axes((0.91, 0.15, 0.02, 0.7)), label="dB above 1 K")
    else:
        axes[0].set_title(title, fontsize=9, y=1.0)
        if mesh is not None:
            fig.colorbar(mesh, ax=axes, label="dB above 1 K")
    # The names last, where the panels' places are known: beside their marks, clear of each other
    marks = [
        (t["bearing_deg"], t["elevation_max_deg"], t["name"], False, t["elevation_min_deg"]) for t in results.targets
    ] + [(az, el, name, True, None) for az, el, name in sources]
    for _, m in panels:  # by the cell under the mark: white on the colour map, black on the grey
        rows = np.clip(np.searchsorted(el_edges, [mk[1] for mk in marks]) - 1, 0, m.shape[0] - 1)
        cols = np.clip(np.searchsorted(az_edges, [mk[0] % 360.0 for mk in marks]) - 1, 0, m.shape[1] - 1)
        inks.append(["white" if m[i, j] > 0 else "black" for i, j in zip(rows, cols)])
    _name_marks(fig, axes, marks, inks)
    return fig


def _measurer(fig):
    """A renderer to measure texts with, drawing nothing: the figure's canvas' own where it has one (Agg's), else a
    one-pixel Agg renderer at the figure's resolution (a figure made without a canvas, given axes to draw on)."""
    get = getattr(fig.canvas, "get_renderer", None)
    if get is not None:
        return get()
    from matplotlib.backends.backend_agg import RendererAgg

    return RendererAgg(1, 1, fig.dpi)


SKY_NAME_SIZE = 8.0
"""Font size [pt] of the targets' and sources' names on the sky figure."""


def _name_marks(fig, axes, marks, inks) -> None:
    """Write each mark's name beside it on every panel, clear of the other names and marks (:func:`spread_labels`).

    ``marks``: ``(azimuth, elevation, name, is_source, lowest elevation or None)``: a target's hatched box reaches
    down to its lowest elevation; a source's name goes first to the left of its cross, a target's to the right
    of its marker.  ``inks``: per panel, each name's colour.  The names are measured once (the canvas' renderer,
    which draws nothing for it) and placed on each panel from the panel's place and limits alone: no extra draw."""
    from matplotlib.font_manager import FontProperties

    if not marks:
        return
    renderer = _measurer(fig)
    prop = FontProperties(size=SKY_NAME_SIZE)
    to_pt = 72.0 / fig.dpi
    sizes = []
    for _, _, name, _, _ in marks:
        w, h, _ = renderer.get_text_width_height_descent(name, prop, False)
        sizes.append((w * to_pt, h * to_pt))
    fw, fh = (v * 72.0 for v in fig.get_size_inches())
    placed_on: dict = {}
    for ax, colours in zip(axes, inks):
        pos = ax.get_position()
        x0, x1 = ax.get_xlim()
        y0, y1 = ax.get_ylim()
        frame = (pos.x0 * fw, pos.y0 * fh, pos.x1 * fw, pos.y1 * fh)  # the panel [pt from the figure's corner]
        sx = (frame[2] - frame[0]) / (x1 - x0)
        sy = (frame[3] - frame[1]) / (y1 - y0)
        key = (round(frame[2] - frame[0], 3), round(frame[3] - frame[1], 3), x0, x1, y0, y1)
        if key not in placed_on:  # panels of one size and scale: the same places
            points = [((az - x0) * sx, (el - y0) * sy) for az, el, _, _, _ in marks]
            obstacles = []
            for (px, py), (_, _, _, is_source, low) in zip(points, marks):
                r = (SOURCE_MARKER["ms"] if is_source else 10.0) / 2 + 1.0  # with its edge
                box = (px - r, py - r, px + r, py + r)
                if low is not None:  # the target's hatched box: 8 deg wide, from its lowest elevation up
                    box = (
                        min(box[0], px - 4 * sx),
                        min(box[1], (low - y0) * sy),
                        max(box[2], px + 4 * sx),
                        box[3],
                    )
                obstacles.append(box)
            placed_on[key] = spread_labels(
                points,
                sizes,
                [m[3] for m in marks],
                obstacles,
                (0.0, 0.0, frame[2] - frame[0], frame[3] - frame[1]),
            )
        for (az, el, name, _, _), (dx, dy), ink in zip(marks, placed_on[key], colours):
            ax.annotate(
                name,
                (az, el),
                xytext=(dx, dy),
                textcoords="offset points",
                color=ink,
                fontsize=SKY_NAME_SIZE,
                ha="left",
                va="bottom",
                annotation_clip=False,
            )


LABEL_GAP = 2.0
"""Clearance [pt] kept between a label and its mark, and between two labels."""


def spread_labels(points, sizes, left_first, obstacles, frame) -> list[tuple[float, float]]:
    """Greedy places for labels beside their marks, clear of each other: each label in turn takes the first of its
    candidate places (beside its mark to the right or left, level, a little above or below, then above or below the
    mark, then staggered a line further up or down) whose box overlaps no label placed before, no mark and stays
    in ``frame``; where none does, the one overlapping least.  A few boxes compared per label: no drawing.

    ``points``: the marks' places [pt]; ``sizes``: each label's (width, height) [pt]; ``left_first``: whether a
    label goes first to the left of its mark (else to the right); ``obstacles``: each mark's box (x0, y0, x1, y1)
    [pt], which its own label stays clear of too; ``frame``: the box the labels should stay in.  Returns each
    label's lower-left corner as an offset from its mark [pt]."""
    g = LABEL_GAP

    def overlap(a, b) -> float:
        w = min(a[2], b[2]) - max(a[0], b[0])
        h = min(a[3], b[3]) - max(a[1], b[1])
        return w * h if w > 0 and h > 0 else 0.0

    def outside(a) -> float:  # the part of the box outside the frame
        inner = overlap(a, frame)
        return (a[2] - a[0]) * (a[3] - a[1]) - inner

    placed: list[tuple] = []
    offsets = []
    for k, ((px, py), (w, h), left) in enumerate(zip(points, sizes, left_first)):
        ob = obstacles[k]
        right_x = ob[2] - px + 1.5 * g  # clear of its own mark's box
        left_x = ob[0] - px - 1.5 * g - w
        above_y = ob[3] - py + 1.5 * g
        below_y = ob[1] - py - 1.5 * g - h
        sides = (left_x, right_x) if left else (right_x, left_x)
        candidates = []
        for x in sides:
            # a source's level with its cross, a target's a little raised (clear of its hatched box)
            candidates += [(x, -h / 2), (x, 0.0), (x, -h)] if left else [(x, 0.0), (x, -h / 2), (x, -h)]
        candidates += [(-w / 2, above_y), (-w / 2, below_y)]
        for step in range(1, 4):  # staggered a line at a time
            for x in sides:
                candidates += [(x, -h / 2 + step * (h + g)), (x, -h / 2 - step * (h + g))]
            candidates += [(-w / 2, above_y + step * (h + g)), (-w / 2, below_y - step * (h + g))]
        best, best_cost = None, None
        for dx, dy in candidates:
            box = (px + dx, py + dy, px + dx + w, py + dy + h)
            padded = (box[0] - g, box[1] - g, box[2] + g, box[3] + g)
            cost = sum(overlap(padded, b) for b in placed) + sum(overlap(padded, b) for b in obstacles)
            cost += outside(box)
            if cost == 0.0:
                best = (dx, dy, box)
                break
            if best_cost is None or cost < best_cost:
                best, best_cost = (dx, dy, box), cost
        dx, dy, box = best
        placed.append(box)
        offsets.append((dx, dy))
    return offsets


def _window(x, values):
    """Positions and values of one target's listening window, with NaN put where listed positions lie more than
    1.5 times their usual (median) step apart, so that no line crosses hours nobody listens at (two windows in
    one day stay two spans)."""
    h = np.asarray(x, dtype=float)
    v = np.asarray(values, dtype=float)
    if h.size < 2:
        return h, v
    d = np.diff(h)
    step = float(np.median(d))
    out_h, out_v = [h[0]], [v[0]]
    for i in range(1, h.size):
        if d[i - 1] > 1.5 * step + 1e-9:
            out_h.append(0.5 * (h[i - 1] + h[i]))
            out_v.append(np.nan)
        out_h.append(h[i])
        out_v.append(v[i])
    return np.array(out_h), np.array(out_v)


def _band_polygons(x, lower, upper) -> list[np.ndarray]:
    """The band between ``lower`` and ``upper`` over ``x`` as ``fill_between`` outlines it: one polygon a run of
    points where all three are finite (along the lower edge, back along the upper)."""
    ok = np.isfinite(x) & np.isfinite(lower) & np.isfinite(upper)
    edges = np.flatnonzero(np.diff(np.concatenate([[0], ok.astype(np.int8), [0]])))
    polys = []
    for a, b in zip(edges[::2], edges[1::2]):
        xs, lo, hi = x[a:b], lower[a:b], upper[a:b]
        polys.append(
            np.concatenate(
                [[(xs[0], hi[0])], np.column_stack([xs, lo]), [(xs[-1], hi[-1])], np.column_stack([xs, hi])[::-1]]
            )
        )
    return polys


def target_window(ds, target_index: int) -> tuple[list[float], np.ndarray]:
    """The UTC hours one target is listened at, in listening order (a night across midnight: 22, 23, 0 ... 6),
    and their positions on an axis that runs past 24 so the night is one span (22, 23, 24 ... 30).  ``ds``: the
    labelled results (a Results, its Dataset or :class:`snrgain.model.labelled.Labelled`)."""
    from snrgain.model.labelled import Labelled

    lab = Labelled.of(ds)
    gains = lab.get("snr_gain_db", target=target_index)  # antenna, month, hour
    listened = np.any(np.isfinite(gains), axis=(0, 1))
    hours = [float(h) for h, keep in zip(lab.coord("utc_hour"), listened) if keep]
    return unwrapped(hours, 24.0)


def snr_over_hours(results, *, ax=None):
    """SNR gain over the reference against UTC hour, one panel per target (mean over its months), with the band of
    atmospheric noise at its P.372 deciles on every point.  Each panel's axis runs over the target's own listening
    window in its order, starting where the window starts: a night across midnight is one continuous span.

    The numbers are read from the labelled results (:func:`snrgain.model.labelled.labelled`, the arrays of
    :meth:`Results.to_xarray`: ``snr_gain_db`` and ``snr_gain_atmospheric_deciles_db`` by antenna, target, month
    and UTC hour); ``results`` may be that Dataset itself.  ``ax``: a sequence of one Axes per target.
    """
    from matplotlib.collections import LineCollection, PolyCollection

    from snrgain.model.labelled import ATMOSPHERIC_DECILES, Labelled

    own = ax is None
    lab = Labelled.of(results)
    nt = lab.sizes["target"]
    fig, axes = _axes(ax, n=nt, figsize=(8.5, 3.2 * nt + 1.0))
    atm = False
    names = [str(n) for n in lab.coord("antenna")]
    looks = antenna_looks(names, [str(f) for f in lab.coord("family")])
    is_ref = lab.coord("is_reference").astype(bool)
    candidates = [k for k, ref in enumerate(is_ref) if not ref]
    ref_name = names[int(np.flatnonzero(is_ref)[0])]
    hours = [float(h) for h in lab.coord("utc_hour")]
    upper, lower = ATMOSPHERIC_DECILES.index("upper"), ATMOSPHERIC_DECILES.index("lower")
    for i, axi in enumerate(axes):
        order, x = target_window(lab, i)
        cols = [hours.index(h) for h in order]
        bands, band_colors, bars, bar_colors = [], [], [], []  # one collection of each a panel: a fraction of the time
        for k in candidates:
            lk = looks[names[k]]
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", RuntimeWarning)  # a month not listened: all NaN
                # mean over the months listened (NaN elsewhere), as xarray's skipna mean
                gain = np.nanmean(lab.get("snr_gain_db", antenna=k, target=i), axis=0)
                band = np.nanmean(lab.get("snr_gain_atmospheric_deciles_db", antenna=k, target=i), axis=1)
            v = gain[cols] if order else np.array([])
            if not np.any(np.isfinite(v)):
                continue
            xs, vs = _window(x, v)
            axi.plot(xs, vs, marker=lk.marker, ms=5, label=names[k], **lk.line())
            hi, lo = band[upper][cols], band[lower][cols]
            if np.any(np.isfinite(hi)):
                atm = True
                _, v_hi = _window(x, hi)
                _, v_lo = _window(x, lo)
                for poly in _band_polygons(xs, np.fmin(v_hi, v_lo), np.fmax(v_hi, v_lo)):
                    bands.append(poly)
                    band_colors.append(lk.color)
                for xi, a, b in zip(x, np.fmin(hi, lo), np.fmax(hi, lo)):
                    if np.isfinite(a) and np.isfinite(b):
                        bars.append([(xi, a), (xi, b)])
                        bar_colors.append(lk.color)
        if bands:  # the bands under the lines (as fill_between's), the bars over them
            axi.add_collection(PolyCollection(bands, facecolors=band_colors, alpha=0.15, lw=0, zorder=1))
        if bars:
            axi.add_collection(LineCollection(bars, colors=bar_colors, lw=1.0, alpha=0.7))
        axi.axhline(0.0, label=f"{ref_name} (reference)", **looks[ref_name].line())
        axi.set_ylabel("SNR gain (dB)")
        axi.set_title(f"toward {lab.coord('target')[i]}", fontsize=10, loc="left", y=1.0)
        axi.grid(alpha=0.3)
        if len(x):
            axi.set_xticks(x, [f"{h:g}" for h in order])
            axi.set_xlim(x[0] - 0.5, x[-1] + 0.5)
        axi.set_xlabel("UTC hour (the target's listening window, in order)")
    axes[0].legend(fontsize=8, loc="upper left", bbox_to_anchor=(1.01, 1.0), frameon=False)
    band = "\nbands and bars: atmospheric noise at its P.372 upper and lower deciles" if atm else ""
    title = (
        f"SNR gain over the reference through the hours, {lab.attrs['frequency_hz'] / 1e6:g} MHz{band}\n"
        "(nominal: the site's ground, every noise at its median level; the table's median also spreads them)"
    )
    if own:
        fig.suptitle(title, fontsize=10)
        _place(fig, left=0.8, right=2.3, top=0.85, bottom=0.6, hgap=0.85)
    return fig


def ranking_chart(results, *, ax=None):
    """Per target, each candidate's median SNR gain with its 10-90 % band; RDF per target; the worst-hour margin.

    The numbers are read from the labelled results (:meth:`Results.to_xarray`: ``snr_gain_quantile_db``,
    ``rdf_db``, ``best``, ``margin_db``); ``results`` may be that Dataset itself.  ``ax``: a sequence of three Axes
    (SNR gain, RDF, margin).
    """
    from snrgain.model.labelled import Labelled

    own = ax is None
    lab = Labelled.of(results)
    all_names = [str(n) for n in lab.coord("antenna")]
    keep = np.flatnonzero(~lab.coord("is_reference").astype(bool))[::-1]  # the first candidate at the top
    names = [all_names[k] for k in keep]
    quantiles = lab.get("snr_gain_quantile_db")[keep]  # (antenna, target, quantile)
    targets = [str(t) for t in lab.coord("target")]
    nt = len(targets)
    y = np.arange(len(names))
    h = 0.8 / nt
    fig, axes = _axes(ax, **_ranking_kind(len(names), nt))
    looks = antenna_looks(all_names, [str(f) for f in lab.coord("family")])
    colors = [looks[n].color for n in names]
    rdf = lab.get("rdf_db")[keep]  # (antenna, target)
    for ti, (t, tl) in enumerate(zip(targets, target_looks(nt))):
        off = ((nt - 1) / 2 - ti) * h  # the first target on top, as the legend lists them
        lo, med, hi = (quantiles[:, ti, QUANTILES.index(q)] for q in QUANTILES)
        bars = {"height": h, "colors": colors, "edgecolors": "black", "hatch": tl.hatch, "lw": 0.6}
        _barh(axes[0], y + off, med, alpha=0.85, **bars)
        axes[0].bar(0, 0, color="white", edgecolor="black", hatch=tl.hatch, label=t)  # the target's legend swatch
        axes[0].errorbar(med, y + off, xerr=[med - lo, hi - med], fmt="none", ecolor="black", elinewidth=1, capsize=2)
        _barh(axes[1], y + off, rdf[:, ti], **bars)
        best = names.index(str(lab.coord("best")[ti]))
        # the best of candidates none of which beats the reference is said so, as the text's verdict says
        best_word = "  best" if med[best] > 0 else "  best, below the reference"
        for k, (yi, v, top) in enumerate(zip(y + off, med, hi)):
            axes[0].text(
                max(top, 0),
                yi,
                f"  {signed_text(v)}" + (best_word if k == best else ""),
                va="center",
                fontsize=7,
                fontweight="bold" if k == best else "normal",
            )
    lo_x, hi_x = axes[0].get_xlim()
    axes[0].set_xlim(lo_x, hi_x + 0.25 * (hi_x - lo_x))  # room for the values and "best" beside the bars
    axes[0].axvline(0, color="0.3", lw=1)
    axes[0].set_yticks(y, names)
    axes[0].set_xlabel("SNR gain over the reference (dB): median, bar 10-90 %;\nbest: the best toward that target")
    axes[0].set_title("SNR gain per target (colour: antenna; hatching: target)", fontsize=10, y=1.0)
    axes[1].axvline(0, color="0.3", lw=1)
    axes[1].set_xlabel("RDF (dB)")
    axes[1].set_title("RDF per target", fontsize=10, y=1.0)
    target = lab.attrs["margin_target_db"]
    margin = np.nanmin(lab.get("margin_db")[keep], axis=(1, 2))
    below = short_of_target(margin, target)  # as the table marks it: the margin said to 0.1 dB
    _barh(
        axes[2],
        y,
        margin,
        height=0.6,
        colors=colors,
        edgecolors=["black" if b else "none" for b in below],
        lw=1.5,
    )
    axes[2].axvline(target, color="black", ls=":", label=f"target {target:g} dB")
    lo_x, hi_x = axes[2].get_xlim()
    axes[2].set_xlim(lo_x, hi_x + 0.15 * (hi_x - lo_x))  # room for the values beside the bars
    short = [  # the values below the target, whose labels may run over its line: placed beyond it if they do (below)
        (axes[2].text(v, yi, f" {v:.1f}" + (" !" if b else ""), va="center", fontsize=8), b)
        for yi, v, b in zip(y, margin, below)
    ]
    short = [t for t, below in short if below]
    axes[2].set_xlabel("margin over the chain's floor (dB)")
    axes[2].set_title("External-noise margin\n(worst hour; '!' below target)", fontsize=10, y=1.0)
    for ax in axes:
        ax.grid(axis="x", alpha=0.3)
    at = lab.attrs
    title = f"Ranking at {at['site']}, {at['frequency_hz'] / 1e6:g} MHz (reference: {at['reference']})"
    if own:
        fig.suptitle(title, fontsize=11)
        _place(fig, left=2.4, right=0.5, top=0.85, bottom=0.8, wgap=0.35)  # the left margin: the antennas' names
    # The legends in a band of their own above the bars (the axes shared in y: every panel's), where no bar or
    # value stands: the band is the legends' measured height, now that the panels' size is known
    legends = [axes[0].legend(fontsize=8, loc="upper left"), axes[2].legend(fontsize=8, loc="upper right")]
    _headroom(fig, axes[0], legends)
    _clear_of_line(fig, axes[2], short, target)
    return fig


def _clear_of_line(fig, ax, labels, x: float) -> None:
    """Move each of ``labels`` (texts left-aligned at a bar's end, left of ``x``) that would touch or cross the
    vertical line at ``x`` [data] to start at the line instead (its leading space the gap); measured, not drawn, now
    that the panel's size is known."""
    if not labels:
        return
    renderer = _measurer(fig)
    line = ax.transData.transform((x, 0.0))[0]
    gap = 1.0 * fig.dpi / 72.0  # a point clear of the line
    for t in labels:
        box = t.get_window_extent(renderer)
        if box.x1 + gap > line:
            t.set_x(x)


def _headroom(fig, ax, legends) -> None:
    """Raise ``ax``'s upper y limit so that a band at its top, above the data's own margin, holds the tallest of
    ``legends`` (placed at the top, inside the axes) and its border pad; measured, not drawn."""
    renderer = _measurer(fig)
    need = max(leg.get_window_extent(renderer).height for leg in legends)
    pad = max(leg.borderaxespad * leg.prop.get_size_in_points() for leg in legends) * fig.dpi / 72.0
    need += pad + 2.0 * fig.dpi / 72.0  # the pad above it, a little below
    height = ax.get_window_extent(renderer).height
    y0, y1 = ax.get_ylim()
    if height <= 2 * need:  # a tiny panel: no room to make; leave it
        return
    ax.set_ylim(y0, y1 + need * (y1 - y0) / (height - need))


def _barh(ax, y, widths, *, height: float, colors, edgecolors, lw: float, hatch=None, alpha=None) -> None:
    """Horizontal bars centred on ``y`` from 0 to ``widths``, drawn as ``ax.barh(y, widths, height=height,
    color=colors, edgecolor=edgecolors, lw=lw, hatch=hatch, alpha=alpha)`` draws them (the same rectangles, limits
    and legend placement), with the data limits set once for all: barh sets them bar by bar, measuring each
    rectangle's outline (a fifth of the ranking chart's time)."""
    from matplotlib.colors import to_rgba_array
    from matplotlib.patches import Rectangle

    y = np.asarray(y, dtype=float)
    widths = np.asarray(widths, dtype=float)
    faces = list(to_rgba_array(colors))
    edges = list(to_rgba_array(edgecolors))
    corners = []
    for k, (yi, w) in enumerate(zip(y, widths)):
        bottom = yi - height / 2
        r = Rectangle(
            (0.0, bottom),
            w,
            height,
            facecolor=faces[k % len(faces)],
            edgecolor=edges[k % len(edges)],
            linewidth=lw,
            hatch=hatch,
            label="_nolegend_",
        )
        if alpha is not None:
            r.set_alpha(alpha)
        r.sticky_edges.x.append(0.0)
        ax.add_artist(r)  # a patch as add_patch adds it, without its own limits
        if w or height:
            corners += [(0.0, bottom), (w, bottom), (w, bottom + height), (0.0, bottom + height)]
    if corners:
        ax.update_datalim(corners)
    ax.autoscale_view()  # as barh leaves them: the view fitted to the data limits (again as more is drawn)


def has_site_plan(results, *, plan: dict | None = None) -> bool:
    """Whether there is a site plan to draw: a lot outline or an antenna with a place."""
    from snrgain.outputs.siteplan import has_plan, plan_from_results

    return has_plan(plan if plan is not None else plan_from_results(results))


def site_plan(results, *, plan: dict | None = None, ax=None):
    """The site to scale: the lot, keep-out areas, the transmitting vertical and its clearance, placed noise sources,
    every antenna as built (wires from their feed points, array elements, combinations joined to their members),
    wires off the lot and crossings marked; in the scenario's unit.

    ``plan``: :func:`snrgain.outputs.siteplan.plan_of` of the scenario (the command line passes it); without it,
    what ``results`` alone give (the lot and the antennas' positions, in metres)."""
    from snrgain.outputs.siteplan import plan_from_results

    if plan is None:
        plan = plan_from_results(results)
    if not has_site_plan(results, plan=plan):
        raise ValueError("the scenario gives no lot outline ([site] lot) and no antenna positions (position = [e, n])")
    return _draw_plan(plan, looks_of(results), f"Site plan, {plan['site']}", ax=ax)


def plan_looks(plan: dict) -> dict:
    """The antennas' looks as the plan lists them (the scenario's order, the reference first): those of the
    results (:func:`snrgain.outputs.style.looks_of`) when the plan is the scenario's."""
    return antenna_looks([a["name"] for a in plan["antennas"]], [a["family"] for a in plan["antennas"]])


def scenario_plan(plan: dict, *, ax=None):
    """:func:`site_plan` from the scenario's plan alone (:func:`snrgain.outputs.siteplan.plan_of`), before there
    are results: the same figure where :func:`plan_looks` are the results' looks (the command line draws it while
    the scenario is evaluated, and uses it only then)."""
    if not has_site_plan(None, plan=plan):
        raise ValueError("the scenario gives no lot outline ([site] lot) and no antenna positions (position = [e, n])")
    return _draw_plan(plan, plan_looks(plan), f"Site plan, {plan['site']}", ax=ax)


def layout_plan(plan: dict, *, ax=None):
    """A layout on the lot (the site plan with the placed candidates where the layout puts them, each with the SNR
    gain it reaches).  ``plan`` is :func:`snrgain.tools.layout.plan_data`."""
    return _draw_plan(plan, plan_looks(plan), f"Layout, {plan['site']}", ax=ax)


def _draw_plan(plan: dict, looks: dict, title: str, *, ax=None):
    """Draw a site plan (:mod:`snrgain.outputs.siteplan`) with the antennas' looks."""
    from matplotlib.patches import Circle
    from matplotlib.path import Path as MplPath

    from snrgain.outputs.siteplan import beyond_plan

    own = ax is None
    fig, (ax,) = _axes(ax, figsize=(8.0, 8.0))
    unit, k = plan["unit"], plan["per_m"]

    def xy(points):
        pts = np.asarray(points, dtype=float) * k
        return pts[:, 0], pts[:, 1]

    if plan["lot"]:
        xs, ys = xy(list(plan["lot"]) + [plan["lot"][0]])
        ax.fill(xs, ys, color="#EEF6EE", ec="#2E6B2E", lw=1.5, label="lot", zorder=0)
    for i, (name, pts) in enumerate(plan["keep_out"]):
        kx, ky = xy(list(pts) + [pts[0]])
        ax.fill(kx, ky, color="0.78", ec="0.3", lw=1, label="keep out" if i == 0 else None, zorder=1)
        centre = (float(np.mean(kx[:-1])), float(np.mean(ky[:-1])))
        outline = MplPath(np.asarray(pts, dtype=float))
        if any(outline.contains_point(pos) for _, pos in plan["sources"]):  # a source's cross would sit on the name
            ax.annotate(
                name, (centre[0], float(np.min(ky))), xytext=(0, -2), textcoords="offset points", ha="center",
                va="top", fontsize=8,
            )  # fmt: skip
        else:
            ax.annotate(name, centre, ha="center", va="center", fontsize=8)
    if plan["tx"] is not None and plan["clearance_m"]:
        c = plan["clearance_m"]
        how = "given" if plan["clearance_given"] else "half a wavelength"
        ax.add_patch(
            Circle(
                tuple(np.asarray(plan["tx"]) * k),
                c * k,
                fill=False,
                ls=":",
                color="black",
                lw=1.2,
                label=f"clearance of {plan['tx_name']}: {c * k:.0f} {unit} ({how})",
            )
        )
    far = beyond_plan(plan)  # drawn at the plan's edge below, once its extent is the site's
    beyond = {f["name"] for f in far}
    for name, pos in plan["sources"]:
        if name not in beyond:
            ax.plot(*xy([pos]), ls="none", label=f"noise source: {name}", zorder=6, **SOURCE_MARKER)
    mast = structure_marker()
    for name, foot, height in plan.get("structures", []):
        sx, sy = xy([foot])
        ax.plot(sx, sy, ls="none", label=f"structure: {name}, {height * k:.0f} {unit} tall", zorder=6, **mast)
        ax.annotate(name, (sx[0], sy[0]), xytext=(9, 0), textcoords="offset points", va="center", fontsize=8)
    for i, (name, run) in enumerate(plan.get("feed_lines", [])):  # dotted in the antenna's colour to the station
        fx, fy = xy(run)
        color = looks[name].color if name in looks else "0.3"
        ax.plot(fx, fy, color=color, ls=":", lw=1.4, label="feed line to the station" if i == 0 else None, zorder=3)
        ax.plot(fx[1:], fy[1:], marker="s", color="0.25", ms=5, ls="none", zorder=3)
    for a in plan["antennas"]:
        lk = looks[a["name"]]
        label = a.get("shown_as") or a["name"]  # a switched antenna's states that stand as one: its own name
        label += " (reference)" if a["reference"] else ""
        note = f"; {a['note']}" if a.get("note") else ""  # in its own entry it would stand in the other column
        for p in a["parts"]:
            px, py = xy(p["coords"])
            if p["kind"] == "wire":
                length = float(np.hypot(px[1] - px[0], py[1] - py[0]))
                bearing = float(np.degrees(np.arctan2(px[1] - px[0], py[1] - py[0])) % 360)
                label += f": {length:.0f} {unit} toward {bearing:.0f} deg{note}"
                ax.plot(px, py, label=label, zorder=4, **lk.line())
                ax.plot(px[:1], py[:1], marker=lk.marker, color=lk.color, ms=8, mec="black", ls="none", zorder=5)
                ax.annotate(
                    "",
                    xy=(px[0] + 0.62 * (px[1] - px[0]), py[0] + 0.62 * (py[1] - py[0])),
                    xytext=(px[0] + 0.5 * (px[1] - px[0]), py[0] + 0.5 * (py[1] - py[0])),
                    arrowprops={"arrowstyle": "-|>", "color": lk.color, "lw": 2, "mutation_scale": 16},
                    zorder=5,
                )
            elif p["kind"] == "elements":
                # joined around their centre (a four-square's square, not a Z through the elements' order)
                turn = np.argsort(np.arctan2(py - np.mean(py), px - np.mean(px)))
                ring = np.append(turn, turn[:1]) if len(turn) > 2 else turn
                ax.plot(px[ring], py[ring], color=lk.color, ls=lk.linestyle, lw=0.8, zorder=4)
                ax.plot(
                    px, py, marker=lk.marker, color=lk.color, mec="black", ms=8, ls="none", label=label + note, zorder=5
                )
            elif p["kind"] == "unit":
                for fx, fy in a.get("member_feeds", []):
                    ax.plot([px[0], fx * k], [py[0], fy * k], color=lk.color, ls=lk.linestyle, lw=1.4, zorder=3)
                ax.plot(px, py, marker=lk.marker, color=lk.color, mec="black", ms=9, ls="none", zorder=5)
                joined = " and ".join(a["members"])
                ax.plot([], [], marker=lk.marker, mec="black", label=f"{label}: combines {joined}", **lk.line())
            else:
                ax.plot(
                    px,
                    py,
                    marker=lk.marker,
                    color=lk.color,
                    mec="black",
                    ms=10,
                    ls="none",
                    label=label + note,
                    zorder=5,
                )
            label = None
        _favoured_arrows(ax, a, lk, k)
    drawn = {a["name"] for a in plan["antennas"] if a["parts"]}
    if plan["tx"] is not None and plan.get("tx_name") not in drawn:  # a TX vertical with no position of its own
        lk = looks.get(plan.get("tx_name"))
        ax.plot(
            *xy([plan["tx"]]),
            marker=lk.marker if lk else "^",
            color=lk.color if lk else "black",
            mec="black",
            ms=10,
            ls="none",
            label=f"{plan['tx_name']} (transmitting; at the plan's origin)",
            zorder=5,
        )
    for i, o in enumerate(plan["off_lot"]):
        ox, oy = xy(o["coords"])
        ax.plot(
            ox,
            oy,
            color="black",
            lw=7,
            alpha=0.3,
            marker="o" if len(ox) == 1 else None,
            ms=16,
            solid_capstyle="butt",
            label="off the lot" if i == 0 else None,
            zorder=2,
        )
    for i, c in enumerate(plan["crossings"]):
        ax.plot(
            *xy([c["at"]]),
            marker="o",
            ms=16,
            mfc="none",
            mec="black",
            mew=2,
            ls="none",
            label="wires cross" if i == 0 else None,
            zorder=6,
        )
    ax.set_aspect("equal")
    ax.set_xlabel(f"east ({unit})")
    ax.set_ylabel(f"north ({unit})")
    ax.grid(alpha=0.3)
    x_lo, x_hi = ax.get_xlim()
    y_lo, y_hi = ax.get_ylim()
    marks = _at_the_edge(ax, far, k, unit) if far else []
    points = np.vstack([_plan_points(plan, k, beyond), np.asarray(marks, dtype=float).reshape(-1, 2)])
    fx, fy = _north_corner(points, (x_lo, x_hi), (y_lo, y_hi))
    ax.annotate(
        "N",
        xy=(fx, fy + 0.12 * (y_hi - y_lo)),
        xytext=(fx, fy),
        ha="center",
        fontsize=12,
        fontweight="bold",
        arrowprops={"arrowstyle": "->", "lw": 2},
    )
    ax.set_title(
        f"{title}\n(marker on a wire: its feed point; arrowheads: the bearing each antenna favours, one per state "
        "of a\nswitched antenna, two opposite on a figure-eight; no arrowhead: no favoured bearing)",
        fontsize=10,
        y=1.0,
    )
    entries = len(ax.get_legend_handles_labels()[1])
    ncols = 2 if entries <= PLAN_LEGEND_TWO_COLUMNS else 4  # a site of many antennas: a wider legend, fewer rows
    below = -0.08  # the legend's top under the plot, as a share of its height
    if own:  # below the plot: its axis label, then the legend's rows; the figure grows so the plot keeps its size
        bottom = 0.9 + 0.2 * (-(-entries // ncols))
        w, h = fig.get_size_inches()
        if h < 0.6 + bottom + PLAN_MIN_HEIGHT_IN:
            h = 0.6 + bottom + PLAN_MIN_HEIGHT_IN
            fig.set_size_inches(w, h)
        _place(fig, left=0.9, right=0.3, top=0.6, bottom=bottom)
        below = min(below, -0.5 / (h - 0.6 - bottom))  # at least half an inch: clear of the axis label
    ax.legend(fontsize=8, loc="upper left", bbox_to_anchor=(0, below), ncols=ncols, frameon=False)
    return fig


PLAN_LEGEND_TWO_COLUMNS = 24
"""A site plan's legend takes two columns up to this many entries, four beyond."""
PLAN_MIN_HEIGHT_IN = 4.0
"""The least height [in] a site plan's drawing keeps above its legend (the figure grows with a long legend: 65
entries once left the plot no room, and matplotlib refused the layout)."""


FAVOURED_ARROW_PT = 24.0
"""Length [pt] of the arrow that shows the bearing a compact antenna, an array or a combination favours."""


def _favoured_arrows(ax, entry: dict, look, k: float) -> None:
    """An arrow in the antenna's colour from where it stands toward each bearing it favours (``entry["bearings"]``
    of :func:`snrgain.outputs.siteplan.plan_of`; one heard both ways: toward the opposite bearing too): from a
    compact antenna's marker, a combination's unit, an array's front along that bearing (from its centre where its
    elements stand across it).  A wire carries its own arrow along it."""
    parts = [p for p in entry["parts"] if p["kind"] in ("point", "elements", "unit")]
    bearings = list(entry.get("bearings") or [])
    if not parts or not bearings or any(p["kind"] == "wire" for p in entry["parts"]):
        return
    part = parts[0]
    pts = np.asarray(part["coords"], dtype=float) * k
    centre = np.mean(pts, axis=0)
    if entry.get("both_ways"):
        bearings += [(b + 180.0) % 360.0 for b in bearings]
    for b in bearings:
        r = np.radians(b)
        u = np.array([np.sin(r), np.cos(r)])
        # from the array's front (its elements' farthest reach along the bearing), beyond its elements
        front = float(np.max((pts - centre) @ u))
        x, y = centre + front * u
        shrink = 6.0 if part["kind"] == "point" or front > 1e-9 else 5.5 if part["kind"] == "unit" else 0.0
        ax.annotate(
            "",
            xy=(x, y),
            xytext=(FAVOURED_ARROW_PT * np.sin(r), FAVOURED_ARROW_PT * np.cos(r)),  # the plan's aspect is equal
            textcoords="offset points",
            arrowprops={
                "arrowstyle": "<|-",  # the head at the far end
                "color": look.color,
                "lw": 1.8,
                "mutation_scale": 14,
                "shrinkA": 0.0,
                "shrinkB": shrink,
            },
            zorder=5,
        )


EDGE_BAND = 0.12
"""The band [fraction of the plan's width or height] added to the plan's side toward a source beyond it, where the
source is marked."""


def _at_the_edge(ax, far: list[dict], k: float, unit: str) -> list[tuple[float, float]]:
    """Mark each source beyond the plan (:func:`snrgain.outputs.siteplan.beyond_plan`) in a band added to the plan's
    side toward it, on the line from the site's middle toward it, with an arrow out to the frame and its name,
    distance and bearing; the plan's extent is otherwise the site's (its limits are fixed here).  Returns the marks'
    places."""
    view = [*ax.get_xlim(), *ax.get_ylim()]  # x_lo, x_hi, y_lo, y_hi
    span = (view[1] - view[0], view[3] - view[2])

    def along(cx, cy, ux, uy, box):  # where the line from (cx, cy) along (ux, uy) leaves box, and by which side
        x_lo, x_hi, y_lo, y_hi = box
        ts = []
        if ux:
            ts.append((((x_hi if ux > 0 else x_lo) - cx) / ux, 1 if ux > 0 else 0))
        if uy:
            ts.append((((y_hi if uy > 0 else y_lo) - cy) / uy, 3 if uy > 0 else 2))
        t, side = min(ts)
        return (cx + max(t, 0.0) * ux, cy + max(t, 0.0) * uy), side

    rays = []
    for f in far:
        r = np.radians(f["bearing_deg"])
        rays.append((f, f["from"][0] * k, f["from"][1] * k, float(np.sin(r)), float(np.cos(r))))
    sides = {along(cx, cy, ux, uy, view)[1] for _, cx, cy, ux, uy in rays}
    outer, middle = list(view), list(view)
    for side in sides:  # the band on each side a source lies beyond
        out = 1.0 if side % 2 else -1.0
        outer[side] += out * EDGE_BAND * span[side // 2]
        middle[side] += out * 0.45 * EDGE_BAND * span[side // 2]
    ax.set_xlim(outer[0], outer[1])  # fixed: nothing drawn after widens the plan
    ax.set_ylim(outer[2], outer[3])
    frame = [outer[0] + 0.005 * span[0], outer[1] - 0.005 * span[0], outer[2] + 0.005 * span[1]]
    frame.append(outer[3] - 0.005 * span[1])
    marks = []
    for f, cx, cy, ux, uy in rays:
        (mx, my), _ = along(cx, cy, ux, uy, middle)
        said = f"{f['name']}, {f['distance_m'] * k:.0f} {unit} at {f['bearing_deg']:.0f} deg"
        ax.plot(
            [mx], [my], ls="none", label=f"noise source beyond the plan: {said} from the site's middle", zorder=6,
            **SOURCE_MARKER,
        )  # fmt: skip
        ax.annotate(
            "",
            xy=along(cx, cy, ux, uy, frame)[0],
            xytext=(mx, my),
            arrowprops={"arrowstyle": "-|>", "color": "black", "lw": 1.5, "mutation_scale": 14, "shrinkA": 6.0},
            zorder=6,
        )
        ax.annotate(  # beside the mark, toward the plan's inside
            said,
            (mx, my),
            xytext=(-10.0 * ux, -10.0 * uy),
            textcoords="offset points",
            ha="right" if ux > 0.3 else "left" if ux < -0.3 else "center",
            va="top" if uy > 0.3 else "bottom" if uy < -0.3 else "center",
            fontsize=8,
            zorder=6,
        )
        marks.append((mx, my))
    return marks


def _plan_points(plan: dict, k: float, beyond=()) -> np.ndarray:
    """Every point a plan draws (antennas, wires every few metres, sources but those ``beyond`` it, keep-outs,
    structures, the vertical), scaled by ``k`` to the plan's unit: (n, 2)."""
    pts = [c for a in plan["antennas"] for p in a["parts"] for c in p["coords"]]
    for a in plan["antennas"]:
        for p in a["parts"]:
            if p["kind"] == "wire":
                (e0, n0), (e1, n1) = p["coords"][0], p["coords"][-1]
                t = np.linspace(0.0, 1.0, 40)
                pts += list(zip(e0 + t * (e1 - e0), n0 + t * (n1 - n0)))
    pts += [xy for name, xy in plan.get("sources", []) if name not in beyond]
    pts += [c for _, cs in plan.get("keep_out", []) for c in cs] + [foot for _, foot, _ in plan.get("structures", [])]
    pts += [plan["tx"]] if plan.get("tx") is not None else []
    return np.asarray(pts, dtype=float).reshape(-1, 2) * k


def _north_corner(points: np.ndarray, xlim, ylim) -> tuple[float, float]:
    """Where the north arrow goes: (x, y of the "N" under its tail) in the corner of the axes (top right first, then
    top left, bottom right, bottom left) whose arrow box holds the fewest drawn ``points`` (a flag in the top right
    corner kept the arrow off it); the arrow runs from y up 12 % of the height."""
    (x_lo, x_hi), (y_lo, y_hi) = xlim, ylim
    w, h = x_hi - x_lo, y_hi - y_lo
    best = None
    for right, top in ((True, True), (False, True), (True, False), (False, False)):
        x = x_hi - 0.06 * w if right else x_lo + 0.06 * w
        y = y_hi - 0.16 * h if top else y_lo + 0.08 * h
        box = (np.abs(points[:, 0] - x) < 0.05 * w) & (points[:, 1] > y - 0.05 * h) & (points[:, 1] < y + 0.17 * h)
        n = int(np.count_nonzero(box))
        if best is None or n < best[0]:
            best = (n, x, y)
    return best[1], best[2]


def located_sources(res, *, ax=None):
    """Polar plot of the directions ``snrgain locate`` fitted (a LocateResult), with their uncertainty."""
    own = ax is None
    fig, (ax,) = _axes(ax, polar=True, figsize=(6.0, 6.0))
    ax.set_theta_zero_location("N")
    ax.set_theta_direction(-1)
    ax.set_rlim(0, 1.05)
    ax.set_yticklabels([])
    for i, s in enumerate(res.sources):
        th = np.radians(s.bearing_deg)
        sig = np.radians(min(s.bearing_sigma_deg, 90))
        ax.fill_between(
            np.linspace(th - sig, th + sig, 30),
            0,
            1,
            alpha=0.25,
            color=f"C{i}",
            label=f"source {i + 1}: {s.bearing_deg:.0f} +- {s.bearing_sigma_deg:.0f} deg",
        )
        ax.plot([th, th], [0, 1], color=f"C{i}", lw=2.5)
        if s.ambiguous_180:
            ax.plot([th + np.pi, th + np.pi], [0, 1], color=f"C{i}", lw=1.5, ls="--", label="180 deg ambiguity")
    bg = f"Fa {res.background_fa_db:.0f} dB" if getattr(res, "background_determined", True) else "not determined"
    ax.set_title(
        ("Fitted noise direction" if res.ok else "Fit failed: direction not constrained")
        + f"\n(background {bg}, residual {res.residual_rms_db:.1f} dB)",
        pad=18,
    )
    ax.legend(loc="lower left", bbox_to_anchor=(-0.1, -0.15), fontsize=9)
    if own:
        fig.tight_layout()
    return fig


def for_drawing(results):
    """The results with only what the figures of the command line draw (:data:`FIGURES` and the report's): the noise
    sky's components at the moment :func:`noise_sky` shows (:func:`sky_moment`), not at every month and hour (the
    sky maps are nearly all of a Results' bytes: the realistic site's 6.0 MB pickled, 0.5 MB so).  Everything else
    is the results' own.  Sent to the figures' process (:class:`snrgain.outputs.drawing.Drawer`), which needs no
    more; the sky at another moment needs the whole results."""
    from dataclasses import replace

    noise = getattr(results, "noise", None)
    if not hasattr(results, "candidates") or noise is None or not noise.maps:  # (a labelled Dataset as it is)
        return results
    moment = sky_moment(results)
    return replace(results, noise=replace(noise, maps={moment: noise.maps[moment]} if moment in noise.maps else {}))


def drawn_alike(early, results) -> bool:
    """Whether the figures that can be drawn from ``early`` (a Preview of the results,
    :func:`snrgain.decide.decisions.preview`, or what :func:`for_drawing` made of it: the patterns from its cuts,
    the noise sky from its sky) are those ``results`` give: the same site, frequency, months and hours, targets and
    placed sources, the same antennas (names, families, order), and the same pattern cuts and noise sky at
    :func:`sky_moment` where the preview has them (the very arrays, or equal ones).  What the figures read of the
    results, and nothing else."""
    if (
        early.site != results.site
        or early.freq_hz != results.freq_hz
        or early.months != results.months
        or early.utc_hours != results.utc_hours
        or early.targets != results.targets
        or early.local_sources != results.local_sources
        or [(a.name, a.family) for a in early.antennas] != [(a.name, a.family) for a in results.antennas]
    ):
        return False
    if early.cuts is not None and early.cuts is not results.cuts:
        a, b = early.cuts, results.cuts
        if b is None or not (
            np.array_equal(a.azimuth_deg, b.azimuth_deg)
            and np.array_equal(a.elevation_deg, b.elevation_deg)
            and all(
                x.keys() == y.keys() and all(np.array_equal(x[k], y[k], equal_nan=True) for k in x)
                for x, y in ((a.azimuth, b.azimuth), (a.elevation, b.elevation))
            )
        ):
            return False
    if early.noise is not None and early.noise.maps:
        moment = sky_moment(results)
        maps = results.noise.maps if results.noise is not None else None
        if not maps or moment not in maps or early.noise.maps.get(moment) is not maps[moment]:
            return False  # another sky (the very components are compared: they are the pipeline's own)
    return True


FIGURES = {
    "azimuth": azimuth_pattern,
    "elevation": elevation_pattern,
    "sky": noise_sky,
    "hours": snr_over_hours,
    "ranking": ranking_chart,
    "plan": site_plan,
}
"""Figure functions by short name (for the command line)."""

FIGURE_COST = {"hours": 2.0, "sky": 2.5, "ranking": 2.4, "azimuth": 1.2, "plan": 1.2, "elevation": 1.0}
"""Rough relative drawing time of each figure by short name (measured on benchmarks/realistic-site.toml): the
command line hands the heaviest to its workers first (:func:`snrgain.outputs.drawing.draw_all`)."""


SAVE_OPTIONS = {"dpi": 110, "bbox_inches": "tight", "pil_kwargs": {"compress_level": 3}}
"""savefig's keywords for the figure files (PNG resolution; the bounding box that holds outside legends; zlib level
3 instead of 6: the same pixels, written in half the time, files 8 % larger than at 6).  SVG ignores the PNG
keywords.  The command line's PNG files are written by :func:`snrgain.outputs.drawing.png_bytes` at that level."""


def save(fig, path, *, overwrite: bool = False, dpi: int = SAVE_OPTIONS["dpi"]) -> Path:
    """Write a figure to PNG or SVG (by the suffix), whole or not at all; never replace without ``overwrite``."""
    from snrgain.files import write_atomic

    p = Path(path)
    fmt = p.suffix.lower().lstrip(".")
    if fmt not in ("png", "svg"):
        raise ValueError(f"{p}: figures are written as .png or .svg")
    from snrgain.outputs.drawing import save_figure

    opts = {**SAVE_OPTIONS, "dpi": dpi}
    return write_atomic(p, lambda tmp: save_figure(fig, tmp, fmt, **opts), overwrite=overwrite)
