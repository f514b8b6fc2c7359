"""Results as a terminal table, JSON or CSV (files are written by :mod:`snrgain.files`)."""

from __future__ import annotations

import io
import json

import numpy as np

from snrgain.model.labelled import DATAFRAME_COLUMNS
from snrgain.model.results import Results
from snrgain.outputs.csvcells import csv_writer
from snrgain.outputs.messages import criterion_words, preamp_gain_said
from snrgain.units import length_both_text, length_text, lengths_text, number_text, s_units, signed_text


def to_json(results) -> str:
    """JSON text of ``results.to_dict()`` (a Results, or the BandResults of several bands): sorted keys,
    non-finite numbers as null."""
    return json.dumps(results.to_dict(), sort_keys=True, indent=2, allow_nan=False) + "\n"


CSV_COLUMNS = DATAFRAME_COLUMNS[: DATAFRAME_COLUMNS.index("receiver_snr_loss_db") + 1]
"""The CSV's columns: the tidy table's (snrgain.model.labelled) up to the receiver's SNR loss."""


def to_csv(results: Results, *, band: str | None = None, header: bool = True) -> str:
    """One row per target, antenna and listened month and hour (the reference has rank 0): the columns
    :data:`CSV_COLUMNS` of :meth:`Results.to_dataframe`, dB to 0.001; ``band``: a first column naming the band
    (a scenario of several bands)."""
    df = results.to_dataframe()
    buf = io.StringIO()
    w = csv_writer(buf)  # names that begin like a formula are written as text (csvcells)
    if header:
        w.writerow((["band"] if band is not None else []) + CSV_COLUMNS)
    as_text = [
        "{:.3f}".format if c.endswith(("_db", "_dbi", "_dbm")) else "{:g}".format if c == "utc_hour" else str
        for c in CSV_COLUMNS
    ]
    lead = [band] if band is not None else []
    for row in df[CSV_COLUMNS].itertuples(index=False):
        w.writerow(lead + [f(v) for f, v in zip(as_text, row)])
    return buf.getvalue()


def bands_to_csv(br) -> str:
    """Every band's rows (:func:`to_csv`) under one header, the band in the first column."""
    return "".join(to_csv(r, band=name, header=k == 0) for k, (name, r) in enumerate(br.bands))


def band_plan_text(br):
    """The station plan across the bands in words: what to build, the dB each adds, and who serves which band and
    target when."""
    from rich.text import Text

    from snrgain.outputs.messages import plan_not_best_text

    p = br.plan
    refs = list(dict.fromkeys(r.reference.name for _, r in br.bands))
    # one reference for every band, or each band its own ([[band]] reference): the plan is over each band's
    ref = (
        refs[0]
        if len(refs) == 1
        else "each band's reference (" + "; ".join(f"{name}: {r.reference.name}" for name, r in br.bands) + ")"
    )
    out = Text()
    out.append("Station plan for every band", style="bold")
    limit = f" (at most {p.max_antennas} beside the reference)" if p.max_antennas else ""
    unit = br.bands[0][1].site.get("length_unit", "m")
    if not p.antennas:
        out.append(f"{limit}: no candidate adds {0.1:g} dB or more on any band; keep {' and '.join(refs)}.\n")
        for c, why in sorted(p.not_best.items()):  # a best left out (one that cannot be built where it stands)
            band, target = br.columns[c]
            out.append(f"  Note: {band}: {plan_not_best_text(target, why, unit)}\n")
        return out
    out.append(
        f"{limit}: build {len(p.antennas)}, worth {signed_text(p.gain_db)} dB over {ref} alone (each band and target's "
        "median SNR gain on the antenna that serves it, averaged as power ratios, every band counting alike)\n"
    )
    parts = {a.name: set(a.parts) for _, r in br.bands for a in r.candidates if a.parts}
    for k, (name, added) in enumerate(zip(p.antennas, p.added_db)):
        mine = {name} | parts.get(name, set())  # a phasing unit serves through its own antennas too
        bands = sorted(
            {br.columns[c][0] for c, rows in p.by_target.items() for srv in rows if mine & {srv.antenna, srv.group}},
            key=[b for b, _ in br.bands].index,
        )
        more = also_build([r for _, r in br.bands], p, k)
        out.append(f"  {k + 1}. {name}: adds {signed_text(added)} dB{more}; serves {', '.join(bands)}\n")
    for c, rows in sorted(p.by_target.items()):
        band, target = br.columns[c]
        served = "; ".join(f"{s.antenna} at {hours_text(s.utc_hours)} ({signed_text(s.snr_gain_db)} dB)" for s in rows)
        out.append(f"  {band}, {target}: {served}\n")
    for c, why in sorted(p.not_best.items()):
        band, target = br.columns[c]
        out.append(f"  Note: {band}: {plan_not_best_text(target, why, unit)}\n")
    return out


