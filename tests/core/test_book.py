"""A run against the book (:mod:`hunchbook.core.book`): correlations and the equal-risk book
against pandas, the book's Sharpe ratio against the two-asset portfolio formula, the warnings on
either side of the threshold, the notes for missing figures, refusals of bad input, and the
record on the run record (old records without it still read)."""

from __future__ import annotations

import dataclasses
import json
import math

import numpy as np
import pandas as pd
import pytest

from hunchbook.core.book import (
    BOOK_CORRELATION_THRESHOLD,
    MIN_COMMON_DAYS,
    BookComparison,
    PromotedPnl,
    compare_with_book,
)
from hunchbook.core.book_presenter import book_line, book_notes, book_rows, book_table
from hunchbook.core.errors import HunchbookError
from hunchbook.core.results import SCHEMA, RunSummary
from hunchbook.core.verdict import decide
from hunchbook.report import format_book
from tests.store.helpers import run_summary

DAYS = 2000
DATES = pd.bdate_range("2010-01-04", periods=DAYS)


def _mixed(rho: float, seed: int, n: int = DAYS) -> tuple[np.ndarray, np.ndarray]:
    """Two series with population correlation ``rho``: x = a c + b e1, y = a c + b e2 with c,
    e1, e2 independent standard normal, so that corr = a^2 / (a^2 + b^2) (common practice, no
    source: the covariance is a^2 and each variance a^2 + b^2); here a^2 = rho, b^2 = 1 - rho."""
    rng = np.random.default_rng(seed)
    common, own1, own2 = rng.standard_normal((3, n))
    a, b = math.sqrt(rho), math.sqrt(1.0 - rho)
    return a * common + b * own1, a * common + b * own2


def _promoted(idea_id: int, values: np.ndarray, dates: pd.DatetimeIndex,
              title: str = "") -> PromotedPnl:
    return PromotedPnl(idea_id=idea_id, title=title or f"idea {idea_id}", run_id=10 + idea_id,
                       net=pd.Series(values, index=dates))


def test_correlation_per_idea_equals_pandas_over_the_common_dates() -> None:
    """Each idea's correlation is pandas' Pearson correlation of the inner join of the dates
    (reference: ``pd.concat(..., join="inner").corr()``), its days the join's length."""
    x, y = _mixed(0.5, seed=1)
    run = pd.Series(x + 0.02, index=DATES) * 1000.0  # currency units: scale does not matter
    shifted = _promoted(1, y[300:], DATES[300:])  # starts later
    short_end = _promoted(2, np.random.default_rng(2).standard_normal(DAYS - 500), DATES[:-500])
    book = compare_with_book(run, [shifted, short_end])
    for row, p in zip(book.ideas, (shifted, short_end), strict=True):
        joined = pd.concat([run, p.net], axis=1, join="inner")
        assert row.correlation == pytest.approx(joined.corr().iloc[0, 1], abs=1e-12)
        assert row.days == len(joined) and row.in_book and row.note == ""
        assert (row.idea_id, row.title, row.run_id) == (p.idea_id, p.title, p.run_id)


def test_the_equal_risk_book_and_its_sharpe_ratios_equal_pandas() -> None:
    """The book: each series over the dates all share divided by its sample standard deviation
    (pandas ``std``, ddof 1) and averaged; its correlation with the run and the annualised
    Sharpe ratios (mean / std x sqrt 252, as everywhere in Hunchbook) before and after the run
    joins, all recomputed with pandas."""
    rng = np.random.default_rng(7)
    run = pd.Series(rng.standard_normal(DAYS) * 3 + 0.1, index=DATES)
    ideas = [_promoted(1, rng.standard_normal(DAYS) * 50 + 2.0, DATES),
             _promoted(2, rng.standard_normal(DAYS - 100) + 0.04, DATES[100:]),
             _promoted(3, run.to_numpy()[:-40] + rng.standard_normal(DAYS - 40), DATES[:-40])]
    book = compare_with_book(run, ideas)
    frame = pd.concat([run, *(p.net for p in ideas)], axis=1, join="inner")
    scaled = frame / frame.std()
    before, after = scaled.iloc[:, 1:].mean(axis=1), scaled.mean(axis=1)

    def sharpe(x: pd.Series) -> float:
        return x.mean() / x.std() * math.sqrt(252)

    assert book.book_ideas == 3 and book.book_days == len(frame) == DAYS - 140
    assert book.book_correlation == pytest.approx(frame.iloc[:, 0].corr(before), abs=1e-12)
    assert book.sharpe_before == pytest.approx(sharpe(before), rel=1e-12)
    assert book.sharpe_after == pytest.approx(sharpe(after), rel=1e-12)
    assert book.sharpe_change == pytest.approx(sharpe(after) - sharpe(before), rel=1e-12)


