"""Sweeps: every set's figures equal a single run of that set (to 1e-9), whichever runner
carries them (in this process, forked or spawned workers, or one plugged in), and the runners
agree exactly with each other; the statistics computed chunk by chunk equal those of the whole
P&L matrix; progress and cancel behave."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from hunchbook.api import Study
from hunchbook.core import sweep_job
from hunchbook.core.runners import InProcess, LocalProcesses
from hunchbook.core.sweep import SweepCancelled, run_sweep
from hunchbook.core.sweep_job import ChunkWorker, SweepJob
from hunchbook.core.sweep_period import combine_parts
from tests.reference_impl import TWO_MARKET_LIBRARY, write_random_contracts

LIBRARY = TWO_MARKET_LIBRARY
RULES = """
name = "sweep check"
markets = ["M1", "M2"]
start = 2020-03-02
[parameters]
fast = [3, 5, 8]
slow = { start = 10, stop = 40, step = 10 }
constraint = "fast * 2 < slow"
[signal]
position = "clip((mean(close, fast) - mean(close, slow)) / std(close, slow), -1.5, 1.5)"
[roll]
days_before_expiry = 2
[sizing]
contracts = 1.3
"""


@pytest.fixture(autouse=True)
def small_chunks(monkeypatch):
    """Chunks of any size, so that these 10-set sweeps come in several chunks."""
    monkeypatch.setattr(sweep_job, "MIN_CHUNK_SETS", 1)


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    folder = tmp_path_factory.mktemp("sweep")
    (folder / "markets.toml").write_text(LIBRARY)
    for market, seed, holidays in (("M1", 11, 8), ("M2", 12, 15)):
        write_random_contracts(folder / f"{market}.csv", seed, "2019-06-03", 400,
                               holidays=holidays)
    return folder


def _study(folder, text):
    (folder / "rules.toml").write_text(text)
    return Study.from_file(folder / "rules.toml", folder)


@pytest.fixture(scope="module")
def study(folder):
    return _study(folder, RULES)


def _assert_same(figures, k, single):
    """Set k's figures equal those of a single run of the set (pandas-based summarise)."""
    ref = single.metrics["portfolio"]
    row = figures.row(k)
    for side in ("gross", "net"):
        for key in ("total", "sharpe"):
            assert row[f"{side}_{key}"] == pytest.approx(ref[side][key], rel=1e-9, abs=1e-9,
                                                         nan_ok=True), (side, key)
    assert row["net_max_drawdown"] == pytest.approx(ref["net"]["max_drawdown"], rel=1e-9,
                                                    abs=1e-9)
    for key in ("trades_per_year", "contracts_per_year", "cost_total", "break_even_cost"):
        assert row[key] == pytest.approx(ref[key], rel=1e-9, abs=1e-9, nan_ok=True), key
    assert figures.days[k] == ref["days"]
    assert figures.years[k] == pytest.approx(ref["years"], rel=1e-12)


RUNNERS = {
    "in process": InProcess(),
    "forked processes": LocalProcesses(workers=2, min_sets=2, start_method="fork"),
    "spawned processes": LocalProcesses(workers=2, min_sets=2, start_method="spawn"),
}


@pytest.mark.parametrize("runner", RUNNERS.values(), ids=RUNNERS.keys())
def test_sweep_equals_single_runs(study, runner):
    sets = study.parameter_sets()
    # constraint fast * 2 < slow removes (5, 10) and (8, 10): 3 x 4 - 2 = 10 sets
    assert len(sets) == 10
    seen = []
    outcome = run_sweep(study.backtest, sets, runner=runner,
                        progress=lambda done, total: seen.append((done, total)))
    assert seen[-1] == (10, 10) and all(t == 10 for _, t in seen)
    assert [d for d, _ in seen] == sorted(d for d, _ in seen)
    start, stop = outcome.common_period
    common = outcome.dates[start:stop]
    sharpes = np.concatenate([p.net_sharpes for p in outcome.parts])
    for k, params in enumerate(sets):
        single = study.run_set(params)
        _assert_same(outcome.figures, k, single)
        # the chunk's net Sharpe ratio on the common days: pandas on the single run's rows
        daily = single.output.portfolio()["net_pnl"].reindex(common)
        assert not daily.isna().any()
        assert sharpes[k] == pytest.approx(daily.mean() / daily.std() * 252 ** 0.5, rel=1e-9)


