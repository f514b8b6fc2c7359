"""``snrgain check``: validate a scenario without running it."""

from __future__ import annotations

import click
import numpy as np

from snrgain.cli.options import handle_errors, p372_dir_option, scenario_argument


@click.command("check")
@scenario_argument
@p372_dir_option
@handle_errors
def check(scenario, p372_dir):
    """Validate SCENARIO: every key, unit, range and antenna; run nothing.

    Prints a short summary on success; lists every problem (file, field,
    value, what is allowed) and exits with code 2 otherwise.
    """
    from snrgain.scenario import load

    sc = load(scenario, p372_dir=p372_dir)
    click.echo(f"{sc.source}: valid")
    click.echo(f"  site {sc.site.name!r} at {sc.site.latitude_deg:.3f}, {sc.site.longitude_deg:.3f}")
    click.echo(
        f"  {sc.freq_hz / 1e6:g} MHz, {sc.bandwidth_hz:g} Hz; {len(sc.times.months)} month(s) x "
        f"{len(sc.times.utc_hours)} hour(s)"
    )
    for t, tt in zip(sc.targets, sc.target_times):
        extra = f", {t.distance_m / 1e3:.0f} km, {t.hops[0]}-{t.hops[1]} hops" if t.distance_m else ""
        when = f"months {', '.join(str(m) for m in tt.months)}; UTC {', '.join(f'{h:g}' for h in tt.utc_hours)}"
        click.echo(
            f"  target {t.name!r}: bearing {np.degrees(t.bearing_rad):.1f} deg, elevation "
            f"{np.degrees(t.elevation_rad.min()):.1f}-{np.degrees(t.elevation_rad.max()):.1f} deg{extra}; {when}"
        )
    click.echo(f"  reference: {sc.reference.name} ({sc.reference.family})")
    for a in sc.candidates:
        click.echo(f"  candidate: {a.name} ({a.family})")
