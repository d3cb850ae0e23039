"""Parameter sweeps: every declared parameter set, gross and net, fast and in bounded memory.

:func:`run_sweep` hands the sets to a runner (:mod:`hunchbook.core.runners`: in this process
or over local worker processes, or any object following :class:`SweepRunner`), which runs
them in chunks (:mod:`hunchbook.core.sweep_job`) and returns them to the job, which assembles
the :class:`SweepOutcome`.
"""

from __future__ import annotations

from collections.abc import Sequence

from hunchbook.core.engine import Backtest
from hunchbook.core.runners import InProcess, LocalProcesses
from hunchbook.core.sweep_job import (
    CancelCheck,
    Params,
    Progress,
    SweepCancelled,
    SweepJob,
    SweepOutcome,
    SweepRunner,
)

__all__ = ["CancelCheck", "InProcess", "LocalProcesses", "Progress", "SweepCancelled",
           "SweepOutcome", "SweepRunner", "run_sweep"]


def run_sweep(backtest: Backtest, sets: Sequence[Params], *, runner: SweepRunner | None = None,
              progress: Progress | None = None,
              cancel: CancelCheck | None = None) -> SweepOutcome:
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

    Raises
    ------
    SweepCancelled
        When ``cancel`` returned True.
    """
    job = SweepJob(backtest, sets, progress=progress, cancel=cancel)
    (runner if runner is not None else LocalProcesses()).run(job)
    return job.outcome()
