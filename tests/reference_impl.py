"""An independent, straightforward pandas implementation of the engine's documented semantics.

Written from the rule-file documentation (docs/rule-files.md), not from the engine's code:
loops over dates, pandas rolling windows, no shared helpers with ``hunchbook.core``. Tests
compare the engine against it.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pandas as pd

#: Market library of the generated two-market test data (test input only).
TWO_MARKET_LIBRARY = """
[M1]
multiplier = 1000
tick_size = 0.01
currency = "USD"
commission = 0.85
exchange_fee = 1.45
regulatory_fee = 0.02
slippage_ticks = 1

[M2]
multiplier = 50
tick_size = 0.25
currency = "USD"
commission = 0.5
exchange_fee = 1.2
regulatory_fee = 0.02
slippage_ticks = 2
"""


def held_contracts(rows: pd.DataFrame, days_before_expiry: int) -> pd.Series:
    """Contract held at each close: the earliest-expiring contract not yet rolled by that date."""
    dates = sorted(rows["date"].unique())
    expiries = rows.groupby("contract")["expiry"].first().sort_values(kind="stable")
    roll_date = {}
    for contract, expiry in expiries.items():
        cutoff = np.busday_offset(np.datetime64(expiry, "D"), -days_before_expiry,
                                  roll="backward")
        on_or_before = [d for d in dates if np.datetime64(d, "D") <= cutoff]
        if cutoff > np.datetime64(dates[-1], "D"):
            roll_date[contract] = None  # still held at the end
        elif on_or_before:
            roll_date[contract] = on_or_before[-1]
    held = {}
    for d in dates:
        for contract in expiries.index:
            if contract in roll_date and (roll_date[contract] is None or roll_date[contract] > d):
                held[d] = contract
                break
    return pd.Series(held).sort_index()


def continuous(rows: pd.DataFrame, days_before_expiry: int, adjust: str) -> pd.DataFrame:
    """Per date: held contract, its close, the held-at-previous-close change, adjusted close."""
    held = held_contracts(rows, days_before_expiry)
    price = rows.set_index(["date", "contract"])["close"]
    out = []
    prev_date, prev_contract = None, None
    for d, contract in held.items():
        change = 0.0 if prev_date is None else (
            price[(d, prev_contract)] - price[(prev_date, prev_contract)])
        out.append({"date": d, "contract": contract, "close": price[(d, contract)],
                    "change": change, "roll": prev_contract is not None
                    and contract != prev_contract,
                    "old_close": None if prev_contract is None else price[(d, prev_contract)]})
        prev_date, prev_contract = d, contract
    frame = pd.DataFrame(out).set_index("date")
    adjusted = frame["close"].copy()
    shift, scale = 0.0, 1.0
    for i in range(len(frame) - 1, -1, -1):
        adjusted.iloc[i] = frame["close"].iloc[i] * scale + shift
        if frame["roll"].iloc[i]:
            if adjust == "difference":
                shift += frame["close"].iloc[i] - frame["old_close"].iloc[i]
            elif adjust == "ratio":
                scale *= frame["close"].iloc[i] / frame["old_close"].iloc[i]
    frame["adjusted"] = adjusted
    return frame


def backtest(frame: pd.DataFrame, target: pd.Series, multiplier: float, cost_per_contract: float,
             start: str | None = None) -> pd.DataFrame:
    """Daily P&L of a target position series (NaN = undefined) on one market's continuous frame."""
    rows = []
    prev = 0.0
    started = False
    for i, d in enumerate(frame.index):
        value = target.iloc[i]
        if not started:
            if math.isnan(value) or (start is not None and d < pd.Timestamp(start)):
                continue
            started = True
            pnl = 0.0
        else:
            pnl = prev * frame["change"].iloc[i] * multiplier
        pos = 0.0 if math.isnan(value) else value
        traded = abs(prev) + abs(pos) if frame["roll"].iloc[i] else abs(pos - prev)
        rows.append({"date": d, "contract": frame["contract"].iloc[i], "position": pos,
                     "price_change": frame["change"].iloc[i], "gross_pnl": pnl,
                     "contracts_traded": traded, "cost": traded * cost_per_contract,
                     "net_pnl": pnl - traded * cost_per_contract})
        prev = pos
    return pd.DataFrame(rows)


def random_contract_rows(seed: int, start: str, periods: int, holidays: int) -> pd.DataFrame:
    """Generated monthly contracts (test input only): random-walk closes, a few missing days."""
    rng = np.random.default_rng(seed)
    days = pd.bdate_range(start, periods=periods)
    days = days.delete(rng.choice(len(days), size=holidays, replace=False))
    rows = []
    expiries = pd.date_range(days[0], days[-1] + pd.DateOffset(months=3), freq="MS") \
        + pd.Timedelta(days=14)
    level = 80.0
    for d in days:
        level += rng.normal(0, 1.0)
        for k, expiry in enumerate(expiries):
            if expiry >= d and k < expiries.searchsorted(d) + 3:
                carry = 0.4 * (k - expiries.searchsorted(d)) * rng.choice([-1, 1])
                rows.append({"date": d, "contract": f"M{expiry:%Y%m}",
                             "expiry": expiry, "close": round(level + carry, 2)})
    return pd.DataFrame(rows)


def write_random_contracts(path: Path, seed: int, start: str, periods: int,
                           holidays: int) -> None:
    """:func:`random_contract_rows` written as a contract-level price file (test input only)."""
    rows = random_contract_rows(seed, start, periods, holidays)
    rows.assign(date=rows["date"].dt.strftime("%Y-%m-%d"),
                expiry=rows["expiry"].dt.strftime("%Y-%m-%d")).to_csv(path, index=False)


def write_random_walk_market(folder: Path, library: str, seed: int, days: int,
                             start: str) -> None:
    """A data folder holding one already-continuous market ``RW`` (described by ``library``)
    whose closes are a driftless Gaussian random walk: no edge by construction (test and
    benchmark input only)."""
    rng = np.random.default_rng(seed)
    close = 100.0 + np.cumsum(rng.normal(0.0, 1.0, days))
    dates = pd.bdate_range(start, periods=days)
    folder.mkdir()
    (folder / "markets.toml").write_text(library)
    pd.DataFrame({"date": dates.strftime("%Y-%m-%d"), "close": close}).to_csv(
        folder / "RW.csv", index=False)
