"""Work that spans the engine and the catalogue, shared by the command line and the window."""

from __future__ import annotations

import datetime as dt
import os
from collections.abc import Callable
from dataclasses import dataclass, replace
from pathlib import Path

import pandas as pd

from hunchbook import __version__
from hunchbook.api import EarlierTrials, SetResult, Study
from hunchbook.catalogue import Catalogue
from hunchbook.core.book import compare_with_book
from hunchbook.core.data_changes import compare_markets
from hunchbook.core.errors import DataError, HunchbookError, RuleError
from hunchbook.core.history import HOLDOUT_SHARE, common_history, default_boundary
from hunchbook.core.holdout import held_out, holdout_figures, holdout_seen_warning
from hunchbook.core.prices import (
    MarketData,
    data_fingerprint,
    held_out_dates,
    load_data,
    market_fingerprints,
)
from hunchbook.core.results import RunSummary
from hunchbook.core.rules import parse_rules
from hunchbook.core.sweep import CancelCheck, Progress, SweepCancelled, SweepRunner
from hunchbook.core.sweep_estimate import SweepEstimate
from hunchbook.core.sweep_job import daily_rows
from hunchbook.starter import STARTER_HINT, is_starter
from hunchbook.store import pnl
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import HoldoutView, TrialHistory


@dataclass(frozen=True)
class IdeaRun:
    """A recorded quick run of an idea: its record, the chosen set's engine output, the run id,
    and the holdout boundary its data were cut at with the count of held-out dates the data
    folder holds for its markets (their prices were not read)."""

    summary: RunSummary
    chosen: SetResult
    run_id: int
    revision_number: int
    boundary: dt.date
    held_out_days: int


@dataclass(frozen=True)
class HoldoutPlan:
    """What unlocking an idea's holdout will run: the in-sample run it continues, its rule
    revision and chosen set, and the held-out dates (from ``boundary`` on; ``held_out_days``
    of them, ``first_held`` to ``last_held``, in the data folder's files of the rules'
    markets; ``None`` when no data folder was looked at)."""

    idea_id: int
    run_id: int
    revision_id: int
    revision_number: int
    chosen_params: dict[str, float]
    boundary: dt.date
    held_out_days: int | None = None
    first_held: dt.date | None = None
    last_held: dt.date | None = None


def default_holdout_reason(folder: str | os.PathLike[str]) -> tuple[dt.date, str]:
    """The default holdout boundary of a data folder (:mod:`hunchbook.core.history`) and the
    reason journalled with it."""
    history = common_history(folder)
    boundary = default_boundary(history)
    return boundary, (f"last {100 * HOLDOUT_SHARE:.0f} % of the common history of "
                      f"{Path(folder)} "
                      f"({history.first} to {history.last}, {len(history.markets)} markets)")


def daily_pnl(chosen: SetResult, walk_forward: pd.Series | None) -> pd.DataFrame:
    """The daily P&L kept with a run: the chosen set's, and beside it the walk-forward test's
    out-of-sample net P&L (NaN outside the test)."""
    frame = chosen.portfolio[list(pnl.PNL_COLUMNS)]
    if walk_forward is None:
        return frame
    return frame.assign(**{pnl.WALK_FORWARD: walk_forward.reindex(frame.index)})


