"""Metrics of every set of a sweep at once, vectorised over the sets.

Gives, per set, the same figures as :func:`hunchbook.core.metrics.summarise` for the
portfolio, and per market the totals, Sharpe ratios, contracts and break-even cost.
"""

from __future__ import annotations

import math

import numpy as np

from hunchbook.core.metrics import CALENDAR_DAYS_PER_YEAR, DAYS_PER_YEAR
from hunchbook.core.sweep import SweepOutcome


def column_stats(x: np.ndarray, used: np.ndarray) -> dict[str, np.ndarray]:
    """Per column of daily P&L ``x`` (dates, sets), over the dates marked ``used``.

    Unused entries must be zero. Returns total, ann_mean, ann_vol, sharpe, t_stat and
    max_drawdown arrays, as :func:`hunchbook.core.metrics.pnl_stats` defines them.
    """
    n = used.sum(axis=0)
    total = x.sum(axis=0)
    with np.errstate(divide="ignore", invalid="ignore"):
        mean = total / n
        dev = np.where(used, x - mean, 0.0)
        sd = np.sqrt(np.einsum("ij,ij->j", dev, dev) / (n - 1))
        sharpe = np.where(sd > 0, mean / sd * math.sqrt(DAYS_PER_YEAR), np.nan)
        t_stat = np.where(sd > 0, mean / (sd / np.sqrt(n)), np.nan)
    equity = np.cumsum(x, axis=0)
    peak = np.maximum(np.maximum.accumulate(equity, axis=0), 0.0)
    drawdown = np.max(peak - equity, axis=0, initial=0.0)
    return {"total": total, "ann_mean": mean * DAYS_PER_YEAR,
            "ann_vol": sd * math.sqrt(DAYS_PER_YEAR), "sharpe": sharpe, "t_stat": t_stat,
            "max_drawdown": drawdown}


def summarise_sweep(outcome: SweepOutcome) -> list[dict[str, object]]:
    """One metrics dict per set: ``{"portfolio": {...}, "markets": {market: {...}}}``."""
    used = outcome.used
    gross = column_stats(outcome.gross, used)
    net = column_stats(outcome.net, used)
    has = used.any(axis=0)
    first = used.argmax(axis=0)
    last = len(used) - 1 - used[::-1].argmax(axis=0)
    dates = outcome.dates
    span = (dates[last] - dates[first]).astype(np.int64) + 1
    years = np.where(has, span / CALENDAR_DAYS_PER_YEAR, np.nan)
    cost_total = outcome.cost.sum(axis=0)
    year_of = dates.astype("datetime64[Y]").astype(np.int64) + 1970
    starts = np.flatnonzero(np.r_[True, year_of[1:] != year_of[:-1]])
    yearly = np.add.reduceat(outcome.cost, starts, axis=0)
    year_used = np.logical_or.reduceat(used, starts, axis=0)
    markets = _market_figures(outcome)
    summaries = []
    with np.errstate(divide="ignore", invalid="ignore"):
        per_year_contracts = outcome.contracts / years
        per_year_trades = outcome.trades / years
        share = np.where(gross["total"] != 0, cost_total / gross["total"], np.nan)
        break_even = np.where(outcome.contracts > 0, gross["total"] / outcome.contracts, np.nan)
    for k in range(len(outcome.sets)):
        portfolio = {
            "days": int(used[:, k].sum()),
            "first_date": str(dates[first[k]]) if has[k] else None,
            "last_date": str(dates[last[k]]) if has[k] else None,
            "years": float(years[k]),
            "gross": {name: float(v[k]) for name, v in gross.items()},
            "net": {name: float(v[k]) for name, v in net.items()},
            "trades": float(outcome.trades[k]),
            "trades_per_year": float(per_year_trades[k]),
            "contracts_traded": float(outcome.contracts[k]),
            "contracts_per_year": float(per_year_contracts[k]),
            "cost_total": float(cost_total[k]),
            "cost_per_year": {str(int(year_of[s])): float(yearly[i, k])
                              for i, s in enumerate(starts) if year_used[i, k]},
            "cost_share_of_gross": float(share[k]),
            "break_even_cost": float(break_even[k]),
        }
        summaries.append({"portfolio": portfolio,
                          "markets": {m: {key: float(v[k, j]) if key not in ("gross", "net")
                                          else {s: float(x[k, j]) for s, x in v.items()}
                                          for key, v in markets.items()}
                                      for j, m in enumerate(outcome.markets)}})
    return summaries


def _market_figures(o: SweepOutcome) -> dict[str, object]:
    """Per (set, market): gross/net total and Sharpe, cost, contracts per year, break-even."""
    n = o.market_days
    net_total = o.market_gross - o.market_cost
    with np.errstate(divide="ignore", invalid="ignore"):
        def sharpe(total: np.ndarray, sum_sq: np.ndarray) -> np.ndarray:
            mean = total / n
            var = (sum_sq - n * mean * mean) / (n - 1)
            sd = np.sqrt(np.maximum(var, 0.0))
            return np.where(sd > 0, mean / sd * math.sqrt(DAYS_PER_YEAR), np.nan)

        years = o.market_span_days / CALENDAR_DAYS_PER_YEAR
        return {
            "gross": {"total": o.market_gross, "sharpe": sharpe(o.market_gross,
                                                                o.market_gross_sq)},
            "net": {"total": net_total, "sharpe": sharpe(net_total, o.market_net_sq)},
            "cost_total": o.market_cost,
            "contracts_traded": o.market_contracts,
            "contracts_per_year": np.where(years > 0, o.market_contracts / years, np.nan),
            "break_even_cost": np.where(o.market_contracts > 0,
                                        o.market_gross / o.market_contracts, np.nan),
        }
