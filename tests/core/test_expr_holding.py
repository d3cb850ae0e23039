"""Holding rules (hold, latch, bars_since, stop) against straightforward per-bar loops.

Source: the definitions in docs/rule-files.md ("Holding rules"), written out below as plain
Python loops over bars (common practice, no source; not the engine's vectorised code), on
random signals with undefined values. The back-adjusted close with its rolls comes from the
independent pandas reference (tests/reference_impl.py); the standard deviation of daily changes
at entry from Python's statistics.stdev. The worked examples are the hand-worked tables of
docs/rule-files.md.
"""

from __future__ import annotations

import math
import statistics

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from hunchbook.api import Study
from hunchbook.core.errors import RuleError
from hunchbook.core.expr import parse_expression
from tests.core.function_data import MARKETS, rule_text, write_folder
from tests.reference_impl import continuous, random_contract_rows

nan = math.nan


def _true(v: float) -> bool:
    return not math.isnan(v) and v != 0


def hold_loop(x: list[float], n: int) -> list[float]:
    out, held, left = [], nan, 0
    for v in x:
        if _true(v):
            held, left = v, n
        if left > 0:
            out.append(held)
            left -= 1
        else:
            out.append(nan if math.isnan(v) else 0.0)
    return out


def latch_loop(entry: list[float], exit_: list[float]) -> list[float]:
    out, held = [], None
    for a, b in zip(entry, exit_, strict=True):
        if _true(b):
            held = None
        elif _true(a) and not math.isnan(b):
            held = a
        if held is not None:
            out.append(held)
        else:
            out.append(nan if math.isnan(a) or math.isnan(b) else 0.0)
    return out


def bars_since_loop(c: list[float]) -> list[float]:
    out, last = [], None
    for t, v in enumerate(c):
        if _true(v):
            last = t
        out.append(nan if last is None else float(t - last))
    return out


def stop_loop(x: list[float], k: list[float], n: int, close: list[float]) -> list[float]:
    out, side = [], 0.0
    entry_close = limit = nan
    stopped = False
    for t in range(len(x)):
        changes = [close[u] - close[u - 1] for u in range(t - n + 1, t + 1) if u >= 1]
        sigma = (statistics.stdev(changes) if len(changes) == n
                 and not any(math.isnan(c) for c in changes) else nan)
        if any(math.isnan(v) for v in (x[t], k[t], close[t], sigma)):
            out.append(nan)
            side = 0.0
            continue
        s = math.copysign(1.0, x[t]) if x[t] != 0 else 0.0
        if s == 0:
            out.append(0.0)
            side = 0.0
            continue
        if s != side:  # a new trade
            side, entry_close, limit, stopped = s, close[t], k[t] * sigma, False
        if -s * (close[t] - entry_close) > limit:
            stopped = True
        out.append(0.0 if stopped else x[t])
    return out


def _run(text: str, **series: np.ndarray) -> np.ndarray:
    expression = parse_expression(text, series_names=set(series) | {"close"}, param_names=())
    return expression.evaluate(series, {})


def _columns(loop, *arrays: np.ndarray, **kw) -> np.ndarray:
    """The loop run on each market's column."""
    return np.column_stack([loop(*(list(a[:, j]) for a in arrays), **kw)
                            for j in range(arrays[0].shape[1])])


def _signal(rng: np.random.Generator, shape: tuple[int, int]) -> np.ndarray:
    """Runs of -1, -0.5, 0, 1, 2 with undefined bars, a warm-up and a ragged end per market."""
    values = np.array([-1.0, -0.5, 0.0, 0.0, 1.0, 2.0, nan])
    pick = rng.integers(0, len(values), size=shape)
    keep = rng.random(shape) < 0.7  # repeat the previous bar's choice: runs of a value
    for t in range(1, shape[0]):
        pick[t] = np.where(keep[t], pick[t - 1], pick[t])
    x = values[pick]
    x[: rng.integers(0, 6)] = nan
    x[-3:, 0] = nan
    return x


_values = st.lists(st.sampled_from([nan, 0.0, 0.0, 1.0, -1.0, 2.5]), min_size=1, max_size=40)
_HYP = settings(max_examples=200, deadline=None)


@_HYP
@given(_values, st.integers(1, 6))
def test_hold_is_the_loop(x, n):
    np.testing.assert_array_equal(_run(f"hold(x, {n})", x=np.array(x)), hold_loop(x, n))


@_HYP
@given(st.lists(st.tuples(st.sampled_from([nan, 0.0, 0.0, 1.0, -1.0, 2.5]),
                          st.sampled_from([nan, 0.0, 0.0, 0.0, 1.0])), min_size=1, max_size=40))
def test_latch_is_the_loop(pairs):
    entry, exit_ = (np.array(v) for v in zip(*pairs, strict=True))
    np.testing.assert_array_equal(_run("latch(x, y)", x=entry, y=exit_),
                                  latch_loop(list(entry), list(exit_)))


