"""Parsing of expressions: what is accepted, what is refused, and where errors point."""

from __future__ import annotations

import os

import pytest

from hunchbook.core.errors import RuleError
from hunchbook.core.expr import (
    FUNCTIONS,
    MAX_DEPTH,
    MAX_LENGTH,
    MAX_NODES,
    MAX_WINDOW,
    parse_expression,
)

SERIES = {"close", "open", "high", "low", "volume"}
PARAMS = {"fast", "slow"}


def _parse(text: str, series=SERIES, params=PARAMS):
    return parse_expression(text, series_names=series, param_names=params)


def _error(text: str, series=SERIES, params=PARAMS) -> RuleError:
    with pytest.raises(RuleError) as caught:
        _parse(text, series, params)
    return caught.value


# Source for every column below: counted by hand in the quoted text (1-based).


@pytest.mark.parametrize("text", [
    "sign(mean(close, fast) - mean(close, slow))",
    "clip(zscore(close, 20) * -1, -2, 2)",
    "1 if close > max(lag(close, 1), 50) else (-1 if close < min(lag(close, 1), 50) else 0)",
    "ewm(close, 2 * fast) > ewm(close, slow) and not volume < 1000",
    "(high - low) / close ** 2 % 3 >= 0.5 or open != close",
    "low <= close < high",
    "  mean(close,\n       fast)  ",
    "fast < slow",
])
def test_accepts_the_language(text) -> None:
    # Source: the language definition (project rule files use these forms).
    expression = _parse(text)
    assert expression.text == text
    assert expression == _parse(text)
    assert hash(expression) == hash(_parse(text))


def test_names_used() -> None:
    # Source: read off the expression text by hand.
    expression = _parse("sign(mean(close, fast) - mean(open, slow)) * (volume > 0)")
    assert expression.series_used() == frozenset({"close", "open", "volume"})
    assert expression.params_used() == frozenset({"fast", "slow"})
    assert _parse("fast < slow").series_used() == frozenset()


def test_functions_are_documented() -> None:
    # Source: the function list in the language definition.
    for name in ("mean", "ewm", "std", "max", "min", "lag", "diff", "sign", "abs", "clip",
                 "zscore"):
        assert FUNCTIONS[name].startswith(f"{name}(")


@pytest.mark.parametrize(("text", "column", "words"), [
    ("close + foo", 9, "unknown name 'foo'; available series: close, high, low, open, volume; "
                       "parameters: fast, slow"),
    ("close.__class__", 6, "attribute access"),
    ("close[0]", 7, "the market in close[...] must be a name in quotes"),
    ("(lambda: 1)()", 2, "only built-in functions called by name"),
    ("[x for x in close]", 1, "comprehensions"),
    ("close // 2", 7, "operator '//'"),
    ("close in open", 7, "operator 'in'"),
    ("close is not open", 7, "operator 'is not'"),
    ("~close", 1, "operator '~'"),
    ("open('f')", 1, "'open' is not a function"),
    ("foo(close)", 1, "'foo' is not a known function"),
    ("mean(close)", 1, "mean() takes 2 arguments, mean(x, n), but 1 was given"),
    ("clip(close, 1)", 1, "clip(x, lo, hi)"),
    ("mean(close, n=3)", 13, "positional arguments only: mean(x, n)"),
    ("mean(*close)", 6, "unpacking"),
    ("'abc'", 1, "text in quotes"),
    ("close + f'{close}'", 9, "f-strings"),
    ("(fast := 3)", 2, "assignment with ':='"),
    ("close, open", 1, "separated by commas"),
    ("True", 1, "write 1 instead"),
    ("2j", 1, "cannot be used here"),
    ("1e999", 1, "too large"),
    ("mean", 1, "'mean' is a function; call it like mean(x, n)"),
    ("mean(close, close)", 13, "built from numbers and parameters only, not the series 'close'"),
    ("max(close, open)", 12, "maximum(a, b)"),
    ("mean(3, fast)", 6, "must depend on a series"),
    ("mean(close, 2.5)", 13, "window of mean() must be a whole number of bars between 1 and "
                             "100000, got 2.5"),
    ("mean(close, 10**9)", 13, "got 1000000000"),
    ("std(close, 1)", 12, "between 2 and 100000, got 1"),
    ("lag(close, -1)", 12, "lag of lag() must be a whole number of bars between 0 and 100000"),
    ("close ** 11", 10, "constant exponent must be between -10 and 10, got 11"),
    ("9**9**9", 4, "constant exponent"),
    ("close + )", 9, "cannot read the expression: unmatched ')'"),
    ("   foo", 4, "unknown name"),
    ("mean(close,\n  foo)", 15, "unknown name 'foo'"),
    ("", None, "empty"),
])
def test_refuses_with_column_and_explanation(text, column, words) -> None:
    error = _error(text)
    assert error.column == column
    assert words in error.problem


