"""Arrays: antennas of one family at positions, combined with delays, phases and amplitudes.

The complex responses of the elements (each referred to its own feed point,
snrgain.antennas.base.Antenna.complex_response) are combined before powers
are taken:

    E(dir) = sum_i w_i r_i(dir),  r_i = e_i(dir) exp(+j k cos(Delta) (east_i sin(phi) + north_i cos(phi))),
    w_i = a_i exp(-j (omega tau_i + phase_i)),

the position phase being that of a plane wave reaching points nearer its
source first (DESIGN.md).  The combiner is taken as lossless and matched,
so the realized gain is |E|^2 / (w^H Q w) with Q the identity: one element
with unit weight gives back its own pattern, and N elements added in phase
toward a direction give N times an element's gain there.

Steering.  ``steering = "given"``: each element gives ``delay`` (a time),
``delay_line`` (length and velocity factor) or ``phase`` (with
``phase_sense``), and ``amplitude``.  ``steering = "auto"`` sets the weights
(:mod:`snrgain.antennas.steering`) by ``auto_for``:

- ``"rdf"`` (default): the phases of highest RDF toward ``bearing`` at
  ``auto_elevation`` (20 deg unless given);
- ``"front_to_back"``: the phases of deepest rear at that elevation;
- ``"snr"``: the weights of highest SNR under the scenario's own noise sky
  (time-averaged over its months and hours, receiver noise included) toward
  the target nearest the bearing; outside a scenario, as ``"rdf"``;
- ``"end-fire"``: each element delayed by its position's projection on the
  bearing over c (the travel-time delay; two elements a quarter wave apart
  make the textbook cardioid, and closer spacings do worse than optimised
  phases).

Auto steering moves phases only (amplitudes as given, else equal) unless
``auto_amplitudes = true``.  The chosen weights are reported as phases, as
delays in ns and as lengths of the phasing coax (snrgain.decide.build).

Mutual coupling is neglected here: the elements' currents are set by their
own loads.  This holds for short receiving elements (verticals up to about
0.1 wavelength, loaded by high-impedance amplifiers or transformers, the
usual receive-array practice) spaced a tenth of a wavelength or more.
``phased-verticals`` with ``feed = "current"`` or ``"lines"`` models it
(:mod:`snrgain.antennas.coupling`), for elements up to 0.3 wavelength.
Elements must be of one family (their phase conventions then agree).
"""

from __future__ import annotations

import copy as _copy
import functools
from collections import Counter
from typing import Any, Literal

import numpy as np
from pydantic import Field, PrivateAttr, ValidationInfo, field_validator, model_validator

from snrgain.antennas.base import FAMILIES, Antenna, AntennaParams, SpecError, build, item_label, register
from snrgain.antennas.geometry import direction_geometry
from snrgain.fields import SI_CONTEXT, Bearing, Elevation, GroundField, PlanPoint, quantity
from snrgain.physics.ground import C_M_PER_S
from snrgain.problems import toml_repr
from snrgain.units import bearing_deg, parse_quantity

WEIGHT_KEYS = ("delay", "delay_line", "phase", "amplitude")


PhaseSense = Literal["lag", "lead"]
"""How an element's ``phase`` is meant: "lag", its signal is delayed by that angle (as a longer cable delays it);
"lead", advanced.  Arrays that give phases must say which: written the other way round, an array points back."""


AutoFor = Literal["rdf", "front_to_back", "snr", "end-fire"]
"""What ``steering = "auto"`` maximises (see the module docstring)."""

AUTO_ELEVATION_RAD = float(np.radians(20.0))
"""Elevation at which auto steering aims (a typical low-band arrival, common practice) [rad]."""


class SteeringParams(AntennaParams):
    steering: Literal["auto", "given"] = "auto"
    bearing: Bearing = 0.0
    auto_for: AutoFor = "rdf"
    auto_elevation: Elevation = AUTO_ELEVATION_RAD
    auto_amplitudes: bool = False
    phase_sense: PhaseSense | None = None
    ground: GroundField | None = None

    @model_validator(mode="after")
    def _auto_keys(self):
        if self.auto_amplitudes and (self.steering != "auto" or self.auto_for not in ("rdf", "snr")):
            raise ValueError("auto_amplitudes needs steering = 'auto' with auto_for = 'rdf' or 'snr'")
        return self


def at_least_two(items: list, what: str) -> list:
    """``items`` of an array (its elements or their positions), refused below two: one element is no array."""
    if len(items) < 2:
        raise ValueError(
            f"an array needs at least two elements (at most 64); got {len(items)} {what}"
            f"{'' if len(items) == 1 else 's'} (a single antenna is a candidate of its own family)"
        )
    return items


class ArrayParams(SteeringParams):
    family: Literal["array"]
    elements: list[dict[str, Any]] = Field(max_length=64)
    _si: bool = PrivateAttr(default=False)

    @field_validator("elements")
    @classmethod
    def _two_or_more(cls, v):
        return at_least_two(v, "element")

    @model_validator(mode="after")
    def _remember_units(self, info: ValidationInfo):
        # The elements are validated when the array is built, in the same mode (SI floats or unit strings).
        self._si = bool(isinstance(info.context, dict) and info.context.get("si"))
        return self


