"""HEALPix sky helpers and the reference-monopole normalisation."""

import healpy as hp
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from noisemodels import sky, sphere


@pytest.mark.parametrize("nside", [8, 32, 64])
def test_constant_map_integrates_to_4pi(nside):
    npix = hp.nside2npix(nside)
    total = np.sum(np.ones(npix) * hp.nside2pixarea(nside))
    assert total == pytest.approx(4 * np.pi, rel=1e-12)
    up = sphere.upper_hemisphere(nside)
    assert up.solid_angle_sr.sum() == pytest.approx(2 * np.pi, rel=1e-12)


@settings(max_examples=200, deadline=None)
@given(az=st.floats(0, 359.99), el=st.floats(0, 89.0))
def test_bearing_pixel_bearing_round_trip(az, el):
    nside = 32
    pix = sphere.direction_to_pixel(nside, np.radians(az), np.radians(el))
    az2, el2 = sphere.pixel_to_direction(nside, pix)
    d = sphere.angular_distance_rad(np.radians(az), np.radians(el), az2, el2)
    # A direction lies within about one pixel size of its pixel's centre.
    assert np.degrees(d) < 1.5 * np.degrees(hp.nside2resol(nside))


def test_north_is_phi_zero_and_east_is_ninety():
    theta, phi = sphere.to_healpy_angles(np.radians([0.0, 90.0]), np.radians([0.0, 30.0]))
    np.testing.assert_allclose(phi, np.radians([0.0, 90.0]))
    np.testing.assert_allclose(theta, np.radians([90.0, 60.0]))


@pytest.mark.parametrize("nside", [16, 32, 64])
def test_reference_monopole_is_lossless(nside):
    # (1/4pi) * integral of 3 cos^2(el) over the upper hemisphere = 1 (short monopole over perfect ground).
    up = sphere.upper_hemisphere(nside)
    val = np.dot(sky.reference_monopole_gain(up.elevation_rad), up.solid_angle_sr) / (4 * np.pi)
    assert val == pytest.approx(1.0, abs=2e-3)


@pytest.mark.parametrize("nside", [1, 2, 4, 8, 32, 64])
def test_upper_hemisphere_matches_healpy(nside):
    # The ring-scheme closed form (Gorski et al. 2005, Section 4) against healpy's own pix2ang.
    npix = hp.nside2npix(nside)
    theta, phi = hp.pix2ang(nside, np.arange(npix))
    keep = np.cos(theta) > -1e-12
    g = sphere.upper_hemisphere(nside)
    assert g.size == int(keep.sum())
    np.testing.assert_allclose(g.elevation_rad, np.clip(np.pi / 2 - theta[keep], 0, np.pi / 2), atol=1e-12)
    np.testing.assert_allclose(g.azimuth_rad, np.mod(phi[keep], 2 * np.pi), atol=1e-12)
    assert g.solid_angle_sr.sum() == pytest.approx(2 * np.pi, rel=1e-12)


@pytest.mark.parametrize("nside", [4, 16, 32])
def test_mirror_pixels_are_healpys_reflection_of_each_lower_pixel(nside):
    # sphere.mirror_pixels against healpy (independent implementation): every pixel below the equator ring,
    # and the pixel healpy finds at theta -> pi - theta, same phi.
    below, mirror = sphere.mirror_pixels(nside)
    npix = hp.nside2npix(nside)
    theta, phi = hp.pix2ang(nside, np.arange(npix))
    expected = np.flatnonzero(theta > np.pi / 2 + 1e-12)
    np.testing.assert_array_equal(below, expected)
    np.testing.assert_array_equal(mirror, hp.ang2pix(nside, np.pi - theta[below], phi[below]))


def test_sky_figure_grid_matches_healpy_interpolation():
    # The sky figure's az/el grid (outputs.plots._sky_grid, numpy) against healpy's own pixel lookup, mirror and
    # get_interp_val on a smooth, azimuth-dependent map.
    from types import SimpleNamespace

    from snrgain.outputs.plots import _sky_grid

    nside = 16
    d = sphere.upper_hemisphere(nside)
    bright = (1.0 + np.cos(d.azimuth_rad - 1.0)) * (0.2 + np.sin(d.elevation_rad)) * 1e4
    comp = SimpleNamespace(directions=d, weight_k_sr=bright * d.solid_angle_sr)
    az_edges, el_edges = np.linspace(0, 360, 37), np.linspace(0, 90, 10)
    ours = _sky_grid(comp, az_edges, el_edges)
    full = np.full(hp.nside2npix(nside), np.nan)
    full[hp.ang2pix(nside, *sphere.to_healpy_angles(d.azimuth_rad, d.elevation_rad))] = bright
    theta, phi = hp.pix2ang(nside, np.arange(full.size))
    below = np.isnan(full)
    full[below] = full[hp.ang2pix(nside, np.pi - theta[below], phi[below])]
    A, E = np.meshgrid(
        np.radians(0.5 * (az_edges[1:] + az_edges[:-1])), np.radians(0.5 * (el_edges[1:] + el_edges[:-1]))
    )
    theirs = hp.get_interp_val(full, *sphere.to_healpy_angles(A.ravel(), E.ravel())).reshape(A.shape)
    np.testing.assert_allclose(ours, theirs, rtol=1e-10)
