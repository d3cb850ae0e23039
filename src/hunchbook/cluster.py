"""Sweeps on a Dask cluster: :class:`DaskRunner` runs a sweep's chunks on a Dask scheduler's
workers, on other machines or in a cluster of processes started here (see docs/cluster.md).

An optional part of Hunchbook (``pip install 'hunchbook[cluster]'``): Dask is imported only
when a sweep runs, never by the core. The runner follows the core's
:class:`~hunchbook.core.sweep_job.SweepRunner` contract and nothing more: the job's payload is
sent once to every worker, each worker builds one :class:`ChunkWorker` from it and reuses it
for every chunk it runs, and the chunks come back to ``job.add`` as they finish.
"""

from __future__ import annotations

import contextlib
import importlib.util
import threading
import time
from collections.abc import Iterator, Sequence
from types import ModuleType, TracebackType
from typing import Any

from hunchbook.core.errors import HunchbookError
from hunchbook.core.sweep_job import Chunk, ChunkWorker, Params, SweepJob, SweepPayload

#: The address that starts a cluster of worker processes on this machine for the sweep.
LOCAL = "local"
#: What to install for Dask sweeps (said in every "not installed" message).
INSTALL_HINT = "pip install 'hunchbook[cluster]'"
#: Dask's setting of the environment its worker processes start with.
PRE_SPAWN_ENVIRON = "distributed.nanny.pre-spawn-environ"
#: Seconds between cancel checks while no chunk finishes.
POLL_SECONDS = 0.05


def dask_installed() -> bool:
    """Whether Dask's ``distributed`` can be imported here (without importing it)."""
    return importlib.util.find_spec("distributed") is not None


def require_dask() -> ModuleType:
    """The ``distributed`` module, or a :class:`HunchbookError` saying how to install it."""
    if not dask_installed():
        raise HunchbookError(f"sweeps on a Dask cluster need Dask, which is not installed: "
                             f"{INSTALL_HINT}")
    import distributed

    return distributed


class DaskRunner:
    """Run a sweep's chunks on a Dask cluster.

    Each sweep sends the job's payload once to every worker (``scatter`` with broadcast);
    every task runs one chunk of consecutive sets with the worker's :class:`ChunkWorker`,
    built once per worker process and reused. Outside a ``with`` block each sweep connects
    (or starts the local cluster) and disconnects; inside one, the sweeps share the
    connection.

    Parameters
    ----------
    address
        ``"tcp://HOST:PORT"`` of a running scheduler (``dask scheduler``), or ``"local"`` to
        start ``n_workers`` worker processes on this machine for the sweep. None: Dask's
        configured ``scheduler-address`` (``DASK_SCHEDULER_ADDRESS``) if set, else local.
    min_chunk_sets
        Fewest sets in a task (a sweep with fewer runs as one task): a task must be long
        enough to be worth sending.
    chunks_per_worker
        Tasks per worker thread when the sweep is large enough: more balance the load
        better, fewer share more window functions.
    n_workers
        Worker processes of a local cluster (one thread each).
    timeout
        Seconds to wait for the scheduler, and for a first worker to join it.
    """

    def __init__(self, address: str | None = None, *, min_chunk_sets: int = 256,
                 chunks_per_worker: int = 4, n_workers: int = 2,
                 timeout: float = 5.0) -> None:
        for name, value in (("min_chunk_sets", min_chunk_sets),
                            ("chunks_per_worker", chunks_per_worker), ("n_workers", n_workers)):
            if value < 1:
                raise ValueError(f"{name} must be at least 1, got {value}")
        if timeout <= 0:
            raise ValueError(f"timeout must be positive, got {timeout}")
        if address is not None and not address.strip():
            raise HunchbookError("the Dask scheduler address is empty: give tcp://HOST:PORT, "
                                 "or 'local' for a cluster on this machine")
        self.address = None if address is None else address.strip()
        self.min_chunk_sets = min_chunk_sets
        self.chunks_per_worker = chunks_per_worker
        self.n_workers = n_workers
        self.timeout = timeout
        self._stack: contextlib.ExitStack | None = None
        self._client: Any = None

    @property
    def slots(self) -> int:
        """Sets run at once, for the sweep's estimate: a local cluster's workers (a
        scheduler's are unknown before connecting, so the estimate counts one)."""
        return self.n_workers if self.address in (None, LOCAL) else 1

    @property
    def local_slots(self) -> int:
        """Worker processes on this machine (none for a scheduler elsewhere)."""
        return self.n_workers if self.address in (None, LOCAL) else 0

    def __repr__(self) -> str:
        return (f"DaskRunner({self.address!r}, min_chunk_sets={self.min_chunk_sets}, "
                f"chunks_per_worker={self.chunks_per_worker}, n_workers={self.n_workers}, "
                f"timeout={self.timeout})")

    def __enter__(self) -> DaskRunner:
        stack = contextlib.ExitStack()
        self._client = stack.enter_context(self._connect())
        self._stack = stack
        return self

    def __exit__(self, kind: type[BaseException] | None, exc: BaseException | None,
                 tb: TracebackType | None) -> None:
        self.close()

    def close(self) -> None:
        """Disconnect (and stop the local cluster) after a ``with`` block's sweeps."""
        stack, self._stack, self._client = self._stack, None, None
        if stack is not None:
            stack.close()

    def run(self, job: SweepJob) -> None:
        """Run every set of the job on the cluster's workers."""
        if self._client is not None:
            self._run(self._client, job)
            return
        with self._connect() as client:
            self._run(client, job)

    @contextlib.contextmanager
    def _connect(self) -> Iterator[Any]:
        """A client of the scheduler (or of a local cluster started here), closed after."""
        distributed = require_dask()
        address = self.address
        if address is None:
            import dask

            address = dask.config.get("scheduler-address", None) or LOCAL
        with contextlib.ExitStack() as stack:
            if address == LOCAL:
                cluster = stack.enter_context(local_cluster(self.n_workers))
                client = stack.enter_context(distributed.Client(cluster))
            else:
                client = stack.enter_context(_client(distributed, address, self.timeout))
                try:
                    client.wait_for_workers(1, timeout=self.timeout)
                except TimeoutError:
                    raise HunchbookError(
                        f"the Dask scheduler at {address} has no workers (none joined within "
                        f"{self.timeout:g} s): start some with `dask worker {address}` on "
                        "machines with this hunchbook version installed") from None
            yield client

    def _run(self, client: Any, job: SweepJob) -> None:
        from distributed import as_completed

        threads = max(1, sum(client.nthreads().values()))
        # a key of its own (not a hash of the contents): each sweep's payload is sent anew
        payload = client.scatter(job.payload, broadcast=True, hash=False)
        pending = {client.submit(_run_chunk, payload.key, payload, list(job.sets[a:b]), a,
                                 pure=False)
                   for a, b in chunk_bounds(job, threads * self.chunks_per_worker,
                                            self.min_chunk_sets)}
        completed = as_completed(pending)
        try:
            while pending:
                finished = completed.next_batch(block=False)
                if not finished:
                    time.sleep(POLL_SECONDS)
                for future in finished:
                    job.add(_result(future, client))
                    pending.discard(future)
                    future.release()  # the cluster keeps no copy of a chunk taken
                job.check_cancel()
        except BaseException:
            client.cancel(list(pending))
            raise
        finally:
            with contextlib.suppress(Exception):  # a worker that left keeps nothing to drop
                client.run(_forget, payload.key, on_error="ignore")
            payload.release()