Feed = Literal["buffered", "current", "lines"]
"""How phased verticals are fed: "buffered", each element into a high-impedance amplifier (coupling neglected,
short elements); "current", ideal current forcing (the currents are the weights); "lines", each element through a
matched line of ``line_impedance`` from a matched combiner (the currents follow from the coupled impedances)."""


class PhasedVerticalsParams(SteeringParams):
    family: Literal["phased-verticals"]
    positions: list[PlanPoint] = Field(max_length=64)
    height: quantity("length", ge=0.05, le=60.0)
    ground_loss: quantity("resistance", ge=0.0, le=5000.0) = 10.0
    top_loading: quantity("length", ge=0.0, le=60.0) = 0.0
    delays: list[quantity("time", ge=-1e-3, le=1e-3)] | None = None
    phases: list[float] | None = None
    amplitudes: list[float] | None = None
    feed: Feed = "buffered"
    line_impedance: quantity("resistance", ge=1.0, le=1000.0) = 75.0
    diameter: quantity("length", ge=1e-4, le=0.5) = 0.025
    """Element diameter [m], for the self reactance of coupled elements (25 mm tubing, common practice)."""

    @field_validator("positions")
    @classmethod
    def _two_or_more(cls, v):
        return at_least_two(v, "position")

    @model_validator(mode="after")
    def _lists(self):
        n = len(self.positions)
        for name in ("delays", "phases", "amplitudes"):
            v = getattr(self, name)
            if v is not None and len(v) != n:
                raise ValueError(f"{name} has {len(v)} entries for {n} positions")
        if self.steering == "given" and self.delays is None and self.phases is None:
            raise ValueError("steering = 'given' needs delays or phases")
        if self.phases is not None and self.phase_sense is None:
            raise ValueError(PHASE_SENSE_NEEDED)
        if self.steering == "auto" and (self.delays is not None or self.phases is not None):
            raise ValueError("delays and phases are set by steering = 'auto'; use steering = 'given' to give them")
        if self.feed != "buffered" and self.top_loading > 0:
            raise ValueError(
                "top_loading: coupled feeds (feed = 'current' or 'lines') take elements without top loading "
                "(the self reactance would depend on the hat's own shape)"
            )
        return self


PHASE_SENSE_NEEDED = (
    "phases need phase_sense = 'lag' (each element's signal delayed by its phase, as a longer "
    "cable delays it) or 'lead' (advanced); a delay is always positive when the signal comes later"
)


def _si_or_parse(value, dimension: str, si: bool) -> float:
    if si and isinstance(value, (int, float)) and not isinstance(value, bool):
        return float(value)
    return parse_quantity(value, dimension)


def _number(value, what: str, where: str, lo: float, hi: float) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not np.isfinite(value):
        raise SpecError([(f"{where}.{what}", f"must be a number; got {toml_repr(value)}")])
    if not lo <= value <= hi:
        raise SpecError([(f"{where}.{what}", f"must lie between {lo:g} and {hi:g}; got {toml_repr(value)}")])
    return float(value)


def _weights_from(entry: dict, where: str, *, si: bool = False):
    """(delay [s], phase [rad], amplitude) of one element's weight keys (``si``: bare numbers are s and m)."""
    delay = 0.0
    if "delay" in entry:
        delay = _si_or_parse(entry["delay"], "time", si)
        if abs(delay) > 1e-3:
            raise SpecError([(f"{where}.delay", f"must lie within 1 ms; got {toml_repr(entry['delay'])}")])
    if "delay_line" in entry:
        dl = entry["delay_line"]
        if not isinstance(dl, dict) or set(dl) - {"length", "velocity_factor"} or "length" not in dl:
            raise SpecError([(f"{where}.delay_line", "give { length = '...', velocity_factor = 0.66 }")])
        vf = _number(dl.get("velocity_factor", 0.66), "delay_line.velocity_factor", where, 0.05, 1.0)
        length = _si_or_parse(dl["length"], "length", si)
        if not 0 <= length <= 10e3:
            raise SpecError(
                [(f"{where}.delay_line.length", f"must lie between 0 and 10 km; got {toml_repr(dl['length'])}")]
            )
        delay += length / (vf * C_M_PER_S)
    phase = np.radians(_number(entry.get("phase", 0.0), "phase", where, -720.0, 720.0))
    amp = _number(entry.get("amplitude", 1.0), "amplitude", where, 0.0, 100.0)
    return delay, phase, amp


