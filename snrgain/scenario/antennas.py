"""[reference] and [[candidate]]: the antenna tables built by their families (the site's ground and the scenario's
folder filled in, an antenna's own ``chain`` and ``place`` tables taken out), combinations given their two
antennas, names checked.

A switched antenna: a candidate with ``directions = [...]`` (2 to :data:`MAX_DIRECTIONS` distinct bearings) is one
thing to build that serves one bearing at a time.  Each state is built here as an ordinary antenna of its own (the
table's ``bearing`` replaced by the state's; an array steered toward it by its own ``auto_for``), named
``"<name> <compass point> (<bearing> deg)"`` and carrying a :class:`SwitchedState` (its group, the antenna's name),
so every later stage (products, spreads, decisions, sweeps) sees ordinary antennas and the plan and the build
sheet count the group once.  A long wire is one wire served from either end: its states are its two ends (two
bearings 180 deg apart); a family with a ``port`` key (a two-wire line) keeps its bearing and switches to its
reverse port, the others have the feed and the termination swap ends (the reversed state's feed point is the far
end of the same wire)."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
from pydantic import Field, TypeAdapter, ValidationError, model_validator

from snrgain.antennas import FAMILIES, Antenna, SpecError
from snrgain.antennas.base import build as build_antenna
from snrgain.antennas.base import item_label, pydantic_problems
from snrgain.constants import placeable_families
from snrgain.fields import Bearing, StrictModel, quantity
from snrgain.physics.ground import C_M_PER_S

from .receiver import ChainSection
from .site import raw_ground


class PlaceSection(StrictModel):
    """What ``snrgain layout`` may change of a candidate: its position (always, within the lot), and its bearing
    and length within ranges."""

    bearing: list[Bearing] | None = Field(default=None, min_length=2, max_length=2)
    """[from, to] compass bearings, clockwise (e.g. ["20 deg", "70 deg"])."""
    length: list[quantity("length", ge=1.0, le=3000.0)] | None = Field(default=None, min_length=2, max_length=2)
    """[shortest, longest] wire length [m]."""

    @model_validator(mode="after")
    def _ranges(self):
        if self.length is not None and self.length[0] > self.length[1]:
            raise ValueError(f"length: the range runs backwards ({self.length[0]:g} m > {self.length[1]:g} m)")
        return self

    def problem_for(self, antenna) -> str | None:
        """Why this antenna cannot be placed as asked, or None."""
        if not antenna.placeable:  # one feed point, a bearing, and for wires a length (declared by the family)
            return f"snrgain layout places {', '.join(placeable_families())}; not {antenna.family!r}"
        if self.length is not None and not hasattr(antenna, "length_m"):
            return f"a {antenna.family} has no length to vary"
        if self.bearing is not None and not hasattr(antenna.params, "bearing"):
            return f"a {antenna.family} has no bearing to vary"
        return None


CANDIDATE_KEYS = ("directions",)
"""Keys a candidate table may hold besides its family's, ``place`` and ``chain`` (taken out before the family
validates the rest)."""
MAX_DIRECTIONS = 8
"""The most states a switched antenna may have (eight points of the compass)."""

COMPASS_POINTS = ("N", "NNE", "NE", "ENE", "E", "ESE", "SE", "SSE", "S", "SSW", "SW", "WSW", "W", "WNW", "NW", "NNW")


@dataclass(frozen=True)
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


_BEARINGS = TypeAdapter(list[Bearing])


def _directions_problem(directions, where: str) -> tuple[list[float] | None, list[tuple[str, str]]]:
    """The bearings of ``directions`` [rad] as written, or the problems (named ``<where>.directions``)."""
    key = f"{where}.directions"
    if not isinstance(directions, list):
        return None, [
            (key, f'a list of 2 to {MAX_DIRECTIONS} bearings, e.g. ["45 deg", "225 deg"]; got {directions!r}')
        ]
    if not 2 <= len(directions) <= MAX_DIRECTIONS:
        return None, [
            (key, f"a switched antenna has 2 to {MAX_DIRECTIONS} directions; got {len(directions)} ({directions!r})")
        ]
    try:
        bearings = _BEARINGS.validate_python(directions)
    except ValidationError as exc:
        return None, pydantic_problems(exc, key, directions)
    labels = [state_label(np.degrees(b)) for b in bearings]
    for i, lab in enumerate(labels):
        if lab in labels[:i]:
            j = labels.index(lab)
            return None, [
                (
                    f"{key}.{i + 1}",
                    f"{directions[i]!r} is the same bearing as direction {j + 1} ({directions[j]!r}) to 0.1 deg; "
                    "give each state a bearing of its own",
                )
            ]
    return [float(b) for b in bearings], []


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
    if spec.get("auto_for") == "snr":
        return (
            "auto_for = 'snr' aims an array at the target nearest its bearing, so two states could aim at the same "
            "target; with directions each state is aimed by its bearing: use auto_for = 'rdf', 'front_to_back' or "
            "'end-fire'"
        )
    if cls.long_wire and "port" in spec:
        return "directions choose the port (forward, then reverse): leave port out"
    return None


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
    bearings, problems = _directions_problem(directions, where)
    if problems:
        return [], problems
    if not isinstance(spec.get("name"), str) or not spec["name"]:
        return [], [(f"{where}.name", "a switched antenna (directions) needs a name: its states are named after it")]
    why = _switch_problem(family, spec, where)
    if why:
        return [], [(key, f"{directions!r}: {why}")]
    how = "steered" if family.build.phased else "turned"
    if family.build.long_wire:
        apart = abs((np.degrees(bearings[1] - bearings[0]) + 180.0) % 360.0 - 180.0)
        if len(bearings) != 2 or abs(apart - 180.0) > 0.05:
            return [], [
                (
                    key,
                    f"{directions!r}: a {family.name} is one wire served from either end, so its directions are two "
                    'bearings 180 deg apart (e.g. ["45 deg", "225 deg"]); for other bearings write other wires',
                )
            ]
        how = "port" if "port" in family.params.model_fields else "ends"
    degs = [float(np.degrees(b)) % 360.0 for b in bearings]
    labels = tuple(state_label(d) for d in degs)
    group = spec.get("name")
    out = []
    for i, (b, label) in enumerate(zip(bearings, labels)):
        state = dict(spec)
        if isinstance(group, str) and group:
            state["name"] = f"{group} {label}"
        reverse = how in ("ends", "port") and i == 1
        state["bearing"] = f"{float(np.degrees(bearings[0] if reverse and how == 'port' else b))!r} deg"
        if how == "port":
            state["port"] = "reverse" if reverse else "forward"
        info = {
            "switched": SwitchedState(str(group), label, degs[i], i, labels, tuple(degs), how),
            "reverse_of": bearings[0] if reverse and how == "ends" else None,
        }
        out.append((state, info))
    return out, []


def _far_end(first: Antenna, bearing_rad: float, start) -> tuple[float, float]:
    """The far end of a long wire whose feed stands at ``start`` [m east, m north] toward ``bearing_rad`` [m]."""
    p = start
    return (
        float(p[0] + first.length_m * np.sin(bearing_rad)),
        float(p[1] + first.length_m * np.cos(bearing_rad)),
    )


def inject_defaults(spec: dict, *, site_ground, base_dir: Path | None) -> dict:
    """A copy of an antenna table with the site's ground where its family stands on ground and gives none, and a
    pattern file's relative path made relative to the scenario's folder."""
    spec = dict(spec)
    name = spec.get("family")
    family = FAMILIES.get(name) if isinstance(name, str) else None
    if family is not None:
        fields = family.params.model_fields
        if "ground" in fields and "ground" not in spec and site_ground is not None:
            spec["ground"] = site_ground
        if "file" in fields and isinstance(spec.get("file"), str) and base_dir is not None:
            p = Path(spec["file"])
            spec["file"] = str(p if p.is_absolute() else base_dir / p)
    return spec


def antenna_from_table(spec: dict, where: str, *, site_ground, base_dir: Path | None, freq_hz: float) -> Antenna:
    """Build one antenna table as :func:`load` does (the site's ground filled in, pattern files found relative to
    the scenario); raises SpecError naming ``where``."""
    return build_antenna(inject_defaults(spec, site_ground=site_ground, base_dir=base_dir), where, freq_hz=freq_hz)


def attach_combinations(antennas: list[Antenna], wheres: list[str]) -> list[tuple[str, str]]:
    """Give every combination its two antennas, named by ``antennas`` ("reference" or the reference's name names
    the reference); problems as (path, message)."""
    by_name = {a.name: a for a, w in zip(antennas, wheres) if w != "reference"}
    if antennas and wheres[0] == "reference":
        by_name["reference"] = antennas[0]
        by_name.setdefault(antennas[0].name, antennas[0])
    out = []
    for ant, where in zip(antennas, wheres):
        if not ant.composite:
            continue
        parts = []
        for i, name in enumerate(ant.params.antennas):
            if name not in by_name:
                known = ", ".join(repr(n) for n in by_name)
                out.append((f"{where}.antennas.{i + 1}", f"no antenna named {name!r}; the scenario has {known}"))
            else:
                parts.append(by_name[name])
        if len(parts) == 2:
            try:
                ant.attach(parts)
            except SpecError as exc:
                out.extend((f"{where}.{p}", m) for p, m in exc.problems)
    return out


def antenna_specs(data, freq_hz: float | None) -> list[tuple[str, Any]]:
    """(where, table) of the reference, then of each candidate, as written; an omitted reference is a quarter-wave
    vertical at the band's frequency, and a reference's family defaults to a vertical."""
    ref_spec = data.get("reference") if isinstance(data, dict) else None
    if ref_spec is None:
        height = C_M_PER_S / freq_hz / 4 if freq_hz else 40.0
        ref_spec = {"family": "vertical", "name": "quarter-wave vertical", "height": f"{height:.3f} m"}
    elif isinstance(ref_spec, dict) and "family" not in ref_spec:
        ref_spec = {**ref_spec, "family": "vertical"}
    cand_specs = data.get("candidate", []) if isinstance(data, dict) else []
    return [("reference", ref_spec)] + [
        (item_label("candidate", i, s), s) for i, s in enumerate(cand_specs if isinstance(cand_specs, list) else [])
    ]


def own_tables(spec, where: str):
    """(the antenna's table without its ``place`` and ``chain`` tables, its PlaceSection, its ChainSection,
    problems): None for the first three, and the problems, when a table is wrong (the antenna is then not built)."""
    own_place = own_chain = None
    if isinstance(spec, dict) and "place" in spec:
        spec = dict(spec)
        raw_place = spec.pop("place")
        if where == "reference":
            return (
                None,
                None,
                None,
                [("reference.place", "the reference stands where it is; only candidates are placed")],
            )
        try:
            own_place = PlaceSection.model_validate(raw_place)
        except ValidationError as exc:
            return None, None, None, pydantic_problems(exc, f"{where}.place", raw_place)
    if isinstance(spec, dict) and "chain" in spec:
        spec = dict(spec)
        raw_chain = spec.pop("chain")
        try:
            own_chain = ChainSection.model_validate(raw_chain)
        except ValidationError as exc:
            return None, None, None, pydantic_problems(exc, f"{where}.chain", raw_chain)
    return spec, own_place, own_chain, []


def name_problems(ant: Antenna, where: str, names: set, ref_name: str | None) -> list[tuple[str, str]]:
    """The reference cannot be steered for SNR; every candidate has a name of its own (not the reference's)."""
    params = ant.params
    if where == "reference":
        if getattr(params, "steering", None) == "auto" and params.auto_for == "snr":
            return [
                (
                    "reference.auto_for",
                    "the reference cannot be steered for SNR: the site's noise is read on it; "
                    "use auto_for = 'rdf' or 'front_to_back'",
                )
            ]
        return []
    if not params.name:
        return [(f"{where}.name", "every candidate needs a name")]
    if params.name in names:
        return [(f"{where}.name", f"name {params.name!r} is used twice")]
    if params.name == "reference" or params.name == ref_name:
        return [(f"{where}.name", f"name {params.name!r} is the reference's; give the candidate a name of its own")]
    return []


@dataclass
class Built:
    """The antennas built, the reference first when it built, with where each was written, its own chain section
    (None: the scenario's [chain]), the candidates layout may place, and every problem found on the way."""

    antennas: list[Antenna] = field(default_factory=list)
    wheres: list[str] = field(default_factory=list)
    chains: list[ChainSection | None] = field(default_factory=list)
    placeable: dict[str, PlaceSection] = field(default_factory=dict)
    problems: list[tuple[str, str]] = field(default_factory=list)


def build_antennas(data, freq_hz: float | None, base_dir: Path | None) -> Built:
    """Every antenna table validated by its own family (even when other sections failed) and built; a switched
    candidate (``directions``) built as one antenna per state (module docstring)."""
    site_ground = raw_ground(data.get("site", {})) if isinstance(data, dict) else "moist loam"
    out = Built()
    names: set = set()
    ref_name = None
    for where, spec in antenna_specs(data, freq_hz):
        spec, own_place, own_chain, problems = own_tables(spec, where)
        if problems:
            out.problems.extend(problems)
            continue
        states, problems = expand_directions(spec, where) if isinstance(spec, dict) else ([(spec, {})], [])
        if problems:
            out.problems.extend(problems)
            continue
        if len(states) > 1 and own_place is not None:
            out.problems.append(
                (
                    f"{where}.place",
                    "snrgain layout does not move a switched antenna (directions): its states are one antenna to "
                    "build; give its position by hand and leave place out",
                )
            )
            continue
        if len(states) > 1 and isinstance(spec.get("name"), str) and spec["name"] in names | {ref_name}:
            out.problems.append((f"{where}.name", f"name {spec['name']!r} is used twice"))
            continue
        first = None
        for table, info in states:
            try:
                table = (
                    inject_defaults(table, site_ground=site_ground, base_dir=base_dir)
                    if isinstance(table, dict)
                    else table
                )
                if info.get("reverse_of") is not None and first is not None:  # the same wire, fed at its far end
                    if first.params.position is None:  # an antenna without a position stands at the reference's
                        ref = out.antennas[0] if out.wheres[:1] == ["reference"] else None
                        first = first.at((ref and ref.params.position) or (0.0, 0.0))
                        out.antennas[-1] = first
                    far = _far_end(first, info["reverse_of"], first.params.position)
                    table = {**table, "position": [far[0], far[1]]}
                ant = build_antenna(table, where, freq_hz=freq_hz)
            except SpecError as exc:
                out.problems.extend(exc.problems)
                break
            if "switched" in info:
                ant.switched = info["switched"]
            first = first or ant
            out.problems.extend(name_problems(ant, where, names, ref_name))
            if where == "reference":
                ref_name = ant.name
            else:
                names.add(ant.params.name)
            out.antennas.append(ant)
            out.wheres.append(where)
            out.chains.append(own_chain)
        else:
            if len(states) > 1:
                names.add(spec.get("name"))
            if own_place is not None and first is not None:
                problem = own_place.problem_for(first)
                if problem:
                    out.problems.append((f"{where}.place", problem))
                out.placeable[first.name] = own_place
    out.problems.extend(attach_combinations(out.antennas, out.wheres))
    return out
