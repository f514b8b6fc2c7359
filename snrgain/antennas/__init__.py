"""Antenna families.  ``from_spec(dict) -> Antenna`` (units as in scenario files) or ``from_si(family, **SI values)``;
``Antenna.gain_dbi(freq_hz, azimuth_deg, elevation_deg)``.

Importing this package registers every family in :data:`FAMILIES`.
"""

from snrgain.antennas import array, combination, isotropic, longwire, smallloop, tabulated, termloop, vertical, wires  # noqa: F401
from snrgain.antennas.base import (
    FAMILIES,
    Antenna,
    AntennaParams,
    SpecError,
    from_si,
    from_spec,
    register,
    validate_spec,
    variant,
)

__all__ = [
    "FAMILIES",
    "Antenna",
    "AntennaParams",
    "SpecError",
    "from_si",
    "from_spec",
    "register",
    "validate_spec",
    "variant",
]
