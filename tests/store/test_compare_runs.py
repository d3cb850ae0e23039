"""Two runs of the demo side by side (:func:`hunchbook.core.compare.compare_runs`): every figure
is the run's own record, checks are paired by key, and the rule-file diff is difflib's."""

from __future__ import annotations

import difflib
import json

import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.core.compare import compare_runs, rule_diff, run_label
from hunchbook.core.presenter import (
    CAPITAL_FIGURES,
    PERFORMANCE_FIGURES,
    capital_applies,
    with_unit,
)
from hunchbook.demo.build import demo_catalogue_copy


@pytest.fixture(scope="module")
def demo(tmp_path_factory: pytest.TempPathFactory) -> Catalogue:
    return Catalogue(demo_catalogue_copy(tmp_path_factory.mktemp("demo") / "demo.sqlite"),
                     read_only=True)


def _breakout(demo: Catalogue) -> tuple:
    """The breakout idea's two runs: the first grid, then the wider one (an amendment)."""
    idea = next(i.id for i in demo.list_ideas() if i.title == "Channel midpoint breakout")
    first, wide = (demo.run(r.id) for r in demo.runs(idea))
    return first, wide, demo.revision(first.revision_id).text, demo.revision(wide.revision_id).text


def test_figures_are_each_runs_own_record(demo: Catalogue) -> None:
    first, wide, text_a, text_b = _breakout(demo)
    comparison = compare_runs(first.result, wide.result, text_a, text_b)
    # every performance figure of the presenter, in its order, for both runs, then those
    # against the capital (the demo's breakout rule gives [sizing] capital)
    labels = [p.label for p in comparison.performance]
    assert labels[:len(PERFORMANCE_FIGURES)] == [
        with_unit(f.label, f.unit, first.result.currency) for f in PERFORMANCE_FIGURES]
    assert len(labels) == len(PERFORMANCE_FIGURES) + len(CAPITAL_FIGURES)
    by_label = {p.label: p for p in comparison.performance}
    for run, side in ((first, "a"), (wide, "b")):
        performance = run.result.chosen.performance
        total = getattr(by_label["Total P&L (USD)"], side)
        assert (total.gross, total.net) == (performance.gross.total, performance.net.total)
        assert getattr(by_label["Total cost (USD)"], side).net == performance.cost_total
        capital = run.result.capital
        assert getattr(by_label["Annual return (% of capital)"], side).net == capital.net_return
        assert getattr(by_label["Capital (USD)"], side).net == capital.capital
        stats = {p.label.split(" (")[0]: getattr(p, side) for p in comparison.statistics}
        assert stats["Sharpe ratio"].net == run.result.statistics.net.sharpe
        assert stats["Trials counted"].net == run.result.statistics.n_trials == run.trial_count
    assert comparison.labels == (first.result.verdict.label, wide.result.verdict.label)


def test_checks_are_paired_by_key(demo: Catalogue) -> None:
    first, wide, text_a, text_b = _breakout(demo)
    comparison = compare_runs(first.result, wide.result, text_a, text_b)
    keys = [p.key for p in comparison.checks]
    assert keys == list(dict.fromkeys([c.key for c in first.result.verdict.checks]
                                      + [c.key for c in wide.result.verdict.checks]))
    for pair in comparison.checks:
        assert pair.a == next((c for c in first.result.verdict.checks if c.key == pair.key),
                              None)
        assert pair.b == next((c for c in wide.result.verdict.checks if c.key == pair.key),
                              None)
    # only the wider grid lies outside the pre-registration: its warning has no partner
    outside = next(p for p in comparison.checks if p.key == "preregistration")
    assert outside.a is None and outside.b.status == "warn"


def test_the_rule_diff_is_difflibs_unified_diff(demo: Catalogue) -> None:
    """difflib (Python's standard library) is the reference for the line-by-line diff."""
    first, wide, text_a, text_b = _breakout(demo)
    names = (run_label(first.id, first.idea_id, first.revision_number),
             run_label(wide.id, wide.idea_id, wide.revision_number))
    comparison = compare_runs(first.result, wide.result, text_a, text_b, names=names)
    expected = list(difflib.unified_diff(text_a.splitlines(), text_b.splitlines(),
                                         fromfile=names[0], tofile=names[1], lineterm=""))
    assert [line.unified() for line in comparison.diff] == expected
    kinds = {line.kind for line in comparison.diff}
    assert {"file", "hunk", "same", "removed", "added"} == kinds
    removed = [line.text for line in comparison.diff if line.kind == "removed"]
    assert "n = { start = 20, stop = 120, step = 20 }" in removed
    assert not comparison.same_rules


def test_runs_of_two_ideas_and_of_the_same_rules_compare(demo: Catalogue) -> None:
    runs = demo.runs()
    a, b = demo.run(runs[0].id), demo.run(runs[-1].id)
    assert a.idea_id != b.idea_id
    text_a = demo.revision(a.revision_id).text
    comparison = compare_runs(a.result, b.result, text_a, demo.revision(b.revision_id).text)
    capital = sum(capital_applies(f, a.result.capital) or capital_applies(f, b.result.capital)
                  for f in CAPITAL_FIGURES)
    assert comparison.diff
    assert len(comparison.performance) == len(PERFORMANCE_FIGURES) + capital
    same = compare_runs(a.result, a.result, text_a, text_a)
    assert same.same_rules and same.diff == () and rule_diff(text_a, text_a) == ()
    assert all(p.a == p.b for p in same.performance + same.statistics)


def test_the_comparison_reads_as_plain_json(demo: Catalogue) -> None:
    first, wide, text_a, text_b = _breakout(demo)
    data = json.loads(json.dumps(compare_runs(first.result, wide.result, text_a,
                                              text_b).to_dict()))
    total = next(f for f in data["performance"] if f["label"] == "Total P&L (USD)")
    assert total["a"]["net"] == first.result.chosen.performance.net.total
    assert data["diff"][0].startswith("--- ")
