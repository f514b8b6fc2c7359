"""Arrays: antennas of one family at positions, combined with delays, phases and amplitudes.

The complex responses of the elements (each referred to its own feed point,
snrgain.antennas.base.Antenna.complex_response) are combined before powers
are taken:

    E(dir) = sum_i w_i e_i(dir) exp(+j k cos(Delta) (east_i sin(phi) + north_i cos(phi))),
    w_i = a_i exp(-j (omega tau_i + phase_i)),

the position phase being that of a plane wave reaching points nearer its
source first (DESIGN.md).  The combiner is taken as lossless and matched,
so the realized gain is |E|^2 / sum |w_i|^2: one element with unit weight
gives back its own pattern, and N elements added in phase toward a direction
give N times an element's gain there.

``steering = "auto"`` delays each element by its position's projection on
the bearing over c, so that a wave from the bearing at the horizon adds in
phase (end-fire toward the bearing; two elements a quarter wave apart make
the textbook cardioid).  Otherwise each element gives ``delay`` (a time), a
``delay_line`` (length and velocity factor) or ``phase``, and ``amplitude``.

Mutual coupling is neglected: the elements' currents are set by their own
loads.  This holds for short receiving elements (verticals up to about 0.1
wavelength, loaded by high-impedance amplifiers or transformers, the usual
receive-array practice) spaced a tenth of a wavelength or more; it does not
hold for resonant elements close together.  Elements must be of one family
(their phase conventions then agree).

``phased-verticals`` is a shorthand: identical short verticals at given
positions, steered automatically or by given delays.
"""

from __future__ import annotations

from typing import Any, Literal

import numpy as np
from pydantic import Field, PrivateAttr, ValidationInfo, model_validator

from snrgain.antennas.base import FAMILIES, Antenna, AntennaParams, SpecError, build, item_label, register
from snrgain.antennas.geometry import direction_geometry
from snrgain.fields import SI_CONTEXT, Bearing, GroundField, PlanPoint, quantity
from snrgain.ground import C_M_PER_S
from snrgain.units import parse_quantity

WEIGHT_KEYS = ("delay", "delay_line", "phase", "amplitude")


PhaseSense = Literal["lag", "lead"]
"""How an element's ``phase`` is meant: "lag", its signal is delayed by that angle (as a longer cable delays it);
"lead", advanced.  Arrays that give phases must say which: written the other way round, an array points back."""


class ArrayParams(AntennaParams):
    family: Literal["array"]
    elements: list[dict[str, Any]] = Field(min_length=1, max_length=64)
    steering: Literal["auto", "given"] = "auto"
    bearing: Bearing = 0.0
    phase_sense: PhaseSense | None = None
    ground: GroundField | None = None
    _si: bool = PrivateAttr(default=False)

    @model_validator(mode="after")
    def _remember_units(self, info: ValidationInfo):
        # The elements are validated when the array is built, in the same mode (SI floats or unit strings).
        self._si = bool(isinstance(info.context, dict) and info.context.get("si"))
        return self


class PhasedVerticalsParams(AntennaParams):
    family: Literal["phased-verticals"]
    positions: list[PlanPoint] = Field(min_length=1, max_length=64)
    height: quantity("length", ge=0.05, le=60.0)
    ground_loss: quantity("resistance", ge=0.0, le=5000.0) = 10.0
    top_loading: quantity("length", ge=0.0, le=60.0) = 0.0
    steering: Literal["auto", "given"] = "auto"
    bearing: Bearing = 0.0
    delays: list[quantity("time", ge=-1e-3, le=1e-3)] | None = None
    phases: list[float] | None = None
    phase_sense: PhaseSense | None = None
    amplitudes: list[float] | None = None
    ground: GroundField | None = None

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
        raise ValueError(f"{where}.{what} must be a number; got {value!r}")
    if not lo <= value <= hi:
        raise ValueError(f"{where}.{what} must lie between {lo:g} and {hi:g}; got {value!r}")
    return float(value)


def _weights_from(entry: dict, where: str, *, si: bool = False):
    """(delay [s], phase [rad], amplitude) of one element's weight keys (``si``: bare numbers are s and m)."""
    delay = 0.0
    if "delay" in entry:
        delay = _si_or_parse(entry["delay"], "time", si)
        if abs(delay) > 1e-3:
            raise ValueError(f"{where}.delay must lie within 1 ms; got {entry['delay']!r}")
    if "delay_line" in entry:
        dl = entry["delay_line"]
        if not isinstance(dl, dict) or set(dl) - {"length", "velocity_factor"} or "length" not in dl:
            raise ValueError(f"{where}.delay_line: give {{ length = '...', velocity_factor = 0.66 }}")
        vf = _number(dl.get("velocity_factor", 0.66), "delay_line.velocity_factor", where, 0.05, 1.0)
        length = _si_or_parse(dl["length"], "length", si)
        if not 0 <= length <= 10e3:
            raise ValueError(f"{where}.delay_line.length must lie between 0 and 10 km; got {dl['length']!r}")
        delay += length / (vf * C_M_PER_S)
    phase = np.radians(_number(entry.get("phase", 0.0), "phase", where, -720.0, 720.0))
    amp = _number(entry.get("amplitude", 1.0), "amplitude", where, 0.0, 100.0)
    return delay, phase, amp


