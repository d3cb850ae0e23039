"""The Python API shared by the command line and the desktop window (and usable in notebooks)."""

from __future__ import annotations

import datetime as dt
import os
from collections.abc import Callable, Iterator, Mapping, Sequence
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from hunchbook.core.capital_figures import capital_figures, resolve_capital
from hunchbook.core.continuous import ContinuousSeries, build_continuous
from hunchbook.core.data_quality import Finding, check_bars, quality_warnings, refuse_errors
from hunchbook.core.engine import Backtest, EngineOutput
from hunchbook.core.errors import DataError, HunchbookError, RuleError
from hunchbook.core.events import read_events
from hunchbook.core.expr import Expression, parse_expression
from hunchbook.core.expr.nodes import EventRef, SeriesRef
from hunchbook.core.markets import LIBRARY_FILE, read_market_library
from hunchbook.core.metrics import summarise
from hunchbook.core.panel import Panel, build_panel
from hunchbook.core.prices import MarketData
from hunchbook.core.prices import load_data as _load_data
from hunchbook.core.results import RunSummary, build_run_summary
from hunchbook.core.rule_data import rule_data
from hunchbook.core.rules import locate_error, parse_rules, read_rule_text, read_rules
from hunchbook.core.rules.model import SERIES_NAMES, RuleSpec
from hunchbook.core.stats.first_pass import TrialFigures, judge_choice
from hunchbook.core.stats.walk_forward import walk_forward_choices, walk_forward_result
from hunchbook.core.sweep import (
    CancelCheck,
    LocalProcesses,
    Progress,
    SweepCancelled,
    SweepOutcome,
    SweepRunner,
    run_sweep,
)
from hunchbook.core.sweep_estimate import SweepEstimate, estimate_sweep
from hunchbook.core.sweep_job import SweepRefused, daily_rows
from hunchbook.core.sweep_period import combine_parts, period_parts
from hunchbook.core.verdict import Check, Verdict, decide

if TYPE_CHECKING:
    from hunchbook.core.stats import FirstPassStats

#: Row label of the portfolio in metric tables.
PORTFOLIO = "portfolio"



def load_rules(path: str | os.PathLike[str]) -> RuleSpec:
    """Read and validate a rule file (raises :class:`RuleError` naming file, key and column)."""
    return read_rules(path)


def load_data(folder: str | os.PathLike[str], markets: list[str] | None = None, *,
              before: dt.date | None = None) -> MarketData:
    """Read a data folder's market library and price files (all markets, or those named);
    with ``before`` (a holdout boundary) only the rows dated before it."""
    return _load_data(folder, markets, before=before)



def _check_markets(text: str, rules: RuleSpec, folder: str | os.PathLike[str],
                   file: str | None) -> None:
    """Refuse a market of the rule file's ``markets`` key that the data folder's market library
    does not have, pointing at the key's line and naming the closest known market (a folder
    without a library is reported by :func:`load_data`)."""
    from difflib import get_close_matches
    from pathlib import Path

    path = Path(folder) / LIBRARY_FILE
    if not path.is_file():
        return
    known = sorted(read_market_library(path))
    for market in rules.markets:
        if market not in known:
            close = get_close_matches(market, known, n=1)
            hint = f"did you mean '{close[0]}'? " if close else ""
            raise locate_error(text, RuleError(
                f"unknown market '{market}': the data folder's market library ({path}) has no "
                f"such market; {hint}known markets: {', '.join(known)}", file=file,
                key="markets", kind="bad-value"))

@dataclass(frozen=True)
class SetResult:
    """One parameter set's engine output and metrics (portfolio and per market)."""

    params: dict[str, float]
    output: EngineOutput
    metrics: dict[str, Any]

    @property
    def pnl(self) -> pd.DataFrame:
        """One row per (date, market): position, price change, gross P&L, cost, net P&L."""
        return self.output.pnl_table()

    @property
    def portfolio(self) -> pd.DataFrame:
        """Daily portfolio P&L indexed by date."""
        return self.output.portfolio()

    def metrics_table(self) -> pd.DataFrame:
        """Metrics as a table: one row per market and the portfolio, gross/net columns."""
        rows = {}
        for name, m in {**self.metrics["markets"], PORTFOLIO: self.metrics[PORTFOLIO]}.items():
            row = {f"{side}_{k}": v for side in ("gross", "net") for k, v in m[side].items()}
            row.update({k: v for k, v in m.items() if not isinstance(v, dict)})
            rows[name] = row
        return pd.DataFrame.from_dict(rows, orient="index")


