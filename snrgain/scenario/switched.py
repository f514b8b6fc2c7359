"""Switched antennas: a candidate with ``directions = [...]`` (2 to :data:`MAX_DIRECTIONS` distinct bearings) is one
thing to build that serves one bearing at a time.

Each state is built (snrgain.scenario.antennas.build_antennas) as an ordinary antenna of its own (the
table's ``bearing`` replaced by the state's; an array steered toward it by its own ``auto_for``), named
``"<name> <compass point> (<bearing> deg)"`` and carrying a :class:`SwitchedState` (its group, the antenna's name),
so every later stage (products, spreads, decisions, sweeps) sees ordinary antennas and the plan and the build
sheet count the group once.  A long wire is one wire served from either end: its states are its two ends (two
bearings 180 deg apart); a family with a ``port`` key (a two-wire line) keeps its bearing and switches to its
reverse port, the others have the feed and the termination swap ends (the reversed state's feed point is the far
end of the same wire).
"""

from __future__ import annotations

import functools

import numpy as np
from pydantic import TypeAdapter, ValidationError

from snrgain.antennas import FAMILIES, Antenna
from snrgain.antennas.base import pydantic_problems
from snrgain.fields import Bearing
from snrgain.problems import toml_repr
from snrgain.records import record
from snrgain.units import bearing_deg

CANDIDATE_KEYS = ("directions", "bands")
"""Keys a candidate table may hold besides its family's, ``place`` and ``chain`` (taken out before the family
validates the rest; ``bands``, the bands of a file of several a candidate is built for, is read by
snrgain.scenario.bands before a band is loaded)."""
MAX_DIRECTIONS = 8
"""The most states a switched antenna may have (eight points of the compass)."""

COMPASS_POINTS = ("N", "NNE", "NE", "ENE", "E", "ESE", "SE", "SSE", "S", "SSW", "SW", "WSW", "W", "WNW", "NW", "NNW")


@record
class SwitchedState:
    """One state of a switched antenna: the antenna (``group``, the candidate's own name) and which state this is."""

    group: str
    """The name written on the candidate: one antenna to build."""
    state: str
    """The state's label within its group, e.g. "NE (45 deg)"."""
    bearing_deg: float
    """The bearing this state favours [deg, 0..360)."""
    index: int
    """Its place in ``directions`` (from 0)."""
    states: tuple[str, ...]
    """Every state's label, in the order written."""
    bearings_deg: tuple[float, ...]
    """Every state's bearing [deg]."""
    how: str = "turned"
    """How the states differ: "steered" (an array's delays follow each bearing), "turned" (the antenna set for each
    bearing: for the opposite one its feed and termination swap sides), "ends" (the feed and the termination swap
    ends of one wire) or "port" (the reverse port of the same wire)."""


def switched_state(antenna) -> SwitchedState | None:
    """The state of a switched antenna this antenna is, or None for an antenna that is not switched."""
    return getattr(antenna, "switched", None)


def state_label(bearing_deg: float) -> str:
    """A state's label: the nearest of 16 compass points and the bearing.

    >>> state_label(45.0), state_label(227.5), state_label(359.96)
    ('NE (45 deg)', 'SW (227.5 deg)', 'N (0 deg)')
    """
    b = round(float(bearing_deg) % 360.0, 1) % 360.0
    point = COMPASS_POINTS[int(np.floor(b / 22.5 + 0.5)) % 16]
    return f"{point} ({b:g} deg)"


@functools.cache
def _bearings() -> TypeAdapter:
    """The validator of a switched antenna's bearings, built when a scenario first has one (not at import)."""
    return TypeAdapter(list[Bearing])


MAX_STATE_NAME = 24
"""The longest name a state may be given [characters] (it appears in tables beside the antenna's name)."""
STATE_KEYS = ("name", "bearing")
"""The keys of a named state's table: ``{name = "EU", bearing = "45 deg"}``."""
_EXAMPLE = '["45 deg", "225 deg"] or [{name = "Europe", bearing = "45 deg"}, {name = "Pacific", bearing = "300 deg"}]'


def named_label(name: str, bearing_deg: float) -> str:
    """A named state's label: its name and its bearing.

    >>> named_label("front", 45.0)
    'front (45 deg)'
    """
    b = round(float(bearing_deg) % 360.0, 1) % 360.0
    return f"{name} ({b:g} deg)"