@register("array", ArrayParams, "elements of one family at positions, combined with delays (optimised or given)")
class Array(Antenna):
    fixed_ground = True
    phased = True

    def __init__(self, params: ArrayParams):
        super().__init__(params)
        self.elements: list[Antenna] = []
        self.positions = []
        self.weights = []
        self.given_lines: list[tuple[float, float] | None] = []
        """Per element, (length [m], velocity factor) of the delay line the user gave it alone, else None."""
        problems = []
        families = set()
        for i, raw in enumerate(params.elements):
            where = item_label("elements", i, raw)
            if not isinstance(raw, dict):
                problems.append((where, "an element is a table of keys"))
                continue
            spec = {k: v for k, v in raw.items() if k not in WEIGHT_KEYS}
            if "ground" not in spec and params.ground is not None:
                fam = FAMILIES.get(spec.get("family")) if isinstance(spec.get("family"), str) else None
                if fam is not None and "ground" in fam.params.model_fields:
                    spec["ground"] = params.ground
            try:
                el = build(spec, where, si=params._si)
                if params.steering == "auto" and any(k in raw for k in ("delay", "delay_line", "phase")):
                    raise ValueError("delays and phases are set by steering = 'auto'")
                if "phase" in raw and params.phase_sense is None:
                    raise ValueError(PHASE_SENSE_NEEDED)
                delay, phase, amp = _weights_from(raw, where, si=params._si)
                self.weights.append((delay, -phase if params.phase_sense == "lead" else phase, amp))
                line = raw.get("delay_line") if not {"delay", "phase"} & set(raw) else None  # a line alone
                vf = float(line.get("velocity_factor", 0.66)) if line else 0.0
                self.given_lines.append((delay * vf * C_M_PER_S, vf) if line else None)
            except SpecError as exc:
                problems.extend(exc.problems)
                continue
            except ValueError as exc:
                problems.append((where, str(exc)))
                continue
            if el.family in ("array", "phased-verticals"):
                problems.append((where, "an array element cannot itself be an array"))
            if type(el).complex_response is Antenna.complex_response:
                problems.append((where, f"the {el.family!r} family carries no phase, so it cannot be an array element"))
            families.add(el.family)
            self.elements.append(el)
            self.positions.append(el.params.position or (0.0, 0.0))
        if len(families) > 1:
            problems.append(("elements", f"elements must be of one family; found {sorted(families)}"))
        if not problems:
            problems += placement_problems(self.positions, [a for _, _, a in self.weights])
        if problems:
            raise SpecError(problems)
        self.positions = np.array(self.positions, dtype=float)
        self._steered: dict[float, np.ndarray] = {}
        self._steered_note: dict[float, str] = {}
        self._last_freq: float | None = None
        if params.steering == "auto":
            u = np.array([np.sin(params.bearing), np.cos(params.bearing)])
            proj = self.positions @ u
            tau = (proj - proj.min()) / C_M_PER_S
            self.weights = [(t, 0.0, a) for t, (_, _, a) in zip(tau, self.weights)]

    # -- weights ------------------------------------------------------------------------------------------

    @property
    def optimised(self) -> bool:
        """True where auto steering optimises the weights (every ``auto_for`` but "end-fire")."""
        return self.params.steering == "auto" and self.auto_for != "end-fire"

    @property
    def steering_label(self) -> str:
        """How the weights are set, for output: "given" or "auto (<what it maximises>)"."""
        return "given" if self.params.steering == "given" else f"auto ({self.auto_for})"

    @property
    def auto_for(self) -> str:
        """What auto steering maximises ("rdf", "front_to_back", "snr" or "end-fire")."""
        return self.params.auto_for

    @property
    def auto_amplitudes(self) -> bool:
        """True where auto steering sets amplitudes as well as phases."""
        return self.params.auto_amplitudes

    def static_weights(self, freq_hz: float) -> np.ndarray:
        """The weights as given (or the end-fire delays), w_i = a_i exp(-j (omega tau_i + phase_i))."""
        omega = 2 * np.pi * freq_hz
        return np.array([a * np.exp(-1j * (omega * t + p)) for t, p, a in self.weights])

    def weights_at(self, freq_hz: float) -> np.ndarray:
        """The complex weights used at ``freq_hz``: those held for it (:meth:`set_weights`, whatever the steering:
        a copy with its weights turned, snrgain.decide.tolerance), else optimised once per frequency for auto
        steering, else as given."""
        self._last_freq = float(freq_hz)
        held = self._steered.get(freq_hz)
        if held is not None:
            return held
        if not self.optimised:
            return self.static_weights(freq_hz)
        if freq_hz not in self._steered:
            self.steer(freq_hz)
        return self._steered[freq_hz]

    sky_order = 0
    """Order in which the pipeline sets antennas under the sky: a combination (1) after any array it holds."""

    @property
    def uses_sky(self) -> bool:
        """True where the weights are set under the scenario's own noise sky (``auto_for = "snr"``)."""
        return self.optimised and self.auto_for == "snr"

    def copy(self) -> Array:
        """A new array with the same elements and parameters and its own record of settings (the stages of the
        pipeline return new antennas; nothing changes one that a caller holds)."""
        out = _copy.copy(self)
        out._steered = dict(self._steered)
        out._steered_note = dict(self._steered_note)
        return out

    def under_sky(self, freq_hz: float, *, signal, noise, note: str) -> Array:
        """A new array set for the sky's signal and noise forms (:func:`snrgain.model.pipeline.steer`); itself when
        it is not steered under the sky."""
        if not self.uses_sky:
            return self
        out = self.copy()
        out.steer(freq_hz, signal=signal, noise=noise, note=note)
        return out

    def with_weights(self, freq_hz: float, w, note: str) -> Array:
        """A new array holding the weights ``w`` at ``freq_hz``."""
        out = self.copy()
        out.set_weights(freq_hz, w, note)
        return out

    def set_weights(self, freq_hz: float, w: np.ndarray, note: str) -> None:
        """Hold ``w`` as the weights at ``freq_hz`` (largest magnitude 1, the first element's phase 0)."""
        w = np.asarray(w, dtype=complex)
        w = w / np.max(np.abs(w)) * np.exp(-1j * np.angle(w[0]))
        self._steered[float(freq_hz)] = w
        self._steered_note[float(freq_hz)] = note
        self._last_freq = float(freq_hz)

    def keep_steering_from(self, other: Array) -> None:
        """Use ``other``'s steered weights (a variant of the same array keeps the setting once made)."""
        self._steered.update(other._steered)
        self._steered_note.update(other._steered_note)

    def steer(self, freq_hz: float, *, signal=None, noise=None, note: str | None = None) -> None:
        """Optimise the weights at ``freq_hz``: by default for ``auto_for`` under a uniform sky; with ``signal``
        and ``noise`` (Hermitian forms in u = conj(w), see :mod:`snrgain.antennas.steering`) for that ratio."""
        from snrgain.antennas import steering as st

        p = self.params
        amps = np.array([a for _, _, a in self.weights], dtype=float)
        end_fire = np.conj(self.static_weights(freq_hz))
        front = self.element_responses(freq_hz, np.array([p.bearing]), np.array([p.auto_elevation]))
        if self.auto_for == "front_to_back" and signal is None:
            back = self.element_responses(freq_hz, np.array([p.bearing + np.pi]), np.array([p.auto_elevation]))
            s_f, s_b = st.quadratic_form(*front), st.quadratic_form(*back)
            s_mean = self._mean_form(freq_hz)
            # G_front / (G_back + FB_FLOOR G_front + FB_MEAN G_mean) is itself a ratio of two forms: of the phases
            # that null the back, those with the most gain forward over the average (steering.FB_MEAN)
            den = s_b + st.FB_FLOOR * s_f + st.FB_MEAN * s_mean
            # started also from the free optima of this ratio and of the RDF (their phases): from the end-fire delays
            # and random phases alone the ascent stopped short of them, as the elements' order had it
            starts = [end_fire, st.free_optimum(s_f, den), st.free_optimum(s_f, s_mean)]
            u = st.best_phases(s_f, den, amps, starts)
            self.set_weights(freq_hz, np.conj(u), note or "front-to-back at the auto elevation")
            return
        if signal is None:
            noise = self._mean_form(freq_hz)
            signal = st.quadratic_form(*front)
            note = note or "RDF toward the bearing at the auto elevation (uniform sky)"
        free = st.free_optimum(signal, noise)
        if self.auto_amplitudes:
            u = free
        else:
            u = st.best_phases(signal, noise, amps, [end_fire, free])
        self.set_weights(freq_hz, np.conj(u), note)

    def _mean_form(self, freq_hz: float) -> np.ndarray:
        """The form of the gain averaged over the sphere (the RDF's divisor), on the HEALPix hemisphere of nside 16."""
        from noisemodels.sphere import upper_hemisphere
        from snrgain.antennas import steering as st

        grid = upper_hemisphere(16)
        rv, rh = self.element_responses(freq_hz, grid.azimuth_rad, grid.elevation_rad)
        return st.quadratic_form(rv, rh, grid.solid_angle_sr / (4 * np.pi))

    # -- responses ----------------------------------------------------------------------------------------

    def check_frequency(self, freq_hz):
        for el in self.elements:
            el.check_frequency(freq_hz)

    def element_responses(self, freq_hz, azimuth_rad, elevation_rad):
        """Each element's response per unit weight with its position phase: (r_v, r_h), shape (N, *directions)."""
        az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
        k = 2 * np.pi * freq_hz / C_M_PER_S
        geo = direction_geometry(az, el)
        east, north = geo.east, geo.north  # horizontal direction, scaled by cos(elevation)
        rv = np.empty((len(self.elements), *az.shape), dtype=complex)
        rh = np.empty_like(rv)
        cache: dict[str, tuple] = {}
        for i, (elem, pos) in enumerate(zip(self.elements, self.positions)):
            key = elem.params.model_dump_json(exclude={"position", "name"})
            if key not in cache:  # identical elements at other positions: one response serves
                cache[key] = elem.complex_response(freq_hz, az, el)
            ev, eh = cache[key]
            phase = np.exp(1j * k * (east * pos[0] + north * pos[1]))
            rv[i] = ev * phase
            rh[i] = eh * phase
        return rv, rh

    def norm_matrix(self, freq_hz) -> np.ndarray:
        """Q of the normalisation w^H Q w (the identity: a lossless, matched combiner)."""
        return np.eye(len(self.elements))

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        if not self.composite and self._identical_elements():
            ev, eh, factor = self._element_and_factor(freq_hz, azimuth_rad, elevation_rad)
            return ev * factor, (np.zeros_like(factor) if eh is None else eh * factor)
        w = self.weights_at(freq_hz)
        rv, rh = self.element_responses(freq_hz, azimuth_rad, elevation_rad)
        norm = float(np.real(w.conj() @ self.norm_matrix(freq_hz) @ w))
        scale = 1.0 / np.sqrt(norm)
        # einsum, not tensordot: a product this small must not start multithreaded BLAS (slow under load)
        return np.einsum("i,i...->...", w, rv) * scale, np.einsum("i,i...->...", w, rh) * scale

    def _element_and_factor(self, freq_hz, azimuth_rad, elevation_rad):
        """Identical elements (the usual array): (one element's response r_v, r_h (None where it has no horizontal
        part), the amplitudes' sum of the positions' phases), whose product is the array's response."""
        az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
        factor = self._position_factor(freq_hz, az, el)
        ev, eh = self.elements[0].complex_response(freq_hz, az, el)
        return ev, (eh if np.any(eh) else None), factor

    def _position_factor(self, freq_hz, az, el):
        """sum_i a_i e^{j k p_i.d} toward directions (az, el) (arrays of one shape): with identical elements the
        array's response is one element's times it, sum_i a_i r e^{j k p_i.d} = r sum_i a_i e^{j k p_i.d}
        (element_amplitudes: the weights over the combiner's norm, and for elements fed by lines their coupled
        currents), without forming each element's product."""
        k = 2 * np.pi * freq_hz / C_M_PER_S
        geo = direction_geometry(az, el)
        return position_factor(self.element_amplitudes(freq_hz), self.positions, k * geo.east, k * geo.north)

    def _identical_elements(self) -> bool:
        """True when every element is the same antenna but for its position (worked out once: elements are fixed
        when the array is built)."""
        if getattr(self, "_identical", None) is None:
            self._identical = len({e.params.model_dump_json(exclude={"position", "name"}) for e in self.elements}) == 1
        return self._identical

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        if not self.composite and self._identical_elements():  # |r|^2 |factor|^2, no product of the complex fields
            elem = self.elements[0]
            if hasattr(elem, "elevation_response"):  # a pattern of elevation alone: |r|^2 on distinct elevations
                az, el = np.broadcast_arrays(
                    np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float)
                )
                factor = self._position_factor(freq_hz, az, el)
                e, inv, up = elem.elevation_response(freq_hz, az, el)
                gv = (e.real * e.real + e.imag * e.imag)[inv] * (factor.real**2 + factor.imag**2)
                return (gv if up is None else np.where(up, gv, 0.0)), np.zeros_like(gv)
            ev, eh, factor = self._element_and_factor(freq_hz, azimuth_rad, elevation_rad)
            f2 = factor.real**2 + factor.imag**2
            gv = (ev.real**2 + ev.imag**2) * f2
            return gv, (np.zeros_like(gv) if eh is None else (eh.real**2 + eh.imag**2) * f2)
        ev, eh = self.complex_response(freq_hz, azimuth_rad, elevation_rad)
        return ev.real**2 + ev.imag**2, eh.real**2 + eh.imag**2

    def element_amplitudes(self, freq_hz: float) -> np.ndarray:
        """a_i with :meth:`complex_response` = sum_i a_i r_i, r_i element i's own response with its position phase:
        the weights over the combiner's normalisation, w / sqrt(w^H Q w)."""
        w = self.weights_at(freq_hz)
        return w / np.sqrt(float(np.real(w.conj() @ self.norm_matrix(freq_hz) @ w)))

    def transmit_segments(self, freq_hz: float):
        """Every element's transmit currents (its family's ``transmit_segments``, scaled so that a unit plane wave
        gives its own response) times its amplitude in the array (:meth:`element_amplitudes`: the weights, and for
        coupled elements fed by lines the coupled currents), at its position less the elements' centroid (where
        :func:`snrgain.model.placed.antenna_point` places the array): the hook a near source is read through.  None
        where an element's family gives no currents (a composite is read through its parts instead)."""
        if self.composite or not self.elements:
            return None
        own = [getattr(e, "transmit_segments", None) for e in self.elements]
        if any(fn is None for fn in own):
            return None
        amps = self.element_amplitudes(freq_hz)
        centre = self.positions.mean(axis=0)
        pts, dirs, cur = [], [], []
        for fn, pos, a in zip(own, self.positions, amps):
            p, d, c = fn(freq_hz)
            p = np.array(p, dtype=float)
            p[:, :2] += pos - centre
            pts.append(p)
            dirs.append(np.asarray(d, dtype=float))
            cur.append(a * np.asarray(c, dtype=complex))
        return np.vstack(pts), np.vstack(dirs), np.concatenate(cur)

    def describe(self):
        p = self.params
        out = {
            **super().describe(),
            "elements": len(self.elements),
            "element_family": self.elements[0].family,
            "bearing_deg": bearing_deg(p.bearing),
            "steering": self.steering_label,
            "positions_m": [[float(x), float(y)] for x, y in self.positions],
        }
        f = self._last_freq
        if f is None and not self.optimised:  # given or end-fire weights, not yet used at a frequency
            out["delays_ns"] = [float(t * 1e9) for t, _, _ in self.weights]
            out["phases_deg"] = [float(np.degrees(ph)) for _, ph, _ in self.weights]
            out["amplitudes"] = [float(a) for _, _, a in self.weights]
            return out
        if f is None:
            return out  # optimised weights not yet chosen: no frequency seen
        w = self.weights_at(f)
        if self.optimised:  # the phases the shortest lines give (effective_delays_s)
            lag = np.round(np.degrees(shortest_lags(w)), 9)
        else:  # the given delays' phases at f, counted as the delays are (from the earliest element)
            lag = np.round(np.degrees(np.mod(2 * np.pi * f * self.effective_delays_s(f), 2 * np.pi)), 9)
        out.update(
            steered_at_hz=f,
            delays_ns=[float(t * 1e9) for t in self.effective_delays_s(f)],
            phases_deg=[float(x) for x in np.where(lag > 359.9995, 0.0, lag)],
            phase_sense="lag",
            amplitudes=[float(a) for a in np.abs(w) / np.max(np.abs(w))],
        )
        if f in self._steered_note:
            out["steered_for"] = self._steered_note[f]
        return out

    def front(self, freq_hz: float) -> tuple[float, float]:
        """(bearing, elevation) [rad] the array's figures are read toward: its ``bearing`` at its aiming elevation
        where auto steering aimed it there (RDF, front-to-back, end-fire); else (given weights, weights set for the
        SNR toward the target nearest the bearing, a phasing unit) its main lobe at that elevation, 1 deg steps
        (:func:`main_lobe_rad`): a misphased array's figures are read where it hears, not where it was meant to."""
        el = float(self.params.auto_elevation)
        if getattr(self.params, "steering", None) == "auto" and self.auto_for != "snr":
            return float(self.params.bearing), el
        az = np.radians(np.arange(0.0, 360.0, 1.0))
        gain = self.gain_linear(freq_hz, az, np.full(az.shape, el))
        return main_lobe_rad(az, gain, float(self.params.bearing)), el

    def effective_delays_s(self, freq_hz: float) -> np.ndarray:
        """Each element's delay with its phase turned into time at ``freq_hz``, the earliest element at 0 [s]: what
        the phasing lines must delay (as given: tau + phase / omega; optimised: the phase lag over omega)."""
        if self.optimised:  # phases found at one frequency: the shortest lines that give them (shortest_lags)
            d = shortest_lags(self.weights_at(freq_hz)) / (2 * np.pi * freq_hz)
        else:
            d = np.array([t + p / (2 * np.pi * freq_hz) for t, p, _ in self.weights])
        return d - d.min()


