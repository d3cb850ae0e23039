"""What a run's results show, as rows: one place for every figure's label, unit and note.

The command line's text, the window's tables and the HTML report all take their rows from
here, so a new figure is added once: a field on the record (:mod:`hunchbook.core.results`)
and a :class:`Figure` in one of the lists below.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Generic, TypeVar

from hunchbook.core.formats import MISSING, count, pct, plural
from hunchbook.core.results import MarketFigures, Performance, RunSummary, SetSummary
from hunchbook.core.stats.first_pass import FirstPassStats

if TYPE_CHECKING:
    from hunchbook.core.holdout import HoldoutFigures

T = TypeVar("T")
Value = float | None


@dataclass(frozen=True)
class FigureRow:
    """One row of a figures table: a label, the gross and net values and how to format them.

    ``kind`` is one of ``money``, ``ratio``, ``pct``, ``count``, ``years``, ``pvalue``,
    ``multiple``; ``note`` explains the figure (a tooltip in the window). ``gross`` is None
    for figures that have only one value.
    """

    label: str
    gross: Value
    net: Value
    kind: str
    note: str = ""


@dataclass(frozen=True)
class Figure(Generic[T]):
    """How one figure is read from a record: label (text, or made from the record), kind,
    gross and net readers (None: no such column), a note, and whether it applies to a record
    (a figure that does not is left out, rather than shown as missing)."""

    label: str | Callable[[T], str]
    kind: str
    gross: Callable[[T], Any] | None
    net: Callable[[T], Any] | None
    note: str = ""
    applies: Callable[[T], bool] = lambda record: True

    def row(self, record: T) -> FigureRow:
        """The figure's row for one record."""
        label = self.label if isinstance(self.label, str) else self.label(record)
        return FigureRow(label, _read(self.gross, record), _read(self.net, record), self.kind,
                         self.note)


@dataclass(frozen=True)
class Column(Generic[T]):
    """One column of a table of markets or sets."""

    label: str
    kind: str
    value: Callable[[T], Any]
    note: str = ""


def _read(reader: Callable[[Any], Any] | None, record: Any) -> Value:
    return None if reader is None else number(reader(record))


def number(value: Any) -> Value:
    """A finite float, or None for anything else (missing, NaN, text)."""
    if isinstance(value, bool) or not isinstance(value, int | float):
        return None
    value = float(value)
    return value if math.isfinite(value) else None


#: The chosen set over its whole history (portfolio, gross and net).
PERFORMANCE_FIGURES: list[Figure[Performance]] = [
    Figure("Total P&L", "money", lambda p: p.gross.total, lambda p: p.net.total,
           "Sum of daily P&L in the run currency."),
    Figure("Annual mean", "money", lambda p: p.gross.ann_mean, lambda p: p.net.ann_mean,
           "Mean daily P&L x 252."),
    Figure("Annual volatility", "money", lambda p: p.gross.ann_vol, lambda p: p.net.ann_vol,
           "Standard deviation of daily P&L x sqrt(252)."),
    Figure("Sharpe ratio", "ratio", lambda p: p.gross.sharpe, lambda p: p.net.sharpe,
           "Annual mean / annual volatility, over the set's own history."),
    Figure("t-statistic", "ratio", lambda p: p.gross.t_stat, lambda p: p.net.t_stat,
           "t-statistic of the mean daily P&L."),
    Figure("Max drawdown", "money", lambda p: p.gross.max_drawdown,
           lambda p: p.net.max_drawdown, "Largest fall of cumulative P&L from a running peak."),
    Figure("Trades per year", "count", None, lambda p: p.trades_per_year,
           "Market-days with any contracts traded, per calendar year."),
    Figure("Contracts per year", "count", None, lambda p: p.contracts_per_year,
           "Contracts traded per calendar year."),
    Figure("Total cost", "money", None, lambda p: p.cost_total,
           "Commission, exchange and regulatory fees and slippage over the whole run."),
    Figure("Cost share of gross", "pct", None, lambda p: p.cost_share_of_gross,
           "Total cost / gross total P&L."),
    Figure("Break-even cost per contract", "money", None, lambda p: p.break_even_cost,
           "Cost per contract at which net P&L would be zero (gross P&L / contracts)."),
]