@register("array", ArrayParams, "elements of one family at positions, combined with delays (end-fire or given)")
class Array(Antenna):
    def __init__(self, params: ArrayParams):
        super().__init__(params)
        self.elements: list[Antenna] = []
        self.positions = []
        self.weights = []
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
                    raise ValueError(f"{where}: delays and phases are set by steering = 'auto'")
                if "phase" in raw and params.phase_sense is None:
                    raise ValueError(f"{where}: {PHASE_SENSE_NEEDED}")
                delay, phase, amp = _weights_from(raw, where, si=params._si)
                self.weights.append((delay, -phase if params.phase_sense == "lead" else phase, amp))
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
        if problems:
            raise SpecError(problems)
        self.positions = np.array(self.positions, dtype=float)
        if params.steering == "auto":
            u = np.array([np.sin(params.bearing), np.cos(params.bearing)])
            proj = self.positions @ u
            tau = (proj - proj.min()) / C_M_PER_S
            self.weights = [(t, 0.0, a) for t, (_, _, a) in zip(tau, self.weights)]

    def check_frequency(self, freq_hz):
        for el in self.elements:
            el.check_frequency(freq_hz)

    def complex_response(self, freq_hz, azimuth_rad, elevation_rad):
        az, el = np.broadcast_arrays(np.asarray(azimuth_rad, dtype=float), np.asarray(elevation_rad, dtype=float))
        k = 2 * np.pi * freq_hz / C_M_PER_S
        omega = 2 * np.pi * freq_hz
        geo = direction_geometry(az, el)
        east, north = geo.ce * geo.sin_az, geo.ce * geo.cos_az  # horizontal direction, scaled by cos(elevation)
        ev = np.zeros(az.shape, dtype=complex)
        eh = np.zeros(az.shape, dtype=complex)
        norm = 0.0
        cache: dict[str, tuple] = {}
        for elem, pos, (tau, phase, amp) in zip(self.elements, self.positions, self.weights):
            key = elem.params.model_dump_json(exclude={"position", "name"})
            if key not in cache:  # identical elements at other positions: one response serves
                cache[key] = elem.complex_response(freq_hz, az, el)
            rv, rh = cache[key]
            w = amp * np.exp(-1j * (omega * tau + phase))
            phase = np.exp(1j * k * (east * pos[0] + north * pos[1]))
            ev += w * rv * phase
            eh += w * rh * phase
            norm += amp**2
        if norm == 0:
            raise ValueError("amplitudes: every element's amplitude is zero")
        scale = 1.0 / np.sqrt(norm)
        return ev * scale, eh * scale

    def partial_gains(self, freq_hz, azimuth_rad, elevation_rad):
        ev, eh = self.complex_response(freq_hz, azimuth_rad, elevation_rad)
        return np.abs(ev) ** 2, np.abs(eh) ** 2

    def describe(self):
        out = {
            **super().describe(),
            "elements": len(self.elements),
            "element_family": self.elements[0].family,
            "bearing_deg": float(np.degrees(self.params.bearing)),
            "delays_ns": [float(t * 1e9) for t, _, _ in self.weights],
            "phases_deg": [float(np.degrees(p)) for _, p, _ in self.weights],
            "amplitudes": [float(a) for _, _, a in self.weights],
            "positions_m": [[float(x), float(y)] for x, y in self.positions],
        }
        return out

    def effective_delays_s(self, freq_hz: float) -> np.ndarray:
        """Each element's delay with its phase turned into time at ``freq_hz`` (tau + phase / omega), the earliest
        element at 0 [s]: what the phasing lines must delay."""
        d = np.array([t + p / (2 * np.pi * freq_hz) for t, p, _ in self.weights])
        return d - d.min()


@register("phased-verticals", PhasedVerticalsParams, "short verticals at positions, phased (end-fire or given delays)")
class PhasedVerticals(Array):
    def __init__(self, params: PhasedVerticalsParams):
        elements = []
        for i, pos in enumerate(params.positions):
            e = {
                "family": "vertical",
                "height": params.height,
                "ground_loss": params.ground_loss,
                "top_loading": params.top_loading,
                "position": [pos[0], pos[1]],
            }
            if params.delays is not None:
                e["delay"] = params.delays[i]
            if params.phases is not None:
                e["phase"] = params.phases[i]
            if params.amplitudes is not None:
                e["amplitude"] = params.amplitudes[i]
            elements.append(e)
        ap = ArrayParams.model_validate(
            {
                "family": "array",
                "name": params.name,
                "position": params.position,
                "elements": elements,
                "steering": params.steering,
                "bearing": params.bearing,
                "ground": params.ground,
                "phase_sense": params.phase_sense,
            },
            context=SI_CONTEXT,
        )
        super().__init__(ap)
        self.params = params

    MAX_ELEMENT_WAVELENGTHS = 0.1

    def check_frequency(self, freq_hz):
        super().check_frequency(freq_hz)
        h_wl = (self.params.height + self.params.top_loading) * freq_hz / C_M_PER_S
        if h_wl > self.MAX_ELEMENT_WAVELENGTHS:
            raise ValueError(
                f"height: elements of {h_wl:.2f} wavelength couple too strongly for a model without "
                f"mutual coupling; phased verticals are taken up to {self.MAX_ELEMENT_WAVELENGTHS} "
                "wavelength (with top loading)"
            )

    def describe(self):
        return {**super().describe(), "height_m": self.params.height}
