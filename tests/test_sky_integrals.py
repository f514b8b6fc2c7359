"""The sky integrals of the products (snrgain.model.snr.sky_temperatures: a sky's maps grouped once, a map the same
at every hour integrated once) against the defining sum, cell by cell; and an array's noise form under the sky
(snrgain.model.steering.sky_forms: the maps summed before the form) against the sum of the forms."""

from dataclasses import replace

import numpy as np
import pytest

from snrgain.antennas.steering import quadratic_form
from snrgain.model import pipeline, snr
from snrgain.model.steering import placed_forms, sky_forms
from tests.conftest import SCENARIOS


def _skies(name="wren-corner.toml"):
    sc = pipeline.load(SCENARIOS / name)
    grid = pipeline.sky_grid(sc)
    sc = pipeline.resolve_sources(sc)
    return sc, grid, pipeline.build_sky(sc, grid)


def _some_maps_differ(skies):
    """The sky with its first component's map scaled by 1, 2 or 3 by hour: three distinct maps among the cells."""
    maps = {
        (i, j): [replace(c, weight_k_sr=c.weight_k_sr * (1 + j % 3)) if n == 0 else c for n, c in enumerate(comps)]
        for (i, j), comps in skies.maps.items()
    }
    return replace(skies, maps=maps)


@pytest.mark.parametrize("differ", [False, True])
def test_sky_temperatures_are_the_sum_over_each_cells_map(differ):
    sc, grid, skies = _skies()
    if differ:
        skies = _some_maps_differ(skies)
    gains = snr.antenna_gains(sc.antennas, sc.freq_hz, grid, sc.targets)
    got = snr.sky_temperatures(gains, skies)
    want = np.zeros_like(got.by_component)
    for (i, j), comps in skies.maps.items():
        for c in comps:
            row = skies.names.index(c.name)
            for a, cache in enumerate(gains.caches):
                want[row, a, i, j] = float(np.dot(cache.on(c.directions), c.weight_k_sr)) / (4 * np.pi)
    np.testing.assert_allclose(got.by_component, want, rtol=1e-12, atol=0)
    # the same sky asked again (a later pass of the products) reads its groups as made
    again = snr.sky_temperatures(gains, skies)
    np.testing.assert_array_equal(again.by_component, got.by_component)


def test_an_arrays_noise_form_is_the_sum_of_each_cells_forms():
    sc, _, skies = _skies()
    ants = [(k, a) for k, a in enumerate(sc.antennas) if k > 0 and hasattr(a, "element_responses")]
    assert ants, "the demo holds a phasing unit"
    k, ant = ants[0]
    _, noise, _ = sky_forms(sc, skies, ant, k)
    placed = placed_forms(sc, skies, ant)  # a placed source as each element hears it where it stands
    assert placed, "the demo holds a placed source"
    want = 0
    for comps in skies.maps.values():
        for c in comps:
            if c.name in placed:
                continue
            r = ant.element_responses(sc.freq_hz, c.directions.azimuth_rad, c.directions.elevation_rad)
            want = want + quadratic_form(*r, c.weight_k_sr / (4 * np.pi))
    want = want / len(skies.maps) + sc.chains[k].temperature_k * ant.norm_matrix(sc.freq_hz) + sum(placed.values())
    np.testing.assert_allclose(noise, want, rtol=1e-12, atol=1e-12 * np.abs(want).max())
