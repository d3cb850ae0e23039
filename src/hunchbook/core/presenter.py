"""What a run's results show, as rows: one place for every figure's label, unit and note.

The command line's text, the window's tables and the HTML report all take their rows from
here, so a new figure is added once: a field on the record (:mod:`hunchbook.core.results`)
and a :class:`Figure` in one of the lists below.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Generic, TypeVar

from hunchbook.core.capital_figures import MONTHS, CapitalFigures, YearRow
from hunchbook.core.formats import MISSING, count, pct, plural
from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.core.results import MarketFigures, Performance, RunSummary, SetSummary
from hunchbook.core.stats.first_pass import FirstPassStats

if TYPE_CHECKING:
    import pandas as pd

    from hunchbook.core.holdout import HoldoutFigures

#: The unit of figures in the run currency (replaced by its code: ``USD``).
CURRENCY = "{currency}"
#: Unit of the cost figures per contract and side (a buy or a sell; a round turn is both).
PER_SIDE = "{currency}/side"
#: Unit of shares of the capital.
OF_CAPITAL = "% of capital"
#: What a trade is, wherever trades are counted.
TRADE_NOTE = ("A trade is a change of one market's position in whole contracts (rounded to "
              "the nearest one) on one day: opening, adding, reducing, closing or reversing. A "
              "roll that keeps the position is not a trade, nor is a fractional resizing that "
              "leaves the whole contracts as they were (volatility targeting resizes a little "
              "most days). Contracts traded count every contract bought or sold, rolls and "
              "fractions included.")
#: Why the set table's Sharpe ratio and the statistics' one differ.
SHARPE_NOTE = ("Over the set's own history (every day it has a result). The statistics use "
               "only the days every set shares, so that all sets are judged on the same days; "
               "sets with longer look-backs start later, and the two figures differ by those "
               "days.")

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


def with_unit(label: str, unit: str, currency: str = "") -> str:
    """A label with its unit in brackets (``CURRENCY`` in the unit becomes the currency's
    code); the label alone without a unit, or when it names the unit already (``Trades per
    year`` is in trades)."""
    if not unit or unit.casefold() in label.casefold():
        return label
    return f"{label} ({unit.format(currency=currency or 'currency')})"


@dataclass(frozen=True)
class Figure(Generic[T]):
    """How one figure is read from a record: label (text, or made from the record), kind,
    gross and net readers (None: no such column), a note, whether it applies to a record
    (a figure that does not is left out, rather than shown as missing) and its unit (shown
    after the label; :data:`CURRENCY` stands for the run currency)."""

    label: str | Callable[[T], str]
    kind: str
    gross: Callable[[T], Any] | None
    net: Callable[[T], Any] | None
    note: str = ""
    applies: Callable[[T], bool] = lambda record: True
    unit: str = ""

    def row(self, record: T, currency: str = "") -> FigureRow:
        """The figure's row for one record (units in the run's ``currency``)."""
        label = self.label if isinstance(self.label, str) else self.label(record)
        return FigureRow(with_unit(label, self.unit, currency), _read(self.gross, record),
                         _read(self.net, record), self.kind, self.note)


@dataclass(frozen=True)
class Column(Generic[T]):
    """One column of a table of markets, sets or years (``unit`` as :class:`Figure`'s)."""

    label: str
    kind: str
    value: Callable[[T], Any]
    note: str = ""
    unit: str = ""


def _titled(columns: list[Column[Any]], currency: str) -> tuple[Column[Any], ...]:
    """Columns whose labels carry their units."""
    return tuple(dataclasses.replace(c, label=with_unit(c.label, c.unit, currency))
                 for c in columns)


def _per_contract(cost: float, contracts: float, sides: int = 1) -> float:
    """Cost per contract traded (one side, or ``sides`` of them), NaN without contracts."""
    return sides * cost / contracts if contracts else math.nan


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
           "Sum of daily P&L in the run currency.", unit=CURRENCY),
    Figure("Annual mean", "money", lambda p: p.gross.ann_mean, lambda p: p.net.ann_mean,
           f"Mean daily P&L x {DAYS_PER_YEAR}.", unit=CURRENCY),
    Figure("Annual volatility", "money", lambda p: p.gross.ann_vol, lambda p: p.net.ann_vol,
           f"Standard deviation of daily P&L x sqrt({DAYS_PER_YEAR}).", unit=CURRENCY),
    Figure("Sharpe ratio", "ratio", lambda p: p.gross.sharpe, lambda p: p.net.sharpe,
           "Annual mean / annual volatility. " + SHARPE_NOTE),
    Figure("t-statistic", "ratio", lambda p: p.gross.t_stat, lambda p: p.net.t_stat,
           "t-statistic of the mean daily P&L."),
    Figure("Max drawdown", "money", lambda p: p.gross.max_drawdown,
           lambda p: p.net.max_drawdown, "Largest fall of cumulative P&L from a running peak.",
           unit=CURRENCY),
    Figure("Trades per year", "count", None, lambda p: p.trades_per_year,
           "Trades per calendar year. " + TRADE_NOTE, unit="trades"),
    Figure("Trades", "count", None, lambda p: p.trades,
           "Trades over the whole history. " + TRADE_NOTE, unit="trades"),
    Figure("Contracts traded", "count", None, lambda p: p.contracts_traded,
           "Contracts bought or sold over the whole history, rolls included.",
           unit="contracts"),
    Figure("Contracts per year", "count", None, lambda p: p.contracts_per_year,
           "Contracts traded per calendar year.", unit="contracts"),
    Figure("Total cost", "money", None, lambda p: p.cost_total,
           "Commission, exchange and regulatory fees and slippage over the whole run.",
           unit=CURRENCY),
    Figure("Cost per contract", "money", None,
           lambda p: _per_contract(p.cost_total, p.contracts_traded),
           "Total cost / contracts traded: what one buy or one sell cost on average.",
           unit=PER_SIDE),
    Figure("Cost per round turn", "money", None,
           lambda p: _per_contract(p.cost_total, p.contracts_traded, 2),
           "Twice the cost per contract per side: buying and later selling one contract.",
           unit=CURRENCY),
    Figure("Cost share of gross", "pct", None, lambda p: p.cost_share_of_gross,
           "Total cost / gross total P&L.", unit="%"),
    Figure("Break-even per contract", "money", None, lambda p: p.break_even_cost,
           "Cost per contract per side at which net P&L would be zero (gross P&L / contracts "
           "traded).", unit=PER_SIDE),
    Figure("Break-even per round turn", "money", None,
           lambda p: _per_contract(p.gross.total, p.contracts_traded, 2),
           "The break-even cost of a round turn (buying and later selling one contract): "
           "twice the per-side figure.", unit=CURRENCY),
]


