"""Quantities as users write them, converted to SI at the edge.

``parse_quantity("400 ft", "length")`` -> 121.92 (metres).  Every physical
quantity in a scenario, a readings file or an option goes through here; the
rest of the code sees SI floats.

Grammar (no expressions are evaluated): a decimal number, optionally with an
exponent, then at most one unit from the set allowed for the field's dimension
(:data:`UNITS`; an unknown unit is named with the allowed ones).  ``"2,5 m"``,
``"8 10 ft"``, ``"3 m; 2"``, ``"9**9**9 m"`` or ``"180 furlongs"`` are refused,
not guessed at.

Levels in dB are parsed here too: ``"-95 dBm"`` (power), ``"S7"`` or
``"S9+10"`` (S-units per IARU Region 1 Technical Recommendation R.1: S9 is
-73 dBm below 30 MHz, 6 dB per S-unit), ``"12 dB"``, and line attenuations
(``"2 dB/100m"``, ``"0.6 dB/100ft"``).

    >>> round(parse_quantity("400 ft", "length"), 2)
    121.92
    >>> parse_quantity("1.83 MHz", "frequency")
    1830000.0
    >>> parse_power_dbm("S9+10")
    -63.0
    >>> parse_attenuation_db_per_100m("0.02 dB/m")
    2.0
"""

from __future__ import annotations

import math
import re
import unicodedata
from collections.abc import Iterator
from contextlib import contextmanager
from contextvars import ContextVar

import numpy as np

from snrgain.problems import not_finite, toml_repr

# Dimension name -> (SI unit, example for messages, are bare numbers allowed)
DIMENSIONS: dict[str, tuple[str, str, bool]] = {
    "length": ("meter", "'40 m' or '130 ft'", False),
    "frequency": ("hertz", "'1.83 MHz' or '500 Hz'", False),
    "conductivity": ("siemens / meter", "'5 mS/m'", False),
    "resistance": ("ohm", "'10 ohm'", True),
    "angle": ("radian", "'45 deg' or a bare number of degrees", True),
    "time": ("second", "'120 ns' or '0.12 us'", False),
    "power": ("watt", "'10 kW' or '500 W'", False),
}

M_PER_FT = 0.3048
"""One foot [m] (exact, international foot)."""
FT_PER_M = 1.0 / M_PER_FT
S9_DBM = -73.0
"""S9 below 30 MHz [dBm], IARU Region 1 Technical Recommendation R.1."""
DB_PER_S_UNIT = 6.0
"""dB per S-unit, IARU Region 1 Technical Recommendation R.1."""

_NUMBER = r"[-+]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][-+]?[0-9]{1,3})?"
_WORD = r"[A-Za-z\u00b0\u00b5\u03bc\u03a9]+"
_QUANTITY = re.compile(rf"^\s*({_NUMBER})\s*({_WORD}(?:\s*/\s*{_WORD})?)?\s*$")
_MINUS_SIGNS = {"\u2212": "-", "\u2012": "-", "\u2013": "-", "\ufe63": "-", "\uff0d": "-"}
_PREFIX_CASE = frozenset("mM")
"""Prefix letters whose case changes a unit's meaning (milli or mega): never folded."""
_SIEMENS_DIMENSIONS = frozenset({"conductivity", "time"})
"""Dimensions where 's' and 'S' (second, siemens) must not be folded into each other."""


def normalise_text(value: str, what: str = "a number") -> str:
    """A user's number and unit in the plain characters the grammar reads.

    Decimal digits of any script ("\u0663", "\uff14\uff10", "\U0001d7d3") become the ASCII digits they show, a
    minus sign or dash becomes "-", and compatibility forms of letters (full-width "\uff2d\uff28\uff5a") become
    plain ones (Unicode NFKC).  Superscripts, fractions and other number signs that are not decimal
    digits ("5\u00b2", "\u00bd") are refused: reading them would change the number shown.

    >>> normalise_text("\u0664\u0660 m"), normalise_text("\u221295 dBm")
    ('40 m', '-95 dBm')
    """
    out = []
    for ch in value:
        cat = unicodedata.category(ch)
        if cat == "Nd":
            out.append(str(unicodedata.decimal(ch)))
        elif cat in ("No", "Nl"):
            raise QuantityError(
                f"cannot read {toml_repr(value)} as {what}: {ch!r} is not a decimal digit; write plain digits like 12.5"
            )
        elif ch in _MINUS_SIGNS:
            out.append("-")
        else:
            out.append(ch)
    text = unicodedata.normalize("NFKC", "".join(out))
    # NFKC maps the micro sign and the ohm sign to Greek letters the unit tables also hold.
    return text


