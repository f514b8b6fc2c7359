"""``snrgain wire``: line constants, length, termination and transformer for a long wire."""

from __future__ import annotations

import click

from snrgain.cli.options import FiniteRange, emit_json, handle_errors, progress


class WireFamily(click.Choice):
    """The long-wire families, read from the antenna registry (the classes that declare ``long_wire``) when first
    needed, so that the command line starts without importing the antennas."""

    def __init__(self) -> None:  # no fixed list of choices: see the property
        self.case_sensitive = True

    @property
    def choices(self) -> tuple[str, ...]:
        from snrgain.constants import wire_families

        return wire_families()


@click.command("wire")
@click.option("--family", type=WireFamily(), default="beverage", show_default=True, help="Kind of long wire.")
@click.option("--frequency", required=True, help="Frequency with unit, e.g. '1.83 MHz'.")
@click.option("--length", required=True, help="Wire length with unit, e.g. '800 ft'.")
@click.option(
    "--height",
    default=None,
    help="Height of the wire with unit (default 2.5 m; for bog the axis height above the soil, default 2 cm for a "
    "wire in grass, or 'on soil').",
)
@click.option("--depth", default=None, help="Bury a bog: its axis below the surface with unit, e.g. '10 cm'.")
@click.option("--insulation-thickness", default=None, help="A bog's insulation thickness with unit (default 0.8 mm).")
@click.option(
    "--insulation-permittivity",
    type=FiniteRange(1, 20),
    default=None,
    help="A bog's insulation relative permittivity (default 3; PVC 3-4 at these frequencies).",
)
@click.option("--gauge", type=click.IntRange(-3, 40), default=None, help="Wire gauge, AWG (default 14).")
@click.option("--diameter", default=None, help="Wire diameter with unit instead of --gauge, e.g. '1.6 mm'.")
@click.option(
    "--ground",
    default=None,
    help="Named ground (see README) or 'perfect'.  [default: moist loam, unless --conductivity]",
)
@click.option("--conductivity", default=None, help="Ground conductivity instead of --ground, e.g. '5 mS/m'.")
@click.option("--permittivity", type=FiniteRange(1, 100), default=None, help="Ground relative permittivity.")
@click.option(
    "--elevation",
    type=FiniteRange(1, 90),
    default=20.0,
    show_default=True,
    help="Target elevation [deg] along the wire's bearing, for RDF and the length rule (from 1 deg: at 0 deg "
    "an antenna over the ground receives nothing, its direct and reflected waves cancelling).",
)
@click.option(
    "--termination",
    default="auto",
    show_default=True,
    help="Termination resistor [ohm] or 'auto' (the one of best --best-for).",
)
@click.option(
    "--best-for",
    type=click.Choice(["rdf", "front_to_back", "z0"]),
    default="rdf",
    show_default=True,
    help="What termination 'auto' maximises along the wire at 20 deg (z0: |Z0| less the far ground, the trade's "
    "rule for a flat SWR); the same resistor rank --build and the report give for that auto_for in a scenario.  "
    "A scenario's default, auto_for = 'snr', weighs the site's own noise, which this command does not know: "
    "rank --build gives that one.",
)
@click.option(
    "--feed-ground",
    default="20 ohm",
    show_default=True,
    help="Feed end's ground: a resistance, or 'rod' (one 1.2 m rod in the soil, Dwight's formula).",
)
@click.option(
    "--far-ground",
    default="20 ohm",
    show_default=True,
    help="Far end's ground: a resistance, or 'rod' (one 1.2 m rod in the soil, Dwight's formula).",
)
@click.option(
    "--coax", type=click.Choice(["50", "75"]), default="75", show_default=True, help="Feed-line impedance [ohm]."
)
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table", show_default=True)
@handle_errors
def wire(
    family,
    frequency,
    length,
    height,
    depth,
    insulation_thickness,
    insulation_permittivity,
    gauge,
    diameter,
    ground,
    conductivity,
    permittivity,
    elevation,
    termination,
    best_for,
    feed_ground,
    far_ground,
    coax,
    fmt,
):
    """Design figures for a long receiving wire at one frequency.

    Prints the line's velocity factor, attenuation and Z0; the traditional
    maximum-effective-length rule beside the length the model finds best for
    RDF toward --elevation along the wire; the termination resistor of best
    RDF (or --best-for) with its E12 value, |Z0| beside it and how flat the optimum is; and the transformer
    turns ratio that matches the feed to the coax, with its mismatch loss.
    """
    import numpy as np

    from snrgain.tools import wiredesign
    from snrgain.units import parse_quantity

    f = parse_quantity(frequency, "frequency")
    spec = wiredesign.wire_spec(
        family,
        length=length,
        height=height,
        termination=termination,
        feed_ground=feed_ground,
        far_ground=far_ground,
        gauge=gauge,
        diameter=diameter,
        ground=ground,
        conductivity=conductivity,
        permittivity=permittivity,
        coax=int(coax),
        depth=depth,
        insulation_thickness=insulation_thickness,
        insulation_permittivity=insulation_permittivity,
    )
    if "termination" in spec:
        spec["auto_for"] = best_for
    with progress(None, "wire: line constants, length and termination"):
        out = wiredesign.wire_report(spec, f, elevation_rad=float(np.radians(elevation)))
    if fmt == "json":
        emit_json(out)
        return
    ant, ln = out["antenna"], out["line"]
    from snrgain.units import FT_PER_M as ft
    from snrgain.units import number_text

    length_m, rule_m, best_m = ant["length_m"], out["length_rule_m"], out["best_length_m"]
    z0 = complex(*ln["z0_ohm"])
    if "depth_m" not in ant:  # a wire in the air (one on the ground may be buried: its description gives a depth)
        where = f"at {ant['height_m']:g} m over"
    elif ant.get("depth_m"):
        where = f"buried {100 * ant['depth_m']:g} cm deep in"
    elif spec.get("height") == "on soil":
        where = "resting on"
    else:
        where = f"its axis {100 * ant['height_m']:g} cm above"
    soil = f"{ant['ground']} ground"
    if ant["ground"] == "custom" and isinstance(spec.get("ground"), dict):  # given as numbers: say them
        g = spec["ground"]
        soil = f"a ground of {g.get('conductivity')} and relative permittivity {g.get('permittivity'):g}"
    lines_out = [
        f"{family}: {length_m:.1f} m ({length_m * ft:.0f} ft) {where} {soil}, {f / 1e6:g} MHz",
        f"  line: velocity factor {ln['velocity_factor']:.3f}, "
        f"attenuation {ln['attenuation_db_per_100m']:.2f} dB/100 m "
        f"({ln['attenuation_db_per_100ft']:.2f} dB/100 ft), Z0 {z0.real:.0f}{z0.imag:+.0f}j ohm (|Z0| {abs(z0):.0f})",
        f"  length: rule of thumb lambda/(4(1/k - cos {elevation:g} deg)) = "
        + (
            f"{rule_m:.0f} m ({rule_m * ft:.0f} ft)"
            if rule_m is not None and np.isfinite(rule_m)
            else "no bound (the wave on the wire keeps pace with the arriving wave)"
        )
        + f"; model's best for RDF = {best_m:.0f} m "
        f"({best_m * ft:.0f} ft), RDF {out['best_length_rdf_db']:.1f} dB",
        f"  this wire: forward gain {out['forward_gain_dbi']:.1f} dBi, RDF {out['rdf_db']:.1f} dB, "
        f"front-to-back {number_text(out['front_to_back_db'], FB_FORMAT)} dB at {elevation:g} deg",
    ]
    if "textbook_termination_ohm" in out:
        lo, hi = out["termination_search_ohm"]
        spans = out["termination_rdf_span_db"], out["termination_front_to_back_span_db"]
        if max(spans) < 0.5:
            lines_out.append(
                f"  termination: hardly matters on this wire (RDF and front-to-back move under 0.5 dB from {lo:.0f} "
                f"to {hi:.0f} ohm: the line's loss absorbs what the far end reflects); |Z0| less the far ground "
                f"({out['far_ground_ohm']:.0f} ohm) = {out['textbook_termination_ohm']:.0f} ohm"
            )
        lines_out += termination_lines(out)
        if "given_termination" in out:
            lines_out.append(given_termination_line(out))
    zin = out["feed_point_impedance_ohm"]
    exact = out["exact_turns_ratio"]
    lines_out += [
        f"  feed point {zin[0]:.0f}{zin[1]:+.0f}j ohm; to {coax} ohm coax: turns ratio {exact:.2f} "
        f"(impedance {exact**2:.1f}:1); practical {out['practical_turns_ratio']:g}:1 turns loses "
        f"{out['practical_mismatch_loss_db']:.2f} dB",
        "",
        out["safety"],
    ]
    click.echo("\n".join(lines_out))


