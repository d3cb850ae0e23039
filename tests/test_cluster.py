"""Sweeps on a Dask cluster: a real local cluster of two worker processes gives exactly the
numbers of a sweep run in this process (each set is computed by the same code wherever it runs,
so the comparison is bit for bit), the payload travels once, tasks keep their minimum size, and
a scheduler that cannot be reached is one clear line."""

from __future__ import annotations

import json
import os
import socket
from types import SimpleNamespace

import distributed
import pytest

import hunchbook.cluster as cluster_module
from hunchbook.api import Study
from hunchbook.cluster import DaskRunner, chunk_bounds, local_cluster, require_dask
from hunchbook.core.errors import HunchbookError
from hunchbook.core.runners import InProcess
from hunchbook.core.sweep import SweepCancelled, run_sweep
from hunchbook.core.sweep_estimate import pilot_period
from hunchbook.core.sweep_job import SweepJob, SweepPayload
from hunchbook.core.sweep_period import period_plan
from tests.core.test_sweep import (  # noqa: F401 (small_chunks: chunks of any size here)
    RULES,
    _assert_identical,
    small_chunks,
)
from tests.reference_impl import TWO_MARKET_LIBRARY, write_random_contracts

#: Wider than the sweep tests' grid: 6 x 7 - 3 = 39 sets (fast * 2 < slow removes the three
#: sets with slow = 10 and fast 5, 6 or 8).
WIDE = RULES.replace("fast = [3, 5, 8]", "fast = [2, 3, 4, 5, 6, 8]").replace(
    "slow = { start = 10, stop = 40, step = 10 }", "slow = { start = 10, stop = 70, step = 10 }")


@pytest.fixture(scope="module")
def study(tmp_path_factory):
    folder = tmp_path_factory.mktemp("cluster")
    (folder / "markets.toml").write_text(TWO_MARKET_LIBRARY)
    for market, seed, holidays in (("M1", 21, 8), ("M2", 22, 15)):
        write_random_contracts(folder / f"{market}.csv", seed, "2019-06-03", 400,
                               holidays=holidays)
    (folder / "rules.toml").write_text(WIDE)
    return Study.from_file(folder / "rules.toml", folder)


@pytest.fixture(scope="module")
def address():
    """One cluster of two worker processes (one thread each, processes=True, no dashboard)
    shared by the module's tests."""
    with local_cluster(2) as cluster:
        yield cluster.scheduler_address


def test_local_workers_keep_the_c_library_memory_settings(address):
    """No MALLOC_TRIM_THRESHOLD_ in the local cluster's workers: setting it turns off glibc's
    dynamic mmap threshold, so every large array is mapped and faulted in afresh (glibc
    mallopt(3), M_TRIM_THRESHOLD and the dynamic mmap threshold) [memory]."""
    with distributed.Client(address) as client:
        seen = client.run(os.environ.get, "MALLOC_TRIM_THRESHOLD_")
    assert len(seen) == 2 and set(seen.values()) == {None}


def test_the_wide_grid(study):
    assert len(study.parameter_sets()) == 39


def test_cluster_sweep_equals_in_process_bit_for_bit(study, address):
    sets = study.parameter_sets()
    _assert_identical(run_sweep(study.backtest, sets, runner=InProcess()),
                      run_sweep(study.backtest, sets,
                                runner=DaskRunner(address, min_chunk_sets=4)))


def _record(study, runner):
    report = study.sweep(runner=runner, spa_reps=50)
    chosen = study.run_set(report.sets[report.chosen])
    record = report.summarise(chosen, currency=study.panel.currency, data_folder="d")
    return json.dumps(record.to_dict(), sort_keys=True)  # floats written exactly (repr)


def test_study_sweep_statistics_and_verdict_equal(study, address):
    """The run record (every set's figures, the statistics and the verdict) is the same."""
    local = _record(study, InProcess())
    assert '"verdict"' in local and '"statistics"' in local
    assert _record(study, DaskRunner(address, min_chunk_sets=5)) == local


class _Counted:
    """Client calls seen by a test (the runner builds its own client)."""

    def __init__(self, monkeypatch):
        self.scatters: list[tuple[object, dict]] = []
        self.submits: list[tuple] = []
        scatter, submit = distributed.Client.scatter, distributed.Client.submit

        def counted_scatter(client, data, **kwargs):
            self.scatters.append((data, kwargs))
            return scatter(client, data, **kwargs)

        def counted_submit(client, function, *args, **kwargs):
            self.submits.append(args)
            return submit(client, function, *args, **kwargs)

        monkeypatch.setattr(distributed.Client, "scatter", counted_scatter)
        monkeypatch.setattr(distributed.Client, "submit", counted_submit)


def _job(study, **kwargs):
    sets = study.parameter_sets()
    plan = period_plan(*pilot_period(study.backtest, sets), len(sets), spa_reps=20)
    job = SweepJob(study.backtest, sets, plan, **kwargs)
    sizes = []
    add = job.add
    job.add = lambda chunk: (sizes.append((chunk.start, len(chunk))), add(chunk))[1]
    return job, sizes


def test_payload_is_scattered_once_and_tasks_carry_only_its_future(study, address,
                                                                   monkeypatch):
    calls = _Counted(monkeypatch)
    job, sizes = _job(study)
    DaskRunner(address, min_chunk_sets=4).run(job)
    # 2 worker threads x 4 tasks each = 8 tasks of 39 sets: chunks of 5, the last of 4
    assert sorted(sizes) == [(s, 5) for s in range(0, 35, 5)] + [(35, 4)]
    assert len(calls.scatters) == 1
    data, kwargs = calls.scatters[0]
    assert isinstance(data, SweepPayload) and kwargs.get("broadcast") is True
    assert len(calls.submits) == 8
    for _key, payload, *_ in calls.submits:
        assert isinstance(payload, distributed.Future)  # a reference, never the payload
    job.outcome()  # every set arrived exactly once