_ATTENUATION = re.compile(rf"^\s*({_NUMBER})\s*(?:dB\s*/\s*(100\s*m|100\s*ft|m|ft))?\s*$", re.IGNORECASE)
_ATTENUATION_SCALE = {"100m": 1.0, "100ft": FT_PER_M, "m": 100.0, "ft": 100.0 * FT_PER_M}
ATTENUATION_RANGE_DB_PER_100M = (0.0, 200.0)


class QuantityError(ValueError):
    """A value that is not a quantity of the expected kind."""


_FT = M_PER_FT
UNITS: dict[str, dict[str, float]] = {
    "length": {
        "m": 1.0,
        "meter": 1.0,
        "meters": 1.0,
        "metre": 1.0,
        "metres": 1.0,
        "cm": 0.01,
        "mm": 1e-3,
        "km": 1e3,
        "ft": _FT,
        "foot": _FT,
        "feet": _FT,
        "in": 0.0254,
        "inch": 0.0254,
        "inches": 0.0254,
        "yd": 0.9144,
        "mi": 1609.344,
    },
    "frequency": {"Hz": 1.0, "kHz": 1e3, "MHz": 1e6, "GHz": 1e9},
    "conductivity": {"S/m": 1.0, "mS/m": 1e-3, "uS/m": 1e-6, "\u00b5S/m": 1e-6, "\u03bcS/m": 1e-6},
    "resistance": {"ohm": 1.0, "ohms": 1.0, "\u03a9": 1.0, "kohm": 1e3, "k\u03a9": 1e3, "Mohm": 1e6},
    "angle": {
        "deg": np.pi / 180,
        "degree": np.pi / 180,
        "degrees": np.pi / 180,
        "\u00b0": np.pi / 180,
        "rad": 1.0,
        "radian": 1.0,
        "radians": 1.0,
    },
    "time": {"s": 1.0, "ms": 1e-3, "us": 1e-6, "\u00b5s": 1e-6, "\u03bcs": 1e-6, "ns": 1e-9},
    "power": {"W": 1.0, "mW": 1e-3, "kW": 1e3, "MW": 1e6},
}
"""The units each dimension accepts, and the SI value of one of each."""


def _reject_non_text(value, what: str, example: str) -> None:
    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        raise QuantityError(f"expected {what} such as {example}, got {toml_repr(value)}")


def parse_quantity(value, dimension: str) -> float:
    """Convert a user's quantity to its SI value.

    Parameters
    ----------
    value : str such as "400 ft", or a bare int/float where the dimension
        allows it (resistance in ohm, angle in degrees)
    dimension : a key of :data:`DIMENSIONS`

    Returns
    -------
    float in the SI unit of the dimension (m, Hz, S/m, ohm, rad, s)

    Raises
    ------
    QuantityError naming what was expected.
    """
    si_unit, example, bare_ok = DIMENSIONS[dimension]
    _reject_non_text(value, dimension, example)
    if bad := not_finite(value):
        unit = "" if bare_ok else " with its unit"
        raise QuantityError(f"{bad}; give the {dimension}{unit}, such as {example}; got {toml_repr(value)}")
    if isinstance(value, str):
        m = _QUANTITY.match(normalise_text(value, dimension))
        if m is None:
            raise QuantityError(
                f"cannot read {toml_repr(value)} as {dimension}: write a number and one unit, like {example}"
            )
        number, unit = float(m.group(1)), m.group(2)
        if unit is None and not bare_ok:
            raise QuantityError(f"{toml_repr(value)} has no {dimension} unit; write it like {example}")
        x = number * (_unit_scale(unit, dimension) if unit is not None else _bare_scale(dimension))
    else:
        if not bare_ok:
            raise QuantityError(
                f"a bare number is ambiguous here; give the {dimension} with its unit, such as {example}"
            )
        x = float(value) * _bare_scale(dimension)
    if not np.isfinite(x):
        raise QuantityError(f"expected a finite {dimension}, got {toml_repr(value)}")
    return float(x)


def _bare_scale(dimension: str) -> float:
    return float(np.pi / 180.0) if dimension == "angle" else 1.0


