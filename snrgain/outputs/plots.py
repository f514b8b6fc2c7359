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
- :func:`noise_sky`: brightness over azimuth and elevation, per component and total;
- :func:`snr_over_hours`: SNR gain against UTC hour, with the band of P.372 deciles (from the labelled results);
- :func:`ranking_chart`: SNR gain bars with RDF and external-noise margin beside them;
- :func:`site_plan`: the lot and the antennas drawn to scale (when the scenario gives them);
- :func:`located_sources`: the directions ``snrgain locate`` fitted.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

import numpy as np
from matplotlib import colormaps
from matplotlib.figure import Figure

from snrgain.model.labelled import QUANTILES

REFERENCE_STYLE = {"color": "0.35", "ls": "--", "lw": 1.6}
FLOOR_SPAN_DB = 40.0
"""Polar plots show this many dB below the strongest trace."""


def _colors(n):
    cmap = colormaps["tab10"]
    return [cmap(i % 10) for i in range(n)]


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
    (n panels in a column, or in a row with ``columns``)."""
    if ax is None:
        fig = Figure(figsize=figsize)
        if polar:
            return fig, [fig.add_subplot(projection="polar")]
        shape = (1, n) if columns else (n, 1)
        grid = fig.subplots(
            *shape,
            squeeze=False,
            sharex=sharex,
            sharey=sharey,
            gridspec_kw={"width_ratios": width_ratios} if width_ratios else None,
        )
        return fig, list(grid.ravel())
    axes = list(ax) if isinstance(ax, (Sequence, np.ndarray)) else [ax]
    if len(axes) != n:
        raise ValueError(f"ax: this figure draws {n} panel(s); got {len(axes)} axes")
    if polar and axes[0].name != "polar":
        raise ValueError("ax: this figure needs polar axes (projection='polar')")
    return axes[0].figure, axes


def azimuth_pattern(results, *, target_index: int = 0, ax=None):
    """Polar azimuth pattern of every antenna at the target's mean elevation (dBi, floored); ``ax`` polar."""
    own = ax is None
    fd = results.cuts
    tgt = results.targets[target_index]
    el = 0.5 * (tgt["elevation_min_deg"] + tgt["elevation_max_deg"])
    fig, (ax,) = _axes(ax, polar=True, figsize=(7.5, 7.0))
    ax.set_theta_zero_location("N")
    ax.set_theta_direction(-1)
    cuts = {a.name: fd.azimuth[a.name][target_index] for a in _antennas(results)}
    top = max(np.nanmax(np.where(np.isfinite(c), c, -np.inf)) for c in cuts.values())
    floor = np.ceil(top) - FLOOR_SPAN_DB
    theta = np.radians(fd.azimuth_deg)
    for a, col in zip(_antennas(results), _colors(len(_antennas(results)))):
        r = np.clip(np.nan_to_num(cuts[a.name], neginf=floor), floor, None) - floor
        style = REFERENCE_STYLE if a is results.reference else {"color": col, "lw": 1.8}
        ax.plot(theta, r, label=_label(a, results), **style)
    ax.set_rlim(0, FLOOR_SPAN_DB + 2)
    ticks = np.arange(0, FLOOR_SPAN_DB + 1, 10)
    ax.set_rticks(ticks)
    ax.set_yticklabels([f"{floor + t:.0f}" for t in ticks], fontsize=8)
    ax.set_rlabel_position(135)
    for i, t in enumerate(results.targets):
        ax.annotate(
            "",
            xy=(np.radians(t["bearing_deg"]), FLOOR_SPAN_DB + 2),
            xytext=(0, 0),
            arrowprops={"arrowstyle": "->", "color": "black" if i == target_index else "0.6", "lw": 1.2},
        )
        ax.text(
            np.radians(t["bearing_deg"]),
            FLOOR_SPAN_DB + 6,
            t["name"],
            ha="center",
            va="center",
            fontsize=9,
            fontweight="bold" if i == target_index else "normal",
        )
    for s in results.local_sources:
        ax.plot(
            [np.radians(s["bearing_deg"])],
            [FLOOR_SPAN_DB],
            marker="X",
            ms=11,
            color="crimson",
            ls="none",
            label=f"noise: {s['name']}",
        )
    ax.set_title(
        f"Azimuth pattern at {el:.0f} deg elevation (gain, dBi; toward '{tgt['name']}')\n"
        f"{results.site['name']}, {results.freq_hz / 1e6:g} MHz",
        pad=28,
    )
    ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=8, frameon=False)
    if own:
        fig.tight_layout()
    return fig


