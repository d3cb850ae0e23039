"""Effective number of independent trials of a sweep, from the correlation of the sets' P&L.

A sweep of K neighbouring parameter sets is not K independent trials: sets that trade almost
alike count nearly as one. The eigenvalue method of Li & Ji (2005) turns the correlation matrix
of the sets' daily net P&L into an effective count, to be used in place of K where a correction
for the number of trials asks for it (the Deflated Sharpe Ratio's N, a Šidák level).

Li, J. & Ji, L. (2005), "Adjusting multiple testing in multi-locus analyses using the eigenvalues
of a correlation matrix", Heredity 95(3), 221-227.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats.inputs import as_count, as_matrix

#: Eigenvalues are rounded to this many decimals before the floor: ``eigvalsh`` returns
#: 2.9999999999999996 for a 3 x 3 block of ones, which would count as 2 trials instead of 1.
EIGEN_DECIMALS = 10
#: Largest number of varying sets whose correlation matrix is decomposed (the rest is scaled).
MAX_SETS = 2000
#: Name of the method, as recorded in :class:`EffectiveTrials`.
METHOD = "li-ji"


@dataclass(frozen=True)
class EffectiveTrials:
    """Raw and effective number of trials of a sweep.

    ``raw`` is the number of sets K; ``effective`` the Li-Ji count, between 1 and K; ``method``
    names the method; ``sampled`` is the number of varying sets whose correlation was used when
    there were too many to use them all (then ``effective`` is scaled up from that sample), else
    None.
    """

    raw: int
    effective: float
    method: str
    sampled: int | None


def li_ji_count(corr: np.ndarray) -> float:
    """Li-Ji effective number of independent tests of an M x M correlation matrix.

    ``M_eff = sum_i f(|l_i|)`` with ``f(x) = I(x >= 1) + (x - floor(x))`` over the eigenvalues
    ``l_i``, rounded to 10 decimals first. For a positive semi-definite matrix the count is an
    integer, ``M - sum_i max(floor(l_i) - 1, 0)`` (M for the identity, k for k perfectly
    correlated blocks); fractions appear only when an estimated matrix has negative eigenvalues.
    The count is not rounded. Li & Ji (2005), Heredity 95(3), 221-227.
    """
    try:
        c = np.asarray(corr, dtype=float)
    except (TypeError, ValueError) as exc:
        raise HunchbookError(f"correlation matrix: expected a square array of numbers ({exc})"
                             ) from None
    if c.ndim != 2 or c.shape[0] != c.shape[1] or c.shape[0] == 0:
        raise HunchbookError(f"correlation matrix: expected a non-empty square array, got shape "
                             f"{c.shape}")
    if not np.all(np.isfinite(c)):
        raise HunchbookError("correlation matrix: contains NaN or infinite values")
    eigen = np.round(np.linalg.eigvalsh(c), EIGEN_DECIMALS)
    # sum_i f(|l_i|) = sum_i |l_i| - sum_i max(floor(|l_i|) - 1, 0), and sum_i |l_i| is the
    # trace minus twice the negative eigenvalues: exact integers for a semi-definite matrix,
    # where summing a thousand rounded fractions would leave 999.9999999993.
    size = np.abs(eigen)
    excess = np.maximum(np.floor(size) - 1.0, 0.0).sum()
    return float(np.trace(c) - 2.0 * eigen[eigen < 0].sum() - excess)


def effective_trials(net: np.ndarray, *, max_sets: int = MAX_SETS) -> EffectiveTrials:
    """Effective number of independent trials of a sweep's daily net P&L (T days x K sets).

    The Li-Ji count (:func:`li_ji_count`) of the correlation matrix of the sets' daily net P&L,
    computed as ``Z.T @ Z`` of the standardised columns (float64).

    - A set whose P&L never changes (for example one that never trades) cannot be correlated
      with anything; each counts as one independent trial, which is conservative (a larger
      count makes a correction for the number of trials stricter).
    - With more than ``max_sets`` sets, the count is taken on ``max_sets`` of them spaced
      evenly along the columns (:func:`sample_columns`, deterministic, so a sweep run chunk by
      chunk keeps just those columns) and scaled linearly to every varying set:
      ``m * varying / varying in the sample``. On a smooth parameter grid the effective count
      grows more slowly than the number of sets, so linear scaling over-counts: the deflated
      Sharpe ratio gets stricter, never laxer.
    - The result is clipped to [1, K]; one set gives 1.

    Li & Ji (2005), Heredity 95(3), 221-227.
    """
    x = as_matrix(net, "net P&L matrix")
    n_sets = x.shape[1]
    picked = sample_columns(n_sets, max_sets)
    varying = int(np.count_nonzero(varies(x)))
    return effective_from_sample(x if picked is None else x[:, picked], n_sets=n_sets,
                                 n_varying=varying)


def sample_columns(n_sets: int, max_sets: int = MAX_SETS) -> np.ndarray | None:
    """The ``max_sets`` columns, spaced evenly, whose correlation stands for all ``n_sets``;
    None when every column is used."""
    max_sets = as_count(max_sets, "max_sets", minimum=2)
    if n_sets <= max_sets:
        return None
    return np.unique(np.round(np.linspace(0, n_sets - 1, max_sets)).astype(np.intp))


def varies(x: np.ndarray) -> np.ndarray:
    """True for each column (of days x sets) whose P&L is not the same every day."""
    return ~np.all(x == x[:1], axis=0)


def standardised(x: np.ndarray) -> np.ndarray:
    """Columns (each one varying) centred and scaled to unit length: ``Z.T @ Z`` of them is
    their Pearson correlation matrix. Column by column, so chunks of a sweep can do it apart."""
    z = x - x.mean(axis=0)
    z /= np.sqrt(np.einsum("ij,ij->j", z, z))
    return z


def effective_from_sample(sample: np.ndarray, *, n_sets: int,
                          n_varying: int) -> EffectiveTrials:
    """The effective number of ``n_sets`` trials (``n_varying`` of them varying) from the daily
    net P&L of the columns :func:`sample_columns` picked (all columns when it picked none)."""
    moving = sample[:, varies(sample)]
    return effective_from_standardised(standardised(moving), n_sets=n_sets,
                                       n_varying=n_varying,
                                       sampled=sample.shape[1] != n_sets)


def effective_from_standardised(z: np.ndarray, *, n_sets: int, n_varying: int,
                                sampled: bool) -> EffectiveTrials:
    """The effective number of ``n_sets`` trials from the :func:`standardised` varying columns
    of the sample (``sampled``: a sample of the columns, not all of them)."""
    if z.shape[1] == 0:
        count = float(n_varying)  # nothing to correlate: every varying set counts
    else:
        corr = z.T @ z
        np.fill_diagonal(corr, 1.0)
        count = li_ji_count(corr)
        if sampled:
            count *= n_varying / z.shape[1]
    effective = min(max(count + (n_sets - n_varying), 1.0), float(n_sets))
    return EffectiveTrials(raw=n_sets, effective=effective, method=METHOD,
                           sampled=z.shape[1] if sampled else None)
