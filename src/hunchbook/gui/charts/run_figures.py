"""What the results view and the exported report draw of a recorded run (its typed results
record); the figures tables come from :mod:`hunchbook.core.presenter`."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from hunchbook.core.presenter import FigureRow, format_params, format_value, number
from hunchbook.core.presenter import chosen_rows as _chosen_rows
from hunchbook.core.presenter import statistic_rows as _statistic_rows
from hunchbook.core.verdict import ACTIONS, LABELS, Check
from hunchbook.store.records import RunRecord

if TYPE_CHECKING:
    import pandas as pd


@dataclass(frozen=True)
class VerdictText:
    """The verdict of a run in words: outcome key, label, next action and reasons."""

    outcome: str
    label: str
    action: str
    reasons: tuple[str, ...]
    checks: tuple[Check, ...] = ()


@dataclass(frozen=True)
class ParameterSpace:
    """The parameter sets a run tried: parameter names, each one's sorted distinct values,
    and per set its parameters and net Sharpe ratio (None when not stored)."""

    names: tuple[str, ...]
    values: tuple[tuple[float, ...], ...]
    params: tuple[dict[str, float], ...]
    net_sharpe: tuple[float | None, ...]


#: Why a run recorded in an earlier shape shows no figures.
EARLIER_SHAPE = ("Recorded by an earlier version of Hunchbook in another shape: its figures are "
                 "not shown. Run the idea again to see them.")


def verdict_text(run: RunRecord) -> VerdictText:
    """The run's verdict in words (for a run in an earlier shape: its outcome's standard words)."""
    if run.result is None:
        outcome = run.verdict_label
        return VerdictText(outcome=outcome, label=LABELS.get(outcome, outcome),
                           action=ACTIONS.get(outcome, ""), reasons=(EARLIER_SHAPE,))
    v = run.result.verdict
    return VerdictText(outcome=v.outcome, label=v.label, action=v.action, reasons=v.reasons,
                       checks=v.checks)


def epoch_seconds(index: pd.Index) -> np.ndarray:
    """Dates as seconds since 1970-01-01 UTC (the x values of date axes)."""
    import pandas as pd  # the window's start does not load pandas (only charts need it)

    dates = pd.DatetimeIndex(index)
    if dates.tz is not None:
        dates = dates.tz_convert("UTC").tz_localize(None)
    return dates.values.astype("datetime64[s]").astype(np.int64).astype(float)


def equity_curves(daily: pd.DataFrame | None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Dates (epoch seconds) and cumulative gross and net P&L of a daily table."""
    if daily is None or daily.empty:
        empty = np.zeros(0)
        return empty, empty, empty
    x = epoch_seconds(daily.index)
    gross = np.cumsum(daily["gross_pnl"].to_numpy(dtype=float))
    net = np.cumsum(daily["net_pnl"].to_numpy(dtype=float))
    return x, gross, net


def drawdown(equity: np.ndarray) -> np.ndarray:
    """Fall of cumulative P&L below its running peak (zero or negative; the start is a peak
    of 0, as in :func:`hunchbook.core.metrics.max_drawdown`)."""
    if equity.size == 0:
        return equity
    return equity - np.maximum.accumulate(np.maximum(equity, 0.0))


def market_totals(run: RunRecord) -> list[tuple[str, float | None, float | None]]:
    """Per market of the chosen set: (market, gross total, net total)."""
    if run.result is None:
        return []
    return [(m.market, number(m.gross_total), number(m.net_total))
            for m in run.result.chosen.markets]


def cost_curve(run: RunRecord) -> tuple[list[float], list[float | None], float | None]:
    """Cost multiples, the chosen set's net Sharpe ratio at each, and the break-even multiple."""
    if run.result is None:
        return [], [], None
    costs = run.result.statistics.costs
    return (list(costs.multiples), [number(s) for s in costs.net_sharpe],
            number(costs.break_even_multiple))


def parameter_space(run: RunRecord) -> ParameterSpace:
    """The run's parameter sets with their net Sharpe ratios."""
    sets = run.result.sets if run.result else ()
    params = tuple(dict(s.params) for s in sets)
    names: list[str] = []
    for p in params:
        names.extend(name for name in p if name not in names)
    values = tuple(tuple(sorted({p[name] for p in params if name in p})) for name in names)
    return ParameterSpace(names=tuple(names), values=values, params=params,
                          net_sharpe=tuple(number(s.net_sharpe) for s in sets))


def sharpe_grid(space: ParameterSpace) -> np.ndarray:
    """Net Sharpe ratios of a two-parameter space as a (first values x second values) grid;
    NaN where no set was run or no Sharpe ratio is known."""
    if len(space.names) != 2:
        raise ValueError("a Sharpe grid needs exactly two parameters")
    rows, cols = space.values
    grid = np.full((len(rows), len(cols)), np.nan)
    first, second = space.names
    for params, sharpe in zip(space.params, space.net_sharpe, strict=True):
        a, b = number(params.get(first)), number(params.get(second))
        if a is None or b is None or sharpe is None:
            continue
        grid[rows.index(a), cols.index(b)] = sharpe
    return grid


def performance_rows(run: RunRecord) -> list[FigureRow]:
    """Gross and net figures of the chosen set over its whole history."""
    return _chosen_rows(run.result) if run.result else []


def statistic_rows(run: RunRecord) -> list[FigureRow]:
    """How far to trust the chosen set: PSR, DSR with its trial count, SPA, MinTRL and more."""
    return _statistic_rows(run.result.statistics) if run.result else []


__all__ = ["FigureRow", "ParameterSpace", "VerdictText", "cost_curve", "drawdown",
           "epoch_seconds", "equity_curves", "format_params", "format_value", "market_totals",
           "parameter_space", "performance_rows", "sharpe_grid", "statistic_rows",
           "verdict_text"]
