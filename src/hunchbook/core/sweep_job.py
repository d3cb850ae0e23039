"""What a sweep runner works with: the job (sets in, chunks out) and the worker that runs a chunk.

A sweep is split into chunks of neighbouring grid cells (which share most window functions,
computed once per chunk through the backtest's cache). A runner (see
:mod:`hunchbook.core.runners`) runs the chunks wherever it likes, each through a
:class:`ChunkWorker` built once per process, and hands every finished :class:`Chunk` to
:meth:`SweepJob.add` in any order. Each set leaves its daily portfolio gross P&L and cost on
the union of dates plus per-market totals; per-(date, market) detail is not kept (re-run the
sets you want to look at).
"""

from __future__ import annotations

import mmap
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from typing import Protocol

import numpy as np

from hunchbook.core.engine import Backtest
from hunchbook.core.errors import HunchbookError

Params = dict[str, float]
Progress = Callable[[int, int], None]
CancelCheck = Callable[[], bool]


class SweepCancelled(HunchbookError):
    """The sweep was cancelled before every set had run."""


@dataclass(frozen=True)
class SweepOutcome:
    """Daily portfolio P&L of every set, shaped ``(dates, sets)``, and per-market totals.

    ``used`` marks the dates on which a set has any result row (a set starts once its
    position is defined). Market arrays are shaped ``(sets, markets)``.
    """

    sets: tuple[dict[str, float], ...]
    markets: tuple[str, ...]
    dates: np.ndarray
    gross: np.ndarray
    cost: np.ndarray
    used: np.ndarray
    contracts: np.ndarray
    trades: np.ndarray
    market_gross: np.ndarray
    market_cost: np.ndarray
    market_gross_sq: np.ndarray
    market_net_sq: np.ndarray
    market_days: np.ndarray
    market_contracts: np.ndarray
    market_span_days: np.ndarray

    @property
    def net(self) -> np.ndarray:
        """Daily portfolio net P&L, ``(dates, sets)``."""
        return self.gross - self.cost


@dataclass(frozen=True)
class DailyRows:
    """Daily portfolio gross P&L, cost and used-day flags, one row per set.

    The rows live in one anonymous memory map, which child processes forked after the
    allocation share with the parent: a forked worker writes its sets' rows in place.
    """

    gross: np.ndarray
    cost: np.ndarray
    used: np.ndarray

    @classmethod
    def allocate(cls, sets: int, days: int) -> DailyRows:
        """Zeroed rows for ``sets`` sets over ``days`` days."""
        sizes = (sets * days * 8, sets * days * 8, sets * days)
        buffer = mmap.mmap(-1, max(1, sum(sizes)))
        gross = np.frombuffer(buffer, np.float64, sets * days, 0).reshape(sets, days)
        cost = np.frombuffer(buffer, np.float64, sets * days, sizes[0]).reshape(sets, days)
        used = np.frombuffer(buffer, np.bool_, sets * days, sizes[0] + sizes[1])
        return cls(gross=gross, cost=cost, used=used.reshape(sets, days))


@dataclass(frozen=True)
class Chunk:
    """Per-market figures of the consecutive sets from ``start``, and their daily rows when
    they were not written into the job's rows directly."""

    start: int
    contracts: np.ndarray
    trades: np.ndarray
    market: dict[str, np.ndarray]
    daily: DailyRows | None = None

    def __len__(self) -> int:
        return len(self.contracts)


@dataclass(frozen=True)
class SweepPayload:
    """Everything a :class:`ChunkWorker` needs, sent once to each worker process or machine
    (pickled, or inherited by a forked process)."""

    backtest: Backtest


