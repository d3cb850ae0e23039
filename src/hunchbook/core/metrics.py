"""Summary metrics of a daily P&L table, for gross and net P&L."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from hunchbook.core.periods import CALENDAR_DAYS_PER_YEAR, DAYS_PER_YEAR


def pnl_stats(pnl: pd.Series | np.ndarray) -> dict[str, float]:
    """Statistics of one daily P&L series (currency units per day).

    Returns total, annualised mean (x252), annualised volatility (sample std x sqrt 252),
    Sharpe ratio (their quotient), t-statistic of the mean daily P&L and the maximum
    drawdown (largest fall of cumulative P&L from a running peak, as a positive amount).
    Undefined figures (too few days, zero volatility) are NaN.
    """
    x = np.asarray(pnl, dtype=float)
    n = x.size
    mean = x.mean() if n else math.nan
    sd = x.std(ddof=1) if n > 1 else math.nan
    sharpe = mean / sd * math.sqrt(DAYS_PER_YEAR) if sd > 0 else math.nan
    t_stat = mean / (sd / math.sqrt(n)) if sd > 0 else math.nan
    return {
        "total": float(x.sum()),
        "ann_mean": float(mean * DAYS_PER_YEAR),
        "ann_vol": float(sd * math.sqrt(DAYS_PER_YEAR)),
        "sharpe": float(sharpe),
        "t_stat": float(t_stat),
        "max_drawdown": max_drawdown(x),
    }


def max_drawdown(pnl: np.ndarray) -> float:
    """Largest fall of cumulative P&L from its running peak (the start counts as a peak of 0)."""
    if pnl.size == 0:
        return 0.0
    equity = np.concatenate(([0.0], np.cumsum(pnl)))
    return float(np.max(np.maximum.accumulate(equity) - equity))


def summarise(daily: pd.DataFrame) -> dict[str, object]:
    """Gross and net statistics plus trading and cost figures of a daily table.

    ``daily`` is indexed by date with columns ``gross_pnl``, ``cost``, ``net_pnl``,
    ``contracts_traded`` and ``trades`` (changes of whole contracts held, one per market and
    day: see :attr:`hunchbook.core.engine.EngineOutput.trades`).
    The break-even cost is the cost per contract at which net P&L would be zero:
    gross P&L / contracts traded.
    """
    days = len(daily)
    if days:
        span = (daily.index[-1] - daily.index[0]).days + 1
        years = span / CALENDAR_DAYS_PER_YEAR
    else:
        years = math.nan
    gross_total = float(daily["gross_pnl"].sum())
    cost_total = float(daily["cost"].sum())
    contracts = float(daily["contracts_traded"].sum())
    trades = float(daily["trades"].sum())
    yearly = daily["cost"].groupby(daily.index.year).sum()
    return {
        "days": days,
        "first_date": daily.index[0].date().isoformat() if days else None,
        "last_date": daily.index[-1].date().isoformat() if days else None,
        "years": years,
        "gross": pnl_stats(daily["gross_pnl"]),
        "net": pnl_stats(daily["net_pnl"]),
        "trades": trades,
        "trades_per_year": trades / years if days else math.nan,
        "contracts_traded": contracts,
        "contracts_per_year": contracts / years if days else math.nan,
        "cost_total": cost_total,
        "cost_per_year": {str(int(y)): float(c) for y, c in yearly.items()},
        "cost_share_of_gross": cost_total / gross_total if gross_total else math.nan,
        "break_even_cost": gross_total / contracts if contracts else math.nan,
    }
