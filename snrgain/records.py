"""Records: the package's dataclasses, with their methods shared instead of compiled class by class.

``@dataclass`` writes each class's ``__init__``, ``__repr__``, ``__eq__``, ``__hash__`` (and, frozen,
``__setattr__`` and ``__delattr__``) as source text and compiles it when the class is made: about six compilations
a class, some 10 % of a warm ``snrgain rank``'s instructions for the sixty-odd classes it imports.  :func:`record`
makes the same dataclass (``dataclasses.fields``, ``replace``, ``asdict`` and ``is_dataclass`` see it as one) with
``dataclass(init=False, repr=False, eq=False)``, which compiles nothing, and gives it methods written once here that
read the class's fields: the same arguments (positional or by name, defaults, default factories, ``__post_init__``),
the same repr text, equality and hash (the fields' tuple, between instances of the same class) and, frozen, the same
``FrozenInstanceError``.  A method the class writes itself stays, as with ``@dataclass``.

Not covered (none of the package's classes use them): ``InitVar`` and ``ClassVar`` pseudo-fields, ``kw_only``,
``order``, ``slots``, ``unsafe_hash``, ``match_args``; a frozen record's instance holds its fields in its
``__dict__``.
"""

from __future__ import annotations

import reprlib
from dataclasses import MISSING, FrozenInstanceError, dataclass, field, fields
from typing import dataclass_transform

__all__ = ["field", "is_frozen", "record"]


@dataclass_transform(field_specifiers=(field,), frozen_default=True)
def record(cls=None, /, *, frozen: bool = True, eq: bool = True, repr: bool = True):  # noqa: A002 - @dataclass's names
    """``@dataclass(frozen=frozen, eq=eq, repr=repr)`` without compiling methods (module docstring); frozen by
    default.  Use as ``@record`` or ``@record(frozen=False)``."""

    def wrap(c):
        return _make(c, frozen=frozen, eq=eq, repr=repr)

    return wrap if cls is None else wrap(cls)


def is_frozen(obj) -> bool:
    """Whether ``obj`` (an instance or a class) is a frozen record or a frozen ``@dataclass``: its fields can not
    change after it is made, so what is worked from them may be kept by its identity."""
    cls = obj if isinstance(obj, type) else type(obj)
    if getattr(cls, "__record_frozen__", None) is not None:
        return True
    params = getattr(cls, "__dataclass_params__", None)
    return params is not None and bool(params.frozen)


def _make(cls, *, frozen: bool, eq: bool, repr: bool):  # noqa: A002
    own = dict(cls.__dict__)  # what the class writes itself (before the dataclass adds anything)
    cls = dataclass(cls, init=False, repr=False, eq=False)
    every = fields(cls)
    cls.__record_init__ = tuple((f.name, f.default, f.default_factory) for f in every if f.init)
    cls.__record_names__ = tuple(name for name, _, _ in cls.__record_init__)
    cls.__record_post__ = hasattr(cls, "__post_init__")  # as @dataclass: looked for when the class is made
    cls.__record_later__ = tuple(  # fields not in __init__ that have a default: set as @dataclass sets them
        (f.name, f.default, f.default_factory)
        for f in every
        if not f.init and (f.default is not MISSING or f.default_factory is not MISSING)
    )
    cls.__record_repr__ = tuple(f.name for f in every if f.repr)
    cls.__record_compare__ = tuple(f.name for f in every if f.compare)
    cls.__record_hash__ = tuple(f.name for f in every if (f.compare if f.hash is None else f.hash))
    cls.__record_fields__ = frozenset(f.name for f in every)
    if "__init__" not in own:
        cls.__init__ = _init
    if repr and "__repr__" not in own:
        cls.__repr__ = _repr
    if eq and "__eq__" not in own:
        cls.__eq__ = _eq
    if frozen:
        if "__setattr__" in own or "__delattr__" in own:
            raise TypeError(f"cannot overwrite __setattr__ or __delattr__ of frozen record {cls.__name__}")
        cls.__record_frozen__ = cls
        cls.__setattr__ = _frozen_setattr
        cls.__delattr__ = _frozen_delattr
    explicit_hash = "__hash__" in own and not (own["__hash__"] is None and "__eq__" in own)
    if eq and not explicit_hash:  # as @dataclass: frozen and compared, hashed by the fields; else unhashable
        cls.__hash__ = _hash if frozen else None
    return cls


def _init(self, *args, **kwargs):
    cls = type(self)
    d = self.__dict__
    names = cls.__record_names__
    if not kwargs and len(args) == len(names):  # every field given in order
        d.update(zip(names, args))
    elif not args and len(kwargs) == len(names) and all(n in kwargs for n in names):  # every field by name
        for n in names:
            d[n] = kwargs[n]
    else:
        _bind(cls, d, args, kwargs)
    for name, default, factory in cls.__record_later__:
        d[name] = default if default is not MISSING else factory()
    if cls.__record_post__:
        self.__post_init__()


def _bind(cls, d: dict, args: tuple, kwargs: dict) -> None:
    spec = cls.__record_init__
    if len(args) > len(spec):
        given = f"{len(spec) + 1} positional arguments but {len(args) + 1} were given"
        raise TypeError(f"{cls.__qualname__}.__init__() takes {given}")
    for i, (name, default, factory) in enumerate(spec):
        if i < len(args):
            if name in kwargs:
                raise TypeError(f"{cls.__qualname__}.__init__() got multiple values for argument '{name}'")
            d[name] = args[i]
        elif name in kwargs:
            d[name] = kwargs[name]
        elif default is not MISSING:
            d[name] = default
        elif factory is not MISSING:
            d[name] = factory()
        else:
            raise TypeError(f"{cls.__qualname__}.__init__() missing 1 required positional argument: '{name}'")
    unknown = [k for k in kwargs if k not in cls.__record_names__]
    if unknown:
        raise TypeError(f"{cls.__qualname__}.__init__() got an unexpected keyword argument '{unknown[0]}'")


@reprlib.recursive_repr()
def _repr(self) -> str:
    inner = ", ".join(f"{name}={getattr(self, name)!r}" for name in type(self).__record_repr__)
    return f"{type(self).__qualname__}({inner})"


def _eq(self, other):
    if other.__class__ is self.__class__:
        names = self.__record_compare__
        return tuple(getattr(self, n) for n in names) == tuple(getattr(other, n) for n in names)
    return NotImplemented


def _hash(self) -> int:
    return hash(tuple(getattr(self, n) for n in self.__record_hash__))


def _frozen_setattr(self, name, value):
    # as @dataclass's: a frozen record's own instances take no attribute; a plain subclass's take all but fields
    if type(self) is type(self).__record_frozen__ or name in self.__record_fields__:
        raise FrozenInstanceError(f"cannot assign to field {name!r}")
    object.__setattr__(self, name, value)


def _frozen_delattr(self, name):
    if type(self) is type(self).__record_frozen__ or name in self.__record_fields__:
        raise FrozenInstanceError(f"cannot delete field {name!r}")
    object.__delattr__(self, name)
