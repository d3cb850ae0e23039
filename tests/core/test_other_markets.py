"""Another market's series, read by name (``close["B"]``), on each traded market's dates with
the last value known at that date's close.

Source: pandas ``merge_asof(direction="backward")`` (reference library): for each traded date,
the row of the other market's latest date on or before it. Calendars differ: each market has
holidays the others trade on.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from hunchbook.api import Study
from hunchbook.core.errors import DataError, RuleError
from hunchbook.core.rules import parse_rules
from tests.core.data_folders import rules, write_folder


def _calendar(start: str, end: str, holidays: list[str]) -> pd.DatetimeIndex:
    return pd.bdate_range(start, end).drop(pd.DatetimeIndex(holidays))


A_DAYS = _calendar("2024-01-02", "2024-03-28", ["2024-01-15", "2024-02-19"])
B_DAYS = _calendar("2024-01-08", "2024-03-29",
                   ["2024-01-26", "2024-02-12", "2024-02-13", "2024-03-28"])
C_DAYS = _calendar("2024-01-03", "2024-03-27", ["2024-01-26", "2024-03-01"])


def _continuous(days: pd.DatetimeIndex, seed: int, volume: bool = False) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    frame = pd.DataFrame({"date": days.strftime("%Y-%m-%d"),
                          "close": np.round(100 + np.cumsum(rng.normal(size=len(days))), 2)})
    if volume:
        values = rng.integers(1, 1000, len(days)).astype(float)
        values[rng.random(len(days)) < 0.2] = np.nan  # blank cells: the known value is blank
        frame["volume"] = values
    return frame


def _contracts(days: pd.DatetimeIndex, seed: int) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    rows = []
    for k, expiry in enumerate(("2024-02-15", "2024-04-15", "2024-06-14")):
        for day in days:
            rows.append({"date": day.strftime("%Y-%m-%d"), "contract": f"K{k}",
                         "expiry": expiry, "close": round(90 - k + rng.normal(), 2)})
    return pd.DataFrame(rows)


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    return write_folder(tmp_path_factory.mktemp("others"), {
        "A": _continuous(A_DAYS, 1), "B": _continuous(B_DAYS, 2, volume=True),
        "C": _contracts(C_DAYS, 3)})


def _as_of(dates: np.ndarray, source: pd.DataFrame, column: str) -> np.ndarray:
    left = pd.DataFrame({"date": pd.DatetimeIndex(dates).astype("datetime64[ns]")})
    right = source[["date", column]].assign(
        date=pd.DatetimeIndex(source["date"]).astype("datetime64[ns]"))
    return pd.merge_asof(left, right, on="date", direction="backward")[column].to_numpy()


def _column(study: Study, key: str, j: int) -> tuple[np.ndarray, np.ndarray]:
    n = int(study.panel.lengths[j])
    return study.panel.dates[:n, j], study.panel.series[key][:n, j]


def test_values_are_the_last_known_on_each_traded_calendar(folder) -> None:
    position = 'sign(close - close["B"]) + 0 * volume["B"] + 0 * carry["C"]'
    study = Study.from_text(rules(position, ["A", "C"], reads=["B"]), folder)
    b = _continuous(B_DAYS, 2, volume=True)
    c_alone = Study.from_text(rules("carry", ["C"]), folder)
    c_dates, c_carry = _column(c_alone, "carry", 0)
    c_frame = pd.DataFrame({"date": pd.DatetimeIndex(c_dates), "carry": c_carry})
    for j in (0, 1):
        dates, close_b = _column(study, 'close["B"]', j)
        np.testing.assert_array_equal(close_b, _as_of(dates, b, "close"))
        np.testing.assert_array_equal(_column(study, 'volume["B"]', j)[1],
                                      _as_of(dates, b, "volume"))
        np.testing.assert_array_equal(_column(study, 'carry["C"]', j)[1],
                                      _as_of(dates, c_frame, "carry"))
    # By hand: A trades on Fri 2024-01-26, B does not; A reads B's Thu 2024-01-25 close.
    dates, close_b = _column(study, 'close["B"]', 0)
    on_26 = np.flatnonzero(dates == np.datetime64("2024-01-26"))[0]
    assert close_b[on_26] == b.loc[b["date"] == "2024-01-25", "close"].item()
    # Before B's first date (2024-01-08) nothing is known: undefined, so A is flat there.
    assert np.isnan(close_b[dates < np.datetime64("2024-01-08")]).all()


def test_the_position_reads_the_aligned_values(folder) -> None:
    study = Study.from_text(rules('sign(close - close["B"])', ["A"], reads=["B"]), folder)
    output = study.run_set({}).output
    dates, close_b = _column(study, 'close["B"]', 0)
    a = _continuous(A_DAYS, 1)
    expected = np.sign(a["close"].to_numpy() - _as_of(dates, _continuous(B_DAYS, 2), "close"))
    first = int(output.first[0])
    assert dates[first] == np.datetime64("2024-01-08")
    np.testing.assert_array_equal(output.position[first:len(dates), 0], expected[first:])


def test_a_traded_market_may_be_read_by_name(folder) -> None:
    # close["A"] on A's own dates is A's close; on C's dates, A's last known close.
    study = Study.from_text(rules('close["A"] - close', ["A", "C"]), folder)
    dates, values = _column(study, 'close["A"]', 0)
    np.testing.assert_array_equal(values, study.panel.series["close"][: len(dates), 0])
    dates, values = _column(study, 'close["A"]', 1)
    np.testing.assert_array_equal(values, _as_of(dates, _continuous(A_DAYS, 1), "close"))


def test_an_unlisted_market_is_an_error_at_its_name() -> None:
    # Source: hand count. Line 4 (after name, markets, [signal]) is:
    #     position = 'close["GOLD"] - close'
    # "position = '" is 12 characters, close[" 7 more: GOLD starts at column 20, ends before 24.
    with pytest.raises(RuleError) as caught:
        parse_rules(rules('close["GOLD"] - close', ["A"]), file="pair.toml")
    error = caught.value
    assert (error.kind, error.key) == ("expression", "signal.position")
    span = error.span
    assert (span.line, span.column, span.end_line, span.end_column) == (4, 20, 4, 24)
    assert str(error).startswith("pair.toml, key 'signal.position', line 4, column 20: market "
                                 "'GOLD' is not listed in markets or reads (listed: A)")


@pytest.mark.parametrize(("text", "words"), [
    ('name = "x"\nmarkets = ["A"]\nreads = ["A"]\n[signal]\nposition = "close"\n',
     "market 'A' is traded (listed in markets)"),
    ('name = "x"\nmarkets = ["A"]\nreads = ["B", "B"]\n[signal]\nposition = "close"\n',
     "market 'B' is listed twice"),
    ('name = "x"\nmarkets = ["A"]\nreads = "B"\n[signal]\nposition = "close"\n',
     "expected an array of market names"),
])
def test_reads_is_checked(text, words) -> None:
    # Source: the rule-file format (docs/rule-files.md, key reads); line 3 holds reads.
    with pytest.raises(RuleError) as caught:
        parse_rules(text)
    assert words in caught.value.problem and caught.value.key == "reads"
    assert caught.value.span.line == 3


def test_markets_read_are_loaded_and_checked(folder, tmp_path) -> None:
    study = Study.from_text(rules("close", ["A"], reads=["B"]), folder)
    assert sorted(study.data.bars) == ["A", "B"] and study.panel.markets == ("A",)
    broken = write_folder(tmp_path, {"A": _continuous(A_DAYS, 1),
                                     "B": "date,close\n2024-01-02,abc\n"})
    with pytest.raises(DataError, match="cannot read 'abc' as a finite number"):
        Study.from_text(rules("close", ["A"], reads=["B"]), broken)
