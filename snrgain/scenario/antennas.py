"""[reference] and [[candidate]]: the antenna tables built by their families (the site's ground and folder filled in,
their own ``chain`` and ``place`` tables taken out), combinations given their antennas, names checked; a switched
candidate (``directions``) built as one antenna per state (:mod:`snrgain.scenario.switched`)."""

from __future__ import annotations

from dataclasses import field
from pathlib import Path
from typing import Any

from pydantic import ValidationError

from snrgain.antennas import FAMILIES, Antenna, SpecError
from snrgain.antennas.base import build as build_antenna
from snrgain.antennas.base import item_label, pydantic_problems
from snrgain.physics.ground import C_M_PER_S
from snrgain.records import record
from snrgain.unknown_keys import AntennaTable

from .connected import short_name_clashes
from .feedline import FEED_LINE_KEY, FeedLineSection, take_feed_line
from .place import PlaceSection
from .receiver import ChainSection
from .site import raw_ground
from .switched import CANDIDATE_KEYS, expand_directions, far_end


def table_keys(where: str) -> AntennaTable:
    """What the antenna table at ``where`` takes besides its family's keys (read before its family validates the
    rest): the reference its own ``chain``; a candidate ``place``, ``chain``, ``feed_line`` and ``directions``."""
    if where == "reference":
        return AntennaTable("reference", (("chain", ChainSection),))
    held = (("place", PlaceSection), ("chain", ChainSection), (FEED_LINE_KEY, FeedLineSection))
    return AntennaTable("candidate", (*held, *((k, None) for k in CANDIDATE_KEYS)))


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
    table = inject_defaults(spec, site_ground=site_ground, base_dir=base_dir)
    return build_antenna(table, where, freq_hz=freq_hz, antenna=table_keys(where))


def attach_combinations(antennas: list[Antenna], wheres: list[str], failed=frozenset()) -> list[tuple[str, str]]:
    """Give every combination its two antennas, named by ``antennas`` ("reference" or the reference's name names
    the reference; a part without a position stands at the reference's place); problems as (path, message).  A part
    named among ``failed`` (tables whose own problems are said already) is not said again."""
    by_name = {a.name: a for a, w in zip(antennas, wheres) if w != "reference"}
    origin = (antennas[0].params.position if antennas and wheres[0] == "reference" else None) or (0.0, 0.0)
    if antennas and wheres[0] == "reference":
        by_name["reference"] = antennas[0]
        by_name.setdefault(antennas[0].name, antennas[0])
    out = []
    for ant, where in zip(antennas, wheres):
        if not ant.composite:
            continue
        parts = []
        for i, name in enumerate(ant.params.antennas):
            if name not in by_name and name in failed:
                continue
            if name not in by_name:  # every other antenna written, those with problems of their own too
                known = ", ".join(repr(n) for n in [*by_name, *sorted(failed - set(by_name))] if n != ant.name)
                out.append((f"{where}.antennas.{i + 1}", f"no antenna named {name!r}; the scenario has {known}"))
            else:
                parts.append(by_name[name])
        if len(parts) == 2:
            try:
                ant.attach(parts, origin)
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


def group_problems(spec, states, own_place, where: str, taken: set) -> list[tuple[str, str]]:
    """A switched candidate (more than one state) is moved by layout as one (its place gives no bearing or length
    range), and its name is its own."""
    if len(states) < 2:
        return []
    if own_place is not None and (own_place.bearing is not None or own_place.length is not None):
        return [
            (
                f"{where}.place",
                "snrgain layout moves a switched antenna (directions) as one, every state where it stands: its "
                "bearings are its directions and its length is as written, so its place takes no bearing or length "
                "range (place = {})",
            )
        ]
    if isinstance(spec.get("name"), str) and spec["name"] in taken:
        return [(f"{where}.name", f"name {spec['name']!r} is used twice")]
    return []


def reversed_wire(out, first: Antenna, table: dict, bearing_rad: float) -> tuple[Antenna, dict]:
    """A reversed wire's state fed at the far end of the first state's wire: (the first state, placed where it
    stands when it gave no position: at the reference's, as an antenna without a position is; the reversed
    state's table)."""
    if first.params.position is None:
        ref = out.antennas[0] if out.wheres[:1] == ["reference"] else None
        first = first.at((ref and ref.params.position) or (0.0, 0.0))
        out.antennas[-1] = first
    end = far_end(first, bearing_rad, first.params.position)
    return first, {**table, "position": [end[0], end[1]]}


@record(frozen=False)
class Built:
    """The antennas built, the reference first when it built, with where each was written, its own chain section
    (None: the scenario's [chain]), the candidates layout may place, and every problem found on the way."""

    antennas: list[Antenna] = field(default_factory=list)
    wheres: list[str] = field(default_factory=list)
    chains: list[ChainSection | None] = field(default_factory=list)
    placeable: dict[str, PlaceSection] = field(default_factory=dict)
    problems: list[tuple[str, str]] = field(default_factory=list)
    feed_lines: dict = field(default_factory=dict)
    """where -> FeedLineSection of the tables that gave a feed_line (snrgain.scenario.feedline)."""


def build_antennas(data, freq_hz: float | None, base_dir: Path | None) -> Built:
    """Every antenna table validated by its own family (even when other sections failed) and built; a switched
    candidate (``directions``) built as one antenna per state (module docstring)."""
    site_ground = raw_ground(data.get("site", {})) if isinstance(data, dict) else "moist loam"
    out = Built()
    names: set = set()
    ref_name = None
    for where, spec in antenna_specs(data, freq_hz):
        spec, own_feed, problems = take_feed_line(spec, where)
        if own_feed is not None:
            out.feed_lines[where] = own_feed
        out.problems.extend(problems)
        spec, own_place, own_chain, problems = own_tables(spec, where)
        if problems:
            out.problems.extend(problems)
            continue
        states, problems = expand_directions(spec, where) if isinstance(spec, dict) else ([(spec, {})], [])
        if problems:
            out.problems.extend(problems)
            continue
        problems = group_problems(spec, states, own_place, where, names | {ref_name})
        if problems:
            out.problems.extend(problems)
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
                    first, table = reversed_wire(out, first, table, info["reverse_of"])
                ant = build_antenna(table, where, freq_hz=freq_hz, antenna=table_keys(where))
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
                out.placeable[spec["name"] if len(states) > 1 else first.name] = own_place  # a switched one: its name
    out.problems.extend(short_name_clashes(out.antennas, out.wheres))
    out.problems.extend(attach_combinations(out.antennas, out.wheres, _unbuilt(data, freq_hz, out)))
    return out


def _unbuilt(data, freq_hz, built: Built) -> set:
    """The names of the tables that were not built (each said its own problems; "reference" for the reference): a
    unit over one of them does not say it again."""
    out = set()
    for where, spec in antenna_specs(data, freq_hz):
        name = spec.get("name") if isinstance(spec, dict) else None
        if where not in built.wheres:
            out |= {n for n in (name, "reference" if where == "reference" else None) if isinstance(n, str)}
    return out