@_HYP
@given(_values)
def test_bars_since_is_the_loop(c):
    np.testing.assert_array_equal(_run("bars_since(x)", x=np.array(c)), bars_since_loop(c))


@pytest.mark.parametrize("seed", range(6))
def test_hold_latch_and_bars_since_on_random_signals_over_markets(seed):
    rng = np.random.default_rng(seed)
    x, y = _signal(rng, (300, 3)), _signal(rng, (300, 3))
    np.testing.assert_array_equal(_run("hold(x, 4)", x=x), _columns(hold_loop, x, n=4))
    np.testing.assert_array_equal(_run("latch(x, y)", x=x, y=y), _columns(latch_loop, x, y))
    np.testing.assert_array_equal(_run("bars_since(x)", x=x), _columns(bars_since_loop, x))


@pytest.mark.parametrize("seed", range(8))
def test_stop_on_random_signals_and_a_close_with_rolls(seed):
    # close: the back-adjusted close (difference) of generated contracts with monthly rolls;
    # k varies (it is read at entry); two markets, the second shorter (NaN padding).
    rng = np.random.default_rng(seed)
    closes = []
    for j in range(2):
        rows = random_contract_rows(100 + seed * 2 + j, "2020-01-02", 200 - 40 * j, holidays=5)
        closes.append(continuous(rows, 2, "difference")["adjusted"].to_numpy())
    bars = max(len(c) for c in closes) + 1
    close = np.full((bars, 2), nan)
    for j, c in enumerate(closes):
        close[: len(c), j] = c
    x = _signal(rng, (bars, 2))
    k = np.where(rng.random((bars, 2)) < 0.02, nan, rng.uniform(0.0, 2.5, (bars, 2)))
    n = int(rng.integers(2, 15))
    expected = np.column_stack([stop_loop(list(x[:, j]), list(k[:, j]), n, list(close[:, j]))
                                for j in range(2)])
    got = _run(f"stop(x, k, {n})", x=x, k=k, close=close)
    np.testing.assert_array_equal(got, expected)
    assert (expected == 0).sum() > (x == 0).sum()  # some trades really were stopped


def test_a_roll_is_no_move_for_the_stop():
    # Hand-made: the held contract's close runs near 100, then the next contract, 10 lower,
    # is held from bar 6. Difference adjustment shifts bars 0-5 by the gap (-10): no jump.
    # Read unadjusted, the roll is a loss of 10 for the long and stops it; adjusted, it does
    # not (the loop gives both).
    raw = np.array([100.0, 100.5, 100.0, 100.4, 100.1, 100.3, 90.2, 90.4, 90.1, 90.3])
    gap = np.array([-10.0] * 6 + [0.0] * 4)
    adjusted = raw + gap
    x = np.ones(10)
    on_raw, on_adjusted = (_run("stop(x, 2, 3)", x=x, close=c) for c in (raw, adjusted))
    np.testing.assert_array_equal(on_raw, stop_loop(list(x), [2.0] * 10, 3, list(raw)))
    np.testing.assert_array_equal(on_adjusted,
                                  stop_loop(list(x), [2.0] * 10, 3, list(adjusted)))
    assert on_raw[6] == 0 and on_adjusted[6] == 1


def test_docs_worked_examples():
    # The four tables of docs/rule-files.md, "Holding rules".
    np.testing.assert_array_equal(
        _run("hold(x, 3)", x=np.array([0, 1, 0, 0, 0, -1, 0, nan, 0, nan])),
        [0, 1, 1, 1, 0, -1, -1, -1, 0, nan])
    np.testing.assert_array_equal(
        _run("latch(x, y)", x=np.array([0, 1, 0, 0, -1, 0, 1, 0.0]),
             y=np.array([0, 0, 0, 1, 0, nan, 1, 0])),
        [0, 1, 1, 0, -1, -1, 0, 0])
    np.testing.assert_array_equal(
        _run("bars_since(x)", x=np.array([nan, 0, 1, 0, nan, 0, 1, 1, 0])),
        [nan, nan, 0, 1, 2, 3, 0, 0, 1])
    close = np.array([100, 101, 100, 102, 101, 102, 100, 97, 96, 98, 99.0])
    np.testing.assert_allclose(_run("std(diff(close, 1), 3)", close=close)[[3, 9]],
                               [1.5275, 2.5166], atol=5e-5)
    np.testing.assert_array_equal(
        _run("stop(x, 1.5, 3)", x=np.array([1.0] * 9 + [-1.0] * 2), close=close),
        [nan, nan, nan, 1, 1, 1, 1, 0, 0, -1, -1])


