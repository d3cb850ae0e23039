"""Before a sweep starts: how long it will take, how much memory it needs, whether it fits.

A few pilot sets (the smallest and largest value of every parameter, and a spread of the rest)
run in this process. Their time per set gives the time estimate; their result rows place the
sweep's common period; the memory estimate follows from the days, the sets, the workers and the
budgets of :mod:`hunchbook.core.sweep_job` and :mod:`hunchbook.core.expr.cache`.

The command line and the window ask before a sweep longer than :data:`CONFIRM_SECONDS` or one
that needs more than :data:`CONFIRM_SHARE` of the free memory, and refuse one that would need
more than :data:`REFUSE_SHARE` of it. The estimate is a model, not a measurement: the figures
of ``benchmarks/sweep.py`` show how close it comes.
"""

from __future__ import annotations

import math
import os
import time
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from hunchbook.core.engine import Backtest
from hunchbook.core.expr.cache import CACHE_BYTES
from hunchbook.core.set_figures import set_figures
from hunchbook.core.stats.effective_trials import MAX_SETS
from hunchbook.core.sweep_job import BYTES_PER_SET_DAY, CHUNK_BYTES, Params, daily_rows

#: Pilot sets run before a sweep.
PILOT_SETS = 12
#: Ask before a sweep estimated to take longer than this (seconds).
CONFIRM_SECONDS = 60.0
#: Ask before a sweep estimated to need more than this share of the free memory.
CONFIRM_SHARE = 0.5
#: Refuse a sweep estimated to need more than this share of the free memory.
REFUSE_SHARE = 0.9
#: Memory of the process before the sweep: the interpreter, numpy, pandas and the study.
BASE_BYTES = 250 * 2**20
#: Memory kept per set after the sweep: its figures, statistics' sums and record (measured by
#: ``benchmarks/sweep.py``).
BYTES_PER_SET = 6 * 2**10
#: The SPA test's working memory in each worker (its replications are processed in pieces).
SPA_BYTES = 64 * 2**20


@dataclass(frozen=True)
class SweepEstimate:
    """What a sweep of ``sets`` sets on ``workers`` workers is expected to cost.

    ``period`` is the common period ``[start, stop)`` the pilot sets place (the sweep checks it
    and runs again over the right one if a set falls outside); ``available_bytes`` the memory
    free when the estimate was made.
    """

    sets: int
    workers: int
    days: int
    seconds: float
    peak_bytes: int
    available_bytes: int
    period: tuple[int, int]

    @property
    def fits(self) -> bool:
        """Whether the sweep is expected to fit in the free memory (with room to spare)."""
        return self.peak_bytes <= REFUSE_SHARE * self.available_bytes

    @property
    def needs_confirmation(self) -> bool:
        """Whether a person should confirm the sweep before it starts."""
        return (self.seconds > CONFIRM_SECONDS
                or self.peak_bytes > CONFIRM_SHARE * self.available_bytes)

    def describe(self) -> str:
        """One line: sets, days, workers, expected time and memory against the free memory."""
        return (f"{self.sets:,} parameter sets x {self.days:,} days on {self.workers} "
                f"worker{'s' if self.workers != 1 else ''}: about {_duration(self.seconds)} "
                f"and {_size(self.peak_bytes)} of memory ({_size(self.available_bytes)} free)")

    def refusal(self) -> str:
        """Why the sweep will not start (when it does not fit)."""
        return (f"this sweep would need about {_size(self.peak_bytes)} of memory but "
                f"{_size(self.available_bytes)} is free: declare fewer parameter values, "
                "a shorter history or fewer markets, or run it on a cluster (--cluster)")


def pilot_sets(sets: Sequence[Params]) -> list[int]:
    """Positions of the pilot sets: the first set with the smallest and with the largest value
    of each parameter, then evenly spaced sets up to :data:`PILOT_SETS`."""
    picked: dict[int, None] = {}
    for name in sets[0] if sets else ():
        values = np.array([s[name] for s in sets])
        picked.update({int(np.argmin(values)): None, int(np.argmax(values)): None})
    for k in np.round(np.linspace(0, len(sets) - 1, PILOT_SETS)).astype(int).tolist():
        if len(picked) >= PILOT_SETS:
            break
        picked[k] = None
    return sorted(picked)


def pilot_period(backtest: Backtest, sets: Sequence[Params]) -> tuple[int, int]:
    """The common period of the pilot sets: days ``[start, stop)``."""
    return _pilot(backtest, sets)[0]


def estimate_sweep(backtest: Backtest, sets: Sequence[Params], *, workers: int,
                   local_workers: int | None = None, others: int = 0,
                   available_bytes: int | None = None) -> SweepEstimate:
    """Estimate a sweep of ``sets`` on ``workers`` workers, ``local_workers`` of them processes
    on this machine (default all), with ``others`` earlier trials joining its statistics;
    the pilot sets run here."""
    began = time.perf_counter()
    period, pilots = _pilot(backtest, sets)
    per_set = (time.perf_counter() - began) / pilots
    n_sets, days = len(sets), len(backtest.panel.union_dates)
    workers = max(1, min(workers, n_sets))
    chunk_sets = min(max(1, math.ceil(n_sets / workers)),
                     max(8, CHUNK_BYTES // (BYTES_PER_SET_DAY * max(days, 1))))
    per_worker = (_payload_bytes(backtest) + CACHE_BYTES + SPA_BYTES
                  + chunk_sets * days * BYTES_PER_SET_DAY)
    period_days = max(period[1] - period[0], 0)
    kept = min(n_sets + others, MAX_SETS) * period_days * 8
    local = workers if local_workers is None else max(0, min(local_workers, workers))
    peak = BASE_BYTES + n_sets * BYTES_PER_SET + kept + max(local, 1) * per_worker
    free = available_memory() if available_bytes is None else available_bytes
    return SweepEstimate(sets=n_sets, workers=workers, days=days,
                         seconds=per_set * n_sets / workers, peak_bytes=int(peak),
                         available_bytes=int(free), period=period)


def available_memory() -> int:
    """Memory free for new work (``MemAvailable`` of /proc/meminfo; elsewhere the free pages)."""
    try:
        with open("/proc/meminfo", encoding="ascii") as info:
            for line in info:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    return os.sysconf("SC_AVPHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")


def _pilot(backtest: Backtest, sets: Sequence[Params]) -> tuple[tuple[int, int], int]:
    picked = pilot_sets(sets)
    rows = daily_rows(backtest, [sets[k] for k in picked])
    figures = set_figures(rows.gross, rows.cost, rows.used, rows.trades, rows.contracts,
                          backtest.panel.union_dates)
    return (int(figures.first_day.max()), int(figures.end_day.min())), len(picked)


def _payload_bytes(backtest: Backtest) -> int:
    """Memory of the backtest's arrays, which every worker holds."""
    panel = backtest.panel
    arrays = [*panel.series.values(), backtest.window, backtest.change_value]
    return int(sum(getattr(a, "nbytes", 0) for a in arrays))


def _duration(seconds: float) -> str:
    if seconds < 90:
        return f"{max(seconds, 1):.0f} s"
    if seconds < 90 * 60:
        return f"{seconds / 60:.0f} min"
    return f"{seconds / 3600:.1f} h"


def _size(n_bytes: float) -> str:
    if n_bytes >= 2**30:
        return f"{n_bytes / 2**30:.1f} GB"
    return f"{n_bytes / 2**20:,.0f} MB"
