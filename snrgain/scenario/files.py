"""Reading a scenario: the file (bounded, UTF-8), its TOML (nesting bounded) and the limits on what it holds."""

from __future__ import annotations

import sys
import tomllib
from pathlib import Path

from snrgain.errors import ScenarioError

MAX_FILE_BYTES = 5_000_000
"""The largest scenario or readings file read [bytes]."""
MAX_NESTING = 32
"""The deepest nesting of tables and arrays a scenario file may have."""
MAX_ITEMS = 64
"""The most targets, candidates or local sources a scenario may hold."""


STDIN_PATH = "-"
"""The scenario path that stands for standard input."""
STDIN_LABEL = "<standard input>"
_STDIN: list = []
"""[(stream, text or ScenarioError)]: what standard input gave, read once per stream (a command may read its
scenario more than once: its bands, then each band)."""


def is_stdin(source) -> bool:
    """Whether a scenario source names standard input ("-")."""
    return isinstance(source, (str, Path)) and str(source) == STDIN_PATH


def read_stdin() -> str:
    """The UTF-8 text piped into standard input, read once (at most MAX_FILE_BYTES); ScenarioError when there is
    none, when it is a terminal (nothing piped: it would wait for typing), when it is larger or not UTF-8."""
    stream = sys.stdin
    if not (_STDIN and _STDIN[0][0] is stream):
        try:
            got = _stdin_text(stream)
        except ScenarioError as exc:
            got = exc
        _STDIN[:] = [(stream, got)]
    got = _STDIN[0][1]
    if isinstance(got, ScenarioError):
        raise ScenarioError(got.source, got.problems)
    return got


def _stdin_text(stream) -> str:
    def refuse(why: str):
        return ScenarioError(STDIN_LABEL, [("", why)])

    if stream is None:
        raise refuse("there is no standard input; give the scenario's file path")
    try:
        terminal = stream.isatty()
    except (AttributeError, ValueError, OSError):
        terminal = False
    if terminal:
        raise refuse(
            "standard input is a terminal; pipe a scenario into it (snrgain check - < site.toml) or give a path"
        )
    try:
        buffer = getattr(stream, "buffer", None)
        raw = buffer.read(MAX_FILE_BYTES + 1) if buffer is not None else stream.read(MAX_FILE_BYTES + 1).encode()
    except (OSError, ValueError) as exc:
        raise refuse(f"cannot read standard input ({exc})") from None
    if len(raw) > MAX_FILE_BYTES:
        raise refuse(f"standard input holds more than {MAX_FILE_BYTES:,} bytes, the most a scenario may have")
    if not raw.strip():
        raise refuse("standard input is empty; pipe a scenario into it or give the scenario's file path")
    return decode_text(raw, STDIN_LABEL)


def read_input(source) -> tuple[str, str, Path | None]:
    """(text, label, folder relative paths start from) of a path or TOML text; "-" reads standard input (its
    relative paths start from the current folder)."""
    if is_stdin(source):
        return read_stdin(), STDIN_LABEL, Path.cwd()
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
