"""The antenna a builder's reading or log names: one antenna of the scenario as it was connected to the receiver.

A switched candidate (``directions``: :mod:`snrgain.scenario.switched`) is one antenna per state, each named
``"<name> <state>"`` as rank prints it, e.g. "Beverage NE-SW NE (45 deg)"; what was connected is one of them.  A
state is named by that name or, where no other state of the antenna is named so, by the antenna's name and the
state's label without its bearing ("Beverage NE-SW NE"; a named state's own name: "flag pair front").  The switched
antenna's own name names none of its states: it is refused, its states listed.

The tools that measure after building (``noise-readings``, ``verify``, ``calibrate --into``) read the scenario's
tables before loading them (they run a copy cut down to the antennas they need), so the names are worked out from the
tables here, the same way loading names the states.
"""

from __future__ import annotations

import re

from snrgain.records import record

from .switched import expand_directions

REFERENCE = "reference"
"""The reference's other name, wherever an antenna is named."""


@record
class Connected:
    """One antenna of the scenario as a reading or a log names it."""

    table: str
    """The name on its table in the file: the candidate's (a switched antenna's own name for each of its states) or
    the reference's."""
    name: str
    """The antenna as the results name it: a state's name, a candidate's, the reference's, or "reference"."""
    group: str | None = None
    """The switched antenna it is a state of (its table's name), else None."""


def short_label(label: str) -> str:
    """A state's label without its bearing: the compass point, or the name the state was given.

    >>> short_label("NE (45 deg)"), short_label("front (227.5 deg)")
    ('NE', 'front')
    """
    return re.sub(r" \([-\d.]+ deg\)$", "", label)


def state_names(data: dict) -> dict[str, list[tuple[str, str]]]:
    """Each switched candidate's name -> its states as (name, label), in the order written (as loading names them);
    a table whose ``directions`` are refused is left to loading to name the problem."""
    out = {}
    for i, c in enumerate(data.get("candidate", []) if isinstance(data.get("candidate"), list) else [], 1):
        if not isinstance(c, dict) or "directions" not in c or not isinstance(c.get("name"), str):
            continue
        states, problems = expand_directions(c, f"candidate {i}")
        if not problems and all("switched" in info for _, info in states):
            out[c["name"]] = [(t["name"], info["switched"].state) for t, info in states]
    return out


def antenna_names(data: dict) -> list[str]:
    """Every name an antenna can be given by (the reference, ``reference``, the candidates, each state by its name)."""
    ref = data.get("reference") if isinstance(data.get("reference"), dict) else {}
    switched = state_names(data)
    out = [str(ref.get("name", REFERENCE)), REFERENCE]
    for c in data.get("candidate", []) if isinstance(data.get("candidate"), list) else []:
        if isinstance(c, dict) and c.get("name") is not None:
            out += [n for n, _ in switched[c["name"]]] if c["name"] in switched else [str(c["name"])]
    return out


def connected(data: dict, name: str) -> Connected:
    """The antenna ``name`` names in the scenario's tables ``data`` (the module's rules; a whole name wins over a
    state's shorter one).  Raises ValueError saying what it names instead: nothing (the names it could be), a switched
    antenna (its states), several states."""
    ref = data.get("reference") if isinstance(data.get("reference"), dict) else {}
    ref_name = str(ref.get("name", REFERENCE))
    if name in (REFERENCE, ref_name):
        return Connected(ref_name, name)
    switched = state_names(data)
    cands = data.get("candidate") if isinstance(data.get("candidate"), list) else []
    if name in [c.get("name") for c in cands if isinstance(c, dict) and c.get("name") not in switched]:
        return Connected(name, name)
    whole = {s: group for group, states in switched.items() for s, _ in states}
    if name in whole:
        return Connected(whole[name], name, whole[name])
    if name in switched:
        full = [s for s, _ in switched[name]]
        raise ValueError(
            f"{name!r} is a switched antenna of {len(full)} states ({', '.join(repr(s) for s in full)}): name the "
            f"state that was switched in, e.g. {full[0]!r}"
        )
    short = [(s, g) for g, states in switched.items() for s, label in states if f"{g} {short_label(label)}" == name]
    if len(short) > 1:
        raise ValueError(
            f"{name!r} names {len(short)} states ({', '.join(repr(s) for s, _ in short)}): give the state's whole name"
        )
    if short:
        return Connected(short[0][1], short[0][0], short[0][1])
    raise ValueError(f"antenna {name!r} is not in the scenario; its antennas are: {', '.join(antenna_names(data))}")
