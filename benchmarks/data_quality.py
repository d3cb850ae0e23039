"""Speed of the data check with its quality checks: 20 contract-level markets x 10 years
(2,520 business days, three monthly contracts listed each day, with open/high/low and volume).

Prints (not a test; shared machines are noisy) min / median / max seconds of the whole
``check_data_folder`` (reading every file, splicing it, the quality checks) and of the quality
checks alone on data already read (target: the whole check well under 1 s); and what the checks
add to a run: ``Study.data_findings`` (spliced series reused) on the 20 markets x 10,000 days of
``benchmarks/series.py``. Inputs are generated here and there (benchmark data only).
Run: .venv/bin/python benchmarks/data_quality.py
"""

from __future__ import annotations

import argparse
import platform
from pathlib import Path
from tempfile import TemporaryDirectory

import numpy as np
import pandas as pd
from series import TWO_AVERAGE  # the sibling benchmark scripts
from series import write_folder as write_long_folder
from timing import line, repeat_times

from hunchbook.api import Study
from hunchbook.core.data_check import check_data_folder
from hunchbook.core.data_quality import check_market_data
from hunchbook.core.prices import load_data

MARKETS, DAYS, LISTED = 20, 2_520, 3


def write_folder(folder: Path) -> None:
    """Monthly contracts on a geometric random walk, three listed each business day."""
    rng = np.random.default_rng(13)
    dates = pd.bdate_range("2014-01-01", periods=DAYS)
    expiries = pd.date_range(dates[0], dates[-1] + pd.DateOffset(months=LISTED + 1),
                             freq="MS") + pd.Timedelta(days=14)
    first = expiries.searchsorted(dates)
    library = []
    for j in range(MARKETS):
        level = 100 * np.exp(np.cumsum(rng.normal(0, 0.01, DAYS)))
        frames = []
        for k in range(LISTED):
            expiry = expiries[first + k]
            close = level * (1 + 0.002 * k)
            wide = np.abs(rng.normal(0, 0.005, (2, DAYS)))
            frames.append(pd.DataFrame({
                "date": dates.strftime("%Y-%m-%d"), "contract": expiry.strftime("C%Y%m"),
                "expiry": expiry.strftime("%Y-%m-%d"), "open": np.round(close, 4),
                "high": np.round(close * (1 + wide[0]), 4),
                "low": np.round(close * (1 - wide[1]), 4), "close": np.round(close, 4),
                "volume": rng.integers(100, 5000, DAYS)}))
        pd.concat(frames).to_csv(folder / f"M{j}.csv", index=False)
        library.append(f'[M{j}]\nmultiplier = 1000\ntick_size = 0.01\ncurrency = "USD"\n'
                       "commission = 1\nexchange_fee = 1\nregulatory_fee = 0\n"
                       "slippage_ticks = 1\n")
    (folder / "markets.toml").write_text("\n".join(library))



def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5, help="runs of each figure (default 5)")
    args = parser.parse_args()
    with TemporaryDirectory() as tmp:
        folder = Path(tmp)
        write_folder(folder)
        report = check_data_folder(folder)
        print(f"{MARKETS} markets x {DAYS:,} days x {LISTED} contracts listed; "
              f"{platform.python_implementation()} {platform.python_version()}; "
              f"{report.summary}; {len(report.findings)} findings")
        data = load_data(folder)
        print(line("data check (read, splice, quality)",
                   repeat_times(lambda: check_data_folder(folder), args.runs)))
        print(line("quality checks alone (data read)",
                   repeat_times(lambda: check_market_data(data), args.runs)))
    with TemporaryDirectory() as tmp:
        folder = Path(tmp)
        write_long_folder(folder)
        markets = ", ".join(f'"M{j}"' for j in range(20))
        text = f'name = "bench"\nmarkets = [{markets}]\n[signal]\nposition = "{TWO_AVERAGE}"\n'

        studies = [Study.from_text(text, folder) for _ in range(args.runs + 1)]
        found = len(studies[0].data_findings())
        print(line(f"a run's checks, 20 x 10,000 days ({found} findings)",
                   repeat_times(lambda: studies.pop().data_findings(), args.runs)))


if __name__ == "__main__":
    main()
