"""The exact propagation constant of a thin wire over or in a lossy half-space (the full-wave modal equation).

A wire of radius a at height h over a homogeneous earth (k1 = n k0, n^2 =
eps_r - j sigma / (omega eps0)) carries a current I exp(-gamma x).  With
Sommerfeld's Hertz potentials for a horizontal current over the interface
(A. Sommerfeld, "Partial Differential Equations in Physics" (1949),
Section 33; the line-source form of J. R. Wait, "Theory of wave propagation
along a thin wire parallel to an interface", Radio Science 7 (1972)
675-679), the axial field at the wire's surface, set equal to the wire's
internal impedance times its current, gives the modal equation, derived
here in the spectral domain (u_i = sqrt(lambda^2 + kappa_i^2),
kappa_i^2 = -(gamma^2 + k_i^2), Re u_i >= 0):

    gamma^2 [L(gamma) + Q(gamma)] = 2 pi j omega eps0 Z'(gamma),
    Z'(gamma) = Z_int + (j omega mu0 / 2 pi) [L(gamma) + 2 P(gamma)],
    L = K0(kappa0 a) - K0(2 kappa0 h)                      (the wire over its image),
    P = int_0^inf exp(-2 u0 h) / (u0 + u1) dlambda          (the earth-return correction),
    Q = 2 P - (2 / k0^2) int_0^inf u0 (u0 - u1) exp(-2 u0 h) / (n^2 u0 + u1) dlambda
                                                            (the earth's admittance correction).

So gamma^2 = Z' Y' with Y' = 2 pi j omega eps0 / (L + Q): the series
impedance of the current and a shunt admittance that the earth's own
conduction lowers, and Z0 = Z' / gamma follows from the same solution.
Over a perfect ground (n -> infinity) P and Q vanish, L -> ln(2h/a), and
gamma = j k0 (velocity factor 1) with Z0 = 60 ln(2h/a) ohm for a lossless
wire: the limit the tests check.  The root is that of the fixed-point
equation gamma = sqrt(Z'(gamma) Y'(gamma)), started from the closed-form line
constants (snrgain.physics.lines): the integrals change slowly with gamma, so the
plain iteration converges (linearly, 8-30 steps to 1e-12); the secant method on
the same equation reaches that root in 4-6 evaluations of the integrals, and
Newton's method, the integrals' slopes in gamma summed on the same nodes as their
values, in 3-4 (:func:`_settle`).

Where the iteration does not settle (a nearly lossless ground, where the
mode leaks into the earth), :func:`wire_over_earth` returns None and
snrgain.physics.lines keeps the closed form.

A wire buried in the earth (:func:`wire_in_earth`) has the same
construction with the media exchanged: the line source in the earth and its
TE and TM reflections at the surface seen from below; deep down it is King's
insulated wire in a dissipative medium.  The mode is not the whole current of
a wire driven at one point: :func:`gap_current` sums the kernel over its
spectrum (the mode's pole taken out analytically, the rest numerically), which
is what a current computed along a wire by NEC-2 shows.

The quasi-TEM closed form of snrgain.physics.lines (Deri's complex-depth
impedance, the image capacitance) is what this reduces to when the earth's
admittance term Q is dropped and P is approximated: close over good ground,
off by a few per cent in velocity factor and tens of per cent in
attenuation over poor ground at the higher bands (measured in the tests).
"""

from __future__ import annotations

import cmath
import math
from functools import lru_cache

import numpy as np

from noisemodels.groundwave import complex_permittivity
from snrgain.physics.ground import C_M_PER_S, EPS0_F_PER_M, MU0_H_PER_M
from snrgain.physics.quadrature import gauss_legendre, stacked_rules


def _sqrt_re(z):
    """The square root with non-negative real part: numpy's principal complex root (C99 csqrt), whose real part
    is never negative."""
    return np.sqrt(z + 0j)


def _cquad(f, a, b) -> complex:
    from scipy import integrate  # slow to import: here, when needed

    re = integrate.quad(lambda t: np.real(f(t)), a, b, limit=400, epsabs=0, epsrel=1e-10)[0]
    im = integrate.quad(lambda t: np.imag(f(t)), a, b, limit=400, epsabs=0, epsrel=1e-10)[0]
    return complex(re, im)


FINE_NODES = 160
"""Gauss-Legendre points per piece of the earth integrals: the rule every mode is settled and checked with."""
CHECK_NODES = 36
"""Points per piece of the rule that checks a root the coarse rule found (:func:`_settle`).  36 rather than 48: over
3680 wires (bare ones 0.3-10 m up with five radii, insulated ones on and over the soil, ten grounds from 0.1 mS/m to
sea water, 1.8-7.3 MHz) the roots move by at most 1.9e-13, lie as close to the fine rule's as before (1.8e-11), and
the coarse rule falls back to the fine one on the same wires (one more of 3680); the Beverage's mode 5% faster."""
FINISH_FROM = 6e-3
"""|F| / |gamma| below which a Newton step is followed by Halley's finish (:func:`_newton`, :func:`_settle`): on the
tests' grid of 1029 wires it succeeds from 93% of the steps that start below 6e-3 and from a third of those
between 6e-3 and 3e-2 (the rest go on as before, one evaluation lost)."""
COARSE_NODES = 32
"""Points per piece while the secant closes in (1e-15 of the fine rule over lossy ground; only a nearly lossless
earth, its branch point near the real axis, needs more, and the fine rule then finishes the search)."""


