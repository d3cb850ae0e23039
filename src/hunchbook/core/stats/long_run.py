"""Long-run variance of the stationary bootstrap (Politis & Romano 1994), in O(T) per series.

The variance of the mean of a stationary-bootstrap resample of ``T`` days with restart
probability ``p`` is ``w^2 / T`` with::

    w^2 = gamma_0 + 2 sum_{i=1}^{T-1} k_i gamma_i,
    k_i = (1 - i/T) q^i + (i/T) q^(T-i),   q = 1 - p,   gamma_i = sum_t e_t e_(t+i) / T

(Politis, D. N. & Romano, J. P. (1994), "The Stationary Bootstrap", JASA 89(428); the kernel
of Hansen 2005 and of ``arch``). Written as sums over pairs of days ``t < s`` (lag ``s - t``)::

    T w^2 = sum_t e_t^2 + 2 [ sum_s e_s (q F1_(s-1) - q F2_(s-1) / T)          (near lags)
                              + sum_s e_s q^(T-s) U_(s-1) / T ]                  (wrap-round)

where ``F1 = G(e)`` and ``F2 = G(F1)`` for the geometric filter ``G(x)_v = sum_(t<=v) q^(v-t)
x_t`` (so ``q F1_(s-1) = sum_(t<s) q^(s-t) e_t`` and ``q F2_(s-1) = sum_(t<s) (s-t) q^(s-t)
e_t``), and ``U_(s-1) = sum_(t<s) (s-t) q^t e_t`` is a double cumulative sum. Every weight is at
most 1 except inside the filter, which scales by ``q^-j`` over runs short enough that it stays
below ``2**500``, so nothing overflows. No FFT, and no scipy.
"""

from __future__ import annotations

import math

import numpy as np

#: Sets whose long-run variance is computed together (a (sets, T) tile that stays in cache).
TILE_SETS = 16
#: Largest scaling ``q**-j`` inside the geometric filter (a power of two, far from overflow).
_SCALE_BITS = 500


def long_run_variance(e: np.ndarray, p: float, squares: np.ndarray) -> np.ndarray:
    """Politis-Romano long-run variance ``w^2`` of each column of the centred (T, K) ``e``.

    Parameters
    ----------
    e : (T, K) daily values minus their column means.
    p : restart probability of the stationary bootstrap (1 / mean block length), in (0, 1].
    squares : (K,) column sums of ``e ** 2`` (``T gamma_0``), as computed by the caller.

    Returns
    -------
    (K,) array of ``w^2``; each column's value depends on that column alone.
    """
    n_obs, n_sets = e.shape
    q = 1.0 - p
    cross = np.zeros(n_sets)
    if q > 0.0:
        steps = max(1, min(n_obs, math.floor(_SCALE_BITS / -math.log2(q))))
        powers = np.arange(steps, dtype=float)
        up, down = q ** -powers, q ** powers
        days = np.arange(n_obs, dtype=float)
        head, tail = q ** days, q ** (n_obs - days[1:])
        for first in range(0, n_sets, TILE_SETS):
            tile = np.ascontiguousarray(e[:, first:first + TILE_SETS].T)
            cross[first:first + tile.shape[0]] = _cross_sums(tile, q, up, down, head, tail)
    return (squares + 2.0 * cross) / n_obs


def _cross_sums(et: np.ndarray, q: float, up: np.ndarray, down: np.ndarray, head: np.ndarray,
                tail: np.ndarray) -> np.ndarray:
    """``sum_i k_i sum_t e_t e_(t+i)`` of each row of the (sets, T) tile ``et``."""
    n_obs = et.shape[1]
    f1 = _geometric_filter(et, q, up, down)
    f2 = _geometric_filter(f1, q, up, down)
    later = et[:, 1:]
    near = q * (_row_dot(later, f1[:, :-1]) - _row_dot(later, f2[:, :-1]) / n_obs)
    u = et * head
    np.cumsum(u, axis=1, out=u)
    np.cumsum(u, axis=1, out=u)
    wrap = _row_dot(later * tail, u[:, :-1]) / n_obs
    return near + wrap


def _geometric_filter(x: np.ndarray, q: float, up: np.ndarray, down: np.ndarray) -> np.ndarray:
    """``y_t = x_t + q y_(t-1)`` along each row: scaled cumulative sums over runs of days."""
    n_obs = x.shape[1]
    steps = up.shape[0]
    y = np.empty_like(x)
    for first in range(0, n_obs, steps):
        run = y[:, first:first + steps]
        width = run.shape[1]
        np.multiply(x[:, first:first + width], up[:width], out=run)
        np.cumsum(run, axis=1, out=run)
        run *= down[:width]
        if first:
            run += y[:, first - 1:first] * (q * down[:width])
    return y


def _row_dot(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Row-wise dot products, summed in an order fixed by the row alone (no BLAS)."""
    return np.add.reduce(a * b, axis=1)
