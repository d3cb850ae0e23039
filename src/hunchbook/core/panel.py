"""Markets stacked side by side: bars x markets arrays the engine and expressions work on.

Each column is one market's own bar sequence (its own trading calendar); shorter markets are
padded with NaN at the bottom, so rolling windows always count a market's own bars. Every
column ends in at least one row of padding.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from hunchbook.core.continuous import ContinuousSeries
from hunchbook.core.errors import DataError
from hunchbook.core.markets import MarketSpec


@dataclass(frozen=True)
class Panel:
    """Inputs of one run, as ``(bars, markets)`` arrays.

    ``series`` holds what expressions may read (adjusted prices, volume); ``change`` the held
    contract's own price change; ``date_index`` each cell's position in ``union_dates``
    (-1 in padding).
    """

    markets: tuple[str, ...]
    lengths: np.ndarray
    dates: np.ndarray
    union_dates: np.ndarray
    date_index: np.ndarray
    series: dict[str, np.ndarray]
    change: np.ndarray
    roll: np.ndarray
    contract: np.ndarray
    multiplier: np.ndarray
    cost_per_contract: np.ndarray
    currency: str

    @property
    def valid(self) -> np.ndarray:
        """True on real bars, False in the padding."""
        return np.arange(self.dates.shape[0])[:, None] < self.lengths[None, :]

    def columns(self, first: int, stop: int) -> Panel:
        """Markets ``first`` to ``stop`` (exclusive) as a panel of their own, each array copied
        to contiguous memory (the union of dates stays the whole panel's)."""
        def cut(x: np.ndarray) -> np.ndarray:
            return np.ascontiguousarray(x[:, first:stop])

        return Panel(markets=self.markets[first:stop], lengths=self.lengths[first:stop],
                     dates=cut(self.dates), union_dates=self.union_dates,
                     date_index=cut(self.date_index),
                     series={k: cut(v) for k, v in self.series.items()},
                     change=cut(self.change), roll=cut(self.roll), contract=cut(self.contract),
                     multiplier=self.multiplier[first:stop],
                     cost_per_contract=self.cost_per_contract[first:stop],
                     currency=self.currency)


def build_panel(series: Sequence[ContinuousSeries], specs: Sequence[MarketSpec]) -> Panel:
    """Stack continuous series and their contract specifications into a :class:`Panel`.

    Raises
    ------
    DataError
        When the markets are quoted in different currencies (their P&L cannot be summed).
    """
    currencies = sorted({s.currency for s in specs})
    if len(currencies) > 1:
        raise DataError("the markets of one rule must share a currency to be summed into a "
                        f"portfolio; found {', '.join(currencies)}")
    lengths = np.array([len(s) for s in series], dtype=np.int64)
    rows, cols = int(lengths.max()) + 1, len(series)  # one row of padding, always
    dates = np.full((rows, cols), np.datetime64("NaT"), dtype="datetime64[D]")
    change = np.zeros((rows, cols))
    roll = np.zeros((rows, cols), dtype=bool)
    contract = np.full((rows, cols), None, dtype=object)
    names = set.intersection(*(set(s.adjusted) for s in series))
    stacked = {name: np.full((rows, cols), np.nan) for name in names}
    for j, s in enumerate(series):
        n = len(s)
        dates[:n, j] = s.dates
        change[:n, j] = s.change
        roll[:n, j] = s.roll
        contract[:n, j] = s.contract
        for name in names:
            stacked[name][:n, j] = s.adjusted[name]
    union_dates = np.unique(np.concatenate([s.dates for s in series]))
    date_index = np.where(np.isnat(dates), -1, np.searchsorted(union_dates, dates))
    return Panel(markets=tuple(s.market for s in series), lengths=lengths, dates=dates,
                 union_dates=union_dates, date_index=date_index, series=stacked, change=change,
                 roll=roll, contract=contract,
                 multiplier=np.array([s.multiplier for s in specs], dtype=float),
                 cost_per_contract=np.array([s.cost_per_contract for s in specs], dtype=float),
                 currency=currencies[0])
