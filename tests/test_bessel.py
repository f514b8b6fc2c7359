"""snrgain.physics.bessel (J0/J1 by its continued fraction, K0 and K1 by their ascending series and Temme's
continued fraction) against scipy.special (an independent implementation: AMOS) over the arguments the line models
give and beyond."""

import numpy as np
import pytest
from scipy.special import jv, kv

from snrgain.physics.bessel import SERIES_LIMIT, j0_over_j1, k0, k0_k1


@pytest.mark.parametrize("u", [1e-4, 0.01, 0.3, 1.0, 3.0, 10.0, 40.0, 150.0, 600.0])
def test_j0_over_j1_on_the_skin_effect_line(u):
    # A round wire's internal impedance takes z = (1 - j) a / delta: a / delta = u from a thin resistive wire to a
    # thick one at 30 MHz.  scipy's exponentially scaled jve keeps the ratio finite where J0 and J1 overflow.
    from scipy.special import jve

    z = (1 - 1j) * u
    assert j0_over_j1(z) == pytest.approx(jve(0, z) / jve(1, z), rel=1e-13)


@pytest.mark.parametrize("z", [0.5, 2.0 + 0.5j, -3.0 + 1.0j, 7.5j, 12.0 - 4.0j])
def test_j0_over_j1_elsewhere(z):
    assert j0_over_j1(z) == pytest.approx(jv(0, z) / jv(1, z), rel=1e-12)


def test_k0_by_series_and_beyond():
    r = np.concatenate([np.geomspace(1e-8, SERIES_LIMIT, 40), [2.5, 6.0, 30.0]])
    for theta in np.radians([-89.0, -60.0, -20.0, 0.0, 35.0, 75.0, 90.0]):
        for rr in r:
            z = rr * np.exp(1j * theta)
            assert k0(z) == pytest.approx(kv(0, z), rel=1e-13), z


def test_k0_k1_by_series_and_continued_fraction():
    # Measured: 2e-15 relative at most on both sides of the series' limit, on the imaginary axis too; K0 is the
    # number k0 gives.
    r = np.concatenate([np.geomspace(1e-8, SERIES_LIMIT, 30), [SERIES_LIMIT * (1 + 1e-9), 2.5, 6.0, 30.0, 200.0]])
    for theta in np.radians([-90.0, -89.0, -60.0, -20.0, 0.0, 35.0, 75.0, 90.0]):
        for rr in r:
            z = rr * np.exp(1j * theta)
            zero, one = k0_k1(z)
            assert zero == k0(z)
            assert zero == pytest.approx(kv(0, z), rel=1e-14), z
            assert one == pytest.approx(kv(1, z), rel=1e-14), z


def test_zero_argument_is_refused():
    with pytest.raises(ValueError):
        k0(0)
    with pytest.raises(ValueError):
        k0_k1(0)
    with pytest.raises(ValueError):
        j0_over_j1(0)
