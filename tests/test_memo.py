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