def elevation_pattern(results, *, target_index: int = 0, ax=None):
    """Gain [dBi] against elevation toward the target's bearing, target elevations shaded."""
    own = ax is None
    fd = results.cuts
    tgt = results.targets[target_index]
    fig, (ax,) = _axes(ax, figsize=(8.0, 4.8))
    ax.axvspan(
        tgt["elevation_min_deg"],
        max(tgt["elevation_max_deg"], tgt["elevation_min_deg"] + 0.5),
        color="gold",
        alpha=0.3,
        label=f"arrivals from '{tgt['name']}'",
    )
    lows = []
    for a, col in zip(_antennas(results), _colors(len(_antennas(results)))):
        g = fd.elevation[a.name][target_index]
        style = REFERENCE_STYLE if a is results.reference else {"color": col, "lw": 1.8}
        ax.plot(fd.elevation_deg, g, label=_label(a, results), **style)
        finite = g[np.isfinite(g)]
        if finite.size:
            lows.append(finite.max())
    top = max(lows) if lows else 0.0
    ax.set_ylim(np.floor(top) - FLOOR_SPAN_DB, np.ceil(top) + 3)
    ax.set_xlim(0, 90)
    ax.set_xlabel("elevation (deg above the horizon)")
    ax.set_ylabel("total gain (dBi)")
    ax.set_title(
        f"Elevation pattern toward {tgt['bearing_deg']:.0f} deg ('{tgt['name']}'), {results.freq_hz / 1e6:g} MHz"
    )
    ax.grid(alpha=0.3)
    ax.legend(fontsize=8, loc="lower right", ncols=2)
    if own:
        fig.tight_layout()
    return fig


def _sky_grid(comp, az_edges, el_edges):
    """Brightness temperature [K] of a diffuse component on a regular az/el grid (nearest pixel)."""
    import healpy as hp

    from noisemodels.sphere import to_healpy_angles

    d = comp.directions
    az_c = 0.5 * (az_edges[1:] + az_edges[:-1])
    el_c = 0.5 * (el_edges[1:] + el_edges[:-1])
    A, E = np.meshgrid(np.radians(az_c), np.radians(el_c))
    pix = hp.ang2pix(d.nside, *to_healpy_angles(A.ravel(), E.ravel()))
    full = np.zeros(hp.nside2npix(d.nside))
    up = hp.ang2pix(d.nside, *to_healpy_angles(d.azimuth_rad, d.elevation_rad))
    full[up] = comp.weight_k_sr / d.solid_angle_sr
    return full[pix].reshape(A.shape)


