"""A warm pool of sweep workers: processes started once and reused for every sweep.

:class:`WarmPool` is a sweep runner (:class:`~hunchbook.core.sweep_job.SweepRunner`) for a
long-lived process such as the desktop window, where :class:`~hunchbook.core.runners.
LocalProcesses` would start (spawn, since the window runs threads) and tear down fresh workers
for every run, each importing everything again and receiving the backtest anew.

Workers are forked by a *fork server* (``multiprocessing``'s ``"forkserver"`` start method):
a fresh single-threaded interpreter that imports the heavy modules once (:data:`PRELOAD`) and
forks every worker from itself. Forking the calling process instead is unsafe once it runs
threads (a thread holding a lock at the fork leaves it locked for ever in the child), and the
window runs Qt's threads from its first moment; the fork server never runs any. A worker lost
later is replaced by another fork of the server, just as cheaply. Where there is no fork
server (Windows), workers are spawned, still once.

Each job's payload is pickled once into a temporary file; the chunk tasks carry the job's
serial number and that file's path, and each worker keeps the :class:`~hunchbook.core.
sweep_job.ChunkWorker` of the current job only (built on its first chunk of the job, dropped
at the first chunk of the next: between sweeps a worker still holds the last one's backtest
and window-function cache). When a job ends (done, cancelled or failed) its serial is written
to a number the workers share, and any of its chunks still running or queued stops at its
next set.
"""

from __future__ import annotations

import contextlib
import itertools
import os
import pickle
import tempfile
import threading
from typing import TYPE_CHECKING, Any

from hunchbook.core.errors import HunchbookError

if TYPE_CHECKING:
    from concurrent.futures import Future, ProcessPoolExecutor

    from hunchbook.core.sweep_job import Chunk, ChunkWorker, Params, SweepJob

#: Modules the fork server imports once, so that every worker forked from it has them loaded.
PRELOAD = ("__main__", "numpy", "pandas", "hunchbook.core.engine", "hunchbook.core.sweep_job",
           "hunchbook.core.warm_pool")
#: Seconds between two looks at the job's cancel check while chunks run.
POLL_SECONDS = 0.1
#: Longest wait (seconds) of a starting worker for the others, so that all start together.
START_WAIT_SECONDS = 120.0
#: Shared "every job up to this serial is over" once the pool is closed.
_ALL_OVER = 2 ** 62


class WorkerLost(HunchbookError):
    """A worker process of the pool ended during a sweep (killed, or out of memory)."""


