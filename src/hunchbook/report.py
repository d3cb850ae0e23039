"""Plain-text tables of run results, as printed by the command line (rows from the presenter)."""

from __future__ import annotations

from typing import TYPE_CHECKING

from hunchbook.core.book_presenter import (
    BOOK_COLUMNS,
    BOOK_HEADING,
    book_notes,
    book_rows,
    book_table,
    threshold_sentence,
)
from hunchbook.core.formats import moment
from hunchbook.core.presenter import (
    HOLDOUT_HEADERS,
    SHARPE_NOTE,
    TRADE_NOTE,
    FigureRow,
    Table,
    capital_sentence,
    chosen_rows,
    format_params,
    format_value,
    holdout_rows,
    market_table,
    monthly_table,
    set_table,
    sharpe_sentence,
    statistic_rows,
    year_table,
)
from hunchbook.core.results import RunSummary
from hunchbook.core.stats import FirstPassStats
from hunchbook.core.verdict import Verdict

if TYPE_CHECKING:
    import pandas as pd

    from hunchbook.core.book import BookComparison
    from hunchbook.services import HoldoutPlan
    from hunchbook.store.records import HoldoutView

#: How many parameter sets a sweep table lists.
SWEEP_ROWS = 10
#: Width of the label column of a figures table.
LABEL_WIDTH = 34


def figures_text(rows: list[FigureRow],
                 headers: tuple[str, str] = ("Gross", "Net")) -> list[str]:
    """A gross/net figures table as lines (figures with one value show it under Net)."""
    lines = [f"{'':<{LABEL_WIDTH}}{headers[0]:>14}{headers[1]:>14}"]
    for row in rows:
        gross = "" if row.gross is None and row.net is not None \
            else format_value(row.gross, row.kind)
        lines.append(f"{row.label:<{LABEL_WIDTH}}{gross:>14}"
                     f"{format_value(row.net, row.kind):>14}")
    return lines


def table_text(table: Table) -> list[str]:
    """A table of named rows as lines, the name column as wide as its longest entry."""
    width = max([len(table.head), *(len(name) for name, _ in table.rows)]) + 2
    widths = [max(len(c.label), 10) + 2 for c in table.columns]
    lines = [f"{table.head:<{width}}"
             + "".join(f"{c.label:>{w}}" for c, w in zip(table.columns, widths, strict=True))]
    for name, values in table.rows:
        lines.append(f"{name:<{width}}" + "".join(
            f"{format_value(v, c.kind):>{w}}"
            for v, c, w in zip(values, table.columns, widths, strict=True)))
    return lines


def format_single(run: RunSummary) -> str:
    """The gross/net table of the chosen set: portfolio figures, then one line per market."""
    p = run.chosen.performance
    lines = [
        run.name,
        f"Parameters: {format_params(run.chosen.params)}    Markets: {', '.join(run.markets)}",
        f"Rows: {p.first_date} to {p.last_date} ({p.days:,} days, {p.years:.1f} years)    "
        f"Currency: {run.currency}",
        "",
        *figures_text(chosen_rows(run)),
        capital_sentence(run),
        f"Trades: {TRADE_NOTE}",
        "",
        *table_text(market_table(run)),
    ]
    years = year_table(run)
    if years.rows:
        lines += ["", "Year by year (net of costs):", *table_text(years)]
    return "\n".join(lines)


def format_monthly(run: RunSummary, table: pd.DataFrame) -> str:
    """The chosen set's net P&L per month (``table`` from
    :func:`hunchbook.core.capital_figures.monthly_returns`), in % of capital when it has one."""
    capital = None if run.capital is None else run.capital.capital
    what = "in % of capital" if capital else f"in {run.currency}"
    return "\n".join([f"Monthly net returns ({what}):",
                      *table_text(monthly_table(table, capital, run.currency))])


