"""Parameter stability on a sweep grid: is the best set on a plateau or an isolated spike?

A grid of parameter sets is given as a flat array in C order (last parameter fastest, as
``numpy.ravel``) together with its shape. Cells without a value (sets removed by a constraint, or
undefined results) are NaN. The neighbours of a cell are the cells one step away along exactly one
parameter (up to two per parameter), among those that exist and are not NaN.
"""

from __future__ import annotations

import math

import numpy as np

from hunchbook.core.errors import HunchbookError

#: Default: a spike stands more than this many grid standard deviations above its neighbours.
SPIKE_SPREAD_MULTIPLE = 2.0
#: Default: a spike's neighbours average less than this fraction of its (positive) value.
SPIKE_MIN_RATIO = 0.5


def neighbour_means(values: np.ndarray, shape: tuple[int, ...]) -> np.ndarray:
    """Mean of each cell's non-NaN neighbours (one step along one parameter); NaN if it has none.

    Returns a flat array of the same length as ``values``.
    """
    sums, counts = _neighbour_sums(values, shape)
    means = np.full(sums.shape, np.nan)
    np.divide(sums, counts, out=means, where=counts > 0)
    return means


def neighbour_counts(values: np.ndarray, shape: tuple[int, ...]) -> np.ndarray:
    """Number of non-NaN neighbours of each cell (flat array)."""
    return _neighbour_sums(values, shape)[1]


def stability_flag(values: np.ndarray, shape: tuple[int, ...], best_index: int, *,
                   spread_multiple: float = SPIKE_SPREAD_MULTIPLE,
                   min_ratio: float = SPIKE_MIN_RATIO) -> bool:
    """Whether the cell ``best_index`` is an isolated spike.

    With ``b`` its value, ``m`` the mean of its neighbours and ``s`` the standard deviation
    (ddof 0) of all non-NaN cells, the cell is a spike when it has at least one neighbour and

        ``b - m > spread_multiple * s``   or   (``b > 0`` and ``m < min_ratio * b``).

    A cell without neighbours, or with a NaN value, is not flagged (there is nothing to compare).
    The rule is a house convention (no published source): a robust optimum should sit on a plateau
    where small parameter changes keep most of the result.
    """
    flat = _flat(values, shape)
    if isinstance(best_index, bool) or not isinstance(best_index, (int, np.integer)) \
            or not 0 <= best_index < flat.size:
        raise HunchbookError(f"best cell: expected a cell number in 0..{flat.size - 1}, "
                             f"got {best_index!r}")
    best = flat[best_index]
    sums, counts = _neighbour_sums(flat, shape)
    if math.isnan(best) or counts[best_index] == 0:
        return False
    neighbour_mean = sums[best_index] / counts[best_index]
    spread = float(np.nanstd(flat))
    return bool(best - neighbour_mean > spread_multiple * spread
                or (best > 0 and neighbour_mean < min_ratio * best))


def _flat(values: np.ndarray, shape: tuple[int, ...]) -> np.ndarray:
    try:
        dims = tuple(int(d) for d in shape)
        flat = np.asarray(values, dtype=float).ravel()
    except (TypeError, ValueError):
        raise HunchbookError(f"grid: expected numeric values and a shape of whole numbers, "
                             f"got shape {shape!r}") from None
    if not dims or min(dims) < 1 or math.prod(dims) != flat.size:
        raise HunchbookError(f"grid: shape {dims} does not hold {flat.size} values")
    return flat


def _neighbour_sums(values: np.ndarray, shape: tuple[int, ...]) -> tuple[np.ndarray, np.ndarray]:
    """Sum and count of the non-NaN axis neighbours of every cell (flat arrays)."""
    flat = _flat(values, shape)
    grid = flat.reshape(tuple(int(d) for d in shape))
    present = ~np.isnan(grid)
    filled = np.where(present, grid, 0.0)
    sums = np.zeros(grid.shape)
    counts = np.zeros(grid.shape, dtype=np.int64)
    for axis in range(grid.ndim):
        if grid.shape[axis] < 2:
            continue
        lo = [slice(None)] * grid.ndim
        hi = [slice(None)] * grid.ndim
        lo[axis] = slice(0, -1)
        hi[axis] = slice(1, None)
        lo_t, hi_t = tuple(lo), tuple(hi)
        sums[lo_t] += filled[hi_t]
        counts[lo_t] += present[hi_t]
        sums[hi_t] += filled[lo_t]
        counts[hi_t] += present[lo_t]
    return sums.ravel(), counts.ravel()
