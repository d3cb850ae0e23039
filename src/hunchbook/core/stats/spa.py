"""Hansen's test of Superior Predictive Ability for a sweep of parameter sets against doing nothing.

The benchmark is a flat position (zero P&L), so the loss differential of set k on day t is its
net P&L ``d_tk``. The null hypothesis is that no set has a positive expected daily P&L.

Bootstrap: the stationary bootstrap of Politis & Romano (1994) resamples whole days (all sets
together), in blocks of geometric length with mean ``block_size``. Each replication is turned into
a count vector (how often each day was drawn), so every bootstrap mean of every set comes out of
one matrix product ``W @ X / T`` (processed in chunks of replications to bound memory).

References: Hansen, P. R. (2005), "A Test for Superior Predictive Ability", Journal of Business &
Economic Statistics 23(4); White, H. (2000), Econometrica 68(5); Politis, D. N. & Romano, J. P.
(1994), "The Stationary Bootstrap", JASA 89(428).
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from dataclasses import dataclass
from typing import Literal

import numpy as np

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats.inputs import as_count, as_matrix

#: Upper bound on the memory of one chunk of bootstrap count weights (bytes).
CHUNK_BYTES = 16 * 2**20
#: Ways to put the sets on a common scale before taking the maximum.
STUDENTIZE = ("sample", "long_run", "none")


@dataclass(frozen=True)
class SpaResult:
    """P-values of the SPA test and what produced them.

    ``lower``, ``consistent`` and ``upper`` differ in how sets that look worse than the benchmark
    are recentred (lower <= consistent <= upper); ``consistent`` is Hansen's recommended p-value.
    ``statistic`` is the observed maximum (of mean daily P&L divided by its standard error as
    chosen by ``studentize``) and ``best_set`` the column that attains it.
    """

    lower: float
    consistent: float
    upper: float
    statistic: float
    best_set: int
    block_size: float
    reps: int
    studentize: str


def stationary_bootstrap_indices(n_obs: int, reps: int, block_size: float,
                                 seed: int | np.random.Generator | None = 0) -> np.ndarray:
    """Day indices of ``reps`` stationary-bootstrap resamples, shape (reps, n_obs).

    Each replication draws ``n_obs`` uniform start days and ``n_obs`` uniforms (in that order, from
    ``numpy.random.default_rng(seed)``); day ``i`` starts a new block when its uniform is at most
    ``1 / block_size`` (day 0 always does), otherwise it follows the previous day, wrapping round
    at the end. This is the sampling scheme, and random stream, of
    ``arch.bootstrap.StationaryBootstrap(block_size, data, seed=seed)``.
    """
    n_obs = as_count(n_obs, "number of days")
    reps = as_count(reps, "bootstrap replications")
    rng = np.random.default_rng(seed)
    return np.concatenate(list(_index_chunks(rng, n_obs, reps, _restart_probability(block_size),
                                             reps)), axis=0)


def spa_test(pnl: np.ndarray, *, reps: int = 1000, block_size: float | None = None,
             seed: int | np.random.Generator | None = 0,
             studentize: Literal["sample", "long_run", "none"] = "sample",
             indices: np.ndarray | None = None) -> SpaResult:
    """Hansen (2005) SPA test of K sets' daily net P&L (T x K) against zero P&L.

    With ``d_k`` the mean daily P&L of set k and ``w_k^2`` its long-run variance::

        statistic = max_k d_k / s_k
        p         = share of replications with max_k (d*_k - m_k) / s_k  >=  statistic

    where ``d*_k`` is the bootstrap mean and the recentring ``m_k`` is ``d_k`` (upper),
    ``max(d_k, 0)`` (lower) or ``d_k`` where ``d_k >= -(w_k / sqrt(T)) sqrt(2 log log T)`` and 0
    otherwise (consistent). ``w_k^2`` is the stationary-bootstrap variance of Politis & Romano
    (1994): ``gamma_0 + 2 sum_{i=1}^{T-1} k_i gamma_i`` with ``k_i = (1 - i/T)(1 - p)^i +
    (i/T)(1 - p)^(T - i)``, ``p = 1/block_size`` and ``gamma_i = sum_t e_t e_(t+i) / T``.

    The scale ``s_k`` depends on ``studentize``:

    - ``"sample"`` (default): ``sd_k / sqrt(T)`` with the sample standard deviation (ddof 0).
      Sets are put on a common scale as Hansen (2005) asks, and the test keeps its size.
    - ``"long_run"``: ``w_k / sqrt(T)`` as in Hansen (2005). In our simulations (T = 500,
      20 noise sets) it rejects 12-14 % of true nulls at a nominal 5 %: the noisy kernel variance
      fattens the tails of the observed t-statistics but not of the bootstrap ones.
    - ``"none"``: ``1`` (White's 2000 Reality Check on means). This reproduces
      ``arch.bootstrap.SPA(zeros(T), -pnl, block_size, reps, seed=seed).pvalues`` of arch 8.0
      exactly (arch 8.0 computes ``w_k`` but uses it only for the consistent threshold,
      whatever its ``studentize`` flag says). arch counts strict
    exceedances; ties can only occur with degenerate data (e.g. all-zero P&L, whose p-value is
    then 1 here instead of 0). Sets whose scale is zero (constant P&L) count as 0.

    Parameters
    ----------
    pnl : (T, K) daily net P&L in currency, one column per parameter set.
    reps : bootstrap replications (ignored when ``indices`` is given).
    block_size : mean block length; default ``int(sqrt(T))`` (arch's default).
    seed : seed of ``numpy.random.default_rng`` for the resampled days.
    studentize : scale of each set's mean: ``"sample"``, ``"long_run"`` or ``"none"``.
    indices : optional (reps, T) integer array of resampled days, e.g. taken from arch, replacing
        the generated ones.
    """
    x = as_matrix(pnl, "P&L matrix")
    n_obs = x.shape[0]
    if n_obs < 3:
        raise HunchbookError(f"P&L matrix: the SPA test needs at least 3 days, got {n_obs}")
    block = float(int(math.sqrt(n_obs))) if block_size is None else float(block_size)
    p = _restart_probability(block)
    means = x.mean(axis=0)
    variances = _stationary_bootstrap_variance(x, means, p)
    std_err = np.sqrt(np.where(variances > 0, variances, 0.0) / n_obs)
    threshold = -std_err * math.sqrt(max(2.0 * math.log(math.log(n_obs)), 0.0))
    scale = _scale(studentize, x, std_err)
    recentre = np.stack([np.maximum(means, 0.0),
                         np.where(means >= threshold, means, 0.0),
                         means])
    observed = means / scale
    statistic = float(observed.max())

    if indices is None:
        reps = as_count(reps, "bootstrap replications")
        chunk = max(1, CHUNK_BYTES // (8 * n_obs))
        chunks = _index_chunks(np.random.default_rng(seed), n_obs, reps, p, chunk)
    else:
        idx = _check_indices(indices, n_obs)
        reps = idx.shape[0]
        chunk = max(1, CHUNK_BYTES // (8 * n_obs))
        chunks = (idx[i:i + chunk] for i in range(0, reps, chunk))

    exceed = np.zeros(3)
    for block_idx in chunks:
        boot_means = _resample_counts(block_idx, n_obs) @ x / n_obs
        for j in range(3):
            exceed[j] += np.count_nonzero(((boot_means - recentre[j]) / scale).max(axis=1)
                                          >= statistic)
    pvalues = exceed / reps
    return SpaResult(lower=float(pvalues[0]), consistent=float(pvalues[1]),
                     upper=float(pvalues[2]), statistic=statistic,
                     best_set=int(np.argmax(observed)), block_size=block, reps=reps,
                     studentize=studentize)


@dataclass(frozen=True)
class SpaPlan:
    """The bootstrap of an SPA test over ``n_obs`` days, the same for every chunk of sets."""

    n_obs: int
    reps: int
    block_size: float
    seed: int


@dataclass(frozen=True)
class SpaPartial:
    """One chunk of sets' part of the SPA test: its observed maximum and best column, and per
    replication the maximum over its sets of each recentred statistic (3 x reps)."""

    statistic: float
    best_set: int
    maxima: np.ndarray


def spa_plan(n_obs: int, *, reps: int = 1000, block_size: float | None = None,
             seed: int = 0) -> SpaPlan:
    """The bootstrap of the SPA test over ``n_obs`` days (block size default ``int(sqrt(T))``)."""
    block = float(int(math.sqrt(n_obs))) if block_size is None else float(block_size)
    return SpaPlan(n_obs=n_obs, reps=as_count(reps, "bootstrap replications"),
                   block_size=block, seed=seed)


def spa_partial(plan: SpaPlan, pnl: np.ndarray, *, first_column: int = 0,
                studentize: str = "sample") -> SpaPartial:
    """The part of the columns of ``pnl`` (T x k), the first being column ``first_column``."""
    x = as_matrix(pnl, "P&L matrix")
    p = _restart_probability(plan.block_size)
    means = x.mean(axis=0)
    variances = _stationary_bootstrap_variance(x, means, p)
    std_err = np.sqrt(np.where(variances > 0, variances, 0.0) / plan.n_obs)
    threshold = -std_err * math.sqrt(max(2.0 * math.log(math.log(plan.n_obs)), 0.0))
    scale = _scale(studentize, x, std_err)
    recentre = np.stack([np.maximum(means, 0.0), np.where(means >= threshold, means, 0.0),
                         means])
    observed = means / scale
    chunk = max(1, CHUNK_BYTES // (8 * plan.n_obs))
    maxima = np.empty((3, plan.reps))
    done = 0
    for idx in _index_chunks(np.random.default_rng(plan.seed), plan.n_obs, plan.reps, p,
                             chunk):
        boot_means = _resample_counts(idx, plan.n_obs) @ x / plan.n_obs
        for j in range(3):
            maxima[j, done:done + len(idx)] = ((boot_means - recentre[j]) / scale).max(axis=1)
        done += len(idx)
    best = int(np.argmax(observed))
    return SpaPartial(statistic=float(observed[best]), best_set=first_column + best,
                      maxima=maxima)


def spa_combine(plan: SpaPlan, partials: list[SpaPartial],
                studentize: str = "sample") -> SpaResult:
    """The SPA test over every chunk's columns."""
    best = max(partials, key=lambda q: (q.statistic, -q.best_set))
    maxima = np.max([q.maxima for q in partials], axis=0)
    pvalues = np.count_nonzero(maxima >= best.statistic, axis=1) / plan.reps
    return SpaResult(lower=float(pvalues[0]), consistent=float(pvalues[1]),
                     upper=float(pvalues[2]), statistic=best.statistic, best_set=best.best_set,
                     block_size=plan.block_size, reps=plan.reps, studentize=studentize)


def _scale(studentize: str, x: np.ndarray, long_run_err: np.ndarray) -> np.ndarray:
    """Divisor of each set's mean; sets without variation get an infinite one (t = 0)."""
    if studentize == "none":
        return np.ones(x.shape[1])
    if studentize == "long_run":
        err = long_run_err
    elif studentize == "sample":
        err = x.std(axis=0) / math.sqrt(x.shape[0])
    else:
        raise HunchbookError(f"studentize: expected one of {', '.join(STUDENTIZE)}, "
                             f"got {studentize!r}")
    return np.where(err > 0, err, np.inf)


def _restart_probability(block_size: float) -> float:
    try:
        block = float(block_size)
    except (TypeError, ValueError):
        raise HunchbookError(f"block size: expected a number, got {block_size!r}") from None
    if not block >= 1.0:
        raise HunchbookError(f"block size: expected a mean block length of at least 1 day, "
                             f"got {block_size!r}")
    return 1.0 / block


def _index_chunks(rng: np.random.Generator, n_obs: int, reps: int, p: float,
                  chunk: int) -> Iterator[np.ndarray]:
    """Yield stationary-bootstrap day indices in chunks of at most ``chunk`` replications."""
    days = np.arange(n_obs)
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
        yield idx


def _resample_counts(indices: np.ndarray, n_obs: int) -> np.ndarray:
    """(rows, T) matrix of how often each day appears in each resample."""
    rows = indices.shape[0]
    flat = (indices + n_obs * np.arange(rows)[:, None]).ravel()
    return np.bincount(flat, minlength=rows * n_obs).reshape(rows, n_obs).astype(float)


def _stationary_bootstrap_variance(x: np.ndarray, means: np.ndarray, p: float) -> np.ndarray:
    """Politis-Romano long-run variance of each column (all T - 1 autocovariances, via FFT)."""
    from scipy import fft  # imported when the test runs, not when results are read

    n_obs, n_sets = x.shape
    lag = np.arange(1, n_obs)
    kappa = (1.0 - lag / n_obs) * (1.0 - p) ** lag + (lag / n_obs) * (1.0 - p) ** (n_obs - lag)
    size = fft.next_fast_len(2 * n_obs, real=True)
    out = np.empty(n_sets)
    step = max(1, CHUNK_BYTES // (16 * size))
    for first in range(0, n_sets, step):
        last = min(first + step, n_sets)
        padded = np.zeros((last - first, size))
        padded[:, :n_obs] = (x[:, first:last] - means[first:last]).T
        spectrum = fft.rfft(padded, axis=1, workers=-1)
        autocov = fft.irfft(spectrum * spectrum.conj(), n=size, axis=1, workers=-1)[:, :n_obs]
        out[first:last] = (autocov[:, 0] + 2.0 * autocov[:, 1:] @ kappa) / n_obs
    return out


def _check_indices(indices: np.ndarray, n_obs: int) -> np.ndarray:
    idx = np.asarray(indices)
    if idx.ndim != 2 or idx.shape[1] != n_obs or idx.shape[0] == 0:
        raise HunchbookError(f"bootstrap indices: expected a (replications, {n_obs}) array, "
                             f"got shape {idx.shape}")
    if not np.issubdtype(idx.dtype, np.integer):
        raise HunchbookError("bootstrap indices: expected whole-number day positions")
    if idx.min() < 0 or idx.max() >= n_obs:
        raise HunchbookError(f"bootstrap indices: day positions must lie in 0..{n_obs - 1}")
    return idx.astype(np.int64, copy=False)
