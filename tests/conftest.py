"""Shared paths and helpers for the tests."""

import json
import os
import tomllib
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]
SCENARIOS = REPO / "scenarios"
SHARED = REPO.parent / "shared"


def _p372_dir() -> Path:
    """The ITU-R P.372 data: the user's SNRGAIN_P372_DIR when set (never overridden), else ../shared/data/p372."""
    env = os.environ.get("SNRGAIN_P372_DIR")
    return Path(env).expanduser() if env else SHARED / "data" / "p372"


P372_DIR = _p372_dir()
HAVE_P372 = (P372_DIR / "COEFF01W.txt").is_file()

needs_p372 = pytest.mark.skipif(
    not HAVE_P372,
    reason=f"ITU-R P.372 data not found at {P372_DIR} (download them and set SNRGAIN_P372_DIR to their folder)",
)
"""Marks a test that reads the ITU-R P.372 coefficient files (they stay outside the repository)."""


def scenario_needs_p372(path: Path) -> bool:
    """Whether a scenario file asks for the P.372 atmospheric-noise maps."""
    data = tomllib.loads(Path(path).read_text(encoding="utf-8"))
    return data.get("noise", {}).get("atmospheric", {}).get("model") == "p372"


def demo_params(paths=None):
    """The demo scenarios as pytest parameters; those that need the P.372 data carry `needs_p372`."""
    paths = sorted(SCENARIOS.glob("*.toml")) if paths is None else paths
    return [pytest.param(p, id=p.stem, marks=[needs_p372] if scenario_needs_p372(p) else []) for p in paths]


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
    """The persistent sky cache (noisemodels.skycache) in a folder of the test session's own, never the user's, and
    the figures not kept; commands run in subprocesses inherit both through the environment."""
    import os

    from noisemodels import skycache
    from snrgain.outputs.drawing import ENV_NO_FIGURES

    # The command line's figures are not kept between tests (snrgain.outputs.drawing.job_bytes): a test that
    # changes how a figure is drawn must see it drawn.  tests/test_figure_cache.py turns them on where it tests them.
    old = {k: os.environ.get(k) for k in (skycache.ENV_DIR, ENV_NO_FIGURES)}
    os.environ[skycache.ENV_DIR] = str(tmp_path_factory.mktemp("sky-cache"))
    os.environ[ENV_NO_FIGURES] = "1"
    yield
    for k, v in old.items():
        if v is None:
            os.environ.pop(k, None)
        else:
            os.environ[k] = v


def json_numbers(text: str, *, strings: bool = False) -> list:
    """Every number of a JSON result in order, keys sorted (or, with ``strings``, everything else in it): two
    results compared number by number to a tolerance."""
    out = []

    def walk(v):
        if isinstance(v, dict):
            for k in sorted(v):
                walk(v[k])
        elif isinstance(v, list):
            for x in v:
                walk(x)
        elif isinstance(v, (int, float)) and not isinstance(v, bool):
            if not strings:
                out.append(float(v))
        elif strings:
            out.append(v)

    walk(json.loads(text))
    return out
