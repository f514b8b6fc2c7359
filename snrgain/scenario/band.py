"""[band]: the frequency and the receiver's bandwidth; the resolved Band [Hz]."""

from __future__ import annotations

from pydantic import Field

from snrgain.constants import FREQ_RANGE_HZ
from snrgain.fields import StrictModel, quantity

from .derive import resolved_from
from .times import Hours, Months


class BandSection(StrictModel):
    frequency: quantity("frequency", ge=FREQ_RANGE_HZ[0], le=FREQ_RANGE_HZ[1])
    bandwidth: quantity("frequency", ge=10.0, le=100e3) = 500.0
    name: str | None = Field(default=None, min_length=1, max_length=40)
    """The band's name in a scenario of several bands (``[[band]]``); default its frequency, e.g. "1.83 MHz"."""
    months: Months | None = None
    """The months listened on this band (default: [time] months)."""
    utc_hours: Hours | None = None
    """The UTC hours listened on this band (default: [time] utc_hours)."""
    reference: dict | None = None
    """A band's own reference antenna in a file of several bands (a table written as [reference] is): taken out by
    snrgain.scenario.bands before the band is loaded, where it replaces [reference]; refused under a lone [band]."""


@resolved_from(BandSection, rename={"frequency": "freq_hz", "bandwidth": "bandwidth_hz"})
class Band:
    """The frequency and the receiver's bandwidth [Hz] (fields: :class:`BandSection`'s, named with their unit)."""