@dataclass(frozen=True)
class SweepReport:
    """A whole declared parameter space run: per-set summaries, statistics and the verdict.

    ``outcome.figures`` holds every set's portfolio figures over its own history; ``chosen``
    is the set the statistics judge (the best net Sharpe ratio, or the best
    of the picked sets); ``walk_forward_pnl`` the walk-forward test's spliced out-of-sample
    daily net P&L by date (None when the test did not apply).
    """

    rules: RuleSpec
    outcome: SweepOutcome
    chosen: int
    statistics: FirstPassStats
    verdict: Verdict
    walk_forward_pnl: pd.Series | None = None

    @property
    def sets(self) -> tuple[dict[str, float], ...]:
        """The parameter sets run, in grid order."""
        return self.outcome.sets

    def rejudged(self, warnings: Sequence[Check]) -> SweepReport:
        """The same report with the verdict given again with these warnings (facts found after
        the sweep, such as the chosen set's correlation with ideas already promoted)."""
        return replace(self, verdict=decide(self.statistics, warnings=warnings))

    def summarise(self, chosen: SetResult, *, currency: str, data_folder: str,
                  holdout_boundary: dt.date | None = None,
                  capital: float | None = None,
                  desk_capital: float | None = None) -> RunSummary:
        """The run record: every set's figures, the chosen set in full (``chosen``, from
        :meth:`Study.run_set` on ``sets[self.chosen]``), the statistics and the verdict;
        ``holdout_boundary`` the date the study's data were cut at, if any. The chosen set's
        figures against a capital use the rule's ``[sizing] capital``, else ``capital``, else
        ``desk_capital`` (:func:`hunchbook.core.capital_figures.resolve_capital`)."""
        amount, source = resolve_capital(self.rules.sizing.capital, capital, desk_capital)
        return build_run_summary(
            name=self.rules.name, markets=self.rules.markets, currency=currency,
            data_folder=data_folder, parameter_sets=self.sets, set_figures=self.outcome.figures,
            chosen_metrics=chosen.metrics, statistics=self.statistics, verdict=self.verdict,
            holdout_boundary=None if holdout_boundary is None else holdout_boundary.isoformat(),
            capital=capital_figures(chosen.portfolio, amount, source))


@dataclass(frozen=True)
class EarlierTrials:
    """Trials of an idea run before, outside the space now run (earlier rule revisions).

    ``net`` holds the daily net P&L of those recomputed on the current data (a date index, one
    column per trial); ``sharpes`` the annualised net Sharpe ratios of those that could not be
    recomputed (they count one trial each); ``total`` every trial the idea counts once this
    space has run (None: this space's sets plus the earlier ones given here).
    """

    net: pd.DataFrame | None = None
    sharpes: tuple[float, ...] = ()
    total: int | None = None

    def on_dates(self, dates: np.ndarray) -> np.ndarray | None:
        """The recomputed trials' net P&L on these dates (0 where a trial has no row)."""
        if self.net is None or self.net.shape[1] == 0:
            return None
        return self.net.reindex(pd.DatetimeIndex(dates)).fillna(0.0).to_numpy(dtype=float)

    @property
    def columns(self) -> int:
        """Earlier trials recomputed on the current data (whose daily P&L joins the tests)."""
        return 0 if self.net is None else self.net.shape[1]

    def n_trials(self, n_sets: int) -> int:
        """Every trial counted once ``n_sets`` new sets have run."""
        if self.total is not None:
            return self.total
        return n_sets + (0 if self.net is None else self.net.shape[1]) + len(self.sharpes)


