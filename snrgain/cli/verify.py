"""``snrgain verify``: the prediction against paired decodes heard on two antennas."""

from __future__ import annotations

from pathlib import Path

import click

from snrgain.cli.options import (
    EXIT_FAILURE,
    FiniteRange,
    check_output,
    composed_name,
    emit_json,
    fail,
    handle_errors,
    overwrite_option,
    p372_dir_option,
    plot_option,
    progress,
)


@click.command("verify")
@click.argument("scenario", type=click.Path(path_type=str), required=False)
@click.option(
    "--a",
    "antenna_a",
    metavar="NAME",
    default=None,
    callback=composed_name,
    help="The scenario's antenna that log A was heard on.",
)
@click.option(
    "--b",
    "antenna_b",
    metavar="NAME",
    default=None,
    callback=composed_name,
    help="The scenario's antenna that log B was heard on.",
)
@click.option("--log-a", type=click.Path(dir_okay=False, path_type=str), default=None, help="Decodes on antenna A.")
@click.option("--log-b", type=click.Path(dir_okay=False, path_type=str), default=None, help="Decodes on antenna B.")
@click.option(
    "--spots",
    type=click.Path(dir_okay=False, path_type=str),
    default=None,
    help="Instead of two logs: one listener's spot list, antennas alternating by slot (see --example spots).",
)
@click.option(
    "--a-slots",
    type=click.Choice(["even", "odd"]),
    default="even",
    show_default=True,
    help="With --spots and no antenna column: which slots were heard on antenna A.",
)
@click.option("--listener", default=None, metavar="CALL", help="With --spots: keep this listener's spots only.")
@click.option(
    "--places",
    type=click.Path(dir_okay=False, path_type=str),
    default=None,
    help="CSV of call -> latitude, longitude or locator; overrides the locators the messages give.",
)
@click.option(
    "--max-hz",
    type=FiniteRange(0.0, 100.0),
    default=5.0,
    show_default=True,
    help="Largest audio-offset difference of a pair [Hz].",
)
@click.option(
    "--slot", "slot_s", type=FiniteRange(1.0, 3600.0), default=None, help="Slot length [s] (default: the mode's)."
)
@click.option(
    "--sector-width",
    type=FiniteRange(1.0, 180.0),
    default=30.0,
    show_default=True,
    help="A station belongs to the nearest target within half this many degrees of its bearing.",
)
@click.option(
    "--min-pairs",
    type=click.IntRange(2, 100000),
    default=20,
    show_default=True,
    help="Fewest pairs for a verdict.",
)
@click.option("--seed", type=click.IntRange(0, 2**32 - 1), default=1, show_default=True, help="Bootstrap seed.")
@click.option(
    "--example",
    type=click.Choice(["log", "csv", "spots", "places"]),
    default=None,
    help="Print an example file of that kind and exit.",
)
@click.option(
    "--fit",
    is_flag=True,
    help="Fit the site's man-made level (noise.man_made.offset) to the pairs and show how it moves the prediction.",
)
@click.option(
    "--fit-ground",
    is_flag=True,
    help="With --fit or --write: also choose the site's ground class (among the land classes) that fits best.",
)
@click.option(
    "--write",
    "write_to",
    type=click.Path(dir_okay=False, path_type=str),
    default=None,
    help="Write a copy of the SCENARIO with the fitted man-made offset (implies --fit; --overwrite to replace); "
    "where the pairs give no level, no copy and exit 1.",
)
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table", show_default=True)
@plot_option("the figure of predicted bands and measured intervals per target and hour")
@overwrite_option
@p372_dir_option
@handle_errors
def verify(
    scenario,
    antenna_a,
    antenna_b,
    log_a,
    log_b,
    spots,
    a_slots,
    listener,
    places,
    max_hz,
    slot_s,
    sector_width,
    min_pairs,
    seed,
    example,
    fit,
    fit_ground,
    write_to,
    fmt,
    plot,
    overwrite,
    p372_dir,
):
    """Compare the SCENARIO's predicted SNR difference between two antennas with decodes heard on both.

    Give two decode logs (--log-a, --log-b; the common ALL-decodes text format or a CSV) taken at the same time
    on antennas --a and --b, or one listener's --spots.  Decodes of the same message in the same slot within
    --max-hz are paired; each sender is placed by its locator (or --places) and falls in the nearest target.
    Per target and UTC hour: the median of A - B with a bootstrap 90 % interval and N, the predicted median
    and 10-90 % band, and a verdict (agrees, measured better, measured worse, too few pairs).  Every line not
    used is counted by reason with its line numbers.

    With --fit or --write: the man-made level that best fits the pairs (snrgain.tools.learn), its tolerance, and
    how much it moves each candidate's predicted SNR gain; --write FILE writes the scenario's copy with it.
    """
    from snrgain.tools import verify as vf

    if example is not None:
        click.echo(vf.EXAMPLES[example], nl=False)
        return
    if scenario is None:
        raise click.UsageError("give a SCENARIO (see --example for the log formats)")
    if antenna_a is None or antenna_b is None:
        raise click.UsageError("name both antennas: --a NAME --b NAME (the scenario's names)")
    if spots is None and (log_a is None or log_b is None):
        raise click.UsageError("give --log-a and --log-b, or --spots")
    if spots is not None and (log_a is not None or log_b is not None):
        raise click.UsageError("--spots replaces --log-a and --log-b; give one or the other")
    if antenna_a == antenna_b:  # every difference would be 0 dB: nothing to compare, nor to fit a level to
        raise click.BadParameter(f"--a and --b both name {antenna_a!r}: compare two antennas", param_hint="--b")
    if log_a is not None and log_b is not None and Path(log_a).resolve() == Path(log_b).resolve():
        raise click.BadParameter(
            f"--log-a and --log-b are the same file ({log_a}): each antenna's decodes come from its own receiver's log",
            param_hint="--log-b",
        )
    check_output(plot, overwrite=overwrite)
    check_output(write_to, overwrite=overwrite, replaces=scenario)
    with progress(None, "verify: reading, pairing and predicting"):
        res = vf.verify(
            scenario,
            a_name=antenna_a,
            b_name=antenna_b,
            log_a=log_a,
            log_b=log_b,
            spots=spots,
            places=places,
            max_hz=max_hz,
            slot_s=slot_s,
            a_slots=a_slots,
            listener=listener,
            sector_width_deg=sector_width,
            min_pairs=min_pairs,
            seed=seed,
            p372_dir=p372_dir,
        )
    if plot is not None:
        from snrgain.outputs.plots import save

        save(vf.figure(res, looks=res.looks), plot, overwrite=overwrite)
        click.echo(f"wrote {plot}", err=True)
    learned, lines = None, []
    if fit or fit_ground or write_to is not None:
        learned, lines = _learn(res, scenario, write_to, overwrite, min_pairs, p372_dir, fit_ground)
    if fmt == "json":
        out = res.as_dict()
        if learned is not None:
            out["learned"] = learned
        emit_json(out)
    else:
        click.echo("\n".join(vf.report_lines(res) + lines))
    if learned is not None and learned.get("not_written_because"):  # no fault of the input: the fit says no level
        fail(f"--write: {learned['not_written_because']}; no copy written", EXIT_FAILURE)


