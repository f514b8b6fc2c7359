"""Transmission-line constants of a wire over or on lossy ground.

All pure functions, SI units, phasors exp(+j omega t).  A wire and the earth
form a lossy line with series impedance Z' [ohm/m] and shunt admittance
Y' [S/m]; gamma = sqrt(Z' Y') = alpha + j beta [1/m], Z0 = sqrt(Z'/Y') [ohm],
velocity factor = omega / (beta c), attenuation 20 log10(e) alpha [dB/m].

Wire in the air (height h, radius a, h >> a)
--------------------------------------------
Z' = Z_int + j omega mu0 / (2 pi) * ln(2 (h + p) / a),
p = 1 / sqrt(j omega mu0 (sigma + j omega eps0 eps_r)),
the ground-return impedance in the complex-penetration-depth form of
A. Deri, G. Tevan, A. Semlyen and A. Castanheira, "The complex ground return
plane: a simplified model for homogeneous and multi-layer earth return",
IEEE Trans. PAS-100(8), 3686-3693 (1981).  Y' = j omega 2 pi eps0 / acosh(h / a),
the capacitance of the wire over its image in a perfectly conducting plane
(the ground's own admittance path is neglected for a wire in the air, as is
usual).  Over a perfect ground (p -> 0) and a lossless wire,
Z0 -> 60 ln(2h/a) ohm (the ARRL Antenna Book's 138 log10(4h/d)).

Internal impedance of a round wire with skin effect (exact Bessel form):
Z_int = k / (2 pi a sigma_w) * J0(k a) / J1(k a), k = (1 - j) / delta,
delta = sqrt(2 / (omega mu0 sigma_w)) (S. Ramo, J. R. Whinnery and
T. Van Duzer, "Fields and Waves in Communication Electronics", 3rd ed.
(1994), Section 5.13).

Insulated wire on the ground (snrgain's own model)
--------------------------------------------------
A bare conductor of radius a in insulation of outer radius b (relative
permittivity eps_i), lying on the soil with its axis at height h >= b (grass
and litter hold a wire laid on a lawn a centimetre or two up), or buried at
depth d.  Series: the same Deri form with the axis height (for a buried wire,
the axis depth enters as 0: the return current lies at depth |p| >> d).
Shunt: three admittances in series on the path from the conductor to the
earth's return current:

1. the insulation, a coaxial capacitor: C_i = 2 pi eps0 eps_i / ln(b / a);
2. the air gap from the insulation's surface to the soil (on the surface
   only): C_g = 2 pi eps0 / acosh(h / b) (cylinder over a plane);
3. the soil's spreading admittance from a cylinder of radius b on the
   surface of (or buried in) a conducting half-space,
   Y_s = m pi (sigma + j omega eps0 eps_r) / ln(1.12 / (Gamma_e sqrt(b h_e))),
   Gamma_e = 1/p, with m = 1 on the surface (the current enters one half
   space) and m = 2 buried, after the leakage-admittance form for earth
   electrodes of E. D. Sunde, "Earth Conduction Effects in Transmission
   Systems", Dover (1968), Chapter 5 (cited from memory and not verified: the
   construction is snrgain's own, checked against the exact mode), with h_e = h on the
   surface and the burial depth when buried.

Assumptions: quasi-TEM propagation; soil homogeneous; the air region's
capacitance beyond the gap is absorbed in C_g; the insulation is lossless.
Users can override velocity factor, attenuation and Z0 with measured values
(see :func:`measured_constants`).
"""

from __future__ import annotations

import cmath
import math
from functools import lru_cache
from pathlib import Path

import numpy as np

from snrgain.physics.ground import C_M_PER_S, EPS0_F_PER_M, MU0_H_PER_M, Ground
from snrgain.records import record
from snrgain.units import FT_PER_M

COPPER_S_PER_M = 5.8e7
"""Conductivity of annealed copper [S/m]."""
NP_TO_DB = 20.0 / np.log(10.0)


