"""Field types for validated input: quantities with units, ranges, grounds.

Each quantity field accepts what users write ("400 ft", "5 mS/m") and holds
the SI float.  Range checks run on the SI value but report in the user's
terms, so a message reads: "must be > 0 m; got '-3 ft'".

Validated with the context ``{"si": True}`` (see :data:`SI_CONTEXT`), a
quantity field also takes a bare number as its SI value (metres, hertz,
radians, ...), so code can build the same models from SI floats with the same
range checks and no string parsing.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

import numpy as np
from pydantic import (
    AfterValidator,
    BaseModel,
    BeforeValidator,
    ConfigDict,
    Field,
    InstanceOf,
    ValidationError,
    ValidationInfo,
    model_validator,
)

from snrgain.physics import ground as groundmod
from snrgain.physics import lines
from snrgain.problems import not_finite, toml_repr
from snrgain.units import (
    DIMENSIONS,
    length_said,
    parse_attenuation_db_per_100m,
    parse_db,
    parse_power_dbm,
    parse_quantity,
)

SI_CONTEXT = {"si": True}
"""Validation context in which bare numbers in quantity fields are SI values."""


def _si(info: ValidationInfo | None) -> bool:
    return bool(info is not None and isinstance(info.context, dict) and info.context.get("si"))


_SI_SYMBOL = {
    "length": "m",
    "frequency": "Hz",
    "conductivity": "S/m",
    "resistance": "ohm",
    "angle": "deg",
    "time": "s",
    "power": "W",
}


def _fmt(x: float, dimension: str) -> str:
    if dimension == "angle":
        return f"{np.degrees(x):g} deg"
    if dimension == "length":
        return length_said(x)
    if dimension == "frequency" and x >= 1e3:
        return f"{x / 1e6:g} MHz" if x >= 1e5 else f"{x / 1e3:g} kHz"
    return f"{x:g} {_SI_SYMBOL[dimension]}"


def quantity(dimension: str, *, gt=None, ge=None, lt=None, le=None):
    """An Annotated float type that parses ``dimension`` and checks a range (SI bounds)."""
    if dimension not in DIMENSIONS:
        raise KeyError(dimension)

    def check(value, info: ValidationInfo):
        if _si(info) and isinstance(value, (int, float)) and not isinstance(value, bool):
            x = float(value)
            if bad := not_finite(x):
                raise ValueError(f"{bad}; give a finite {dimension}; got {toml_repr(value)}")
        else:
            x = parse_quantity(value, dimension)
        ok = (gt is None or x > gt) and (ge is None or x >= ge) and (lt is None or x < lt) and (le is None or x <= le)
        if not ok:  # the message's bounds written only for a value out of range
            if ge is not None and le is not None and gt is None and lt is None:
                raise ValueError(
                    f"must be between {_fmt(ge, dimension)} and {_fmt(le, dimension)}; got {toml_repr(value)}"
                )
            bounds = [
                f"{sign} {_fmt(bound, dimension)}"
                for sign, bound in ((">", gt), (">=", ge), ("<", lt), ("<=", le))
                if bound is not None
            ]
            raise ValueError(f"must be {' and '.join(bounds)}; got {toml_repr(value)}")
        return x

    return Annotated[float, BeforeValidator(check)]


def decibels(lo: float, hi: float):
    """A ratio in dB within [lo, hi]: the message reads "must lie between 0 and 10 dB; got 12 dB"."""

    def check(value):
        x = parse_db(value)
        if not lo <= x <= hi:
            raise ValueError(f"must lie between {lo:g} and {hi:g} dB; got {x:g} dB")
        return x

    return Annotated[float, BeforeValidator(check)]


Decibels = decibels(-200.0, 200.0)
"""A ratio in dB ("12 dB" or a bare number), within +-200 dB (a field with a narrower physical range says so)."""


def _power(value):
    return parse_power_dbm(value)


PowerDbm = Annotated[float, BeforeValidator(_power)]
"""A received power: "-95 dBm", "S7", "S9+10"."""


Attenuation = Annotated[float, BeforeValidator(parse_attenuation_db_per_100m)]
"""Attenuation of a line [dB/100 m]: '2 dB/100m', '0.6 dB/100ft', '0.02 dB/m' or a bare number of dB per 100 m."""


def _degrees_number(lo, hi, what):
    def check(value):
        if isinstance(value, bool) or not isinstance(value, (int, float, str)):
            raise ValueError(f"expected {what} in degrees, got {toml_repr(value)}")
        if bad := not_finite(value):
            raise ValueError(f"{bad}; give {what} in degrees; got {toml_repr(value)}")
        x = np.degrees(parse_quantity(value, "angle"))
        if not (lo <= x <= hi):
            raise ValueError(f"must be between {lo:g} and {hi:g} degrees; got {toml_repr(value)}")
        return float(x)

    return Annotated[float, BeforeValidator(check)]


Latitude = _degrees_number(-90.0, 90.0, "a latitude")
"""Latitude, north positive [deg] (degrees at this edge: geographic convention)."""
Longitude = _degrees_number(-180.0, 360.0, "a longitude")
"""Longitude, east positive [deg]."""
Bearing = quantity("angle", ge=-2 * np.pi, le=2 * np.pi)
"""A compass bearing, degrees clockwise from true north (bare numbers are degrees) [rad inside]."""
Elevation = quantity("angle", ge=0.0, le=np.pi / 2)
"""An elevation above the horizon, 0..90 degrees [rad inside]."""


class StrictModel(BaseModel):
    """Base for every input model: unknown keys are errors."""

    model_config = ConfigDict(extra="forbid", frozen=True, allow_inf_nan=False, strict=True, defer_build=True)


class GroundRod(StrictModel):
    """One driven ground rod at a wire's end; its resistance follows from the site's soil (Dwight's formula,
    snrgain.physics.ground.rod_resistance_ohm)."""

    rod_length: quantity("length", ge=0.3, le=10.0) = groundmod.ROD_LENGTH_M
    rod_diameter: quantity("length", ge=0.005, le=0.05) = groundmod.ROD_DIAMETER_M


_CONNECTION_RESISTANCE = quantity("resistance", ge=0.0, le=1000.0).__metadata__[0].func
_CONNECTION_CHOICES = (
    "a resistance such as '20 ohm', 'rod' (one 1.2 m, 16 mm rod in the site's soil) or "
    "{ rod_length = '2.4 m', rod_diameter = '16 mm' }"
)


def _connection(value, info: ValidationInfo):
    if isinstance(value, GroundRod) or (isinstance(value, str) and value == "rod"):
        return value
    if isinstance(value, dict):
        try:
            return GroundRod.model_validate(value, context=info.context)
        except ValidationError as err:
            first = err.errors()[0]
            where = ".".join(str(p) for p in first["loc"])
            raise ValueError(f"{where}: {first['msg'].removeprefix('Value error, ')}") from None
    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        raise ValueError(f"expected {_CONNECTION_CHOICES}; got {toml_repr(value)}")
    try:
        return _CONNECTION_RESISTANCE(value, info)
    except ValueError as err:
        raise ValueError(f"expected {_CONNECTION_CHOICES}; {err}") from None


# A wire end's connection to earth: a resistance, "rod" or a rod of given size
# (snrgain.physics.ground.rod_resistance_ohm).
GroundConnection = Annotated[float | Literal["rod"] | GroundRod, BeforeValidator(_connection)]


class WireSize(StrictModel):
    """The wire's size: AWG gauge or diameter (default AWG 14).  Mixed into the families made of wire."""

    gauge: int | None = Field(default=None, ge=-3, le=40, description="AWG gauge")
    diameter: quantity("length", ge=2e-5, le=0.02) | None = None

    @model_validator(mode="after")
    def _one_size(self):
        if self.gauge is not None and self.diameter is not None:
            raise ValueError("give gauge (AWG) or diameter, not both")
        return self

    @property
    def radius_m(self) -> float:
        """Wire radius [m]: half the diameter, or of the gauge's diameter (ASTM B258)."""
        return wire_radius_m(gauge=self.gauge, diameter_m=self.diameter)


