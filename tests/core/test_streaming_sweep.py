"""The streaming sweep: statistics computed chunk by chunk equal those of the whole P&L matrix,
whatever the chunking; a wrong guess of the common period is put right; the window-function
cache keeps within its budget; a sweep is estimated, confirmed or refused before it starts.

The whole-matrix path (:func:`first_pass_statistics` on every set's daily rows) is the one the
statistics' own tests check against outside sources (arch, statsmodels, published tables); here
the chunked path must reproduce it to 1e-12 relative.
"""

from __future__ import annotations

import math
import pickle

import numpy as np
import pandas as pd
import pytest

from hunchbook.api import EarlierTrials, Study
from hunchbook.core import sweep as sweep_module
from hunchbook.core import sweep_job
from hunchbook.core.expr.cache import WindowCache
from hunchbook.core.runners import InProcess, LocalProcesses
from hunchbook.core.stats import first_pass_statistics, selection_tests
from hunchbook.core.sweep import run_sweep
from hunchbook.core.sweep_estimate import estimate_sweep, pilot_sets
from hunchbook.core.sweep_job import SweepCancelled, SweepRefused, daily_rows
from tests.reference_impl import TWO_MARKET_LIBRARY, write_random_contracts

RULES = """
name = "streaming check"
markets = ["M1", "M2"]
[parameters]
fast = [3, 5, 8, 13]
slow = [20, 30, 45, 60, 90]
[signal]
position = "clip((mean(close, fast) - mean(close, slow)) / std(close, slow), -1.5, 1.5)"
[sizing]
contracts = 2
"""


@pytest.fixture(scope="module")
def study(tmp_path_factory):
    folder = tmp_path_factory.mktemp("streaming")
    (folder / "markets.toml").write_text(TWO_MARKET_LIBRARY)
    write_random_contracts(folder / "M1.csv", 21, "2015-01-05", 1400, holidays=10)
    write_random_contracts(folder / "M2.csv", 22, "2015-03-02", 1300, holidays=14)
    return Study.from_text(RULES, folder)


def _close(got, want, path=""):
    """Every number of two nested records equal to 1e-12 relative (1e-12 absolute near 0)."""
    if isinstance(want, dict):
        assert set(got) == set(want), path
        for key in want:
            _close(got[key], want[key], f"{path}.{key}")
    elif isinstance(want, list | tuple):
        assert len(got) == len(want), path
        for i, (g, w) in enumerate(zip(got, want, strict=True)):
            _close(g, w, f"{path}[{i}]")
    elif isinstance(want, float) and not isinstance(want, bool):
        assert math.isclose(got, want, rel_tol=1e-12, abs_tol=1e-12) or (
            math.isnan(got) and math.isnan(want)), f"{path}: {got} != {want}"
    else:
        assert got == want, path


def _matrix_statistics(study, report, *, earlier=None, spa_reps=60):
    """The statistics of the whole P&L matrix: every set's daily rows, cut to the common days."""
    sets = study.parameter_sets()
    rows = daily_rows(study.backtest, sets)
    start, stop = report.outcome.common_period
    gross, cost = rows.gross[:, start:stop].T, rows.cost[:, start:stop].T
    walk, overfit = selection_tests(gross - cost)
    shape, cells = study._grid_cells(sets)
    other = (None if earlier is None
             else earlier.on_dates(report.outcome.dates[start:stop]))
    return first_pass_statistics(
        gross, cost, grid_shape=shape, cell_index=cells, chosen=report.chosen, other_net=other,
        n_trials=None if earlier is None else earlier.n_trials(len(sets)),
        other_trial_sharpes=() if earlier is None else earlier.sharpes,
        walk_forward=walk, overfitting=overfit, contracts_traded=rows.contracts,
        spa_reps=spa_reps, seed=0)


@pytest.mark.parametrize("chunk_bytes", [sweep_job.CHUNK_BYTES, 1], ids=["default", "tiny"])
def test_chunked_statistics_equal_the_whole_matrix(study, monkeypatch, chunk_bytes):
    # default: chunks of at least 16 sets (16 + 4); tiny: at most 8 sets each (8 + 8 + 4)
    monkeypatch.setattr(sweep_job, "CHUNK_BYTES", chunk_bytes)
    report = study.sweep(runner=InProcess(), spa_reps=60)
    assert [len(p) for p in report.outcome.parts] == ([16, 4] if chunk_bytes > 1 else [8, 8, 4])
    _close(report.statistics.to_dict(), _matrix_statistics(study, report).to_dict())
    assert report.statistics.walk_forward is not None
    assert report.statistics.overfitting is not None and report.statistics.spa is not None


def test_earlier_trials_join_the_chunked_tests(study):
    rng = np.random.default_rng(5)
    dates = pd.DatetimeIndex(study.panel.union_dates)
    net = pd.DataFrame(rng.normal(0, 900, (len(dates), 3)), index=dates)
    earlier = EarlierTrials(net=net, sharpes=(0.4,), total=30)
    report = study.sweep(runner=InProcess(), spa_reps=60, earlier=earlier)
    assert report.statistics.spa_sets == 23 and report.statistics.n_trials == 30
    _close(report.statistics.to_dict(),
           _matrix_statistics(study, report, earlier=earlier).to_dict())


def test_forked_workers_give_the_same_statistics(study):
    one = study.sweep(runner=InProcess(), spa_reps=60)
    two = study.sweep(runner=LocalProcesses(workers=2, min_sets=2), spa_reps=60)
    assert one.statistics == two.statistics and one.verdict == two.verdict