def _pair(parts, edges, adaptive: bool, nodes: int = FINE_NODES) -> tuple[complex, complex]:
    """The integrals of the two integrands ``parts(lam) -> (f1, f2)`` over [edges[0], edges[-1]]: ``nodes``-point
    Gauss-Legendre on each piece between edges, all pieces evaluated in one pass (each node's square roots
    computed once for both); ``adaptive`` uses scipy's adaptive quadrature piece by piece instead."""
    pieces = [(a, b) for a, b in zip(edges[:-1], edges[1:]) if b > a]
    if adaptive:
        one = sum(_cquad(lambda t: parts(t)[0], a, b) for a, b in pieces)
        two = sum(_cquad(lambda t: parts(t)[1], a, b) for a, b in pieces)
        return complex(one), complex(two)
    t, weights = _nodes(pieces, nodes)
    f1, f2 = parts(t)
    return complex(np.dot(weights, f1)), complex(np.dot(weights, f2))


def _nodes(pieces, nodes: int) -> tuple[np.ndarray, np.ndarray]:
    """Gauss-Legendre points and weights of ``nodes`` points on each piece (a, b), all pieces in one array."""
    x, w = gauss_legendre(nodes)
    lo = np.array([a for a, _ in pieces])[:, None]
    half = 0.5 * (np.array([b for _, b in pieces])[:, None] - lo)
    return (half * (x + 1.0) + lo).ravel(), (half * w).ravel()


def _pieces(marks, top):
    """Integration edges on [0, top]: 0.3x and 3x each mark (where an integrand changes scale)."""
    edges = {0.0, top}
    for m in marks:
        m = min(max(m, 1e-9), top)
        edges |= {min(0.3 * m, top), min(3.0 * m, top)}
    return sorted(edges)


def earth_integrals(
    gamma: complex,
    freq_hz: float,
    height_m: float,
    n2: complex,
    *,
    offset_m: float = 0.0,
    adaptive: bool = False,
    nodes: int = FINE_NODES,
) -> tuple[complex, complex]:
    """(P, Q) of the module docstring for a propagation constant ``gamma`` [1/m], the field taken ``offset_m``
    to the side of the axis (the wire's outer surface; cos(lambda offset) in the integrands): Gauss-Legendre on
    pieces split where the integrands change scale (the wire's 1 / 2h, the earth's |k1|, a small kappa0);
    ``adaptive`` uses scipy's adaptive quadrature instead (the tests check one against the other)."""
    k0 = 2 * np.pi * freq_hz / C_M_PER_S
    kap0 = -(gamma**2 + k0**2)
    kap1 = -(gamma**2 + n2 * k0**2)
    h = height_m

    rho = offset_m

    def parts(lam):
        return _earth_integrands(lam * lam, kap0, kap1, h, n2, np.cos(lam * rho) if rho else None)

    total_p, total_q = _pair(parts, _earth_edges(kap0, k0, h, n2), adaptive, nodes)
    return total_p, 2 * total_p - 2 * total_q / k0**2


def _earth_edges(kap0: complex, k0: float, height_m: float, n2: complex) -> list[float]:
    """The integration pieces' edges of :func:`earth_integrals`.  The integrands fall as exp(-2 lambda h): integrate
    to 20 / h.  Break points: the scale of kappa0 (where u0 turns from kappa0 to lambda), the earth's |k1|, 1 / 2h."""
    return _pieces((math.sqrt(abs(kap0)), math.sqrt(abs(n2)) * k0, 0.5 / height_m), 20.0 / height_m)


def _earth_integrands(lam2, kap0: complex, kap1: complex, h: float, n2: complex, cos_offset):
    """The two integrands of P and of Q's integral at lambda^2 = ``lam2`` (``cos_offset``: cos(lambda offset), or
    None on the axis)."""
    u0, u1 = np.sqrt(lam2 + kap0), np.sqrt(lam2 + kap1)  # complex already (kap0, kap1 are): :func:`_sqrt_re`
    common = np.exp((-2.0 * h) * u0)
    if cos_offset is not None:
        common = common * cos_offset
    return common / (u0 + u1), u0 * (u0 - u1) * common / (n2 * u0 + u1)


def _fixed_rule(gamma: complex, freq_hz: float, height_m: float, n2: complex, offset_m: float, nodes: int):
    """(lambda^2, weights, cos(lambda offset) or None) of :func:`earth_integrals`' rule with its pieces set at
    ``gamma``: the secant's coarse steps keep one rule (the edges only say where to put points) and pay for the
    arithmetic alone (:func:`_earth_on`)."""
    k0 = 2 * np.pi * freq_hz / C_M_PER_S
    return _rule_on(_earth_edges(-(gamma**2 + k0**2), k0, height_m, n2), nodes, offset_m)


def _rule_on(edges, nodes: int, offset_m: float):
    """The rule of :func:`_fixed_rule` on given ``edges`` (sorted, distinct: every piece has a length)."""
    x, w = gauss_legendre(nodes)
    e = np.array(edges, dtype=float)
    lo = e[:-1, None]
    half = 0.5 * (e[1:, None] - lo)
    t = (half * (x + 1.0) + lo).ravel()
    return t * t, (half * w).ravel(), (np.cos(t * offset_m) if offset_m else None)


def _rules_on(edges, counts: tuple[int, ...], offset_m: float):
    """The rules of :func:`_rule_on` with ``counts`` points a piece on the same ``edges``, as one rule: (lambda^2 of all
    their nodes, rule after rule, weights of shape (nodes, len(counts)) whose column i is rule i's (zero at the other
    rules' nodes), cos(lambda offset) or None); one pass of :func:`_earth_sums` sums every rule, and
    :func:`_rule_of` takes one rule out of it (the same numbers :func:`_rule_on` gives)."""
    e = np.array(edges, dtype=float)
    lo = e[:-1]
    half = 0.5 * (e[1:] - lo)
    piece, shifted, unit = stacked_rules(counts, lo.size)  # the standard nodes, made once
    half = half[piece]
    t = half * shifted
    t += lo[piece]
    split = unit * half[:, None]
    return t * t, split, (np.cos(t * offset_m) if offset_m else None)


