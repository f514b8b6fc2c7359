"""A bounded memo: results kept by key, the least recently used dropped past a size.

For what does not change between calls within a run (a termination search, the spreads, a layout's places): the
vertical's field tabulated against distance, a design's response alone, a feed line's EMFs.  One class for every
such store, so each says only its size and what its key holds."""

from __future__ import annotations

from collections import OrderedDict
from collections.abc import Callable, Hashable
from typing import Any

_MISSING = object()


class Memo:
    """Up to ``size`` results by key, and with ``max_bytes`` up to that many bytes of numpy arrays in them (the
    newest result is kept whatever its size); :meth:`get` makes a missing one with ``make()`` and keeps it."""

    def __init__(self, size: int, *, max_bytes: int | None = None):
        self.size = int(size)
        self.max_bytes = None if max_bytes is None else int(max_bytes)
        self._held: OrderedDict = OrderedDict()
        self._sizes: dict = {}
        self.nbytes = 0
        """Bytes of arrays held (counted when ``max_bytes`` is set)."""

    def get(self, key: Hashable, make: Callable[[], Any]) -> Any:
        held = self._held
        value = held.get(key, _MISSING)  # a hit hashes its key twice (here and to move it), not three times
        if value is not _MISSING:
            held.move_to_end(key)
            return value
        value = held[key] = make()
        if self.max_bytes is not None:
            self._sizes[key] = n = array_bytes(value)
            self.nbytes += n
        while len(held) > self.size or (self.max_bytes is not None and self.nbytes > self.max_bytes and len(held) > 1):
            old, _ = held.popitem(last=False)
            self.nbytes -= self._sizes.pop(old, 0)
        return value

    def __contains__(self, key: Hashable) -> bool:
        return key in self._held

    def __len__(self) -> int:
        return len(self._held)

    def clear(self) -> None:
        self._held.clear()
        self._sizes.clear()
        self.nbytes = 0


def array_bytes(value) -> int:
    """Bytes of the numpy arrays in ``value`` (an array, or tuples, lists and dicts of them; anything else 0)."""
    if hasattr(value, "nbytes") and hasattr(value, "dtype"):
        return int(value.nbytes)
    if isinstance(value, (tuple, list)):
        return sum(array_bytes(v) for v in value)
    if isinstance(value, dict):
        return sum(array_bytes(v) for v in value.values())
    return 0


def forget(*, lru_caches: bool = False) -> None:
    """Empty every Memo of a loaded snrgain or noisemodels module (and with ``lru_caches`` every functools cache
    there too): what a benchmark calls before a run that must pay for its own work, as the first of its kind in a
    process would.  Quadrature rules (snrgain.physics.quadrature) are kept: they are the same for every antenna."""
    import sys

    for name, module in list(sys.modules.items()):
        if not name.startswith(("snrgain", "noisemodels")):
            continue
        for value in list(vars(module).values()):
            if isinstance(value, Memo):
                value.clear()
            elif (
                lru_caches
                and callable(getattr(value, "cache_clear", None))
                and getattr(value, "__module__", None) != "snrgain.physics.quadrature"
            ):
                value.cache_clear()
