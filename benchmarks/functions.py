"""Speed of the functions across markets and the holding rules: 20 markets x 10,000 days.

Each market trades on its own calendar (about 2 % of business days left out at random), so the
cross-sectional functions really line markets up by date. Prints min / median / max over
repeated single runs (not a test; shared machines are noisy):
- a whole run (Backtest built and run) of the two-average rule (target < 50 ms) and of a rule
  using ranking across markets and holding rules (target < 200 ms);
- the evaluation alone of each new function.
Inputs are generated (benchmark data only). Run: .venv/bin/python benchmarks/functions.py
"""

from __future__ import annotations

import platform
import statistics
import time
from collections.abc import Callable

import numpy as np
from engine import DAYS, MARKETS, make_inputs  # the sibling benchmark script

from hunchbook.core.engine import Backtest
from hunchbook.core.expr import parse_expression
from hunchbook.core.panel import build_panel
from hunchbook.core.rules.model import SizingSpec

REPEATS = 15
RULES = {
    "two averages": "sign(mean(close, 20) - mean(close, 100))",
    "rank, hold, stop": "stop(hold(cs_top(diff(close, 60), 4) - cs_bottom(diff(close, 60), 4), "
                        "20), 2, 25)",
    "rank, latch": "latch(sign(cs_rank(diff(close, 60) / std(diff(close, 1), 60))), "
                   "bars_since(abs(cs_zscore(diff(close, 5))) > 2) == 0)",
}
FUNCTIONS = ("cs_rank(close)", "cs_demean(close)", "cs_zscore(close)", "cs_top(close, 4)",
             "hold(sign(diff(close, 1)), 5)", "latch(sign(diff(close, 1)), diff(close, 1) > 1)",
             "bars_since(diff(close, 1) > 1)", "stop(sign(diff(close, 1)), 2, 25)")


def make_panel(seed: int = 11):
    """Generated continuous series on their own calendars with a roll every 63 bars."""
    return build_panel(*make_inputs(seed, own_calendars=True))


def timings(fn: Callable[[], object]) -> str:
    times = []
    for _ in range(REPEATS):
        t0 = time.perf_counter()
        fn()
        times.append((time.perf_counter() - t0) * 1000)
    return (f"min {min(times):7.1f}  median {statistics.median(times):7.1f}  "
            f"max {max(times):7.1f} ms")


def main() -> None:
    panel = make_panel()
    sizing = SizingSpec(contracts=1.0)
    print(f"machine: {platform.machine()}, {platform.python_implementation()} "
          f"{platform.python_version()}, numpy {np.__version__}")
    print(f"{MARKETS} markets x {DAYS:,} days on their own calendars "
          f"({len(panel.union_dates):,} dates in all); {REPEATS} repeats")
    print("whole run (Backtest built and run):")
    for label, rule in RULES.items():
        expr = parse_expression(rule, series_names={"close"}, param_names=())
        print(f"  {label:18s} {timings(lambda e=expr: Backtest(panel, e, sizing).run({}))}")
    print("evaluation of one function (no cache):")
    for text in FUNCTIONS:
        expr = parse_expression(text, series_names={"close"}, param_names=())
        print(f"  {text:50s} {timings(lambda e=expr: e.evaluate(panel.series, {}, date_index=panel.date_index))}")  # noqa: E501


if __name__ == "__main__":
    main()
