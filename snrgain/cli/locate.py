"""``snrgain locate``: fit the bearing and strength of a local noise source to readings."""

from __future__ import annotations

from pathlib import Path

import click

from snrgain.cli.options import (
    FiniteRange,
    check_output,
    emit_json,
    handle_errors,
    plot_option,
    progress,
    read_scenario_text,
    readings_preamble,
    scenario_copy_options,
    write_output,
)


@click.command("locate")
@click.argument("readings", type=click.Path(dir_okay=False, path_type=str), required=False)
@click.option("--example", is_flag=True, help="Print an example readings file and exit.")
@click.option("--sources", type=click.IntRange(1, 3), default=1, show_default=True, help="Number of sources to fit.")
@click.option("--fit-elevation", is_flag=True, help="Fit each source's elevation too (default: held at --elevation).")
@click.option(
    "--elevation",
    type=FiniteRange(0, 85),
    default=5.0,
    show_default=True,
    help="Source elevation [deg] when not fitted.",
)
@plot_option("a polar plot of the fitted direction")
@click.option(
    "--name",
    default="located source",
    show_default=True,
    help="Name of the source written to the scenario (numbered when several); one of that name is replaced.",
)
@scenario_copy_options("the fitted sources added as [[noise.local]]")
@handle_errors
def locate(readings, example, sources, fit_elevation, elevation, plot, name, scenario, write_to, overwrite, fmt):
    """Fit local noise sources (bearing, level) and a diffuse background to READINGS.

    Each reading is the noise level on a known antenna in a known orientation: a small loop turned in
    steps, fixed directional antennas, the vertical.  The fit uses the antennas' modelled patterns;
    the result gives each bearing with its uncertainty (and the 180 deg ambiguity where the antennas
    cannot tell front from back) and the level as Fa.  A reading the fit misses by more than its
    uncertainty (default 2 dB) is named.  With at = [east, north] (where the readings were taken) and
    distance in the file, the source is written to the scenario at its place.  See --example for the file.
    """
    from snrgain.tools import locate as loc

    if readings_preamble(
        example_text=loc.EXAMPLE, example=example, readings=readings, scenario=scenario, write_to=write_to
    ):
        return
    for target in (plot, write_to):
        check_output(target, overwrite=overwrite)
    data = loc.load_readings(Path(readings))
    try:
        with progress(None, f"locate: fitting {sources} source(s) to {len(data.readings)} reading(s)"):
            res = loc.locate(
                data.readings,
                freq_hz=data.freq_hz,
                bandwidth_hz=data.bandwidth_hz,
                n_sources=sources,
                fit_elevation=fit_elevation,
                elevation_deg=elevation,
            )
    except loc.LocateError as exc:  # the readings cannot answer: say which file
        raise ValueError(f"{readings}: {exc}") from None
    out = loc.as_dict(res, freq_hz=data.freq_hz, bandwidth_hz=data.bandwidth_hz)
    if plot is not None:
        from snrgain.outputs import plots

        plots.save(plots.located_sources(res), plot, overwrite=overwrite)
        out["plot"] = plot
    if scenario is not None:
        text = read_scenario_text(scenario)
        write_output(
            write_to,
            loc.with_sources(text, res, at_m=data.at_m, distances_m=data.distances_m, name=name),
            overwrite=overwrite,
        )
        out["written"] = write_to
    if fmt == "json":
        emit_json(out)
        return
    lines = [res.message if res.ok else "FIT FAILED: " + res.message]
    for i, s in enumerate(res.sources):
        amb = f" (or {(s.bearing_deg + 180) % 360:.0f} deg)" if s.ambiguous_180 else ""
        lines.append(
            f"  source {i + 1}: bearing {s.bearing_deg:.0f} +- {s.bearing_sigma_deg:.0f} deg{amb}, "
            f"elevation {s.elevation_deg:.0f} deg, Fa {s.fa_db:.1f} dB on P.372's reference monopole"
        )
    lines.append(
        f"  diffuse background: Fa {res.background_fa_db:.1f} dB; residual rms {res.residual_rms_db:.2f} dB "
        f"over {len(res.readings_dbm)} readings"
    )
    for entry in out["readings"]:
        lines.append(
            f"    {entry['label']:<16} read {entry['level_dbm']:7.1f} dBm, fitted {entry['fitted_dbm']:7.1f} dBm"
        )
    if plot:
        lines.append(f"  wrote {plot}")
    if scenario:
        lines.append(f"  wrote {write_to}")
    click.echo("\n".join(lines))
