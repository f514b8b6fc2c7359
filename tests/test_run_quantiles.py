"""The spread's quantiles read from sorted runs (snrgain.model.spread.run_quantiles) against a sort of every sample
(weighted_quantiles), and against the same interpolation carried out in extended precision."""

import numpy as np
import pytest

from snrgain.model import spread
from snrgain.model.spread import run_quantiles, weighted_quantiles

QS = (0.1, 0.5, 0.9)


def _case(rng, *, ties: bool, sizes=None):
    k = int(rng.integers(1, 10))
    sizes = sizes or [int(rng.integers(1, 20_000)) for _ in range(k)]
    runs = []
    for n in sizes:
        r = rng.normal(rng.normal(0.0, 3.0), rng.uniform(0.1, 5.0), n)
        runs.append(np.sort(np.round(r, 1) if ties else r))
    node = rng.uniform(0.01, 1.0, len(sizes))
    node /= node.sum()
    return runs, [float(w / r.size) for w, r in zip(node, runs)]


def _flat(runs, weights):
    return np.concatenate(runs), np.concatenate([np.full(r.size, w) for r, w in zip(runs, weights)])


def _extended(runs, weights, qs):
    """weighted_quantiles' interpolation with the cumulative weights in long double."""
    v, w = _flat(runs, weights)
    order = np.argsort(v, kind="stable")
    v, w = v[order].astype(np.longdouble), w[order].astype(np.longdouble)
    cum = (np.cumsum(w) - 0.5 * w) / w.sum()
    out = []
    for q in qs:
        i = min(max(int(np.searchsorted(cum, q, side="right")) - 1, 0), len(cum) - 2) if len(cum) > 1 else 0
        if len(cum) == 1 or q <= cum[0]:
            out.append(float(v[0] if q <= cum[0] else v[-1]))
            continue
        t = min(max((np.longdouble(q) - cum[i]) / (cum[i + 1] - cum[i]), 0), 1)
        out.append(float(v[i] + t * (v[i + 1] - v[i])))
    return out


@pytest.mark.parametrize("ties", [False, True])
@pytest.mark.parametrize("seed", range(12))
def test_run_quantiles_are_the_sorted_samples_quantiles(seed, ties, monkeypatch):
    rng = np.random.default_rng(seed)
    runs, weights = _case(rng, ties=ties)
    if seed % 3 == 0:  # small windows: many narrowing rounds (and with ties, windows that cannot narrow)
        monkeypatch.setattr(spread, "WINDOW", 8)
        monkeypatch.setattr(spread, "PROBES", 4)
    got = run_quantiles(runs, weights, QS, 1.0)
    v, w = _flat(runs, weights)
    want = weighted_quantiles(v, w, QS)
    np.testing.assert_allclose(got[:3], want, rtol=0, atol=1e-8)  # the full sort's running sum rounds to ~1e-10
    np.testing.assert_allclose(got[:3], _extended(runs, weights, QS), rtol=0, atol=1e-10)
    assert got[3] == pytest.approx(np.sum(w[v >= 1.0]) / np.sum(w), rel=1e-12, abs=1e-15)


def test_ties_across_runs_follow_the_run_order():
    # Equal values from runs of different weights: the midpoints follow the concatenation's stable order.
    runs = [np.array([0.0, 1.0, 1.0, 2.0]), np.array([1.0, 1.0, 3.0])]
    weights = [0.1, 0.3]
    v, w = _flat(runs, weights)
    for q in np.linspace(0.0, 1.0, 41):
        assert run_quantiles(runs, weights, (q,), 1.0)[0] == pytest.approx(weighted_quantiles(v, w, (q,))[0], abs=1e-12)
    assert run_quantiles(runs, weights, (0.5,), 1.0)[1] == pytest.approx((0.2 + 0.6 + 0.1 + 0.3) / 1.3)


def test_one_sample_and_empty_runs():
    assert run_quantiles([np.array([5.0]), np.array([])], [1.0, 2.0], (0.1, 0.9), 6.0) == (5.0, 5.0, 0.0)
    with pytest.raises(ValueError):
        run_quantiles([np.array([])], [1.0], (0.5,), 0.0)


