"""Walk-forward test of a sweep's selection: choose on past days only, trade the next ones.

At each step the set with the best net Sharpe ratio over a training window (the trailing
``train_days``, or every day since the start when anchored) is traded for the next ``test_days``;
the out-of-sample days of the chosen sets, spliced together, show what choosing by the sweep
would have earned. Procedure as in Pardo, R. (2008), "The Evaluation and Optimization of Trading
Strategies", 2nd ed., Wiley, chapter on walk-forward analysis [memory].
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field

import numpy as np

from hunchbook.core.errors import HunchbookError
from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.core.plain import json_safe
from hunchbook.core.stats.inputs import as_count, as_matrix
from hunchbook.core.stats.psr import probabilistic_sharpe
from hunchbook.core.stats.sharpe import moments, sharpe_ratio
from hunchbook.core.stats.sums import sharpe_from_sums

#: Default training window, in years of ``periods`` days.
TRAIN_YEARS = 3


@dataclass(frozen=True)
class WalkForwardResult:
    """Out-of-sample record of choosing a sweep's best set on past days only.

    ``start`` is the first out-of-sample row; ``period_starts`` the first row of each test
    period and ``chosen`` the set traded in it; ``oos_pnl`` the spliced daily net P&L of rows
    ``start`` to T - 1 (read-only, left out of equality, repr and :meth:`to_dict`);
    ``changed_share`` the share of periods after the first whose set differs from the one
    before; ``oos_sharpe`` its annualised Sharpe ratio and ``oos_psr`` its PSR(0);
    ``in_sample_sharpe`` the annualised net Sharpe ratio of the best set over all days.
    """

    train_days: int
    test_days: int
    anchored: bool
    start: int
    chosen: tuple[int, ...]
    period_starts: tuple[int, ...]
    oos_pnl: np.ndarray = field(compare=False, repr=False)
    changed_share: float
    oos_sharpe: float
    oos_psr: float
    in_sample_sharpe: float

    def to_dict(self) -> dict[str, object]:
        """JSON-safe dict of the figures, without the daily ``oos_pnl``."""
        figures = {f.name: getattr(self, f.name) for f in dataclasses.fields(self)
                   if f.name != "oos_pnl"}
        return json_safe(figures)


def default_windows(n_days: int, periods: int = DAYS_PER_YEAR,
                    test_days: int | None = None) -> tuple[int, int]:
    """Default ``(train_days, test_days)`` for a history of ``n_days``.

    ``test = min(periods, n_days // 4)`` (a year, or a quarter of a short history) unless
    ``test_days`` is given, and ``train = min(3 * periods, half the history rounded down to
    whole test periods)``: with both defaults at least two test periods follow the first
    training window.
    """
    test = min(periods, n_days // 4) if test_days is None else test_days
    train = min(TRAIN_YEARS * periods, (n_days // 2) // test * test) if test else 0
    return train, test


@dataclass(frozen=True, eq=False)
class WalkForwardPlan:
    """Where a walk-forward test's windows lie on a history of ``n_days`` days.

    Test period i runs from ``starts[i]`` for ``test_days`` days, and its set is chosen on the
    days from ``first[i]`` to ``starts[i]``; ``edges`` are the distinct window edges (0 and
    ``n_days`` included) at which :func:`segment_sums` sums each set.
    """

    n_days: int
    train_days: int
    test_days: int
    anchored: bool
    starts: np.ndarray
    first: np.ndarray
    edges: np.ndarray

    @property
    def start(self) -> int:
        """The first out-of-sample day."""
        return int(self.starts[0])


def walk_forward_plan(n_days: int, n_sets: int, *, train_days: int | None = None,
                      test_days: int | None = None, anchored: bool = False,
                      periods: int = DAYS_PER_YEAR) -> WalkForwardPlan | None:
    """The windows of a walk-forward test (see :func:`walk_forward`), or None when it does not
    apply (fewer than 2 sets, or fewer than 2 test periods fit)."""
    periods = as_count(periods, "periods")
    if not isinstance(anchored, bool | np.bool_):
        raise HunchbookError(f"anchored: expected true or false, got {anchored!r}")
    if test_days is not None:
        test_days = as_count(test_days, "test_days")
    train, test = default_windows(n_days, periods, test_days)
    if train_days is not None:
        train = as_count(train_days, "train_days", minimum=2)
    if n_sets < 2 or test < 1 or train < 2 or (n_days - train) // test < 2:
        return None
    n_periods = (n_days - train) // test
    start = n_days - n_periods * test
    starts = start + test * np.arange(n_periods)
    first = np.zeros(n_periods, dtype=np.intp) if anchored else starts - train
    edges = np.unique(np.concatenate([[0, n_days], first, starts]))
    return WalkForwardPlan(n_days=n_days, train_days=train, test_days=test,
                           anchored=bool(anchored), starts=starts, first=first, edges=edges)


def walk_forward_choices(plan: WalkForwardPlan, sums: np.ndarray,
                         squares: np.ndarray) -> tuple[np.ndarray, float]:
    """The set chosen for each test period, and the best per-period Sharpe ratio over all
    days, from every set's :func:`segment_sums` at ``plan.edges``."""
    lo, hi = np.searchsorted(plan.edges, plan.first), np.searchsorted(plan.edges, plan.starts)
    lengths = (plan.starts - plan.first)[:, None]
    scores = sharpe_from_sums(sums[hi] - sums[lo], squares[hi] - squares[lo], lengths)
    full = sharpe_from_sums(sums[-1], squares[-1], plan.n_days)
    return np.argmax(scores, axis=1), float(full.max())


def walk_forward_result(plan: WalkForwardPlan, chosen: np.ndarray, oos: np.ndarray,
                        best_sharpe: float, periods: int = DAYS_PER_YEAR) -> WalkForwardResult:
    """The test's record from the chosen sets (:func:`walk_forward_choices`) and their spliced
    out-of-sample daily net P&L (days ``plan.start`` to the end)."""
    oos = np.array(oos, dtype=float)
    oos.flags.writeable = False
    skew, kurt = moments(oos)
    return WalkForwardResult(
        train_days=plan.train_days, test_days=plan.test_days, anchored=plan.anchored,
        start=plan.start, chosen=tuple(chosen.tolist()),
        period_starts=tuple(plan.starts.tolist()), oos_pnl=oos,
        changed_share=float(np.mean(chosen[1:] != chosen[:-1])),
        oos_sharpe=sharpe_ratio(oos, periods),
        oos_psr=probabilistic_sharpe(sharpe_ratio(oos, 1), oos.size, skew, kurt),
        in_sample_sharpe=best_sharpe * math.sqrt(periods))


def walk_forward(net: np.ndarray, *, train_days: int | None = None,
                 test_days: int | None = None, anchored: bool = False,
                 periods: int = DAYS_PER_YEAR) -> WalkForwardResult | None:
    """Walk-forward test of choosing the best of K sets (daily net P&L, T days x K sets).

    The test periods are ``test_days`` long and end on the last day; as many as fit after a
    training window of ``train_days`` (the oldest leftover days are used only by anchored
    windows). Before each period the set with the best net Sharpe ratio (mean / sd, ddof 1) on
    the training window is chosen, the first one on ties: the ``train_days`` just before the
    period, or all days before it when ``anchored``. Defaults: :func:`default_windows`.

    Each window's Sharpe ratio of all K sets comes from per-segment sums and sums of squares
    (segments between the window edges), so there is no pass over the days per period. A
    window where a set's P&L is flat is scored as
    :func:`~hunchbook.core.stats.sums.sharpe_from_sums` says.

    Approximation: switching sets at a period boundary costs nothing here (the spliced P&L is
    each chosen set's own P&L, so the trades that close one set's position and open the
    next's are not charged).

    Returns None with fewer than 2 sets or when fewer than 2 test periods fit.
    """
    x = as_matrix(net, "net P&L matrix")
    plan = walk_forward_plan(x.shape[0], x.shape[1], train_days=train_days,
                             test_days=test_days, anchored=anchored, periods=periods)
    if plan is None:
        return None
    chosen, best = walk_forward_choices(plan, *segment_sums(x, plan.edges))
    oos = x[np.arange(plan.start, plan.n_days), np.repeat(chosen, plan.test_days)]
    return walk_forward_result(plan, chosen, oos, best, periods)


def segment_sums(x: np.ndarray, edges: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Sums and sums of squares of each column of ``x`` (days x sets) over rows ``[0, e)`` for
    each edge ``e``."""
    sums = np.zeros((edges.size, x.shape[1]))
    squares = np.zeros((edges.size, x.shape[1]))
    for i in range(1, edges.size):
        segment = x[edges[i - 1]:edges[i]]
        sums[i] = sums[i - 1] + segment.sum(axis=0)
        squares[i] = squares[i - 1] + np.einsum("ij,ij->j", segment, segment)
    return sums, squares
