"""The station plan across several bands: one set of antennas to build for every band listened on.

The same plan and statistic as one band's (:func:`snrgain.decide.plan.station_plan`), over columns that are
(band, target) pairs: an antenna's column is its median SNR gain over the reference toward that target on that
band, 0 dB (the reference's) where it is not a candidate of the band.  Each band counts alike: a band's target
weights are scaled to sum to 1 / (number of bands).  An antenna listed in several bands is one antenna to build
(the same name); the plan says which band, target and hours each serves.
"""

from __future__ import annotations

import numpy as np

from snrgain.antennas import FAMILIES
from snrgain.decide.plan import Plan, station_plan


def plan_across_bands(bands) -> tuple[Plan, tuple[tuple[str, str], ...]]:
    """(plan, columns) for ``bands`` = [(band name, Results), ...]; columns are (band, target name) pairs."""
    names: list[str] = [bands[0][1].reference.name]
    families: dict[str, str] = {}
    groups: dict[str, str | None] = {}
    for _, r in bands:
        for a in r.candidates:
            if a.name not in names and a.name != r.reference.name:
                names.append(a.name)
            families.setdefault(a.name, a.family)
            groups.setdefault(a.name, getattr(a, "group", None))  # a switched antenna's states: one to build
    columns, weights, times, gains = [], [], [], []
    for band, r in bands:
        w = np.array([float(t["weight"]) for t in r.targets])
        w = w / w.sum() / len(bands)
        by_name = {a.name: a for a in r.candidates}
        for t_idx, t in enumerate(r.targets):
            columns.append((band, t["name"]))
            weights.append(w[t_idx])
            times.append((list(t["months"]), list(t["utc_hours"])))
            gains.append(
                [0.0] + [float(by_name[n].snr_gain_median_db[t_idx]) if n in by_name else 0.0 for n in names[1:]]
            )
    buildable = [True] + [FAMILIES[families[n]].build.buildable for n in names[1:]]
    max_antennas = bands[0][1].plan.max_antennas if bands[0][1].plan is not None else None
    plan = station_plan(
        names,
        np.array(gains).T,
        np.array(weights),
        max_antennas=max_antennas,
        buildable=buildable,
        target_times=times,
        groups=[None] + [groups[n] for n in names[1:]],
    )
    return plan, tuple(columns)
