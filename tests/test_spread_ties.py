"""run_quantiles (snrgain.model.spread) where the narrowing cannot split ties: every sample one value (the reference
over itself), and a block of ties larger than the merge window among other values; each against a sort of every
sample (weighted_quantiles)."""

from __future__ import annotations

import numpy as np
import pytest

from snrgain.model.spread import WINDOW, run_quantiles, weighted_quantiles

QS = (0.1, 0.5, 0.9)


def test_one_value_throughout():
    runs = [np.zeros(20_000), np.zeros(15_000), np.zeros(9_000)]
    got = run_quantiles(runs, [1.0, 2.0, 0.5], QS, 0.0)
    assert got == (0.0, 0.0, 0.0, 1.0)
    assert run_quantiles(runs, [1.0, 2.0, 0.5], QS, 1e-9)[-1] == 0.0


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_a_block_of_ties_wider_than_the_window(seed):
    rng = np.random.default_rng(seed)
    runs = []
    for _ in range(4):
        v = np.concatenate([rng.normal(0.0, 2.0, 6000), np.full(3 * WINDOW, 0.25), np.full(WINDOW, -1.0)])
        runs.append(np.sort(v))
    weights = rng.uniform(0.5, 2.0, 4)
    got = run_quantiles(runs, weights, QS, 0.25)
    v = np.concatenate(runs)
    w = np.concatenate([np.full(r.size, wk) for r, wk in zip(runs, weights)])
    want = weighted_quantiles(v, w, QS)
    assert got[:3] == pytest.approx(want, abs=1e-8)  # the full sort's running sum rounds to ~1e-10
    assert got[3] == pytest.approx(w[v >= 0.25].sum() / w.sum(), abs=1e-12)
