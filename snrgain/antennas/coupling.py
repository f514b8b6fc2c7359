"""Mutual coupling of vertical monopoles: impedances by the induced-EMF method.

Each monopole of height h over the ground plane carries the sinusoidal
current I(z) = sin(k (H - z)), H = h + t (t the top loading, as in
:mod:`snrgain.antennas.vertical`), and is taken with its image as a dipole
from -h to h.  For a filament whose current obeys I'' + k^2 I = 0 on each
piece [z1, z2], integrating the potential twice by parts gives its field in
closed form (S. A. Schelkunoff and H. T. Friis, "Antennas: Theory and
Practice", Wiley (1952), Ch. 13; C. A. Balanis, "Antenna Theory", 3rd ed.
(2005), Section 8.6, eq. (8-53) for the dipole with t = 0):

    E_z(rho, z) = (-j eta / (4 pi k)) sum over pieces [ I(z') dG/dz' - I'(z') G ] from z1 to z2,
    G = exp(-j k R) / R,  R = sqrt(rho^2 + (z - z')^2).

The mutual impedance referred to the base currents (Balanis, eq. (8-62)) is

    Z_21 = -(1 / I_b^2) integral_0^h E_z21(d, z) I(z) dz,   I_b = sin(k H),

half that of the dipole pair, as a monopole over a ground plane is half its
image dipole.  The self impedance is the same integral at rho = the wire's
radius.  For two half-wave dipoles side by side this reproduces the closed
forms in sine and cosine integrals (Balanis, eq. (8-71)), which the tests
check, and over a perfect ground a quarter-wave monopole's self impedance
is 36.5 + j21.3 ohm (half the half-wave dipole's 73 + j42.5: Balanis,
Section 4.6; a further citation of Kraus, "Antennas", 2nd ed., Section 9-5,
was from memory and is dropped).

Validity: thin wires (radius much below the height and the spacing), the
currents sinusoidal (the induced-EMF assumption: good for elements up to
about 0.3 wavelength, where the currents of coupled elements stay close to
sinusoidal), and the ground taken as perfect for the near fields (the
radial system's loss is the elements' ``ground_loss``, added on the
diagonal).  Top loading makes the self reactance depend on the hat's own
geometry, which the model does not know; coupled feeds therefore take
elements without it.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from snrgain.physics.ground import C_M_PER_S, ETA0_OHM


def _green(k, rho, dz):
    """G = exp(-jkR)/R and dG/dz' for z - z' = dz."""
    r = np.sqrt(rho**2 + dz**2)
    g = np.exp(-1j * k * r) / r
    dg = (1 + 1j * k * r) * np.exp(-1j * k * r) * dz / r**3
    return g, dg


def field_z(k: float, height_m: float, top_m: float, rho_m: float, z_m):
    """E_z [V/m per unit current amplitude] at radial distance ``rho_m`` and heights ``z_m`` of a monopole of height
    ``height_m`` with top loading ``top_m`` and its image (current sin(k (H - |z'|)))."""
    z = np.asarray(z_m, dtype=float)
    h, big_h = height_m, height_m + top_m
    kt = k * top_m
    g_top, dg_top = _green(k, rho_m, z - h)
    g_bot, dg_bot = _green(k, rho_m, z + h)
    g_mid, _ = _green(k, rho_m, z)
    bracket = (
        np.sin(kt) * dg_top
        + k * np.cos(kt) * g_top
        - np.sin(kt) * dg_bot
        + k * np.cos(kt) * g_bot
        - 2 * k * np.cos(k * big_h) * g_mid
    )
    return -1j * ETA0_OHM / (4 * np.pi * k) * bracket


@lru_cache(maxsize=4)
def _gauss_legendre(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Gauss-Legendre nodes and weights on [-1, 1]: Newton's iteration on the Legendre recurrence from the
    Chebyshev-like first guesses (W. H. Press et al., "Numerical Recipes", 3rd ed. (2007), Section 4.6.1)."""
    x = np.cos(np.pi * (np.arange(1, n + 1) - 0.25) / (n + 0.5))
    for _ in range(100):
        p0, p1 = np.ones_like(x), x
        for j in range(2, n + 1):
            p0, p1 = p1, ((2 * j - 1) * x * p1 - (j - 1) * p0) / j
        dp = n * (x * p1 - p0) / (x * x - 1)
        step = p1 / dp
        x = x - step
        if np.max(np.abs(step)) < 1e-15:
            break
    p0, p1 = np.ones_like(x), x
    for j in range(2, n + 1):
        p0, p1 = p1, ((2 * j - 1) * x * p1 - (j - 1) * p0) / j
    dp = n * (x * p1 - p0) / (x * x - 1)
    return x, 2 / ((1 - x * x) * dp * dp)


_NODES_PER_PANEL = 12


def _panels(height_m: float, rho_m: float, wavelength_m: float) -> np.ndarray:
    """Panel edges on [0, height_m] for the impedance integral: equal panels of at most an eighth of a wavelength
    (and a quarter of the height), each end panel cut geometrically (ratio 2) down to ``rho_m``, where the
    integrand's poles at z = +-j rho and h +- j rho sit (so every panel lies at least its own length from the
    nearest pole, and Gauss-Legendre converges geometrically on each)."""
    n = max(4, int(np.ceil(height_m / (wavelength_m / 8))))
    edges = np.linspace(0.0, height_m, n + 1)
    first = edges[1]
    grade = rho_m * 2.0 ** np.arange(0, 64)
    grade = grade[grade < first]
    # sorted and deduplicated by hand: a plain np.unique would load numpy.ma (about 15 ms of a command's start)
    edges = np.sort(np.concatenate([edges, grade, height_m - grade]))
    return edges[np.concatenate([[True], edges[1:] != edges[:-1]])]


@lru_cache(maxsize=512)
def monopole_impedance(freq_hz: float, height_m: float, top_m: float, rho_m: float) -> complex:
    """Mutual impedance [ohm] between two equal monopoles ``rho_m`` apart over a perfect ground, referred to their
    base currents; with ``rho_m`` the wire radius, the self impedance.

    The integral of E_z21 I over the height by Gauss-Legendre on panels graded toward both ends (``_panels``); it
    agrees with adaptive quadrature to 1e-9 relative (tests/test_coupling.py)."""
    k = 2 * np.pi * freq_hz / C_M_PER_S
    big_h = height_m + top_m
    i_b = np.sin(k * big_h)
    if abs(i_b) < 1e-6:
        raise ValueError("coupling: the base current vanishes (an element a half wave long); no impedance to give")
    x, w = _gauss_legendre(_NODES_PER_PANEL)
    edges = _panels(height_m, rho_m, 2 * np.pi / k)
    a, b = edges[:-1, None], edges[1:, None]
    z = (0.5 * (b - a) * x + 0.5 * (a + b)).ravel()
    wz = (0.5 * (b - a) * w).ravel()
    total = np.sum(wz * field_z(k, height_m, top_m, rho_m, z) * np.sin(k * (big_h - z)))
    return complex(-total / i_b**2)


def impedance_matrix(freq_hz: float, positions_m, height_m: float, top_m: float, radius_m: float) -> np.ndarray:
    """The open-circuit impedance matrix [ohm] of equal monopoles at ``positions_m`` (N x 2, east and north),
    symmetric (reciprocity); self terms at the wire radius."""
    p = np.asarray(positions_m, dtype=float)
    n = len(p)
    z = np.empty((n, n), dtype=complex)
    for i in range(n):
        for j in range(i, n):
            d = float(np.hypot(*(p[i] - p[j])))
            rho = radius_m if i == j else round(d, 9)
            z[i, j] = z[j, i] = monopole_impedance(float(freq_hz), float(height_m), float(top_m), rho)
    return z
