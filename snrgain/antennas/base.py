"""What every antenna family provides, and the registry of families.

A family is a module with a parameter model (a pydantic model listing the
keys users may write, with units) and an :class:`Antenna` subclass built from
it.  :func:`register` adds it to :data:`FAMILIES`; :func:`from_spec` builds
any antenna from a plain dict such as ``{"family": "vertical", "height":
"18 m"}``.

Inside, gains are linear and directions are in radians; the public
``gain_dbi`` takes degrees, as users do.  Below the horizon every gain is 0.
"""

from __future__ import annotations

from abc import ABC, abstractmethod
from typing import Any, ClassVar

import numpy as np
from pydantic import ValidationError

from snrgain.errors import SpecError
from snrgain.fields import SI_CONTEXT, Name, PlanPoint, StrictModel
from snrgain.problems import toml_repr
from snrgain.records import record


class AntennaParams(StrictModel):
    """Keys every antenna accepts besides its family's own."""

    family: str
    name: Name | None = None
    position: PlanPoint | None = None
    """Where the antenna's feed point stands on the site plan [m east, m north] (for the plan view)."""


class Antenna(ABC):
    """An antenna's far-field response over ground.

    Subclasses implement :meth:`partial_gains` (or :meth:`gain_linear` where
    the polarizations are unknown) for arrays of directions in radians.
    """

    family: ClassVar[str]
    params: AntennaParams

    # -- capabilities: what the family can do, declared here and read everywhere (no family-name lists) --------
    placeable: ClassVar[bool] = False
    """It stands at a ``position`` on the lot that the layout search may move."""
    long_wire: ClassVar[bool] = False
    """A wire of the transmission-line model (wire design report, calibration from analyser readings)."""
    integrates_near_sources: ClassVar[bool] = False
    """A placed source's field is summed along its length (else it hears a source at one point, its feed)."""
    fixed_ground: ClassVar[bool] = False
    """It keeps its own ground when the site's ground is varied (pattern tables, element arrays, isotropic)."""
    phased: ClassVar[bool] = False
    """Its lobe is set by phases or delays, so the lobe can point away from its ``bearing`` (arrays)."""
    composite: ClassVar[bool] = False
    """It is made of other antennas of the scenario (a combination through a phasing unit)."""
    buildable: ClassVar[bool] = True
    """Something a builder can put up (the isotropic test antenna is not)."""
    uses_sky: bool = False
    """Its setting is chosen under the scenario's own noise sky (a stage of the pipeline returns it set)."""
    sky_order: ClassVar[int] = 0
    """Order in which antennas are set under the sky: a composite after the parts it holds."""
    polarised: bool = True
    """Its partial gains (vertical, horizontal) are known, so a placed source's field, which has a polarisation, can
    be read through it (a pattern table of total gain only has none)."""
    resonant_tx: ClassVar[bool] = False
    """As the reference, a resonant transmitting element that re-radiates what it receives: receiving antennas
    keep ``[site] tx_clearance`` from it (the transmitting vertical)."""

    def __init__(self, params: AntennaParams):
        self.params = params

    @property
    def name(self) -> str:
        return self.params.name or self.family

    @abstractmethod
    def partial_gains(self, freq_hz: float, azimuth_rad, elevation_rad) -> tuple[np.ndarray, np.ndarray]:
        """Partial gains (vertical, horizontal polarization), linear, 0 below the horizon."""

    def complex_response(self, freq_hz: float, azimuth_rad, elevation_rad) -> tuple[np.ndarray, np.ndarray]:
        """Complex responses (vertical, horizontal) with |e|^2 = the realized partial gains.

        The phase is referred to the antenna's own feed point and ``position``; arrays combine these before
        powers are taken.  Families without phase (pattern tables) raise ValueError.
        """
        raise ValueError(f"the {self.family!r} family carries no phase, so it cannot be an element of an array")

    def gain_linear(self, freq_hz: float, azimuth_rad, elevation_rad) -> np.ndarray:
        """Total gain (sum of the two partial gains), linear."""
        gv, gh = self.partial_gains(freq_hz, azimuth_rad, elevation_rad)
        return gv + gh

    def gain_dbi(self, freq_hz: float, azimuth_deg, elevation_deg) -> np.ndarray:
        """Total gain [dBi] toward compass bearing and elevation [deg], vectorised.

        -inf where the gain is zero (below the horizon, exact nulls).
        """
        f = _frequency(freq_hz)
        az, el = _radians(azimuth_deg, elevation_deg)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore", under="ignore"):
            return 10.0 * np.log10(self.gain_linear(f, az, el))

    def partial_gains_dbi(self, freq_hz: float, azimuth_deg, elevation_deg) -> tuple[np.ndarray, np.ndarray]:
        """Partial gains (vertical, horizontal) [dBi] toward bearing and elevation [deg]."""
        f = _frequency(freq_hz)
        az, el = _radians(azimuth_deg, elevation_deg)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore", under="ignore"):
            gv, gh = self.partial_gains(f, az, el)
            return 10.0 * np.log10(gv), 10.0 * np.log10(gh)

    def at(self, position_m) -> Antenna:
        """The same antenna standing at ``position_m`` [m east, m north] (a new object; for placing it)."""
        import copy

        out = copy.copy(self)
        out.params = self.params.model_copy(update={"position": (float(position_m[0]), float(position_m[1]))})
        if type(self).gain_key is Antenna.gain_key:  # the key leaves the position out: the same, not made again
            key = self.gain_key()
            if key is not None:
                out.__dict__["_gain_key"] = (out.params, key)
        return out

    def gain_key(self) -> str | None:
        """What its far-field gains depend on, for reuse across positions (a placeable antenna's gains do not
        change where it stands); None where hidden state also counts (arrays set under a sky, phasing units)."""
        if not self.placeable:
            return None
        held = self.__dict__.get("_gain_key")  # the parameters are frozen: kept while they are the same object
        if held is None or held[0] is not self.params:
            held = self.__dict__["_gain_key"] = (
                self.params,
                f"{type(self).__name__}:" + self.params.model_dump_json(exclude={"position", "name"}),
            )
        return held[1]

    def check_frequency(self, freq_hz: float) -> None:  # noqa: B027 - valid everywhere unless a family says not
        """Raise ValueError if the model is not valid at ``freq_hz`` [Hz]."""

    def describe(self) -> dict[str, Any]:
        """Parameters for output (JSON-friendly, SI units in the keys)."""
        out = {"family": self.family, "name": self.name}
        if self.params.position is not None:
            out["position_m"] = list(self.params.position)
        return out