def test_columns_count_characters_not_bytes() -> None:
    # Source: hand count; 'é' is one character but two bytes in UTF-8.
    error = _error("prix_é + foo", series={"prix_é"})
    assert error.column == 10


def test_name_that_is_both_series_and_parameter_is_refused() -> None:
    error = _error("close + 1", params={"close"})
    assert "both a series and a parameter" in error.problem


def test_located_error_names_file_and_key() -> None:
    # Source: RuleError.located in hunchbook.core.errors (file and key are filled in later).
    error = _error("close + foo").located(file="trend.toml", key="signal.position")
    assert str(error).startswith("trend.toml, key 'signal.position', column 9: unknown name")


def test_hostile_inputs_never_run(monkeypatch, tmp_path) -> None:
    # Source: common practice, no source - untrusted text must not reach Python execution.
    calls: list[str] = []
    monkeypatch.setattr(os, "system", lambda command: calls.append(command))
    monkeypatch.chdir(tmp_path)
    hostile = [
        "__import__('os').system('x')",
        "close.__class__",
        "(lambda: 1)()",
        "[x for x in close]",
        "close[0]",
        "open('f')",
        "9**9**9",
        "mean(close, 10**9)",
        "mean(close, close)",
        "(" * 10_000 + "1" + ")" * 10_000,
        "-" * 100_000 + "1",
        "x" * 1_000_000,
        "mean(close, n=20)",
        "'close'",
        "().__class__.__bases__[0].__subclasses__()",
        "breakpoint()",
        "exec('1')",
        "eval('1')",
    ]
    for text in hostile:
        with pytest.raises(RuleError):
            _parse(text, series={"close"})
    assert calls == []
    assert list(tmp_path.iterdir()) == []


def test_length_limit() -> None:
    # Source: the documented limit MAX_LENGTH.
    _parse("close" + " " * (MAX_LENGTH - 5))
    error = _error("close" + " " * (MAX_LENGTH - 4))
    assert "at most 2000" in error.problem
    assert error.column == MAX_LENGTH + 1


def _balanced(leaves: int) -> str:
    """A sum of ``leaves`` ones as a balanced tree (2 * leaves - 1 nodes, shallow)."""
    return "1" if leaves == 1 else f"({_balanced(leaves // 2)}+{_balanced(leaves - leaves // 2)})"


def test_node_limit() -> None:
    # Source: the documented limit MAX_NODES; a balanced sum of L ones has 2L - 1 nodes.
    assert _parse(_balanced(MAX_NODES // 2)).evaluate({}, {}) == MAX_NODES // 2
    assert "more than 500 parts" in _error(_balanced(MAX_NODES // 2 + 1)).problem


def test_depth_limit() -> None:
    # Source: the documented limit MAX_DEPTH; each unary minus adds one level.
    assert _parse("-" * (MAX_DEPTH - 1) + "close").series_used() == {"close"}
    error = _error("-" * MAX_DEPTH + "close")
    assert "nested more than 50 levels" in error.problem
    assert error.column == MAX_DEPTH + 1
    assert "nested" in _error("-" * 1999 + "1").problem
    assert _error("(" * 999 + "1" + ")" * 999).column is not None


def test_window_limit() -> None:
    # Source: the documented limit MAX_WINDOW.
    _parse(f"mean(close, {MAX_WINDOW})")
    _parse("lag(close, 0)")
    assert "between 1 and 100000" in _error(f"mean(close, {MAX_WINDOW + 1})").problem


def test_exponent_limit() -> None:
    # Source: the documented limit of 10 on a constant exponent.
    _parse("close ** 10 + close ** -10 + close ** (2 * 5)")
    _parse("close ** fast")
    assert _error("close ** (-11)").column == 11


def test_a_number_run_into_a_keyword_is_a_located_error_not_a_warning() -> None:
    """``1if ...`` draws a SyntaxWarning from Python 3.11's tokenizer ("invalid decimal
    literal", Python 3.11 changelog); here it is a RuleError with its column, never a warning
    printed to the console."""
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(RuleError, match="invalid decimal literal") as caught:
            parse_expression("1if close > 0 else 0", series_names=("close",), param_names=())
    assert caught.value.column == 1
