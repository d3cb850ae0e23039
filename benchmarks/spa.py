"""Speed of the SPA test on a large sweep: 10,000 days x 1,000 sets, 1,000 replications.

Prints (not a test; shared machines are noisy) min / median / max seconds over several runs of:
- the dense approach the test used before the block plan (reimplemented here: resampled days
  per group of replications, a count-weight matrix ``W``, ``W @ X / T`` by BLAS, the long-run
  variance by FFT) against ``spa_test`` (block plan, prefix sums over blocks, O(T) long-run
  variance), and their ratio;
- the parts of the new test: drawing the plan, one partial of all the sets, and the same sets
  in ten chunks (as workers would compute them);
- the long-run variance alone: FFT (all cores, and one) against the recursion.

P&L is generated (benchmark data only). Run: .venv/bin/python benchmarks/spa.py [--runs N]
"""

from __future__ import annotations

import argparse
import math
import platform
import statistics
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).parent))
from timing import line, repeat_times  # noqa: E402

from hunchbook.core.stats.long_run import long_run_variance  # noqa: E402
from hunchbook.core.stats.spa import spa_combine, spa_partial, spa_plan, spa_test  # noqa: E402

DAYS, SETS, REPS = 10_000, 1_000, 1_000
#: Memory of one group of replications' count weights in the dense approach (as it was).
DENSE_CHUNK_BYTES = 16 * 2**20