#: How far to trust the chosen set, on the days every set shares.
STATISTIC_FIGURES: list[Figure[FirstPassStats]] = [
    Figure("Sharpe ratio (common days)", "ratio", lambda s: s.gross.sharpe,
           lambda s: s.net.sharpe,
           "Annualised Sharpe ratio on the days all sets share (the statistics' period)."),
    Figure("Sharpe standard error", "ratio", lambda s: s.gross.sharpe_se,
           lambda s: s.net.sharpe_se, "Annualised, allowing for skew and fat tails."),
    Figure("Newey-West t", "ratio", lambda s: s.gross.newey_west_t,
           lambda s: s.net.newey_west_t, "t-statistic of the mean robust to autocorrelation."),
    Figure("Probabilistic Sharpe (vs 0)", "pct", lambda s: s.gross.psr, lambda s: s.net.psr,
           "Probability that the true Sharpe ratio is above zero."),
    Figure("Min. track record (years)", "years", lambda s: s.gross.min_trl_years,
           lambda s: s.net.min_trl_years,
           "Years needed for 95 % confidence that the Sharpe ratio is above zero."),
    Figure("Trials counted", "count", None, lambda s: s.n_trials,
           "Every parameter set ever run for the idea (or behind this P&L)."),
    Figure("Effective trials", "count", None, lambda s: s.dsr_trials,
           "The trials counted as independent ones: correlated sets count as fewer "
           "(Li & Ji 2005)."),
    Figure("Deflated Sharpe", "pct", lambda s: s.gross_dsr, lambda s: s.dsr,
           "Probabilistic Sharpe against the best Sharpe ratio that the effective trials would "
           "reach by luck."),
    Figure("Best Sharpe by luck", "ratio", None, lambda s: s.expected_max_sharpe,
           "The Sharpe ratio the best of the trials would reach with no edge at all (SR0 of "
           "the deflated Sharpe)."),
    Figure(lambda s: f"SPA p-value ({plural(s.spa_sets, 'set')})", "pvalue", None,
           lambda s: None if s.spa is None else s.spa.consistent,
           "Chance that no set ever run beats doing nothing (Hansen's consistent p-value)."),
    Figure("Walk-forward Sharpe (out of sample)", "ratio", None,
           lambda s: None if s.walk_forward is None else s.walk_forward.oos_sharpe,
           "Net Sharpe ratio of choosing the best set on past years only and trading it the "
           "next year, spliced over the history.",
           applies=lambda s: s.walk_forward is not None),
    Figure("Walk-forward PSR (out of sample)", "pct", None,
           lambda s: None if s.walk_forward is None else s.walk_forward.oos_psr,
           "Probability that the walk-forward Sharpe ratio is truly above zero.",
           applies=lambda s: s.walk_forward is not None),
    Figure("Walk-forward set changes", "pct", None,
           lambda s: None if s.walk_forward is None else s.walk_forward.changed_share,
           "Share of the yearly re-selections that picked a different set than the year "
           "before.",
           applies=lambda s: s.walk_forward is not None),
    Figure("Prob. of backtest overfitting", "pct", None,
           lambda s: None if s.overfitting is None else s.overfitting.pbo,
           "How often the best set on half the history ranks in the bottom half on the other "
           "half (CSCV; 50 % is pure luck, near 0 % a robust choice).",
           applies=lambda s: s.overfitting is not None),
    Figure("Break-even cost multiple", "multiple", None, lambda s: s.costs.break_even_multiple,
           "How many times the assumed costs the gross P&L would bear."),
    Figure("Days in the statistics", "count", None, lambda s: s.n_days,
           "Days every parameter set has, on which the statistics are computed."),
]

#: Column titles of the held-out figures: the in-sample value sits where other tables have the
#: gross one, the held-out value where they have the net one.
HOLDOUT_HEADERS = ("In-sample", "Held out")

#: The chosen set on the held-out dates beside its in-sample record (see HOLDOUT_HEADERS).
HOLDOUT_FIGURES: list[Figure[HoldoutFigures]] = [
    Figure("Net Sharpe", "ratio", lambda f: f.in_sample_net_sharpe, lambda f: f.net_sharpe,
           "Annualised net Sharpe ratio; in-sample on the days all sets share, as the "
           "statistics measure it."),
    Figure("PSR (vs 0)", "pct", None, lambda f: f.psr,
           "Probabilistic Sharpe ratio: the probability that the true held-out Sharpe ratio "
           "is above zero (Bailey & López de Prado 2012)."),
    Figure("Consistency p", "pvalue", None, lambda f: f.p_value,
           "Chance of a held-out Sharpe ratio this far below the in-sample one if the "
           "in-sample one were true (one-sided; Lo 2002 standard error)."),
    Figure("Days", "count", lambda f: f.in_sample_days, lambda f: f.days,
           "Trading days measured."),
    Figure("Gross Sharpe", "ratio", None, lambda f: f.gross_sharpe,
           "Annualised Sharpe ratio before costs on the held-out dates."),
    Figure("Net P&L", "money", None, lambda f: f.net_total,
           "Sum of daily net P&L on the held-out dates."),
    Figure("Net drawdown", "money", None, lambda f: f.net_max_drawdown,
           "Largest fall of cumulative net P&L from a running peak on the held-out dates."),
]

