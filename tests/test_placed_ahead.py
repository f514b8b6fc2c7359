"""Work done ahead or in fewer calls for placed sources gives what the one-by-one path gives: the near field's
interpolation summed in one gather (noisemodels.halfspace._gathered) against term by term, and the scenario's other
long wires worked ahead in one call of the field per source (snrgain.model.placed._others_ahead) against each
candidate's wire worked when its termination search asks."""

from __future__ import annotations

import importlib.util
import json
from pathlib import Path

import numpy as np
import pytest

import snrgain
from noisemodels import halfspace
from snrgain.memo import forget
from snrgain.model import placed
from snrgain.outputs.output import to_json

REPO = Path(__file__).resolve().parents[1]


def _bench():
    spec = importlib.util.spec_from_file_location("feedline_bench", REPO / "benchmarks" / "feedline_bench.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.mark.parametrize("rows, nodes, stencil", [(2, 87, 16), (5, 300, 16), (16, 40, 4), (3, 1, 4)])
def test_the_interpolations_one_gather_is_the_term_by_term_sum_to_the_bit(rows, nodes, stencil):
    rng = np.random.default_rng(rows * nodes)
    flat = rng.normal(size=(rows, 500)) + 1j * rng.normal(size=(rows, 500))
    at = rng.integers(0, 500, size=(stencil, nodes))
    w = rng.normal(size=(stencil, nodes))
    term_by_term = halfspace._weighted(lambda k: flat[:, at[k]], w.T)
    np.testing.assert_array_equal(halfspace._gathered(flat, at, w), term_by_term)


def _numbers(text: str) -> list[float]:
    out = []

    def walk(v):
        if isinstance(v, dict):
            for k in sorted(v):
                walk(v[k])
        elif isinstance(v, list):
            for x in v:
                walk(x)
        elif isinstance(v, (int, float)) and not isinstance(v, bool):
            out.append(float(v))

    walk(json.loads(text))
    return out


@pytest.mark.parametrize("feed_lines", [False, True])
def test_the_other_wires_worked_ahead_give_what_each_termination_search_works(monkeypatch, feed_lines):
    # The bench's lot: eight Beverages searched for their resistors one after another under five placed sources.
    # Their EMFs (and their feed lines' routes') from each source are worked in the reference's first products, one
    # call of the field per source; the results are those of every wire worked when its own search asks for it.
    text = _bench().scenario(sources=True, feed_lines=feed_lines, compact=False)
    text = text.replace("months = [12, 1]", "months = [1]")
    calls = []
    field = placed.field_vector
    monkeypatch.setattr(placed, "field_vector", lambda *a, **kw: calls.append(1) or field(*a, **kw))
    forget()
    halfspace.forget_geometry()
    ahead = to_json(snrgain.evaluate(text))
    n_ahead = len(calls)
    monkeypatch.setattr(placed, "_others_ahead", lambda sc, antennas, ground: [])
    calls.clear()
    forget()
    halfspace.forget_geometry()
    alone = to_json(snrgain.evaluate(text))
    assert n_ahead < len(calls)
    a, b = _numbers(ahead), _numbers(alone)
    assert len(a) == len(b)
    np.testing.assert_allclose(a, b, rtol=1e-9, atol=1e-9)