def test_a_wrong_guess_of_the_common_period_is_run_again(study, monkeypatch):
    sets = study.parameter_sets()
    right = run_sweep(study.backtest, sets, runner=InProcess(), spa_reps=20)
    days = len(study.panel.union_dates)  # a guess that every set starts on the first day
    monkeypatch.setattr(sweep_module, "pilot_period", lambda backtest, sets: (0, days))
    runs = []

    class Counting(InProcess):
        def run(self, job):
            runs.append((job.plan.start, job.plan.stop))
            super().run(job)

    again = run_sweep(study.backtest, sets, runner=Counting(), spa_reps=20)
    assert runs == [(0, days), right.common_period]
    assert again.common_period == right.common_period
    np.testing.assert_array_equal(np.concatenate([p.net_sharpes for p in again.parts]),
                                  np.concatenate([p.net_sharpes for p in right.parts]))


def test_the_pilot_sets_include_every_parameters_extremes(study):
    sets = study.parameter_sets()
    picked = pilot_sets(sets)
    for name in ("fast", "slow"):
        values = [sets[k][name] for k in picked]
        assert min(values) == min(s[name] for s in sets)
        assert max(values) == max(s[name] for s in sets)
    assert len(picked) <= 12 and picked == sorted(set(picked))


def test_the_window_cache_keeps_within_its_budget():
    cache = WindowCache(max_bytes=3 * 80)
    for key in "abcd":
        cache[key] = np.zeros(10)  # 80 bytes each
    assert list(cache) == ["b", "c", "d"] and cache.bytes == 240
    cache["b"]  # used: now the newest
    cache["e"] = np.zeros(10)
    assert list(cache) == ["d", "b", "e"]
    assert len(pickle.loads(pickle.dumps(cache))) == 0  # never shipped to workers


def test_a_small_cache_gives_the_same_sweep(study):
    sets = study.parameter_sets()
    want = run_sweep(study.backtest, sets, runner=InProcess(), spa_reps=0)
    study.backtest.cache = WindowCache(max_bytes=1)  # keeps only the newest array
    try:
        got = run_sweep(study.backtest, sets, runner=InProcess(), spa_reps=0)
    finally:
        study.backtest.cache = WindowCache()
    np.testing.assert_array_equal(got.figures.net_sharpe, want.figures.net_sharpe)


def test_a_sweep_that_cannot_fit_is_refused_before_it_starts(study, monkeypatch):
    monkeypatch.setattr("hunchbook.core.sweep_estimate.available_memory", lambda: 2**20)
    started = []
    monkeypatch.setattr(sweep_module, "SweepJob", lambda *a, **k: started.append(1))
    with pytest.raises(SweepRefused, match=r"would need about .* of memory but 1 MB is free"):
        study.sweep(runner=InProcess(), spa_reps=0)
    assert not started


def test_a_long_sweep_asks_first(study, monkeypatch):
    monkeypatch.setattr("hunchbook.core.sweep_estimate.CONFIRM_SECONDS", 0.0)
    asked = []

    def no(estimate):
        asked.append(estimate)
        return False

    with pytest.raises(SweepCancelled, match="sweep not started: 20 parameter sets"):
        study.sweep(runner=InProcess(), spa_reps=0, confirm=no)
    assert len(asked) == 1 and asked[0].sets == 20 and asked[0].needs_confirmation
    report = study.sweep(runner=InProcess(), spa_reps=0, confirm=lambda e: True)
    assert len(report.sets) == 20


def test_the_estimate_grows_with_sets_and_workers(study):
    sets = study.parameter_sets()
    one = estimate_sweep(study.backtest, sets, workers=1, available_bytes=2**40)
    two = estimate_sweep(study.backtest, sets, workers=2, available_bytes=2**40)
    far = estimate_sweep(study.backtest, sets, workers=2, local_workers=0,
                         available_bytes=2**40)
    assert one.fits and not one.needs_confirmation
    assert two.peak_bytes > one.peak_bytes >= far.peak_bytes
    assert one.period == run_sweep(study.backtest, sets, runner=InProcess(),
                                   spa_reps=0).common_period


def test_a_block_of_markets_runs_as_those_markets_of_the_whole(study):
    """Each market's results are its own: markets 1.. of a backtest, run apart, equal those
    columns of the whole run exactly (the same code on the same numbers)."""
    params = study.parameter_sets()[7]
    whole = study.backtest.run(params)
    part = study.backtest.columns(1, 2).run(params)
    for name in ("position", "gross", "traded"):
        np.testing.assert_array_equal(getattr(part, name), getattr(whole, name)[:, 1:2])
    np.testing.assert_array_equal(part.first, whole.first[1:2])


def test_blocks_of_markets_give_the_same_sweep(study, monkeypatch):
    """A sweep run one market at a time equals the sweep of both together (to 1e-12: the
    markets' P&L is summed in another order), and a rule comparing markets is never cut."""
    want = study.sweep(runner=InProcess(), spa_reps=60)
    monkeypatch.setattr(sweep_job, "BLOCK_CELLS", 1)  # one market per block
    assert len(sweep_job.market_blocks(study.backtest)) == 2
    got = study.sweep(runner=InProcess(), spa_reps=60)
    _close(got.statistics.to_dict(), want.statistics.to_dict())
    np.testing.assert_allclose(got.outcome.figures.net_sharpe, want.outcome.figures.net_sharpe,
                               rtol=1e-12)
    ranked = Study.from_text(RULES.replace("clip(", "cs_rank(close) + clip("),
                             study.data.folder)
    assert len(sweep_job.market_blocks(ranked.backtest)) == 1
