"""The desk's record of testing: ideas tested, runs, trials and promotions per period, and every
tested idea's latest figures (read only; what the desk-wide multiple-testing view needs).

Definitions
-----------
- An idea is *tested* in the period of its first run; ``ideas tested`` over all periods is the
  number of ideas with at least one run (Harvey & Liu's M, see :mod:`hunchbook.desk`).
- ``runs`` counts runs recorded in the period; ``sets run`` the parameter sets those runs ran;
  ``new trials`` the trials (distinct strategy key and parameter set of an idea, as in
  :mod:`hunchbook.store.runs`) first run in the period, so they add up to the desk's trials.
- A *promotion* is a stage change to ``promoted``, read from the ``stage`` journal entries
  that :func:`hunchbook.store.ideas.set_stage` writes ("Stage tested -> promoted. ...").
- Each tested idea's figures are those of its latest run: the net Sharpe ratio (annualised)
  and the number of days of the chosen set's statistics (the figures the verdict judged).

Periods are calendar years (``2025``), quarters (``2025-Q1``) or months (``2025-01``) of the
recorded UTC times; every period from the first to the last is listed, empty ones too.
"""

from __future__ import annotations

import re
from collections import Counter
from collections.abc import Iterable
from dataclasses import dataclass
from typing import TYPE_CHECKING

from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.store import validate

if TYPE_CHECKING:  # the command line reads PERIODS without loading sqlite-utils
    from hunchbook.store.sqlite_lib import Database

#: Period lengths a desk summary groups by.
PERIODS = ("year", "quarter", "month")
#: A stage journal entry as :func:`hunchbook.store.ideas.set_stage` writes it.
_STAGE_CHANGE = re.compile(r"Stage (\w+) -> (\w+)\.")


@dataclass(frozen=True)
class DeskPeriod:
    """What the desk did in one period (see the module's definitions)."""

    period: str
    ideas_tested: int
    runs: int
    sets_run: int
    new_trials: int
    promotions: int


@dataclass(frozen=True)
class TestedIdea:
    """A tested idea and its latest run's figures.

    ``net_sharpe`` (annualised) and ``days`` are those of the run's statistics, with
    ``days_per_year`` days a year; None when the run does not have them (a flat P&L has no
    Sharpe ratio). ``promoted_at`` is the time of its latest promotion (None: never promoted).
    """

    __test__ = False  # not a pytest class

    idea_id: int
    title: str
    stage: str
    run_id: int
    run_at: str
    net_sharpe: float | None
    days: int | None
    days_per_year: int
    promoted_at: str | None

    @property
    def years(self) -> float | None:
        """Years of data behind the Sharpe ratio (days / days per year)."""
        return None if self.days is None else self.days / self.days_per_year


@dataclass(frozen=True)
class DeskSummary:
    """The desk's testing by period and its tested ideas (by id).

    ``trials`` is the desk's trial count (every idea's trials added up); ``promotions`` the
    number of stage changes to ``promoted`` ever made.
    """

    period: str
    periods: tuple[DeskPeriod, ...]
    ideas: tuple[TestedIdea, ...]
    runs: int
    sets_run: int
    trials: int
    promotions: int

    @property
    def tested(self) -> int:
        """The number of ideas tested (with at least one run)."""
        return len(self.ideas)

    @property
    def promoted(self) -> tuple[TestedIdea, ...]:
        """The tested ideas ever promoted, in the order of their latest promotion."""
        return tuple(sorted((i for i in self.ideas if i.promoted_at is not None),
                            key=lambda i: (i.promoted_at, i.idea_id)))


def period_of(at: str, period: str) -> str:
    """The period of a recorded time (``YYYY-MM-DD...``): ``2025``, ``2025-Q1``, ``2025-01``."""
    year, month = at[:4], at[5:7]
    if period == "year":
        return year
    if period == "quarter":
        return f"{year}-Q{(int(month) - 1) // 3 + 1}"
    return f"{year}-{month}"


