"""Calendar series on a market's own trading dates, around month ends, a year end and holidays.

Sources: Python's ``datetime`` (reference library) for month, day, weekday and day of year;
``numpy.busday_count`` (reference library) with the market's holidays for the trading days into
and to the end of each month (the market trades Monday to Friday except its holidays).
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest

from hunchbook.api import Study
from hunchbook.core.calendar_series import CALENDAR_SERIES, calendar_series
from tests.core.data_folders import rules, write_folder

# Mid-December 2023 to mid-February 2024: a year end (and a leap year's February).
# Holidays inside the data: Christmas, Boxing Day, New Year's Day, 15 January, and 31 January
# (a holiday on a month's last weekday), 1 February (on a month's first).
HOLIDAYS = ["2023-12-25", "2023-12-26", "2024-01-01", "2024-01-15", "2024-01-31",
            "2024-02-01"]
DAYS = pd.bdate_range("2023-12-13", "2024-02-14").drop(pd.DatetimeIndex(HOLIDAYS))


def _expected(day: dt.date, name: str) -> int:
    holidays = np.array(HOLIDAYS, dtype="datetime64[D]")
    first = day.replace(day=1)
    following = (first + dt.timedelta(days=32)).replace(day=1)
    d = np.datetime64(day, "D")
    return {
        "month": day.month, "day": day.day, "weekday": day.weekday(),
        "day_of_year": day.timetuple().tm_yday,
        "days_into_month": int(np.busday_count(np.datetime64(first, "D"), d,
                                               holidays=holidays)) + 1,
        "days_to_month_end": int(np.busday_count(d + 1, np.datetime64(following, "D"),
                                                 holidays=holidays)),
    }[name]


@pytest.mark.parametrize("name", CALENDAR_SERIES)
def test_against_datetime_and_busday_count(name) -> None:
    dates = DAYS.to_numpy().astype("datetime64[D]")
    expected = [_expected(day.date(), name) for day in DAYS]
    np.testing.assert_array_equal(calendar_series(dates, name), expected)


def test_hand_checked_values() -> None:
    # Source: a 2023-2024 calendar, counted by hand.
    dates = DAYS.to_numpy().astype("datetime64[D]")
    at = {str(d): i for i, d in enumerate(dates)}
    into = calendar_series(dates, "days_into_month")
    to_end = calendar_series(dates, "days_to_month_end")
    # Fri 29 Dec is the last trading day of 2023: 0 days to month end; day of year 363.
    assert to_end[at["2023-12-29"]] == 0
    assert calendar_series(dates, "day_of_year")[at["2023-12-29"]] == 363
    # Tue 2 Jan 2024 is the first trading day of January (1 Jan is a holiday).
    assert into[at["2024-01-02"]] == 1
    # Tue 30 Jan is January's last trading day (31 Jan is a holiday): 0 left.
    assert to_end[at["2024-01-30"]] == 0
    # Fri 2 Feb is February's first trading day (1 Feb is a holiday).
    assert into[at["2024-02-02"]] == 1
    # Wed 13 Dec, the first date: 9 weekdays (1, 4-8, 11-13) make it the 9th of December.
    assert into[at["2023-12-13"]] == 9
    # Wed 14 Feb, the last date: Feb 15-16, 19-23, 26-29 are 11 weekdays after it.
    assert to_end[at["2024-02-14"]] == 11


def test_each_market_on_its_own_calendar(tmp_path) -> None:
    # Two markets: one with the holidays above, one trading every weekday; the same date can
    # be a month's last trading day for one and not the other (30 Jan 2024).
    every_day = pd.bdate_range("2023-12-13", "2024-02-14")
    folder = write_folder(tmp_path, {
        "H": pd.DataFrame({"date": DAYS.strftime("%Y-%m-%d"), "close": 1.0}),
        "W": pd.DataFrame({"date": every_day.strftime("%Y-%m-%d"), "close": 1.0})})
    study = Study.from_text(rules("days_to_month_end + weekday", ["H", "W"]), folder)
    panel = study.panel
    for j, days in enumerate((DAYS, every_day)):
        n = int(panel.lengths[j])
        assert n == len(days)
        np.testing.assert_array_equal(
            panel.series["days_to_month_end"][:n, j],
            calendar_series(days.to_numpy().astype("datetime64[D]"), "days_to_month_end"))
        np.testing.assert_array_equal(panel.series["weekday"][:n, j],
                                      [d.weekday() for d in days])
        assert np.isnan(panel.series["weekday"][n:, j]).all()
    h_30 = DAYS.get_loc(pd.Timestamp("2024-01-30"))
    w_30 = every_day.get_loc(pd.Timestamp("2024-01-30"))
    assert panel.series["days_to_month_end"][h_30, 0] == 0
    assert panel.series["days_to_month_end"][w_30, 1] == 1


def test_dates_before_and_after_1970() -> None:
    # numpy counts days from 1970-01-01; earlier dates are negative numbers.
    days = pd.bdate_range("1968-12-20", "1970-01-10")
    dates = days.to_numpy().astype("datetime64[D]")
    for name, expected in (("month", [d.month for d in days]), ("day", [d.day for d in days]),
                           ("weekday", [d.weekday() for d in days]),
                           ("day_of_year", [d.timetuple().tm_yday for d in days])):
        np.testing.assert_array_equal(calendar_series(dates, name), expected)