def _assert_identical(one, other):
    """Every figure of two sweep outcomes equal bit for bit."""
    assert one.sets == other.sets and one.markets == other.markets
    assert one.common_period == other.common_period == (one.plan.start, one.plan.stop)
    np.testing.assert_array_equal(one.dates, other.dates, strict=True)
    for field in dataclasses.fields(one.figures):
        np.testing.assert_array_equal(getattr(one.figures, field.name),
                                      getattr(other.figures, field.name), err_msg=field.name,
                                      strict=True)
    assert _parts(one) == _parts(other)


def _parts(outcome):
    """Every chunk's part of the statistics, joined, as comparable plain values."""
    totals = combine_parts(outcome.plan, outcome.parts)
    kept = np.hstack([p.kept for p in sorted(outcome.parts, key=lambda p: p.first)])
    return (totals.net_sharpes.tobytes(), totals.effective, totals.spa, kept.tobytes(),
            totals.walk_sums[0].tobytes(), totals.walk_sums[1].tobytes(),
            totals.overfitting)


@pytest.mark.parametrize("runner", list(RUNNERS.values())[1:], ids=list(RUNNERS)[1:])
def test_runners_give_identical_outcomes(study, runner):
    """The same sets run in this process and in worker processes give exactly the same
    numbers: each set is computed by the same code whichever runner carries it."""
    sets = study.parameter_sets()
    _assert_identical(run_sweep(study.backtest, sets, runner=InProcess()),
                      run_sweep(study.backtest, sets, runner=runner))


class ReversedRemoteChunks:
    """A runner of this test: chunks of two sets run last to first, each carrying its own
    daily rows back as a runner on other machines would."""

    def __init__(self) -> None:
        self.jobs = 0

    def run(self, job: SweepJob) -> None:
        self.jobs += 1
        worker = ChunkWorker(job.payload)
        for start, stop in reversed(job.chunk_bounds(len(job.sets) // 2)):
            job.add(worker.run(job.sets[start:stop], start))
            job.check_cancel()


def test_a_runner_plugged_in_is_used(study):
    """Any object with ``run(job)`` carries the sweep, through run_sweep and Study.sweep."""
    sets = study.parameter_sets()
    runner = ReversedRemoteChunks()
    seen = []
    outcome = run_sweep(study.backtest, sets, runner=runner, spa_reps=10,
                        progress=lambda done, total: seen.append(done))
    assert runner.jobs == 1 and seen == [2, 4, 6, 8, 10]
    _assert_identical(outcome, run_sweep(study.backtest, sets, runner=InProcess(), spa_reps=10))
    report = study.sweep(runner=runner, spa_reps=10)
    assert runner.jobs == 2
    _assert_identical(report.outcome, outcome)


def test_a_runner_that_loses_a_chunk_is_caught(study):
    """A runner that returns without every set gets one clear error, not a wrong result."""

    class LosesTheLastChunk:
        def run(self, job: SweepJob) -> None:
            worker = ChunkWorker(job.payload)
            for start, stop in job.chunk_bounds(5)[:-1]:
                job.add(worker.run(job.sets[start:stop], start))

    with pytest.raises(RuntimeError, match="returned 8 set results for 10 sets, 2 of them missing"):
        run_sweep(study.backtest, study.parameter_sets(), runner=LosesTheLastChunk())


@pytest.mark.parametrize("runner", RUNNERS.values(), ids=RUNNERS.keys())
def test_cancel_stops_the_sweep(study, runner):
    """A cancel asked for before the sweep ends stops it (asked at the first check, so that
    no runner can finish every chunk before it looks: the test does not race the machine)."""
    calls = []

    def cancel():
        calls.append(1)
        return True

    with pytest.raises(SweepCancelled):
        run_sweep(study.backtest, study.parameter_sets(), runner=runner, cancel=cancel)
    assert calls


def test_local_processes_settings_are_checked():
    with pytest.raises(ValueError, match="workers must be at least 1"):
        LocalProcesses(workers=0)
    with pytest.raises(ValueError, match="start_method must be one of"):
        LocalProcesses(start_method="teleport")


def test_one_calendar_takes_the_aligned_path(folder):
    # one market and no start date: every bar is a union day, so no gather is needed
    from hunchbook.core.sweep_job import _Aggregator

    single = _study(folder, RULES.replace('markets = ["M1", "M2"]', 'markets = ["M1"]')
                    .replace("start = 2020-03-02\n", ""))
    assert _Aggregator(single.backtest).aligned
    sets = single.parameter_sets()
    outcome = run_sweep(single.backtest, sets, runner=InProcess())
    for k, params in enumerate(sets):
        _assert_same(outcome.figures, k, single.run_set(params))
