"""[band]: the frequency and the receiver's bandwidth; the resolved Band [Hz]."""

from __future__ import annotations

from snrgain.constants import FREQ_RANGE_HZ
from snrgain.fields import StrictModel, quantity

from .derive import resolved_from


class BandSection(StrictModel):
    frequency: quantity("frequency", ge=FREQ_RANGE_HZ[0], le=FREQ_RANGE_HZ[1])
    bandwidth: quantity("frequency", ge=10.0, le=100e3) = 500.0


@resolved_from(BandSection, rename={"frequency": "freq_hz", "bandwidth": "bandwidth_hz"})
class Band:
    """The frequency and the receiver's bandwidth [Hz] (fields: :class:`BandSection`'s, named with their unit)."""