def bands_table(br, *, build: bool = False):
    """A rich renderable for a scenario of several bands: each band's ranking as a single-band run prints it, under
    the band's name, its plan headed as that band's alone; then the station plan across the bands (what to build)
    and what the columns mean, once."""
    from rich.console import Group
    from rich.rule import Rule

    parts = []
    for name, r in br.bands:
        parts.append(Rule(f"{name}: {r.freq_hz / 1e6:g} MHz", align="left"))
        parts.append(ranking_table(r, build=build, plan_label=f"Station plan for {name} alone", legend=False))
    parts.append(Rule("every band", align="left"))
    parts.append(band_plan_text(br))
    parts.append(columns_legend())
    return Group(*parts)


def elevation_span(lo: float, hi: float, dash: str = "-") -> str:
    """A target's elevations [deg] as the terminal and the report print them: one value where they round alike, and
    a narrow range with a decimal (19.5-20.5, not 20-20; 4.5-5.5, not 4-6).

    >>> elevation_span(88.0, 88.0), elevation_span(19.5, 20.5), elevation_span(5.0, 20.0)
    ('88', '19.5-20.5', '5-20')
    """
    digits = 1 if 0 < hi - lo < 2 else 0
    a, b = f"{lo:.{digits}f}", f"{hi:.{digits}f}"
    return a if a == b else f"{a}{dash}{b}"


def _f(x, fmt="{:+.1f}"):
    x = float(x)
    if np.isnan(x):
        return "-"
    if np.isinf(x):
        return "inf" if x > 0 else "-inf"
    return number_text(x, fmt)  # a small negative that rounds to zero reads 0.0, not -0.0


def preamp_cell(limited: bool, gain_db, best_effort: dict | None = None) -> str:
    """The preamp column (the terminal's and the report's): "-" where the margin reaches the target without one; the
    gain that brings the margin to the target at every hour; where none can, the gain of the preamplifier that comes
    closest, marked '*'; "none" where no preamplifier would help (:data:`PREAMP_LEGEND`)."""
    if not limited:
        return "-"
    g = np.asarray(gain_db, dtype=float)
    if not np.any(np.isnan(g)):
        return preamp_gain_said(float(np.max(g)))
    return "none" if best_effort is None else f"{best_effort['gain_db']:.0f}*"


PREAMP_LEGEND = (
    "preamp: gain that would bring the margin to the target ('-': none needed, the margin reaches it; '*': no gain "
    "can at every hour, and this gain comes within 0.5 dB of the best any gain gives; 'none': no preamplifier "
    "would help, see the antenna's warning)"
)
"""The preamp column's legend (:func:`preamp_cell`), the terminal's and the report's."""


def hours_text(hours) -> str:
    """UTC hours as a compact list in the order a listener meets them (snrgain.outputs.style.listening_order, as the
    report and the figures give them): runs of whole hours as "start-end", a run across midnight as one ("22-2"),
    else the hours.

    >>> hours_text([0.0, 1.0, 2.0, 5.0, 22.0, 23.0])
    '22-2, 5 UTC'
    >>> hours_text([3.0, 4.0, 5.0, 10.5])
    '3-5, 10.5 UTC'
    >>> hours_text(range(24))
    '0-23 UTC'
    """
    from snrgain.outputs.style import listening_order

    hs = [float(h) for h in listening_order([float(h) for h in hours], 24)]
    if len(hs) == 24:  # every hour of the day: from 0
        hs.sort()
    runs, start = [], None
    for i, h in enumerate(hs):
        if start is None:
            start = h
        nxt = hs[i + 1] if i + 1 < len(hs) else None
        if nxt is None or nxt != (h + 1.0) % 24.0 or not float(h).is_integer():
            runs.append((start, h))
            start = None
    return ", ".join(f"{a:g}" if a == b else f"{a:g}-{b:g}" for a, b in runs) + " UTC"


