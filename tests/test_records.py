"""snrgain.records.record: the same class as @dataclass makes, without compiling its methods."""

import copy
import dataclasses
import pickle
import sys
from dataclasses import FrozenInstanceError, field

import pytest

from snrgain.records import record


def _pair(frozen=True, **options):
    """The same class through @dataclass and through @record."""

    def body():
        class Point:
            x: float
            y: float = 2.0
            tags: tuple = field(default_factory=tuple)
            note: str = field(default="n", repr=False, compare=False)
            later: int = field(default=7, init=False)

        return Point

    made = dataclasses.dataclass(frozen=frozen, **options)(body())
    ours = record(frozen=frozen, **options)(body())
    return made, ours


def test_behaves_as_the_dataclass():
    made, ours = _pair()
    for args, kwargs in [((1.0,), {}), ((1.0, 3.0), {}), ((), {"x": 1.0, "tags": (1,)}), ((1.0,), {"note": "m"})]:
        a, b = made(*args, **kwargs), ours(*args, **kwargs)
        assert dataclasses.asdict(a) == dataclasses.asdict(b)
        assert repr(a) == repr(b) and hash(a) == hash(b)
    assert [f.name for f in dataclasses.fields(ours)] == [f.name for f in dataclasses.fields(made)]
    assert dataclasses.is_dataclass(ours)
    p = ours(1.0, tags=(1,))
    assert p == ours(1.0, tags=(1,), note="other")  # note is not compared, as with the dataclass
    assert p != ours(2.0, tags=(1,))
    assert hash(p) == hash(ours(1.0, tags=(1,))) == hash((1.0, 2.0, (1,), 7))  # the compared fields
    assert (p == made(1.0, tags=(1,))) is False  # another class: not equal
    assert ours(1.0).tags == () and ours(x=1.0).later == 7
    assert ours(1.0).later == 7
    assert dataclasses.replace(p, y=5.0) == ours(1.0, 5.0, (1,))


def test_frozen_and_errors_as_the_dataclass():
    made, ours = _pair()
    p = ours(1.0)
    with pytest.raises(FrozenInstanceError):
        p.x = 2.0
    with pytest.raises(FrozenInstanceError):
        del p.x
    with pytest.raises(TypeError, match="missing 1 required positional argument: 'x'"):
        ours()
    with pytest.raises(TypeError, match="unexpected keyword argument 'z'"):
        ours(1.0, z=2)
    with pytest.raises(TypeError, match="multiple values for argument 'x'"):
        ours(1.0, x=2.0)
    with pytest.raises(TypeError, match="positional arguments"):
        ours(1.0, 2.0, [], "n", 5)

    class Plain(ours):  # a plain subclass takes new attributes, not its fields (as the dataclass's)
        pass

    q = Plain(1.0)
    q.extra = 1
    assert q.extra == 1
    with pytest.raises(FrozenInstanceError):
        q.x = 3.0


def test_not_frozen_and_unhashable_as_the_dataclass():
    made, ours = _pair(frozen=False)
    p = ours(1.0)
    p.x = 4.0
    assert p == ours(4.0)
    assert ours.__hash__ is None and made.__hash__ is None


def test_post_init_inheritance_copy_and_pickle():
    @record
    class Base:
        a: int
        b: int = 1

        def __post_init__(self):
            object.__setattr__(self, "total", self.a + self.b)

    @record
    class Child(Base):
        c: int = 5

    k = Child(1, 2, 3)
    assert (k.a, k.b, k.c, k.total) == (1, 2, 3, 3)
    assert repr(k) == "test_post_init_inheritance_copy_and_pickle.<locals>.Child(a=1, b=2, c=3)"
    assert copy.copy(k) == k and copy.deepcopy(k) == k
    sys.modules[__name__].Child = Child  # picklable by name for the test
    Child.__qualname__ = "Child"
    try:
        assert pickle.loads(pickle.dumps(k)) == k
    finally:
        del sys.modules[__name__].Child


def test_own_methods_stay():
    @record
    class Own:
        a: int

        def __repr__(self):
            return "own"

        def __eq__(self, other):
            return True

        __hash__ = object.__hash__

    assert repr(Own(1)) == "own" and Own(1) == Own(2) and hash(Own(1)) != hash(Own(1))


def test_the_package_classes_are_records():
    """Every frozen dataclass of the modules a rank imports is made by record (@dataclass compiles six methods for
    each; a few mutable scratch ones, three each, may stay)."""
    import snrgain.model.pipeline  # noqa: F401
    import snrgain.outputs.output  # noqa: F401
    import snrgain.scenario  # noqa: F401
    import snrgain.tools.wiredesign  # noqa: F401

    made = [
        f"{name}.{k}"
        for name, mod in list(sys.modules.items())
        if name.startswith("snrgain.")
        for k, v in list(vars(mod).items())
        if isinstance(v, type)
        and v.__module__ == name
        and dataclasses.is_dataclass(v)
        and v.__dataclass_params__.frozen
    ]
    assert made == []


def test_is_frozen_sees_records_and_dataclasses():
    # what is kept by an object's identity (a placed source's key) needs to know it cannot change
    from dataclasses import dataclass

    from snrgain.records import is_frozen, record

    @record
    class R:
        a: int

    @record(frozen=False)
    class M:
        a: int

    @dataclass(frozen=True)
    class D:
        a: int

    @dataclass
    class E:
        a: int

    assert is_frozen(R(1)) and is_frozen(R) and is_frozen(D(1))
    assert not is_frozen(M(1)) and not is_frozen(E(1)) and not is_frozen(object())
