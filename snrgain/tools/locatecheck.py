"""The copy ``locate --write`` makes, read back as ``rank`` reads it: does it give the fitted levels?

The copy describes each source as the fit modelled it (:func:`snrgain.tools.locate.scenario_blocks`).  What the fit
took that no scenario key can carry is said in the copy's comment and on stderr (:func:`unsaid`): the readings'
frequency where the scenario's band is another one (a source's Fa changes with frequency), and for a placed source
the readings' soil where the scenario's site stands on another.  Readings off every band of the scenario (outside
its amateur band and more than 5 % from its frequency, as noise-readings leaves such readings out) are not copied
at all (:func:`off_every_band`).

:func:`copy_levels` then reads the copy as a scenario and works out, through rank's own stages (the sky builder and
:func:`snrgain.model.products.products`, placed sources heard where each antenna stands), the power each fitted
source brings each antenna the readings were taken on, standing at the reading point, at the readings' frequency;
the fit's own diffuse background (not written: the scenario's noise stands for it) is added to both sides, so a
reading the source does not dominate is not judged on a source it hardly hears.  Where rank reads a placed source
through the scenario's reference antenna (its level there times each antenna's pickup over the reference's), a
reference that hears the source's field otherwise than its pattern says (not vertically polarised toward it, say)
moves every level; that is what the check is for.  The site's structures and the transmitting vertical's
re-radiation are left out, as the fit leaves them out.
"""

from __future__ import annotations

import tomllib
from dataclasses import replace
from pathlib import Path

import numpy as np

from snrgain.records import record

FREQUENCY_APART = 0.02
"""A scenario band this far from the readings' frequency (as a fraction of it) is another frequency for the source:
man-made noise's Fa falls some 28 dB a decade (ITU-R P.372 Table 1's slopes), so 2 % moves it by about a quarter of
a dB, half the 0.5 dB the copy is held to."""
CHECK_TOLERANCE_DB = 1.0
"""The copy's level on a reading antenna further than this from the fitted one is said [dB]."""
UNIFORM_DB = 0.2
"""Readings whose copy levels are all off by the same dB within this are off by one factor (the reference antenna
rank reads a placed source through), not each by its own antenna [dB]."""


@record
class CopyCheck:
    """Each reading's level from the copy beside the fitted one, and the copy's reference antenna (rank reads a placed
    source through it)."""

    levels: list
    reference: str

    @property
    def worst_db(self) -> float:
        return max((abs(lv.off_db) for lv in self.levels), default=0.0)

    @property
    def differing(self) -> list:
        """The readings whose copy level lies further than :data:`CHECK_TOLERANCE_DB` from the fitted one."""
        return [lv for lv in self.levels if abs(lv.off_db) > CHECK_TOLERANCE_DB]

    @property
    def uniform(self) -> bool:
        """Every reading off by the same dB (within :data:`UNIFORM_DB`): one factor, not each antenna's own."""
        offs = [lv.off_db for lv in self.levels]
        return bool(offs) and max(offs) - min(offs) <= UNIFORM_DB


@record
class CopyLevel:
    """One reading: the fitted level and the copy's, each the fitted sources' share plus the fit's background [dBm]."""

    label: str
    fitted_dbm: float
    copy_dbm: float

    @property
    def off_db(self) -> float:
        return float(self.copy_dbm - self.fitted_dbm)


def unsaid(text: str, res, data) -> list[str]:
    """What the fit modelled that the copy (the scenario ``text`` it is made from) cannot tell rank, in words: the
    readings' frequency where the scenario's band is another, the readings' soil under a placed source's field where
    the scenario's site has another."""
    from snrgain.fields import make_ground

    parsed = tomllib.loads(text)
    out = []
    apart = [f for f in _band_frequencies(parsed).values() if abs(f - data.freq_hz) > FREQUENCY_APART * data.freq_hz]
    if apart:
        bands = " and ".join(f"{f / 1e6:g}" for f in apart)
        out.append(
            f"its level was read at {data.freq_hz / 1e6:g} MHz and rank takes the same Fa at {bands} MHz (a "
            "source's level changes with frequency: read it on each band ranked)"
        )
    if res.placed:
        site = parsed.get("site") if isinstance(parsed.get("site"), dict) else {}
        written = site.get("ground", "moist loam")
        try:
            theirs = make_ground(written)
        except (TypeError, ValueError):
            theirs = data.ground  # refused by the scenario's own check
        if _constants(theirs) != _constants(data.ground):
            said = written if isinstance(written, str) else "the site's ground constants"
            out.append(
                f"the fit took its field over the readings' ground ({data.ground_name}) and rank takes it over the "
                f"site's ({said})"
            )
    return out


