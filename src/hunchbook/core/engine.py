"""The quick-run engine: positions from a signal, daily P&L without and with costs.

Semantics, per market (t counts that market's own bars):

- ``pos[t]`` = contracts x position expression at the close of t, traded at that close
  (``delay`` k: the position computed at t is traded k closes later);
- P&L on t = ``pos[t-1] * change[t] * multiplier``, ``change`` being the price change of the
  contract held at the close of t-1 (never the back-adjusted series);
- contracts traded on t = ``|pos[t] - pos[t-1]|``, or ``|pos[t-1]| + |pos[t]|`` on a roll date;
- cost = contracts traded x cost per contract; net = gross - cost;
- rows start at the first bar on which the position is defined (and not before ``start``);
  an undefined position later on means flat.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from hunchbook.core.expr import Expression, parse_expression
from hunchbook.core.panel import Panel
from hunchbook.core.rules.model import SizingSpec

#: Trading days per year used to annualise.
DAYS_PER_YEAR = 252
#: Columns of the per-market daily P&L table.
PNL_COLUMNS = ("date", "market", "contract", "position", "price_change", "gross_pnl",
               "contracts_traded", "cost", "net_pnl")


@dataclass(frozen=True)
class EngineOutput:
    """Daily arrays of one parameter set, shaped ``(bars, markets)`` like the panel.

    ``rows`` marks the bars that are part of the result; outside it every figure is zero.
    """

    panel: Panel
    params: dict[str, float]
    position: np.ndarray
    gross: np.ndarray
    traded: np.ndarray
    cost: np.ndarray
    rows: np.ndarray

    @property
    def net(self) -> np.ndarray:
        """Net P&L: gross minus cost."""
        return self.gross - self.cost

    def portfolio(self) -> pd.DataFrame:
        """Daily portfolio figures summed over markets on the union of their dates."""
        p = self.panel
        idx = p.date_index[self.rows]
        used = np.zeros(len(p.union_dates), dtype=bool)
        used[idx] = True
        n = len(p.union_dates)

        def total(values: np.ndarray) -> np.ndarray:
            return np.bincount(idx, weights=values[self.rows], minlength=n)[used]

        return pd.DataFrame({
            "gross_pnl": total(self.gross), "cost": total(self.cost),
            "net_pnl": total(self.net), "contracts_traded": total(self.traded),
            "trades": total((self.traded > 0).astype(float)),
        }, index=pd.DatetimeIndex(p.union_dates[used], name="date"))

    def market_frame(self, j: int) -> pd.DataFrame:
        """Daily figures of market ``j`` (its own rows only), indexed by date."""
        r = self.rows[:, j]
        p = self.panel
        return pd.DataFrame({
            "gross_pnl": self.gross[r, j], "cost": self.cost[r, j], "net_pnl": self.net[r, j],
            "contracts_traded": self.traded[r, j],
            "trades": (self.traded[r, j] > 0).astype(float),
        }, index=pd.DatetimeIndex(p.dates[r, j], name="date"))

    def pnl_table(self) -> pd.DataFrame:
        """One row per (date, market) with the columns of :data:`PNL_COLUMNS`."""
        p = self.panel
        r, j = np.nonzero(self.rows)
        table = pd.DataFrame({
            "date": pd.DatetimeIndex(p.dates[r, j]),
            "market": np.asarray(p.markets, dtype=object)[j],
            "contract": p.contract[r, j],
            "position": self.position[r, j],
            "price_change": p.change[r, j],
            "gross_pnl": self.gross[r, j],
            "contracts_traded": self.traded[r, j],
            "cost": self.cost[r, j],
            "net_pnl": self.net[r, j],
        })
        return table.sort_values(["date", "market"], kind="stable").reset_index(drop=True)


class Backtest:
    """One rule over one panel, ready to run any of its parameter sets.

    Everything the parameter sets share is computed once here: the result window, each
    market's price change times its multiplier, the roll cells, the volatility-target
    contract counts, and (through ``cache``) every window function the sets have in common.

    Parameters
    ----------
    panel
        Markets' continuous series and contract specifications.
    position
        The signal expression; its value times the contract count is the position.
    sizing
        Fixed contracts or a volatility target.
    delay
        Trade the position this many closes after it is computed.
    start, end
        Optional window of result rows (signals still read the bars before ``start``).
    """

    def __init__(self, panel: Panel, position: Expression, sizing: SizingSpec, *,
                 delay: int = 0, start: dt.date | None = None,
                 end: dt.date | None = None) -> None:
        self.panel = panel
        self.position = position
        self.delay = delay
        self.cache: dict[Any, Any] = {}
        window = panel.valid.copy()
        if start is not None:
            window &= panel.dates >= np.datetime64(start, "D")
        if end is not None:
            window &= panel.dates <= np.datetime64(end, "D")
        self.window = window
        self.change_value = np.where(window, panel.change, 0.0) * panel.multiplier
        self.roll_cells = np.flatnonzero(panel.roll & window)
        self.contracts = _contracts(panel, sizing, self.cache)
        self._bar = np.arange(window.shape[0])[:, None]

    def run(self, params: Mapping[str, float]) -> EngineOutput:
        """Run one parameter set: positions, gross P&L, contracts traded and costs."""
        signal = self.position.evaluate(self.panel.series, params, self.cache)
        target = np.broadcast_to(signal * self.contracts, self.window.shape)
        if self.delay:
            shifted = np.full(target.shape, np.nan)
            shifted[self.delay:] = target[:-self.delay]
            target = shifted
        defined = ~np.isnan(target) & self.window
        first = np.where(defined.any(axis=0), defined.argmax(axis=0), len(self._bar))
        rows = self.window & (self._bar >= first)  # from the first defined bar on
        pos = np.where(defined & rows, target, 0.0)  # undefined later on: flat
        prev = np.empty_like(pos)
        prev[0] = 0.0
        prev[1:] = pos[:-1]
        gross = prev * self.change_value
        traded = np.abs(pos - prev)
        cells = self.roll_cells
        traded.flat[cells] = np.abs(prev.flat[cells]) + np.abs(pos.flat[cells])
        traded *= self.window
        cost = traded * self.panel.cost_per_contract
        return EngineOutput(panel=self.panel, params=dict(params), position=pos, gross=gross,
                            traded=traded, cost=cost, rows=rows)


def _contracts(panel: Panel, sizing: SizingSpec, cache: dict[Any, Any] | None) -> Any:
    """Contract count per bar: fixed, or capital x target vol / (multiplier x price vol)."""
    if sizing.target_vol is None:
        return sizing.contracts
    vol = _VOL.evaluate(panel.series, {"window": float(sizing.vol_window)}, cache)
    with np.errstate(divide="ignore", invalid="ignore"):
        annual = vol * math.sqrt(DAYS_PER_YEAR) * panel.multiplier
        contracts = sizing.capital * sizing.target_vol / annual
    return np.where(np.isfinite(contracts), contracts, np.nan)


#: Daily volatility of adjusted price changes over a trailing window, for the volatility target.
_VOL = parse_expression("std(diff(close, 1), window)", series_names={"close"},
                        param_names={"window"})
