"""Directional noise skies: P.372 levels spread over the directions of arrival.

A sky component is a set of directions with a weight each, the brightness
temperature times the solid angle it stands for [K sr].  The antenna
temperature of an antenna with total gain G (linear, 0 below the horizon) is

    T_A = (1 / 4 pi) * sum_i G_i * W_i.

Each component is normalised against the antenna P.372 refers its Fa to, the
short lossless vertical monopole over a perfect ground plane, whose gain is
G_ref = 3 cos^2(elevation) above the horizon (directivity 1.5 doubled by the
ground plane, 4.77 dBi): that antenna, integrated over the component, returns
the component's Fa.  This module knows nothing of other antennas.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from noisemodels import p372
from noisemodels.hops import EARTH_RADIUS_M
from noisemodels.sphere import Directions, angular_distance_rad


def reference_monopole_gain(elevation_rad):
    """Total gain (linear) of P.372's reference antenna: 3 cos^2(el), 0 below the horizon."""
    el = np.asarray(elevation_rad, dtype=float)
    return np.where(el >= 0.0, 3.0 * np.cos(el) ** 2, 0.0)


@dataclass(frozen=True, eq=False)
class SkyComponent:
    """One noise component of the sky.

    Attributes
    ----------
    name : label shown to users
    kind : "man-made", "galactic", "atmospheric" or "local"
    directions : where the component's power arrives from
    weight_k_sr : brightness temperature times solid angle per direction [K sr]
    level : Fa with decile deviations as the reference monopole sees this
        component [dB above kT0b]; for galactic noise this is after the
        ionosphere's screening, so it can lie below P.372's free-sky value.
    """

    name: str
    kind: str
    directions: Directions
    weight_k_sr: np.ndarray
    level: p372.NoiseLevel

    def scaled(self, factor: float) -> SkyComponent:
        """The component with its power multiplied by ``factor`` (deciles kept)."""
        fa = np.asarray(self.level.fa_db) + 10.0 * np.log10(factor)
        return replace(
            self,
            weight_k_sr=self.weight_k_sr * factor,
            level=p372.NoiseLevel(fa, self.level.du_db, self.level.dl_db),
        )


_MONOPOLE: dict[int, tuple] = {}


def _monopole_on(directions: Directions) -> np.ndarray:
    """:func:`reference_monopole_gain` on a direction set, made once per set (every hour's components of a sky are
    normalised on the same few sets)."""
    held = _MONOPOLE.get(id(directions))
    if held is None or held[0] is not directions:
        if len(_MONOPOLE) >= 64:
            _MONOPOLE.clear()
        gain = reference_monopole_gain(directions.elevation_rad)
        gain.setflags(write=False)
        held = _MONOPOLE[id(directions)] = (directions, gain)
    return held[1]


def weighted_temperature_k(gain_linear, weight_k_sr) -> float:
    """(1 / 4 pi) * sum(G * W): antenna temperature [K] of gains on a component."""
    return float(np.dot(gain_linear, weight_k_sr) / (4.0 * np.pi))


def reference_temperature_k(component: SkyComponent) -> float:
    """Antenna temperature [K] of P.372's reference monopole on a component."""
    return weighted_temperature_k(_monopole_on(component.directions), component.weight_k_sr)


# -- elevation and azimuth distributions (brightness shapes, unnormalised) ----


def elevation_low(elevation_rad, *, scale_rad):
    """Brightness falling off from the horizon as exp(-el / scale).

    An assumption of snrgain for man-made noise, which arrives mostly at low
    angles (ground wave and nearby sources); not a P.372 model.
    """
    return np.exp(-np.asarray(elevation_rad) / scale_rad)


def elevation_band(elevation_rad, *, center_rad, width_rad):
    """Gaussian band of brightness around an elevation (a sky-wave arrival band)."""
    return np.exp(-0.5 * ((np.asarray(elevation_rad) - center_rad) / width_rad) ** 2)


def elevation_uniform(elevation_rad):
    """Brightness independent of elevation."""
    return np.ones_like(np.asarray(elevation_rad, dtype=float))


