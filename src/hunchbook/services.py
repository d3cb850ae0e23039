"""Work that spans the engine and the catalogue, shared by the command line and the window."""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

import pandas as pd

from hunchbook import __version__
from hunchbook.api import EarlierTrials, SetResult, Study
from hunchbook.catalogue import Catalogue
from hunchbook.core.errors import HunchbookError, RuleError
from hunchbook.core.prices import MarketData, data_fingerprint
from hunchbook.core.results import RunSummary
from hunchbook.core.rules import parse_rules
from hunchbook.core.sweep import CancelCheck, Progress, SweepRunner, run_sweep
from hunchbook.starter import STARTER_HINT, is_starter
from hunchbook.store import pnl
from hunchbook.store.records import TrialHistory


@dataclass(frozen=True)
class IdeaRun:
    """A recorded quick run of an idea: its record, the chosen set's engine output, the run id."""

    summary: RunSummary
    chosen: SetResult
    run_id: int
    revision_number: int


def daily_pnl(chosen: SetResult, walk_forward: pd.Series | None) -> pd.DataFrame:
    """The daily P&L kept with a run: the chosen set's, and beside it the walk-forward test's
    out-of-sample net P&L (NaN outside the test)."""
    frame = chosen.portfolio[list(pnl.PNL_COLUMNS)]
    if walk_forward is None:
        return frame
    return frame.assign(**{pnl.WALK_FORWARD: walk_forward.reindex(frame.index)})


def recompute_earlier_trials(history: TrialHistory, data_folder: str | os.PathLike[str], *,
                             loaded: MarketData | None = None,
                             runner: SweepRunner | None = None,
                             cancel: CancelCheck | None = None) -> EarlierTrials:
    """The idea's earlier trials recomputed on the current data, so that the SPA test, the
    effective number of trials and the trials' Sharpe variance cover every set ever run.

    ``loaded`` is the data already read for the new run: rule texts on the same markets reuse
    it instead of reading the folder again. A strategy whose rule text no longer runs on this
    data (a market left the folder, say) keeps its stored net Sharpe ratios: its trials still
    count, one each.
    """
    frames: list[pd.DataFrame] = []
    sharpes: list[float] = []
    for strategy in history.earlier:
        try:
            rules = parse_rules(strategy.rule_text)
            if loaded is not None and all(m in loaded.bars for m in (*rules.markets,
                                                                      *rules.reads)):
                study = Study(rules, loaded)
            else:
                study = Study.from_text(strategy.rule_text, data_folder)
        except HunchbookError:
            sharpes += [v for v in strategy.net_sharpes if v is not None]
            continue
        outcome = run_sweep(study.backtest, list(strategy.parameter_sets), runner=runner,
                            cancel=cancel)
        frames.append(pd.DataFrame(outcome.net, index=pd.DatetimeIndex(outcome.dates)))
    net = pd.concat(frames, axis=1).fillna(0.0) if frames else None
    return EarlierTrials(net=net, sharpes=tuple(sharpes), total=history.total)


def run_idea(catalogue: Catalogue, idea_id: int, rule_text: str,
             data_folder: str | os.PathLike[str], *, by: str, rule_file: str | None = None,
             runner: SweepRunner | None = None, progress: Progress | None = None,
             cancel: CancelCheck | None = None, spa_reps: int = 1000) -> IdeaRun:
    """Save the rule text as the idea's revision, run its whole declared space, judge it with
    every trial the idea has ever had counted, and record the run on the idea.

    Raises
    ------
    HunchbookError
        Bad rules or data (nothing is recorded), rules that are still the unedited starter
        template (a placeholder is never recorded as the idea), or a catalogue refusal (for
        example an idea that has not been accepted for testing).
    """
    if is_starter(rule_text):
        raise RuleError(STARTER_HINT, file=rule_file)
    study = Study.from_text(rule_text, data_folder, file=rule_file)
    history = catalogue.prospective_trials(idea_id, rule_text, study.parameter_sets())
    earlier = recompute_earlier_trials(history, data_folder, loaded=study.data, runner=runner,
                                       cancel=cancel)
    report = study.sweep(runner=runner, progress=progress, cancel=cancel, earlier=earlier,
                         spa_reps=spa_reps)
    chosen = study.run_set(report.sets[report.chosen])
    summary = report.summarise(chosen, currency=study.panel.currency,
                               data_folder=str(Path(data_folder)))
    with catalogue.transaction():  # the revision and its run are kept together, or neither
        revision = catalogue.save_rules(idea_id, rule_text, by=by)
        run_id = catalogue.record_run(
            idea_id, revision_id=revision.id, summary=summary,
            data_fingerprint=data_fingerprint(study.data), engine_version=__version__,
            daily_pnl=daily_pnl(chosen, report.walk_forward_pnl), by=by)
    return IdeaRun(summary=summary, chosen=chosen, run_id=run_id,
                   revision_number=revision.number)
