"""The data folder check: each market's file read, validated and spliced, problems reported."""

from __future__ import annotations

import pandas as pd
import pytest

from hunchbook.core.data_check import (
    ERROR,
    EXTRA,
    MISSING,
    OK,
    check_data_folder,
    format_data_check,
)
from hunchbook.demo import DEMO_MARKETS, write_demo_data


@pytest.fixture(scope="module")
def demo_folder(tmp_path_factory):
    return write_demo_data(tmp_path_factory.mktemp("demo"), start="2016-01-04",
                           end="2017-12-29")


@pytest.fixture
def folder(tmp_path):
    return write_demo_data(tmp_path / "data", start="2016-01-04", end="2017-12-29")


def _replace_line(path, number, edit):
    """Edit 1-based line ``number`` of a text file; returns the new line."""
    lines = path.read_text(encoding="utf-8").splitlines()
    lines[number - 1] = edit(lines[number - 1])
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return lines[number - 1]


def test_demo_data_is_all_ok_with_pandas_counts(demo_folder):
    """Every demo market is ok; rows, contracts and first/last date equal what pandas reads
    from the CSV files (reference: pandas.read_csv)."""
    report = check_data_folder(demo_folder)
    assert report.ok, format_data_check(report)
    assert report.problem == ""
    assert [m.market for m in report.markets] == list(DEMO_MARKETS)
    for check in report.markets:
        frame = pd.read_csv(demo_folder / check.file, parse_dates=["date"])
        assert check.status == OK
        assert check.message == ""
        assert check.in_library
        assert check.rows == len(frame)
        assert check.contracts == frame["contract"].nunique()
        assert check.first == frame["date"].min().date()
        assert check.last == frame["date"].max().date()
        assert check.continuous is False
        assert set(check.columns) == {"open", "high", "low", "volume", "open_interest"}
        # one held contract per trading date: never more days than distinct dates in the file
        assert 0 < check.series_days <= frame["date"].nunique()


def test_duplicate_row_names_file_and_line(folder):
    """A repeated row is reported on its own line; line 1 is the header (common practice)."""
    path = folder / "CRUDE.csv"
    lines = path.read_text(encoding="utf-8").splitlines()
    lines.insert(10, lines[5])  # line 6 repeated as line 11
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    check = check_data_folder(folder).markets[0]
    assert check.status == ERROR
    assert check.message.startswith("CRUDE.csv, line 11: duplicate row")
    assert "first seen on line 6" in check.message
    assert check.rows is None


def test_bad_date_names_file_and_line(folder):
    """A date that is not YYYY-MM-DD is reported with file, line and the text found."""
    _replace_line(folder / "GOLD.csv", 7, lambda line: "2016/01/12" + line[10:])
    report = check_data_folder(folder)
    gold = next(m for m in report.markets if m.market == "GOLD")
    assert gold.status == ERROR
    assert gold.message.startswith("GOLD.csv, line 7: column 'date'")
    assert "'2016/01/12'" in gold.message
    assert not report.ok


def test_missing_csv_is_reported(folder):
    """A library market without its file is reported, naming the expected file."""
    (folder / "CORN.csv").unlink()
    corn = next(m for m in check_data_folder(folder).markets if m.market == "CORN")
    assert corn.status == MISSING
    assert corn.in_library
    assert "expected CORN.csv" in corn.message


def test_extra_csv_is_reported_and_read(folder):
    """A price file outside the library is listed after the library's markets and still read
    (rows counted as pandas counts them)."""
    (folder / "ZINC.csv").write_text("date,close\n2020-01-02,5.5\n2020-01-03,5.6\n",
                                     encoding="utf-8")
    report = check_data_folder(folder)
    zinc = report.markets[-1]
    assert zinc.market == "ZINC"
    assert zinc.status == EXTRA
    assert not zinc.in_library
    assert "not in the market library markets.toml" in zinc.message
    assert zinc.rows == len(pd.read_csv(folder / "ZINC.csv"))
    assert zinc.continuous is True
    assert zinc.contracts is None
    assert "1 not in the library" in report.summary


