"""The scenario package's structure: the old names still import, resolved objects follow their sections, every
sub-package installs, and each function and module reads at a sitting."""

import ast
import tomllib
from dataclasses import fields, replace

import pytest

import snrgain.scenario as scenario
from snrgain.scenario import Band, BandSection, Time, Times, Uncertainty, UncertaintySection
from tests.conftest import REPO

FORMER_NAMES = (
    "PlaceSection KeepOut SiteSection BandSection FA_RANGE_DB DECILE_RANGE_DB MIN_ARRIVAL_SHARE MAX_ITEMS "
    "MIN_BAND_RAD MAX_MIN_ELEVATION_RAD MAX_NESTING Months Hours Time Sector ManMade Atmospheric arrival_band_share "
    "Galactic LocalSource Noise Target Receiver Feedline Preamp ChainSection Compute UncertaintySection PlanSection "
    "ScenarioModel Site Band Times Uncertainty Scenario chain_from_section read_source parse_toml antenna_from_table "
    "load MIN_READING_GAIN MIN_SOURCE_GAP_M MAX_FILE_BYTES read_text_file decode_text ScenarioError"
).split()
"""The public names of the single module snrgain/scenario.py had before it became a package."""


def test_every_former_name_imports_from_the_package():
    missing = [n for n in FORMER_NAMES if not hasattr(scenario, n)]
    assert missing == []
    assert callable(scenario.load) and scenario.load.__module__ == "snrgain.scenario.loading"
    assert set(scenario.__all__) >= set(FORMER_NAMES)


@pytest.mark.parametrize(
    ("resolved", "section", "rename"),
    [
        (Band, BandSection, {"frequency": "freq_hz", "bandwidth": "bandwidth_hz"}),
        (Times, Time, {}),
        (Uncertainty, UncertaintySection, {"beat_by": "beat_by_db"}),
    ],
)
def test_resolved_objects_follow_their_sections(resolved, section, rename):
    # One declaration per key: the resolved object has the section's keys, in order, with its defaults.
    assert [f.name for f in fields(resolved)] == [rename.get(k, k) for k in section.model_fields]
    for key, info in section.model_fields.items():
        if not info.is_required():
            default = info.get_default(call_default_factory=True)
            got = getattr(resolved, rename.get(key, key))
            assert got == (tuple(default) if isinstance(default, list) else default), key


def test_resolved_objects_are_frozen_values():
    u = Uncertainty.of(UncertaintySection.model_validate({"samples": 50, "beat_by": "6 dB", "hours": False}))
    assert (u.samples, u.beat_by_db, u.hours, u.ground) == (50, 6.0, False, True)
    assert replace(u, ground=False) == Uncertainty(False, True, True, False, 50, 1, 6.0)  # as sweeps vary it
    with pytest.raises(AttributeError):
        u.samples = 3
    t = Times.of(Time.model_validate({"months": [12, 1], "utc_hours": [2, 4.5]}))
    assert t == Times((12, 1), (2.0, 4.5)) and hash(t) == hash(Times((12, 1), (2.0, 4.5)))
    assert Band.of(BandSection.model_validate({"frequency": "3.6 MHz"})) == Band(3.6e6, 500.0)


def test_every_sub_package_is_installed():
    # pyproject.toml finds the packages by pattern; every folder with an __init__.py must match it, or it would be
    # left out of the wheel.
    from setuptools import find_packages

    include = tomllib.loads((REPO / "pyproject.toml").read_text(encoding="utf-8"))["tool"]["setuptools"]["packages"][
        "find"
    ]["include"]
    listed = set(find_packages(str(REPO), include=include))
    found = {
        ".".join(p.parent.relative_to(REPO).parts)
        for top in ("snrgain", "noisemodels")
        for p in (REPO / top).rglob("__init__.py")
    }
    assert found - listed == set()


MAX_FUNCTION_LINES = 60
MAX_MODULE_LINES = 300


def test_the_scenario_modules_read_at_a_sitting():
    long = []
    for path in sorted((REPO / "snrgain" / "scenario").glob("*.py")):
        text = path.read_text(encoding="utf-8")
        if len(text.splitlines()) > MAX_MODULE_LINES:
            long.append(f"{path.name}: {len(text.splitlines())} lines")
        for node in ast.walk(ast.parse(text)):
            if isinstance(node, ast.FunctionDef) and node.end_lineno - node.lineno + 1 > MAX_FUNCTION_LINES:
                long.append(f"{path.name}:{node.lineno} {node.name}: {node.end_lineno - node.lineno + 1} lines")
    assert long == []
