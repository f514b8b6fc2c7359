"""The two Bessel-function values the line models need, in plain numpy on their usual arguments (scipy.special is
a 0.2-0.3 s import that a `rank` would otherwise pay for two numbers).

- ``j0_over_j1(z)``: J0(z) / J1(z) for complex z (a round wire's internal impedance, z = (1 - j) a / delta), from
  the continued fraction J1 / J0 = z / (2 - z^2 / (4 - z^2 / (6 - ...))) (the recurrence J_{n-1} + J_{n+1} =
  (2 n / z) J_n divided through; Gauss's continued fraction, e.g. W. H. Press et al., "Numerical Recipes", 3rd ed.
  (2007), Section 6.6, "CF1"), summed by the modified Lentz method (same book, Section 5.2).  It converges for
  every z once the terms pass |z|.
- ``k0(z)``: K0(z) for complex z with Re z >= 0, by its ascending series (M. Abramowitz and I. A. Stegun,
  "Handbook of Mathematical Functions" (1964), 9.6.13) for |z| <= 2, where no digits are lost to cancellation
  beyond a factor exp(2 |z|); larger arguments are handed to scipy.special.kv (imported then).

Both are checked against scipy.special (tests/test_bessel.py).
"""

from __future__ import annotations

import cmath

EULER_GAMMA = 0.57721566490153286061
"""Euler's constant (Abramowitz and Stegun, 1.1; the digits also equal numpy.euler_gamma's)."""

SERIES_LIMIT = 2.0
"""|z| up to which K0 is summed from its ascending series."""


def j0_over_j1(z: complex) -> complex:
    """J0(z) / J1(z) of a complex z (not at a zero of J1), by the continued fraction of the module docstring."""
    z = complex(z)
    if z == 0:
        raise ValueError("J0/J1 is infinite at z = 0")
    tiny = 1e-300
    z2 = z * z
    # J1/J0 = a1 / (b1 + a2 / (b2 + ...)), a1 = z, a_n = -z^2 (n >= 2), b_n = 2 n; modified Lentz from f = tiny.
    f, c, d = tiny, tiny, 0j
    for n in range(1, 100_000):
        a = z if n == 1 else -z2
        b = 2.0 * n
        d = b + a * d
        d = tiny if d == 0 else d
        c = b + a / c
        c = tiny if c == 0 else c
        d = 1.0 / d
        delta = c * d
        f *= delta
        if n > abs(z) and abs(delta - 1.0) < 1e-16:
            break
    else:  # pragma: no cover - the fraction converges for any argument the models give
        raise ArithmeticError(f"J1/J0 continued fraction did not converge for z = {z}")
    return 1.0 / f


def k0(z) -> complex:
    """K0(z) [-] for complex z, Re z >= 0 (module docstring)."""
    z = complex(z)
    if z == 0:
        raise ValueError("K0 is infinite at z = 0")
    if abs(z) > SERIES_LIMIT:
        from scipy.special import kv  # slow to import: only for an argument beyond the series' range

        return complex(kv(0, z))
    q = 0.25 * z * z
    term, harmonic = 1 + 0j, 0.0
    i0, rest = 1 + 0j, 0j
    for k in range(1, 60):
        term *= q / (k * k)
        harmonic += 1.0 / k
        i0 += term
        rest += term * harmonic
        if abs(term) * max(harmonic, 1.0) < 1e-17 * abs(i0):
            break
    return complex(-(cmath.log(0.5 * z) + EULER_GAMMA) * i0 + rest)
