"""Input checks of the statistics functions: clean float arrays, or a clear error."""

from __future__ import annotations

import math

import numpy as np

from hunchbook.core.errors import HunchbookError


def as_series(values: object, name: str) -> np.ndarray:
    """Return ``values`` as a 1-D float array of finite numbers, or raise a clear error."""
    try:
        x = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise HunchbookError(f"{name}: expected a sequence of numbers ({exc})") from None
    if x.ndim != 1:
        raise HunchbookError(f"{name}: expected a one-dimensional series, got shape {x.shape}")
    if not np.all(np.isfinite(x)):
        raise HunchbookError(f"{name}: contains NaN or infinite values at positions "
                             f"{np.flatnonzero(~np.isfinite(x))[:5].tolist()}")
    return x


def as_matrix(values: object, name: str) -> np.ndarray:
    """Return ``values`` as a finite (days x sets) float array; a 1-D array is one set."""
    try:
        x = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise HunchbookError(f"{name}: expected a days x sets array of numbers ({exc})") from None
    if x.ndim == 1:
        x = x[:, None]
    if x.ndim != 2 or x.shape[0] == 0 or x.shape[1] == 0:
        raise HunchbookError(f"{name}: expected a non-empty days x sets array, got shape {x.shape}")
    if not np.all(np.isfinite(x)):
        rows, cols = np.nonzero(~np.isfinite(x))
        raise HunchbookError(f"{name}: contains NaN or infinite values (day {rows[0]}, "
                             f"set {cols[0]} is the first)")
    return x


def as_number(value: object, name: str) -> float:
    """Return ``value`` as a float (NaN allowed: it propagates as 'undefined'), or fail clearly."""
    if isinstance(value, bool):
        raise HunchbookError(f"{name}: expected a number, got {value!r}")
    try:
        return float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise HunchbookError(f"{name}: expected a number, got {value!r}") from None


def as_count(value: object, name: str, minimum: int = 1) -> int:
    """Return ``value`` as an int of at least ``minimum``, or fail clearly."""
    if isinstance(value, bool) or not isinstance(value, (int, np.integer, float)):
        raise HunchbookError(f"{name}: expected a whole number, got {value!r}")
    if isinstance(value, float) and not (math.isfinite(value) and value.is_integer()):
        raise HunchbookError(f"{name}: expected a whole number, got {value!r}")
    count = int(value)
    if count < minimum:
        raise HunchbookError(f"{name}: expected at least {minimum}, got {count}")
    return count
