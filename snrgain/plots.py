"""Figures from a Results object (matplotlib; no computation of physics here).

Every function takes ``Results`` (from :func:`snrgain.evaluate`) and returns a
matplotlib Figure; :func:`save` writes it whole or not at all as PNG or SVG.
The same functions serve the command line and the report.

- :func:`azimuth_pattern`: polar gain at the target's elevation, targets and local sources marked;
- :func:`elevation_pattern`: gain against elevation toward the target's bearing;
- :func:`noise_sky`: brightness over azimuth and elevation, per component and total;
- :func:`snr_over_hours`: SNR gain against UTC hour, with the band of P.372 deciles;
- :func:`ranking_chart`: SNR gain bars with RDF and external-noise margin beside them;
- :func:`site_plan`: the lot and the antennas drawn to scale (when the scenario gives them).
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

from noisemodels.p372 import BOLTZMANN_J_PER_K  # noqa: E402

REFERENCE_STYLE = {"color": "0.35", "ls": "--", "lw": 1.6}
FLOOR_SPAN_DB = 40.0
"""Polar plots show this many dB below the strongest trace."""


def _colors(n):
    cmap = plt.get_cmap("tab10")
    return [cmap(i % 10) for i in range(n)]


def _antennas(results):
    return [results.reference, *results.candidates]


def _label(a, results):
    return f"{a.name} (reference)" if a is results.reference else a.name


def azimuth_pattern(results, *, target_index: int = 0):
    """Polar azimuth pattern of every antenna at the target's mean elevation (dBi, floored)."""
    fd = results.figures
    tgt = results.targets[target_index]
    el = 0.5 * (tgt["elevation_min_deg"] + tgt["elevation_max_deg"])
    fig = plt.figure(figsize=(7.5, 7.0))
    ax = fig.add_subplot(projection="polar")
    ax.set_theta_zero_location("N")
    ax.set_theta_direction(-1)
    cuts = {a.name: fd.azimuth_cuts[a.name][target_index] for a in _antennas(results)}
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
        ax.annotate("", xy=(np.radians(t["bearing_deg"]), FLOOR_SPAN_DB + 2), xytext=(0, 0),
                    arrowprops={"arrowstyle": "->", "color": "black" if i == target_index else "0.6", "lw": 1.2})
        ax.text(np.radians(t["bearing_deg"]), FLOOR_SPAN_DB + 6, t["name"], ha="center", va="center", fontsize=9,
                fontweight="bold" if i == target_index else "normal")
    for s in results.local_sources:
        ax.plot([np.radians(s["bearing_deg"])], [FLOOR_SPAN_DB], marker="X", ms=11, color="crimson", ls="none",
                label=f"noise: {s['name']}")
    ax.set_title(f"Azimuth pattern at {el:.0f} deg elevation (gain, dBi; toward '{tgt['name']}')\n"
                 f"{results.site['name']}, {results.freq_hz / 1e6:g} MHz", pad=28)
    ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=8, frameon=False)
    fig.tight_layout()
    return fig


def elevation_pattern(results, *, target_index: int = 0):
    """Gain [dBi] against elevation toward the target's bearing, target elevations shaded."""
    fd = results.figures
    tgt = results.targets[target_index]
    fig, ax = plt.subplots(figsize=(8.0, 4.8))
    ax.axvspan(tgt["elevation_min_deg"], max(tgt["elevation_max_deg"], tgt["elevation_min_deg"] + 0.5),
               color="gold", alpha=0.3, label=f"arrivals from '{tgt['name']}'")
    lows = []
    for a, col in zip(_antennas(results), _colors(len(_antennas(results)))):
        g = fd.elevation_cuts[a.name][target_index]
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
    ax.set_title(f"Elevation pattern toward {tgt['bearing_deg']:.0f} deg ('{tgt['name']}'), {results.freq_hz / 1e6:g} MHz")
    ax.grid(alpha=0.3)
    ax.legend(fontsize=8, loc="lower right", ncols=2)
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


