"""Calibrate the wire model from a builder's antenna-analyser readings.

- Open- and short-circuit impedances of a line of length L give, by the
  textbook identities Z0 = sqrt(Zoc Zsc) and tanh(gamma L) = sqrt(Zsc / Zoc),
  its characteristic impedance and propagation constant.  gamma L is found
  only up to j n pi; the branch is resolved with the wire's length: the phase
  constant must give a velocity factor in (0, 1], and, over several
  frequencies, beta must grow in proportion to frequency (unwrapped from the
  lowest reading, where the choice closest to an expected velocity factor is
  taken; for a wire shorter than a quarter wave there is only one choice).
- The first quarter-wave resonance f1 of an open-ended wire of length L
  gives velocity factor = 4 L f1 / c (common practice).
- The ground's conductivity and permittivity that make the line model
  (snrgain.physics.lines) reproduce the measured velocity factors and attenuations
  are fitted by weighted least squares (scipy.optimize.least_squares), with
  their uncertainty from the Jacobian at the solution, J^T W J inverted.
"""

from __future__ import annotations

import re
import tomllib
from dataclasses import field
from pathlib import Path
from typing import Annotated, Any, Literal

import numpy as np
from pydantic import BeforeValidator
from scipy.optimize import least_squares

from snrgain.antennas.base import variant
from snrgain.constants import FREQ_RANGE_HZ, wire_families
from snrgain.physics import lines
from snrgain.physics.ground import C_M_PER_S, Ground
from snrgain.problems import toml_repr
from snrgain.records import record
from snrgain.tools.readings import read_toml

DEFAULT_VF_UNCERTAINTY = 0.02
"""Standard uncertainty of a measured velocity factor [-] (assumed)."""
DEFAULT_ATTENUATION_UNCERTAINTY = 0.2
"""Relative standard uncertainty of a measured attenuation [-] (assumed)."""


class ReadingError(ValueError):
    """Readings that cannot be inverted or fitted."""


@record
class OpenShort:
    """One pair of readings at the feed end: far end open, then shorted."""

    freq_hz: float
    z_open_ohm: complex
    z_short_ohm: complex


def check_readings(readings: list[OpenShort], length_m: float) -> None:
    if not length_m > 0:
        raise ReadingError(f"length must be > 0 m, got {length_m!r}")
    for i, r in enumerate(readings, start=1):
        if not r.freq_hz > 0:
            raise ReadingError(f"reading {i}: frequency must be > 0 Hz, got {r.freq_hz!r}")
        for name, z in (("open", r.z_open_ohm), ("short", r.z_short_ohm)):
            if not np.isfinite(z) or z.real < 0:
                raise ReadingError(
                    f"reading {i}: {name}-end impedance {z:.4g} ohm has a negative or non-finite "
                    "resistance, which a passive wire cannot show; check the analyser's connection"
                )
            if abs(z) == 0:
                raise ReadingError(f"reading {i}: {name}-end impedance is zero; the inversion needs both readings")
        if abs(r.z_open_ohm - r.z_short_ohm) <= SAME_READING_TOLERANCE * abs(r.z_open_ohm):
            raise ReadingError(
                f"reading {i} at {r.freq_hz / 1e6:g} MHz: the open-end and short-end impedances are the same "
                f"({r.z_open_ohm.real:g}{r.z_open_ohm.imag:+g}j ohm); only an endless wire reads so. Check that the "
                "far end was really opened for one reading and shorted for the other"
            )
    seen: dict[float, int] = {}
    for i, r in enumerate(readings, start=1):
        j = seen.setdefault(round(r.freq_hz, 3), i)
        if j != i:
            raise ReadingError(
                f"reading {i}: a second pair at {r.freq_hz / 1e6:g} MHz (reading {j} is there too): one wire has one "
                "pair of impedances at a frequency; keep the better reading or average them"
            )


MAX_OPEN_SHORT = 24
"""The most open/short reading pairs a readings file may hold (the ground and BOG-height fits cost about 0.1 s of
one core per pair)."""
SAME_READING_TOLERANCE = 1e-3
"""Open- and short-end readings closer than this, relative to |Z_open|, are taken as the same reading: the
wire's two ends would differ by over 60 dB of round-trip loss, and tanh(gamma L) = sqrt(Zsc/Zoc) = 1 has no
finite solution."""


