"""A run against the book: how much of its chosen set's daily net P&L is a bet the desk already
holds in its promoted ideas, and what it would add to them (see docs/book.md).

* **Correlation with each promoted idea**: Pearson correlation of the two daily net P&L series
  over their common dates (the dates both have), when there are at least ``min_days`` of them
  (:data:`MIN_COMMON_DAYS`) and neither series is constant there.
* **The book**: the promoted ideas combined at equal risk. Over the book's dates (those the run
  and every idea in the book share) each idea's daily P&L is divided by its own sample standard
  deviation (ddof 1), so that each has a daily standard deviation of one, and the scaled series
  are averaged. The ideas in the book are those with a correlation above (enough common days,
  not constant).
* **The book's Sharpe ratio** before and after the run joins it at equal risk (its P&L scaled
  the same way, the book the mean of the n + 1 scaled series), annualised with
  :data:`~hunchbook.core.periods.DAYS_PER_YEAR`, over the book's dates.
* **Warnings**: a correlation above :data:`BOOK_CORRELATION_THRESHOLD` with one promoted idea,
  or with the book when it holds two ideas or more, is a warning in the verdict ("mostly the
  same bet"). Only a positive correlation warns: a strongly negative one is the opposite bet.

Pure numpy/pandas (pandas imported when a comparison is made); the records read back from plain
JSON values with the run record (:mod:`hunchbook.core.results`).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING

import numpy as np

from hunchbook.core.errors import HunchbookError
from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.core.verdict import Check, warning

if TYPE_CHECKING:
    import pandas as pd

#: Correlation of daily net P&L above which a run is "mostly the same bet" as a promoted idea
#: or as the book. A house choice, not a published value: at 0.7 about half of the run's daily
#: variance (0.7 squared = 0.49) moves with what the desk already holds.
BOOK_CORRELATION_THRESHOLD = 0.7
#: Fewest common days for a correlation (and for the book's figures): below it the estimate is
#: too noisy to act on (its standard error is about 1/sqrt(days), 0.13 at 60 days).
MIN_COMMON_DAYS = 60


@dataclass(frozen=True)
class PromotedPnl:
    """A promoted idea's daily net P&L: the chosen set of its latest run (``run_id``), by
    date (a ``DatetimeIndex``)."""

    idea_id: int
    title: str
    run_id: int
    net: pd.Series


@dataclass(frozen=True)
class IdeaCorrelation:
    """The run against one promoted idea: the correlation of their daily net P&L over ``days``
    common dates (NaN when not computed: ``note`` says why), the idea's run compared with, and
    whether the idea is in the book."""

    idea_id: int
    title: str
    run_id: int
    correlation: float
    days: int
    in_book: bool
    note: str = ""


@dataclass(frozen=True)
class BookComparison:
    """A run against the promoted ideas (:func:`compare_with_book`).

    ``ideas`` one row per promoted idea; ``book_ideas`` how many are in the book and
    ``book_days`` the dates the run and all of them share; ``book_correlation`` the run's
    correlation with the book; ``sharpe_before`` and ``sharpe_after`` the book's annualised
    Sharpe ratio without and with the run at equal risk, ``sharpe_change`` their difference
    (NaN when there is no book: ``note`` says why); ``threshold`` and ``min_days`` the
    correlation that warns and the fewest common days used.
    """

    ideas: tuple[IdeaCorrelation, ...]
    book_ideas: int
    book_days: int
    book_correlation: float
    sharpe_before: float
    sharpe_after: float
    sharpe_change: float
    threshold: float = BOOK_CORRELATION_THRESHOLD
    min_days: int = MIN_COMMON_DAYS
    note: str = ""

    def warnings(self) -> tuple[Check, ...]:
        """The verdict's warnings: one per promoted idea whose correlation with the run is
        above the threshold, then one for the book when it holds two ideas or more (with one
        it would repeat the idea's)."""
        out = [warning(f"same_bet_idea_{c.idea_id}", f"Same bet as idea {c.idea_id}",
                       f"corr. {c.correlation:.2f}",
                       f"Mostly the same bet as idea {c.idea_id} ({c.title}): correlation "
                       f"{c.correlation:.2f} over {c.days:,} common days.")
               for c in self.ideas if c.correlation > self.threshold]
        if self.book_ideas >= 2 and self.book_correlation > self.threshold:
            out.append(warning(
                "same_bet_book", "Same bet as the book", f"corr. {self.book_correlation:.2f}",
                f"Mostly the same bet as the book ({self.book_ideas} promoted ideas at equal "
                f"risk): correlation {self.book_correlation:.2f} over {self.book_days:,} common "
                f"days; joining it would move the book's Sharpe ratio from "
                f"{self.sharpe_before:.2f} to {self.sharpe_after:.2f}."))
        return tuple(out)


def compare_with_book(net: pd.Series, promoted: Sequence[PromotedPnl], *,
                      threshold: float = BOOK_CORRELATION_THRESHOLD,
                      min_days: int = MIN_COMMON_DAYS,
                      periods: int = DAYS_PER_YEAR) -> BookComparison:
    """A run's chosen set against the promoted ideas and the book they make (module docstring).

    Parameters
    ----------
    net
        The run's daily net P&L by date (a ``DatetimeIndex``; NaN values are left out).
    promoted
        Each promoted idea's daily net P&L (the run's own idea left out by the caller).
    threshold, min_days, periods
        The correlation above which a warning is given, the fewest common days, and the days
        per year the Sharpe ratios are annualised with.

    Raises
    ------
    HunchbookError
        A series without a date index or with repeated dates, or a threshold or day count out
        of range.
    """
    import pandas as pd

    if not 0.0 <= threshold < 1.0:
        raise HunchbookError(f"book comparison 'threshold': expected a correlation from 0 to "
                             f"below 1, got {threshold}")
    if not min_days >= 3:
        raise HunchbookError(f"book comparison 'min_days': expected at least 3 days, got "
                             f"{min_days}")
    run = _dated(net, "the run's daily net P&L")
    rows: list[IdeaCorrelation] = []
    joined: dict[int, pd.DataFrame] = {}
    for p in promoted:
        both = pd.concat([run, _dated(p.net, f"idea {p.idea_id}'s daily net P&L")], axis=1,
                         join="inner").dropna()
        rho, note = _correlation(both.to_numpy(), min_days)
        rows.append(IdeaCorrelation(idea_id=p.idea_id, title=p.title, run_id=p.run_id,
                                    correlation=rho, days=len(both), in_book=not math.isnan(rho),
                                    note=note))
        if not math.isnan(rho):
            joined[p.idea_id] = both
    empty = BookComparison(ideas=tuple(rows), book_ideas=len(joined), book_days=0,
                           book_correlation=math.nan, sharpe_before=math.nan,
                           sharpe_after=math.nan, sharpe_change=math.nan, threshold=threshold,
                           min_days=min_days)
    if not promoted:
        return replace(empty, note="No other idea is promoted: there is no book to compare with.")
    if not joined:
        return replace(empty, note="No promoted idea could be compared with this run (too few "
                                   "common days, or flat P&L), so there is no book.")
    frame = pd.concat([run, *(b.iloc[:, 1] for b in joined.values())], axis=1,
                      join="inner").dropna()
    values = frame.to_numpy(dtype=float)  # column 0 the run, then the ideas in the book
    empty = replace(empty, book_days=len(frame))
    if len(frame) < min_days:
        return replace(empty, note=f"The promoted ideas share only {len(frame):,} days with "
                                   f"this run ({min_days:,} needed for the book).")
    sd = values.std(axis=0, ddof=1)
    if not (sd > 0).all():
        return replace(empty, note="A series does not vary on the dates the book shares with "
                                   "this run.")
    scaled = values / sd  # equal risk: unit daily standard deviation on the book's dates
    before = scaled[:, 1:].mean(axis=1)
    after = scaled.mean(axis=1)
    sharpe_before, sharpe_after = _sharpe(before, periods), _sharpe(after, periods)
    return BookComparison(
        ideas=tuple(rows), book_ideas=len(joined), book_days=len(frame),
        book_correlation=float(np.corrcoef(values[:, 0], before)[0, 1]),
        sharpe_before=sharpe_before, sharpe_after=sharpe_after,
        sharpe_change=sharpe_after - sharpe_before, threshold=threshold, min_days=min_days)


def _dated(series: object, what: str) -> pd.Series:
    import pandas as pd

    if not isinstance(series, pd.Series) or not isinstance(series.index, pd.DatetimeIndex):
        raise HunchbookError(f"{what}: expected a series of numbers by date")
    if not series.index.is_unique:
        raise HunchbookError(f"{what}: a date appears twice")
    try:
        return series.astype(float).rename(None)
    except (TypeError, ValueError):
        raise HunchbookError(f"{what}: expected numbers") from None


def _correlation(pair: np.ndarray, min_days: int) -> tuple[float, str]:
    """The correlation of two columns, or NaN and why not."""
    days = len(pair)
    if days < min_days:
        return math.nan, f"only {days:,} common days ({min_days:,} needed)"
    sd = pair.std(axis=0, ddof=1)
    if not (sd > 0).all():
        return math.nan, "flat P&L on the common days"
    return float(np.corrcoef(pair[:, 0], pair[:, 1])[0, 1]), ""


def _sharpe(x: np.ndarray, periods: int) -> float:
    sd = float(x.std(ddof=1))
    return float(x.mean()) / sd * math.sqrt(periods) if sd > 0 else math.nan


__all__ = ["BOOK_CORRELATION_THRESHOLD", "MIN_COMMON_DAYS", "BookComparison", "IdeaCorrelation",
           "PromotedPnl", "compare_with_book"]
