"""The presenter: every row's value is the record's own field, formatted the usual way."""

from __future__ import annotations

import math
from dataclasses import replace

import pytest

from hunchbook.core.capital_figures import capital_figures, monthly_returns
from hunchbook.core.presenter import (
    MISSING,
    PERFORMANCE_FIGURES,
    chosen_rows,
    format_params,
    format_value,
    market_table,
    monthly_table,
    performance_rows,
    set_table,
    sharpe_sentence,
    statistic_rows,
    year_table,
)
from tests.core.test_results import run  # noqa: F401 (the module-scoped record fixture)


def _rows(rows):
    return {r.label: (r.gross, r.net) for r in rows}


def test_rows_carry_the_record_fields(run) -> None:  # noqa: F811
    record, daily = run
    perf = _rows(performance_rows(record.chosen.performance, "USD"))
    assert perf["Total P&L (USD)"] == (pytest.approx(daily["gross_pnl"].sum()),
                                 pytest.approx(daily["net_pnl"].sum()))
    assert perf["Contracts per year"][0] is None  # one value: no gross cell
    stats = record.statistics
    rows = _rows(statistic_rows(stats))
    assert rows["Probabilistic Sharpe (vs 0)"] == (stats.gross.psr, stats.net.psr)
    assert rows["Deflated Sharpe"] == (stats.gross_dsr, stats.dsr)
    assert rows["Trials counted"] == (None, stats.n_trials)
    assert rows["Effective trials"] == (None, stats.dsr_trials)
    assert rows["Best Sharpe by luck"] == (None, stats.expected_max_sharpe)
    assert rows["SPA p-value (4 sets)"] == (None, stats.spa.consistent)
    walk = stats.walk_forward
    assert rows["Walk-forward Sharpe (out of sample)"] == (
        None, None if walk is None else walk.oos_sharpe)
    assert rows["Prob. of backtest overfitting"] == (
        None, None if stats.overfitting is None else stats.overfitting.pbo)
    assert rows["Days in the statistics"] == (None, stats.n_days)
    markets = market_table(record)
    assert [name for name, _ in markets.rows] == ["M1", "M2"]
    sets = set_table(record, limit=2)
    assert len(sets.rows) == 2 and sets.rows[0][0] == format_params(record.chosen.params)


def test_values_are_formatted_as_traders_read_them() -> None:
    """Thousands separators, two decimals for ratios, a dash for undefined figures (common
    practice, no source)."""
    assert format_value(1234567.8, "money") == "1,234,568"
    assert format_value(0.4567, "pct") == "45.7 %"
    assert format_value(1.234, "ratio") == "1.23"
    assert format_value(0.04321, "pvalue") == "0.043"
    assert format_value(2.5, "multiple") == "2.50×"
    assert format_value(12.0, "count") == "12" and format_value(12.25, "count") == "12.2"
    assert format_value(math.nan, "ratio") == format_value(None, "money") == MISSING
    assert format_params({"fast": 8.0, "slow": 64.0}) == "fast=8, slow=64"
    assert format_params({}) == "no parameters"


def test_every_figure_in_currency_says_so_and_costs_give_both_sides(run) -> None:  # noqa: F811
    record, daily = run
    rows = chosen_rows(record)
    money = [r.label for r in rows if r.kind == "money"]
    assert money and all("USD" in label for label in money)
    assert all(f.unit for f in PERFORMANCE_FIGURES if f.kind in ("money", "count", "pct"))
    perf = _rows(rows)
    p = record.chosen.performance
    # a round turn is a buy and a sell: twice the per-side cost (common practice, no source)
    side = perf["Cost per contract (USD/side)"][1]
    assert side == pytest.approx(daily["cost"].sum() / daily["contracts_traded"].sum())
    assert perf["Cost per round turn (USD)"][1] == pytest.approx(2 * side)
    assert perf["Break-even per contract (USD/side)"][1] == pytest.approx(
        p.break_even_cost)
    assert perf["Break-even per round turn (USD)"][1] == pytest.approx(
        2 * p.break_even_cost)
    assert all("USD" in c.label for c in market_table(record).columns if c.kind == "money")
    assert all("USD" in c.label for c in set_table(record).columns if c.kind == "money")


def test_capital_rows_and_the_year_table(run) -> None:  # noqa: F811
    record, daily = run
    assert record.capital is not None and record.capital.capital is None  # no capital given
    assert "Annual return (% of capital)" not in _rows(chosen_rows(record))
    with_capital = replace(record, capital=capital_figures(daily, 50_000.0, "run option"))
    perf = _rows(chosen_rows(with_capital))
    # reference library: pandas (mean x 252 / capital)
    assert perf["Annual return (% of capital)"][1] == pytest.approx(
        daily["net_pnl"].mean() * 252 / 50_000.0)
    assert perf["Capital (USD)"] == (None, 50_000.0)
    dd = with_capital.capital.net_drawdown
    length = next(k for k in perf if k.startswith("Max drawdown length (trading days"))
    assert perf[length][1] == dd.length_days and ("still open" in length) == dd.open
    years = year_table(with_capital)
    sums = daily["net_pnl"].groupby(daily.index.year).sum()
    assert [name for name, _ in years.rows] == [str(y) for y in sums.index]
    assert [values[0] for _, values in years.rows] == pytest.approx(list(sums))
    assert [values[1] for _, values in years.rows] == pytest.approx(list(sums / 50_000.0))
    monthly = monthly_table(monthly_returns(daily["net_pnl"], 50_000.0), 50_000.0, "USD")
    assert monthly.columns[-1].label == "Total (% of capital)"
    assert [values[-1] for _, values in monthly.rows] == pytest.approx(list(sums / 50_000.0))


def test_the_two_sharpe_ratios_are_explained_when_they_differ(run) -> None:  # noqa: F811
    record, _ = run
    sentence = sharpe_sentence(record)
    if record.chosen.performance.days == record.statistics.n_days:
        assert sentence is None
    else:
        assert sentence is not None and f"{record.statistics.n_days:,} days" in sentence
    same = replace(record, statistics=replace(record.statistics,
                                              n_days=record.chosen.performance.days))
    assert sharpe_sentence(same) is None


def test_the_total_cost_note_names_every_cost_the_engine_counts():
    # the engine's cost per contract adds commission, exchange and regulatory fees and
    # slippage (core/markets.py, MarketSpec.cost_per_contract): the note names each one
    from hunchbook.core.presenter import PERFORMANCE_FIGURES

    (total,) = [f for f in PERFORMANCE_FIGURES if f.label == "Total cost"]
    note = total.note.lower()
    assert all(word in note for word in ("commission", "exchange", "regulatory", "slippage"))