LOBE_TIE_DB = 1.0
"""Lobes within this of the strongest count as main lobes (:func:`main_lobe_rad`): a broadside pair's two, a
bidirectional array's, equal but for the transmitting vertical's re-radiation."""


def main_lobe_rad(azimuth_rad, gain, bearing_rad: float) -> float:
    """The azimuth [rad] of a pattern's main lobe on a closed ring of azimuths (``gain`` linear, in ring order): of
    its peaks within LOBE_TIE_DB of the strongest, the one nearest ``bearing_rad`` (a broadside pair in phase has
    two equal lobes; its bearing says which one it is built for), the first where two are as near."""
    g = np.asarray(gain, dtype=float)
    az = np.asarray(azimuth_rad, dtype=float)
    peak = (g >= np.roll(g, 1)) & (g >= np.roll(g, -1)) & (g >= g.max() * 10 ** (-LOBE_TIE_DB / 10))
    if not peak.any():  # a flat ring: every azimuth is a peak of the same height
        peak = g >= g.max()
    off = np.abs((az - bearing_rad + np.pi) % (2 * np.pi) - np.pi)
    return float(az[np.flatnonzero(peak)[int(np.argmin(off[peak]))]])


def position_factor(amplitudes, positions, kx, ky) -> np.ndarray:
    """sum_i a_i exp(j (kx x_i + ky y_i)): the elements' position phases weighted, toward directions whose wave
    numbers east and north are ``kx``, ``ky`` [rad/m] (arrays of one shape), for positions (x_i, y_i) [m].

    Written with the fewest complex exponentials, the kernel's cost (:func:`_factor_plan`)."""
    x0, y0, xs, ys, terms = _factor_plan(tuple(map(tuple, np.asarray(positions, dtype=float))))
    if terms is None:  # one exponential per element
        factor = np.zeros(np.shape(kx), dtype=complex)
        for a, (x, y) in zip(amplitudes, positions):
            factor += a * np.exp(1j * (kx * x + ky * y)) if x != 0 or y != 0 else a
        return factor
    ex = [np.exp(1j * v * kx) for v in xs]
    ey = [np.exp(1j * v * ky) for v in ys]
    factor = np.zeros(np.shape(kx), dtype=complex)
    for a, (i, conj_x, j, conj_y) in zip(amplitudes, terms):
        fx = None if i is None else ex[i].conj() if conj_x else ex[i]
        fy = None if j is None else ey[j].conj() if conj_y else ey[j]
        if fx is None and fy is None:
            factor += a
        elif fx is None or fy is None:
            factor += a * (fy if fx is None else fx)
        else:
            factor += a * (fx * fy)
    if x0 != 0 or y0 != 0:
        factor *= np.exp(1j * (kx * x0 + ky * y0))
    return factor


