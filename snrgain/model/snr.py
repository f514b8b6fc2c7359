"""The integrator: antenna temperatures, directivity figures and SNR.

Definitions used throughout (DESIGN.md, "SNR"):

- Antenna temperature: T_A = (1 / 4 pi) * sum over sky samples of G * W, with
  W the component's brightness times solid angle [K sr] (noisemodels.sky).
- Signal: S = sum over a target's directions of weight * G (total gain;
  signal and noise of unknown polarization).
- SNR gain of A over the reference R: (S_A / N_A) / (S_R / N_R) with
  N = k b (T_A + T_rx).
- RDF (receiving directivity factor): gain toward the target over the gain
  averaged over the whole sphere (4 pi sr, the gain being 0 below the
  horizon), in dB: the scale of the trade's RDF tables.  A quarter-wave
  vertical over a perfect ground reads 5.15 dB toward the horizon and a short
  one 4.77 dB (their directivities: J. D. Kraus, "Antennas", 2nd ed. (1988),
  Sections 5-6 and 16-3); an antenna with gain 1 over the upper hemisphere
  reads 3.01 dB.  Under a uniform sky with no receiver noise, the SNR gain is
  the difference of the RDFs.
- Front-to-back: gain toward the target's principal direction over the gain
  at the same elevation from the opposite bearing, in dB.
"""

from __future__ import annotations

import numpy as np

from noisemodels.sky import SkyComponent, weighted_temperature_k
from noisemodels.sphere import Directions
from snrgain.memo import Memo
from snrgain.records import record


def hemisphere_mean_gain(gain_on_grid, grid: Directions) -> float:
    """Gain averaged over the upper hemisphere: sum(G dOmega) / (2 pi) [-]."""
    return float(np.dot(gain_on_grid, grid.solid_angle_sr) / (2.0 * np.pi))


def sphere_mean_gain(gain_on_grid, grid: Directions) -> float:
    """Gain averaged over the whole sphere, 0 below the horizon: sum(G dOmega) / (4 pi) [-] (the RDF's divisor)."""
    return float(np.dot(gain_on_grid, grid.solid_angle_sr) / (4.0 * np.pi))


def target_gain(gain_fn, target) -> float:
    """Weighted total gain toward a target's directions [-] (gain_fn(az, el) -> linear)."""
    return float(np.dot(target.weight, gain_fn(target.azimuth_rad, target.elevation_rad)))


def rdf_db(gain_toward_target: float, mean_gain: float) -> float:
    """RDF [dB]: gain toward the target over the averaged gain (:func:`sphere_mean_gain` on the trade's scale)."""
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


# -- the integrator's steps over a whole scenario --------------------------------------------------------------


@record
class Gains:
    """Every antenna's gains: a cache per antenna for any sky sample set, toward each target, and averaged.

    caches : one :class:`GainCache` per antenna (linear gain on any Directions)
    toward : weighted total gain toward each target [-], shape (antennas, targets)
    mean : gain averaged over the whole sphere (0 below the horizon) [-], shape (antennas,)
    """

    caches: list[GainCache]
    toward: np.ndarray
    mean: np.ndarray


def antenna_gains(antennas, freq_hz: float, grid: Directions, targets) -> Gains:
    """Gains of every antenna on the sky grid and toward every target at one frequency [Hz]."""
    caches = [GainCache(lambda az, el, a=a: a.gain_linear(freq_hz, az, el)) for a in antennas]
    toward = np.zeros((len(caches), len(targets)))
    if targets:  # every target's directions in one call per antenna
        az = np.concatenate([t.azimuth_rad for t in targets])
        el = np.concatenate([t.elevation_rad for t in targets])
        w = np.concatenate([t.weight for t in targets])
        which = np.repeat(np.arange(len(targets)), [len(t.weight) for t in targets])
        for k, c in enumerate(caches):
            toward[k] = np.bincount(which, weights=w * c.gain_fn(az, el), minlength=len(targets))
    mean = np.array([sphere_mean_gain(c.on(grid), grid) for c in caches])
    return Gains(caches, toward, mean)


