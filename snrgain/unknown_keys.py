"""What to say about an unknown key: a near key of the same table ("did you mean"), or the section it belongs in.

A suggestion comes only from the keys the table being read accepts (found by following the error's location
through the validated model's fields), never from another section's: a key of [[target]] is not offered under
[noise.galactic].  A key that is valid in another section of a scenario is named with that section
("'max_antennas' is a key of [plan]").

An antenna table is read by its family's model, so it is said apart: a key of other families is named with them
("'loop_height' is a key of the small-loop and terminated-loop families, not of vertical"); then a key of a table the
antenna table holds (a candidate's ``chain``, ``feed_line``) is said to belong there, and a near key is offered from
every key the table takes, those read outside the family's model too (:class:`AntennaTable`, given by the file's
reader: a scenario's candidate takes ``directions``, ``place``...).  No other section of the file is offered: an
antenna table of a readings file is not told of a scenario's sections.  A table whose model gives
``unknown_key_note`` says it in place of other sections' keys (a candidate's ``place``: the keys it takes).
"""

from __future__ import annotations

import difflib
import functools
import types
from typing import Annotated, Union, get_args, get_origin

from snrgain.records import record

NEAR_CUTOFF = 0.8
"""difflib's ratio a near key must reach: one letter swapped or missing in a word of five or more."""


@record
class AntennaTable:
    """What an antenna table of the file being read takes besides its family's keys: ``whose`` names the table in a
    message ("candidate", "reference"); ``outside``: (key, the model of the table it holds, or None for a value) for
    each key read before the family validates the rest."""

    whose: str
    outside: tuple[tuple[str, type | None], ...] = ()

    @property
    def keys(self) -> set[str]:
        return {k for k, _ in self.outside}


def _joined(items: list[str], word: str = "and") -> str:
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + f" {word} " + items[-1]


def unknown_key_message(root_title: str | None, loc: tuple, antenna: AntennaTable | None = None) -> str:
    """The message for the unknown key at ``loc`` (its last part) of a table validated by the model named
    ``root_title`` (a ValidationError's title); ``antenna``: what the antenna table validated takes besides its
    family's keys (module docstring)."""
    key = str(loc[-1]) if loc else ""
    roots = models_named(root_title)
    table = _models_at(roots, tuple(loc[:-1])) if roots else []
    own = _families_of(roots)
    if own and len(loc) == 1:
        return _antenna_key_message(key, own, table, antenna)
    note = next((getattr(m, "unknown_key_note", None) for m in table if getattr(m, "unknown_key_note", None)), None)
    elsewhere = [] if note or own else _sections_with(key, roots, table)  # a table within an antenna's: its own keys
    if elsewhere:
        return f"unknown key here: {key!r} is a key of {_joined(elsewhere)}, not of this table"
    near = near_key(key, keys_of(table))
    if near:
        return f"unknown key (did you mean {near!r}?)"
    return f"unknown key: {note}" if note else "unknown key (check its spelling)"


def near_key(key: str, keys) -> str | None:
    """The key of ``keys`` ``key`` is likely a misspelling of (close by difflib's ratio, or two neighbouring letters
    swapped), or None.

    >>> near_key("nmae", {"name", "family"}), near_key("lenght", {"length"}), near_key("colour", {"name"})
    ('name', 'length', None)
    """
    keys = sorted(set(keys) - {key})
    near = difflib.get_close_matches(key, keys, n=1, cutoff=NEAR_CUTOFF)
    if near:
        return near[0]
    swaps = {key[:i] + key[i + 1] + key[i] + key[i + 2 :] for i in range(len(key) - 1)}
    return next((k for k in keys if k in swaps), None)


def _families_of(roots: list[type]) -> list[str]:
    """The antenna families whose parameter model is among ``roots`` (none for any other table)."""
    if not roots:
        return []
    from snrgain.antennas import FAMILIES

    return [f.name for f in FAMILIES.values() if f.params in roots]


def _antenna_key_message(key: str, own: list[str], table: list[type], antenna: AntennaTable | None) -> str:
    """An unknown key at the top of an antenna table of the families ``own`` (``table``: their models): other
    families' key, a key of a table it holds, a near key, in that order."""
    others = family_keys(key, own)
    if others:
        word = "family" if len(others) == 1 else "families"
        return f"unknown key here: {key!r} is a key of the {_joined(others)} {word}, not of {_joined(own, 'or')}"
    near = near_key(key, keys_of(table) | (antenna.keys if antenna is not None else set()))
    if antenna is not None:
        held = [label for label, model in _held_tables(antenna) if key in keys_of([model])]
        if held:
            whose, tables = antenna.whose, _joined(held, "or") + (" table" if len(held) == 1 else " tables")
            also = f" (or did you mean {near!r}?)" if near else ""
            return f"unknown key here: {key!r} belongs in this {whose}'s {tables}, not in the {whose} itself{also}"
    return f"unknown key (did you mean {near!r}?)" if near else "unknown key (check its spelling)"


