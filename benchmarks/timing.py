"""Timing shared by the benchmark scripts: seconds of repeated single runs (the scripts print
their min / median / max; nothing here is a test)."""

from __future__ import annotations

import time
from collections.abc import Callable


def repeat_times(work: Callable[[], object], repeats: int) -> list[float]:
    """Seconds each of ``repeats`` calls of ``work`` took."""
    out = []
    for _ in range(repeats):
        start = time.perf_counter()
        work()
        out.append(time.perf_counter() - start)
    return out
