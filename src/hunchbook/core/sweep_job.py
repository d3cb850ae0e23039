"""What a sweep runner works with: the job (sets in, chunks out) and the worker that runs a chunk.

A sweep is split into chunks of neighbouring grid cells (which share most window functions,
computed once per chunk through the backtest's cache). A runner (see
:mod:`hunchbook.core.runners`) runs the chunks wherever it likes, each through a
:class:`ChunkWorker` built once per process from the job's :class:`SweepPayload`, and hands
every finished :class:`Chunk` to :meth:`SweepJob.add` in any order.

A chunk's daily rows never leave the worker: it returns each set's figures over its own
history (:class:`~hunchbook.core.set_figures.SetFigures`) and its part of the statistics over
the sweep's common period (:class:`~hunchbook.core.sweep_period.PeriodParts`). Memory grows
with the days times a chunk's sets, not with the number of sets.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Protocol

import numpy as np

from hunchbook.core.engine import Backtest
from hunchbook.core.errors import HunchbookError
from hunchbook.core.set_figures import SetFigures, set_figures
from hunchbook.core.sweep_period import PeriodParts, PeriodPlan, period_parts

Params = dict[str, float]
Progress = Callable[[int, int], None]
CancelCheck = Callable[[], bool]

#: Largest working memory of one chunk's daily rows and their statistics (bytes): bounds the
#: sets per chunk on long histories.
CHUNK_BYTES = 128 * 2**20
#: Cells (bars x markets) of one block of markets run together: 25 markets of 10,000 days, whose
#: arrays (2 MB each) stay in the processor's cache where those of 100 markets did not.
BLOCK_CELLS = 256_000
#: Fewest sets in a chunk (unless the sweep has fewer): each chunk's statistics have a fixed
#: cost, so a chunk per set would spend more on them than on the sets.
MIN_CHUNK_SETS = 16
#: Bytes of working memory per set and day of a chunk (rows, net P&L, drawdown, statistics).
BYTES_PER_SET_DAY = 64


class SweepCancelled(HunchbookError):
    """The sweep was cancelled before every set had run (or not confirmed before it began)."""


class SweepRefused(HunchbookError):
    """The sweep would not fit in the memory free, so it was not started."""


@dataclass(frozen=True, eq=False)
class DailyRows:
    """Daily portfolio gross P&L, cost and used-day flags on the union of dates, one row per
    set, with each set's trades (changes of whole contracts held, one per market and day)
    and contracts traded."""

    gross: np.ndarray
    cost: np.ndarray
    used: np.ndarray
    trades: np.ndarray
    contracts: np.ndarray

    @property
    def net(self) -> np.ndarray:
        """Daily portfolio net P&L, (sets, days)."""
        return self.gross - self.cost


@dataclass(frozen=True, eq=False)
class SweepPayload:
    """Everything a :class:`ChunkWorker` needs, sent once to each worker process or machine
    (pickled, or inherited by a forked process): the backtest and the statistics' plan."""

    backtest: Backtest
    plan: PeriodPlan


@dataclass(frozen=True, eq=False)
class Chunk:
    """The consecutive sets from ``start``: their own figures and their part of the
    statistics over the common period."""

    start: int
    figures: SetFigures
    period: PeriodParts

    def __len__(self) -> int:
        return len(self.figures)


@dataclass(frozen=True, eq=False)
class SweepOutcome:
    """Every set's figures (in grid order) and every chunk's part of the statistics, for the
    plan they were computed by."""

    sets: tuple[dict[str, float], ...]
    markets: tuple[str, ...]
    dates: np.ndarray
    figures: SetFigures
    plan: PeriodPlan
    parts: tuple[PeriodParts, ...]

    @property
    def common_period(self) -> tuple[int, int]:
        """Days ``[start, stop)`` on which every set has rows: from the day the last set starts
        to the last day all still have rows (a rule's ``end`` stops them before the data)."""
        return int(self.figures.first_day.max()), int(self.figures.end_day.min())


