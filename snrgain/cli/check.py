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
    """Validate SCENARIO: every key, unit, range and antenna; then the cheap geometry checks rank makes.

    It builds no noise sky and ranks nothing.  Prints a short summary on success, with
    the geometry warnings rank would give (lot, keep-outs, crossings, the TX
    vertical's clearance); lists every problem (file, field, value, what is
    allowed) and exits with code 2 otherwise.  A scenario of several bands
    ([[band]]) is checked band by band, its geometry warnings then said once
    each, marked with the bands they hold on, as rank marks them.  SCENARIO may be - (standard input;
    relative paths then start from the current folder).
    """
    from snrgain.cli.options import band_names
    from snrgain.outputs.messages import said_once
    from snrgain.scenario import load

    names = band_names(scenario)
    if names:
        from snrgain.errors import ScenarioError
        from snrgain.scenario.bands import band_problems

        loaded, found = [], {}
        for name in names:
            try:
                loaded.append((name, load(scenario, p372_dir=p372_dir, band=name)))
            except ScenarioError as exc:
                found[name] = exc.problems
        if found:
            raise ScenarioError(str(scenario), band_problems(found, len(names)))
        from snrgain.model.bands import band_marked

        per_band = []
        for name, sc in loaded:
            click.echo(f"band {name!r}:")
            _summary(sc, geometry=False)
            per_band.append((name, _geometry_texts(sc)))
        said = said_once(band_marked(per_band))  # a warning of several bands said once, with them, as rank says it
        head = f"geometry ({GEOMETRY}), each warning once with its bands:"
        click.echo(head if said else f"geometry: no warnings on any band ({GEOMETRY})")
        for w in said:
            click.echo(f"  rank would warn: {w}")
        return
    _summary(load(scenario, p372_dir=p372_dir))


GEOMETRY = "lot, keep-outs, crossings, clearance from the TX vertical and structures"
"""What the geometry checks look at, in words."""


def _summary(sc, geometry: bool = True) -> None:
    """What a valid scenario holds, and the geometry checks (``geometry``: their warnings too)."""
    click.echo(f"{sc.source}: valid")
    click.echo(f"  site {sc.site.name!r} at {sc.site.latitude_deg:.3f}, {sc.site.longitude_deg:.3f}")
    click.echo(
        f"  {sc.freq_hz / 1e6:g} MHz, {sc.bandwidth_hz:g} Hz; {len(sc.times.months)} month(s) x "
        f"{len(sc.times.utc_hours)} hour(s)"
    )
    from snrgain.decide.arrival import target_notices
    from snrgain.outputs.messages import hops_text, notice_text, said_once

    for t, tt in zip(sc.targets, sc.target_times):
        extra = f", {t.distance_m / 1e3:.0f} km, {hops_text(t.hops)}" if t.distance_m else ""
        when = f"months {', '.join(str(m) for m in tt.months)}; UTC {', '.join(f'{h:g}' for h in tt.utc_hours)}"
        lo, hi = (f"{np.degrees(x):.1f}" for x in (t.elevation_rad.min(), t.elevation_rad.max()))
        click.echo(
            f"  target {t.name!r}: bearing {np.degrees(t.bearing_rad):.1f} deg, elevation "
            f"{lo if lo == hi else f'{lo}-{hi}'} deg{extra}; {when}"
        )
    for n in target_notices(sc):
        click.echo(f"  rank would warn: {notice_text(n)}")
    click.echo(f"  reference: {sc.reference.name} ({sc.reference.family})")
    for a in sc.candidates:
        click.echo(f"  candidate: {a.name} ({a.family})")
    _lot(sc)
    if geometry:
        said = said_once(_geometry_texts(sc))
        if not said:
            click.echo(f"  geometry: no warnings ({GEOMETRY})")
        for w in said:
            click.echo(f"  rank would warn: {w}")


def _geometry_texts(sc) -> list[str]:
    """The cheap geometry checks rank makes (lot, keep-outs, crossings, the TX vertical's and structures' clearances,
    plan points that look like a latitude and longitude), without computing any pattern, as sentences; lengths in the
    scenario's unit."""
    from snrgain.decide.lot import site_notices
    from snrgain.outputs.messages import notice_text

    return [notice_text(n, unit=sc.site.length_unit) for n in site_notices(sc)]


def _lot(sc) -> None:
    """The lot's size and keep-out areas, where the file gives a lot."""
    from snrgain.units import length_text

    site = sc.site
    unit = site.length_unit
    if site.lot_m is not None:
        lot = np.asarray(site.lot_m, dtype=float)
        w, h = np.ptp(lot[:, 0]), np.ptp(lot[:, 1])
        click.echo(
            f"  lot: {len(lot)} corners, {length_text(w, unit, 0)} east-west by {length_text(h, unit, 0)} north-south"
            f"; {len(site.keep_out)} keep-out area(s); lengths shown in {unit}"
        )
