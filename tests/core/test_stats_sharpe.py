"""Sharpe ratio, its standard errors, moments and t-statistics against outside references."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from hunchbook.core.errors import HunchbookError
from hunchbook.core.metrics import pnl_stats
from hunchbook.core.stats import (
    moments,
    newey_west_lags,
    newey_west_t,
    sharpe_ratio,
    sharpe_se_iid,
    sharpe_se_nonnormal,
    t_statistic,
)


def _ar1(n: int, rho: float, seed: int, drift: float = 0.0) -> np.ndarray:
    rng = np.random.default_rng(seed)
    e = rng.normal(size=n)
    x = np.empty(n)
    x[0] = e[0]
    for i in range(1, n):
        x[i] = rho * x[i - 1] + e[i]
    return x + drift


def test_sharpe_se_iid_lo_2002_hand_values():
    # Lo (2002), FAJ 58(4): SE = sqrt((1 + SR^2/2) / T), worked by hand here:
    # SR 0.5, T 60: (1 + 0.125) / 60 = 0.01875, sqrt = 0.136931 (shared reference s.3, recomputed)
    assert sharpe_se_iid(0.5, 60) == pytest.approx(math.sqrt(1.125 / 60), rel=1e-12)
    assert sharpe_se_iid(0.5, 60) == pytest.approx(0.136931, abs=5e-7)
    # SR 1.0, T 252: sqrt(1.5 / 252) = 0.077152 (shared reference s.3, recomputed)
    assert sharpe_se_iid(1.0, 252) == pytest.approx(0.077152, abs=5e-7)
    # SR 0: the familiar 1/sqrt(T) (common practice, no source)
    assert sharpe_se_iid(0.0, 100) == pytest.approx(0.1)


def test_sharpe_se_nonnormal_matches_published_sigmas():
    # Bailey & Lopez de Prado (2012), J. of Risk 15(2) [paper, as transcribed by a third party]
    # + recomputed in the shared reference s.1: sigma(SR) with T - 1 in the denominator.
    assert sharpe_se_nonnormal(0.7079, 134, -0.2250, 2.9570) == pytest.approx(0.1028, abs=5e-5)
    assert sharpe_se_nonnormal(0.7079, 134, -0.2250, 2.9570) == pytest.approx(0.1027608,
                                                                              abs=5e-7)
    assert sharpe_se_nonnormal(0.8183, 134, -1.4455, 7.0497) == pytest.approx(0.1550065,
                                                                              abs=5e-7)


def test_sharpe_se_nonnormal_reduces_to_lo_under_normality():
    # Mertens (2002): with g3 = 0 and raw g4 = 3 the factor is 1 + SR^2/2 (Lo 2002),
    # here with n - 1 in the denominator (shared reference s.1).
    sr, n = 0.3, 500
    assert sharpe_se_nonnormal(sr, n, 0.0, 3.0) == pytest.approx(
        math.sqrt((1 + sr * sr / 2) / (n - 1)), rel=1e-12)
    # excess kurtosis (0) fed by mistake gives a different, wrong value: the convention is pinned
    assert sharpe_se_nonnormal(sr, n, 0.0, 0.0) != pytest.approx(
        math.sqrt((1 + sr * sr / 2) / (n - 1)), rel=1e-3)


def test_sharpe_ratio_matches_metrics_and_numpy():
    # numpy as reference: mean / std(ddof=1) * sqrt(252); same as hunchbook.core.metrics
    x = np.random.default_rng(1).normal(20.0, 300.0, 1500)
    expected = x.mean() / x.std(ddof=1) * math.sqrt(252)
    assert sharpe_ratio(x) == pytest.approx(expected, rel=1e-12)
    assert sharpe_ratio(x) == pytest.approx(pnl_stats(x)["sharpe"], rel=1e-12)
    assert sharpe_ratio(x, periods=1) == pytest.approx(expected / math.sqrt(252), rel=1e-12)


def test_sharpe_ratio_on_sp500_regression_value():
    # arch.data.sp500: daily simple returns, n 5030, annualised SR 0.28274 (shared reference s.9)
    sp500 = pytest.importorskip("arch.data.sp500").load()
    returns = sp500["Adj Close"].pct_change().dropna().to_numpy()
    assert returns.size == 5030
    assert sharpe_ratio(returns) == pytest.approx(0.28274, abs=5e-5)


def test_undefined_sharpe_is_nan_not_an_error():
    # common practice, no source: a constant series has no Sharpe ratio
    assert math.isnan(sharpe_ratio(np.zeros(50)))
    assert math.isnan(sharpe_ratio(np.array([1.0])))
    assert math.isnan(t_statistic(np.zeros(10)))
    assert all(math.isnan(v) for v in moments(np.full(10, 3.0)))
    assert math.isnan(newey_west_t(np.zeros(30)))


def test_moments_match_scipy_raw_kurtosis():
    # scipy.stats.skew and kurtosis(fisher=False) (bias=True) as the reference
    x = np.random.default_rng(2).standard_t(5, 3000)
    skew, kurt = moments(x)
    assert skew == pytest.approx(stats.skew(x), rel=1e-10)
    assert kurt == pytest.approx(stats.kurtosis(x, fisher=False), rel=1e-10)
    # raw, not excess: pandas' Series.kurt() is excess (and bias-corrected), which must differ by ~3
    assert kurt - stats.kurtosis(x, fisher=True) == pytest.approx(3.0, rel=1e-10)


def test_t_statistic_matches_scipy():
    # scipy.stats.ttest_1samp as the reference
    x = np.random.default_rng(3).normal(1.0, 30.0, 800)
    assert t_statistic(x) == pytest.approx(stats.ttest_1samp(x, 0.0).statistic, rel=1e-12)


def test_newey_west_lag_rule():
    # Newey & West (1994) rule of thumb floor(4 (n/100)^(2/9)), computed by hand:
    # n = 100 -> 4; n = 1000 -> 4 * 10^(2/9) = 6.68 -> 6; n = 5030 -> 4 * 50.3^(2/9) = 9.55 -> 9
    assert newey_west_lags(100) == 4
    assert newey_west_lags(1000) == 6
    assert newey_west_lags(5030) == 9


@pytest.mark.parametrize("lags", [0, 1, 5, 12, None])
@pytest.mark.parametrize("small_sample", [False, True])
def test_newey_west_t_matches_statsmodels_hac(lags, small_sample):
    # statsmodels OLS on a constant with HAC covariance is the reference; our small_sample flag
    # corresponds to its use_correction (statsmodels' default is False).
    sm = pytest.importorskip("statsmodels.api")
    x = _ar1(600, 0.4, seed=11, drift=0.15)
    maxlags = newey_west_lags(x.size) if lags is None else lags
    fit = sm.OLS(x, np.ones(x.size)).fit(
        cov_type="HAC", cov_kwds={"maxlags": maxlags, "use_correction": small_sample})
    assert newey_west_t(x, lags, small_sample) == pytest.approx(fit.tvalues[0], rel=1e-10)


def test_newey_west_with_zero_lags_is_the_plain_t_times_sqrt_n_minus_1_over_n():
    # hand algebra: with L = 0, S = sum e^2 = (n - 1) s^2, so t_NW = t * sqrt(n / (n - 1))
    x = np.random.default_rng(4).normal(0.1, 1.0, 400)
    assert newey_west_t(x, 0) == pytest.approx(t_statistic(x) * math.sqrt(400 / 399), rel=1e-12)


def test_positive_autocorrelation_shrinks_the_newey_west_t():
    # Newey & West (1987): with positive autocorrelation the HAC standard error is larger
    x = _ar1(2000, 0.6, seed=5, drift=0.2)
    assert abs(newey_west_t(x, 10)) < abs(t_statistic(x))


def test_bad_inputs_raise_clear_errors():
    with pytest.raises(HunchbookError, match="NaN"):
        sharpe_ratio(np.array([1.0, np.nan, 2.0]))
    with pytest.raises(HunchbookError, match="one-dimensional"):
        t_statistic(np.zeros((3, 3)))
    with pytest.raises(HunchbookError, match="number"):
        sharpe_se_iid("high", 10)
    with pytest.raises(HunchbookError, match="at least 2"):
        sharpe_se_nonnormal(0.1, 1, 0.0, 3.0)
    with pytest.raises(HunchbookError, match="lags"):
        newey_west_t(np.ones(10), -1)
