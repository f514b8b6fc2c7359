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