def _length_label(figures: CapitalFigures) -> str:
    gross, net = figures.gross_drawdown.open, figures.net_drawdown.open
    still = {(True, True): ", still open", (False, True): ", net still open",
             (True, False): ", gross still open"}.get((gross, net), "")
    return f"Max drawdown length (trading days{still})"


#: The chosen set against its capital (shown after the figures in currency).
CAPITAL_FIGURES: list[Figure[CapitalFigures]] = [
    Figure("Capital", "money", None, lambda c: c.capital,
           "The amount the returns and drawdowns are measured against: the rule's [sizing] "
           "capital, or one given for the run.", unit=CURRENCY),
    Figure("Annual return", "pct", lambda c: c.gross_return, lambda c: c.net_return,
           f"Mean daily P&L x {DAYS_PER_YEAR} / capital (simple, not compounded).",
           unit=OF_CAPITAL),
    Figure("Annual volatility", "pct", lambda c: c.gross_vol, lambda c: c.net_vol,
           f"Standard deviation of daily P&L x sqrt({DAYS_PER_YEAR}) / capital.",
           unit=OF_CAPITAL),
    Figure("Max drawdown", "pct", lambda c: c.gross_drawdown.max_drawdown_pct,
           lambda c: c.net_drawdown.max_drawdown_pct,
           "Largest fall of cumulative P&L from a running peak / capital.", unit=OF_CAPITAL),
    Figure(_length_label, "count", lambda c: c.gross_drawdown.length_days,
           lambda c: c.net_drawdown.length_days,
           "Trading days from the peak before the largest fall to the first day back at that "
           "peak, or to the last day when it never got back (still open)."),
]

#: How far to trust the chosen set, on the days every set shares.
STATISTIC_FIGURES: list[Figure[FirstPassStats]] = [
    Figure("Sharpe ratio (common days)", "ratio", lambda s: s.gross.sharpe,
           lambda s: s.net.sharpe,
           "Annualised Sharpe ratio on the days all sets share (the statistics' period). The "
           "chosen set's own figure covers every day it has a result: sets with longer "
           "look-backs start later, so the two differ by those days."),
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
           "Trading days every parameter set has, on which the statistics are computed."),
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
           "Trading days measured.", unit="trading days"),
    Figure("Gross Sharpe", "ratio", None, lambda f: f.gross_sharpe,
           "Annualised Sharpe ratio before costs on the held-out dates."),
    Figure("Net P&L", "money", None, lambda f: f.net_total,
           "Sum of daily net P&L on the held-out dates.", unit=CURRENCY),
    Figure("Net drawdown", "money", None, lambda f: f.net_max_drawdown,
           "Largest fall of cumulative net P&L from a running peak on the held-out dates.",
           unit=CURRENCY),
]

