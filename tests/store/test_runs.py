"""Runs, trial counting across revisions and the numbers the deflated Sharpe needs."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pandas as pd
import pytest
from scipy.stats import norm

from hunchbook.catalogue import Catalogue
from hunchbook.store.errors import CatalogueError
from tests.store.helpers import (
    RULES,
    accepted_idea,
    amended_run,
    daily_pnl,
    run_args,
    run_summary,
)


def _grid(fast: list[float], slow: float = 50.0) -> list[dict[str, float]]:
    return [{"fast": f, "slow": slow} for f in fast]


def test_a_run_is_stored_whole_and_its_pnl_round_trips_exactly(cat: Catalogue) -> None:
    idea = accepted_idea(cat)
    rev = cat.save_rules(idea, RULES, by="Nia")
    args = run_args(_grid([5.0, 10.0]), [0.25, float("nan")], chosen=0)
    run_id = cat.record_run(idea, revision_id=rev.id, by="Theo", **args)
    run = cat.run(run_id)
    assert (run.idea_id, run.revision_id, run.revision_number, run.set_count) == (
        idea, rev.id, 1, 2)
    assert run.parameter_sets == tuple(_grid([5.0, 10.0]))
    assert (run.data_fingerprint, run.engine_version, run.recorded_by) == ("f" * 64, "0.1.0",
                                                                           "Theo")
    # The results record comes back equal field by field (NaN read back as NaN), and the
    # stored JSON holds null for NaN (JSON has no NaN: RFC 8259, section 6).
    assert run.result.to_dict() == args["summary"].to_dict()
    assert math.isnan(run.result.sets[1].net_sharpe)
    stored = cat.db.execute("SELECT summary FROM runs WHERE id = ?", [run_id]).fetchone()[0]
    assert '"net_sharpe":null' in stored and "NaN" not in stored
    assert (run.verdict_label, run.chosen_params, run.chosen_net_sharpe) == (
        "no_edge", {"fast": 5.0, "slow": 50.0}, 0.25)
    # Exact round trip of the chosen set's daily P&L (pandas equality as the reference).
    # (the index comes back at nanosecond resolution whatever resolution went in).
    pd.testing.assert_frame_equal(run.daily_pnl, args["daily_pnl"], check_freq=False,
                                  check_index_type=False)
    assert (run.daily_pnl.index == args["daily_pnl"].index).all()
    assert cat.runs(idea)[0].daily_pnl is None  # lists stay light
    idea_row = cat.idea(idea)
    assert (idea_row.last_verdict, idea_row.last_net_sharpe, idea_row.trial_count) == (
        "no_edge", 0.25, 2)
    run_entry = cat.journal(idea, kind="run")[-1]
    assert "Verdict: no edge. Gross result not significant." in run_entry.text
    assert "trial count now 2" in run_entry.text


def test_daily_pnl_is_stored_compactly(cat: Catalogue) -> None:
    """Ten years of days take well under the 3 x 8 bytes a day of raw float64 columns plus
    dates (common practice, no source: compressed binary beats text)."""
    idea = accepted_idea(cat)
    rev = cat.save_rules(idea, RULES, by="Nia")
    args = run_args(_grid([5.0]), [0.1])
    args["daily_pnl"] = daily_pnl(days=2_520)
    run_id = cat.record_run(idea, revision_id=rev.id, by="Nia", **args)
    size = cat.db.execute("SELECT length(daily_pnl) FROM runs WHERE id = ?",
                          [run_id]).fetchone()[0]
    csv_size = len(args["daily_pnl"].to_csv().encode())
    assert size < 2_520 * 32 and size < csv_size / 2


def test_trials_are_distinct_strategy_and_parameter_pairs_across_revisions(
        cat: Catalogue) -> None:
    """Counting by hand: run 1 tries fast 5, 10; run 2 (same revision) repeats 10 and adds 20;
    revision 2 only reformats the file and widens the grid, so its fast 10 is the same trial
    and 40 is new; revision 3 changes the signal, so both of its sets are new trials."""
    idea = accepted_idea(cat)
    # the first run pre-registers every value tried below
    rev1 = cat.save_rules(idea, RULES.replace("fast = [5, 10]", "fast = [5, 10, 20, 40]"),
                          by="Nia")
    record = lambda rev, fast, sharpes: cat.record_run(  # noqa: E731
        idea, revision_id=rev.id, by="Nia", **run_args(_grid(fast), sharpes))
    record(rev1, [5.0, 10.0], [0.1, 0.2])
    assert cat.trial_count(idea) == 2
    record(rev1, [10.0, 20.0], [0.25, 0.3])
    assert cat.trial_count(idea) == 3
    rev2 = cat.save_rules(idea, RULES.replace("fast = [5, 10]", "fast = [5, 10, 40]")
                          .replace('name = "Two averages"', 'name = "Two averages, wider"')
                          + "\n# comments and names do not change what is computed\n", by="Nia")
    assert rev2.strategy_key == rev1.strategy_key
    record(rev2, [10.0, 40.0], [0.22, 0.5])
    assert cat.trial_count(idea) == 4
    rev3 = cat.save_rules(idea, RULES.replace("mean(close, fast)", "ewm(close, fast)"),
                          by="Nia")
    assert rev3.strategy_key != rev1.strategy_key
    record(rev3, [5.0, 10.0], [0.05, None])
    assert cat.trial_count(idea) == 6
    assert [r.trial_count for r in cat.runs(idea)] == [2, 3, 4, 6]
    assert cat.idea(idea).trial_count == 6
    # One Sharpe per trial, from its latest run; the trial without a Sharpe is left out.
    assert sorted(cat.trial_sharpes(idea)) == sorted([0.1, 0.22, 0.3, 0.5, 0.05])


def test_trial_history_feeds_the_deflated_sharpe(cat: Catalogue) -> None:
    """The deflated Sharpe (Bailey & Lopez de Prado 2014, eq. 2 with the expected maximum of
    N trials from their Appendix, using scipy's normal distribution as the reference) must see
    every trial ever run: a second revision's sweep raises N and the variance, so the same
    best result deflates further."""
    idea = accepted_idea(cat)
    rev1 = cat.save_rules(idea, RULES, by="Nia")
    cat.record_run(idea, revision_id=rev1.id, by="Nia",
                   **run_args(_grid([5.0, 10.0]), [0.4, 0.9], chosen=1))
    dsr_first = _dsr(0.9, cat.trial_count(idea), cat.trial_sharpes(idea))
    amended_run(cat, idea, RULES.replace("mean(close, fast)", "ewm(close, fast)")
                .replace("fast = [5, 10]", "fast = [2, 3, 4, 6]"), _grid([2.0, 3.0, 4.0, 6.0]),
                [-0.3, 0.1, 0.6, 0.2], reason="Shorter exponential averages react faster")
    assert cat.trial_count(idea) == 6
    assert sorted(cat.trial_sharpes(idea)) == [-0.3, 0.1, 0.2, 0.4, 0.6, 0.9]
    dsr_all = _dsr(0.9, cat.trial_count(idea), cat.trial_sharpes(idea))
    dsr_sweep_only = _dsr(0.9, 4, [-0.3, 0.1, 0.6, 0.2])
    assert dsr_all < dsr_first and dsr_all < dsr_sweep_only


def _dsr(sharpe: float, trials: int, trial_sharpes: list[float], days: int = 1_000) -> float:
    """Deflated Sharpe of an annualised Sharpe under normal returns (skew 0, kurtosis 3)."""
    gamma = 0.5772156649015329  # Euler-Mascheroni constant
    sd = float(np.std(np.asarray(trial_sharpes) / math.sqrt(252), ddof=1))
    expected_max = sd * ((1 - gamma) * norm.ppf(1 - 1 / trials)
                         + gamma * norm.ppf(1 - 1 / (trials * math.e)))
    sr = sharpe / math.sqrt(252)
    return float(norm.cdf((sr - expected_max) * math.sqrt(days - 1)
                          / math.sqrt(1 + sr * sr / 2)))


def _bad_summary(kind: str) -> object:
    good = run_summary([{"fast": 5.0}, {"fast": 10.0}], [0.2, 0.1])
    if kind == "no sets":
        return replace(good, sets=())
    if kind == "twice":
        return replace(good, sets=(good.sets[0], good.sets[0]))
    if kind == "text":
        return replace(good, sets=(replace(good.sets[0], params={"fast": "five"}),
                                   good.sets[1]))
    if kind == "label":
        return replace(good, verdict=replace(good.verdict, label="two\nlines"))
    if kind == "chosen":
        return replace(good, chosen=replace(good.chosen, params={"fast": 7.0}))
    return good.to_dict()  # a plain table instead of the record


@pytest.mark.parametrize(("change", "message"), [
    ({"summary": "no sets"}, "1 to"),
    ({"summary": "twice"}, "listed twice"),
    ({"summary": "text"}, "expected a number"),
    ({"summary": "label"}, "verdict.label"),
    ({"summary": "chosen"}, "not the set the statistics judge"),
    ({"summary": "plain"}, "results record"),
    ({"daily_pnl": pd.DataFrame({"gross_pnl": [1.0]})}, "missing column"),
    ({"daily_pnl": daily_pnl().iloc[::-1]}, "increasing"),
    ({"daily_pnl": daily_pnl().assign(cost=np.inf)}, "infinite"),
    ({"data_fingerprint": ""}, "must not be empty"),
])
def test_bad_run_input_is_refused_and_nothing_is_written(cat: Catalogue, change: dict,
                                                        message: str) -> None:
    idea = accepted_idea(cat)
    rev = cat.save_rules(idea, RULES, by="Nia")
    args = run_args([{"fast": 5.0}, {"fast": 10.0}], [0.2, 0.1]) | change
    if "summary" in change:
        args["summary"] = _bad_summary(change["summary"])
    with pytest.raises(CatalogueError, match=message):
        cat.record_run(idea, revision_id=rev.id, by="Nia", **args)
    assert cat.runs() == [] and cat.preregistrations(idea) == []
    assert cat.idea(idea).stage == "accepted"


def test_a_revision_of_another_idea_is_refused(cat: Catalogue) -> None:
    a, b = accepted_idea(cat, "A"), accepted_idea(cat, "B")
    rev_b = cat.save_rules(b, RULES, by="Nia")
    with pytest.raises(CatalogueError, match=f"belongs to idea {b}"):
        cat.record_run(a, revision_id=rev_b.id, by="Nia", **run_args([{"fast": 5.0}], [0.2]))