class SweepJob:
    """One sweep to run: the backtest, its parameter sets, and where finished chunks go.

    Parameters
    ----------
    backtest
        The prepared rule and panel.
    sets
        Parameter sets in grid order (neighbours adjacent, so chunks share window functions).
    plan
        What each chunk computes over the common period (see
        :func:`~hunchbook.core.sweep_period.period_plan`).
    progress
        Called with (sets done, total) as chunks arrive.
    cancel
        Polled by runners between chunks (and by :class:`ChunkWorker` between sets when
        given); True stops the sweep.
    """

    def __init__(self, backtest: Backtest, sets: Sequence[Params], plan: PeriodPlan, *,
                 progress: Progress | None = None, cancel: CancelCheck | None = None) -> None:
        if not sets:
            raise ValueError("a sweep needs at least one parameter set")
        self.backtest = backtest
        self.sets = sets
        self.plan = plan
        self.cancel = cancel
        self._progress = progress
        self._chunks: list[Chunk] = []
        self._done = 0

    @property
    def payload(self) -> SweepPayload:
        """What each worker needs to run chunks of this job: build a
        :class:`ChunkWorker` from it once per process."""
        return SweepPayload(self.backtest, self.plan)

    @property
    def max_chunk_sets(self) -> int:
        """Most sets in one chunk, so that a chunk's working memory stays within
        :data:`CHUNK_BYTES`."""
        days = len(self.backtest.panel.union_dates)
        return max(8, CHUNK_BYTES // (BYTES_PER_SET_DAY * max(days, 1)))

    def chunk_bounds(self, chunks: int) -> list[tuple[int, int]]:
        """(start, stop) of about ``chunks`` consecutive, equally sized slices of the sets
        (fewer when a slice would hold under :data:`MIN_CHUNK_SETS`, more when it would exceed
        :attr:`max_chunk_sets`)."""
        size = max(-(-len(self.sets) // max(1, chunks)), MIN_CHUNK_SETS)
        size = min(size, self.max_chunk_sets)
        return [(b, min(b + size, len(self.sets))) for b in range(0, len(self.sets), size)]

    def check_cancel(self) -> None:
        """Raise :class:`SweepCancelled` when the cancel check says so."""
        if self.cancel is not None and self.cancel():
            raise SweepCancelled("sweep cancelled")

    def add(self, chunk: Chunk) -> None:
        """Take a finished chunk and report progress."""
        self._chunks.append(chunk)
        self._done += len(chunk)
        if self._progress is not None:
            self._progress(self._done, len(self.sets))

    def outcome(self) -> SweepOutcome:
        """The assembled sweep, once every set has arrived exactly once."""
        chunks = sorted(self._chunks, key=lambda c: c.start)
        expected = np.arange(len(self.sets))
        arrived = np.concatenate([expected[:0]]
                                 + [np.arange(c.start, c.start + len(c)) for c in chunks])
        if not np.array_equal(np.sort(arrived), expected):
            missing = np.setdiff1d(expected, arrived).size
            raise RuntimeError(f"the sweep runner returned {arrived.size} set results for "
                               f"{expected.size} sets, {missing} of them missing: each set "
                               "must arrive exactly once")
        panel = self.backtest.panel
        return SweepOutcome(
            sets=tuple(dict(s) for s in self.sets), markets=panel.markets,
            dates=panel.union_dates, figures=SetFigures.join([c.figures for c in chunks]),
            plan=self.plan, parts=tuple(c.period for c in chunks))


class SweepRunner(Protocol):
    """How a sweep's chunks are run: in this process, in local processes, on a cluster.

    ``run`` runs every set of ``job.sets`` (through a :class:`ChunkWorker` wherever it
    computes), passes each finished chunk to ``job.add`` and calls ``job.check_cancel``
    between chunks; it returns once every set has been added.

    A runner may say, for the sweep's estimate, how many sets it runs at once (``slots``) and
    how many of its workers are processes on this machine (``local_slots``, 0 for a cluster
    elsewhere); without them the estimate assumes one, here.
    """

    def run(self, job: SweepJob) -> None:
        """Run every set of the job."""


class ChunkWorker:
    """Runs chunks of one backtest's parameter sets; build one per process and reuse it
    (it holds the mapping of each market's bars onto the union of dates)."""

    def __init__(self, payload: SweepPayload) -> None:
        self.backtest = payload.backtest
        self.plan = payload.plan
        self._blocks = market_blocks(self.backtest)

    def run(self, sets: Sequence[Params], start: int, *,
            cancel: CancelCheck | None = None) -> Chunk:
        """Run consecutive parameter sets, the first being set ``start`` of the sweep."""
        rows = self.rows(sets, cancel=cancel)
        plan = self.plan
        net = rows.net
        figures = set_figures(rows.gross, rows.cost, rows.used, rows.trades, rows.contracts,
                              self.backtest.panel.union_dates)
        return Chunk(start=start, figures=figures,
                     period=period_parts(plan, net[:, plan.start:plan.stop].T, start))

    def rows(self, sets: Sequence[Params], *, cancel: CancelCheck | None = None) -> DailyRows:
        """The daily rows of these parameter sets."""
        return _run_sets(self._blocks, sets, cancel)


def daily_rows(backtest: Backtest, sets: Sequence[Params], *,
               cancel: CancelCheck | None = None) -> DailyRows:
    """The daily rows of parameter sets, run here (a sweep's pilot sets, its chosen set, the
    sets the walk-forward test traded, an idea's earlier trials)."""
    return _run_sets(market_blocks(backtest), sets, cancel)


def market_blocks(backtest: Backtest) -> list[tuple[Backtest, _Aggregator]]:
    """The backtest cut into blocks of markets of about :data:`BLOCK_CELLS` cells each (with
    the aggregator of each), so that a set's arrays stay in the processor's cache; one block
    when the rule compares markets or the markets are few. Every set's rows are the sums of
    its blocks' rows."""
    bars, markets = backtest.window.shape
    width = max(1, BLOCK_CELLS // max(bars, 1))
    if markets <= width or backtest.position.compares_markets():
        return [(backtest, _Aggregator(backtest))]
    parts = [backtest.columns(a, min(a + width, markets)) for a in range(0, markets, width)]
    return [(part, _Aggregator(part)) for part in parts]


class _Aggregator:
    """Sums a backtest's (bars, markets) arrays onto the union of dates of its window.

    ``source[d, m]`` is the flat cell of market m's bar on union date d, or a padding cell
    (always zero in results) when market m has no bar in the window that day.
    """

    def __init__(self, backtest: Backtest) -> None:
        panel, window = backtest.panel, backtest.window
        bars, markets = window.shape
        self.days = len(panel.union_dates)
        padding = np.ravel_multi_index((np.full(markets, bars - 1), np.arange(markets)),
                                       window.shape)
        self.source = np.broadcast_to(padding, (self.days, markets)).copy()
        r, j = np.nonzero(window)
        self.source[panel.date_index[r, j], j] = r * markets + j
        identity = np.arange(self.days * markets).reshape(self.days, markets)
        # markets on one calendar with the whole of it in the window: bars are days already
        self.aligned = bool(self.days < bars and np.array_equal(self.source, identity))
        self.open = np.zeros((self.days, markets), dtype=bool)  # market m has a bar on day d
        self.open[panel.date_index[r, j], j] = True
        self.any_open = self.open.any(axis=1)
        self.day_of_bar = np.where(window, panel.date_index, self.days)
        self.day_of_bar = np.vstack([self.day_of_bar, np.full((1, markets), self.days)])
        self.cols = np.arange(markets)

    def by_day(self, values: np.ndarray) -> np.ndarray:
        """(days, markets) view of ``values`` on the union dates (zero where no bar)."""
        if self.aligned:  # bar t of every market is union day t: no gather needed
            return values[:self.days]
        return values.ravel()[self.source]

    def used(self, first: np.ndarray) -> np.ndarray:
        """Days on which any market has a result row, given each market's first result bar."""
        first_day = self.day_of_bar[first, self.cols]
        begin, settled = int(first_day.min()), int(first_day.max())
        used = np.zeros(self.days, dtype=bool)
        used[settled:] = self.any_open[settled:]  # every market has started by then
        part = self.open[begin:settled] & (np.arange(begin, settled)[:, None] >= first_day)
        used[begin:settled] = part.any(axis=1)
        return used


def _run_sets(blocks: Sequence[tuple[Backtest, _Aggregator]], sets: Sequence[Params],
              cancel: CancelCheck | None) -> DailyRows:
    """Run parameter sets into their daily rows, block of markets after block."""
    k, days = len(sets), blocks[0][1].days
    gross, cost = np.zeros((k, days)), np.zeros((k, days))
    used = np.zeros((k, days), dtype=bool)
    contracts, trades = np.zeros(k), np.zeros(k)
    order = _reuse_order(sets)
    for backtest, agg in blocks:
        cost_per_contract = backtest.panel.cost_per_contract
        ones_m = np.ones(len(backtest.panel.markets))
        for i in order:
            if cancel is not None and cancel():
                raise SweepCancelled("sweep cancelled")
            out = backtest.run(sets[i])
            g, t = agg.by_day(out.gross), agg.by_day(out.traded)
            # sums as matrix-vector products: much faster than reductions along an axis
            gross[i] += g @ ones_m
            cost[i] += t @ cost_per_contract
            used[i] |= agg.used(out.first)
            contracts[i] += t.sum()
            trades[i] += np.count_nonzero(agg.by_day(out.trades))
    return DailyRows(gross=gross, cost=cost, used=used, trades=trades, contracts=contracts)


def _reuse_order(sets: Sequence[Params]) -> list[int]:
    """The order to run a chunk's sets in: by their parameters from the last to the first.

    A chunk of a grid in grid order spans few values of the first parameters and many of the
    last. Run the other way round, each window function of a last parameter's value serves its
    sets one after another, and those of the first parameters' few values stay in the cache:
    the cache needs a handful of arrays instead of one per value (results do not depend on the
    order; only the time does).
    """
    return sorted(range(len(sets)), key=lambda i: tuple(reversed(tuple(sets[i].values()))))
