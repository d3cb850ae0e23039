"""Sharpe ratio, its standard errors, sample moments and t-statistics of a daily P&L series.

Conventions: ``x`` is P&L per period (currency per day); the Sharpe ratio is mean / sample standard
deviation (ddof 1), annualised by sqrt(periods) with 252 trading days unless told otherwise, as in
:mod:`hunchbook.core.metrics`. Standard-error formulas take the *per-period* Sharpe ratio.
Undefined results (too few observations, zero variance) are NaN, never an exception.
"""

from __future__ import annotations

import math

import numpy as np

from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.core.stats.inputs import as_count, as_number, as_series


def sharpe_ratio(x: np.ndarray, periods: int = DAYS_PER_YEAR) -> float:
    """Annualised Sharpe ratio of a P&L series.

    ``SR = mean(x) / std(x, ddof=1) * sqrt(periods)``; ``periods=1`` gives the per-period ratio.
    NaN when there are fewer than two observations or the series is constant.
    """
    values = as_series(x, "P&L series")
    periods = as_count(periods, "periods")
    if values.size < 2:
        return math.nan
    sd = float(values.std(ddof=1))
    if not sd > 0:
        return math.nan
    return float(values.mean()) / sd * math.sqrt(periods)


def sharpe_se_iid(sr: float, n: int) -> float:
    """Standard error of a per-period Sharpe ratio under iid normal returns (Lo 2002).

    ``SE = sqrt((1 + SR**2 / 2) / n)``.

    Lo, A. W. (2002), "The Statistics of Sharpe Ratios", Financial Analysts Journal 58(4).
    """
    sr = as_number(sr, "Sharpe ratio")
    n = as_count(n, "number of observations")
    return math.sqrt((1.0 + sr * sr / 2.0) / n)


def sharpe_se_nonnormal(sr: float, n: int, skew: float, kurt: float) -> float:
    """Standard error of a per-period Sharpe ratio under iid non-normal returns.

    ``SE = sqrt((1 - g3*SR + (g4 - 1)/4 * SR**2) / (n - 1))`` with skewness ``g3`` and **raw**
    kurtosis ``g4`` (normal = 3, not excess kurtosis); the (n - 1) matches the Probabilistic
    Sharpe Ratio. Mertens (2002); Opdyke (2007); Bailey & López de Prado (2012),
    "The Sharpe Ratio Efficient Frontier", Journal of Risk 15(2).
    """
    sr, skew, kurt = (as_number(v, k) for v, k in ((sr, "Sharpe ratio"), (skew, "skewness"),
                                                   (kurt, "kurtosis")))
    n = as_count(n, "number of observations", minimum=2)
    variance = sharpe_variance_factor(sr, skew, kurt)
    return math.sqrt(variance / (n - 1)) if variance >= 0 else math.nan


def sharpe_variance_factor(sr: float, skew: float, kurt: float) -> float:
    """``1 - g3*SR + (g4 - 1)/4 * SR**2``: n times the variance of a per-period Sharpe estimate."""
    return 1.0 - skew * sr + (kurt - 1.0) / 4.0 * sr * sr


def moments(x: np.ndarray) -> tuple[float, float]:
    """Sample skewness and **raw** kurtosis (normal = 3) with population moments.

    ``g3 = m3 / m2**1.5``, ``g4 = m4 / m2**2`` with ``mk = mean((x - mean)**k)``: the same as
    ``scipy.stats.skew(x)`` and ``scipy.stats.kurtosis(x, fisher=False)`` (bias=True).
    NaN for a constant or empty series.
    """
    values = as_series(x, "P&L series")
    if values.size == 0:
        return math.nan, math.nan
    d = values - values.mean()
    m2 = float(np.mean(d * d))
    if not m2 > 0:
        return math.nan, math.nan
    return float(np.mean(d**3)) / m2**1.5, float(np.mean(d**4)) / (m2 * m2)


def t_statistic(x: np.ndarray) -> float:
    """t-statistic of the mean against zero: ``mean / (std(ddof=1) / sqrt(n))``; NaN if none."""
    values = as_series(x, "P&L series")
    if values.size < 2:
        return math.nan
    sd = float(values.std(ddof=1))
    return float(values.mean()) / (sd / math.sqrt(values.size)) if sd > 0 else math.nan


def newey_west_lags(n: int) -> int:
    """Default Newey-West lag ``floor(4 * (n / 100) ** (2/9))`` (Newey & West 1994 rule)."""
    n = as_count(n, "number of observations")
    return int(math.floor(4.0 * (n / 100.0) ** (2.0 / 9.0)))


def newey_west_t(x: np.ndarray, lags: int | None = None, small_sample: bool = False) -> float:
    """t-statistic of the mean with a Newey-West (HAC, Bartlett kernel) standard error.

    With ``e = x - mean(x)`` and ``gamma_j = sum_t e_t e_(t-j)``::

        S   = gamma_0 + 2 * sum_{j=1..L} (1 - j / (L + 1)) * gamma_j
        t   = mean(x) / sqrt(S / n**2)       (times sqrt((n - 1) / n) if small_sample)

    Default ``L = floor(4 (n/100)^(2/9))`` (Newey & West 1994). This equals the t-value of
    statsmodels ``OLS(x, ones).fit(cov_type="HAC", cov_kwds={"maxlags": L,
    "use_correction": small_sample})`` (statsmodels' default is ``use_correction=False``).
    Newey, W. K. & West, K. D. (1987), Econometrica 55(3); (1994), Review of Economic Studies 61(4).
    NaN when the long-run variance is not positive.
    """
    values = as_series(x, "P&L series")
    n = values.size
    if n < 2:
        return math.nan
    lag_count = newey_west_lags(n) if lags is None else as_count(lags, "lags", minimum=0)
    lag_count = min(lag_count, n - 1)
    e = values - values.mean()
    s = float(e @ e)
    for j in range(1, lag_count + 1):
        s += 2.0 * (1.0 - j / (lag_count + 1.0)) * float(e[j:] @ e[:-j])
    if small_sample:
        s *= n / (n - 1.0)
    if not s > 0:
        return math.nan
    return float(values.mean()) / math.sqrt(s / (n * n))
