"""Validation errors in the project's words: one message per problem, naming the field, the value, what is allowed.

pydantic reports a value that fits none of a field's alternatives (a ground given by name or as a table; a
termination in ohm or "auto") once per alternative, with its own internal labels in the path
(``literal['auto']``, ``tuple[function-before[...]]``).  :func:`pydantic_problems` keeps, for each field, the
alternative that the value came closest to (the one whose errors reach deepest into the value, then one whose
errors are about the value rather than its type), drops the labels, and words the rest as the README does.

    >>> from pydantic import BaseModel
    >>> from typing import Literal
    >>> class M(BaseModel):
    ...     mode: int | Literal["auto"]
    >>> try:
    ...     M.model_validate({"mode": "fast"})
    ... except Exception as exc:
    ...     for path, message in pydantic_problems(exc, data={"mode": "fast"}):
    ...         print(f"{path}: {message}")
    mode: expected a whole number or one of 'auto'; got "fast"
"""

from __future__ import annotations

import math
from dataclasses import dataclass

MISMATCH_TYPES = frozenset(
    {
        "int_type",
        "int_parsing",
        "int_from_float",
        "float_type",
        "float_parsing",
        "bool_type",
        "bool_parsing",
        "string_type",
        "list_type",
        "tuple_type",
        "dict_type",
        "model_type",
        "model_attributes_type",
        "dataclass_type",
        "literal_error",
        "is_instance_of",
        "complex_type",
        "complex_str_parsing",
        "none_required",
    }
)
"""pydantic error types that say the value is of the wrong kind for one alternative (not wrong in itself)."""

_KIND = {
    "int_type": "a whole number",
    "int_parsing": "a whole number",
    "int_from_float": "a whole number",
    "float_type": "a number",
    "float_parsing": "a number",
    "bool_type": "true or false",
    "bool_parsing": "true or false",
    "string_type": "text in quotes",
    "list_type": "a list [...]",
    "tuple_type": "a list [...]",
    "dict_type": "a table of keys",
    "model_type": "a table of keys",
    "model_attributes_type": "a table of keys",
    "complex_type": "an impedance",
    "complex_str_parsing": "an impedance",
}


def toml_repr(value) -> str:
    """A value as it reads in a TOML file (true, "text", [1, 2], 2026-01-05, 07:32:00), shortened to about 60
    characters: an input value shown in a message as the user wrote it, never as a Python repr.

    >>> import datetime
    >>> print(toml_repr([datetime.date(2026, 1, 5), "3 m", 2.5, {"x": datetime.time(7, 32)}]))
    [2026-01-05, "3 m", 2.5, { x = 07:32:00 }]
    """
    import datetime

    if isinstance(value, bool):
        text = "true" if value else "false"
    elif isinstance(value, str):
        text = '"' + value.replace("\\", "\\\\").replace('"', '\\"') + '"'
    elif isinstance(value, (list, tuple)):
        text = "[" + ", ".join(toml_repr(v) for v in value) + "]"
    elif isinstance(value, dict):
        text = "{ " + ", ".join(f"{k} = {toml_repr(v)}" for k, v in value.items()) + " }"
    elif isinstance(value, datetime.datetime):  # before date: a datetime is a date too
        text = value.isoformat()
        text = text.removesuffix("+00:00") + "Z" if value.utcoffset() == datetime.timedelta(0) else text
    elif isinstance(value, (datetime.date, datetime.time)):
        text = value.isoformat()
    elif isinstance(value, float):
        text = repr(float(value))  # 2.5, 1e+300, inf, nan: as TOML reads them (a numpy float too)
    elif isinstance(value, int):
        text = str(value)
    elif value is None:
        text = "nothing"
    else:
        text = str(value)
    return text if len(text) <= 60 else text[:57] + "..."


@dataclass
class _Err:
    order: int
    steps: tuple  # (("key", name) | ("index", i) | ("label", text), ...)
    err: dict

    @property
    def type(self) -> str:
        return self.err.get("type", "")


def _steps(loc, data, typ: str = "") -> tuple:
    """The error's location as keys, list indices and alternative labels (parts that name no part of the data)."""
    out = []
    node = data
    for k, part in enumerate(loc):
        if isinstance(part, int):
            out.append(("index", part))
            node = node[part] if isinstance(node, (list, tuple)) and -len(node) <= part < len(node) else None
        elif isinstance(node, dict) and (part in node or (typ == "missing" and k == len(loc) - 1)):
            out.append(("key", part))
            node = node.get(part)
        elif node is None and not out:
            out.append(("key", part))
        elif isinstance(node, dict) or node is None:
            # A key of a nested model that the data do not hold (a missing key deeper down) or an alternative.
            if isinstance(part, str) and ("[" in part or part[:1].isupper() or part in _BASIC_LABELS):
                out.append(("label", part))
            else:
                out.append(("key", part))
                node = None
        else:
            out.append(("label", part))
    return tuple(out)


_BASIC_LABELS = frozenset({"str", "int", "float", "bool", "list", "dict", "tuple", "complex", "constrained-float"})


def _score(errs: list[_Err]) -> tuple[int, int]:
    depth = max(len(e.steps) for e in errs)
    about_value = int(any(e.type not in MISMATCH_TYPES for e in errs))
    return depth, about_value