def family_keys(key: str, but: list[str] = ()) -> list[str]:
    """The antenna families (but those named) whose tables take ``key``, in the registry's order."""
    from snrgain.antennas import FAMILIES

    return [f.name for f in FAMILIES.values() if f.name not in but and key in keys_of([f.params])]


def _held_tables(antenna: AntennaTable) -> list[tuple[str, type]]:
    """The tables an antenna table holds, as written within it ("chain", "chain.preamp", "feed_line"), and their
    models."""
    out = []
    for key, model in antenna.outside:
        if model is None:
            continue
        out.append((key, model))
        out += [(f"{key}.{label.strip('[]')}", sub) for label, sub in sections((model,))]
    return out


def stray_keys(spec: dict, antenna: AntennaTable | None = None) -> list[tuple[str, str]]:
    """(key, message) for each key of an antenna table without its family that no family and no key read outside
    the families' models takes (a near key offered from all of them): said beside the missing family."""
    from snrgain.antennas import FAMILIES

    known = keys_of([f.params for f in FAMILIES.values()]) | (antenna.keys if antenna is not None else set())
    out = []
    for key in spec:
        if isinstance(key, str) and key not in known:
            near = near_key(key, known)
            out.append((key, f"unknown key (did you mean {near!r}?)" if near else "unknown key (check its spelling)"))
    return out


def models_named(title: str | None) -> list[type]:
    """The project's input models (StrictModel subclasses) of that class name."""
    from snrgain.fields import StrictModel

    out, todo = [], [StrictModel]
    while todo:
        cls = todo.pop()
        todo.extend(cls.__subclasses__())
        if cls.__name__ == title:
            out.append(cls)
    return out


def models_in(annotation) -> list[type]:
    """The pydantic models a field's annotation holds (through Optional, unions, lists, tuples, dicts, Annotated)."""
    from pydantic import BaseModel

    if isinstance(annotation, type) and issubclass(annotation, BaseModel):
        return [annotation]
    origin = get_origin(annotation)
    if origin is None:
        return []
    args = get_args(annotation)[:1] if origin is Annotated else get_args(annotation)
    if origin not in (Annotated, Union, types.UnionType, list, tuple, dict, set, frozenset):
        return []
    return list(dict.fromkeys(m for a in args for m in models_in(a)))


def _field_names(model) -> dict[str, object]:
    """A model's keys as written (the alias where there is one) -> the field's annotation."""
    return {(f.alias or name): f.annotation for name, f in model.model_fields.items()}


def keys_of(models) -> set[str]:
    """Every key the tables of these models accept (names and aliases)."""
    return {k for m in models for k in _field_names(m)}


def _models_at(roots: list[type], path: tuple) -> list[type]:
    """The models that read the table at ``path`` under ``roots``: keys followed through the fields, list indices
    and pydantic's labels for the alternatives of a union skipped (a label naming a model picks it)."""
    models = list(roots)
    for part in path:
        if isinstance(part, int):
            continue
        fields = [_field_names(m)[part] for m in models if part in _field_names(m)]
        if fields:
            models = list(dict.fromkeys(m for a in fields for m in models_in(a)))
            continue
        picked = [m for m in models if m.__name__ == part]
        models = picked or models
    return models


def _scenario_root(roots: list[type]) -> list[type]:
    """The models whose sections are searched for a key in the wrong place: a scenario's for a section of a scenario
    (an antenna table's are said by :func:`_antenna_key_message`), else the file's own."""
    if any(r.__module__.startswith("snrgain.scenario") for r in roots):
        from snrgain.scenario.model import ScenarioModel

        return [ScenarioModel]
    return roots


def _sections_with(key: str, roots: list[type], table: list[type]) -> list[str]:
    """The sections ([plan], [[target]], [noise.local]...) other than the table being read that take ``key``."""
    if not key or not roots:
        return []
    here = set(table)
    found = sections(tuple(_scenario_root(roots)))
    return list(dict.fromkeys(label for label, model in found if model not in here and key in keys_of([model])))


@functools.lru_cache(maxsize=8)
def sections(roots: tuple) -> tuple[tuple[str, type], ...]:
    """Every table under the roots as (its label as written in a file: [plan], [[target]], [noise.man_made.sector],
    its model); a model met again below itself is not followed."""
    out = []

    def walk(model, path, above):
        for key, annotation in _field_names(model).items():
            for sub in models_in(annotation):
                if sub in above:
                    continue
                name = ".".join((*path, key))
                listed = get_origin(annotation) is list or list in {get_origin(a) for a in get_args(annotation)}
                out.append((f"[[{name}]]" if listed else f"[{name}]", sub))
                walk(sub, (*path, key), above | {sub})

    for r in roots:
        walk(r, (), frozenset({r}))
    return tuple(out)
