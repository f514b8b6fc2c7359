"""Reading a scenario: the file (bounded, UTF-8), its TOML (nesting bounded) and the limits on what it holds."""

from __future__ import annotations

import tomllib
from pathlib import Path

from snrgain.errors import ScenarioError

MAX_FILE_BYTES = 5_000_000
"""The largest scenario or readings file read [bytes]."""
MAX_NESTING = 32
"""The deepest nesting of tables and arrays a scenario file may have."""
MAX_ITEMS = 64
"""The most targets, candidates or local sources a scenario may hold."""


def read_input(source) -> tuple[str, str, Path | None]:
    """(text, label, folder relative paths start from) of a path or TOML text."""
    looks_like_path = (
        isinstance(source, str)
        and "\n" not in source
        and "=" not in source
        and (source.endswith(".toml") or Path(source).exists())
    )
    if isinstance(source, Path) or looks_like_path:
        path = Path(source)
        return read_text_file(path), str(path), path.resolve().parent
    if isinstance(source, str):
        return source, "<text>", None
    raise ScenarioError("<input>", [("", f"a scenario is a path, TOML text or a dict; got {type(source).__name__}")])


def read_text_file(path: Path) -> str:
    """The UTF-8 text of a scenario or readings file; ScenarioError if unreadable, too large or not UTF-8."""
    from snrgain.files import InputFileError, read_limited

    try:
        raw = read_limited(path, limit_bytes=MAX_FILE_BYTES, what="file")
    except InputFileError as exc:
        raise ScenarioError(str(path), [("", str(exc).removeprefix(f"{path}: "))]) from None
    return decode_text(raw, str(path))


def decode_text(raw: bytes, label: str) -> str:
    """UTF-8 text of a file (a leading byte-order mark, as some editors save, dropped); ScenarioError naming the line
    and column of the first byte that is not UTF-8, or saying the file is UTF-16."""
    if raw[:2] in (b"\xff\xfe", b"\xfe\xff"):
        raise ScenarioError(label, [("", "the file is UTF-16 text; save it as UTF-8")])
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        col = exc.start - (raw.rfind(b"\n", 0, exc.start) + 1) + 1
        raise ScenarioError(
            label,
            [("", f"line {line}, column {col}: byte 0x{raw[exc.start]:02x} is not UTF-8 text; save the file as UTF-8")],
        ) from None


def read_source(source: str | Path) -> tuple[dict, str, Path | None]:
    """A scenario file's (or TOML text's) raw tables, its label and the folder its relative paths start from."""
    text, label, base_dir = read_input(source)
    return parse_toml(text, label), label, base_dir


def parse_toml(text: str, label: str) -> dict:
    """TOML text as tables; ScenarioError for text that is not TOML, integers too long, nesting too deep."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ScenarioError(label, [("", f"not valid TOML: {exc}")]) from None
    except RecursionError:
        raise ScenarioError(
            label, [("", f"tables or arrays nested too deeply (at most {MAX_NESTING} levels)")]
        ) from None
    except ValueError as exc:  # e.g. an integer of thousands of digits
        raise ScenarioError(label, [("", f"not valid TOML: {exc}")]) from None
    path = _too_deep(data)
    if path is not None:
        raise ScenarioError(label, [(path, f"tables or arrays nested too deeply (at most {MAX_NESTING} levels)")])
    return data


def _too_deep(data) -> str | None:
    """The path of the first value nested deeper than MAX_NESTING, or None."""
    stack = [(data, 0, "")]
    while stack:
        node, depth, path = stack.pop()
        if depth > MAX_NESTING:
            return path
        if isinstance(node, dict):
            stack.extend((v, depth + 1, f"{path}.{k}" if path else str(k)) for k, v in node.items())
        elif isinstance(node, list):
            stack.extend((v, depth + 1, path) for v in node)
    return None
