"""The statistics' part of a sweep computed chunk by chunk, over the sweep's common period.

The first-pass statistics compare every set on the same days (the common period, from the day
the last set starts to the last day all sets have rows). A :class:`PeriodPlan` says, before the
sweep runs, what each chunk of sets must leave of its daily net P&L on those days: its net
Sharpe ratios, whether it varies, the columns kept for the effective number of trials, the
walk-forward test's segment sums, the PBO's block sums and the SPA test's per-replication
maxima. :func:`period_parts` computes them for one chunk (in whichever process runs it) and
:func:`combine_parts` joins every chunk's into :class:`PeriodTotals`, so that memory grows
with the days times the chunk's sets, never with every set's days.
"""

from __future__ import annotations

from collections.abc import Sequence
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass

import numpy as np

from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.core.stats.effective_trials import (
    effective_from_standardised,
    sample_columns,
    standardised,
    varies,
)
from hunchbook.core.stats.first_pass import column_sharpes, pbo_splits
from hunchbook.core.stats.overfitting import OverfitResult, block_sums, overfitting_from_blocks
from hunchbook.core.stats.spa import SpaPartial, SpaPlan, SpaResult, spa_combine, spa_partial
from hunchbook.core.stats.spa import spa_plan as make_spa_plan
from hunchbook.core.stats.walk_forward import WalkForwardPlan, segment_sums, walk_forward_plan


@dataclass(frozen=True, eq=False)
class PeriodPlan:
    """What each chunk computes over the common period, days ``[start, stop)`` of the union of
    dates.

    ``columns`` counts the trials judged on the period: this sweep's ``sets`` first, then the
    earlier trials recomputed on the same days. ``sample`` lists the columns whose daily net
    P&L is kept for the effective number of trials (None: all). ``walk`` and ``pbo_splits``
    place the selection tests over the sweep's sets (None and 0 when they do not apply);
    ``spa`` the SPA test's bootstrap (None: not run).
    """

    start: int
    stop: int
    sets: int
    columns: int
    sample: np.ndarray | None
    walk: WalkForwardPlan | None
    pbo_splits: int
    spa: SpaPlan | None
    periods: int = DAYS_PER_YEAR

    @property
    def days(self) -> int:
        """Days in the common period."""
        return self.stop - self.start


def period_plan(start: int, stop: int, sets: int, *, others: int = 0, spa_reps: int = 1000,
                seed: int = 0, periods: int = DAYS_PER_YEAR) -> PeriodPlan:
    """The plan of a sweep of ``sets`` sets (and ``others`` earlier trials recomputed) over days
    ``[start, stop)``; ``spa_reps`` 0 skips the SPA test (as does a period under 3 days)."""
    days = stop - start
    columns = sets + others
    selection = sets > 1
    splits = pbo_splits(days) if selection else 0
    return PeriodPlan(
        start=start, stop=stop, sets=sets, columns=columns,
        sample=sample_columns(columns), periods=periods,
        walk=walk_forward_plan(days, sets, periods=periods) if selection else None,
        pbo_splits=splits if splits >= 2 and sets >= 2 and days >= 2 * splits else 0,
        spa=(make_spa_plan(days, reps=spa_reps, seed=seed)
             if spa_reps > 0 and days >= 3 else None))


@dataclass(frozen=True, eq=False)
class PeriodParts:
    """One chunk's part of the statistics: columns ``first`` to ``first + len`` of the trials.

    ``kept`` holds the daily net P&L (days x columns), :func:`standardised`, of the chunk's
    varying columns listed in the plan's sample; ``kept_columns`` their numbers.
    """

    first: int
    net_sharpes: np.ndarray
    varying: np.ndarray
    kept: np.ndarray
    kept_columns: np.ndarray
    walk_sums: tuple[np.ndarray, np.ndarray] | None
    pbo_sums: tuple[np.ndarray, np.ndarray] | None
    spa: SpaPartial | None

    def __len__(self) -> int:
        return self.net_sharpes.size