@functools.lru_cache(maxsize=256)
def _factor_plan(positions: tuple[tuple[float, float], ...]):
    """How :func:`position_factor` forms the phases of elements at ``positions``: (x0, y0, distinct |x - x0|,
    distinct |y - y0|, per element (index into the first, conjugate?, index into the second, conjugate?)), with
    exp(j kx x) exp(j ky y) taken once per distinct nonzero offset from (x0, y0), the coordinates most elements
    share (a negative offset is the conjugate), and the reference phase exp(j (kx x0 + ky y0)) only when (x0, y0)
    is not the origin.  A four-square, square or diamond, then needs two exponentials instead of four.  Offsets
    are rounded to 1 nm before they are compared (a phase error below 1e-6 rad at 30 MHz).  ``terms`` None: the
    plan saves nothing, one exponential per element (none for an element at the origin)."""
    pos = np.array(positions, dtype=float)
    x0, y0 = (_most_common(pos[:, i]) for i in (0, 1))
    dx, dy = np.round(pos[:, 0] - x0, 9), np.round(pos[:, 1] - y0, 9)
    xs, ys = sorted({abs(float(v)) for v in dx if v}), sorted({abs(float(v)) for v in dy if v})  # (not np.unique: it
    # loads numpy.ma, 5 ms of a rank's start, for a few numbers)
    if len(xs) + len(ys) + (x0 != 0 or y0 != 0) >= np.count_nonzero((pos[:, 0] != 0) | (pos[:, 1] != 0)):
        return x0, y0, xs, ys, None

    def index(table, d):
        return (None, False) if d == 0 else (table.index(abs(d)), bool(d < 0))

    return x0, y0, xs, ys, tuple((*index(xs, float(a)), *index(ys, float(b))) for a, b in zip(dx, dy))


