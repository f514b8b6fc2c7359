"""A candidate's ``place`` table: what ``snrgain layout`` may change of it (its bearing and length ranges; it moves the
candidate anywhere on the lot)."""

from __future__ import annotations

from typing import ClassVar

import numpy as np
from pydantic import Field, model_validator

from snrgain.constants import placeable_families
from snrgain.fields import Bearing, StrictModel, quantity
from snrgain.units import length_said


class PlaceSection(StrictModel):
    """What ``snrgain layout`` may change of a candidate: its position (within the lot), bearing and length (ranges)."""

    unknown_key_note: ClassVar[str] = (
        "place takes only bearing and length, the [from, to] ranges layout may turn and size the candidate within "
        "(its position is layout's to choose: anywhere on [site] lot outside keep_out)"
    )
    """Said of an unknown key in place of other sections' keys (snrgain.unknown_keys)."""

    bearing: list[Bearing] | None = Field(default=None, min_length=2, max_length=2)
    """[from, to] compass bearings, clockwise (e.g. ["20 deg", "70 deg"])."""
    length: list[quantity("length", ge=1.0, le=3000.0)] | None = Field(default=None, min_length=2, max_length=2)
    """[shortest, longest] wire length [m]."""

    @model_validator(mode="after")
    def _ranges(self):
        if self.length is not None and self.length[0] > self.length[1]:
            raise ValueError(f"length: the range runs backwards: {' > '.join(map(length_said, self.length))}")
        if self.bearing is not None:
            a, b = (float(np.degrees(x)) % 360.0 for x in self.bearing)
            span = (b - a) % 360.0
            if span > 180.0:  # clockwise from the first: ["60 deg", "30 deg"] ran 330 deg through north
                raise ValueError(
                    f"bearing: from {a:g} deg clockwise to {b:g} deg spans {span:g} deg, past north and round; "
                    f"write [{b:g}, {a:g}] for the {360.0 - span:g} deg between them (layout turns an antenna within "
                    "half a turn: its bearing is its targets')"
                )
            if span == 0.0 and self.bearing[0] != self.bearing[1]:  # ["0 deg", "360 deg"]: one bearing, not a turn
                raise ValueError(
                    f"bearing: {np.degrees(self.bearing[0]):g} and {np.degrees(self.bearing[1]):g} deg are one "
                    "bearing; give a range of at most half a turn clockwise, or leave bearing out to keep the one "
                    "written"
                )
        return self

    def problem_for(self, antenna) -> str | None:
        """Why this antenna cannot be placed as asked, or None."""
        if not antenna.placeable:  # one feed point, a bearing, and for wires a length (declared by the family)
            return f"snrgain layout places {', '.join(placeable_families())}; not {antenna.family!r}"
        if self.length is not None and not hasattr(antenna, "length_m"):
            return f"a {antenna.family} has no length to vary"
        if self.bearing is not None and not hasattr(antenna.params, "bearing"):
            return f"a {antenna.family} has no bearing to vary"
        return None
