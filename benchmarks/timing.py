"""Timing shared by the benchmark scripts: seconds of repeated single runs (the scripts print
their min / median / max; nothing here is a test)."""

from __future__ import annotations

import statistics
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


def line(label: str, samples: list[float], width: int = 44) -> str:
    """One printed line: the label, then min / median / max seconds of repeated runs."""
    return (f"{label:<{width}} min {min(samples):6.3f}  median {statistics.median(samples):6.3f}"
            f"  max {max(samples):6.3f} s")