def _rule_of(rules, counts: tuple[int, ...], i: int):
    """Rule i of a rule of several (:func:`_rules_on` with ``counts``), alone: as :func:`_rule_on` makes it."""
    t2, weights, cos_offset = rules
    pieces = t2.size // sum(counts)
    lo = pieces * sum(counts[:i])
    hi = lo + pieces * counts[i]
    return t2[lo:hi], weights[lo:hi, i].copy(), (None if cos_offset is None else cos_offset[lo:hi])


def _earth_on(rule, gamma: complex, k0: float, height_m: float, n2: complex) -> tuple[complex, complex]:
    """(P, Q) of :func:`earth_integrals` on a rule of :func:`_fixed_rule`."""
    return _earth_sums(rule, gamma, k0, height_m, n2, slopes=False)[:2]


def _earth_sums(rule, gamma: complex, k0: float, height_m: float, n2: complex, *, slopes: bool):
    """(P, Q) on a rule of :func:`_fixed_rule`, with ``slopes`` also (dP/dgamma, dQ/dgamma) from the same nodes; on a
    rule of several (:func:`_rules_on`, 2-D weights) a list of those tuples, one per rule.

    With c = u0^2 - u1^2 = (n^2 - 1) k0^2, s = u0 + u1, D = n^2 u0 + u1 and e = exp(-2 u0 h), the integrands of the
    module docstring are f1 = e / s and f2 = u0 (u0 - u1) e / D = c u0 v, v = f1 / D (u0 - u1 = c / s: no
    cancellation where lambda is large).  With du_i/dgamma = -gamma / u_i their slopes are
        df1/dgamma = gamma f1 (2h + 1/u1) / u0,
        df2/dgamma = c gamma v [2h + 1/u1 + c / (u0 u1 D)]."""
    t2, weights, cos_offset = rule
    g2 = gamma * gamma
    c = (n2 - 1.0) * (k0 * k0)
    u = np.sqrt(t2 + np.array([[-(g2 + k0 * k0)], [-(g2 + n2 * (k0 * k0))]]))  # Re >= 0: :func:`_sqrt_re`
    u0, u1 = u
    f = np.empty((5 if slopes else 2, t2.size), dtype=complex)
    e = np.multiply(u0, -2.0 * height_m, out=f[1])
    np.exp(e, out=e)
    if cos_offset is not None:
        e *= cos_offset
    np.divide(e, u0 + u1, out=f[0])
    den = n2 * u0
    den += u1
    v = np.divide(f[0], den, out=f[1])
    if slopes:
        inv0, inv1 = 1.0 / u
        two_h = inv1 + 2.0 * height_m
        np.multiply(f[0], inv0, out=f[2])
        f[2] *= two_h
        np.multiply(v, two_h, out=f[3])
        np.multiply(inv0, inv1, out=f[4])
        f[4] *= v
        f[4] /= den
    v *= u0
    sums = (f @ weights).tolist()
    if weights.ndim == 2:  # several rules (:func:`_rules_on`): a tuple per rule
        return [_integrals_of(col, gamma, c, k0, slopes) for col in zip(*sums)]
    return _integrals_of(sums, gamma, c, k0, slopes)


def _integrals_of(sums, gamma: complex, c: complex, k0: float, slopes: bool):
    """(P, Q[, dP, dQ]) of :func:`_earth_sums` from the weighted sums of its integrands."""
    p = sums[0]
    q = 2 * p - 2 * c * sums[1] / k0**2
    if not slopes:
        return p, q
    dp = gamma * sums[2]
    return p, q, dp, 2 * dp - 2 * c * gamma * (sums[3] + c * sums[4]) / k0**2