def noise_sky(results, *, month_index: int = 0, hour_index: int = 0):
    """Brightness of each noise component and of their total over azimuth and elevation."""
    comps = results.figures.sky[(month_index, hour_index)]
    diffuse = [c for c in comps if c.directions.nside is not None]
    compact = [c for c in comps if c.directions.nside is None]
    az_edges = np.arange(0, 361, 2.0)
    el_edges = np.arange(0, 91, 1.5)
    maps = [(c.name, _sky_grid(c, az_edges, el_edges)) for c in diffuse]
    total = sum(m for _, m in maps) if maps else np.zeros((el_edges.size - 1, az_edges.size - 1))
    panels = [*maps, ("total of the diffuse components", total)]
    n = len(panels)
    fig, axes = plt.subplots(n, 1, figsize=(9.0, 2.3 * n + 1.0), sharex=True, squeeze=False)
    axes = axes[:, 0]
    positive = [m[m > 0] for _, m in panels if np.any(m > 0)]
    vmax = 10 * np.log10(max(p.max() for p in positive)) if positive else 1.0
    vmin = vmax - 40
    mesh = None
    for ax, (name, m) in zip(axes, panels):
        with np.errstate(divide="ignore"):
            db = 10 * np.log10(m)
        if np.any(m > 0):
            mesh = ax.pcolormesh(az_edges, el_edges, db, vmin=vmin, vmax=vmax, cmap="magma", shading="flat",
                                 rasterized=True)
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
    fig.suptitle(f"Noise sky at {results.site['name']}, month {month}, {hour:g} UTC, {results.freq_hz / 1e6:g} MHz\n"
                 "(brightness temperature; crosses: local sources, cyan: targets)", fontsize=11)
    fig.tight_layout(rect=(0, 0, 0.9, 1))
    if mesh is not None:
        cax = fig.add_axes((0.91, 0.15, 0.02, 0.7))
        fig.colorbar(mesh, cax=cax, label="dB above 1 K")
    return fig


def _temperature_from_dbm(dbm, results, antenna):
    """Antenna temperature [K] from a power [dBm] delivered through the antenna's chain."""
    g_chain = antenna.chain.get("gain_db", results.receiver.get("chain_gain_db", 0.0))
    return 10 ** ((np.asarray(dbm) - g_chain) / 10) * 1e-3 / (BOLTZMANN_J_PER_K * results.bandwidth_hz)


def _snr_with_atmospheric_scaled(results, a, scale_db):
    """SNR gain [dB] of antenna a, averaged over targets, with atmospheric noise scaled by scale_db (array m,h)."""
    atm = [n for n, c in results.noise.components.items() if c["kind"] == "atmospheric"]

    def noise_t(ant):
        t = 0.0
        for name, dbm in ant.noise_by_component_dbm.items():
            tk = _temperature_from_dbm(dbm, results, ant)
            t = t + (tk * 10 ** (scale_db / 10) if name in atm else tk)
        nf = ant.chain.get("noise_figure_db", results.receiver.get("chain_noise_figure_db"))
        return t + 290.0 * (10 ** (nf / 10) - 1)

    w = np.array([t["weight"] for t in results.targets])
    g_a = 10 ** (np.asarray(a.gain_dbi) / 10)
    g_r = 10 ** (np.asarray(results.reference.gain_dbi) / 10)
    n_a = noise_t(a)
    n_r = noise_t(results.reference)
    per_target = 10 * np.log10((g_a[:, None, None] / n_a) / (g_r[:, None, None] / n_r))
    return np.tensordot(w, per_target, axes=1)


def snr_over_hours(results):
    """SNR gain over the reference against UTC hour (mean over targets and months), with P.372 decile bands."""
    fig, ax = plt.subplots(figsize=(8.5, 4.8))
    hours = np.asarray(results.utc_hours, dtype=float)
    order = np.argsort(hours)
    atm = [c for c in results.noise.components.values() if c["kind"] == "atmospheric"]
    for a, col in zip(results.candidates, _colors(len(results.candidates))):
        w = np.array([t["weight"] for t in results.targets])
        mean = np.tensordot(w, a.snr_gain_db, axes=1).mean(axis=0)
        ax.plot(hours[order], mean[order], marker="o", ms=4, color=col, label=a.name)
        if atm:
            du = atm[0]["du_db"]
            dl = atm[0]["dl_db"]
            hi = _snr_with_atmospheric_scaled(results, a, du).mean(axis=0)
            lo = _snr_with_atmospheric_scaled(results, a, -dl).mean(axis=0)
            ax.fill_between(hours[order], np.minimum(hi, lo)[order], np.maximum(hi, lo)[order], color=col, alpha=0.15)
    ax.axhline(0.0, **REFERENCE_STYLE, label=f"{results.reference.name} (reference)")
    ax.set_xlabel("UTC hour")
    ax.set_ylabel("SNR gain over the reference (dB)")
    band = " (bands: atmospheric noise at its P.372 upper and lower deciles)" if atm else ""
    ax.set_title(f"SNR gain over the hours, {results.freq_hz / 1e6:g} MHz{band}", fontsize=10)
    ax.set_xticks(np.arange(0, 25, 2))
    ax.set_xlim(-0.5, 24)
    ax.grid(alpha=0.3)
    ax.legend(fontsize=8, ncols=2)
    fig.tight_layout()
    return fig


