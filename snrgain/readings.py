"""Reading the builders' own files (analyser readings, noise readings): TOML, impedances.

>>> parse_impedance("95 - j210", "open")
(95-210j)
>>> parse_impedance([160.0, 240.0], "short")
(160+240j)
"""

from __future__ import annotations

import re
import tomllib
from pathlib import Path


def read_toml(path: str | Path, *, allowed: set[str]) -> dict:
    """A readings file as a dict; errors name the file (cannot read, not TOML, unknown sections)."""
    path = Path(path)
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except OSError as exc:
        raise ValueError(f"{path}: cannot read ({exc.strerror or exc})") from None
    except UnicodeDecodeError as exc:
        raise ValueError(f"{path}: not UTF-8 text (byte {exc.start})") from None
    except tomllib.TOMLDecodeError as exc:
        raise ValueError(f"{path}: not valid TOML: {exc}") from None
    unknown = set(data) - allowed
    if unknown:
        raise ValueError(f"{path}: unknown key(s) {sorted(unknown)}; allowed: {', '.join(sorted(allowed))}")
    return data


def parse_impedance(value, where: str) -> complex:
    """An impedance [ohm] as [R, X] or a string such as '95-210j', '95 - j210'."""
    if (
        isinstance(value, list)
        and len(value) == 2
        and all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in value)
    ):
        return complex(value[0], value[1])
    if isinstance(value, str):
        text = value.replace(" ", "")
        text = re.sub(r"([+-])j([0-9.]+)", r"\g<1>\g<2>j", text)
        try:
            return complex(text)
        except ValueError:
            pass
    raise ValueError(f"{where}: expected an impedance as [R, X] in ohm or a string like '95-210j', got {value!r}")
