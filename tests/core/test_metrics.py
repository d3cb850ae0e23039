"""Summary metrics against reference libraries and a public dataset."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from hunchbook.core.metrics import max_drawdown, pnl_stats, summarise


def test_sharpe_on_sp500_regression_value():
    # arch.data.sp500 (public data shipped with arch 8.x): daily simple returns of the adjusted
    # close, n = 5030, annualised Sharpe sqrt(252) x mean / sd(ddof 1) = 0.28274
    # (shared reference s.9, recomputed).
    sp500 = pytest.importorskip("arch.data.sp500").load()
    returns = sp500["Adj Close"].pct_change().dropna()
    assert len(returns) == 5030
    result = pnl_stats(returns)
    assert result["sharpe"] == pytest.approx(0.28274, abs=5e-5)
    assert result["ann_mean"] == pytest.approx(0.000214278 * 252, rel=1e-5)
    assert result["ann_vol"] == pytest.approx(0.0120307 * np.sqrt(252), rel=1e-5)


def test_t_statistic_matches_scipy():
    # scipy.stats.ttest_1samp as the reference library
    x = np.random.default_rng(5).normal(3.0, 40.0, 700)
    assert pnl_stats(x)["t_stat"] == pytest.approx(stats.ttest_1samp(x, 0.0).statistic,
                                                   rel=1e-12)


def test_max_drawdown_matches_pandas_cummax():
    # pandas as the reference library: drawdown = running peak of equity (from 0) - equity
    x = np.random.default_rng(9).normal(0.0, 100.0, 2000)
    equity = pd.Series(np.concatenate(([0.0], np.cumsum(x))))
    assert max_drawdown(x) == pytest.approx((equity.cummax() - equity).max(), rel=1e-12)
    # a hand example: +100, -30, -50, +200, -240 -> peak 270, trough 30: drawdown 240
    assert max_drawdown(np.array([100.0, -30, -50, 200, -240])) == pytest.approx(240.0)


def test_summary_trading_and_cost_figures():
    index = pd.to_datetime(["2023-12-28", "2023-12-29", "2024-01-02", "2024-01-03"])
    daily = pd.DataFrame({"gross_pnl": [0.0, 500.0, -100.0, 400.0],
                          "cost": [24.64, 0.0, 49.28, 24.64],
                          "contracts_traded": [2.0, 0.0, 4.0, 2.0],
                          "trades": [1.0, 0.0, 2.0, 1.0]}, index=index)
    daily["net_pnl"] = daily["gross_pnl"] - daily["cost"]
    s = summarise(daily)
    assert s["cost_total"] == pytest.approx(98.56)
    assert s["cost_per_year"] == {"2023": pytest.approx(24.64), "2024": pytest.approx(73.92)}
    assert s["cost_share_of_gross"] == pytest.approx(98.56 / 800.0)
    # break-even cost per contract: the cost at which net P&L is zero = gross / contracts
    assert s["break_even_cost"] == pytest.approx(800.0 / 8.0)
    years = 7 / 365.25  # calendar span 2023-12-28 .. 2024-01-03 inclusive
    assert s["contracts_per_year"] == pytest.approx(8.0 / years)
    assert s["trades_per_year"] == pytest.approx(4.0 / years)
