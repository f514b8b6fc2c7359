"""layout's refinement: its Nelder-Mead search (snrgain.tools.layout.nelder_mead) walks the same points as an
independent implementation of the same method and conventions, scipy.optimize.minimize(method="Nelder-Mead"), so
the layout found does not depend on which one runs."""

from __future__ import annotations

import numpy as np
import pytest

from snrgain.tools.layout import nelder_mead


def _problems():
    rng = np.random.default_rng(11)
    for n in (2, 3, 6):
        centre = rng.uniform(-50.0, 250.0, n)
        scale = rng.uniform(0.5, 3.0, n)
        lo = centre - rng.uniform(5.0, 80.0, n)
        hi = centre + rng.uniform(-20.0, 80.0, n)  # some optima outside the box: the bounds bind
        hi = np.maximum(hi, lo + 1.0)
        x0 = lo + rng.uniform(0.0, 1.0, n) * (hi - lo)
        x0[0] = 0.0 if lo[0] <= 0.0 <= hi[0] else x0[0]

        def bowl(x, c=centre, s=scale):
            return float(np.sum(s * (x - c) ** 2) + 0.3 * np.sin(x[0]))

        yield bowl, x0, list(zip(lo, hi))

    def ridge(x):  # a narrow valley, and a variable whose bounds hold it fixed
        return float((x[1] - x[0] ** 2) ** 2 * 10 + (1 - x[0]) ** 2 + 0.01 * x[2])

    yield ridge, np.array([-1.2, 1.0, 4.0]), [(-2.0, 2.0), (-1.0, 3.0), (4.0, 4.0)]
    yield ridge, np.array([1.9, 2.9, 4.0]), [(-2.0, 2.0), (-1.0, 3.0), (4.0, 4.0)]  # near the upper bounds


@pytest.mark.parametrize("budget", [40, 300])
def test_the_search_walks_the_same_points_as_an_independent_implementation(budget):
    from scipy.optimize import minimize

    for fun, x0, bounds in _problems():
        mine, theirs = [], []
        got = nelder_mead(
            lambda x, fun=fun, log=mine: log.append(x.copy()) or fun(x),
            x0,
            bounds,
            max_evaluations=budget,
            xatol=1e-3,
            fatol=1e-4,
        )
        res = minimize(
            lambda x, fun=fun, log=theirs: log.append(x.copy()) or fun(x),
            x0,
            method="Nelder-Mead",
            bounds=bounds,
            options={"maxfev": budget, "xatol": 1e-3, "fatol": 1e-4},
        )
        assert len(mine) == len(theirs) <= budget
        np.testing.assert_array_equal(np.array(mine), np.array(theirs))
        np.testing.assert_array_equal(got, res.x)
