"""The quick-run engine: positions from a signal, daily P&L without and with costs.

Semantics, per market (t counts that market's own bars):

- ``pos[t]`` = contracts x position expression at the close of t, traded at that close
  (``delay`` k: the position computed at t is traded k closes later);
- P&L on t = ``pos[t-1] * change[t] * multiplier``, ``change`` being the price change of the
  contract held at the close of t-1 (never the back-adjusted series);
- contracts traded on t = ``|pos[t] - pos[t-1]|``, or ``|pos[t-1]| + |pos[t]|`` on a roll date;
- a trade on t = a change of the market's position in whole contracts (rounded to the nearest
  one) from t-1: one per market and day. A roll that keeps the position trades contracts but is
  not a trade, nor is a fractional resizing (volatility target) that leaves the whole contracts
  as they were: trades count tickets, contracts traded count volume;
- cost = contracts traded x cost per contract; net = gross - cost;
- rows start at the first bar on which the position is defined (and not before ``start``);
  an undefined position later on means flat.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Mapping
from dataclasses import dataclass
from functools import cached_property
from typing import Any

import numpy as np
import pandas as pd

from hunchbook.core.expr import Expression, parse_expression
from hunchbook.core.expr.cache import CACHE_BYTES, WindowCache
from hunchbook.core.expr.cross_section import DateGrid
from hunchbook.core.panel import Panel
from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.core.rules.model import SizingSpec

#: Columns of the per-market daily P&L table.
PNL_COLUMNS = ("date", "market", "contract", "position", "price_change", "gross_pnl",
               "contracts_traded", "cost", "net_pnl")


@dataclass(frozen=True)
class EngineOutput:
    """Daily arrays of one parameter set, shaped ``(bars, markets)`` like the panel.

    ``first`` is each market's first result bar (the number of bars if it has none); result
    rows run from there to the end of the window. Outside them every figure is zero.
    """

    panel: Panel
    params: dict[str, float]
    window: np.ndarray
    position: np.ndarray
    gross: np.ndarray
    traded: np.ndarray
    first: np.ndarray

    @cached_property
    def rows(self) -> np.ndarray:
        """True on the bars that are part of the result."""
        return self.window & (np.arange(len(self.window))[:, None] >= self.first)

    @cached_property
    def trades(self) -> np.ndarray:
        """True where a market's position in whole contracts (rounded to the nearest one)
        changed from its bar before: one trade per market and day (a roll that keeps the
        position is not one; nothing after the window)."""
        whole = np.rint(self.position)
        changed = np.empty(whole.shape, dtype=bool)
        changed[0] = whole[0] != 0.0
        np.not_equal(whole[1:], whole[:-1], out=changed[1:])
        changed &= self.traded > 0.0
        return changed

    @cached_property
    def cost(self) -> np.ndarray:
        """Cost: contracts traded x cost per contract."""
        return self.traded * self.panel.cost_per_contract

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
            "trades": total(self.trades.astype(float)),
        }, index=pd.DatetimeIndex(p.union_dates[used], name="date"))

    def market_frame(self, j: int) -> pd.DataFrame:
        """Daily figures of market ``j`` (its own rows only), indexed by date."""
        r = self.rows[:, j]
        p = self.panel
        return pd.DataFrame({
            "gross_pnl": self.gross[r, j], "cost": self.cost[r, j], "net_pnl": self.net[r, j],
            "contracts_traded": self.traded[r, j],
            "trades": self.trades[r, j].astype(float),
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
        self.cache: dict[Any, Any] = WindowCache()
        self.dates = DateGrid(panel.date_index.shape, panel.date_index)  # for cs_rank, ...
        window = panel.valid.copy()
        if start is not None:
            window &= panel.dates >= np.datetime64(start, "D")
        if end is not None:
            window &= panel.dates <= np.datetime64(end, "D")
        self.window = window
        self.change_value = np.where(window, panel.change, 0.0) * panel.multiplier
        self.roll_cells = np.flatnonzero(panel.roll & window)
        self.contracts = _contracts(panel, sizing, self.cache)
        self._place_window()

    def _place_window(self) -> None:
        window = self.window
        self._cols = np.arange(window.shape[1])
        self._row = window.shape[1]  # flat offset of one bar
        # the bar after each market's last window bar (the panel always ends in padding)
        self._window_end = np.where(window.any(axis=0),
                                    window.shape[0] - window[::-1].argmax(axis=0), 0)
        self.after_window = np.ravel_multi_index((self._window_end, self._cols), window.shape)

    def columns(self, first: int, stop: int) -> Backtest:
        """The same rule over markets ``first`` to ``stop`` only (each market's results are its
        own, so the parts of a backtest add up to it; for rules that compare markets, run the
        whole). Arrays are copied to contiguous memory; the part has a cache of its own."""
        part = object.__new__(Backtest)
        part.panel = self.panel.columns(first, stop)
        part.position = self.position
        part.delay = self.delay
        part.cache = WindowCache(getattr(self.cache, "max_bytes", CACHE_BYTES))
        part.dates = DateGrid(part.panel.date_index.shape, part.panel.date_index)
        part.window = np.ascontiguousarray(self.window[:, first:stop])
        part.change_value = np.ascontiguousarray(self.change_value[:, first:stop])
        part.roll_cells = np.flatnonzero(part.panel.roll & part.window)
        part.contracts = (self.contracts if np.ndim(self.contracts) == 0
                          else np.ascontiguousarray(self.contracts[:, first:stop]))
        part._place_window()
        return part

    def run(self, params: Mapping[str, float]) -> EngineOutput:
        """Run one parameter set: positions, gross P&L and contracts traded."""
        signal = self.position.evaluate(self.panel.series, params, self.cache,
                                        date_index=self.dates)
        if not (isinstance(self.contracts, float) and self.contracts == 1.0):
            signal = signal * self.contracts
        if self.delay:
            target = np.full(self.window.shape, np.nan)
            target[self.delay:] = np.broadcast_to(signal, self.window.shape)[:-self.delay]
        elif np.shape(signal) != self.window.shape:
            target = np.array(np.broadcast_to(signal, self.window.shape))
        else:
            target = signal  # a fresh array: evaluation never returns shared memory
        missing = np.isnan(target)
        defined = np.less(missing, self.window)  # in the window and not NaN
        first = defined.argmax(axis=0)
        first[~defined[first, self._cols]] = len(defined)  # never defined: no rows
        pos = target
        pos[missing] = 0.0  # undefined after the first defined bar: flat
        for j, (begin, end) in enumerate(zip(first, self._window_end, strict=True)):
            pos[:begin, j] = 0.0  # before the first result bar, and after the window
            pos[end:, j] = 0.0
        gross = np.empty_like(pos)
        gross[0] = 0.0
        np.multiply(pos[:-1], self.change_value[1:], out=gross[1:])
        traded = np.empty_like(pos)
        traded[0] = np.abs(pos[0])
        np.subtract(pos[1:], pos[:-1], out=traded[1:])
        np.abs(traded, out=traded)
        cells = self.roll_cells  # close the old contract, open the new one
        traded.flat[cells] = np.abs(pos.flat[cells - self._row]) + np.abs(pos.flat[cells])
        traded.flat[self.after_window] = 0.0  # closing after the window is not in the result
        return EngineOutput(panel=self.panel, params=dict(params), window=self.window,
                            position=pos, gross=gross, traded=traded, first=first)

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
