"""Parameter sweeps: every declared parameter set, gross and net, fast and in bounded memory.

The sets are split into chunks of neighbouring grid cells (which share most window functions,
computed once per chunk through the backtest's cache) and spread over worker processes. Each
set leaves its daily portfolio gross P&L and cost on the union of dates plus per-market
totals; per-(date, market) detail is not kept (re-run the sets you want to look at).
"""

from __future__ import annotations

import mmap
import multiprocessing
import os
import threading
from collections.abc import Callable, Sequence
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from dataclasses import dataclass, replace

import numpy as np

from hunchbook.core.engine import Backtest
from hunchbook.core.errors import HunchbookError

#: Below this many sets a sweep runs in the calling process (worker start-up would dominate).
MIN_SETS_FOR_PROCESSES = 48
#: Chunks per worker: more gives smoother progress and balance, fewer shares more cache.
CHUNKS_PER_WORKER = 4

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
class _DailyRows:
    """Daily portfolio gross P&L, cost and used-day flags, one row per set."""

    gross: np.ndarray
    cost: np.ndarray
    used: np.ndarray

    @classmethod
    def allocate(cls, sets: int, days: int, *, shared: bool = False) -> _DailyRows:
        """Zeroed rows; ``shared`` places them in memory that forked workers write into."""
        sizes = (sets * days * 8, sets * days * 8, sets * days)
        # anonymous mmap memory is shared with forked children
        buffer = mmap.mmap(-1, max(1, sum(sizes))) if shared else bytearray(sum(sizes))
        gross = np.frombuffer(buffer, np.float64, sets * days, 0).reshape(sets, days)
        cost = np.frombuffer(buffer, np.float64, sets * days, sizes[0]).reshape(sets, days)
        used = np.frombuffer(buffer, np.bool_, sets * days, sizes[0] + sizes[1])
        return cls(gross=gross, cost=cost, used=used.reshape(sets, days))


@dataclass(frozen=True)
class _Chunk:
    """Per-market figures of consecutive sets from ``start`` (and their daily rows when the
    worker could not write them into shared memory)."""

    start: int
    contracts: np.ndarray
    trades: np.ndarray
    market: dict[str, np.ndarray]
    daily: _DailyRows | None = None


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


def run_chunk(backtest: Backtest, sets: Sequence[dict[str, float]], daily: _DailyRows,
              offset: int, agg: _Aggregator, cancel: CancelCheck | None = None) -> _Chunk:
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
    return _Chunk(start=offset, contracts=contracts, trades=trades, market=market)


def run_sweep(backtest: Backtest, sets: Sequence[dict[str, float]], *,
              workers: int | None = None, progress: Progress | None = None,
              cancel: CancelCheck | None = None) -> SweepOutcome:
    """Run every parameter set over one backtest.

    Parameters
    ----------
    backtest
        The prepared rule and panel.
    sets
        Parameter sets in grid order (neighbours adjacent, so chunks share window functions).
    workers
        Worker processes; default the CPU count. 1 (or a small sweep) runs in this process.
    progress
        Called with (sets done, total) as chunks finish.
    cancel
        Polled between chunks (and between sets in this process); True stops the sweep.

    Raises
    ------
    SweepCancelled
        When ``cancel`` returned True.
    """
    workers = max(1, workers or os.cpu_count() or 1)
    agg = _Aggregator(backtest)
    if workers == 1 or len(sets) < MIN_SETS_FOR_PROCESSES:
        daily = _DailyRows.allocate(len(sets), agg.days)
        chunks = _run_in_process(backtest, sets, daily, agg, progress, cancel)
    else:
        daily, chunks = _run_in_workers(backtest, sets, agg.days, workers, progress, cancel)
    return _assemble(backtest, sets, daily, chunks)