def _earth_curves(rule, gamma: complex, k0: float, height_m: float, n2: complex, lo: int):
    """((P, Q) on the first rule, (P, Q, dP, dQ, d2P, d2Q) on the second) of a rule of two (:func:`_rules_on`) whose
    second rule's nodes start at ``lo``: :func:`_earth_sums` with the second derivatives in gamma on the second rule,
    from the same nodes.  With a = (2h + 1/u1) / u0, m = (n^2 / u0 + 1/u1) / D, k = c / (u0 u1 D) and
    b = 2h + 1/u1 + k (so df1 = gamma f1 a, df2 = c gamma v b; d(1/u_i)/dgamma = gamma / u_i^3, dD/dgamma =
    -gamma m D):
        d2f1 = f1 a + gamma^2 f1 [a (a + 1/u0^2) + 1 / (u1^3 u0)],
        d2f2 = c v b + c gamma^2 v [(a + m) b + 1/u1^3 + k (1/u0^2 + 1/u1^2 + m)]."""
    t2, weights, cos_offset = rule
    g2 = gamma * gamma
    kk = k0 * k0
    c = (n2 - 1.0) * kk
    u = np.sqrt(t2 + np.array([[-(g2 + kk)], [-(g2 + n2 * kk)]]))
    u0, u1 = u
    f = np.empty((2, t2.size), dtype=complex)
    e = np.multiply(u0, -2.0 * height_m, out=f[1])
    np.exp(e, out=e)
    if cos_offset is not None:
        e *= cos_offset
    f1 = np.divide(e, u0 + u1, out=f[0])
    den = n2 * u0
    den += u1
    v = np.divide(f1, den, out=f[1])
    f1, v, den = f1[lo:], v[lo:], den[lo:]  # the check rule's nodes
    inv = 1.0 / u[:, lo:]
    inv0, inv1 = inv
    inv0_2, inv1_2 = inv * inv
    inv01 = inv0 * inv1
    a = inv1 + 2.0 * height_m
    a *= inv0
    m = n2 * inv0
    m += inv1
    m /= den
    k = inv01 / den
    k *= c
    b = k + inv1
    b += 2.0 * height_m
    rows = np.empty((4, f1.size), dtype=complex)
    np.multiply(f1, a, out=rows[0])
    np.multiply(v, b, out=rows[1])
    curve = a + inv0_2
    curve *= a
    curve += inv1_2 * inv01
    np.multiply(f1, curve, out=rows[2])
    spread = inv0_2 + inv1_2
    spread += m
    spread *= k
    curve = a + m
    curve *= b
    curve += inv1_2 * inv1
    curve += spread
    np.multiply(v, curve, out=rows[3])
    f[1] *= u0  # v u0
    (s0, t0), (s1, t1) = (f @ weights).tolist()
    s2, s3, s4, s5 = (rows @ weights[lo:, 1]).tolist()
    p, dp, d2p = t0, gamma * s2, s2 + g2 * s4
    q = 2 * p - 2 * c * t1 / kk
    dq = 2 * dp - 2 * c * gamma * s3 / kk
    d2q = 2 * d2p - 2 * c * (s3 + g2 * s5) / kk
    return (s0, 2 * s0 - 2 * c * s1 / kk), (p, q, dp, dq, d2p, d2q)


def _image_curve(gamma, k0, radius_m, height_m) -> tuple[complex, complex, complex]:
    """(:func:`_image_term`, its first and second derivatives in gamma): with x = kappa0 r, d/dgamma K0(x) =
    (gamma / kappa0) r K1(x) and d2/dgamma2 K0(x) = r K1(x) / kappa0 + gamma^2 r^2 K0(x) / kappa0^2
    + 2 gamma^2 r K1(x) / kappa0^3 (K1' = -K0 - K1 / x), at r and at r' (0 where kappa0 r' < 1e-8)."""
    kap = cmath.sqrt(-(gamma**2 + k0**2))
    far = math.hypot(radius_m, 2 * height_m)
    if abs(kap) * far < 1e-8:
        return complex(math.log(far / radius_m)), 0j, 0j
    from snrgain.physics.bessel import k0_k1

    g2 = gamma * gamma
    out = []
    for r in (radius_m, far):
        b0, b1 = k0_k1(kap * r)
        out.append((b0, gamma / kap * r * b1, r * b1 / kap + g2 * r * r * b0 / (kap * kap) + 2 * g2 * r * b1 / kap**3))
    (n0, n1, n2_), (f0, f1, f2) = out
    return n0 - f0, n1 - f1, n2_ - f2


def _image_slope(gamma, k0, radius_m, height_m) -> tuple[complex, complex]:
    """(:func:`_image_term`, its slope d/dgamma): with kappa0 = sqrt(-(gamma^2 + k0^2)), dK0(kappa r)/dgamma =
    (gamma / kappa) r K1(kappa r), so the slope is (gamma / kappa^2) [z K1(z) at kappa r - z K1(z) at kappa r']
    (both near 1 for a small kappa; the slope only steers Newton's steps, so the digits that cancel do not matter,
    and where kappa0 r' < 1e-8 it is taken as 0)."""
    kap = cmath.sqrt(-(gamma**2 + k0**2))
    far = math.hypot(radius_m, 2 * height_m)
    if abs(kap) * far < 1e-8:
        return complex(math.log(far / radius_m)), 0j
    from snrgain.physics.bessel import k0_k1

    near_k0, near_k1 = k0_k1(kap * radius_m)
    far_k0, far_k1 = k0_k1(kap * far)
    slope = gamma / kap * (radius_m * near_k1 - far * far_k1)
    return near_k0 - far_k0, slope


def _image_term(gamma, k0, radius_m, height_m) -> complex:
    """K0(kappa0 r) - K0(kappa0 r'), r the radius the field is taken at, r' its distance from the image."""
    kap = cmath.sqrt(-(gamma**2 + k0**2))  # a scalar: cmath's principal root has Re >= 0 too (:func:`_sqrt_re`)
    far = math.hypot(radius_m, 2 * height_m)
    if abs(kap) * far < 1e-8:
        return complex(math.log(far / radius_m))
    from snrgain.physics.bessel import k0 as bessel_k0

    return bessel_k0(kap * radius_m) - bessel_k0(kap * far)


def _forward(zy: complex) -> complex:
    """sqrt(Z' Y') on the forward wave's branch (beta > 0)."""
    new = cmath.sqrt(zy)
    return -new if new.imag < 0 else new


def _secant(step, start: complex, tol: float):
    """(root's (g, Z', Y'), slope of F at it) of the secant method on F(gamma) = g(gamma) - gamma from ``start``
    (the first point's step gives the second); (None, None) where it does not settle in 30 steps."""
    g0 = start
    n0, z0, y0 = step(g0)
    f0 = n0 - g0
    if abs(f0) < tol * abs(g0):
        return (n0, z0, y0), None
    g1 = n0
    for _ in range(30):
        n1, z1, y1 = step(g1)
        f1 = n1 - g1
        if f1 == f0:
            break
        slope = (f1 - f0) / (g1 - g0)
        if abs(f1) < tol * abs(g1):
            return (n1, z1, y1), slope
        g0, f0, g1 = g1, f1, g1 - f1 / slope
    return None, None