def _most_common(values: np.ndarray) -> float:
    """The value most entries share (the first such, in order of the entries); 0 when 0 is among the most shared."""
    counts = Counter(float(v) for v in values)
    most = max(counts.values())
    return 0.0 if counts.get(0.0) == most else next(float(v) for v in values if counts[float(v)] == most)


def shortest_lags(weights) -> np.ndarray:
    """Each element's phase lag [rad] in [0, 2 pi) for complex ``weights``, counted from the element that makes the
    largest lag smallest: a lag is a phase, so a whole period can be taken off any line (the longest line then spans
    the lags' circle less its widest gap).  Lags of 0 and 357 deg are 3 deg and 0 (lines of 2 ns and none at 3.5 MHz,
    not 0 and 281 ns).  Where several elements make it as short, the one whose lines, shortest first, are the
    shortest (the most elements without a line, then the shortest next line): an array's states turned by a
    symmetry of its square then take the same set of lines (a switched four-square's NE and SW states one set of
    three lengths, not four); where those tie too, the first of them (the first element where it is one)."""
    w = np.asarray(weights, dtype=complex)

    def lags_from(k):
        lag = np.mod(-np.angle(w * np.conj(w[k])), 2 * np.pi)
        lag[k] = 0.0  # |w_k|^2, real but for a rounding of its imaginary part (a fused multiply-add)
        lag[w == 0] = 0.0  # an element switched off takes no line (np.angle(-0+0j) is pi)
        return np.where(lag > 2 * np.pi - 1e-12, 0.0, lag)  # a lag a rounding short of a period is none

    starts = [k for k in range(w.size) if w[k] != 0] or [0]  # an element switched off gives no phase to count from
    best, best_key = None, None
    for k in starts:
        lag = lags_from(k)
        key = np.concatenate(([lag.max()], np.sort(lag)))  # the longest line, then the lines shortest first
        if best is None or _shorter(key, best_key):
            best, best_key = lag, key
    return best


