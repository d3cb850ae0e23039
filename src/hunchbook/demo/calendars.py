"""Trading calendars of the demo markets: weekdays minus a per-sector set of invented holidays.

Every sector closes on 1 January and 25 December; each sector also closes on three fixed dates of
its own (invented). A holiday that falls on a weekend is simply not observed.
"""

from __future__ import annotations

import numpy as np

#: Closed dates (month, day) shared by every sector.
COMMON_HOLIDAYS = ((1, 1), (12, 25))
#: Invented closed dates (month, day) of each sector, on top of :data:`COMMON_HOLIDAYS`.
SECTOR_HOLIDAYS: dict[str, tuple[tuple[int, int], ...]] = {
    "energy": ((2, 16), (7, 3), (11, 26)),
    "metals": ((3, 9), (8, 24), (12, 26)),
    "grains": ((4, 7), (6, 12), (10, 15)),
    "rates": ((1, 20), (5, 28), (10, 9)),
    "equity index": ((2, 17), (5, 26), (9, 1)),
}


def holidays(sector: str, first_year: int, last_year: int) -> np.ndarray:
    """All closed dates of ``sector`` in the given years (weekend dates included), sorted.

    Parameters
    ----------
    sector
        A key of :data:`SECTOR_HOLIDAYS`.
    first_year, last_year
        Inclusive range of calendar years.

    Returns
    -------
    numpy.ndarray
        ``datetime64[D]`` dates.
    """
    days = COMMON_HOLIDAYS + SECTOR_HOLIDAYS[sector]
    dates = [f"{year:04d}-{month:02d}-{day:02d}"
             for year in range(first_year, last_year + 1) for month, day in days]
    return np.unique(np.array(dates, dtype="datetime64[D]"))


def weekdays(start: np.datetime64, end: np.datetime64) -> np.ndarray:
    """Monday-to-Friday dates from ``start`` to ``end`` inclusive, as ``datetime64[D]``."""
    days = np.arange(start, end + np.timedelta64(1, "D"), dtype="datetime64[D]")
    return days[np.is_busday(days)]


def business_days(sector: str, start: np.datetime64, end: np.datetime64) -> np.ndarray:
    """Trading dates of ``sector`` from ``start`` to ``end`` inclusive, as ``datetime64[D]``."""
    first_year = int(str(start)[:4])
    last_year = int(str(end)[:4])
    days = weekdays(start, end)
    return days[~np.isin(days, holidays(sector, first_year, last_year))]