@record
class LineConstants:
    """Per-metre constants of a line and what follows from them.

    Attributes
    ----------
    freq_hz : frequency [Hz]
    z_series : Z' [ohm/m]
    y_shunt : Y' [S/m]
    gamma : propagation constant alpha + j beta [1/m]
    z0 : characteristic impedance [ohm]
    """

    freq_hz: float
    z_series: complex
    y_shunt: complex
    gamma: complex
    z0: complex

    @property
    def velocity_factor(self) -> float:
        """Phase velocity over c [-]."""
        return float(2 * np.pi * self.freq_hz / (np.imag(self.gamma) * C_M_PER_S))

    @property
    def attenuation_db_per_m(self) -> float:
        return float(np.real(self.gamma) * NP_TO_DB)

    @property
    def attenuation_db_per_100m(self) -> float:
        return 100.0 * self.attenuation_db_per_m

    @property
    def attenuation_db_per_100ft(self) -> float:
        return 100.0 * self.attenuation_db_per_m / FT_PER_M

    def as_dict(self) -> dict:
        return {
            "frequency_hz": self.freq_hz,
            "z0_ohm": [float(np.real(self.z0)), float(np.imag(self.z0))],
            "z0_magnitude_ohm": float(abs(self.z0)),
            "velocity_factor": self.velocity_factor,
            "attenuation_db_per_100m": self.attenuation_db_per_100m,
            "attenuation_db_per_100ft": self.attenuation_db_per_100ft,
            "series_impedance_ohm_per_m": [float(np.real(self.z_series)), float(np.imag(self.z_series))],
            "shunt_admittance_s_per_m": [float(np.real(self.y_shunt)), float(np.imag(self.y_shunt))],
        }


def from_series_shunt(freq_hz: float, z_series: complex, y_shunt: complex) -> LineConstants:
    """gamma = sqrt(Z'Y') (Re >= 0) and Z0 = sqrt(Z'/Y') (Re >= 0); scalars, by cmath (whose principal root has
    Re >= 0 already)."""
    z_series, y_shunt = complex(z_series), complex(y_shunt)
    return LineConstants(
        float(freq_hz), z_series, y_shunt, cmath.sqrt(z_series * y_shunt), cmath.sqrt(z_series / y_shunt)
    )


def measured_constants(
    freq_hz: float, *, velocity_factor: float, attenuation_db_per_100m: float, z0_ohm: complex
) -> LineConstants:
    """Line constants from measured velocity factor, attenuation and Z0."""
    if not 0 < velocity_factor <= 1:
        raise ValueError(f"velocity_factor must lie in (0, 1], got {velocity_factor!r}")
    if attenuation_db_per_100m < 0:
        raise ValueError(f"attenuation must be >= 0 dB/100 m, got {attenuation_db_per_100m!r}")
    beta = 2 * np.pi * freq_hz / (velocity_factor * C_M_PER_S)
    alpha = attenuation_db_per_100m / 100.0 / NP_TO_DB
    gamma = complex(alpha, beta)
    z0 = complex(z0_ohm)
    return LineConstants(float(freq_hz), gamma * z0, gamma / z0, gamma, z0)


def penetration_depth(freq_hz, ground: Ground | None) -> complex:
    """Complex penetration depth p = 1 / sqrt(j omega mu0 (sigma + j omega eps0 eps_r)) [m]; 0 for perfect ground."""
    if ground is None:
        return 0j
    omega = 2 * math.pi * freq_hz
    return 1.0 / cmath.sqrt(
        1j * omega * MU0_H_PER_M * (ground.conductivity_s_per_m + 1j * omega * EPS0_F_PER_M * ground.permittivity)
    )


def wire_internal_impedance(freq_hz, radius_m, conductivity_s_per_m=COPPER_S_PER_M) -> complex:
    """Internal impedance per metre of a round wire with skin effect [ohm/m] (exact Bessel form); kept per wire
    and frequency."""
    return _internal_impedance(float(freq_hz), float(radius_m), float(conductivity_s_per_m))


