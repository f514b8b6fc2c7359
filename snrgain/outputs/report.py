"""One self-contained HTML report from a Results object.

The report holds the scenario summary, the ranked table, every figure (as
inline SVG: sharp when printed, no network needed), the models used with
their published sources and limits, and the safety cautions.  It has no
scripts and loads nothing from elsewhere.
"""

from __future__ import annotations

import html
from datetime import UTC, datetime

import numpy as np

from snrgain.outputs import plots
from snrgain.outputs.messages import hops_text, notice_texts
from snrgain.outputs.output import PREAMP_LEGEND, elevation_span, ground_text, preamp_cell
from snrgain.outputs.style import listening_order, looks_of
from snrgain.units import number_text, s_units, signed_text

SAFETY = [
    "Keep every wire, mast and support well clear of power lines: farther away than it could reach if it fell. "
    "Never work near power lines.",
    "Lightning and rain or snow static charge long wires: bleed static to ground, disconnect and ground the feed line "
    "where it enters the building, and do not handle antennas when storms are near.",
    "Before driving a ground rod or burying a radial, have buried utilities (power, gas, water, telecoms) located.",
    "Wires on or just above the ground are trip and mower hazards: mark them, pin them down or bury them where "
    "people and animals walk.",
    "Follow your local electrical and building codes; where they require it, have a licensed electrician do the "
    "grounding and bonding.",
]

MODELS = [
    (
        "Noise levels",
        "Recommendation ITU-R P.372: man-made noise (Table 1 categories and decile deviations), "
        "galactic noise (Fa = 52 - 23 log f), atmospheric noise from the ITU-R Study Group 3 numerical maps "
        "(Zacharisen and Jones 1970; Lucas and Harper 1965), combination by Section 8.",
    ),
    (
        "Noise directions",
        "HEALPix sky (Gorski et al. 2005). Man-made: low angles (snrgain's assumption). "
        "Atmospheric: snrgain's storm-to-site sky-wave model (absorption of the George and Bradley form) or uniform "
        "or a sector. Galactic: passed above the ionosphere's penetration elevation (secant law). Every map is "
        "normalised to P.372's reference monopole.",
    ),
    (
        "Placed noise sources",
        "A short vertical or horizontal dipole over the lossy earth: within 3 km the exact Sommerfeld integrals "
        "(Sommerfeld 1909/1949, Banos 1966), near field included, beyond them the image with Norton's surface wave "
        "(Norton 1936-37). Each antenna standing at a position reads the field where it stands: a long wire through "
        "its line model driven along its length and up its leads, a vertical through its wire's solved current, "
        "loops and arrays through their own currents (reciprocity); checked against NEC-2.",
    ),
    (
        "Antennas",
        "Vertical: sinusoidal current with Fresnel ground reflection and a radial-loss resistance. "
        "Long wires: transmission-line model on the exact mode of a wire over lossy ground (Sommerfeld's potentials "
        "in Wait's 1972 line-source form; the closed form of Deri et al. 1981 as an option), checked against NEC-2. "
        "Arrays: complex responses combined with their weights; coupled verticals by the induced-EMF method; "
        "auto steering by default the phases of highest RDF toward the bearing, or the maximum-SNR weights under "
        "the site's sky (Van Trees 2002). Small loop: magnetic dipole over ground (Kraus). Tables: interpolated as "
        "given.",
    ),
    (
        "Transmitting vertical and structures",
        "The vertical next door (and each structure given) as a scatterer: its effective height and induced-EMF "
        "self impedance and near field (Schelkunoff and Friis 1952; Balanis 2005), loaded at its base by the "
        "transmitter's 50 ohm or detuned; its re-radiation is added to every antenna's response on the plan; "
        "checked against NEC-2 from 10 m.",
    ),
    (
        "Feed lines",
        "A candidate's coax shield as a single-wire line over the earth (the long wires' line model at the run's "
        "height), driven by the sky and by placed sources along its route, loaded by the station ground and the "
        "choke or isolation at the antenna; the share of its current in the receiver's load added to the antenna's "
        "noise; checked against NEC-2.",
    ),
    (
        "Receiving chain",
        "Friis cascade (1944); ITU-R P.372 Section 2 system noise factor; cable losses typical of "
        "the generic types (snrgain's assumption, not checked against datasheets).",
    ),
    (
        "Limits",
        "A source known only by its bearing is taken as distant (plane waves); low wires only (up to 0.1 "
        "wavelength); the transmitting vertical's and structures' current is a sinusoid (up to 0.3 wavelength "
        "tall), a top hat taken as the length it adds; the storm-direction model is coarse; P.372's Section 8 "
        "variant for deviations above 12 dB is not implemented; thermal noise of losses neglected. The README's "
        "'Models and their sources' and 'Limits of validity' give every model, check and tolerance.",
    ),
]

