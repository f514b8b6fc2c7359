"""Local noise sources against the antennas: a placed source stands clear of every antenna, and a level read on
the reference can be read there (the reference hears the source)."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from snrgain.antennas import Antenna
from snrgain.constants import MIN_GAP_M
from snrgain.units import length_said

from .noise import LocalSource, resolve_local_source

if TYPE_CHECKING:
    from .antennas import Built
    from .model import ScenarioModel
    from .site import SiteSection

MIN_READING_GAIN = 1e-6
"""Below this gain (-60 dBi) toward a local source, a level read on the reference cannot place the source."""


def local_levels_readable(
    local: list[LocalSource], reference: Antenna, freq_hz: float, site: SiteSection, readers: dict | None = None
) -> list[tuple[str, str]]:
    """A local source's level read on the reference antenna needs that antenna to receive from the source's
    directions (the check the sky builder would fail on later); a placed source must stand clear of it.
    ``readers``: ``read_on`` (None: not given) -> the antenna a level was read on."""
    from noisemodels.sky import compact_source_directions

    out = []
    ref_m = reference.params.position or (0.0, 0.0)
    for i, raw in enumerate(local):
        where = f'noise.local {i + 1} ("{raw.name}")'
        src = resolve_local_source(raw, site, ref_m)
        if raw.level is None:
            if raw.fa is not None and src.position_m is not None:
                from snrgain.model import placed

                if not placed.hears(reference, src, freq_hz, ref_m):  # the Fa is carried to the reference
                    out.append((f"{where}.fa", _deaf_reference(reference, src)))
            continue
        on = (readers or {}).get(raw.read_on, reference)  # read_on: checked by name in snrgain.scenario.loading
        if src.position_m is not None:
            from snrgain.model import placed

            for ant in (reference,) if on is reference else (reference, on):  # its pickup is carried from both
                if placed.hears(ant, src, freq_hz, ref_m):
                    continue
                who = f"the reference antenna ({ant.family})" if ant is reference else f"{ant.name!r} ({ant.family})"
                out.append(
                    (
                        f"{where}.level",
                        f"{who} picks up nothing of a {src.polarisation} source where it stands ({_NULL_WORDS}), so a "
                        f"level read on {'it' if ant is on else repr(on.name)} cannot be placed; {_INSTEAD}",
                    )
                )
                break
            continue
        d = compact_source_directions(src.bearing_rad, src.elevation_rad, src.spread_rad)
        if not np.any(on.gain_linear(freq_hz, d.azimuth_rad, d.elevation_rad) > MIN_READING_GAIN):
            out.append(
                (
                    f"{where}.level",
                    f"{'the reference antenna' if on is reference else repr(on.name)} receives nothing from bearing "
                    f"{np.degrees(src.bearing_rad):g} deg, "
                    f"elevation {np.degrees(src.elevation_rad):g} deg, so a level read on it cannot be placed; "
                    "give the level as fa instead",
                )
            )
    return out


_NULL_WORDS = "or 60 dB or more below what it would hear of the source turned its best way"
_INSTEAD = (
    "give the polarisation it radiates ('both' for a source that radiates either way, as most do), or check its "
    "orientation (a horizontal source broadside to a vertical gives it no vertical field)"
)


def _deaf_reference(reference: Antenna, src) -> str:
    """Why an Fa of a placed source cannot place it when the reference hears nothing of it."""
    return (
        f"the reference antenna ({reference.family}) picks up nothing of a {src.polarisation} source where it "
        f"stands ({_NULL_WORDS}), and a placed source's noise is scaled from what the reference hears of it (its fa "
        "is carried to the reference, taken for P.372's monopole there), so every other antenna's share of it would "
        f"be without bound; {_INSTEAD}"
    )


MIN_SOURCE_GAP_M = MIN_GAP_M
"""The least distance on the plan between a placed noise source and any antenna's feed point, wire or element [m]
(snrgain.constants.MIN_GAP_M)."""


def antenna_outline(antenna, reference_m) -> list[np.ndarray]:
    """Where an antenna stands on the plan: its points and, for a long wire, the segment of its wire [m]."""
    pos = getattr(antenna, "positions", None)
    if pos is not None and len(pos):
        pts = np.asarray(pos, dtype=float)
        return [p for p in pts] + [pts.mean(axis=0)]
    p = antenna.params.position
    p = np.asarray(reference_m if p is None else p, dtype=float)
    if antenna.long_wire:
        b = antenna.bearing_rad
        return [np.array([p, p + antenna.length_m * np.array([np.sin(b), np.cos(b)])])]
    width, b = getattr(antenna, "width_m", None), getattr(antenna, "line_bearing_rad", None)
    if width is not None and b is not None:  # a loop across its width from its feed side: a near source's field
        return [np.array([p, p + width * np.array([np.sin(b), np.cos(b)])])]  # is read on every part of it
    return [p]


def gap_m(point: np.ndarray, shape: np.ndarray) -> float:
    """Distance on the plan from a point to a point or a segment (2 x 2) [m]."""
    if shape.ndim == 1:
        return float(np.hypot(*(point - shape)))
    a, b = shape
    ab = b - a
    t = float(np.clip(np.dot(point - a, ab) / max(float(np.dot(ab, ab)), 1e-300), 0.0, 1.0))
    return float(np.hypot(*(point - (a + t * ab))))


def source_gap_m(point, height_m: float, antenna, reference_m) -> float:
    """How far a source at ``point`` [m east, m north] and ``height_m`` stands from an antenna's feed point, wire or
    elements [m]: on the plan, and along a wire the distance in space."""
    point = np.asarray(point, dtype=float)
    gaps = []
    for shape in antenna_outline(antenna, reference_m):
        gap = gap_m(point, shape)
        if shape.ndim == 2 and hasattr(antenna, "wire_height_m"):
            gap = float(np.hypot(gap, antenna.wire_height_m() - height_m))
        gaps.append(gap)
    return min(gaps)


def local_sources_clear(local: list[LocalSource], antennas, wheres, site: SiteSection) -> list[tuple[str, str]]:
    """Every placed source stands at least :data:`MIN_SOURCE_GAP_M` from every antenna (feed point, wire, element):
    the field model needs a distance and the reading a direction."""
    out = []
    ref_m = antennas[0].params.position or (0.0, 0.0)
    for i, raw in enumerate(local):
        if raw.bearing is not None:
            continue
        src = resolve_local_source(raw, site, ref_m)
        point = np.asarray(src.position_m, dtype=float)
        for ant, where in zip(antennas, wheres):
            if ant.composite:
                continue
            gap = source_gap_m(point, src.height_m, ant, ref_m)
            if gap < MIN_SOURCE_GAP_M:
                key = "position" if raw.position is not None else "latitude"
                out.append(
                    (
                        f'noise.local {i + 1} ("{raw.name}").{key}',
                        f"the source stands {length_said(gap, decimals=2)} from "
                        f"{where if where != 'reference' else f'the reference ({ant.name!r})'}; place it at least "
                        f"{length_said(MIN_SOURCE_GAP_M)} away from every antenna's feed point, wire and elements",
                    )
                )
                break
        else:  # and from every structure's foot: its re-radiation reads the source's field along it
            for st in getattr(site, "structures", ()) or ():
                gap = float(np.hypot(*(point - np.asarray(st.position, dtype=float))))
                if gap < MIN_SOURCE_GAP_M:
                    key = "position" if raw.position is not None else "latitude"
                    out.append(
                        (
                            f'noise.local {i + 1} ("{raw.name}").{key}',
                            f"the source stands {length_said(gap, decimals=2)} from the structure {st.name!r}; place "
                            f"it at least {length_said(MIN_SOURCE_GAP_M)} away from it",
                        )
                    )
                    break
    return out


def placed_sources_readable(local: list[LocalSource], antennas, wheres) -> list[tuple[str, str]]:
    """A placed source's field has a polarisation, read through an antenna's partial gains: an antenna that has only
    a total gain (a pattern table without gain_v_dbi and gain_h_dbi) cannot hear it (one problem per antenna)."""
    placed = [(i, s) for i, s in enumerate(local) if s.bearing is None]
    if not placed:
        return []
    i, src = placed[0]
    out = []
    for ant, where in zip(antennas, wheres):
        if ant.polarised:
            continue
        file = getattr(ant.params, "file", None)  # a pattern table's (the one kind with a total gain only)
        out.append(
            (
                where if file is None else f"{where}.file",
                f"{'its pattern' if file is None else f'the table {str(file)!r}'} gives total gain only (gain_dbi), "
                f'and noise.local {i + 1} ("{src.name}") is placed (a position, not a bearing): a placed source\'s '
                "field is read through the vertical and horizontal gains; add gain_v_dbi and gain_h_dbi columns to "
                "the table, or give the source by its bearing",
            )
        )
    return out


def reading_antenna(src, file_reference) -> str | None:
    """The name of the antenna a source's level was read on: its ``read_on`` ("reference": the file's), by default
    the file's reference; None for a source given as fa."""
    if src.level is None:
        return None
    if src.read_on is None or src.read_on == "reference":
        return file_reference.name
    return src.read_on


