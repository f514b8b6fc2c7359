"""Edits to a scenario file's text that keep everything else as written (comments, order, layout).

The commands that write a copy of a scenario (``calibrate --into``, ``locate``, ``layout``) change a few keys of
one table and leave the rest of the user's file alone; these helpers find a table by its header and ``name`` and
rewrite its keys.  Every result is parsed again, so a copy is never written that TOML cannot read.
"""

from __future__ import annotations

import re
import tomllib

_HEAD = re.compile(r"\s*\[")
_NAME = re.compile(r'\s*name\s*=\s*"([^"]*)"')


def toml_string(value: str) -> str:
    """``value`` as a TOML basic string, quotes, backslashes and control characters escaped.

    >>> print(toml_string('the "barn" light'))
    "the \\"barn\\" light"
    """
    import json

    return json.dumps(value, ensure_ascii=False)  # JSON's string escapes are all valid in TOML basic strings


def _block_name(block: list[str]) -> str | None:
    """The ``name`` of a table's body, read as TOML (escapes and all), else by a plain match."""
    try:
        name = tomllib.loads("".join(block)).get("name")
        return name if isinstance(name, str) else None
    except tomllib.TOMLDecodeError:
        return next((m.group(1) for ln in block if (m := _NAME.match(ln))), None)


def table_blocks(lines: list[str], header: str) -> list[tuple[int, int, str | None]]:
    """(first line, line after the last, name) of every table with ``header`` (e.g. "[[candidate]]")."""
    heads = [i for i, ln in enumerate(lines) if _HEAD.match(ln)] + [len(lines)]
    out = []
    for a, b in zip(heads, heads[1:]):
        if lines[a].split("#", 1)[0].strip() == header:  # a comment may follow the header
            out.append((a, b, _block_name(lines[a + 1 : b])))
    return out


def _key(line: str) -> str | None:
    if "=" not in line or line.lstrip().startswith("#"):
        return None
    return line.split("=", 1)[0].strip()


def rewrite_table(text: str, header: str, name: str, *, drop: set[str], add: list[str]) -> str:
    """``text`` with the table ``header`` named ``name`` rid of the keys in ``drop`` (a value running over several
    lines included) and given the lines ``add`` just after its name; ValueError if there is no such table."""
    lines = text.splitlines(keepends=True)
    block = next(((a, b) for a, b, n in table_blocks(lines, header) if n == name), None)
    if block is None:
        raise ValueError(f"the scenario has no {header} named {name!r}")
    a, b = block
    kept, open_brackets = [], 0
    for ln in lines[a:b]:
        if open_brackets > 0:  # the rest of a dropped value
            open_brackets += ln.count("[") - ln.count("]")
            continue
        if _key(ln) in drop:
            value = ln.split("=", 1)[1]
            open_brackets = value.count("[") - value.count("]")
            continue
        kept.append(ln)
    at = next(i for i, ln in enumerate(kept) if _NAME.match(ln))
    out = "".join(lines[:a] + kept[: at + 1] + add + kept[at + 1 :] + lines[b:])
    tomllib.loads(out)  # still a valid file
    return out


def remove_tables(text: str, header: str, names: set[str]) -> str:
    """``text`` without the tables ``header`` whose name is in ``names``."""
    lines = text.splitlines(keepends=True)
    drop = {i for a, b, n in table_blocks(lines, header) if n in names for i in range(a, b)}
    return "".join(ln for i, ln in enumerate(lines) if i not in drop)
