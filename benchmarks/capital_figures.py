"""Cost of the figures against a capital that every run record now carries
(``capital_figures``: returns, volatility, both drawdowns with their lengths and the
year-by-year table) and of the monthly table computed on demand (``monthly_returns``), for 10,
25 and 40 years of business days. Prints min / median / max over several repeats. Not a test.
Run: .venv/bin/python benchmarks/capital_figures.py
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
from timing import line, repeat_times  # noqa: E402

from hunchbook.core.capital_figures import capital_figures, monthly_returns  # noqa: E402

REPEATS = 9


def _daily(years: int) -> pd.DataFrame:
    rng = np.random.default_rng(years)
    days = years * 252
    gross = rng.standard_normal(days) * 1000.0 + 30.0
    cost = np.full(days, 10.0)
    return pd.DataFrame({"gross_pnl": gross, "cost": cost, "net_pnl": gross - cost},
                        index=pd.bdate_range("1990-01-02", periods=days, name="date"))


def main() -> None:
    for years in (10, 25, 40):
        daily = _daily(years)
        print(line(f"capital_figures, {years} years",
                   repeat_times(lambda d=daily: capital_figures(d, 1e6), REPEATS)))
        print(line(f"monthly_returns, {years} years",
                   repeat_times(lambda d=daily: monthly_returns(d["net_pnl"], 1e6), REPEATS)))


if __name__ == "__main__":
    main()