def _newton(step_slope, start: complex, tol: float, steps: int = 12, finish=None):
    """Newton's method on F(gamma) = g(gamma) - gamma from ``start``, ``step_slope(gamma) -> (g, dg/dgamma, dZ'/dgamma,
    dY'/dgamma)`` on the coarse rule: ("coarse", gamma, slope of g there) at its root, or None where it does not
    settle in ``steps`` steps.

    It stops at an evaluated gamma with |F| < tol |gamma| (returning g there), or, once two steps have shown the
    quadratic convergence |F_next| ~ C |F|^2, where C |F|^2 lies below tol |gamma| / 100: the next step's gamma is
    then returned without evaluating it (the caller evaluates it anyway, on the checking rule).  ``finish`` (a pair
    of callables, :func:`_settle`) may end the search earlier on the checking rule, its answer returned where it
    gives one: ``finish[0](gamma, slope, |F|)`` after the first step, where it starts from |F| < FINISH_FROM |gamma|
    (Halley's step; where it is not taken it may give ("step", g, dg/dgamma, dZ', dY') at that gamma, on the check
    rule, for the next step); ``finish[1](gamma, slope, dZ', dY', drift)`` where C |F|^2 lies below 1e-8 |gamma|
    (one more Newton step along the slopes known; ``drift`` estimates how much g's slope changes over it: the last
    two steps' change, scaled by the steps' ratio), where its test is expected to pass.  Each is tried once."""
    early, late = finish if finish is not None else (None, None)
    gamma, last, before, known = start, None, None, None
    for k in range(steps):
        g, slope, dz, dy = step_slope(gamma) if known is None else known
        known = None
        f = g - gamma
        size = abs(f)
        if size < tol * abs(gamma):
            return "coarse", g, slope
        if slope == 1.0 or not cmath.isfinite(slope):
            break
        step = -f / (slope - 1.0)
        scale = abs(gamma)
        gamma = gamma + step
        if k == 0 and early is not None and size < FINISH_FROM * scale:
            done = early(gamma, slope, size)
            if done is not None and done[0] == "step":  # not taken: its evaluation serves as the next step's
                known = done[1:]
            elif done is not None:
                return done
        if last is not None and size < last:
            ahead = size * size / (last * last) * size  # |F| expected at the new gamma
            if ahead < 1e-2 * tol * abs(gamma):
                return "coarse", gamma, slope
            drift = abs(slope - before[0]) * abs(step) / abs(before[1])
            if late is not None and ahead < 1e-8 * abs(gamma) and ahead * drift < 1e-2 * tol * abs(gamma):
                done = late(gamma, slope, dz, dy, drift)  # tried where its test is expected to pass
                if done is not None:
                    return done
                late = None
        last, before = size, (slope, step)
    return None


def _settle(step, start: complex, tol: float, plain_steps: int, step_slope=None, finish=None):
    """The root of gamma = g(gamma), ``step(gamma, nodes) -> (g(gamma), Z', Y')`` with the earth integrals on
    ``nodes`` points a piece: (g, Z', Y') at the first gamma with |g(gamma) - gamma| < tol |gamma| under the fine
    rule (FINE_NODES), or None where the plain iteration does not settle.

    The secant method on F(gamma) = g(gamma) - gamma (complex-analytic) converges in 4-6 evaluations where the
    plain iteration gamma <- g(gamma) takes 8-30 (its contraction rate |g'| is 0.05-0.4 on the wires the tool
    models).  It closes in with the coarse rule (COARSE_NODES) and finishes with the fine one from there: one
    fine evaluation confirms a root the coarse rule found to 1e-15, a few more move it where the rules differ.
    The root is taken only where the plain iteration settles there too (|g'| < 1 at the root, from the secant's
    slope); otherwise, or where the secant does not settle, the plain iteration on the fine rule decides as it
    always did: damped after 20 steps, None after ``plain_steps``.

    With ``step_slope`` (gamma -> (g, dg/dgamma, dZ', dY') on the coarse rule), Newton's method (:func:`_newton`)
    closes in instead, in 3-4 evaluations of about 1.5 of the secant's each; where g's slope at its root says the plain
    iteration settles there too, one evaluation on a finer rule (CHECK_NODES a piece, same pieces) at that root
    decides: where it leaves |g(gamma) - gamma| < tol |gamma| too, the two rules agree and that evaluation is the
    answer (the fine rule's root lies within about 1e-11 of it, measured in tests/test_modal.py); otherwise the
    fine rule finishes as above.  Where Newton does not settle, the secant's path decides as before.

    With ``finish`` (:func:`_newton`), the search ends earlier where it can, both rules summed in one pass at a gamma
    near the root and the check rule's root taken one step from there, but only where the two rules agree there (g
    within tol |gamma|; otherwise Newton's coarse steps go on as above).  One evaluation after Newton's first step
    (where that step began within FINISH_FROM), by Halley's step on the check rule with its second derivatives
    (cubic: its error about C^2 |F|^3, C the quadratic rate the two evaluations show; taken where 10 C^2 |F|^3 <
    tol |gamma| / 100 and |F| < 1e-4 |gamma|), Z' and Y' carried there along their slopes and curvatures; failing
    that, in place of the last coarse step and the check (where the next gamma lies within about 1e-8 of the root)
    by one Newton step along the slopes already known (its error |F| times the slope's drift over the step, taken
    below tol |gamma| / 100), Z' and Y' carried along theirs."""
    coarse = None
    if step_slope is not None:
        found = _newton(step_slope, start, tol, finish=finish)
        if found is not None and abs(found[2]) < 1.0:
            kind, root, rate = found
            if kind == "root":
                return root
            if kind == "coarse":
                check = step(root, CHECK_NODES)
                if abs(check[0] - root) < tol * abs(root):
                    return check
            coarse, slope = (root,), rate - 1.0
    if coarse is None:
        coarse, slope = _secant(lambda g: step(g, COARSE_NODES), start, tol)
    if coarse is not None and (slope is None or abs(slope + 1.0) < 1.0):
        fine, fine_slope = _secant(lambda g: step(g, FINE_NODES), coarse[0], tol)
        if fine is not None:
            rate = slope if fine_slope is None else fine_slope
            if rate is None or abs(rate + 1.0) < 1.0:
                return fine
    gamma = start
    for k in range(plain_steps):
        new, z, y = step(gamma, FINE_NODES)
        if abs(new - gamma) < tol * abs(gamma):
            return new, z, y
        gamma = new if k < 20 else 0.5 * (gamma + new)  # damped after 20 steps
    return None


