"""``snrgain rank``: run a scenario; per target the candidates ranked by SNR gain, the station plan."""

from __future__ import annotations

import click

from snrgain.cli.options import (
    allow_long_option,
    band_option,
    check_output,
    check_suffix,
    handle_errors,
    nside_option,
    overwrite_option,
    p372_dir_option,
    reference_option,
    scenario_argument,
    write_output,
)


@click.command("rank")
@scenario_argument
@click.option(
    "--format",
    "fmt",
    type=click.Choice(["table", "json", "csv"]),
    default="table",
    show_default=True,
    help="table: per-target rankings and the station plan for the terminal; json: everything, units in the "
    "keys (schema in README); csv: one row per target, antenna, month and hour listened.",
)
@click.option(
    "--build",
    is_flag=True,
    help="Add the build sheet to the table: terminations, transformers, phasing delays and cable lengths.",
)
@click.option(
    "--output",
    "-o",
    type=click.Path(dir_okay=False, path_type=str),
    default=None,
    help="Write to this file instead of standard output (whole or not at all).",
)
@click.option(
    "--all-warnings",
    is_flag=True,
    help="Say every warning, also those on candidates the station plan does not build (their preamplifier, "
    "resistor, length or phasing lines); by default those are counted in one line.",
)
@overwrite_option
@allow_long_option
@nside_option
@p372_dir_option
@reference_option
@band_option
@handle_errors
def rank(scenario, fmt, build, all_warnings, output, overwrite, allow_long, nside, p372_dir, reference, band):
    """Which antenna to build for each target of SCENARIO, and how much better than its reference.

    SNR gain is (S/N of the candidate) / (S/N of the reference) toward a
    target, with the noise sky of the site at the target's months and hours
    and the receiver's own noise.  For each target the candidates are ranked
    by their median SNR gain, with its 10-90 % band over the ground, the
    P.372 noise deciles and the hours ([uncertainty] in the scenario), and
    the chance of beating the reference by 3 dB.  The station plan then names
    the set of antennas to build and which serves which target at which hours.

    A scenario of several bands ([[band]]) is answered band by band (each as a file of that band alone would
    be), then with one station plan for every band; --band NAME answers one of them.
    """
    from snrgain.cli.options import band_names, load_scenario, progress
    from snrgain.model.pipeline import evaluate, evaluate_bands
    from snrgain.outputs import output as out
    from snrgain.outputs.messages import apart_text, said_once

    check_output(output, overwrite=overwrite)
    fmt = check_suffix(output, fmt, {"json": (".json",), "csv": (".csv",), "table": (".txt",)})
    if build and fmt == "csv":
        raise click.BadParameter(
            "the build sheet goes with --format table (--format json holds the build values always); csv has rows "
            "per target, antenna and hour only",
            param_hint="--build",
        )
    several = band is None and band_names(scenario)
    with progress(None, f"rank: evaluating {scenario}"):
        if several:
            results = evaluate_bands(
                scenario,
                nside=int(nside) if nside else None,
                p372_dir=p372_dir,
                allow_long=allow_long,
                reference=reference,
            )
        else:
            sc = load_scenario(scenario, nside=nside, p372_dir=p372_dir, reference=reference, band=band)
            results = evaluate(sc, allow_long=allow_long)
    said, apart = (said_once(results.warnings), {}) if all_warnings else results.warnings_apart()
    for w in said:
        click.echo(f"warning: {w}", err=True)
    if apart:
        where = "--all-warnings says them" + ("" if fmt == "json" else "; --format json holds every warning")
        click.echo(f"note: {apart_text(apart, where, per_band=bool(several))}", err=True)
    if fmt == "json":
        text = out.to_json(results)
    elif fmt == "csv":
        text = out.bands_to_csv(results) if several else out.to_csv(results)
    else:
        text = None
    if fmt == "table":
        from rich.console import Console

        table = out.bands_table(results, build=build) if several else out.ranking_table(results, build=build)
        # names and notes print as written: no markup in square brackets, no :emoji: codes (and no parsing for them)
        plain = {"markup": False, "emoji": False}
        if output is None:
            console = Console(**plain)
            if not console.is_terminal:
                console = Console(width=120, **plain)
            console.print(table)
            return
        import io

        buf = Console(record=True, width=120, file=io.StringIO(), **plain)
        buf.print(table)
        text = buf.export_text()
    if output is None:
        click.echo(text, nl=False)
    else:
        write_output(output, text, overwrite=overwrite)