@record
class Temperatures:
    """Antenna temperatures [K] from the sky: ``by_component`` (components, antennas, months, hours), ``total`` its
    sum over components (antennas, months, hours)."""

    by_component: np.ndarray
    total: np.ndarray


def sky_temperatures(gains: Gains, skies, *, pickup=None, strength_db=None) -> Temperatures:
    """Each antenna's temperature from each component of a :class:`snrgain.sky.noise.SkySeries` built with maps.

    ``gains.caches[0]`` is the reference.  ``pickup`` (name -> array (antennas,), :func:`snrgain.model.placed.pickup`):
    a placed source is integrated through the reference's pattern where the sky places it, and every antenna
    takes that times its share (it hears the source from where it stands).  ``strength_db`` (name -> dB): a
    component's strength relative to the sky's (a local source re-read on a reference at another ground).
    """
    if skies.maps is None:
        raise ValueError("antenna temperatures need the sky's maps; build the skies with maps=True")
    pickup = pickup or {}
    nm, nh = len(skies.months), len(skies.utc_hours)
    out = np.zeros((len(skies.names), len(gains.caches), nm, nh))
    index = {n: i for i, n in enumerate(skies.names)}
    for row, directions, name, w, of_cell, ii, jj in _sky_groups(skies, index):
        if name in pickup:  # heard through the reference's pattern, then each antenna's share
            t = _product(np.atleast_2d(gains.caches[0].on(directions)), w)[:, of_cell] / (4.0 * np.pi)  # (1, cells)
            out[row, :, ii, jj] = (pickup[name][:, None] * t).T
        else:
            g = np.array([cache.on(directions) for cache in gains.caches])  # (antennas, directions)
            out[row, :, ii, jj] = (_product(g, w)[:, of_cell] / (4.0 * np.pi)).T
    for name, db in (strength_db or {}).items():
        out[index[name]] *= 10.0 ** (db / 10.0)
    return Temperatures(out, out.sum(axis=0))


_GROUPS = Memo(4)
"""A sky's cells grouped for :func:`sky_temperatures`, by the sky (held, so its id stays its own)."""


def _sky_groups(skies, index: dict) -> list[tuple]:
    """Cells whose component shares one set of directions, to be integrated at once: the antennas' gains on that set
    (antennas, directions) times the cells' brightness (cells, directions), one product per set.  A list of (row,
    directions, name, the distinct brightness maps (maps, directions), each cell's map (cells,), month indices,
    hour indices); made once per sky (every pass of the products under one sky reads the same).  A component the
    same at every hour (man-made noise, a placed source; the galactic noise where the ionosphere screens it) is
    integrated once, not once per cell: the same sums, so the same temperatures to the bit."""

    def make():
        groups: dict[tuple[int, int], tuple] = {}
        for (i, j), comps in skies.maps.items():
            for c in comps:
                key = (index[c.name], id(c.directions))
                groups.setdefault(key, (c.directions, c.name, []))[2].append((i, j, c.weight_k_sr))
        out = []
        for (row, _), (directions, name, cells) in groups.items():
            w = np.array([wk for _, _, wk in cells])  # (cells, directions)
            if np.array_equal(w, np.broadcast_to(w[:1], w.shape)):  # the same map at every hour
                maps, of_cell = w[:1], np.zeros(len(w), dtype=int)
            else:  # the distinct maps, in order of first use (by their bytes: exact equality)
                first: dict[bytes, int] = {}
                of_cell = np.array([first.setdefault(m.tobytes(), len(first)) for m in w])
                maps = w if len(first) == len(w) else w[[list(of_cell).index(k) for k in range(len(first))]]
            maps.flags.writeable = False
            ii = np.array([i for i, _, _ in cells])
            out.append((row, directions, name, maps, of_cell, ii, np.array([j for _, j, _ in cells])))
        return skies, out

    held, out = _GROUPS.get(id(skies), make)
    if held is not skies:  # a sky let go, another at its address: made afresh
        _GROUPS.clear()
        held, out = _GROUPS.get(id(skies), make)
    return out


