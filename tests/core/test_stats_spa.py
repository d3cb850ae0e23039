"""SPA test against the arch package (same bootstrap indices) and on planted/noise sweeps."""

from __future__ import annotations

import numpy as np
import pytest

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats import spa_test, stationary_bootstrap_indices

arch_bootstrap = pytest.importorskip("arch.bootstrap")


def _sweep(seed: int, days: int = 300, sets: int = 5) -> np.ndarray:
    rng = np.random.default_rng(seed)
    x = rng.normal(0.0, 1.0, (days, sets))
    x[:, 1] += 0.08  # a modest edge so the p-values fall inside (0, 1)
    x[:, 3] -= 0.15  # a clearly bad set, which the recentring treats differently
    return x


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_unstudentized_pvalues_equal_arch_spa_exactly(seed):
    # arch 8.0 SPA(benchmark=zeros, models=-pnl) is the reference (shared reference s.4: inputs
    # are losses). Same seed and block length -> identical p-values (arch 8.0 does not divide by
    # the standard errors, whatever its studentize flag says).
    x = _sweep(seed)
    ref = arch_bootstrap.SPA(np.zeros(x.shape[0]), -x, block_size=10, reps=400, seed=seed + 100)
    ref.compute()
    ours = spa_test(x, reps=400, block_size=10, seed=seed + 100, studentize="none")
    assert (ours.lower, ours.consistent, ours.upper) == tuple(ref.pvalues[["lower", "consistent",
                                                                           "upper"]])
    assert 0.0 < ours.upper < 1.0


def test_explicit_indices_from_arch_give_arch_pvalues():
    # indices taken from arch's own StationaryBootstrap (s.4), passed in explicitly
    x = _sweep(5)
    bs = arch_bootstrap.StationaryBootstrap(12, x, seed=42)
    idx = np.array([bs.index.copy() for _ in bs.bootstrap(300)])
    ref = arch_bootstrap.SPA(np.zeros(x.shape[0]), -x, block_size=12, reps=300, seed=42)
    ref.compute()
    ours = spa_test(x, block_size=12, studentize="none", indices=idx)
    assert ours.reps == 300
    assert ours.consistent == ref.pvalues["consistent"]
    assert ours.lower == ref.pvalues["lower"] and ours.upper == ref.pvalues["upper"]


def test_our_indices_are_arch_stationary_bootstrap_indices():
    # arch.bootstrap.StationaryBootstrap(block, data, seed=s) as the reference sampler
    x = np.zeros((250, 1))
    bs = arch_bootstrap.StationaryBootstrap(9, x, seed=3)
    ref = np.array([bs.index.copy() for _ in bs.bootstrap(50)])
    assert np.array_equal(stationary_bootstrap_indices(250, 50, 9, seed=3), ref)


def test_index_generator_distribution():
    # Politis & Romano (1994): blocks have geometric length with mean block_size; every day is
    # equally likely to be drawn. Compared with arch's sampler on another seed, distributionally.
    days, reps, block = 400, 400, 8
    ours = stationary_bootstrap_indices(days, reps, block, seed=1)
    bs = arch_bootstrap.StationaryBootstrap(block, np.zeros((days, 1)), seed=99)
    ref = np.array([bs.index.copy() for _ in bs.bootstrap(reps)])

    def mean_block(idx):
        breaks = np.diff(idx, axis=1) != 1
        wraps = (idx[:, :-1] == days - 1) & (idx[:, 1:] == 0)
        return idx.size / (1 + (breaks & ~wraps).sum(axis=1)).sum()

    assert mean_block(ours) == pytest.approx(block, rel=0.05)
    assert mean_block(ours) == pytest.approx(mean_block(ref), rel=0.05)
    counts = np.bincount(ours.ravel(), minlength=days) / reps
    assert counts.mean() == pytest.approx(1.0)
    assert counts.min() > 0.75 and counts.max() < 1.25


def test_long_run_studentized_pvalues_match_arch_internals():
    # Hansen (2005) studentized SPA built from arch's own bootstrap means (_simulated_vals) and
    # arch's Politis-Romano variances (_loss_diff_var): t = mean / sqrt(var / T).
    x = _sweep(1)
    days = x.shape[0]
    ref = arch_bootstrap.SPA(np.zeros(days), -x, block_size=10, reps=400, seed=101)
    ref.compute()
    se = np.sqrt(ref._loss_diff_var / days)
    statistic = (x.mean(axis=0) / se).max()
    expected = [((ref._simulated_vals[:, :, j] / se[:, None]).max(axis=0) > statistic).mean()
                for j in range(3)]
    ours = spa_test(x, reps=400, block_size=10, seed=101, studentize="long_run")
    assert [ours.lower, ours.consistent, ours.upper] == pytest.approx(expected, abs=1e-12)
    assert ours.statistic == pytest.approx(statistic, rel=1e-10)
    assert ours.best_set == 1


