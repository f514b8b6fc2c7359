"""The two Bessel-function values the line models need, in plain numpy on their usual arguments (scipy.special is
a 0.2-0.3 s import that a `rank` would otherwise pay for two numbers).

- ``j0_over_j1(z)``: J0(z) / J1(z) for complex z (a round wire's internal impedance, z = (1 - j) a / delta), from
  the continued fraction J1 / J0 = z / (2 - z^2 / (4 - z^2 / (6 - ...))) (the recurrence J_{n-1} + J_{n+1} =
  (2 n / z) J_n divided through; Gauss's continued fraction, e.g. W. H. Press et al., "Numerical Recipes", 3rd ed.
  (2007), Section 6.6, "CF1"), summed from a fixed depth upward (its tail taken as 0 at |z| + 50 terms; within
  2e-15 of scipy on the skin-effect line, 3e-15 off it, where the modified Lentz method of the same book, Section
  5.2, summed to a stop left 1e-14 and took twice the time).  It converges for every z once the terms pass |z|.
- ``k0(z)``, ``k0_k1(z)``: K0(z) (and K1(z)) for complex z with Re z >= 0, by the ascending series (M. Abramowitz
  and I. A. Stegun, "Handbook of Mathematical Functions" (1964), 9.6.13; K1 = -K0' termwise, I0' = I1) for
  |z| <= 2, where no digits are lost to cancellation beyond a factor exp(2 |z|); larger arguments by Temme's
  continued fraction for K1 / K0 summed with Steed's algorithm (N. M. Temme, "On the numerical evaluation of the
  modified Bessel function of the third kind", J. Comput. Phys. 19 (1975) 324-337; for complex arguments
  I. J. Thompson and A. R. Barnett, Comput. Phys. Commun. 47 (1987) 245-257; "Numerical Recipes", 3rd ed.,
  Section 6.6, "CF2"), which needs no scipy.special.

Both are checked against scipy.special (tests/test_bessel.py).
"""

from __future__ import annotations

import cmath

EULER_GAMMA = 0.57721566490153286061
"""Euler's constant (Abramowitz and Stegun, 1.1; the digits also equal numpy.euler_gamma's)."""

SERIES_LIMIT = 2.0
"""|z| up to which K0 is summed from its ascending series."""


def j0_over_j1(z: complex) -> complex:
    """J0(z) / J1(z) of a complex z (not at a zero of J1), by the continued fraction of the module docstring, summed
    from its tail: r_n = J_n / J_(n-1) = z / (2 n - z r_(n+1)) from r_N = 0 down to r_1 = J1 / J0 (the recurrence run
    in the direction in which J_n is its minimal solution, so errors shrink on the way down).  Past n = |z| each step
    shrinks the error taken at r_N by a factor of at least about 0.44, so N = |z| + 50 leaves it below 1e-17."""
    z = complex(z)
    if z == 0:
        raise ValueError("J0/J1 is infinite at z = 0")
    r = 0j
    for n in range(int(abs(z)) + 50, 0, -1):
        r = z / (2.0 * n - z * r)
    return 1.0 / r


def k0(z) -> complex:
    """K0(z) [-] for complex z, Re z >= 0 (module docstring)."""
    z = complex(z)
    if z == 0:
        raise ValueError("K0 is infinite at z = 0")
    if abs(z) > SERIES_LIMIT:
        return _k0_k1_fraction(z)[0]
    return _k0_k1_series(z, slope=False)[0]


def k0_k1(z) -> tuple[complex, complex]:
    """(K0(z), K1(z)) [-] for complex z, Re z >= 0 (module docstring); K0 the same number :func:`k0` gives."""
    z = complex(z)
    if z == 0:
        raise ValueError("K0 and K1 are infinite at z = 0")
    if abs(z) > SERIES_LIMIT:
        return _k0_k1_fraction(z)
    return _k0_k1_series(z, slope=True)


def _k0_k1_series(z: complex, *, slope: bool) -> tuple[complex, complex]:
    """The ascending series: with t_k = (z^2 / 4)^k / (k!)^2 and H_k the harmonic numbers,
    K0 = -(ln(z / 2) + gamma_E) I0 + sum H_k t_k, I0 = sum t_k, and
    K1 = I0 / z + (ln(z / 2) + gamma_E) I1 - (2 / z) sum k H_k t_k, I1 = (2 / z) sum k t_k (``slope``; else nan)."""
    q = 0.25 * z * z
    term, harmonic = 1 + 0j, 0.0
    i0, rest = 1 + 0j, 0j
    i1, rest1 = 0j, 0j
    for k in range(1, 60):  # harmonic >= 1 from k = 1 on: the stop below is |t_k| H_k < 1e-17 |I0|
        term *= q / (k * k)
        harmonic += 1.0 / k
        i0 += term
        weighted = term * harmonic
        rest += weighted
        i1 += k * term
        rest1 += k * weighted
        if abs(weighted) < 1e-17 * abs(i0):
            break
    log = cmath.log(0.5 * z) + EULER_GAMMA
    k0_value = complex(-log * i0 + rest)
    if not slope:
        return k0_value, complex("nan")
    return k0_value, complex((i0 + 2.0 * (log * i1 - rest1)) / z)


def _k0_k1_fraction(z: complex) -> tuple[complex, complex]:
    """Steed's algorithm for Temme's continued fraction (module docstring) at order 0: K0 = sqrt(pi / 2z) exp(-z) / s
    and K1 = K0 (z + 1/2 - h) / z, s and h the fraction's sums."""
    b = 2.0 * (1.0 + z)
    d = 1.0 / b
    h = delh = d
    q1, q2 = 0j, 1 + 0j
    a1 = 0.25
    q = c = a1
    a = -a1
    s = 1.0 + q * delh
    for i in range(1, 2000):
        a -= 2 * i
        c = -a * c / (i + 1.0)
        q1, q2 = q2, (q1 - b * q2) / a
        q += c * q2
        b += 2.0
        d = 1.0 / (b + a * d)
        delh = (b * d - 1.0) * delh
        h += delh
        dels = q * delh
        s += dels
        if abs(dels) < 1e-17 * abs(s):
            break
    else:  # pragma: no cover - the fraction converges for every |z| > 2 with Re z >= 0
        raise ArithmeticError(f"K0 continued fraction did not converge for z = {z}")
    k0_value = cmath.sqrt(cmath.pi / (2.0 * z)) * cmath.exp(-z) / s
    return complex(k0_value), complex(k0_value * (z + 0.5 - a1 * h) / z)