@pytest.mark.parametrize(("text", "first"), [
    ("hold(sign(diff(close, 3)), 5)", 3),
    ("latch(sign(diff(close, 2)), abs(diff(close, 1)) > 9)", 2),
    ("stop(sign(diff(close, 3)), 2, 20)", 20),
    ("stop(sign(diff(close, 30)), 2, 20)", 30),
    ("cs_rank(mean(close, 10))", 9),
])
def test_max_lookback_is_the_first_defined_bar(text, first):
    # Source: the evaluated result itself on gap-free data (first non-NaN row), and the
    # definitions: a holding rule or a ranking is defined where its inputs are; stop also needs
    # n daily changes (bar n).
    rng = np.random.default_rng(3)
    close = 100 + np.cumsum(rng.normal(size=(200, 3)), axis=0)
    expression = parse_expression(text, series_names={"close"}, param_names=())
    values = expression.evaluate({"close": close}, {})
    assert expression.max_lookback({}) == first == int(np.argmax(~np.isnan(values[:, 0])))


def test_results_are_cached_like_windows():
    # Source: the documented cache of shared sub-results (Expression.evaluate).
    rng = np.random.default_rng(1)
    close = 100 + np.cumsum(rng.normal(size=(50, 2)), axis=0)
    cache: dict = {}
    text = "hold(sign(diff(close, 3)), 4) + stop(sign(diff(close, 3)), 1, 5)"
    expression = parse_expression(text, series_names={"close"}, param_names=())
    first = expression.evaluate({"close": close}, {}, cache)
    assert sorted(key.function for key in cache) == ["diff", "diff", "hold", "std", "stop"]
    np.testing.assert_array_equal(expression.evaluate({"close": close}, {}, cache), first)
    # stop's standard deviation of daily changes is the one std(diff(close, 1), n) computes
    # (the volatility target's measure): computed once, then shared
    sigma = parse_expression("std(diff(close, 1), 5)", series_names={"close"}, param_names=())
    sigma.evaluate({"close": close}, {}, cache)
    assert len(cache) == 5


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    folder = tmp_path_factory.mktemp("holding")
    return folder, write_folder(folder)


def _nan_compare(values: pd.Series, op, level: float) -> pd.Series:
    return op(values, level).astype(float).where(values.notna())


RULES = {
    "hold(sign(diff(close, 5)) * (abs(diff(close, 5)) > 2), 4)":
        lambda c: pd.Series(hold_loop(list(np.sign(c.diff(5)) * _nan_compare(
            c.diff(5).abs(), pd.Series.gt, 2)), 4), index=c.index),
    "latch(sign(diff(close, 5)) * (abs(diff(close, 5)) > 2), abs(diff(close, 1)) > 1.5)":
        lambda c: pd.Series(latch_loop(
            list(np.sign(c.diff(5)) * _nan_compare(c.diff(5).abs(), pd.Series.gt, 2)),
            list(_nan_compare(c.diff(1).abs(), pd.Series.gt, 1.5))), index=c.index),
    "bars_since(diff(close, 1) > 1) < 3":
        lambda c: _nan_compare(pd.Series(bars_since_loop(
            list(_nan_compare(c.diff(1), pd.Series.gt, 1))), index=c.index), pd.Series.lt, 3),
    "stop(sign(diff(close, 10)), 1, 20)":
        lambda c: pd.Series(stop_loop(list(np.sign(c.diff(10))), [1.0] * len(c), 20, list(c)),
                            index=c.index),
}


@pytest.mark.parametrize("position", list(RULES))
def test_run_positions_are_the_loops_on_the_adjusted_close(folder, position):
    # Each market's adjusted close (with its rolls) from the pandas reference, the rule's
    # inputs computed with pandas, the holding rule by the loop; the engine's positions start
    # on the first defined bar and an undefined position is flat.
    path, frames = folder
    table = Study.from_text(rule_text(position), path).run_set({}).pnl
    for name, *_ in MARKETS:
        reference = RULES[position](frames[name]["adjusted"])
        expected = reference.loc[reference.first_valid_index():].fillna(0.0)
        got = table[table["market"] == name].set_index("date")["position"]
        np.testing.assert_array_equal(got.index.to_numpy(), expected.index.to_numpy())
        np.testing.assert_allclose(got.to_numpy(), expected.to_numpy(), rtol=0, atol=0)
    assert frames[MARKETS[0][0]]["roll"].sum() >= 4  # the data really roll


def test_stop_misuse_names_stop_at_its_column():
    # Source: the language rules in docs/rule-files.md (n of stop is a whole number of bars
    # from 2 built from numbers and parameters; stop reads close itself).
    with pytest.raises(RuleError, match=r"window of stop\(\) must be .* between 2 and") as at:
        parse_expression("stop(x, 2, 1)", series_names={"x", "close"}, param_names=())
    assert at.value.column == 12
    expression = parse_expression("stop(x, 2, n)", series_names={"x", "close"},
                                  param_names={"n"})
    with pytest.raises(RuleError, match=r"window of stop\(\) .* got 1\.5") as bound:
        expression.evaluate({"x": np.ones(5), "close": np.ones(5)}, {"n": 1.5})
    assert bound.value.column == 12
    with pytest.raises(RuleError, match="reads the series 'close', which is not available"):
        parse_expression("stop(x, 2, 5)", series_names={"x"}, param_names=())