def noise_sky(results, *, month_index: int = 0, hour_index: int = 0, total_only: bool = False, ax=None):
    """Brightness of each diffuse noise component and of their total over azimuth and elevation.

    ``ax``: one Axes with ``total_only``, else a sequence of one Axes per diffuse component plus one.
    """
    own = ax is None
    if results.noise.maps is None:
        raise ValueError("these results carry no sky maps")
    comps = results.noise.maps[(month_index, hour_index)]
    diffuse = [c for c in comps if c.directions.nside is not None]
    compact = [c for c in comps if c.directions.nside is None]
    az_edges = np.arange(0, 361, 2.0)
    el_edges = np.arange(0, 91, 1.5)
    maps = [(c.name, _sky_grid(c, az_edges, el_edges)) for c in diffuse]
    total = sum(m for _, m in maps) if maps else np.zeros((el_edges.size - 1, az_edges.size - 1))
    panels = (
        [("total of the diffuse components", total)]
        if total_only
        else [*maps, ("total of the diffuse components", total)]
    )
    n = len(panels)
    fig, axes = _axes(ax, n=n, figsize=(9.0, 2.3 * n + 1.0), sharex=True)
    positive = [m[m > 0] for _, m in panels if np.any(m > 0)]
    vmax = 10 * np.log10(max(p.max() for p in positive)) if positive else 1.0
    vmin = vmax - 40
    mesh = None
    for ax, (name, m) in zip(axes, panels):
        with np.errstate(divide="ignore"):
            db = 10 * np.log10(m)
        if np.any(m > 0):
            mesh = ax.pcolormesh(
                az_edges, el_edges, db, vmin=vmin, vmax=vmax, cmap="magma", shading="flat", rasterized=True
            )
        else:
            ax.set_facecolor("0.9")
            ax.text(180, 45, "none reaches the ground (screened by the ionosphere)", ha="center", va="center")
        ax.set_ylabel("elevation (deg)")
        ax.set_title(name, fontsize=10, loc="left")
        for t in results.targets:
            ax.plot([t["bearing_deg"]] * 2, [t["elevation_min_deg"], t["elevation_max_deg"]], color="cyan", lw=3)
            ax.text(t["bearing_deg"] + 2, t["elevation_max_deg"] + 2, t["name"], color="cyan", fontsize=8)
        for c in compact:
            az = np.degrees(np.average(c.directions.azimuth_rad, weights=c.weight_k_sr))
            el = np.degrees(np.average(c.directions.elevation_rad, weights=c.weight_k_sr))
            ax.plot([az], [el], marker="X", color="lime", ms=10, ls="none")
            ax.text(az + 2, el + 3, c.name, color="lime", fontsize=8)
        ax.set_ylim(0, 90)
    axes[-1].set_xlabel("azimuth (compass bearing, deg)")
    axes[-1].set_xticks(np.arange(0, 361, 45))
    month = results.months[month_index]
    hour = results.utc_hours[hour_index]
    title = (
        f"Noise sky at {results.site['name']}, month {month}, {hour:g} UTC, {results.freq_hz / 1e6:g} MHz\n"
        "(brightness temperature; crosses: local sources, cyan: targets)"
    )
    if own:
        fig.suptitle(title, fontsize=11)
        fig.tight_layout(rect=(0, 0, 0.9, 1))
        if mesh is not None:
            fig.colorbar(mesh, cax=fig.add_axes((0.91, 0.15, 0.02, 0.7)), label="dB above 1 K")
    else:
        axes[0].set_title(title, fontsize=9)
        if mesh is not None:
            fig.colorbar(mesh, ax=axes, label="dB above 1 K")
    return fig


def _with_gaps(hours, values):
    """Hours and values sorted by hour, with NaN put where listed hours lie more than 1.5 times their usual
    (median) step apart, so that no line crosses hours nobody listens at."""
    h = np.asarray(hours, dtype=float)
    v = np.asarray(values, dtype=float)
    order = np.argsort(h)
    h, v = h[order], v[order]
    keep = np.isfinite(v)
    h, v = h[keep], v[keep]
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


