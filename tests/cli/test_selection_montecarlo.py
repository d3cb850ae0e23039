"""Monte Carlo check that a set picked out of a sweep is never judged as one trial.

Markets with no edge at all (driftless Gaussian random walks, generated here): the best set of
a two-average grid is re-run alone with ``hunchbook run --params`` and picked on the heatmap
(:func:`judge_pick`). Neither route may promote more often than the nominal 5 % plus two
Monte Carlo standard errors, sqrt(p (1 - p) / n) (Koehler, Brown & Haneuse (2009), "On the
assessment of Monte Carlo error in simulation-based statistical analyses", The American
Statistician 63(2)). The same best sets judged as one trial each, as the command did before,
are promoted far more often: the check can fail.
"""

from __future__ import annotations

import json
import math

from hunchbook.api import Study
from hunchbook.cli import main
from hunchbook.core.runners import InProcess
from hunchbook.core.stats import first_pass_statistics, judge_pick
from hunchbook.core.sweep_job import daily_rows
from hunchbook.core.verdict import decide
from tests.reference_impl import write_random_walk_market

SEEDS = 40
DAYS = 1500
NOMINAL = 0.05
LIBRARY = """
[RW]
name = "Generated driftless random walk (no edge by construction)"
multiplier = 100
tick_size = 0.01
currency = "USD"
commission = 0.0
exchange_fee = 0.0
regulatory_fee = 0.0
slippage_ticks = 0
"""
RULES = """
name = "Two averages on a random walk"
markets = ["RW"]
[parameters]
fast = [5, 10, 20, 40]
slow = [60, 120, 250]
constraint = "fast < slow"
[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
[sizing]
contracts = 1
"""


def test_no_edge_is_not_promoted_by_picking_the_best_set(tmp_path, capsys):
    promoted = {"params": 0, "heatmap": 0, "one trial": 0}
    rules = tmp_path / "rules.toml"
    rules.write_text(RULES)
    for seed in range(SEEDS):
        folder = tmp_path / f"m{seed}"
        write_random_walk_market(folder, LIBRARY, seed, DAYS, "2010-01-04")
        study = Study.from_text(RULES, folder)
        sweep = study.sweep(runner=InProcess(), spa_reps=200, seed=seed)
        best = sweep.sets[sweep.chosen]
        out = tmp_path / f"m{seed}.json"
        params = ",".join(f"{k}={v:g}" for k, v in best.items())
        assert main(["run", str(rules), "--data", str(folder), "--params", params,
                     "--workers", "1", "--json", str(out)]) == 0
        capsys.readouterr()
        record = json.loads(out.read_text())
        assert record["chosen"]["params"] == best and record["statistics"]["n_trials"] == 12
        promoted["params"] += record["verdict"]["outcome"] == "passes"
        start, stop = sweep.outcome.common_period
        rows = daily_rows(study.backtest, [best])
        gross, cost = rows.gross[0, start:stop], rows.cost[0, start:stop]
        promoted["heatmap"] += decide(judge_pick(gross, cost, sweep.statistics)).outcome \
            == "passes"
        alone = first_pass_statistics(gross, cost, spa_reps=200, seed=seed)
        promoted["one trial"] += decide(alone).outcome == "passes"
    bound = NOMINAL + 2 * math.sqrt(NOMINAL * (1 - NOMINAL) / SEEDS)
    assert promoted["params"] / SEEDS <= bound, promoted
    assert promoted["heatmap"] / SEEDS <= bound, promoted
    assert promoted["one trial"] > promoted["params"], promoted
