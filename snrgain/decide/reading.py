"""Levels of local sources read on a directional antenna: a notice, since an S-meter reading on such an antenna
depends on where its pattern points, not on the source alone.

A level (``[[noise.local]] level``) is turned into the source's strength through the pattern of the antenna it was
read on (``read_on``, by default the file's reference).  On an antenna that hears every bearing alike (a vertical)
the strength follows from the reading whatever the source's bearing; on a directional one (a Beverage, a loop, an
array) it rests on the pattern toward the source: a wrong bearing or elevation, or a pattern off by a few dB in that
direction, moves the strength and every SNR figure with it.  Directional here means the antenna's gain at the
source's arrival elevation varies over the compass by more than :data:`DIRECTIONAL_RIPPLE_DB`.
"""

from __future__ import annotations

import numpy as np

from snrgain.model.notices import Notice

DIRECTIONAL_RIPPLE_DB = 1.0
"""Gain varying over the compass by more than this [dB] (at the source's elevation) makes an antenna directional
for a reading: a vertical over uniform ground varies by none."""
_COMPASS_STEP_DEG = 5.0
_FLOOR = 1e-12


def compass_ripple_db(antenna, freq_hz: float, elevation_rad: float) -> float:
    """How much the antenna's total gain varies over the compass at one elevation: max over min [dB]."""
    az = np.radians(np.arange(0.0, 360.0, _COMPASS_STEP_DEG))
    g = np.asarray(antenna.gain_linear(freq_hz, az, np.full_like(az, elevation_rad)), dtype=float)
    return float(10 * np.log10(max(float(g.max()), _FLOOR) / max(float(g.min()), _FLOOR)))


def reading_notices(sc) -> list[Notice]:
    """A notice for each level read on a directional antenna (code ``level-on-directional``: source, ripple_db,
    gain_toward_dbi, reference: whether it is the reference in force)."""
    by_name = {a.name: a for a in sc.antennas}
    out = []
    for src in sc.noise.local:
        if src.level_dbm is None:
            continue
        ant = by_name.get(src.read_on, sc.reference)
        ripple = compass_ripple_db(ant, sc.freq_hz, src.elevation_rad)
        if ripple > DIRECTIONAL_RIPPLE_DB:
            toward = float(ant.gain_linear(sc.freq_hz, np.array([src.bearing_rad]), np.array([src.elevation_rad]))[0])
            out.append(
                Notice(
                    "level-on-directional",
                    ant.name,
                    {
                        "source": src.name,
                        "ripple_db": ripple,
                        "gain_toward_dbi": float(10 * np.log10(max(toward, _FLOOR))),
                        "reference": ant is sc.reference,
                    },
                )
            )
    return out