def _select(errs: list[_Err], d: int, notes: dict[int, list[str]]) -> list[_Err]:
    """The errors that describe the problem: at each field with alternatives, those of the closest one."""
    kept: list[_Err] = []
    groups: dict = {}
    for e in errs:
        if len(e.steps) <= d:
            kept.append(e)
        else:
            groups.setdefault(e.steps[d], []).append(e)
    labelled = {s: g for s, g in groups.items() if s[0] == "label"}
    for s, g in groups.items():
        if s[0] != "label":
            kept.extend(_select(g, d + 1, notes))
    if labelled:
        branches = list(labelled.values())
        if len(branches) == 1:
            kept.extend(_select(branches[0], d + 1, notes))
        else:
            best = max(branches, key=_score)
            if _score(best)[1]:
                chosen = _select(best, d + 1, notes)
                # Alternatives the value did not take, named after the chosen message ("or 'auto'").
                others = [
                    b[0]
                    for b in branches
                    if b is not best and len(b) == 1 and b[0].type == "literal_error" and len(b[0].steps) == d + 1
                ]
                if others and len(chosen) == 1:
                    expected = others[0].err.get("ctx", {}).get("expected", "")
                    if expected:
                        notes.setdefault(chosen[0].order, []).append(f"or {expected}")
                kept.extend(chosen)
            else:
                # The value fits none of the kinds allowed: one message naming them all.
                first = min((e for b in branches for e in b), key=lambda e: e.order)
                kinds = []
                for b in branches:
                    for e in b:
                        kinds.append(_expected(e.err))
                merged = dict(first.err)
                merged["type"] = "union_kinds"
                merged["kinds"] = list(dict.fromkeys(k for k in kinds if k))
                kept.append(_Err(first.order, first.steps[:d], merged))
    return kept


def _expected(err: dict) -> str:
    typ = err.get("type", "")
    if typ == "literal_error":
        return f"one of {err.get('ctx', {}).get('expected', '')}"
    if typ == "is_instance_of":
        return ""
    return _KIND.get(typ, "")


def _path(steps, data, prefix: str) -> str:
    from snrgain.antennas.base import item_label

    parts = [prefix] if prefix else []
    node, key = data, None
    for kind, part in steps:
        if kind == "label":
            continue
        if kind == "index":
            item = node[part] if isinstance(node, (list, tuple)) and -len(node) <= part < len(node) else None
            if parts and key is not None:
                parts[-1] = item_label(key, part, item)
            else:
                parts.append(str(part + 1))
            node, key = item, None
            continue
        parts.append(str(part))
        key = str(part)
        node = node.get(part) if isinstance(node, dict) else None
    return ".".join(parts)


def not_finite(value) -> str | None:
    """What is wrong with a number TOML reads as ``nan`` or ``inf``, said the same for every field ("NaN (not a
    number) is not allowed"; the caller adds what is allowed and the value); None for any other value."""
    if not isinstance(value, float) or math.isfinite(value):
        return None
    return "NaN (not a number) is not allowed" if math.isnan(value) else "an infinite number is not allowed"


def _message(err: dict, title: str | None = None, antenna=None) -> str:
    typ = err.get("type", "")
    ctx = err.get("ctx", {}) or {}
    got = f"; got {toml_repr(err['input'])}" if "input" in err else ""
    if typ == "union_kinds":
        return f"expected {' or '.join(err['kinds']) or 'another kind of value'}{got}"
    if typ == "extra_forbidden":
        from snrgain.unknown_keys import unknown_key_message

        return unknown_key_message(title, tuple(err.get("loc") or ()), antenna)
    if typ == "missing":
        return "required key is missing"
    if typ in ("value_error", "assertion_error"):
        return str(err.get("msg", "invalid")).removeprefix("Value error, ").removeprefix("Assertion failed, ")
    if typ == "finite_number":
        return f"{not_finite(err.get('input')) or 'must be a finite number'}; give a finite number{got}"
    bounds = {
        "greater_than": ("greater than", "gt"),
        "greater_than_equal": ("at least", "ge"),
        "less_than": ("less than", "lt"),
        "less_than_equal": ("at most", "le"),
    }
    if typ in bounds:
        words, key = bounds[typ]
        return f"must be {words} {ctx.get(key)}{got}"
    if typ == "too_short":
        return f"needs at least {ctx.get('min_length')} item(s){got}"
    if typ == "too_long":
        return f"takes at most {ctx.get('max_length')} item(s){got}"
    if typ == "literal_error":
        return f"must be one of {ctx.get('expected', '')}{got}"
    if typ in _KIND:
        return f"expected {_KIND[typ]}{got}"
    return f"{err.get('msg', 'invalid')}{got}"


def pydantic_problems(exc, prefix: str = "", data=None, antenna=None) -> list[tuple[str, str]]:
    """(field path, message) pairs from a pydantic ValidationError: one per problem, in the project's words, list
    items counted from 1 and named (``candidate 5 ("BOG toward Europe")``); ``data`` is the input validated;
    ``antenna``: what an antenna table takes besides its family's keys (snrgain.unknown_keys.AntennaTable)."""
    errs = [_Err(i, _steps(e.get("loc", ()), data, e.get("type", "")), e) for i, e in enumerate(exc.errors())]
    notes: dict[int, list[str]] = {}
    kept = sorted(_select(errs, 0, notes), key=lambda e: e.order)
    out = []
    for e in kept:
        msg = _message(e.err, getattr(exc, "title", None), antenna)
        for note in notes.get(e.order, []):
            head, sep, tail = msg.partition("; got ")
            msg = f"{head} ({note}){sep}{tail}"
        item = (_path(e.steps, data, prefix), msg)
        if item not in out:
            out.append(item)
    return out
