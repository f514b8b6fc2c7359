"""``snrgain layout``: where on the lot to put the placeable candidates."""

from __future__ import annotations

from pathlib import Path

import click

from snrgain.cli.options import (
    band_option,
    check_output,
    emit_json,
    handle_errors,
    overwrite_option,
    p372_dir_option,
    plot_option,
    read_scenario_text,
    write_output,
)


@click.command("layout")
@click.argument("scenario", type=click.Path(path_type=str))
@click.option("--keep", type=click.IntRange(1, 10), default=3, show_default=True, help="How many layouts to list.")
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table", show_default=True)
@click.option(
    "--write",
    "write_to",
    type=click.Path(dir_okay=False, path_type=str),
    default=None,
    help="Write a copy of the scenario with the best layout's positions, bearings and lengths.",
)
@plot_option("the best layout on the lot")
@p372_dir_option
@overwrite_option
@band_option
@handle_errors
def layout(scenario, keep, fmt, write_to, plot, p372_dir, overwrite, band):
    """Search positions, bearings and lengths on the lot for the candidates with a place table.

    A candidate with  place = { bearing = ["20 deg", "70 deg"], length = ["150 m", "300 m"] }  may stand
    anywhere on [site] lot, outside [site] keep_out areas, tx_clearance from the transmitting vertical
    when given, 10 m from any other wire and from the antennas that stay where written (the transmitting
    vertical, an array's elements, a vertical, a loop); each is scored less what the vertical costs it
    there, computed (a two-wire line's reversed port and pattern tables, whose cost is not computed, keep
    half a wavelength from it instead); its bearing and length stay in their ranges
    (fixed where none is given).  Each is scored by its nominal SNR gain over the reference toward the target
    nearest its bearing, with placed noise sources ([[noise.local]] position = [east, north]) heard where
    it stands and its feed_line, if it has one, run from there to its station entry (on the lot, 1 m at
    least), as rank scores the written layout.  The search is a grid with a local refinement: the same
    file gives the same layout.

    Before you build: keep wires clear of power lines, call the utilities' locating service before
    driving ground rods, and mark wires near the ground: they trip people and animals.
    """
    from snrgain.cli.options import progress
    from snrgain.outputs.messages import notice_text
    from snrgain.scenario import load, read_source
    from snrgain.tools import layout as lay

    if write_to is not None and _same_file(write_to, scenario):
        raise ValueError(
            f"--write {write_to}: that is the scenario layout searches, and the copy drops the place ranges the search "
            "reads (each placed candidate gets a fixed position, bearing and length); give the copy another name"
        )
    check_output(write_to, overwrite=overwrite, replaces=scenario)
    check_output(plot, overwrite=overwrite)
    from snrgain.scenario.bands import one_band

    data, label, base_dir = read_source(Path(scenario))
    data = one_band(data, band, label)
    sc = load(data, p372_dir=p372_dir, base_dir=base_dir, label=label)
    problem = lay.Problem(sc, data, base_dir=base_dir)
    with progress(None, "layout: placements") as bar:
        layouts = problem.search(keep=keep, progress=bar.update)
    out = lay.as_dict(layouts)
    best = layouts[0]
    notes = [f"layout 1: {_feed_line_note(*cost)}" for cost in problem.feed_line_costs(best)]
    notes += [f"layout 1: {notice_text(n, sc.site.length_unit)}" for n in lay.placed_feed_line_notices(problem, best)]
    notes += [f"layout 1: {n}" for n in lay.range_end_notes(problem, best, sc.site.length_unit)]
    if notes:
        out["notes"] = notes
    if plot is not None:
        from snrgain.outputs import plots

        plots.save(plots.layout_plan(lay.plan_data(problem, best)), plot, overwrite=overwrite)
        out["plot"] = plot
    if write_to is not None:
        text = read_scenario_text(scenario)
        write_output(write_to, lay.with_layout(text, best, sc.site.length_unit), overwrite=overwrite, replaces=scenario)
        out["written"] = write_to
    if fmt == "json":
        emit_json(out)
        return
    _print(layouts, sc, unit=sc.site.length_unit)
    for note in notes:
        click.echo(f"note: {note}", err=True)
    if plot is not None:
        click.echo(f"wrote {plot}", err=True)


def _print(layouts, sc, *, unit: str = "m") -> None:
    """The layouts as tables; feed points in the scenario's unit (feet when it writes its places in feet)."""
    import numpy as np
    from rich.console import Console
    from rich.table import Table

    from snrgain.units import length_both_text, length_text

    console = Console()
    for rank_no, lay in enumerate(layouts, start=1):
        each = "; ".join(
            f"{d.name} {g:+.1f} dB toward {tgt}" for d, g, tgt in zip(lay.designs, lay.snr_gain_db, lay.targets)
        )
        t = Table(title=f"Layout {rank_no}: {each} (nominal SNR gain over {sc.reference.name})")
        for col in ("antenna", "feed (E, N)", "toward", "length", "target", "SNR gain"):
            t.add_column(col, justify="left" if col in ("antenna", "target") else "right")
        for d, g, tgt in zip(lay.designs, lay.snr_gain_db, lay.targets):
            length = "-" if d.length_m is None else length_both_text(d.length_m, unit, 0, 0)
            t.add_row(
                d.name,
                f"{length_text(d.east_m, unit, 0)}, {length_text(d.north_m, unit, 0)}",
                "switched" if d.states else "-" if d.bearing_rad is None else f"{np.degrees(d.bearing_rad):.0f} deg",
                length,
                tgt,
                f"{g:+.1f} dB",
            )
        console.print(t)
    console.print(
        "Nominal SNR gain: the median over the target's hours at the site's own ground and median noise, as "
        "'rank' gives it for the written layout (its 'nominal'); rank's headline median is taken over the spread "
        "too (grounds, noise deciles, hours), so the two can differ."
    )
    console.print(
        "Before you build: keep wires clear of power lines; call the utilities' locating service before driving "
        "ground rods; mark wires near the ground, they trip people and animals. Follow local codes."
    )


def _feed_line_note(name: str, cost_db: float, target: str) -> str:
    """What a placed candidate's feed line does to its score where the layout puts it (its SNR gain includes it)."""
    from snrgain.model.feedline import COST_WARNING_DB

    if cost_db <= -0.05:
        what = (
            f"adds {-cost_db:.1f} dB of SNR gain toward {target} there (its pickup partly cancels the antenna's: a "
            "fragile gain, which another route or cable length can undo)"
        )
    else:
        what = f"costs {max(cost_db, 0.0):.1f} dB of SNR gain toward {target} there"
        if cost_db > COST_WARNING_DB:
            what += " (rank --build of the written layout gives the choke that quiets it)"
    return f"{name}: scored with its feed line, run from where it stands to its station entry; the line {what}"


def _same_file(a, b) -> bool:
    """Whether two paths name one existing file."""
    import os

    return str(a) != "-" and os.path.isfile(a) and os.path.isfile(b) and os.path.samefile(a, b)
