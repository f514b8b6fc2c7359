"""Two antennas of the scenario combined through a phase and amplitude unit.

Listeners null a local noise source by adding a second antenna's signal (a
small sense antenna, or another receiving antenna) to the first's with a
set phase and amplitude.  The combination is a two-element array of
unlike antennas (snrgain.antennas.array): E = w_1 r_1 + w_2 r_2, each part
with its own pattern and position, through a lossless combiner.

``setting = "auto"`` takes the weights of highest SNR under the scenario's
noise sky toward the target nearest ``bearing`` (the maximum-SNR weights,
snrgain.antennas.steering; two antennas have one complex ratio to set, so
the free optimum is what the unit can reach).  Outside a scenario it takes
the weights of highest RDF toward ``bearing``.  A given setting is the
second antenna's phase (with ``phase_sense``) and amplitude in dB relative
to the first.  The pipeline reports how much SNR a setting error of
+-10 deg and +-1 dB costs (:data:`SETTING_ERRORS`): a deep null is sharp.

The phase is referred to each antenna's own feed point as its model gives
it; cables of unequal length between the antennas and the unit add their
delays, which the unit's setting absorbs.
"""

from __future__ import annotations

from typing import Literal

import numpy as np
from pydantic import Field

from snrgain.antennas.array import AUTO_ELEVATION_RAD, PhaseSense, placement_problems
from snrgain.antennas.array import Array as _Array
from snrgain.antennas.base import Antenna, AntennaParams, SpecError, register
from snrgain.fields import Bearing, Decibels, Elevation, NameRef, StrictModel

SETTING_ERRORS = ((np.radians(10.0), 1.0),)
"""Setting errors whose SNR cost is reported: (phase [rad], amplitude [dB]), every sign combination."""


class GivenSetting(StrictModel):
    phase: float = Field(ge=-360.0, le=360.0)
    """The second antenna's phase relative to the first [deg]."""
    amplitude: Decibels = 0.0
    """The second antenna's amplitude relative to the first [dB]."""
    phase_sense: PhaseSense


class CombinationParams(AntennaParams):
    family: Literal["combination"]
    antennas: list[NameRef] = Field(min_length=2, max_length=2)
    """The names of two antennas of the scenario ("reference" names the reference)."""
    setting: Literal["auto"] | GivenSetting = "auto"
    bearing: Bearing = 0.0
    auto_elevation: Elevation = AUTO_ELEVATION_RAD


