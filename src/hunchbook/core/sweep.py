"""Parameter sweeps: every declared parameter set, gross and net, fast and in bounded memory.

:func:`run_sweep` hands the sets to a runner (:mod:`hunchbook.core.runners`: in this process
or over local worker processes, or any object following :class:`SweepRunner`), which runs
them in chunks (:mod:`hunchbook.core.sweep_job`); each chunk leaves its sets' figures and its
part of the statistics over the common period, never its daily rows.

The common period must be known before the chunks run. A few pilot sets (the extremes of
every parameter and a spread of the rest, see :mod:`hunchbook.core.sweep_estimate`) place it;
when the sweep shows that a set starts later (or stops earlier) than every pilot set, the
chunks run again over the right period, so the result never depends on the guess.
"""

from __future__ import annotations

from collections.abc import Sequence

from hunchbook.core.engine import Backtest
from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.core.runners import InProcess, LocalProcesses
from hunchbook.core.sweep_estimate import SweepEstimate, pilot_period
from hunchbook.core.sweep_job import (
    CancelCheck,
    Params,
    Progress,
    SweepCancelled,
    SweepJob,
    SweepOutcome,
    SweepRunner,
)
from hunchbook.core.sweep_period import period_plan

__all__ = ["CancelCheck", "InProcess", "LocalProcesses", "Progress", "SweepCancelled",
           "SweepOutcome", "SweepRunner", "run_sweep"]


def run_sweep(backtest: Backtest, sets: Sequence[Params], *, runner: SweepRunner | None = None,
              progress: Progress | None = None, cancel: CancelCheck | None = None,
              others: int = 0, spa_reps: int = 1000, seed: int = 0,
              periods: int = DAYS_PER_YEAR,
              estimate: SweepEstimate | None = None) -> SweepOutcome:
    """Run every parameter set over one backtest.

    Parameters
    ----------
    backtest
        The prepared rule and panel.
    sets
        Parameter sets in grid order (neighbours adjacent, so chunks share window functions).
    runner
        Where the sets run; default :class:`LocalProcesses` with one worker per CPU.
    progress
        Called with (sets done, total) as chunks finish.
    cancel
        Polled between chunks (and between sets in this process); True stops the sweep.
    others
        Earlier trials that will join the statistics (their columns follow the sets').
    spa_reps, seed, periods
        The SPA test's replications (0: none) and seed; periods per year.
    estimate
        The sweep's estimate, when one was made (its pilot sets place the common period).

    Raises
    ------
    SweepCancelled
        When ``cancel`` returned True.
    """
    start, stop = estimate.period if estimate is not None else pilot_period(backtest, sets)
    runner = runner if runner is not None else LocalProcesses()
    for _ in range(2):
        plan = period_plan(start, stop, len(sets), others=others, spa_reps=spa_reps,
                           seed=seed, periods=periods)
        job = SweepJob(backtest, sets, plan, progress=progress, cancel=cancel)
        runner.run(job)
        outcome = job.outcome()
        if outcome.common_period == (plan.start, plan.stop):
            return outcome
        start, stop = outcome.common_period  # a set outside every pilot's period: run again
    raise AssertionError("the common period moved between two runs of the same sets")
