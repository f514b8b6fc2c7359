"""load: a scenario file validated and resolved into a :class:`Scenario`, in named steps.

Every step adds the problems it finds and the next ones run anyway where they can (antennas are validated by
their own families even when other sections failed), so one :class:`ScenarioError` lists them all.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np
from pydantic import ValidationError

from snrgain.antennas.base import pydantic_problems
from snrgain.errors import ScenarioError
from snrgain.physics import chain as chainmod
from snrgain.physics import receiver as rx
from snrgain.physics import targets as targetmod
from snrgain.units import length_unit_of, lengths_said_in

from .antennas import Built, build_antennas
from .band import Band
from .bands import one_band, renumbered
from .compute import Uncertainty
from .feedline import resolve_feed_lines
from .files import read_source
from .local import check_local_sources, reading_antenna, reading_problems
from .model import Scenario, ScenarioModel, model_problems
from .noise import noise_settings
from .p372dir import find_p372_dir
from .receiver import chain_from_section, resolve_receiver
from .reference import choose_reference
from .site import Site, plan_from_latlon
from .strong import resolve_stations, stage_limits
from .structures import clear_of_scatterers, transmitting_vertical
from .targets import resolve_targets
from .times import resolve_times


def load(
    source: str | Path | dict,
    *,
    nside: int | None = None,
    p372_dir: str | Path | None = None,
    base_dir: Path | None = None,
    label: str | None = None,
    reference: str | None = None,
    band: str | None = None,
) -> Scenario:
    """Load and validate a scenario from a path, TOML text or a dict.

    ``p372_dir`` is the folder of the ITU-R P.372 coefficient files given on
    the command line; it takes precedence over the scenario key
    ``noise.atmospheric.data_dir``, which takes precedence over the
    environment variable SNRGAIN_P372_DIR (:func:`snrgain.scenario.p372dir.p372_dir_named`).
    A dict's relative paths start from ``base_dir``; ``label`` names it in messages.  ``reference``: the
    name of an antenna of the scenario to rank against instead of the file's reference (the file's reference then
    stands among the candidates where that antenna stood; levels of local sources stay read where the file says,
    :func:`choose_reference`).  ``band``: the band to load from a file of several (``[[band]]``; a file of one
    needs none; :mod:`snrgain.scenario.bands`).  Raises :class:`ScenarioError` listing every problem.
    """
    if isinstance(source, dict):
        data, label = source, label or "<dict>"
    else:
        data, label, base_dir = read_source(source)
    data = one_band(data, band, label)
    numbers = getattr(data, "candidate_numbers", None)  # a band's candidates' numbers in the file (their bands)
    try:
        return _loaded(data, label, base_dir, p372_dir, nside, reference)
    except ScenarioError as exc:
        if not numbers:
            raise
        raise ScenarioError(exc.source, renumbered(exc.problems, numbers)) from None


def _loaded(data: dict, label: str, base_dir, p372_dir, nside, reference) -> Scenario:
    """:func:`load` of one band's scenario (a dict)."""
    length_unit = length_unit_of(data)
    with lengths_said_in(length_unit):  # its problems quote lengths in its unit (units.length_said)
        data, problems = plan_from_latlon(data)
        model, more = validate(data)
        problems += more
        built = build_antennas(data, model.band.frequency if model else None, base_dir)
        problems += built.problems
        file_reference = built.antennas[0] if built.antennas and built.wheres[0] == "reference" else None
        if reference is not None and not problems:
            problems += choose_reference(built, reference)
        resolved = resolve_sections(model, base_dir, p372_dir, problems)
        transmitting, feed_lines = None, {}
        if model is not None and built.antennas and not problems:
            transmitting, feed_lines, more = _after_antennas(model, built, file_reference, length_unit)
            problems += more
        if problems:
            raise ScenarioError(label, problems)
        sc = assemble(label, model, built, resolved, nside, file_reference, length_unit, transmitting)
        return replace(sc, feed_lines=feed_lines) if feed_lines else sc


def _after_antennas(model: ScenarioModel, built: Built, file_reference, length_unit: str):
    """What needs the antennas built and no problem before it, each step only while the ones before found none: the
    levels' readings, the local sources, the transmitting vertical, the feed lines.  (transmitting, feed_lines,
    problems)."""
    for check in (reading_problems, check_local_sources):
        problems = check(model, built, file_reference)
        if problems:
            return None, {}, problems
    transmitting, problems = transmitting_vertical(model.site.transmitting, built, file_reference)
    given = {}  # the tables that place their antenna: name -> the key that does it
    for t in [*(model.candidate or []), model.reference or {}]:
        if not isinstance(t, dict):
            continue
        elements = t.get("elements") if isinstance(t.get("elements"), list) else []
        key = next((k for k in ("position", "positions") if k in t), None)
        if key is None and any(isinstance(e, dict) and "position" in e for e in elements):
            key = "elements"  # an array placed by its elements' positions
        if key is not None:
            given[t.get("name", "reference")] = key
    problems = problems or clear_of_scatterers(transmitting, built, model.site, given)
    if problems or not built.feed_lines:
        return transmitting, {}, problems
    where_ref = built.antennas[0].params.position or (0.0, 0.0)
    site = Site.of(model.site, length_unit)
    feed_lines, problems = resolve_feed_lines(
        built.feed_lines,
        built.antennas,
        built.wheres,
        site,
        where_ref,
        model.band.frequency,
        model.site.station_ground,
        placeable=built.placeable,
    )
    return transmitting, feed_lines, problems


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


def readings_kept(noise, model: ScenarioModel, reference, file_reference):
    """The noise settings with each level's reading antenna named, and, when another antenna than the file's
    reference is the reference, a placed source's Fa kept where the file's reference stands (its default
    ``measured_at``)."""
    from dataclasses import replace

    local = []
    for raw, src in zip(model.noise.local, noise.local):
        src = replace(src, read_on=reading_antenna(raw, file_reference))
        if reference is not file_reference and src.position_m is not None and src.fa_db is not None:
            if src.measured_at_m is None:
                at = file_reference.params.position or (0.0, 0.0)
                src = replace(src, measured_at_m=(float(at[0]), float(at[1])))
        local.append(src)
    return replace(noise, local=tuple(local))


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


def assemble(
    label: str,
    model: ScenarioModel,
    built: Built,
    resolved: Resolved,
    nside: int | None,
    file_reference=None,
    length_unit: str | None = None,
    transmitting: str | None = None,
) -> Scenario:
    """The Scenario of a problem-free model and its antennas: each antenna's chain (its own or the scenario's),
    the times on the targets' union grid, the noise seen from the reference, the weights adding to 1; each level
    names the antenna it was read on, and a placed source's Fa stays where the file's reference stands."""
    receiver, chain = resolved.receiver, resolved.chain
    weights = np.array([t.weight for t in model.target])
    own = [
        chain_from_section(c, freq_hz=model.band.frequency, receiver_noise_figure_db=receiver.noise_figure_db)
        if c is not None
        else chain
        for c in built.chains
    ]
    union, target_times = resolve_times(model.listening, model.target)
    reference_m = built.antennas[0].params.position or (0.0, 0.0)
    noise = noise_settings(model.noise, resolved.data_dir, model.site, reference_m)
    if file_reference is not None:
        noise = readings_kept(noise, model, built.antennas[0], file_reference)
    return Scenario(
        source=label,
        site=Site.of(model.site, length_unit),
        band=Band.of(model.band),
        times=union,
        target_times=target_times,
        noise=noise,
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
        transmitting=transmitting,
    )