def snr_over_hours(results, *, ax=None):
    """SNR gain over the reference against UTC hour, one panel per target (mean over its months), with the band of
    atmospheric noise at its P.372 deciles; gaps where the target is not listened for.

    The numbers are read from the labelled results (:meth:`Results.to_xarray`: ``snr_gain_db`` and
    ``snr_gain_atmospheric_deciles_db`` by antenna, target, month and UTC hour); ``results`` may be that Dataset
    itself.  ``ax``: a sequence of one Axes per target.
    """
    own = ax is None
    ds = results.to_xarray() if hasattr(results, "to_xarray") else results
    nt = ds.sizes["target"]
    fig, axes = _axes(ax, n=nt, figsize=(8.5, 3.2 * nt + 1.0), sharex=True)
    hours = ds["utc_hour"].values
    atm = False
    candidates = [k for k, ref in enumerate(ds["is_reference"].values) if not ref]
    colors = _colors(len(candidates))
    for i, axi in enumerate(axes):
        for k, col in zip(candidates, colors):
            gain = ds["snr_gain_db"].isel(antenna=k, target=i)
            if not np.any(np.isfinite(gain.values)):
                continue
            h, v = _with_gaps(hours, gain.mean("month").values)
            axi.plot(h, v, marker="o", ms=4, color=col, label=str(ds["antenna"].values[k]))
            band = ds["snr_gain_atmospheric_deciles_db"].isel(antenna=k, target=i).mean("month")
            if np.any(np.isfinite(band.values)):
                atm = True
                h1, v_hi = _with_gaps(hours, band.sel(atmospheric_decile="upper").values)
                _, v_lo = _with_gaps(hours, band.sel(atmospheric_decile="lower").values)
                axi.fill_between(h1, np.fmin(v_hi, v_lo), np.fmax(v_hi, v_lo), color=col, alpha=0.15)
        axi.axhline(0.0, **REFERENCE_STYLE, label=f"{ds.attrs['reference']} (reference)")
        axi.set_ylabel("SNR gain (dB)")
        axi.set_title(f"toward {ds['target'].values[i]}", fontsize=10, loc="left")
        axi.grid(alpha=0.3)
    axes[0].legend(fontsize=8, ncols=2)
    axes[-1].set_xlabel("UTC hour")
    axes[-1].set_xticks(np.arange(0, 25, 2))
    axes[-1].set_xlim(-0.5, 24)
    band = "; bands: atmospheric noise at its P.372 upper and lower deciles" if atm else ""
    title = f"SNR gain over the reference through the hours, {ds.attrs['frequency_hz'] / 1e6:g} MHz{band}"
    if own:
        fig.suptitle(title, fontsize=10)
        fig.tight_layout()
    return fig


def ranking_chart(results, *, ax=None):
    """Per target, each candidate's median SNR gain with its 10-90 % band; RDF per target; the worst-hour margin.

    The numbers are read from the labelled results (:meth:`Results.to_xarray`: ``snr_gain_quantile_db``,
    ``rdf_db``, ``best``, ``margin_db``); ``results`` may be that Dataset itself.  ``ax``: a sequence of three Axes
    (SNR gain, RDF, margin).
    """
    own = ax is None
    ds = results.to_xarray() if hasattr(results, "to_xarray") else results
    cands = ds.isel(antenna=np.flatnonzero(~ds["is_reference"].values)[::-1])  # the first candidate at the top
    names = [str(n) for n in cands["antenna"].values]
    quantiles = cands["snr_gain_quantile_db"]
    targets = [str(t) for t in ds["target"].values]
    nt = len(targets)
    y = np.arange(len(names))
    h = 0.8 / nt
    fig, axes = _axes(
        ax,
        n=3,
        columns=True,
        figsize=(12, 0.6 * len(names) * max(1, nt / 1.5) + 2.0),
        sharey=True,
        width_ratios=[2, 1.2, 1],
    )
    tcol = _colors(nt)
    for ti, t in enumerate(targets):
        off = (ti - (nt - 1) / 2) * h
        lo, med, hi = (quantiles.isel(target=ti).sel(quantile=q).values for q in QUANTILES)
        axes[0].barh(y + off, med, height=h, color=tcol[ti], label=t, alpha=0.85)
        axes[0].errorbar(med, y + off, xerr=[med - lo, hi - med], fmt="none", ecolor="black", elinewidth=1, capsize=2)
        axes[1].barh(y + off, cands["rdf_db"].isel(target=ti).values, height=h, color=tcol[ti])
        for yi, v, top in zip(y + off, med, hi):
            axes[0].text(max(top, 0), yi, f"  {v:+.1f}", va="center", fontsize=7)
        k = names.index(str(ds["best"].values[ti]))
        axes[0].plot(
            [med[k]],
            [y[k] + off],
            marker="*",
            color="gold",
            ms=12,
            markeredgecolor="black",
            ls="none",
            label="best" if ti == 0 else None,
        )
    axes[0].axvline(0, color="0.3", lw=1)
    axes[0].set_yticks(y, names)
    axes[0].set_xlabel("SNR gain over the reference (dB): median, bar 10-90 %")
    axes[0].set_title("SNR gain per target", fontsize=10)
    axes[0].legend(fontsize=8, loc="best")
    axes[1].axvline(0, color="0.3", lw=1)
    axes[1].set_xlabel("RDF (dB)")
    axes[1].set_title("RDF per target", fontsize=10)
    target = ds.attrs["margin_target_db"]
    margin = cands["margin_db"].min(("month", "utc_hour")).values
    axes[2].barh(y, margin, height=0.6, color=["darkorange" if m < target else "slategray" for m in margin])
    axes[2].axvline(target, color="crimson", ls=":", label=f"target {target:g} dB")
    for yi, v in zip(y, margin):
        axes[2].text(v, yi, f" {v:.1f}", va="center", fontsize=8)
    axes[2].set_xlabel("margin over the chain's floor (dB)")
    axes[2].set_title("External-noise margin (worst hour)", fontsize=10)
    axes[2].legend(fontsize=8, loc="lower right")
    for ax in axes:
        ax.grid(axis="x", alpha=0.3)
    at = ds.attrs
    title = f"Ranking at {at['site']}, {at['frequency_hz'] / 1e6:g} MHz (reference: {at['reference']})"
    if own:
        fig.suptitle(title, fontsize=11)
        fig.tight_layout()
    return fig