class SweepJob:
    """One sweep to run: the backtest, its parameter sets, and where finished chunks go.

    Parameters
    ----------
    backtest
        The prepared rule and panel.
    sets
        Parameter sets in grid order (neighbours adjacent, so chunks share window functions).
    progress
        Called with (sets done, total) as chunks arrive.
    cancel
        Polled by runners between chunks (and by :class:`ChunkWorker` between sets when
        given); True stops the sweep.
    """

    def __init__(self, backtest: Backtest, sets: Sequence[Params], *,
                 progress: Progress | None = None, cancel: CancelCheck | None = None) -> None:
        if not sets:
            raise ValueError("a sweep needs at least one parameter set")
        self.backtest = backtest
        self.sets = sets
        self.cancel = cancel
        self._progress = progress
        #: Every set's daily rows (in memory that forked processes share).
        self.rows = DailyRows.allocate(len(sets), len(backtest.panel.union_dates))
        self._chunks: list[Chunk] = []
        self._done = 0

    @property
    def payload(self) -> SweepPayload:
        """What each worker needs to run chunks of this job: build a
        :class:`ChunkWorker` from it once per process."""
        return SweepPayload(self.backtest)

    def chunk_bounds(self, chunks: int) -> list[tuple[int, int]]:
        """(start, stop) of about ``chunks`` consecutive, equally sized slices of the sets."""
        size = max(1, -(-len(self.sets) // max(1, chunks)))
        return [(b, min(b + size, len(self.sets))) for b in range(0, len(self.sets), size)]

    def check_cancel(self) -> None:
        """Raise :class:`SweepCancelled` when the cancel check says so."""
        if self.cancel is not None and self.cancel():
            raise SweepCancelled("sweep cancelled")

    def add(self, chunk: Chunk) -> None:
        """Take a finished chunk (its daily rows are copied in when it carries them) and
        report progress."""
        stop = chunk.start + len(chunk)
        if chunk.daily is not None:
            self.rows.gross[chunk.start:stop] = chunk.daily.gross
            self.rows.cost[chunk.start:stop] = chunk.daily.cost
            self.rows.used[chunk.start:stop] = chunk.daily.used
            chunk = replace(chunk, daily=None)
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
        m = {k: np.vstack([c.market[k] for c in chunks]) for k in chunks[0].market}
        panel = self.backtest.panel
        return SweepOutcome(
            sets=tuple(dict(s) for s in self.sets), markets=panel.markets,
            dates=panel.union_dates, gross=self.rows.gross.T, cost=self.rows.cost.T,
            used=self.rows.used.T, contracts=np.concatenate([c.contracts for c in chunks]),
            trades=np.concatenate([c.trades for c in chunks]),
            market_gross=m["gross"], market_cost=m["cost"], market_gross_sq=m["gross_sq"],
            market_net_sq=m["net_sq"], market_days=m["days"], market_contracts=m["contracts"],
            market_span_days=m["span_days"])


class SweepRunner(Protocol):
    """How a sweep's chunks are run: in this process, in local processes, on a cluster.

    ``run`` runs every set of ``job.sets`` (through a :class:`ChunkWorker` wherever it
    computes), passes each finished chunk to ``job.add`` and calls ``job.check_cancel``
    between chunks; it returns once every set has been added.
    """

    def run(self, job: SweepJob) -> None:
        """Run every set of the job."""


class ChunkWorker:
    """Runs chunks of one backtest's parameter sets; build one per process and reuse it
    (it holds the mapping of each market's bars onto the union of dates)."""

    def __init__(self, payload: SweepPayload) -> None:
        self.backtest = payload.backtest
        self._agg = _Aggregator(self.backtest)

    def run(self, sets: Sequence[Params], start: int, *, rows: DailyRows | None = None,
            cancel: CancelCheck | None = None) -> Chunk:
        """Run consecutive parameter sets, the first being set ``start`` of the sweep.

        With ``rows`` (the job's, in this process or shared with it) their daily rows are
        written there; without, the chunk carries its own.
        """
        daily = rows if rows is not None else DailyRows.allocate(len(sets), self._agg.days)
        offset = start if rows is not None else 0
        chunk = _run_sets(self.backtest, sets, daily, offset, self._agg, cancel)
        return replace(chunk, start=start, daily=None if rows is not None else daily)


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
        self.last_bar = bars - 1 - window[::-1].argmax(axis=0)
        self.dates = panel.dates.astype(np.int64)
        # rows_from[t, m]: window bars of market m at or after bar t (row ``bars`` holds 0)
        self.rows_from = np.vstack([np.cumsum(window[::-1], axis=0)[::-1],
                                    np.zeros((1, markets), dtype=np.int64)])

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


def _run_sets(backtest: Backtest, sets: Sequence[Params], daily: DailyRows, offset: int,
              agg: _Aggregator, cancel: CancelCheck | None) -> Chunk:
    """Run consecutive parameter sets, writing their daily rows into ``daily`` from ``offset``
    and returning their per-market figures."""
    k, m = len(sets), len(backtest.panel.markets)
    contracts, trades = np.zeros(k), np.zeros(k)
    market = {name: np.zeros((k, m)) for name in
              ("gross", "cost", "gross_sq", "net_sq", "days", "contracts", "span_days")}
    cost_per_contract = backtest.panel.cost_per_contract
    ones_d, ones_m = np.ones(agg.days), np.ones(m)
    for i, params in enumerate(sets):
        if cancel is not None and cancel():
            raise SweepCancelled("sweep cancelled")
        out = backtest.run(params)
        g, t = agg.by_day(out.gross), agg.by_day(out.traded)
        row = offset + i
        # sums as matrix-vector products: much faster than reductions along an axis
        daily.gross[row] = g @ ones_m
        daily.cost[row] = t @ cost_per_contract
        daily.used[row] = agg.used(out.first)
        market_traded = ones_d @ t
        contracts[i] = market_traded.sum()
        trades[i] = np.count_nonzero(t > 0)
        gross_sq = ones_d @ (g * g)
        gross_traded = ones_d @ (g * t)
        traded_sq = ones_d @ (t * t)
        market["gross"][i] = ones_d @ g
        market["cost"][i] = market_traded * cost_per_contract
        market["gross_sq"][i] = gross_sq
        # sum of (gross - traded x cost)^2, expanded
        market["net_sq"][i] = (gross_sq - 2 * cost_per_contract * gross_traded
                               + cost_per_contract ** 2 * traded_sq)
        market["contracts"][i] = market_traded
        days = agg.rows_from[out.first, agg.cols]
        market["days"][i] = days
        first_bar = np.minimum(out.first, len(out.gross) - 1)
        market["span_days"][i] = np.where(
            days > 0, agg.dates[agg.last_bar, agg.cols] - agg.dates[first_bar, agg.cols] + 1, 0)
    return Chunk(start=offset, contracts=contracts, trades=trades, market=market)
