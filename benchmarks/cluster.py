"""Where a Dask cluster starts to pay on this machine: a sweep run by local worker processes
(``LocalProcesses()``, forked) against the same sweep on a local
Dask cluster of two worker processes (``DaskRunner``: the payload scattered once, chunks sent
back), at 1,000, 10,000 and 100,000 parameter sets of a two-average cross.

Prints min / median / max seconds over a few runs and the ratio of the medians (not a test;
shared machines are noisy, so the two ways alternate run by run and meet the same load; each
local run is timed in a fresh process, where the workers fork). The cluster is started once
and reused for its runs; its start-up is printed on its own line (``hunchbook run --cluster
local`` pays it on every command).
Generated inputs (benchmark data only). The larger sweeps use fewer markets and shorter
histories to stay within a few minutes: each line says the markets and days used.
Run: .venv/bin/python benchmarks/cluster.py [--repeats N]
"""

from __future__ import annotations

import argparse
import os
import pickle
import platform
import statistics
import subprocess
import sys
import time
from functools import partial
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).parent))
from engine import make_inputs  # noqa: E402
from timing import repeat_times  # noqa: E402

from hunchbook.cluster import DaskRunner, local_cluster  # noqa: E402
from hunchbook.core.engine import Backtest  # noqa: E402
from hunchbook.core.expr import parse_expression  # noqa: E402
from hunchbook.core.panel import build_panel  # noqa: E402
from hunchbook.core.rules.model import SizingSpec  # noqa: E402
from hunchbook.core.runners import LocalProcesses  # noqa: E402
from hunchbook.core.sweep import run_sweep  # noqa: E402
from hunchbook.core.sweep_estimate import pilot_period  # noqa: E402
from hunchbook.core.sweep_job import SweepPayload  # noqa: E402
from hunchbook.core.sweep_period import period_plan  # noqa: E402

RULE = "sign(mean(close, fast) - mean(close, slow))"
#: (sets, markets, days, fast values, slow values): fast x slow = sets.
SIZES = [
    (1_000, 20, 10_000, range(2, 42, 2), range(50, 550, 10)),
    (10_000, 5, 2_000, range(2, 102), range(110, 1110, 10)),
    (100_000, 2, 500, range(2, 252), range(50, 450)),
]


def backtest(markets: int, days: int) -> Backtest:
    """The cross over generated markets."""
    series, specs = make_inputs(days=days, markets=markets)
    return Backtest(build_panel(series, specs),
                    parse_expression(RULE, series_names={"close"},
                                     param_names={"fast", "slow"}),
                    SizingSpec(contracts=1.0))


def spread(times: list[float]) -> str:
    """min / median / max seconds."""
    return f"{min(times):7.2f} / {statistics.median(times):7.2f} / {max(times):7.2f} s"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=3, help="runs of each (default 3)")
    parser.add_argument("--local-run", type=int, metavar="SIZE", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.local_run is not None:  # one timed run in a fresh process (see local_seconds)
        _, markets, days, fast, slow = SIZES[args.local_run]
        bt, sets = backtest(markets, days), grid(fast, slow)
        start = time.perf_counter()
        run_sweep(bt, sets, runner=LocalProcesses())
        print(time.perf_counter() - start)
        return
    print(f"machine: {platform.machine()}, {os.cpu_count()} CPUs, "
          f"{platform.python_implementation()} {platform.python_version()}, "
          f"numpy {np.__version__}; {args.repeats} runs each, min / median / max; load "
          f"average {os.getloadavg()[0]:.1f} (other work on the machine skews every figure; "
          "the two ways alternate, so that both meet the same load)")
    start = time.perf_counter()
    cluster = local_cluster(2)
    started = time.perf_counter() - start
    print(f"local Dask cluster of 2 worker processes started in {started:.2f} s "
          "(paid once per `--cluster local` command)")
    with cluster, DaskRunner(cluster.scheduler_address) as dask_runner:
        for size, (n_sets, markets, days, fast, slow) in enumerate(SIZES):
            bt, sets = backtest(markets, days), grid(fast, slow)
            local, dask = [], []
            for _ in range(args.repeats):
                local.append(local_seconds(size))
                dask += repeat_times(partial(run_sweep, bt, sets, runner=dask_runner), 1)
            payload = SweepPayload(bt, period_plan(*pilot_period(bt, sets), len(sets)))
            payload_mb = len(pickle.dumps(payload, protocol=5)) / 2**20
            print(f"\n{n_sets:,} sets (fast {fast[0]}..{fast[-1]} x slow {slow[0]}.."
                  f"{slow[-1]}) over {markets} markets x {days:,} days; payload "
                  f"{payload_mb:.1f} MB")
            print(f"  local processes ({os.cpu_count()} workers, forked): {spread(local)}")
            print(f"  local Dask cluster (2 workers):       {spread(dask)}")
            ratio = statistics.median(dask) / statistics.median(local)
            print(f"  ratio Dask / local processes (medians): {ratio:.2f} x "
                  "(below 1: the cluster pays)")
    print(f"\nload average at the end: {os.getloadavg()[0]:.1f}")


def local_seconds(size: int) -> float:
    """Seconds of one sweep of ``SIZES[size]`` on local processes, timed in a fresh process:
    they fork only while their process runs no other thread, and this one runs the Dask
    client's (here they would be spawned)."""
    out = subprocess.run([sys.executable, __file__, "--local-run", str(size)], check=True,
                         capture_output=True, text=True).stdout
    return float(out.split()[-1])


def grid(fast: range, slow: range) -> list[dict[str, float]]:
    """Every (fast, slow) pair, in grid order."""
    return [{"fast": float(f), "slow": float(s)} for f in fast for s in slow]


if __name__ == "__main__":
    main()
