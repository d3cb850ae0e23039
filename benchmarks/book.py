"""Cost of comparing a catalogue run with the book: decoding the promoted ideas' stored daily P&L
(what ``Catalogue.promoted_pnl`` does per idea after one SQL query) and computing the
correlations and the equal-risk book (``compare_with_book``), for 1, 5 and 20 promoted ideas of
18 years of business days each. Prints min / median / max over several repeats. Not a test.
Run: .venv/bin/python benchmarks/book.py
"""

from __future__ import annotations

import statistics
import time

import numpy as np
import pandas as pd

from hunchbook.core.book import PromotedPnl, compare_with_book
from hunchbook.store import pnl

REPEATS = 7
DAYS = 18 * 252


def _frame(rng: np.random.Generator) -> pd.DataFrame:
    net = rng.standard_normal(DAYS) * 1000.0
    cost = np.full(DAYS, 10.0)
    return pd.DataFrame({"gross_pnl": net + cost, "cost": cost, "net_pnl": net},
                        index=pd.bdate_range("2007-01-02", periods=DAYS, name="date"))


def main() -> None:
    rng = np.random.default_rng(0)
    run = _frame(rng)["net_pnl"]
    for count in (1, 5, 20):
        blobs = [pnl.encode(pnl.clean(_frame(rng))) for _ in range(count)]
        reads, comparisons = [], []
        for _ in range(REPEATS):
            t0 = time.perf_counter()
            promoted = [PromotedPnl(k, f"idea {k}", k, pnl.decode(b)["net_pnl"])
                        for k, b in enumerate(blobs)]
            t1 = time.perf_counter()
            compare_with_book(run, promoted)
            t2 = time.perf_counter()
            reads.append(t1 - t0)
            comparisons.append(t2 - t1)
        for label, times in (("decode", reads), ("compare", comparisons)):
            print(f"{count:>2} promoted, {label:<8} min {1000 * min(times):6.1f} ms  median "
                  f"{1000 * statistics.median(times):6.1f} ms  max {1000 * max(times):6.1f} ms")


if __name__ == "__main__":
    main()
