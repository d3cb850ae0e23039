"""Fuzzing of parsing and evaluation: only RuleError may ever escape.

Source: common practice, no source - a parser of untrusted text must fail cleanly on any input.
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from hunchbook.core.errors import RuleError
from hunchbook.core.expr import Expression, parse_expression

SERIES = {"close", "open", "volume"}
PARAMS = {"fast", "slow"}
TOKENS = [
    "close", "open", "volume", "fast", "slow", "high", "x", "__import__", "lambda", "True",
    " mean", " ewm", " std", " max", " min", " lag", " diff", " sign", " abs", " clip", " zscore",
    " log", " sqrt", " maximum", " minimum", " sum", "(", ")", "(", ")", ",", ", ", " ", "+", "-",
    "*", "/", "**", "%", "<", "<=", ">", ">=", "==", "!=", " and ", " or ", " not ", " if ",
    " else ", "0", "1", "2", "3", "20", "2.5", "1e9", "100000", "100001", "-1", ".", "[", "]",
    ":", "=", "'a'", ":=", "\n", "#", "//", "~", "@", "é",
]
_FUZZ = settings(max_examples=300, deadline=None)


def _data(seed: int) -> dict[str, np.ndarray]:
    rng = np.random.default_rng(seed)
    close = 100.0 + np.cumsum(rng.normal(size=(40, 2)), axis=0)
    close[:3, 0] = np.nan
    close[-5:, 1] = np.nan
    return {"close": close, "open": close + 0.5, "volume": np.abs(close) * 10}


def _parse_or_none(text: str) -> Expression | None:
    try:
        return parse_expression(text, series_names=SERIES, param_names=PARAMS)
    except RuleError:
        return None


def _evaluate_checked(expression: Expression, params: dict[str, float], seed: int) -> None:
    try:
        value = expression.evaluate(_data(seed), params)
        expression.max_lookback(params)
    except RuleError:
        return
    if expression.series_used():
        assert isinstance(value, np.ndarray) and value.shape == (40, 2)
        assert not np.isinf(value).any()
    else:
        assert isinstance(value, float)


_params = st.fixed_dictionaries({
    "fast": st.one_of(st.integers(-3, 200).map(float),
                      st.floats(allow_nan=True, allow_infinity=True)),
    "slow": st.integers(1, 50).map(float),
})


@_FUZZ
@given(st.text(max_size=300))
def test_arbitrary_text_parses_or_raises_rule_error(text: str) -> None:
    expression = _parse_or_none(text)
    if expression is not None:
        _evaluate_checked(expression, {"fast": 3.0, "slow": 10.0}, 0)


@_FUZZ
@given(st.lists(st.sampled_from(TOKENS), max_size=40).map("".join), _params,
       st.integers(0, 3))
def test_token_soup_parses_and_evaluates_or_raises_rule_error(text, params, seed) -> None:
    expression = _parse_or_none(text)
    if expression is not None:
        _evaluate_checked(expression, params, seed)


_leaf = st.sampled_from(["close", "open", "volume", "fast", "slow", "0", "1", "2.5", "-3"])


def _grow(inner: st.SearchStrategy[str]) -> st.SearchStrategy[str]:
    window = st.sampled_from(["1", "2", "5", "fast", "slow", "2 * fast", "fast - slow", "40"])
    return st.one_of(
        st.tuples(inner, st.sampled_from(["+", "-", "*", "/", "**", "%", "<", ">=", "==",
                                          " and ", " or "]), inner).map(
            lambda t: f"({t[0]} {t[1]} {t[2]})"),
        inner.map(lambda a: f"(-{a})"),
        inner.map(lambda a: f"(not {a})"),
        st.tuples(inner, inner, inner).map(lambda t: f"({t[0]} if {t[1]} else {t[2]})"),
        st.tuples(st.sampled_from(["mean", "ewm", "std", "max", "min", "lag", "diff", "zscore",
                                   "sum"]), inner, window).map(
            lambda t: f"{t[0]}({t[1]}, {t[2]})"),
        st.tuples(st.sampled_from(["sign", "abs", "log", "sqrt"]), inner).map(
            lambda t: f"{t[0]}({t[1]})"),
        st.tuples(inner, inner, inner).map(lambda t: f"clip({t[0]}, {t[1]}, {t[2]})"),
    )


@_FUZZ
@given(st.recursive(_leaf, _grow, max_leaves=25), _params, st.integers(0, 3))
def test_well_formed_expressions_evaluate_or_raise_rule_error(text, params, seed) -> None:
    expression = _parse_or_none(text)
    if expression is not None:
        _evaluate_checked(expression, params, seed)