def ground_text(site: dict) -> str:
    """The site's ground in words: its name and constants."""
    if site["ground"] == "perfect":
        return "perfect"
    sigma, eps = site["ground_conductivity_s_per_m"], site["ground_permittivity"]
    name = "" if site["ground"] == "custom" else f"{site['ground']}, "
    return f"{name}{sigma * 1e3:.3g} mS/m, relative permittivity {eps:.3g}"


def levels_as_read(r: Results) -> dict[str, str]:
    """Each local source whose level was read on an antenna, by name: that reading as written ("read S8, -79.0 dBm,
    on TX vertical"), which the header and the report give beside its Fa on P.372's reference monopole."""
    return {
        s["name"]: f"read {s_units(s['level_dbm'])}, {s['level_dbm']:.1f} dBm, on {s['read_on']}"
        for s in r.local_sources
        if s.get("level_dbm") is not None
    }


def _header(r: Results):
    from rich.text import Text

    head = Text()
    head.append(f"{r.site['name']}", style="bold")
    head.append(f"  {r.site['latitude_deg']:.2f}, {r.site['longitude_deg']:.2f}  ground: {ground_text(r.site)}\n")
    head.append(f"{r.freq_hz / 1e6:g} MHz in {r.bandwidth_hz:g} Hz; reference: {r.reference.name}\n")
    noise_bits = []
    read = levels_as_read(r)
    for name, c in r.noise.components.items():
        fa = c["fa_db"]
        finite = fa[np.isfinite(fa)]
        some_screened = " (screened at some hours)" if 0 < finite.size < fa.size else ""
        as_read = f" ({read[name]})" if name in read else ""
        if finite.size == 0:
            noise_bits.append(f"{name}: screened")
        elif np.ptp(finite) < 0.05:
            noise_bits.append(f"{name}: Fa {finite[0]:.1f} dB{as_read}{some_screened}")
        else:
            noise_bits.append(f"{name}: Fa {finite.min():.1f} to {finite.max():.1f} dB{as_read}{some_screened}")
    head.append("Noise on P.372's reference monopole: " + "; ".join(noise_bits) + "\n")
    stages = ", ".join(
        f"{st['name']} {signed_text(st['gain_db'])} dB"
        for st in r.receiver["chain_stages"][:-1]
        if abs(st["gain_db"]) > 1e-9 or st["noise_figure_db"] > 1e-9
    )
    head.append(
        f"Receiver: NF {r.receiver['noise_figure_db']:.1f} dB; chain NF {r.receiver['chain_noise_figure_db']:.1f} dB"
        f"{' (' + stages + ')' if stages else ''}; floor at the receiver {r.receiver['noise_floor_dbm']:.1f} dBm\n"
    )
    return head


def spread_note(r: Results) -> str:
    """Which spreads the medians and bands count, in words."""
    u = r.uncertainty
    parts = []
    if u.get("ground"):
        g = u["ground"]
        s_lo, s_hi = (x * 1e3 for x in g["conductivity_s_per_m"])
        e_lo, e_hi = g["permittivity"]
        parts.append(f"ground {s_lo:.2g}-{s_hi:.2g} mS/m, permittivity {e_lo:.3g}-{e_hi:.3g}")
    if u.get("noise_deciles"):
        parts.append("P.372 noise deciles")
    if u.get("local_sources_db"):
        parts.append("local source levels")
    if u.get("hours"):
        parts.append("hour to hour")
    return "spread over " + (", ".join(parts) if parts else "nothing (every spread is off)")