SVG_OPTIONS = {"bbox_inches": "tight", "svg_text": True}
"""How the report's figures are saved (snrgain.outputs.drawing.save_figure): cut to what is drawn, their letters as
text, which the reader can search and copy (the page's text and the figures' alike)."""

CSS = """
body { font-family: system-ui, sans-serif; margin: 2em auto; max-width: 1100px; color: #1b1b1b; line-height: 1.4; }
h1 { font-size: 1.6em; margin-bottom: 0.2em; }
h2 { border-bottom: 2px solid #3a6; padding-bottom: 0.2em; margin-top: 1.6em; }
table { border-collapse: collapse; margin: 0.8em 0; font-size: 0.92em; }
th, td { border: 1px solid #bbb; padding: 0.3em 0.6em; text-align: right; }
th { background: #eef5ee; } td.name, th.name { text-align: left; }
tr.ref td { color: #555; font-style: italic; } td.warn { color: #b00; font-weight: bold; }
figure { margin: 1em 0; page-break-inside: avoid; } figure svg { max-width: 100%; height: auto; }
figcaption { font-size: 0.9em; color: #444; }
.swatch { display: inline-block; width: 0.9em; height: 0.9em; margin-right: 0.4em; vertical-align: -0.1em;
  border: 1px solid #000; print-color-adjust: exact; -webkit-print-color-adjust: exact; }
.note { font-size: 0.9em; color: #444; } .safety li { margin-bottom: 0.4em; }
@media print { body { margin: 0.5cm; max-width: none; } h2 { page-break-after: avoid; } }
"""


def _inline(svg: bytes) -> str:
    text = svg.decode("utf-8")
    return text[text.index("<svg") :]  # drop the XML prolog and doctype: the SVG sits inline in HTML


def _e(x) -> str:
    return html.escape(str(x))


def _f(x, fmt="{:+.1f}") -> str:
    x = float(x)
    if not np.isfinite(x):
        return "&ndash;"
    return number_text(x, fmt)  # as the terminal's tables: 0.0, not -0.0


