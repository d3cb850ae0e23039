"""The warm pool of sweep workers: the same numbers as a sweep in this process, bit for bit
(the in-process sweep is checked against single runs in ``test_sweep.py``, and single runs
against the independent pandas implementation in ``tests/reference_impl.py``), job after job
over the same worker processes; cancel, a lost worker, closing, and a calling process that
runs other threads (as the window does)."""

from __future__ import annotations

import copy
import os
import signal
import threading

import numpy as np
import pytest

from hunchbook.core.engine import Backtest
from hunchbook.core.errors import HunchbookError
from hunchbook.core.runners import InProcess
from hunchbook.core.sweep import SweepCancelled, run_sweep
from hunchbook.core.warm_pool import WarmPool, WorkerLost
from tests.core.test_sweep import (  # noqa: F401 (small_chunks: chunks of any size here too)
    LIBRARY,
    RULES,
    _assert_identical,
    _assert_same,
    _study,
    small_chunks,
)
from tests.reference_impl import write_random_contracts

#: A second rule over the same parameters: another backtest, other numbers.
OTHER_RULES = (RULES.replace("-1.5, 1.5", "-1, 1").replace("contracts = 1.3", "contracts = 2"))


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    folder = tmp_path_factory.mktemp("warm")
    (folder / "markets.toml").write_text(LIBRARY)
    for market, seed, holidays in (("M1", 21, 8), ("M2", 22, 15)):
        write_random_contracts(folder / f"{market}.csv", seed, "2019-06-03", 400,
                               holidays=holidays)
    return folder


@pytest.fixture(scope="module")
def studies(folder):
    """Two studies over the same data and sets, with their in-process outcomes."""
    out = []
    for text in (RULES, OTHER_RULES):
        study = _study(folder, text)
        out.append((study, run_sweep(_study(folder, text).backtest, study.parameter_sets(),
                                     runner=InProcess())))
    return out


@pytest.fixture(scope="module")
def pool():
    with WarmPool(workers=2, min_sets=2, chunks_per_worker=2) as warm:
        warm.start()
        yield warm


def test_jobs_after_jobs_equal_in_process_over_the_same_workers(studies, pool):
    """Three sweeps of two different backtests (A, B, A): each equals its in-process sweep
    exactly, so every worker switched to the backtest of the job at hand; and all three ran
    on the same two worker processes (new processes per sweep would make at least three)."""
    (first, first_ref), (second, second_ref) = studies
    # the check can tell them apart
    assert not np.array_equal(first_ref.figures.net_total, second_ref.figures.net_total)
    pids = []
    for study, reference in ((first, first_ref), (second, second_ref), (first, first_ref)):
        seen = []
        outcome = run_sweep(study.backtest, study.parameter_sets(), runner=pool,
                            progress=lambda *report, seen=seen: seen.append(report))
        _assert_identical(outcome, reference)
        assert seen[-1] == (10, 10) and [d for d, _ in seen] == sorted(d for d, _ in seen)
        pids.append(pool.last_pids)
    assert os.getpid() not in set().union(*pids)
    assert 1 <= len(set().union(*pids)) <= 2


def test_each_set_equals_its_single_run(studies, pool):
    """The figures of every set of a pooled sweep equal a single run of that set (1e-9)."""
    study, _ = studies[1]
    sets = study.parameter_sets()
    outcome = run_sweep(study.backtest, sets, runner=pool)
    for k, params in enumerate(sets):
        _assert_same(outcome.figures, k, study.run_set(params))


def test_cancel_stops_the_sweep_and_the_next_one_is_whole(studies, pool):
    """A cancel asked for at the first check stops the sweep; the following sweep is exact
    (chunks of the cancelled one still queued do not leak into it)."""
    (study, reference), _ = studies
    calls = []

    def cancel():
        calls.append(1)
        return True

    with pytest.raises(SweepCancelled):
        run_sweep(study.backtest, study.parameter_sets(), runner=pool, cancel=cancel)
    assert calls
    _assert_identical(run_sweep(study.backtest, study.parameter_sets(), runner=pool), reference)