def test_sample_studentized_pvalues_by_direct_bootstrap():
    # reference written out here with arch's own resampled data: for each arch replication,
    # t*_k = (mean of resampled column k - mean_k) / (sd_k / sqrt(T)), upper p = share with
    # max t* >= max t (Hansen 2005 with the sample standard deviation as the scale)
    x = _sweep(3)
    days = x.shape[0]
    se = x.std(axis=0) / np.sqrt(days)
    statistic = (x.mean(axis=0) / se).max()
    bs = arch_bootstrap.StationaryBootstrap(10, x, seed=21)
    maxima = [((data[0][0].mean(axis=0) - x.mean(axis=0)) / se).max()
              for data in bs.bootstrap(300)]
    expected = float(np.mean(np.array(maxima) >= statistic))
    assert spa_test(x, reps=300, block_size=10, seed=21).upper == pytest.approx(expected,
                                                                                abs=1e-12)


def test_pvalue_order_lower_consistent_upper():
    # Hansen (2005): lower <= consistent <= upper by construction of the recentring
    for seed in range(5):
        r = spa_test(_sweep(seed), reps=200, seed=seed)
        assert r.lower <= r.consistent <= r.upper


def test_noise_only_sweeps_rarely_reject():
    # shared reference s.4 property check: pure noise gives p > 0.05 in most seeds (nominal 5 %
    # rejections; at most 4 of 20 allowed -- binomial(20, 0.05) tail P(>= 5) = 0.3 %)
    rejections = sum(
        spa_test(np.random.default_rng(s).normal(0.0, 1.0, (500, 20)), reps=300,
                 seed=s).consistent <= 0.05
        for s in range(20))
    assert rejections <= 4


def test_planted_strong_edge_is_found():
    # shared reference s.4 property check: a planted strong winner among noise gives a small p
    rng = np.random.default_rng(7)
    x = rng.normal(0.0, 1.0, (1000, 30))
    x[:, 17] += 0.15  # daily SR 0.15 = annual 2.4 over four years
    r = spa_test(x, reps=500, seed=7)
    assert r.consistent < 0.05
    assert r.best_set == 17


def test_single_set_and_flat_sets_do_not_crash():
    # a single set is still a bootstrap test of its mean against zero (common practice);
    # all-zero P&L never beats doing nothing: every bootstrap maximum ties the observed 0, and a
    # tie counts against the strategy (P(T* >= T), Hansen 2005): p-value 1
    r = spa_test(np.random.default_rng(0).normal(0.3, 1.0, 400), reps=200, seed=0)
    assert r.consistent < 0.05
    flat = spa_test(np.zeros((100, 3)), reps=100, seed=0)
    assert (flat.lower, flat.consistent, flat.upper) == (1.0, 1.0, 1.0)
    assert flat.statistic == 0.0


def test_default_block_size_is_square_root_of_days():
    # arch 8.0 default block length int(sqrt(T)) (shared reference s.4)
    assert spa_test(np.random.default_rng(1).normal(size=(500, 2)), reps=10).block_size == 22


def test_bad_inputs_raise_clear_errors():
    with pytest.raises(HunchbookError, match="at least 3 days"):
        spa_test(np.zeros((2, 4)))
    with pytest.raises(HunchbookError, match="block"):
        spa_test(np.zeros((50, 2)), block_size=0.5)
    with pytest.raises(HunchbookError, match="bootstrap indices"):
        spa_test(np.zeros((50, 2)), indices=np.zeros((10, 49), dtype=int))
    with pytest.raises(HunchbookError, match="0..49"):
        spa_test(np.zeros((50, 2)), indices=np.full((10, 50), 50))
    with pytest.raises(HunchbookError, match="NaN"):
        spa_test(np.full((50, 2), np.nan))
    with pytest.raises(HunchbookError, match="studentize"):
        spa_test(np.zeros((50, 2)), studentize="yes")


def test_chunked_bootstrap_matches_arch_too(monkeypatch):
    # processing replications and variance columns in small chunks must not change the result:
    # still equal to arch 8.0 SPA (s.4) with the same seed
    from hunchbook.core.stats import spa as spa_module

    monkeypatch.setattr(spa_module, "CHUNK_BYTES", 8 * 300 * 7)
    x = _sweep(2)
    ref = arch_bootstrap.SPA(np.zeros(x.shape[0]), -x, block_size=10, reps=100, seed=9)
    ref.compute()
    ours = spa_test(x, reps=100, block_size=10, seed=9, studentize="none")
    assert ours.consistent == ref.pvalues["consistent"] and ours.upper == ref.pvalues["upper"]