def target_table(r: Results, i: int, lab=None):
    """One target's ranking: median SNR gain with its 10-90 % band, the chance of beating the reference, RDF,
    front-to-back, and each antenna's noise against the receiver.

    The numbers are read from the labelled arrays ``lab`` (:func:`snrgain.model.labelled.labelled`, the arrays
    :meth:`Results.to_xarray` wraps; made here if not given).
    """
    from rich.table import Table
    from rich.text import Text

    from snrgain.model.labelled import labelled
    from snrgain.model.results import buildable

    lab = labelled(r) if lab is None else lab
    t = r.targets[i]
    span = elevation_span(t["elevation_min_deg"], t["elevation_max_deg"])
    where = f"{t['bearing_deg']:.0f} deg, {span} deg elevation"
    if t.get("distance_km"):
        where += f", {t['distance_km']:.0f} km"
    when = f"months {', '.join(str(m) for m in t['months'])}; {hours_text(t['utc_hours'])}"
    table = Table(
        title=Text(f"{t['name']}: {where}; {when}", style="bold"),
        title_justify="left",
        caption=f"SNR gain over {lab.attrs['reference']}; {spread_note(r)}",
        caption_justify="left",
    )
    names = [str(n) for n in lab.coord("antenna")]
    spread = lab.get("snr_gain_quantile_db", target=i)  # (antenna, quantile): 10 %, median, 90 % [dB]
    ranks = lab.get("rank_for_target", target=i)
    is_reference = lab.coord("is_reference")
    from snrgain.model.spread import median  # np.median's, without loading numpy.ma

    rows = []
    for k in np.argsort(ranks, kind="stable"):  # the reference (rank 0), then the ranking
        noise = float(median(lab.get("noise_dbm", antenna=k)))
        margin = float(np.min(lab.get("margin_db", antenna=k)))
        limited = bool(lab.get("receiver_limited", antenna=k))
        if bool(is_reference[k]):
            rank, gain, prob, style = "ref", "0 (reference)", "-", "dim"
        else:
            p10, med, p90 = spread[k]
            rank, gain, style = str(int(ranks[k])), f"{_f(med)} ({_f(p10)} to {_f(p90)})", None
            prob = f"{100 * float(lab.get('probability_beats_reference', antenna=k, target=i)):.0f} %"
        name = Text(names[k])
        if not bool(is_reference[k]) and not buildable(r.antenna(names[k])):
            name.append(" (a yardstick, not to build)", style="dim")  # ranked, never the best (its verdict below)
        cells = [
            rank,
            name,
            gain,
            prob,
            _f(lab.get("rdf_db", antenna=k, target=i)),
            _f(np.clip(float(lab.get("front_to_back_db", antenna=k, target=i)), -99, 99)),
            f"{noise:.1f} ({s_units(noise)})",
            Text(_f(margin, "{:.1f}") + (" !" if limited else ""), style="bold red" if limited else None),
            preamp_cell(limited, lab.get("preamp_gain_needed_db", antenna=k), r.antenna(names[k]).preamp_best_effort),
        ]
        rows.append((cells, style))
    labels = (
        "#",
        "antenna",
        "SNR gain dB\nmedian (10-90 %)",
        f"P(>={lab.attrs['beat_by_db']:g}\ndB)",
        "RDF\ndB",
        "F/B\ndB",
        "noise dBm\n(S-meter)",
        "margin\ndB",
        "preamp\ndB",
    )
    for c, label in enumerate(labels):
        if c == 1:  # a long name wraps; the numbers never shrink (a narrow terminal cut them to '+11...')
            table.add_column(label, overflow="fold", max_width=32)
            continue
        width = max(len(line) for cell in [label, *(row[c] for row, _ in rows)] for line in str(cell).split("\n"))
        table.add_column(label, justify="right", no_wrap=True, min_width=width)
    for cells, style in rows:
        table.add_row(*cells, style=style)
    best, runner_up = str(lab.coord("best")[i]), str(lab.coord("runner_up")[i])
    p10, med, p90 = spread[names.index(best)]
    reference = lab.attrs["reference"]
    verdict = Text()
    if med > 0:
        verdict.append(f"Best toward {t['name']}: ", style="bold")
        verdict.append(f"{best}", style="bold green")
        verdict.append(
            f", {_f(med)} dB over {reference} (median; {_f(p10)} to {_f(p90)} dB), "
            f"{float(lab.get('best_margin_db', target=i)):.1f} dB ahead of {runner_up}."
        )
    else:
        verdict.append(
            f"Toward {t['name']} no candidate beats {reference} (best: {best}, {signed_text(med)} dB).", style="bold"
        )
    from rich.console import Group

    return Group(table, verdict, Text(""))


def also_build(results, plan, k: int) -> str:
    """For the plan's k-th antenna: " (build X for it)" when it is a phasing unit whose parts (AntennaResult.parts)
    are not a reference nor built earlier in the plan, else ""; ``results``: the Results it was ranked in (a plan
    across bands: every band's)."""
    name = plan.antennas[k]
    ant = next((a for r in results for a in r.candidates if a.name == name), None)
    refs = {r.reference.name for r in results} | {"reference"}
    needs = [x for x in (() if ant is None else ant.parts) if x not in refs and x not in plan.antennas[:k]]
    return f" (build {' and '.join(needs)} for it)" if needs else ""