def _span(first: str, last: str, period: str) -> list[str]:
    """Every period from the one of ``first`` to the one of ``last`` (months ``YYYY-MM``)."""
    (y0, m0), (y1, m1) = (tuple(int(x) for x in s.split("-")) for s in (first, last))
    months = [f"{y:04d}-{m:02d}" for y in range(y0, y1 + 1) for m in range(1, 13)
              if (y0, m0) <= (y, m) <= (y1, m1)]
    return list(dict.fromkeys(period_of(f"{m}-01", period) for m in months))


def summary(db: Database, period: str = "year") -> DeskSummary:
    """The desk's testing grouped by ``period`` (``year``, ``quarter`` or ``month``)."""
    period = validate.choice(period, "period", PERIODS)
    monthly: dict[str, Counter[str]] = {key: Counter() for key in
                                        ("ideas", "runs", "sets", "trials", "promotions")}

    def count(key: str, rows: Iterable[tuple[str, int]]) -> None:
        for month, n in rows:
            monthly[key][month] += int(n)

    count("ideas", db.execute(
        "SELECT substr(first, 1, 7), count(*) FROM (SELECT min(recorded_at) AS first FROM "
        "runs GROUP BY idea_id) GROUP BY 1"))
    count("runs", db.execute("SELECT substr(recorded_at, 1, 7), count(*) FROM runs GROUP BY 1"))
    count("sets", db.execute(
        "SELECT substr(recorded_at, 1, 7), sum(set_count) FROM runs GROUP BY 1"))
    count("trials", db.execute(
        "SELECT substr(first, 1, 7), count(*) FROM (SELECT min(r.recorded_at) AS first FROM "
        "trials u JOIN runs r ON r.id = u.run_id GROUP BY u.idea_id, u.strategy_key, "
        "u.params) GROUP BY 1"))
    promoted_at: dict[int, str] = {}
    for idea_id, text, at in db.execute(
            "SELECT idea_id, text, at FROM journal WHERE kind = 'stage' AND idea_id IS NOT "
            "NULL ORDER BY at, id"):
        change = _STAGE_CHANGE.match(text)
        if change is not None and change.group(2) == "promoted":
            monthly["promotions"][at[:7]] += 1
            promoted_at[idea_id] = at
    months = sorted(set().union(*monthly.values()))
    rows: dict[str, Counter[str]] = {}
    if months:
        rows = {p: Counter() for p in _span(months[0], months[-1], period)}
        for key, counts in monthly.items():
            for month, n in counts.items():
                rows[period_of(f"{month}-01", period)][key] += n
    periods = tuple(DeskPeriod(period=p, ideas_tested=c["ideas"], runs=c["runs"],
                               sets_run=c["sets"], new_trials=c["trials"],
                               promotions=c["promotions"]) for p, c in rows.items())
    ideas = tuple(
        TestedIdea(idea_id=row[0], title=row[1], stage=row[2], run_id=row[3], run_at=row[4],
                   net_sharpe=None if row[5] is None else float(row[5]),
                   days=None if row[6] is None else int(row[6]),
                   days_per_year=int(row[7] or DAYS_PER_YEAR), promoted_at=promoted_at.get(row[0]))
        for row in db.execute(
            "SELECT i.id, i.title, i.stage, r.id, r.recorded_at, "
            "json_extract(r.statistics, '$.net.sharpe'), json_extract(r.statistics, '$.n_days'), "
            "json_extract(r.statistics, '$.periods') FROM ideas i JOIN runs r ON r.id = "
            "(SELECT id FROM runs WHERE idea_id = i.id ORDER BY recorded_at DESC, id DESC "
            "LIMIT 1) ORDER BY i.id"))
    return DeskSummary(period=period, periods=periods, ideas=ideas,
                       runs=sum(monthly["runs"].values()), sets_run=sum(monthly["sets"].values()),
                       trials=sum(monthly["trials"].values()),
                       promotions=sum(monthly["promotions"].values()))