@lru_cache(maxsize=256)
def wire_over_earth(
    freq_hz: float,
    height_m: float,
    radius_m: float,
    permittivity: float,
    conductivity_s_per_m: float,
    z_internal: complex,
    gamma_start: complex,
    insulation_radius_m: float | None = None,
    insulation_permittivity: float = 1.0,
    *,
    newton: bool = True,
) -> tuple[complex, complex, complex] | None:
    """(gamma [1/m], Z' [ohm/m], Y' [S/m]) of the exact mode (module docstring), cached by its arguments; None
    where the iteration does not settle: over a nearly lossless ground (loss tangent below about 0.01) the mode
    leaks into the ground and the two sides of its branch cut trade places at each step.

    An insulated wire (conductor radius a inside insulation of outer radius b, relative permittivity eps_i):
    the fields outside are taken at the insulation's surface (offset b in the integrals, L from b), and the
    insulation adds the coaxial layer's terms, ln(b/a) / eps_i to the electric (admittance) part and ln(b/a)
    to the magnetic (impedance) part: the thin-insulation form of R. W. P. King, T. T. Wu and L.-C. Shen,
    "The horizontal wire antenna over a conducting or dielectric half space" (Radio Science 9, 1974) and of the
    insulated-antenna theory (King, Smith, Owens and Wu, "Antennas in Matter", MIT Press 1981), cited from
    memory and not verified against them (the project's own construction); a wire resting on the soil has its
    axis at height b.

    The root is found by Newton's method with the slopes of the earth integrals taken on the same nodes
    (:func:`_settle`); ``newton=False`` takes the secant's path alone (:func:`wire_over_earth_secant`), the
    reference the tests hold it to."""
    omega = 2 * np.pi * freq_hz
    k0 = omega / C_M_PER_S
    n2 = complex_permittivity(freq_hz, permittivity, conductivity_s_per_m)
    b = radius_m if insulation_radius_m is None else insulation_radius_m
    layer = 0.0 if insulation_radius_m is None else float(np.log(b / radius_m))
    rho = b if b > radius_m else 0.0
    edges = _earth_edges(-(complex(gamma_start) ** 2 + k0**2), k0, height_m, n2)
    pair = (COARSE_NODES, CHECK_NODES)
    both = _rules_on(edges, pair, rho)  # the coarse and check rules, made once
    coarse = _rule_of(both, pair, 0)

    z_scale = 1j * omega * MU0_H_PER_M / (2 * np.pi)
    y_scale = 2j * np.pi * omega * EPS0_F_PER_M

    def series_shunt(lam, p, q):
        """(Z', Y', Y''s denominator) from the image term and the earth integrals."""
        shunt = lam + layer / insulation_permittivity + q
        return complex(z_internal + z_scale * (lam + layer + 2 * p)), complex(y_scale / shunt), shunt

    def step(gamma, nodes):
        if nodes == COARSE_NODES:  # the secant closing in: one rule for every step
            p, q = _earth_on(coarse, gamma, k0, height_m, n2)
        elif nodes == CHECK_NODES:  # a root the coarse rule found, checked on the same pieces
            p, q = _earth_on(_rule_of(both, pair, 1), gamma, k0, height_m, n2)
        else:
            p, q = earth_integrals(gamma, freq_hz, height_m, n2, offset_m=rho, nodes=nodes)
        z, y, _ = series_shunt(_image_term(gamma, k0, b, height_m), p, q)
        return _forward(z * y), z, y

    def step_slope(gamma):
        p, q, dp, dq = _earth_sums(coarse, gamma, k0, height_m, n2, slopes=True)
        lam, dlam = _image_slope(gamma, k0, b, height_m)
        z, y, shunt = series_shunt(lam, p, q)
        g = _forward(z * y)
        dz = z_scale * (dlam + 2 * dp)
        dy = -y * (dlam + dq) / shunt
        return g, (dz * y + z * dy) / (2 * g), dz, dy

    def finish(gamma, slope, size):
        """The check rule's root by Halley's step from ``gamma`` (:func:`_settle`): ("root", (g, Z', Y'), g's slope);
        where it is not taken ("step", g, dg/dgamma, dZ', dY') on the check rule for Newton's next step, or None
        where the coarse and check rules disagree; ``size`` |F| where the step to ``gamma`` began."""
        lam, dlam, d2lam = _image_curve(gamma, k0, b, height_m)
        (p1, q1), (p, q, dp, dq, d2p, d2q) = _earth_curves(both, gamma, k0, height_m, n2, coarse[0].size)
        z, y, shunt = series_shunt(lam, p, q)
        g = _forward(z * y)
        f = g - gamma
        scale = abs(gamma)
        z1, y1, _ = series_shunt(lam, p1, q1)
        if abs(_forward(z1 * y1) - g) >= tol * scale:  # the rules disagree: the fine rule will finish, from the
            return None  # coarse rule's root (the best start it can have)
        dz, d2z = z_scale * (dlam + 2 * dp), z_scale * (d2lam + 2 * d2p)
        ds, d2s = (dlam + dq) / shunt, (d2lam + d2q) / shunt
        dy, d2y = -y * ds, y * (2 * ds * ds - d2s)
        dg = (dz * y + z * dy) / (2 * g)
        rate = abs(f) / (size * size)  # |F_next| ~ rate |F|^2
        if not (abs(f) < 1e-4 * scale and 10.0 * rate * rate * abs(f) ** 3 < 1e-2 * tol * scale):
            return "step", g, dg, dz, dy
        d2g = (d2z * y + 2 * dz * dy + z * d2y - 2 * dg * dg) / (2 * g)
        fp = dg - 1.0
        step = -f / fp / (1.0 - f * d2g / (2 * fp * fp))
        z = z + step * (dz + 0.5 * step * d2z)
        y = y + step * (dy + 0.5 * step * d2y)
        return "root", (_forward(z * y), z, y), dg

    def near_root(gamma, slope, dz, dy, drift):
        """The check rule's root from ``gamma`` within about 1e-8 of it (:func:`_settle`): ("root", (g, Z', Y'),
        slope), or None (Newton goes on; so too where the coarse and check rules disagree)."""
        lam = _image_term(gamma, k0, b, height_m)
        sums = _earth_sums(both, gamma, k0, height_m, n2, slopes=False)
        (z1, y1, _), (z, y, _) = (series_shunt(lam, p, q) for p, q in sums)
        g = _forward(z * y)
        if abs(_forward(z1 * y1) - g) >= tol * abs(gamma):
            return None
        f = g - gamma
        if abs(f) >= 1e-8 * abs(gamma) or abs(f) * drift >= 1e-2 * tol * abs(gamma) * abs(slope - 1.0):
            return None
        step = -f / (slope - 1.0)
        z, y = z + dz * step, y + dy * step
        return "root", (_forward(z * y), z, y), slope

    tol = 1e-12
    return _settle(step, complex(gamma_start), tol, 80, *((step_slope, (finish, near_root)) if newton else ()))


