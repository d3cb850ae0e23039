"""Continuous futures series: which contract is held each day, its own price changes, and the
back-adjusted series the rules read.

P&L is never taken from the adjusted series: :attr:`ContinuousSeries.change` is the held
contract's own price change. The adjustment only shapes what the signal expressions see.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from hunchbook.core.curve import Curve
from hunchbook.core.errors import DataError
from hunchbook.core.prices import ACTIVITY_COLUMNS, PRICE_COLUMNS, MarketBars
from hunchbook.core.rules.model import RollSpec
from hunchbook.core.rules.roll import DEFAULT_ADJUST, adjust_method, roll_rule


@dataclass(frozen=True)
class ContinuousSeries:
    """One market spliced into a single series, one row per date.

    Attributes
    ----------
    dates
        Trading dates (``datetime64[D]``), ascending.
    contract
        Contract held at the close of each date.
    close_raw
        The held contract's own close on each date.
    change
        Price change that a position held from the previous close earns: the close of the
        contract held at the previous close, minus its previous close (0 on the first row).
    roll
        True on dates whose close switches to a new contract.
    adjusted
        Back-adjusted ``close`` (and ``open``, ``high``, ``low`` where present), plus the held
        contract's unadjusted ``volume`` and ``open_interest`` where present.
    curve
        The contracts listed on each date, for the curve series (``None`` for a file that is
        already continuous, which has no curve).
    """

    market: str
    dates: np.ndarray
    contract: np.ndarray
    close_raw: np.ndarray
    change: np.ndarray
    roll: np.ndarray
    adjusted: dict[str, np.ndarray]
    curve: Curve | None = None

    def __len__(self) -> int:
        return len(self.dates)

    def to_frame(self) -> pd.DataFrame:
        """The series as a DataFrame indexed by date."""
        frame = pd.DataFrame({"contract": self.contract, "close_raw": self.close_raw,
                              "change": self.change, "roll": self.roll, **self.adjusted},
                             index=pd.DatetimeIndex(self.dates, name="date"))
        return frame


def build_continuous(bars: MarketBars, roll: RollSpec) -> ContinuousSeries:
    """Splice a market's contracts into one back-adjusted continuous series.

    Parameters
    ----------
    bars
        The market's rows as read by :func:`hunchbook.core.prices.read_market_csv`.
    roll
        Roll rule and adjustment method, named as in :mod:`hunchbook.core.rules.roll`.

    Raises
    ------
    DataError
        A held contract with no close on a date it is held, a switch roll without the needed
        column, or a non-positive price where the adjustment needs positive prices.
    ValueError
        A roll rule or adjustment method that :mod:`hunchbook.core.rules.roll` does not name
        (a rule file never gives one: the parser refuses it).
    """
    rule, method = roll_rule(roll.rule), adjust_method(roll.adjust)
    if rule is None or method is None:
        raise ValueError(f"unknown roll rule '{roll.rule}' or adjustment '{roll.adjust}'")
    frame = bars.frame
    dates = np.unique(frame["date"].to_numpy().astype("datetime64[D]"))
    table = _ContractTable.from_frame(frame, dates)
    if bars.continuous:
        held = np.zeros(len(dates), dtype=np.int64)
    elif rule.method == "expiry":
        held = _held_by_expiry(table, dates, roll.days_before_expiry)
    else:
        column = rule.column
        if column is None or column not in frame:
            raise DataError(f"roll switch '{rule.name}' needs a '{column}' column",
                            file=bars.file)
        held = _held_by_switch(table, dates, column)

    rows = np.flatnonzero(held >= 0)
    if rows.size == 0:
        raise DataError("no date has a contract to hold (check expiries and the roll rule)",
                        file=bars.file)
    first, last = rows[0], rows[-1]
    held, dates_used = held[first:last + 1], dates[first:last + 1]
    if (held < 0).any():
        gap = dates_used[np.flatnonzero(held < 0)[0]]
        raise DataError(f"no contract left to hold on {gap} (all earlier ones rolled)",
                        file=bars.file)
    idx = np.arange(first, last + 1)
    close = table.values["close"][idx, held]
    missing = np.isnan(close)
    if missing.any():
        at = np.flatnonzero(missing)[0]
        raise DataError(f"contract '{table.names[held[at]]}' is held on {dates_used[at]} "
                        "but has no row for that date", file=bars.file)

    prev_held = np.concatenate(([held[0]], held[:-1]))
    close_prev_contract = table.values["close"][idx, prev_held]
    change = np.zeros(len(idx))
    change[1:] = close_prev_contract[1:] - close[:-1]
    is_roll = np.concatenate(([False], held[1:] != held[:-1]))
    if np.isnan(change).any():
        at = np.flatnonzero(np.isnan(change))[0]
        raise DataError(f"contract '{table.names[prev_held[at]]}' is rolled on {dates_used[at]} "
                        "but has no row for that date", file=bars.file)

    if method.needs_positive_prices:
        _check_positive(table, idx, held, is_roll, bars.file, method.name)
    scale, shift = _ADJUSTMENTS[method.name](close, close_prev_contract, is_roll)
    adjusted = {column: table.values[column][idx, held] * scale + shift
                for column in ("close", *PRICE_COLUMNS) if column in table.values}
    for column in ACTIVITY_COLUMNS:
        if column in table.values:
            adjusted[column] = table.values[column][idx, held]
    curve = None if bars.continuous else Curve(
        dates=dates_used, held=held, expiry=table.expiry,
        close=table.values["close"][first:last + 1],
        activity={c: table.values[c][first:last + 1] for c in ACTIVITY_COLUMNS
                  if c in table.values})
    return ContinuousSeries(market=bars.market, dates=dates_used,
                            contract=np.asarray(table.names, dtype=object)[held],
                            close_raw=close, change=change, roll=is_roll, adjusted=adjusted,
                            curve=curve)


@dataclass(frozen=True)
class _ContractTable:
    """Dates x contracts matrices of each column; contracts ordered by expiry."""

    names: list[str]
    expiry: np.ndarray
    values: dict[str, np.ndarray]
    lines: np.ndarray

    @classmethod
    def from_frame(cls, frame: pd.DataFrame, dates: np.ndarray) -> _ContractTable:
        order = frame.drop_duplicates("contract").sort_values(["expiry", "contract"])
        names = order["contract"].tolist()
        col_of = {name: i for i, name in enumerate(names)}
        r = np.searchsorted(dates, frame["date"].to_numpy().astype("datetime64[D]"))
        c = frame["contract"].map(col_of).to_numpy()
        values = {}
        for column in ("close", *PRICE_COLUMNS, *ACTIVITY_COLUMNS):
            if column in frame:
                matrix = np.full((len(dates), len(names)), np.nan)
                matrix[r, c] = frame[column].to_numpy(dtype=float)
                values[column] = matrix
        lines = np.zeros((len(dates), len(names)), dtype=np.int64)
        lines[r, c] = frame["line"].to_numpy()
        return cls(names=names, expiry=order["expiry"].to_numpy().astype("datetime64[D]"),
                   values=values, lines=lines)


def _held_by_expiry(table: _ContractTable, dates: np.ndarray, days: int) -> np.ndarray:
    """Index of the contract held at each close (-1: none) under the days-before-expiry rule."""
    cutoff = np.busday_offset(table.expiry, -days, roll="backward")
    # a contract is rolled at the close of the last file date on or before its cutoff
    roll_row = np.searchsorted(dates, cutoff, side="right") - 1
    roll_row[cutoff > dates[-1]] = len(dates)  # still held at the end of the file
    # held at t: the earliest-expiring contract whose roll row lies after t
    held = np.searchsorted(roll_row, np.arange(len(dates)), side="right")
    held[held >= len(table.names)] = -1
    return held


def _held_by_switch(table: _ContractTable, dates: np.ndarray, column: str) -> np.ndarray:
    """Hold the front contract until the next one's volume (or open interest) exceeds it.

    The switch is taken at the close of the first date the next contract's figure is larger,
    and at the latest at the close of the held contract's last date on or before its expiry.
    """
    activity = np.nan_to_num(table.values[column], nan=-np.inf)
    close = table.values["close"]
    last_row = np.searchsorted(dates, table.expiry, side="right") - 1
    held = np.full(len(dates), -1, dtype=np.int64)
    current = -1
    for t in range(len(dates)):
        if current < 0:
            listed = np.flatnonzero(~np.isnan(close[t]) & (last_row >= t))
            if listed.size == 0:
                continue
            current = int(listed[0])
        nxt = current + 1
        if nxt < len(table.names) and not np.isnan(close[t, nxt]) and (
                activity[t, nxt] > activity[t, current] or last_row[current] <= t):
            current = nxt
        held[t] = current
    return held


Scaling = tuple[np.ndarray | float, np.ndarray | float]


def _difference(close: np.ndarray, close_prev_contract: np.ndarray,
                is_roll: np.ndarray) -> Scaling:
    """Scale and shift adding to every price before a roll at the close of r from A to B the
    gap B_r - A_r, summed over all later rolls."""
    gaps = np.where(is_roll, close - close_prev_contract, 0.0)
    return 1.0, np.concatenate((np.cumsum(gaps[::-1])[::-1][1:], [0.0]))


def _ratio(close: np.ndarray, close_prev_contract: np.ndarray, is_roll: np.ndarray) -> Scaling:
    """Scale and shift multiplying every price before a roll at the close of r from A to B by
    B_r / A_r, over all later rolls."""
    ratios = np.where(is_roll, close / np.where(is_roll, close_prev_contract, 1.0), 1.0)
    return np.concatenate((np.cumprod(ratios[::-1])[::-1][1:], [1.0])), 0.0


def _unadjusted(close: np.ndarray, close_prev_contract: np.ndarray,
                is_roll: np.ndarray) -> Scaling:
    """Prices as traded: every roll leaves its jump."""
    return 1.0, 0.0


#: The computation of each back-adjustment method of :mod:`hunchbook.core.rules.roll`.
_ADJUSTMENTS = {"difference": _difference, "ratio": _ratio, "none": _unadjusted}


def _check_positive(table: _ContractTable, idx: np.ndarray, held: np.ndarray,
                    is_roll: np.ndarray, file: str, method: str) -> None:
    """An adjustment that divides by prices needs every price it reads to be positive."""
    prev_held = np.concatenate(([held[0]], held[:-1]))
    for column in ("close", *PRICE_COLUMNS):
        if column not in table.values:
            continue
        for rows, contracts in ((idx, held), (idx[is_roll], prev_held[is_roll])):
            values = table.values[column][rows, contracts]
            bad = values <= 0
            if bad.any():
                at = np.flatnonzero(bad)[0]
                line = int(table.lines[rows[at], contracts[at]])
                raise DataError(f"column '{column}': price {values[at]:g} is not positive, "
                                f"which the {method} adjustment needs (use adjust = "
                                f"\"{DEFAULT_ADJUST.name}\")", file=file, line=line)