def _unit_scale(unit: str, dimension: str) -> float:
    """SI value of one ``unit`` of ``dimension``; QuantityError naming the allowed units otherwise."""
    table = UNITS[dimension]
    key = re.sub(r"\s+", "", unit)
    if key in table:
        return table[key]
    # Letter case is forgiven only where it cannot change the meaning: "FT", "OHM", "khz" are read, but
    # "Mm" (megametre, not mm), "mohm" (milliohm, not Mohm), "MS/m" or "ms/m" (not mS/m) are refused.
    folded = [k for k in table if k.lower() == key.lower()]
    if len(folded) == 1:
        canon = folded[0]
        prefix_kept = canon[0] == key[0] or canon[0] not in _PREFIX_CASE
        siemens_kept = dimension not in _SIEMENS_DIMENSIONS or all(
            a == b for a, b in zip(canon, key) if a in "sS" or b in "sS"
        )
        if prefix_kept and siemens_kept:
            return table[canon]
        raise QuantityError(
            f"{dimension} unit {unit!r} is ambiguous: the case of m/M (milli, mega) and s/S (second, siemens) matters; "
            f"did you mean {canon!r}? Use one of {', '.join(table)}"
        )
    for other, units in UNITS.items():
        if other != dimension and key in units:
            raise QuantityError(f"{unit!r} is a unit of {other}, not of {dimension}; use one of {', '.join(table)}")
    raise QuantityError(f"unknown unit {unit!r} for {dimension}; use one of {', '.join(table)}")


def parse_attenuation_db_per_100m(value) -> float:
    """A line's attenuation as '2 dB/100m', '0.6 dB/100ft', '0.02 dB/m' or a bare number of dB per 100 m."""
    example = "'2 dB/100m' or '0.6 dB/100ft'"
    _reject_non_text(value, "an attenuation", example)
    if isinstance(value, str):
        m = _ATTENUATION.match(normalise_text(value, "an attenuation"))
        if m is None:
            raise QuantityError(f"expected an attenuation such as {example}, got {toml_repr(value)}")
        per = re.sub(r"\s+", "", m.group(2) or "100m").lower()
        x = float(m.group(1)) * _ATTENUATION_SCALE[per]
    else:
        x = float(value)
    lo, hi = ATTENUATION_RANGE_DB_PER_100M
    if not (np.isfinite(x) and lo <= x <= hi):
        raise QuantityError(f"attenuation must lie between {lo:g} and {hi:g} dB/100 m, got {toml_repr(value)}")
    return x


_DBM = re.compile(r"^\s*([-+]?[0-9]+(?:\.[0-9]*)?|[-+]?\.[0-9]+)\s*dBm\s*$", re.IGNORECASE)
_S_UNIT = re.compile(r"^\s*S\s*([0-9]+)(?:\s*\+\s*([0-9]+(?:\.[0-9]*)?)\s*(?:dB)?)?\s*$", re.IGNORECASE)
_DB = re.compile(r"^\s*([-+]?[0-9]+(?:\.[0-9]*)?|[-+]?\.[0-9]+)\s*dB\s*$", re.IGNORECASE)


POWER_RANGE_DBM = (-200.0, 30.0)
"""Received powers a listener can read [dBm]: from far below any receiver's floor to 1 W (S9+103)."""


def parse_power_dbm(value) -> float:
    """A received power as dBm: "-95 dBm", "S7", "S9+10" or "S9+10 dB", within :data:`POWER_RANGE_DBM`.

    S-units follow IARU Region 1 Technical Recommendation R.1 below 30 MHz:
    S9 = -73 dBm, 6 dB per S-unit (S1 = -121 dBm); "S9+N" adds N dB.
    """
    x = _power_dbm(value)
    lo, hi = POWER_RANGE_DBM
    if not (np.isfinite(x) and lo <= x <= hi):
        raise QuantityError(f"a received power must lie between {lo:g} and {hi:+g} dBm; got {toml_repr(value)}")
    return x


def _power_dbm(value) -> float:
    if isinstance(value, str):
        value = normalise_text(value, "a power")
        m = _DBM.match(value)
        if m:
            return float(m.group(1))
        m = _S_UNIT.match(value)
        if m:
            units = int(m.group(1))
            over = float(m.group(2)) if m.group(2) else 0.0
            if not 1 <= units <= 9:
                raise QuantityError(f"S-units run from S1 to S9, then S9+N dB ('S9+10'); got {toml_repr(value)}")
            if over and units != 9:
                raise QuantityError(f"only S9 takes '+N dB'; got {toml_repr(value)}")
            return S9_DBM - DB_PER_S_UNIT * (9 - units) + over
    raise QuantityError(f"expected a power such as '-95 dBm', 'S7' or 'S9+10', got {toml_repr(value)}")


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
        raise QuantityError(f"expected a value in dB such as '12 dB', got {toml_repr(value)}")
    x = None
    if isinstance(value, (int, float)):
        x = float(value)
    elif isinstance(value, str):
        value = normalise_text(value, "a value in dB")
        m = _DB.match(value)
        if m:
            x = float(m.group(1))
        elif re.fullmatch(r"\s*" + _NUMBER + r"\s*", value):
            x = float(value)
    if bad := not_finite(value):
        raise QuantityError(f"{bad}; give a value in dB such as '12 dB'; got {toml_repr(value)}")
    if x is None:
        raise QuantityError(f"expected a value in dB such as '12 dB', got {toml_repr(value)}")
    if not np.isfinite(x):
        raise QuantityError(f"expected a finite value in dB, got {toml_repr(value)}")
    return x


