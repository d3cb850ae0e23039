"""Operators, element-wise functions, scalars, shared sub-results and look-back of expressions."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from hunchbook.core.errors import RuleError
from hunchbook.core.expr import parse_expression

SERIES = {"close", "open", "high", "low", "volume"}
PARAMS = {"fast", "slow", "k"}


def _data(seed: int = 11) -> dict[str, np.ndarray]:
    """Random positive prices with NaN at the top of one column and bottom padding of another."""
    rng = np.random.default_rng(seed)
    close = 50.0 + np.cumsum(rng.normal(size=(120, 3)), axis=0)
    open_ = close + rng.normal(scale=0.5, size=close.shape)
    close[:4, 0] = np.nan
    open_[-10:, 2] = np.nan
    return {"close": close, "open": open_}


def _run(text: str, data: dict[str, np.ndarray] | None = None, **params: float):
    expression = parse_expression(text, series_names=SERIES, param_names=PARAMS)
    return expression.evaluate(data if data is not None else _data(), params)


def _same(got, expected) -> None:
    np.testing.assert_allclose(got, expected, rtol=1e-12, atol=0, equal_nan=True)


def _numpy_truth(values: np.ndarray, *operands: np.ndarray) -> np.ndarray:
    """1.0/0.0 from a boolean array, NaN where an operand is NaN (the language's rule)."""
    out = values.astype(float)
    for operand in operands:
        out[np.isnan(operand)] = np.nan
    return out


def test_arithmetic_matches_numpy() -> None:
    # Source: the same formula in numpy (reference library); NaN propagates as in IEEE 754.
    d = _data()
    c, o = d["close"], d["open"]
    _same(_run("close + open * 2 - close / open", d), c + o * 2 - c / o)
    _same(_run("(close - open) ** 2 % 3", d), np.mod((c - o) ** 2, 3))
    _same(_run("-close + +open", d), -c + o)
    _same(_run("close * fast - slow", d, fast=2.5, slow=4), c * 2.5 - 4)


def test_division_by_zero_and_overflow_give_nan() -> None:
    # Source: numpy gives inf / nan for x / 0 and overflow (IEEE 754); the language documents
    # that infinite results become NaN.
    d = _data()
    with np.errstate(all="ignore"):
        raw = d["close"] / (d["close"] - d["close"])
    assert np.isinf(raw[10:]).all() or np.isnan(raw[10:]).all()
    assert np.isnan(_run("close / (close - close)", d)).all()
    assert np.isnan(_run("close * 1e308 * 10", d)[5:, 1]).all()
    assert np.isnan(_run("log(close - close)", d)).all()


def test_comparisons_match_numpy_with_nan_propagation() -> None:
    # Source: numpy comparison operators (reference library), NaN where an operand is NaN.
    d = _data()
    c, o = d["close"], d["open"]
    for symbol, op in [("<", np.less), ("<=", np.less_equal), (">", np.greater),
                       (">=", np.greater_equal), ("==", np.equal), ("!=", np.not_equal)]:
        _same(_run(f"close {symbol} open", d), _numpy_truth(op(c, o), c, o))
    _same(_run("open < close < open + 1", d),
          _numpy_truth((o < c) & (c < o + 1), c, o))


def test_logic_matches_numpy() -> None:
    # Source: numpy logical_and / logical_or / logical_not on (x != 0) (reference library).
    d = _data()
    a, b = d["close"] > 50, d["open"] > 50
    nan_mask = np.isnan(d["close"]) | np.isnan(d["open"])
    for text, expected in [("close > 50 and open > 50", a & b),
                           ("close > 50 or open > 50", a | b)]:
        want = expected.astype(float)
        want[nan_mask] = np.nan
        _same(_run(text, d), want)
    _same(_run("not close > 50", d), _numpy_truth(~a, d["close"]))
    _same(_run("not (close - close)", d), _numpy_truth(np.ones_like(a), d["close"]))


def test_conditional_matches_numpy_where() -> None:
    # Source: numpy.where (reference library); NaN where the condition is NaN.
    d = _data()
    c, o = d["close"], d["open"]
    want = np.where(c > o, 1.0, np.where(c < o, -1.0, 0.0))
    want[np.isnan(c) | np.isnan(o)] = np.nan
    _same(_run("1 if close > open else (-1 if close < open else 0)", d), want)
    _same(_run("close if close - close else open", d), np.where(np.isnan(c), np.nan, o))


def test_breakout_example_matches_pandas() -> None:
    # Source: pandas rolling max/min and shift (reference library) for the channel breakout.
    d = _data()
    close = pd.DataFrame(d["close"])
    high = close.shift(1).rolling(50).max().to_numpy()
    low = close.shift(1).rolling(50).min().to_numpy()
    c = d["close"]
    want = np.where(c > high, 1.0, np.where(c < low, -1.0, 0.0))
    want[np.isnan(c) | np.isnan(high)] = np.nan
    got = _run("1 if close > max(lag(close, 1), 50) else "
               "(-1 if close < min(lag(close, 1), 50) else 0)", d)
    _same(got, want)


def test_element_wise_functions_match_numpy() -> None:
    # Source: numpy sign, abs, clip, log, sqrt, maximum, minimum (reference library).
    d = _data()
    c, o = d["close"], d["open"]
    _same(_run("sign(close - open)", d), np.sign(c - o))
    _same(_run("abs(close - open)", d), np.abs(c - o))
    _same(_run("clip(close - open, -0.5, 0.25)", d), np.clip(c - o, -0.5, 0.25))
    _same(_run("log(close)", d), np.log(c))
    _same(_run("sqrt(close)", d), np.sqrt(c))
    _same(_run("maximum(close, open)", d), np.maximum(c, o))
    _same(_run("minimum(close, 50)", d), np.minimum(c, 50))
    with np.errstate(invalid="ignore"):
        assert np.isnan(np.sqrt(-c[5:])).all()
    assert np.isnan(_run("sqrt(-close)", d)).all()


def test_zscore_example_matches_pandas() -> None:
    # Source: pandas rolling mean/std and numpy clip (reference libraries).
    d = _data()
    close = pd.DataFrame(d["close"])
    z = ((close - close.rolling(10).mean()) / close.rolling(10).std()).to_numpy()
    np.testing.assert_allclose(_run("clip(zscore(close, n) * -1, -2, 2)".replace("n", "k"), d,
                                    k=10),
                               np.clip(-z, -2, 2), rtol=1e-9, equal_nan=True)


def test_scalar_only_expressions_give_floats() -> None:
    # Source: ordinary arithmetic (common practice, no source); a true comparison is 1.0.
    assert _run("fast < slow", fast=10, slow=50) == 1.0
    assert _run("fast < slow", fast=60, slow=50) == 0.0
    assert _run("2 * fast + 1", fast=20) == 41.0
    assert isinstance(_run("2 * fast + 1", fast=20), float)
    assert np.isnan(_run("fast / 0", fast=1))
    assert np.isnan(_run("(fast - fast) < 1 and 0 / 0", fast=1))
    assert _run("fast % 3 == 1 or slow > 100", fast=7, slow=1) == 1.0
    assert _run("2 ** -1") == 0.5


def test_series_free_branch_still_gives_an_array() -> None:
    # Source: numpy.full (reference library) - a constant position on every bar.
    d = _data()
    got = _run("1 if fast < slow else close", d, fast=1, slow=2)
    _same(got, np.full(d["close"].shape, 1.0))
    _same(_run("1 if fast < slow else close", d, fast=3, slow=2), d["close"])


def test_infinite_inputs_count_as_missing() -> None:
    # Source: the documented input rule - infinite values count as missing (NaN).
    d = _data()
    d["close"][20, 1] = np.inf
    got = _run("mean(close, 3)", d)
    assert np.isnan(got[20:23, 1]).all()
    assert not np.isnan(got[23, 1])


def test_result_never_aliases_inputs() -> None:
    # Source: common practice, no source - callers may modify the result they receive.
    d = _data()
    got = _run("close", d)
    got[:] = 0.0
    assert not (d["close"] == 0.0).any()


def test_shared_sub_results_are_computed_once() -> None:
    # Source: pandas rolling(20).mean() (reference library) for the shared value.
    d = _data()
    cache: dict = {}
    by_param = parse_expression("mean(close, fast) - close", series_names=SERIES,
                                param_names=PARAMS)
    literal = parse_expression("sign(mean(close, 20))", series_names=SERIES, param_names=PARAMS)
    first = by_param.evaluate(d, {"fast": 20}, cache)
    assert len(cache) == 1
    literal.evaluate(d, {}, cache)
    assert len(cache) == 1
    (shared,) = cache.values()
    np.testing.assert_allclose(shared, pd.DataFrame(d["close"]).rolling(20).mean(), rtol=1e-9,
                               equal_nan=True)
    # The cache is really consulted: a stored value replaced by zeros shows in the result.
    (key,) = cache
    cache[key] = np.zeros_like(shared)
    _same(by_param.evaluate(d, {"fast": 20}, cache), -d["close"])
    _same(first, shared - d["close"])
    by_param.evaluate(d, {"fast": 30}, cache)
    assert len(cache) == 2


@pytest.mark.parametrize(("text", "params", "expected"), [
    ("close", {}, 0),
    ("mean(close, 20)", {}, 19),
    ("mean(lag(close, 5), 20)", {}, 24),
    ("sign(mean(close, fast) - mean(close, slow))", {"fast": 20, "slow": 100}, 99),
    ("diff(ewm(close, 10), 3) + std(close, 2)", {}, 12),
    ("zscore(max(close, 4), 2 * k)", {"k": 5}, 12),
])
def test_max_lookback_is_the_first_defined_bar(text, params, expected) -> None:
    # Source: the evaluated result itself on gap-free data (first non-NaN row) and the
    # definition of a window of n bars (n - 1 earlier bars needed) - hand count in `expected`.
    rng = np.random.default_rng(2)
    close = 100 + np.cumsum(rng.normal(size=(300, 2)), axis=0)
    expression = parse_expression(text, series_names=SERIES, param_names=PARAMS)
    values = expression.evaluate({"close": close}, params)
    first_defined = int(np.argmax(~np.isnan(values[:, 0])))
    assert expression.max_lookback(params) == expected == first_defined


def test_window_from_parameters_is_checked_at_evaluation() -> None:
    # Source: the language rule - windows are whole numbers of bars from 1 to 100000.
    expression = parse_expression("close - mean(close, 2 * fast)", series_names=SERIES,
                                  param_names=PARAMS)
    with pytest.raises(RuleError) as error:
        expression.evaluate(_data(), {"fast": 1.25})
    assert error.value.column == 21
    assert "window of mean() must be a whole number of bars between 1 and 100000, got 2.5" in (
        error.value.problem)
    with pytest.raises(RuleError, match="got 0"):
        expression.evaluate(_data(), {"fast": 0})
    with pytest.raises(RuleError, match="got 200000"):
        expression.max_lookback({"fast": 100_000})
    with pytest.raises(RuleError, match="lag of lag"):
        parse_expression("lag(close, k)", series_names=SERIES, param_names=PARAMS).evaluate(
            _data(), {"k": -1})


def test_missing_parameter_or_series_is_a_rule_error() -> None:
    # Source: the language rule - every name an expression uses needs a value.
    expression = parse_expression("mean(volume, fast)", series_names=SERIES, param_names=PARAMS)
    with pytest.raises(RuleError, match="parameter 'fast'") as error:
        expression.evaluate(_data(), {})
    assert error.value.column == 14
    with pytest.raises(RuleError, match="series 'volume'"):
        expression.evaluate(_data(), {"fast": 3})
    with pytest.raises(RuleError, match="must be a number"):
        expression.evaluate(_data(), {"fast": "three"})


def test_window_of_a_branch_that_folds_to_a_constant() -> None:
    # Source: pandas rolling(3).mean() / ewm / shift of a constant column (reference library):
    # the constant appears once the window is full.
    d = _data()
    constant = pd.DataFrame(np.full(d["close"].shape, 2.0))
    for text, expected in [
        ("mean(2 if fast < slow else close, 3)", constant.rolling(3).mean()),
        ("ewm(2 if fast < slow else close, 3)",
         constant.ewm(span=3, adjust=False, min_periods=3).mean()),
        ("lag(2 if fast < slow else close, 3)", constant.shift(3)),
    ]:
        _same(_run(text, d, fast=1, slow=2), expected.to_numpy())
