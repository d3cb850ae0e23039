"""Window functions of the expression language against pandas (reference library)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from numpy.lib.stride_tricks import sliding_window_view

from hunchbook.core.expr import parse_expression

SERIES = {"close", "open", "high", "low", "volume"}
BARS = 300
WINDOWS = [2, 5, 20, 64, 100, 299, 300, 301]


def _prices(seed: int = 7, flat: bool = True) -> np.ndarray:
    """Random-walk prices in 4 columns: a late start (NaN at the top), NaN padding at the
    bottom, a gap inside one column and (with ``flat``) a stretch of equal prices."""
    rng = np.random.default_rng(seed)
    x = 100.0 + np.cumsum(rng.normal(size=(BARS, 4)), axis=0)
    x[:9, 1] = np.nan
    x[-40:, 2] = np.nan
    x[150:153, 3] = np.nan
    if flat:
        x[200:230, 0] = 101.25
    return x


def _sample_std(x: np.ndarray, n: int) -> np.ndarray:
    """Two-pass sample standard deviation of each window with numpy (NaN in a window -> NaN)."""
    out = np.full_like(x, np.nan)
    if n <= x.shape[0]:
        out[n - 1:] = sliding_window_view(x, n, axis=0).std(axis=-1, ddof=1)
    return out


def _evaluate(text: str, x: np.ndarray) -> np.ndarray:
    result = parse_expression(text, series_names=SERIES, param_names=()).evaluate(
        {"close": x}, {})
    assert isinstance(result, np.ndarray)
    return result


def _check(got: np.ndarray, expected: pd.DataFrame, atol: float = 0.0) -> None:
    want = expected.to_numpy(dtype=float, copy=True)
    want[~np.isfinite(want)] = np.nan  # the language turns infinities into NaN (its rule)
    np.testing.assert_allclose(got, want, rtol=1e-9, atol=atol, equal_nan=True)


@pytest.mark.parametrize("n", [1, *WINDOWS])
@pytest.mark.parametrize(("name", "reference"), [
    ("mean", lambda df, n: df.rolling(n).mean()),
    ("sum", lambda df, n: df.rolling(n).sum()),
    ("max", lambda df, n: df.rolling(n).max()),
    ("min", lambda df, n: df.rolling(n).min()),
])
def test_simple_windows_match_pandas_rolling(name, reference, n) -> None:
    # Source: pandas DataFrame.rolling(n) with its default min_periods = n (reference library).
    x = _prices()
    _check(_evaluate(f"{name}(close, {n})", x), reference(pd.DataFrame(x), n))


@pytest.mark.parametrize("n", WINDOWS)
def test_std_matches_pandas_rolling_std(n) -> None:
    # Source: pandas rolling(n).std(), sample standard deviation with ddof=1 (reference library).
    x = _prices(flat=False)
    _check(_evaluate(f"std(close, {n})", x), pd.DataFrame(x).rolling(n).std())


@pytest.mark.parametrize("n", WINDOWS)
def test_std_matches_numpy_two_pass_std(n) -> None:
    # Source: numpy std(ddof=1) of each window, a two-pass computation (reference library).
    # Unlike pandas' running update it is exact to rounding over the stretch of equal prices.
    x = _prices()
    np.testing.assert_allclose(_evaluate(f"std(close, {n})", x), _sample_std(x, n),
                               rtol=1e-9, atol=0, equal_nan=True)


def test_std_is_exactly_zero_over_equal_prices() -> None:
    # Source: definition - a window of equal values has no spread.
    x = _prices()
    assert (_evaluate("std(close, 10)", x)[210:230, 0] == 0.0).all()
    assert (_evaluate("std(close, 20)", x)[220:230, 0] == 0.0).all()


def test_std_of_small_moves_on_a_high_level_matches_numpy() -> None:
    # Source: numpy two-pass std(ddof=1) per window (reference library); prices near 10,000
    # moving about 0.001 per bar stress the cancellation of sum-of-squares formulas.
    rng = np.random.default_rng(3)
    x = 10_000.0 + np.cumsum(rng.normal(scale=1e-3, size=(BARS, 3)), axis=0)
    for n in (2, 3, 20, 150):
        np.testing.assert_allclose(_evaluate(f"std(close, {n})", x), _sample_std(x, n),
                                   rtol=1e-9, atol=0, equal_nan=True)


@pytest.mark.parametrize("n", [2, 5, 20, 100])
def test_zscore_matches_pandas(n) -> None:
    # Source: (x - rolling(n).mean()) / rolling(n).std() computed with pandas.
    x = _prices(flat=False)
    rolling = pd.DataFrame(x).rolling(n)
    _check(_evaluate(f"zscore(close, {n})", x),
           (pd.DataFrame(x) - rolling.mean()) / rolling.std())


@pytest.mark.parametrize("n", [1, 2, 5, 20, 64, 299, 300, 301])
def test_ewm_matches_pandas_ewm(n) -> None:
    # Source: pandas ewm(span=n, adjust=False, min_periods=n).mean() (reference library),
    # including the carried-forward value through a gap and the bottom padding.
    x = _prices()
    expected = pd.DataFrame(x).ewm(span=n, adjust=False, min_periods=n).mean()
    _check(_evaluate(f"ewm(close, {n})", x), expected)


def test_ewm_with_span_3_matches_pandas_without_gaps() -> None:
    # Source: pandas ewm(span=3, adjust=False, min_periods=3).mean() on columns without inner
    # gaps (pandas applies a time-decay special case after gaps when span = 3).
    x = _prices()[:, :3]
    expected = pd.DataFrame(x).ewm(span=3, adjust=False, min_periods=3).mean()
    _check(_evaluate("ewm(close, 3)", x), expected)


def test_ewm_weights_across_a_missing_bar_follow_the_pandas_documentation() -> None:
    # Source: pandas documentation of DataFrame.ewm, ignore_na=False: with adjust=False the
    # weights of x0 and x2 in [x0, None, x2] are (1 - alpha)**2 and alpha.
    alpha = 2.0 / (2 + 1)
    x0, x2 = 4.0, 10.0
    got = _evaluate("ewm(close, 2)", np.array([x0, np.nan, x2]))
    expected = ((1 - alpha) ** 2 * x0 + alpha * x2) / ((1 - alpha) ** 2 + alpha)
    # min_periods = 2 leaves the first two bars undefined (one observation only).
    np.testing.assert_allclose(got, [np.nan, np.nan, expected], rtol=1e-12, equal_nan=True)


@pytest.mark.parametrize("k", [0, 1, 5, 299, 300, 301])
def test_lag_and_diff_match_pandas_shift(k) -> None:
    # Source: pandas DataFrame.shift(k) and x - x.shift(k) (reference library).
    x = _prices()
    df = pd.DataFrame(x)
    _check(_evaluate(f"lag(close, {k})", x), df.shift(k))
    _check(_evaluate(f"diff(close, {k})", x), df - df.shift(k))


def test_nested_windows_match_pandas() -> None:
    # Source: pandas, the same computations chained; atol covers rounding of a mean of price
    # changes that is close to zero (its relative error is not meaningful there).
    x = _prices()
    df = pd.DataFrame(x)
    _check(_evaluate("mean(diff(close, 1), 10)", x), df.diff(1).rolling(10).mean(), atol=1e-12)
    _check(_evaluate("max(lag(close, 3), 20) - min(close, 20)", x),
           df.shift(3).rolling(20).max() - df.rolling(20).min())
    smooth = _prices(flat=False)
    _check(_evaluate("ewm(std(close, 10), 5)", smooth),
           pd.DataFrame(smooth).rolling(10).std().ewm(span=5, adjust=False, min_periods=5).mean())


def test_one_dimensional_series_match_pandas_series() -> None:
    # Source: pandas Series.rolling(n).mean() (reference library).
    x = _prices()[:, 1]
    _check(_evaluate("mean(close, 12)", x), pd.Series(x).rolling(12).mean().to_frame()[0])


def test_window_longer_than_the_data_is_all_missing() -> None:
    # Source: pandas rolling(n).mean() with n > number of rows gives only NaN.
    x = _prices()[:50]
    assert pd.DataFrame(x).rolling(100_000).mean().isna().all().all()
    assert np.isnan(_evaluate("mean(close, 100000)", x)).all()
