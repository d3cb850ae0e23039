"""Sweep speed and memory: 20 markets x 10,000 days x 1,000 sets of a two-average cross.

Prints (not a test; shared machines are noisy), with the machine's load average at the start:
- the whole ``hunchbook run`` command (load, sweep, statistics with SPA, verdict, JSON), as a
  child process, several times: min / median / max seconds and each run's peak memory
  (target: at most 2.5 s);
- the sweep engine alone in this process (every set's P&L and figures over 2 worker
  processes, without the SPA test), several times;
- a straightforward pandas loop over the sets computing the same P&L, timed on a sample of
  sets and scaled up, in this process; and its ratios to the whole run and to the sweep engine
  (target: at least 15x).
Inputs are generated (benchmark data only). Run: .venv/bin/python benchmarks/sweep.py [REPEATS]
"""

from __future__ import annotations

import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).parent))
from engine import make_inputs  # noqa: E402

FAST = list(range(2, 42, 2))        # 20 values
SLOW = list(range(50, 550, 10))     # 50 values -> 1,000 sets
RULE = "sign(mean(close, fast) - mean(close, slow))"
PANDAS_SAMPLE = 20
REPEATS = 5


def write_folder(folder: Path, *, markets: int = 20, days: int = 10_000,
                 fast: list[int] = FAST, slow: list[int] = SLOW) -> Path:
    """Data folder of generated continuous markets and a rule file declaring fast x slow
    sets (1,000 by default)."""
    series, specs = make_inputs(markets=markets, days=days)
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
    names = ", ".join(f'"{s.market}"' for s in series)
    rules = folder / "cross.toml"
    rules.write_text(f'name = "Benchmark cross"\nmarkets = [{names}]\n[parameters]\n'
                     f"fast = {fast}\nslow = {slow}\n[signal]\nposition = \"{RULE}\"\n")
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


def run_cli(rules: Path, folder: Path, *extra: str) -> tuple[float, float]:
    """Seconds and peak memory (MB, the largest process of the run) of one whole
    ``hunchbook run`` as a child process."""
    exe = Path(sys.executable).with_name("hunchbook")
    t0 = time.perf_counter()
    child = subprocess.Popen([str(exe), "run", str(rules), "--data", str(folder), "--json",
                              str(folder / "out.json"), "--yes", *extra],
                             stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(child.pid, 0)
    seconds = time.perf_counter() - t0
    if status:
        print(child.stderr.read().decode() if child.stderr else "", file=sys.stderr)
        raise SystemExit(1)
    return seconds, usage.ru_maxrss / 1024


def describe(values: list[float], unit: str = "s") -> str:
    """min / median / max of repeated figures."""
    return (f"min {min(values):.2f} {unit}, median {statistics.median(values):.2f} {unit}, "
            f"max {max(values):.2f} {unit}")


def machine() -> str:
    """The machine, its software and its load average now."""
    load = ", ".join(f"{x:.2f}" for x in os.getloadavg())
    return (f"machine: {platform.machine()}, {os.cpu_count()} CPUs, load average {load}; "
            f"{platform.python_implementation()} {platform.python_version()}, "
            f"numpy {np.__version__}, pandas {pd.__version__}")


def sweep_engine_seconds(sets: list[dict[str, float]], repeats: int) -> list[float]:
    """Seconds of :func:`run_sweep` over the generated markets (2 worker processes, no SPA)."""
    from hunchbook.core.engine import Backtest
    from hunchbook.core.expr import parse_expression
    from hunchbook.core.panel import build_panel
    from hunchbook.core.rules.model import SizingSpec
    from hunchbook.core.sweep import run_sweep

    series, specs = make_inputs()
    backtest = Backtest(build_panel(series, specs),
                        parse_expression(RULE, series_names={"close"},
                                         param_names={"fast", "slow"}),
                        SizingSpec(contracts=1.0))
    out = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        run_sweep(backtest, sets, spa_reps=0)
        out.append(time.perf_counter() - t0)
    return out


def pandas_seconds(sets: list[dict[str, float]], markets: int = 20,
                   days: int = 10_000) -> tuple[float, int]:
    """Seconds of the plain pandas loop over all the sets (scaled from a sample) and the sample
    size."""
    series, specs = make_inputs(markets=markets, days=days)
    closes = [pd.Series(s.adjusted["close"], index=pd.DatetimeIndex(s.dates)) for s in series]
    changes = [pd.Series(s.change, index=c.index) for s, c in zip(series, closes, strict=True)]
    sample = sets[:: max(1, len(sets) // PANDAS_SAMPLE)][:PANDAS_SAMPLE]
    t0 = time.perf_counter()
    for p in sample:
        pandas_set(closes, changes, int(p["fast"]), int(p["slow"]),
                   specs[0].cost_per_contract, specs[0].multiplier)
    return (time.perf_counter() - t0) / len(sample) * len(sets), len(sample)


def main() -> None:
    repeats = int(sys.argv[1]) if len(sys.argv) > 1 else REPEATS
    print(machine())
    sets = [{"fast": float(f), "slow": float(s)} for f in FAST for s in SLOW]
    with tempfile.TemporaryDirectory() as tmp:
        rules = write_folder(Path(tmp))
        runs = [run_cli(rules, Path(tmp)) for _ in range(repeats)]
    seconds, peaks = [r[0] for r in runs], [r[1] for r in runs]
    print(f"sets: {len(sets):,} over 20 markets x 10,000 days; rule {RULE}")
    print(f"whole `hunchbook run` (load, sweep, statistics with SPA, verdict, JSON), "
          f"{repeats} runs: {describe(seconds)} (target <= 2.5 s)")
    print(f"peak memory of the largest process of each run: {describe(peaks, 'MB')}")
    engine = sweep_engine_seconds(sets, repeats)
    print(f"sweep engine alone (every set's P&L and figures, no SPA), {repeats} runs: "
          f"{describe(engine)}")
    loop, sample = pandas_seconds(sets)
    print(f"pandas loop over the sets, scaled from {sample} sets: {loop:.1f} s")
    print(f"ratio pandas loop / whole run (median): {loop / statistics.median(seconds):.1f} x; "
          f"pandas loop / sweep engine (median): {loop / statistics.median(engine):.1f} x "
          "(target >= 15 x)")
    print(f"load average at the end: {', '.join(f'{x:.2f}' for x in os.getloadavg())}")


if __name__ == "__main__":
    main()
