"""Ground: named electrical constants and plane-wave reflection.

Phasors are exp(+j omega t), so the complex relative permittivity of a ground
of conductivity sigma is eps_c = eps_r - j sigma / (omega eps0).
"""

from __future__ import annotations

import numpy as np

# The physical constants' one source (SI), re-exported here under the names the antenna models import.
from noisemodels.constants import C_M_PER_S, EPS0_F_PER_M, ETA0_OHM, MU0_H_PER_M  # noqa: F401
from snrgain.records import record


@record
class Ground:
    """Electrical constants of a homogeneous ground.

    Attributes
    ----------
    conductivity_s_per_m : sigma [S/m]
    permittivity : relative permittivity eps_r [-]
    name : label for output
    source : where the values come from
    """

    conductivity_s_per_m: float
    permittivity: float
    name: str = "custom"
    source: str = "given by the user"

    def __post_init__(self):
        if not (self.conductivity_s_per_m >= 0 and np.isfinite(self.conductivity_s_per_m)):
            raise ValueError(f"ground conductivity must be >= 0 S/m, got {self.conductivity_s_per_m!r}")
        if not (1.0 <= self.permittivity <= 100.0):
            raise ValueError(f"ground relative permittivity must be between 1 and 100, got {self.permittivity!r}")
        if self.conductivity_s_per_m == 0 and self.permittivity == 1.0:
            raise ValueError(
                "a ground of relative permittivity 1 and no conductivity is free space, not a ground; give the "
                "soil's values (moist loam: 5 mS/m, 13), or 'perfect'"
            )

    def complex_permittivity(self, freq_hz):
        """eps_c = eps_r - j sigma / (omega eps0) [-] at a frequency [Hz]."""
        omega = 2 * np.pi * np.asarray(freq_hz, dtype=float)
        return self.permittivity - 1j * self.conductivity_s_per_m / (omega * EPS0_F_PER_M)


_P527 = (
    "ITU-R P.527 (electrical characteristics of the surface of the Earth), values at MF/low HF, from memory "
    "(not verified against the Recommendation's figure)"
)
_OWN = "snrgain's description of the soil, values of the kind common in low-band modelling"

GROUND_TYPES: dict[str, Ground] = {
    "sea water": Ground(5.0, 70.0, "sea water", _P527),
    "fresh water": Ground(3e-3, 80.0, "fresh water", _P527),
    "wet ground": Ground(1e-2, 30.0, "wet ground", _P527),
    "medium dry ground": Ground(1e-3, 15.0, "medium dry ground", _P527),
    "very dry ground": Ground(1e-4, 3.0, "very dry ground", _P527),
    "salt marsh": Ground(3e-2, 20.0, "salt marsh", _OWN),
    "moist clay": Ground(1e-2, 14.0, "moist clay", _OWN),
    "moist loam": Ground(5e-3, 13.0, "moist loam", _OWN),
    "sandy soil": Ground(1e-3, 5.0, "sandy soil", _OWN),
    "built-up land": Ground(1e-3, 5.0, "built-up land", _OWN),
}
"""Named grounds.  The P.527 entries are the Recommendation's categories, its curves read at about 1-3 MHz
(from memory, not verified against its figure: snrgain's reading, and no test uses them as a reference); the
others are soils described in snrgain's own words with their constants stated (moist loam, 5 mS/m and relative
permittivity 13, is the default).  Numeric constants remain the main form."""


@record
class GroundSpread:
    """How uncertain a ground's constants are: the 10 % and 90 % points of its conductivity [S/m] and relative
    permittivity [-], each taken as log-normal (its median is the geometric mean of the two points)."""

    conductivity_s_per_m: tuple[float, float]
    permittivity: tuple[float, float]
    source: str = "given by the user"

    def __post_init__(self):
        (s_lo, s_hi), (e_lo, e_hi) = self.conductivity_s_per_m, self.permittivity
        if not 0 < s_lo <= s_hi:
            raise ValueError(f"conductivity range must be > 0 and low <= high; got {s_lo!r} to {s_hi!r} S/m")
        if not 1.0 <= e_lo <= e_hi <= 100.0:
            raise ValueError(f"permittivity range must lie in [1, 100] with low <= high; got {e_lo!r} to {e_hi!r}")

    @property
    def is_zero(self) -> bool:
        (s_lo, s_hi), (e_lo, e_hi) = self.conductivity_s_per_m, self.permittivity
        return s_lo == s_hi and e_lo == e_hi


CLASS_SPREAD_FACTOR = {"conductivity": 2.5, "permittivity": 1.5}
"""The documented spread of a named ground class (snrgain's assumption, common practice): its 10 % and 90 %
points lie a factor of 2.5 below and above the class's conductivity and a factor of 1.5 around its permittivity
(clipped to [1, 100]), the scatter of soil within one class over a lot and over the seasons.  Water is narrower:
sea water a factor of 1.2 in conductivity and 1.1 in permittivity, fresh water 2 and 1.1."""

_WATER_SPREAD = {"sea water": (1.2, 1.1), "fresh water": (2.0, 1.1)}