def line_from_open_short(
    readings: list[OpenShort], *, length_m: float, expected_velocity_factor: float = 0.8
) -> list[lines.LineConstants]:
    """Invert open/short readings into line constants, one per reading (sorted by frequency)."""
    check_readings(readings, length_m)
    if not 0 < expected_velocity_factor <= 1:
        raise ReadingError(f"expected velocity factor must lie in (0, 1], got {expected_velocity_factor!r}")
    out = []
    prev_beta_over_f = None
    for r in sorted(readings, key=lambda x: x.freq_hz):
        z0 = np.sqrt(r.z_open_ohm * r.z_short_ohm)
        if z0.real < 0:
            z0 = -z0
        t = np.sqrt(r.z_short_ohm / r.z_open_ohm)
        base = np.arctanh(t)
        if base.real < 0:  # the other sign of the root: attenuation must be >= 0
            base = -base
        k = 2 * np.pi * r.freq_hz / C_M_PER_S
        choices = []
        for n in range(0, 400):
            beta = (base.imag + n * np.pi) / length_m
            if beta <= 0:
                continue
            vf = k / beta
            if vf <= 1.0 + 1e-9:
                choices.append((n, beta, vf))
            if vf < 0.05:
                break
        if not choices:
            raise ReadingError(
                f"readings at {r.freq_hz / 1e6:g} MHz give no velocity factor <= 1 for a "
                f"{length_m:g} m wire; check the length and the readings"
            )
        if prev_beta_over_f is None:
            n, beta, vf = min(choices, key=lambda c: abs(c[2] - expected_velocity_factor))
        else:
            n, beta, vf = min(choices, key=lambda c: abs(c[1] / r.freq_hz - prev_beta_over_f))
        prev_beta_over_f = beta / r.freq_hz
        gamma = complex(base.real / length_m, beta)
        out.append(lines.LineConstants(r.freq_hz, gamma * z0, gamma / z0, gamma, complex(z0)))
    return out


def vf_from_quarter_wave(length_m: float, freq_hz: float) -> float:
    """Velocity factor from the first quarter-wave resonance of an open wire: 4 L f / c (common practice)."""
    if not length_m > 0 or not freq_hz > 0:
        raise ReadingError("length and resonance frequency must be > 0")
    vf = 4 * length_m * freq_hz / C_M_PER_S
    if vf > 1.0:
        raise ReadingError(
            f"a {length_m:g} m wire resonating at {freq_hz / 1e6:g} MHz would have velocity factor "
            f"{vf:.2f} > 1; that is not its first quarter-wave resonance, or the length is wrong"
        )
    return vf


CONDUCTIVITY_RANGE_S_PER_M = (1e-5, 10.0)
"""The conductivities the ground fit searches [S/m] (from very dry ground's hundredth to over sea water's)."""
PERMITTIVITY_RANGE = (1.0, 100.0)
"""The relative permittivities the ground fit searches (air's 1 to over water's 81)."""
AT_BOUND_FRACTION = 1e-3
"""A fitted value within this fraction of its searched range (in log10 for the conductivity) of an end is taken as
stopped there by the range: the least-squares search (trust region, kept strictly inside the bounds) ends at such
a distance from a bound it presses against, far closer than any value's uncertainty."""


MAX_CONDUCTIVITY_FACTOR = 10.0
"""A fitted conductivity known only within x/÷ this (a decade either way) is not determined: P.372's and the
handbooks' soil classes lie a factor of 3-10 apart (ITU-R P.527)."""
MAX_RESIDUAL_RMS = 3.0
"""A fit whose readings' misfit, in measurement uncertainties, is over this (rms) meets none of them: three standard
uncertainties."""


@record
class GroundFit:
    """Fitted ground constants with standard uncertainties."""

    conductivity_s_per_m: float
    conductivity_factor: float
    """Multiplicative standard uncertainty of the conductivity (x/÷)."""
    permittivity: float
    permittivity_sigma: float
    residual_rms: float
    fixed_permittivity: bool
    at_bound: tuple[str, ...] = ()
    """The constants that ran to an end of the range searched: "conductivity low"/"high", "permittivity low"/"high".
    Such a fit is not a ground: the readings point outside what the model's soils give."""

    @property
    def usable(self) -> bool:
        """Whether the fit is a ground to write into a scenario: no constant at an end of its range, the conductivity
        known within :data:`MAX_CONDUCTIVITY_FACTOR`, the readings met within :data:`MAX_RESIDUAL_RMS`."""
        return not self.at_bound and not self.loose_text()

    def loose_text(self) -> list[str]:
        """Why a fit inside its ranges still fixes no ground: the conductivity not determined, or no soil that meets
        the readings (empty when neither)."""
        out = []
        if not self.conductivity_factor <= MAX_CONDUCTIVITY_FACTOR:
            out.append(
                f"the readings do not determine the conductivity (x/÷ {self.conductivity_factor:.3g}, more than "
                f"x/÷ {MAX_CONDUCTIVITY_FACTOR:g})"
            )
        if not self.residual_rms <= MAX_RESIDUAL_RMS:
            out.append(
                f"no soil meets the readings (residual rms {self.residual_rms:.3g} measurement uncertainties, over "
                f"{MAX_RESIDUAL_RMS:g}): they disagree among themselves or with the wire's description"
            )
        return out

    def bound_text(self) -> list[str]:
        """Each constant at an end of its range, said in words (empty when none)."""
        out = []
        for b in self.at_bound:
            what, end = b.split()
            if what == "permittivity":
                value = f"{PERMITTIVITY_RANGE[0 if end == 'low' else 1]:g}" + (", air's" if end == "low" else "")
            else:
                value = f"{CONDUCTIVITY_RANGE_S_PER_M[0 if end == 'low' else 1] * 1e3:g} mS/m"
            word = "lowest" if end == "low" else "highest"
            out.append(f"the {what} ran to the {word} value the fit allows ({value})")
        return out

    def unusable_text(self) -> str:
        """Why the fit is not a ground to use (empty when it is one)."""
        if self.usable:
            return ""
        if not self.at_bound:
            return "; ".join(self.loose_text()) + ": not a ground to use; check the readings and the wire's description"
        why = "; ".join(self.bound_text())
        if "permittivity low" in self.at_bound:
            hint = (
                "the readings ask for a faster line than the wire gives over any soil: it likely sits above the soil "
                "(grass), or its length, height or the phase's branch (--expected-vf) is off"
            )
        else:
            hint = "the readings point outside the soils the model spans: check the wire's description and the readings"
        return f"{why}: not a ground to use; {hint}"

    @property
    def ground(self) -> Ground:
        return Ground(self.conductivity_s_per_m, self.permittivity, "fitted", "fitted to the builder's measurements")

    def scenario_value(self) -> str:
        return (
            f'{{ conductivity = "{self.conductivity_s_per_m * 1e3:.3g} mS/m", permittivity = {self.permittivity:.3g} }}'
        )