@lru_cache(maxsize=256)
def _internal_impedance(freq_hz: float, radius_m: float, conductivity_s_per_m: float) -> complex:
    omega = 2 * math.pi * freq_hz
    delta = math.sqrt(2.0 / (omega * MU0_H_PER_M * conductivity_s_per_m))
    k = (1 - 1j) / delta
    ka = k * radius_m
    from snrgain.physics.bessel import j0_over_j1

    ratio = j0_over_j1(ka)
    return complex(k / (2 * math.pi * radius_m * conductivity_s_per_m) * ratio)


def ground_return_term(freq_hz, *, height_m, radius_m, ground: Ground | None) -> complex:
    """j omega mu0 / (2 pi) ln(2 (h + p) / a): external inductance plus ground return [ohm/m] (Deri et al. 1981)."""
    omega = 2 * math.pi * freq_hz
    p = penetration_depth(freq_hz, ground)
    return 1j * omega * MU0_H_PER_M / (2 * math.pi) * cmath.log(2 * (height_m + p) / radius_m)


LINE_MODELS = ("exact", "closed-form")
"""How a wire in the air over ground is solved: the full-wave modal equation (snrgain.physics.modal, the default) or the
quasi-TEM closed form below (its starting guess)."""


def overhead_wire(
    freq_hz: float,
    *,
    radius_m: float,
    height_m: float,
    ground: Ground | None,
    wire_conductivity_s_per_m: float = COPPER_S_PER_M,
    model: str = "exact",
) -> LineConstants:
    """Constants of a single wire in the air over ground: the exact mode (snrgain.physics.modal), or the closed form
    of the module docstring with ``model = "closed-form"``.  Over a perfect ground both are the closed form."""
    _check_geometry(radius_m, height_m)
    if model not in LINE_MODELS:
        raise ValueError(f"line model must be one of {LINE_MODELS}; got {model!r}")
    z_int = wire_internal_impedance(freq_hz, radius_m, wire_conductivity_s_per_m)
    z = z_int + ground_return_term(freq_hz, height_m=height_m, radius_m=radius_m, ground=ground)
    omega = 2 * math.pi * freq_hz
    y = 1j * omega * 2 * math.pi * EPS0_F_PER_M / math.acosh(height_m / radius_m)
    closed = from_series_shunt(freq_hz, z, y)
    if model == "closed-form" or ground is None:
        return closed
    return _exact_or(closed, height_m=height_m, radius_m=radius_m, ground=ground, z_internal=z_int)


