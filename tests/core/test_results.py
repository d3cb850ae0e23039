"""The run record: built from a real sweep, its figures equal independent computations, and it
survives JSON both ways; bad records are refused naming the field at fault."""

from __future__ import annotations

import dataclasses
import json
import math

import pandas as pd
import pytest

from hunchbook.api import Study, load_data, load_rules
from hunchbook.core.errors import RecordError
from hunchbook.core.results import SCHEMA, RunSummary
from hunchbook.core.runners import InProcess
from tests.reference_impl import TWO_MARKET_LIBRARY, write_random_contracts

RULES = """
name = "record check"
markets = ["M1", "M2"]
[parameters]
fast = [3, 5]
slow = [10, 20]
[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
[roll]
days_before_expiry = 2
"""


@pytest.fixture(scope="module")
def run(tmp_path_factory) -> tuple[RunSummary, pd.DataFrame]:
    """A sweep's record over generated contract data, and the chosen set's daily P&L."""
    folder = tmp_path_factory.mktemp("record")
    (folder / "markets.toml").write_text(TWO_MARKET_LIBRARY)
    for market, seed in (("M1", 21), ("M2", 22)):
        write_random_contracts(folder / f"{market}.csv", seed, "2019-06-03", 300, holidays=5)
    (folder / "rules.toml").write_text(RULES)
    rules = load_rules(folder / "rules.toml")
    study = Study(rules, load_data(folder))
    report = study.sweep(spa_reps=50, runner=InProcess())
    chosen = study.run_set(report.sets[report.chosen])
    return (report.summarise(chosen, currency="USD", data_folder=str(folder)),
            chosen.portfolio)


def test_record_figures_equal_pandas_on_the_daily_pnl(run) -> None:
    """Chosen set: totals, Sharpe ratio (mean / sample std x sqrt 252) and maximum drawdown
    recomputed with pandas from the engine's daily P&L (reference: pandas)."""
    record, daily = run
    net = daily["net_pnl"]
    p = record.chosen.performance
    assert p.net.total == pytest.approx(net.sum())
    assert p.gross.total == pytest.approx(daily["gross_pnl"].sum())
    assert p.net.sharpe == pytest.approx(net.mean() / net.std() * math.sqrt(252))
    equity = pd.concat([pd.Series([0.0]), net.cumsum()])
    assert p.net.max_drawdown == pytest.approx((equity.cummax() - equity).max())
    assert p.days == len(daily)
    assert [m.market for m in record.chosen.markets] == ["M1", "M2"]
    assert sum(m.net_total for m in record.chosen.markets) == pytest.approx(net.sum())
    # the chosen set is the one the statistics judge, and the best by net Sharpe ratio
    best = max(record.sets, key=lambda s: s.net_sharpe)
    assert record.chosen.params == best.params == record.sets[record.statistics.chosen].params
    assert record.ranked()[0] == record.statistics.chosen


def test_record_survives_strict_json_both_ways(run) -> None:
    """JSON has no NaN or infinity (RFC 8259, section 6): they travel as null and come back
    as NaN (an infinite minimum track record reads back as undefined); everything else comes
    back equal."""
    record, _ = run
    text = json.dumps(record.to_dict(), allow_nan=False)
    back = RunSummary.from_dict(json.loads(text))
    assert back.to_dict() == record.to_dict()
    assert back.verdict.reasons == record.verdict.reasons and back.schema == SCHEMA
    odd = dataclasses.replace(record, sets=(dataclasses.replace(record.sets[0],
                                                                net_sharpe=math.nan),
                                            *record.sets[1:]))
    assert odd.to_dict()["sets"][0]["net_sharpe"] is None
    assert math.isnan(RunSummary.from_dict(odd.to_dict()).sets[0].net_sharpe)


@pytest.mark.parametrize(("edit", "field", "problem"), [
    (lambda d: d["statistics"]["net"].update(sharpe="high"), "statistics.net.sharpe",
     "expected a number"),
    (lambda d: d["sets"][1].pop("params"), "sets[1].params", "missing"),
    (lambda d: d["chosen"]["markets"][0].update(market=3), "chosen.markets[0].market",
     "expected text"),
    (lambda d: d["verdict"].update(reasons="fine"), "verdict.reasons", "expected a list"),
    (lambda d: d["statistics"].update(spa=[1]), "statistics.spa", "expected a table"),
    (lambda d: d.update(schema=0), "schema", "expected results of schema"),
    (lambda d: d["statistics"].update(n_trials=True), "statistics.n_trials",
     "expected a whole number"),
])
def test_a_bad_record_names_the_field_at_fault(run, edit, field, problem) -> None:
    record, _ = run
    data = json.loads(json.dumps(record.to_dict()))
    edit(data)
    with pytest.raises(RecordError, match=problem) as caught:
        RunSummary.from_dict(data)
    assert caught.value.field == field
    assert str(caught.value).startswith(f"field '{field}': ")