def _misfit(line_at, measurements: list[dict], vf_sigma: float, attenuation_rel_sigma: float) -> list[float]:
    """Model minus measurement in measurement uncertainties: each velocity factor, and each attenuation given;
    ``line_at(freq_hz)`` gives the model's line."""
    res = []
    for m in measurements:
        ln = line_at(m["freq_hz"])
        res.append((ln.velocity_factor - m["velocity_factor"]) / vf_sigma)
        a = m.get("attenuation_db_per_100m")
        if a is not None:
            res.append((ln.attenuation_db_per_100m - a) / (attenuation_rel_sigma * max(a, 1e-3)))
    return res


def fit_ground(
    model_line,
    measurements: list[dict],
    *,
    permittivity: float | None = None,
    vf_sigma: float = DEFAULT_VF_UNCERTAINTY,
    attenuation_rel_sigma: float = DEFAULT_ATTENUATION_UNCERTAINTY,
    coarse_line=None,
) -> GroundFit:
    """Fit ground constants so that ``model_line(freq_hz, ground)`` reproduces measured constants.

    ``measurements``: dicts with ``freq_hz``, ``velocity_factor`` and optionally
    ``attenuation_db_per_100m``.  With ``permittivity`` given, only the
    conductivity is fitted.  Several starts guard against local minima; with ``coarse_line`` (a fast model, the
    closed form) the starts run on it and ``model_line`` (the exact mode) refines the best.
    """
    n_obs = sum(1 + ("attenuation_db_per_100m" in m and m["attenuation_db_per_100m"] is not None) for m in measurements)
    n_unknown = 1 if permittivity is not None else 2
    if n_obs < n_unknown:
        raise ReadingError(
            f"too few readings: {n_obs} measured value(s) for {n_unknown} unknowns; a quarter-wave resonance gives "
            "the velocity factor only, so add open/short readings (velocity factor and attenuation) or give the "
            "soil's permittivity"
        )

    def residuals(p, line=model_line):
        sigma = 10 ** p[0]
        eps = permittivity if permittivity is not None else p[1]
        g = Ground(sigma, float(np.clip(eps, 1.0, 100.0)))
        return np.array(_misfit(lambda f: line(f, g), measurements, vf_sigma, attenuation_rel_sigma))

    starts = [(-3.0, 5.0), (-2.3, 13.0), (-1.5, 25.0), (-3.7, 3.0)]
    best = None
    s_lo, s_hi = (float(np.log10(v)) for v in CONDUCTIVITY_RANGE_S_PER_M)
    for s0, e0 in starts:
        x0 = [s0] if permittivity is not None else [s0, e0]
        lb = [s_lo] if permittivity is not None else [s_lo, PERMITTIVITY_RANGE[0]]
        ub = [s_hi] if permittivity is not None else [s_hi, PERMITTIVITY_RANGE[1]]
        kw = {} if coarse_line is None else {"kwargs": {"line": coarse_line}}
        r = least_squares(residuals, x0, bounds=(lb, ub), x_scale="jac", **kw)
        if best is None or r.cost < best.cost:
            best = r
    if coarse_line is not None:
        best = least_squares(residuals, best.x, bounds=(lb, ub), x_scale="jac", max_nfev=40)
    jac = best.jac
    try:
        cov = np.linalg.inv(jac.T @ jac)
    except np.linalg.LinAlgError:
        raise ReadingError(
            "the readings do not constrain the ground (singular fit); add readings at another "
            "frequency or give the permittivity"
        ) from None
    rms = float(np.sqrt(np.mean(best.fun**2)))
    log_sigma_sd = float(np.sqrt(cov[0, 0]))
    eps = permittivity if permittivity is not None else float(best.x[1])
    eps_sd = 0.0 if permittivity is not None else float(np.sqrt(cov[1, 1]))
    at_bound = []
    for name, x, lo_, hi_ in zip(("conductivity", "permittivity"), best.x, lb, ub):
        tol = AT_BOUND_FRACTION * (hi_ - lo_)
        if x <= lo_ + tol:
            at_bound.append(f"{name} low")
        elif x >= hi_ - tol:
            at_bound.append(f"{name} high")
    return GroundFit(
        float(10 ** best.x[0]), float(10**log_sigma_sd), eps, eps_sd, rms, permittivity is not None, tuple(at_bound)
    )


