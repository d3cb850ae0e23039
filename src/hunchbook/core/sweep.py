"""Parameter sweeps: every declared parameter set, gross and net, fast and in bounded memory.

The sets are split into chunks of neighbouring grid cells (which share most window functions,
computed once per chunk through the backtest's cache) and spread over worker processes. Each
set leaves its daily portfolio gross P&L and cost on the union of dates plus per-market
totals; per-(date, market) detail is not kept (re-run the sets you want to look at).
"""

from __future__ import annotations

import multiprocessing
import os
from collections.abc import Callable, Sequence
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from dataclasses import dataclass

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
class _Chunk:
    start: int
    gross: np.ndarray
    cost: np.ndarray
    used: np.ndarray
    contracts: np.ndarray
    trades: np.ndarray
    market: dict[str, np.ndarray]


class _Aggregator:
    """Sums a backtest's (bars, markets) arrays onto the union of dates of its window."""

    def __init__(self, backtest: Backtest) -> None:
        panel = backtest.panel
        window = backtest.window
        self.cells = np.flatnonzero(window)
        self.day = panel.date_index.ravel()[self.cells]
        self.days = len(panel.union_dates)

    def total(self, values: np.ndarray) -> np.ndarray:
        return np.bincount(self.day, weights=values.ravel()[self.cells], minlength=self.days)


def run_chunk(backtest: Backtest, sets: Sequence[dict[str, float]], start: int = 0,
              cancel: CancelCheck | None = None) -> _Chunk:
    """Run a run of consecutive parameter sets; see :func:`run_sweep`."""
    agg = _Aggregator(backtest)
    k, m = len(sets), len(backtest.panel.markets)
    gross = np.zeros((agg.days, k))
    cost = np.zeros((agg.days, k))
    used = np.zeros((agg.days, k), dtype=bool)
    contracts, trades = np.zeros(k), np.zeros(k)
    market = {name: np.zeros((k, m)) for name in
              ("gross", "cost", "gross_sq", "net_sq", "days", "contracts", "span_days")}
    dates = backtest.panel.dates.astype(np.int64)
    for i, params in enumerate(sets):
        if cancel is not None and cancel():
            raise SweepCancelled("sweep cancelled")
        out = backtest.run(params)
        gross[:, i] = agg.total(out.gross)
        cost[:, i] = agg.total(out.cost)
        used[:, i] = agg.total(out.rows.astype(float)) > 0
        market_traded = out.traded.sum(axis=0)
        contracts[i] = market_traded.sum()
        trades[i] = np.count_nonzero(out.traded)
        net = out.gross - out.cost
        market["gross"][i] = out.gross.sum(axis=0)
        market["cost"][i] = out.cost.sum(axis=0)
        market["gross_sq"][i] = np.einsum("ij,ij->j", out.gross, out.gross)
        market["net_sq"][i] = np.einsum("ij,ij->j", net, net)
        market["days"][i] = out.rows.sum(axis=0)
        market["contracts"][i] = market_traded
        rows = out.rows
        first = rows.argmax(axis=0)
        last = len(rows) - 1 - rows[::-1].argmax(axis=0)
        cols = np.arange(m)
        market["span_days"][i] = np.where(rows.any(axis=0),
                                          dates[last, cols] - dates[first, cols] + 1, 0)
    return _Chunk(start=start, gross=gross, cost=cost, used=used, contracts=contracts,
                  trades=trades, market=market)


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
    total = len(sets)
    workers = max(1, workers or os.cpu_count() or 1)
    if workers == 1 or total < MIN_SETS_FOR_PROCESSES:
        chunks = [_run_in_process(backtest, sets, progress, cancel)]
    else:
        chunks = _run_in_workers(backtest, sets, workers, progress, cancel)
    return _assemble(backtest, sets, chunks)


def _run_in_process(backtest: Backtest, sets: Sequence[dict[str, float]],
                    progress: Progress | None, cancel: CancelCheck | None) -> _Chunk:
    step = max(1, len(sets) // 50)
    parts = []
    for begin in range(0, len(sets), step):
        parts.append(run_chunk(backtest, sets[begin:begin + step], begin, cancel))
        if progress is not None:
            progress(min(begin + step, len(sets)), len(sets))
    return _concat(parts)


def _run_in_workers(backtest: Backtest, sets: Sequence[dict[str, float]], workers: int,
                    progress: Progress | None, cancel: CancelCheck | None) -> list[_Chunk]:
    size = max(1, -(-len(sets) // (workers * CHUNKS_PER_WORKER)))
    context = multiprocessing.get_context("spawn")  # safe beside GUI threads
    done, chunks = 0, []
    with ProcessPoolExecutor(max_workers=workers, mp_context=context,
                             initializer=_init_worker, initargs=(backtest,)) as pool:
        pending = {pool.submit(_worker_chunk, list(sets[b:b + size]), b)
                   for b in range(0, len(sets), size)}
        try:
            while pending:
                finished, pending = wait(pending, timeout=0.1, return_when=FIRST_COMPLETED)
                for future in finished:
                    chunk = future.result()
                    chunks.append(chunk)
                    done += chunk.gross.shape[1]
                    if progress is not None:
                        progress(done, len(sets))
                if cancel is not None and cancel():
                    raise SweepCancelled("sweep cancelled")
        except BaseException:
            for future in pending:
                future.cancel()
            raise
    return chunks


_WORKER_BACKTEST: Backtest | None = None


def _init_worker(backtest: Backtest) -> None:
    global _WORKER_BACKTEST
    _WORKER_BACKTEST = backtest


def _worker_chunk(sets: list[dict[str, float]], start: int) -> _Chunk:
    assert _WORKER_BACKTEST is not None, "worker used before its initializer ran"
    return run_chunk(_WORKER_BACKTEST, sets, start)


def _concat(parts: list[_Chunk]) -> _Chunk:
    parts = sorted(parts, key=lambda c: c.start)
    return _Chunk(
        start=parts[0].start,
        gross=np.hstack([c.gross for c in parts]), cost=np.hstack([c.cost for c in parts]),
        used=np.hstack([c.used for c in parts]),
        contracts=np.concatenate([c.contracts for c in parts]),
        trades=np.concatenate([c.trades for c in parts]),
        market={k: np.vstack([c.market[k] for c in parts]) for k in parts[0].market})


def _assemble(backtest: Backtest, sets: Sequence[dict[str, float]],
              chunks: list[_Chunk]) -> SweepOutcome:
    whole = _concat(chunks)
    panel = backtest.panel
    m = whole.market
    return SweepOutcome(
        sets=tuple(dict(s) for s in sets), markets=panel.markets, dates=panel.union_dates,
        gross=whole.gross, cost=whole.cost, used=whole.used, contracts=whole.contracts,
        trades=whole.trades, market_gross=m["gross"], market_cost=m["cost"],
        market_gross_sq=m["gross_sq"], market_net_sq=m["net_sq"], market_days=m["days"],
        market_contracts=m["contracts"], market_span_days=m["span_days"])
