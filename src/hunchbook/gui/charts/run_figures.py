"""What the results view and the exported report show of a recorded run, read defensively.

A run's ``summary``, ``statistics`` and ``verdict`` are stored dicts; older records may lack
some keys. Every reader here returns ``None`` (or an empty result) for what is missing instead
of raising, so the view shows a dash where a figure is absent.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from hunchbook.core.metrics import DAYS_PER_YEAR, pnl_stats
from hunchbook.core.verdict import ACTIONS, LABELS
from hunchbook.store.records import RunRecord

#: Shown wherever a figure is missing or undefined.
MISSING = "—"


@dataclass(frozen=True)
class FigureRow:
    """One row of a figures table: a label, the gross and net values and how to format them.

    ``kind`` is one of ``money``, ``ratio``, ``pct``, ``count``, ``years``, ``pvalue``,
    ``multiple``; ``note`` explains the figure (shown as a tooltip).
    """

    label: str
    gross: float | None
    net: float | None
    kind: str
    note: str = ""


@dataclass(frozen=True)
class VerdictText:
    """The verdict of a run in words: outcome key, label, next action and reasons."""

    outcome: str
    label: str
    action: str
    reasons: tuple[str, ...]


@dataclass(frozen=True)
class ParameterSpace:
    """The parameter sets a run tried: parameter names, each one's sorted distinct values,
    and per set its parameters and net Sharpe ratio (None when not stored)."""

    names: tuple[str, ...]
    values: tuple[tuple[float, ...], ...]
    params: tuple[dict[str, float], ...]
    net_sharpe: tuple[float | None, ...]


def number(value: Any) -> float | None:
    """A finite float, or None for anything else (missing, NaN, text)."""
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        return None
    value = float(value)
    return value if math.isfinite(value) else None


def dig(data: Any, *keys: str) -> Any:
    """``data[k1][k2]...`` or None when any level is missing or not a dict."""
    for key in keys:
        if not isinstance(data, dict):
            return None
        data = data.get(key)
    return data


def format_value(value: float | None, kind: str) -> str:
    """A figure as table text (thousands separators; a dash when missing)."""
    if value is None or not math.isfinite(value):
        return MISSING
    if kind == "money":
        return f"{value:,.0f}"
    if kind == "pct":
        return f"{100.0 * value:.1f} %"
    if kind == "count":
        return f"{value:,.0f}" if float(value).is_integer() else f"{value:,.1f}"
    if kind == "years":
        return f"{value:.1f}"
    if kind == "pvalue":
        return f"{value:.3f}"
    if kind == "multiple":
        return f"{value:.2f}×"
    return f"{value:.2f}"


def format_params(params: dict[str, float]) -> str:
    """Parameters as ``name=value, ...`` (``no parameters`` when empty)."""
    if not params:
        return "no parameters"
    return ", ".join(f"{name}={_short(value)}" for name, value in params.items())


def _short(value: Any) -> str:
    return f"{value:g}" if isinstance(value, (int, float)) else str(value)


def verdict_text(run: RunRecord) -> VerdictText:
    """The run's verdict; label and action fall back to the standard ones of its outcome."""
    verdict = run.verdict if isinstance(run.verdict, dict) else {}
    outcome = str(verdict.get("outcome") or run.verdict_label or "")
    label = verdict.get("label") or LABELS.get(outcome) or outcome or "No verdict"
    action = verdict.get("action") or ACTIONS.get(outcome, "")
    reasons = verdict.get("reasons")
    reasons = tuple(str(r) for r in reasons) if isinstance(reasons, (list, tuple)) else ()
    return VerdictText(outcome=outcome, label=str(label), action=str(action), reasons=reasons)


def epoch_seconds(index: pd.Index) -> np.ndarray:
    """Dates as seconds since 1970-01-01 UTC (the x values of date axes)."""
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
    markets = dig(run.summary, "chosen", "markets")
    if not isinstance(markets, dict):
        return []
    return [(str(name), number(dig(m, "gross", "total")), number(dig(m, "net", "total")))
            for name, m in markets.items()]


def cost_curve(run: RunRecord) -> tuple[list[float], list[float | None], float | None]:
    """Cost multiples, the chosen set's net Sharpe ratio at each, and the break-even multiple."""
    costs = dig(run.statistics, "costs")
    multiples = dig(costs, "multiples")
    sharpes = dig(costs, "net_sharpe")
    if not isinstance(multiples, list) or not isinstance(sharpes, list) \
            or len(multiples) != len(sharpes):
        return [], [], None
    pairs = [(number(m), number(s)) for m, s in zip(multiples, sharpes, strict=True)]
    pairs = [(m, s) for m, s in pairs if m is not None]
    return ([m for m, _ in pairs], [s for _, s in pairs],
            number(dig(costs, "break_even_multiple")))


