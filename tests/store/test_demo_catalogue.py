"""The invented demo catalogue: every stage, every verdict kind, sound records."""

from __future__ import annotations

import math
from pathlib import Path

import pytest
from scipy.stats import kurtosis, norm, skew

from hunchbook.catalogue import STAGES, Catalogue
from hunchbook.core.verdict import LABELS
from hunchbook.demo import DESK
from hunchbook.demo.catalogue import DEMO_TAG, build_demo_catalogue


@pytest.fixture(scope="module")
def demo(tmp_path_factory: pytest.TempPathFactory) -> Catalogue:
    path = build_demo_catalogue(tmp_path_factory.mktemp("demo") / "demo.sqlite")
    return Catalogue(path, create=False)


def test_the_demo_covers_every_stage_and_every_verdict(demo: Catalogue) -> None:
    ideas = demo.list_ideas()
    assert 12 <= len(ideas) <= 20
    assert {i.stage for i in ideas} == set(STAGES)
    assert {r.verdict_label for r in demo.runs()} == set(LABELS)
    assert all(DEMO_TAG in i.tags for i in ideas)
    assert {i.submitted_by for i in ideas} == {p.name for p in DESK.people}
    juniors = {p.name for p in DESK.people[1:]}
    waiting = demo.list_ideas(stage="submitted")
    assert waiting and all(i.submitted_by in juniors for i in waiting)
    assert demo.check() == []


def test_demo_runs_are_consistent_with_the_catalogue(demo: Catalogue) -> None:
    for summary in demo.runs():
        run = demo.run(summary.id)
        stats = run.result.statistics
        assert stats.n_trials == run.trial_count
        assert run.result.verdict.label == LABELS[run.verdict_label]
        assert "invented" in run.engine_version
        assert len(run.daily_pnl) == stats.n_days
        assert run.result.chosen.params == run.chosen_params


def test_demo_runs_reach_the_verdict_each_story_tells(demo: Catalogue) -> None:
    """The demo's invented P&L goes through the engine's own statistics and verdict; each
    run must land on the outcome its story (and its journal notes) describe."""
    assert [r.verdict_label for r in demo.runs()] == [
        "passes", "selection_luck", "selection_luck", "lost_to_costs", "too_little_data",
        "no_edge", "lost_to_costs", "passes"]


def test_demo_psr_matches_scipy(demo: Catalogue) -> None:
    """Probabilistic Sharpe ratio (Bailey & Lopez de Prado 2012, eq. for PSR(0)) recomputed
    from the stored P&L with scipy's bias-corrected skewness and kurtosis."""
    for summary in demo.runs():
        run = demo.run(summary.id)
        x = run.daily_pnl["net_pnl"].to_numpy()
        sr = x.mean() / x.std(ddof=1)
        g3, g4 = skew(x, bias=False), kurtosis(x, fisher=False, bias=False)
        psr = norm.cdf(sr * math.sqrt(len(x) - 1) / math.sqrt(1 - g3 * sr + (g4 - 1) / 4 * sr**2))
        assert run.result.statistics.net.psr == pytest.approx(psr, abs=1e-4)
        assert run.result.statistics.net.sharpe == pytest.approx(sr * math.sqrt(252), abs=1e-4)


def test_the_journal_reads_like_a_desk(demo: Catalogue) -> None:
    entries = demo.journal()
    kinds = {e.kind for e in entries}
    assert {"note", "decision", "review", "run", "stage", "preregistration",
            "correction"} <= kinds
    assert [e.at for e in entries] == sorted(e.at for e in entries)
    assert any(e.idea_id is None for e in entries)


def test_the_demo_refuses_to_overwrite(demo: Catalogue) -> None:
    with pytest.raises(Exception, match="file exists"):
        build_demo_catalogue(Path(demo.path))