def _learn(res, scenario, write_to, overwrite, min_pairs, p372_dir, fit_ground=False):
    """Fit the man-made offset, write the copy if asked, and say how it moved the prediction.  Where the pairs
    give no level (too few, or a level they do not determine), --write writes nothing and the answer's
    ``not_written_because`` says why: the command prints what it found and then fails (1), as no input was wrong."""
    from pathlib import Path

    from snrgain.cli.options import read_scenario_text, write_output
    from snrgain.scenario import read_source
    from snrgain.tools import learn

    with progress(None, "verify: fitting the site's man-made level"):
        grounds = learn.LAND_GROUNDS if fit_ground else None
        try:
            f = learn.fit_offset(res, scenario, p372_dir=p372_dir, min_pairs=min_pairs, grounds=grounds)
        except learn.NothingToFit as exc:  # the comparison stands; only the fit has too little to go on
            out = {"not_fitted": str(exc)}
            if write_to is not None:
                out |= {"written": None, "not_written_because": str(exc)}
            return out, ["", f"the site learns: not fitted: {exc}"]
        moved = []
        if f.identifiable:  # an undetermined level moves nothing: its "after" is no prediction
            data, label, base_dir = read_source(Path(scenario))
            moved = learn.moves(data, base_dir, label, f.before_db, f.offset_db, ground=f.ground, p372_dir=p372_dir)
    out = {**f.as_dict(), "moves": moved}
    lines = learn.fit_lines(f) + (learn.move_lines(moved) if f.identifiable else [])
    if write_to is not None and not f.identifiable:
        because = "; ".join(f.not_determined_because) or "the notes say why"
        out |= {
            "written": None,
            "not_written_because": f"the pairs do not determine the site's man-made level ({because})",
        }
    elif write_to is not None:
        note = f"fitted to {sum(g['n_pairs'] for g in f.groups)} paired decodes, +-{f.tolerance_db:.1f} dB (90 %)"
        text = learn.write_offset(read_scenario_text(scenario), f.offset_db, note)
        if f.ground is not None and f.ground != f.ground_before:
            text = learn.write_ground(
                text, f.ground, "the class that fits the paired decodes best (verify --fit-ground)"
            )
        write_output(write_to, text, overwrite=overwrite, replaces=scenario)
        out["written"] = write_to
    return out, lines