def wire_radius_m(*, gauge: int | None = None, diameter_m: float | None = None) -> float:
    """Radius [m] of a wire given by its diameter [m] or AWG gauge; AWG 14 when neither is given."""
    if gauge is not None and diameter_m is not None:
        raise ValueError("give gauge (AWG) or diameter, not both")
    if diameter_m is not None:
        return diameter_m / 2
    return lines.awg_diameter_m(DEFAULT_GAUGE if gauge is None else gauge) / 2


DEFAULT_GAUGE = 14
"""AWG gauge of a wire given neither gauge nor diameter (14 AWG, 1.63 mm: common for receiving wires)."""


Conductivity = quantity("conductivity", ge=0.0, le=10.0)
Permittivity = Annotated[float, Field(ge=1.0, le=100.0)]


def _pair(value):
    """A TOML list of two read as a (low, high) pair (strict models take tuples only as tuples)."""
    return tuple(value) if isinstance(value, list) else value


class GroundConstants(StrictModel):
    """A ground given by its constants, each a value or a range [low, high] of its 10 % and 90 % points."""

    conductivity: Annotated[Conductivity | tuple[Conductivity, Conductivity], BeforeValidator(_pair)] = Field(
        description="conductivity, e.g. '5 mS/m', or a range ['2 mS/m', '12 mS/m']"
    )
    permittivity: Annotated[Permittivity | tuple[Permittivity, Permittivity], BeforeValidator(_pair)] = Field(
        description="relative permittivity [-], or a range [8, 20]"
    )

    @model_validator(mode="after")
    def _ranges(self):
        for name in ("conductivity", "permittivity"):
            v = getattr(self, name)
            if isinstance(v, tuple) and v[0] > v[1]:
                raise ValueError(f"{name}: a range is [low, high]; got low above high ({v[0]:g} > {v[1]:g})")
        if isinstance(self.conductivity, tuple) and self.conductivity[0] <= 0:
            raise ValueError("conductivity: a range needs a low end above 0 S/m")
        return self

    @property
    def nominal(self) -> groundmod.Ground:
        """The ground at the middle of the ranges: the geometric mean of each (both taken as log-normal)."""
        s, e = self.conductivity, self.permittivity
        sigma = float(np.sqrt(s[0] * s[1])) if isinstance(s, tuple) else s
        eps = float(np.sqrt(e[0] * e[1])) if isinstance(e, tuple) else e
        return groundmod.Ground(sigma, eps)

    @property
    def spread(self) -> groundmod.GroundSpread | None:
        """The ranges as a spread (a single value is a range of zero width), or None if neither is a range."""
        s, e = self.conductivity, self.permittivity
        if not isinstance(s, tuple) and not isinstance(e, tuple):
            return None
        s = s if isinstance(s, tuple) else (s, s)
        e = e if isinstance(e, tuple) else (e, e)
        return groundmod.GroundSpread(s, e)


