"""The SPA test split over chunks of sets (plan, partials, combine) and the O(T) long-run variance.

References: the dense count-weight implementation written out in ``tests/core/spa_dense.py``
(Hansen 2005, JBES 23(4); Politis & Romano 1994, JASA 89(428)); arch 8.0
``arch.bootstrap.SPA`` / ``StationaryBootstrap`` (shared reference s.4); the prefix-sum worked
example of shared reference s.15.
"""

from __future__ import annotations

import dataclasses
import math
import pickle

import numpy as np
import pytest

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats import spa as spa_module
from hunchbook.core.stats.long_run import long_run_variance
from hunchbook.core.stats.spa import (
    SpaPlan,
    spa_combine,
    spa_partial,
    spa_plan,
    spa_test,
    stationary_bootstrap_indices,
)
from tests.core.spa_dense import dense_spa, fft_long_run_variance

arch_bootstrap = pytest.importorskip("arch.bootstrap")

KINDS = ("sample", "long_run", "none")


def _sweep(seed: int, days: int = 400, sets: int = 12) -> np.ndarray:
    rng = np.random.default_rng(seed)
    x = rng.normal(0.0, 1.0, (days, sets)) + 0.3 * rng.normal(0.0, 1.0, (days, 1))
    x[:, 1] += 0.1  # an edge: the best set, with p-values inside (0, 1)
    x[:, 2] -= 0.2  # a clearly bad set, recentred differently by lower / consistent / upper
    x[:, 3] = 0.5 * x[:, 3] + 0.5 * np.roll(x[:, 3], 1)  # autocorrelated
    return x


def _chunked(plan: SpaPlan, x: np.ndarray, bounds: list[int], studentize: str, order_seed: int):
    edges = [0, *bounds, x.shape[1]]
    parts = [spa_partial(plan, x[:, a:b], first_column=a, studentize=studentize)
             for a, b in zip(edges, edges[1:], strict=False)]
    np.random.default_rng(order_seed).shuffle(parts)
    return spa_combine(plan, parts)


@pytest.mark.parametrize("studentize", KINDS)
@pytest.mark.parametrize("seed", [0, 1, 2])
def test_chunks_in_any_order_give_the_one_chunk_result_and_the_dense_one(studentize, seed):
    # three uneven chunks (one of a single set), combined in shuffled order, against one chunk,
    # against spa_test, and against the dense count-weight reference (tests/core/spa_dense.py,
    # Hansen 2005 / Politis & Romano 1994) on the same seed
    x = _sweep(seed)
    plan = spa_plan(x.shape[0], reps=300, block_size=9, seed=seed + 40)
    whole = spa_combine(plan, [spa_partial(plan, x, studentize=studentize)])
    assert _chunked(plan, x, [1, 6], studentize, seed) == whole
    assert _chunked(plan, x, [5, 6], studentize, seed + 1) == whole
    assert spa_test(x, reps=300, block_size=9, seed=seed + 40, studentize=studentize) == whole
    ref = dense_spa(x, 300, 9.0, seed + 40, studentize)
    got = dataclasses.asdict(whole)
    assert {k: got[k] for k in ("lower", "consistent", "upper", "best_set")} == {
        k: ref[k] for k in ("lower", "consistent", "upper", "best_set")}
    if studentize == "long_run":  # the scale is the long-run variance: FFT against recursion
        assert whole.statistic == pytest.approx(ref["statistic"], rel=1e-12)
    else:
        assert whole.statistic == ref["statistic"]
    assert 0.0 < whole.lower <= whole.consistent <= whole.upper < 1.0


def test_one_set_per_chunk_and_tiny_pieces_change_nothing(monkeypatch):
    # tiles of one set and pieces of one replication: same result as the default sizes
    x = _sweep(3, days=250, sets=5)
    plan = spa_plan(250, reps=120, seed=5)
    expected = spa_combine(plan, [spa_partial(plan, x)])
    single = [spa_partial(plan, x[:, [k]], first_column=k) for k in range(5)]
    assert spa_combine(plan, single[::-1]) == expected
    monkeypatch.setattr(spa_module, "TILE_BYTES", 1)
    monkeypatch.setattr(spa_module, "CHUNK_BYTES", 1)
    assert spa_combine(plan, [spa_partial(plan, x)]) == expected
    assert spa_combine(plan, [spa_partial(plan, np.asfortranarray(x))]) == expected