def _state_name_problem(name, taken: dict[str, int]) -> str | None:
    """Why ``name`` cannot name a state (``taken``: the names given before, folded, -> their direction)."""
    if not isinstance(name, str):
        return f'a state\'s name is text, e.g. "front" or "EU"; got {toml_repr(name)}'
    text = name.strip()
    if not text:
        return "a state's name is text of at least one character; got an empty name"
    if len(text) > MAX_STATE_NAME:
        return f"a state's name is at most {MAX_STATE_NAME} characters; {name!r} has {len(text)}"
    if not text.isprintable():
        return f"a state's name is printable text on one line; got {toml_repr(name)}"
    if text.casefold() in taken:
        return f"{name!r} names direction {taken[text.casefold()]} already; give each state a name of its own"
    return None


def _split_directions(directions, key: str) -> tuple[list, list[str | None], list[tuple[str, str]]]:
    """``directions`` as (bearings as written, state names or None, problems): each entry a bearing, or a table
    of a name and a bearing."""
    bearings, names, problems = [], [], []
    taken: dict[str, int] = {}
    for i, entry in enumerate(directions):
        where = f"{key}.{i + 1}"
        if not isinstance(entry, dict):
            bearings.append(entry)
            names.append(None)
            continue
        unknown = [k for k in entry if k not in STATE_KEYS]
        if unknown:
            hint = ' (a state\'s direction is its bearing: bearing = "45 deg")' if "azimuth" in unknown else ""
            problems.append((where, f"a named state has the keys name and bearing; unknown {unknown[0]!r}{hint}"))
            continue
        missing = [k for k in STATE_KEYS if k not in entry]
        if missing:
            problems.append(
                (where, f'a named state needs {" and ".join(missing)}, e.g. {{name = "EU", bearing = "45 deg"}}')
            )
            continue
        why = _state_name_problem(entry["name"], taken)
        if why:
            problems.append((f"{where}.name", why))
            continue
        taken[entry["name"].strip().casefold()] = i + 1
        bearings.append(entry["bearing"])
        names.append(entry["name"].strip())
    return bearings, names, problems


def _directions_problem(directions, where: str) -> tuple[list[float] | None, list[str | None], list[tuple[str, str]]]:
    """The bearings of ``directions`` [rad] as written and the states' names (None: unnamed), or the problems (named
    ``<where>.directions``)."""
    key, got = f"{where}.directions", toml_repr(directions)
    if not isinstance(directions, list):
        return (
            None,
            [],
            [(key, f"a list of 2 to {MAX_DIRECTIONS} bearings or named states, e.g. {_EXAMPLE}; got {got}")],
        )
    if not 2 <= len(directions) <= MAX_DIRECTIONS:
        return (
            None,
            [],
            [(key, f"a switched antenna has 2 to {MAX_DIRECTIONS} directions; got {len(directions)} ({got})")],
        )
    written, names, problems = _split_directions(directions, key)
    if problems:
        return None, [], problems
    try:
        bearings = _bearings().validate_python(written)
    except ValidationError as exc:
        named = {f"{key}.{i + 1}" for i, n in enumerate(names) if n is not None}
        return None, [], [(f"{k}.bearing" if k in named else k, m) for k, m in pydantic_problems(exc, key, written)]
    same = [round(float(np.degrees(b)) % 360.0, 1) % 360.0 for b in bearings]
    for i, b in enumerate(same):
        if b in same[:i]:
            j = same.index(b)
            return (
                None,
                [],
                [
                    (
                        f"{key}.{i + 1}",
                        f"{written[i]!r} is the same bearing as direction {j + 1} ({written[j]!r}) to 0.1 deg; "
                        "give each state a bearing of its own",
                    )
                ],
            )
    return [float(b) for b in bearings], names, []


def _switch_problem(family, spec: dict, where: str) -> str | None:
    """Why this family (its class's capabilities and its keys) cannot be switched as written, or None."""
    cls, fields = family.build, family.params.model_fields
    if "bearing" not in fields or cls.composite:
        return f"a {family.name} has no bearing of its own to switch" + (
            " (a combination is set through its antennas: switch those)" if cls.composite else ""
        )
    if "bearing" in spec:
        return "directions replace the bearing: give one or the other"
    if cls.phased and spec.get("steering", fields["steering"].default if "steering" in fields else None) == "given":
        return (
            "an array whose delays are given points one way whatever its bearing; with directions, use "
            "steering = 'auto' so that each state's delays follow from its bearing"
        )
    if cls.phased and spec.get("auto_for") == "snr":  # a wire's or loop's resistor: its default, as written
        return (
            "auto_for = 'snr' aims an array at the target nearest its bearing, so two states could aim at the same "
            "target; with directions each state is aimed by its bearing: use auto_for = 'rdf', 'front_to_back' or "
            "'end-fire'"
        )
    if cls.long_wire and "port" in spec:
        return "directions choose the port (forward, then reverse): leave port out"
    return None


