"""The desk summary (ideas tested, runs, sets, trials and promotions per period) on a catalogue
built here with a clock, counted by hand; and the desk report's haircuts recomputed with
scipy and statsmodels (Harvey & Liu 2015, Journal of Portfolio Management 42(1))."""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Iterator
from pathlib import Path

import numpy as np
import pytest
from scipy import stats
from statsmodels.stats.multitest import multipletests

from hunchbook.catalogue import Catalogue
from hunchbook.desk import desk_report, format_desk, load_desk_report
from hunchbook.store.desk import DeskPeriod, period_of
from hunchbook.store.errors import CatalogueError
from tests.store.helpers import accepted_idea, promote, run_args

SETS = [{"fast": 5.0, "slow": 50.0}, {"fast": 10.0, "slow": 50.0}]


class Clock:
    """The catalogue's clock, set by the test."""

    def __init__(self) -> None:
        self.now = dt.datetime(2024, 11, 1, tzinfo=dt.UTC)

    def at(self, when: str) -> None:
        self.now = dt.datetime.fromisoformat(when).replace(tzinfo=dt.UTC)

    def __call__(self) -> dt.datetime:
        return self.now


def build_desk(path: Path) -> None:
    """Four ideas: A run in Dec 2024 and Jan 2025 (same two sets), promoted in Feb; B run once
    in Feb (one set) and shelved with a reason that quotes a promotion; C accepted, never run;
    D run in Apr (two sets), promoted, then shelved."""
    clock = Clock()
    with Catalogue(path, clock=clock) as cat:
        a = accepted_idea(cat, "A")
        b = accepted_idea(cat, "B")
        accepted_idea(cat, "C")
        d = accepted_idea(cat, "D")
        rev = {i: cat.latest_revision(i).id for i in (a, b, d)}
        clock.at("2024-12-20T10:00:00")
        cat.record_run(a, revision_id=rev[a], by="Nia", **run_args(SETS, [0.5, 0.7], seed=1))
        clock.at("2025-01-10T10:00:00")
        cat.record_run(a, revision_id=rev[a], by="Nia", **run_args(SETS, [0.6, 0.8], seed=2))
        clock.at("2025-02-03T10:00:00")
        promote(cat, a)
        clock.at("2025-02-15T10:00:00")
        cat.record_run(b, revision_id=rev[b], by="Theo", **run_args(SETS[:1], [0.1], seed=3))
        clock.at("2025-02-16T10:00:00")
        cat.set_stage(b, "shelved", by="Ines", reason="Stage tested -> promoted. Not so.")
        clock.at("2025-04-02T10:00:00")
        cat.record_run(d, revision_id=rev[d], by="Theo", **run_args(SETS, [0.2, 0.3], seed=4))
        clock.at("2025-04-20T10:00:00")
        promote(cat, d)
        clock.at("2025-05-02T10:00:00")
        cat.set_stage(d, "shelved", by="Ines", reason="Stopped working.")


@pytest.fixture(scope="module")
def desk_path(tmp_path_factory: pytest.TempPathFactory) -> Path:
    path = tmp_path_factory.mktemp("desk") / "desk.sqlite"
    build_desk(path)
    return path


@pytest.fixture
def desk(desk_path: Path) -> Iterator[Catalogue]:
    with Catalogue(desk_path, read_only=True) as cat:
        yield cat


@pytest.mark.parametrize(("period", "expected"), [
    # counted by hand from build_desk: (period, ideas tested, runs, sets, new trials, promotions)
    ("year", [("2024", 1, 1, 2, 2, 0), ("2025", 2, 3, 5, 3, 2)]),
    ("quarter", [("2024-Q4", 1, 1, 2, 2, 0), ("2025-Q1", 1, 2, 3, 1, 1),
                 ("2025-Q2", 1, 1, 2, 2, 1)]),
    ("month", [("2024-12", 1, 1, 2, 2, 0), ("2025-01", 0, 1, 2, 0, 0),
               ("2025-02", 1, 1, 1, 1, 1), ("2025-03", 0, 0, 0, 0, 0),
               ("2025-04", 1, 1, 2, 2, 1)]),
])
def test_counts_by_period(desk: Catalogue, period: str, expected: list[tuple]) -> None:
    summary = desk.desk_summary(period)
    assert summary.periods == tuple(DeskPeriod(*row) for row in expected)
    assert (summary.tested, summary.runs, summary.sets_run, summary.trials,
            summary.promotions) == (3, 4, 7, 5, 2)
    assert summary.trials == sum(desk.trial_count(i.idea_id) for i in summary.ideas)


