"""Sweep speed and memory: 20 markets x 10,000 days x 1,000 sets of a two-average cross.

Prints (not a test; shared machines are noisy):
- the whole ``hunchbook run`` command, statistics and verdict included, as a child process,
  and its peak memory (target: under 10 s and under 2 GB on a 2-core machine);
- the sweep engine alone against a straightforward pandas loop over the sets, in this process
  (target: at least 20x). The pandas loop is timed on a sample of sets and scaled up.
Inputs are generated (benchmark data only). Run: .venv/bin/python benchmarks/sweep.py
"""

from __future__ import annotations

import os
import platform
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).parent))
from engine import make_inputs  # noqa: E402

from hunchbook.core.engine import Backtest  # noqa: E402
from hunchbook.core.expr import parse_expression  # noqa: E402
from hunchbook.core.panel import build_panel  # noqa: E402
from hunchbook.core.rules.model import SizingSpec  # noqa: E402
from hunchbook.core.sweep import run_sweep  # noqa: E402

FAST = list(range(2, 42, 2))        # 20 values
SLOW = list(range(50, 550, 10))     # 50 values -> 1,000 sets
RULE = "sign(mean(close, fast) - mean(close, slow))"
PANDAS_SAMPLE = 20


def write_folder(folder: Path) -> Path:
    """Data folder of 20 continuous markets and a rule file declaring the 1,000 sets."""
    series, specs = make_inputs()
    lines = []
    for s, spec in zip(series, specs, strict=True):
        pd.DataFrame({"date": pd.DatetimeIndex(s.dates).strftime("%Y-%m-%d"),
                      "close": np.round(s.close_raw + 1000, 2)}) \
            .to_csv(folder / f"{s.market}.csv", index=False)
        lines += [f"[{s.market}]", f"multiplier = {spec.multiplier}",
                  f"tick_size = {spec.tick_size}", 'currency = "USD"',
                  f"commission = {spec.commission}", f"exchange_fee = {spec.exchange_fee}",
                  f"regulatory_fee = {spec.regulatory_fee}",
                  f"slippage_ticks = {spec.slippage_ticks}", ""]
    (folder / "markets.toml").write_text("\n".join(lines))
    markets = ", ".join(f'"{s.market}"' for s in series)
    rules = folder / "cross.toml"
    rules.write_text(f'name = "Benchmark cross"\nmarkets = [{markets}]\n[parameters]\n'
                     f"fast = {FAST}\nslow = {SLOW}\n[signal]\nposition = \"{RULE}\"\n")
    return rules


def pandas_set(closes: list[pd.Series], changes: list[pd.Series], fast: int, slow: int,
               cost: float, multiplier: float) -> dict[str, object]:
    """One set written plainly with pandas, market by market (continuous markets: no rolls),
    giving what the sweep engine gives: daily portfolio gross P&L and cost, and per market the
    gross, cost and net totals, net and gross Sharpe ratios and contracts traded."""
    gross_total = cost_total = None
    markets = []
    for close, change in zip(closes, changes, strict=True):
        pos = np.sign(close.rolling(fast).mean() - close.rolling(slow).mean())
        first = pos.first_valid_index()
        pos = pos.loc[first:].fillna(0.0)
        prev = pos.shift(1).fillna(0.0)
        gross = prev * change.loc[first:] * multiplier
        traded = (pos - prev).abs()
        costs = traded * cost
        net = gross - costs
        markets.append({"gross": gross.sum(), "cost": costs.sum(), "net": net.sum(),
                        "gross_sharpe": gross.mean() / gross.std() * 252 ** 0.5,
                        "net_sharpe": net.mean() / net.std() * 252 ** 0.5,
                        "contracts": traded.sum()})
        gross_total = gross if gross_total is None else gross_total.add(gross, fill_value=0.0)
        cost_total = costs if cost_total is None else cost_total.add(costs, fill_value=0.0)
    return {"gross": gross_total, "cost": cost_total, "markets": markets}


def main() -> None:
    print(f"machine: {platform.machine()}, {os.cpu_count()} CPUs, "
          f"{platform.python_implementation()} {platform.python_version()}, "
          f"numpy {np.__version__}, pandas {pd.__version__}")
    sets = [{"fast": float(f), "slow": float(s)} for f in FAST for s in SLOW]
    with tempfile.TemporaryDirectory() as tmp:
        rules = write_folder(Path(tmp))
        exe = Path(sys.executable).with_name("hunchbook")
        t0 = time.perf_counter()
        proc = subprocess.run([str(exe), "run", str(rules), "--data", tmp, "--json",
                               str(Path(tmp) / "out.json")], capture_output=True, text=True)
        whole = time.perf_counter() - t0
        peak_mb = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
        if proc.returncode:
            print(proc.stderr)
            raise SystemExit(1)
    print(f"sets: {len(sets)} over 20 markets x 10,000 days; rule {RULE}")
    print(f"whole `hunchbook run` (load, sweep, statistics, verdict): {whole:6.2f} s "
          f"(target < 10 s)")
    print(f"peak memory of the largest process of that run:          {peak_mb:6.0f} MB "
          "(target < 2,048 MB)")

    series, specs = make_inputs()
    backtest = Backtest(build_panel(series, specs),
                        parse_expression(RULE, series_names={"close"},
                                         param_names={"fast", "slow"}),
                        SizingSpec(contracts=1.0))
    t0 = time.perf_counter()
    run_sweep(backtest, sets)
    engine = time.perf_counter() - t0
    closes = [pd.Series(s.adjusted["close"], index=pd.DatetimeIndex(s.dates)) for s in series]
    changes = [pd.Series(s.change, index=c.index) for s, c in zip(series, closes, strict=True)]
    sample = sets[:: len(sets) // PANDAS_SAMPLE][:PANDAS_SAMPLE]
    t0 = time.perf_counter()
    for p in sample:
        pandas_set(closes, changes, int(p["fast"]), int(p["slow"]),
                   specs[0].cost_per_contract, specs[0].multiplier)
    per_set = (time.perf_counter() - t0) / len(sample)
    print(f"sweep engine, all sets, {os.cpu_count()} workers:          {engine:6.2f} s")
    print(f"pandas loop, {per_set * 1000:.1f} ms/set x {len(sets)} sets (scaled from "
          f"{len(sample)}): {per_set * len(sets):6.2f} s")
    print(f"ratio pandas / sweep engine:                             "
          f"{per_set * len(sets) / engine:6.1f} x (target >= 20 x)")


if __name__ == "__main__":
    main()
