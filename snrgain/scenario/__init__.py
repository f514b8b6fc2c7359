"""Scenario files: load, validate once, and hand SI values to the rest.

A scenario is a TOML file (format: README.md, "Scenario format").  Loading
validates everything: unknown keys, quantities and their units, ranges,
antenna parameters, the pattern files they name.  Every problem found is
reported in one :class:`ScenarioError` naming the file, the field path, the
value and what is allowed; nothing runs on an invalid scenario.

One module per section and per job: ``files`` (reading, limits), ``site``, ``band``, ``times``, ``noise``,
``targets``, ``antennas`` (reference and candidates), ``local`` (local sources against the antennas),
``receiver`` (receiver and chain), ``compute`` (compute, uncertainty, plan), ``model`` (ScenarioModel, the
resolved Scenario), ``loading`` (:func:`load` in named steps); ``derive`` makes the resolved objects that only
freeze a section's values from the section itself; ``connected`` names the antenna a reading or a log was taken on
(a switched antenna's state).  Every name is importable from ``snrgain.scenario``.
"""

from snrgain.antennas import SpecError
from snrgain.errors import ScenarioError

from .antennas import PlaceSection, antenna_from_table, inject_defaults
from .band import Band, BandSection
from .bands import load_bands, one_band, split_bands
from .compute import Compute, PlanSection, Uncertainty, UncertaintySection
from .connected import Connected, antenna_names, connected
from .files import MAX_FILE_BYTES, MAX_ITEMS, MAX_NESTING, decode_text, parse_toml, read_source, read_text_file
from .loading import load
from .local import MIN_READING_GAIN, MIN_SOURCE_GAP_M
from .model import Scenario, ScenarioModel
from .noise import (
    DECILE_RANGE_DB,
    FA_RANGE_DB,
    MIN_ARRIVAL_SHARE,
    Atmospheric,
    Galactic,
    LocalSource,
    ManMade,
    Noise,
    Sector,
    arrival_band_share,
)
from .receiver import ChainSection, Feedline, Preamp, Receiver, chain_from_section
from .site import KeepOut, Site, SiteSection
from .targets import MAX_MIN_ELEVATION_RAD, MIN_BAND_RAD, Target
from .times import Hours, Months, Time, Times

__all__ = [
    "load_bands",
    "one_band",
    "split_bands",
    "DECILE_RANGE_DB",
    "FA_RANGE_DB",
    "MAX_FILE_BYTES",
    "MAX_ITEMS",
    "MAX_MIN_ELEVATION_RAD",
    "MAX_NESTING",
    "MIN_ARRIVAL_SHARE",
    "MIN_BAND_RAD",
    "MIN_READING_GAIN",
    "MIN_SOURCE_GAP_M",
    "Atmospheric",
    "Band",
    "BandSection",
    "ChainSection",
    "Connected",
    "Compute",
    "Feedline",
    "Galactic",
    "Hours",
    "KeepOut",
    "LocalSource",
    "ManMade",
    "Months",
    "Noise",
    "PlaceSection",
    "PlanSection",
    "Preamp",
    "Receiver",
    "Scenario",
    "ScenarioError",
    "ScenarioModel",
    "Sector",
    "Site",
    "SiteSection",
    "SpecError",
    "Target",
    "Time",
    "Times",
    "Uncertainty",
    "UncertaintySection",
    "antenna_from_table",
    "antenna_names",
    "arrival_band_share",
    "chain_from_section",
    "connected",
    "decode_text",
    "inject_defaults",
    "load",
    "parse_toml",
    "read_source",
    "read_text_file",
]
