"""The window-function cache of a backtest: results shared by parameter sets, within a budget.

Parameter sets of a sweep share most of their window functions (``mean(close, 20)`` is the
same array for every set with ``fast = 20``). Keeping every result would let a long grid fill
the machine's memory, so the cache forgets the least recently used results beyond a budget of
bytes. It is never pickled with its contents: a worker process starts with an empty cache.
"""

from __future__ import annotations

from typing import Any

import numpy as np

#: Default budget of one backtest's cache (bytes).
CACHE_BYTES = 256 * 2**20


class WindowCache(dict):
    """A dict that keeps at most ``max_bytes`` of numpy arrays, forgetting the least recently
    used first (the newest entry is always kept, whatever its size)."""

    def __init__(self, max_bytes: int = CACHE_BYTES) -> None:
        super().__init__()
        self.max_bytes = max_bytes
        self.bytes = 0

    def __getitem__(self, key: Any) -> Any:
        value = super().pop(key)
        super().__setitem__(key, value)  # now the most recently used
        return value

    def __setitem__(self, key: Any, value: Any) -> None:
        if key in self:
            self.bytes -= _size(super().pop(key))
        super().__setitem__(key, value)
        self.bytes += _size(value)
        while self.bytes > self.max_bytes and len(self) > 1:
            self.bytes -= _size(super().pop(next(iter(self))))

    def __reduce__(self) -> tuple[Any, ...]:
        return (WindowCache, (self.max_bytes,))


def _size(value: Any) -> int:
    return value.nbytes if isinstance(value, np.ndarray) else 0
