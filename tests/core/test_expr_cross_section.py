"""Functions across markets (cs_rank, cs_demean, cs_zscore, cs_top, cs_bottom).

Sources: scipy.stats.rankdata(method="average") row by row for the ranks (then scaled to
[-1, 1] as docs/rule-files.md defines); pandas row operations (mean, std with ddof=1,
nlargest/nsmallest with keep="all", rank with method="min") for the others; pandas' alignment of
Series on their dates (an outer join of the markets' own calendars) for markets on different
holiday calendars; the hand-worked example of docs/rule-files.md ("Across markets").
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy.stats import rankdata

from hunchbook.api import Study
from hunchbook.core.errors import RuleError
from hunchbook.core.expr import parse_expression
from hunchbook.core.expr.cross_section import DateGrid
from tests.core.function_data import MARKETS, rule_text, write_folder


def _evaluate(text: str, x: np.ndarray, date_index: np.ndarray | None = None,
              params: dict | None = None) -> np.ndarray:
    expression = parse_expression(text, series_names={"x"}, param_names={"k"})
    return expression.evaluate({"x": x}, params or {}, date_index=date_index)


def _random_grid(seed: int, rows: int = 60, markets: int = 7) -> np.ndarray:
    """Values with many ties (few distinct values) and undefined cells, whole rows included."""
    rng = np.random.default_rng(seed)
    x = rng.integers(-3, 4, size=(rows, markets)).astype(float) / 2
    x[rng.random(x.shape) < 0.2] = np.nan
    x[5] = np.nan  # no market defined
    x[6, 1:] = np.nan  # one market alone
    x[7] = 1.5  # all tied
    return x


def _scipy_rank(row: np.ndarray) -> np.ndarray:
    out = np.full(row.shape, np.nan)
    present = ~np.isnan(row)
    m = int(present.sum())
    if m == 1:
        out[present] = 0.0
    elif m > 1:
        out[present] = 2 * (rankdata(row[present], method="average") - 1) / (m - 1) - 1
    return out


@pytest.mark.parametrize("seed", range(5))
def test_cs_rank_is_scipy_average_rank_scaled(seed):
    x = _random_grid(seed)
    expected = np.array([_scipy_rank(row) for row in x])
    np.testing.assert_allclose(_evaluate("cs_rank(x)", x), expected, rtol=0, atol=1e-12)


@pytest.mark.parametrize("seed", range(5))
def test_cs_demean_and_zscore_are_pandas_row_operations(seed):
    x = _random_grid(seed) + np.random.default_rng(seed).normal(0, 1e-3, (60, 7))
    x[7] = 1.5  # all tied again: zero deviation, undefined z-score
    frame = pd.DataFrame(x)
    demeaned = frame.sub(frame.mean(axis=1), axis=0)
    zscored = demeaned.div(frame.std(axis=1, ddof=1), axis=0).replace([np.inf, -np.inf], np.nan)
    np.testing.assert_allclose(_evaluate("cs_demean(x)", x), demeaned, rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(_evaluate("cs_zscore(x)", x), zscored, rtol=1e-9, atol=1e-12)
    assert np.isnan(_evaluate("cs_zscore(x)", x)[[5, 6, 7]]).all()


@pytest.mark.parametrize("k", [1, 2, 3, 7, 9])
def test_cs_top_and_bottom_are_pandas_nlargest_nsmallest_keeping_ties(k):
    x = _random_grid(k)
    top, bottom = np.full(x.shape, np.nan), np.full(x.shape, np.nan)
    for i, row in enumerate(x):
        values = pd.Series(row).dropna()
        top[i, values.index] = 0.0
        top[i, values.nlargest(k, keep="all").index] = 1.0
        bottom[i, values.index] = 0.0
        bottom[i, values.nsmallest(k, keep="all").index] = 1.0
    np.testing.assert_array_equal(_evaluate("cs_top(x, k)", x, params={"k": k}), top)
    np.testing.assert_array_equal(_evaluate("cs_bottom(x, k)", x, params={"k": k}), bottom)
    # the same rule by pandas rank: fewer than k values strictly above (below)
    frame = pd.DataFrame(x)
    by_rank = (frame.rank(axis=1, method="min", ascending=False) <= k).astype(float)
    np.testing.assert_array_equal(top, by_rank.where(frame.notna()))


def test_docs_worked_example():
    # docs/rule-files.md, "Across markets": CRUDE 3, GOLD 1, CORN 3, WHEAT -2, BUND no bar.
    x = np.array([[3.0, 1.0, 3.0, -2.0, np.nan]])
    np.testing.assert_allclose(_evaluate("cs_rank(x)", x)[0, :4], [2 / 3, -1 / 3, 2 / 3, -1])
    np.testing.assert_allclose(_evaluate("cs_demean(x)", x)[0, :4], [1.75, -0.25, 1.75, -3.25])
    s = (16.75 / 3) ** 0.5
    np.testing.assert_allclose(_evaluate("cs_zscore(x)", x)[0, :4],
                               [1.75 / s, -0.25 / s, 1.75 / s, -3.25 / s])
    np.testing.assert_array_equal(_evaluate("cs_top(x, 1)", x)[0, :4], [1, 0, 1, 0])
    np.testing.assert_array_equal(_evaluate("cs_bottom(x, 2)", x)[0, :4], [0, 1, 0, 1])
    assert all(np.isnan(_evaluate(f, x)[0, 4])
               for f in ("cs_rank(x)", "cs_demean(x)", "cs_zscore(x)", "cs_top(x, 1)"))


def test_markets_are_lined_up_by_date_not_by_row():
    # Three markets on their own calendars (columns padded at the bottom, as a panel holds
    # them). pandas lines the markets' Series up on their dates; each row of that frame is
    # ranked, and each market reads its own dates back.
    days = pd.bdate_range("2024-03-25", periods=8)
    calendars = [days.delete([3]), days.delete([0, 5]), days[2:]]
    rng = np.random.default_rng(4)
    series = [pd.Series(rng.normal(size=len(c)), index=c) for c in calendars]
    rows = max(len(c) for c in calendars) + 1
    x = np.full((rows, 3), np.nan)
    date_index = np.full((rows, 3), -1)
    for j, (calendar, values) in enumerate(zip(calendars, series, strict=True)):
        x[: len(calendar), j] = values
        date_index[: len(calendar), j] = days.get_indexer(calendar)
    frame = pd.concat(series, axis=1, sort=True)  # outer join on dates
    ranks = pd.DataFrame([_scipy_rank(row) for row in frame.to_numpy()], index=frame.index)
    demeaned = frame.sub(frame.mean(axis=1), axis=0)
    got_rank = _evaluate("cs_rank(x)", x, date_index)
    got_demean = _evaluate("cs_demean(x)", x, date_index)
    for j, calendar in enumerate(calendars):
        n = len(calendar)
        np.testing.assert_allclose(got_rank[:n, j], ranks.loc[calendar, j], atol=1e-12)
        np.testing.assert_allclose(got_demean[:n, j], demeaned.loc[calendar, j], atol=1e-12)
        assert np.isnan(got_rank[n:, j]).all()  # padding
    # read row by row instead, the markets would be compared across different dates
    assert not np.allclose(_evaluate("cs_rank(x)", x)[:6], got_rank[:6], equal_nan=True)
    # a DateGrid built once from the date index (as the engine keeps one) places cells alike
    reused = DateGrid(x.shape, date_index)
    np.testing.assert_array_equal(_evaluate("cs_rank(x)", x, reused), got_rank)


def test_a_1d_series_is_one_market():
    # Definitions in docs/rule-files.md: a market taking part alone ranks 0 and demeans to 0.
    x = np.array([np.nan, 1.0, -2.0, 5.0])
    np.testing.assert_array_equal(_evaluate("cs_rank(x)", x), [np.nan, 0, 0, 0])
    np.testing.assert_array_equal(_evaluate("cs_demean(x)", x), [np.nan, 0, 0, 0])
    np.testing.assert_array_equal(_evaluate("cs_top(x, 1)", x), [np.nan, 1, 1, 1])
    assert np.isnan(_evaluate("cs_zscore(x)", x)).all()


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    folder = tmp_path_factory.mktemp("across")
    return folder, write_folder(folder)


def test_run_ranks_markets_on_their_own_holiday_calendars(folder):
    # The engine's positions against pandas: each market's 5-bar change of the adjusted close
    # (tests/reference_impl.py), lined up on dates by pandas, ranked per date with scipy.
    path, frames = folder
    study = Study.from_text(rule_text("cs_rank(diff(close, 5))"), path)
    table = study.run_set({}).pnl
    change = pd.concat({m: f["adjusted"].diff(5) for m, f in frames.items()}, axis=1, sort=True)
    ranks = pd.DataFrame([_scipy_rank(row) for row in change.to_numpy()],
                         index=change.index, columns=change.columns)
    for name, *_ in MARKETS:
        own = ranks.loc[frames[name].index, name]
        expected = own.loc[own.first_valid_index():].fillna(0.0)
        got = table[table["market"] == name].set_index("date")["position"]
        pd.testing.assert_series_equal(got, expected, check_names=False, check_freq=False,
                                       check_index_type=False, atol=1e-12, rtol=0)
    # the calendars really differ, so lining up by row would have been wrong
    assert len({tuple(f.index) for f in frames.values()}) == len(MARKETS)


def test_run_top_minus_bottom_lines_markets_up_by_date(folder):
    # cs_top - cs_bottom against pandas rank(method="min") per date (fewer than k strictly
    # higher / lower), on the markets' 10-bar changes lined up by date.
    path, frames = folder
    study = Study.from_text(
        rule_text("cs_top(diff(close, 10), 2) - cs_bottom(diff(close, 10), 1)"), path)
    table = study.run_set({}).pnl
    change = pd.concat({m: f["adjusted"].diff(10) for m, f in frames.items()}, axis=1,
                       sort=True)
    top = (change.rank(axis=1, method="min", ascending=False) <= 2).astype(float)
    bottom = (change.rank(axis=1, method="min") <= 1).astype(float)
    expected_all = (top - bottom).where(change.notna())
    for name, *_ in MARKETS:
        own = expected_all.loc[frames[name].index, name]
        expected = own.loc[own.first_valid_index():].fillna(0.0)
        got = table[table["market"] == name].set_index("date")["position"]
        np.testing.assert_array_equal(got.to_numpy(), expected.to_numpy())


@pytest.mark.parametrize(("text", "column", "problem"), [
    ("cs_top(x, 0)", 11, "count of cs_top() must be a whole number of bars between 1 and"),
    ("cs_bottom(x, x)", 14, "count of cs_bottom(x, k) must be built from numbers and"),
    ("cs_rank(2 * k)", 9, "first argument of cs_rank(x) must depend on a series"),
    ("cs_zscore(x, 2)", 1, "cs_zscore() takes 1 argument"),
])
def test_misuse_is_a_rule_error_at_its_column(text, column, problem):
    # Source: the language rules in docs/rule-files.md (counts are whole numbers from 1 built
    # from numbers and parameters; the first argument depends on a series).
    with pytest.raises(RuleError) as error:
        parse_expression(text, series_names={"x"}, param_names={"k"})
    assert error.value.column == column and problem in error.value.problem


def test_count_from_a_parameter_is_checked_when_evaluated():
    with pytest.raises(RuleError, match="got 1.5") as error:
        _evaluate("cs_top(x, k)", np.ones((3, 2)), params={"k": 1.5})
    assert error.value.column == 11