class TransformerFeed:
    """Matching to the coax through a transformer: for antennas with ``feed_point_impedance(freq_hz)`` and
    params ``turns_ratio`` ("auto" or a number, antenna side over coax side) and ``coax`` [ohm]."""

    def turns_ratio(self, freq_hz: float) -> float:
        """Transformer turns ratio: as given, or sqrt(|Z_feed| / Z_coax) for 'auto'."""
        n = self.params.turns_ratio
        if n == "auto":
            return float(np.sqrt(abs(self.feed_point_impedance(freq_hz)) / self.params.coax))
        return float(n)

    def receiver_load_ohm(self, freq_hz: float) -> float:
        """The receiver's coax impedance referred through the transformer, n^2 Z_coax [ohm]."""
        return self.turns_ratio(freq_hz) ** 2 * self.params.coax

    def mismatch(self, freq_hz: float) -> float:
        """Mismatch factor between the feed-point impedance and the transformer's load [-]."""
        from snrgain.physics.lines import mismatch_factor

        return mismatch_factor(self.feed_point_impedance(freq_hz), self.receiver_load_ohm(freq_hz))


def _frequency(freq_hz) -> float:
    """One frequency [Hz] in the tool's range, as a float; ValueError naming the argument otherwise (an array of
    frequencies is evaluated one frequency at a time)."""
    from snrgain.constants import check_frequency_hz

    f = np.asarray(freq_hz)
    if f.ndim != 0 or not np.issubdtype(f.dtype, np.number) or np.iscomplexobj(f):
        raise ValueError(f"freq_hz: one real frequency in Hz, e.g. 1.83e6; got {freq_hz!r} (give one at a time)")
    if not np.isfinite(f):
        raise ValueError(f"freq_hz: must be a finite frequency in Hz; got {float(f)!r}")
    return check_frequency_hz(float(f), "freq_hz")