def parameter_space(run: RunRecord) -> ParameterSpace:
    """The run's parameter sets with their net Sharpe ratios (from ``summary['sets']``, else the
    recorded sets without Sharpe ratios)."""
    stored = dig(run.summary, "sets")
    if isinstance(stored, list) and stored and all(isinstance(s, dict) for s in stored):
        params = tuple(dict(s.get("params") or {}) for s in stored)
        sharpes = tuple(number(s.get("net_sharpe")) for s in stored)
    else:
        params = tuple(dict(p) for p in run.parameter_sets)
        sharpes = tuple(None for _ in params)
    names: list[str] = []
    for p in params:
        names.extend(name for name in p if name not in names)
    values = []
    for name in names:
        found = {v for p in params if (v := number(p.get(name))) is not None}
        values.append(tuple(sorted(found)))
    return ParameterSpace(names=tuple(names), values=tuple(values), params=params,
                          net_sharpe=sharpes)


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
    """Gross and net figures of the chosen set over its whole history (the stored portfolio
    metrics; computed from the daily P&L for records without them)."""
    portfolio = dig(run.summary, "chosen", "portfolio")
    if not isinstance(portfolio, dict):
        portfolio = _portfolio_from_daily(run.daily_pnl)

    def pair(key: str) -> tuple[float | None, float | None]:
        return number(dig(portfolio, "gross", key)), number(dig(portfolio, "net", key))

    def one(key: str) -> float | None:
        return number(dig(portfolio, key))

    return [
        FigureRow("Total P&L", *pair("total"), "money", "Sum of daily P&L in the run currency."),
        FigureRow("Annual mean", *pair("ann_mean"), "money", "Mean daily P&L x 252."),
        FigureRow("Annual volatility", *pair("ann_vol"), "money",
                  "Standard deviation of daily P&L x sqrt(252)."),
        FigureRow("Sharpe ratio", *pair("sharpe"), "ratio", "Annual mean / annual volatility."),
        FigureRow("t-statistic", *pair("t_stat"), "ratio", "t-statistic of the mean daily P&L."),
        FigureRow("Max drawdown", *pair("max_drawdown"), "money",
                  "Largest fall of cumulative P&L from a running peak."),
        FigureRow("Trades per year", None, one("trades_per_year"), "count",
                  "Market-days with any contracts traded, per calendar year."),
        FigureRow("Contracts per year", None, one("contracts_per_year"), "count",
                  "Contracts traded per calendar year."),
        FigureRow("Total cost", None, one("cost_total"), "money",
                  "Commission and slippage over the whole run."),
        FigureRow("Cost share of gross", None, one("cost_share_of_gross"), "pct",
                  "Total cost / gross total P&L."),
        FigureRow("Break-even cost per contract", None, one("break_even_cost"), "money",
                  "Cost per contract at which net P&L would be zero."),
    ]


def _portfolio_from_daily(daily: pd.DataFrame | None) -> dict[str, Any]:
    if daily is None or daily.empty or not {"gross_pnl", "net_pnl"} <= set(daily.columns):
        return {}
    out: dict[str, Any] = {"gross": pnl_stats(daily["gross_pnl"]),
                           "net": pnl_stats(daily["net_pnl"])}
    if "cost" in daily.columns:
        cost, gross = float(daily["cost"].sum()), float(daily["gross_pnl"].sum())
        out["cost_total"] = cost
        out["cost_share_of_gross"] = cost / gross if gross else math.nan
    return out


def statistic_rows(run: RunRecord) -> list[FigureRow]:
    """How far to trust the chosen set: PSR, DSR with its trial count, SPA, MinTRL and more."""
    stats = run.statistics if isinstance(run.statistics, dict) else {}
    trials = number(stats.get("n_trials"))
    n_sets = number(stats.get("n_sets")) or (float(run.set_count) if run.set_count else None)
    days = number(stats.get("n_days"))
    spa = number(dig(stats, "spa", "consistent"))
    if spa is None:
        spa = number(stats.get("spa_pvalue"))

    def pair(key: str) -> tuple[float | None, float | None]:
        return number(dig(stats, "gross", key)), number(dig(stats, "net", key))

    def years(side: str) -> float | None:
        value = number(dig(stats, side, "min_trl_years"))
        if value is None and (d := number(dig(stats, side, "min_trl_days"))) is not None:
            value = d / DAYS_PER_YEAR
        return value

    trial_text = f" ({trials:,.0f} trials)" if trials is not None else ""
    set_text = f" ({n_sets:,.0f} sets)" if n_sets is not None else ""
    return [
        FigureRow("Probabilistic Sharpe (vs 0)", *pair("psr"), "pct",
                  "Probability that the true Sharpe ratio is above zero."),
        FigureRow(f"Deflated Sharpe{trial_text}", None, number(stats.get("dsr")), "pct",
                  "Probabilistic Sharpe corrected for the best of all trials ever run."),
        FigureRow(f"SPA p-value{set_text}", None, spa, "pvalue",
                  "Chance that no set beats doing nothing (Hansen's consistent p-value)."),
        FigureRow("Min. track record (years)", years("gross"), years("net"), "years",
                  "Years needed for 95 % confidence that the Sharpe ratio is above zero."),
        FigureRow("Sharpe standard error", *pair("sharpe_se"), "ratio",
                  "Annualised, allowing for skew and fat tails."),
        FigureRow("Newey-West t", *pair("newey_west_t"), "ratio",
                  "t-statistic of the mean robust to autocorrelation."),
        FigureRow("Break-even cost multiple", None,
                  number(dig(stats, "costs", "break_even_multiple")), "multiple",
                  "How many times the assumed costs the gross P&L would bear."),
        FigureRow("Days in the statistics", None, days, "count",
                  "Days every parameter set has, on which the statistics are computed."),
    ]