def ranking_chart(results):
    """SNR gain per target (bars, mean over hours) with RDF per target and the worst-hour margin beside them."""
    cands = list(results.candidates)[::-1]
    names = [c.name for c in cands]
    targets = results.targets
    nt = len(targets)
    y = np.arange(len(cands))
    h = 0.8 / nt
    fig, axes = plt.subplots(1, 3, figsize=(12, 0.6 * len(cands) * max(1, nt / 1.5) + 2.0), sharey=True,
                             gridspec_kw={"width_ratios": [2, 1.2, 1]})
    tcol = _colors(nt)
    for ti, t in enumerate(targets):
        off = (ti - (nt - 1) / 2) * h
        snr = [float(c.snr_gain_db[ti].mean()) for c in cands]
        rdf = [float(c.rdf_db[ti]) for c in cands]
        axes[0].barh(y + off, snr, height=h, color=tcol[ti], label=t["name"])
        axes[1].barh(y + off, rdf, height=h, color=tcol[ti])
        for yi, v in zip(y + off, snr):
            axes[0].text(v, yi, f" {v:+.1f}", va="center", fontsize=7)
    summary = [c.summary_snr_gain_db for c in cands]
    axes[0].scatter(summary, y, marker="D", color="black", zorder=3, s=18, label="mean over targets (ranks)")
    axes[0].axvline(0, color="0.3", lw=1)
    axes[0].set_yticks(y, names)
    axes[0].set_xlabel("SNR gain over the reference (dB, mean over hours)")
    axes[0].set_title("SNR gain per target", fontsize=10)
    axes[0].legend(fontsize=8, loc="best")
    axes[1].axvline(0, color="0.3", lw=1)
    axes[1].set_xlabel("RDF (dB)")
    axes[1].set_title("RDF per target", fontsize=10)
    target = results.receiver["margin_target_db"]
    margin = [float(np.min(c.margin_db)) for c in cands]
    axes[2].barh(y, margin, height=0.6, color=["darkorange" if m < target else "slategray" for m in margin])
    axes[2].axvline(target, color="crimson", ls=":", label=f"target {target:g} dB")
    for yi, v in zip(y, margin):
        axes[2].text(v, yi, f" {v:.1f}", va="center", fontsize=8)
    axes[2].set_xlabel("margin over the chain's floor (dB)")
    axes[2].set_title("External-noise margin (worst hour)", fontsize=10)
    axes[2].legend(fontsize=8, loc="lower right")
    for ax in axes:
        ax.grid(axis="x", alpha=0.3)
    fig.suptitle(f"Ranking at {results.site['name']}, {results.freq_hz / 1e6:g} MHz (reference: {results.reference.name})",
                 fontsize=11)
    fig.tight_layout()
    return fig


def has_site_plan(results) -> bool:
    return bool(results.figures and (results.figures.lot_m or any(
        "position_m" in a.parameters for a in _antennas(results))))


def site_plan(results):
    """The lot outline and each antenna to scale: wires from their feed point along their bearing."""
    if not has_site_plan(results):
        raise ValueError("the scenario gives no lot outline ([site] lot) and no antenna positions (position = [e, n])")
    fig, ax = plt.subplots(figsize=(7.5, 7.5))
    lot = results.figures.lot_m
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
    ax.annotate("N", xy=(x_hi - 0.06 * (x_hi - x_lo), y_hi - 0.04 * (y_hi - y_lo)),
                xytext=(x_hi - 0.06 * (x_hi - x_lo), y_hi - 0.16 * (y_hi - y_lo)),
                ha="center", fontsize=12, fontweight="bold", arrowprops={"arrowstyle": "->", "lw": 2})
    ax.set_title(f"Site plan, {results.site['name']} (squares: feed points)")
    ax.legend(fontsize=8, loc="upper left", bbox_to_anchor=(0, -0.1), ncols=1, frameon=False)
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


def _default_mode(path) -> None:
    """Give a file made by mkstemp (0600) the permissions the user's umask gives new files."""
    mask = os.umask(0)
    os.umask(mask)
    os.chmod(path, 0o666 & ~mask)


def save(fig, path, *, overwrite: bool = False, dpi: int = 110) -> None:
    """Write a figure to PNG or SVG (by the suffix), whole or not at all; never replace without ``overwrite``."""
    p = Path(path)
    if p.suffix.lower() not in (".png", ".svg"):
        raise ValueError(f"{p}: figures are written as .png or .svg")
    if p.exists() and not overwrite:
        raise FileExistsError(f"{p} exists; pass --overwrite to replace it")
    fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=p.suffix, dir=p.parent)
    os.close(fd)
    try:
        fig.savefig(tmp, dpi=dpi, bbox_inches="tight")
        _default_mode(tmp)
        os.replace(tmp, p)
    finally:
        Path(tmp).unlink(missing_ok=True)
