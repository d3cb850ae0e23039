"""The engine against an independent straightforward pandas implementation of the documented
semantics (tests/reference_impl.py), on generated contract data with rolls, fractional and
sign-flipping positions, delays, a start window, ratio adjustment and volatility targeting.
Agreement to 1e-9."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from hunchbook.api import run
from tests.reference_impl import (
    TWO_MARKET_LIBRARY,
    backtest,
    continuous,
    random_contract_rows,
)

LIBRARY = TWO_MARKET_LIBRARY
COST = {"M1": 0.85 + 1.45 + 0.02 + 1 * 0.01 * 1000, "M2": 0.5 + 1.2 + 0.02 + 2 * 0.25 * 50}
MULT = {"M1": 1000.0, "M2": 50.0}


@pytest.fixture(scope="module")
def data_dir(tmp_path_factory):
    folder = tmp_path_factory.mktemp("data")
    (folder / "markets.toml").write_text(LIBRARY)
    raw = {"M1": random_contract_rows(1, "2020-01-01", 420, holidays=9),
           "M2": random_contract_rows(2, "2020-01-01", 420, holidays=14)}
    for market, rows in raw.items():
        rows.assign(date=rows["date"].dt.strftime("%Y-%m-%d"),
                    expiry=rows["expiry"].dt.strftime("%Y-%m-%d")) \
            .sample(frac=1.0, random_state=3).to_csv(folder / f"{market}.csv", index=False)
    return folder, raw


def _rules(tmp_path, body):
    path = tmp_path / "rules.toml"
    path.write_text('name = "reference check"\nmarkets = ["M1", "M2"]\n' + body)
    return path


def _compare(result, expected_by_market):
    table = result.pnl
    for market, expected in expected_by_market.items():
        got = table[table["market"] == market].reset_index(drop=True)
        assert len(got) == len(expected) > 100
        assert list(got["date"]) == list(expected["date"])
        assert list(got["contract"]) == list(expected["contract"])
        for col in ("position", "price_change", "gross_pnl", "contracts_traded", "cost",
                    "net_pnl"):
            np.testing.assert_allclose(got[col], expected[col], rtol=1e-9, atol=1e-9,
                                       err_msg=f"{market} {col}")
    # portfolio: the sum over markets on the union of dates
    both = pd.concat(expected_by_market.values())
    daily = both.groupby("date")[["gross_pnl", "cost", "net_pnl"]].sum()
    portfolio = result.portfolio
    assert list(portfolio.index) == list(daily.index)
    np.testing.assert_allclose(portfolio["net_pnl"], daily["net_pnl"], rtol=1e-9, atol=1e-9)
    metrics = result.metrics["portfolio"]
    assert metrics["net"]["total"] == pytest.approx(daily["net_pnl"].sum(), rel=1e-9)
    assert metrics["cost_total"] == pytest.approx(daily["cost"].sum(), rel=1e-9)


def test_two_average_cross_fractional(tmp_path, data_dir):
    folder, raw = data_dir
    rules = _rules(tmp_path, """
[parameters]
fast = [5]
slow = [20]
[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
[roll]
days_before_expiry = 3
adjust = "difference"
[sizing]
contracts = 1.7
""")
    expected = {}
    for market, rows in raw.items():
        frame = continuous(rows, 3, "difference")
        adj = frame["adjusted"]
        target = 1.7 * np.sign(adj.rolling(5).mean() - adj.rolling(20).mean())
        expected[market] = backtest(frame, target, MULT[market], COST[market])
    result = run(rules, folder)
    _compare(result, expected)
    # the positions do flip sign and there are rolls with open positions
    table = result.pnl
    assert (table["position"] > 0).any() and (table["position"] < 0).any()


def test_zscore_delay_start_ratio(tmp_path, data_dir):
    folder, raw = data_dir
    rules = _rules(tmp_path, """
start = 2020-06-01
[parameters]
n = [15]
[signal]
position = "clip((close - mean(close, n)) / std(close, n), -2, 2)"
delay = 1
[roll]
days_before_expiry = 0
adjust = "ratio"
[sizing]
contracts = 0.5
[costs]
slippage_ticks = 3
""")
    expected = {}
    for market, rows in raw.items():
        frame = continuous(rows, 0, "ratio")
        adj = frame["adjusted"]
        z = ((adj - adj.rolling(15).mean()) / adj.rolling(15).std()).clip(-2, 2)
        target = (0.5 * z).shift(1)
        spec = {"M1": (0.85 + 1.45 + 0.02, 0.01 * 1000), "M2": (0.5 + 1.2 + 0.02, 0.25 * 50)}
        fees, tick_value = spec[market]
        expected[market] = backtest(frame, target, MULT[market], fees + 3 * tick_value,
                                    start="2020-06-01")
    _compare(run(rules, folder), expected)


def test_volatility_target(tmp_path, data_dir):
    folder, raw = data_dir
    rules = _rules(tmp_path, """
[signal]
position = "sign(diff(close, 10))"
[roll]
days_before_expiry = 5
[sizing]
target_vol = 0.2
capital = 1_000_000
vol_window = 20
""")
    expected = {}
    for market, rows in raw.items():
        frame = continuous(rows, 5, "difference")
        adj = frame["adjusted"]
        # contracts = capital x target / (multiplier x annualised price-change vol):
        # shared reference s.8 (common practice, no source)
        sigma = adj.diff().rolling(20).std() * math.sqrt(252)
        contracts = 1_000_000 * 0.2 / (MULT[market] * sigma)
        expected[market] = backtest(frame, contracts * np.sign(adj.diff(10)), MULT[market],
                                    COST[market])
    _compare(run(rules, folder), expected)