@pytest.mark.parametrize(("min_sets", "expected"), [
    (10, [(0, 13), (13, 13), (26, 13)]),  # 39 // 10 = 3 tasks of 13
    (20, [(0, 39)]),  # 39 // 20 = 1 task
    (256, [(0, 39)]),  # fewer sets than the minimum: all in one task
])
def test_tasks_hold_at_least_min_chunk_sets(study, address, min_sets, expected):
    job, sizes = _job(study)
    DaskRunner(address, min_chunk_sets=min_sets).run(job)
    assert sorted(sizes) == expected


@pytest.mark.parametrize("n", [1, 2, 7, 39, 100, 257, 1000, 1023])
@pytest.mark.parametrize("tasks", [1, 3, 8, 64])
@pytest.mark.parametrize("min_sets", [1, 4, 256])
def test_chunk_bounds_cover_every_set_in_tasks_of_the_minimum(n, tasks, min_sets):
    job = SimpleNamespace(sets=list(range(n)), max_chunk_sets=10**9)
    job.chunk_bounds = lambda k: SweepJob.chunk_bounds(job, k)
    bounds = chunk_bounds(job, tasks, min_sets)
    assert bounds[0][0] == 0 and bounds[-1][1] == n
    assert all(a[1] == b[0] for a, b in zip(bounds, bounds[1:], strict=False))
    assert len(bounds) <= tasks
    if n < min_sets:
        assert bounds == [(0, n)]
    else:
        assert all(stop - start >= min_sets for start, stop in bounds)


def test_one_connection_for_several_sweeps(study, address):
    sets = study.parameter_sets()
    with DaskRunner(address, min_chunk_sets=8) as runner:
        one = run_sweep(study.backtest, sets, runner=runner)
        client = runner._client
        two = run_sweep(study.backtest, sets, runner=runner)
        assert runner._client is client
    assert runner._client is None
    _assert_identical(one, two)


def test_cancel_stops_the_cluster_sweep(study, address):
    with pytest.raises(SweepCancelled):
        run_sweep(study.backtest, study.parameter_sets(), cancel=lambda: True,
                  runner=DaskRunner(address, min_chunk_sets=4))


def _closed_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]  # nothing listens there once the socket is closed


def test_an_unreachable_scheduler_is_one_clear_line(study):
    address = f"tcp://127.0.0.1:{_closed_port()}"
    with pytest.raises(HunchbookError) as caught:
        run_sweep(study.backtest, study.parameter_sets(),
                  runner=DaskRunner(address, timeout=0.5))
    message = str(caught.value)
    assert "\n" not in message
    assert message.startswith(f"cannot reach the Dask scheduler at {address} within 0.5 s")
    assert "`dask scheduler`" in message


def test_a_bad_address_is_one_clear_line(study):
    with pytest.raises(HunchbookError, match="not a Dask scheduler address: 'nonsense'"):
        run_sweep(study.backtest, study.parameter_sets(), runner=DaskRunner("nonsense"))
    with pytest.raises(HunchbookError, match="address is empty"):
        DaskRunner("  ")


def test_a_scheduler_without_workers_says_so(study):
    with local_cluster(0) as empty:
        address = empty.scheduler_address
        with pytest.raises(HunchbookError, match=f"scheduler at {address} has no workers"):
            run_sweep(study.backtest, study.parameter_sets(),
                      runner=DaskRunner(address, timeout=0.5))


def test_settings_are_checked():
    for name in ("min_chunk_sets", "chunks_per_worker", "n_workers"):
        with pytest.raises(ValueError, match=f"{name} must be at least 1"):
            DaskRunner(**{name: 0})


def test_a_worker_process_builds_one_chunk_worker_per_payload(study, monkeypatch):
    """The task function run here: the chunk worker is built at a payload's first chunk,
    reused for the next, and replaced for another payload (and dropped when it ends)."""
    built = []

    class CountedWorker(cluster_module.ChunkWorker):
        def __init__(self, payload):
            built.append(payload)
            super().__init__(payload)

    monkeypatch.setattr(cluster_module, "ChunkWorker", CountedWorker)
    monkeypatch.setattr(cluster_module, "_CACHED", None)
    job, _ = _job(study)
    payload, sets = job.payload, job.sets
    first = cluster_module._run_chunk("a", payload, sets[:3], 0)
    second = cluster_module._run_chunk("a", payload, sets[3:6], 3)
    assert len(built) == 1 and (first.start, second.start) == (0, 3)
    cluster_module._run_chunk("b", payload, sets[:3], 0)
    assert len(built) == 2
    cluster_module._forget("a")  # not the one held: kept
    assert cluster_module._CACHED is not None
    cluster_module._forget("b")
    assert cluster_module._CACHED is None


def test_a_worker_without_hunchbook_is_said_in_one_line():
    def missing():
        raise ModuleNotFoundError("No module named 'hunchbook'", name="hunchbook")

    future = SimpleNamespace(result=missing)
    client = SimpleNamespace(scheduler=SimpleNamespace(address="tcp://127.0.0.1:8786"))
    with pytest.raises(HunchbookError, match="worker of tcp://127.0.0.1:8786 cannot import "
                                             "hunchbook: install the same hunchbook version"):
        cluster_module._result(future, client)


def test_without_dask_the_message_says_what_to_install(monkeypatch):
    monkeypatch.setattr(cluster_module.importlib.util, "find_spec", lambda name: None)
    with pytest.raises(HunchbookError, match=r"pip install 'hunchbook\[cluster\]'"):
        require_dask()
