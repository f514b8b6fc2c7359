"""The station plan: which antennas to build and switch between, and which serves which target and hours.

A station with a set S of antennas (the reference always among them) listens
to each target at each of its hours on the antenna of S with the highest SNR
gain then.  The set's worth is the weighted mean over targets (the targets'
weights) of that best-in-set SNR gain, averaged in dB over each target's own
months and hours:

    V(S) = sum_t w_t mean_{cells of t} max_{a in S} G[a, t, cell],

with the reference's G = 0, so V({reference}) = 0 and V never falls when an
antenna is added.  The plan is the S of highest V with at most
``max_antennas`` antennas beside the reference: found by trying every such
set when there are at most :data:`EXACT_LIMIT` candidates, else greedily
(add the antenna that raises V most, repeatedly).  Its members are listed
in the order that greedy adding would take them, each with the dB it adds;
members adding less than :data:`MIN_ADDED_DB` are left out (nothing to gain
from building them).  The added dB sum to V(S).

The SNR gains used are the nominal ones (median ground and noise levels),
hour by hour.  Yardsticks that cannot be built (the isotropic antenna) take
no part.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from itertools import combinations

import numpy as np

EXACT_LIMIT = 12
"""Up to this many candidates every set is tried; beyond, the set is chosen greedily."""
MIN_ADDED_DB = 0.1
"""An antenna that adds less than this to the plan's worth is not worth building [dB]."""


@dataclass
class Service:
    """One antenna serving a target at some of its hours."""

    antenna: str
    months: list[int]
    utc_hours: list[float]
    snr_gain_db: float
    """Mean SNR gain over the reference at those hours [dB]."""


@dataclass
class Plan:
    """The antennas to build (in order), the dB each adds, the plan's worth, and who serves which target when."""

    antennas: list[str]
    added_db: list[float]
    gain_db: float
    """V(S): the weighted mean over targets of the best-in-set SNR gain over the reference alone [dB]."""
    by_target: dict[int, list[Service]] = field(default_factory=dict)
    """Target index -> who serves it when."""
    method: str = "exact"
    max_antennas: int | None = None


def worth(gains: np.ndarray, masks: np.ndarray, weights: np.ndarray, members) -> float:
    """V(S) for the antennas ``members`` (indices, the reference 0 always included) [dB].

    ``gains`` (antennas, targets, months, hours) of SNR gain over the reference; ``masks`` (targets, months,
    hours) the cells each target is listened at; ``weights`` (targets,) adding to 1.
    """
    best = np.max(gains[[0, *members]], axis=0)  # (targets, months, hours)
    per_target = [best[t][masks[t]].mean() for t in range(gains.shape[1])]
    return float(np.dot(weights, per_target))


def station_plan(
    names, gains, masks, weights, *, max_antennas: int | None = None, months=None, utc_hours=None, buildable=None
) -> Plan:
    """The station plan (module docstring) from per-cell SNR gains; ``names[0]`` is the reference.

    ``buildable[i]`` False keeps antenna i out of the plan (a yardstick).

    >>> g = np.zeros((3, 2, 1, 2))
    >>> g[1, 0] = 6.0     # antenna 1 gains 6 dB toward target 0
    >>> g[2, 1] = 4.0     # antenna 2 gains 4 dB toward target 1
    >>> masks = np.ones((2, 1, 2), dtype=bool)
    >>> p = station_plan(["ref", "a", "b"], g, masks, np.array([0.5, 0.5]))
    >>> p.antennas, p.added_db, p.gain_db
    (['a', 'b'], [3.0, 2.0], 5.0)
    >>> station_plan(["ref", "a", "b"], g, masks, np.array([0.5, 0.5]), max_antennas=1).antennas
    ['a']
    """
    candidates = [i for i in range(1, len(names)) if buildable is None or buildable[i]]
    n = len(candidates)
    limit = n if max_antennas is None else min(max_antennas, n)
    if n <= EXACT_LIMIT:
        method = "exact"
        best, best_value = (), 0.0
        for k in range(1, limit + 1):
            for members in combinations(candidates, k):
                v = worth(gains, masks, weights, members)
                if v > best_value + 1e-12:
                    best, best_value = members, v
        chosen = list(best)
    else:
        method = "greedy"
        chosen = []
        while len(chosen) < limit:
            base = worth(gains, masks, weights, chosen)
            gain, pick = max(
                (worth(gains, masks, weights, [*chosen, c]) - base, c) for c in candidates if c not in chosen
            )
            if gain <= 0:
                break
            chosen.append(pick)
    # Order the members as greedy adding takes them; leave out the tail that adds (almost) nothing.
    order, added, value = [], [], 0.0
    remaining = list(chosen)
    while remaining:
        step, pick = max((worth(gains, masks, weights, [*order, c]) - value, c) for c in remaining)
        if step < MIN_ADDED_DB:
            break
        order.append(pick)
        added.append(step)
        value += step
        remaining.remove(pick)
    plan = Plan(
        [names[i] for i in order], [float(a) for a in added], float(value), method=method, max_antennas=max_antennas
    )
    plan.by_target = services(names, gains, masks, [0, *order], months=months, utc_hours=utc_hours)
    return plan


def services(names, gains, masks, members, *, months=None, utc_hours=None) -> dict[int, list[Service]]:
    """For each target (index), which member serves it at which of its cells (the best there; ties go to the
    earlier member, the reference first)."""
    nt, nm, nh = gains.shape[1:]
    months = list(range(1, nm + 1)) if months is None else list(months)
    utc_hours = list(range(nh)) if utc_hours is None else list(utc_hours)
    sub = gains[members]  # (members, targets, months, hours)
    pick = np.argmax(sub, axis=0)  # first maximum: the earlier member wins a tie
    out = {}
    for t in range(nt):
        rows = []
        for j, a in enumerate(members):
            cells = masks[t] & (pick[t] == j)
            if not np.any(cells):
                continue
            mi, hi = np.nonzero(cells)
            rows.append(
                Service(
                    names[a],
                    sorted({months[i] for i in mi}),
                    sorted({float(utc_hours[i]) for i in hi}),
                    float(sub[j, t][cells].mean()),
                )
            )
        out[t] = rows
    return out