def _name_room(group, labels, where: str):
    """(path, message) when a switched antenna's name leaves no room for its states' names (the name, a space and the
    state's label, each a name of at most snrgain.fields.MAX_NAME_CHARS); else None."""
    from snrgain.fields import MAX_NAME_CHARS

    room = MAX_NAME_CHARS - 1 - max(len(label) for label in labels)
    if not isinstance(group, str) or len(group) <= room:
        return None
    return (
        f"{where}.name",
        f"a switched antenna's name of at most {room} characters here: its states are named after it, "
        f"{group[:20]!r}... {labels[0]!r}, and a name has at most {MAX_NAME_CHARS}; this one has {len(group)}",
    )


def expand_directions(spec: dict, where: str) -> tuple[list[tuple[dict, dict]], list[tuple[str, str]]]:
    """A switched candidate's table as one table per state, with what each state needs after it is built:
    ([(table, {"switched": SwitchedState, "reverse_of": bearing or None}), ...], problems).  A table without
    ``directions`` comes back as it is."""
    if "directions" not in spec:
        return [(spec, {})], []
    spec = dict(spec)
    directions = spec.pop("directions")
    key = f"{where}.directions"
    if where == "reference":
        return [], [(key, "the reference is one fixed antenna (the site's noise is read on it); switch a candidate")]
    name = spec.get("family")
    family = FAMILIES.get(name) if isinstance(name, str) else None
    if family is None:
        return [(spec, {})], []  # the family's own check names the problem
    bearings, state_names, problems = _directions_problem(directions, where)
    if problems:
        return [], problems
    if not isinstance(spec.get("name"), str) or not spec["name"]:
        return [], [(f"{where}.name", "a switched antenna (directions) needs a name: its states are named after it")]
    why = _switch_problem(family, spec, where)
    if why:
        return [], [(key, f"{toml_repr(directions)}: {why}")]
    how = "steered" if family.build.phased else "turned"
    swapped = not (family.build.phased or family.build.long_wire) and "termination" in family.params.model_fields
    if family.build.long_wire or swapped:
        apart = abs((np.degrees(bearings[1] - bearings[0]) + 180.0) % 360.0 - 180.0)
        if len(bearings) != 2 or abs(apart - 180.0) > 0.05:
            one = "wire served from either end" if family.build.long_wire else "loop whose feed and resistor swap sides"
            return [], [
                (
                    key,
                    f"{toml_repr(directions)}: a {family.name} is one {one}, so its directions are two bearings 180 "
                    'deg apart (e.g. ["45 deg", "225 deg"]); for other bearings write other antennas',
                )
            ]
        how = "turned" if swapped else "port" if "port" in family.params.model_fields else "ends"
    degs = [bearing_deg(b) % 360.0 for b in bearings]
    labels = tuple(state_label(d) if n is None else named_label(n, d) for n, d in zip(state_names, degs))
    group = spec.get("name")
    problem = _name_room(group, labels, where)
    if problem:
        return [], [problem]
    out = []
    for i, (b, label) in enumerate(zip(bearings, labels)):
        state = dict(spec)
        if isinstance(group, str) and group:
            state["name"] = f"{group} {label}"
        reverse = how in ("ends", "port") and i == 1
        state["bearing"] = f"{float(np.degrees(bearings[0] if reverse and how == 'port' else b))!r} deg"
        if how == "port":
            state["port"] = "reverse" if reverse else "forward"
        far = bearings[0] if how == "ends" else bearings[0] + np.pi if swapped else None  # the loop's resistor side
        info = {
            "switched": SwitchedState(str(group), label, degs[i], i, labels, tuple(degs), how),
            "reverse_of": far if (reverse or swapped) and i == 1 else None,
        }
        out.append((state, info))
    return out, []


def far_end(first: Antenna, bearing_rad: float, start) -> tuple[float, float]:
    """The far end of a long wire (or a terminated loop's resistor side) whose feed stands at ``start`` [m east,
    m north], toward ``bearing_rad``: a reversed state's feed, on the same wire or loop."""
    p, size = start, first.length_m if first.long_wire else first.width_m
    return (float(p[0] + size * np.sin(bearing_rad)), float(p[1] + size * np.cos(bearing_rad)))
