"""Reading the builders' own files (analyser readings, noise readings): TOML, impedances.

>>> parse_impedance("95 - j210", "open")
(95-210j)
>>> parse_impedance([160.0, 240.0], "short")
(160+240j)
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np

from snrgain.problems import toml_repr


def read_toml(path: str | Path, *, allowed: set[str] | None = None) -> dict:
    """A readings file as a dict; ReadingsError naming the file (cannot read, not UTF-8, not TOML, too deep)."""
    from snrgain.errors import ReadingsError, ScenarioError
    from snrgain.scenario import parse_toml, read_text_file

    path = Path(path)
    try:
        data = parse_toml(read_text_file(path), str(path))
    except ScenarioError as exc:
        raise ReadingsError(exc.source, exc.problems) from None
    if allowed is not None:
        unknown = set(data) - allowed
        if unknown:
            raise ReadingsError(
                str(path), [(k, f"unknown key; allowed: {', '.join(sorted(allowed))}") for k in sorted(unknown)]
            )
    return data


def validate(model, data: dict, path) -> object:
    """``data`` validated against a pydantic model; ReadingsError listing every problem, items counted from 1."""
    from pydantic import ValidationError

    from snrgain.antennas.base import pydantic_problems
    from snrgain.errors import ReadingsError

    try:
        return model.model_validate(data)
    except ValidationError as exc:
        raise ReadingsError(str(path), pydantic_problems(exc, data=data)) from None


MAX_IMPEDANCE_OHM = 100e3
"""The largest |R| or |X| an analyser reading may hold [ohm]: hand-held analysers read to a few kohm."""


def impedance_field(value):
    """A pydantic before-validator for an impedance [ohm]: [R, X] or '95-210j', with R >= 0 (a passive wire) and
    |R|, |X| up to :data:`MAX_IMPEDANCE_OHM`."""
    z = parse_impedance(value, "expected")
    if not (np.isfinite(z.real) and np.isfinite(z.imag)):
        raise ValueError(f"an impedance must be finite; got {toml_repr(value)}")
    if not (0.0 <= z.real <= MAX_IMPEDANCE_OHM and abs(z.imag) <= MAX_IMPEDANCE_OHM):
        raise ValueError(
            f"an impedance needs R from 0 to {MAX_IMPEDANCE_OHM:g} ohm and X within +-{MAX_IMPEDANCE_OHM:g} ohm "
            f"(a passive wire, read by an analyser); got {toml_repr(value)}"
        )
    return z


def parse_impedance(value, where: str) -> complex:
    """An impedance [ohm] as [R, X] or a string such as '95-210j', '95 - j210'."""
    if (
        isinstance(value, list)
        and len(value) == 2
        and all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in value)
    ):
        return complex(value[0], value[1])
    if isinstance(value, str):
        from snrgain.units import QuantityError, normalise_text

        try:
            value = normalise_text(value)
        except QuantityError as exc:
            raise ValueError(f"{where} an impedance as [R, X] in ohm or a string like '95-210j'; {exc}") from None
        text = value.replace(" ", "")
        text = re.sub(r"([+-])j([0-9.]+)", r"\g<1>\g<2>j", text)
        try:
            return complex(text)
        except ValueError:
            pass
    raise ValueError(f"{where} an impedance as [R, X] in ohm or a string like '95-210j'; got {toml_repr(value)}")
