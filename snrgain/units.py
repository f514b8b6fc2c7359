"""Quantities as users write them, converted to SI at the edge.

``parse_quantity("400 ft", "length")`` -> 121.92 (metres).  Every physical
quantity in a scenario goes through here; the rest of the code sees SI floats.

Levels in dB are parsed here too: ``"-95 dBm"`` (power), ``"S7"`` or
``"S9+10"`` (S-units per IARU Region 1 Technical Recommendation R.1: S9 is
-73 dBm below 30 MHz, 6 dB per S-unit) and ``"12 dB"``.
"""

from __future__ import annotations

import re
from functools import lru_cache

import numpy as np

# Dimension name -> (SI unit for pint, example for messages, are bare numbers allowed)
DIMENSIONS: dict[str, tuple[str, str, bool]] = {
    "length": ("meter", "'40 m' or '130 ft'", False),
    "frequency": ("hertz", "'1.83 MHz' or '500 Hz'", False),
    "conductivity": ("siemens / meter", "'5 mS/m'", False),
    "resistance": ("ohm", "'10 ohm'", True),
    "angle": ("radian", "'45 deg' or a bare number of degrees", True),
    "time": ("second", "'120 ns' or '0.12 us'", False),
}

S9_DBM = -73.0
"""S9 below 30 MHz [dBm], IARU Region 1 Technical Recommendation R.1."""
DB_PER_S_UNIT = 6.0
"""dB per S-unit, IARU Region 1 Technical Recommendation R.1."""


class QuantityError(ValueError):
    """A value that is not a quantity of the expected kind."""


@lru_cache(maxsize=1)
def registry():
    import pint

    ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    return ureg


def parse_quantity(value, dimension: str) -> float:
    """Convert a user's quantity to its SI value.

    Parameters
    ----------
    value : str such as "400 ft", or a bare int/float where the dimension
        allows it (resistance in ohm, angle in degrees)
    dimension : a key of :data:`DIMENSIONS`

    Returns
    -------
    float in the SI unit of the dimension (m, Hz, S/m, ohm, rad)

    Raises
    ------
    QuantityError naming what was expected.
    """
    si_unit, example, bare_ok = DIMENSIONS[dimension]
    if isinstance(value, bool):
        raise QuantityError(f"expected {dimension} such as {example}, got {value!r}")
    if isinstance(value, (int, float)):
        if not bare_ok:
            raise QuantityError(f"a bare number is ambiguous here; give the {dimension} with its unit, such as {example}")
        x = float(value)
        if dimension == "angle":
            x = np.radians(x)
    elif isinstance(value, str):
        text = value.strip()
        if dimension == "angle" and _is_number(text):
            x = float(np.radians(float(text)))
        elif dimension == "resistance" and _is_number(text):
            x = float(text)
        else:
            x = _pint_convert(text, si_unit, dimension, example)
    else:
        raise QuantityError(f"expected {dimension} such as {example}, got {value!r}")
    if not np.isfinite(x):
        raise QuantityError(f"expected a finite {dimension}, got {value!r}")
    return float(x)


def _article(word: str) -> str:
    return "an" if word[0] in "aeiou" else "a"


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def _pint_convert(text, si_unit, dimension, example):
    import pint

    ureg = registry()
    try:
        q = ureg.Quantity(text.replace("Ω", "ohm"))
    except Exception as exc:  # pint's parser raises many kinds (tokenize, syntax, undefined unit)
        raise QuantityError(f"cannot read {text!r} as {dimension} ({exc}); write it like {example}") from None
    if isinstance(q, (int, float)) or q.unitless or (q.dimensionless and dimension != "angle"):
        raise QuantityError(f"{text!r} has no {dimension} unit; write it like {example}")
    try:
        return float(q.to(si_unit).magnitude)
    except (pint.errors.DimensionalityError, TypeError, ValueError):
        raise QuantityError(f"{text!r} is not {_article(dimension)} {dimension}; write it like {example}") from None


_DBM = re.compile(r"^\s*([-+]?\d+(?:\.\d*)?|[-+]?\.\d+)\s*dBm\s*$", re.IGNORECASE)
_S_UNIT = re.compile(r"^\s*S\s*(\d)(?:\s*\+\s*(\d+(?:\.\d*)?)\s*(?:dB)?)?\s*$", re.IGNORECASE)
_DB = re.compile(r"^\s*([-+]?\d+(?:\.\d*)?|[-+]?\.\d+)\s*dB\s*$", re.IGNORECASE)


def parse_power_dbm(value) -> float:
    """A received power as dBm: "-95 dBm", "S7", "S9+10" or "S9+10 dB".

    S-units follow IARU Region 1 Technical Recommendation R.1 below 30 MHz:
    S9 = -73 dBm, 6 dB per S-unit (S1 = -121 dBm); "S9+N" adds N dB.
    """
    if isinstance(value, str):
        m = _DBM.match(value)
        if m:
            return float(m.group(1))
        m = _S_UNIT.match(value)
        if m:
            units = int(m.group(1))
            over = float(m.group(2)) if m.group(2) else 0.0
            if units < 1:
                raise QuantityError(f"S-units run from S1 to S9 (then S9+N dB); got {value!r}")
            if over and units != 9:
                raise QuantityError(f"only S9 takes '+N dB'; got {value!r}")
            return S9_DBM - DB_PER_S_UNIT * (9 - units) + over
    raise QuantityError(f"expected a power such as '-95 dBm', 'S7' or 'S9+10', got {value!r}")


def s_units(power_dbm) -> str:
    """A power [dBm] as an S-meter reading (IARU Region 1 R.1), e.g. "S7" or "S9+12"."""
    p = float(power_dbm)
    if p >= S9_DBM:
        over = round(p - S9_DBM)
        return "S9" if over == 0 else f"S9+{over}"
    units = 9 - (S9_DBM - p) / DB_PER_S_UNIT
    if units < 1:
        return "<S1"
    return f"S{int(np.floor(units + 1e-9))}"


def parse_db(value) -> float:
    """A ratio in dB: "12 dB" or a bare number."""
    if isinstance(value, bool):
        raise QuantityError(f"expected a value in dB such as '12 dB', got {value!r}")
    if isinstance(value, (int, float)):
        return float(value)
    if isinstance(value, str):
        m = _DB.match(value)
        if m:
            return float(m.group(1))
        if _is_number(value):
            return float(value)
    raise QuantityError(f"expected a value in dB such as '12 dB', got {value!r}")
