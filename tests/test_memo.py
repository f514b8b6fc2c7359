"""snrgain.memo.Memo: the bounded store the field tables, a design's response alone and feed-line EMFs are kept in."""

from snrgain.memo import Memo


def test_a_result_is_made_once_and_the_least_recently_used_goes_first():
    made = []
    m = Memo(2)

    def make(k):
        return lambda: made.append(k) or k * 10

    assert m.get("a", make("a")) == "a" * 10
    assert m.get("b", make("b")) == "b" * 10
    assert m.get("a", make("a")) == "a" * 10  # kept, and now the most recent
    m.get("c", make("c"))  # past the size: "b", the least recently used, goes
    assert len(m) == 2
    m.get("a", make("a"))
    m.get("b", make("b"))
    assert made == ["a", "b", "c", "b"]


def test_forget_empties_the_stores_and_keeps_the_quadrature_rules():
    # what the benchmark calls before a "first of its kind" run: every Memo and functools cache of the package is
    # emptied, except the Gauss-Legendre rules (constants, the same for every antenna)
    from snrgain.antennas import termloop
    from snrgain.memo import forget
    from snrgain.physics import scatter
    from snrgain.physics.quadrature import gauss_legendre

    scatter._TABLES.get(("test",), lambda: 1)
    gauss_legendre(7)
    termloop._loop_constants(((0.0, 1.0), (0.0, 2.0), (1.0, 2.0)), ((0.0, 1.0), (1.0, 1.0), (1.0, 2.0)), 0.001, -1.0)
    forget()
    assert len(scatter._TABLES) == 0 and termloop._loop_constants.cache_info().currsize > 0
    forget(lru_caches=True)
    assert termloop._loop_constants.cache_info().currsize == 0
    assert gauss_legendre.cache_info().currsize > 0


def test_a_memo_with_a_byte_bound_drops_the_oldest_arrays_past_it():
    import numpy as np

    from snrgain.memo import Memo, array_bytes

    m = Memo(100, max_bytes=3000)
    for k in range(5):  # 1,000 bytes each (125 float64): three fit
        m.get(k, lambda: (np.zeros(125), {"x": 1}))
    assert len(m) == 3 and 0 not in m and 1 not in m and 4 in m
    assert m.nbytes == 3000 == sum(array_bytes(m.get(k, lambda: None)) for k in (2, 3, 4))
    m.get("big", lambda: np.zeros(1000))  # larger than the bound alone: kept, the others dropped
    assert len(m) == 1 and "big" in m and m.nbytes == 8000
    m.clear()
    assert len(m) == 0 and m.nbytes == 0
