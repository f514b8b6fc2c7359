"""``snrgain noise-readings``: the site's man-made noise level from noise readings (rise over a load, S-meter)."""

from __future__ import annotations

import click

from snrgain.cli.options import (
    EXIT_FAILURE,
    check_output,
    emit_json,
    fail,
    handle_errors,
    overwrite_option,
    p372_dir_option,
    progress,
)


@click.command("noise-readings")
@click.argument("scenario", type=click.Path(path_type=str), required=False)
@click.argument("readings", type=click.Path(dir_okay=False, path_type=str), required=False)
@click.option("--example", is_flag=True, help="Print an example readings file and exit.")
@click.option(
    "--write",
    "write_to",
    type=click.Path(dir_okay=False, path_type=str),
    default=None,
    help="Write a copy of the SCENARIO with the fitted man-made offset (--overwrite to replace a file); where the "
    "readings give no level, no copy and exit 1.",
)
@overwrite_option
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table", show_default=True)
@p372_dir_option
@handle_errors
def noise_readings(scenario, readings, example, write_to, overwrite, fmt, p372_dir):
    """Fit the SCENARIO's man-made noise level to noise READINGS taken at the site.

    Each reading is the receiver's output noise with the antenna and with a matched load in its place (the
    rise), or an S-meter reading through the receiver's calibration table, with its UTC time, antenna and
    frequency.  Through each antenna's modelled gain and its chain (the scenario run at the readings' months and
    hours), the readings give the antenna temperature, the man-made part of it, and so the site's man-made Fa:
    the offset over the environment's P.372 curve, fitted over the readings with its tolerance, and how it moves
    each candidate's predicted SNR gain.  Readings that do not determine the level (the fit stopped at an end of
    the allowed offsets, or its 90 % interval wider than +-10 dB) are said so, with the reason, and no level or
    move is given; with --write, no copy is written and, the readings said, the command exits 1 with the reason.
    See --example for the file.
    """
    from pathlib import Path

    from snrgain.tools import learn
    from snrgain.tools import noisereadings as nr

    if example:
        click.echo(nr.EXAMPLE, nl=False)
        return
    if scenario is None or readings is None:
        raise click.UsageError("give a SCENARIO and a READINGS file (see --example)")
    check_output(write_to, overwrite=overwrite, replaces=scenario)
    rs = nr.load_readings(readings)
    with progress(None, f"noise-readings: {len(rs)} reading(s) through the pipeline"):
        f = nr.fit(rs, scenario, p372_dir=p372_dir, label=readings)
    out = {**f.as_dict(), "moves": None}
    if write_to is not None and not f.determined:  # no fault of the input: the readings give no level to write
        because = "; ".join(f.not_determined_because)
        out |= {"written": None, "not_written_because": f"the readings do not fix the man-made level ({because})"}
    if f.determined:  # the moves rest on the fitted level: none from a level the readings do not determine
        from snrgain.scenario import read_source

        with progress(None, "noise-readings: the candidates at the fitted level"):
            data, label, base_dir = read_source(Path(scenario))
            out["moves"] = learn.moves(data, base_dir, label, f.before_db, f.offset_db, p372_dir=p372_dir)
    if write_to is not None and f.determined:
        from snrgain.cli.options import read_scenario_text, write_output

        tol = f", +-{f.tolerance_db:.1f} dB (90 %)" if f.tolerance_db == f.tolerance_db else ""
        note = f"fitted to {sum(r['offset_db'] is not None for r in f.rows)} noise readings{tol}"
        text = learn.write_offset(read_scenario_text(scenario), f.offset_db, note)
        write_output(write_to, text, overwrite=overwrite, replaces=scenario)
        out["written"] = write_to
    if fmt == "json":
        emit_json(out)
    else:
        if out["moves"] is None:
            moved = ["predicted SNR gains: not moved (no level to move them to: the readings do not determine it)"]
        else:
            moved = learn.move_lines(out["moves"])
        click.echo("\n".join(nr.fit_lines(f) + [""] + moved))
    if out.get("not_written_because"):  # the readings and the fit are said; the copy asked for is not written
        fail(f"--write: {out['not_written_because']}; no copy written", EXIT_FAILURE)
