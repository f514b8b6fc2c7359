"""Results as a terminal table, JSON or CSV (files are written by :mod:`snrgain.files`)."""

from __future__ import annotations

import csv
import io
import json

import numpy as np

from snrgain.results import Results
from snrgain.units import s_units


def to_json(results: Results) -> str:
    """JSON text of ``results.to_dict()``: sorted keys, non-finite numbers as null."""
    return json.dumps(results.to_dict(), sort_keys=True, indent=2, allow_nan=False) + "\n"


CSV_COLUMNS = [
    "rank",
    "antenna",
    "family",
    "target",
    "month",
    "utc_hour",
    "snr_gain_db",
    "gain_toward_target_dbi",
    "rdf_db",
    "front_to_back_db",
    "noise_dbm",
    "margin_db",
    "receiver_snr_loss_db",
]


def to_csv(results: Results) -> str:
    """One row per antenna, target, month and hour (the reference has rank 0)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(CSV_COLUMNS)
    for rank, a in enumerate([results.reference, *results.candidates]):
        for ti, t in enumerate(results.targets):
            for mi, month in enumerate(results.months):
                for hi, hour in enumerate(results.utc_hours):
                    w.writerow(
                        [
                            rank,
                            a.name,
                            a.family,
                            t["name"],
                            month,
                            f"{hour:g}",
                            f"{a.snr_gain_db[ti, mi, hi]:.3f}",
                            f"{a.gain_dbi[ti]:.3f}",
                            f"{a.rdf_db[ti]:.3f}",
                            f"{a.front_to_back_db[ti]:.3f}",
                            f"{a.noise_dbm[mi, hi]:.3f}",
                            f"{a.margin_db[mi, hi]:.3f}",
                            f"{a.receiver_snr_loss_db[mi, hi]:.3f}",
                        ]
                    )
    return buf.getvalue()


def _f(x, fmt="{:+.1f}"):
    x = float(x)
    if np.isnan(x):
        return "-"
    if np.isinf(x):
        return "inf" if x > 0 else "-inf"
    return fmt.format(x)


def _preamp_cell(a) -> str:
    if not a.receiver_limited:
        return "-"
    g = a.preamp_gain_needed_db
    return "none" if np.any(np.isnan(g)) else f"{float(np.max(g)):.0f}"


def ranking_table(results: Results):
    """A rich renderable: header lines, the ranking, and SNR gain per target."""
    from rich.console import Group
    from rich.table import Table
    from rich.text import Text

    r = results
    hours = ", ".join(f"{h:g}" for h in r.utc_hours)
    head = Text()
    head.append(f"{r.site['name']}", style="bold")
    head.append(f"  {r.site['latitude_deg']:.2f}, {r.site['longitude_deg']:.2f}  ground: {r.site['ground']}\n")
    head.append(f"{r.freq_hz / 1e6:g} MHz in {r.bandwidth_hz:g} Hz; months {r.months}; UTC hours {hours}\n")
    noise_bits = []
    for name, c in r.noise.components.items():
        fa = c["fa_db"]
        finite = fa[np.isfinite(fa)]
        some_screened = " (screened at some hours)" if 0 < finite.size < fa.size else ""
        if finite.size == 0:
            noise_bits.append(f"{name}: screened")
        elif np.ptp(finite) < 0.05:
            noise_bits.append(f"{name}: Fa {finite[0]:.1f} dB{some_screened}")
        else:
            noise_bits.append(f"{name}: Fa {finite.min():.1f} to {finite.max():.1f} dB{some_screened}")
    head.append("Noise on P.372's reference monopole: " + "; ".join(noise_bits) + "\n")
    stages = ", ".join(
        f"{st['name']} {st['gain_db']:+.1f} dB"
        for st in r.receiver["chain_stages"][:-1]
        if abs(st["gain_db"]) > 1e-9 or st["noise_figure_db"] > 1e-9
    )
    head.append(
        f"Receiver: NF {r.receiver['noise_figure_db']:.1f} dB; chain NF {r.receiver['chain_noise_figure_db']:.1f} dB"
        f"{' (' + stages + ')' if stages else ''}; floor at the receiver {r.receiver['noise_floor_dbm']:.1f} dBm\n"
    )

    t = Table(title=f"SNR gain over {r.reference.name}, mean over targets and hours", title_justify="left")
    t.add_column("#", justify="right")
    t.add_column("antenna", no_wrap=True, max_width=34)
    for label in ("SNR dB\nmean", "SNR dB\nworst", "RDF dB\nwtd", "F/B dB\nwtd", "G tgt\ndBi", "noise\ndBm"):
        t.add_column(label, justify="right", no_wrap=True)
    t.add_column("S", no_wrap=True)
    t.add_column("margin\ndB", justify="right", no_wrap=True)
    t.add_column("preamp\ndB", justify="right", no_wrap=True)
    w = np.array([tg["weight"] for tg in r.targets])

    def row(rank, a, style=None):
        noise = float(np.median(a.noise_dbm))
        margin = float(np.min(a.margin_db))
        t.add_row(
            rank,
            a.name,
            _f(a.summary_snr_gain_db),
            _f(a.worst_snr_gain_db),
            _f(np.dot(w, a.rdf_db)),
            _f(np.dot(w, np.clip(a.front_to_back_db, -99, 99))),
            _f(10 * np.log10(np.dot(w, 10 ** (a.gain_dbi / 10)))),
            _f(noise, "{:.1f}"),
            s_units(noise),
            Text(
                _f(margin, "{:.1f}") + (" !" if a.receiver_limited else ""),
                style="bold red" if a.receiver_limited else None,
            ),
            _preamp_cell(a),
            style=style,
        )

    row("ref", r.reference, style="dim")
    for i, a in enumerate(r.candidates):
        row(str(i + 1), a)

    pt = Table(title="Per target: SNR gain dB, mean over hours (worst), and RDF dB", title_justify="left")
    pt.add_column("antenna", no_wrap=True, max_width=34)
    for tg in r.targets:
        extra = f"\n{tg['bearing_deg']:.0f} deg, {tg['elevation_min_deg']:.0f}-{tg['elevation_max_deg']:.0f} deg el"
        pt.add_column(tg["name"] + extra, justify="right")
    for a in r.candidates:
        pt.add_row(
            a.name,
            *[
                f"{_f(a.snr_gain_db[i].mean())} ({_f(a.snr_gain_db[i].min())})  RDF {_f(a.rdf_db[i])}"
                for i in range(len(r.targets))
            ],
        )
    foot = Text(
        "wtd: weighted mean over the targets (see the per-target table); noise: sky noise delivered to the receiver "
        "input; margin: that minus the chain's noise floor (worst hour); "
        "'!' marks a receiver-noise-limited antenna; preamp: gain that would bring the margin to the target "
        "('none' if no gain can).",
        style="dim",
    )
    return Group(head, t, pt, foot)