ELEVATION_SHAPES = {
    "low": elevation_low,
    "band": elevation_band,
    "uniform": elevation_uniform,
}


def azimuth_uniform(azimuth_rad):
    """Brightness independent of bearing."""
    return np.ones_like(np.asarray(azimuth_rad, dtype=float))


def azimuth_sector(azimuth_rad, *, start_rad, stop_rad, contrast_db):
    """Brightness ``contrast_db`` higher inside a sector (clockwise from start to stop)."""
    az = np.mod(np.asarray(azimuth_rad) - start_rad, 2 * np.pi)
    span = np.mod(stop_rad - start_rad, 2 * np.pi) or 2 * np.pi
    inside = az <= span
    return np.where(inside, 10.0 ** (contrast_db / 10.0), 1.0)


AZIMUTH_SHAPES = {
    "uniform": azimuth_uniform,
    "sector": azimuth_sector,
}


def _shape(registry, name, x, params):
    try:
        fn = registry[name]
    except KeyError:
        valid = ", ".join(repr(k) for k in registry)
        raise ValueError(f"distribution must be one of {valid}; got {name!r}") from None
    return fn(x, **params)


def normalised_component(name, kind, directions, shape, level) -> SkyComponent:
    """A component with brightness ``shape`` (per sr, any scale) scaled so the reference monopole sees ``level``."""
    weights = np.asarray(shape, dtype=float) * directions.solid_angle_sr
    t_ref = weighted_temperature_k(_monopole_on(directions), weights)
    if not t_ref > 0:
        raise ValueError(f"noise component {name!r} has no power in directions the reference antenna sees")
    target = p372.fa_to_temperature_k(level.fa_db)
    return SkyComponent(name, kind, directions, weights * (target / t_ref), level)


def diffuse_component(
    name: str,
    *,
    kind: str,
    level: p372.NoiseLevel,
    directions: Directions,
    elevation: str = "uniform",
    elevation_params: dict | None = None,
    azimuth: str = "uniform",
    azimuth_params: dict | None = None,
) -> SkyComponent:
    """A component spread over ``directions`` by an elevation and an azimuth shape.

    Normalised so that the reference monopole sees ``level.fa_db``.
    """
    shape = _shape(ELEVATION_SHAPES, elevation, directions.elevation_rad, elevation_params or {})
    shape = shape * _shape(AZIMUTH_SHAPES, azimuth, directions.azimuth_rad, azimuth_params or {})
    return normalised_component(name, kind, directions, shape, level)


def penetration_elevation_rad(freq_hz, *, critical_freq_hz, layer_height_m):
    """Lowest elevation [rad] at which a wave from space passes the ionosphere.

    A thin layer of critical frequency fc at height h reflects a wave whose
    angle of incidence i at the layer satisfies f cos(i) <= fc (the secant
    law); on a spherical earth sin(i) = R cos(el) / (R + h).  The wave passes
    where cos(el) < ((R + h) / R) sqrt(1 - (fc / f)^2).  Returns 0 when every
    elevation passes and NaN when none does (f <= fc).

    Reference: the secant law and its spherical-earth form, e.g. K. Davies,
    "Ionospheric Radio", Peter Peregrinus / IEE (1990), Section 5 (oblique
    propagation) -- cited from memory and not verified; the spherical form is
    the law of sines in the triangle earth centre, ground point, layer point,
    and the tests check its flat-earth limit, sin(el) = fc / f.
    """
    f = np.asarray(freq_hz, dtype=float)
    fc = np.asarray(critical_freq_hz, dtype=float)
    ratio = np.clip(fc / f, 0.0, None)
    with np.errstate(invalid="ignore"):
        rhs = (EARTH_RADIUS_M + layer_height_m) / EARTH_RADIUS_M * np.sqrt(1.0 - ratio**2)
        el = np.where(ratio >= 1.0, np.nan, np.arccos(np.clip(rhs, -1.0, 1.0)))
    return el


