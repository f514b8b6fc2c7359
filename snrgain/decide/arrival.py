"""What the user is told of the targets themselves: one by place that arrives from nearly overhead (NVIS)."""

from __future__ import annotations

import numpy as np

from snrgain.model.notices import Notice
from snrgain.units import bearing_deg


def target_notices(sc) -> list[Notice]:
    """``target-near-vertical`` for each target by place that arrives by one hop at or above
    snrgain.physics.targets.NEAR_VERTICAL_RAD (rank's warnings; check says them too), with the frequency and the
    layer's critical frequencies by day and by night the scenario takes (its galactic noise's, snrgain's defaults
    where it has none): a wave from overhead comes back only below the critical frequency."""
    from snrgain.sky.noise import GalacticNoise

    gal = getattr(sc.noise, "galactic", None) or GalacticNoise()
    return [
        Notice(
            "target-near-vertical",
            None,
            {
                "target": t.name,
                "distance_km": t.distance_m / 1e3,
                "elevation_deg": float(np.degrees(t.mean_elevation_rad)),
                "bearing_deg": bearing_deg(t.bearing_rad),
                "freq_hz": float(sc.freq_hz),
                "critical_day_hz": float(gal.critical_frequency_day_hz),
                "critical_night_hz": float(gal.critical_frequency_night_hz),
            },
        )
        for t in sc.targets
        if t.near_vertical
    ]
