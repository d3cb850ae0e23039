"""How often the verdict promotes with no edge (its size) and with a planted edge (its power).

Not a test: a Monte Carlo study that prints rates with their Monte Carlo standard errors,
sqrt(p (1 - p) / n) (Koehler, Brown & Haneuse (2009), The American Statistician 63(2)).

Each seed generates one market with no edge at all (a driftless Gaussian random walk, generated
here: benchmark data only) and runs a two-average grid of about 100 sets over it through the real
engine (``Study.sweep``). From that sweep's daily P&L:

- *null sweep*: the sweep judged as the tool judges it (every set a trial);
- *null pick*: the best set judged as picked out of the sweep (``judge_pick``: ``run --params``
  and a heatmap click take this route), and the same set judged as one trial, as ``run --params``
  did before selection was counted;
- *null stats*: the best set's P&L given to ``hunchbook stats`` without ``--trials``;
- *edge*: a planted true net Sharpe ratio of ``EDGE`` a year in every set (a constant daily gain
  of EDGE / sqrt(252) of each set's own daily volatility added to its net P&L), judged as a sweep;
- *one year*: the last 252 days of the null and of the edge sweeps, for "needs more data".

Run: .venv/bin/python benchmarks/verdict_rates.py [--seeds N] (default 200; about 1 s a seed).
"""

from __future__ import annotations

import argparse
import math
import sys
import tempfile
import time
from collections import Counter
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from tests.reference_impl import write_random_walk_market  # noqa: E402

from hunchbook.api import Study
from hunchbook.core.runners import InProcess
from hunchbook.core.stats import first_pass_statistics, judge_pick
from hunchbook.core.sweep_job import daily_rows
from hunchbook.core.verdict import LABELS, decide

YEARS, EDGE, SPA_REPS, ONE_YEAR = 10, 1.0, 300, 252
LIBRARY = """
[RW]
name = "Generated driftless random walk (benchmark data, no edge by construction)"
multiplier = 100
tick_size = 0.01
currency = "USD"
commission = 1.0
exchange_fee = 0.5
regulatory_fee = 0.02
slippage_ticks = 1
"""
RULES = """
name = "Two averages"
markets = ["RW"]
[parameters]
fast = { start = 5, stop = 50, step = 5 }
slow = { start = 60, stop = 240, step = 20 }
[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
[sizing]
contracts = 1
"""


def sweep_pnl(folder: Path, seed: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Daily gross P&L, cost and per-set sizes of the grid over a fresh random walk."""
    write_random_walk_market(folder, LIBRARY, seed, YEARS * 252 + 260, "2000-01-03")
    study = Study.from_text(RULES, folder)
    start, stop = study.sweep(runner=InProcess(), spa_reps=0).outcome.common_period
    rows = daily_rows(study.backtest, study.parameter_sets())
    gross, cost = rows.gross[:, start:stop].T, rows.cost[:, start:stop].T
    return gross, cost, (gross - cost).std(axis=0, ddof=1)


def judged(gross: np.ndarray, cost: np.ndarray, seed: int, **kwargs: object) -> str:
    return decide(first_pass_statistics(gross, cost, spa_reps=SPA_REPS, seed=seed,
                                        **kwargs)).outcome  # type: ignore[arg-type]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", type=int, default=200)
    args = parser.parse_args()
    counts: dict[str, Counter[str]] = {}
    trials: list[tuple[int, int]] = []
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmp:
        for seed in range(args.seeds):
            gross, cost, sd = sweep_pnl(Path(tmp) / f"m{seed}", seed)
            edge = gross + EDGE / math.sqrt(252) * sd  # true net Sharpe EDGE in every set
            stats = first_pass_statistics(gross, cost, spa_reps=SPA_REPS, seed=seed)
            trials.append((stats.n_trials, stats.dsr_trials))
            k = stats.chosen
            outcomes = {
                "null sweep": decide(stats).outcome,
                "null pick (judge_pick, run --params)": decide(
                    judge_pick(gross[:, k], cost[:, k], stats)).outcome,
                "null pick judged as one trial (before)": judged(gross[:, k], cost[:, k], seed),
                "null stats without --trials": judged(gross[:, k], cost[:, k], seed,
                                                      selection_known=False),
                f"edge {EDGE:g} sweep": judged(edge, cost, seed),
                "null one year": judged(gross[-ONE_YEAR:], cost[-ONE_YEAR:], seed),
                f"edge {EDGE:g} one year": judged(edge[-ONE_YEAR:], cost[-ONE_YEAR:], seed),
            }
            for name, outcome in outcomes.items():
                counts.setdefault(name, Counter())[outcome] += 1
    n = args.seeds
    raw, effective = np.array(trials).T
    print(f"{n} seeds, {YEARS} years, {raw[0]} sets a sweep; effective trials (Li & Ji 2005) "
          f"median {np.median(effective):.0f}, range {effective.min()}-{effective.max()}; "
          f"{time.perf_counter() - t0:.0f} s")
    keys = list(LABELS)
    print(f"{'route':<42}" + "".join(f"{LABELS[k]:>17}" for k in keys))
    for name, counter in counts.items():
        cells = []
        for key in keys:
            p = counter[key] / n
            cells.append(f"{100 * p:5.1f} % ±{100 * math.sqrt(p * (1 - p) / n):4.1f}")
        print(f"{name:<42}" + "".join(f"{c:>17}" for c in cells))
    print("± is one Monte Carlo standard error. Nominal size of Promote on no edge: 5 %.")


if __name__ == "__main__":
    main()
