"""Scenario files for the tests, written from the parts most of them share (an invented site, one band or several,
the hours, the man-made noise, the targets, a transmitting vertical as the reference), so that a test writes only
what it is about: its candidates and what it changes."""

from __future__ import annotations

SITE = '[site]\nname = "{name} (invented)"\nlatitude = {latitude}\nlongitude = {longitude}\n'
NO_SPREADS = "[uncertainty]\nground = false\nnoise_deciles = false\nlocal_sources = false\n"
"""[uncertainty] with no spread counted: a test of the nominal figures alone."""
BAND = '[band]\nfrequency = "{frequency}"\nbandwidth = "500 Hz"\n'
BAND_OF_SEVERAL = '[[band]]\nname = "{name}"\nfrequency = "{frequency}"\nbandwidth = "500 Hz"\n'
TARGET = '[[target]]\nname = "{name}"\nbearing = {bearing}\nelevation = [{low}, {high}]\n'
VERTICAL = '[reference]\nname = "TX vertical"\nfamily = "vertical"\nheight = "{height}"\nposition = [{east}, {north}]\n'


def scenario_text(
    *,
    name: str = "Test Site",
    latitude: float = 44.2,
    longitude: float = -72.6,
    ground: str | None = '"medium dry ground"',
    site_extra: str = "",
    frequency: str = "1.83 MHz",
    bands: dict[str, tuple[str, str]] | None = None,
    months: tuple[int, ...] = (1,),
    utc_hours: tuple[int, ...] = (2, 4),
    environment: str | None = "rural",
    sections: str = "",
    targets: tuple[tuple[str, float, float, float], ...] = (("Europe", 50, 5, 20),),
    reference: str | None = None,
    candidates: str = "",
) -> str:
    """A scenario's TOML text: ``ground`` as written (None: the default); ``site_extra`` lines end [site] (a lot,
    tx_state); ``bands``: name -> (frequency, lines of its own table) for a file of several bands, else one band at
    ``frequency``; ``environment``: the man-made noise's (None: no [noise.man_made] table, the default);
    ``sections``: more tables after the noise ([uncertainty], NO_SPREADS); ``targets``: (name, bearing [deg],
    lowest and highest elevation [deg]); ``reference``: the [reference] table's text (default a 20 m vertical at the
    plan's origin); ``candidates``: the [[candidate]] tables' text."""
    site = SITE.format(name=name, latitude=latitude, longitude=longitude)
    parts = [site + ("" if ground is None else f"ground = {ground}\n") + site_extra]
    if bands is None:
        parts.append(BAND.format(frequency=frequency))
    else:
        parts += [BAND_OF_SEVERAL.format(name=n, frequency=f) + own for n, (f, own) in bands.items()]
    hours = ", ".join(str(h) for h in utc_hours)
    parts.append(f"[time]\nmonths = [{', '.join(str(m) for m in months)}]\nutc_hours = [{hours}]\n")
    if environment is not None:
        parts.append(f'[noise.man_made]\nenvironment = "{environment}"\n')
    parts.append(sections)
    parts += [TARGET.format(name=n, bearing=b, low=lo, high=hi) for n, b, lo, hi in targets]
    parts.append(VERTICAL.format(height="20 m", east=0, north=0) if reference is None else reference)
    parts.append(candidates)
    return "\n".join(parts)


ONE_SPOT_PAIRS = """
[[candidate]]
name = "pair NE"
family = "phased-verticals"
positions = [[0, 0], [10, 10]]
height = "{height}"
bearing = 45

[[candidate]]
name = "pair SW"
family = "phased-verticals"
positions = [[0, 0], [10, 10]]
height = "{height}"
bearing = 225
"""
"""Two arrays on the same two spots, one toward each of two opposite targets (ONE_SPOT_TARGETS): alternatives the
station plan builds one of."""
ONE_SPOT_TARGETS = (("north-east", 45, 10, 25), ("south-west", 225, 10, 25))
ONE_SPOT_REFERENCE = '[reference]\nfamily = "vertical"\nheight = "10 m"\nposition = [-25, -25]\n'


def one_spot(height: str, **kw) -> str:
    """A small lot (60 m square) holding ONE_SPOT_PAIRS of ``height`` and a 10 m vertical beside them, no spreads;
    ``kw`` as :func:`scenario_text` takes it (its band or bands)."""
    return scenario_text(
        name="one spot",
        latitude=44.2,
        longitude=-71.3,
        ground=None,
        site_extra="lot = [[-30, -30], [30, -30], [30, 30], [-30, 30]]\n",
        utc_hours=(4,),
        environment=None,
        sections=NO_SPREADS,
        targets=ONE_SPOT_TARGETS,
        reference=ONE_SPOT_REFERENCE,
        candidates=ONE_SPOT_PAIRS.format(height=height),
        **kw,
    )
