"""What to say about an unknown key: a near key of the same table ("did you mean"), or the section it belongs in.

A suggestion comes only from the keys the table being read accepts (found by following the error's location
through the validated model's fields), never from another section's: a key of [[target]] is not offered under
[noise.galactic].  A key that is valid in another section of a scenario is named with that section
("'max_antennas' is a key of [plan]").
"""

from __future__ import annotations

import difflib
import functools
import types
from typing import Annotated, Union, get_args, get_origin

NEAR_CUTOFF = 0.8
"""difflib's ratio a near key must reach: one letter swapped or missing in a word of five or more."""


def unknown_key_message(root_title: str | None, loc: tuple) -> str:
    """The message for the unknown key at ``loc`` (its last part) of a table validated by the model named
    ``root_title`` (a ValidationError's title)."""
    key = str(loc[-1]) if loc else ""
    roots = models_named(root_title)
    table = _models_at(roots, tuple(loc[:-1])) if roots else []
    elsewhere = _sections_with(key, roots, table)
    if elsewhere:
        shown = elsewhere[0] if len(elsewhere) == 1 else ", ".join(elsewhere[:-1]) + " and " + elsewhere[-1]
        return f"unknown key here: {key!r} is a key of {shown}, not of this table"
    near = difflib.get_close_matches(key, sorted(keys_of(table) - {key}), n=1, cutoff=NEAR_CUTOFF)
    return f"unknown key (did you mean {near[0]!r}?)" if near else "unknown key (check its spelling)"


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
    """The models whose sections are searched for a key in the wrong place: a scenario's for a table of a scenario
    (a section or an antenna table), else the file's own."""
    if any(r.__module__.startswith(("snrgain.scenario", "snrgain.antennas")) for r in roots):
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