@pytest.mark.parametrize("seed", [0, 1])
def test_chunked_unstudentized_pvalues_equal_arch_spa(seed):
    # arch 8.0 SPA(benchmark=zeros, models=-pnl) (shared reference s.4), same seed and block
    x = _sweep(seed + 10, days=300, sets=7)
    ref = arch_bootstrap.SPA(np.zeros(300), -x, block_size=10, reps=400, seed=seed)
    ref.compute()
    plan = spa_plan(300, reps=400, block_size=10, seed=seed)
    ours = _chunked(plan, x, [2, 3], "none", seed)
    assert (ours.lower, ours.consistent, ours.upper) == tuple(
        ref.pvalues[["lower", "consistent", "upper"]])


def test_plan_blocks_are_arch_resamples():
    # the plan's blocks, laid end to end with wrap-round, are arch 8.0
    # StationaryBootstrap(block, data, seed=s) indices (shared reference s.4, s.15)
    plan = spa_plan(250, reps=60, block_size=9, seed=3)
    bs = arch_bootstrap.StationaryBootstrap(9, np.zeros((250, 1)), seed=3)
    ref = np.array([bs.index.copy() for _ in bs.bootstrap(60)])
    for r in range(60):
        blocks = slice(plan.offsets[r], plan.offsets[r + 1])
        days = np.concatenate([(s + np.arange(n)) % 250 for s, n in
                               zip(plan.starts[blocks], plan.lengths[blocks], strict=True)])
        assert np.array_equal(days, ref[r])
    assert np.array_equal(stationary_bootstrap_indices(250, 60, 9, seed=3), ref)
    assert np.all(np.add.reduceat(plan.lengths, plan.offsets[:-1]) == 250)
    # Politis & Romano (1994), shared reference s.15: E[blocks] = 1 + (n - 1) / block
    assert plan.offsets[-1] / 60 == pytest.approx(1 + 249 / 9, rel=0.05)


def test_plan_is_compact_and_survives_pickling():
    # what a worker receives: 8 bytes a block, about T / block + 1 blocks a replication
    # (Politis & Romano 1994, shared reference s.15), and the same test after a round trip
    plan = spa_plan(2_000, reps=500, seed=1)
    payload = pickle.dumps(plan)
    assert len(payload) < 8 * 500 * (2_000 / 44 + 1) * 1.2 + 8 * 501 + 2_000
    copy = pickle.loads(payload)
    x = np.random.default_rng(2).normal(0.02, 1.0, (2_000, 3))
    assert spa_combine(copy, [spa_partial(copy, x)]) == spa_combine(plan, [spa_partial(plan, x)])


def test_prefix_sums_over_blocks_worked_example():
    # shared reference s.15 [recomputed]: x = [1, -2, 3, 4, -1]; blocks (3, 3) and (3, 2) take
    # days 3, 4, 0, 3, 4 -> 4 - 1 + 1 + 4 - 1 = 7, bootstrap mean 1.4 against the mean 1.0;
    # blocks (3, 3), (1, 2) take every day once: mean 1.0. Unscaled upper statistic d* - d.
    x = np.array([1.0, -2.0, 3.0, 4.0, -1.0])
    plan = SpaPlan(n_obs=5, reps=2, block_size=2.0, starts=np.array([3, 3, 3, 1]),
                   lengths=np.array([3, 2, 3, 2]), offsets=np.array([0, 2, 4]))
    part = spa_partial(plan, x, studentize="none")
    assert part.maxima[2] == pytest.approx([0.4, 0.0], abs=1e-15)
    assert part.statistic == 1.0 and part.best_set == 0


def test_best_set_is_named_in_the_whole_sweep():
    x = _sweep(4)
    plan = spa_plan(400, reps=50, seed=0)
    part = spa_partial(plan, x[:, 1:6], first_column=1)
    assert part.best_set == 1 and part.n_sets == 5 and part.maxima.shape == (3, 50)


def test_explicit_indices_give_the_plan_result():
    # resampled days given as an array (as arch's) are cut into blocks: same p-values as the
    # plan they came from
    x = _sweep(5)
    idx = stationary_bootstrap_indices(400, 200, 12, seed=8)
    assert spa_test(x, block_size=12, indices=idx) == spa_test(x, reps=200, block_size=12,
                                                                 seed=8)


