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
N - 1 relative phases by scipy.optimize from several starts (the end-fire
delays, the phases of the free optimum, and seeded random phases), so that
the result is reproducible.  ``auto_amplitudes = true`` takes the free
optimum itself.
"""

from __future__ import annotations

import numpy as np

FB_FLOOR = 1e-6
"""Front-to-back is maximised as G_front / (G_back + FB_FLOOR G_front): a null deeper than 60 dB counts no more."""

RANDOM_STARTS = 12


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
    from scipy import linalg  # slow to import: here, when needed

    n = n + np.eye(len(n)) * 1e-12 * np.real(np.trace(n))  # a lossless, noiseless corner stays solvable
    _, vecs = linalg.eigh(s, n)
    u = vecs[:, -1]
    return u / np.max(np.abs(u)) * np.exp(-1j * np.angle(u[0]))


def ratio_and_gradient(phi: np.ndarray, amplitudes: np.ndarray, s: np.ndarray, n: np.ndarray):
    """R = u^H S u / u^H N u for u = amplitudes * exp(j [0, phi]), and dR/dphi.

    With a = u^H S u and Hermitian S, da/dphi_k = 2 Im(conj(u_k) (S u)_k) (u_k turns by j u_k dphi_k); the same
    for b = u^H N u, and dR = (da b - a db) / b^2."""
    u = amplitudes * np.exp(1j * np.concatenate([[0.0], phi]))
    su, nu = s @ u, n @ u
    a, b = float(np.real(u.conj() @ su)), float(np.real(u.conj() @ nu))
    da, db = 2 * np.imag(u.conj() * su), 2 * np.imag(u.conj() * nu)
    return a / b, ((da * b - a * db) / b**2)[1:]


def best_phases(s: np.ndarray, n: np.ndarray, amplitudes: np.ndarray, starts: list[np.ndarray], *, seed: int = 0):
    """u = amplitudes * exp(j phi) with phi[0] = 0 maximising u^H S u / u^H N u: a quasi-Newton search (BFGS) on
    the analytic gradient (:func:`ratio_and_gradient`) from each start and from RANDOM_STARTS seeded random
    phases; returns the best u."""
    count = len(amplitudes)
    amplitudes = np.asarray(amplitudes, dtype=float)
    if count == 1:
        return amplitudes.astype(complex)
    s = 0.5 * (s + s.conj().T)
    n = 0.5 * (n + n.conj().T)

    def cost(phi):
        r, g = ratio_and_gradient(phi, amplitudes, s, n)
        return -r, -g

    from scipy import optimize  # slow to import: here, when needed

    rng = np.random.default_rng(seed)
    trials = [np.angle(v[1:] * np.conj(v[0])) for v in starts]
    trials += [rng.uniform(-np.pi, np.pi, count - 1) for _ in range(RANDOM_STARTS)]
    best, best_val = None, np.inf
    for x0 in trials:
        res = optimize.minimize(cost, x0, jac=True, method="BFGS", options={"gtol": 1e-10, "maxiter": 500})
        if res.fun < best_val:
            best, best_val = res.x, res.fun
    return amplitudes * np.exp(1j * np.concatenate([[0.0], np.mod(best + np.pi, 2 * np.pi) - np.pi]))
