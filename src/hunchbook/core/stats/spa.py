"""Hansen's test of Superior Predictive Ability for a sweep of parameter sets against doing nothing.

The benchmark is a flat position (zero P&L), so the loss differential of set k on day t is its
net P&L ``d_tk``. The null hypothesis is that no set has a positive expected daily P&L.

Bootstrap: the stationary bootstrap of Politis & Romano (1994) resamples whole days (all sets
together), in blocks of geometric length with mean ``block_size``. A :class:`SpaPlan` holds the
blocks of every replication (first day and length, wrapping round at the end). The sum of a
block of a set's series is a difference of that series' prefix sums, so a bootstrap mean costs
one subtraction per block instead of one addition per day.

The test splits over chunks of sets: :func:`spa_partial` reduces a chunk of columns to its
largest observed statistic and, per replication, the largest recentred bootstrap statistic of
each kind; :func:`spa_combine` takes the maxima over chunks. A set's figures never depend on
which other sets share its chunk, so any split gives the same result as one chunk.

References: Hansen, P. R. (2005), "A Test for Superior Predictive Ability", Journal of Business &
Economic Statistics 23(4); White, H. (2000), Econometrica 68(5); Politis, D. N. & Romano, J. P.
(1994), "The Stationary Bootstrap", JASA 89(428).
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass
from typing import Literal

import numpy as np

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats.inputs import as_count, as_matrix
from hunchbook.core.stats.long_run import long_run_variance

#: Upper bound on the memory of one piece of bootstrap work (bytes): the random draws of a
#: group of replications, or the block sums of a group of replications for a tile of sets.
CHUNK_BYTES = 4 * 2**20
#: Upper bound on the memory of one tile of sets' centred series or prefix sums (bytes).
TILE_BYTES = 16 * 2**20
#: Ways to put the sets on a common scale before taking the maximum.
STUDENTIZE = ("sample", "long_run", "none")
#: Rows of :attr:`SpaPartial.maxima`, in order.
RECENTRINGS = ("lower", "consistent", "upper")


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


@dataclass(frozen=True, eq=False)
class SpaPlan:
    """The stationary-bootstrap blocks of every replication, shared by every chunk of sets.

    Replication ``r`` is made of blocks ``offsets[r]`` to ``offsets[r + 1] - 1``; block ``b``
    takes the days ``starts[b], starts[b] + 1, ...`` (``lengths[b]`` of them, wrapping round
    from the last day to day 0). The lengths of a replication add up to ``n_obs``. About
    ``reps * (n_obs / block_size + 1)`` blocks: 8 bytes each.
    """

    n_obs: int
    reps: int
    block_size: float
    starts: np.ndarray
    lengths: np.ndarray
    offsets: np.ndarray


@dataclass(frozen=True, eq=False)
class SpaPartial:
    """What a chunk of sets (columns ``first_column`` to ``first_column + n_sets - 1``) adds
    to the SPA test: its largest observed statistic, the column attaining it, and per
    replication the largest recentred bootstrap statistic (rows in :data:`RECENTRINGS` order,
    shape (3, reps))."""

    n_obs: int
    reps: int
    studentize: str
    first_column: int
    n_sets: int
    statistic: float
    best_set: int
    maxima: np.ndarray


def spa_plan(n_obs: int, *, reps: int = 1000, block_size: float | None = None,
             seed: int | np.random.Generator | None = 0) -> SpaPlan:
    """Draw the stationary-bootstrap blocks of ``reps`` replications of ``n_obs`` days.

    Each replication draws ``n_obs`` uniform start days and ``n_obs`` uniforms (in that order,
    from ``numpy.random.default_rng(seed)``); day ``i`` starts a new block when its uniform is
    at most ``1 / block_size`` (day 0 always does), at the start day drawn for it; otherwise it
    follows the previous day, wrapping round at the end. This is the sampling scheme, and random
    stream, of ``arch.bootstrap.StationaryBootstrap(block_size, data, seed=seed)``.

    Parameters
    ----------
    n_obs : days of the P&L series (at least 3).
    reps : bootstrap replications.
    block_size : mean block length; default ``int(sqrt(n_obs))`` (arch's default).
    seed : seed (or generator) of ``numpy.random.default_rng``.
    """
    n_obs = as_count(n_obs, "number of days")
    if n_obs < 3:
        raise HunchbookError(f"number of days: the SPA test needs at least 3 days, got {n_obs}")
    return _draw_plan(n_obs, as_count(reps, "bootstrap replications"),
                      _block_size(block_size, n_obs), seed)


def stationary_bootstrap_indices(n_obs: int, reps: int, block_size: float,
                                 seed: int | np.random.Generator | None = 0) -> np.ndarray:
    """Day indices of ``reps`` stationary-bootstrap resamples, shape (reps, n_obs).

    The days of the blocks of :func:`spa_plan` (same random stream: that of
    ``arch.bootstrap.StationaryBootstrap(block_size, data, seed=seed)``).
    """
    n_obs = as_count(n_obs, "number of days")
    reps = as_count(reps, "bootstrap replications")
    plan = _draw_plan(n_obs, reps, _block_size(block_size, n_obs), seed)
    lengths = plan.lengths.astype(np.int64)
    block_first = np.cumsum(lengths) - lengths  # position of each block in the flat resample
    flat = np.repeat(plan.starts - block_first, lengths) + np.arange(reps * n_obs)
    return (flat % n_obs).reshape(reps, n_obs)


def spa_partial(plan: SpaPlan, pnl_chunk: np.ndarray, *, first_column: int = 0,
                studentize: Literal["sample", "long_run", "none"] = "sample") -> SpaPartial:
    """Reduce a chunk of sets' daily net P&L (T x k) to its part of the SPA test.

    Each set's mean ``d_k``, scale ``s_k`` and recentrings ``m_k`` are those of
    :func:`spa_test`; the chunk keeps ``max_k d_k / s_k`` (and its column) and, for each
    replication and recentring, ``max_k (d*_k - m_k) / s_k``. Bootstrap means come from prefix
    sums of each set's centred series over the plan's blocks, in pieces of replications of at
    most :data:`CHUNK_BYTES`.

    Parameters
    ----------
    plan : the blocks of :func:`spa_plan` (the same plan for every chunk of one test).
    pnl_chunk : (T, k) daily net P&L, one column per set; ``T`` must be ``plan.n_obs``.
    first_column : column of the chunk's first set in the whole sweep (names the best set).
    studentize : scale of each set's mean: ``"sample"``, ``"long_run"`` or ``"none"``.
    """
    x = np.ascontiguousarray(as_matrix(pnl_chunk, "P&L matrix"))
    n_obs, n_sets = x.shape
    if n_obs != plan.n_obs:
        raise HunchbookError(f"P&L matrix: the SPA plan is for {plan.n_obs} days, got {n_obs}")
    if studentize not in STUDENTIZE:
        raise HunchbookError(f"studentize: expected one of {', '.join(STUDENTIZE)}, "
                             f"got {studentize!r}")
    first_column = as_count(first_column, "first column", minimum=0)
    gather = _Gather(plan)
    maxima = np.full((3, plan.reps), -np.inf)
    observed = np.empty(n_sets)
    step = max(1, TILE_BYTES // (8 * n_obs))
    for first in range(0, n_sets, step):
        tile = x[:, first:first + step]
        observed[first:first + tile.shape[1]] = _tile(plan, gather, tile, studentize, maxima)
    best = int(np.argmax(observed))
    return SpaPartial(n_obs=n_obs, reps=plan.reps, studentize=studentize,
                      first_column=first_column, n_sets=n_sets, statistic=float(observed[best]),
                      best_set=first_column + best, maxima=maxima)


def spa_combine(plan: SpaPlan, partials: Iterable[SpaPartial]) -> SpaResult:
    """The SPA test of the sets of all ``partials`` (chunks of columns, in any order).

    ``p = share of replications whose largest recentred statistic is >= the largest observed
    statistic``, for each recentring (ties count against the sets, as ``P(T* >= T)``).
    """
    parts = list(partials)
    if not parts:
        raise HunchbookError("SPA test: no chunk of sets to combine")
    kinds = {p.studentize for p in parts}
    if len(kinds) > 1:
        raise HunchbookError(f"SPA test: chunks scaled differently ({', '.join(sorted(kinds))})")
    for part in parts:
        if part.n_obs != plan.n_obs or part.reps != plan.reps:
            raise HunchbookError(f"SPA test: a chunk of {part.n_obs} days x {part.reps} "
                                 f"replications does not fit the plan of {plan.n_obs} days x "
                                 f"{plan.reps} replications")
    spans = sorted((p.first_column, p.first_column + p.n_sets) for p in parts)
    for (_, end), (start, _) in zip(spans, spans[1:], strict=False):
        if start < end:
            raise HunchbookError(f"SPA test: column {start} is in two chunks")
    maxima = np.maximum.reduce([p.maxima for p in parts])
    statistic = max(p.statistic for p in parts)
    best_set = min(p.best_set for p in parts if p.statistic == statistic)
    pvalues = np.count_nonzero(maxima >= statistic, axis=1) / plan.reps
    return SpaResult(lower=float(pvalues[0]), consistent=float(pvalues[1]),
                     upper=float(pvalues[2]), statistic=statistic, best_set=best_set,
                     block_size=plan.block_size, reps=plan.reps, studentize=kinds.pop())


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
    (i/T)(1 - p)^(T - i)``, ``p = 1/block_size`` and ``gamma_i = sum_t e_t e_(t+i) / T``
    (see :mod:`hunchbook.core.stats.long_run`).

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

    This is :func:`spa_plan`, one :func:`spa_partial` of all the sets and :func:`spa_combine`.

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
    if indices is None:
        plan = spa_plan(n_obs, reps=reps, block_size=block_size, seed=seed)
    else:
        plan = _plan_of_indices(indices, n_obs, _block_size(block_size, n_obs))
    return spa_combine(plan, [spa_partial(plan, x, studentize=studentize)])


class _Gather:
    """The plan's blocks as prefix-sum positions: a block's sum is ``C[hi] - C[lo]`` on the
    cumulative sums ``C`` of a series, plus its total where the block wraps round or starts on
    day 0 (``C[-1]``, the total, stands in for the missing ``C[-1] = 0``)."""

    def __init__(self, plan: SpaPlan) -> None:
        n_obs = plan.n_obs
        starts = plan.starts.astype(np.int64)
        ends = starts + plan.lengths
        self.lo = starts - 1  # -1 reads the total
        self.hi = np.where(ends > n_obs, ends - n_obs, ends) - 1
        extra = (ends > n_obs) | (starts == 0)
        self.totals = np.add.reduceat(extra.astype(float), plan.offsets[:-1])


def _tile(plan: SpaPlan, gather: _Gather, x: np.ndarray, studentize: str,
          maxima: np.ndarray) -> np.ndarray:
    """Fold a tile of sets into ``maxima`` (in place); return their observed statistics."""
    n_obs, n_sets = x.shape
    means = _column_sums(x) / n_obs
    e = x - means
    squares = _column_sums(e * e)
    variances = long_run_variance(e, 1.0 / plan.block_size, squares)
    std_err = np.sqrt(np.where(variances > 0, variances, 0.0) / n_obs)
    threshold = -std_err * math.sqrt(max(2.0 * math.log(math.log(n_obs)), 0.0))
    if studentize == "none":
        scale = np.ones(n_sets)
    else:
        err = std_err if studentize == "long_run" else np.sqrt(squares / n_obs) / math.sqrt(n_obs)
        scale = np.where(err > 0, err, np.inf)
    # d_k - m_k for the lower, consistent and upper recentrings (RECENTRINGS order)
    offsets = np.stack([np.minimum(means, 0.0), np.where(means >= threshold, 0.0, means),
                        np.zeros(n_sets)])
    prefix = np.cumsum(e, axis=0)
    total = prefix[-1]
    per_rep = max(1, round(plan.offsets[-1] / plan.reps))
    step = max(1, CHUNK_BYTES // (16 * n_sets * per_rep))
    for first in range(0, plan.reps, step):
        last = min(first + step, plan.reps)
        lo, hi = plan.offsets[first], plan.offsets[last]
        sums = np.take(prefix, gather.hi[lo:hi], axis=0)
        sums -= np.take(prefix, gather.lo[lo:hi], axis=0)
        boot = np.add.reduceat(sums, plan.offsets[first:last] - lo, axis=0)
        boot += gather.totals[first:last, None] * total
        boot /= n_obs
        for j in range(3):
            np.maximum(maxima[j, first:last], ((offsets[j] + boot) / scale).max(axis=1),
                       out=maxima[j, first:last])
    return means / scale


def _column_sums(a: np.ndarray) -> np.ndarray:
    """Column sums added day after day (as numpy sums a C-ordered matrix of several columns),
    so that a set's figures do not depend on which sets share its chunk."""
    if a.shape[1] > 1 and a.strides[1] == a.itemsize:
        return a.sum(axis=0)
    return np.cumsum(a, axis=0)[-1]


def _draw_plan(n_obs: int, reps: int, block: float,
               seed: int | np.random.Generator | None) -> SpaPlan:
    """The blocks of ``reps`` replications, drawn in groups of replications."""
    p = _restart_probability(block)
    rng = np.random.default_rng(seed)
    starts, lengths, counts = [], [], []
    group = max(1, CHUNK_BYTES // (16 * n_obs))
    for first in range(0, reps, group):
        rows = min(group, reps - first)
        days = np.empty((rows, n_obs), dtype=np.int64)
        uniforms = np.empty((rows, n_obs))
        for r in range(rows):
            days[r] = rng.integers(n_obs, size=n_obs, dtype=np.int64)
            uniforms[r] = rng.random(n_obs)
        new_block = uniforms <= p
        new_block[:, 0] = True
        flat = np.flatnonzero(new_block)
        starts.append(days.ravel()[flat])
        lengths.append(np.diff(flat, append=rows * n_obs))
        counts.append(np.count_nonzero(new_block, axis=1))
    return _plan(n_obs, block, np.concatenate(starts), np.concatenate(lengths),
                 np.concatenate(counts))


def _plan_of_indices(indices: np.ndarray, n_obs: int, block: float) -> SpaPlan:
    """The plan of given resampled days: a block ends wherever the next day is not the next
    position (so no block wraps round)."""
    idx = _check_indices(indices, n_obs)
    new_block = np.ones(idx.shape, dtype=bool)
    new_block[:, 1:] = idx[:, 1:] != idx[:, :-1] + 1
    flat = np.flatnonzero(new_block)
    return _plan(n_obs, block, idx.ravel()[flat], np.diff(flat, append=idx.size),
                 np.count_nonzero(new_block, axis=1))


def _plan(n_obs: int, block: float, starts: np.ndarray, lengths: np.ndarray,
          counts: np.ndarray) -> SpaPlan:
    offsets = np.zeros(counts.size + 1, dtype=np.int64)
    np.cumsum(counts, out=offsets[1:])
    arrays = [starts.astype(np.int32), lengths.astype(np.int32), offsets]
    for a in arrays:
        a.flags.writeable = False
    return SpaPlan(n_obs=n_obs, reps=int(counts.size), block_size=block, starts=arrays[0],
                   lengths=arrays[1], offsets=arrays[2])


def _block_size(block_size: float | None, n_obs: int) -> float:
    if block_size is None:
        return float(int(math.sqrt(n_obs)))
    _restart_probability(block_size)
    return float(block_size)


def _restart_probability(block_size: float) -> float:
    try:
        block = float(block_size)
    except (TypeError, ValueError):
        raise HunchbookError(f"block size: expected a number, got {block_size!r}") from None
    if not block >= 1.0:
        raise HunchbookError(f"block size: expected a mean block length of at least 1 day, "
                             f"got {block_size!r}")
    return 1.0 / block


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
