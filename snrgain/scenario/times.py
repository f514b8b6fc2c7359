"""[time] and a target's own months and hours: the checks, the section, and the resolved Times."""

from __future__ import annotations

from typing import Annotated

import numpy as np
from pydantic import AfterValidator, Field

from snrgain.fields import StrictModel

from .derive import resolved_from


def check_months(v):
    if v is None:
        return v
    bad = [m for m in v if not 1 <= m <= 12]
    if bad:
        raise ValueError(f"months must be 1..12; got {bad}")
    if len(set(v)) != len(v):
        raise ValueError(f"months are listed twice: {v}")
    return v


def check_hours(v):
    if v is None:
        return v
    bad = [h for h in v if not 0 <= h < 24]
    if bad:
        raise ValueError(f"UTC hours must be in [0, 24); got {[int(h) if float(h).is_integer() else h for h in bad]}")
    if len(set(v)) != len(v):
        raise ValueError(f"hours are listed twice: {v}")
    return v


Months = Annotated[list[int], Field(min_length=1, max_length=12), AfterValidator(check_months)]
Hours = Annotated[list[float], Field(min_length=1, max_length=96), AfterValidator(check_hours)]


class Time(StrictModel):
    months: Months = Field(default_factory=lambda: [1])
    utc_hours: Hours = Field(default_factory=lambda: [0.0])


@resolved_from(Time)
class Times:
    """The months (1-12) and UTC hours [h] listened at (fields: :class:`Time`'s, as tuples)."""

    def mask(self, grid: Times) -> np.ndarray:
        """Which cells of a (months, hours) grid these times cover, shape (months, hours)."""
        return np.isin(grid.months, self.months)[:, None] & np.isin(grid.utc_hours, self.utc_hours)[None, :]


def resolve_times(time: Time, targets) -> tuple[Times, tuple[Times, ...]]:
    """(the union of the targets' times: the grid the sky is built on, each target's times); a target without
    months or hours of its own takes [time]'s."""
    default = Times(tuple(time.months), tuple(time.utc_hours))
    target_times = tuple(
        Times(tuple(t.months or default.months), tuple(t.utc_hours or default.utc_hours)) for t in targets
    )
    union = Times(
        tuple(sorted({m for tt in target_times for m in tt.months})),
        tuple(sorted({h for tt in target_times for h in tt.utc_hours})),
    )
    return union, target_times