def test_extra_csv_with_wrong_case_gets_a_hint(folder):
    """``crude.csv`` next to a CRUDE market: the market has no file, the file has a hint."""
    (folder / "CRUDE.csv").rename(folder / "crude.csv")
    report = check_data_folder(folder)
    crude = report.markets[0]
    assert crude.status == MISSING
    assert "found crude.csv" in crude.message
    extra = report.markets[-1]
    assert extra.file == "crude.csv"
    assert "the library has 'CRUDE'" in extra.message


def test_series_that_does_not_splice_is_an_error(tmp_path):
    """A file that reads but leaves the held contract without a row on a date fails the
    continuous series: contract A (nearest expiry) is held every day but has no 2020-01-03."""
    (tmp_path / "markets.toml").write_text(
        '[XY]\nmultiplier = 10\ntick_size = 0.5\ncurrency = "USD"\ncommission = 1\n'
        "exchange_fee = 0\nregulatory_fee = 0\nslippage_ticks = 1\n", encoding="utf-8")
    (tmp_path / "XY.csv").write_text(
        "date,contract,expiry,close\n"
        "2020-01-02,A,2020-03-31,10\n2020-01-02,B,2020-06-30,11\n"
        "2020-01-03,B,2020-06-30,11.5\n"
        "2020-01-06,A,2020-03-31,10.5\n2020-01-06,B,2020-06-30,12\n", encoding="utf-8")
    check = check_data_folder(tmp_path).markets[0]
    assert check.status == ERROR
    assert check.rows == 5
    assert check.contracts == 2
    assert check.message.startswith("continuous series with the default roll: XY.csv: ")
    assert "'A'" in check.message and "2020-01-03" in check.message


def test_missing_library_is_a_folder_problem_and_files_are_still_checked(folder):
    """Without markets.toml every CSV is still read and reported (the files themselves are
    fine; none counts as in the library)."""
    (folder / "markets.toml").unlink()
    report = check_data_folder(folder)
    assert "no markets.toml" in report.problem
    assert len(report.markets) == len(DEMO_MARKETS)
    assert {m.status for m in report.markets} == {OK}
    assert not any(m.in_library for m in report.markets)
    assert report.summary.startswith("Market library problem: no markets.toml")
    assert not report.ok


def test_bad_library_names_file_market_and_key(folder):
    """A bad market library entry is reported with file, market and key."""
    path = folder / "markets.toml"
    path.write_text(path.read_text(encoding="utf-8").replace(
        "multiplier = 100.0", "multiplier = 0", 1), encoding="utf-8")
    report = check_data_folder(folder)
    assert report.problem.startswith("markets.toml, market 'GOLD', key 'multiplier'")


def test_missing_folder(tmp_path):
    """A folder that does not exist is reported, not raised."""
    report = check_data_folder(tmp_path / "nope")
    assert report.markets == ()
    assert "data folder not found" in report.problem
    assert report.summary.startswith("Not checked")


def test_progress_counts_every_file(folder):
    """Progress goes 1..n over the library's markets and the extra files."""
    (folder / "EXTRA.csv").write_text("date,close\n2020-01-02,1\n", encoding="utf-8")
    seen = []
    check_data_folder(folder, progress=lambda done, total: seen.append((done, total)))
    total = len(DEMO_MARKETS) + 1
    assert seen == [(n, total) for n in range(1, total + 1)]


def test_text_report_lists_markets_problems_and_summary(folder):
    """The text report has a line per market, each problem in full and the summary."""
    (folder / "TNOTE10.csv").unlink()
    _replace_line(folder / "EQIDX.csv", 3, lambda line: line.replace(",", ",,", 1))
    report = check_data_folder(folder)
    text = format_data_check(report)
    for check in report.markets:
        assert check.market in text
    eqidx = next(m for m in report.markets if m.market == "EQIDX")
    assert eqidx.status == ERROR and "EQIDX.csv" in eqidx.message
    assert f"- EQIDX: {eqidx.message}" in text
    assert "- TNOTE10: no price file for market 'TNOTE10'" in text
    assert text.rstrip().endswith(report.summary)
    assert "6 ok, 1 with a problem, 1 without a price file" in report.summary
