"""``snrgain calibrate``: line constants and ground from antenna-analyser readings of a laid wire."""

from __future__ import annotations

from pathlib import Path

import click
import numpy as np

from snrgain.cli.options import (
    FiniteRange,
    check_output,
    composed_name,
    emit_json,
    handle_errors,
    progress,
    read_scenario_text,
    readings_preamble,
    scenario_copy_options,
    write_output,
)


@click.command("calibrate")
@click.argument("readings", type=click.Path(dir_okay=False, path_type=str), required=False)
@click.option("--example", is_flag=True, help="Print an example readings file and exit.")
@click.option(
    "--expected-vf",
    type=FiniteRange(0.05, 1.0),
    default=None,
    help="Velocity factor expected, to pick the branch of a long wire's phase from open/short readings (ignored "
    "when the wire is shorter than a quarter wave).  Default: a quarter-wave resonance among the readings, else "
    "the wire model's own over the wire's ground.",
)
@click.option(
    "--permittivity",
    type=FiniteRange(1, 100),
    default=None,
    help="Fix the soil's relative permittivity and fit only its conductivity.",
)
@click.option(
    "--into",
    "into",
    default=None,
    metavar="NAME",
    callback=composed_name,
    help="With --scenario: write the measured velocity factor, attenuation and Z0 into the candidate NAME "
    "(the readings nearest the scenario's frequency) instead of the fitted ground into [site]; only that "
    "antenna changes.",
)
@scenario_copy_options("the fitted ground written into its [site] section")
@handle_errors
def calibrate(readings, example, expected_vf, permittivity, into, scenario, write_to, overwrite, fmt):
    """Turn analyser READINGS of a laid wire into its line constants and the soil's constants.

    Open/short readings give Z0 = sqrt(Zoc Zsc) and tanh(gamma L) = sqrt(Zsc/Zoc): velocity factor, attenuation
    and Z0. A quarter-wave resonance gives VF = 4 L f / c. The ground's conductivity and permittivity are then
    fitted so that the wire model reproduces them, with uncertainties; the textbook termination (|Z0| less the
    far rod, at the reading nearest the --scenario's band) and the transformer follow from the measured Z0
    ('rank --build' gives the resistor of best SNR gain). A fit that runs to an end of the range searched
    (permittivity 1 to 100, conductivity 0.01 mS/m to 10 S/m) is said to be no ground, and --write refuses to
    write it. A BOG lying on the soil also gets its height above the soil fitted with the soil held: the
    readings' [wire] ground if given, else with --scenario the scenario's (the --into candidate's own, else
    [site]'s), else moist loam; the output says which. See --example for the file.
    """
    from snrgain.tools import calibrate as cal

    if readings_preamble(
        example_text=cal.EXAMPLE, example=example, readings=readings, scenario=scenario, write_to=write_to
    ):
        return
    if into is not None and scenario is None:
        raise click.UsageError("--into goes with --scenario and --write")
    check_output(write_to, overwrite=overwrite, replaces=scenario)  # before any work, as the other copies are
    sc_data = None
    if scenario is not None:
        from snrgain.scenario import read_source

        sc_data, _, _ = read_source(Path(scenario))
        if into is not None:  # before any work; a switched wire's state names the wire
            into = cal.into_table(sc_data, into)
    try:
        data = cal.load_readings(readings)
        if sc_data is not None:  # the wire lies at the scenario's site: over its ground, unless [wire] gives one
            data = cal.assume_scenario_ground(data, *cal.scenario_ground(sc_data, into))
        count = (
            f"{len(data.open_short)} open/short reading(s), {len(data.resonance_hz)} resonance(s), "
            f"{len(data.sweeps)} sweep(s)"
        )
        with progress(None, f"calibrate: fitting {count}"):
            band_hz = None  # the band the textbook termination is worked for: a file of one band's
            if sc_data is not None and isinstance(sc_data.get("band"), dict):
                band_hz = read_frequency(sc_data)
            res = cal.calibrate(data, expected_velocity_factor=expected_vf, permittivity=permittivity, freq_hz=band_hz)
    except cal.ReadingError as exc:  # the readings cannot answer: say which file
        raise ValueError(f"{readings}: {exc}") from None
    out = res.as_dict()
    if scenario is not None:
        text = read_scenario_text(scenario)
        if into is None:
            if not res.fit.usable:
                raise ValueError(f"--write: {res.fit.unusable_text()}; no copy written")
            new = cal.with_ground(text, res.fit.scenario_value())
        else:
            freq = read_frequency(sc_data)
            used = cal.nearest_constants(res.constants, freq)
            new = cal.with_measured_line(text, into, used)
            out["written_into"] = into
            if abs(np.log(used.freq_hz / freq)) > np.log(1.2):
                click.echo(
                    f"warning: the readings were taken at {used.freq_hz / 1e6:g} MHz and the scenario listens at "
                    f"{freq / 1e6:g} MHz; a wire's constants change with frequency: measure near the band",
                    err=True,
                )
        write_output(write_to, new, overwrite=overwrite, replaces=scenario)
        out["written"] = write_to
    if fmt == "json":
        emit_json(out)
        return
    ant = res.antenna
    lines_out = [f"{ant.family} wire, {ant.length_m:.1f} m"]
    for ln in res.constants:
        lines_out.append(
            f"  {ln.freq_hz / 1e6:g} MHz: velocity factor {ln.velocity_factor:.3f}, attenuation "
            f"{ln.attenuation_db_per_100m:.2f} dB/100 m ({ln.attenuation_db_per_100ft:.2f} dB/100 ft), "
            f"Z0 {ln.z0.real:.0f}{ln.z0.imag:+.0f}j ohm"
        )
    if res.branch is not None and len(res.constants):
        lines_out.append(f"  (the phase's branch taken near velocity factor {res.branch[0]:.3f}: {res.branch[1]})")
    for r in res.resonances:
        lines_out.append(
            f"  quarter-wave resonance at {r['freq_hz'] / 1e6:g} MHz: velocity factor {r['velocity_factor']:.3f}"
        )
    for sw in res.sweeps:
        vf = sw.velocity_factor
        parts = [f"  sweep {Path(sw.label).name} (far end {sw.far_end}):"]
        if vf is not None:
            fs = [e["freq_hz"] for e in sw.extremes]
            parts.append(
                f"velocity factor {vf:.3f} (median of {len(fs)} extremes, {min(fs) / 1e6:g}-{max(fs) / 1e6:g} MHz)"
            )
        if sw.z0_magnitude_ohm is not None:
            parts.append(f"|Z0| {sw.z0_magnitude_ohm:.0f} ohm")
        if sw.attenuation_db_per_100m is not None:
            parts.append(f"attenuation {sw.attenuation_db_per_100m:.2f} dB/100 m")
        if sw.variation is not None:
            parts.append(
                f"|Z| varies {sw.variation:.2f}:1 over the sweep (trim the termination for the least variation)"
            )
        lines_out.append(" ".join(parts))
        lines_out += [f"    warning: {w}" for w in sw.warnings]
    lines_out += [f"  warning: {w}" for w in res.warnings]
    g = out["fitted_ground"]
    if g["permittivity_fixed"]:
        eps_txt = f"{g['permittivity']:.3g} (fixed)"
    elif g["permittivity_sigma"] is None:
        eps_txt = f"{g['permittivity']:.3g} (at an end of its range)"
    else:
        eps_txt = f"{g['permittivity']:.3g} +- {g['permittivity_sigma']:.2g}"
    lines_out.append(
        f"  fitted ground: conductivity {g['conductivity_s_per_m'] * 1e3:.3g} mS/m (x/÷ "
        f"{g['conductivity_uncertainty_factor']:.3g}), permittivity {eps_txt}; residual rms "
        f"{g['residual_rms']:.2f} (in measurement uncertainties)"
    )
    if res.fit.usable:
        lines_out.append(f"  scenario: [site] ground = {res.fit.scenario_value()}")
    else:
        lines_out.append(f"  warning: {res.fit.unusable_text()}")
    if res.height_fit is not None:
        h = res.height_fit
        over = f"{cal.ground_name(ant)} ({res.ground_source_text})"
        if h.at_lowest:
            where = "rests on the soil (and the soil is wetter, or the wire slower, than the model has it)"
        elif h.at_highest:
            where = f"sits {100 * h.height_m:.0f} cm up or more, more than grass holds a wire: the soil is drier"
        else:
            where = (
                f"sits {100 * h.height_m:.1f} cm above the soil ({100 * h.low_m:.1f}-{100 * h.high_m:.1f} cm), "
                "the height grass and litter hold it at"
            )
        lines_out.append(f"  or, over {over}: the wire's axis {where}; residual rms {h.residual_rms:.2f}")
    if res.suggested_termination_ohm is not None:
        at = "the sweeps' median |Z0|" if res.suggested_at_hz is None else f"|Z0| at {res.suggested_at_hz / 1e6:g} MHz"
        lines_out.append(
            f"  textbook termination {res.suggested_termination_ohm:.0f} ohm ({at} less the far rod; 'rank "
            "--build' gives the resistor of best SNR gain under the site's noise, which can differ); transformer turns "
            f"ratio {res.suggested_turns_ratio:.2f} to {ant.params.coax} ohm coax"
        )
    if scenario is not None:
        what = f"the measured line into {into!r}" if into else "the fitted ground into [site]"
        if into is not None and sc_data is not None:
            from snrgain.scenario.connected import state_names

            states = state_names(sc_data).get(into)
            what += f", one wire for its {len(states)} states" if states else ""
        lines_out.append(f"  wrote {write_to} ({what})")
    click.echo("\n".join(lines_out))


def read_frequency(data: dict) -> float:
    """The scenario's band frequency [Hz], read with its units."""
    from snrgain.units import parse_quantity

    try:
        return float(parse_quantity(data["band"]["frequency"], "frequency"))
    except (KeyError, TypeError) as exc:
        raise ValueError("--into: the scenario has no [band] frequency") from exc