@register("combination", CombinationParams, "two antennas of the scenario through a phase and amplitude unit")
class Combination(_Array):
    """Built from its parameters, then given its two parts by the scenario (:meth:`attach`)."""

    composite = True
    phased = False

    def __init__(self, params: CombinationParams):  # noqa: D107 - the parts come later
        self.params = params
        self.elements = []
        self.positions = np.zeros((0, 2))
        self.weights = []
        self._steered: dict[float, np.ndarray] = {}
        self._steered_note: dict[float, str] = {}
        self._last_freq = None
        self.setting_loss_db: dict[float, float] = {}

    auto_for = "snr"
    auto_amplitudes = True
    sky_order = 1
    uses_sky = True  # a given setting too: the cost of its setting error is taken under the sky

    @property
    def optimised(self) -> bool:
        return self.params.setting == "auto"

    @property
    def steering_label(self) -> str:
        return "auto (snr)" if self.optimised else "given"

    def attach(self, parts, origin=(0.0, 0.0)) -> None:
        """Give the combination its two antennas (built Antenna objects, in the order of ``antennas``); a part without
        a ``position`` stands at ``origin`` (the reference's place: where the placed sources' pickup hears it too,
        snrgain.model.placed.antenna_point)."""
        problems = []
        for i, part in enumerate(parts):
            if part.family in ("combination",):
                problems.append((f"antennas.{i + 1}", "a combination cannot combine a combination"))
            elif type(part).complex_response is Antenna.complex_response:
                problems.append((f"antennas.{i + 1}", f"the {part.family!r} family carries no phase"))
        pos = [part.params.position or tuple(origin) for part in parts]
        if parts[0] is parts[1]:
            problems.append(("antennas", "name two different antennas"))
        elif not problems:
            problems += [
                ("antennas", m.replace("elements", "the two antennas").replace("give each element", "give each"))
                for _, m in placement_problems(pos, [1.0, 1.0])
            ]
        if problems:
            raise SpecError(problems)
        self.elements = list(parts)
        self.positions = np.array(pos, dtype=float)
        s = self.params.setting
        if s == "auto":
            self.weights = [(0.0, 0.0, 1.0), (0.0, 0.0, 1.0)]
        else:
            lag = np.radians(s.phase) * (1 if s.phase_sense == "lag" else -1)
            self.weights = [(0.0, 0.0, 1.0), (0.0, float(lag), float(10 ** (s.amplitude / 20)))]

    def _need_parts(self):
        if len(self.elements) != 2:
            raise ValueError("antennas: a combination is evaluated within a scenario that holds both antennas")

    def check_frequency(self, freq_hz):
        if self.elements:
            super().check_frequency(freq_hz)

    def element_responses(self, freq_hz, azimuth_rad, elevation_rad):
        self._need_parts()
        return super().element_responses(freq_hz, azimuth_rad, elevation_rad)

    def describe(self):
        out = super().describe()
        out.pop("element_family", None)
        out["antennas"] = [e.name for e in self.elements] if self.elements else list(self.params.antennas)
        f = self._last_freq
        if f is not None and self.elements:
            w = self.weights_at(f)
            ratio = w[1] / w[0]
            out["setting"] = {
                "phase_lag_deg": float(np.round(np.mod(-np.degrees(np.angle(ratio)), 360.0), 6)),
                "amplitude_db": float(20 * np.log10(abs(ratio))) if abs(ratio) > 0 else float("-inf"),
            }
            if f in self.setting_loss_db:
                out["setting"]["loss_with_error_db"] = self.setting_loss_db[f]
                out["setting"]["error"] = "+-10 deg, +-1 dB"
        return out

    def copy(self) -> Combination:
        out = super().copy()
        out.setting_loss_db = dict(self.setting_loss_db)
        out.elements = list(self.elements)
        return out

    def with_parts(self, parts) -> Combination:
        """A new combination of the same setting over ``parts`` (the scenario's antennas as a stage returned them)."""
        if len(self.elements) == 2 and all(a is b for a, b in zip(parts, self.elements)):
            return self
        out = self.copy()
        out.elements = list(parts)
        return out

    def under_sky(self, freq_hz: float, *, signal, noise, note: str) -> Combination:
        out = self.copy()
        if self.optimised:
            out.steer(freq_hz, signal=signal, noise=noise, note=note)
        out.setting_loss(freq_hz, signal, noise)
        return out

    def alone(self, freq_hz: float, which: int, note: str) -> Combination:
        """The combination passing antenna ``which`` (0 or 1) alone: what a phasing unit does with the other input
        turned off."""
        w = np.zeros(2, dtype=complex)
        w[which] = 1.0
        return self.with_weights(freq_hz, w, note)

    def setting_loss(self, freq_hz: float, signal, noise) -> float:
        """The largest SNR loss [dB] of the present weights under setting errors (:data:`SETTING_ERRORS`)."""
        from snrgain.antennas.steering import ratio

        w = self.weights_at(freq_hz)
        base = ratio(np.conj(w), signal, noise)
        worst = 0.0
        for dphi, ddb in SETTING_ERRORS:
            for p in (-dphi, 0.0, dphi):
                for a in (-ddb, 0.0, ddb):
                    e = np.array([1.0, 10 ** (a / 20) * np.exp(-1j * p)])
                    worst = max(worst, 10 * np.log10(base / ratio(np.conj(w * e), signal, noise)))
        self.setting_loss_db[float(freq_hz)] = float(worst)
        return float(worst)
