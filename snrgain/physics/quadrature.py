"""Gauss-Legendre nodes and weights, computed once per order (numpy's leggauss solves an eigenproblem each call)."""

from __future__ import annotations

from functools import lru_cache

import numpy as np


@lru_cache(maxsize=32)
def gauss_legendre(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Nodes and weights on [-1, 1] of the n-point rule (read-only arrays, shared by every caller)."""
    x, w = np.polynomial.legendre.leggauss(n)
    x.flags.writeable = False
    w.flags.writeable = False
    return x, w


def samples_rule(x) -> np.ndarray:
    """Weights w with sum w f(x) the integral of f over [x0, x_end] on the sample points ``x``: composite Simpson
    where the points are evenly spaced and their number odd (error falling as the fourth power of the step for a
    smooth integrand), the trapezoid rule otherwise.  Even spacing is judged by the ends, the first step and a few
    points within (the grids the callers make are numpy linspaces)."""
    x = np.asarray(x, dtype=float)
    n = len(x)
    if n < 2:
        return np.zeros(n)
    if n >= 3 and n % 2 == 1:
        span = x[-1] - x[0]
        h = span / (n - 1)
        probe = (1, n // 3, n // 2, (2 * n) // 3, n - 2)
        if h > 0 and all(abs(x[i] - (x[0] + i * h)) <= 1e-9 * abs(span) for i in probe):
            return _simpson(n) * h
    d = np.diff(x)
    w = np.zeros(n)
    w[:-1] += 0.5 * d
    w[1:] += 0.5 * d
    return w


@lru_cache(maxsize=64)
def _simpson(n: int) -> np.ndarray:
    w = np.full(n, 2.0 / 3.0)
    w[1::2] = 4.0 / 3.0
    w[0] = w[-1] = 1.0 / 3.0
    w.flags.writeable = False
    return w


def even_samples(length_m: float, steps: int) -> np.ndarray:
    """``steps`` + 1 evenly spaced points on [0, length_m], ``steps`` rounded up to even (Simpson's rule,
    :func:`samples_rule`): a read-only array, shared by the calls that ask for the same."""
    return _even_samples(float(length_m), int(steps) + int(steps) % 2)


@lru_cache(maxsize=256)
def _even_samples(length_m: float, steps: int) -> np.ndarray:
    x = np.linspace(0.0, length_m, steps + 1)
    x.flags.writeable = False
    return x


@lru_cache(maxsize=32)
def stacked_rules(counts: tuple[int, ...], pieces: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The Gauss-Legendre rules of ``counts`` points a piece on ``pieces`` pieces, laid out rule after rule and
    piece after piece within a rule, on [-1, 1] shifted to [0, 2]: (each node's piece, x + 1, weights of shape
    (nodes, len(counts)) whose column i holds rule i's weights and zeros at the other rules' nodes).  A node on the
    piece [lo, lo + 2 half] is then half (x + 1) + lo and its weight half w (read-only arrays, made once)."""
    piece, shifted, split = [], [], []
    for i, n in enumerate(counts):
        x, w = gauss_legendre(n)
        piece.append(np.repeat(np.arange(pieces), n))
        shifted.append(np.tile(x + 1.0, pieces))
        column = np.zeros((pieces * n, len(counts)))
        column[:, i] = np.tile(w, pieces)
        split.append(column)
    out = np.concatenate(piece), np.concatenate(shifted), np.concatenate(split)
    for a in out:
        a.flags.writeable = False
    return out
