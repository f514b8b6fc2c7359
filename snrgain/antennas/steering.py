"""Automatic steering: the element weights that maximise RDF, front-to-back or SNR.

An array's response is a weighted sum of its elements' responses r_i(d)
(each with its position phase and, for coupled verticals, its share of the
coupled currents): E(d) = sum_i w_i r_i(d), normalised by w^H Q w (Q the
identity for a lossless combiner; see :mod:`snrgain.antennas.array`).  With
u = conj(w), the power toward d is |u^H r(d)|^2, and over a set of directions
with weights W_d it is the quadratic form u^H C u, C = sum_d W_d r(d) r(d)^H
(both polarisations summed).  The ratio of two such forms

    SNR(u) = u^H S u / u^H N u,   S from the target's directions, N from the noise sky (plus receiver noise x Q),

is largest for the principal generalised eigenvector of (S, N); for a
single target direction a, u ~ N^-1 a: the maximum-SNR weights of array
signal processing (H. L. Van Trees, "Optimum Array Processing", Wiley (2002),
Section 6.2, from memory, section not verified; R. A. Monzingo and T. W.
Miller, "Introduction to Adaptive Arrays", Wiley (1980), Ch. 3; the tests
check the result against brute-force scans, not against these texts).  Under a uniform sky and no
receiver noise N is the directivity form and the same weights maximise RDF.

Those weights have free amplitudes: at close spacing they ask for
superdirective settings, large and nearly cancelling, which a builder's
phasing lines cannot hold.  By default only the phases move, the amplitudes
kept as given (equal unless stated): the ratio is then maximised over the
N - 1 relative phases by exact cyclic coordinate ascent from several starts (the end-fire
delays, the phases of the free optimum, and seeded random phases), so that
the result is reproducible.  ``auto_amplitudes = true`` takes the free
optimum itself.
"""

from __future__ import annotations

import math

import numpy as np

FB_FLOOR = 1e-6
"""Front-to-back is maximised as G_front / (G_back + FB_FLOOR G_front + FB_MEAN G_mean): a null deeper than 60 dB
counts no more, ..."""
FB_MEAN = 0.1
"""... and a null deeper than 10 dB under the average gain counts against the gain forward: of the phases that null
the back (an array of four has many), those with the most gain forward over the average (without it the search took
any null: a 20 m four-square at 160 m steered for front-to-back put its lobe 23 deg off its bearing at RDF 9.5 dB
against 12.5 for RDF steering).  Where the gain forward lies under the average, the front-to-back is held to about
10 dB over the RDF (a pair 82 m apart at 1.83 MHz: 10 dB)."""

RANDOM_STARTS = 12

MAX_SWEEPS = 400
"""Bound on the coordinate-ascent sweeps of one start (a 4-element start converges in a few tens)."""


def quadratic_form(rv, rh, weights=None) -> np.ndarray:
    """C = sum_d W_d (r_v r_v^H + r_h r_h^H) for element responses (N, D) and direction weights (D,)."""
    w = np.ones(rv.shape[1]) if weights is None else np.asarray(weights, dtype=float)
    # einsum, not matmul: N x N from a few thousand directions must not start multithreaded BLAS (slow under load)
    return np.einsum("id,jd->ij", rv * w, rv.conj()) + np.einsum("id,jd->ij", rh * w, rh.conj())


def ratio(u: np.ndarray, s: np.ndarray, n: np.ndarray) -> float:
    return float(np.real(u.conj() @ s @ u) / np.real(u.conj() @ n @ u))


def free_optimum(s: np.ndarray, n: np.ndarray) -> np.ndarray:
    """u maximising u^H S u / u^H N u (principal generalised eigenvector), scaled to unit largest magnitude."""
    n = 0.5 * (n + n.conj().T)
    s = 0.5 * (s + s.conj().T)
    n = n + np.eye(len(n)) * 1e-12 * np.real(np.trace(n))  # a lossless, noiseless corner stays solvable
    # S v = lambda N v with N = L L^H (Cholesky) is the ordinary Hermitian problem of L^-1 S L^-H; numpy's
    # LAPACK routines, not scipy.linalg's (a 0.2 s import for a 4 x 4 problem)
    low = np.linalg.cholesky(n)
    inv = np.linalg.inv(low)
    _, vecs = np.linalg.eigh(inv @ s @ inv.conj().T)
    u = inv.conj().T @ vecs[:, -1]
    return u / np.max(np.abs(u)) * np.exp(-1j * np.angle(u[0]))