def _radians(azimuth_deg, elevation_deg):
    """Directions [deg] as radians, broadcast together; ValueError naming the argument for NaN or infinity."""
    out = []
    for name, v in (("azimuth_deg", azimuth_deg), ("elevation_deg", elevation_deg)):
        try:
            a = np.asarray(v, dtype=float)
        except (TypeError, ValueError):
            raise ValueError(f"{name}: numbers in degrees; got {v!r}") from None
        if not np.all(np.isfinite(a)):
            raise ValueError(f"{name}: every direction must be a finite number of degrees; got {v!r}")
        out.append(np.radians(a))
    if np.any(np.abs(out[1]) > np.pi / 2 + 1e-12):
        raise ValueError(f"elevation_deg: between -90 and 90 deg; got {elevation_deg!r}")
    return np.broadcast_arrays(*out)


def above_horizon(elevation_rad) -> np.ndarray:
    """Mask of directions at or above the horizon."""
    return np.asarray(elevation_rad) >= 0.0


@record
class Family:
    """A registered antenna family."""

    name: str
    params: type[AntennaParams]
    build: type[Antenna]
    summary: str


FAMILIES: dict[str, Family] = {}


def register(name: str, params: type[AntennaParams], summary: str):
    """Class decorator adding an Antenna subclass to :data:`FAMILIES` under ``name``."""

    def deco(cls: type[Antenna]):
        cls.family = name
        FAMILIES[name] = Family(name, params, cls, summary)
        return cls

    return deco


def item_label(key: str, index: int, item) -> str:
    """One list item in a field path: counted from 1 and named where it has a name, e.g.
    ``candidate 5 ("BOG toward Europe")``.

    >>> item_label("candidate", 4, {"name": "BOG toward Europe"})
    'candidate 5 ("BOG toward Europe")'
    >>> item_label("elevation", 1, 20.0)
    'elevation 2'
    """
    name = item.get("name") if isinstance(item, dict) else None
    if isinstance(name, str) and len(name) > 60:  # a name too long to be one (its own problem says so) is cut here
        name = name[:57] + "..."
    return f"{key} {index + 1}" + (f' ("{name}")' if isinstance(name, str) and name else "")


def pydantic_problems(exc: ValidationError, prefix: str = "", data=None, antenna=None) -> list[tuple[str, str]]:
    """(field path, message) pairs from a pydantic error, one per problem (:func:`snrgain.problems.pydantic_problems`);
    ``data`` is the input validated (to name list items); ``antenna``: what an antenna table takes besides its
    family's keys (snrgain.unknown_keys.AntennaTable)."""
    from snrgain.problems import pydantic_problems as problems

    return problems(exc, prefix, data, antenna)


def validate_spec(spec: dict, prefix: str = "", *, si: bool = False, antenna=None) -> AntennaParams:
    """Validate an antenna spec against its family's parameter model.

    With ``si``, bare numbers in quantity fields are SI values (m, Hz, rad, ohm, s).  ``antenna``: what the table
    takes besides its family's keys, for the message of an unknown key (snrgain.unknown_keys.AntennaTable).
    Raises :class:`SpecError` with every problem found, paths prefixed by ``prefix``.
    """
    where = (prefix + ".") if prefix else ""
    if not isinstance(spec, dict):
        raise SpecError([(prefix, f"an antenna must be a table of keys, got {toml_repr(spec)}")])
    family = spec.get("family")
    if family is None:
        from snrgain.unknown_keys import stray_keys

        valid = ", ".join(repr(k) for k in FAMILIES)
        stray = [(f"{where}{k}", m) for k, m in stray_keys(spec, antenna)]  # "familly" beside the missing family
        raise SpecError([(f"{where}family", f"required key is missing; choose one of {valid}"), *stray])
    if not isinstance(family, str) or family not in FAMILIES:
        valid = ", ".join(repr(k) for k in FAMILIES)
        raise SpecError([(f"{where}family", f"unknown antenna family {toml_repr(family)}; choose one of {valid}")])
    try:
        return FAMILIES[family].params.model_validate(spec, context=SI_CONTEXT if si else None)
    except ValidationError as exc:
        raise SpecError(pydantic_problems(exc, prefix, spec, antenna)) from None


