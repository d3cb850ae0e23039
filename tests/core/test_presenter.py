"""The presenter: every row's value is the record's own field, formatted the usual way."""

from __future__ import annotations

import math

import pytest

from hunchbook.core.presenter import (
    MISSING,
    format_params,
    format_value,
    market_table,
    performance_rows,
    set_table,
    statistic_rows,
)
from tests.core.test_results import run  # noqa: F401 (the module-scoped record fixture)


def _rows(rows):
    return {r.label: (r.gross, r.net) for r in rows}


def test_rows_carry_the_record_fields(run) -> None:  # noqa: F811
    record, daily = run
    perf = _rows(performance_rows(record.chosen.performance))
    assert perf["Total P&L"] == (pytest.approx(daily["gross_pnl"].sum()),
                                 pytest.approx(daily["net_pnl"].sum()))
    assert perf["Contracts per year"][0] is None  # one-valued figures have no gross cell
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


def test_the_total_cost_note_names_every_cost_the_engine_counts():
    # the engine's cost per contract adds commission, exchange and regulatory fees and
    # slippage (core/markets.py, MarketSpec.cost_per_contract): the note names each one
    from hunchbook.core.presenter import PERFORMANCE_FIGURES

    (total,) = [f for f in PERFORMANCE_FIGURES if f.label == "Total cost"]
    note = total.note.lower()
    assert all(word in note for word in ("commission", "exchange", "regulatory", "slippage"))