@record
class HeightFit:
    """How high a BOG's axis sits above the soil, fitted to the readings with the soil held at the wire's ground."""

    height_m: float
    low_m: float
    high_m: float
    """The heights where the misfit grows by one (a one-sigma range)."""
    residual_rms: float
    at_lowest: bool
    """The best fit is the wire resting on the soil (its axis at the insulation's radius)."""
    at_highest: bool


HEIGHT_SEARCH_M = 0.3
"""Highest axis height tried for a BOG [m] (the family's limit)."""


def fit_bog_height(
    antenna,
    measurements: list[dict],
    z0_ohm: list[tuple[float, float]] | None = None,
    *,
    vf_sigma: float = DEFAULT_VF_UNCERTAINTY,
    attenuation_rel_sigma: float = DEFAULT_ATTENUATION_UNCERTAINTY,
    z0_rel_sigma: float = 0.1,
) -> HeightFit:
    """The axis height above the soil that makes the BOG's line (its exact mode over the antenna's ground)
    reproduce the measured velocity factors, attenuations and |Z0| (``z0_ohm``: (freq_hz, |Z0|) pairs), by
    weighted least squares over heights from resting on the soil to :data:`HEIGHT_SEARCH_M` on a log scale.
    Where the soil is known and the wire's height is not (grass holds it up by an amount no one can measure),
    this is the unknown the readings pin down."""
    lowest = antenna.params.radius_m + antenna.params.insulation_thickness
    z0_ohm = z0_ohm or []

    def misfit(h):
        ant = variant(antenna, height=float(h), depth=0.0)
        res = _misfit(ant.computed_line, measurements, vf_sigma, attenuation_rel_sigma)
        for f, z in z0_ohm:
            res.append((abs(ant.computed_line(f).z0) - z) / (z0_rel_sigma * z))
        return np.array(res)

    heights = np.geomspace(lowest, HEIGHT_SEARCH_M, 41)
    chi2 = np.array([float(np.sum(misfit(h) ** 2)) for h in heights])
    i = int(np.argmin(chi2))
    lo_i, hi_i = max(i - 1, 0), min(i + 1, len(heights) - 1)
    from scipy.optimize import minimize_scalar

    best = minimize_scalar(
        lambda t: float(np.sum(misfit(np.exp(t)) ** 2)),
        bounds=(np.log(heights[lo_i]), np.log(heights[hi_i])),
        method="bounded",
        options={"xatol": 1e-3},
    )
    h = float(np.exp(best.x))
    c_min = float(best.fun)
    inside = heights[chi2 <= c_min + 1.0]
    low = float(min(inside.min(), h)) if inside.size else h
    high = float(max(inside.max(), h)) if inside.size else h
    n = max(len(misfit(h)), 1)
    return HeightFit(h, low, high, float(np.sqrt(c_min / n)), i == 0, i == len(heights) - 1)


EXAMPLE = """\
# Readings of a laid wire, taken at its feed end with an antenna analyser.
[wire]                      # the wire as built: any keys of its family
family = "bog"
length = "250 ft"
gauge = 16

[[open_short]]              # far end open, then shorted to its ground rod
frequency = "1.83 MHz"
open = [95.0, -210.0]       # R, X in ohm (or "95-210j")
short = [160.0, 240.0]

[[resonance]]               # optional: first quarter-wave resonance, far end open
frequency = "0.72 MHz"

# optional: analyser sweeps saved as Touchstone 1-port files (any unit, S/Z, RI/MA/DB, reference impedance),
# taken at the wire's feed (not through a feed line), the far end open, shorted or terminated; a path is read
# from this file's folder
# [[sweep]]
# file = "open.s1p"
# far_end = "open"
"""


@record(frozen=False)
class WireReadings:
    """A readings file: the wire as built, open/short pairs and quarter-wave resonances."""

    antenna: Any
    """The wire (a long-wire family antenna) as built."""
    open_short: list[OpenShort] = field(default_factory=list)
    resonance_hz: list[float] = field(default_factory=list)
    sweeps: list[tuple[Path, str]] = field(default_factory=list)
    """Touchstone files and the far end each was taken with (snrgain.tools.touchstone)."""
    ground_source: str = "wire"
    """Where the wire's ground came from: "wire" (the readings' [wire] gives it), "default" (it gives none:
    :data:`DEFAULT_GROUND`) or "scenario" (the scenario's, :func:`assume_scenario_ground`)."""
    ground_source_text: str = "as given in the readings' [wire]"
    """The same in words."""
    spec: dict = field(default_factory=dict)
    """The [wire] table as written (with its family), to build the wire again over another ground."""


