"""Parsing and evaluating another market's series (``close["A"]``) and events
(``event("report")``): the forms accepted, the keys they read, where errors point.

Source for every column: counted by hand in the quoted text (1-based); an error about an
event points at its name inside the quotes.
"""

from __future__ import annotations

import numpy as np
import pytest

from hunchbook.core.errors import RuleError
from hunchbook.core.expr import parse_expression
from hunchbook.core.rules import SERIES_NAMES, dump_rules, parse_rules

MARKETS = ("A", "B.X")


def _parse(text: str):
    return parse_expression(text, series_names=SERIES_NAMES, param_names={"n"},
                            market_names=MARKETS)


def test_keys_read() -> None:
    expression = _parse("""carry["B.X"] + close['A'] * event("crop report") - close""")
    assert expression.series_used() == frozenset(
        {'carry["B.X"]', 'close["A"]', 'event("crop report")', "close"})
    # one node per key, leftmost use first
    assert [node.key for node in expression.data_used()] == [
        'carry["B.X"]', 'close["A"]', 'event("crop report")', "close"]
    assert _parse('close["A"]').root == _parse("close['A']").root
    assert _parse('close["A"]').root != _parse("close").root


def test_evaluation_reads_each_key_and_keeps_windows_apart() -> None:
    # Source: numpy arithmetic on the arrays given (common practice, no source).
    rng = np.random.default_rng(0)
    series = {"close": rng.normal(size=(6, 2)), 'close["A"]': rng.normal(size=(6, 2)),
              'event("r")': np.array([[0.0, 1.0]] * 6)}
    cache: dict = {}
    value = _parse('lag(close, 1) - lag(close["A"], 1) + event("r")').evaluate(
        series, {}, cache)
    expected = np.full((6, 2), np.nan)
    expected[1:] = series["close"][:-1] - series['close["A"]'][:-1] + series['event("r")'][1:]
    np.testing.assert_allclose(value, expected)
    assert len(cache) == 2  # lag(close, 1) and lag(close["A"], 1) are different windows


@pytest.mark.parametrize(("text", "column", "words"), [
    ('close["GOLD"]', 8, "market 'GOLD' is not listed in markets or reads (listed: A, B.X)"),
    ("close + close['a']", 16, "market 'a' is not listed"),
    ("close[0]", 7, 'the market in close[...] must be a name in quotes, like close["GOLD"]'),
    ("close[n]", 7, "must be a name in quotes"),
    ('close[b"A"]', 7, "must be a name in quotes"),
    ('n["A"]', 1, 'only a series can be read from another market, like close["GOLD"]'),
    ('mean(close, 3)["A"]', 1, "only a series can be read from another market"),
    ('close["A"]["A"]', 1, "only a series can be read from another market"),
    ('clsoe["A"]', 1, "unknown name 'clsoe'"),
    ("event(close)", 7, 'the name in event(...) must be a name in quotes, like event("report")'),
    ("event()", 1, 'event() takes 1 argument, event("name"), but 0 were given'),
    ('event("a", "b")', 1, "but 2 were given"),
    ('event(" report")', 8, "an event name is made of letters, digits, spaces"),
    ('1 + event("a;b")', 12, "found 'a;b'"),
    ("event", 1, "'event' is a function; call it like event(\"name\")"),
    ('"A"', 1, "text in quotes cannot be used here, only as a market name"),
    ('mean(close, close["A"])', 13, "not the series 'close[\"A\"]'"),
    ('mean(event("r"), event("r"))', 25, "not the series 'event(\"r\")'"),
])
def test_refuses_with_column_and_explanation(text, column, words) -> None:
    with pytest.raises(RuleError) as caught:
        _parse(text)
    assert caught.value.column == column
    assert words in caught.value.problem


def test_reads_round_trips_through_the_writer() -> None:
    # Source: the writer's contract (parse_rules of dump_rules gives the spec back).
    text = ('name = "pair"\nmarkets = ["A"]\nreads = ["B.X"]  # read only\n[signal]\n'
            "position = 'close - close[\"B.X\"]'\n")
    spec = parse_rules(text)
    assert spec.reads == ("B.X",)
    assert parse_rules(dump_rules(spec)) == spec
    edited = dump_rules(spec, original=text)
    assert "# read only" in edited and parse_rules(edited) == spec
    without = parse_rules(dump_rules(spec.__class__(**{**spec.__dict__, "reads": (),
                                                       "position": "close"})))
    assert without.reads == () and "reads" not in dump_rules(without)
