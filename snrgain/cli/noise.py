"""``snrgain noise``: the noise components at a site over 24 UTC hours."""

from __future__ import annotations

import click
import numpy as np

from snrgain.cli.options import (
    FiniteRange,
    check_output,
    emit_json,
    handle_errors,
    json_text,
    overwrite_option,
    p372_dir_option,
    progress,
    write_output,
)
from snrgain.constants import MAN_MADE_CHOICES

NO_DATA_TEXT = (
    "the atmospheric row needs ITU-R P.372's coefficient files (COEFF01W.txt ... COEFF12W.txt, published by ITU-R "
    "Study Group 3 with its P.372 software); name their folder with --p372-dir or the environment variable "
    "SNRGAIN_P372_DIR"
)
"""What ``snrgain noise`` says where no P.372 data folder is named."""


@click.command("noise")
@click.option("--lat", "lat", type=FiniteRange(-90, 90), required=True, help="Site latitude [deg, north positive].")
@click.option("--lon", "lon", type=FiniteRange(-180, 360), required=True, help="Site longitude [deg, east positive].")
@click.option("--month", type=click.IntRange(1, 12), required=True, help="Month, 1-12.")
@click.option("--frequency", required=True, help="Frequency with its unit, e.g. '1.83 MHz'.")
@click.option(
    "--environment",
    type=click.Choice(MAN_MADE_CHOICES),
    default="residential",
    show_default=True,
    help="Man-made noise category of ITU-R P.372.",
)
@click.option("--galactic/--no-galactic", default=True, show_default=True, help="Include galactic noise.")
@click.option(
    "--hour",
    type=FiniteRange(0, 24, max_open=True),
    default=4.0,
    show_default=True,
    help="UTC hour for the direction distribution of atmospheric noise.",
)
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table", show_default=True)
@click.option(
    "--output",
    "-o",
    type=click.Path(dir_okay=False, path_type=str),
    default=None,
    help="Write to this file (JSON) instead of standard output.",
)
@overwrite_option
@p372_dir_option
@handle_errors
def noise(lat, lon, month, frequency, environment, galactic, hour, fmt, output, overwrite, p372_dir):
    """Noise at a site over 24 UTC hours: P.372 atmospheric, man-made and galactic.

    Levels are Fa, dB above kT0b, on P.372's reference antenna (a short
    vertical over perfect ground), with the P.372 Section 8 total and its
    decile deviations; then where atmospheric noise arrives from at --hour.
    The P.372 data folder comes from --p372-dir, else $SNRGAIN_P372_DIR;
    where neither names one, the man-made and galactic rows are shown alone
    and a line says what the atmospheric row needs.
    """
    from snrgain.constants import check_frequency_hz
    from snrgain.scenario.p372dir import check_p372_dir, p372_dir_named
    from snrgain.sky.noiseday import noise_over_day
    from snrgain.units import parse_quantity

    check_output(output, overwrite=overwrite)
    try:
        f = check_frequency_hz(parse_quantity(frequency, "frequency"))
    except ValueError as exc:
        raise ValueError(f"--frequency: {exc}") from None
    chosen = p372_dir_named(p372_dir)
    data_dir = None if chosen is None else check_p372_dir(chosen, [month])
    if chosen is None and environment == "none" and not galactic:
        raise ValueError(f"--environment none with --no-galactic leaves nothing to show: {NO_DATA_TEXT}")
    with progress(None, "noise: 24 hours and the storms' directions"):
        data = noise_over_day(
            lat,
            lon,
            month=month,
            freq_hz=f,
            environment=environment,
            galactic=galactic,
            data_dir=data_dir,
            hour=hour,
            atmospheric=chosen is not None,
        )
    from snrgain.decide.decisions import man_made_extrapolated
    from snrgain.outputs.messages import notice_text

    data["warnings"] = [notice_text(n) for n in man_made_extrapolated(f, environment != "none")]
    if chosen is None:
        data["warnings"].append(f"{NO_DATA_TEXT}; shown: the man-made and galactic rows, their total without it")
    for w in data["warnings"]:
        click.echo(f"warning: {w}", err=True)
    if output is not None:
        write_output(output, json_text(data), overwrite=overwrite)
        return
    if fmt == "json":
        emit_json(data)
        return
    _print_table(data)


def _print_table(data):
    from rich.console import Console
    from rich.table import Table

    console = Console()
    if not console.is_terminal:
        console = Console(width=120)
    t = Table(
        title=f"Noise Fa (dB above kT0b) at {data['latitude_deg']:.2f}, {data['longitude_deg']:.2f}, "
        f"month {data['month']}, {data['frequency_hz'] / 1e6:g} MHz (median, +upper/-lower decile)",
        title_justify="left",
    )
    t.add_column("UTC", justify="right")
    names = list(data["components"])
    for n in names:
        t.add_column(n, justify="right")
    total = "total (P.372 s.8)" if "atmospheric" in names else "total, no atmospheric"
    t.add_column(total, justify="right", style="bold")
    t.add_column("sum of medians", justify="right")

    def cell(c, i):
        fa = c["fa_db"][i]
        if not np.isfinite(fa):
            return "screened"
        return f"{fa:.1f} +{c['du_db'][i]:.1f}/-{c['dl_db'][i]:.1f}"

    for i, h in enumerate(data["utc_hours"]):
        t.add_row(
            f"{h:02.0f}",
            *[cell(data["components"][n], i) for n in names],
            cell(data["total"], i),
            f"{data['median_power_sum_fa_db'][i]:.1f}",
        )
    console.print(t)
    console.print(
        "The P.372 Section 8 total treats each component as log-normal; with decile deviations above "
        "about 12 dB its median can fall below the strongest component's (the Recommendation's variant "
        "for such deviations is not implemented). The power sum of the medians is what the SNR "
        "calculation uses.",
        style="dim",
    )
    d = data["directions"]
    if d is None:
        return
    s = Table(
        title=f"Atmospheric noise arrival at {d['utc_hour']:g} UTC (storm model): share of power by bearing",
        title_justify="left",
    )
    s.add_column("bearing", justify="right")
    s.add_column("share %", justify="right")
    s.add_column("bar")
    s.add_column("mean elevation", justify="right")
    for sec in d["sectors"]:
        el = "-" if sec["mean_elevation_deg"] is None else f"{sec['mean_elevation_deg']:.0f} deg"
        s.add_row(
            f"{sec['bearing_deg']:.0f} deg",
            f"{sec['share_percent']:.1f}",
            "#" * int(round(sec["share_percent"] / 2)),
            el,
        )
    console.print(s)
    bands = ", ".join(f"{b['from_deg']}-{b['to_deg']} deg: {b['share_percent']:.0f} %" for b in d["elevation_bands"])
    console.print(f"By elevation: {bands}")
