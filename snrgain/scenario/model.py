"""The whole file's schema (ScenarioModel: one section per key, each from its own module), the checks across
sections, and the resolved Scenario handed to the pipeline."""

from __future__ import annotations

from dataclasses import field
from typing import Any

import numpy as np
from pydantic import Field

from snrgain.antennas import Antenna
from snrgain.fields import StrictModel, sky_component_name
from snrgain.physics import chain as chainmod
from snrgain.physics import receiver as rx
from snrgain.physics import strong as strongmod
from snrgain.physics import targets as targetmod
from snrgain.records import record
from snrgain.sky import noise as noisemod

from .band import Band, BandSection
from .compute import Compute, PlanSection, Uncertainty, UncertaintySection
from .files import MAX_ITEMS
from .noise import Noise
from .receiver import ChainSection, Receiver
from .site import Site, SiteSection
from .strong import StrongSignal
from .targets import Target
from .times import Time, Times


class ScenarioModel(StrictModel):
    """The whole file, one field per section (README.md's section table names every key of each:
    tests/test_schema_docs.py); the reference and candidates stay raw tables, validated by their families."""

    site: SiteSection
    band: BandSection
    time: Time = Time()
    noise: Noise = Noise()
    target: list[Target] = Field(min_length=1, max_length=MAX_ITEMS)
    reference: dict[str, Any] | None = None
    candidate: list[dict[str, Any]] = Field(min_length=1, max_length=MAX_ITEMS)
    receiver: Receiver = Receiver()
    chain: ChainSection = ChainSection()
    compute: Compute = Compute()
    uncertainty: UncertaintySection = UncertaintySection()
    plan: PlanSection = PlanSection()
    strong_signal: list[StrongSignal] = Field(default_factory=list, max_length=MAX_ITEMS)

    @property
    def listening(self) -> Time:
        """[time] with the band's own months and hours where it gives them (a [[band]] table's, or [band]'s)."""
        own = {k: getattr(self.band, k) for k in ("months", "utc_hours") if getattr(self.band, k) is not None}
        return self.time.model_copy(update=own) if own else self.time


def model_problems(model: ScenarioModel) -> list[tuple[str, str]]:
    """The checks across sections of a valid model: names of their own, some sky noise."""
    problems = unique_names(model)
    n = model.noise
    quiet = n.man_made.environment == "none" and n.atmospheric.model == "none"
    if quiet and not n.galactic.enabled and not n.local:
        problems.append(
            (
                "noise",
                "every noise component is off (man-made environment 'none', atmospheric model 'none', galactic "
                "disabled, no local sources): with no sky noise the SNR is the receiver's alone and the margins "
                "are infinite; turn at least one on",
            )
        )
    return problems


def unique_names(model: ScenarioModel) -> list[tuple[str, str]]:
    """Targets, local sources and keep-out areas each need names of their own (results are labelled by them)."""
    out = []
    groups = [
        ("target", [t.name for t in model.target]),
        ("noise.local", [s.name for s in model.noise.local]),
        ("site.keep_out", [k.name for k in model.site.keep_out]),
        ("strong_signal", [s.name for s in model.strong_signal]),
    ]
    for key, names in groups:
        seen: dict[str, int] = {}
        for i, name in enumerate(names):
            if not name.strip():
                out.append((f"{key} {i + 1}.name", "a name must not be empty"))
            elif name in seen:
                out.append(
                    (
                        f'{key} {i + 1} ("{name}").name',
                        f"name {name!r} is already used by {key} {seen[name] + 1}; give each its own name",
                    )
                )
            else:
                seen[name] = i
    for i, src in enumerate(model.noise.local):  # the sky's own components are labelled by these names
        if sky_component_name(src.name):
            out.append(
                (
                    f'noise.local {i + 1} ("{src.name}").name',
                    f"{src.name!r} names one of the sky's own noise components; give the source a name of its own",
                )
            )
    return out


@record
class Scenario:
    """A validated scenario resolved into SI objects: antennas built, chains cascaded, targets placed.

    ``chains[i]`` is the receiving chain of ``antennas[i]`` (its own, or the scenario's ``chain``).
    """

    source: str
    site: Site
    band: Band
    times: Times
    noise: noisemod.NoiseSettings
    targets: tuple[targetmod.TargetDirections, ...]
    target_weights: np.ndarray
    """Targets' weights, adding to 1 [-]."""
    target_times: tuple[Times, ...]
    """When each target is listened for; ``times`` is their union, the grid the sky is built on."""
    reference: Antenna
    candidates: tuple[Antenna, ...]
    chains: tuple[chainmod.Chain, ...]
    chain: chainmod.Chain
    receiver: rx.Receiver
    nside: int
    uncertainty: Uncertainty = Uncertainty()
    max_antennas: int | None = None
    """The most receiving antennas the station plan may add to the reference (None: as many as help)."""
    placeable: dict[str, Any] = field(default_factory=dict)
    """Candidates that ``snrgain layout`` may move: name -> PlaceSection (the ranges it may search)."""
    strong_signals: tuple[strongmod.Station, ...] = ()
    """Nearby transmitters ([[strong_signal]]), as distance and bearing from the site."""
    stage_limits: tuple[tuple[strongmod.StageLimits, ...], ...] = ()
    """``stage_limits[i]``: the large-signal limits of each active stage of ``chains[i]`` in its order (the
    preamplifier where there is one, then the receiver)."""
    transmitting: str | None = None
    """The name of the site's transmitting vertical: ``[site] transmitting``, else the file's reference when it is a
    vertical.  It stays the vertical next door (snrgain.model.scatter) when another antenna is made the reference
    (``--reference``)."""
    feed_lines: dict[str, Any] = field(default_factory=dict)
    """Antenna name -> its feed line (snrgain.physics.feedline.FeedLine; snrgain.model.feedline)."""

    @property
    def antennas(self) -> list[Antenna]:
        """The reference, then the candidates."""
        return [self.reference, *self.candidates]

    @property
    def freq_hz(self) -> float:
        return self.band.freq_hz

    @property
    def bandwidth_hz(self) -> float:
        return self.band.bandwidth_hz

    @property
    def place(self) -> noisemod.Place:
        """The site and band as the sky builder wants them."""
        return noisemod.Place(
            self.site.latitude_deg, self.site.longitude_deg, self.band.freq_hz, self.band.bandwidth_hz
        )
