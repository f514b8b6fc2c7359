"""The Faddeeva function in numpy (noisemodels.faddeeva, Weideman's rational series) against scipy.special.wofz
(S. G. Johnson's Faddeeva package: an independent algorithm) and published identities."""

import math

import numpy as np
import pytest
from scipy.special import wofz as scipy_wofz

from noisemodels.faddeeva import wofz


def _rel(a, b):
    return np.abs(a - b) / np.abs(b)


def test_upper_half_plane_matches_scipy_to_1e_13():
    x = np.concatenate([-np.geomspace(1e-6, 1e4, 120)[::-1], [0.0], np.geomspace(1e-6, 1e4, 120)])
    y = np.concatenate([[0.0], np.geomspace(1e-6, 1e4, 100)])
    z = (x[None, :] + 1j * y[:, None]).ravel()
    assert np.max(_rel(wofz(z), scipy_wofz(z))) < 1e-13


def test_lower_half_plane_matches_scipy():
    # By the reflection w(z) = 2 exp(-z^2) - w(-z) (NIST DLMF 7.4.3, number cited from memory; it follows from
    # erfc(-x) = 2 - erfc(x)).
    x = np.linspace(-6.0, 6.0, 61)
    y = -np.geomspace(1e-4, 5.0, 40)
    z = (x[None, :] + 1j * y[:, None]).ravel()
    assert np.max(_rel(wofz(z), scipy_wofz(z))) < 1e-11


def test_published_values_and_identities():
    # From the definition w(z) = exp(-z^2) erfc(-j z): w(0) = 1, w(jy) = exp(y^2) erfc(y) on the imaginary axis
    # (checked against math.erfc), w(-conj z) = conj w(z); scalars in, scalars out.
    assert wofz(0.0) == pytest.approx(1.0, abs=1e-15)
    for y in (0.1, 1.0, 3.0):
        assert wofz(1j * y).real == pytest.approx(math.exp(y * y) * math.erfc(y), rel=1e-13)
        assert abs(wofz(1j * y).imag) < 1e-15
    z = np.array([0.3 + 0.2j, 2.5 + 1e-3j, 40 + 7j])
    assert np.allclose(wofz(-np.conj(z)), np.conj(wofz(z)), rtol=1e-14, atol=0)
    assert np.ndim(wofz(1.0 + 1.0j)) == 0
    grid = np.array([[0.5 + 0.5j, -1.0 - 0.2j], [3.0j, 2.0]])
    few = np.array([0.3 + 0.2j, 2.5 + 1e-3j])  # below and above the size where the polynomial changes method
    assert np.allclose(wofz(few), wofz(np.tile(few, 200))[:2], rtol=1e-14, atol=0)
    assert wofz(grid).shape == (2, 2) and np.allclose(wofz(grid), scipy_wofz(grid), rtol=1e-13, atol=0)