def fft_variance(x: np.ndarray, p: float, workers: int) -> np.ndarray:
    """Politis-Romano long-run variance by FFT of every column (the dense approach's)."""
    from scipy import fft

    n_obs, n_sets = x.shape
    e = x - x.mean(axis=0)
    lag = np.arange(1, n_obs)
    kappa = (1.0 - lag / n_obs) * (1.0 - p) ** lag + (lag / n_obs) * (1.0 - p) ** (n_obs - lag)
    size = fft.next_fast_len(2 * n_obs, real=True)
    out = np.empty(n_sets)
    step = max(1, DENSE_CHUNK_BYTES // (16 * size))
    for first in range(0, n_sets, step):
        last = min(first + step, n_sets)
        padded = np.zeros((last - first, size))
        padded[:, :n_obs] = e[:, first:last].T
        spectrum = fft.rfft(padded, axis=1, workers=workers)
        autocov = fft.irfft(spectrum * spectrum.conj(), n=size, axis=1, workers=workers)
        out[first:last] = (autocov[:, 0] + 2.0 * autocov[:, 1:n_obs] @ kappa) / n_obs
    return out


def dense_spa(x: np.ndarray, reps: int, seed: int) -> np.ndarray:
    """(lower, consistent, upper) p-values by count weights, as computed before the plan."""
    n_obs, n_sets = x.shape
    p = 1.0 / int(math.sqrt(n_obs))
    means = x.mean(axis=0)
    std_err = np.sqrt(np.maximum(fft_variance(x, p, workers=-1), 0.0) / n_obs)
    threshold = -std_err * math.sqrt(2.0 * math.log(math.log(n_obs)))
    scale = np.where(x.std(axis=0) > 0, x.std(axis=0) / math.sqrt(n_obs), np.inf)
    recentre = np.stack([np.maximum(means, 0.0), np.where(means >= threshold, means, 0.0), means])
    statistic = (means / scale).max()
    rng = np.random.default_rng(seed)
    days = np.arange(n_obs)
    chunk = max(1, DENSE_CHUNK_BYTES // (8 * n_obs))
    exceed = np.zeros(3)
    for first in range(0, reps, chunk):
        rows = min(chunk, reps - first)
        starts = np.empty((rows, n_obs), dtype=np.int64)
        uniforms = np.empty((rows, n_obs))
        for r in range(rows):
            starts[r] = rng.integers(n_obs, size=n_obs, dtype=np.int64)
            uniforms[r] = rng.random(n_obs)
        new_block = uniforms <= p
        new_block[:, 0] = True
        block_start = np.maximum.accumulate(np.where(new_block, days, 0), axis=1)
        idx = np.take_along_axis(starts, block_start, axis=1) + (days - block_start)
        idx[idx >= n_obs] -= n_obs
        flat = (idx + n_obs * np.arange(rows)[:, None]).ravel()
        counts = np.bincount(flat, minlength=rows * n_obs).reshape(rows, n_obs).astype(float)
        boot = counts @ x / n_obs
        for j in range(3):
            exceed[j] += np.count_nonzero(((boot - recentre[j]) / scale).max(axis=1) >= statistic)
    return exceed / reps


def chunked(x: np.ndarray, chunks: int, seed: int) -> object:
    """The new test with the sets in ``chunks`` pieces, one partial each, then combined."""
    plan = spa_plan(x.shape[0], reps=REPS, seed=seed)
    edges = np.linspace(0, x.shape[1], chunks + 1).astype(int)
    return spa_combine(plan, [spa_partial(plan, x[:, a:b], first_column=int(a))
                              for a, b in zip(edges, edges[1:], strict=False)])



def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5, help="runs of each figure (default 5)")
    args = parser.parse_args()
    rng = np.random.default_rng(1)
    x = rng.normal(0.0, 1.0, (DAYS, SETS)) + rng.normal(0.0, 0.5, (DAYS, 1))
    x[:, 17] += 0.03
    print(f"{DAYS:,} days x {SETS:,} sets, {REPS:,} replications, block {int(math.sqrt(DAYS))}; "
          f"{platform.python_implementation()} {platform.python_version()}, numpy "
          f"{np.__version__}")
    new = spa_test(x, reps=REPS, seed=3)
    old = tuple(float(v) for v in dense_spa(x, REPS, 3))
    same = old == (new.lower, new.consistent, new.upper)
    print(f"p-values dense {old}, new {(new.lower, new.consistent, new.upper)}: "
          f"{'identical' if same else 'DIFFERENT'}")
    dense_times = repeat_times(lambda: dense_spa(x, REPS, 3), args.runs)
    new_times = repeat_times(lambda: spa_test(x, reps=REPS, seed=3), args.runs)
    print(line("dense counts @ X, FFT variance (before)", dense_times))
    print(line("plan + prefix sums, recursion (spa_test)", new_times))
    print(f"{'ratio before / now (medians)':<44} "
          f"{statistics.median(dense_times) / statistics.median(new_times):.2f}x")
    plan = spa_plan(DAYS, reps=REPS, seed=3)
    print(line("  drawing the plan",
               repeat_times(lambda: spa_plan(DAYS, reps=REPS, seed=3), args.runs)))
    print(line("  one partial of all the sets",
               repeat_times(lambda: spa_partial(plan, x), args.runs)))
    print(line("  ten chunks of 100 sets (plan included)",
               repeat_times(lambda: chunked(x, 10, 3), args.runs)))
    print(f"  plan: {plan.offsets[-1]:,} blocks, "
          f"{(plan.starts.nbytes + plan.lengths.nbytes + plan.offsets.nbytes) / 2**20:.2f} MB")
    p = 1.0 / int(math.sqrt(DAYS))
    e = x - x.mean(axis=0)
    squares = (e * e).sum(axis=0)
    fft_all = repeat_times(lambda: fft_variance(x, p, workers=-1), args.runs)
    fft_one = repeat_times(lambda: fft_variance(x, p, workers=1), args.runs)
    recursion = repeat_times(lambda: long_run_variance(e, p, squares), args.runs)
    print(line("long-run variance, FFT (all cores)", fft_all))
    print(line("long-run variance, FFT (one core)", fft_one))
    print(line("long-run variance, O(T) recursion (one core)", recursion))
    gap = np.max(np.abs(long_run_variance(e, p, squares) / fft_variance(x, p, -1) - 1))
    print(f"{'largest relative gap recursion / FFT':<44} {gap:.1e}")


if __name__ == "__main__":
    main()
