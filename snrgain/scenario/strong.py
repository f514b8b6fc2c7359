"""[[strong_signal]]: nearby transmitters whose signals may overload the receiving chain, and the large-signal
limits of each active stage ([chain.preamp] and [receiver] ``p1db``, ``iip3``, ``iip2``)."""

from __future__ import annotations

import re
from typing import Annotated

import numpy as np
from pydantic import BeforeValidator, Field, model_validator

from snrgain.constants import FREQ_RANGE_HZ
from snrgain.fields import Bearing, Latitude, Longitude, StrictModel, quantity
from snrgain.physics import strong as strongmod
from snrgain.problems import toml_repr
from snrgain.units import length_said, normalise_text

LIMIT_RANGE_DBM = (-40.0, 80.0)
"""Large-signal limits accepted [dBm, input-referred]."""

_DBM = re.compile(r"^\s*([-+]?[0-9]+(?:\.[0-9]*)?|[-+]?\.[0-9]+)\s*(dBm)?\s*$", re.IGNORECASE)


def _limit_dbm(value):
    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        raise ValueError(f"expected a level in dBm such as '+20 dBm', got {toml_repr(value)}")
    m = _DBM.match(normalise_text(value, "a level")) if isinstance(value, str) else None
    if isinstance(value, str) and not m:
        raise ValueError(f"cannot read {toml_repr(value)} as a level; write it like '+20 dBm'")
    x = float(m.group(1)) if m else float(value)
    lo, hi = LIMIT_RANGE_DBM
    if not (np.isfinite(x) and lo <= x <= hi):
        raise ValueError(f"must be between {lo:+g} and {hi:+g} dBm (input-referred); got {toml_repr(value)}")
    return x


LimitDbm = Annotated[float, BeforeValidator(_limit_dbm)]
"""A large-signal limit of an amplifier, input-referred: '+20 dBm' or a bare number of dBm."""


class StrongSignal(StrictModel):
    """One nearby transmitter: where it is (distance and bearing from the site, or its place) and what it sends."""

    name: str = Field(min_length=1, max_length=80)
    frequency: quantity("frequency", ge=FREQ_RANGE_HZ[0], le=FREQ_RANGE_HZ[1])
    power: quantity("power", gt=0.0, le=5e6)
    distance: quantity("length", ge=10.0, le=300e3) | None = None
    bearing: Bearing | None = None
    latitude: Latitude | None = None
    longitude: Longitude | None = None

    @model_validator(mode="after")
    def _where(self):
        by_range = self.distance is not None or self.bearing is not None
        by_place = self.latitude is not None or self.longitude is not None
        if by_range and by_place:
            raise ValueError("give distance and bearing, or latitude and longitude, not both")
        if by_place and (self.latitude is None or self.longitude is None):
            raise ValueError("a place needs both latitude and longitude")
        if not by_place and (self.distance is None or self.bearing is None):
            raise ValueError("give the station's distance and bearing from the site (or its latitude and longitude)")
        return self


def resolve_stations(sections, site_lat_deg: float, site_lon_deg: float) -> tuple[strongmod.Station, ...]:
    """The stations of validated [[strong_signal]] tables, a place turned into distance and bearing along the
    WGS-84 geodesic (the same as targets' places)."""
    out = []
    for s in sections:
        if s.latitude is not None:
            from snrgain.physics.targets import geodesic

            bearing, distance = geodesic(site_lat_deg, site_lon_deg, s.latitude, s.longitude)
            if distance < 10.0:
                raise ValueError(f"its place is {length_said(distance)} from the site; {length_said(10.0)} at least")
        else:
            distance, bearing = s.distance, s.bearing
        out.append(strongmod.Station(s.name, float(s.frequency), float(s.power), float(distance), float(bearing)))
    return tuple(out)


def stage_limits(chain_section, receiver_section) -> tuple[strongmod.StageLimits, ...]:
    """The limits of each active stage of the chain in its order: the preamplifier's if the chain has one, then the
    receiver's; the values not given are snrgain's assumptions (named in ``assumed``)."""
    amp = chain_section.preamp if chain_section is not None else None
    stages = [] if amp is None else [(amp, strongmod.PREAMP_DEFAULTS, "preamplifier")]
    stages.append((receiver_section, strongmod.RECEIVER_DEFAULTS, "receiver"))
    out = []
    for src, defaults, name in stages:
        values, assumed = {}, []
        for key, field_name in (("p1db_dbm", "p1db"), ("iip3_dbm", "iip3"), ("iip2_dbm", "iip2")):
            given = getattr(src, field_name, None)
            if given is None:
                assumed.append(field_name)
            values[key] = float(defaults[key] if given is None else given)
        out.append(strongmod.StageLimits(name, assumed=tuple(assumed), **values))
    return tuple(out)
