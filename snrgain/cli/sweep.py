"""``snrgain sweep``: a scenario over a grid of values of its keys, as a tidy table."""

from __future__ import annotations

from pathlib import Path

import click

from snrgain.cli.options import (
    allow_long_option,
    band_option,
    check_output,
    handle_errors,
    nside_option,
    overwrite_option,
    p372_dir_option,
    reference_option,
    scenario_argument,
)


@click.command("sweep")
@scenario_argument
@click.option(
    "--vary",
    "varies",
    multiple=True,
    required=True,
    metavar="'TABLE: KEY = VALUES'",
    help="A key to vary (repeat for a grid): TABLE is a candidate's name, 'reference' or a section (site, band, "
    "time, receiver, chain, ...); VALUES a range 'START to STOP by STEP' in one unit or a list 'A, B, C' (a list value "
    "in brackets: 'whip: position = [0, 40], [30, 40]'). "
    "E.g. --vary 'Beverage NE: length = 150 m to 350 m by 10 m' --vary 'site: ground = sandy soil, moist loam'.",
)
@click.option(
    "--output",
    "-o",
    type=click.Path(dir_okay=False, path_type=str),
    required=True,
    help="The table to write: .csv, or .parquet (needs pyarrow); whole or not at all.",
)
@click.option(
    "--spread/--no-spread",
    default=False,
    show_default=True,
    help="Add the median, 10 % and 90 % points and the probability of beating the reference (each design a "
    "full run with the scenario's [uncertainty]); by default the nominal SNR gain only.",
)
@click.option(
    "--dask",
    "dask_address",
    default=None,
    metavar="ADDRESS",
    help="Run the designs on a Dask cluster: a scheduler's address (tcp://host:8786) or 'local' for two "
    "workers on this machine.  The table is the same as in one process.",
)
@overwrite_option
@allow_long_option
@nside_option
@p372_dir_option
@reference_option
@band_option
@handle_errors
def sweep(scenario, varies, output, spread, dask_address, overwrite, allow_long, nside, p372_dir, reference, band):
    """Run SCENARIO over every combination of the --vary values and write one row per design, varied antenna
    and target: the varied values, the SNR gain over the reference, RDF, front-to-back, gain toward the target
    and the worst-hour noise margin.

    Only a candidate's own keys varying: the sky and the reference are computed once, so thousands of designs
    take seconds (its feed_line scored with it, as rank does).  Varying the site, band, time or reference, a
    candidate's chain or feed line, or asking --spread, runs each design in full.
    A scenario of several bands runs each design in every band (a 'band' column) unless --band picks one.
    """
    from snrgain.cli.options import progress
    from snrgain.scenario import read_source
    from snrgain.tools import sweep as sw

    check_output(output, overwrite=overwrite)
    sw.output_format(output)
    parsed = [sw.parse_vary(v) for v in varies]
    keys = [(v.table, v.key) for v in parsed]  # one key in two units has two columns' names
    twice = next((k for i, k in enumerate(keys) if k in keys[:i]), None)
    if twice is not None:
        raise ValueError(f"--vary: {twice[0]}: {twice[1]} is varied twice; vary each key once (a list or a range)")
    data, label, base_dir = read_source(Path(scenario))
    from snrgain.cli.options import band_names

    bands = tuple(band_names(Path(scenario)) or ()) if band is None else ()
    study = sw.Study(
        data,
        label,
        None if base_dir is None else str(base_dir),
        parsed,
        p372_dir=p372_dir,
        nside=int(nside) if nside else None,
        spread=spread,
        reference=reference,
        band=band,
        bands=bands,
    )
    total = sw.design_count(parsed)
    if total > sw.MAX_DESIGNS:
        raise ValueError(f"--vary: {total} designs is too many (at most {sw.MAX_DESIGNS})")
    if total > sw.LONG_DESIGNS and not allow_long:
        raise ValueError(
            f"--vary: {total} designs is a long run (more than {sw.LONG_DESIGNS}; a candidate's own keys run a few "
            "hundred designs a second, a section's a few a second); narrow the ranges or coarsen the steps, or pass "
            "--allow-long to run them all"
        )
    sw.validate(study)  # every --vary checked before anything is printed or written
    in_bands = f" in each of {len(bands)} bands ({', '.join(bands)})" if bands else ""
    click.echo(f"sweep: {total} design{'s' if total != 1 else ''}{in_bands}", err=True)
    with progress(total, "sweep: designs") as bar:
        n = sw.run(study, output, overwrite=overwrite, dask=dask_address, progress=bar.update, validated=True)
    click.echo(f"wrote {output}: {n} designs", err=True)
