"""Probability of backtest overfitting (PBO) by combinatorially symmetric cross-validation (CSCV).

The days are cut into S blocks. For every way of choosing half the blocks as the in-sample
period (the other half is out-of-sample), the set that scores best in-sample is looked up
out-of-sample: the PBO is the share of splits where it ranks in the lower half there.

Bailey, D. H., Borwein, J. M., López de Prado, M. & Zhu, Q. J. (2017), "The probability of
backtest overfitting", Journal of Computational Finance 20(4), 39-69.
"""

from __future__ import annotations

import dataclasses
import itertools
from collections.abc import Callable
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from hunchbook.core.errors import HunchbookError
from hunchbook.core.plain import json_safe
from hunchbook.core.stats.inputs import as_count, as_matrix
from hunchbook.core.stats.sums import sharpe_from_sums

#: Most blocks allowed: C(20, 10) = 184,756 splits (C(24, 12) would be 2.7 million).
MAX_SPLITS = 20
#: Upper bound on the memory of one chunk of per-split scores (bytes).
CHUNK_BYTES = 16 * 2**20


def _mean(sums: np.ndarray, squares: np.ndarray, n: int) -> np.ndarray:
    """Mean daily P&L of windows of ``n`` days (``squares`` unused)."""
    return sums / n


#: How a set is scored on a group of blocks, from its sum and sum of squares over ``n`` days.
STATISTICS: dict[str, Callable[[np.ndarray, np.ndarray, int], np.ndarray]] = {
    "sharpe": sharpe_from_sums,
    "mean": _mean,
}


@dataclass(frozen=True)
class OverfitResult:
    """PBO of a sweep's selection and the distribution it comes from.

    ``pbo`` is the share of splits whose in-sample best set has a logit ``<= 0`` out-of-sample
    (ranks in the lower half, the median included); ``splits`` the number of blocks S;
    ``combinations`` the number of splits C(S, S/2); ``logits`` the logit of each split, in the
    order of ``itertools.combinations(range(S), S // 2)`` over the in-sample blocks;
    ``median_oos_rank`` the median relative out-of-sample rank ``rank / (K + 1)`` of the
    in-sample best; ``statistic`` the score the sets were ranked by; ``dropped_days`` the
    oldest days left out so that the blocks are equally long.
    """

    pbo: float
    splits: int
    combinations: int
    logits: tuple[float, ...]
    median_oos_rank: float
    statistic: str
    dropped_days: int

    def to_dict(self) -> dict[str, object]:
        """JSON-safe dict of the figures, without the per-split ``logits``."""
        figures = dataclasses.asdict(self)
        del figures["logits"]
        return json_safe(figures)


def backtest_overfitting(net: np.ndarray, *, splits: int = 16,
                         statistic: str = "sharpe") -> OverfitResult | None:
    """Probability of backtest overfitting of choosing the best of K sets (CSCV).

    ``net`` is the daily net P&L, T days x K sets. Steps (Bailey, Borwein, López de Prado & Zhu
    2017, the CSCV procedure):

    1. drop the oldest ``T mod S`` days and cut the rest, in time order, into S equal blocks;
    2. for each of the C(S, S/2) choices of S/2 in-sample blocks (the rest out-of-sample), score
       every set on each half: ``statistic`` "sharpe" (mean / sd, ddof 1, per day) or "mean";
    3. ``n*`` = the in-sample best (the first one on ties); ``w = rank / (K + 1)`` of ``n*``'s
       out-of-sample score (rank 1 = worst, ties get their average rank);
       ``logit = ln(w / (1 - w))``;
    4. PBO = share of splits with ``logit <= 0``.

    Each set's score on a group of blocks comes from per-block sums and sums of squares: a
    (C x S) 0/1 matrix of block membership times the (S x K) block sums, processed in chunks.
    A split and its complement are computed together (the in-sample half of one is the
    out-of-sample half of the other). Windows where a set's P&L is flat are scored as
    :func:`~hunchbook.core.stats.sums.sharpe_from_sums` says.

    Returns None when there are fewer than 2 sets or fewer than 2 days per block
    (``T < 2 S``). ``splits`` must be even, from 2 to 20.
    """
    splits = _check_splits(splits)
    _check_statistic(statistic)
    x = as_matrix(net, "net P&L matrix")
    n_days, n_sets = x.shape
    if n_sets < 2 or n_days < 2 * splits:
        return None
    return overfitting_from_blocks(*block_sums(x, splits), n_days=n_days, statistic=statistic)


