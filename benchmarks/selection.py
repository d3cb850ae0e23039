"""Speed of the selection statistics on a 10,000-day x 1,000-set sweep of daily net P&L.

Prints min / median / max over repeated single runs (not a test; shared machines are noisy) of
- ``effective_trials`` (correlation by one BLAS product, eigenvalues of 1,000 x 1,000) and
  ``walk_forward`` (defaults: 3-year trailing windows, 1-year periods) -- target: together at
  most 1 s added to a run;
- ``backtest_overfitting`` with 16 blocks (12,870 splits) -- target: at most 2 s.
The first call of each is timed apart (it pays one-off imports, e.g. scipy.stats for the PSR).
Inputs are generated (benchmark data only). Run: .venv/bin/python benchmarks/selection.py
"""

from __future__ import annotations

import os
import platform
import statistics
import time
from collections.abc import Callable

import numpy as np

from hunchbook.core.stats import backtest_overfitting, effective_trials, walk_forward

DAYS, SETS, REPEATS, SEED = 10_000, 1_000, 5, 20240601


def make_net(seed: int = SEED) -> np.ndarray:
    """Noise with a common factor, so the sets are correlated as neighbouring sets are."""
    rng = np.random.default_rng(seed)
    common = rng.standard_normal((DAYS, 1))
    return 100.0 * (0.6 * common + 0.8 * rng.standard_normal((DAYS, SETS)))


def timings(fn: Callable[[], object]) -> tuple[float, list[float]]:
    t0 = time.perf_counter()
    fn()
    first = time.perf_counter() - t0
    times = []
    for _ in range(REPEATS):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return first, times


def line(label: str, first: float, times: list[float], target: str = "") -> str:
    return (f"  {label:34s} min {min(times):6.3f}  median {statistics.median(times):6.3f}  "
            f"max {max(times):6.3f} s  (first call {first:6.3f} s)  {target}")


def main() -> None:
    net = make_net()
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, "
          f"{platform.python_implementation()} {platform.python_version()}, numpy {np.__version__}")
    print(f"{DAYS:,} days x {SETS:,} sets of daily net P&L (seed {SEED}); {REPEATS} repeats")
    first_e, eff = timings(lambda: effective_trials(net))
    first_w, walk = timings(lambda: walk_forward(net))
    first_p, pbo = timings(lambda: backtest_overfitting(net, splits=16))
    both = [a + b for a, b in zip(eff, walk, strict=True)]
    print(line("effective_trials", first_e, eff))
    print(line("walk_forward", first_w, walk))
    print(line("effective_trials + walk_forward", first_e + first_w, both, "target <= 1 s"))
    print(line("backtest_overfitting(splits=16)", first_p, pbo, "target <= 2 s"))
    result = effective_trials(net)
    print(f"  (effective trials {result.effective:.0f} of {result.raw}; "
          f"PBO {backtest_overfitting(net).pbo:.3f})")


if __name__ == "__main__":
    main()
