"""Fuzzing of the grammar widened by the functions across markets and the holding rules: only
RuleError may ever escape, results keep the series' shape and are finite or NaN, and the cache
of shared sub-results never changes a result.

Source: common practice, no source - a parser of untrusted text must fail cleanly on any input,
and nothing in it is ever executed (it is parsed by ast and evaluated with numpy).
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from hunchbook.core.errors import RuleError
from hunchbook.core.expr import Expression, parse_expression

SERIES = {"close", "volume"}
PARAMS = {"fast", "slow"}
NEW = ["cs_rank", "cs_demean", "cs_zscore", "cs_top", "cs_bottom", "hold", "latch",
       "bars_since", "stop"]
TOKENS = [*NEW, *NEW, "close", "volume", "fast", "slow", "open", "mean", "lag", "sign", "(",
          ")", "(", ")", ",", ", ", " ", "+", "-", "*", "/", "<", ">", " and ", " not ",
          " if ", " else ", "0", "1", "2", "2.5", "-1", "100001", "[", "]", "'a'", "."]
_FUZZ = settings(max_examples=300, deadline=None)


def _data(seed: int) -> tuple[dict[str, np.ndarray], np.ndarray]:
    """Three markets on their own calendars, padded at the bottom, with their date index."""
    rng = np.random.default_rng(seed)
    close = 100.0 + np.cumsum(rng.normal(size=(40, 3)), axis=0)
    date_index = np.tile(np.arange(40)[:, None], (1, 3))
    date_index[:, 1] = np.arange(40) * 2  # 20 bars spread over 40 dates, then padding
    date_index[20:, 1] = -1
    close[20:, 1] = np.nan
    date_index[30:, 2] = -1  # 30 bars, then padding
    close[30:, 2] = np.nan
    return {"close": close, "volume": np.abs(close) * 10}, date_index


def _parse_or_none(text: str) -> Expression | None:
    try:
        return parse_expression(text, series_names=SERIES, param_names=PARAMS)
    except RuleError:
        return None


def _check(expression: Expression, params: dict[str, float], seed: int) -> None:
    series, date_index = _data(seed)
    try:
        value = expression.evaluate(series, params, date_index=date_index)
        expression.max_lookback(params)
    except RuleError:
        return
    if not expression.series_used():
        assert isinstance(value, float)
        return
    assert isinstance(value, np.ndarray) and value.shape == (40, 3)
    assert not np.isinf(value).any()
    cache: dict = {}
    for _ in range(2):  # filled, then read from
        again = expression.evaluate(series, params, cache, date_index=date_index)
        np.testing.assert_array_equal(again, value)


_params = st.fixed_dictionaries({
    "fast": st.one_of(st.integers(-3, 60).map(float),
                      st.floats(allow_nan=True, allow_infinity=True)),
    "slow": st.integers(1, 50).map(float),
})


@_FUZZ
@given(st.lists(st.sampled_from(TOKENS), max_size=40).map("".join), _params,
       st.integers(0, 3))
def test_token_soup_parses_and_evaluates_or_raises_rule_error(text, params, seed) -> None:
    expression = _parse_or_none(text)
    if expression is not None:
        _check(expression, params, seed)


_leaf = st.sampled_from(["close", "volume", "fast", "slow", "0", "1", "2.5", "-3"])
_count = st.sampled_from(["1", "2", "3", "fast", "slow", "fast - slow", "0", "2.5", "close"])


def _grow(inner: st.SearchStrategy[str]) -> st.SearchStrategy[str]:
    return st.one_of(
        st.tuples(inner, st.sampled_from(["+", "-", "*", "/", "<", ">=", " and ", " or "]),
                  inner).map(lambda t: f"({t[0]} {t[1]} {t[2]})"),
        inner.map(lambda a: f"(not {a})"),
        st.tuples(inner, inner, inner).map(lambda t: f"({t[0]} if {t[1]} else {t[2]})"),
        st.tuples(st.sampled_from(["mean", "lag", "cs_top", "cs_bottom", "hold"]), inner,
                  _count).map(lambda t: f"{t[0]}({t[1]}, {t[2]})"),
        st.tuples(st.sampled_from(["cs_rank", "cs_demean", "cs_zscore", "bars_since", "sign"]),
                  inner).map(lambda t: f"{t[0]}({t[1]})"),
        st.tuples(inner, inner).map(lambda t: f"latch({t[0]}, {t[1]})"),
        st.tuples(inner, inner, _count).map(lambda t: f"stop({t[0]}, {t[1]}, {t[2]})"),
    )


@_FUZZ
@given(st.recursive(_leaf, _grow, max_leaves=20), _params, st.integers(0, 3))
def test_well_formed_expressions_evaluate_or_raise_rule_error(text, params, seed) -> None:
    expression = _parse_or_none(text)
    if expression is not None:
        _check(expression, params, seed)


@_FUZZ
@given(st.text(alphabet="cs_rankholdtp(), 0123.-+*", max_size=60))
def test_arbitrary_text_near_the_new_names_raises_only_rule_error(text) -> None:
    expression = _parse_or_none(text)
    if expression is not None:
        _check(expression, {"fast": 3.0, "slow": 10.0}, 0)