class Study:
    """A rule file prepared against a data folder: continuous series built once, ready to run.

    Most code prepares one with :meth:`from_text` or :meth:`from_file`. Only the series the
    position reads are computed (curve, calendar, other markets' and event series).

    Parameters
    ----------
    rules
        The parsed rule file.
    data
        The data folder's contents; must hold every market the rules trade or read. When the
        position reads events, the folder's events file is read into ``self.data`` (cut at
        the data's holdout boundary, like the prices).
    file
        The rule file's name, given in every :class:`RuleError` the study raises.
    """

    def __init__(self, rules: RuleSpec, data: MarketData, *,
                 file: str | os.PathLike[str] | None = None) -> None:
        self.rules = rules
        self.file = None if file is None else str(file)
        missing = [m for m in (*rules.markets, *rules.reads) if m not in data.bars]
        if missing:
            raise DataError(f"no price data loaded for market(s) {', '.join(missing)}",
                            file=data.folder)
        self.position = self._parse(rules.position, "signal.position", SERIES_NAMES)
        self.constraint = (self._parse(rules.constraint, "parameters.constraint", ())
                           if rules.constraint else None)
        reads = self.position.data_used()
        if data.events is None and any(isinstance(node, EventRef) for node in reads):
            data = replace(data, events=read_events(data.folder, data.library,
                                                    before=data.before))
        self.data = data
        others = [n.market for n in reads if isinstance(n, SeriesRef) and n.market is not None]
        built = {m: build_continuous(data.bars[m], rules.roll)
                 for m in dict.fromkeys([*rules.markets, *others])}
        specs = [_with_overrides(data.library[m], rules.costs) for m in rules.markets]
        panel = build_panel([built[m] for m in rules.markets], specs)
        try:
            extra = rule_data(self.position, panel, built,
                              {m: data.bars[m].file for m in built}, data.events)
        except RuleError as exc:
            raise exc.located(file=self.file, key="signal.position", kind="expression") from None
        self.panel: Panel = replace(panel, series={**panel.series, **extra})
        self._built: dict[str, ContinuousSeries] = built  # for the quality checks, once
        self._findings: tuple[Finding, ...] | None = None
        self.backtest = Backtest(self.panel, self.position, rules.sizing, delay=rules.delay,
                                 start=rules.start, end=rules.end)

    def _parse(self, text: str, key: str, series_names: Sequence[str]) -> Expression:
        try:
            return parse_expression(text, series_names=series_names,
                                    param_names=self.rules.parameter_names,
                                    market_names=(*self.rules.markets, *self.rules.reads))
        except RuleError as exc:
            raise exc.located(file=self.file, key=key, kind="expression") from None

    @classmethod
    def from_text(cls, text: str, data_folder: str | os.PathLike[str], *,
                  file: str | os.PathLike[str] | None = None,
                  before: dt.date | None = None) -> Study:
        """Parse rule text, load its markets from a data folder and prepare them.

        ``file`` names where the text came from in every :class:`RuleError`; ``before`` (a
        holdout boundary) cuts the data before anything is built, so that nothing reads a
        price dated on or after it. Raises :class:`~hunchbook.core.errors.HunchbookError`
        for bad rules or data.
        """
        name = None if file is None else str(file)
        rules = parse_rules(text, file=name)
        _check_markets(text, rules, data_folder, name)
        data = load_data(data_folder, [*rules.markets, *rules.reads], before=before)
        try:
            return cls(rules, data, file=name)
        except RuleError as exc:  # found on meeting the data: point at it in the text
            raise locate_error(text, exc) from None

    @classmethod
    def from_file(cls, path: str | os.PathLike[str], data_folder: str | os.PathLike[str], *,
                  before: dt.date | None = None) -> Study:
        """Read a rule file and prepare it on a data folder (see :meth:`from_text`)."""
        return cls.from_text(read_rule_text(path), data_folder, file=path, before=before)

    def data_findings(self) -> tuple[Finding, ...]:
        """The quality checks of :mod:`hunchbook.core.data_quality` on every market the rules
        trade or read (as cut at the holdout boundary, with the rules' roll); found once."""
        if self._findings is None:
            self._findings = tuple(
                f for m, series in self._built.items()
                for f in check_bars(self.data.bars[m], self.data.library.get(m),
                                    roll=self.rules.roll, series=series))
            self._built = {}  # not needed again: let the series go
        return self._findings

    def data_warnings(self) -> list[Check]:
        """Refuse data with a quality error (one line naming the market, check and first
        rows); otherwise the quality warnings as verdict warnings.

        Raises
        ------
        DataError
            When a quality check found an error.
        """
        findings = self.data_findings()
        refuse_errors(findings, folder=self.data.folder)
        return quality_warnings(findings)

    def parameter_sets(self, fixed: Mapping[str, float] | None = None) -> list[dict[str, float]]:
        """Declared parameter sets that satisfy the constraint, optionally filtered by values."""
        fixed = dict(fixed or {})
        for name, value in fixed.items():
            declared = next((p for p in self.rules.parameters if p.name == name), None)
            if declared is None:
                raise RuleError(f"unknown parameter '{name}' (declared: "
                                f"{', '.join(self.rules.parameter_names) or 'none'})",
                                file=self.file, key="parameters")
            if value not in declared.values():
                raise RuleError(f"{name}={value:g} is not one of the declared values "
                                f"({', '.join(f'{v:g}' for v in declared.values())})",
                                file=self.file, key=f"parameters.{name}")
        sets = [s for s in self._iter_allowed() if all(s[k] == v for k, v in fixed.items())]
        if not sets:
            raise RuleError("no declared parameter set satisfies the constraint"
                            + (" with the values asked for" if fixed else ""),
                            file=self.file, key="parameters.constraint")
        return sets

    def _iter_allowed(self) -> Iterator[dict[str, float]]:
        for params in self.rules.iter_grid():
            if self.constraint is None or self.constraint.evaluate({}, params) == 1.0:
                yield params

    def sweep(self, *, pick: Mapping[str, float] | None = None,
              runner: SweepRunner | None = None, progress: Progress | None = None,
              cancel: CancelCheck | None = None, earlier: EarlierTrials | None = None,
              spa_reps: int = 1000, seed: int = 0,
              warnings: Sequence[Check] = (),
              confirm: Callable[[SweepEstimate], bool] | None = None) -> SweepReport:
        """Run the whole declared parameter space and judge one set of it.

        Every declared set runs and counts as a trial, whichever set is judged: a set picked
        out of the space is never judged as one trial.

        Parameters
        ----------
        pick
            Parameter values (some or all) of the set to judge: the best net Sharpe ratio among
            the sets that match. Default: the best set of the whole space.
        runner, progress, cancel
            See :func:`hunchbook.core.sweep.run_sweep` (``runner``: for example
            ``LocalProcesses(workers=2)`` or ``InProcess()`` from :mod:`hunchbook.core.runners`).
        earlier
            Trials run before, outside this space (see :class:`EarlierTrials`).
        spa_reps, seed
            Bootstrap replications and seed of the SPA test.
        warnings
            Checks that only warn, added to the verdict (see
            :func:`hunchbook.core.verdict.warning`).
        confirm
            Asked, with the sweep's estimate (:meth:`estimate`), before a sweep that takes long
            or needs much memory (:attr:`SweepEstimate.needs_confirmation`); False stops it
            before it starts. A sweep that would not fit in memory is refused whatever it says.

        Raises
        ------
        DataError
            A quality check of the data found an error (:meth:`data_warnings`).
        SweepRefused
            The sweep would not fit in the memory free.
        SweepCancelled
            ``cancel`` returned True, or ``confirm`` False.
        """
        warnings = [*self.data_warnings(), *warnings]  # data with errors is refused here
        sets = self.parameter_sets()
        candidates = {_key(s) for s in self.parameter_sets(pick)} if pick else None
        earlier = earlier or EarlierTrials()
        estimate = self._estimate(sets, runner, earlier)
        if not estimate.fits:
            raise SweepRefused(estimate.refusal())
        if confirm is not None and estimate.needs_confirmation and not confirm(estimate):
            raise SweepCancelled("sweep not started: " + estimate.describe())
        outcome = run_sweep(self.backtest, sets, runner=runner, progress=progress,
                            cancel=cancel, others=earlier.columns, spa_reps=spa_reps, seed=seed,
                            estimate=estimate)
        net_sharpe = outcome.figures.net_sharpe
        allowed = np.array([candidates is None or _key(s) in candidates for s in sets])
        scored = allowed & np.isfinite(net_sharpe)
        chosen = (int(np.argmax(np.where(scored, net_sharpe, -np.inf))) if scored.any()
                  else int(np.argmax(allowed)))
        plan = outcome.plan
        if plan.days < 3:
            raise HunchbookError(f"the parameter sets have {max(plan.days, 0)} days in common: "
                                 "first-pass statistics need at least 3")
        parts = list(outcome.parts)
        other_net = earlier.on_dates(outcome.dates[plan.start:plan.stop])
        if other_net is not None:
            parts.append(period_parts(plan, other_net, len(sets)))
        totals = combine_parts(plan, parts)
        walk_choice = (walk_forward_choices(plan.walk, *totals.walk_sums)
                       if plan.walk is not None and totals.walk_sums is not None else None)
        traded = sorted(set(walk_choice[0].tolist())) if walk_choice is not None else []
        rows = daily_rows(self.backtest, [sets[k] for k in [chosen, *traded]])
        window = slice(plan.start, plan.stop)
        walk = walk_pnl = None
        if walk_choice is not None:
            picked, best = walk_choice
            net = rows.net[:, window]
            test = plan.walk.test_days
            oos = np.concatenate([net[1 + traded.index(k), s:s + test]
                                  for k, s in zip(picked.tolist(), plan.walk.starts.tolist(),
                                                  strict=True)])
            walk = walk_forward_result(plan.walk, picked, oos, best, plan.periods)
            walk_pnl = pd.Series(walk.oos_pnl, index=pd.DatetimeIndex(
                outcome.dates[plan.start + walk.start:plan.stop]))
        shape, cells = self._grid_cells(sets)
        statistics = judge_choice(
            rows.gross[0, window], rows.cost[0, window],
            TrialFigures(net_sharpes=totals.net_sharpes, other_sharpes=totals.other_sharpes,
                         effective=totals.effective, spa=totals.spa),
            chosen=chosen, grid_shape=shape, cell_index=cells,
            n_trials=earlier.n_trials(len(sets)), other_trial_sharpes=earlier.sharpes,
            walk_forward=walk, overfitting=totals.overfitting,
            contracts_traded=float(outcome.figures.contracts_traded[chosen]),
            periods=plan.periods)
        return SweepReport(rules=self.rules, outcome=outcome, chosen=chosen,
                           statistics=statistics, verdict=decide(statistics, warnings=warnings),
                           walk_forward_pnl=walk_pnl)

    def estimate(self, *, runner: SweepRunner | None = None,
                 earlier: EarlierTrials | None = None) -> SweepEstimate:
        """How long the whole declared space will take on ``runner`` (default local processes),
        how much memory it needs and whether it fits (its pilot sets run here)."""
        return self._estimate(self.parameter_sets(), runner, earlier)

    def _estimate(self, sets: Sequence[Mapping[str, float]], runner: SweepRunner | None,
                  earlier: EarlierTrials | None) -> SweepEstimate:
        runner = runner if runner is not None else LocalProcesses()
        return estimate_sweep(self.backtest, sets, workers=getattr(runner, "slots", 1),
                              local_workers=getattr(runner, "local_slots", None),
                              others=(earlier or EarlierTrials()).columns)

    def _grid_cells(self, sets: list[dict[str, float]]) -> tuple[tuple[int, ...] | None,
                                                                 np.ndarray | None]:
        """The grid's shape and each set's flat cell in it (None without a grid)."""
        shape = tuple(len(p.values()) for p in self.rules.parameters)
        if sum(n > 1 for n in shape) == 0:
            return None, None
        cell_of = {tuple(g.values()): i for i, g in enumerate(self.rules.iter_grid())}
        return shape, np.array([cell_of[tuple(s[n] for n in self.rules.parameter_names)]
                                for s in sets])

    def run_set(self, params: Mapping[str, float]) -> SetResult:
        """Run one parameter set and summarise it, gross and net, per market and portfolio."""
        output = self.backtest.run(params)
        markets = {m: summarise(output.market_frame(j)) for j, m in enumerate(self.panel.markets)}
        metrics = {PORTFOLIO: summarise(output.portfolio()), "markets": markets}
        return SetResult(params=dict(params), output=output, metrics=metrics)