class WarmPool:
    """Run sweeps over worker processes started once and kept for every later sweep.

    Start it early (:meth:`start_in_background`), hand it to every sweep as ``runner``, and
    :meth:`close` it when done (or use it as a context manager). One sweep runs at a time;
    a second caller waits for the first. When a worker process is lost during a sweep, that
    sweep raises :class:`WorkerLost` and the next one starts new workers.

    Parameters
    ----------
    workers
        Worker processes; default the CPU count. 1 runs every sweep in the calling process.
    min_sets
        Below this many sets a sweep runs in the calling process (shipping it would dominate).
    chunks_per_worker
        Chunks per worker: more gives smoother progress and balance, fewer shares more cache.

    Attributes
    ----------
    last_pids
        The process ids that ran the chunks of the last sweep that finished (the calling
        process's own id when it ran in process).
    """

    def __init__(self, workers: int | None = None, *, min_sets: int = 48,
                 chunks_per_worker: int = 4) -> None:
        if workers is not None and workers < 1:
            raise ValueError(f"workers must be at least 1, got {workers}")
        if chunks_per_worker < 1:
            raise ValueError(f"chunks_per_worker must be at least 1, got {chunks_per_worker}")
        self.workers = workers or os.cpu_count() or 1
        self.min_sets = min_sets
        self.chunks_per_worker = chunks_per_worker
        self.last_pids: frozenset[int] = frozenset()
        self._lock = threading.Lock()
        self._serials = itertools.count(1)
        self._executor: ProcessPoolExecutor | None = None
        self._over: Any = None  # shared "jobs up to this serial are over" (a ctypes value)
        self._closed = False

    @property
    def slots(self) -> int:
        """Sets run at once (for the sweep's estimate): the worker processes."""
        return self.workers

    @property
    def local_slots(self) -> int:
        """Worker processes on this machine: all of them."""
        return self.workers

    def __enter__(self) -> WarmPool:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def start(self) -> None:
        """Start the fork server and every worker now (blocks until they are up; a sweep
        started meanwhile waits for them)."""
        with self._lock:
            self._started()

    def start_in_background(self) -> threading.Thread:
        """Start the workers on a background thread (returned) and return at once."""
        thread = threading.Thread(target=self._start_quietly, name="hunchbook-warm-pool",
                                  daemon=True)
        thread.start()
        return thread

    def run(self, job: SweepJob) -> None:
        """Run every set of the job over the pool's workers (small sweeps in process).

        Raises
        ------
        WorkerLost
            A worker process ended during the sweep; nothing of the sweep is kept.
        SweepCancelled
            The job's cancel check said so (or the pool was closed meanwhile).
        """
        if self.workers == 1 or len(job.sets) < self.min_sets:
            from hunchbook.core.runners import InProcess

            InProcess().run(job)
            self.last_pids = frozenset({os.getpid()})
            return
        with self._lock:
            executor = self._started()
            serial = next(self._serials)
            fd, path = tempfile.mkstemp(prefix="hunchbook-sweep-", suffix=".pickle")
            try:
                with os.fdopen(fd, "wb") as file:
                    pickle.dump(job.payload, file, protocol=pickle.HIGHEST_PROTOCOL)
                self.last_pids = self._run_chunks(executor, job, serial, path)
            finally:
                self._over.value = max(self._over.value, serial)
                os.unlink(path)

    def close(self) -> None:
        """Stop the workers (a running sweep stops at its workers' next set) and the pool:
        later sweeps are refused, except the small ones that run in process."""
        self._closed = True
        if self._over is not None:
            self._over.value = _ALL_OVER
        with self._lock:
            if self._executor is not None:
                self._executor.shutdown(wait=True, cancel_futures=True)
                self._executor = None

    # -- inside ---------------------------------------------------------------------------
    def _start_quietly(self) -> None:
        try:
            self.start()
        except Exception:  # the first sweep starts it again and reports why
            return

    def _started(self) -> ProcessPoolExecutor:
        """The running executor, with every worker started (under the lock)."""
        if self._closed:
            raise RuntimeError("this warm pool was closed")
        if self._executor is not None:
            return self._executor
        # imported here: the window imports this module while it starts
        import multiprocessing
        from concurrent.futures import ProcessPoolExecutor

        if "forkserver" in multiprocessing.get_all_start_methods():
            context = multiprocessing.get_context("forkserver")
            context.set_forkserver_preload(list(PRELOAD))
        else:  # no fork server on this system: each worker imports everything, once
            context = multiprocessing.get_context("spawn")
        if self._over is None:
            self._over = context.RawValue("q", 0)
        executor = ProcessPoolExecutor(self.workers, mp_context=context,
                                       initializer=_start_worker,
                                       initargs=(self._over, context.Barrier(self.workers)))
        # the executor starts a process per task while none is idle; the workers wait for
        # each other as they start, so these tasks start every one of them now
        try:
            for probe in [executor.submit(os.getpid) for _ in range(self.workers)]:
                probe.result()
        except BaseException:
            executor.shutdown(wait=False, cancel_futures=True)
            raise
        self._executor = executor
        return executor

    def _discard(self) -> None:
        """Drop a broken executor (its processes are already ended)."""
        if self._executor is not None:
            self._executor.shutdown(wait=False, cancel_futures=True)
            self._executor = None

    def _run_chunks(self, executor: ProcessPoolExecutor, job: SweepJob, serial: int,
                    path: str) -> frozenset[int]:
        """Run the job's chunks; returns the ids of the processes that ran them."""
        from concurrent.futures import FIRST_COMPLETED, wait
        from concurrent.futures.process import BrokenProcessPool

        bounds = job.chunk_bounds(self.workers * self.chunks_per_worker)

        def submit(pool: ProcessPoolExecutor) -> set[Future[tuple[int, Chunk]]]:
            return {pool.submit(_run_chunk, serial, path, list(job.sets[start:stop]), start)
                    for start, stop in bounds}

        try:
            pending = submit(executor)
        except BrokenProcessPool:  # a worker was lost while the pool stood idle: start afresh
            self._discard()
            pending = submit(self._started())
        pids: set[int] = set()
        try:
            while pending:
                finished, pending = wait(pending, timeout=POLL_SECONDS,
                                         return_when=FIRST_COMPLETED)
                for future in finished:
                    pid, chunk = future.result()
                    pids.add(pid)
                    job.add(chunk)
                job.check_cancel()
        except BrokenProcessPool:
            self._discard()
            raise WorkerLost("a sweep worker process ended during the run (killed, or out of "
                             "memory); the run stopped and nothing of it was kept; the next "
                             "run starts new workers") from None
        except BaseException:
            for future in pending:
                future.cancel()
            raise
        return frozenset(pids)


# -- in each worker process -------------------------------------------------------------------
#: The pool's shared "jobs up to this serial are over", set by the initializer.
_OVER: Any = None
#: The current job's serial and chunk worker.
_CURRENT: tuple[int, ChunkWorker] | None = None


def _start_worker(over: Any, barrier: threading.Barrier) -> None:
    global _OVER
    _OVER = over
    # some did not start together: work all the same
    with contextlib.suppress(threading.BrokenBarrierError):
        barrier.wait(START_WAIT_SECONDS)


def _run_chunk(serial: int, path: str, sets: list[Params], start: int) -> tuple[int, Chunk]:
    """Run one chunk of job ``serial`` (its payload pickled at ``path``); returns this
    process's id and the chunk."""
    from hunchbook.core.sweep_job import ChunkWorker, SweepCancelled

    def over() -> bool:
        return bool(_OVER.value >= serial)

    global _CURRENT
    if over():  # queued before its job ended
        raise SweepCancelled("sweep cancelled")
    if _CURRENT is None or _CURRENT[0] != serial:
        _CURRENT = None  # let the previous job's worker and its cache go first
        with open(path, "rb") as file:
            _CURRENT = (serial, ChunkWorker(pickle.load(file)))
    return os.getpid(), _CURRENT[1].run(sets, start, cancel=over)