def load_readings(path: str | Path) -> WireReadings:
    """Read a calibration readings file (format: :data:`EXAMPLE`); ReadingsError naming the file and every
    problem at once."""
    from pydantic import Field

    from snrgain.antennas.base import SpecError, build
    from snrgain.errors import ReadingsError
    from snrgain.fields import StrictModel, quantity
    from snrgain.tools.readings import impedance_field, validate

    Impedance = Annotated[complex, BeforeValidator(impedance_field)]
    Frequency = quantity("frequency", ge=FREQ_RANGE_HZ[0] / 10, le=FREQ_RANGE_HZ[1])

    class OpenShortEntry(StrictModel):
        frequency: Frequency
        open: Impedance
        short: Impedance

    class ResonanceEntry(StrictModel):
        frequency: Frequency

    class SweepEntry(StrictModel):
        file: str = Field(min_length=1, max_length=4096)
        far_end: Literal["open", "short", "terminated"]

    class ReadingsFile(StrictModel):
        wire: dict[str, Any]
        open_short: list[OpenShortEntry] = Field(default_factory=list, max_length=200)
        resonance: list[ResonanceEntry] = Field(default_factory=list, max_length=200)
        sweep: list[SweepEntry] = Field(default_factory=list, max_length=24)

    path = Path(path)
    data = read_toml(path)
    pairs = data.get("open_short")
    if isinstance(pairs, list) and len(pairs) > MAX_OPEN_SHORT:
        raise ReadingsError(
            str(path),
            [
                (
                    "open_short",
                    f"{len(pairs)} readings; at most {MAX_OPEN_SHORT} are fitted (each costs the wire's exact line "
                    "mode at every trial ground and height): a few frequencies spread over the band pin the line down",
                )
            ],
        )
    f = validate(ReadingsFile, data, path)
    spec = {"family": "bog", **f.wire}
    if spec.get("family") not in wire_families():
        raise ReadingsError(
            str(path),
            [
                (
                    "wire.family",
                    f"calibration needs a long-wire family ({', '.join(wire_families())}); "
                    f"got {toml_repr(spec.get('family'))}",
                )
            ],
        )
    try:
        ant = build(spec, "wire")
    except SpecError as exc:
        raise ReadingsError(str(path), exc.problems) from None
    if not f.open_short and not f.resonance and not f.sweep:
        raise ReadingsError(
            str(path), [("", "no readings; add [[open_short]], [[resonance]] or [[sweep]] entries (see --example)")]
        )
    sweeps = [(path.parent / e.file, e.far_end) for e in f.sweep]
    missing = [
        (f"sweep[{i}].file", f"{p} {_not_a_file(p)}") for i, (p, _) in enumerate(sweeps, start=1) if not p.is_file()
    ]
    if missing:
        raise ReadingsError(str(path), missing)
    return WireReadings(
        ant,
        [OpenShort(r.frequency, r.open, r.short) for r in f.open_short],
        [r.frequency for r in f.resonance],
        sweeps,
        *(("wire", GIVEN_TEXT) if "ground" in f.wire else ("default", DEFAULT_TEXT)),
        spec,
    )


DEFAULT_GROUND = "moist loam"
"""The ground of a wire whose readings file gives none (the antennas' own default)."""
GIVEN_TEXT = "as given in the readings' [wire]"
DEFAULT_TEXT = "the default: the readings' [wire] gives no ground"


def scenario_ground(data: dict, into: str | None = None) -> tuple[Any, str]:
    """The ground a scenario gives the wire, as written (a class name or a table of constants), with where it came
    from in words: the candidate ``into``'s own ground, else [site]'s, else the scenario's default."""
    from snrgain.scenario.site import raw_ground

    if into is not None:
        for c in data.get("candidate", []):
            if isinstance(c, dict) and c.get("name") == into and "ground" in c:
                return c["ground"], f"candidate {into!r}'s ground in the scenario"
    site = data.get("site", {})
    if isinstance(site, dict) and "ground" in site:
        return raw_ground(site), "the scenario's [site] ground"
    return DEFAULT_GROUND, "the scenario's default: its [site] gives no ground"


def assume_scenario_ground(readings: WireReadings, ground, source: str) -> WireReadings:
    """The readings with the wire over the scenario's ``ground`` when the readings' [wire] gives none (a ground it
    gives stays: the builder wrote it for this wire); ``source`` says where the ground came from."""
    from snrgain.antennas.base import SpecError, build
    from snrgain.errors import ReadingsError

    if readings.ground_source == "wire" or ground is None:
        return readings
    try:
        ant = build({**readings.spec, "ground": ground}, "wire")
    except SpecError as exc:
        raise ReadingsError("the wire over the scenario's ground", exc.problems) from None
    return WireReadings(
        ant, readings.open_short, readings.resonance_hz, readings.sweeps, "scenario", source, readings.spec
    )


def ground_name(antenna) -> str:
    """The wire's ground in words: its class name, or its constants."""
    g = antenna.params.ground
    if g is None:
        return DEFAULT_GROUND
    if isinstance(g, str):
        return g
    return f"a soil of {g.conductivity * 1e3:.3g} mS/m and permittivity {g.permittivity:.3g}"