class DiesAtFastEight(Backtest):
    """A backtest whose worker process is killed when it runs a set with ``fast = 8`` (the
    calling process, which runs the sweep's pilot sets, is spared)."""

    caller = 0

    def run(self, params):
        if params["fast"] == 8 and os.getpid() != self.caller:
            os.kill(os.getpid(), signal.SIGKILL)
        return super().run(params)


def test_a_killed_worker_stops_the_run_clearly_and_the_next_run_works(studies, pool):
    """A worker killed in the middle of a sweep: that sweep raises WorkerLost (one line, a
    HunchbookError as the window shows them); the next sweep starts new workers and is exact."""
    (study, reference), _ = studies
    killer = copy.copy(study.backtest)
    killer.__class__ = DiesAtFastEight
    killer.caller = os.getpid()
    before = pool.last_pids
    with pytest.raises(WorkerLost, match="worker process ended during the run") as caught:
        run_sweep(killer, study.parameter_sets(), runner=pool)
    assert isinstance(caught.value, HunchbookError) and "\n" not in str(caught.value)
    _assert_identical(run_sweep(study.backtest, study.parameter_sets(), runner=pool), reference)
    assert pool.last_pids and not pool.last_pids & before  # new worker processes


def test_a_pool_broken_while_idle_starts_afresh(studies, pool):
    """A pool found broken when a sweep hands out its chunks (a worker lost between sweeps)
    is replaced and the sweep runs whole."""
    from concurrent.futures.process import BrokenProcessPool

    (study, reference), _ = studies

    class Broken:
        shut = False

        def submit(self, *args):
            raise BrokenProcessPool("a worker was lost")

        def shutdown(self, **kwargs):
            Broken.shut = True

    real, pool._executor = pool._executor, Broken()
    try:
        _assert_identical(run_sweep(study.backtest, study.parameter_sets(), runner=pool),
                          reference)
        assert Broken.shut
    finally:
        real.shutdown(wait=True)


def test_runs_while_other_threads_run(studies, pool):
    """The window's case: the sweep is started from a worker thread while the main thread
    (and another) live; workers come from the fork server, never from a fork of this
    multi-threaded process, and the result is exact."""
    (study, reference), _ = studies
    hold = threading.Event()
    bystander = threading.Thread(target=hold.wait)
    bystander.start()
    results, threads = [], []

    def sweep():
        threads.append(threading.active_count())
        results.append(run_sweep(study.backtest, study.parameter_sets(), runner=pool))

    try:
        runner = threading.Thread(target=sweep)
        runner.start()
        runner.join()
    finally:
        hold.set()
        bystander.join()
    assert threads[0] >= 3
    [outcome] = results
    _assert_identical(outcome, reference)
    assert os.getpid() not in pool.last_pids


def test_small_sweeps_run_in_process(studies):
    """Fewer sets than ``min_sets``: no worker is started, the sets run here."""
    (study, reference), _ = studies
    with WarmPool(workers=2, min_sets=11) as warm:
        _assert_identical(run_sweep(study.backtest, study.parameter_sets(), runner=warm),
                          reference)
        assert warm.last_pids == {os.getpid()}


def test_close_ends_the_workers_and_refuses_later_sweeps(studies):
    """Started in the background, used, closed: its worker processes are gone and a later
    sweep is refused with a clear error."""
    (study, reference), _ = studies
    warm = WarmPool(workers=2, min_sets=2)
    warm.start_in_background().join()
    _assert_identical(run_sweep(study.backtest, study.parameter_sets(), runner=warm), reference)
    pids = warm.last_pids
    warm.close()
    for pid in pids:
        with pytest.raises(ProcessLookupError):
            os.kill(pid, 0)
    with pytest.raises(RuntimeError, match="warm pool was closed"):
        run_sweep(study.backtest, study.parameter_sets(), runner=warm)


def test_settings_are_checked():
    with pytest.raises(ValueError, match="workers must be at least 1"):
        WarmPool(workers=0)
    with pytest.raises(ValueError, match="chunks_per_worker must be at least 1"):
        WarmPool(chunks_per_worker=0)
