"""Auto steering of arrays (RDF, front-to-back, SNR) against brute-force scans, and its bad input."""

import numpy as np
import pytest

from noisemodels.sphere import upper_hemisphere
from snrgain import snr
from snrgain.antennas import SpecError, from_spec
from snrgain.ground import C_M_PER_S

F = 1.83e6
LAM = C_M_PER_S / F
GRID = upper_hemisphere(32)
EL20 = np.radians(20.0)


def _rdf(ant, bearing_deg=0.0) -> float:
    """RDF [dB] toward the bearing at 20 deg: the gain there over the sphere-averaged gain (snrgain.snr)."""
    g = ant.gain_linear(F, GRID.azimuth_rad, GRID.elevation_rad)
    toward = ant.gain_linear(F, np.array([np.radians(bearing_deg)]), np.array([EL20]))[0]
    return snr.rdf_db(toward, snr.sphere_mean_gain(g, GRID))


def _fb(ant, bearing_deg=0.0) -> float:
    return float(ant.gain_dbi(F, bearing_deg, 20.0) - ant.gain_dbi(F, bearing_deg + 180.0, 20.0))


def _pair(spacing_m, **extra):
    return from_spec(
        {
            "family": "phased-verticals",
            "positions": [[0, 0], [0, spacing_m]],
            "height": "5 m",
            "bearing": 0,
            "ground": "moist loam",
            **extra,
        }
    )


def test_auto_rdf_at_an_eighth_wave_matches_a_brute_force_scan():
    # A fine scan of the second element's phase lag (0.5 deg steps) against auto steering for RDF: within 0.2 dB
    # of the scan's best.  The travel-time delay (45 deg at lambda/8) falls far short (measured: about 4 dB).
    auto = _pair(LAM / 8)
    scan = [_rdf(_pair(LAM / 8, steering="given", phases=[0, p], phase_sense="lag")) for p in np.arange(0, 360, 0.5)]
    best = max(scan)
    assert _rdf(auto) >= best - 0.2
    assert _rdf(auto) <= best + 0.05  # no better than the scan can be, up to grid and step
    end_fire = _pair(LAM / 8, auto_for="end-fire")
    assert _rdf(end_fire) < best - 2.0
    d = auto.describe()
    assert d["steering"] == "auto (rdf)" and d["phase_sense"] == "lag" and len(d["delays_ns"]) == 2
    assert d["delays_ns"][1] == pytest.approx(d["phases_deg"][1] / 360.0 / F * 1e9, rel=1e-9)


def test_auto_rdf_four_square_beats_or_equals_quadrature_phasing():
    # A lambda/4 four-square steered on its diagonal (45 deg): the usual quadrature phasing (each element lagging
    # 90 deg more than the one behind it: front 180, sides 90, back 0; common practice) against auto RDF: auto at
    # least as good (phases only).
    q = LAM / 4
    pos = [[q, q], [0, q], [q, 0], [0, 0]]  # front (NE corner), two sides, back
    base = {"family": "phased-verticals", "positions": pos, "height": "5 m", "bearing": 45, "ground": "moist loam"}
    quad = from_spec({**base, "steering": "given", "phases": [180, 90, 90, 0], "phase_sense": "lag"})
    auto = from_spec(base)
    assert _rdf(auto, 45) >= _rdf(quad, 45) - 0.01
    assert _rdf(quad, 45) > 6.0


def test_auto_front_to_back_puts_a_null_behind():
    ant = _pair(LAM / 8, auto_for="front_to_back")
    assert _fb(ant) > 40
    assert _fb(ant) > _fb(_pair(LAM / 8)) + 10  # RDF steering trades rear depth for a narrower front


def test_auto_amplitudes_reach_the_free_optimum():
    # With free amplitudes the weights are the generalised eigenvector: at least the phase-only optimum.
    free = _pair(LAM / 8, auto_amplitudes=True)
    phases = _pair(LAM / 8)
    assert _rdf(free) >= _rdf(phases) - 0.02


def test_steering_bad_input():
    with pytest.raises(SpecError, match="elements 1 and 2 stand at the same point"):
        from_spec({"family": "phased-verticals", "positions": [[0, 0], [0, 0]], "height": "5 m"})
    with pytest.raises(SpecError, match="amplitude is zero"):
        from_spec(
            {
                "family": "phased-verticals",
                "positions": [[0, 0], [0, 20]],
                "height": "5 m",
                "steering": "given",
                "delays": ["0 ns", "50 ns"],
                "amplitudes": [0, 0],
            }
        )
    with pytest.raises(SpecError, match="auto_amplitudes"):
        _pair(20.0, auto_for="front_to_back", auto_amplitudes=True)
    with pytest.raises(SpecError, match="auto_for"):
        _pair(20.0, auto_for="loudest")