def recompute_earlier_trials(history: TrialHistory, data_folder: str | os.PathLike[str], *,
                             loaded: MarketData | None = None,
                             before: dt.date | None = None,
                             cancel: CancelCheck | None = None) -> EarlierTrials:
    """The idea's earlier trials recomputed on the current data, so that the SPA test, the
    effective number of trials and the trials' Sharpe variance cover every set ever run.

    ``loaded`` is the data already read for the new run (cut at ``before``, the holdout
    boundary): rule texts on the same markets reuse it instead of reading the folder again. A
    strategy whose rule text no longer runs on this data (a market left the folder, say) keeps
    its stored net Sharpe ratios: its trials still count, one each. The earlier sets run in
    this process (their daily net P&L is kept for the tests).
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
                study = Study.from_text(strategy.rule_text, data_folder, before=before)
        except HunchbookError:
            sharpes += [v for v in strategy.net_sharpes if v is not None]
            continue
        rows = daily_rows(study.backtest, list(strategy.parameter_sets), cancel=cancel)
        frames.append(pd.DataFrame(rows.net.T,
                                   index=pd.DatetimeIndex(study.panel.union_dates)))
    net = pd.concat(frames, axis=1).fillna(0.0) if frames else None
    return EarlierTrials(net=net, sharpes=tuple(sharpes), total=history.total)


def run_idea(catalogue: Catalogue, idea_id: int, rule_text: str,
             data_folder: str | os.PathLike[str], *, by: str, rule_file: str | None = None,
             runner: SweepRunner | None = None, progress: Progress | None = None,
             cancel: CancelCheck | None = None, spa_reps: int = 1000,
             confirm: Callable[[SweepEstimate], bool] | None = None,
             capital: float | None = None) -> IdeaRun:
    """Save the rule text as the idea's revision, run its whole declared space on the dates
    before the catalogue's holdout boundary, judge it with every trial the idea has ever had
    counted, and record the run on the idea.

    A catalogue without a boundary gets the default one of the data folder (the last 20 % of
    its common history held out; :mod:`hunchbook.core.history`), set by ``by`` and journalled
    with the run. The chosen set is compared with the promoted ideas (the idea itself left out;
    :mod:`hunchbook.core.book`): the record keeps the comparison, and the verdict warns when the
    run is mostly the same bet as one of them or as their book. A run outside the
    pre-registration frozen at the first run says so too
    (:meth:`Catalogue.check_preregistration`). Once the idea's holdout was unlocked, the verdict
    says so in its last reason. ``confirm`` is asked before a long or large sweep (see
    :meth:`Study.sweep`). The record keeps one digest per market of the prices read and,
    when the idea ran before, which markets changed since its last run
    (``summary.data_changes``; :mod:`hunchbook.core.data_changes`). The chosen set's figures
    against a capital use the rule file's ``[sizing] capital``, else ``capital``, else the
    catalogue's desk setting ``capital``, else none; the record says which
    (:func:`hunchbook.core.capital_figures.resolve_capital`).

    Raises
    ------
    HunchbookError
        Bad rules or data (nothing is recorded), rules that are still the unedited starter
        template (a placeholder is never recorded as the idea), or a catalogue refusal (for
        example an idea that has not been accepted for testing, or a run outside the
        pre-registration in force: checked before the sweep).
    """
    if is_starter(rule_text):
        raise RuleError(STARTER_HINT, file=rule_file)
    setting = catalogue.holdout_boundary()
    if setting is None:
        boundary, default_reason = default_holdout_reason(data_folder)
    else:
        boundary, default_reason = setting.boundary, None
    study = Study.from_text(rule_text, data_folder, file=rule_file, before=boundary)
    data_warnings = study.data_warnings()  # data with a quality error is refused here
    # refused here, before the sweep, when the run lies outside the pre-registration in force
    prereg = catalogue.check_preregistration(idea_id, rule_text, study.parameter_sets())
    desk_capital = catalogue.desk_setting("capital")
    history = catalogue.prospective_trials(idea_id, rule_text, study.parameter_sets())
    earlier = recompute_earlier_trials(history, data_folder, loaded=study.data, before=boundary,
                                       cancel=cancel)
    report = study.sweep(runner=runner, progress=progress, cancel=cancel, earlier=earlier,
                         spa_reps=spa_reps, confirm=confirm)
    chosen = study.run_set(report.sets[report.chosen])
    book = compare_with_book(chosen.portfolio["net_pnl"],
                             catalogue.promoted_pnl(exclude_idea=idea_id))
    seen = catalogue.holdout_view(idea_id)
    report = report.rejudged(  # the facts beyond the statistics, given together
        [*data_warnings, *prereg, *book.warnings(), *([] if seen is None else
                                      [holdout_seen_warning(seen.seen_at, seen.seen_by)])])
    fingerprint, markets = data_fingerprint(study.data), market_fingerprints(study.data)
    last = catalogue.data_read(idea_id=idea_id)
    changes = None if last is None else compare_markets(
        last.run_id, last.markets, markets, whole_changed=last.data_fingerprint != fingerprint,
        since_uuid=last.uuid)
    summary = replace(report.summarise(chosen, currency=study.panel.currency,
                                       data_folder=str(Path(data_folder)),
                                       holdout_boundary=boundary, capital=capital,
                                       desk_capital=desk_capital), book=book,
                      market_fingerprints=markets, data_changes=changes)
    with catalogue.transaction():  # the revision and its run are kept together, or neither
        if default_reason is not None and catalogue.holdout_boundary() is None:
            catalogue.set_holdout_boundary(boundary, by=by, reason=default_reason)
        current = catalogue.holdout_boundary()
        if current is None or current.boundary != boundary:
            raise CatalogueError("the holdout boundary was changed while the run went; run "
                                 "it again", field="holdout boundary")
        revision = catalogue.save_rules(idea_id, rule_text, by=by)
        run_id = catalogue.record_run(
            idea_id, revision_id=revision.id, summary=summary,
            data_fingerprint=fingerprint, engine_version=__version__,
            daily_pnl=daily_pnl(chosen, report.walk_forward_pnl), by=by)
    return IdeaRun(summary=summary, chosen=chosen, run_id=run_id,
                   revision_number=revision.number, boundary=boundary,
                   held_out_days=study.data.held_out_days)


def holdout_plan(catalogue: Catalogue, idea_id: int,
                 data_folder: str | os.PathLike[str] | None = None) -> HoldoutPlan:
    """What :func:`unlock_holdout` would run for the idea, for a person to confirm; with a
    data folder, also the held-out dates it holds for the run's markets (only dates are
    taken from those rows).

    Raises
    ------
    HunchbookError
        When the holdout cannot be unlocked (already seen, with who and when; no run; a run
        that saw past the boundary: :meth:`Catalogue.unlock_problem` says why), or the data
        folder cannot be read or holds no date on or after the boundary.
    """
    problem = catalogue.unlock_problem(idea_id)
    if problem is not None:
        raise CatalogueError(problem, field=f"idea {idea_id}")
    run = catalogue.runs(idea_id)[-1]
    setting = catalogue.holdout_boundary()
    assert setting is not None
    plan = HoldoutPlan(idea_id=idea_id, run_id=run.id, revision_id=run.revision_id,
                       revision_number=run.revision_number,
                       chosen_params=dict(run.chosen_params), boundary=setting.boundary)
    if data_folder is None:
        return plan
    rules = parse_rules(catalogue.revision(run.revision_id).text)
    dates = held_out_dates(load_data(data_folder, [*rules.markets, *rules.reads]),
                           setting.boundary)
    if not dates:
        raise DataError(f"no date on or after the holdout boundary {setting.boundary}: "
                        "nothing is held out in this data folder yet", file=str(data_folder))
    return replace(plan, held_out_days=len(dates), first_held=dates[0], last_held=dates[-1])


def unlock_holdout(catalogue: Catalogue, idea_id: int, data_folder: str | os.PathLike[str], *,
                   by: str, progress: Progress | None = None,
                   cancel: CancelCheck | None = None) -> HoldoutView:
    """Unlock an idea's held-out years, once: run the chosen set of its latest run, on that
    run's rule revision, over the whole data folder; keep its figures on the dates from the
    boundary on beside the in-sample ones; journal who saw them and when.

    The data before the boundary must be those the run was made on (same fingerprint). Every
    later run of the idea carries "Holdout already seen" in its verdict.

    Raises
    ------
    HunchbookError
        When the holdout cannot be unlocked (see :func:`holdout_plan`), the data before the
        boundary differ from the run's, fewer than two held-out days exist, or the work was
        cancelled (:class:`~hunchbook.core.sweep.SweepCancelled`; nothing is recorded).
    """
    plan = holdout_plan(catalogue, idea_id)
    run = catalogue.run(plan.run_id)
    assert run.result is not None
    text = catalogue.revision(plan.revision_id).text
    if progress is not None:
        progress(0, 2)
    read = data_fingerprint(Study.from_text(text, data_folder, before=plan.boundary).data)
    if read != run.data_fingerprint:
        raise CatalogueError(
            f"the data before the boundary in {Path(data_folder)} are not those run {run.id} "
            f"was made on (fingerprint {read[:12]}, the run's {run.data_fingerprint[:12]}); "
            "unlock on the data the run used", field="data")
    _check(cancel)
    study = Study.from_text(text, data_folder)
    whole = study.run_set(plan.chosen_params).portfolio
    if progress is not None:
        progress(1, 2)
    stats = run.result.statistics
    figures = holdout_figures(whole, boundary=plan.boundary,
                              in_sample_sharpe=stats.net.sharpe, in_sample_days=stats.n_days,
                              in_sample_sets=stats.n_sets)
    held = held_out(whole, plan.boundary)[["gross_pnl", "cost", "net_pnl"]]
    _check(cancel)
    view = catalogue.record_holdout_view(
        idea_id, run_id=run.id, figures=figures, daily_pnl=held,
        data_fingerprint=data_fingerprint(study.data), engine_version=__version__, by=by)
    if progress is not None:
        progress(2, 2)
    return view


def _check(cancel: CancelCheck | None) -> None:
    if cancel is not None and cancel():
        raise SweepCancelled("unlocking the holdout was cancelled; nothing was recorded")