def class_spread(name: str) -> GroundSpread:
    """The documented spread of a named ground (:data:`CLASS_SPREAD_FACTOR`)."""
    g = ground_by_name(name)
    fs, fe = _WATER_SPREAD.get(name, (CLASS_SPREAD_FACTOR["conductivity"], CLASS_SPREAD_FACTOR["permittivity"]))
    eps = (max(1.0, g.permittivity / fe), min(100.0, g.permittivity * fe))
    return GroundSpread(
        (g.conductivity_s_per_m / fs, g.conductivity_s_per_m * fs),
        eps,
        f"the documented spread of the class {name!r} (snrgain's assumption, common practice)",
    )


PERFECT = "perfect"
"""Name of the perfectly conducting ground (reflection +1 vertical, -1 horizontal)."""


def ground_by_name(name: str) -> Ground:
    """A named ground from :data:`GROUND_TYPES`; ValueError lists the names."""
    try:
        return GROUND_TYPES[name]
    except KeyError:
        valid = ", ".join(repr(k) for k in [*GROUND_TYPES, PERFECT])
        raise ValueError(
            f"ground must be one of {valid}, or given by conductivity and permittivity; got {name!r}"
        ) from None


def fresnel_vertical(elevation_rad, eps_c):
    """Fresnel reflection coefficient for vertical (TM, parallel) polarization.

    R_v = (eps_c sin(psi) - sqrt(eps_c - cos^2 psi)) / (eps_c sin(psi) + sqrt(eps_c - cos^2 psi)),
    psi the grazing angle (elevation) [rad], eps_c the complex relative
    permittivity (exp(+j omega t)).  The sign convention makes R_v = +1 over a
    perfect conductor (the image of a vertical current points the same way)
    and R_v -> -1 at grazing incidence over any finite ground.

    Reference: e.g. J. D. Kraus, "Antennas", 2nd ed., McGraw-Hill (1988),
    Section 16-3; or C. A. Balanis, "Advanced Engineering Electromagnetics",
    Wiley (1989), Section 5.3 (oblique incidence on a lossy half-space).
    """
    s = np.sin(elevation_rad)
    root = np.sqrt(eps_c - np.cos(elevation_rad) ** 2 + 0j)
    return (eps_c * s - root) / (eps_c * s + root)


def fresnel_horizontal(elevation_rad, eps_c):
    """Fresnel reflection coefficient for horizontal (TE, perpendicular) polarization.

    R_h = (sin(psi) - sqrt(eps_c - cos^2 psi)) / (sin(psi) + sqrt(eps_c - cos^2 psi));
    -1 over a perfect conductor and at grazing incidence.  Same references as
    :func:`fresnel_vertical`.
    """
    s = np.sin(elevation_rad)
    root = np.sqrt(eps_c - np.cos(elevation_rad) ** 2 + 0j)
    return (s - root) / (s + root)


def reflection_coefficients(ground: Ground | None, elevation_rad, freq_hz):
    """(R_v, R_h) over ``ground`` at elevation [rad]; ``None`` means perfect ground."""
    el = np.asarray(elevation_rad, dtype=float)
    if ground is None:
        return np.ones_like(el, dtype=complex), -np.ones_like(el, dtype=complex)
    eps_c = ground.complex_permittivity(freq_hz)
    s = np.sin(el)
    root = np.sqrt(eps_c - np.cos(el) ** 2 + 0j)  # shared by both coefficients (same forms as the functions above)
    es = eps_c * s
    return (es - root) / (es + root), (s - root) / (s + root)


def vertical_reflection(ground: Ground | None, sin_el, cos_el, freq_hz):
    """R_v over ``ground`` from the sines and cosines of the elevations (a pattern that has them already, and
    needs no R_h); the same form as :func:`reflection_coefficients`."""
    if ground is None:
        return np.ones_like(np.asarray(sin_el, dtype=float), dtype=complex)
    eps_c = ground.complex_permittivity(freq_hz)
    root = np.sqrt(eps_c - cos_el * cos_el + 0j)
    es = eps_c * sin_el
    return (es - root) / (es + root)


ROD_LENGTH_M = 1.2  # a 4 ft rod, the size common at the ends of receiving wires (common practice)
ROD_DIAMETER_M = 0.016  # 5/8 in


def rod_resistance_ohm(
    ground: Ground | None, length_m: float = ROD_LENGTH_M, diameter_m: float = ROD_DIAMETER_M
) -> float:
    """Resistance to earth [ohm] of one driven rod: R = (1 / 2 pi sigma L) [ln(4 L / a) - 1], a the rod's radius
    (H. B. Dwight, "Calculation of resistances to ground", Electrical Engineering 55 (1936) 1319).  The soil's
    conductivity only (its displacement current lowers R by a few per cent at 1.8 MHz in average soil); 0 over
    a perfect ground."""
    if ground is None:
        return 0.0
    if not (length_m > 0 and diameter_m > 0 and length_m > diameter_m):
        raise ValueError(f"a rod needs length > diameter > 0; got {length_m!r} m and {diameter_m!r} m")
    if not ground.conductivity_s_per_m > 0:
        raise ValueError("a ground rod in soil of zero conductivity has no finite resistance; give far_ground in ohms")
    a = diameter_m / 2
    return float((np.log(4 * length_m / a) - 1.0) / (2 * np.pi * ground.conductivity_s_per_m * length_m))