SMALL_PRODUCT = 20_000_000
"""Below this many multiply-adds a product is summed by einsum in this thread: a multithreaded BLAS call costs
more in waking its threads (and far more on a loaded machine) than such a product takes."""


def _product(g: np.ndarray, w: np.ndarray) -> np.ndarray:
    """g @ w.T for gains (antennas, directions) and brightness (cells, directions)."""
    if g.shape[0] * g.shape[1] * w.shape[0] <= SMALL_PRODUCT:
        return np.einsum("ap,cp->ac", g, w)
    return g @ w.T


def front_to_back_toward(gains: Gains, targets) -> np.ndarray:
    """Front-to-back [dB] of each antenna toward each target at its mean elevation, shape (antennas, targets)."""
    return np.array(
        [
            [
                front_to_back_db(c.gain_fn, bearing_rad=t.bearing_rad, elevation_rad=t.mean_elevation_rad)
                for t in targets
            ]
            for c in gains.caches
        ]
    ).reshape(len(gains.caches), len(targets))


AZIMUTH_CUT_DEG = np.arange(0.0, 360.5, 1.0)
ELEVATION_CUT_DEG = np.arange(0.0, 90.25, 0.5)


def pattern_cuts(antennas, freq_hz: float, targets) -> tuple[np.ndarray, np.ndarray]:
    """Total gain [dBi] of each antenna on an azimuth cut at each target's mean elevation and on an elevation cut
    toward each target's bearing: arrays (antennas, targets, AZIMUTH_CUT_DEG) and (antennas, targets,
    ELEVATION_CUT_DEG)."""
    n_az, n_el = len(AZIMUTH_CUT_DEG), len(ELEVATION_CUT_DEG)
    cut_az = np.concatenate(  # every target's two cuts as one set of directions [deg]
        [np.concatenate([AZIMUTH_CUT_DEG, np.full(n_el, np.degrees(t.bearing_rad))]) for t in targets] or [[]]
    )
    cut_el = np.concatenate(
        [np.concatenate([np.full(n_az, np.degrees(t.mean_elevation_rad)), ELEVATION_CUT_DEG]) for t in targets] or [[]]
    )
    g = np.array([a.gain_dbi(freq_hz, cut_az, cut_el) for a in antennas]).reshape(len(antennas), len(targets), -1)
    return g[:, :, :n_az], g[:, :, n_az:]


def snr_gain_over_reference(toward, noise_k) -> np.ndarray:
    """SNR gain [dB] of every antenna over antenna 0 (the reference), per target, month and hour.

    ``toward`` (antennas, targets): gains toward the targets; ``noise_k`` (antennas, months, hours): total noise
    temperature at the antenna terminals (sky plus chain).  Returns (antennas, targets, months, hours).
    """
    signal = np.asarray(toward)[:, :, None, None]
    noise = np.asarray(noise_k)[:, None]
    return snr_gain_db(signal, noise, signal[:1], noise[:1])


def snr_gain_with_scaled_kind(toward, sky_k, chain_k, skies, *, kind: str, deviation: str) -> np.ndarray | None:
    """SNR gain over the reference [dB] with the components of ``kind`` moved to their upper (``deviation="upper"``)
    or lower (``"lower"``) decile, the rest at their medians; None if the sky has no such component.

    ``sky_k`` are :class:`Temperatures`; ``chain_k`` the chains' temperatures [K] per antenna.  The deviation is the
    first such component's, per month and hour.  Shape (antennas, targets, months, hours).
    """
    rows = skies.index(kind)
    if not rows:
        return None
    dev = skies.du_db[rows[0]] if deviation == "upper" else -skies.dl_db[rows[0]]
    part = sky_k.by_component[rows].sum(axis=0)
    noise = sky_k.total + part * (10.0 ** (dev / 10.0) - 1.0) + np.asarray(chain_k)[:, None, None]
    return snr_gain_over_reference(toward, noise)