def test_combine_refuses_what_does_not_fit():
    x = _sweep(6, days=100, sets=4)
    plan = spa_plan(100, reps=20, seed=0)
    part = spa_partial(plan, x[:, :2])
    with pytest.raises(HunchbookError, match="no chunk"):
        spa_combine(plan, [])
    with pytest.raises(HunchbookError, match="column 1 is in two chunks"):
        spa_combine(plan, [part, spa_partial(plan, x[:, 1:], first_column=1)])
    with pytest.raises(HunchbookError, match="scaled differently"):
        spa_combine(plan, [part, spa_partial(plan, x[:, 2:], first_column=2, studentize="none")])
    with pytest.raises(HunchbookError, match="does not fit the plan"):
        spa_combine(spa_plan(100, reps=30, seed=0), [part])
    with pytest.raises(HunchbookError, match="plan is for 100 days, got 99"):
        spa_partial(plan, x[:99])
    with pytest.raises(HunchbookError, match="at least 3 days"):
        spa_plan(2)
    with pytest.raises(HunchbookError, match="block size"):
        spa_plan(100, block_size=0)


@pytest.mark.parametrize(("days", "block"), [(300, 10.0), (1_000, 1.0), (997, 1.5), (2_000, 44.0),
                                             (5_000, 700.0), (500, 5_000.0)])
def test_long_run_variance_equals_the_fft_formula(days, block):
    # Politis & Romano (1994) kernel variance written out with scipy.fft (tests/core/spa_dense):
    # the O(T) recursion agrees to 1e-12 relative on random data
    rng = np.random.default_rng(days)
    x = rng.normal(0.0, 1.0, (days, 6)) + rng.normal(0.0, 0.5, (days, 1))
    x[:, 2] = 0.7 * x[:, 2] + 0.7 * np.roll(x[:, 2], 1)
    e = x - x.mean(axis=0)
    ours = long_run_variance(e, 1.0 / block, (e * e).sum(axis=0))
    assert ours == pytest.approx(fft_long_run_variance(x, 1.0 / block), rel=1e-12)


def test_long_run_variance_equals_the_direct_sum_in_extended_precision():
    # the definition summed term by term (gamma_0 + 2 sum k_i gamma_i, Politis & Romano 1994),
    # in numpy's extended precision, on series whose autocovariances nearly cancel
    rng = np.random.default_rng(12)
    days, p = 600, 1.0 / 25
    x = np.column_stack([np.cumsum(rng.normal(size=days)),
                         (-1.0) ** np.arange(days) + 0.1 * rng.normal(size=days)])
    e = x - x.mean(axis=0)
    q = np.longdouble(1.0 - p)
    lag = np.arange(1, days, dtype=np.longdouble)
    kappa = (1 - lag / days) * q ** lag + (lag / days) * q ** (days - lag)
    exact = []
    for k in range(2):
        ek = e[:, k].astype(np.longdouble)
        gamma = np.array([np.sum(ek[:-i] * ek[i:]) for i in range(1, days)])
        exact.append(float((np.sum(ek * ek) + 2 * np.sum(kappa * gamma)) / days))
    ours = long_run_variance(e, p, (e * e).sum(axis=0))
    assert ours == pytest.approx(exact, rel=1e-12)


def test_long_run_variance_equals_arch():
    # arch 8.0 SPA's own Politis-Romano variances (_loss_diff_var), shared reference s.4
    x = _sweep(8, days=500, sets=5)
    ref = arch_bootstrap.SPA(np.zeros(500), -x, block_size=15, reps=10, seed=0)
    ref.compute()
    e = x - x.mean(axis=0)
    assert long_run_variance(e, 1 / 15, (e * e).sum(axis=0)) == pytest.approx(
        ref._loss_diff_var, rel=1e-10)


def test_block_of_one_day_has_no_autocovariance_terms():
    # p = 1: k_i = 0 for every lag (Politis & Romano 1994), so w^2 = gamma_0
    e = np.random.default_rng(0).normal(size=(50, 3))
    e -= e.mean(axis=0)
    squares = (e * e).sum(axis=0)
    assert np.array_equal(long_run_variance(e, 1.0, squares), squares / 50)
    assert math.isfinite(spa_test(e + 0.1, reps=20, block_size=1).consistent)