def has_site_plan(results) -> bool:
    """Whether the results give a lot outline or antenna positions to draw."""
    return bool(results.lot_m or any("position_m" in a.parameters for a in _antennas(results)))


def site_plan(results, *, ax=None):
    """The lot outline and each antenna to scale: wires from their feed point along their bearing."""
    if not has_site_plan(results):
        raise ValueError("the scenario gives no lot outline ([site] lot) and no antenna positions (position = [e, n])")
    own = ax is None
    fig, (ax,) = _axes(ax, figsize=(7.5, 7.5))
    lot = results.lot_m
    if lot:
        xs, ys = zip(*(list(lot) + [lot[0]]))
        ax.fill(xs, ys, color="honeydew", ec="darkgreen", lw=1.5, label="lot")
    for a, col in zip(_antennas(results), _colors(len(_antennas(results)))):
        p = a.parameters.get("position_m")
        if p is None:
            continue
        x0, y0 = p
        length = a.parameters.get("length_m")
        bearing = a.parameters.get("bearing_deg")
        if length is not None and bearing is not None:
            b = np.radians(bearing)
            x1, y1 = x0 + length * np.sin(b), y0 + length * np.cos(b)
            ax.plot([x0, x1], [y0, y1], color=col, lw=2.5, label=f"{a.name} ({length:.0f} m toward {bearing:.0f} deg)")
            ax.plot([x0], [y0], marker="s", color=col, ms=7)
        else:
            ax.plot([x0], [y0], marker="^", color=col, ms=10, ls="none", label=a.name)
    ax.set_aspect("equal")
    ax.set_xlabel("east (m)")
    ax.set_ylabel("north (m)")
    ax.grid(alpha=0.3)
    x_lo, x_hi = ax.get_xlim()
    y_lo, y_hi = ax.get_ylim()
    ax.annotate(
        "N",
        xy=(x_hi - 0.06 * (x_hi - x_lo), y_hi - 0.04 * (y_hi - y_lo)),
        xytext=(x_hi - 0.06 * (x_hi - x_lo), y_hi - 0.16 * (y_hi - y_lo)),
        ha="center",
        fontsize=12,
        fontweight="bold",
        arrowprops={"arrowstyle": "->", "lw": 2},
    )
    ax.set_title(f"Site plan, {results.site['name']} (squares: feed points)")
    ax.legend(fontsize=8, loc="upper left", bbox_to_anchor=(0, -0.1), ncols=1, frameon=False)
    if own:
        fig.tight_layout()
    return fig


