"""PSR, MinTRL, expected maximum Sharpe and DSR against published worked examples."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats import (
    deflated_sharpe,
    expected_max_sharpe,
    min_track_record_length,
    moments,
    probabilistic_sharpe,
    sharpe_ratio,
    t_statistic,
)

# Source of the worked values below: shared reference (methods.md) s.1 and s.2 --
# Bailey & Lopez de Prado (2012), "The Sharpe Ratio Efficient Frontier", J. of Risk 15(2) and
# (2014), "The Deflated Sharpe Ratio", JPM 40(5): [paper, as transcribed by a third party]
# + [recomputed]; the DSR example's inputs are [memory] (its recalled output is reproduced exactly
# by the formula).


def test_psr_worked_examples():
    # SR 0.458 monthly, T 24, normal: PSR 0.982 (0.9816749)
    assert probabilistic_sharpe(0.458, 24, 0.0, 3.0) == pytest.approx(0.9816749, abs=1e-6)
    # same with g3 -2.448, raw g4 10.164: PSR 0.913 (0.9133611)
    assert probabilistic_sharpe(0.458, 24, -2.448, 10.164) == pytest.approx(0.9133611, abs=1e-6)


def test_psr_rejects_excess_kurtosis_fed_by_mistake():
    # pin the convention: raw kurtosis (normal = 3). Feeding excess kurtosis must NOT reproduce
    # the published values (s.1).
    assert probabilistic_sharpe(0.458, 24, 0.0, 0.0) != pytest.approx(0.9816749, abs=1e-4)
    assert probabilistic_sharpe(0.458, 24, -2.448, 7.164) != pytest.approx(0.9133611, abs=1e-4)
    assert min_track_record_length(0.7079, -0.2250, -0.043) / 12 != pytest.approx(0.7152,
                                                                                  abs=1e-4)


def test_min_track_record_length_worked_examples():
    # SR 0.7079 (monthly), g3 -0.2250, g4 2.9570: MinTRL(0, 95 %) 8.5826 months = 0.7152 years
    months = min_track_record_length(0.7079, -0.2250, 2.9570, sr_star=0.0, alpha=0.05)
    assert months == pytest.approx(8.5826, abs=1e-4)
    assert months / 12 == pytest.approx(0.7152, abs=1e-4)
    # SR 0.8183, g3 -1.4455, g4 7.0497: 13.9116 months = 1.1593 years
    months = min_track_record_length(0.8183, -1.4455, 7.0497)
    assert months == pytest.approx(13.9116, abs=1e-4)
    assert months / 12 == pytest.approx(1.1593, abs=1e-4)


def test_min_track_record_length_is_where_psr_reaches_the_confidence():
    # Bailey & Lopez de Prado (2012): MinTRL inverts the PSR; at n = MinTRL, PSR = 1 - alpha
    # exactly (algebra of the two published formulas; n - 1 = factor * (z / SR)^2).
    sr, g3, g4 = 0.08, -0.5, 6.0
    n = min_track_record_length(sr, g3, g4, alpha=0.05)
    factor = 1 - g3 * sr + (g4 - 1) / 4 * sr * sr
    z = (sr - 0.0) * math.sqrt(n - 1) / math.sqrt(factor)
    assert stats.norm.cdf(z) == pytest.approx(0.95, abs=1e-12)
    assert probabilistic_sharpe(sr, math.ceil(n), g3, g4) >= 0.95
    assert probabilistic_sharpe(sr, math.floor(n), g3, g4) < 0.95


def test_min_track_record_length_is_infinite_without_an_edge():
    # common practice, no source: no track record proves a Sharpe ratio it does not beat
    assert min_track_record_length(-0.1, 0.0, 3.0) == math.inf
    assert min_track_record_length(0.1, 0.0, 3.0, sr_star=0.1) == math.inf


@pytest.mark.parametrize(("n_trials", "factor"), [(2, 0.5198), (10, 1.5746), (100, 2.5306),
                                                  (1000, 3.2551), (10000, 3.8607)])
def test_expected_max_factor_table(n_trials, factor):
    # shared reference s.2, expected-maximum factor by N [recomputed]
    assert expected_max_sharpe(n_trials, 1.0) == pytest.approx(factor, abs=5e-5)


def test_expected_max_sharpe_against_monte_carlo():
    # simulation as the outside check: mean of the maximum of N independent normal Sharpe ratios
    # with variance V; the formula overstates small-N maxima by 1-2 % (shared reference s.2).
    rng = np.random.default_rng(0)
    v = 0.5
    draws = rng.normal(0.0, math.sqrt(v), size=(20000, 100)).max(axis=1).mean()
    assert expected_max_sharpe(100, v) == pytest.approx(draws, rel=0.03)
    assert expected_max_sharpe(1, v) == 0.0


def test_deflated_sharpe_worked_example():
    # N 100, V 1/2 (annualised), SR 2.5 annualised, 250 days a year, T 1250, g3 -3, g4 10:
    # SR0 daily 0.1132 (0.11317200), DSR 0.9004 (0.90039683) (s.2)
    sr_daily = 2.5 / math.sqrt(250)
    assert sr_daily == pytest.approx(0.1581139, abs=1e-7)
    assert expected_max_sharpe(100, 0.5) / math.sqrt(250) == pytest.approx(0.11317200, abs=1e-7)
    dsr = deflated_sharpe(sr_daily, 1250, -3.0, 10.0, 100, 0.5, periods=250)
    assert dsr == pytest.approx(0.9004, abs=1e-4)
    assert dsr == pytest.approx(0.90039683, abs=1e-7)
    # N 46: 0.9505 (0.95050171) [recomputed]
    assert deflated_sharpe(sr_daily, 1250, -3.0, 10.0, 46, 0.5, periods=250) == pytest.approx(
        0.95050171, abs=1e-7)
    # 252 days and T 1260: 0.9005688 [recomputed] -- the days-per-year is passed explicitly
    assert deflated_sharpe(2.5 / math.sqrt(252), 1260, -3.0, 10.0, 100, 0.5,
                           periods=252) == pytest.approx(0.9005688, abs=1e-6)


def test_deflated_sharpe_rejects_excess_kurtosis_fed_by_mistake():
    # s.2 example with excess kurtosis 7 instead of raw 10 must not give 0.9004
    sr_daily = 2.5 / math.sqrt(250)
    assert deflated_sharpe(sr_daily, 1250, -3.0, 7.0, 100, 0.5,
                           periods=250) != pytest.approx(0.9004, abs=1e-4)


def test_deflated_sharpe_with_one_trial_is_psr_zero():
    # Bailey & Lopez de Prado (2014): with no selection SR0 = 0 and DSR = PSR(0)
    assert deflated_sharpe(0.05, 1000, -0.3, 5.0, 1, 0.0) == pytest.approx(
        probabilistic_sharpe(0.05, 1000, -0.3, 5.0), rel=1e-15)


def test_psr_and_t_statistic_agree_on_sp500():
    # arch.data.sp500 daily returns (s.9: n 5030, annualised SR 0.28274). Under normality the PSR
    # argument SR sqrt(n - 1) / sqrt(1 + SR^2/2) is close to the t-statistic SR sqrt(n)
    # (hand algebra), so PSR(0) with g3 = 0, g4 = 3 ~ Z(t); with the sample's heavy tails the
    # PSR z-score must differ from t by the Mertens factor.
    sp500 = pytest.importorskip("arch.data.sp500").load()
    r = sp500["Adj Close"].pct_change().dropna().to_numpy()
    n = r.size
    sr = sharpe_ratio(r, periods=1)
    assert sr * math.sqrt(252) == pytest.approx(0.28274, abs=5e-5)
    t = t_statistic(r)
    assert t == pytest.approx(sr * math.sqrt(n), rel=1e-12)
    assert probabilistic_sharpe(sr, n, 0.0, 3.0) == pytest.approx(stats.norm.cdf(t), abs=2e-4)
    g3, g4 = moments(r)
    assert g4 > 6  # equity returns are fat-tailed (common practice, no source)
    z = stats.norm.ppf(probabilistic_sharpe(sr, n, g3, g4))
    factor = 1 - g3 * sr + (g4 - 1) / 4 * sr * sr
    assert z == pytest.approx(sr * math.sqrt(n - 1) / math.sqrt(factor), rel=1e-9)
    # Bailey & Lopez de Prado (2012): PSR(0) >= 95 % exactly when n >= MinTRL(0, 5 %)
    assert (probabilistic_sharpe(sr, n, g3, g4) >= 0.95) == (n >= min_track_record_length(
        sr, g3, g4))


def test_bad_inputs_raise_clear_errors():
    with pytest.raises(HunchbookError, match="alpha"):
        min_track_record_length(0.1, 0.0, 3.0, alpha=1.5)
    with pytest.raises(HunchbookError, match="variance"):
        expected_max_sharpe(10, -1.0)
    with pytest.raises(HunchbookError, match="trials"):
        expected_max_sharpe(0, 1.0)