def build(spec: dict, prefix: str = "", *, freq_hz: float | None = None, si: bool = False, antenna=None) -> Antenna:
    """Validate and build an antenna, checking it at ``freq_hz`` if given (``si``, ``antenna``: see
    :func:`validate_spec`).

    Raises :class:`SpecError` naming every bad field, paths prefixed by ``prefix``.
    """
    params = validate_spec(spec, prefix, si=si, antenna=antenna)
    try:
        ant = FAMILIES[params.family].build(params)
        if freq_hz is not None:
            ant.check_frequency(freq_hz)
        return ant
    except SpecError as exc:  # a family's own checks (an array's elements) name fields within the antenna
        if not prefix:
            raise
        raise SpecError([(f"{prefix}.{p}" if p else prefix, m) for p, m in exc.problems]) from None
    except (ValueError, OSError) as exc:
        raise SpecError([(prefix, str(exc))]) from None


def from_si(family: str, **values) -> Antenna:
    """Build an antenna from SI keyword arguments: lengths in m, angles in rad, resistances in ohm, times in s.

    The same validation as a scenario's antenna table, without parsing unit strings (for notebooks and
    optimisers).  Strings with units are still accepted.

    >>> import numpy as np
    >>> bev = from_si("beverage", length=250.0, height=2.5, bearing=np.radians(45.0), ground="moist loam")
    >>> bev.length_m, round(float(np.degrees(bev.bearing_rad)), 6)
    (250.0, 45.0)
    >>> from_si("beverage", length=-1.0, height=2.5)
    Traceback (most recent call last):
    ...
    snrgain.errors.SpecError: length: must be between 1 m and 3000 m; got -1.0
    """
    plain = {k: v.item() if isinstance(v, np.generic) else v for k, v in values.items()}  # numpy scalars as floats
    return build({"family": family, **plain}, si=True)


def variant(antenna: Antenna, **si_values) -> Antenna:
    """The same antenna with some parameters changed, given as SI values (lengths in m, angles in rad, ...).

    Validated like any antenna; for sweeps over a design.

    >>> import numpy as np
    >>> bev = from_spec({"family": "beverage", "length": "800 ft", "height": "8 ft", "bearing": 45})
    >>> longer = variant(bev, length=300.0)
    >>> longer.length_m, round(float(np.degrees(longer.bearing_rad)), 6)
    (300.0, 45.0)
    """
    if antenna.family == "array":
        raise ValueError("variant: an array keeps its elements as written; build a new array instead")
    base = antenna.params.model_dump(by_alias=True, exclude_none=True)
    out = build({**base, **si_values}, si=True)
    if set(si_values) <= {"ground"} and hasattr(out, "keep_steering_from"):
        out.keep_steering_from(antenna)  # a phasing set once stays as set when only the soil is varied
    if getattr(antenna, "switched", None) is not None:
        out.switched = antenna.switched  # the same state of the same switched antenna (its resistor chosen, ...)
    return out


def from_spec(spec: dict) -> Antenna:
    """Build an antenna from a plain dict, e.g. ``{"family": "vertical", "height": "18 m"}``.

    Quantities carry units as in scenario files.  Raises :class:`SpecError`
    (a ValueError) naming every bad field.
    """
    return build(spec)