#: One row per market of the chosen set.
MARKET_COLUMNS: list[Column[MarketFigures]] = [
    Column("Gross P&L", "money", lambda m: m.gross_total, unit=CURRENCY),
    Column("Net P&L", "money", lambda m: m.net_total, unit=CURRENCY),
    Column("Gross Sharpe", "ratio", lambda m: m.gross_sharpe),
    Column("Net Sharpe", "ratio", lambda m: m.net_sharpe),
    Column("Contracts / year", "count", lambda m: m.contracts_per_year,
           "Contracts bought or sold per calendar year, rolls included."),
    Column("Cost", "money", lambda m: m.cost_total, unit=CURRENCY),
    Column("Cost / contract", "money", lambda m: _per_contract(m.cost_total, m.contracts_traded),
           "What one buy or one sell of this market cost (fees and slippage).", unit=PER_SIDE),
    Column("Round turn", "money",
           lambda m: _per_contract(m.cost_total, m.contracts_traded, 2),
           "Cost of buying and later selling one contract: twice the per-side cost.",
           unit=CURRENCY),
    Column("Break-even cost", "money", lambda m: m.break_even_cost,
           "Cost per contract per side at which the market's net P&L would be zero.",
           unit=PER_SIDE),
]

#: One row per parameter set of a sweep.
SET_COLUMNS: list[Column[SetSummary]] = [
    Column("Gross Sharpe", "ratio", lambda s: s.gross_sharpe, SHARPE_NOTE),
    Column("Net Sharpe", "ratio", lambda s: s.net_sharpe, SHARPE_NOTE),
    Column("Net P&L", "money", lambda s: s.net_total, unit=CURRENCY),
    Column("Trades / year", "count", lambda s: s.trades_per_year, TRADE_NOTE),
    Column("Contracts / year", "count", lambda s: s.contracts_per_year,
           "Contracts bought or sold per calendar year, rolls included."),
    Column("Break-even cost", "money", lambda s: s.break_even_cost,
           "Cost per contract per side at which the set's net P&L would be zero.",
           unit=PER_SIDE),
]

#: One row per calendar year of the chosen set (net of costs).
YEAR_COLUMNS: list[Column[YearRow]] = [
    Column("Net P&L", "money", lambda y: y.net_pnl, "Sum of the year's daily net P&L.",
           unit=CURRENCY),
    Column("Return", "pct", lambda y: y.return_pct, "Net P&L / capital.", unit=OF_CAPITAL),
    Column("Sharpe", "ratio", lambda y: y.sharpe,
           f"Mean / standard deviation of the year's daily net P&L x sqrt({DAYS_PER_YEAR})."),
    Column("Max drawdown", "money", lambda y: y.max_drawdown,
           "Largest fall within the year (cumulative net P&L from 0 on its first day).",
           unit=CURRENCY),
    Column("Max drawdown", "pct", lambda y: y.max_drawdown_pct,
           "The year's largest fall (cumulative net P&L from 0 on its first day) / capital.",
           unit=OF_CAPITAL),
    Column("Cost", "money", lambda y: y.cost, "Costs paid in the year.", unit=CURRENCY),
    Column("Days", "count", lambda y: y.days, "Trading days with a result in the year."),
]


@dataclass(frozen=True)
class Table:
    """A table of named rows: column labels and kinds, then (row name, values) pairs."""

    head: str
    columns: tuple[Column[Any], ...]
    rows: tuple[tuple[str, tuple[Value, ...]], ...]


def performance_rows(performance: Performance, currency: str = "") -> list[FigureRow]:
    """The chosen set's gross and net figures over its whole history."""
    return [f.row(performance, currency) for f in PERFORMANCE_FIGURES]


def capital_rows(figures: CapitalFigures, currency: str = "") -> list[FigureRow]:
    """The chosen set against its capital (returns, volatility, drawdown in % and its
    length); with no capital only the drawdown's length (the rest needs one)."""
    return [f.row(figures, currency) for f in CAPITAL_FIGURES if capital_applies(f, figures)]


def capital_applies(figure: Figure[CapitalFigures], figures: CapitalFigures | None) -> bool:
    """Whether a run's figures against capital have ``figure``: none for a run recorded before
    them, and without a capital only the drawdown's length (the rest needs one)."""
    return figures is not None and (figures.capital is not None
                                    or figure is CAPITAL_FIGURES[-1])


def chosen_rows(run: RunSummary) -> list[FigureRow]:
    """Every figure of the chosen set over its whole history: in currency, then against the
    capital (for a run recorded with those figures)."""
    rows = performance_rows(run.chosen.performance, run.currency)
    return rows if run.capital is None else rows + capital_rows(run.capital, run.currency)


#: Where a run's capital came from, in words (see ``capital_figures.CAPITAL_SOURCES``).
_CAPITAL_SOURCE_WORDS = {"sizing": "the rule's [sizing] capital",
                         "run option": "the capital given for the run",
                         "desk setting": "the desk's capital setting"}


