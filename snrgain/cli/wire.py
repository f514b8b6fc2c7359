"""``snrgain wire``: line constants, length, termination and transformer for a long wire."""

from __future__ import annotations

import json

import click
import numpy as np

from snrgain.cli.options import handle_errors

SAFETY = ("Safety: keep the wire and its supports well clear of power lines; ground and disconnect the feed line "
          "when storms are near; have buried utilities located before driving ground rods; mark or bury wires "
          "on the ground where people walk. Follow local codes.")


@click.command("wire")
@click.option("--family", type=click.Choice(["beverage", "bog", "unterminated", "two-wire"]), default="beverage",
              show_default=True, help="Kind of long wire.")
@click.option("--frequency", required=True, help="Frequency with unit, e.g. '1.83 MHz'.")
@click.option("--length", required=True, help="Wire length with unit, e.g. '800 ft'.")
@click.option("--height", default=None, help="Height of the wire with unit (default 2.5 m; for bog the axis height above "
                                             "the soil, default 2 cm).")
@click.option("--gauge", type=click.IntRange(-3, 40), default=None, help="Wire gauge, AWG (default 14).")
@click.option("--diameter", default=None, help="Wire diameter with unit instead of --gauge, e.g. '1.6 mm'.")
@click.option("--ground", default="average", show_default=True, help="Named ground (see README) or 'perfect'.")
@click.option("--conductivity", default=None, help="Ground conductivity instead of --ground, e.g. '5 mS/m'.")
@click.option("--permittivity", type=click.FloatRange(1, 100), default=None, help="Ground relative permittivity.")
@click.option("--elevation", type=click.FloatRange(0, 90), default=20.0, show_default=True,
              help="Target elevation [deg] along the wire's bearing, for RDF and the length rule.")