#: One row per market of the chosen set.
MARKET_COLUMNS: list[Column[MarketFigures]] = [
    Column("Gross P&L", "money", lambda m: m.gross_total),
    Column("Net P&L", "money", lambda m: m.net_total),
    Column("Gross Sharpe", "ratio", lambda m: m.gross_sharpe),
    Column("Net Sharpe", "ratio", lambda m: m.net_sharpe),
    Column("Contracts / year", "count", lambda m: m.contracts_per_year),
    Column("Cost", "money", lambda m: m.cost_total),
    Column("Break-even cost", "money", lambda m: m.break_even_cost,
           "Cost per contract at which the market's net P&L would be zero."),
]

#: One row per parameter set of a sweep.
SET_COLUMNS: list[Column[SetSummary]] = [
    Column("Gross Sharpe", "ratio", lambda s: s.gross_sharpe),
    Column("Net Sharpe", "ratio", lambda s: s.net_sharpe),
    Column("Net P&L", "money", lambda s: s.net_total),
    Column("Contracts / year", "count", lambda s: s.contracts_per_year),
    Column("Break-even cost", "money", lambda s: s.break_even_cost),
]


@dataclass(frozen=True)
class Table:
    """A table of named rows: column labels and kinds, then (row name, values) pairs."""

    head: str
    columns: tuple[Column[Any], ...]
    rows: tuple[tuple[str, tuple[Value, ...]], ...]


def performance_rows(performance: Performance) -> list[FigureRow]:
    """The chosen set's gross and net figures over its whole history."""
    return [f.row(performance) for f in PERFORMANCE_FIGURES]


def statistic_rows(statistics: FirstPassStats) -> list[FigureRow]:
    """The first-pass statistics of the chosen set (PSR, DSR with its trials, SPA, ...); a
    figure that does not apply to the run (no walk-forward test for one set, say) is left out."""
    return [f.row(statistics) for f in STATISTIC_FIGURES if f.applies(statistics)]


def holdout_rows(figures: HoldoutFigures) -> list[FigureRow]:
    """The held-out figures beside the in-sample ones (columns: :data:`HOLDOUT_HEADERS`)."""
    return [f.row(figures) for f in HOLDOUT_FIGURES]


def market_table(run: RunSummary) -> Table:
    """The chosen set's figures per market."""
    columns = tuple(MARKET_COLUMNS)
    return Table("Market", columns, tuple(
        (m.market, tuple(number(c.value(m)) for c in columns)) for m in run.chosen.markets))


def set_table(run: RunSummary, limit: int | None = None) -> Table:
    """The sweep's parameter sets from the best net Sharpe ratio down (``limit`` of them)."""
    columns = tuple(SET_COLUMNS)
    ranked = run.ranked()[:limit]
    return Table("Parameters", columns, tuple(
        (format_params(run.sets[k].params), tuple(number(c.value(run.sets[k])) for c in columns))
        for k in ranked))


def format_value(value: Value, kind: str) -> str:
    """A figure as table text (:mod:`hunchbook.core.formats`: thousands separators, ``99.6 %``;
    a dash when missing)."""
    if value is None or not math.isfinite(value):
        return MISSING
    if kind == "money":
        return f"{value:,.0f}"
    if kind == "pct":
        return pct(value)
    if kind == "count":
        return count(value)
    if kind == "years":
        return f"{value:.1f}"
    if kind == "pvalue":
        return f"{value:.3f}"
    if kind == "multiple":
        return f"{value:.2f}×"
    return f"{value:.2f}"


def format_params(params: Mapping[str, Any]) -> str:
    """Parameters as ``name=value, ...`` (``no parameters`` when empty)."""
    if not params:
        return "no parameters"
    return ", ".join(f"{name}={v:g}" if isinstance(v, int | float) else f"{name}={v}"
                     for name, v in params.items())


__all__ = ["MARKET_COLUMNS", "MISSING", "PERFORMANCE_FIGURES", "SET_COLUMNS",
           "STATISTIC_FIGURES", "Column", "Figure", "FigureRow", "Table", "format_params",
           "format_value", "market_table", "number", "performance_rows", "set_table",
           "statistic_rows"]