LAG_TIE_RAD = 1e-4
"""Lags closer than this count as one in :func:`shortest_lags` (0.006 deg, 0.01 ns at 1.8 MHz: states steered to
mirrored bearings come out of their searches that close, not to the bit)."""


def _shorter(key, than, tol: float = LAG_TIE_RAD) -> bool:
    """Whether ``key`` comes before ``than`` in order, values within ``tol`` taken as equal."""
    for x, y in zip(key, than):
        if abs(x - y) > tol:
            return bool(x < y)
    return False


def placement_problems(positions, amplitudes) -> list[tuple[str, str]]:
    """Coincident elements (closer than 1 cm) and all-zero amplitudes."""
    out = []
    p = np.asarray(positions, dtype=float).reshape(-1, 2)
    for i in range(len(p)):
        for j in range(i + 1, len(p)):
            if np.hypot(*(p[i] - p[j])) < 0.01:
                out.append(
                    (
                        "elements",
                        f"elements {i + 1} and {j + 1} stand at the same point ({p[i][0]:g}, {p[i][1]:g}) m; "
                        "give each element its own position",
                    )
                )
    if amplitudes and not any(a > 0 for a in amplitudes):
        out.append(("amplitudes", "every element's amplitude is zero; at least one must be above 0"))
    return out