def capital_sentence(run: RunSummary) -> str:
    """Where the capital of a run's % figures came from, or how to give one."""
    figures = run.capital
    if figures is None:
        return "Recorded before figures against a capital existed: run the idea again."
    if figures.capital is None:
        return ("No capital known: the figures are in currency only. Give [sizing] capital in "
                "the rule file, hunchbook run --capital, or the desk's capital (File \u25b8 Desk "
                "settings\u2026 or hunchbook catalogue set capital AMOUNT) to see them in % of "
                "capital.")
    source = _CAPITAL_SOURCE_WORDS[figures.capital_source]
    return (f"Returns and drawdowns in % of {format_value(figures.capital, 'money')} "
            f"{run.currency} ({source}); simple, not compounded.")


def sharpe_sentence(run: RunSummary) -> str | None:
    """Why the chosen set's Sharpe ratio differs from the statistics' one, when it does
    (None when both cover the same days)."""
    p, stats = run.chosen.performance, run.statistics
    if p.days == stats.n_days:
        return None
    return (f"The chosen set's net Sharpe ratio is {format_value(p.net.sharpe, 'ratio')} over "
            f"its own {p.days:,} days and {format_value(stats.net.sharpe, 'ratio')} over the "
            f"{stats.n_days:,} days every set shares, on which the statistics judge all sets "
            "alike (sets with longer look-backs start later).")


def year_table(run: RunSummary) -> Table:
    """The chosen set year by year (no rows for a run recorded before the table existed); the
    return and the drawdown in % of the capital when the run has one, else the drawdown in the
    run currency."""
    years = () if run.capital is None else run.capital.years
    with_capital = run.capital is not None and run.capital.capital is not None
    # with a capital the shares of it; without one the currency (no empty columns)
    wanted = [c for c in YEAR_COLUMNS if (c.unit == OF_CAPITAL) == with_capital
              or c.label not in ("Return", "Max drawdown")]
    columns = _titled(wanted, run.currency)
    return Table("Year", columns, tuple(
        (str(y.year), tuple(number(c.value(y)) for c in columns)) for y in years))


def monthly_table(table: pd.DataFrame, capital: float | None, currency: str = "") -> Table:
    """A years x months table of :func:`hunchbook.core.capital_figures.monthly_returns`
    (fractions of ``capital``, or currency without one) with each year's total."""
    kind, unit = ("pct", OF_CAPITAL) if capital else ("money", CURRENCY)
    months = [Column(m, kind, lambda r, m=m: r[m]) for m in MONTHS]
    total = Column("Total", kind, lambda r: r.sum(min_count=1), "The year's sum.", unit=unit)
    columns = _titled([*months, total], currency)
    return Table("Year", columns, tuple(
        (str(year), tuple(number(c.value(row)) for c in columns))
        for year, row in table.iterrows()))


def statistic_rows(statistics: FirstPassStats) -> list[FigureRow]:
    """The first-pass statistics of the chosen set (PSR, DSR with its trials, SPA, ...); a
    figure that does not apply to the run (no walk-forward test for one set, say) is left out."""
    return [f.row(statistics) for f in STATISTIC_FIGURES if f.applies(statistics)]


def holdout_rows(figures: HoldoutFigures, currency: str = "") -> list[FigureRow]:
    """The held-out figures beside the in-sample ones (columns: :data:`HOLDOUT_HEADERS`)."""
    return [f.row(figures, currency) for f in HOLDOUT_FIGURES]


def market_table(run: RunSummary) -> Table:
    """The chosen set's figures per market."""
    columns = _titled(MARKET_COLUMNS, run.currency)
    return Table("Market", columns, tuple(
        (m.market, tuple(number(c.value(m)) for c in columns)) for m in run.chosen.markets))


def set_table(run: RunSummary, limit: int | None = None) -> Table:
    """The sweep's parameter sets from the best net Sharpe ratio down (``limit`` of them)."""
    columns = _titled(SET_COLUMNS, run.currency)
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


__all__ = ["CAPITAL_FIGURES", "CURRENCY", "MARKET_COLUMNS", "MISSING", "OF_CAPITAL",
           "PERFORMANCE_FIGURES", "PER_SIDE", "SET_COLUMNS", "SHARPE_NOTE",
           "STATISTIC_FIGURES", "TRADE_NOTE", "YEAR_COLUMNS", "Column", "Figure", "FigureRow",
           "Table", "capital_applies", "capital_rows", "capital_sentence", "chosen_rows",
           "format_params", "format_value", "market_table", "monthly_table", "number",
           "performance_rows", "set_table", "sharpe_sentence", "statistic_rows", "with_unit",
           "year_table"]