@record(frozen=False)
class Calibration:
    """What the readings say about a wire and its ground."""

    antenna: Any
    constants: list[lines.LineConstants]
    """Line constants from each open/short pair (by frequency)."""
    resonances: list[dict]
    """{"freq_hz", "velocity_factor"} per quarter-wave resonance."""
    fit: GroundFit
    suggested_termination_ohm: float | None
    suggested_turns_ratio: float | None
    height_fit: HeightFit | None = None
    """For a BOG on the surface: its axis height over the wire's ground that fits the readings."""
    sweeps: list = field(default_factory=list)
    """What each Touchstone sweep gave (snrgain.tools.touchstone.SweepResult)."""
    ground_source: str = "wire"
    """Where the wire's ground (the one the height fit holds) came from (:class:`WireReadings`)."""
    ground_source_text: str = GIVEN_TEXT
    branch: tuple[float, str] | None = None
    """The velocity factor near which the open/short readings' phase branch was taken, and where it came from
    (:func:`expected_branch`); None without open/short readings."""
    warnings: list[str] = field(default_factory=list)
    """What the readings as a whole leave in doubt: sweeps that disagree on |Z0|, an open/short Z0 a wire seldom has."""
    suggested_at_hz: float | None = None
    """The frequency of the open/short reading whose |Z0| the suggested termination takes (None: the sweeps')."""

    def as_dict(self) -> dict:
        """JSON-ready (SI units in the keys)."""
        f = self.fit
        out = {
            "wire": self.antenna.describe(),
            "open_short": [ln.as_dict() for ln in self.constants],
            "branch": None
            if self.branch is None
            else {"expected_velocity_factor": self.branch[0], "from": self.branch[1]},
            "resonance": self.resonances,
            "fitted_ground": {
                "conductivity_s_per_m": f.conductivity_s_per_m,
                "conductivity_uncertainty_factor": f.conductivity_factor,
                "permittivity": f.permittivity,
                "permittivity_sigma": None
                if any(b.startswith("permittivity") for b in f.at_bound)
                else f.permittivity_sigma,
                "permittivity_fixed": f.fixed_permittivity,
                "residual_rms": f.residual_rms,
                "at_bound": list(f.at_bound),
                "not_usable_because": f.unusable_text() or None,
                "scenario_value": f.scenario_value() if f.usable else None,
            },
        }
        if self.suggested_termination_ohm is not None:
            out["suggested_termination_ohm"] = self.suggested_termination_ohm
            out["suggested_turns_ratio"] = self.suggested_turns_ratio
            out["suggested_at_hz"] = self.suggested_at_hz
        if self.sweeps:
            out["sweeps"] = [sw.as_dict() for sw in self.sweeps]
        out["warnings"] = list(self.warnings)
        if self.height_fit is not None:
            h = self.height_fit
            out["fitted_height"] = {
                "ground": self.antenna.describe().get("ground"),
                "ground_source": self.ground_source,
                "height_m": h.height_m,
                "low_m": h.low_m,
                "high_m": h.high_m,
                "residual_rms": h.residual_rms,
                "resting_on_soil": h.at_lowest,
                "at_search_limit": h.at_highest,
            }
        return out


def expected_branch(readings: WireReadings, given: float | None = None) -> tuple[float, str]:
    """The velocity factor near which the open/short readings' phase branch is taken, and where it comes from: as
    given; else a quarter-wave resonance among the readings (the lowest: 4 L f / c, no branch to pick); else the
    wire model's own at the lowest open/short frequency, over the wire's ground (a wire in the air near 0.95, one on
    the soil far lower: one fixed guess picked the wrong branch for one or the other)."""
    ant = readings.antenna
    if given is not None:
        return float(given), "given (--expected-vf)"
    if readings.resonance_hz:
        f = min(readings.resonance_hz)
        return vf_from_quarter_wave(ant.length_m, f), f"the quarter-wave resonance at {f / 1e6:g} MHz"
    if not readings.open_short:
        return 0.8, "none needed"
    f = min(r.freq_hz for r in readings.open_short)
    return float(ant.line(f).velocity_factor), f"the wire model's at {f / 1e6:g} MHz over the wire's ground"


def _not_a_file(p: Path) -> str:
    """What a path that is not a regular file is, in words."""
    from snrgain.files import kind_of

    if not p.exists():
        return "does not exist"
    return "is a folder, not a file" if p.is_dir() else f"is not a regular file ({kind_of(p.stat().st_mode)})"