GroundInput = str | GroundConstants | InstanceOf[groundmod.Ground]


def make_ground(spec: Any) -> groundmod.Ground | None:
    """A Ground from a name, a GroundConstants (the middle of its ranges), or a dict; None for 'perfect'."""
    if spec is None:
        return groundmod.GROUND_TYPES["moist loam"]
    if isinstance(spec, groundmod.Ground):
        return spec
    if isinstance(spec, str):
        if spec == groundmod.PERFECT:
            return None
        return groundmod.ground_by_name(spec)
    if isinstance(spec, dict):
        spec = GroundConstants.model_validate(spec)
    return spec.nominal


def ground_spread(spec: Any) -> groundmod.GroundSpread | None:
    """How uncertain a ground is: a named class's documented spread, the ranges given, or None."""
    if isinstance(spec, str):
        return None if spec == groundmod.PERFECT else groundmod.class_spread(spec)
    if isinstance(spec, dict):
        spec = GroundConstants.model_validate(spec)
    return spec.spread if isinstance(spec, GroundConstants) else None


def ground_name_check(value):
    if isinstance(value, str) and value != groundmod.PERFECT and value not in groundmod.GROUND_TYPES:
        groundmod.ground_by_name(value)  # raises with the list of names
    return value


GroundField = Annotated[GroundInput, BeforeValidator(ground_name_check)]