def switched_text(r: Results, name: str) -> str:
    """For a switched antenna of the plan: " (one antenna switched to <the states that serve a target>)", or that
    only one of its states serves (it may be built one way), else ""."""
    states = getattr(r.plan, "states", {}).get(name)
    if not states:
        return ""
    labels = {c.name: c.state for c in r.candidates}
    if len(states) == 1:  # one state serves every target it serves: the switching buys nothing here
        return f" (only its {labels.get(states[0]) or states[0]} state serves a target: it may be built one way)"
    return f" (one antenna, switched to {', '.join(labels.get(s) or s for s in states)})"


def switching_line(r: Results, group: str, unit: str) -> str:
    """A switched antenna's switching in words (snrgain.decide.build.switching): the relays per state and, for an
    array, the phasing lines and which each element takes per state."""
    from snrgain.decide.build import switching

    sw = switching(r.groups()[group])
    bits = [f"one antenna switched between {len(sw['states'])} states ({sw['how_text']})"]
    relays = "relay" if sw["relays"] == 1 else f"{sw['relays']} relays"
    bits.append(
        f"{relays}: "
        + ", ".join(
            f"{st['state']} " + ("all off" if not st["relays_on"] else "on " + "+".join(map(str, st["relays_on"])))
            for st in sw["states"]
        )
    )
    if "lines_ns" in sw:
        bits.append(
            f"phasing lines of {sw['phasing_cable']}: "
            + ", ".join(
                f"L{i + 1} {d:.0f} ns = {length_text(m, unit, 2 if unit == 'm' else 1)}"
                for i, (d, m) in enumerate(zip(sw["lines_ns"], sw["lines_m"]))
            )
        )
        bits.append(
            "elements take "
            + "; ".join(f"{st['state']} " + ", ".join(f"L{j}" for j in st["element_lines"]) for st in sw["states"])
        )
    return "; ".join(bits)


def plan_text(r: Results, label: str = "Station plan"):
    """The station plan in words: what to build, in order, the dB each adds, and who serves which target when;
    ``label`` heads it (a band's own plan in a run of several bands says so)."""
    from rich.text import Text

    from snrgain.outputs.messages import PLAN_WORTH, plan_not_best_text

    p = r.plan
    out = Text()
    out.append(label, style="bold")
    limit = f" (at most {p.max_antennas} beside the reference)" if p.max_antennas else ""
    if not p.antennas:
        out.append(f"{limit}: no candidate adds {0.1:g} dB or more; keep {r.reference.name}.\n")
        for t, why in sorted(p.not_best.items()):  # a best left out (one that cannot be built where it stands)
            out.append(f"  Note: {plan_not_best_text(r.targets[t]['name'], why, r.site.get('length_unit', 'm'))}\n")
        return out
    out.append(
        f"{limit}: build {len(p.antennas)}, worth {signed_text(p.gain_db)} dB over {r.reference.name} alone "
        f"({PLAN_WORTH})\n"
    )
    for k, (name, added) in enumerate(zip(p.antennas, p.added_db)):
        out.append(f"  {k + 1}. {name}{switched_text(r, name)}: adds {signed_text(added)} dB{also_build([r], p, k)}\n")
        fragile = rests_on_place_text(r, name)
        if fragile:
            out.append(f"     {fragile}\n", style="bold")
    for t, rows in sorted(p.by_target.items()):
        served = "; ".join(f"{s.antenna} at {hours_text(s.utc_hours)} ({signed_text(s.snr_gain_db)} dB)" for s in rows)
        out.append(f"  {r.targets[t]['name']}: {served}\n")
    for t, why in sorted(p.not_best.items()):
        out.append(f"  Note: {plan_not_best_text(r.targets[t]['name'], why, r.site.get('length_unit', 'm'))}\n")
    return out


UNIT_RANGE_DB = 30.0
"""A phasing unit's setting whose two inputs differ by this much or more is said to need a fixed attenuator: a
unit's amplitude control commonly spans 20-30 dB (common practice, not a published figure)."""

PLACE_FRAGILE_DB = 6.0
"""A plan's antenna whose SNR gain falls by this much or more with a placed source 5 m off (its source-position
warning) is marked where the plan names it: a gain that rests on a null at the written place."""