def test_tested_ideas_carry_their_latest_run(desk: Catalogue) -> None:
    summary = desk.desk_summary()
    assert [(i.title, i.stage) for i in summary.ideas] == [
        ("A", "promoted"), ("B", "shelved"), ("D", "shelved")]
    for idea in summary.ideas:
        run = desk.runs(idea.idea_id)[-1]
        assert idea.run_id == run.id
        assert idea.net_sharpe == pytest.approx(run.result.statistics.net.sharpe, rel=1e-12)
        assert (idea.days, idea.days_per_year) == (run.result.statistics.n_days, 252)
        assert idea.years == pytest.approx(idea.days / 252)
    assert [(i.title, i.promoted_at[:10]) for i in summary.promoted] == [
        ("A", "2025-02-03"), ("D", "2025-04-20")]


def test_periods_of_recorded_times() -> None:
    assert [period_of("2025-11-30T23:59:59Z", p) for p in ("year", "quarter", "month")] == [
        "2025", "2025-Q4", "2025-11"]


def test_empty_catalogue_and_bad_period(tmp_path: Path) -> None:
    with Catalogue(tmp_path / "empty.sqlite") as cat:
        summary = cat.desk_summary("month")
        assert (summary.periods, summary.ideas, summary.trials) == ((), (), 0)
        report = desk_report(summary)
        assert report.promoted == () and report.expected_false == 0.0
        assert "No idea has been promoted yet" in format_desk(report)
        with pytest.raises(CatalogueError, match="period"):
            cat.desk_summary("week")


def _p(sharpe: float, years: float) -> float:
    # Harvey & Liu (2015) steps 2-3 with scipy: two-sided Student t, N - 1 = 12 years - 1 df
    return 2 * stats.t.sf(abs(sharpe) * math.sqrt(years), 12 * years - 1)


def test_report_haircuts_against_scipy_and_statsmodels(desk_path: Path) -> None:
    report = load_desk_report(desk_path, "quarter")
    ideas = report.summary.ideas
    assert report.tests == 3 and report.unknown == 0
    family = np.array([_p(i.net_sharpe, i.days / 252) for i in ideas])
    holm = multipletests(family, method="holm")[1]
    bhy = multipletests(family, method="fdr_by")[1]
    row = {i.idea_id: k for k, i in enumerate(ideas)}
    for item in report.promoted:
        k, years = row[item.idea.idea_id], item.idea.days / 252
        cut = item.haircut
        assert cut.p_value == pytest.approx(family[k], rel=1e-10)
        assert cut.bonferroni.p_value == pytest.approx(min(3 * family[k], 1), rel=1e-10)
        assert cut.holm.p_value == pytest.approx(holm[k], rel=1e-10)
        assert cut.bhy.p_value == pytest.approx(bhy[k], rel=1e-10)
        # HSR_a = F_t^-1(1 - p_M/2; N - 1) / sqrt(N) * sqrt(12)
        hsr = stats.t.ppf(1 - bhy[k] / 2, 12 * years - 1) / math.sqrt(12 * years) * math.sqrt(12)
        assert cut.bhy.sharpe == pytest.approx(hsr, rel=1e-9)
    # expected false promotions: the largest BHY p-value among the promotions x promotions
    promoted = [row[p.idea.idea_id] for p in report.promoted]
    assert report.expected_false == pytest.approx(max(bhy[promoted]) * 2, rel=1e-10)


def test_unknown_evidence_is_simulated_or_reported() -> None:
    # a summary written by hand: promoted idea 1 (SR 1.0 over 2,520 days = 10 years), idea 2
    # without a Sharpe ratio (a flat P&L), idea 3 promoted but with 10 days of history
    from hunchbook.store.desk import DeskSummary, TestedIdea

    def idea(n: int, sharpe: float | None, days: int, promoted: bool) -> TestedIdea:
        return TestedIdea(idea_id=n, title=f"I{n}", stage="promoted" if promoted else "tested",
                          run_id=n, run_at="2025-01-01", net_sharpe=sharpe, days=days,
                          days_per_year=252, promoted_at="2025-02-01" if promoted else None)

    summary = DeskSummary(period="year", periods=(), runs=3, sets_run=3, trials=3,
                          promotions=2, ideas=(idea(1, 1.0, 2520, True), idea(2, None, 500, False),
                                               idea(3, 2.0, 10, True)))
    report = desk_report(summary, draws=200, seed=1)
    assert (report.tests, report.unknown) == (3, 2)
    first, short = report.promoted
    # methods.md s.12: SR 1.0 over 120 months -> p_S 0.001986474; Bonferroni over M = 3
    assert first.haircut.p_value == pytest.approx(0.001986474, abs=5e-10)
    assert first.haircut.bonferroni.p_value == pytest.approx(3 * 0.001986474, abs=2e-9)
    assert first.haircut.simulated == 2  # ideas 2 and 3 have no p-value: drawn
    assert short.haircut is None and "no Sharpe ratio" in short.problem
    # expected false promotions count the promotion with a p-value only
    assert report.expected_false == pytest.approx(first.haircut.bhy.p_value)
    text = format_desk(report)
    assert "3 I3" in text and "n/a" in text and "2 tested ideas have no Sharpe ratio" in text
