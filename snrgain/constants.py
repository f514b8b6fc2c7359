"""Tool-wide limits and choice lists: one home for each.

Physical constants live in :mod:`snrgain.physics.ground`; P.372's own tables in
:mod:`noisemodels.p372`.
"""

from __future__ import annotations

from noisemodels.p372 import MAN_MADE_CATEGORIES

FREQ_RANGE_HZ = (0.1e6, 30e6)
"""Frequencies the tool accepts, medium wave to the top of HF [Hz]; every model holds over this range."""

MAN_MADE_CHOICES: tuple[str, ...] = (*MAN_MADE_CATEGORIES, "none")
"""Man-made noise environments: the ITU-R P.372 Table 1 categories, or none."""


def wire_families() -> tuple[str, ...]:
    """The long-wire families (transmission-line model) the wire design report and calibration cover: those whose
    class declares ``long_wire`` (snrgain.antennas.base), in the registry's order."""
    from snrgain.antennas import FAMILIES

    return tuple(name for name, fam in FAMILIES.items() if fam.build.long_wire)


def placeable_families() -> tuple[str, ...]:
    """The families ``snrgain layout`` can move (their class declares ``placeable``), in the registry's order."""
    from snrgain.antennas import FAMILIES

    return tuple(name for name, fam in FAMILIES.items() if fam.build.placeable)


def __getattr__(name: str):
    # WIRE_FAMILIES is read from the antenna registry when first asked for, so that importing this module (the
    # command line does, at start) does not import the antennas.
    if name == "WIRE_FAMILIES":
        return wire_families()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def check_frequency_hz(freq_hz: float, what: str = "frequency") -> float:
    """Return ``freq_hz`` if it lies in :data:`FREQ_RANGE_HZ`; else raise ValueError naming ``what``."""
    lo, hi = FREQ_RANGE_HZ
    if not lo <= freq_hz <= hi:
        raise ValueError(f"{what} must be between {lo / 1e6:g} and {hi / 1e6:g} MHz; got {freq_hz / 1e6:g} MHz")
    return freq_hz


MIN_GAP_M = 1.0
"""The least distance on the plan between a placed noise source, a structure's foot or the transmitting vertical's
base and any antenna's feed point, wire or element [m] (snrgain.scenario.local, snrgain.scenario.structures): closer,
the two stand in one place, and neither the source's direction and field nor the re-radiation's coupling is defined
(a Beverage at the vertical's base read 56 dB louder than the vertical itself)."""