def _summary(r) -> str:
    rows = [
        ("Site", f"{_e(r.site['name'])}, {r.site['latitude_deg']:.3f}&deg;, {r.site['longitude_deg']:.3f}&deg;"),
        ("Ground", _e(ground_text(r.site))),
        ("Band", f"{r.freq_hz / 1e6:g} MHz, {r.bandwidth_hz:g} Hz bandwidth"),
        ("Months", ", ".join(str(m) for m in listening_order(r.months, 12))),
        ("UTC hours", ", ".join(f"{h:g}" for h in listening_order(r.utc_hours, 24))),
        (
            "Receiver",
            f"noise figure {r.receiver['noise_figure_db']:.1f} dB; chain noise figure "
            f"{r.receiver.get('chain_noise_figure_db', r.receiver['noise_figure_db']):.1f} dB; "
            f"floor {r.receiver['noise_floor_dbm']:.1f} dBm",
        ),
        ("Reference antenna", _e(r.reference.name)),
    ]
    out = ["<table>"] + [f"<tr><th class='name'>{k}</th><td class='name'>{v}</td></tr>" for k, v in rows] + ["</table>"]
    out.append(
        "<table><tr><th class='name'>Noise component (P.372 reference monopole)</th><th>Fa min (dB)</th>"
        "<th>Fa max (dB)</th><th>upper decile (dB)</th><th>lower decile (dB)</th></tr>"
    )
    from snrgain.outputs.output import levels_as_read

    read = levels_as_read(r)
    for name, c in r.noise.components.items():
        fa = c["fa_db"][np.isfinite(c["fa_db"])]
        lo, hi = (fa.min(), fa.max()) if fa.size else (np.nan, np.nan)
        label = _e(name) + (f" ({_e(read[name])})" if name in read else "")  # a level read on an antenna, as written
        out.append(
            f"<tr><td class='name'>{label}</td><td>{_f(lo, '{:.1f}')}</td><td>{_f(hi, '{:.1f}')}</td>"
            f"<td>{_f(np.nanmean(c['du_db']), '{:.1f}')}</td><td>{_f(np.nanmean(c['dl_db']), '{:.1f}')}</td></tr>"
        )
    tot = r.noise.total_fa_db
    out.append(
        f"<tr><td class='name'><b>total (P.372 Section 8)</b></td><td>{_f(np.min(tot), '{:.1f}')}</td>"
        f"<td>{_f(np.max(tot), '{:.1f}')}</td><td>{_f(np.mean(r.noise.total_du_db), '{:.1f}')}</td>"
        f"<td>{_f(np.mean(r.noise.total_dl_db), '{:.1f}')}</td></tr></table>"
    )
    tg = [
        "<table><tr><th class='name'>Target</th><th>weight</th><th>bearing (deg)</th><th>elevations (deg)</th>"
        "<th>distance (km)</th></tr>"
    ]
    for t in r.targets:
        dist = "&ndash;" if t["distance_km"] is None else f"{t['distance_km']:.0f} ({hops_text(t['hops'])})"
        tg.append(
            f"<tr><td class='name'>{_e(t['name'])}</td><td>{t['weight']:.2f}</td><td>{t['bearing_deg']:.0f}</td>"
            f"<td>{elevation_span(t['elevation_min_deg'], t['elevation_max_deg'], '&ndash;')}</td><td>{dist}</td></tr>"
        )
    tg.append("</table>")
    return "\n".join(out + tg)