def wire_over_earth_secant(*args, **kwargs) -> tuple[complex, complex, complex] | None:
    """:func:`wire_over_earth` (the same arguments) closing in by the secant method and finishing on the fine rule
    (no Newton steps, no check rule, not cached): the slower path its answers are checked against."""
    return wire_over_earth.__wrapped__(*args, **kwargs, newton=False)


def buried_integrals(
    gamma: complex, freq_hz: float, depth_m: float, n2: complex, *, offset_m: float, adaptive=False, nodes=FINE_NODES
):
    """(R_h, R_e) for a wire at ``depth_m`` in the earth under the air, the field taken ``offset_m`` to the side:

        R_h = int_0^inf G_h exp(-2 u1 d) cos(lambda b) / u1 dlambda,
        R_e = (1 / n^2) int_0^inf (u1 G_e + k1^2 G_h / u1) exp(-2 u1 d) cos(lambda b) / (lambda^2 - gamma^2) dlambda,

    G_h = (u1 - u0) / (u1 + u0) and G_e = (n^2 u0 - u1) / (n^2 u0 + u1) the reflection coefficients of the
    transverse-electric and transverse-magnetic parts of the field at the surface seen from below
    (:func:`wire_in_earth`)."""
    k0 = 2 * np.pi * freq_hz / C_M_PER_S
    k1sq = n2 * k0**2
    kap0 = -(gamma**2 + k0**2)
    kap1 = -(gamma**2 + k1sq)
    d, b = depth_m, offset_m

    def parts(lam):
        u0, u1 = _sqrt_re(lam * lam + kap0), _sqrt_re(lam * lam + kap1)
        g_h = (u1 - u0) / (u1 + u0)
        g_e = (n2 * u0 - u1) / (n2 * u0 + u1)
        common = np.exp(-2 * u1 * d) * np.cos(lam * b)
        return g_h * common / u1, (u1 * g_e + k1sq * g_h / u1) * common / (lam * lam - gamma**2) / n2

    top = 20.0 / d
    return _pair(parts, _pieces((abs(np.sqrt(kap0)), abs(np.sqrt(kap1)), 0.5 / d), top), adaptive, nodes)


