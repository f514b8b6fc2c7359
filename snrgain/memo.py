"""A bounded memo: results kept by key, the least recently used dropped past a size.

For what does not change between calls within a run (a termination search, the spreads, a layout's places): the
vertical's field tabulated against distance, a design's response alone, a feed line's EMFs.  One class for every
such store, so each says only its size and what its key holds."""

from __future__ import annotations

from collections import OrderedDict
from collections.abc import Callable, Hashable
from typing import Any


class Memo:
    """Up to ``size`` results by key; :meth:`get` makes a missing one with ``make()`` and keeps it."""

    def __init__(self, size: int):
        self.size = int(size)
        self._held: OrderedDict = OrderedDict()

    def get(self, key: Hashable, make: Callable[[], Any]) -> Any:
        held = self._held
        if key in held:
            held.move_to_end(key)
            return held[key]
        value = held[key] = make()
        while len(held) > self.size:
            held.popitem(last=False)
        return value

    def __contains__(self, key: Hashable) -> bool:
        return key in self._held

    def __len__(self) -> int:
        return len(self._held)

    def clear(self) -> None:
        self._held.clear()


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
