"""The examples run as a user would run them."""

import json
import re
import subprocess
import sys

from tests.conftest import REPO


def test_python_api_example(tmp_path):
    res = subprocess.run(
        [sys.executable, str(REPO / "examples" / "python_api.py"), str(tmp_path)],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert res.returncode == 0, res.stderr
    assert "SNR gain over" in res.stdout and "front-to-back" in res.stdout
    # Each candidate's figure per target is the ranking's statistic, as rank prints it (it printed a mean over
    # every month and hour, NaN for a target not listened for at all of them).
    assert "nan" not in res.stdout.lower()
    printed = {
        (m["antenna"].strip(), t): float(g)
        for m in re.finditer(r"^  (?P<antenna>.+?) +SNR gain over .*?: (?P<rest>.*)$", res.stdout, re.M)
        for t, g in re.findall(r"(?:, )?(.+?) ([-+]\d+\.\d) dB", m["rest"])
    }
    rank = subprocess.run(
        [
            sys.executable,
            "-m",
            "snrgain.cli.main",
            "rank",
            str(REPO / "scenarios" / "marrow-fen.toml"),
            "--format",
            "json",
        ],
        capture_output=True,
        text=True,
        timeout=300,
        cwd=REPO,
    )
    assert rank.returncode == 0, rank.stderr
    ranked = {
        (row["name"], t["name"]): row["snr_gain_db"]["median"]
        for t in json.loads(rank.stdout)["targets"]
        for row in t["ranking"]
    }
    assert set(printed) == set(ranked)
    for key, g in printed.items():
        assert abs(g - ranked[key]) <= 0.05, key
    for name in ("azimuth.png", "length-sweep.png"):
        png = tmp_path / name
        assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 10_000


def test_notebook_example(tmp_path):
    png = tmp_path / "pattern.png"
    res = subprocess.run(
        [sys.executable, str(REPO / "examples" / "notebook.py"), str(png)],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert res.returncode == 0, res.stderr
    lines = res.stdout.splitlines()
    assert "median over the months [dB]" in lines[0] and lines[1] == "utc_hour"
    hours = [float(ln.split()[0]) for ln in lines[2:7]]
    assert hours == [2.0, 4.0, 6.0, 8.0, 10.0]  # the demo's listening hours, selected by label
    assert all(10.0 < float(ln.split()[1]) < 16.0 for ln in lines[2:7])  # README: 12.8 dB nominal toward East Asia
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 10_000
