"""Calendar series of a market's dates: month, day, weekday, day of year, and its trading days
into and to the end of each month, counted on the market's own calendar (its dates)."""

from __future__ import annotations

import numpy as np

#: Series computed from a market's dates.
CALENDAR_SERIES = ("month", "day", "weekday", "day_of_year", "days_into_month",
                   "days_to_month_end")


def calendar_series(dates: np.ndarray, name: str) -> np.ndarray:
    """One of :data:`CALENDAR_SERIES` on each of a market's ``dates`` (ascending
    ``datetime64[D]``, its trading dates), as floats.

    ``month`` 1-12, ``day`` 1-31, ``weekday`` 0 (Monday) to 6 (Sunday), ``day_of_year`` 1-366;
    ``days_into_month`` is 1 on the market's first trading date of a month, 2 on its second, ...;
    ``days_to_month_end`` is the number of its trading dates later in the same month (0 on its
    last). In the first month of the dates, the days of that month before the first date are
    counted as Monday-to-Friday weekdays, and in the last month the days after the last date, as
    the data do not show the market's calendar there.
    """
    dates = np.asarray(dates, dtype="datetime64[D]")
    month_start = dates.astype("datetime64[M]").astype("datetime64[D]")
    if name == "month":
        return (dates.astype("datetime64[M]").astype(np.int64) % 12 + 1).astype(float)
    if name == "day":
        return ((dates - month_start).astype(np.int64) + 1).astype(float)
    if name == "weekday":  # 1970-01-01, day 0, was a Thursday (weekday 3)
        return ((dates.astype(np.int64) + 3) % 7).astype(float)
    if name == "day_of_year":
        year_start = dates.astype("datetime64[Y]").astype("datetime64[D]")
        return ((dates - year_start).astype(np.int64) + 1).astype(float)
    if name in ("days_into_month", "days_to_month_end"):
        return _trading_days(dates, month_start, to_end=name == "days_to_month_end")
    raise ValueError(f"'{name}' is not a calendar series (known: {', '.join(CALENDAR_SERIES)})")


def _trading_days(dates: np.ndarray, month_start: np.ndarray, *, to_end: bool) -> np.ndarray:
    """Each date's position among its month's dates (1 = first), or the count of its month's
    dates after it; weekdays outside the dates fill the first and the last month."""
    count = len(dates)
    if count == 0:
        return np.empty(0)
    rows = np.arange(count)
    boundary = np.ones(count, dtype=bool)  # a month's first date, or (to_end) its last
    if to_end:
        boundary[:-1] = month_start[:-1] != month_start[1:]
        last_row = np.minimum.accumulate(np.where(boundary, rows, count - 1)[::-1])[::-1]
        days = (last_row - rows).astype(float)
        next_month = (dates[-1].astype("datetime64[M]") + 1).astype("datetime64[D]")
        days[last_row == count - 1] += np.busday_count(dates[-1] + 1, next_month)
        return days
    boundary[1:] = month_start[1:] != month_start[:-1]
    first_row = np.maximum.accumulate(np.where(boundary, rows, 0))
    days = (rows - first_row + 1).astype(float)
    days[first_row == 0] += np.busday_count(month_start[0], dates[0])
    return days
