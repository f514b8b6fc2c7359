"""The examples run as a user would run them."""

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
    for name in ("azimuth.png", "length-sweep.png"):
        png = tmp_path / name
        assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 10_000