def lengths(value, n: int, *, what: str, example: str, limit_m: float) -> tuple[float, ...]:
    """n lengths, each written with a unit ("12 m", "40 ft") or as a bare number of metres, within limit_m."""
    if not isinstance(value, (list, tuple)) or len(value) != n:
        raise ValueError(f"expected {what}, e.g. {example} (bare numbers are metres); got {toml_repr(value)}")
    out = []
    for v in value:
        if isinstance(v, bool):
            raise ValueError(f"expected a length, got {toml_repr(v)}")
        if bad := not_finite(v):
            raise ValueError(f"{bad} in {what}; give {example} (bare numbers are metres); got {toml_repr(value)}")
        out.append(float(v) if isinstance(v, (int, float)) else parse_quantity(v, "length"))
    if not all(np.isfinite(out)) or max(abs(x) for x in out) > limit_m:
        raise ValueError(f"{what} must lie within {limit_m / 1e3:g} km of the origin; got {toml_repr(value)}")
    return tuple(out)


def plan_point(value):
    """A point on the site plan as a scenario writes it, [east, north] (bare numbers are metres), in metres."""
    return lengths(value, 2, what="a point [east, north]", example='["12 m", "-30 ft"] or [12, -9.1]', limit_m=10_000)


_point = plan_point


PlanPoint = Annotated[tuple[float, float], BeforeValidator(_point)]
"""A point on the site plan, metres east and north of the plan's origin."""

MAX_NAME_CHARS = 80
"""The longest name of a site, antenna, target, source, area or structure (a table's row, a figure's label)."""


def check_name(value):
    """A name as written: text of 1 to MAX_NAME_CHARS characters, not only spaces, without control characters (they
    reach the terminal and the report as they are)."""
    if not isinstance(value, str):
        raise ValueError(f"a name is text in quotes; got {toml_repr(value)}")
    if not value.strip():
        raise ValueError("a name needs a letter or a digit, not only spaces")
    if len(value) > MAX_NAME_CHARS:
        raise ValueError(f"a name of at most {MAX_NAME_CHARS} characters; this one has {len(value):,}")
    bad = next((c for c in value if ord(c) < 32 or 127 <= ord(c) < 160), None)
    if bad is not None:
        raise ValueError(f"a name without control characters; this one holds U+{ord(bad):04X}")
    import unicodedata

    # names that print alike are one name to the reader: "Bev" and "Bev " or "Bev<zero-width space>" were two rows
    # of one look in the ranking, "Café" composed and decomposed two more
    if value != value.strip():
        raise ValueError(f"a name without spaces at its start or end; got {toml_repr(value)}")
    # the joiners (U+200C, U+200D) belong to some scripts' words and to emoji sequences: between two visible
    # characters they are part of the name; every other format character (zero-width space, direction marks and
    # overrides) is invisible text
    hidden = next(
        (
            c
            for i, c in enumerate(value)
            if unicodedata.category(c) in ("Cf", "Zl", "Zp", "Co")
            and not (c in "\u200c\u200d" and 0 < i < len(value) - 1 and not value[i + 1].isspace())
        ),
        None,
    )
    if hidden is not None:
        raise ValueError(
            f"a name without invisible characters (zero-width spaces, direction marks); this one holds "
            f"U+{ord(hidden):04X}"
        )
    composed = unicodedata.normalize("NFC", value)
    if composed != value:
        raise ValueError(
            f"a name in Unicode's composed form (NFC), which prints the same: write it as {composed!r} (an accent "
            "typed as a separate mark, or a compatibility character, makes another name of one look)"
        )
    return value


def nfc(text):
    """A name as it is compared with another: in Unicode's composed form (NFC), so that two names that print alike
    match (an accent typed as a separate mark, as some keyboards and shells give it); anything but text as it is.

    >>> nfc("we\u0308st") == "w\u00ebst"
    True
    """
    import unicodedata

    return unicodedata.normalize("NFC", text) if isinstance(text, str) else text


def sky_component_name(name: str) -> bool:
    """Whether ``name`` is one the sky's own noise components are labelled by (snrgain.sky.noise: "galactic",
    "man-made (...)", "atmospheric (...)"): a local source may not take it (levels are kept by name)."""
    return name == "galactic" or name.startswith(("atmospheric (", "man-made ("))


Name = Annotated[str, BeforeValidator(check_name)]
"""A name of a site, antenna, target, local source, keep-out area or structure (:func:`check_name`)."""
NameRef = Annotated[str, AfterValidator(nfc)]
"""A name that names another table's (``read_on``, ``[site] transmitting``, a combination's ``antennas``): kept in
Unicode's composed form (:func:`nfc`), as the names it is matched against are."""