def insulated_on_ground(
    freq_hz: float,
    *,
    radius_m: float,
    insulation_radius_m: float,
    insulation_permittivity: float,
    ground: Ground,
    height_m: float | None = None,
    depth_m: float = 0.0,
    wire_conductivity_s_per_m: float = COPPER_S_PER_M,
    model: str = "exact",
) -> LineConstants:
    """Constants of an insulated wire lying on (height_m, its axis above the soil; default the insulation radius:
    resting on it) or buried in (depth_m, its axis below the surface) the soil.  ``model = "exact"`` (the default)
    solves the full-wave mode with the insulation as a coaxial layer (snrgain.physics.modal: wire_over_earth on the
    surface, wire_in_earth buried); "closed-form" takes the shunt-path model of the module docstring."""
    if model not in LINE_MODELS:
        raise ValueError(f"line model must be one of {LINE_MODELS}; got {model!r}")
    if ground is None:
        raise ValueError("a wire on the ground needs a real ground (conductivity and permittivity), not 'perfect'")
    a, b = radius_m, insulation_radius_m
    if not b > a > 0:
        raise ValueError(f"insulation radius ({b:g} m) must exceed the conductor radius ({a:g} m)")
    if not 1.0 <= insulation_permittivity <= 20.0:
        raise ValueError(f"insulation permittivity must lie in [1, 20], got {insulation_permittivity!r}")
    omega = 2 * np.pi * freq_hz
    buried = depth_m > 0
    h = b if height_m is None else height_m
    if buried and depth_m < b:
        raise ValueError(
            f"depth: the wire's axis ({depth_m:g} m) must lie at least its insulation radius ({b:g} m) below the "
            "surface to be buried; give 0 for a wire on the surface"
        )
    if not buried and h < b:
        raise ValueError(f"the wire's axis ({h:g} m) cannot lie below its insulation radius ({b:g} m) on the surface")
    z = wire_internal_impedance(freq_hz, a, wire_conductivity_s_per_m)
    z += ground_return_term(freq_hz, height_m=0.0 if buried else h, radius_m=a, ground=ground)
    y_ins = 1j * omega * 2 * np.pi * EPS0_F_PER_M * insulation_permittivity / np.log(b / a)
    gamma_e = 1.0 / penetration_depth(freq_hz, ground)
    sigma_c = ground.conductivity_s_per_m + 1j * omega * EPS0_F_PER_M * ground.permittivity
    if buried:
        y_soil = 2 * np.pi * sigma_c / np.log(1.12 / (gamma_e * np.sqrt(b * depth_m)))
        inv = 1 / y_ins + 1 / y_soil
    else:
        y_gap = 1j * omega * 2 * np.pi * EPS0_F_PER_M / np.arccosh(max(h / b, 1.0 + 1e-9))
        y_soil = np.pi * sigma_c / np.log(1.12 / (gamma_e * np.sqrt(b * h)))
        inv = 1 / y_ins + 1 / y_gap + 1 / y_soil
    closed = from_series_shunt(freq_hz, z, 1 / inv)
    if model == "closed-form":
        return closed
    z_int = wire_internal_impedance(freq_hz, a, wire_conductivity_s_per_m)
    if buried:
        mode = _mode(
            "wire_in_earth",
            float(freq_hz),
            float(depth_m),
            float(a),
            float(ground.permittivity),
            float(ground.conductivity_s_per_m),
            complex(z_int),
            complex(closed.gamma),
            float(b),
            float(insulation_permittivity),
        )
        return closed if mode is None else from_series_shunt(freq_hz, mode[1], mode[2])
    return _exact_or(
        closed, height_m=h, radius_m=a, ground=ground, z_internal=z_int, insulation=(b, insulation_permittivity)
    )


def _exact_or(
    closed: LineConstants, *, height_m, radius_m, ground: Ground, z_internal, insulation=None
) -> LineConstants:
    """The exact mode (snrgain.physics.modal) started from the closed-form constants ``closed``; those where it does not
    settle.  ``insulation``: (outer radius [m], relative permittivity) of an insulated wire."""
    mode = _mode(
        "wire_over_earth",
        float(closed.freq_hz),
        float(height_m),
        float(radius_m),
        float(ground.permittivity),
        float(ground.conductivity_s_per_m),
        complex(z_internal),
        complex(closed.gamma),
        *(() if insulation is None else (float(insulation[0]), float(insulation[1]))),
    )
    return closed if mode is None else from_series_shunt(closed.freq_hz, mode[1], mode[2])


WIRE_MODE_VERSION = 1
"""Part of the persistent cache's key of the wire modes (:func:`_mode`); bump it when what they hold changes in a way
the key's code digest (the sources of snrgain.physics.modal and of what it reads) would not show."""