def _ranking(r) -> str:
    """One table per target (its own ranking, best first) and a line naming the best with its margin."""
    out = []
    looks = looks_of(r)
    for i, (t, tr) in enumerate(zip(r.targets, r.target_results)):
        hours = ", ".join(f"{h:g}" for h in listening_order(t["utc_hours"], 24))
        out.append(
            f"<h3>{_e(t['name'])}</h3><p class='note'>Bearing {t['bearing_deg']:.0f}&deg;, elevations "
            f"{elevation_span(t['elevation_min_deg'], t['elevation_max_deg'], '&ndash;')}&deg;; months "
            f"{', '.join(str(m) for m in listening_order(t['months'], 12))}; UTC hours {hours}.</p>"
        )
        head = [
            "#",
            "antenna",
            "SNR gain median (dB)",
            "10 %&ndash;90 % (dB)",
            f"P(&ge;{r.beat_by_db:g} dB)",
            "RDF (dB)",
            "F/B (dB)",
            "noise at receiver (dBm)",
            "S",
            "margin (dB)",
            "preamp (dB)",
        ]
        rows = [
            "<table"
            + (" id='ranking'" if i == 0 else "")
            + "><tr>"
            + "".join(f"<th{' class=name' if h == 'antenna' else ''}>{h}</th>" for h in head)
            + "</tr>"
        ]
        ranked = [("ref", r.reference)] + [(str(k + 1), r.antenna(n)) for k, n in enumerate(tr.ranking)]
        for rank, a in ranked:
            noise = float(np.median(a.noise_dbm))
            margin = float(np.min(a.margin_db))
            pre = preamp_cell(a.receiver_limited, a.preamp_gain_needed_db, a.preamp_best_effort)
            pre = "&ndash;" if pre == "-" else pre
            ref = a is r.reference
            cells = [
                rank,
                f"<td class='name'>{_swatch(looks, a.name)}{_e(a.name)}</td>",
                "0" if ref else _f(a.snr_gain_median_db[i]),
                "&ndash;" if ref else f"{_f(a.snr_gain_p10_db[i])} to {_f(a.snr_gain_p90_db[i])}",
                "&ndash;" if ref else f"{100 * a.probability_beats[i]:.0f} %",
                _f(a.rdf_db[i]),
                _f(np.clip(a.front_to_back_db[i], -99, 99)),
                _f(noise, "{:.1f}"),
                _e(s_units(noise)),
            ]
            row = [f"<td>{c}</td>" if not str(c).startswith("<td") else c for c in cells]
            row.append(f"<td class='warn'>{margin:.1f} !</td>" if a.receiver_limited else f"<td>{margin:.1f}</td>")
            row.append(f"<td>{pre}</td>")
            rows.append(f"<tr{' class=ref' if ref else ''}>" + "".join(row) + "</tr>")
        rows.append("</table>")
        out += rows
        best = r.antenna(tr.best)
        if best.snr_gain_median_db[i] > 0:
            out.append(
                f"<p><b>Best toward {_e(t['name'])}: {_e(tr.best)}</b>, "
                f"{signed_text(best.snr_gain_median_db[i])} dB over {_e(r.reference.name)} (median; "
                f"{signed_text(best.snr_gain_p10_db[i])} to {signed_text(best.snr_gain_p90_db[i])} dB), "
                f"{tr.margin_db:.1f} dB ahead of {_e(tr.runner_up)}.</p>"
            )
        else:
            out.append(
                f"<p><b>Toward {_e(t['name'])} no candidate beats {_e(r.reference.name)}</b> "
                f"(best: {_e(tr.best)}, {signed_text(best.snr_gain_median_db[i])} dB).</p>"
            )
    out.append(
        "<p class='note'>SNR gain over the reference antenna toward each target with this site's noise sky and the "
        "receiving chain, at the target's own months and hours: median, and its 10 % and 90 % points over the "
        f"spreads counted ({_e(_spread_words(r))}); P: the chance of beating the reference by "
        f"{r.beat_by_db:g} dB or more. RDF on the trade's scale (over the gain averaged over the whole sphere). "
        "Noise: sky noise delivered to the receiver input. Margin: that over the chain's floor at the worst hour; "
        f"'!' marks an antenna limited by receiver noise; {_e(PREAMP_LEGEND)}.</p>"
    )
    said, apart = r.notices_apart(r.built_names())
    unit = r.site.get("length_unit", "m")
    if said:
        out.append("<ul>" + "".join(f"<li>{_e(t)}</li>" for t in notice_texts(said, unit=unit)) + "</ul>")
    if apart:
        what = "warning" if len(apart) == 1 else "warnings"
        out.append(
            f"<details><summary>{len(apart)} more {what} on candidates the station plan does not build</summary><ul>"
            + "".join(f"<li>{_e(t)}</li>" for t in notice_texts(apart, unit=unit))
            + "</ul></details>"
        )
    return "\n".join(out)


def _swatch(looks, name) -> str:
    """The antenna's colour as in every figure (snrgain.outputs.style), before its name in the tables."""
    lk = looks.get(name)
    return "" if lk is None else f"<span class='swatch' style='background:{lk.color}'></span>"


def _spread_words(r) -> str:
    from snrgain.outputs.output import spread_note

    return spread_note(r)