def calibrate(
    readings: WireReadings,
    *,
    expected_velocity_factor: float | None = None,
    permittivity: float | None = None,
    freq_hz: float | None = None,
) -> Calibration:
    """Line constants from the readings, the ground fitted to them, and the termination and transformer they
    suggest (|Z0| less the far rod; sqrt((|Z0| + feed rod) / Z_coax)), from the open/short reading nearest
    ``freq_hz`` (the band listened on; default the lowest reading's frequency), else the sweeps' median |Z0|.
    ``expected_velocity_factor``: where the phase's branch is taken (default: :func:`expected_branch`)."""
    ant = readings.antenna
    expected_velocity_factor, branch_from = expected_branch(readings, expected_velocity_factor)
    constants = (
        line_from_open_short(
            readings.open_short, length_m=ant.length_m, expected_velocity_factor=expected_velocity_factor
        )
        if readings.open_short
        else []
    )
    measured = [
        {
            "freq_hz": ln.freq_hz,
            "velocity_factor": ln.velocity_factor,
            "attenuation_db_per_100m": ln.attenuation_db_per_100m,
        }
        for ln in constants
    ]
    resonances = []
    for f in readings.resonance_hz:
        vf = vf_from_quarter_wave(ant.length_m, f)
        resonances.append({"freq_hz": f, "velocity_factor": vf})
        measured.append({"freq_hz": f, "velocity_factor": vf})
    said = check_open_short_z0(constants)
    swept = sweep_readings(readings.sweeps, ant.length_m)
    said += check_sweeps_agree(swept, termination_from_sweeps=not constants)
    for sw in swept:
        measured += [
            {"freq_hz": e["freq_hz"], "velocity_factor": e["velocity_factor"]} for e in _spread_pick(sw.extremes)
        ]
    if not measured:
        what = "; ".join(
            f"{sw.label}: " + (f"|Z| varies {sw.variation:.2f}:1 over the sweep" if sw.variation else "no extremes")
            for sw in swept
        )
        raise ReadingError(
            f"nothing to fit the line and ground to ({what}); a terminated sweep shows the termination's match only: "
            "add an open or shorted sweep, or open/short readings"
        )
    coarse = None
    if getattr(ant.params, "line_model", "closed-form") == "exact":
        coarse = variant(ant, line_model="closed-form").computed_line
    fit = fit_ground(ant.computed_line, measured, permittivity=permittivity, coarse_line=coarse)
    term = turns = at_hz = None
    z0s = [sw.z0_magnitude_ohm for sw in swept if sw.z0_magnitude_ohm is not None]
    if constants or z0s:
        if constants:
            used = nearest_constants(constants, freq_hz) if freq_hz else constants[0]
            z0, at_hz = abs(used.z0), used.freq_hz
        else:
            z0 = float(np.median(z0s))
        term = max(z0 - ant.far_rod_ohm, 0.0)
        turns = float(np.sqrt((z0 + ant.feed_rod_ohm) / ant.params.coax))
    height = None
    if "depth" in type(ant.params).model_fields and not ant.params.depth > 0:  # a wire on the soil, not buried
        height = fit_bog_height(ant, measured, [(ln.freq_hz, abs(ln.z0)) for ln in constants])
    return Calibration(
        ant,
        constants,
        resonances,
        fit,
        term,
        turns,
        height,
        swept,
        readings.ground_source,
        readings.ground_source_text,
        branch=(expected_velocity_factor, branch_from) if constants else None,
        warnings=said,
        suggested_at_hz=at_hz,
    )


SWEEPS_Z0_WARN_RATIO = 1.25
"""Sweeps whose |Z0| differ by more than this factor are warned of.  An open and a shorted sweep of one wire over one
span put their extremes among each other, so each |Z0| (the median over its extremes) is the wire's over the same
frequencies: the line model's synthesised pairs agree within 1 % (tests); a real pair within a few per cent (common
practice)."""
SWEEPS_Z0_MAX_RATIO = 3.0
"""Sweeps whose |Z0| differ by more than this factor are refused: more than one wire's |Z0| on one ground changes over
all of 0.15-30 MHz (the line model, closed form: at most about 2.1, a BOG on moist loam, computed for this bound), so
a file is read wrong (a Touchstone v1/v2 slip is a factor R, 50 or 75) or was taken of something else."""


def check_sweeps_agree(swept: list, *, termination_from_sweeps: bool = True) -> list[str]:
    """Warnings (empty when none) if the sweeps' |Z0| differ by more than :data:`SWEEPS_Z0_WARN_RATIO`; ReadingError
    beyond :data:`SWEEPS_Z0_MAX_RATIO`.  Each sweep is named with its |Z0| and the span of its extremes;
    ``termination_from_sweeps``: the suggested termination takes their median (no open/short readings given)."""
    from snrgain.tools.touchstone import FORMAT_HINT

    have = sorted((sw for sw in swept if sw.z0_magnitude_ohm is not None), key=lambda sw: sw.z0_magnitude_ohm)
    if len(have) < 2:
        return []
    lo, hi = have[0].z0_magnitude_ohm, have[-1].z0_magnitude_ohm
    ratio = hi / lo
    if ratio <= SWEEPS_Z0_WARN_RATIO:
        return []
    each = ", ".join(f"{Path(sw.label).name} (far end {sw.far_end}) {_z0_and_span(sw)}" for sw in have)
    said = f"the sweeps disagree on |Z0|: {each}, a factor {ratio:.3g}"
    if ratio > SWEEPS_Z0_MAX_RATIO:
        raise ReadingError(
            f"{said}, more than {SWEEPS_Z0_MAX_RATIO:g}: one wire's |Z0| changes less than that over all of "
            f"0.15-30 MHz, so a file is read wrong or was taken of something else; for each file, {FORMAT_HINT}"
        )
    median = float(np.median([sw.z0_magnitude_ohm for sw in have]))
    used = f"; the termination below takes their median, {median:.0f} ohm" if termination_from_sweeps else ""
    return [
        f"{said} (two sweeps of one wire over one span agree within a few per cent, within "
        f"{SWEEPS_Z0_WARN_RATIO:g} is taken as agreeing): check that each was taken at the same wire's feed over the "
        f"same frequencies, and each file's format{used}"
    ]


def _z0_and_span(sw) -> str:
    fs = [e["freq_hz"] / 1e6 for e in sw.extremes]
    span = f" over {min(fs):.3g}-{max(fs):.3g} MHz" if fs else ""
    return f"{sw.z0_magnitude_ohm:.0f} ohm{span}"


