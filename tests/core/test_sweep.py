"""Sweeps: every set's figures equal a single run of that set (to 1e-9), in this process and
across worker processes; progress and cancel behave."""

from __future__ import annotations

import numpy as np
import pytest

from hunchbook.api import Study, load_data, load_rules
from hunchbook.core.sweep import SweepCancelled, run_sweep
from hunchbook.core.sweep_summary import summarise_sweep
from tests.reference_impl import TWO_MARKET_LIBRARY, random_contract_rows

LIBRARY = TWO_MARKET_LIBRARY
RULES = """
name = "sweep check"
markets = ["M1", "M2"]
start = 2020-03-02
[parameters]
fast = [3, 5, 8]
slow = { start = 10, stop = 40, step = 10 }
constraint = "fast * 2 < slow"
[signal]
position = "clip((mean(close, fast) - mean(close, slow)) / std(close, slow), -1.5, 1.5)"
[roll]
days_before_expiry = 2
[sizing]
contracts = 1.3
"""


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    folder = tmp_path_factory.mktemp("sweep")
    (folder / "markets.toml").write_text(LIBRARY)
    for market, seed, holidays in (("M1", 11, 8), ("M2", 12, 15)):
        rows = random_contract_rows(seed, "2019-06-03", 400, holidays=holidays)
        rows.assign(date=rows["date"].dt.strftime("%Y-%m-%d"),
                    expiry=rows["expiry"].dt.strftime("%Y-%m-%d")) \
            .to_csv(folder / f"{market}.csv", index=False)
    return folder


def _study(folder, text):
    (folder / "rules.toml").write_text(text)
    rules = load_rules(folder / "rules.toml")
    return Study(rules, load_data(folder, list(rules.markets)))


@pytest.fixture(scope="module")
def study(folder):
    return _study(folder, RULES)


def _assert_same(summary, single):
    port, ref = summary["portfolio"], single.metrics["portfolio"]
    for side in ("gross", "net"):
        for key, value in ref[side].items():
            assert port[side][key] == pytest.approx(value, rel=1e-9, abs=1e-9, nan_ok=True), key
    assert (port["first_date"], port["last_date"]) == (ref["first_date"], ref["last_date"])
    for key in ("days", "trades", "contracts_traded", "cost_total",
                "break_even_cost", "cost_share_of_gross", "years", "contracts_per_year"):
        assert port[key] == pytest.approx(ref[key], rel=1e-9, abs=1e-9), key
    assert port["cost_per_year"] == pytest.approx(ref["cost_per_year"], rel=1e-9)
    for market, m in summary["markets"].items():
        r = single.metrics["markets"][market]
        for side in ("gross", "net"):
            for key in ("total", "sharpe"):
                assert m[side][key] == pytest.approx(r[side][key], rel=1e-9, abs=1e-9)
        for key in ("cost_total", "contracts_traded", "contracts_per_year", "break_even_cost"):
            assert m[key] == pytest.approx(r[key], rel=1e-9, abs=1e-9), key


@pytest.mark.parametrize(("workers", "start_method"), [(1, None), (2, "fork"), (2, "spawn")])
def test_sweep_equals_single_runs(study, workers, start_method, monkeypatch):
    import hunchbook.core.sweep as sweep_module

    monkeypatch.setattr(sweep_module, "MIN_SETS_FOR_PROCESSES", 2)
    if start_method:
        monkeypatch.setattr(sweep_module, "_start_method", lambda: start_method)
    sets = study.parameter_sets()
    # constraint fast * 2 < slow removes (5, 10) and (8, 10): 3 x 4 - 2 = 10 sets
    assert len(sets) == 10
    seen = []
    outcome = run_sweep(study.backtest, sets, workers=workers,
                        progress=lambda done, total: seen.append((done, total)))
    assert seen[-1] == (10, 10) and all(t == 10 for _, t in seen)
    summaries = summarise_sweep(outcome)
    for params, summary in zip(sets, summaries, strict=True):
        single = study.run_set(params)
        _assert_same(summary, single)
        daily = single.portfolio
        k = sets.index(params)
        mask = outcome.used[:, k]
        np.testing.assert_allclose(outcome.net[mask, k], daily["net_pnl"], rtol=1e-9, atol=1e-9)


def test_cancel_stops_the_sweep(study):
    calls = []

    def cancel():
        calls.append(1)
        return len(calls) > 3

    with pytest.raises(SweepCancelled):
        run_sweep(study.backtest, study.parameter_sets(), workers=1, cancel=cancel)



def test_one_calendar_takes_the_aligned_path(folder):
    # one market and no start date: every bar is a union day, so no gather is needed
    from hunchbook.core.sweep import _Aggregator

    single = _study(folder, RULES.replace('markets = ["M1", "M2"]', 'markets = ["M1"]')
                    .replace("start = 2020-03-02\n", ""))
    assert _Aggregator(single.backtest).aligned
    sets = single.parameter_sets()
    outcome = run_sweep(single.backtest, sets, workers=1)
    for params, summary in zip(sets, summarise_sweep(outcome), strict=True):
        _assert_same(summary, single.run_set(params))
