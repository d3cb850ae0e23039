"""Vectorised window kernels over 2-D float arrays of shape (bars, markets).

Every kernel runs down axis 0 independently per column and follows the pandas conventions for
missing values: a window value is NaN until the window is full, and NaN whenever the window holds
a NaN. Inputs are never modified.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

Ufunc = Callable[..., np.ndarray]


def shift(x: np.ndarray, k: int) -> np.ndarray:
    """The value ``k >= 0`` bars earlier (NaN for the first ``k`` bars)."""
    out = np.empty_like(x)
    k = min(k, x.shape[0])
    out[:k] = np.nan
    out[k:] = x[: x.shape[0] - k]
    return out


def _combine(op: Ufunc, later: np.ndarray, earlier: np.ndarray, offset: int) -> np.ndarray:
    """``op(later[t], earlier[t - offset])``, NaN where ``t - offset < 0``."""
    out = np.empty_like(later)
    out[:offset] = np.nan
    op(later[offset:], earlier[: later.shape[0] - offset], out=out[offset:])
    return out


def _reduce(x: np.ndarray, n: int, op: Ufunc) -> np.ndarray:
    """Apply the associative, NaN-propagating ``op`` over each window of the last ``n`` bars.

    Blocks of 1, 2, 4, ... bars are built by doubling and the binary digits of ``n`` select which
    blocks make up each window, so the cost is O(bars * log n) for any window length. For sums this
    is a pairwise summation, which keeps rounding errors small without a running total.
    """
    if n > x.shape[0]:
        return np.full_like(x, np.nan)
    result: np.ndarray | None = None
    covered = 0
    block, width = x, 1
    while width <= n:
        if n & width:
            result = block.copy() if result is None else _combine(op, result, block, covered)
            covered += width
        if 2 * width <= n:
            block = _combine(op, block, block, width)
        width *= 2
    assert result is not None
    return result


def rolling_sum(x: np.ndarray, n: int) -> np.ndarray:
    """Sum of the last ``n`` bars (pandas ``rolling(n).sum()``)."""
    return _reduce(x, n, np.add)


def rolling_mean(x: np.ndarray, n: int) -> np.ndarray:
    """Simple moving average of the last ``n`` bars (pandas ``rolling(n).mean()``)."""
    return _reduce(x, n, np.add) / n


def rolling_max(x: np.ndarray, n: int) -> np.ndarray:
    """Highest value of the last ``n`` bars (pandas ``rolling(n).max()``)."""
    return _reduce(x, n, np.maximum)


def rolling_min(x: np.ndarray, n: int) -> np.ndarray:
    """Lowest value of the last ``n`` bars (pandas ``rolling(n).min()``)."""
    return _reduce(x, n, np.minimum)


def _merge_moments(
    later: tuple[np.ndarray, np.ndarray], earlier: tuple[np.ndarray, np.ndarray],
    later_width: int, earlier_width: int,
) -> tuple[np.ndarray, np.ndarray]:
    """Mean and sum of squared deviations of the block ``earlier`` (ending ``later_width`` bars
    before ``t``) joined with the block ``later`` (ending at ``t``); pairwise update of Chan,
    Golub and LeVeque (1979), which stays accurate when the deviations are small."""
    mean_l, m2_l = later
    mean_e, m2_e = earlier
    s = later_width
    total = later_width + earlier_width
    mean = np.empty_like(mean_l)
    m2 = np.empty_like(m2_l)
    mean[:s] = np.nan
    m2[:s] = np.nan
    delta = mean_l[s:] - mean_e[: mean_l.shape[0] - s]
    mean[s:] = mean_e[: mean_l.shape[0] - s] + delta * (later_width / total)
    m2[s:] = m2_l[s:] + m2_e[: mean_l.shape[0] - s] + delta * delta * (
        later_width * earlier_width / total
    )
    return mean, m2


def rolling_mean_std(x: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray]:
    """Mean and sample standard deviation (divisor ``n - 1``) of the last ``n >= 2`` bars.

    Matches pandas ``rolling(n).mean()`` and ``rolling(n).std()``. Each column's average is
    subtracted first, so the means merged below stay small; blocks are then doubled as in the
    window sums, merging (mean, sum of squared deviations) pairs instead of plain sums. A window
    whose values are all equal has a deviation of exactly 0.
    """
    if n > x.shape[0]:
        return np.full_like(x, np.nan), np.full_like(x, np.nan)
    offset = _column_average(x)
    deviation = x - offset
    result: tuple[np.ndarray, np.ndarray] | None = None
    covered = 0
    block, width = (deviation, deviation * 0.0), 1
    while width <= n:
        if n & width:
            result = block if result is None else _merge_moments(result, block, covered, width)
            covered += width
        if 2 * width <= n:
            block = _merge_moments(block, block, width, width)
        width *= 2
    assert result is not None
    mean, m2 = result
    return mean + offset, np.sqrt(m2 / (n - 1))


def _column_average(x: np.ndarray) -> np.ndarray:
    """Average of each column's non-missing values (0 for a column without any)."""
    present = ~np.isnan(x)
    return np.where(present, x, 0.0).sum(axis=0) / np.maximum(present.sum(axis=0), 1)


def ewm_mean(x: np.ndarray, n: int) -> np.ndarray:
    """Exponential moving average, pandas ``ewm(span=n, adjust=False, min_periods=n).mean()``.

    With ``a = 2 / (n + 1)`` and ``b = 1 - a``, each observation updates the average ``y`` to
    ``(w * y + a * x) / (w + a)`` where ``w = b ** (g + 1)`` and ``g`` is the number of missing
    bars since the previous observation; missing bars carry ``y`` forward. The value is shown once
    ``n`` observations have been seen. Each step is an affine map of ``y``; the maps are composed
    for all bars at once by a doubling (prefix) scan in O(bars * log bars).

    These are the weights pandas documents for ``adjust=False, ignore_na=False``. pandas itself
    deviates after missing bars when ``n == 3`` (its centre of mass is then 1, which it treats as
    a time-based decay); this function keeps the documented weights for every ``n``.
    """
    alpha = 2.0 / (n + 1.0)
    bars = x.shape[0]
    observed = ~np.isnan(x)
    rows = np.arange(bars).reshape((bars,) + (1,) * (x.ndim - 1))
    last = np.maximum.accumulate(np.where(observed, rows, -1), axis=0)
    previous = np.empty_like(last)
    previous[:1] = -1
    previous[1:] = last[:-1]
    follows = observed & (previous >= 0)
    with np.errstate(all="ignore"):
        weight = (1.0 - alpha) ** (rows - previous)
        scale = np.where(follows, weight / (weight + alpha), np.where(observed, 0.0, 1.0))
        value = np.where(follows, alpha * x / (weight + alpha), np.where(observed, x, 0.0))
        step = 1
        while step < bars:
            value[step:] = scale[step:] * value[:-step] + value[step:]
            scale[step:] = scale[step:] * scale[:-step]
            step *= 2
    value[np.cumsum(observed, axis=0) < n] = np.nan
    return value
