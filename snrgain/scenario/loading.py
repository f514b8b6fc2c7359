"""load: a scenario file validated and resolved into a :class:`Scenario`, in named steps.

Every step adds the problems it finds and the next ones run anyway where they can (antennas are validated by
their own families even when other sections failed), so one :class:`ScenarioError` lists them all.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from pydantic import ValidationError

from snrgain.antennas.base import pydantic_problems
from snrgain.errors import ScenarioError
from snrgain.physics import chain as chainmod
from snrgain.physics import receiver as rx
from snrgain.physics import targets as targetmod

from .antennas import Built, build_antennas
from .band import Band
from .compute import Uncertainty
from .files import read_source
from .local import local_levels_readable, local_sources_clear
from .model import Scenario, ScenarioModel, model_problems
from .noise import find_p372_dir, noise_settings
from .receiver import chain_from_section, resolve_receiver
from .site import Site
from .strong import resolve_stations, stage_limits
from .targets import resolve_targets
from .times import resolve_times


def load(
    source: str | Path | dict,
    *,
    nside: int | None = None,
    p372_dir: str | Path | None = None,
    base_dir: Path | None = None,
    label: str | None = None,
) -> Scenario:
    """Load and validate a scenario from a path, TOML text or a dict.

    ``p372_dir`` is the folder of the ITU-R P.372 coefficient files given on
    the command line; the scenario key ``noise.atmospheric.data_dir`` and the
    environment variable SNRGAIN_P372_DIR take precedence over it, in that
    order.  A dict's relative paths start from ``base_dir``; ``label`` names it in messages.  Raises
    :class:`ScenarioError` listing every problem.
    """
    if isinstance(source, dict):
        data, label = source, label or "<dict>"
    else:
        data, label, base_dir = read_source(source)
    model, problems = validate(data)
    built = build_antennas(data, model.band.frequency if model else None, base_dir)
    problems += built.problems
    resolved = resolve_sections(model, base_dir, p372_dir, problems)
    if model is not None and built.antennas and not problems:
        problems += check_local_sources(model, built)
    if problems:
        raise ScenarioError(label, problems)
    return assemble(label, model, built, resolved, nside)


def validate(data) -> tuple[ScenarioModel | None, list[tuple[str, str]]]:
    """The validated sections (None if any failed) and the problems found, within sections and across them."""
    try:
        model = ScenarioModel.model_validate(data)
    except ValidationError as exc:
        return None, pydantic_problems(exc, data=data)
    return model, model_problems(model)


@dataclass
class Resolved:
    """The sections resolved before the Scenario is assembled (None or empty where they failed)."""

    targets: list[targetmod.TargetDirections] = field(default_factory=list)
    data_dir: Path | None = None
    """The folder of the P.372 coefficient files (None: not needed)."""
    receiver: rx.Receiver | None = None
    chain: chainmod.Chain | None = None
    """The scenario's [chain], for antennas without one of their own."""
    stations: tuple = ()
    """[[strong_signal]] as snrgain.physics.strong.Station."""


def check_local_sources(model: ScenarioModel, built: Built) -> list[tuple[str, str]]:
    """Placed local sources stand clear of every antenna; then (if they do) levels read on the reference can be read
    there."""
    problems = local_sources_clear(model.noise.local, built.antennas, built.wheres, model.site)
    if not problems:
        problems = local_levels_readable(model.noise.local, built.antennas[0], model.band.frequency, model.site)
    return problems


def resolve_sections(model: ScenarioModel | None, base_dir: Path | None, option, problems: list) -> Resolved:
    """Targets' directions, the P.372 data folder, the receiver and the scenario's chain, as far as each resolves;
    their problems are added to ``problems`` (in that order)."""
    out = Resolved()
    if model is None:
        return out
    out.targets, target_problems = resolve_targets(model)
    problems += target_problems
    if model.noise.atmospheric.needs_data:
        try:
            out.data_dir = find_p372_dir(model, base_dir, option)
        except ValueError as exc:
            problems.append(("noise.atmospheric", str(exc)))
    try:
        out.receiver = resolve_receiver(model.receiver, model.band.bandwidth)
        out.chain = chain_from_section(
            model.chain, freq_hz=model.band.frequency, receiver_noise_figure_db=out.receiver.noise_figure_db
        )
    except ValueError as exc:
        problems.append(("receiver", str(exc)))
    for i, section in enumerate(model.strong_signal):
        try:
            out.stations += resolve_stations([section], model.site.latitude, model.site.longitude)
        except ValueError as exc:
            problems.append((f'strong_signal {i + 1} ("{section.name}")', str(exc)))
    return out


def assemble(label: str, model: ScenarioModel, built: Built, resolved: Resolved, nside: int | None) -> Scenario:
    """The Scenario of a problem-free model and its antennas: each antenna's chain (its own or the scenario's),
    the times on the targets' union grid, the noise seen from the reference, the weights adding to 1."""
    receiver, chain = resolved.receiver, resolved.chain
    weights = np.array([t.weight for t in model.target])
    own = [
        chain_from_section(c, freq_hz=model.band.frequency, receiver_noise_figure_db=receiver.noise_figure_db)
        if c is not None
        else chain
        for c in built.chains
    ]
    union, target_times = resolve_times(model.time, model.target)
    reference_m = built.antennas[0].params.position or (0.0, 0.0)
    return Scenario(
        source=label,
        site=Site.of(model.site),
        band=Band.of(model.band),
        times=union,
        target_times=target_times,
        noise=noise_settings(model.noise, resolved.data_dir, model.site, reference_m),
        targets=tuple(resolved.targets),
        target_weights=weights / weights.sum(),
        reference=built.antennas[0],
        candidates=tuple(built.antennas[1:]),
        chains=tuple(own),
        chain=chain,
        receiver=receiver,
        nside=nside if nside is not None else model.compute.nside,
        uncertainty=Uncertainty.of(model.uncertainty),
        max_antennas=model.plan.max_antennas,
        placeable=built.placeable,
        strong_signals=resolved.stations,
        stage_limits=tuple(stage_limits(c if c is not None else model.chain, model.receiver) for c in built.chains),
    )