def rests_on_place_text(r: Results, name: str) -> str:
    """What the plan says under an antenna (by its name, or a switched antenna's group) whose SNR gain falls by
    PLACE_FRAGILE_DB or more with a placed source moved 5 m (snrgain.decide.source_place); "" otherwise."""
    worst = None
    for n in r.notices:
        group = next((c.group for c in r.candidates if c.name == n.antenna), None)
        if n.code != "source-position" or n.values.get("reference") or name not in (n.antenna, group):
            continue
        if n.values["low_db"] <= -PLACE_FRAGILE_DB and (worst is None or n.values["low_db"] < worst.values["low_db"]):
            worst = n
    if worst is None:
        return ""
    v = worst.values
    return (
        f"! its gain rests on exactly where {v['source']!r} stands: {signed_text(v['low_db'])} dB with it "
        f"{v['step_m']:g} m off (see its warning); confirm where the source radiates from before building for it"
    )


def build_lines(r: Results) -> list[tuple[str, str]]:
    """(candidate, what to build) in words, one per candidate, from what each build sheet contains."""
    from snrgain.antennas import FAMILIES
    from snrgain.tools import wiredesign

    unit = r.site.get("length_unit", "m")  # lengths in the scenario's unit (snrgain.units.length_unit_of)
    out = []
    told = set()
    for a in r.candidates:
        if a.group is not None and a.group not in told:  # a switched antenna's switching, once, before its states
            told.add(a.group)
            out.append((a.group, switching_line(r, a.group, unit)))
        b = a.build
        bits = []
        loop = "loop_height_m" in b  # a loop is given by its shape, width and height, not a length
        if "length_m" in b and not loop:
            bits.append(length_both_text(b["length_m"], unit, 1, 0))
        if "depth_m" in b:  # a wire on the ground, laid on it or buried
            bits.append(
                "insulated wire laid on the ground"
                if not b.get("depth_m")
                else f"insulated wire buried {100 * b['depth_m']:.0f} cm deep"
                if unit == "m"
                else f"insulated wire buried {b['depth_m'] / 0.0254:.0f} in deep"
            )
        elif "height_m" in b:
            bits.append(
                f"height {length_both_text(b['height_m'], unit, 2 if unit == 'm' else 1, 1 if unit == 'm' else 2)}"
            )
        if "bearing_deg" in b and b.get("both_ways"):  # a figure-eight: its plane, both ways
            bits.append(f"its plane along {b['bearing_deg'] % 180:.0f}-{b['bearing_deg'] % 180 + 180:.0f} deg")
        elif "bearing_deg" in b:
            bits.append(f"toward {b['bearing_deg']:.0f} deg")
        if b.get("switched", {}).get("how") == "port":  # one line, heard at its forward or its reverse port
            bits.append(f"{b['port']} port")
        if loop:
            w, h = b["width_m"], b["loop_height_m"]
            other = "m" if unit == "ft" else "ft"
            bits.append(
                f"{b['shape']} {lengths_text([w, h], unit, 2 if unit == 'm' else 1)} "
                f"({lengths_text([w, h], other, 1 if unit == 'm' else 2)})"
            )
        if "termination_ohm" in b:
            far = f"; with a far ground of {b['far_ground_ohm']:.0f} ohm" if "far_ground_ohm" in b else ""
            e12 = f"nearest E12 value {b['termination_standard_ohm']:g} ohm"
            bits.append(f"termination {b['termination_ohm']:.0f} ohm ({e12}{far})")
            ans = b.get("termination_answer")
            if ans:  # the one answer (wiredesign.termination_answer), as `snrgain wire` prints it
                crit = criterion_words(ans["criterion"], ans.get("target"))
                bound = wiredesign.bound_text(ans, crit)
                if bound is None:
                    best = f"best {crit} at {ans['termination_ohm']:.0f} ohm"
                    flat = f"{ans['loss_at_0p7_db']:.2f} / {ans['loss_at_1p4_db']:.2f} dB lost at 0.7x / 1.4x"
                else:  # an end of the range searched: only the side inside it says how flat it is
                    best, k = bound, ("1p4", "1.4") if ans["at_search_bound"] == "low" else ("0p7", "0.7")
                    flat = f"{ans[f'loss_at_{k[0]}_db']:.2f} dB lost at {k[1]}x"
                bits.append(
                    f"{'you gave it; ' if b.get('termination_given') else ''}{best}"
                    f"{', ' if bound is None else '; it gives '}{ans['over_matched_db']:.2f} dB over the "
                    f"{ans['matched_ohm']:.0f} ohm of {ans['matched_words']}; {flat}; resistor {ans['caution_short']}"
                )
            if b.get("end_to_end_loss_db", 0.0) > 20.0:
                bits.append(
                    f"the wire loses {b['end_to_end_loss_db']:.0f} dB end to end, so the termination hardly matters"
                )
        if "turns_ratio" in b:
            bits.append(
                f"transformer {b['turns_ratio']:.2f}:1 to {b['coax_ohm']:g} ohm coax (mismatch "
                f"{b['mismatch_loss_db']:.2f} dB; practical {b['practical_turns_ratio']:g}:1, "
                f"{b['practical_mismatch_loss_db']:.2f} dB)"
            )
        if "delays_ns" in b:
            at = [
                f"at ({length_text(p[0], unit, 1)}, {length_text(p[1], unit, 1)}) " for p in b.get("positions_m") or []
            ]
            given = b.get("given_lines") or [None] * len(b["delays_ns"])
            lines = ", ".join(
                f"{where}{d:.0f} ns = "
                + (
                    f"{length_text(m, unit, 2 if unit == 'm' else 1)}"
                    if g is None
                    else f"{length_text(g['length_m'], unit, 2 if unit == 'm' else 1)} of your line (VF "
                    f"{g['velocity_factor']:g})"
                )
                for where, d, m, g in zip(
                    at or [""] * len(b["delays_ns"]), b["delays_ns"], b["phasing_lengths_m"], given
                )
            )
            which = ", element by element (east, north)" if at else ""
            name, vf = b["phasing_cable"], b["phasing_cable_velocity_factor"]
            cable = f" of {name} (VF {vf:g})" if not any(given) else f" (the others of {name}, VF {vf:g})"
            cable = cable if None in given else ""
            bits.append(f"phasing delays{which}: {lines}{cable}")
            short = b.get("reversed_build")
            if short:
                flipped = [str(i + 1) for i, t in enumerate(short["reversed"]) if t]
                lines_r = ", ".join(
                    f"{d:.0f} ns = {length_text(m, unit, 2 if unit == 'm' else 1)}"
                    for d, m in zip(short["delays_ns"], short["phasing_lengths_m"])
                )
                which_r = f"element{'s' if len(flipped) > 1 else ''} {', '.join(flipped)}"
                bits.append(
                    f"or built short (common practice): a phase-reversing transformer at {which_r} and lines of "
                    f"{lines_r}, element by element"
                )
            amps = b.get("amplitudes") or []
            if amps and max(amps) - min(amps) > 1e-3:
                bits.append("amplitudes " + ", ".join(f"{20 * np.log10(x):.1f} dB" if x > 0 else "off" for x in amps))
        if b.get("feed") in ("current", "lines"):
            z = ", ".join(f"{re:.0f}{im:+.0f}j" for re, im in b["feed_impedances_ohm"])
            how = "currents forced" if b["feed"] == "current" else f"fed through {b['line_impedance_ohm']:g} ohm lines"
            bits.append(f"{how}; feed impedances {z} ohm")
            if b["feed"] == "lines":
                cur = ", ".join(
                    f"{m:.2f} at {round(lag) % 360:.0f} deg"  # 359.7 deg reads 0, not 360
                    for m, lag in zip(b["current_magnitudes"], b["current_lags_deg"])
                )
                bits.append(f"element currents (lag) {cur}")
        if b.get("setting"):  # two antennas through a phase and amplitude unit
            st = b["setting"]
            first, second = b["antennas"]
            amp = st["amplitude_db"]
            if not np.isfinite(amp):  # the unit passes the first antenna alone (the other input off)
                bits.append(f"the phase and amplitude unit passes {first} alone ({second}'s input off)")
            else:
                lag = round(float(st["phase_lag_deg"])) % 360  # as a unit's dial reads: (-180, 180] deg, whole
                lag = lag - 360 if lag > 180 else lag
                way = "in phase" if lag == 0 else f"lagging {lag} deg" if lag > 0 else f"leading {-lag} deg"
                bits.append(
                    f"add {second} to {first} through a phase and amplitude unit: {second} {way} at "
                    f"{signed_text(amp)} dB"
                )
            if np.isfinite(amp) and abs(amp) >= UNIT_RANGE_DB:
                weak, strong = (first, second) if amp > 0 else (second, first)
                bits.append(
                    f"{weak} enters {abs(amp):.0f} dB below {strong}: beyond the {UNIT_RANGE_DB:g} dB a phasing "
                    f"unit's controls commonly span (common practice), a fixed attenuator in {weak}'s input makes it "
                    "up"
                )
            if "loss_with_error_db" in st:
                bits.append(f"a setting error of {st['error']} costs up to {st['loss_with_error_db']:.1f} dB")
        if "ground_loss_ohm" in b:
            bits.append(f"ground loss {b['ground_loss_ohm']:g} ohm")
        if b.get("feed_line"):
            bits.append(feed_line_text(b["feed_line"], unit))
        if not bits:  # nothing to cut or solder: a yardstick, or an antenna its source describes (the family says)
            family = FAMILIES.get(b.get("family", a.family))
            if family is not None and not family.build.buildable:
                bits.append("a yardstick, not an antenna to build")
            else:
                bits.append(
                    f"{family.summary if family else 'no dimensions to give'}: build it as its source describes"
                )
        out.append((a.name, "; ".join(bits)))
    return out


