"""Work done ahead or in fewer calls for placed sources gives what the one-by-one path gives: the near field's
interpolation summed in one gather (noisemodels.halfspace._gathered) against term by term, and the scenario's other
long wires worked ahead in one call of the field per source (snrgain.model.placed._others_ahead) against each
candidate's wire worked when its termination search asks."""

from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pytest

import snrgain
from noisemodels import halfspace
from snrgain.memo import forget
from snrgain.model import placed
from snrgain.outputs.output import to_json
from tests.conftest import json_numbers

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
    a, b = json_numbers(ahead), json_numbers(alone)
    assert len(a) == len(b)
    np.testing.assert_allclose(a, b, rtol=1e-9, atol=1e-9)


@pytest.mark.parametrize("family, spec", [("beverage", {"length": 200.0, "height": 2.0}), ("bog", {"length": 90.0})])
def test_a_wires_place_is_shared_over_grounds_only_where_its_line_leaves_the_samples_alone(family, spec):
    # placed._PLACES keeps a wire's samples before a source without its line where the line's own wavelength does not
    # set the step (placed._line_step None): then every ground's samples are the same; a wire on the soil (a slow
    # line) keeps its line in the key
    from snrgain.antennas import from_si
    from snrgain.sky.noise import LocalSource

    f = 1.83e6
    src = LocalSource("s", 0.0, position_m=(300.0, 900.0), height_m=3.0, polarisation="vertical")
    grounds = ["very dry ground", "moist loam", "salt marsh"]
    wires = [from_si(family, bearing=0.3, ground=g, position=(0.0, 0.0), **spec) for g in grounds]
    steps = [placed._line_step(complex(w.line(f).gamma), f) for w in wires]
    grids = [placed.wire_grid(w, src, f, 800.0) for w in wires]
    free = [g for step, g in zip(steps, grids) if step is None]
    for g in free[1:]:
        np.testing.assert_array_equal(g, free[0])
    if family == "beverage":
        assert len(free) == len(grounds)
    else:  # over the wetter grounds the slow line sets the step
        assert len(free) < len(grounds) and len({len(g) for g in grids}) > 1


@pytest.mark.parametrize("kind", ["vertical", "horizontal"])
def test_the_near_fields_mixed_geometry_gives_the_point_by_point_interpolation(kind):
    # a wire's points at its height beside a compact antenna's segments, each at its own height: the wire's take the
    # table interpolated to their height first ("mixed"), the segments the tensor stencil; the same interpolating
    # polynomial as every point through the tensor stencil, summed in another order
    rng = np.random.default_rng(7)
    tab = halfspace.table(1.83e6, complex(13.0, -49.0), kind, 1000.0, 32.0)
    rho = np.concatenate([np.linspace(3.0, 400.0, 600), rng.uniform(1.0, 300.0, 40)])
    zeta = np.concatenate([np.full(600, 4.3), rng.uniform(0.5, 20.0, 40)])
    g = halfspace._geometry(tab.k0, len(tab.s), len(tab.zeta), rho, zeta)
    assert g[0] == "mixed" and len(g[1]) == 600
    i0, ti = halfspace._stencil(np.arcsinh(rho / halfspace.RHO_SCALE_M) / halfspace.S_STEP, len(tab.s))
    r = np.hypot(rho, zeta)
    phase = np.exp(-1j * tab.k0 * r) / np.maximum(r, 1.0)
    points = halfspace._points_geometry(zeta, i0, ti, phase, len(tab.zeta))
    every = halfspace._remainders_at([tab], points)[0]
    got = tab.remainder(rho, zeta)
    np.testing.assert_allclose(got, every, rtol=0, atol=1e-13 * np.max(np.abs(every)))


def test_a_spreads_grounds_worked_ahead_are_not_planned_again_by_their_pickups(monkeypatch):
    # placed.fields_ahead works every other ground's EMFs, amplitudes and routes at once and says so
    # (placed._WORKED_AHEAD); each ground's pickup then skips its own prefetch (the results: test_feedline's
    # test_a_ground_spread_works_every_grounds_field_at_once_to_the_same_results)
    text = _bench().scenario(sources=True, feed_lines=False, compact=False).replace("months = [12, 1]", "months = [1]")
    grounds = []
    prefetch = placed._prefetch_wire_emfs
    monkeypatch.setattr(placed, "_prefetch_wire_emfs", lambda *a, **kw: grounds.append(a[4]) or prefetch(*a, **kw))
    forget()
    halfspace.forget_geometry()
    snrgain.evaluate(text)
    assert len(placed._WORKED_AHEAD) == 8 * 5  # the spread's eight other grounds, five sources
    assert grounds and len({id(g) for g in grounds}) == 1  # the pickups' own prefetches: the site's ground alone


@pytest.mark.parametrize("family, spec", [("beverage", {"length": 200.0, "height": 2.0}), ("bog", {"length": 90.0})])
def test_a_wires_emfs_from_the_field_at_its_points_are_those_of_the_field_asked_for_to_the_bit(family, spec):
    from snrgain.antennas import from_si
    from snrgain.physics.reciprocity import wire_emfs

    wire = from_si(family, bearing=0.7, ground="moist loam", position=(10.0, -20.0), **spec)
    feeds = np.array([[10.0, -20.0]])
    u = np.array([np.sin(0.7), np.cos(0.7)])
    x = placed.wire_samples(wire.length_m, 1.83e6, 40.0)
    pts, z = placed._emf_points(wire, feeds, x, u)
    rng = np.random.default_rng(5)
    e = rng.normal(size=(len(pts), 3)) + 1j * rng.normal(size=(len(pts), 3))
    by_point = {(*p, h): v for p, h, v in zip(pts.tolist(), z.tolist(), e)}

    def field(q, heights):
        return np.array([by_point[(*p, h)] for p, h in zip(q.tolist(), np.asarray(heights).tolist())])

    emf, lead = placed._emfs_from(wire, feeds, x, u, e)
    want_emf, want_lead = wire_emfs(wire, feeds, x, u, field)
    np.testing.assert_array_equal(emf, want_emf)
    if want_lead is None:
        assert lead is None
    else:
        np.testing.assert_array_equal(lead, want_lead)


def test_grounds_share_one_call_of_the_field_only_where_their_points_are_the_same_bits():
    # fields_ahead groups a spread's grounds by their points compared bit for bit (as their bytes were), not hashed
    import numpy as np

    from snrgain.model import placed

    a = np.array([[0.0, 1.5], [2.0, -3.0]])
    assert placed._same_bits(a, a.copy()) and placed._same_bits(a, a)
    assert not placed._same_bits(a, np.array([[-0.0, 1.5], [2.0, -3.0]]))  # equal values, other bits
    assert not placed._same_bits(a, a[:1]) and not placed._same_bits(a, a + 1e-12)