def test_book_sharpe_after_follows_the_two_asset_formula() -> None:
    """With one promoted idea, the book after the run joins is the mean of two unit-variance
    series, whose variance is (2 + 2 rho) / 4, so its daily Sharpe ratio is (m1 + m2) /
    sqrt(2 + 2 rho) with m the scaled means (common practice, no source: the variance of a
    sum); the sample moments come from pandas."""
    x, y = _mixed(0.3, seed=3)
    run, idea = pd.Series(x + 0.05, index=DATES), pd.Series(y + 0.03, index=DATES)
    book = compare_with_book(run, [_promoted(1, idea.to_numpy(), DATES)])
    m1, m2 = idea.mean() / idea.std(), run.mean() / run.std()
    rho = run.corr(idea)
    assert book.sharpe_before == pytest.approx(m1 * math.sqrt(252), rel=1e-12)
    assert book.sharpe_after == pytest.approx((m1 + m2) / math.sqrt(2 + 2 * rho)
                                              * math.sqrt(252), rel=1e-12)
    # with one idea the book is that idea: the same correlation, and no second warning
    assert book.book_correlation == pytest.approx(book.ideas[0].correlation, abs=1e-12)


@pytest.mark.parametrize(("rho", "warned"), [(0.85, True), (0.5, False)])
def test_the_warning_is_given_above_the_threshold_and_not_below(rho: float,
                                                                warned: bool) -> None:
    """P&L built with population correlation rho (see ``_mixed``) over 2,000 days: the sample
    correlation (pandas) lands on the same side of 0.7 (its standard error is about
    (1 - rho^2) / sqrt(n) < 0.02, Fisher 1915 [memory]), and the verdict warns exactly then."""
    x, y = _mixed(rho, seed=11)
    run = pd.Series(x, index=DATES)
    book = compare_with_book(run, [_promoted(4, y, DATES, "Carry <b>&</b> trend")])
    sample = run.corr(pd.Series(y, index=DATES))
    assert bool(sample > BOOK_CORRELATION_THRESHOLD) is warned
    checks = book.warnings()
    assert len(checks) == int(warned)
    if warned:
        (check,) = checks
        assert check.status == "warn" and check.key == "same_bet_idea_4"
        assert check.finding == (f"Mostly the same bet as idea 4 (Carry <b>&</b> trend): "
                                 f"correlation {sample:.2f} over 2,000 common days.")


def test_the_threshold_is_strict_and_configurable() -> None:
    """A correlation equal to the threshold does not warn; just below it does (the rule is
    'exceeds')."""
    x, y = _mixed(0.6, seed=5)
    run, idea = pd.Series(x, index=DATES), _promoted(1, y, DATES)
    rho = run.corr(idea.net)
    assert not compare_with_book(run, [idea], threshold=rho).warnings()
    assert len(compare_with_book(run, [idea], threshold=rho - 1e-9).warnings()) == 1


def test_the_book_warns_when_it_holds_two_ideas_and_is_the_same_bet() -> None:
    """Two promoted ideas that each share part of the run's common factor: neither alone
    exceeds 0.7, the book of both does (correlations from pandas); the warning names the book
    and the Sharpe ratios before and after."""
    rng = np.random.default_rng(21)
    common = rng.standard_normal(DAYS)
    run = pd.Series(common + 0.3 * rng.standard_normal(DAYS), index=DATES)
    ideas = [_promoted(k, common + 0.9 * rng.standard_normal(DAYS), DATES) for k in (1, 2)]
    book = compare_with_book(run, ideas)
    for p in ideas:
        assert run.corr(p.net) < BOOK_CORRELATION_THRESHOLD
    scaled = pd.concat([p.net / p.net.std() for p in ideas], axis=1).mean(axis=1)
    assert run.corr(scaled) > BOOK_CORRELATION_THRESHOLD
    (check,) = book.warnings()
    assert check.key == "same_bet_book"
    assert check.finding.startswith(f"Mostly the same bet as the book (2 promoted ideas at "
                                    f"equal risk): correlation {run.corr(scaled):.2f} over "
                                    f"2,000 common days; joining it would move the book's "
                                    f"Sharpe ratio from {book.sharpe_before:.2f} to "
                                    f"{book.sharpe_after:.2f}.")


def test_a_negative_correlation_is_not_the_same_bet() -> None:
    x, y = _mixed(0.9, seed=2)
    book = compare_with_book(pd.Series(x, index=DATES), [_promoted(1, -y, DATES)])
    assert book.ideas[0].correlation < -BOOK_CORRELATION_THRESHOLD
    assert book.warnings() == ()


