"""Sharpe ratios of many windows at once, from each window's sum and sum of squares.

The selection checks (walk-forward, backtest overfitting) score every set on many windows of
days; summing the P&L and the squared P&L per window and dividing here avoids a pass over the
days per window.
"""

from __future__ import annotations

import numpy as np

#: A window's variance at most this share of its mean square is rounding noise: the P&L is flat.
FLAT_TOLERANCE = 1e-12


def sharpe_from_sums(sums: np.ndarray, squares: np.ndarray, n: int | np.ndarray) -> np.ndarray:
    """Per-period Sharpe ratio ``mean / sd`` (ddof 1) of windows of ``n`` days from their sums.

    ``n`` may be an array that broadcasts against ``sums`` (windows of different lengths).

    ``mean = sums / n``, ``var = (squares - sums * mean) / (n - 1)``. A window whose P&L does
    not vary (variance within rounding of zero) has no Sharpe ratio; so that sets can still be
    ranked it scores 0 when its P&L is zero (a set that did not trade) and plus or minus
    infinity for a constant gain or loss (a riskless gain beats any risky one).
    """
    mean = sums / n
    sd = sums * mean
    np.subtract(squares, sd, out=sd)
    sd /= n - 1
    flat = sd <= squares * (FLAT_TOLERANCE / n)
    np.sqrt(np.maximum(sd, 0.0, out=sd), out=sd)
    if not flat.any():
        return np.divide(mean, sd, out=mean)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.divide(mean, sd, out=sd)
    ratio[flat] = np.where(mean[flat] > 0, np.inf, np.where(mean[flat] < 0, -np.inf, 0.0))
    return ratio
