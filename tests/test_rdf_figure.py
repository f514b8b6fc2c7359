"""A long wire's RDF termination figure from the quadratic form in the far load (LongWire.rdf_figure) gives the
pattern's figure (termination_figure of termination_pattern) to rounding, and the same best resistor."""

from __future__ import annotations

import numpy as np
import pytest

from snrgain.antennas.longwire import AUTO_ELEVATION_RAD, best_resistor, termination_figure
from snrgain.scenario import antenna_from_table

FREQ_HZ = 1.83e6


@pytest.mark.parametrize(
    "spec",
    [
        {"family": "beverage", "length": "200 m", "height": "2 m", "bearing": 45},
        {"family": "beverage", "length": "123.4 m", "height": "0.5 m", "bearing": 301.7},
        {"family": "beverage", "length": "250 m", "height": "3 m", "bearing": 0, "far_ground": "80 ohm"},
        {"family": "bog", "length": "80 m", "bearing": 170},
    ],
)
def test_the_quadratic_form_gives_the_patterns_figure_and_resistor(spec):
    ant = antenna_from_table(
        dict(spec, name="w"), "candidate 'w'", site_ground="moist loam", base_dir=None, freq_hz=FREQ_HZ
    )
    old = termination_figure(ant.termination_pattern(FREQ_HZ), ant.bearing_rad, AUTO_ELEVATION_RAD, "rdf")
    new = ant.rdf_figure(FREQ_HZ, ant.bearing_rad, AUTO_ELEVATION_RAD)
    r = np.geomspace(1.0, 1e5, 200)
    np.testing.assert_allclose(new(r), old(r), rtol=1e-12)
    assert float(new(437.0)) == pytest.approx(float(old(437.0)), rel=1e-12)
    assert best_resistor(new) == pytest.approx(best_resistor(old), rel=1e-12)
