"""The station plan: which antennas to build, and which serves which target.

Every decision of snrgain uses one statistic per antenna and target: the
median SNR gain over the reference across the target's months and hours and
the spreads (snrgain.model.spread), the number the per-target ranking shows.  The
plan uses it too, so the antenna it names for a target is that target's best
unless the plan says why not.

A station with a set S of antennas (the reference always among them) listens
to each target on the member of S with the highest median SNR gain toward
it.  The set's worth is the weighted mean, over targets, of that member's
SNR gain as a power ratio, given in dB:

    V(S) = 10 log10( sum_t w_t 10^(max_{a in S} G[a, t] / 10) ),

with the reference's G = 0, so V({reference}) = 0 and V never falls when an
antenna is added.  Targets are combined as power ratios, never by adding or
averaging dB.  The plan is the S of highest V with at most ``max_antennas``
antennas beside the reference: found by trying every such set when there
are at most :data:`EXACT_LIMIT` candidates, else greedily (add the antenna
that raises V most, repeatedly).  Its members are listed in the order that
greedy adding takes them, each with the dB it adds (they add up to V(S));
members adding less than :data:`MIN_ADDED_DB` are left out.  Where a
target's best antenna is not in the plan, :attr:`Plan.not_best` says which
it is, who serves the target instead, and why (the antenna limit, or too
little added).  Yardsticks that cannot be built (the isotropic antenna)
take no part.

A switched antenna (a candidate with ``directions``) is one antenna to build whose states are ranked like
candidates: the plan takes its states together, as one member that serves each target in its best state (its
G[., t] is the highest of its states'), so building it counts once against ``max_antennas`` and it is named once
in :attr:`Plan.antennas` by its group; the services name the state that serves each target.

Two candidates that stand in one place (snrgain.decide.lot.alternatives: a whip on another, two wires laid alike)
are alternatives to compare, one of which can be built there: no set holding both is tried, by the exact search or
the greedy one, and a phasing unit stands where its parts stand.  A target whose best is left out for the other is
served by the best of what the plan builds, and :attr:`Plan.not_best` says so (reason "alternative").
"""

from __future__ import annotations

from dataclasses import field
from itertools import combinations

import numpy as np

from snrgain.records import record

EXACT_LIMIT = 12
"""Up to this many candidates every set is tried; beyond, the set is chosen greedily."""
MIN_ADDED_DB = 0.1
"""An antenna that adds less than this to the plan's worth is not worth building [dB]."""


@record
class Service:
    """One antenna serving a target over the target's months and hours."""

    antenna: str
    months: list[int]
    utc_hours: list[float]
    snr_gain_db: float
    """Median SNR gain over the reference toward the target [dB] (the ranking's statistic)."""
    group: str | None = None
    """The switched antenna ``antenna`` is a state of (switched to that state for the target), else None."""


TIE_DB = 1e-9
"""Median SNR gains closer than this are a tie [dB]: the plan serves a target with the earlier antenna, and the
ranking (snrgain.model.results.rank_for_target) keeps them in the scenario's order."""


@record
class Plan:
    """The antennas to build (in order), the dB each adds, the plan's worth, and who serves which target."""

    antennas: list[str]
    added_db: list[float]
    gain_db: float
    """V(S): the weighted mean over targets of the serving member's SNR gain as a power ratio, in dB."""
    by_target: dict[int, list[Service]] = field(default_factory=dict)
    """Target index -> the member that serves it (one Service)."""
    method: str = "exact"
    max_antennas: int | None = None
    not_best: dict[int, dict] = field(default_factory=dict)
    """Target index -> {best, best_db, served_by, served_db, reason, adds_db, weight} where the target's best antenna
    is not the one the plan serves it with; reason "max_antennas" (the plan holds no more) or "adds_little" (it adds
    less than MIN_ADDED_DB to the plan's worth); adds_db what building it too would add to the plan's worth, weight
    the target's share of it; or reason "alternative" (it stands where ``instead``, members of the plan, stand, so it
    cannot be built too), with swap_db, what building it in their place would change the plan's worth by, in place
    of adds_db; or reason "unfit" (it cannot be built where the file places it: ``where``, the place's problem as
    ``unfit`` holds it)."""
    states: dict[str, list[str]] = field(default_factory=dict)
    """A switched antenna of the plan (by its group name, as in ``antennas``) -> its states that serve a target, in
    the order written; the antenna is built once and switched between them."""
    alternatives: list[tuple[str, str]] = field(default_factory=list)
    """Pairs of antennas (by name; a switched antenna's states each by its own, a phasing unit by its name where one
    of its parts stands in the other's place) of which the plan builds one at most: they stand in one place."""
    unfit: dict[str, dict] = field(default_factory=dict)
    """Antennas (by name; a switched antenna's states each by its own) the plan leaves out because they cannot be
    built where the file places them -> {code, values} of the first such problem (snrgain.decide.lot.unfit: off the
    lot, in a keep-out area, within a tx_clearance the user gives); a phasing unit over such a part is left out too."""


