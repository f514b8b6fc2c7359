"""What the user is told of the targets themselves: one by place that arrives from nearly overhead (NVIS)."""

from __future__ import annotations

import numpy as np

from snrgain.model.notices import Notice
from snrgain.units import bearing_deg


def target_notices(sc) -> list[Notice]:
    """``target-near-vertical`` for each target by place that arrives by one hop at or above
    snrgain.physics.targets.NEAR_VERTICAL_RAD (rank's warnings; check says them too)."""
    return [
        Notice(
            "target-near-vertical",
            None,
            {
                "target": t.name,
                "distance_km": t.distance_m / 1e3,
                "elevation_deg": float(np.degrees(t.mean_elevation_rad)),
                "bearing_deg": bearing_deg(t.bearing_rad),
            },
        )
        for t in sc.targets
        if t.near_vertical
    ]
