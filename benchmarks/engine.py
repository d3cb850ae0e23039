"""Engine speed: one rule over 20 markets x 10,000 days, against a straightforward pandas run.

Prints figures and the ratio; it is not a test (shared machines are noisy). Generated inputs.
Run: .venv/bin/python benchmarks/engine.py
"""

from __future__ import annotations

import platform
import time

import numpy as np
import pandas as pd

from hunchbook.core.continuous import ContinuousSeries
from hunchbook.core.engine import Backtest
from hunchbook.core.expr import parse_expression
from hunchbook.core.markets import MarketSpec
from hunchbook.core.panel import build_panel
from hunchbook.core.rules.model import SizingSpec

MARKETS, DAYS, FAST, SLOW = 20, 10_000, 20, 100
RULE = f"sign(mean(close, {FAST}) - mean(close, {SLOW}))"


def make_inputs(seed: int = 7, *, own_calendars: bool = False, days: int = DAYS,
                markets: int = MARKETS) -> tuple[list[ContinuousSeries], list[MarketSpec]]:
    """Generated continuous series of ``markets`` markets over ``days`` days with a roll every
    63 bars (benchmark input only); with ``own_calendars`` each market trades on its own random
    98 % of the business days."""
    rng = np.random.default_rng(seed)
    every = np.busday_offset(np.datetime64("1985-01-01"),
                             np.arange(int(days * 1.02) if own_calendars else days),
                             roll="forward")
    series, specs = [], []
    for j in range(markets):
        dates = np.sort(rng.choice(every, size=days, replace=False)) if own_calendars else every
        change = rng.normal(0, 1, days)
        change[0] = 0.0
        roll = np.zeros(days, dtype=bool)
        roll[63::63] = True
        close = 100 + np.cumsum(change)
        contract = np.array([f"C{k}" for k in np.cumsum(roll)], dtype=object)
        series.append(ContinuousSeries(market=f"M{j}", dates=dates, contract=contract,
                                       close_raw=close, change=change, roll=roll,
                                       adjusted={"close": close}))
        specs.append(MarketSpec(symbol=f"M{j}", multiplier=1000.0, tick_size=0.01,
                                currency="USD", commission=0.85, exchange_fee=1.45,
                                regulatory_fee=0.02, slippage_ticks=1.0))
    return series, specs


def pandas_run(series: list[ContinuousSeries], specs: list[MarketSpec]) -> pd.Series:
    """The same run written plainly with pandas, market by market."""
    total = None
    for s, spec in zip(series, specs, strict=True):
        close = pd.Series(s.adjusted["close"], index=pd.DatetimeIndex(s.dates))
        pos = np.sign(close.rolling(FAST).mean() - close.rolling(SLOW).mean())
        first = pos.first_valid_index()
        pos = pos.loc[first:].fillna(0.0)
        prev = pos.shift(1).fillna(0.0)
        change = pd.Series(s.change, index=close.index).loc[first:]
        roll = pd.Series(s.roll, index=close.index).loc[first:]
        gross = prev * change * spec.multiplier
        traded = (pos - prev).abs().where(~roll, prev.abs() + pos.abs())
        net = gross - traded * spec.cost_per_contract
        total = net if total is None else total.add(net, fill_value=0.0)
    return total


def best_of(fn, repeats: int) -> tuple[float, object]:
    best, out = float("inf"), None
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def main() -> None:
    series, specs = make_inputs()
    panel = build_panel(series, specs)
    expr = parse_expression(RULE, series_names={"close"}, param_names=())
    sizing = SizingSpec(contracts=1.0)
    engine_s, output = best_of(lambda: Backtest(panel, expr, sizing).run({}), 7)
    pandas_s, reference = best_of(lambda: pandas_run(series, specs), 3)
    portfolio = output.portfolio()["net_pnl"]
    agree = np.allclose(portfolio.to_numpy(), reference.loc[portfolio.index].to_numpy(),
                        rtol=1e-9, atol=1e-6)
    print(f"machine: {platform.machine()}, {platform.python_implementation()} "
          f"{platform.python_version()}, numpy {np.__version__}, pandas {pd.__version__}")
    print(f"rule: {RULE}; {MARKETS} markets x {DAYS:,} days")
    print(f"engine (best of 7):           {engine_s * 1000:8.1f} ms   (target < 50 ms)")
    print(f"straightforward pandas (3):   {pandas_s * 1000:8.1f} ms")
    print(f"ratio pandas / engine:        {pandas_s / engine_s:8.1f} x")
    print(f"results agree to 1e-9:        {agree}")


if __name__ == "__main__":
    main()
