"""The common history of a data folder and the default holdout boundary (the rule documented in
hunchbook.core.history, checked against calendar arithmetic done by hand)."""

from __future__ import annotations

import datetime as dt

import pandas as pd
import pytest

from hunchbook.core.errors import DataError
from hunchbook.core.history import common_history, default_boundary
from tests.core.data_folders import write_folder


def _continuous(start: str, end: str, drop: tuple[str, ...] = ()) -> pd.DataFrame:
    days = pd.bdate_range(start, end)
    days = days[~days.isin(pd.to_datetime(list(drop)))]
    return pd.DataFrame({"date": days.strftime("%Y-%m-%d"), "close": 100.0})


def test_common_history_is_the_span_every_market_covers(tmp_path):
    folder = write_folder(tmp_path / "d", {
        "A": _continuous("2019-06-03", "2021-03-31"),
        "B": _continuous("2020-01-01", "2021-06-30"),
        "C": _continuous("2019-01-01", "2020-12-31"),
        "D": _continuous("2020-06-01", "2020-06-30"),
    })
    (folder / "D.csv").unlink()  # in the library without a price file: left out
    history = common_history(folder)
    assert history.markets == ("A", "B", "C")
    # the latest first date (B) and the earliest last date (C)
    assert (history.first, history.last) == (dt.date(2020, 1, 1), dt.date(2020, 12, 31))
    # 2020 has 262 weekdays (common practice, no source: 366 days = 52 weeks + 2 days, and
    # 2020-01-01 and 2020-01-02 are a Wednesday and a Thursday)
    assert len(history.dates) == 262


def test_the_default_boundary_holds_out_the_last_fifth(tmp_path):
    """2020-01-01 to 2020-12-31 spans 365 days; ceil(0.8 x 365) = 292 days after 2020-01-01 is
    2020-10-19 (day 293 of leap year 2020: Jan-Sep hold 31+29+31+30+31+30+31+31+30 = 274
    days, + 19), a Monday (hand arithmetic)."""
    folder = write_folder(tmp_path / "d", {"A": _continuous("2020-01-01", "2020-12-31")})
    assert default_boundary(common_history(folder)) == dt.date(2020, 10, 19)
    # with no trading on 19-21 October the boundary is the next trading date, the 22nd
    gap = write_folder(tmp_path / "g", {"A": _continuous(
        "2020-01-01", "2020-12-31", drop=("2020-10-19", "2020-10-20", "2020-10-21"))})
    assert default_boundary(common_history(gap)) == dt.date(2020, 10, 22)
    # another share: the last half of 365 days starts ceil(182.5) = 183 days after Jan 1,
    # 2020-07-02 (day 184: Jan-Jun hold 182 days, + 2), a Thursday
    assert default_boundary(common_history(folder), share=0.5) == dt.date(2020, 7, 2)


@pytest.mark.parametrize(("prices", "message"), [
    ({"A": _continuous("2020-01-01", "2020-03-31"), "B": _continuous("2021-01-01",
                                                                       "2021-03-31")},
     "the markets share no common history (the latest first date, 2021-01-01, is after the "
     "earliest last date, 2020-03-31)"),
    ({"A": _continuous("2020-01-06", "2020-01-06")},
     "the common history (2020-01-06 to 2020-01-06) is too short to hold out its last 20 %"),
])
def test_unusable_histories_are_refused(tmp_path, prices, message):
    folder = write_folder(tmp_path / "d", prices)
    with pytest.raises(DataError, match=message.replace("(", r"\(").replace(")", r"\)")):
        default_boundary(common_history(folder))


def test_a_folder_without_price_files_is_refused(tmp_path):
    folder = write_folder(tmp_path / "d", {"A": _continuous("2020-01-01", "2020-12-31")})
    (folder / "A.csv").unlink()
    with pytest.raises(DataError, match="no market of the library has a price file"):
        common_history(folder)