def off_every_band(text: str, freq_hz: float) -> str | None:
    """Why the readings, taken at ``freq_hz`` [Hz], cannot be copied into the scenario ``text``: they lie off every
    band of it, as ``noise-readings`` leaves such readings out (:func:`snrgain.tools.noisereadings.on_band`), so the
    copy would give rank a source's Fa read on another band; None where one band takes them."""
    from snrgain.tools.logs import band_of_hz
    from snrgain.tools.noisereadings import OFF_BAND_FRACTION, on_band

    bands = _band_frequencies(tomllib.loads(text))
    if not bands or any(on_band(freq_hz, f) for f in bands.values()):
        return None
    listed = " and ".join(f"{f / 1e6:g} MHz ({band_of_hz(f)})" for f in bands.values())
    return (
        f"the readings were taken at {freq_hz / 1e6:g} MHz and the scenario listens at {listed}: more than "
        f"{OFF_BAND_FRACTION * 100:g} % apart and not in one amateur band, so the copy would give rank a source's "
        f"level read at {freq_hz / 1e6:g} MHz as its level there (man-made noise's Fa falls some 28 dB a decade); "
        "read the source on the scenario's band, or copy it into a scenario of the readings' band"
    )


def _band_frequencies(parsed: dict) -> dict[str | None, float]:
    """Each band's name (None for a file of one band) and frequency [Hz], those the scenario's check would refuse
    left out."""
    from snrgain.scenario.bands import band_label
    from snrgain.units import parse_quantity

    band = parsed.get("band")
    tables = [(None, band)] if isinstance(band, dict) else [(None, t) for t in band] if isinstance(band, list) else []
    out = {}
    for name, table in tables:
        if not isinstance(table, dict):
            continue
        try:
            f = parse_quantity(table.get("frequency"), "frequency")
        except (TypeError, ValueError):
            continue
        out[name if isinstance(band, dict) else band_label(table)] = f
    return out


def _constants(ground) -> tuple | None:
    return None if ground is None else (round(ground.permittivity, 9), round(ground.conductivity_s_per_m, 12))


def copy_levels(text: str, res, data, names, *, base_dir: Path | None = None, label: str = "<copy>") -> CopyCheck:
    """Each reading's level as the copy ``text`` gives it (module docstring) beside the fitted one, for the sources
    ``names`` of ``res``; ``base_dir``: where the copy's relative paths start.  Raises what loading the copy
    raises (a copy rank cannot read)."""
    from snrgain.model import pipeline
    from snrgain.physics.receiver import power_dbm
    from snrgain.scenario import load
    from snrgain.sky import noise as noisemod

    parsed = tomllib.loads(text)
    noise = parsed.setdefault("noise", {})
    if isinstance(noise, dict):  # the copy's atmospheric noise is not read here (nor P.372's data it may need)
        noise["atmospheric"] = {"model": "none"}
    bands = _band_frequencies(parsed)
    band = min(bands, key=lambda k: abs(bands[k] - data.freq_hz)) if bands else None  # the nearest the readings'
    sc = load(parsed, base_dir=base_dir, label=label, band=band)
    local = tuple(s for s in sc.noise.local if s.name in set(names))
    at = data.at_m
    readers = tuple(r.antenna.at(at) if at is not None else r.antenna for r in data.readings)
    noise = noisemod.NoiseSettings(man_made=None, atmospheric=None, galactic=None, local=local)
    sc = replace(
        sc,
        band=replace(sc.band, freq_hz=data.freq_hz, bandwidth_hz=data.bandwidth_hz),
        noise=noise,
        candidates=readers,
        feed_lines={},
    )
    sc = replace(sc, times=replace(sc.times, months=sc.times.months[:1], utc_hours=sc.times.utc_hours[:1]))
    grid = pipeline.sky_grid(sc)
    skies = pipeline.build_sky(sc, grid)  # the pipeline's own stages, as rank makes them
    temps = pipeline.products(sc, sc.antennas, grid, skies).temps.by_component[:, 1:, 0, 0]  # (components, readings)
    copy = power_dbm(temps.sum(axis=0), bandwidth_hz=data.bandwidth_hz)
    bg = 10 ** (np.asarray(res.background_dbm) / 10)
    fitted = 10 * np.log10(bg + np.sum(10 ** (np.asarray(res.source_dbm) / 10), axis=0))
    levels = [
        CopyLevel(lab, float(f), float(10 * np.log10(bg_i + 10 ** (c / 10))))
        for lab, f, c, bg_i in zip(res.labels, fitted, np.atleast_1d(copy), bg)
    ]
    return CopyCheck(levels, sc.reference.name)


def said(check: CopyCheck, placed: bool) -> str | None:
    """The warning for a copy whose levels lie further than :data:`CHECK_TOLERANCE_DB` from the fitted ones (None
    where none does): which readings, by how much, and where every one is off alike for a placed source, why."""
    off = check.differing
    if not off:
        return None
    each = ", ".join(
        f"{lv.label} {lv.copy_dbm:.1f} dBm against {lv.fitted_dbm:.1f} ({lv.off_db:+.1f} dB)" for lv in off
    )
    out = (
        f"the copy, read as rank reads it, misses the fitted level by more than {CHECK_TOLERANCE_DB:g} dB on "
        f"{len(off)} of {len(check.levels)} readings: {each}"
    )
    if placed and check.uniform:
        out += (
            f"; every reading alike: rank hears a placed source through the scenario's reference antenna "
            f"{check.reference!r} (its level there, through its pattern, times each antenna's pickup over the "
            "reference's), and that antenna hears this source's field otherwise than its pattern toward the source "
            "says (not vertically polarised toward it, say); rank's levels from the source move with the reference"
        )
    return out