@register("phased-verticals", PhasedVerticalsParams, "verticals at positions, phased (optimised, end-fire or given)")
class PhasedVerticals(Array):
    fixed_ground = False

    def __init__(self, params: PhasedVerticalsParams):
        elements = []
        for i, pos in enumerate(params.positions):
            e = {
                "family": "vertical",
                "height": params.height,
                "ground_loss": params.ground_loss,
                "top_loading": params.top_loading,
                "diameter": params.diameter,
                "position": [pos[0], pos[1]],
            }
            if params.delays is not None:
                e["delay"] = params.delays[i]
            if params.phases is not None:
                e["phase"] = params.phases[i]
            if params.amplitudes is not None:
                e["amplitude"] = params.amplitudes[i]
            elements.append(e)
        keys = ("steering", "bearing", "ground", "phase_sense", "auto_for", "auto_elevation", "auto_amplitudes")
        ap = ArrayParams.model_validate(
            {
                "family": "array",
                "name": params.name,
                "position": params.position,
                "elements": elements,
                **{k: getattr(params, k) for k in keys},
            },
            context=SI_CONTEXT,
        )
        try:
            super().__init__(ap)
        except SpecError as exc:  # the elements are made from the positions the user gave
            raise SpecError([("positions" if p == "elements" else p, m) for p, m in exc.problems]) from None
        self.params = params

    MAX_ELEMENT_WAVELENGTHS = 0.1
    """Buffered elements (coupling neglected) are taken up to this height, with their loading [wavelengths]."""
    MAX_COUPLED_WAVELENGTHS = 0.3
    """Coupled feeds (the induced-EMF model) are taken up to this height [wavelengths]."""

    @property
    def coupled(self) -> bool:
        return self.params.feed != "buffered"

    def check_frequency(self, freq_hz):
        super().check_frequency(freq_hz)
        h_wl = (self.params.height + self.params.top_loading) * freq_hz / C_M_PER_S
        limit = self.MAX_COUPLED_WAVELENGTHS if self.coupled else self.MAX_ELEMENT_WAVELENGTHS
        if h_wl > limit:
            if self.coupled:
                raise ValueError(
                    f"height: elements of {h_wl:.2f} wavelength are beyond the coupled model's "
                    f"{limit} wavelength (sinusoidal currents)"
                )
            raise ValueError(
                f"height: elements of {h_wl:.2f} wavelength couple too strongly for buffered elements (coupling "
                f"neglected, up to {limit} wavelength with top loading); set feed = 'lines' or 'current' to "
                f"model the coupling (up to {self.MAX_COUPLED_WAVELENGTHS} wavelength)"
            )

    # -- coupling -----------------------------------------------------------------------------------------

    def impedances(self, freq_hz: float) -> np.ndarray:
        """Impedance matrix [ohm] at the element bases: mutual terms by the induced-EMF method, the ground loss
        on the diagonal (snrgain.antennas.coupling)."""
        from snrgain.antennas.coupling import impedance_matrix

        p = self.params
        z = impedance_matrix(freq_hz, self.positions, p.height, p.top_loading, p.diameter / 2)
        return z + np.eye(len(z)) * p.ground_loss

    def _element_input_ohm(self, freq_hz: float) -> float:
        """Radiation resistance plus ground loss of one element alone: its responses are per unit input power."""
        return self.elements[0].radiation_resistance_ohm(freq_hz) + self.params.ground_loss

    def _line_matrix(self, freq_hz: float) -> np.ndarray:
        """M with currents I = M V for sources V behind the line impedance: (Z + Z_line)^-1."""
        z = self.impedances(freq_hz)
        return np.linalg.inv(z + np.eye(len(z)) * self.params.line_impedance)

    def currents(self, freq_hz: float, w: np.ndarray | None = None) -> np.ndarray:
        """Base currents per unit weight: the weights themselves (current forcing, buffered) or M w (lines)."""
        w = self.weights_at(freq_hz) if w is None else w
        return self._line_matrix(freq_hz) @ w if self.params.feed == "lines" else w

    def feed_impedances_ohm(self, freq_hz: float) -> np.ndarray:
        """Each element's driven (active) impedance at its base, V_i / I_i [ohm], ground loss included."""
        i = self.currents(freq_hz)
        with np.errstate(divide="ignore", invalid="ignore"):
            return (self.impedances(freq_hz) @ i) / i

    def element_responses(self, freq_hz, azimuth_rad, elevation_rad):
        rv, rh = super().element_responses(freq_hz, azimuth_rad, elevation_rad)
        if self.params.feed != "lines":
            return rv, rh
        # I = M V; the available power of sources V behind Z_line is sum |V|^2 / (8 Z_line), and an element's
        # response is per unit input power 0.5 |I|^2 (R_rad + R_loss): r_eff = M^T r sqrt(4 Z_line (R_rad + R_loss)).
        m = self._line_matrix(freq_hz)
        scale = np.sqrt(4 * self.params.line_impedance * self._element_input_ohm(freq_hz))
        shape = rv.shape
        rv = np.einsum("ij,in->jn", m, rv.reshape(len(m), -1)).reshape(shape) * scale  # no BLAS (see above)
        rh = np.einsum("ij,in->jn", m, rh.reshape(len(m), -1)).reshape(shape) * scale
        return rv, rh

    def element_amplitudes(self, freq_hz: float) -> np.ndarray:
        """As :meth:`Array.element_amplitudes`; fed by lines, the coupled currents M w times the scale
        :meth:`element_responses` applies (each element's response is per unit input power of its own current)."""
        a = super().element_amplitudes(freq_hz)
        if self.params.feed != "lines":
            return a
        scale = np.sqrt(4 * self.params.line_impedance * self._element_input_ohm(freq_hz))
        return np.einsum("ij,j->i", self._line_matrix(freq_hz), a) * scale

    def norm_matrix(self, freq_hz) -> np.ndarray:
        if self.params.feed != "current":
            return super().norm_matrix(freq_hz)
        # Forced currents: input power 0.5 I^H Re(Z) I against 0.5 |I|^2 (R_rad + R_loss) for one element alone.
        return np.real(self.impedances(freq_hz)) / self._element_input_ohm(freq_hz)

    def describe(self):
        out = {**super().describe(), "height_m": self.params.height, "feed": self.params.feed}
        f = self._last_freq
        if self.coupled and f is not None:
            z = self.feed_impedances_ohm(f)
            i = self.currents(f)
            rel = i / i[0]
            out.update(
                line_impedance_ohm=self.params.line_impedance if self.params.feed == "lines" else None,
                feed_impedances_ohm=[[float(x.real), float(x.imag)] for x in z],
                current_magnitudes=[float(x) for x in np.abs(rel)],
                current_lags_deg=[float(x) for x in np.mod(-np.degrees(np.angle(rel)), 360.0)],
            )
        return out