FB_FORMAT = "{:.1f}"
"""The wire's front-to-back [dB] as printed (through number_text: never "-0.0")."""


def given_termination_line(out: dict) -> str:
    """What the resistor given (--termination) costs against the best ones, all rated alike along the wire at 20 deg
    (the answers' elevation, whatever --elevation is): its RDF below the best RDF's, its front-to-back against the
    best front-to-back's."""
    from snrgain.units import number_text

    answers, given = out["termination_answers"], out["given_termination"]
    best_rdf, best_fb = answers["rdf"], answers["front_to_back"]
    lost = best_rdf["figure_db"] - given["rdf_db"]
    return (
        f"  given: {given['ohm']:.0f} ohm (the wire above is built with it), along the wire at 20 deg: RDF "
        f"{given['rdf_db']:.1f} dB, {max(lost, 0.0):.2f} dB below the best, {best_rdf['termination_ohm']:.0f} ohm; "
        f"front-to-back {number_text(given['front_to_back_db'], FB_FORMAT)} dB against "
        f"{number_text(best_fb['figure_db'], FB_FORMAT)} dB at {best_fb['termination_ohm']:.0f} ohm"
    )


def termination_lines(out: dict) -> list[str]:
    """The one termination answer (wiredesign.termination_answer) as the builder reads it: the resistor of the
    antenna's criterion, its E12 value, |Z0| and the dB between, how flat the optimum is, the other criterion's
    resistor, and the cautions."""
    answers = out["termination_answers"]
    crit = out.get("termination_criterion", "rdf")
    names = {"rdf": "RDF", "front_to_back": "front-to-back"}
    from snrgain.tools.wiredesign import bound_text
    from snrgain.units import number_text

    a = answers.get(crit, answers["rdf"])
    other = answers["front_to_back" if a["criterion"] == "rdf" else "rdf"]
    ohm, name = a["termination_ohm"], names[a["criterion"]]
    bound = bound_text(a, f"{name} along the wire at 20 deg")
    if bound is None:
        head = f"the resistor of best {name} along the wire at 20 deg ({number_text(a['figure_db'], FB_FORMAT)} dB)"
        flat = [(0.7, "loss_at_0p7_db"), (1.4, "loss_at_1p4_db")]
    else:  # an end of the range searched: only the side inside the range says how flat it is
        head = bound
        flat = [(1.4, "loss_at_1p4_db")] if a["at_search_bound"] == "low" else [(0.7, "loss_at_0p7_db")]
    flatness = ", ".join(f"{a[key]:.2f} dB lost at {k:g}x ({k * ohm:.0f} ohm)" for k, key in flat)
    other_bound = " (an end of the range searched)" if other.get("at_search_bound") else ""
    return [
        f"  termination: fit {ohm:.0f} ohm (nearest E12 {a['standard_ohm']:g} ohm, "
        f"{a['standard_loss_db']:.2f} dB off {'the best' if bound is None else f'{ohm:.0f} ohm'}), {head}",
        f"    |Z0| less the far ground ({out['far_ground_ohm']:.0f} ohm) = {a['matched_ohm']:.0f} ohm, the trade's "
        f"rule for a flat SWR (common practice): {a['over_matched_db']:.2f} dB less {name} than {ohm:.0f} ohm",
        f"    how flat: {flatness}; best {names[other['criterion']]}: {other['termination_ohm']:.0f} ohm "
        f"(E12 {other['standard_ohm']:g}){other_bound}",
        "    " + a["caution"],
    ]