def _plan(r) -> str:
    from snrgain.outputs.messages import PLAN_WORTH, plan_not_best_text
    from snrgain.outputs.output import also_build, rests_on_place_text, switched_text

    p = r.plan
    looks = looks_of(r)
    unit = r.site.get("length_unit", "m")
    if not p.antennas:  # with the note on a best left out (one that cannot be built where it stands)
        return f"<p>No candidate adds 0.1 dB or more: keep {_e(r.reference.name)}.</p>" + "".join(
            f"<p>{_e(plan_not_best_text(r.targets[t]['name'], why, unit))}</p>" for t, why in sorted(p.not_best.items())
        )
    out = [
        f"<p>Build {len(p.antennas)}, worth <b>{signed_text(p.gain_db)} dB</b> over {_e(r.reference.name)} alone "
        f"({PLAN_WORTH}), in this order:</p><ol>"
    ]

    fragile = {n: rests_on_place_text(r, n) for n in p.antennas}
    out += [
        f"<li>{_swatch(looks, n)}{_e(n)}{_e(switched_text(r, n))}: adds {signed_text(a)} dB{_e(also_build([r], p, k))}"
        + (f"<br><b>{_e(fragile[n])}</b>" if fragile[n] else "")
        + "</li>"
        for k, (n, a) in enumerate(zip(p.antennas, p.added_db))
    ]
    out.append(
        "</ol><table><tr><th class='name'>target</th><th class='name'>served by</th>"
        "<th class='name'>UTC hours</th><th>SNR gain (dB)</th></tr>"
    )
    for t, rows in sorted(p.by_target.items()):
        for s in rows:
            out.append(
                f"<tr><td class='name'>{_e(r.targets[t]['name'])}</td>"
                f"<td class='name'>{_swatch(looks, s.antenna)}{_e(s.antenna)}</td>"
                f"<td class='name'>{', '.join(f'{h:g}' for h in listening_order(s.utc_hours, 24))}</td>"
                f"<td>{_f(s.snr_gain_db)}</td></tr>"
            )
    out.append("</table>")
    out += [
        f"<p>{_e(plan_not_best_text(r.targets[t]['name'], why, unit))}</p>" for t, why in sorted(p.not_best.items())
    ]
    return "\n".join(out)


def _build(r) -> str:
    from snrgain.outputs.output import build_lines

    looks = looks_of(r)
    items = "".join(f"<li>{_swatch(looks, name)}<b>{_e(name)}</b>: {_e(text)}</li>" for name, text in build_lines(r))
    return (
        "<p class='note'>Resistors: the nearest E12 value (IEC 60063) beside the computed one; turns ratio: "
        f"antenna side over coax side.</p><ul>{items}</ul>"
    )


def figure_list(r, *, plan: dict | None = None) -> list[tuple[str, object, str]]:
    """(title, figure, caption) for every figure of the report; ``plan``: the scenario's site plan
    (:func:`snrgain.outputs.siteplan.plan_of`), else what the results alone give."""
    return [(title, make(), caption) for title, make, caption in figure_makers(r, plan=plan)]


def figure_makers(r, *, plan: dict | None = None) -> list[tuple[str, object, str]]:
    """(title, a function that makes the figure, caption) for every figure of the report (see
    :func:`figure_list`): the figures are made where they are drawn (snrgain.outputs.drawing)."""
    from functools import partial

    figs = []
    for i, t in enumerate(r.targets):
        figs.append(
            (
                f"Azimuth pattern toward {t['name']}",
                partial(plots.azimuth_pattern, r, target_index=i),
                "Each antenna's gain at the target's elevation in dB relative to its own peak on that cut (0 dB at "
                f"the rim, the floor {plots.AZIMUTH_SPAN_DB:g} dB below), its peak gain in dBi in the legend, so "
                "that patterns of very different gain compare by shape (the SNR gain does not depend on the "
                "absolute gain; the elevation pattern shows it in dBi); one colour per antenna, one line style and "
                "marker per family, as in every figure; arrows and hollow marks show targets, black crosses local "
                "noise sources.",
            )
        )
        figs.append(
            (
                f"Elevation pattern toward {t['name']}",
                partial(plots.elevation_pattern, r, target_index=i),
                "Gain against elevation toward the target's bearing; the hatched band (the target's hatching) is where "
                "its signals arrive.",
            )
        )
    month_index, hour_index = plots.sky_moment(r)  # the sky figure's own moment, named in its caption
    figs.append(
        (
            "Noise sky",
            partial(plots.noise_sky, r),
            f"Brightness of each diffuse noise component at {r.utc_hours[hour_index]:g} UTC in month "
            f"{r.months[month_index]} (the middle of the listening months and hours), interpolated on the sphere "
            "between the model's pixels; grey where no noise arrives.",
        )
    )
    figs.append(
        (
            "SNR gain over the hours",
            partial(plots.snr_over_hours, r),
            "Per target, mean over its months, over its own listening window in order (a night across midnight "
            "is one span): the nominal SNR gain, at the site's ground with every noise at its median level (the "
            "tables' median also spreads the ground and the noise levels, and can sit lower); bands and bars show "
            "atmospheric noise at its P.372 deciles where included.",
        )
    )
    figs.append(
        (
            "Ranking",
            partial(plots.ranking_chart, r),
            "Median SNR gain per target with its 10-90 % band (colour: the antenna, as in every figure; hatching: "
            "the target); RDF per target; margin of external noise.",
        )
    )
    plan = plan if plan is not None else getattr(r, "site_plan", None)  # the pipeline's own, in metres
    if plots.has_site_plan(r, plan=plan):
        unit = (plan or {}).get("unit", "m")
        figs.append(
            (
                "Site plan",
                partial(plots.site_plan, r, plan=plan),
                f"The lot, keep-out areas, the transmitting vertical's clearance, placed noise sources and every "
                f"antenna as built, to scale in {'feet' if unit == 'ft' else 'metres'}; wires off the lot and "
                "crossings marked."
                if plan is not None
                else "The lot and the antennas with a position, to scale in "
                "metres (keep-outs and placed sources are drawn when the scenario is given).",
            )
        )
    return figs


