"""Tool-wide limits and choice lists: one home for each.

Physical constants live in :mod:`snrgain.ground`; P.372's own tables in
:mod:`noisemodels.p372`.
"""

from __future__ import annotations

from noisemodels.p372 import MAN_MADE_CATEGORIES

FREQ_RANGE_HZ = (0.1e6, 30e6)
"""Frequencies the tool accepts, medium wave to the top of HF [Hz]; every model holds over this range."""

MAN_MADE_CHOICES: tuple[str, ...] = (*MAN_MADE_CATEGORIES, "none")
"""Man-made noise environments: the ITU-R P.372 Table 1 categories, or none."""

WIRE_FAMILIES: tuple[str, ...] = ("beverage", "bog", "unterminated", "two-wire")
"""The long-wire families (transmission-line model) the wire design report and calibration cover."""


def check_frequency_hz(freq_hz: float, what: str = "frequency") -> float:
    """Return ``freq_hz`` if it lies in :data:`FREQ_RANGE_HZ`; else raise ValueError naming ``what``."""
    lo, hi = FREQ_RANGE_HZ
    if not lo <= freq_hz <= hi:
        raise ValueError(f"{what} must be between {lo / 1e6:g} and {hi / 1e6:g} MHz; got {freq_hz / 1e6:g} MHz")
    return freq_hz
