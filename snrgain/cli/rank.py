"""``snrgain rank``: run a scenario and rank the candidates by SNR gain."""

from __future__ import annotations

import click

from snrgain.cli.options import (
    check_output,
    handle_errors,
    nside_option,
    overwrite_option,
    p372_dir_option,
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
    help="table: ranked table for the terminal; json: everything, units in the keys; csv: one row per "
    "antenna, target, month and hour.",
)
@click.option(
    "--output",
    "-o",
    type=click.Path(dir_okay=False, path_type=str),
    default=None,
    help="Write to this file instead of standard output (whole or not at all).",
)
@overwrite_option
@nside_option
@p372_dir_option
@handle_errors
def rank(scenario, fmt, output, overwrite, nside, p372_dir):
    """Rank the SCENARIO's candidate antennas by SNR gain over its reference antenna.

    SNR gain is (S/N of the candidate) / (S/N of the reference) toward the
    scenario's targets, with the noise sky of its site, months and hours and
    the receiver's own noise; the table's summary is the mean in dB over
    targets (weighted) and hours.
    """
    from snrgain import output as out
    from snrgain.pipeline import evaluate

    check_output(output, overwrite=overwrite)
    results = evaluate(scenario, nside=int(nside) if nside else None, p372_dir=p372_dir)
    for w in results.warnings:
        click.echo(f"warning: {w}", err=True)
    if fmt == "json":
        text = out.to_json(results)
    elif fmt == "csv":
        text = out.to_csv(results)
    else:
        text = None
    if fmt == "table":
        from rich.console import Console

        if output is None:
            console = Console()
            if not console.is_terminal:
                console = Console(width=120)
            console.print(out.ranking_table(results))
            return
        import io

        buf = Console(record=True, width=120, file=io.StringIO())
        buf.print(out.ranking_table(results))
        text = buf.export_text()
    if output is None:
        click.echo(text, nl=False)
    else:
        write_output(output, text, overwrite=overwrite)