def _run_in_process(backtest: Backtest, sets: Sequence[dict[str, float]], daily: _DailyRows,
                    agg: _Aggregator, progress: Progress | None,
                    cancel: CancelCheck | None) -> list[_Chunk]:
    step = max(1, len(sets) // 50)
    chunks = []
    for begin in range(0, len(sets), step):
        chunks.append(run_chunk(backtest, sets[begin:begin + step], daily, begin, agg, cancel))
        if progress is not None:
            progress(min(begin + step, len(sets)), len(sets))
    return chunks


def _run_in_workers(backtest: Backtest, sets: Sequence[dict[str, float]], days: int,
                    workers: int, progress: Progress | None,
                    cancel: CancelCheck | None) -> tuple[_DailyRows, list[_Chunk]]:
    global _SHARED
    size = max(1, -(-len(sets) // (workers * CHUNKS_PER_WORKER)))
    method = _start_method()
    daily = _DailyRows.allocate(len(sets), days, shared=method == "fork")
    _SHARED = daily if method == "fork" else None  # inherited by forked workers
    done, chunks = 0, []
    try:
        with ProcessPoolExecutor(max_workers=workers,
                                 mp_context=multiprocessing.get_context(method),
                                 initializer=_init_worker, initargs=(backtest,)) as pool:
            pending = {pool.submit(_worker_chunk, list(sets[b:b + size]), b)
                       for b in range(0, len(sets), size)}
            try:
                while pending:
                    finished, pending = wait(pending, timeout=0.1, return_when=FIRST_COMPLETED)
                    for future in finished:
                        chunk = future.result()
                        if chunk.daily is not None:  # spawned worker: copy its rows in
                            rows = slice(chunk.start, chunk.start + len(chunk.contracts))
                            daily.gross[rows] = chunk.daily.gross
                            daily.cost[rows] = chunk.daily.cost
                            daily.used[rows] = chunk.daily.used
                        chunks.append(replace(chunk, daily=None))
                        done += len(chunk.contracts)
                        if progress is not None:
                            progress(done, len(sets))
                    if cancel is not None and cancel():
                        raise SweepCancelled("sweep cancelled")
            except BaseException:
                for future in pending:
                    future.cancel()
                raise
    finally:
        _SHARED = None
    return daily, chunks


def _start_method() -> str:
    """Fork (fast, nothing to pickle) only when no other thread runs; otherwise spawn."""
    if "fork" in multiprocessing.get_all_start_methods() and threading.active_count() == 1:
        return "fork"
    return "spawn"


#: Daily rows in shared memory, set in the parent just before forking workers.
_SHARED: _DailyRows | None = None
#: A worker's backtest and aggregator, set by its initializer.
_WORKER: tuple[Backtest, _Aggregator] | None = None


def _init_worker(backtest: Backtest) -> None:
    global _WORKER
    _WORKER = (backtest, _Aggregator(backtest))


def _worker_chunk(sets: list[dict[str, float]], start: int) -> _Chunk:
    assert _WORKER is not None, "worker used before its initializer ran"
    backtest, agg = _WORKER
    if _SHARED is not None:
        return run_chunk(backtest, sets, _SHARED, start, agg)
    local = _DailyRows.allocate(len(sets), agg.days)
    return replace(run_chunk(backtest, sets, local, 0, agg), start=start, daily=local)


def _assemble(backtest: Backtest, sets: Sequence[dict[str, float]], daily: _DailyRows,
              chunks: list[_Chunk]) -> SweepOutcome:
    chunks = sorted(chunks, key=lambda c: c.start)
    m = {k: np.vstack([c.market[k] for c in chunks]) for k in chunks[0].market}
    panel = backtest.panel
    return SweepOutcome(
        sets=tuple(dict(s) for s in sets), markets=panel.markets, dates=panel.union_dates,
        gross=daily.gross.T, cost=daily.cost.T, used=daily.used.T,
        contracts=np.concatenate([c.contracts for c in chunks]),
        trades=np.concatenate([c.trades for c in chunks]),
        market_gross=m["gross"], market_cost=m["cost"], market_gross_sq=m["gross_sq"],
        market_net_sq=m["net_sq"], market_days=m["days"], market_contracts=m["contracts"],
        market_span_days=m["span_days"])
