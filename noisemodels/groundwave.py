"""The field of a small local noise source near the ground: a short dipole over a flat lossy earth.

A source on the lot (a switching supply, a lamp, a fence charger) is a
small radiator a metre or two above the soil.  Its field along the ground at
horizontal distance r is taken as that of a short vertical (or horizontal)
electric dipole on a flat homogeneous earth, in the form that joins the
dipole's near field to Norton's surface wave:

    E(r) = (1 / r) exp(-j k r) F(w) [ 1 + 1 / (j k r) + 1 / (j k r)^2 ],

relative to the far field of the same dipole over a perfect ground at 1 m.
The bracket is the dipole's own field on a perfectly conducting plane
(radiation, induction and quasi-static terms: e.g. C. A. Balanis, "Antenna
Theory", 3rd ed. (2005), eq. (4-10a), doubled by the image), times Norton's
attenuation function

    F(w) = 1 - j sqrt(pi w) exp(-w) erfc(j sqrt(w)),

with the numerical distance w = -j (k r / 2) Delta^2 for the normalised
surface impedance Delta = sqrt(n^2 - 1) / n^2 (vertical polarisation) or
sqrt(n^2 - 1) (horizontal), n^2 = eps_r - j sigma / (omega eps0) (K. A.
Norton, Proc. IRE 24 (1936) 1367 and 25 (1937) 1203; the Delta form is J.
R. Wait's, e.g. "The ancient and modern history of EM ground-wave
propagation", IEEE Antennas Propag. Mag. 40(5) (1998) 7-24, cited from
memory and not verified against it).  F's series and asymptote follow from
the error function's expansions (NIST DLMF 7.6.1, 7.12.1), which the tests
check.  Close in, where the induction and quasi-static terms rule, |w| is
small and F is near 1: the field is the quasi-static image result, the
earth's image coefficient for those terms (n^2 - 1) / (n^2 + 1) lying within
a few per cent of 1 over any soil at these frequencies (P. R. Bannister's
quasi-static image theory, from memory; attribution not verified); far out F takes the field over to
Norton's surface wave, 1 / r^2 beyond the numerical distance 1.

F(w) is evaluated with the Faddeeva function: exp(-w) erfc(j sqrt(w)) =
wofz(-sqrt(w)) (noisemodels.faddeeva.wofz, in numpy; checked against
scipy.special.wofz).  Published checks: F(0) = 1; for small |w|,
F = 1 - j sqrt(pi w) - 2 w + ...; for large |w|, F -> -1 / (2 w) (the
Sommerfeld-Norton asymptote: the field then falls as 1 / r^2).

Validity: distances from a few metres (the source's own size and height)
to tens of kilometres (a flat earth: at 30 km and 2 MHz the earth's
curvature is still negligible, P.368's flat-earth range); uniform soil;
source and receiving points near the ground (the height-gain of sources
higher than about 0.05 wavelength is not modelled).
"""

from __future__ import annotations

import numpy as np

from noisemodels.constants import C_M_PER_S, EPS0_F_PER_M
from noisemodels.faddeeva import wofz


def complex_permittivity(freq_hz: float, permittivity: float, conductivity_s_per_m: float) -> complex:
    """n^2 = eps_r - j sigma / (omega eps0) (phasors exp(+j omega t))."""
    return complex(permittivity, -conductivity_s_per_m / (2 * np.pi * freq_hz * EPS0_F_PER_M))


def surface_impedance(n2: complex, polarisation: str) -> complex:
    """Normalised surface impedance Delta: sqrt(n^2 - 1) / n^2 (vertical) or sqrt(n^2 - 1) (horizontal)."""
    root = np.sqrt(n2 - 1.0)
    if polarisation == "vertical":
        return root / n2
    if polarisation == "horizontal":
        return root
    raise ValueError(f"polarisation must be 'vertical' or 'horizontal'; got {polarisation!r}")


def numerical_distance(r_m, freq_hz: float, n2: complex, polarisation: str = "vertical"):
    """Norton's numerical distance w = -j (k r / 2) Delta^2 (complex, dimensionless)."""
    k = 2 * np.pi * freq_hz / C_M_PER_S
    return -0.5j * k * np.asarray(r_m, dtype=float) * surface_impedance(n2, polarisation) ** 2


def attenuation(w):
    """Norton's attenuation function F(w) = 1 - j sqrt(pi w) exp(-w) erfc(j sqrt(w)) (complex)."""
    w = np.asarray(w, dtype=complex)
    s = np.sqrt(w)
    return 1.0 - 1j * np.sqrt(np.pi) * s * wofz(-s)


def dipole_field(
    r_m,
    freq_hz: float,
    *,
    permittivity: float | None,
    conductivity_s_per_m: float | None,
    polarisation: str = "vertical",
):
    """Complex field of a small dipole at horizontal distance ``r_m`` [m] along the ground, relative to the
    dipole's far field over a perfect ground at 1 m (module docstring).  ``permittivity`` None: perfect ground."""
    r = np.asarray(r_m, dtype=float)
    if np.any(r <= 0):
        raise ValueError("distance from a local source must be above 0 m")
    k = 2 * np.pi * freq_hz / C_M_PER_S
    if permittivity is None:
        f = 1.0
    else:
        n2 = complex_permittivity(freq_hz, permittivity, conductivity_s_per_m)
        f = attenuation(numerical_distance(r, freq_hz, n2, polarisation))
    jkr = 1j * k * r
    return np.exp(-jkr) / r * f * (1.0 + 1.0 / jkr + 1.0 / jkr**2)
