"""Contract schedule of a demo market: codes, listing dates and expiry dates."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from hunchbook.demo.profiles import MarketProfile


@dataclass(frozen=True)
class ContractSchedule:
    """The contracts of one market that trade inside a date window, ordered by expiry.

    ``codes`` are ``"<MARKET>-<year>-<month>"`` (delivery year and month); ``listing`` and
    ``expiry`` are ``datetime64[D]`` business days: a contract trades from its listing date to
    its expiry date, both included.
    """

    codes: np.ndarray
    listing: np.ndarray
    expiry: np.ndarray


def contract_schedule(profile: MarketProfile, calendar: np.ndarray,
                      start: np.datetime64, end: np.datetime64) -> ContractSchedule:
    """The contracts of ``profile`` that trade on at least one day from ``start`` to ``end``.

    Parameters
    ----------
    profile
        The market's behaviour (cycle, listing span, expiry rule).
    calendar
        The market's business days, covering ``start`` to beyond the last expiry needed
        (about ``profile.listed_months`` months after ``end``).
    start, end
        The data window.
    """
    codes, listing, expiry = [], [], []
    first = _month_index(start) - 1
    last = _month_index(end) + profile.listed_months + 1
    for month_index in range(first, last + 1):
        year, month = divmod(month_index, 12)
        month += 1
        if month not in profile.months:
            continue
        expires = _expiry(profile, calendar, year, month)
        listed = _on_or_after(calendar, _month_start(month_index - profile.listed_months))
        if expires < start or listed > end:
            continue
        codes.append(f"{profile.symbol}-{year:04d}-{month:02d}")
        listing.append(listed)
        expiry.append(expires)
    return ContractSchedule(np.array(codes), np.array(listing, dtype="datetime64[D]"),
                            np.array(expiry, dtype="datetime64[D]"))


def _month_index(day: np.datetime64) -> int:
    return int(np.datetime64(day, "M").astype(int)) + 1970 * 12


def _month_start(month_index: int) -> np.datetime64:
    year, month = divmod(month_index, 12)
    return np.datetime64(f"{year:04d}-{month + 1:02d}-01", "D")


def _on_or_after(calendar: np.ndarray, day: np.datetime64) -> np.datetime64:
    return calendar[np.searchsorted(calendar, day, side="left")]


def _on_or_before(calendar: np.ndarray, day: np.datetime64) -> np.datetime64:
    return calendar[np.searchsorted(calendar, day, side="right") - 1]


def _expiry(profile: MarketProfile, calendar: np.ndarray, year: int, month: int) -> np.datetime64:
    month_start = np.datetime64(f"{year:04d}-{month:02d}-01", "D")
    if profile.expiry_rule == "before_month":
        before = np.searchsorted(calendar, month_start, side="left")
        return calendar[before - profile.expiry_param]
    if profile.expiry_rule == "on_or_before_day":
        return _on_or_before(calendar, month_start + (profile.expiry_param - 1))
    first_friday = np.busday_offset(month_start, 0, roll="forward", weekmask="Fri")
    return _on_or_before(calendar, first_friday + 14)