def period_parts(plan: PeriodPlan, net: np.ndarray, first: int) -> PeriodParts:
    """The part of columns ``first ..`` whose daily net P&L on the common period is ``net``
    (days x columns; the sweep's own sets take part in the selection tests, earlier trials
    only in the trial counts and the SPA test)."""
    n_days, width = net.shape
    columns = np.arange(first, first + width)
    moving = varies(net)
    keep = columns[moving]
    if plan.sample is not None:
        keep = np.intersect1d(keep, plan.sample)
    own = max(0, min(plan.sets - first, width))  # the sweep's sets among these columns
    mine = net[:, :own]
    return PeriodParts(
        first=first, net_sharpes=column_sharpes(net, plan.periods), varying=moving,
        kept=standardised(net[:, keep - first]), kept_columns=keep,
        walk_sums=(segment_sums(mine, plan.walk.edges)
                   if plan.walk is not None and own else None),
        pbo_sums=block_sums(mine, plan.pbo_splits) if plan.pbo_splits and own else None,
        spa=spa_partial(plan.spa, net, first_column=first) if plan.spa is not None else None)


@dataclass(frozen=True, eq=False)
class PeriodTotals:
    """Every chunk's parts joined: each trial's net Sharpe ratio on the common period (this
    sweep's sets, then the earlier trials), the Li-Ji effective number of them (None for one
    column), the SPA test, and the selection tests' sums over the sweep's sets."""

    net_sharpes: np.ndarray
    other_sharpes: np.ndarray
    effective: float | None
    spa: SpaResult | None
    walk_sums: tuple[np.ndarray, np.ndarray] | None
    overfitting: OverfitResult | None


def combine_parts(plan: PeriodPlan, parts: Sequence[PeriodParts]) -> PeriodTotals:
    """Join the parts of every column (in any order); raises ValueError when a column is
    missing or came twice."""
    parts = sorted(parts, key=lambda p: p.first)
    covered = np.concatenate([np.arange(p.first, p.first + len(p)) for p in parts])
    if not np.array_equal(covered, np.arange(plan.columns)):
        raise ValueError(f"the statistics' parts cover {covered.size} of {plan.columns} "
                         "columns, or some twice: each column must come exactly once")
    sharpes = np.concatenate([p.net_sharpes for p in parts])
    own = [p for p in parts if p.first < plan.sets]
    walk = None
    if plan.walk is not None:
        walk = (np.hstack([p.walk_sums[0] for p in own if p.walk_sums]),
                np.hstack([p.walk_sums[1] for p in own if p.walk_sums]))
    with ThreadPoolExecutor(max_workers=1) as beside:  # numpy lets the two run at once
        overfit = beside.submit(_overfitting, plan, own)
        effective = _effective(plan, parts)
        overfitting = overfit.result()
    return PeriodTotals(
        net_sharpes=sharpes[:plan.sets], other_sharpes=sharpes[plan.sets:],
        effective=effective,
        spa=(spa_combine(plan.spa, [p.spa for p in parts if p.spa is not None])
             if plan.spa is not None else None),
        walk_sums=walk, overfitting=overfitting)


def _effective(plan: PeriodPlan, parts: Sequence[PeriodParts]) -> float | None:
    """The Li-Ji effective number of every column (None for one column)."""
    if plan.columns < 2:
        return None
    varying = int(sum(np.count_nonzero(p.varying) for p in parts))
    kept = np.hstack([p.kept for p in parts])
    return effective_from_standardised(kept, n_sets=plan.columns, n_varying=varying,
                                       sampled=plan.sample is not None).effective


def _overfitting(plan: PeriodPlan, own: Sequence[PeriodParts]) -> OverfitResult | None:
    """The PBO of the sweep's own sets (None when it does not apply)."""
    if not plan.pbo_splits:
        return None
    sums = np.hstack([p.pbo_sums[0] for p in own if p.pbo_sums])
    squares = np.hstack([p.pbo_sums[1] for p in own if p.pbo_sums])
    return overfitting_from_blocks(sums, squares, n_days=plan.days)
