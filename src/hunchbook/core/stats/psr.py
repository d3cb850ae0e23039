"""Probabilistic Sharpe Ratio, Minimum Track Record Length and Deflated Sharpe Ratio.

All Sharpe ratios given to :func:`probabilistic_sharpe` and :func:`min_track_record_length` are
*per period* (for daily P&L: daily). Kurtosis is **raw** (normal = 3), never excess kurtosis.
"""

from __future__ import annotations

import math

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats.inputs import as_count, as_number
from hunchbook.core.stats.normal import normal_cdf, normal_ppf
from hunchbook.core.stats.sharpe import sharpe_variance_factor

#: Euler-Mascheroni constant, used by the expected maximum of N normal draws.
EULER_GAMMA = 0.5772156649015329


def probabilistic_sharpe(sr: float, n: int, skew: float, kurt: float,
                         sr_star: float = 0.0) -> float:
    """Probability that the true per-period Sharpe ratio exceeds ``sr_star`` (PSR).

    ``PSR = Z[(SR - SR*) * sqrt(n - 1) / sqrt(1 - g3*SR + (g4 - 1)/4 * SR**2)]`` with ``Z`` the
    standard normal CDF, skewness ``g3`` and raw kurtosis ``g4``.
    Bailey, D. H. & López de Prado, M. (2012), "The Sharpe Ratio Efficient Frontier",
    Journal of Risk 15(2). NaN if any input is NaN or the variance factor is not positive.
    """
    sr, skew, kurt, sr_star = _numbers(sr, skew, kurt, sr_star)
    n = as_count(n, "number of observations", minimum=2)
    factor = sharpe_variance_factor(sr, skew, kurt)
    if not factor > 0:
        return math.nan
    return normal_cdf((sr - sr_star) * math.sqrt(n - 1) / math.sqrt(factor))


def min_track_record_length(sr: float, skew: float, kurt: float, sr_star: float = 0.0,
                            alpha: float = 0.05) -> float:
    """Minimum number of periods for PSR(``sr_star``) to reach ``1 - alpha`` (MinTRL).

    ``MinTRL = 1 + (1 - g3*SR + (g4 - 1)/4 * SR**2) * (z_(1-alpha) / (SR - SR*))**2``, in periods
    of the per-period ``sr``. Infinite when ``sr <= sr_star`` (no track record is long enough).
    Bailey & López de Prado (2012), Journal of Risk 15(2).
    """
    sr, skew, kurt, sr_star = _numbers(sr, skew, kurt, sr_star)
    alpha = as_number(alpha, "alpha")
    if not 0.0 < alpha < 1.0:
        raise HunchbookError(f"alpha: expected a probability between 0 and 1, got {alpha}")
    if any(math.isnan(v) for v in (sr, skew, kurt, sr_star)):
        return math.nan
    if sr <= sr_star:
        return math.inf
    factor = sharpe_variance_factor(sr, skew, kurt)
    z = normal_ppf(1.0 - alpha)
    return 1.0 + factor * (z / (sr - sr_star)) ** 2


def expected_max_factor(n_trials: int) -> float:
    """Expected maximum of N standard normals.

    ``(1 - g) Z^-1[1 - 1/N] + g Z^-1[1 - 1/(N e)]`` with g the Euler-Mascheroni constant.
    Zero for a single trial (no selection took place). Bailey & López de Prado (2014).
    """
    n_trials = as_count(n_trials, "number of trials")
    if n_trials == 1:
        return 0.0
    return float((1.0 - EULER_GAMMA) * normal_ppf(1.0 - 1.0 / n_trials)
                 + EULER_GAMMA * normal_ppf(1.0 - 1.0 / (n_trials * math.e)))


def expected_max_sharpe(n_trials: int, trial_sharpe_var: float) -> float:
    """Expected maximum Sharpe ratio of ``n_trials`` skill-less trials (SR0 of the DSR).

    ``SR0 = sqrt(V) * ((1 - gamma) Z^-1[1 - 1/N] + gamma Z^-1[1 - 1/(N e)])`` with ``V`` the
    variance of the trials' Sharpe ratios and gamma the Euler-Mascheroni constant. The result is in
    the units of ``sqrt(V)``: pass the variance of *annualised* ratios to get an annualised SR0.
    One trial gives 0. Bailey, D. H. & López de Prado, M. (2014), "The Deflated Sharpe Ratio",
    Journal of Portfolio Management 40(5).
    """
    trial_sharpe_var = as_number(trial_sharpe_var, "trial Sharpe variance")
    if trial_sharpe_var < 0:
        raise HunchbookError(f"trial Sharpe variance: expected >= 0, got {trial_sharpe_var}")
    return math.sqrt(trial_sharpe_var) * expected_max_factor(n_trials)


def deflated_sharpe(sr: float, n: int, skew: float, kurt: float, n_trials: int,
                    trial_sharpe_var: float, periods: int = 252) -> float:
    """Deflated Sharpe Ratio: PSR against the expected maximum of ``n_trials`` skill-less trials.

    ``DSR = PSR(SR0 / sqrt(periods))`` where ``SR0 = expected_max_sharpe(n_trials,
    trial_sharpe_var)``. Units: ``sr`` is the selected set's **per-period** Sharpe ratio over
    ``n`` periods; ``trial_sharpe_var`` is the variance of the trials' **annualised** Sharpe
    ratios (as in the paper's example); ``periods`` (periods per year) converts SR0 to per period.
    With one trial SR0 = 0, so the DSR equals PSR(0).
    Bailey & López de Prado (2014), Journal of Portfolio Management 40(5), 94-107.
    """
    periods = as_count(periods, "periods")
    sr0 = expected_max_sharpe(n_trials, trial_sharpe_var) / math.sqrt(periods)
    return probabilistic_sharpe(sr, n, skew, kurt, sr_star=sr0)


def _numbers(sr: float, skew: float, kurt: float, sr_star: float) -> tuple[float, ...]:
    return (as_number(sr, "Sharpe ratio"), as_number(skew, "skewness"),
            as_number(kurt, "kurtosis"), as_number(sr_star, "benchmark Sharpe ratio"))
