"""The documented limits (README: 64 candidates, targets and local sources, 12 x 24 month-hours, nside 128): a
scenario at them is estimated before any work, runs within the stated bounds at the default samples
(benchmarks/limits.py times it: 73 s and 1.6 GB measured on 2 cores), and one sized past them is refused up
front with the estimate, naming the key that sizes it."""

import importlib.util

import pytest
from click.testing import CliRunner

from snrgain.cli.main import cli
from snrgain.errors import TooLargeError
from snrgain.model import pipeline
from snrgain.model.spread import size
from snrgain.scenario import load
from tests.conftest import REPO


def _limits_text() -> str:
    spec = importlib.util.spec_from_file_location("limits", REPO / "benchmarks" / "limits.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod.scenario()


def test_the_documented_limits_are_within_the_bounds():
    s = size(load(_limits_text()))
    assert (s.antennas, s.cells, s.components, s.pixels) == (65, 288, 67, 6 * 128**2)
    assert s.seconds < pipeline.MAX_SECONDS and s.memory_bytes < pipeline.MAX_MEMORY_BYTES


def test_past_the_limits_is_refused_up_front_with_the_estimate(tmp_path):
    path = tmp_path / "big.toml"
    path.write_text(_limits_text() + "\n[uncertainty]\nsamples = 20000\n", encoding="utf-8")
    with pytest.raises(TooLargeError, match=r"uncertainty\] samples \(to \d+ or fewer\)"):
        pipeline.check_size(load(path))
    res = CliRunner().invoke(cli, ["rank", str(path)])
    assert res.exit_code == 2 and "Traceback" not in res.output
    assert "would take about" in res.output and "--allow-long" in res.output
    assert "--allow-long" in CliRunner().invoke(cli, ["rank", "--help"]).output


def test_the_memory_estimate_refuses_a_run_that_took_more_than_4_gb():
    """A year of half-hours at 20,000 draws and nside 128 took 4.4 GB of peak memory while estimated at 2.8 GB, so it
    ran past the 4 GB bound without a word; the estimate's terms are fitted to measured peaks, on the safe side
    (snrgain.model.spread.MEMORY_*; benchmarks/limits.py --memory prints both side by side): it is now refused up
    front, and 5000 draws at nside 64 (1.2 GB measured) still runs."""
    spec = importlib.util.spec_from_file_location("limits", REPO / "benchmarks" / "limits.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    big = size(load(mod.memory_scenario(20000, 128, 0)))
    assert big.memory_bytes > pipeline.MAX_MEMORY_BYTES
    with pytest.raises(TooLargeError, match="GB"):
        pipeline.check_size(load(mod.memory_scenario(20000, 128, 0)))
    small = size(load(mod.memory_scenario(5000, 64, 0)))
    assert 1.2e9 < small.memory_bytes < pipeline.MAX_MEMORY_BYTES