@lru_cache(maxsize=256)
def wire_in_earth(
    freq_hz: float,
    depth_m: float,
    radius_m: float,
    permittivity: float,
    conductivity_s_per_m: float,
    z_internal: complex,
    gamma_start: complex,
    insulation_radius_m: float,
    insulation_permittivity: float,
) -> tuple[complex, complex, complex] | None:
    """(gamma [1/m], Z' [ohm/m], Y' [S/m]) of the mode of an insulated wire buried ``depth_m`` (its axis) in the
    earth under the air; None where the iteration does not settle.

    The same construction as :func:`wire_over_earth` with the media exchanged: the field of the line source in
    the earth (wavenumber k1 = n k0) and its reflection at the surface (TE and TM parts, :func:`buried_integrals`),
    taken at the insulation's surface b, and the insulation's coaxial layer ln(b/a):

        Z' = Z_int + (j omega mu0 / 2 pi) [ln(b/a) + K0(kappa1 b) + R_h],
        Y' = 2 pi j omega eps0 / [ln(b/a) / eps_i + K0(kappa1 b) / n^2 + R_e],   gamma^2 = Z' Y'.

    Deep in the earth the surface terms vanish and this is the insulated wire in an unbounded dissipative
    medium of R. W. P. King's theory (King, Smith, Owens and Wu, "Antennas in Matter", MIT Press 1981, in its
    thin-insulation form; cited from memory and not verified, so the tests' comparison with it is a consistency
    check, not an independent one)."""
    from snrgain.physics.bessel import k0 as bessel_k0

    omega = 2 * np.pi * freq_hz
    k0 = omega / C_M_PER_S
    n2 = complex_permittivity(freq_hz, permittivity, conductivity_s_per_m)
    b = insulation_radius_m
    layer = float(np.log(b / radius_m))

    def step(gamma, nodes):
        kap1 = _sqrt_re(-(gamma**2 + n2 * k0**2))
        k0b = bessel_k0(kap1 * b)
        r_h, r_e = buried_integrals(gamma, freq_hz, depth_m, n2, offset_m=b, nodes=nodes)
        z = z_internal + 1j * omega * MU0_H_PER_M / (2 * np.pi) * (layer + k0b + r_h)
        y = 2j * np.pi * omega * EPS0_F_PER_M / (layer / insulation_permittivity + k0b / n2 + r_e)
        return _forward(z * y), complex(z), complex(y)

    return _settle(step, complex(gamma_start), 1e-11, 120)


def spectral_impedance(
    xi, freq_hz: float, height_m: float, radius_m: float, n2: complex, z_internal=0j, *, adaptive=False
):
    """Z(xi) [ohm/m]: the axial field at a bare wire's surface per unit current for a current I exp(-j xi x), with
    the sign that makes a gap of voltage V drive I~(xi) = V / Z(xi) (the kernel of the module docstring with
    gamma = j xi: Z = Z_int + (j / 2 pi omega eps0) [(gamma^2 + k0^2) L + gamma^2 Q + 2 k0^2 P]).  Its zero on the
    lower half plane near +k0 is the mode (:func:`wire_over_earth`)."""
    omega = 2 * np.pi * freq_hz
    k0 = omega / C_M_PER_S
    g = 1j * complex(xi)
    p, q = earth_integrals(g, freq_hz, height_m, n2, adaptive=adaptive)
    lam = _image_term(g, k0, radius_m, height_m)
    return z_internal + 1j / (2 * np.pi * omega * EPS0_F_PER_M) * (
        (g * g + k0 * k0) * lam + g * g * q + 2 * k0 * k0 * p
    )


def gap_current(
    freq_hz: float,
    height_m: float,
    radius_m: float,
    permittivity: float,
    conductivity_s_per_m: float,
    x_m,
    *,
    z_internal: complex = 0j,
    step_k0: float = 2e-3,
    top_k0: float = 8.0,
) -> tuple[np.ndarray, np.ndarray]:
    """(mode, rest) [A per volt]: the current at distances ``x_m`` (> 0) from a gap of 1 V in an infinite wire
    over the earth, split into the mode and the rest of the spectrum (radiation and the waves of the interface).

    I(x) = (1/2 pi) integral I~(xi) exp(-j xi x) dxi with I~ = 1 / Z(xi) (:func:`spectral_impedance`): the mode's
    pole xi_p = -j gamma is taken out analytically (its residue gives -j R exp(-gamma x), R = 1 / Z'(xi_p)); the
    remainder, smooth but for the logarithmic branch point at k0, is summed by the trapezoidal rule on a grid of
    ``step_k0`` k0 up to ``top_k0`` k0 (I~ is even in xi).  Over a good conductor the mode is the whole answer,
    V / (2 Z0) exp(-gamma x), the transmission line's; over poor ground and as the wire rises in wavelengths the
    rest grows (a fifth of the mode's current at 2 m over 1 mS/m at 3.6 MHz) and a wave fitted to the total
    current decays more slowly than the mode: what a current fitted along a wire in NEC-2 shows (tests)."""
    k0 = 2 * np.pi * freq_hz / C_M_PER_S
    n2 = complex_permittivity(freq_hz, permittivity, conductivity_s_per_m)
    mode = wire_over_earth(
        freq_hz, height_m, radius_m, permittivity, conductivity_s_per_m, complex(z_internal), complex(0.0, 1.05 * k0)
    )
    if mode is None:
        raise ValueError("the wire's mode did not settle (a nearly lossless ground): no gap current")
    xi_p = -1j * mode[0]

    def z(xi, adaptive=False):
        return spectral_impedance(xi, freq_hz, height_m, radius_m, n2, z_internal, adaptive=adaptive)

    d = 1e-6 * k0
    residue = 1.0 / ((z(xi_p + d, True) - z(xi_p - d, True)) / (2 * d))
    grid = np.arange(0.0, top_k0 * k0, step_k0 * k0)
    rest_spectrum = np.array([1.0 / z(xi) - residue / (xi - xi_p) + residue / (xi + xi_p) for xi in grid])
    x = np.atleast_1d(np.asarray(x_m, dtype=float))
    rest = np.trapezoid(rest_spectrum[None, :] * np.cos(np.outer(x, grid)), grid, axis=1) / np.pi
    return -1j * residue * np.exp(-1j * xi_p * x), rest


__all__ = [
    "buried_integrals",
    "earth_integrals",
    "gap_current",
    "spectral_impedance",
    "wire_in_earth",
    "wire_over_earth",
    "wire_over_earth_secant",
]
