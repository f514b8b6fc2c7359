"""Scenario files for the tests, written from the parts most of them share (an invented site, one band or several,
the hours, the man-made noise, the targets, a transmitting vertical as the reference), so that a test writes only
what it is about: its candidates and what it changes."""

from __future__ import annotations

SITE = '[site]\nname = "{name} (invented)"\nlatitude = {latitude}\nlongitude = {longitude}\nground = {ground}\n'
BAND = '[band]\nfrequency = "{frequency}"\nbandwidth = "500 Hz"\n'
BAND_OF_SEVERAL = '[[band]]\nname = "{name}"\nfrequency = "{frequency}"\nbandwidth = "500 Hz"\n'
TARGET = '[[target]]\nname = "{name}"\nbearing = {bearing}\nelevation = [{low}, {high}]\n'
VERTICAL = '[reference]\nname = "TX vertical"\nfamily = "vertical"\nheight = "{height}"\nposition = [{east}, {north}]\n'


def scenario_text(
    *,
    name: str = "Test Site",
    latitude: float = 44.2,
    longitude: float = -72.6,
    ground: str = '"medium dry ground"',
    site_extra: str = "",
    frequency: str = "1.83 MHz",
    bands: dict[str, tuple[str, str]] | None = None,
    months: tuple[int, ...] = (1,),
    utc_hours: tuple[int, ...] = (2, 4),
    environment: str = "rural",
    targets: tuple[tuple[str, float, float, float], ...] = (("Europe", 50, 5, 20),),
    reference: str | None = None,
    candidates: str = "",
) -> str:
    """A scenario's TOML text: ``site_extra`` lines end [site] (a lot, tx_state); ``bands``: name -> (frequency,
    lines of its own table) for a file of several bands, else one band at ``frequency``; ``targets``: (name,
    bearing [deg], lowest and highest elevation [deg]); ``reference``: the [reference] table's text (default a 20 m
    vertical at the plan's origin); ``candidates``: the [[candidate]] tables' text."""
    parts = [SITE.format(name=name, latitude=latitude, longitude=longitude, ground=ground) + site_extra]
    if bands is None:
        parts.append(BAND.format(frequency=frequency))
    else:
        parts += [BAND_OF_SEVERAL.format(name=n, frequency=f) + own for n, (f, own) in bands.items()]
    hours = ", ".join(str(h) for h in utc_hours)
    parts.append(f"[time]\nmonths = [{', '.join(str(m) for m in months)}]\nutc_hours = [{hours}]\n")
    parts.append(f'[noise.man_made]\nenvironment = "{environment}"\n')
    parts += [TARGET.format(name=n, bearing=b, low=lo, high=hi) for n, b, lo, hi in targets]
    parts.append(VERTICAL.format(height="20 m", east=0, north=0) if reference is None else reference)
    parts.append(candidates)
    return "\n".join(parts)
