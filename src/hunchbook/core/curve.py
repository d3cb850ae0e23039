"""A market's futures curve on each date of its continuous series: the held contract, the next
contract listed after it, their expiries and carry, and figures summed over every contract.

Carry is the two-contract form of Koijen, Moskowitz, Pedersen & Vrugt (2018), "Carry", Journal
of Financial Economics 127(2): ``(F1 - F2) / (F2 * (T2 - T1))``, F1 the held (nearer) contract's
close, F2 the next one's, T their times to expiry in years, counted ACT/365 from the expiry dates.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import cached_property

import numpy as np

#: Series read from the curve (they need contract-level data).
CURVE_SERIES = ("price", "next_price", "expiry_days", "next_expiry_days", "carry",
                "curve_volume", "curve_open_interest")
#: The activity column each curve total sums.
CURVE_TOTALS = {"curve_volume": "volume", "curve_open_interest": "open_interest"}
#: Days in the year of the ACT/365 day count that turns expiry dates into years.
DAYS_PER_YEAR = 365.0


def annualised_carry(near: np.ndarray, far: np.ndarray, near_days: np.ndarray,
                     far_days: np.ndarray) -> np.ndarray:
    """``(near - far) / (far * (far_days - near_days) / 365)``: simple (not compounded) carry
    per year of holding the far contract while it rolls down to the near one's place.

    NaN where an input is NaN, ``far`` is not positive or the far contract does not expire
    later than the near one.
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        years = (far_days - near_days) / DAYS_PER_YEAR
        carry = (near - far) / (far * years)
    return np.where((far > 0) & (years > 0) & np.isfinite(carry), carry, np.nan)


@dataclass(frozen=True)
class Curve:
    """The contracts listed on each date of a continuous series.

    Attributes
    ----------
    dates
        The series' dates (``datetime64[D]``), ascending.
    held
        Index of the contract held at each date's close.
    expiry
        Each contract's expiry (``datetime64[D]``), contracts ordered by expiry.
    close
        Dates x contracts closes; NaN where a contract has no row (is not listed) that date.
    activity
        Dates x contracts ``volume`` and ``open_interest`` where the file has those columns.
    """

    dates: np.ndarray
    held: np.ndarray
    expiry: np.ndarray
    close: np.ndarray
    activity: Mapping[str, np.ndarray]

    @cached_property
    def _next(self) -> tuple[np.ndarray, np.ndarray]:
        """Index of the next contract at each date (-1: none) and whether there is one: the
        earliest-expiring contract listed that date that expires after the held one."""
        listed_rows, listed = np.nonzero(~np.isnan(self.close))  # by row, then by contract
        later = np.searchsorted(self.expiry, self.expiry[self.held], side="right")
        keep = listed >= later[listed_rows]  # contracts are ordered by expiry
        rows, first = np.unique(listed_rows[keep], return_index=True)
        nxt = np.full(len(self.dates), -1)
        nxt[rows] = listed[keep][first]
        return nxt, nxt >= 0

    def _days_to(self, contract: np.ndarray) -> np.ndarray:
        return (self.expiry[contract] - self.dates).astype(float)

    def series(self, name: str) -> np.ndarray:
        """One of :data:`CURVE_SERIES` on every date (a new array).

        ``price`` / ``next_price``: the held / next contract's close; ``expiry_days`` /
        ``next_expiry_days``: calendar days from the date to their expiries; ``carry``:
        :func:`annualised_carry` of the two; ``curve_volume`` / ``curve_open_interest``: the
        sum over every contract listed that date of its figure (contracts without one left
        out; NaN when none has one). NaN for the next contract's figures where none is listed.
        """
        rows = np.arange(len(self.dates))
        nxt, has = self._next
        if name in CURVE_TOTALS:
            values = self.activity[CURVE_TOTALS[name]]
            total = np.nansum(values, axis=1)
            return np.where(np.isnan(values).all(axis=1), np.nan, total)
        price = self.close[rows, self.held]
        if name == "price":
            return price.copy()
        if name == "expiry_days":
            return self._days_to(self.held)
        next_price = np.where(has, self.close[rows, nxt], np.nan)
        next_days = np.where(has, self._days_to(nxt), np.nan)
        if name == "next_price":
            return next_price
        if name == "next_expiry_days":
            return next_days
        if name == "carry":
            return annualised_carry(price, next_price, self._days_to(self.held), next_days)
        raise ValueError(f"'{name}' is not a curve series (known: {', '.join(CURVE_SERIES)})")