@lru_cache(maxsize=256)
def _mode(solver: str, *args):
    """``snrgain.physics.modal.<solver>(*args)`` ((gamma, Z', Y') or None), kept in the persistent cache by its
    arguments and the solver's code (:func:`noisemodels.skycache.remembered`, kind "wiremode"): a later run reads the
    numbers back, to the bit, instead of iterating the modal equation again.  Kept in this process too (by the
    arguments: a hit costs no key's hash).  With the persistent cache off the mode is solved at once (no key made)."""
    from noisemodels import skycache

    def compute():
        from snrgain.physics import modal  # only to solve afresh: a warm cache's rank never loads it

        mode = getattr(modal, solver)(*args)
        return np.zeros(0, dtype=complex) if mode is None else np.array(mode, dtype=complex)

    if not skycache.enabled():
        from snrgain.physics import modal

        mode = getattr(modal, solver)(*args)
        return None if mode is None else tuple(complex(v) for v in mode)
    key = {"version": WIRE_MODE_VERSION, "code": _mode_code(), "solver": solver, "args": list(args)}
    kept = skycache.remembered("wiremode", key, compute, dtype=complex, shapes=((0,), (3,)))
    return None if kept.size == 0 else tuple(complex(v) for v in kept)


_MODE_FILES: list = []


def _mode_code() -> str:
    """The digest of the code the wire modes come from (part of :func:`_mode`'s key): snrgain.physics.modal's source
    (not imported) and what it reads (their paths found once per process)."""
    from noisemodels import skycache

    if not _MODE_FILES:
        import noisemodels.groundwave
        from snrgain.physics import ground, quadrature

        modal_file = str(Path(ground.__file__).with_name("modal.py"))
        _MODE_FILES.extend((modal_file, noisemodels.groundwave.__file__, ground.__file__, quadrature.__file__))
    return skycache.code_digest(*_MODE_FILES)


def _check_geometry(radius_m, height_m):
    if not radius_m > 0:
        raise ValueError(f"wire radius must be > 0 m, got {radius_m!r}")
    if not height_m > radius_m:
        raise ValueError(f"wire height ({height_m:g} m) must exceed its radius ({radius_m:g} m)")


def awg_diameter_m(gauge: int) -> float:
    """Diameter of American Wire Gauge ``gauge`` [m]: d = 0.127 mm * 92^((36 - n) / 39) (ASTM B258)."""
    if not -3 <= gauge <= 40:
        raise ValueError(f"AWG gauge must lie between -3 (0000) and 40, got {gauge!r}")
    return 0.127e-3 * 92.0 ** ((36 - gauge) / 39.0)


def max_effective_length_m(wavelength_m: float, *, velocity_factor: float, elevation_rad: float = 0.0) -> float:
    """The traditional maximum-effective-length rule, L = lambda / (4 (1/k - cos alpha)) [m].

    The length at which the wave on the wire (velocity factor k) and the
    incoming wave at elevation alpha drift 90 deg apart over the wire
    (common practice; the rule of travelling-wave antenna design).  A wave on the wire as fast as the incoming
    one's projection along it or faster (over a ground of nearly air's constants the line model can give a velocity
    factor a hair above 1) never drifts 90 deg: no bound (inf).
    """
    if not velocity_factor > 0:
        raise ValueError(f"velocity_factor must be > 0, got {velocity_factor!r}")
    denom = 1.0 / velocity_factor - np.cos(elevation_rad)
    if denom <= 0:
        return float("inf")
    return float(wavelength_m / (4.0 * denom))


def input_impedance(line: LineConstants, *, length_m: float, load_ohm: complex | None) -> complex:
    """Impedance looking into a line of length L ending in ``load_ohm`` (None: open) [ohm]; an array of loads gives
    an array of impedances."""
    t = np.tanh(line.gamma * length_m)
    if load_ohm is None:
        return complex(line.z0 / t)
    z = line.z0 * (load_ohm + line.z0 * t) / (line.z0 + load_ohm * t)
    return complex(z) if np.ndim(z) == 0 else z


def mismatch_factor(z_source: complex, z_load: complex) -> float:
    """Power delivered over power available: 4 R_s R_l / |Z_s + Z_l|^2 [-] (conjugate match gives 1)."""
    return float(4 * np.real(z_source) * np.real(z_load) / abs(z_source + z_load) ** 2)
