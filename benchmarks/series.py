"""Speed of the series a rule reads beyond prices: curve and carry, the calendar, another
market's series and events, for 20 contract-level markets x 10,000 days.

Prints (not a test; shared machines are noisy): the time to prepare a study (continuous series
and the series the rule reads, from files already read) for a two-average rule and for a rule
reading carry, the calendar, another market and an event, and one engine run of each.
Inputs are generated (benchmark data only). Run: .venv/bin/python benchmarks/series.py
"""

from __future__ import annotations

import platform
import time
from pathlib import Path
from tempfile import TemporaryDirectory

import numpy as np
import pandas as pd

from hunchbook.api import Study
from hunchbook.core.prices import load_data
from hunchbook.core.rules import parse_rules

MARKETS, DAYS, LISTED = 20, 10_000, 3
TWO_AVERAGE = "sign(mean(close, 20) - mean(close, 100))"
CURVE_RULE = ('sign(mean(carry, 20)) * (days_to_month_end > 2) * (1 - event("report")) '
              '+ sign(close - mean(close["M0"], 50))')


def write_folder(folder: Path) -> None:
    """Monthly contracts, three listed on each business day, and a monthly report event."""
    rng = np.random.default_rng(11)
    dates = pd.bdate_range("1985-01-01", periods=DAYS)
    expiries = pd.date_range(dates[0], dates[-1] + pd.DateOffset(months=LISTED + 1),
                             freq="MS") + pd.Timedelta(days=14)
    first = expiries.searchsorted(dates)  # first contract not yet expired on each date
    library = []
    for j in range(MARKETS):
        level = 100 + np.cumsum(rng.normal(0, 1, DAYS))
        frames = []
        for k in range(LISTED):
            expiry = expiries[first + k]
            frames.append(pd.DataFrame({
                "date": dates.strftime("%Y-%m-%d"), "contract": expiry.strftime("C%Y%m"),
                "expiry": expiry.strftime("%Y-%m-%d"),
                "close": np.round(level + 0.3 * k * rng.choice([-1, 1]), 2),
                "volume": rng.integers(100, 5000, DAYS), "open_interest": 10_000 - 2000 * k}))
        pd.concat(frames).to_csv(folder / f"M{j}.csv", index=False)
        library.append(f'[M{j}]\nmultiplier = 1000\ntick_size = 0.01\ncurrency = "USD"\n'
                       "commission = 1\nexchange_fee = 1\nregulatory_fee = 0\n"
                       "slippage_ticks = 1\n")
    (folder / "markets.toml").write_text("\n".join(library))
    reports = dates[dates.is_month_start | (dates.day == 15)][::2]
    pd.DataFrame({"date": reports.strftime("%Y-%m-%d"), "event": "report"}).to_csv(
        folder / "events.csv", index=False)


def best_of(fn, repeats: int) -> tuple[float, object]:
    best, out = float("inf"), None
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def main() -> None:
    with TemporaryDirectory() as name:
        folder = Path(name)
        write_folder(folder)
        data = load_data(folder)
        markets = ", ".join(f'"M{j}"' for j in range(MARKETS))
        print(f"machine: {platform.machine()}, {platform.python_implementation()} "
              f"{platform.python_version()}, numpy {np.__version__}, pandas {pd.__version__}")
        print(f"{MARKETS} contract-level markets x {DAYS:,} days, {LISTED} contracts listed")
        for label, rule in (("two-average rule", TWO_AVERAGE), ("curve rule", CURVE_RULE)):
            text = f"name = 'b'\nmarkets = [{markets}]\n[signal]\nposition = '{rule}'\n"
            spec = parse_rules(text)
            prepare_s, study = best_of(lambda spec=spec: Study(spec, data), 3)
            run_s, _ = best_of(lambda study=study: study.backtest.run({}), 7)
            print(f"{label:18s} prepare (best of 3): {prepare_s * 1000:7.1f} ms   "
                  f"run (best of 7): {run_s * 1000:6.1f} ms")
        print(f"curve rule: {CURVE_RULE}")


if __name__ == "__main__":
    main()
