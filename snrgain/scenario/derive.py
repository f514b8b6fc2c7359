"""Resolved objects derived from their sections, so each key is declared once (in its section).

Where a resolved object only freezes a section's values (lists become tuples, a key may take its unit into its
name: ``beat_by`` -> ``beat_by_db``), it is not written out again by hand: :func:`resolved_from` makes it a frozen
dataclass with the section's fields, in the section's order, with the section's defaults.  A key added to the
section is then in the resolved object too.  Objects that turn a section into something else (the site's ground
into a Ground and its spread, the noise sections into :mod:`snrgain.sky.noise`'s settings) are written by hand.
"""

from __future__ import annotations

from typing import get_args, get_origin

from pydantic import BaseModel

from snrgain.records import record


def _frozen_type(annotation):
    if get_origin(annotation) is list:
        return tuple[(*get_args(annotation), ...)]
    return annotation


def _frozen(value):
    return tuple(value) if isinstance(value, list) else value


def resolved_from(section: type[BaseModel], *, rename: dict[str, str] | None = None):
    """Class decorator: ``cls`` becomes a frozen dataclass of ``section``'s fields (renamed as ``rename`` says),
    whose class method ``of(validated_section)`` builds one and whose ``section`` is the section.  Methods written
    on ``cls`` stay."""
    rename = rename or {}
    keys = [(key, rename.get(key, key)) for key in section.model_fields]
    unknown = set(rename) - set(section.model_fields)
    if unknown:
        raise KeyError(f"{section.__name__} has no keys {sorted(unknown)}")

    def decorate(cls):
        annotations = {}
        for key, name in keys:
            info = section.model_fields[key]
            annotations[name] = _frozen_type(info.annotation)
            if not info.is_required():
                setattr(cls, name, _frozen(info.get_default(call_default_factory=True)))
        cls.__annotations__ = annotations
        cls = record(cls)

        def of(klass, value: BaseModel):
            return klass(**{name: _frozen(getattr(value, key)) for key, name in keys})

        cls.of = classmethod(of)
        cls.section = section
        return cls

    return decorate
