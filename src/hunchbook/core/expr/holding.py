"""Holding rules: path-dependent kernels over 2-D float arrays of shape (bars, markets).

Every kernel runs down axis 0 independently per column, with no loop over bars: the bar of the
latest event is carried forward with ``np.maximum.accumulate`` and values are read back at that
bar. A value counts as *true* (an event) where it is non-zero and not NaN. While a position is
held the result is the held value whatever the inputs on that bar; otherwise it is 0, or NaN on
a bar where an input is undefined. Inputs are never modified.
"""

from __future__ import annotations

import numpy as np

from hunchbook.core.expr import rolling


def _rows(x: np.ndarray) -> np.ndarray:
    """Bar numbers 0, 1, ... shaped to broadcast against ``x`` along axis 0."""
    return np.arange(x.shape[0]).reshape((x.shape[0],) + (1,) * (x.ndim - 1))


def _true(x: np.ndarray) -> np.ndarray:
    """Non-zero and not NaN."""
    return (x != 0) & ~np.isnan(x)


def _latest(events: np.ndarray, rows: np.ndarray) -> np.ndarray:
    """For every bar, the bar of the latest event up to and including it (-1 before any)."""
    return np.maximum.accumulate(np.where(events, rows, -1), axis=0)


def _at(x: np.ndarray, bar: np.ndarray) -> np.ndarray:
    """``x`` read at ``bar`` in the same column (any value where ``bar`` is -1)."""
    return np.take_along_axis(np.broadcast_to(x, bar.shape), np.maximum(bar, 0), axis=0)


def hold(x: np.ndarray, n: int) -> np.ndarray:
    """Each entry (a bar where ``x`` is true) kept for ``n`` bars, the entry bar included; a
    later entry replaces it. Elsewhere 0, or NaN where ``x`` is NaN."""
    rows = _rows(x)
    entry = _latest(_true(x), rows)
    held = (entry >= 0) & (rows - entry < n)
    return np.where(held, _at(x, entry), np.where(np.isnan(x), np.nan, 0.0))


def latch(entry: np.ndarray, exit_: np.ndarray) -> np.ndarray:
    """``entry``'s value from a bar where it is true until a bar where ``exit_`` is true (0 on
    that bar). An entry counts only where ``exit_`` is defined and not true (an exit wins a tie);
    a later entry replaces the held value. Idle bars are 0, or NaN where an input is NaN."""
    rows = _rows(entry)
    exits = _true(exit_)
    entries = _true(entry) & ~np.isnan(exit_) & ~exits
    last_entry = _latest(entries, rows)
    held = last_entry > _latest(exits, rows)
    idle = np.where(np.isnan(entry) | np.isnan(exit_), np.nan, 0.0)
    return np.where(held, _at(entry, last_entry), idle)


def bars_since(c: np.ndarray) -> np.ndarray:
    """Bars since ``c`` was last true (0 on a bar where it is); NaN before its first true bar.
    A NaN bar is a bar where ``c`` is not true."""
    rows = _rows(c)
    last = _latest(_true(c), rows)
    return np.where(last >= 0, rows - last, np.nan).astype(np.float64)


def stop(x: np.ndarray, k: np.ndarray, close: np.ndarray, sigma: np.ndarray) -> np.ndarray:
    """``x`` with a volatility stop on each trade.

    A bar is *ready* where ``x``, ``k``, ``close`` and ``sigma`` are defined (``sigma``: the
    sample standard deviation of the last ``n`` changes of ``close``, bar to bar). A trade is a
    run of consecutive ready bars on which ``sign(x)`` is the same and non-zero; it enters on its
    first bar ``e``. From the first bar ``t`` of the trade on which the loss
    ``-sign(x) * (close[t] - close[e])`` exceeds ``k[e] * sigma[e]``, the result is 0 until the
    trade ends; otherwise it is ``x``. Bars that are not ready are NaN.
    """
    ready = ~(np.isnan(x) | np.isnan(k) | np.isnan(close) | np.isnan(sigma))
    side = np.where(ready, np.sign(x), np.nan)
    trading = ready & (side != 0)
    starts = trading & (side != rolling.shift(side, 1))  # NaN before: a new trade
    rows = _rows(x)
    entry = _latest(starts, rows)
    loss = -side * (close - _at(close, entry))
    breach = trading & (loss > _at(k, entry) * _at(sigma, entry))
    stopped = trading & (_latest(breach, rows) >= entry)
    return np.where(ready, np.where(stopped, 0.0, x), np.nan)
