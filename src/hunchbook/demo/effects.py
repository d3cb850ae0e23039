"""The effects planted in the invented demo data, market by market, and how strong each is.

The demo desk's ideas are tested on these data, so the data are built to hold a known mix of
real effects and plain noise; running the ideas then gives the spread of outcomes the demo's
stories tell (see :mod:`hunchbook.demo.catalogue`). Every effect is added to the daily change
of a market's log spot price on top of the regime-switching path of
:func:`hunchbook.demo.prices.spot_path`; the futures curve then follows the spot price.

=========  ==================================================================================
effect     what is planted (strength as set in :data:`PLANTED`)
=========  ==================================================================================
trend      a slowly wandering drift: an AR(1) process with a mean life of ``trend_days``
           trading days whose standard deviation, were the drift known exactly, would earn an
           annual Sharpe ratio of ``trend`` (strong and slow in TNOTE10 and EQIDX, strong in
           CORN and SOYBEAN, weaker and faster in CRUDE, GOLD and COPPER; none in NATGAS)
reversal   each day gives back ``reversal`` times the market's move over the previous five
           days (CORN, SOYBEAN, TNOTE10): a small short-term reversal, worth less than the
           cost of trading it every few days
month_end  an extra rise of ``month_end`` daily volatilities on each of the last three
           weekdays of a month, balanced by a small fall on the other days (EQIDX)
season     an extra rise of ``season`` daily volatilities a day from September to November,
           balanced by a small fall in the other months (SOYBEAN)
event      on the two days after a weekly storage report (Thursdays), a drift of ``event``
           daily volatilities in the direction of the report day's move (NATGAS; the report
           days are listed in the data folder's ``events.csv``)
carry      the curve's own roll yield (``carry`` in :mod:`hunchbook.demo.profiles`): futures
           converge to spot, so a backwardated curve pays its holder (CRUDE, NATGAS, COPPER,
           CORN and SOYBEAN swap between contango and backwardation)
=========  ==================================================================================

GOLD and COPPER carry nothing planted between them: their prices are linked only by the
correlation of their daily shocks, so a pair rule on their ratio finds no reversion to trade.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from hunchbook.core.periods import DAYS_PER_YEAR

#: Weekday (Monday = 0) of the invented weekly natural-gas storage report.
STORAGE_WEEKDAY = 3
#: Name of the storage report in ``events.csv``.
STORAGE_EVENT = "storage"
#: Market whose storage reports are listed in ``events.csv``.
STORAGE_MARKET = "NATGAS"
#: Days of the move that the reversal effect looks back over.
REVERSAL_DAYS = 5
#: Farthest the trend carries the log-price (1: a factor of about 2.7 up or down): a drift
#: that would take it further stalls (adds nothing) until the drift turns, so prices stay in a
#: plausible range.
TREND_CAP = 1.0
#: Last weekdays of a month that carry the month-end effect.
MONTH_END_DAYS = 3
#: Months of the seasonal effect.
SEASON_MONTHS = (9, 10, 11)


@dataclass(frozen=True)
class Planted:
    """The planted effects of one market (all zero: none); see the module docstring."""

    trend: float = 0.0
    trend_days: int = 150
    reversal: float = 0.0
    month_end: float = 0.0
    season: float = 0.0
    event: float = 0.0


#: What is planted in each demo market, and how strongly.
PLANTED: dict[str, Planted] = {
    "CRUDE": Planted(trend=1.5, trend_days=60),
    "NATGAS": Planted(event=0.07),
    "GOLD": Planted(trend=1.2, trend_days=60),
    "COPPER": Planted(trend=1.2, trend_days=60),
    "CORN": Planted(trend=1.8, reversal=0.05),
    "SOYBEAN": Planted(trend=1.8, reversal=0.05, season=0.08),
    "TNOTE10": Planted(trend=2.0, trend_days=250, reversal=0.012),
    "EQIDX": Planted(trend=2.4, trend_days=250, month_end=0.25),
}


@dataclass(frozen=True)
class PlantedTerms:
    """A market's planted effects laid out over the weekday grid, ready for the price loop.

    ``drift`` is the trend's daily log drift and ``level`` the log-price it adds up to (within
    :data:`TREND_CAP`); ``push`` the calendar effects in daily
    volatilities; ``event_day`` marks the storage-report days; ``reversal`` and ``event`` are
    the strengths of :class:`Planted`.
    """

    drift: np.ndarray
    level: np.ndarray
    push: np.ndarray
    event_day: np.ndarray
    reversal: float
    event: float


def planted_terms(symbol: str, grid: np.ndarray, annual_vol: float,
                  rng: np.random.Generator) -> PlantedTerms:
    """The planted effects of ``symbol`` over the weekday ``grid`` (``datetime64[D]``).

    Parameters
    ----------
    symbol
        A key of :data:`PLANTED`.
    grid
        The weekday dates of the price loop.
    annual_vol
        The market's typical annualised volatility (scales the trend's drift).
    rng
        The generator of the trend's drift (drawn whether or not a trend is planted, so the
        draws that follow do not depend on it).
    """
    p = PLANTED[symbol]
    n = len(grid)
    phi = 1.0 - 1.0 / p.trend_days
    # Stationary std of the drift: trend x daily vol / sqrt(days a year), an annual Sharpe.
    drift_sd = p.trend * annual_vol / DAYS_PER_YEAR
    cap = TREND_CAP
    noise = rng.standard_normal(n) * drift_sd * np.sqrt(1.0 - phi * phi)
    drift = np.empty(n)
    path = np.empty(n)
    level = rng.standard_normal() * drift_sd
    added = 0.0
    for t in range(n):
        level = phi * level + noise[t]
        drift[t] = level
        if abs(added + level) <= cap:
            added += level
        path[t] = added
    months = grid.astype("datetime64[M]")
    last_in_month = np.r_[months[1:] != months[:-1], True]
    left = _weekdays_left(last_in_month)
    month_no = months.astype(int) % 12 + 1
    month_end = (left < MONTH_END_DAYS).astype(float)
    season = np.isin(month_no, SEASON_MONTHS).astype(float)
    # Each calendar effect is paid for by a small fall on the other days, so it moves prices
    # around within the month or year without carrying them away over eighteen years.
    push = (p.month_end * (month_end - month_end.mean())
            + p.season * (season - season.mean()))
    weekday = (grid.astype("datetime64[D]").astype(int) + 3) % 7  # 1970-01-01 was a Thursday
    event_day = (weekday == STORAGE_WEEKDAY) if p.event else np.zeros(n, dtype=bool)
    return PlantedTerms(drift, path, push.astype(float), event_day, p.reversal, p.event)


def _weekdays_left(last_in_month: np.ndarray) -> np.ndarray:
    """Per day, how many later weekdays of its month follow (0 on the month's last one)."""
    n = len(last_in_month)
    ends = np.flatnonzero(last_in_month)
    next_end = ends[np.searchsorted(ends, np.arange(n))]
    return next_end - np.arange(n)