def format_sweep(run: RunSummary) -> str:
    """The best parameter sets of a sweep, ranked by net Sharpe ratio."""
    table = set_table(run, SWEEP_ROWS)
    lines = [
        run.name,
        f"{len(run.sets):,} parameter sets run over {', '.join(run.markets)}; best "
        f"{len(table.rows)} by net Sharpe ratio (currency {run.currency}).",
        "",
        *table_text(table),
        f"Sharpe ratios: {SHARPE_NOTE}",
    ]
    return "\n".join(lines)


def format_judgement(run: RunSummary) -> str:
    """The statistics of the chosen set and the verdict with its reasons."""
    params = run.chosen.params
    text = format_statistics(run.statistics, run.verdict,
                             chosen=format_params(params) if params else None)
    sentence = sharpe_sentence(run)
    if sentence is not None:
        text = sentence + "\n" + text
    return text if run.book is None else f"{text}\n\n{format_book(run.book)}"


def format_book(book: BookComparison) -> str:
    """The chosen set against the promoted ideas and their book, with what each figure means."""
    lines = [f"{BOOK_HEADING}:"]
    if book.ideas:
        lines += table_text(book_table(book))
    if book.book_ideas:
        lines += [f"{r.label:<{LABEL_WIDTH}}{format_value(r.net, r.kind):>14}"
                  for r in book_rows(book)]
    lines += [f"  {note}" for note in book_notes(book)]
    if book.ideas:
        lines += ["What they mean:", *(f"  {c.label}: {c.note}" for c in BOOK_COLUMNS),
                  *(f"  {r.label}: {r.note}" for r in book_rows(book) if book.book_ideas),
                  f"  {threshold_sentence(book)}"]
    return "\n".join(lines)


def format_statistics(stats: FirstPassStats, verdict: Verdict, chosen: str | None = None) -> str:
    """Statistics of a chosen set's daily P&L and the verdict, as plain lines."""
    head = f"Statistics of the chosen set ({chosen})" if chosen else "Statistics"
    rows = statistic_rows(stats)
    lines = [f"{head}, {stats.n_days:,} common days:", *figures_text(rows), "",
             "What they mean:", *(f"  {r.label}: {r.note}" for r in rows if r.note), "",
             f"Verdict: {verdict.label}. {verdict.action}"]
    lines += [f"  - {reason}" for reason in verdict.reasons]
    if verdict.checks:
        lines += ["", "Checks (in order; the first that fails decides):"]
        lines += [f"  {STATUS_TEXT[c.status]:<5} {c.name:<24} {c.figure:<20} {c.finding}"
                  for c in verdict.checks]
    return "\n".join(lines)


#: How each check status reads in text output.
STATUS_TEXT = {"pass": "pass", "fail": "FAIL", "warn": "warn", "skip": "-"}


def format_holdout_plan(plan: HoldoutPlan, *, by: str) -> str:
    """What unlocking an idea's holdout will run, for the person to confirm."""
    dates = (f"the dates from {plan.boundary} on" if plan.held_out_days is None else
             f"{plan.held_out_days:,} held-out days, {plan.first_held} to {plan.last_held}")
    return "\n".join([
        f"Unlock the held-out years of idea {plan.idea_id}, once, as {by}:",
        f"  rules      : revision {plan.revision_number} (of run {plan.run_id})",
        f"  chosen set : {format_params(plan.chosen_params)}",
        f"  dates      : {dates} (boundary {plan.boundary})",
        "Every later run of this idea will say 'Holdout already seen'."])


def format_holdout(view: HoldoutView) -> str:
    """An idea's held-out figures beside the in-sample ones, who saw them and when."""
    f = view.figures
    head = (f"Held-out years of idea {view.idea_id}: {f.first_date} to {f.last_date}, seen by "
            f"{view.seen_by} on {moment(view.seen_at)} (run {view.run_id}, "
            f"rule revision {view.revision_number}, set {format_params(view.chosen_params)})")
    return "\n".join([head, *figures_text(holdout_rows(f), HOLDOUT_HEADERS), f.finding()])
