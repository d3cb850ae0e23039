"""The SPA test as it was computed before the block plan: a dense count-weight matrix per group of
replications times the P&L matrix, and the long-run variance by FFT. Kept as the reference the
chunked test must reproduce (test helper, not project code).

Hansen, P. R. (2005), "A Test for Superior Predictive Ability", JBES 23(4): statistic
``max_k d_k / s_k``, recentrings lower / consistent / upper, ``p = P(max T* >= T)``.
Politis, D. N. & Romano, J. P. (1994), "The Stationary Bootstrap", JASA 89(428): the resampling
scheme and the long-run variance ``gamma_0 + 2 sum_i k_i gamma_i``.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import fft


def fft_long_run_variance(x: np.ndarray, p: float) -> np.ndarray:
    """Politis-Romano variance of each column: all T - 1 autocovariances by FFT (scipy.fft)."""
    n_obs = x.shape[0]
    e = x - x.mean(axis=0)
    lag = np.arange(1, n_obs)
    kappa = (1.0 - lag / n_obs) * (1.0 - p) ** lag + (lag / n_obs) * (1.0 - p) ** (n_obs - lag)
    size = fft.next_fast_len(2 * n_obs, real=True)
    padded = np.zeros((x.shape[1], size))
    padded[:, :n_obs] = e.T
    spectrum = fft.rfft(padded, axis=1)
    autocov = fft.irfft(spectrum * spectrum.conj(), n=size, axis=1)[:, :n_obs]
    return (autocov[:, 0] + 2.0 * autocov[:, 1:] @ kappa) / n_obs


def bootstrap_indices(n_obs: int, reps: int, p: float, seed: int) -> np.ndarray:
    """(reps, T) resampled days, drawn as arch.bootstrap.StationaryBootstrap draws them."""
    rng = np.random.default_rng(seed)
    days = np.arange(n_obs)
    starts = np.empty((reps, n_obs), dtype=np.int64)
    uniforms = np.empty((reps, n_obs))
    for r in range(reps):
        starts[r] = rng.integers(n_obs, size=n_obs, dtype=np.int64)
        uniforms[r] = rng.random(n_obs)
    new_block = uniforms <= p
    new_block[:, 0] = True
    block_start = np.maximum.accumulate(np.where(new_block, days, 0), axis=1)
    idx = np.take_along_axis(starts, block_start, axis=1) + (days - block_start)
    idx[idx >= n_obs] -= n_obs
    return idx


def dense_spa(x: np.ndarray, reps: int, block_size: float, seed: int,
              studentize: str) -> dict:
    """p-values, statistic and best set of the SPA test by count weights ``W @ X / T``."""
    n_obs, n_sets = x.shape
    p = 1.0 / block_size
    means = x.mean(axis=0)
    std_err = np.sqrt(np.maximum(fft_long_run_variance(x, p), 0.0) / n_obs)
    threshold = -std_err * math.sqrt(max(2.0 * math.log(math.log(n_obs)), 0.0))
    if studentize == "none":
        scale = np.ones(n_sets)
    else:
        err = std_err if studentize == "long_run" else x.std(axis=0) / math.sqrt(n_obs)
        scale = np.where(err > 0, err, np.inf)
    recentre = np.stack([np.maximum(means, 0.0), np.where(means >= threshold, means, 0.0), means])
    observed = means / scale
    statistic = float(observed.max())
    idx = bootstrap_indices(n_obs, reps, p, seed)
    flat = (idx + n_obs * np.arange(reps)[:, None]).ravel()
    counts = np.bincount(flat, minlength=reps * n_obs).reshape(reps, n_obs).astype(float)
    boot_means = counts @ x / n_obs
    exceed = [np.count_nonzero(((boot_means - recentre[j]) / scale).max(axis=1) >= statistic)
              for j in range(3)]
    return {"lower": exceed[0] / reps, "consistent": exceed[1] / reps,
            "upper": exceed[2] / reps, "statistic": statistic,
            "best_set": int(np.argmax(observed))}