def render(results, *, title: str | None = None, plan: dict | None = None, draw=None) -> str:
    """The report as one HTML document (a string); ``plan``: the scenario's site plan
    (:func:`snrgain.outputs.siteplan.plan_of`; the command line passes it); ``draw``: what draws the figures
    (:func:`snrgain.outputs.drawing.draw_all`, or the command line's :meth:`~snrgain.outputs.drawing.Drawer.draw`)."""
    r = results
    title = title or f"snrgain report: {r.site['name']}"
    parts = [
        f"<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'><title>{_e(title)}</title>",
        f"<style>{CSS}</style></head><body>",
        f"<h1>{_e(title)}</h1>",
        f"<p class='note'>Scenario {_e(r.source)}; made {datetime.now(UTC):%Y-%m-%d %H:%M} UTC; "
        f"sky resolution HEALPix nside {r.nside}.</p>",
        "<h2 id='summary'>Scenario</h2>",
        _summary(r),
        "<h2 id='ranked'>The best antenna for each target</h2>",
        _ranking(r),
        "<h2 id='plan'>Station plan</h2>",
        _plan(r),
        "<h2 id='build'>Build sheet</h2>",
        _build(r),
        "<h2 id='figures'>Figures</h2>",
    ]
    from snrgain.outputs.drawing import draw_all

    makers = figure_makers(r, plan=plan)
    cost_of = {fn: plots.FIGURE_COST[name] for name, fn in plots.FIGURES.items()}
    cost = [cost_of.get(getattr(make, "func", None), 1.0) for _, make, _ in makers]
    drawn = (draw or draw_all)([(make, "svg", SVG_OPTIONS) for _, make, _ in makers], cost=cost)
    for i, ((name, _, caption), svg) in enumerate(zip(makers, drawn)):
        parts.append(
            f"<figure id='figure-{i + 1}'>{_inline(svg)}<figcaption>Figure {i + 1}. {_e(name)}: {_e(caption)}"
            "</figcaption></figure>"
        )
    parts.append("<h2 id='models'>Models, sources and limits</h2><table>")
    parts += [f"<tr><th class='name'>{_e(k)}</th><td class='name'>{_e(v)}</td></tr>" for k, v in MODELS]
    parts.append("</table>")
    parts.append("<h2 id='safety'>Safety when you build</h2><ul class='safety'>")
    parts += [f"<li>{_e(s)}</li>" for s in SAFETY]
    parts.append("</ul></body></html>\n")
    return "\n".join(parts)