def reading_problems(model: ScenarioModel, built: Built, file_reference) -> list[tuple[str, str]]:
    """Every ``read_on`` names an antenna of the scenario; a placed source's level is read on an antenna as it
    stands, not on one set under the sky (an array steered by the noise, a phasing unit: its setting comes after the
    noise; snrgain.model.pipeline.resolve_sources)."""
    names = [a.name for a in built.antennas]
    out = []
    for i, src in enumerate(model.noise.local):
        on = reading_antenna(src, file_reference)
        where = f'noise.local {i + 1} ("{src.name}").read_on'
        if on is None:
            continue
        if on not in names:
            out.append((where, f"no antenna named {on!r}; the scenario has {', '.join(repr(n) for n in names)}"))
        elif src.placed and on != names[0] and built.antennas[names.index(on)].uses_sky:
            out.append(
                (
                    where,
                    f"{on!r} is set under the site's noise (steered or phased for it), so a placed source's level "
                    "cannot be read on it; name the antenna it was read on as it stands, or give the source's fa "
                    "with measured_at (where it was read)",
                )
            )
    return out


def check_local_sources(model: ScenarioModel, built: Built, file_reference=None) -> list[tuple[str, str]]:
    """Placed local sources stand clear of every antenna; then (if they do) levels read on the reference (or the
    antenna ``read_on`` names; by default the file's reference) can be read there."""
    problems = local_sources_clear(model.noise.local, built.antennas, built.wheres, model.site)
    problems = problems or placed_sources_readable(model.noise.local, built.antennas, built.wheres)
    if not problems:
        problems = local_levels_readable(
            model.noise.local,
            built.antennas[0],
            model.band.frequency,
            model.site,
            readers={a.name: a for a in built.antennas}
            | {None: file_reference or built.antennas[0]}
            | {"reference": file_reference or built.antennas[0]},
        )
    return problems