def local_cluster(n_workers: int) -> Any:
    """A Dask cluster of ``n_workers`` worker processes (one thread each) on this machine,
    listening on the loopback address only, without a dashboard; close it after use.

    Its workers keep the C library's own memory settings: Dask's default
    ``MALLOC_TRIM_THRESHOLD_`` hands every freed array back to the system, so that each new
    one (a sweep makes many of bars x markets) is faulted in afresh, about twice as slow.
    """
    distributed = require_dask()
    import dask

    with dask.config.set({f"{PRE_SPAWN_ENVIRON}.MALLOC_TRIM_THRESHOLD_": None}):
        return distributed.LocalCluster(
            n_workers=n_workers, threads_per_worker=1, processes=True, host="127.0.0.1",
            dashboard_address=None,  # and its other web pages on a free port, not 8787
            scheduler_kwargs={"dashboard_address": "127.0.0.1:0"})


def chunk_bounds(job: SweepJob, tasks: int, min_sets: int) -> list[tuple[int, int]]:
    """(start, stop) of about ``tasks`` slices of the job's sets, each of at least
    ``min_sets`` sets (one slice of every set when there are fewer)."""
    bounds = job.chunk_bounds(max(1, min(tasks, len(job.sets) // min_sets)))
    if len(bounds) > 1 and bounds[-1][1] - bounds[-1][0] < min_sets:
        bounds[-2:] = [(bounds[-2][0], bounds[-1][1])]  # a short tail joins its neighbour
    return bounds


@contextlib.contextmanager
def _client(distributed: ModuleType, address: str, timeout: float) -> Iterator[Any]:
    """A client connected to the scheduler at ``address``, or one clear error."""
    try:
        client = distributed.Client(address, timeout=timeout)
    except (OSError, TimeoutError):
        raise HunchbookError(
            f"cannot reach the Dask scheduler at {address} within {timeout:g} s: check that "
            f"`dask scheduler` runs there, the host and port (default 8786), and that no "
            "firewall stands between") from None
    except ValueError as exc:
        raise HunchbookError(f"not a Dask scheduler address: {address!r} ({exc}); give "
                             "tcp://HOST:PORT, or 'local' for a cluster on this machine"
                             ) from None
    with client:
        yield client


def _result(future: Any, client: Any) -> Chunk:
    """A finished task's chunk; a worker without Hunchbook is said in one line."""
    try:
        return future.result()
    except ImportError as exc:
        where = client.scheduler.address
        raise HunchbookError(
            f"a Dask worker of {where} cannot import {exc.name or 'hunchbook'}: install the "
            f"same hunchbook version with the cluster extra ({INSTALL_HINT}) on every "
            "machine") from None


# -- on the workers ---------------------------------------------------------------------------
#: The worker process's chunk worker and the key of the payload it was built from.
_CACHED: tuple[str, ChunkWorker] | None = None
_LOCK = threading.Lock()


def _run_chunk(key: str, payload: SweepPayload, sets: Sequence[Params], start: int) -> Chunk:
    """Run one chunk with this process's chunk worker for the payload under ``key`` (built
    at its first chunk, reused for the others)."""
    global _CACHED
    with _LOCK:
        if _CACHED is None or _CACHED[0] != key:
            _CACHED = (key, ChunkWorker(payload))
        worker = _CACHED[1]
    return worker.run(sets, start)


def _forget(key: str) -> None:
    """Drop the chunk worker of the payload under ``key`` (the sweep is over)."""
    global _CACHED
    with _LOCK:
        if _CACHED is not None and _CACHED[0] == key:
            _CACHED = None
