"""Sweep runners: where a sweep's chunks run. Each is also the settings of that way of running.

:class:`InProcess` runs them one after another in the calling process; :class:`LocalProcesses`
spreads them over worker processes on this machine. Any object with a ``run(job)`` method
following :class:`~hunchbook.core.sweep_job.SweepRunner` can take their place (for example one
that sends chunks to a cluster): nothing else in the core changes.
"""

from __future__ import annotations

import multiprocessing
import os
import threading
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from dataclasses import dataclass

from hunchbook.core.sweep_job import Chunk, ChunkWorker, Params, SweepJob, SweepPayload

#: Progress steps of a sweep run in process (chunks of about 1/50 of the sets).
IN_PROCESS_CHUNKS = 50


@dataclass(frozen=True)
class InProcess:
    """Run every set in the calling process, in chunks, polling cancel between sets."""

    #: Sets run at once, and worker processes on this machine (for the sweep's estimate).
    slots = 1
    local_slots = 1

    def run(self, job: SweepJob) -> None:
        """Run every set of the job here."""
        worker = ChunkWorker(job.payload)
        for start, stop in job.chunk_bounds(IN_PROCESS_CHUNKS):
            job.add(worker.run(job.sets[start:stop], start, cancel=job.cancel))


@dataclass(frozen=True)
class LocalProcesses:
    """Spread the sets over worker processes on this machine.

    Forked workers (when this process runs no other thread) inherit the prepared backtest;
    otherwise workers are spawned and receive it pickled. Each chunk sends back only its sets'
    figures and its part of the statistics.

    Parameters
    ----------
    workers
        Worker processes; default the CPU count. 1 runs in the calling process.
    min_sets
        Below this many sets the sweep runs in the calling process (start-up would dominate).
    chunks_per_worker
        Chunks per worker: more gives smoother progress and balance, fewer shares more cache.
    start_method
        ``"fork"``, ``"spawn"`` or ``"forkserver"``; default fork when no other thread runs,
        else spawn.
    """

    workers: int | None = None
    min_sets: int = 48
    chunks_per_worker: int = 4
    start_method: str | None = None

    def __post_init__(self) -> None:
        if self.workers is not None and self.workers < 1:
            raise ValueError(f"workers must be at least 1, got {self.workers}")
        if self.chunks_per_worker < 1:
            raise ValueError(f"chunks_per_worker must be at least 1, got "
                             f"{self.chunks_per_worker}")
        methods = multiprocessing.get_all_start_methods()
        if self.start_method is not None and self.start_method not in methods:
            raise ValueError(f"start_method must be one of {', '.join(methods)}, got "
                             f"{self.start_method!r}")

    @property
    def slots(self) -> int:
        """Sets run at once: the worker processes."""
        return self.workers or os.cpu_count() or 1

    @property
    def local_slots(self) -> int:
        """Worker processes on this machine (each holds a copy of the backtest)."""
        return self.slots

    def run(self, job: SweepJob) -> None:
        """Run every set of the job over the worker processes."""
        workers = self.slots
        if workers == 1 or len(job.sets) < self.min_sets:
            InProcess().run(job)
            return
        method = self.start_method or _default_start_method()
        with ProcessPoolExecutor(max_workers=workers,
                                 mp_context=multiprocessing.get_context(method),
                                 initializer=_init_worker, initargs=(job.payload,)) as pool:
            pending = {pool.submit(_worker_chunk, list(job.sets[start:stop]), start)
                       for start, stop in job.chunk_bounds(workers * self.chunks_per_worker)}
            try:
                while pending:
                    finished, pending = wait(pending, timeout=0.1,
                                             return_when=FIRST_COMPLETED)
                    for future in finished:
                        job.add(future.result())
                    job.check_cancel()
            except BaseException:
                for future in pending:
                    future.cancel()
                raise


def _default_start_method() -> str:
    """Fork (fast, nothing to pickle) only when no other thread runs; otherwise spawn."""
    if "fork" in multiprocessing.get_all_start_methods() and threading.active_count() == 1:
        return "fork"
    return "spawn"


#: A worker process's chunk worker, set by its initializer.
_WORKER: ChunkWorker | None = None


def _init_worker(payload: SweepPayload) -> None:
    global _WORKER
    _WORKER = ChunkWorker(payload)


def _worker_chunk(sets: list[Params], start: int) -> Chunk:
    assert _WORKER is not None, "worker used before its initializer ran"
    return _WORKER.run(sets, start)