@click.option("--termination", default="auto", show_default=True, help="Termination resistor [ohm] or 'auto' (|Z0|).")
@click.option("--feed-ground", default="20 ohm", show_default=True, help="Feed ground-rod resistance.")
@click.option("--far-ground", default="20 ohm", show_default=True, help="Far ground-rod resistance.")
@click.option("--coax", type=click.Choice(["50", "75"]), default="75", show_default=True, help="Feed-line impedance [ohm].")
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table", show_default=True)
@handle_errors
def wire(family, frequency, length, height, gauge, diameter, ground, conductivity, permittivity, elevation,
         termination, feed_ground, far_ground, coax, fmt):
    """Design figures for a long receiving wire at one frequency.

    Prints the line's velocity factor, attenuation and Z0; the traditional
    maximum-effective-length rule beside the length the model finds best for
    RDF toward --elevation along the wire; the textbook termination (|Z0|)
    beside the ones of best RDF and best front-to-back; and the transformer
    turns ratio that matches the feed to the coax, with its mismatch loss.
    """
    from noisemodels.sphere import upper_hemisphere
    from snrgain import wiredesign
    from snrgain.antennas import from_spec
    from snrgain.targets import from_bearing
    from snrgain.units import parse_quantity

    f = parse_quantity(frequency, "frequency")
    spec = {"family": family, "length": length, "coax": int(coax), "feed_ground": feed_ground}
    if family != "unterminated":
        spec["far_ground"] = far_ground
    if family in ("beverage", "bog"):
        spec["termination"] = termination if termination == "auto" else parse_quantity(termination, "resistance")
    elif termination != "auto":
        raise ValueError(f"--termination: the {family} family sets its own far end; leave --termination out")
    spec["height"] = height or ("2 cm" if family == "bog" else "2.5 m")
    if gauge is not None:
        spec["gauge"] = gauge
    if diameter is not None:
        spec["diameter"] = diameter
    if conductivity is not None or permittivity is not None:
        if conductivity is None or permittivity is None:
            raise ValueError("--conductivity and --permittivity go together")
        spec["ground"] = {"conductivity": conductivity, "permittivity": permittivity}
    else:
        spec["ground"] = ground
    ant = from_spec(spec)
    ant.check_frequency(f)
    target = from_bearing("along the wire", bearing_rad=0.0, elevation_lo_rad=np.radians(elevation),
                          elevation_hi_rad=np.radians(elevation))
    design = ant.design(f)
    ln = ant.line(f)
    length_adv = wiredesign.best_length(spec, f, target=target)
    out = {"antenna": ant.describe(), **design, "target_elevation_deg": elevation,
           "length_rule_m": length_adv.rule_m, "best_length_m": length_adv.best_m,
           "best_length_rdf_db": length_adv.best_rdf_db,
           "rdf_db": wiredesign.rdf_db(ant, f, target, upper_hemisphere(32)),
           "front_to_back_db": wiredesign.front_to_back_db(ant, f, target),
           "forward_gain_dbi": float(ant.gain_dbi(f, 0.0, elevation)),
           "safety": SAFETY}
    if family in ("beverage", "bog"):
        t_rdf = wiredesign.best_termination(spec, f, target=target, metric="rdf")
        t_fb = wiredesign.best_termination(spec, f, target=target, metric="front_to_back")
        out.update(textbook_termination_ohm=t_rdf.textbook_ohm, best_rdf_termination_ohm=t_rdf.best_ohm,
                   best_front_to_back_termination_ohm=t_fb.best_ohm)
    tr = wiredesign.transformer(ant, f)
    out.update(exact_turns_ratio=tr.exact_turns_ratio, practical_turns_ratio=tr.practical_turns_ratio,
               practical_mismatch_loss_db=tr.practical_mismatch_loss_db)
    if fmt == "json":
        from snrgain.evaluate import _jsonable

        click.echo(json.dumps(_jsonable(out), sort_keys=True, indent=2))
        return
    ft = 1 / 0.3048
    lines_out = [
        f"{family}: {ant.length_m:.1f} m ({ant.length_m * ft:.0f} ft) at {ant.wire_height_m():g} m over "
        f"{out['antenna']['ground']} ground, {f / 1e6:g} MHz",
        f"  line: velocity factor {ln.velocity_factor:.3f}, attenuation {ln.attenuation_db_per_100m:.2f} dB/100 m "
        f"({ln.attenuation_db_per_100ft:.2f} dB/100 ft), Z0 {ln.z0.real:.0f}{ln.z0.imag:+.0f}j ohm (|Z0| {abs(ln.z0):.0f})",
        f"  length: rule of thumb lambda/(4(1/k - cos {elevation:g} deg)) = {length_adv.rule_m:.0f} m "
        f"({length_adv.rule_m * ft:.0f} ft); model's best for RDF = {length_adv.best_m:.0f} m "
        f"({length_adv.best_m * ft:.0f} ft), RDF {length_adv.best_rdf_db:.1f} dB",
        f"  this wire: forward gain {out['forward_gain_dbi']:.1f} dBi, RDF {out['rdf_db']:.1f} dB, "
        f"front-to-back {out['front_to_back_db']:.1f} dB at {elevation:g} deg",
    ]
    if "textbook_termination_ohm" in out:
        lines_out.append(f"  termination: |Z0| less the far rod = {out['textbook_termination_ohm']:.0f} ohm; best RDF "
                         f"{out['best_rdf_termination_ohm']:.0f} ohm; best front-to-back "
                         f"{out['best_front_to_back_termination_ohm']:.0f} ohm")
    zin = design["feed_point_impedance_ohm"]
    lines_out += [
        f"  feed point {zin[0]:.0f}{zin[1]:+.0f}j ohm; to {coax} ohm coax: turns ratio {tr.exact_turns_ratio:.2f} "
        f"(impedance {tr.exact_turns_ratio ** 2:.1f}:1); practical {tr.practical_turns_ratio:g}:1 turns loses "
        f"{tr.practical_mismatch_loss_db:.2f} dB",
        "", SAFETY,
    ]
    click.echo("\n".join(lines_out))
