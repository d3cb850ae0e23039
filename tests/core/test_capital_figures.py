"""The figures against a capital, the year-by-year and monthly tables, the drawdown's length and
the trade count.

Sources: pandas computations written here (reference library: pandas: ``resample``,
``groupby``, ``cummax``, ``std(ddof=1)``), hand-worked series (drawdown length; trades on a
hand-built position matrix), and the annualisation by 252 trading days and sqrt(252)
(common practice, no source).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from hunchbook.api import Study
from hunchbook.core.capital_figures import (
    MONTHS,
    capital_figures,
    drawdown_figures,
    monthly_returns,
    resolve_capital,
    year_rows,
)
from hunchbook.core.engine import EngineOutput
from tests.reference_impl import TWO_MARKET_LIBRARY, write_random_contracts

CAPITAL = 250_000.0


def _dates(n: int) -> np.ndarray:
    return pd.bdate_range("2021-03-01", periods=n).values


def _daily(seed: int = 5, n: int = 800) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    gross = rng.normal(120.0, 2_000.0, n)
    cost = rng.uniform(0.0, 60.0, n)
    index = pd.DatetimeIndex(pd.bdate_range("2019-05-13", periods=n), name="date")
    return pd.DataFrame({"gross_pnl": gross, "cost": cost, "net_pnl": gross - cost},
                        index=index)


def test_drawdown_length_on_a_hand_worked_series():
    # By hand: cumulative 1, 3, -1, 0, 2, 3, 2 (0 before the first day). The peak 3 is
    # reached on day 1, the trough -1 on day 2 (a fall of 4), and 3 again on day 5: from the
    # peak to the recovery 4 trading days (days 2, 3, 4, 5). The later fall of 1 is smaller.
    days = _dates(7)
    dd = drawdown_figures(np.array([1.0, 2.0, -4.0, 1.0, 2.0, 1.0, -1.0]), days, capital=20.0)
    assert dd.max_drawdown == pytest.approx(4.0)
    assert dd.max_drawdown_pct == pytest.approx(4.0 / 20.0)
    assert (dd.peak, dd.trough, dd.recovered_on) == (str(days[1])[:10], str(days[2])[:10],
                                                     str(days[5])[:10])
    assert dd.length_days == 4 and not dd.open


def test_open_drawdown_counts_to_the_last_day():
    # By hand: cumulative 2, 1, 0, 0.5: the peak 2 on day 0, the trough 0 on day 2, never back
    # at 2: open, 3 trading days so far (days 1, 2, 3).
    days = _dates(4)
    dd = drawdown_figures(np.array([2.0, -1.0, -1.0, 0.5]), days)
    assert dd.max_drawdown == pytest.approx(2.0) and math.isnan(dd.max_drawdown_pct)
    assert dd.open and dd.recovered_on is None and dd.length_days == 3
    assert dd.peak == str(days[0])[:10] and dd.trough == str(days[2])[:10]


def test_drawdown_from_the_start_and_none_at_all():
    # By hand: cumulative -1, -3, 1: the peak is the start (0), back above it on day 2 (3 days).
    dd = drawdown_figures(np.array([-1.0, -2.0, 4.0]), _dates(3))
    assert dd.peak is None and dd.max_drawdown == pytest.approx(3.0) and dd.length_days == 3
    rising = drawdown_figures(np.array([1.0, 0.0, 2.0]), _dates(3))
    assert rising.max_drawdown == 0.0 and rising.length_days == 0 and rising.peak is None


def test_drawdown_matches_pandas_cummax():
    daily = _daily(seed=9)
    dd = drawdown_figures(daily["net_pnl"].to_numpy(), daily.index.values, CAPITAL)
    # reference library: pandas: the running peak (the start a peak of 0) minus the equity
    equity = daily["net_pnl"].cumsum()
    fall = equity.cummax().clip(lower=0.0) - equity
    assert dd.max_drawdown == pytest.approx(fall.max(), rel=1e-12)
    assert dd.max_drawdown_pct == pytest.approx(fall.max() / CAPITAL, rel=1e-12)
    assert dd.trough == fall.idxmax().date().isoformat()
    peak_level = equity.cummax().clip(lower=0.0)[fall.idxmax()]
    after = equity[equity.index > fall.idxmax()]
    back = after[after >= peak_level]
    if dd.open:
        assert back.empty
    else:
        assert dd.recovered_on == back.index[0].date().isoformat()


def test_year_rows_match_pandas():
    daily = _daily()
    rows = year_rows(daily, CAPITAL)
    # reference library: pandas: calendar-year sums, sample sd, running peaks within each year
    net = daily["net_pnl"]
    sums = net.resample("YE").sum()
    costs = daily["cost"].resample("YE").sum()
    assert [r.year for r in rows] == list(sums.index.year)
    for row in rows:
        part = net[net.index.year == row.year]
        assert row.days == len(part)
        assert row.net_pnl == pytest.approx(sums[sums.index.year == row.year].iloc[0], rel=1e-12)
        assert row.return_pct == pytest.approx(row.net_pnl / CAPITAL, rel=1e-12)
        assert row.cost == pytest.approx(costs[costs.index.year == row.year].iloc[0], rel=1e-12)
        assert row.sharpe == pytest.approx(part.mean() / part.std(ddof=1) * math.sqrt(252),
                                           rel=1e-10)
        equity = part.cumsum()
        fall = (equity.cummax().clip(lower=0.0) - equity).max()
        assert row.max_drawdown == pytest.approx(fall, rel=1e-12)
        assert row.max_drawdown_pct == pytest.approx(fall / CAPITAL, rel=1e-12)


def test_capital_figures_match_pandas():
    daily = _daily(seed=3)
    figures = capital_figures(daily, CAPITAL, "sizing")
    # reference library: pandas; annualising by 252 and sqrt(252): common practice, no source
    for side, ret, vol in (("gross", figures.gross_return, figures.gross_vol),
                           ("net", figures.net_return, figures.net_vol)):
        x = daily[f"{side}_pnl"]
        assert ret == pytest.approx(x.mean() * 252 / CAPITAL, rel=1e-12)
        assert vol == pytest.approx(x.std(ddof=1) * math.sqrt(252) / CAPITAL, rel=1e-12)
    assert figures.capital == CAPITAL and figures.capital_source == "sizing"
    assert len(figures.years) == len(daily.resample("YE").sum())


def test_without_a_capital_the_shares_are_undefined_and_currency_figures_stand():
    daily = _daily(seed=4, n=300)
    figures = capital_figures(daily, None, "run option")
    assert figures.capital_source == "none"
    assert math.isnan(figures.net_return) and math.isnan(figures.net_drawdown.max_drawdown_pct)
    assert figures.net_drawdown.max_drawdown > 0
    assert all(math.isnan(r.return_pct) and r.net_pnl == r.net_pnl for r in figures.years)


def test_capital_comes_from_the_rule_first_then_the_run_then_the_desk():
    # the more specific setting wins (common practice, no source)
    assert resolve_capital(1e6, 5e5, 2e6) == (1e6, "sizing")
    assert resolve_capital(None, 5e5, 2e6) == (5e5, "run option")
    assert resolve_capital(None, None, 2e6) == (2e6, "desk setting")
    assert resolve_capital(None, 5e5) == (5e5, "run option")
    assert resolve_capital(None, None) == (None, "none")


def test_monthly_returns_match_pandas_resample():
    daily = _daily(seed=6)
    table = monthly_returns(daily["net_pnl"], CAPITAL)
    # reference library: pandas: month-end sums
    months = daily["net_pnl"].resample("ME").sum() / CAPITAL
    assert list(table.columns) == list(MONTHS)
    for when, value in months.items():
        assert table.loc[when.year, MONTHS[when.month - 1]] == pytest.approx(value, rel=1e-12)
    first = daily.index[0]
    assert all(math.isnan(table.loc[first.year, m]) for m in MONTHS[:first.month - 1])
    in_currency = monthly_returns(daily["net_pnl"])
    assert in_currency.loc[first.year, MONTHS[first.month - 1]] == pytest.approx(
        months.iloc[0] * CAPITAL, rel=1e-12)


def test_trades_are_position_changes_per_market_on_a_hand_built_matrix():
    # By hand: market A goes 0 -> 1 on bar 1 and 1 -> 2 on bar 3 (two trades), then rolls on
    # bar 4 holding 2 (4 contracts traded, no trade); market B opens 1 on bar 0 and closes on
    # bar 2 (two trades). Trades: 4; contracts traded: 1 + 1 + 4 + 1 + 1 = 8.
    position = np.array([[0.0, 1.0], [1.0, 1.0], [1.0, 0.0], [2.0, 0.0], [2.0, 0.0]])
    traded = np.array([[0.0, 1.0], [1.0, 0.0], [0.0, 1.0], [1.0, 0.0], [4.0, 0.0]])
    out = EngineOutput(panel=None, params={}, window=np.ones((5, 2), bool),  # type: ignore[arg-type]
                       position=position, gross=np.zeros((5, 2)), traded=traded,
                       first=np.zeros(2, dtype=int))
    assert out.trades.sum() == 4 and traded.sum() == 8
    assert out.trades[:, 0].tolist() == [False, True, False, True, False]


def test_fractional_resizing_is_a_trade_only_when_the_whole_contracts_change():
    # By hand: 0.2, 0.4, 0.7, 1.3, 1.4 contracts: whole contracts 0, 0, 1, 1, 1: one trade (bar
    # 2), while 1.4 contracts were traded in all.
    position = np.array([[0.2], [0.4], [0.7], [1.3], [1.4]])
    traded = np.abs(np.diff(position, axis=0, prepend=0.0))
    out = EngineOutput(panel=None, params={}, window=np.ones((5, 1), bool),  # type: ignore[arg-type]
                       position=position, gross=np.zeros((5, 1)), traded=traded,
                       first=np.zeros(1, dtype=int))
    assert out.trades[:, 0].tolist() == [False, False, True, False, False]
    assert traded.sum() == pytest.approx(1.4)


RULES = """
name = "Trades"
markets = ["M1", "M2"]
[signal]
position = "sign(mean(close, 5) - mean(close, 30))"
[sizing]
contracts = 3
capital = 400_000
"""


def test_trade_count_of_a_run_matches_pandas_on_its_positions(tmp_path):
    (tmp_path / "markets.toml").write_text(TWO_MARKET_LIBRARY)
    write_random_contracts(tmp_path / "M1.csv", seed=21, start="2015-01-02", periods=700,
                           holidays=5)
    write_random_contracts(tmp_path / "M2.csv", seed=22, start="2015-02-02", periods=650,
                           holidays=4)
    study = Study.from_text(RULES, tmp_path)
    result = study.run_set({})
    table = result.pnl
    # reference library: pandas: a trade is a change of a market's position in whole
    # contracts from its day before (flat before the first row)
    changes = sum(int((g["position"].round().diff().fillna(g["position"].round()) != 0).sum())
                  for _, g in table.groupby("market"))
    p = result.metrics["portfolio"]
    assert p["trades"] == changes
    assert p["contracts_traded"] == pytest.approx(table["contracts_traded"].sum(), rel=1e-12)
    assert p["contracts_traded"] > 3 * changes - 1e-9  # rolls trade contracts too
    report = study.sweep()
    assert report.outcome.figures.trades[0] == changes  # the sweep counts them the same way
    run = report.summarise(result, currency="USD", data_folder="x")
    assert run.capital is not None and run.capital.capital == 400_000.0
    assert run.capital.capital_source == "sizing"


def test_a_capital_beside_fixed_contracts_is_read_and_written_back():
    from hunchbook.core.rules import parse_rules
    from hunchbook.core.rules.write import dump_rules

    spec = parse_rules(RULES)
    assert (spec.sizing.contracts, spec.sizing.capital) == (3.0, 400_000.0)
    assert parse_rules(dump_rules(spec)).sizing == spec.sizing