@pytest.mark.parametrize("seed", range(6))
def test_sorted_runs_by_groups_equal_each_set_sorted_whole(seed):
    # Cells grouped by the sets of listened cells holding them, each group sorted once and a set's run merged from
    # its groups': the same values in the same order as each set's samples sorted whole (ties included; a sort puts
    # -0.0 and 0.0, which compare equal, in either order).
    rng = np.random.default_rng(seed)
    noises = [np.round(rng.normal(0.0, 2.0, (50, 3, 7)), 0 if seed % 2 else 6) for _ in range(4)]
    noises.append(np.zeros((50, 3, 7)))  # the reference over itself
    full = np.ones((3, 7), dtype=bool)
    masks = [full, rng.random((3, 7)) < 0.5, full, rng.random((3, 7)) < 0.3]
    if seed >= 3:  # sets of many groups: sorted whole
        masks += [rng.random((3, 7)) < 0.6 for _ in range(4)]
    before = [noise.copy() for noise in noises]
    for hours in (True, False):
        sets = masks + [np.zeros((3, 7), dtype=bool)] if hours else masks  # (no mean over no cells)
        got = spread.sorted_runs(noises, sets, hours)
        # the runs are sorted in arrays of their own: the noises given are left as they were
        assert all(np.array_equal(noise, b) for noise, b in zip(noises, before))
        for mask in sets:
            for noise, run in zip(noises, got[mask.tobytes()]):
                v = -noise[:, mask] if hours else -noise[:, mask].mean(axis=1, keepdims=True)
                want = np.sort(v.ravel())
                assert run.shape == want.shape and np.array_equal(run, want)
                if seed % 2 == 0:  # no zeros but the reference's: to the bit
                    assert run.tobytes() == want.tobytes()


@pytest.mark.parametrize("hours", [True, False])
def test_over_hours_rows_equal_row_by_row(hours):
    rng = np.random.default_rng(3)
    values = rng.normal(0.0, 4.0, (6, 3, 4, 7))
    values[2, 1, 0, 0] = -np.inf  # a gain of nothing
    masks = rng.random((3, 4, 7)) < 0.5
    masks[0] = True
    got = spread.over_hours_rows(values, masks, hours)
    want = np.array([[spread.over_hours(v[t][masks[t]], hours) for t in range(3)] for v in values])
    assert got.tobytes() == want.tobytes()


@pytest.mark.parametrize("seed", range(4))
def test_median_is_numpys(seed):
    # spread.median takes np.median's steps without numpy.ma: the same values, NaN where the values hold one
    rng = np.random.default_rng(seed)
    for shape in [(1,), (7,), (8,), (3, 5), (4, 6), (2, 3, 4)]:
        a = rng.normal(0.0, 5.0, shape)
        if seed % 2:
            a.flat[rng.integers(a.size)] = np.nan
        for axis in [None, *range(a.ndim)]:
            want = np.median(a, axis=axis)
            got = spread.median(a, axis=axis)
            assert np.shape(got) == np.shape(want)
            np.testing.assert_array_equal(got, want)
    assert spread.median(np.array([3, 1, 2])) == 2.0  # integers: np.median's own


@pytest.mark.parametrize("block", [1000, 7])
def test_noise_db_in_place_equals_the_formula_to_the_bit(monkeypatch, block):
    # worked block by block in the einsum's own memory: the same numbers as 10 log10(sum + chain) over all draws
    monkeypatch.setattr(spread, "DRAW_BLOCK", block)
    rng = np.random.default_rng(1)
    factors = 10.0 ** rng.normal(0.0, 0.5, (30, 3, 2, 4))
    temps = rng.uniform(10.0, 1e5, (3, 2, 4))
    got = spread.noise_db(lambda i, j: factors[i:j], temps, 290.0, 30)
    want = 10.0 * np.log10(np.einsum("ncmh,cmh->nmh", factors, temps) + 290.0)
    assert got.tobytes() == want.tobytes()