# ---- lengths shown in the scenario's own unit ------------------------------------------------------------------

LENGTH_UNITS_SHOWN = ("m", "ft")
"""The units lengths are shown in at the edge (terminal, report, build sheet, layout text, a scenario's copy):
the scenario's (:func:`length_unit_of`); JSON stays in metres."""
_FEET_QUANTITY = re.compile(rf"^\s*{_NUMBER}\s*(?:ft|feet|foot|')\s*$", re.IGNORECASE)
_METRE_QUANTITY = re.compile(rf"^\s*{_NUMBER}\s*(?:m|metres?|meters?)\s*$", re.IGNORECASE)
_PLAN_KEYS = frozenset({"lot", "outline", "position", "positions", "tx_clearance"})
"""Keys whose bare numbers are metres on the site plan (a vote for metres)."""


def _length_votes(x, plan: bool = False) -> tuple[int, int]:
    """(feet, metres): lengths written in feet and in metres under ``x`` (bare numbers under plan keys are metres)."""
    if isinstance(x, dict):
        ft = m = 0
        for k, v in x.items():
            a, b = _length_votes(v, plan or k in _PLAN_KEYS)
            ft, m = ft + a, m + b
        return ft, m
    if isinstance(x, (list, tuple)):
        ft = m = 0
        for v in x:
            a, b = _length_votes(v, plan)
            ft, m = ft + a, m + b
        return ft, m
    if isinstance(x, str):
        try:
            x = normalise_text(x)
        except QuantityError:
            return 0, 0
        return (1, 0) if _FEET_QUANTITY.match(x) else (0, 1) if _METRE_QUANTITY.match(x) else (0, 0)
    if plan and isinstance(x, (int, float)) and not isinstance(x, bool):
        return 0, 1
    return 0, 0


def length_unit_of(data) -> str:
    """The unit a scenario's raw tables are written in, to show its lengths in: ``[site] units`` ("m" or "ft")
    when given, else the unit most used by the lengths of [site] (lot, keep-outs, clearance) and of the reference's
    and candidates' tables (positions, lengths, heights ...), bare plan numbers counting as metres; a tie is "m".

    >>> length_unit_of({"site": {"lot": [["0 ft", "0 ft"], ["90 ft", "0 ft"]]}, "candidate": [{"length": "3 m"}]})
    'ft'
    >>> length_unit_of({"site": {"units": "m", "lot": [["0 ft", "0 ft"]]}})
    'm'
    """
    if not isinstance(data, dict):
        return "m"
    site = data.get("site")
    given = site.get("units") if isinstance(site, dict) else None
    if given in LENGTH_UNITS_SHOWN:
        return given
    parts = [data.get(k) for k in ("site", "reference", "candidate")]
    ft, m = _length_votes([p for p in parts if p is not None])
    return "ft" if ft > m else "m"


def length_unit_written(value) -> str | None:
    """The unit the lengths under ``value`` are written in ("ft" where feet outnumber metres, "m" where metres do or
    as many), None where it holds no length with a unit (a readings file's ``distance``: its message quotes its
    limits in that unit).

    >>> length_unit_written("200000 ft"), length_unit_written(["50 m", "60 ft"]), length_unit_written(12)
    ('ft', 'm', None)
    """
    ft, m = _length_votes(value)
    return None if ft == m == 0 else "ft" if ft > m else "m"


def per_m(unit: str) -> float:
    """How many of ``unit`` make a metre."""
    if unit not in LENGTH_UNITS_SHOWN:
        raise ValueError(f"lengths are shown in one of {', '.join(LENGTH_UNITS_SHOWN)}; got {unit!r}")
    return FT_PER_M if unit == "ft" else 1.0


def bearing_deg(rad: float) -> float:
    """A direction in radians as degrees for output, rounded to 1e-9 deg: a bearing written in degrees comes back as
    written (60, not 59.99999999999999, after the round trip through radians)."""
    import math

    return round(math.degrees(float(rad)), 9) + 0.0


