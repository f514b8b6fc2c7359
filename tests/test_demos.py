"""Every demo scenario runs as it is (smoke test) and gives plausible numbers."""

import numpy as np
import pytest

import snrgain
from tests.conftest import HAVE_P372, P372_DIR, SCENARIOS, demo_params

DEMOS = sorted(SCENARIOS.glob("*.toml"))


def test_there_are_demos():
    assert len(DEMOS) >= 2


@pytest.mark.parametrize("path", demo_params(DEMOS))
def test_demo_runs(path, monkeypatch):
    # Demos that ask for P.372 atmospheric noise read the ITU-R data from the user's SNRGAIN_P372_DIR or
    # ../shared/data/p372 (conftest); they are skipped, with the reason, where neither holds them.
    if HAVE_P372:
        monkeypatch.setenv("SNRGAIN_P372_DIR", str(P372_DIR))
    r = snrgain.evaluate(path)
    assert r.candidates
    for c in [r.reference, *r.candidates]:
        listened = np.isfinite(c.snr_gain_db)  # NaN only at hours a target is not listened for
        assert np.all(listened.any(axis=(1, 2)))
        assert np.all(np.isfinite(c.noise_dbm))
        # Plausibility (common practice): low-band SNR gains of real designs lie within +-20 dB of a vertical.
        assert np.all((-25 < c.snr_gain_median_db) & (c.snr_gain_median_db < 25))
        assert np.all(c.snr_gain_p10_db <= c.snr_gain_median_db + 1e-9)
        assert np.all(c.snr_gain_median_db <= c.snr_gain_p90_db + 1e-9)