def layout_plan(plan: dict, *, ax=None):
    """A layout on the lot: the outline, keep-out areas, the transmitting vertical with its clearance circle,
    placed noise sources, the other antennas, and each placed antenna from its feed point with an arrow along its
    bearing.  ``plan`` is :func:`snrgain.tools.layout.plan_data`."""
    from matplotlib.patches import Circle

    own = ax is None
    fig, (ax,) = _axes(ax, figsize=(7.5, 7.5))
    xs, ys = zip(*(list(plan["lot"]) + [plan["lot"][0]]))
    ax.fill(xs, ys, color="honeydew", ec="darkgreen", lw=1.5, label="lot")
    for i, (name, pts) in enumerate(plan["keep_out"]):
        kx, ky = zip(*(list(pts) + [pts[0]]))
        ax.fill(kx, ky, color="lightgrey", ec="dimgrey", hatch="//", lw=1, label="keep out" if i == 0 else None)
        ax.annotate(name, (float(np.mean(kx[:-1])), float(np.mean(ky[:-1]))), ha="center", va="center", fontsize=8)
    if plan.get("tx") is not None:
        ax.plot(*plan["tx"], marker="*", color="black", ms=14, ls="none", label="transmitting vertical")
        ax.add_patch(Circle(plan["tx"], plan["clearance_m"], fill=False, ls=":", color="black", lw=1))
    for name, (e, n) in plan["sources"]:
        ax.plot([e], [n], marker="X", color="crimson", ms=11, ls="none", label=f"noise: {name}")
    for name, coords in plan["fixed"]:
        cx, cy = zip(*coords)
        ax.plot(cx, cy, color="grey", lw=1.5, marker="s" if len(coords) > 1 else "^", ms=5, label=f"{name} (fixed)")
    for c, col in zip(plan["layout"]["candidates"], _colors(len(plan["layout"]["candidates"]))):
        e, n = c["position_m"]
        b = None if c["bearing_deg"] is None else np.radians(c["bearing_deg"])
        length = c["length_m"] or 0.0
        label = f"{c['name']}: {c['snr_gain_db']:+.1f} dB toward {c['target']}"
        if length and b is not None:
            x1, y1 = e + length * np.sin(b), n + length * np.cos(b)
            ax.plot([e, x1], [n, y1], color=col, lw=2.5, label=label)
            ax.plot([e], [n], marker="s", color=col, ms=7)
        else:
            ax.plot([e], [n], marker="^", color=col, ms=10, ls="none", label=label)
        if b is None:
            continue
        mid, arrow = 0.5 * length, 12.0  # a direction mark on the wire (or from a compact antenna)
        ax.annotate(
            "",
            xy=(e + (mid + arrow) * np.sin(b), n + (mid + arrow) * np.cos(b)),
            xytext=(e + mid * np.sin(b), n + mid * np.cos(b)),
            arrowprops={"arrowstyle": "-|>", "color": col, "lw": 2, "mutation_scale": 18},
        )
    ax.set_aspect("equal")
    ax.set_xlabel("east (m)")
    ax.set_ylabel("north (m)")
    ax.grid(alpha=0.3)
    ax.set_title(f"Layout, {plan['site']} (squares: feed points; arrowheads: favoured direction)")
    ax.legend(fontsize=8, loc="upper left", bbox_to_anchor=(0, -0.1), ncols=1, frameon=False)
    if own:
        fig.tight_layout()
    return fig


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
    ax.set_title(
        ("Fitted noise direction" if res.ok else "Fit failed: direction not constrained")
        + f"\n(background Fa {res.background_fa_db:.0f} dB, residual {res.residual_rms_db:.1f} dB)",
        pad=18,
    )
    ax.legend(loc="lower left", bbox_to_anchor=(-0.1, -0.15), fontsize=9)
    if own:
        fig.tight_layout()
    return fig


FIGURES = {
    "azimuth": azimuth_pattern,
    "elevation": elevation_pattern,
    "sky": noise_sky,
    "hours": snr_over_hours,
    "ranking": ranking_chart,
    "plan": site_plan,
}
"""Figure functions by short name (for the command line)."""


def save(fig, path, *, overwrite: bool = False, dpi: int = 110) -> Path:
    """Write a figure to PNG or SVG (by the suffix), whole or not at all; never replace without ``overwrite``."""
    from snrgain.files import write_atomic

    p = Path(path)
    fmt = p.suffix.lower().lstrip(".")
    if fmt not in ("png", "svg"):
        raise ValueError(f"{p}: figures are written as .png or .svg")
    return write_atomic(p, lambda tmp: fig.savefig(tmp, format=fmt, dpi=dpi, bbox_inches="tight"), overwrite=overwrite)
