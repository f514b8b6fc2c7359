"""The integrator: antenna temperatures, directivity figures and SNR.

Definitions used throughout (DESIGN.md, "SNR"):

- Antenna temperature: T_A = (1 / 4 pi) * sum over sky samples of G * W, with
  W the component's brightness times solid angle [K sr] (noisemodels.sky).
- Signal: S = sum over a target's directions of weight * G (total gain;
  signal and noise of unknown polarization).
- SNR gain of A over the reference R: (S_A / N_A) / (S_R / N_R) with
  N = k b (T_A + T_rx).
- RDF (receiving directivity factor): gain toward the target over the gain
  averaged over the upper hemisphere, in dB.  The average runs over the half
  of the sphere above ground (where G is defined; below the horizon G = 0),
  so an isotropic antenna has RDF 0 dB and, under a uniform sky with no
  receiver noise, the SNR gain is the difference of the RDFs.
- Front-to-back: gain toward the target's principal direction over the gain
  at the same elevation from the opposite bearing, in dB.
"""

from __future__ import annotations

import numpy as np

from noisemodels.sky import SkyComponent, weighted_temperature_k
from noisemodels.sphere import Directions


def hemisphere_mean_gain(gain_on_grid, grid: Directions) -> float:
    """Gain averaged over the upper hemisphere: sum(G dOmega) / (2 pi) [-]."""
    return float(np.dot(gain_on_grid, grid.solid_angle_sr) / (2.0 * np.pi))


def target_gain(gain_fn, target) -> float:
    """Weighted total gain toward a target's directions [-] (gain_fn(az, el) -> linear)."""
    return float(np.dot(target.weight, gain_fn(target.azimuth_rad, target.elevation_rad)))


def rdf_db(gain_toward_target: float, mean_gain: float) -> float:
    """RDF [dB]: gain toward the target over the hemisphere-averaged gain."""
    return 10.0 * np.log10(gain_toward_target / mean_gain)


def front_to_back_db(gain_fn, *, bearing_rad: float, elevation_rad: float) -> float:
    """Front-to-back [dB] at one elevation: G(bearing) / G(bearing + 180 deg)."""
    front = gain_fn(np.array([bearing_rad]), np.array([elevation_rad]))[0]
    back = gain_fn(np.array([bearing_rad + np.pi]), np.array([elevation_rad]))[0]
    with np.errstate(divide="ignore"):
        return float(10.0 * np.log10(front / back))


class GainCache:
    """Gains of one antenna on each sky sample set, evaluated once per set."""

    def __init__(self, gain_fn):
        self.gain_fn = gain_fn
        self._by_set: dict[int, tuple[Directions, np.ndarray]] = {}

    def on(self, directions: Directions) -> np.ndarray:
        key = id(directions)
        hit = self._by_set.get(key)
        if hit is None or hit[0] is not directions:
            g = self.gain_fn(directions.azimuth_rad, directions.elevation_rad)
            self._by_set[key] = (directions, g)
            return g
        return hit[1]


def antenna_temperature_k(cache: GainCache, components: list[SkyComponent]) -> np.ndarray:
    """Antenna temperature [K] from each component (array, same order)."""
    return np.array([weighted_temperature_k(cache.on(c.directions), c.weight_k_sr) for c in components])


def snr_gain_db(signal_a, noise_a, signal_r, noise_r):
    """SNR gain [dB] of A over R from signals (gains) and noise temperatures."""
    return 10.0 * np.log10((np.asarray(signal_a) / np.asarray(noise_a)) / (np.asarray(signal_r) / np.asarray(noise_r)))