def feed_line_text(fl: dict, unit: str) -> str:
    """A feed line's entry of the build sheet (snrgain.model.feedline.summary) in words (the choke it suggests said
    as the warnings say it: messages.choke_text)."""
    from snrgain.outputs.messages import choke_text

    run = "buried" if fl["buried"] else f"at {length_text(fl['height_m'], unit, 1)}"
    where = fl.get("antenna_end") or "the antenna's ground"
    iso = f"shield meets {where}" if fl["isolation"] == "shared-ground" else "isolation transformer"
    choke = f", choke {fl['choke_ohm']:.0f} ohm" if fl["choke_ohm"] else ", no choke"
    cost = max((c for c in fl["snr_gain_cost_db"] if np.isfinite(c)), default=float("nan"))
    cost = round(cost, 1) + 0.0  # a cost below 0.05 dB, of either sign, reads 0.0 (not -0.0)
    if cost < 0:  # only a placed source's pickup, added as phasors, can lower the noise: say so, and how fragile
        effect = (
            f"adds {-cost:.1f} dB of SNR gain here (its pickup of a placed source partly cancels the antenna's; "
            "another route or cable length can turn that into a loss)"
        )
    else:
        effect = f"costs {cost:.1f} dB of SNR gain"
    quiet = (
        f"a choke of {choke_text(fl['choke_for_quiet_ohm'])} or more puts it {fl['quiet_below_db']:g} dB below the "
        "antenna's own"
        if fl["choke_for_quiet_ohm"] > 0
        else f"it is {fl['quiet_below_db']:g} dB or more below the antenna's own"
    )
    return (
        f"feed line {length_text(fl['length_m'], unit, 0)} {run} ({iso}{choke}; station ground "
        f"{fl['station_ground_ohm']:g} ohm): {signed_text(fl['noise_share_db'])} dB of the noise, {effect}; {quiet}; "
        "ground the shield where it enters and bond the grounds per the local electrical code"
    )