def block_sums(net: np.ndarray, splits: int) -> tuple[np.ndarray, np.ndarray]:
    """Each set's sum and sum of squares of daily net P&L (days x sets) over each of the
    ``splits`` equal blocks of CSCV (the oldest ``T mod S`` days dropped): two (S, K) arrays."""
    n_days, n_sets = net.shape
    length = n_days // splits
    blocks = net[n_days - length * splits:].reshape(splits, length, n_sets)
    return blocks.sum(axis=1), np.einsum("slk,slk->sk", blocks, blocks)


def overfitting_from_blocks(sums: np.ndarray, squares: np.ndarray, *, n_days: int,
                            statistic: str = "sharpe") -> OverfitResult:
    """The PBO from every set's :func:`block_sums` over a history of ``n_days`` days (see
    :func:`backtest_overfitting`)."""
    score = _check_statistic(statistic)
    splits, n_sets = sums.shape
    length = n_days // splits
    dropped = n_days - length * splits
    member = _membership(splits)
    n_splits = member.shape[0]
    half_days = splits // 2 * length
    ranks = np.empty(n_splits)
    rows = max(1, CHUNK_BYTES // (16 * n_sets))
    for first in range(0, n_splits // 2, rows):
        chosen = np.arange(first, min(first + rows, n_splits // 2))
        mirrored = n_splits - 1 - chosen  # the complement of each chosen split
        both = np.concatenate([chosen, mirrored])
        a, b = np.split(score(member[both] @ sums, member[both] @ squares, half_days), 2)
        ranks[chosen] = _oos_rank(a, b)
        ranks[mirrored] = _oos_rank(b, a)
    omega = ranks / (n_sets + 1)
    logits = np.log(omega / (1.0 - omega))
    return OverfitResult(
        pbo=int(np.count_nonzero(2.0 * ranks <= n_sets + 1)) / n_splits,
        splits=splits, combinations=n_splits, logits=tuple(logits.tolist()),
        median_oos_rank=float(np.median(omega)), statistic=statistic, dropped_days=dropped)


def _oos_rank(in_sample: np.ndarray, out_of_sample: np.ndarray) -> np.ndarray:
    """Average rank (1 = lowest) of each row's in-sample best within its out-of-sample row."""
    best = np.argmax(in_sample, axis=1)
    target = out_of_sample[np.arange(best.size), best][:, None]
    lower = np.count_nonzero(out_of_sample < target, axis=1)
    equal = np.count_nonzero(out_of_sample == target, axis=1)
    return lower + (equal + 1) / 2.0


@lru_cache(maxsize=4)
def _membership(splits: int) -> np.ndarray:
    """(C, S) 0/1 matrix: row c marks the in-sample blocks of split c.

    Rows follow ``itertools.combinations``, which orders each split's complement at the mirrored
    row ``C - 1 - c``.
    """
    combos = np.array(list(itertools.combinations(range(splits), splits // 2)), dtype=np.intp)
    member = np.zeros((combos.shape[0], splits))
    member[np.arange(combos.shape[0])[:, None], combos] = 1.0
    member.flags.writeable = False
    return member


def _check_splits(splits: object) -> int:
    count = as_count(splits, "splits")
    if count % 2 or count < 2 or count > MAX_SPLITS:
        raise HunchbookError(f"splits: expected an even number of blocks from 2 to {MAX_SPLITS}, "
                             f"got {count}")
    return count


def _check_statistic(statistic: object) -> Callable[[np.ndarray, np.ndarray, int], np.ndarray]:
    if not isinstance(statistic, str) or statistic not in STATISTICS:
        raise HunchbookError(f"statistic: expected one of {', '.join(STATISTICS)}, "
                             f"got {statistic!r}")
    return STATISTICS[statistic]