def check_open_short_z0(constants: list[lines.LineConstants]) -> list[str]:
    """Warnings (empty when none) for open/short readings whose Z0 = sqrt(Zoc Zsc) a wire over ground seldom has;
    ReadingError for one no wire over ground has (snrgain.tools.touchstone.wire_z0_problem)."""
    from snrgain.tools.touchstone import wire_z0_problem

    out = []
    for ln in constants:
        problem = wire_z0_problem(abs(ln.z0))
        if problem is None:
            continue
        said = f"the open/short reading at {ln.freq_hz / 1e6:g} MHz gives, as sqrt(Zoc Zsc), {problem[1]}"
        hint = "check that the readings are in ohms (not normalised to the analyser's 50 ohm) and taken at the feed"
        if problem[0] == "refuse":
            raise ReadingError(f"{said}: {hint}")
        out.append(f"{said}: {hint}")
    return out


SWEEP_POINTS_FITTED = 6
"""The most extremes of one sweep passed to the ground fit (spread over the sweep; each costs the wire's line mode
at every trial ground)."""


def _spread_pick(extremes: list[dict]) -> list[dict]:
    if len(extremes) <= SWEEP_POINTS_FITTED:
        return list(extremes)
    idx = np.unique(np.round(np.linspace(0, len(extremes) - 1, SWEEP_POINTS_FITTED)).astype(int))
    return [extremes[i] for i in idx]


def sweep_readings(sweeps: list[tuple[Path, str]], length_m: float) -> list:
    """Each Touchstone sweep read (scikit-rf) and analysed (snrgain.tools.touchstone); ReadingError naming the file."""
    from snrgain.tools import touchstone

    out = []
    for path, far_end in sweeps:
        try:
            out.append(touchstone.analyse(touchstone.read_sweep(path), length_m=length_m, far_end=far_end))
        except touchstone.SweepError as exc:
            raise ReadingError(str(exc)) from None
    return out


def with_ground(text: str, value: str) -> str:
    """Scenario TOML text with [site]'s ground set to ``value`` (replacing a ground line or adding one)."""
    lines_ = text.splitlines(keepends=True)
    start = next((i for i, ln in enumerate(lines_) if ln.strip() == "[site]"), None)
    if start is None:
        raise ValueError("the scenario has no [site] section")
    end = next((i for i in range(start + 1, len(lines_)) if lines_[i].lstrip().startswith("[")), len(lines_))
    new = f"ground = {value}   # fitted by snrgain calibrate\n"
    for i in range(start + 1, end):
        if re.match(r"\s*ground\s*=", lines_[i]):
            lines_[i] = new
            break
    else:
        lines_.insert(start + 1, new)
    out = "".join(lines_)
    tomllib.loads(out)  # still valid TOML
    return out


def into_table(data: dict, name: str) -> str:
    """The candidate's table ``--into`` names in the scenario's tables ``data``: a candidate by its name, a switched
    wire (``directions``) by its own name or by any state's (snrgain.scenario.connected: its states are one wire, so
    the line measured is every state's).  ValueError naming --into and the candidates otherwise."""
    from snrgain.fields import nfc
    from snrgain.scenario import connected
    from snrgain.scenario.connected import TwoAntennas

    cands = [c.get("name") for c in data.get("candidate", []) if isinstance(c, dict)]
    try:
        table = connected(data, name)
    except TwoAntennas as exc:  # a candidate's name that is also a state's shorter name
        raise ValueError(f"--into: {exc}") from None
    except ValueError:
        table = None
    own = next((c for c in cands if isinstance(c, str) and nfc(c) == nfc(name)), None)
    if own is not None:  # a candidate, or a switched one by its own name
        return own
    if table is None or table.group is None:  # none, or the reference: the line is written into a candidate
        raise ValueError(
            f"--into: the scenario has no candidate named {name!r}; its candidates are "
            f"{', '.join(repr(str(c)) for c in cands)} (or a state of a switched one, as rank names it)"
        )
    return table.table


def with_measured_line(text: str, name: str, line: lines.LineConstants) -> str:
    """Scenario TOML text with the candidate ``name``'s measured line constants set (velocity_factor, attenuation
    and z0, the magnitude of the measured Z0), replacing any it had; only that antenna changes."""
    from snrgain.tools.tomltext import rewrite_table

    table = next((c for c in tomllib.loads(text).get("candidate", []) if c.get("name") == name), None)
    if table is None:
        raise ValueError(f"--into: the scenario has no candidate named {name!r}")
    if table.get("family") not in wire_families():
        raise ValueError(f"--into: candidate {name!r} is not a long wire; measured line constants fit only wires")
    add = [
        f"velocity_factor = {line.velocity_factor:.4f}   # measured by snrgain calibrate at "
        f"{line.freq_hz / 1e6:g} MHz\n",
        f'attenuation = "{line.attenuation_db_per_100m:.3f} dB/100m"\n',
        f"z0 = {abs(line.z0):.1f}\n",
    ]
    return rewrite_table(text, "[[candidate]]", name, drop={"velocity_factor", "attenuation", "z0"}, add=add)


def nearest_constants(constants: list[lines.LineConstants], freq_hz: float) -> lines.LineConstants:
    """The measured constants taken nearest ``freq_hz``."""
    if not constants:
        raise ValueError("--into needs open/short readings: a resonance gives the velocity factor alone")
    return min(constants, key=lambda ln: abs(np.log(ln.freq_hz / freq_hz)))
