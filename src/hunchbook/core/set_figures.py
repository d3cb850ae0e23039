"""Every set's portfolio figures over its own history, computed chunk by chunk of a sweep.

A chunk's daily rows (one row per set, one column per day of the union of dates) become a
:class:`SetFigures` of one value per set; the chunks' figures are joined in grid order with
:meth:`SetFigures.join`. The figures are those of :func:`hunchbook.core.metrics.summarise`
for the portfolio (days are the set's own rows, not the sweep's common period).
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from hunchbook.core.periods import CALENDAR_DAYS_PER_YEAR, DAYS_PER_YEAR


@dataclass(frozen=True, eq=False)
class SetFigures:
    """One value per set (arrays of equal length, in set order).

    ``first_day`` and ``end_day`` bound each set's result rows on the union of dates
    (``[first_day, end_day)``; a set without rows has 0 and the number of days, so that it
    never narrows the sweep's common period).
    """

    days: np.ndarray
    first_day: np.ndarray
    end_day: np.ndarray
    years: np.ndarray
    gross_total: np.ndarray
    gross_sharpe: np.ndarray
    net_total: np.ndarray
    net_sharpe: np.ndarray
    net_max_drawdown: np.ndarray
    trades: np.ndarray
    contracts_traded: np.ndarray
    cost_total: np.ndarray

    def __len__(self) -> int:
        return len(self.days)

    @property
    def trades_per_year(self) -> np.ndarray:
        """Trades (changes of whole contracts held, one per market and day) per year of the
        set's own history."""
        with np.errstate(divide="ignore", invalid="ignore"):
            return self.trades / self.years

    @property
    def contracts_per_year(self) -> np.ndarray:
        """Contracts traded per year of the set's own history."""
        with np.errstate(divide="ignore", invalid="ignore"):
            return self.contracts_traded / self.years

    @property
    def break_even_cost(self) -> np.ndarray:
        """Gross P&L per contract traded (NaN without trades)."""
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(self.contracts_traded > 0,
                            self.gross_total / self.contracts_traded, np.nan)

    def row(self, k: int) -> dict[str, float]:
        """Set k's figures as the run record's set summary reads them."""
        return {"gross_sharpe": float(self.gross_sharpe[k]),
                "net_sharpe": float(self.net_sharpe[k]),
                "gross_total": float(self.gross_total[k]), "net_total": float(self.net_total[k]),
                "net_max_drawdown": float(self.net_max_drawdown[k]),
                "trades_per_year": float(self.trades_per_year[k]),
                "contracts_per_year": float(self.contracts_per_year[k]),
                "cost_total": float(self.cost_total[k]),
                "break_even_cost": float(self.break_even_cost[k])}

    @classmethod
    def join(cls, parts: Sequence[SetFigures]) -> SetFigures:
        """The figures of consecutive chunks, in order."""
        return cls(**{f.name: np.concatenate([getattr(p, f.name) for p in parts])
                      for f in dataclasses.fields(cls)})


def set_figures(gross: np.ndarray, cost: np.ndarray, used: np.ndarray, trades: np.ndarray,
                contracts: np.ndarray, dates: np.ndarray) -> SetFigures:
    """Figures of a chunk of sets from their daily rows.

    Parameters
    ----------
    gross, cost
        (sets, days) daily portfolio gross P&L and cost on the union of dates (zero where a set
        has no row).
    used
        (sets, days) True on the days a set has a result row.
    trades, contracts
        (sets,) trades (changes of whole contracts held, one per market and day) and
        contracts traded.
    dates
        (days,) the union of dates (``datetime64[D]``).
    """
    n_days = used.shape[1]
    has = used.any(axis=1)
    first = np.where(has, used.argmax(axis=1), 0)
    end = np.where(has, n_days - used[:, ::-1].argmax(axis=1), n_days)
    span = np.where(has, (dates[end - 1] - dates[first]).astype(np.int64) + 1, 0)
    net = gross - cost
    g, n = _row_stats(gross, used), _row_stats(net, used)
    return SetFigures(
        days=used.sum(axis=1), first_day=first, end_day=end,
        years=np.where(has, span / CALENDAR_DAYS_PER_YEAR, np.nan),
        gross_total=g["total"], gross_sharpe=g["sharpe"], net_total=n["total"],
        net_sharpe=n["sharpe"], net_max_drawdown=_max_drawdown(net),
        trades=np.asarray(trades, dtype=float), contracts_traded=np.asarray(contracts, float),
        cost_total=cost.sum(axis=1))


def _row_stats(x: np.ndarray, used: np.ndarray) -> Mapping[str, np.ndarray]:
    """Total and annualised Sharpe ratio (sample sd, ddof 1) of each row over its used days."""
    n = used.sum(axis=1)
    total = x.sum(axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        mean = total / n
        dev = np.where(used, x - mean[:, None], 0.0)
        sd = np.sqrt(np.einsum("ij,ij->i", dev, dev) / (n - 1))
        sharpe = np.where(sd > 0, mean / sd * math.sqrt(DAYS_PER_YEAR), np.nan)
    return {"total": total, "sharpe": sharpe}


def _max_drawdown(x: np.ndarray) -> np.ndarray:
    """Largest fall of each row's cumulative P&L from its running peak (the start a peak of 0)."""
    equity = np.cumsum(x, axis=1)
    peak = np.maximum(np.maximum.accumulate(equity, axis=1), 0.0)
    return np.max(peak - equity, axis=1, initial=0.0)