def build_text(r: Results):
    """The build sheets, compactly: the values to cut, wind and solder for each candidate."""
    from rich.text import Text

    out = Text()
    out.append("Build sheet", style="bold")
    out.append(" (resistors: nearest E12 value, IEC 60063; turns ratio antenna side over coax side)\n")
    for name, text in build_lines(r):
        out.append(f"  {name}: ", style="bold")
        out.append(text + "\n")
    return out


def ranking_table(results: Results, *, build: bool = False, plan_label: str = "Station plan", legend: bool = True):
    """A rich renderable: header lines, one ranking per target, the station plan (headed ``plan_label``), (``build``)
    the build sheet, and (``legend``) what the columns mean (:func:`columns_legend`)."""
    from rich.console import Group

    r = results
    parts = [_header(r)]
    from snrgain.model.labelled import labelled

    lab = labelled(r)
    parts += [target_table(r, i, lab) for i in range(len(r.targets))]
    parts.append(plan_text(r, plan_label))
    if build:
        parts.append(build_text(r))
    if legend:
        parts.append(columns_legend())
    return Group(*parts)


def columns_legend():
    """What the ranking's columns mean, in one dim paragraph (once under a run's rankings, every band's too)."""
    from rich.text import Text

    return Text(
        "RDF on the trade's scale (gain toward the target, weighted over its arrival elevations, over the gain "
        "averaged over the whole sphere: toward a low target it reads lower than an RDF at 20 deg, the elevation "
        "of the transmitting vertical's figures and of auto steering); "
        "noise: sky noise delivered to the receiver input; margin: that minus the chain's noise floor (worst "
        f"hour); '!' marks a receiver-noise-limited antenna; {PREAMP_LEGEND}.",
        style="dim",
    )