def galactic_component(
    freq_hz: float,
    *,
    directions: Directions,
    critical_freq_hz: float,
    layer_height_m: float,
    name: str = "galactic",
) -> SkyComponent:
    """Galactic noise of P.372 Section 6, screened by the ionosphere.

    The brightness is uniform and scaled so that a reference monopole under a
    clear sky would see P.372's galactic Fa; directions below the penetration
    elevation then carry none.  The component's ``level`` is what the
    reference monopole actually sees (lower than P.372's value, or -inf dB
    when the ionosphere screens the whole sky).
    """
    free_sky = p372.galactic(freq_hz)
    full = normalised_component(name, "galactic", directions, elevation_uniform(directions.elevation_rad), free_sky)
    el_min = penetration_elevation_rad(freq_hz, critical_freq_hz=critical_freq_hz, layer_height_m=layer_height_m)
    visible = np.zeros(directions.size, dtype=bool) if np.isnan(el_min) else directions.elevation_rad >= el_min
    weights = np.where(visible, full.weight_k_sr, 0.0)
    t_ref = weighted_temperature_k(_monopole_on(directions), weights)
    with np.errstate(divide="ignore"):
        fa = float(p372.temperature_to_fa_db(t_ref)) if t_ref > 0 else -np.inf
    return SkyComponent(name, "galactic", directions, weights, p372.NoiseLevel(fa, free_sky.du_db, free_sky.dl_db))


def compact_source_directions(
    azimuth_rad: float, elevation_rad: float, spread_rad: float, *, label: str = ""
) -> Directions:
    """Sample directions of a source with a Gaussian angular profile.

    The profile is exp(-d^2 / (2 spread^2)) in the angle d from the centre,
    sampled on a 13 x 13 grid over +-3 spread in the tangent plane; the
    weights (in ``solid_angle_sr``) are the profile's share of the source.
    Points below the horizon are dropped.  ``spread_rad == 0`` gives one point.
    """
    if spread_rad <= 0:
        return Directions(np.array([azimuth_rad % (2 * np.pi)]), np.array([elevation_rad]), np.array([1.0]), label)
    ce, se = np.cos(elevation_rad), np.sin(elevation_rad)
    ca, sa = np.cos(azimuth_rad), np.sin(azimuth_rad)
    d0 = np.array([ce * sa, ce * ca, se])  # east, north, up
    e_az = np.array([ca, -sa, 0.0])  # toward increasing bearing
    e_el = np.array([-se * sa, -se * ca, ce])  # toward increasing elevation
    t = np.linspace(-3.0, 3.0, 13) * np.tan(min(spread_rad, np.radians(25.0)))
    x, y = np.meshgrid(t, t)
    v = d0[None, :] + x.reshape(-1, 1) * e_az[None, :] + y.reshape(-1, 1) * e_el[None, :]
    v /= np.linalg.norm(v, axis=1, keepdims=True)
    el = np.arcsin(np.clip(v[:, 2], -1.0, 1.0))
    az = np.mod(np.arctan2(v[:, 0], v[:, 1]), 2 * np.pi)
    d = angular_distance_rad(az, el, azimuth_rad, elevation_rad)
    w = np.exp(-0.5 * (d / spread_rad) ** 2)
    keep = el >= 0.0
    if not np.any(keep):
        raise ValueError("a compact noise source lies wholly below the horizon")
    w = w[keep] / w[keep].sum()
    return Directions(az[keep], el[keep], w, label)


def compact_component(
    name: str,
    *,
    level: p372.NoiseLevel,
    azimuth_rad: float,
    elevation_rad: float,
    spread_rad: float,
    kind: str = "local",
) -> SkyComponent:
    """A local source centred on a direction, normalised to ``level`` on the reference monopole."""
    directions = compact_source_directions(azimuth_rad, elevation_rad, spread_rad, label=name)
    return normalised_component(name, kind, directions, np.ones(directions.size), level)


def total_level(components: list[SkyComponent]) -> p372.NoiseLevel:
    """Fa and deciles of the sum of components on the reference monopole (P.372 Section 8)."""
    return p372.combine_present([c.level for c in components])