def test_missing_figures_say_why() -> None:
    """Too few common days or a flat series: no correlation, a note, left out of the book;
    no promoted idea: a note and nothing else."""
    x, y = _mixed(0.9, seed=4)
    run = pd.Series(x, index=DATES)
    short = _promoted(1, y[: MIN_COMMON_DAYS - 1], DATES[: MIN_COMMON_DAYS - 1])
    flat = _promoted(2, np.zeros(DAYS), DATES)
    book = compare_with_book(run, [short, flat])
    assert [math.isnan(c.correlation) for c in book.ideas] == [True, True]
    assert [c.in_book for c in book.ideas] == [False, False]
    assert book.ideas[0].note == f"only {MIN_COMMON_DAYS - 1} common days (60 needed)"
    assert book.ideas[1].note == "flat P&L on the common days"
    assert book.book_ideas == 0 and math.isnan(book.sharpe_before)
    assert book.note.startswith("No promoted idea could be compared")
    assert book.warnings() == ()
    assert book_notes(book)[0] == "Idea 1: only 59 common days (60 needed)."
    none = compare_with_book(run, [])
    assert none.ideas == () and none.note.startswith("No other idea is promoted")
    assert book_line(none) == none.note and format_book(none).endswith(none.note)
    # two ideas that overlap the run, but not each other long enough: no book figures
    apart = compare_with_book(run, [_promoted(1, y[:100], DATES[:100]),
                                    _promoted(2, y[-100:], DATES[-100:])])
    assert [c.in_book for c in apart.ideas] == [True, True]
    assert apart.book_days == 0 and math.isnan(apart.book_correlation)
    assert apart.note == "The promoted ideas share only 0 days with this run (60 needed for " \
                         "the book)."


@pytest.mark.parametrize(("make", "message"), [
    (lambda run: compare_with_book(run.to_numpy(), []), "expected a series of numbers by date"),
    (lambda run: compare_with_book(run, [_promoted(1, run.to_numpy()[:2], DATES[[0, 0]])]),
     "idea 1's daily net P&L: a date appears twice"),
    (lambda run: compare_with_book(run, [], threshold=1.0), "'threshold'"),
    (lambda run: compare_with_book(run, [], min_days=2), "'min_days'"),
])
def test_bad_input_is_one_clear_error(make, message: str) -> None:
    run = pd.Series(np.arange(10.0), index=DATES[:10])
    with pytest.raises(HunchbookError, match=message):
        make(run)


@pytest.fixture
def record() -> RunSummary:
    x, y = _mixed(0.8, seed=9)
    book = compare_with_book(pd.Series(x, index=DATES),
                             [_promoted(1, y, DATES, "Trend"),
                              _promoted(2, y[:30], DATES[:30], "Short")])
    summary = run_summary([{"n": 1.0}], [0.5])
    return dataclasses.replace(summary, book=book,
                               verdict=decide(summary.statistics, warnings=book.warnings()))


def test_the_run_record_carries_the_comparison_through_json(record: RunSummary) -> None:
    """The record's JSON (no NaN: RFC 8259) holds the comparison, undefined figures as null,
    and reads back equal."""
    text = json.dumps(record.to_dict(), allow_nan=False)
    data = json.loads(text)
    assert data["book"]["ideas"][1]["correlation"] is None
    assert data["book"]["ideas"][0]["title"] == "Trend"
    back = RunSummary.from_dict(data)
    assert isinstance(back.book, BookComparison)
    assert back.to_dict() == record.to_dict()
    assert back.book.warnings() == record.book.warnings()
    assert "Mostly the same bet as idea 1 (Trend)" in " ".join(back.verdict.reasons)


def test_a_record_without_the_comparison_still_reads(record: RunSummary) -> None:
    """Records written before the comparison existed have no 'book': they read with None, at
    the same schema number."""
    data = record.to_dict()
    del data["book"]
    back = RunSummary.from_dict(data)
    assert back.book is None and back.schema == SCHEMA == data["schema"]


def test_presenter_rows_carry_the_record_figures(record: RunSummary) -> None:
    book = record.book
    table = book_table(book)
    assert [name for name, _ in table.rows] == ["1  Trend", "2  Short", "Book (1 idea, equal "
                                                                          "risk)"]
    assert table.rows[0][1] == (book.ideas[0].correlation, 2000.0)
    assert table.rows[1][1] == (None, 30.0)
    assert [r.net for r in book_rows(book)] == [book.sharpe_before, book.sharpe_after,
                                                book.sharpe_change]
    text = format_book(book)
    assert f"{book.ideas[0].correlation:.2f}" in text and "Idea 2: only 30 common days" in text
