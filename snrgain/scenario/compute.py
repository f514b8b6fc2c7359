"""[compute], [uncertainty] and [plan]: the sky's resolution, which spreads to count and how many antennas to build;
the resolved Uncertainty."""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from snrgain.fields import StrictModel, decibels

from .derive import resolved_from


class Compute(StrictModel):
    nside: Literal[8, 16, 32, 64, 128] = 32


class UncertaintySection(StrictModel):
    ground: bool = True
    """Spread the ground over its class's documented spread or the ranges given in [site] ground."""
    noise_deciles: bool = True
    """Spread man-made, atmospheric and galactic noise over their P.372 decile deviations."""
    local_sources: bool = True
    """Spread local sources over the uncertainty given with each."""
    hours: bool = True
    """Count hour-to-hour variation (else the hours are averaged first)."""
    samples: int = Field(default=400, ge=20, le=20000)
    """Draws of the noise levels per ground (fixed seed: the same file gives the same numbers)."""
    seed: int = Field(default=1, ge=0, le=2**31 - 1)
    beat_by: decibels(0.0, 30.0) = 3.0
    """The margin over the reference whose probability is reported [dB]."""


class PlanSection(StrictModel):
    max_antennas: int | None = Field(default=None, ge=1, le=64)
    """The most receiving antennas to build beside the reference (default: as many as help)."""


@resolved_from(UncertaintySection, rename={"beat_by": "beat_by_db"})
class Uncertainty:
    """Which spreads to count (see README, "How sure"), the draws and the margin whose probability is reported
    (fields: :class:`UncertaintySection`'s; ``beat_by_db`` is ``beat_by`` [dB])."""
