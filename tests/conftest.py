"""Shared paths and helpers for the tests."""

from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]
SCENARIOS = REPO / "scenarios"
SHARED = REPO.parent / "shared"
P372_DIR = SHARED / "data" / "p372"

needs_p372 = pytest.mark.skipif(
    not (P372_DIR / "COEFF01W.txt").exists(), reason="ITU-R P.372 data not found at ../shared/data/p372"
)
"""Marks a test that reads the ITU-R P.372 coefficient files (they stay in ../shared, never in the repository)."""


@pytest.fixture
def demo_path():
    return SCENARIOS / "alder-hollow.toml"


MINIMAL = """
[site]
name = "test site"
latitude = 40.0
longitude = -75.0
ground = "moist loam"

[band]
frequency = "1.83 MHz"
bandwidth = "500 Hz"

[time]
months = [1]
utc_hours = [3]

[[target]]
name = "north-east"
bearing = 45
elevation = [10, 20]

[reference]
family = "vertical"
height = "20 m"

[[candidate]]
name = "iso"
family = "isotropic"
"""


@pytest.fixture
def minimal_text():
    return MINIMAL


@pytest.fixture(autouse=True, scope="session")
def _private_sky_cache(tmp_path_factory):
    """The persistent sky cache (noisemodels.skycache) in a folder of the test session's own, never the user's;
    commands run in subprocesses inherit it through the environment."""
    import os

    from noisemodels import skycache

    old = os.environ.get(skycache.ENV_DIR)
    os.environ[skycache.ENV_DIR] = str(tmp_path_factory.mktemp("sky-cache"))
    yield
    if old is None:
        os.environ.pop(skycache.ENV_DIR, None)
    else:
        os.environ[skycache.ENV_DIR] = old
