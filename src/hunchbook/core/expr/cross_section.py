"""Cross-sectional kernels: at each date, a value computed across the markets of a rule.

Markets keep their own calendars in a (bars, markets) array, so row ``r`` of one column need not
be the date of row ``r`` of another. :class:`DateGrid` places every cell on a shared axis of
dates (a (dates, markets) grid, NaN where a market has no bar), the kernels work row by row on
that grid, and the result is gathered back to the cells' own rows. A NaN value (no bar that
date, or an undefined input) takes no part in its row and gets NaN.
"""

from __future__ import annotations

from functools import cached_property

import numpy as np


class DateGrid:
    """Where each cell of a (bars, markets) array sits on a shared axis of dates.

    Parameters
    ----------
    shape
        Shape of the arrays, ``(bars, markets)`` or ``(bars,)`` (one market).
    date_index
        Each cell's position on the shared axis of dates, -1 where the cell is no bar
        (padding); ``None`` when every market's row ``r`` is the same date.
    """

    def __init__(self, shape: tuple[int, ...], date_index: np.ndarray | None = None) -> None:
        self.shape = shape
        self.bars = shape[0] if shape else 0  # shape (): no series, nothing to place
        self.markets = shape[1] if len(shape) == 2 else 1
        self.date_index = date_index

    @cached_property
    def _cells(self) -> tuple[np.ndarray, np.ndarray, int]:
        """Flat positions of the real cells, their flat positions on the grid, the grid's rows."""
        assert self.date_index is not None
        index = np.asarray(self.date_index, dtype=np.int64).reshape(-1)
        source = np.flatnonzero(index >= 0)
        target = index[source] * self.markets + source % self.markets
        days = int(index[source].max()) + 1 if source.size else 0
        return source, target, days

    def scatter(self, x: np.ndarray) -> np.ndarray:
        """``x`` as a (dates, markets) grid, NaN where a market has no bar on a date."""
        flat = np.reshape(x, (self.bars, self.markets))
        if self.date_index is None:
            return flat
        source, target, days = self._cells
        grid = np.full(days * self.markets, np.nan)
        grid[target] = flat.reshape(-1)[source]
        return grid.reshape(days, self.markets)

    def gather(self, grid: np.ndarray) -> np.ndarray:
        """A fresh array of the cells' shape holding each cell's value from ``grid``."""
        if self.date_index is None:
            return np.array(grid, dtype=np.float64).reshape(self.shape)
        source, target, _ = self._cells
        out = np.full(self.bars * self.markets, np.nan)
        out[source] = grid.reshape(-1)[target]
        return out.reshape(self.shape)


def _tie_groups(grid: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Each row sorted ascending (NaN last): the sort order, and for every sorted position the
    first and last position of its group of equal values, and the row's count of values."""
    order = np.argsort(grid, axis=1, kind="stable")
    ordered = np.take_along_axis(grid, order, axis=1)
    width = grid.shape[1]
    positions = np.broadcast_to(np.arange(width), grid.shape)
    starts = np.ones(grid.shape, dtype=bool)
    starts[:, 1:] = ordered[:, 1:] != ordered[:, :-1]  # NaN != NaN: each NaN stands alone
    ends = np.ones(grid.shape, dtype=bool)
    ends[:, :-1] = starts[:, 1:]
    first = np.maximum.accumulate(np.where(starts, positions, 0), axis=1)
    last = np.minimum.accumulate(np.where(ends, positions, width)[:, ::-1], axis=1)[:, ::-1]
    count = (~np.isnan(grid)).sum(axis=1, keepdims=True)
    return order, first, last, count


def _unsort(grid: np.ndarray, order: np.ndarray, sorted_values: np.ndarray) -> np.ndarray:
    """Values given in sorted order put back in the grid's order; NaN where the grid is NaN."""
    out = np.empty(grid.shape)
    np.put_along_axis(out, order, sorted_values, axis=1)
    out[np.isnan(grid)] = np.nan
    return out


def rank(grid: np.ndarray) -> np.ndarray:
    """Average rank of each value in its row, scaled to [-1, 1]: with ``m`` values and average
    (1-based) rank ``r``, ``2 (r - 1) / (m - 1) - 1``; 0 when the row has one value."""
    order, first, last, count = _tie_groups(grid)
    average = (first + last) / 2.0  # 0-based: r - 1
    scaled = np.where(count > 1, 2.0 * average / np.maximum(count - 1, 1) - 1.0, 0.0)
    return _unsort(grid, order, scaled)


def _row_mean(grid: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Each row's mean over its values, and its count of values (as (dates, 1) columns)."""
    present = ~np.isnan(grid)
    count = present.sum(axis=1, keepdims=True)
    total = np.where(present, grid, 0.0).sum(axis=1, keepdims=True)
    return total / count, count


def demean(grid: np.ndarray) -> np.ndarray:
    """Each value minus its row's mean."""
    mean, _ = _row_mean(grid)
    return grid - mean


def zscore(grid: np.ndarray) -> np.ndarray:
    """Each value minus its row's mean, over the row's sample standard deviation (divisor
    ``m - 1``); NaN in rows with fewer than two values."""
    mean, count = _row_mean(grid)
    deviation = grid - mean
    squares = np.where(np.isnan(deviation), 0.0, deviation * deviation).sum(axis=1, keepdims=True)
    return deviation / np.sqrt(squares / (count - 1))


def top(grid: np.ndarray, k: int) -> np.ndarray:
    """1.0 where fewer than ``k`` values of the row are strictly higher, else 0.0 (so every
    value tied at the boundary is in)."""
    order, _, last, count = _tie_groups(grid)
    return _unsort(grid, order, (count - 1 - last < k).astype(np.float64))


def bottom(grid: np.ndarray, k: int) -> np.ndarray:
    """1.0 where fewer than ``k`` values of the row are strictly lower, else 0.0 (so every
    value tied at the boundary is in)."""
    order, first, _, _ = _tie_groups(grid)
    return _unsort(grid, order, (first < k).astype(np.float64))
