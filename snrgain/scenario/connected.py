"""The antenna a builder's reading or log names: one antenna of the scenario as it was connected to the receiver.

A switched candidate (``directions``: :mod:`snrgain.scenario.switched`) is one antenna per state, each named
``"<name> <state>"`` as rank prints it, e.g. "Beverage NE-SW NE (45 deg)"; what was connected is one of them.  A
state is named by that name or, where no other state of the antenna is named so, by the antenna's name and the
state's label without its bearing ("Beverage NE-SW NE"; a named state's own name: "flag pair front").  The switched
antenna's own name names none of its states: it is refused, its states listed.  A shorter name that is also another
antenna's name names two antennas: loading refuses the scenario (:func:`short_name_clashes`), and a name is refused
here too.  Names are compared in Unicode's composed form (snrgain.fields.nfc): "wëst" typed with a separate accent is
the state written "wëst".

The tools that measure after building (``noise-readings``, ``verify``, ``calibrate --into``) read the scenario's
tables before loading them (they run a copy cut down to the antennas they need), so the names are worked out from the
tables here, the same way loading names the states.
"""

from __future__ import annotations

import re

from snrgain.fields import nfc
from snrgain.records import record

from .switched import expand_directions, switched_state

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


class TwoAntennas(ValueError):
    """A name that names two antennas: a candidate (or the reference) and a state by its shorter name."""


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
    antenna (its states), several states, an antenna and a state."""
    ref = data.get("reference") if isinstance(data.get("reference"), dict) else {}
    ref_name = str(ref.get("name", REFERENCE))
    name_c = nfc(name)
    switched = state_names(data)
    short = [
        (s, g) for g, states in switched.items() for s, label in states if nfc(f"{g} {short_label(label)}") == name_c
    ]
    cands = data.get("candidate") if isinstance(data.get("candidate"), list) else []
    plain = [c.get("name") for c in cands if isinstance(c, dict) and c.get("name") not in switched]
    found = next((n for n in [ref_name, *plain] if isinstance(n, str) and nfc(n) == name_c), None)
    if found is not None and short and name_c != REFERENCE:
        raise TwoAntennas(
            f"{name!r} names both the antenna {found!r} and {short[0][0]!r}, a state of the switched antenna "
            f"{short[0][1]!r} (by its shorter name): give one of them another name in the scenario"
        )
    if name_c == REFERENCE or found == ref_name:
        return Connected(ref_name, ref_name if found == ref_name else REFERENCE)
    if found is not None:
        return Connected(found, found)
    whole = {nfc(s): (s, group) for group, states in switched.items() for s, _ in states}
    if name_c in whole:
        s, group = whole[name_c]
        return Connected(group, s, group)
    group = next((g for g in switched if nfc(g) == name_c), None)
    if group is not None:
        full = [s for s, _ in switched[group]]
        raise ValueError(
            f"{name!r} is a switched antenna of {len(full)} states ({', '.join(repr(s) for s in full)}): name the "
            f"state that was switched in, e.g. {full[0]!r}"
        )
    if len(short) > 1:
        raise ValueError(
            f"{name!r} names {len(short)} states ({', '.join(repr(s) for s, _ in short)}): give the state's whole name"
        )
    if short:
        return Connected(short[0][1], short[0][0], short[0][1])
    raise ValueError(f"antenna {name!r} is not in the scenario; its antennas are: {', '.join(antenna_names(data))}")


def short_name_clashes(antennas, wheres) -> list[tuple[str, str]]:
    """(path, message) for each antenna (the reference, a candidate, a switched antenna's own name) whose name is
    also a state's shorter name (the module's rules): one name for two antennas, which the tools that measure could
    not tell apart."""
    shorts: dict[str, tuple[str, str]] = {}
    for ant in antennas:
        s = switched_state(ant)
        if s is not None:
            shorts.setdefault(nfc(f"{s.group} {short_label(s.state)}"), (ant.name, s.group))
    out, said = [], set()
    for ant, where in zip(antennas, wheres):
        s = switched_state(ant)
        name = ant.name if s is None else s.group
        clash = shorts.get(nfc(name))
        if clash is None or name in said:
            continue
        said.add(name)
        state, group = clash
        out.append(
            (
                f"{where}.name",
                f"{name!r} is also the shorter name of {state!r}, a state of the switched antenna {group!r} (noise "
                "readings, verify and calibrate take a state by its antenna's name and its label without the "
                "bearing), so the name would stand for two antennas: give this one or that state another name",
            )
        )
    return out