def number_text(value: float, fmt: str) -> str:
    """``fmt.format(value)`` for a number format (``"{:+.1f}"``), except that a value that rounds to zero reads as
    zero does, never "-0.0" (a small negative change shown as a negative zero reads as a loss that is not there)."""
    out = fmt.format(float(value))
    if out.startswith("-") and float(out) == 0.0:
        out = fmt.format(0.0)
    return out


def signed_text(value: float, decimals: int = 1) -> str:
    """``value`` with its sign to ``decimals`` places ("+1.2", "-0.3" dB; :func:`number_text`: "+0.0", never
    "-0.0")."""
    return number_text(value, f"{{:+.{decimals}f}}")


def length_text(x_m: float, unit: str = "m", decimals: int = 1) -> str:
    """A length [m] in the unit shown: ``length_text(8.8392, "ft", 0)`` -> "29 ft"."""
    return f"{x_m * per_m(unit):.{decimals}f} {unit}"


def lengths_text(xs_m, unit: str = "m", decimals: int = 1, sep: str = " x ") -> str:
    """Several lengths [m] in one unit named once: ``lengths_text([8.8392, 4.2672], "ft", 0)`` -> "29 x 14 ft"."""
    k = per_m(unit)
    return sep.join(f"{x * k:.{decimals}f}" for x in xs_m) + f" {unit}"


def length_both_text(x_m: float, unit: str = "m", decimals: int = 1, other_decimals: int = 0) -> str:
    """A length in the unit shown, then in the other one in brackets: "29.0 m (95 ft)" or "95.1 ft (29 m)"."""
    other = "m" if unit == "ft" else "ft"
    return f"{length_text(x_m, unit, decimals)} ({length_text(x_m, other, other_decimals)})"


_SAID_IN: ContextVar[str] = ContextVar("snrgain_lengths_said_in", default="m")
"""The unit the lengths of messages are said in while a scenario is read (:func:`lengths_said_in`)."""


@contextmanager
def lengths_said_in(unit: str) -> Iterator[None]:
    """Within the block, :func:`length_said` quotes lengths in ``unit`` ("m" or "ft": the scenario's, while it is
    read and checked), restored on leaving; outside any such block, metres."""
    per_m(unit)  # a unit it cannot show is refused here
    token = _SAID_IN.set(unit)
    try:
        yield
    finally:
        _SAID_IN.reset(token)


def significant_text(x: float, digits: int = 4) -> str:
    """``x`` to ``digits`` significant figures without an exponent, trailing zeros dropped: 18.288 -> "18.29",
    60.0000001 -> "60", 0.0010 -> "0.001", 1234.6 -> "1235" (whole numbers keep every digit)."""
    x = float(x)
    if x == 0.0 or not math.isfinite(x):
        return f"{x + 0.0:g}"
    decimals = max(0, digits - 1 - math.floor(math.log10(abs(x))))
    out = f"{x:.{decimals}f}"
    if "." in out:
        out = out.rstrip("0").rstrip(".")
    return "0" if out == "-0" else out


def length_said(x_m: float, unit: str | None = None, decimals: int | None = None) -> str:
    """A length [m] as a message quotes it: in ``unit`` (default: the unit of :func:`lengths_said_in`, metres
    outside it) to four significant figures, and after a length in feet the metres to three: "18.29 m",
    "60 ft (18.3 m)" (never the 18.288 m a file's "60 ft" is inside).  ``decimals``: that many places in both
    instead (a gap between two things on the plan: "0.50 m", "1.64 ft (0.50 m)").

    >>> length_said(18.288), length_said(18.288, "ft"), length_said(0.6096, "ft"), length_said(0.5, "ft", 2)
    ('18.29 m', '60 ft (18.3 m)', '2 ft (0.61 m)', '1.64 ft (0.50 m)')
    """
    unit = _SAID_IN.get() if unit is None else unit
    if decimals is None:
        shown, metres = significant_text(float(x_m) * per_m(unit)), significant_text(x_m, 3)
    else:
        fmt = f"{{:.{decimals}f}}"
        shown, metres = number_text(float(x_m) * per_m(unit), fmt), number_text(x_m, fmt)
    return f"{shown} {unit}" if unit == "m" else f"{shown} {unit} ({metres} m)"


def length_literal(x_m: float, unit: str = "m", decimals: int = 1) -> str:
    """A length [m] as a scenario writes it, in its unit: '"95.1 ft"' (for a copy of the scenario)."""
    return f'"{length_text(x_m, unit, decimals)}"'
