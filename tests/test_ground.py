"""Fresnel reflection coefficients and the ground table."""

import numpy as np
import pytest

from snrgain.physics import ground
from snrgain.physics.ground import Ground, fresnel_horizontal, fresnel_vertical


def _snell_impedance_form(psi, eps_c):
    """Independent textbook form via Snell's law and wave impedances (Balanis, Advanced Engineering
    Electromagnetics, Section 5.3): theta_i = 90 deg - psi, sin(theta_t) = sin(theta_i) / n,
    Gamma_TE = (eta2 cos ti - eta1 cos tt)/(eta2 cos ti + eta1 cos tt),
    Gamma_TM = (eta2 cos tt - eta1 cos ti)/(eta2 cos tt + eta1 cos ti) for the tangential E field.
    Vertical polarization (TM) uses the convention in which the image of a vertical dipole has
    reflection +1 over a perfect conductor, i.e. minus the tangential-field coefficient."""
    ti = np.pi / 2 - psi
    n = np.sqrt(eps_c + 0j)
    eta1, eta2 = 1.0, 1.0 / n
    st = np.sin(ti) / n
    ct = np.sqrt(1 - st**2 + 0j)
    g_te = (eta2 * np.cos(ti) - eta1 * ct) / (eta2 * np.cos(ti) + eta1 * ct)
    g_tm = (eta2 * ct - eta1 * np.cos(ti)) / (eta2 * ct + eta1 * np.cos(ti))
    return -g_tm, g_te


@pytest.mark.parametrize("name", ["moist loam", "sandy soil", "sea water", "very dry ground"])
@pytest.mark.parametrize("f", [1.8e6, 7.1e6])
def test_fresnel_against_snell_form(name, f):
    g = ground.GROUND_TYPES[name]
    eps_c = g.complex_permittivity(f)
    psi = np.radians(np.linspace(0.5, 89.5, 50))
    rv_ref, rh_ref = _snell_impedance_form(psi, eps_c)
    np.testing.assert_allclose(fresnel_vertical(psi, eps_c), rv_ref, rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(fresnel_horizontal(psi, eps_c), rh_ref, rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize("name", ["moist loam", "sandy soil", "sea water", "fresh water"])
def test_grazing_incidence_minus_one(name):
    # Any finite ground reflects -1 at grazing incidence, both polarizations (textbook limit).
    eps_c = ground.GROUND_TYPES[name].complex_permittivity(1.83e6)
    assert fresnel_vertical(0.0, eps_c) == pytest.approx(-1.0)
    assert fresnel_horizontal(0.0, eps_c) == pytest.approx(-1.0)


def test_perfect_conductor_limit():
    # sigma -> infinity: R_v -> +1, R_h -> -1 at every elevation above grazing.
    g = Ground(1e9, 10.0)
    eps_c = g.complex_permittivity(1.83e6)
    psi = np.radians([2.0, 10.0, 45.0, 90.0])
    np.testing.assert_allclose(fresnel_vertical(psi, eps_c), 1.0, atol=1e-3)
    np.testing.assert_allclose(fresnel_horizontal(psi, eps_c), -1.0, atol=1e-3)


def test_brewster_angle_lossless():
    # Lossless dielectric: R_v = 0 at the Brewster angle, tan(psi_B) = 1/sqrt(eps_r) measured from the surface.
    eps = 9.0
    psi_b = np.arctan(1 / np.sqrt(eps))
    assert abs(fresnel_vertical(psi_b, eps + 0j)) < 1e-12


def test_normal_incidence_equal_magnitude():
    eps_c = ground.GROUND_TYPES["moist loam"].complex_permittivity(3.6e6)
    assert abs(fresnel_vertical(np.pi / 2, eps_c)) == pytest.approx(abs(fresnel_horizontal(np.pi / 2, eps_c)))


def test_unknown_ground_lists_names():
    with pytest.raises(ValueError, match="'moist loam'"):
        ground.ground_by_name("loam")


def test_ground_rejects_bad_constants():
    with pytest.raises(ValueError, match="permittivity"):
        Ground(0.005, 0.5)
    with pytest.raises(ValueError, match="conductivity"):
        Ground(-1.0, 13.0)


def test_rod_resistance_dwight():
    # Dwight's formula (Electrical Engineering 55, 1936): R = rho / (2 pi L) [ln(4L/a) - 1].  A 10 ft (3.05 m),
    # 5/8 in (15.9 mm) rod in 100 ohm-m soil: 33 ohm; builders and electricians quote roughly 25-40 ohm for it
    # (common practice).
    soil = Ground(conductivity_s_per_m=0.01, permittivity=13.0)
    r = ground.rod_resistance_ohm(soil, 3.048, 0.0159)
    assert r == pytest.approx(100 / (2 * np.pi * 3.048) * (np.log(4 * 3.048 / 0.00795) - 1), rel=1e-9)
    assert 25 < r < 40
    # Invariants: inverse in the soil's conductivity, lower for a longer rod, zero over a perfect ground.
    assert ground.rod_resistance_ohm(Ground(0.005, 13.0)) == pytest.approx(2 * ground.rod_resistance_ohm(soil))
    assert ground.rod_resistance_ohm(soil, 2.4) < ground.rod_resistance_ohm(soil, 1.2)
    assert ground.rod_resistance_ohm(None) == 0.0
    with pytest.raises(ValueError, match="rod"):
        ground.rod_resistance_ohm(soil, 0.01, 0.02)
