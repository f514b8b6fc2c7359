"""A located source at a known distance: how each reading antenna hears it there, read as ``rank`` reads it.

Where the readings file says where the readings were taken (``at``) and how far each source lies (``distance``),
``locate --write`` places the source at that distance on its bearing, and ``rank`` then reads it as a placed source
(:mod:`snrgain.model.placed`): a short vertical dipole at :data:`NEAR_HEIGHT_M` whose field each antenna takes where
it stands (a compact antenna through its currents or its vertical and horizontal gains, a long wire along its
length), the level an Fa measured at the reading point.  A source 150 m off a 240 m Beverage is not a plane wave
there: the wire hears it some 5 dB apart from its pattern.  So the fit reads such a source the same way, each reading
antenna standing at the reading point, and the copy describes the source the fit modelled.

The antenna's temperature from a source of strength S [K sr] at bearing and elevation d is S G_i / (4 pi), G_i its
gain toward d; for the placed source it is S P_i / (4 pi F), P_i the power it takes from the source's field
(:func:`snrgain.model.placed.received_power`, standing at the reading point) and F the field's power at the
reading point, both in the units where a unit plane wave delivers an antenna's realized gain: far off, P_i / F is
the antenna's vertical gain toward the source, and the reference monopole's is the one that gives the Fa.
"""

from __future__ import annotations

import numpy as np

from snrgain.model import placed
from snrgain.records import record
from snrgain.sky import noise as noisemod

NEAR_HEIGHT_M = noisemod.LocalSource.height_m
"""The placed source's height above the soil [m]: the scenario's default, written into the copy."""
NEAR_POLARISATION = "vertical"
"""What the placed source radiates: the scenario's default (a mains-fed supply or a fence's earth lead radiates
mostly vertically at the low bands), written into the copy."""


@record
class Near:
    """Where the readings were taken [m east, m north], how far each source lies [m], and the soil under the
    sources' field (the readings file's ground; None: a perfect ground)."""

    at_m: tuple[float, float]
    distances_m: tuple[float, ...]
    ground: object = None


def plan_point(at_m, distance_m: float, bearing_rad: float) -> tuple[float, float]:
    """The plan point [m east, m north] ``distance_m`` from ``at_m`` on the compass bearing ``bearing_rad``."""
    return (float(at_m[0] + distance_m * np.sin(bearing_rad)), float(at_m[1] + distance_m * np.cos(bearing_rad)))


def near_source(near: Near, k: int, azimuth_rad: float, elevation_rad: float, name: str = "located source"):
    """Source ``k`` at its distance on ``azimuth_rad`` from the reading point, as the copy writes it: a placed
    :class:`snrgain.sky.noise.LocalSource` (its Fa measured at the reading point; no level: the fit sets it)."""
    pos = plan_point(near.at_m, float(near.distances_m[k]), azimuth_rad)
    return noisemod.LocalSource(
        name,
        float(azimuth_rad % (2 * np.pi)),
        float(elevation_rad),
        0.0,
        position_m=pos,
        height_m=NEAR_HEIGHT_M,
        polarisation=NEAR_POLARISATION,
        measured_at_m=tuple(float(c) for c in near.at_m),
    )


def near_gains(antennas, near: Near, k: int, azimuth_rad: float, elevation_rad: float, freq_hz: float) -> np.ndarray:
    """P_i / F of each antenna (standing at the reading point) for source ``k`` at ``azimuth_rad``: its gain toward a
    plane wave that would bring it what the placed source brings (module docstring)."""
    src = near_source(near, k, azimuth_rad, elevation_rad)
    f_at = placed.field_power(src, near.at_m, freq_hz, near.ground)  # kept, as the products keep it
    p = [placed.received_power(a, src, freq_hz, near.at_m, near.ground, at_m=near.at_m) for a in antennas]
    return np.asarray(p, dtype=float) / f_at


def unreadable(antennas, labels) -> list[str]:
    """The labels of the antennas that cannot hear a placed source: a pattern of total gain only (a placed source's
    field is read through the vertical and horizontal gains)."""
    return [lab for a, lab in zip(antennas, labels) if not a.polarised]