def run(rules: RuleSpec | str | os.PathLike[str], data: MarketData | str | os.PathLike[str],
        params: Mapping[str, float] | None = None) -> SetResult:
    """Run one parameter set of a rule file over a data folder.

    ``params`` picks the set when the rule file declares several; it may be omitted when the
    declared space (after the constraint) holds exactly one set.
    """
    spec = rules if isinstance(rules, RuleSpec) else load_rules(rules)
    market_data = (data if isinstance(data, MarketData)
                   else load_data(data, [*spec.markets, *spec.reads]))
    study = Study(spec, market_data, file=None if isinstance(rules, RuleSpec) else rules)
    sets = study.parameter_sets(params)
    if len(sets) > 1:
        raise RuleError(f"the rule file declares {len(sets)} parameter sets; pick one by giving "
                        f"every parameter a value ({', '.join(spec.parameter_names)})",
                        file=study.file, key="parameters")
    return study.run_set(sets[0])


def _key(params: Mapping[str, float]) -> tuple[tuple[str, float], ...]:
    return tuple(sorted((k, float(v)) for k, v in params.items()))


def _with_overrides(spec: Any, costs: Mapping[str, Mapping[str, float]]) -> Any:
    merged = {**costs.get("*", {}), **costs.get(spec.symbol, {})}
    return spec.with_costs(merged) if merged else spec


__all__ = ["PORTFOLIO", "EarlierTrials", "SetResult", "Study", "SweepReport", "load_data",
           "load_rules", "run"]