def _phase_sweeps(u: np.ndarray, s: np.ndarray, n: np.ndarray, *, sweeps: int = MAX_SWEEPS) -> np.ndarray:
    """Cyclic coordinate ascent of R = u^H S u / u^H N u over the phases of u[1:], each step exact.

    With the other elements fixed, turning element k by phi makes u^H S u = alpha + p cos phi + q sin phi and
    u^H N u = beta + r cos phi + t sin phi (p + j q = 2 conj(u_k) sum_{j != k} S_kj u_j, u_k the current value;
    alpha = u^H S u - p, S Hermitian; the same for N).  dR/dphi = 0 is then X sin phi + Y cos phi = Z with
    X = alpha r - p beta, Y = q beta - alpha t, Z = p t - q r: two roots, of which the larger R is taken (never
    below the current phase, so R rises monotonically).
    Stops when a sweep raises R by less than 1e-13 of itself.

    Worked in Python's own complex numbers on lists, S u and N u carried from step to step (a turn of element k
    adds its column times the change) and worked afresh after each sweep: an array has a handful of elements, for
    which numpy's call on each tiny product cost more than the arithmetic (a four-square's search 4.7x faster)."""
    ul = np.asarray(u, dtype=complex).tolist()
    count = len(ul)
    sl, nl = s.tolist(), n.tolist()
    idx = range(count)
    cols = [([sl[i][k] for i in idx], [nl[i][k] for i in idx]) for k in idx]

    def worked():
        su = [sum(sl[i][j] * ul[j] for j in idx) for i in idx]
        nu = [sum(nl[i][j] * ul[j] for j in idx) for i in idx]
        return (
            su,
            nu,
            sum((ul[i].conjugate() * su[i]).real for i in idx),
            sum((ul[i].conjugate() * nu[i]).real for i in idx),
        )

    su, nu, top, bottom = worked()
    last = top / bottom
    for _ in range(sweeps):
        for k in range(1, count):
            uk = ul[k]
            twice = 2 * uk.conjugate()
            cs, cn = twice * (su[k] - sl[k][k] * uk), twice * (nu[k] - nl[k][k] * uk)
            p, q, r, t = cs.real, cs.imag, cn.real, cn.imag  # Re(c e^-j phi) = c.real cos phi + c.imag sin phi
            alpha, beta = top - p, bottom - r
            x, y, z = alpha * r - p * beta, q * beta - alpha * t, p * t - q * r
            amp = math.hypot(x, y)
            if amp == 0.0:
                continue
            # x sin phi + y cos phi = amp sin(phi + psi), psi = atan2(y, x)
            psi, base = math.atan2(y, x), math.asin(min(max(z / amp, -1.0), 1.0))
            best, cos_b, sin_b = -math.inf, 1.0, 0.0
            for root in (base - psi, math.pi - base - psi, 0.0):
                c, sn = math.cos(root), math.sin(root)
                val = (alpha + p * c + q * sn) / (beta + r * c + t * sn)
                if val > best:
                    best, cos_b, sin_b = val, c, sn
            new = uk * complex(cos_b, sin_b)
            step = new - uk
            ul[k] = new
            col_s, col_n = cols[k]
            for i in idx:
                su[i] += col_s[i] * step
                nu[i] += col_n[i] * step
            top, bottom = alpha + p * cos_b + q * sin_b, beta + r * cos_b + t * sin_b
        su, nu, top, bottom = worked()  # afresh: no rounding carried from sweep to sweep
        now = top / bottom
        if now - last <= 1e-13 * abs(now):
            break
        last = now
    return np.array(ul, dtype=complex)


def best_phases(s: np.ndarray, n: np.ndarray, amplitudes: np.ndarray, starts: list[np.ndarray], *, seed: int = 0):
    """u = amplitudes * exp(j phi) with phi[0] = 0 maximising u^H S u / u^H N u: exact cyclic coordinate ascent
    over the phases (:func:`_phase_sweeps`) from each start and from RANDOM_STARTS seeded random phases;
    returns the best u.  Pure numpy (no optimiser import)."""
    count = len(amplitudes)
    amplitudes = np.asarray(amplitudes, dtype=float)
    if count == 1:
        return amplitudes.astype(complex)
    s = 0.5 * (s + s.conj().T)
    n = 0.5 * (n + n.conj().T)
    rng = np.random.default_rng(seed)
    trials = [np.angle(v[1:] * np.conj(v[0])) for v in starts]
    trials += [rng.uniform(-np.pi, np.pi, count - 1) for _ in range(RANDOM_STARTS)]
    best, best_val = None, -np.inf
    for x0 in trials:
        u = _phase_sweeps(amplitudes * np.exp(1j * np.concatenate([[0.0], x0])), s, n)
        val = ratio(u, s, n)
        if val > best_val:
            best, best_val = u, val
    phi = np.angle(best[1:] * np.conj(best[0]))
    return amplitudes * np.exp(1j * np.concatenate([[0.0], phi]))
