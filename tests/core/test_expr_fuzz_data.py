"""Fuzzing of the widened grammar - another market's series (``close["A"]``) and events
(``event("report")``): only RuleError may escape parsing and evaluation, a rule file holding
any such expression fails with a RuleError pointing inside the text, and hostile text is
never run.

Source: common practice, no source - a parser of untrusted text must fail cleanly on any input.
"""

from __future__ import annotations

import json
import os

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from hunchbook.core.errors import RuleError
from hunchbook.core.expr import Expression, parse_expression
from hunchbook.core.expr.nodes import DATA_NODES, Num, ParamRef
from hunchbook.core.rules import SERIES_NAMES, parse_rules

MARKETS = {"A", "B.X"}
PARAMS = {"fast"}
TOKENS = [
    "close", "carry", "month", "price", "fast", "event", "event(", "x", "__import__", "(", ")",
    "[", "]", '["A"]', "['A']", '["B.X"]', '["GOLD"]', '[""]', "[0]", "[:]", "[fast]", '"A"',
    '"report"', "'report'", '"a b"', '" a"', '"\\n"', '""', '"', "'", "b'A'", "f'A'", ",", " ",
    "+", "-", "*", "/", "<", " and ", " if ", " else ", "0", "1", "20", ".", ":", "=", "mean(",
    "lag(", "sign(", ", 3)", "\n", "#", "é",
]
_FUZZ = settings(max_examples=300, deadline=None)


def _parse(text: str) -> Expression | None:
    try:
        return parse_expression(text, series_names=SERIES_NAMES, param_names=PARAMS,
                                market_names=MARKETS)
    except RuleError:
        return None


def _check(expression: Expression, seed: int) -> None:
    for node in expression.root.walk():  # our own node classes only; leaves are values
        assert type(node).__module__ == "hunchbook.core.expr.nodes", node
        if isinstance(node, DATA_NODES):
            assert getattr(node, "market", None) in (None, *MARKETS)
        if not node.children():
            assert isinstance(node, (*DATA_NODES, Num, ParamRef)), node
    rng = np.random.default_rng(seed)
    series = {key: rng.normal(size=(30, 2)) for key in expression.series_used()}
    try:
        value = expression.evaluate(series, {"fast": 3.0})
    except RuleError:
        return
    if expression.series_used():
        assert isinstance(value, np.ndarray) and value.shape == (30, 2)
        assert not np.isinf(value).any()


@_FUZZ
@given(st.lists(st.sampled_from(TOKENS), max_size=30).map("".join), st.integers(0, 3))
def test_token_soup_parses_and_evaluates_or_raises_rule_error(text, seed) -> None:
    expression = _parse(text)
    if expression is not None:
        _check(expression, seed)


_leaf = st.sampled_from(['close["A"]', "carry['B.X']", 'event("report")', "event('a b')",
                         "close", "month", "fast", "2"])


def _grow(inner: st.SearchStrategy[str]) -> st.SearchStrategy[str]:
    return st.one_of(
        st.tuples(inner, st.sampled_from(["+", "-", "/", ">", " or "]), inner).map(
            lambda t: f"({t[0]} {t[1]} {t[2]})"),
        st.tuples(st.sampled_from(["mean", "lag", "zscore"]), inner).map(
            lambda t: f"{t[0]}({t[1]}, 3)"),
        inner.map(lambda a: f"sign({a})"),
    )


@_FUZZ
@given(st.recursive(_leaf, _grow, max_leaves=12), st.integers(0, 3))
def test_well_formed_expressions_evaluate_or_raise_rule_error(text, seed) -> None:
    expression = _parse(text)
    if expression is not None:
        _check(expression, seed)


@_FUZZ
@given(st.lists(st.sampled_from(TOKENS), max_size=30).map("".join))
def test_rule_files_with_any_position_fail_with_a_span_inside_the_text(text) -> None:
    rule = (f'name = "fuzz"\nmarkets = ["A"]\nreads = ["B.X"]\n[parameters]\nfast = [3]\n'
            f"[signal]\nposition = {json.dumps(text)}\n")
    try:
        parse_rules(rule)
    except RuleError as error:
        lines = rule.split("\n")
        if error.span is not None:
            assert 1 <= error.span.line <= error.span.end_line <= len(lines)
            assert 1 <= error.span.column <= len(lines[error.span.line - 1]) + 1


@pytest.mark.parametrize("text", [
    'close[__import__("os").system("x")]',
    'close["A"].__class__',
    'event(__import__("os").system("x"))',
    'event("report")["A"]',
    'close[event("report")]',
    'close["A"]["A"]',
    'event(open("f"))',
    "close[close]",
    'close[b"A"]',
    'close[f"{close}"]',
    'close["A" + "B"]',
])
def test_hostile_uses_of_the_new_forms_never_run(monkeypatch, tmp_path, text) -> None:
    calls: list[str] = []
    monkeypatch.setattr(os, "system", lambda command: calls.append(command))
    monkeypatch.chdir(tmp_path)
    with pytest.raises(RuleError):
        parse_expression(text, series_names=SERIES_NAMES, param_names=(), market_names=MARKETS)
    assert calls == [] and list(tmp_path.iterdir()) == []