def worth(gains: np.ndarray, weights: np.ndarray, members) -> float:
    """V(S) [dB] for the antennas ``members`` (indices; the reference 0 always included).

    ``gains`` (antennas, targets): the median SNR gain over the reference [dB]; ``weights`` (targets,) adding to 1.

    >>> worth(np.array([[0.0, 0.0], [10.0, 0.0]]), np.array([0.5, 0.5]), [1])  # (10 + 1) / 2
    7.403626894942439
    """
    best = np.max(np.asarray(gains)[[0, *members]], axis=0)
    return float(10.0 * np.log10(np.dot(weights, 10.0 ** (best / 10.0))))


def station_plan(
    names,
    gains,
    weights,
    *,
    max_antennas: int | None = None,
    buildable=None,
    target_times=None,
    groups=None,
    parts=None,
    alternatives=None,
    unfit=None,
) -> Plan:
    """The station plan (module docstring); ``names[0]`` is the reference.

    ``gains`` (antennas, targets): the median SNR gain over the reference [dB], the reference's row 0;
    ``buildable[i]`` False keeps antenna i out of the plan (a yardstick); ``target_times[t]``: (months, utc_hours)
    each target is listened at, for the services; ``groups[i]``: the switched antenna that antenna i is a state of
    (None: an antenna of its own); the states of one group are one member of the plan; ``parts[i]``: the antennas
    (indices) a phasing unit i is built over, which come with it (each may serve a target alone: the unit passes it
    alone); ``alternatives``: pairs (or larger groups) of antennas (indices) of which one at most can be built (they
    stand in one place): no set holding two of them is tried, and a target whose best is left out for the other gets
    the reason "alternative" (``instead``: the members built in its place); ``unfit``: antenna index -> {code,
    values}, the antennas that cannot be built where they are placed (snrgain.decide.lot.unfit), left out of the
    plan, a phasing unit over one of them too; a target whose best is one of them gets the reason "unfit".

    >>> g = np.array([[0.0, 0.0], [6.0, 0.0], [0.0, 4.0]])
    >>> p = station_plan(["ref", "a", "b"], g, np.array([0.5, 0.5]))
    >>> p.antennas, [round(x, 2) for x in p.added_db], round(p.gain_db, 2)
    (['a', 'b'], [3.96, 1.15], 5.11)
    >>> p1 = station_plan(["ref", "a", "b"], g, np.array([0.5, 0.5]), max_antennas=1)
    >>> p1.antennas, p1.not_best[1]["best"], p1.not_best[1]["reason"]
    (['a'], 'b', 'max_antennas')
    >>> s = station_plan(["ref", "sq N", "sq S"], g, np.array([0.5, 0.5]), max_antennas=1, groups=[None, "sq", "sq"])
    >>> s.antennas, round(s.gain_db, 2), s.states, s.by_target[1][0].antenna
    (['sq'], 5.11, {'sq': ['sq N', 'sq S']}, 'sq S')
    >>> u = np.array([[0.0, 0.0], [5.0, 3.0], [0.0, 0.0], [7.0, 1.0]])  # 'unit' over 'bev' and 'whip'
    >>> p2 = station_plan(["ref", "bev", "whip", "unit"], u, np.array([0.5, 0.5]), parts=[(), (), (), (1, 2)])
    >>> p2.antennas, [p2.by_target[t][0].antenna for t in (0, 1)]
    (['unit'], ['unit', 'bev'])
    >>> alt = station_plan(["ref", "a", "b"], g, np.array([0.5, 0.5]), alternatives=[(1, 2)])  # 'a' stands on 'b'
    >>> alt.antennas, alt.alternatives, alt.not_best[1]["reason"], alt.not_best[1]["instead"]
    (['a'], [('a', 'b')], 'alternative', ['a'])
    >>> off = station_plan(["ref", "a", "b"], g, np.array([0.5, 0.5]), unfit={1: {"code": "off-lot", "values": {}}})
    >>> off.antennas, off.not_best[0]["reason"], list(off.unfit)
    (['b'], 'unfit', ['a'])
    """
    gains = np.nan_to_num(np.asarray(gains, dtype=float), nan=0.0)
    gains[0] = 0.0
    groups = [None] * len(names) if groups is None else list(groups)
    candidates = [i for i in range(1, len(names)) if buildable is None or buildable[i]]
    parts = [()] * len(names) if parts is None else [tuple(p or ()) for p in parts]
    unfit = dict(unfit or {})
    for i in candidates:  # a phasing unit over a part that cannot be built where it stands cannot be either
        bad = next((j for j in parts[i] if j in unfit), None)
        if bad is not None and i not in unfit:
            unfit[i] = {"code": "part-unfit", "values": {"part": names[bad], **unfit[bad]}}
    units: list[tuple[int, ...]] = []  # one member each: an antenna, or every state of a switched antenna
    unit_names: list[str] = []
    for i in candidates:
        if i in unfit:
            continue
        if groups[i] is not None and groups[i] in unit_names:
            k = unit_names.index(groups[i])
            units[k] = (*units[k], i)
        else:
            units.append((i,))
            unit_names.append(names[i] if groups[i] is None else groups[i])

    def built(u) -> tuple[int, ...]:  # a member's antennas and what comes with them (a unit's own antennas)
        return (*units[u], *(j for i in units[u] for j in parts[i]))

    def value(chosen_units) -> float:
        return worth(gains, weights, [i for u in chosen_units for i in built(u)])

    n = len(units)
    clash = clashes([built(u) for u in range(n)], alternatives)

    def apart(members) -> bool:  # no two of them stand in one place
        return not any(frozenset(pair) in clash for pair in combinations(members, 2))

    limit = n if max_antennas is None else min(max_antennas, n)
    if n <= EXACT_LIMIT:
        method = "exact"
        best, best_value = (), 0.0
        for k in range(1, limit + 1):
            for members in combinations(range(n), k):
                if not apart(members):
                    continue
                v = value(members)
                if v > best_value + 1e-12:
                    best, best_value = members, v
        chosen = list(best)
    else:
        method = "greedy"
        chosen = []
        while len(chosen) < limit:
            base = value(chosen)
            step, pick = max(
                ((value([*chosen, c]) - base, c) for c in range(n) if c not in chosen and apart([*chosen, c])),
                default=(0.0, None),
            )
            if step <= 0:
                break
            chosen.append(pick)
    order, added, total, dropped = [], [], 0.0, []
    remaining = list(chosen)
    while remaining:  # the members as greedy adding takes them; the tail that adds (almost) nothing is left out
        step, pick = max((value([*order, c]) - total, c) for c in remaining)
        if step < MIN_ADDED_DB:
            dropped = list(remaining)
            break
        order.append(pick)
        added.append(step)
        total += step
        remaining.remove(pick)
    members = list(dict.fromkeys([0, *(i for u in order for i in built(u))]))
    unit_of = {i: u for u, members_u in enumerate(units) for i in members_u}
    by_target, not_best, serving = {}, {}, set()
    for t in range(gains.shape[1]):
        served = members[int(np.argmax(gains[members, t]))]  # first maximum: the earlier member wins a tie
        serving.add(served)
        months, hours = ([], []) if target_times is None else target_times[t]
        by_target[t] = [
            Service(names[served], list(months), [float(h) for h in hours], float(gains[served, t]), groups[served])
        ]
        top = max(candidates, key=lambda a: gains[a, t], default=None)
        if top is not None and top in unfit and gains[top, t] > gains[served, t] + TIE_DB:
            not_best[t] = {
                "best": names[top],
                "best_db": float(gains[top, t]),
                "served_by": names[served],
                "served_db": float(gains[served, t]),
                "reason": "unfit",
                "where": unfit[top],
            }
        elif top is not None and gains[top, t] > gains[served, t] + TIE_DB:
            u = unit_of[top]
            why = {
                "best": names[top],
                "best_db": float(gains[top, t]),
                "served_by": names[served],
                "served_db": float(gains[served, t]),
                "reason": "adds_little" if u in dropped or u not in chosen and len(chosen) < limit else "max_antennas",
                "adds_db": float(value([*order, u]) - total),
                "weight": float(weights[t]),
            }
            instead = [v for v in order if frozenset((u, v)) in clash]
            if instead:  # built in its place: building it too cannot be; swap_db, the worth with it there instead
                swapped = [v for v in order if v not in instead] + [u]
                del why["adds_db"]
                why |= {"reason": "alternative", "instead": [unit_names[v] for v in instead]}
                why["swap_db"] = float(value(swapped) - total)
            not_best[t] = why
    states = {
        unit_names[u]: [names[i] for i in units[u] if i in serving] for u in order if groups[units[u][0]] is not None
    }
    return Plan(
        [unit_names[u] for u in order],
        [float(a) for a in added],
        float(total),
        by_target,
        method,
        max_antennas,
        not_best,
        states,
        [(names[i], names[j]) for u, v in sorted(tuple(sorted(c)) for c in clash) for i in units[u] for j in units[v]],
        {names[i]: unfit[i] for i in sorted(unfit)},
    )


def clashes(built, alternatives) -> set[frozenset]:
    """The pairs of members (indices into ``built``, each member's antennas: its own and those built with it) that
    cannot both be built: one's antenna and the other's are two of one group of ``alternatives`` (indices of
    antennas of which one at most can be built); a pair both of whose antennas one member builds (a phasing unit's
    own parts) is no clash.

    >>> sorted(map(sorted, clashes([(1,), (2,), (3, 1, 2)], [(1, 2)])))  # 3: a unit built over 1 and 2
    [[0, 1]]
    """
    groups = [set(g) for g in alternatives or ()]
    sets = [set(b) for b in built]
    out = set()
    for u, v in combinations(range(len(sets)), 2):
        for g in groups:
            pairs = ((i, j) for i in g & sets[u] for j in g & sets[v] if i != j)
            if any(not {i, j} <= sets[u] and not {i, j} <= sets[v] for i, j in pairs):
                out.add(frozenset((u, v)))
                break
    return out
