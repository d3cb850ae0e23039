"""Speed of the desk-wide multiple testing (Harvey & Liu 2015 haircut).

Prints min / median / max over repeated runs (not a test; shared machines are noisy) of
- ``sharpe_haircut`` with the other tests simulated (the Harvey-Liu-Zhu model, 2,000 draws)
  for M = 10, 100, 1,000 and 10,000 ideas tested;
- ``sharpe_haircut`` with the other tests' p-values known (no simulation), M = 1,000;
- ``load_desk_report`` on the invented demo catalogue (the catalogue query and the haircuts).
The first call is timed apart (it pays the import of scipy.stats).
Run: .venv/bin/python benchmarks/desk.py
"""

from __future__ import annotations

import os
import platform
import statistics
import time
from collections.abc import Callable

import numpy as np

from hunchbook.core.stats.haircut import sharpe_haircut
from hunchbook.desk import load_desk_report

REPEATS = 7


def timings(fn: Callable[[], object], repeats: int = REPEATS) -> tuple[float, list[float]]:
    t0 = time.perf_counter()
    fn()
    first = time.perf_counter() - t0
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return first, times


def line(label: str, first: float, times: list[float]) -> str:
    return (f"  {label:44s} min {min(times):7.4f}  median {statistics.median(times):7.4f}  "
            f"max {max(times):7.4f} s  (first call {first:6.3f} s)")


def main() -> None:
    from hunchbook.demo.build import CATALOGUE_FILE, built_demo

    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, "
          f"{platform.python_implementation()} {platform.python_version()}, numpy {np.__version__}")
    print(f"{REPEATS} repeats; SR 1.0 over 10 years")
    for tests in (10, 100, 1_000, 10_000):
        first, times = timings(lambda m=tests: sharpe_haircut(1.0, 10.0, m))
        print(line(f"simulated others, M = {tests:,}, 2,000 draws", first, times))
    others = np.random.default_rng(1).uniform(0, 1, 999)
    first, times = timings(lambda: sharpe_haircut(1.0, 10.0, 1_000, others=others))
    print(line("known others, M = 1,000", first, times))
    demo = built_demo() / CATALOGUE_FILE
    first, times = timings(lambda: load_desk_report(demo, "month"))
    print(line("load_desk_report, demo catalogue", first, times))


if __name__ == "__main__":
    main()
